"""Solution: composition, units, batches, ionic strength, electroneutrality."""

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

import activity as act
from activity import ElectroneutralityWarning, InputError, Solution


def test_ionic_strength_of_simple_salts():
    # I = ½ Σ z² m (definition; Lewis & Randall 1921).
    assert Solution({"Na+": 0.1, "Cl-": 0.1}).ionic_strength == pytest.approx(0.1)
    assert Solution({"Ca2+": 0.1, "Cl-": 0.2}).ionic_strength == pytest.approx(0.3)
    assert Solution({"Mg++": 0.1, "SO4^2-": 0.1}).ionic_strength == pytest.approx(0.4)
    assert Solution({"La^3+": 0.1, "Cl-": 0.3}).ionic_strength == pytest.approx(0.6)


def test_neutral_species_do_not_count():
    assert Solution({"Na+": 0.1, "Cl-": 0.1, "CO2": 1.0}).ionic_strength == pytest.approx(0.1)


def test_molarity_to_molality_nacl_with_handbook_density():
    # 1.000 mol/L NaCl at 20–25 °C has density 1.037 g/cm³ (CRC Handbook of Chemistry and
    # Physics, "Concentrative properties of aqueous solutions", NaCl; from memory) → about
    # 1.021 mol/kg: m = c / (ρ − c M).
    sol = Solution.from_molarity({"Na+": 1.0, "Cl-": 1.0}, density=1.037)
    assert sol.molality("Na+") == pytest.approx(1.021, abs=1.5e-3)


def test_molarity_to_molality_nacl_with_density_model():
    # Same check with the built-in density model (Kell water + infinite-dilution partial molar
    # volumes); the neglected excess volume costs a few tenths of a percent at 1 mol/L.
    sol = Solution.from_molarity({"Na+": 1.0, "Cl-": 1.0})
    assert sol.molality("Cl-") == pytest.approx(1.021, rel=3e-3)


def test_dilute_molarity_is_close_to_molality():
    # In dilute solution m ≈ c / ρ_w (common practice); ρ_w(25 °C) = 0.99705 kg/L
    # (Kell 1975; IAPWS-95 gives 997.047 kg/m³ — from memory).
    sol = Solution.from_molarity({"K+": 1e-3, "Cl-": 1e-3}, T=298.15)
    assert sol.molality("K+") == pytest.approx(1e-3 / 0.99705, rel=1e-4)


def test_from_molarity_needs_volume_or_density():
    with pytest.raises(InputError, match="density"):
        Solution.from_molarity({"Ag+": 0.1, "NO3-": 0.1})
    # with a density: m = c / (ρ − c M), M(AgNO3) = 107.87 + 14.007 + 3 × 15.999 g/mol
    # (IUPAC abridged standard atomic weights, Prohaska et al. 2022), by hand
    sol = Solution.from_molarity({"Ag+": 0.1, "NO3-": 0.1}, density=1.01)
    M = (107.87 + 14.007 + 3 * 15.999) / 1000
    assert sol.molality("Ag+") == pytest.approx(0.1 / (1.01 - 0.1 * M), rel=1e-4)


def test_solution_is_immutable():
    sol = Solution({"Na+": 0.1, "Cl-": 0.1})
    with pytest.raises(ValueError):
        sol.m[0] = 1.0
    with pytest.raises(AttributeError):
        sol.species = ("K+",)


@pytest.mark.parametrize(
    "composition, field",
    [
        ({"Na+": -0.1, "Cl-": 0.1}, "composition['Na+']"),
        ({"Na+": float("nan"), "Cl-": 0.1}, "composition['Na+']"),
        ({"Na+": float("inf"), "Cl-": 0.1}, "composition['Na+']"),
        ({"Na+": "lots", "Cl-": 0.1}, "composition['Na+']"),
        ({}, "composition"),
        ({"Ca2+": 0.1, "Ca++": 0.1}, "composition"),
        ({"AgCl(s)": 0.1}, "composition"),
        ({"H2O": 55.5}, "composition"),
        ({"Na+": [0.1, 0.2], "Cl-": [0.1, 0.2, 0.3]}, "composition"),
        ({"Qq+": 0.1}, "species"),
    ],
)
def test_bad_compositions(composition, field):
    with pytest.raises(InputError) as err:
        Solution(composition, neutrality="ignore")
    assert err.value.field == field


def test_temperature_in_celsius_is_refused_with_hint():
    with pytest.raises(InputError, match=r"25 K is below 273.15 K — did you mean 25 °C = 298.15 K\?"):
        Solution({"Na+": 0.1, "Cl-": 0.1}, T=25)


def test_electroneutrality_warns_and_balances():
    with pytest.warns(ElectroneutralityWarning):
        Solution({"Na+": 0.1, "Cl-": 0.05})
    with pytest.raises(InputError):
        Solution({"Na+": 0.1, "Cl-": 0.05}, neutrality="raise")
    sol = Solution({"Na+": 0.1, "Cl-": 0.05}, balance_with="Cl-")
    assert sol.molality("Cl-") == pytest.approx(0.1)
    assert sol.charge_balance == pytest.approx(0.0, abs=1e-15)
    added = Solution({"Ca2+": 0.01}, balance_with="NO3-")
    assert added.species == ("Ca^2+", "NO3-")
    assert added.molality("NO3-") == pytest.approx(0.02)
    with pytest.raises(InputError, match="negative"):
        Solution({"Na+": 0.1, "Cl-": 0.05}, balance_with="K+")


def test_batch_broadcasts_with_temperature():
    T = np.array([283.15, 298.15, 310.15])
    sol = Solution({"K+": 0.01, "Cl-": 0.01}, T=T)
    assert sol.shape == (3,)
    assert np.allclose(sol.ionic_strength, 0.01)
    assert np.allclose(sol.T, T)
    assert sol[1].T == pytest.approx(298.15)


def test_rows_and_selection():
    m = np.linspace(0.001, 0.1, 7)
    sol = Solution({"Na+": m, "Cl-": m})
    assert sol[2:4].shape == (2,)
    assert [r.ionic_strength for r in sol.rows()] == pytest.approx(list(m))


salts = st.sampled_from(
    [
        ({"Na+": 1, "Cl-": 1}),
        ({"Ca^2+": 1, "Cl-": 2}),
        ({"Mg^2+": 1, "SO4^2-": 1}),
        ({"K+": 2, "SO4^2-": 1}),
        ({"La^3+": 1, "NO3-": 3}),
    ]
)


@given(st.lists(st.tuples(salts, st.floats(0, 2)), min_size=1, max_size=4))
def test_ionic_strength_is_half_sum_z2m_and_order_invariant(parts):
    comp: dict[str, float] = {}
    for stoich, m in parts:
        for ion, nu in stoich.items():
            comp[ion] = comp.get(ion, 0.0) + nu * m
    expected = 0.5 * sum(act.parse_species(n).charge ** 2 * v for n, v in comp.items())
    sol = Solution(comp)
    rev = Solution(dict(reversed(list(comp.items()))))
    assert sol.ionic_strength == pytest.approx(expected, rel=1e-12, abs=1e-300)
    assert rev.ionic_strength == pytest.approx(sol.ionic_strength, rel=1e-12, abs=1e-300)


@given(st.lists(st.floats(0, 5), min_size=1, max_size=30))
def test_batch_ionic_strength_equals_row_by_row(ms):
    m = np.array(ms)
    batch = Solution({"Ca2+": m, "Cl-": 2 * m}).ionic_strength
    rows = [Solution({"Ca2+": x, "Cl-": 2 * x}).ionic_strength for x in ms]
    assert np.allclose(batch, rows, rtol=1e-14)


def test_replace_keeps_other_species():
    sol = Solution({"Na+": 0.1, "Cl-": 0.1})
    new = sol.replace({"K+": 0.05, "Cl-": 0.15}, T=310.15)
    assert new.species == ("Na+", "Cl-", "K+")
    assert new.T == pytest.approx(310.15)
    assert sol.species == ("Na+", "Cl-")
