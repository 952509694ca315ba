"""Bad input raises InputError naming the field; scalars in → scalars out; rows in → rows out."""

import numpy as np
import pytest

import activity as act
from activity.errors import InputError
from activity.speciation import speciate


def test_unknown_species_is_refused_unless_declared_inert():
    with pytest.raises(InputError) as exc:
        speciate({"Sr^2+": 0.01, "Cl-": 0.02})
    assert exc.value.field == "solution" and exc.value.value == "Sr^2+"
    res = speciate({"Sr^2+": 0.01, "Cl-": 0.02}, inert=["Sr^2+"])
    assert res.molality("Sr^2+") == pytest.approx(0.01, rel=1e-12)
    with pytest.raises(InputError) as exc:
        speciate({"Ca^2+": 0.01, "Cl-": 0.02}, inert=["Ca^2+"])
    assert exc.value.field == "inert"


def test_negative_totals_are_refused():
    with pytest.raises(InputError) as exc:
        speciate({"Ca^2+": -0.01, "Cl-": 0.02})
    assert "Ca^2+" in exc.value.field


def test_reaction_data_with_missing_species_is_refused():
    net = {
        "components": {"H+": "", "F-": ""},
        "species": {
            "HF": {
                "made_of": {"Cl-": 1, "H+": 1},
                "lg_k": 3.18,
                "temperature": {"constant": True},
                "celsius": [0, 50],
                "source": "test",
            }
        },
    }
    with pytest.raises(InputError) as exc:
        speciate({"F-": 0.01, "H+": 0.01}, network=net)
    assert "made_of" in exc.value.field


@pytest.mark.parametrize(
    "kw, field",
    [
        ({"ph": 7.0, "balance": "H+"}, "balance"),  # fixed pH and charge balance on H+
        ({"gases": {"CO2(g)": 40.0}, "balance": "CO3^2-"}, "gases"),  # carbonate fixed twice
        ({"activities": {"Ca^2+": 1e-3}, "balance": "Ca^2+"}, "activities"),
        ({"activities": {"H+": 1e-7}}, "activities"),
        ({"gases": {"N2(g)": 1e5}}, "gases"),
        ({"balance": "Xe^2+"}, "balance"),  # not a component
        ({"balance": "Br-"}, None),  # a component: fine
        ({"balance": "CO2"}, "balance"),  # neutral
        ({"ph": 20.0}, "ph"),
        ({"ph": [7.0, 8.0, 9.0]}, "ph"),  # does not broadcast with 2 rows
        ({"model": "no-such-model"}, "model"),
    ],
)
def test_conflicting_or_unknown_closures(kw, field):
    sol = act.Solution({"Ca^2+": [0.01, 0.02], "Cl-": [0.02, 0.04], "HCO3-": [0.001, 0.001], "Na+": [0.001, 0.001]})
    model = kw.pop("model", "davies")
    if field is None:
        speciate(sol, model, **kw)
        return
    with pytest.raises(InputError) as exc:
        speciate(sol, model, **kw)
    assert exc.value.field == field


def test_scalars_in_scalars_out_rows_in_rows_out():
    one = speciate({"Na+": 0.01, "Cl-": 0.01})
    assert isinstance(one.ph, float) and isinstance(one.ionic_strength, float)
    assert isinstance(one.converged, bool) and isinstance(one.iterations, int)
    rows = speciate(act.Solution({"Na+": [0.01, 0.02, 0.03], "Cl-": [0.01, 0.02, 0.03]}, T=[288.15, 298.15, 308.15]))
    assert np.shape(rows.ph) == (3,) and np.shape(rows.molality("Na+")) == (3,)
    assert rows.converged.all()
    grid = speciate(act.Solution({"Na+": np.full((2, 2), 0.01), "Cl-": np.full((2, 2), 0.01)}))
    assert np.shape(grid.ph) == (2, 2)


def test_result_solution_feeds_other_calculations():
    res = speciate({"Ca^2+": 0.01, "SO4^2-": 0.01})
    free = res.solution
    assert free.molality("Ca^2+") == pytest.approx(res.molality("Ca^2+"))
    assert free.ionic_strength == pytest.approx(res.ionic_strength, rel=1e-12)
    with pytest.raises(InputError) as exc:
        res.molality("Sr^2+")
    assert exc.value.field == "species"


def test_constants_used_outside_their_range_warn_and_flag_rows():
    # the EDTA medium constants hold at 15–35 °C (models/equilibria.toml)
    sol = act.Solution(
        {"Ca^2+": [0.001, 0.001], "C10H14N2O8^2-": [0.001, 0.001]}, T=[298.15, 353.15], neutrality="ignore"
    )
    with pytest.warns(act.ValidityWarning, match="used outside that range in 1 of 2 row"):
        res = speciate(sol)
    assert res.in_range.tolist() == [True, False]
    assert any("C10H13N2O8^3-" in n for n in res.notes)
