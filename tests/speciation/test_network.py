"""Reaction data: layout, validation, lg K(T), the medium conversion, Kw(T) against IAPWS."""

import numpy as np
import pytest

from activity import data
from activity.errors import InputError
from activity.speciation.network import Network, default_network, water_lg_kw

iapws_mod = pytest.importorskip("iapws")
from iapws._iapws import _Kw as iapws_pkw  # noqa: E402 - after the importorskip


def test_every_reaction_has_a_source_and_range():
    net = default_network()
    for name, rx in net.reactions.items():
        assert rx.source.strip(), name
        assert rx.T_range[0] <= 298.15 <= rx.T_range[1], name
    # the species the issue asks for are all there
    wanted = [
        "OH-",
        "HCO3-",
        "CO2",
        "CaHCO3+",
        "CaCO3",
        "MgHCO3+",
        "MgCO3",
        "NaCO3-",
        "HSO4-",
        "CaSO4",
        "MgSO4",
        "NaSO4-",
        "KSO4-",
        "HPO4^2-",
        "H2PO4-",
        "H3PO4",
        "CaHPO4",
        "MgHPO4",
        "HF",
        "HF2-",
        "CaF+",
        "MgF+",
        "NH4+",
        "CH3COOH",
        "C8H5O4-",
        "C6H7O7-",
        "C4H5O6-",
        "B(OH)3",
        "HC2O4-",
        "CaC10H12N2O8^2-",
        "MgC10H12N2O8^2-",
        "C10H13N2O8^3-",
        "CaC6H6NO6-",
        "MgC6H6NO6-",
        "C6H7NO6^2-",
    ]
    missing = [w for w in wanted if w not in net.products]
    assert missing == []
    assert "CO2(g)" in net.gases


def test_stepwise_reactions_resolve_to_components():
    net = default_network()
    st = dict(zip(net.components, net.stoichiometry("CO2")))
    assert st["CO3^2-"] == 1 and st["H+"] == 2
    # lg β(CO2) = lg K(HCO3-) + lg K(CO2 from HCO3-): 10.329 + 6.352 (Plummer & Busenberg 1982)
    beta = net.lg_beta(298.15, [net.products.index("CO2")])
    assert float(beta[0]) == pytest.approx(10.329 + 6.352, abs=2e-3)


def test_analytic_temperature_functions_match_the_25C_values():
    # The loader refuses an analytic lg K(T) more than 0.02 off its stated lg_k; here the
    # carbonate constants of Plummer & Busenberg 1982 (Table 2) are checked more tightly.
    net = default_network()
    for name, value in {"HCO3-": 10.329, "CO2": 6.352, "CaHCO3+": 1.106, "CaCO3": 3.224}.items():
        assert float(net.reactions[name].lg_k(298.15)) == pytest.approx(value, abs=2e-3)
    # van't Hoff: d lg K / d(1/T) = −ΔH/(R ln 10); HSO4- ΔH = +16.11 kJ/mol (Nordstrom et al. 1990)
    rx = net.reactions["HSO4-"]
    slope = (rx.lg_k(308.15) - rx.lg_k(288.15)) / (1 / 308.15 - 1 / 288.15)
    assert float(slope) == pytest.approx(-16110 / (8.314462618 * np.log(10)), rel=1e-9)


def test_medium_constants_converted_with_the_stated_davies_model():
    doc = data.load("equilibria")
    about = doc["about"]
    A, c = about["medium_conversion_A"], about["medium_conversion_c"]
    I = 0.1
    f = A * (np.sqrt(I) / (1 + np.sqrt(I)) - c * I)
    rx = default_network().reactions["C10H13N2O8^3-"]  # H+ + Y4- = HY3-: Δz² = 1 + 16 − 9 = 8
    assert rx.medium == (10.17, 0.1)
    assert rx.lg_k25 == pytest.approx(10.17 + 8 * f, abs=1e-12)
    rx = default_network().reactions["CaC10H12N2O8^2-"]  # Ca2+ + Y4- = CaY2-: 4 + 16 − 4 = 16
    assert rx.lg_k25 == pytest.approx(10.65 + 16 * f, abs=1e-12)


@pytest.mark.parametrize("t_c", [0.0, 10.0, 25.0, 40.0, 60.0, 80.0, 100.0])
def test_kw_formula_matches_iapws_package(t_c):
    """Same density in, same pKw out: our evaluation of Bandura & Lvov (2006) vs the iapws package."""
    from activity.water import density

    T = 273.15 + t_c
    ours = float(water_lg_kw(T, negate=True))
    ref = iapws_pkw(float(density(T)), T)
    assert ours == pytest.approx(ref, abs=1e-9)


def _doc(**species):
    return {"components": {"H+": "", "F-": ""}, "species": species}


def _rx(**kw):
    base = {
        "made_of": {"F-": 1, "H+": 1},
        "lg_k": 3.18,
        "temperature": {"constant": True},
        "celsius": [0, 50],
        "source": "test",
    }
    base.update(kw)
    return base


def test_reaction_with_missing_species_is_refused():
    with pytest.raises(InputError, match="neither a component") as exc:
        Network.from_mapping(_doc(HF=_rx(made_of={"Cl-": 1, "H+": 1})))
    assert "made_of" in exc.value.field


@pytest.mark.parametrize(
    "body, field_part",
    [
        ({"made_of": {"F-": 1, "H+": 2}}, 'species."HF"'),  # charge not balanced
        ({"lg_k": "3"}, "lg_k"),
        ({"temperature": {"sideways": 1}}, "temperature"),
        ({"celsius": [50, 0]}, "celsius"),
        ({"source": ""}, "source"),
        ({"colour": "red"}, "colour"),
        ({"temperature": {"analytic": [3.18, 0, 1000.0, 0, 0]}}, 'species."HF"'),  # 25 °C value disagrees
    ],
)
def test_malformed_entries_name_the_key(body, field_part):
    with pytest.raises(InputError) as exc:
        Network.from_mapping(_doc(HF=_rx(**body)))
    assert field_part in exc.value.field


def test_cycles_are_refused():
    doc = {
        "components": {"H+": "", "F-": ""},
        "species": {
            "HF": _rx(made_of={"HF2-": 1, "F-": -1}),
            "HF2-": _rx(made_of={"HF": 1, "F-": 1}, lg_k=0.5),
        },
    }
    with pytest.raises(InputError, match="cycle"):
        Network.from_mapping(doc)


def test_without_drops_dependants():
    net = default_network().without("HCO3-")
    assert "HCO3-" not in net.products and "CO2" not in net.products and "CaHCO3+" not in net.products
    assert "CaCO3" in net.products
    with pytest.raises(InputError) as exc:
        default_network().without("Na+")  # a component, not a formed species
    assert exc.value.field == "without"


def _gas_doc(**gas):
    body = {"dissolves_as": "HF", "lg_k": 1.0, "temperature": {"constant": True}, "celsius": [0, 50], "source": "test"}
    body.update(gas)
    return {**_doc(HF=_rx()), "gas": {"HF(g)": body}}


def test_gas_pressure_unit_converts_to_per_bar():
    # 1 atm = 1.01325 bar exactly (by definition), so a constant per atm is 1.01325 times the one per bar
    per_bar = Network.from_mapping(_gas_doc()).gases["HF(g)"].reaction.lg_k(298.15)
    per_atm = Network.from_mapping(_gas_doc(pressure_unit="atm")).gases["HF(g)"].reaction.lg_k(298.15)
    assert float(per_bar) == 1.0
    assert float(per_bar - per_atm) == pytest.approx(np.log10(1.01325), abs=1e-15)


def test_unknown_gas_pressure_unit_is_refused():
    with pytest.raises(InputError) as exc:
        Network.from_mapping(_gas_doc(pressure_unit="torr"))
    assert "pressure_unit" in exc.value.field
    with pytest.raises(InputError) as exc:  # only gases have a pressure unit
        Network.from_mapping(_doc(HF=_rx(pressure_unit="atm")))
    assert "pressure_unit" in exc.value.field
