"""Potential → activity → molality, and round trips."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import activity as act
from activity.errors import ConvergenceError, InputError
from activity.nernst.cell import Cell
from activity.nernst.electrodes import IonSelectiveElectrode, silver_chloride_electrode
from activity.nernst.half_reaction import standard_couple
from activity.nernst.inverse import activity_from_potential, molality_from_emf, molality_from_potential

pytestmark = pytest.mark.filterwarnings("ignore::activity.errors.ValidityWarning")


def test_activity_from_potential_half_reaction_closed_form():
    hr = standard_couple("AgCl/Ag")
    sol = act.Solution({"K+": np.array([0.01, 0.05]), "Cl-": np.array([0.01, 0.05])})
    E = hr.potential(sol, "davies")
    a = activity_from_potential(hr, E, sol, "davies")
    assert np.allclose(a, act.activities(sol, "davies")["Cl-"], rtol=1e-12)


def test_activity_from_potential_ise_with_interference():
    ise = IonSelectiveElectrode("Ca^2+", E0=0.02, selectivity={"Mg^2+": 0.05})
    sol = act.Solution({"Ca^2+": 1e-4, "Mg^2+": 2e-3, "Cl-": 4.2e-3})
    E = ise.potential(sol, "davies")
    assert activity_from_potential(ise, E, sol, "davies") == pytest.approx(
        act.activities(sol, "davies")["Ca^2+"], rel=1e-10
    )
    floor = ise.potential(sol.replace({"Ca^2+": 0.0}), "davies")
    with pytest.raises(InputError, match="interfering"):
        activity_from_potential(ise, floor - 0.001, sol, "davies")


def test_determinand_choice():
    with pytest.raises(InputError, match="which species"):
        activity_from_potential(
            standard_couple("Fe3+/Fe2+"), 0.7, act.Solution({"Fe^3+": 1e-3, "Fe^2+": 1e-3, "Cl-": 5e-3})
        )
    with pytest.raises(InputError, match="responds to"):
        molality_from_potential(
            IonSelectiveElectrode("Ca^2+", 0.0), 0.0, act.Solution({"K+": 0.1, "Cl-": 0.1}), species="K+"
        )


@settings(max_examples=40, deadline=None)
@given(
    m=st.floats(1e-6, 0.05),
    background=st.floats(0.0, 0.2),
    T=st.floats(278.15, 333.15),
    model=st.sampled_from(["davies", "extended-debye-huckel"]),
)
def test_round_trip_ise(m, background, T, model):
    ise = IonSelectiveElectrode("Ca^2+", E0=0.03, selectivity={"Na+": 1e-4}, slope_factor=0.98)
    full = act.Solution({"Ca^2+": m, "Na+": background, "Cl-": background + 2 * m}, T=T, neutrality="ignore")
    E = ise.potential(full, model)
    matrix = act.Solution({"Na+": background, "Cl-": background}, T=T, neutrality="ignore")
    res = molality_from_potential(ise, E, matrix, model, counter_ion="Cl-")
    assert res.molality == pytest.approx(m, rel=1e-9)
    assert res.activity == pytest.approx(act.activities(full, model)["Ca^2+"], rel=1e-9)


@settings(max_examples=30, deadline=None)
@given(m=st.floats(1e-5, 0.1), T=st.floats(278.15, 333.15))
def test_round_trip_half_reaction_without_counter_ion(m, T):
    hr = standard_couple("Ag+/Ag")
    matrix = act.Solution({"K+": 0.01, "NO3-": 0.01}, T=T)
    full = matrix.replace({"Ag+": m})
    E = hr.potential(full, "davies")
    res = molality_from_potential(hr, E, matrix, "davies")
    assert res.molality == pytest.approx(m, rel=1e-9)
    assert any("without a counter-ion" in n for n in res.notes)


def test_round_trip_batch_vectorised():
    m = np.logspace(-6, -1, 200)
    ise = IonSelectiveElectrode("K+", E0=0.0)
    matrix = act.Solution({"Na+": np.full(200, 0.05), "Cl-": np.full(200, 0.05)})
    full = act.Solution({"K+": m, "Na+": 0.05, "Cl-": 0.05 + m})
    E = ise.potential(full, "davies")
    res = molality_from_potential(ise, E, matrix, "davies", counter_ion="Cl-")
    assert res.molality.shape == (200,)
    assert np.allclose(res.molality, m, rtol=1e-9, atol=0)
    assert res.iterations < 20


@settings(max_examples=20, deadline=None)
@given(m=st.floats(1e-4, 0.05))
def test_round_trip_cell_with_junction(m):
    # the Henderson term depends on the unknown too; it is recomputed at every step
    cell = Cell(
        left=silver_chloride_electrode(3.0), right=IonSelectiveElectrode("Ca^2+", E0=0.05), junction="henderson"
    )
    full = act.Solution({"Ca^2+": m, "K+": 0.01, "Cl-": 0.01 + 2 * m})
    emf = cell.emf(full, "davies")
    res = molality_from_emf(
        cell, emf, act.Solution({"K+": 0.01, "Cl-": 0.01}), "davies", species="Ca^2+", counter_ion="Cl-"
    )
    assert res.molality == pytest.approx(m, rel=1e-9)


def test_harned_cell_inverse():
    # both electrodes see HCl; solve for H+ with Cl- as its counter-ion
    cell = Cell(left=standard_couple("H+/H2"), right=standard_couple("AgCl/Ag"))
    emf = cell.emf(act.Solution({"H+": 0.01, "Cl-": 0.01}), "davies", pressures={"H2(g)": 1e5})
    res = molality_from_emf(
        cell,
        emf,
        act.Solution({"Na+": 1e-9, "Cl-": 1e-9}),
        "davies",
        species="H+",
        counter_ion="Cl-",
        pressures={"H2(g)": 1e5},
    )
    assert res.molality == pytest.approx(0.01, rel=1e-6)


def test_unreachable_potential_names_rows():
    ise = IonSelectiveElectrode("Ca^2+", E0=0.0, selectivity={"Na+": 0.5})
    matrix = act.Solution({"Na+": np.array([0.01, 0.01, 0.01]), "Cl-": np.array([0.01, 0.01, 0.01])})
    E = np.array([-0.05, -0.2, -0.05])  # row 1 lies below the Na+ interference floor
    with pytest.raises(ConvergenceError) as exc:
        molality_from_potential(ise, E, matrix, counter_ion="Cl-")
    assert exc.value.rows.tolist() == [1]
    assert "[1]" in str(exc.value)


def test_bad_inputs():
    ise = IonSelectiveElectrode("Ca^2+", E0=0.0)
    with pytest.raises(InputError, match="counter-ion"):
        molality_from_potential(ise, 0.0, act.Solution({"K+": 0.1, "Cl-": 0.1}), counter_ion="Na+")
    with pytest.raises(InputError, match="already holds"):
        molality_from_potential(ise, 0.0, act.Solution({"Ca^2+": 0.1, "Cl-": 0.2}))
    with pytest.raises(InputError, match="Cell"):
        molality_from_emf(ise, 0.0, act.Solution({"K+": 0.1, "Cl-": 0.1}), species="Ca^2+")


def test_model_named_once_is_parsed_once(monkeypatch):
    """A model given by name is resolved once at the entry point, not at every secant step."""
    from activity.coefficients.pitzer import _model, _params

    cell = Cell(left=silver_chloride_electrode(3.0), right=IonSelectiveElectrode("Ca^2+", E0=0.05))
    calls = []
    original = _params.parse_parameters

    def counting(*args, **kwargs):
        calls.append(1)
        return original(*args, **kwargs)

    monkeypatch.setattr(_params, "parse_parameters", counting)
    if hasattr(_model, "parse_parameters"):
        monkeypatch.setattr(_model, "parse_parameters", counting)
    res = molality_from_emf(
        cell, -0.2, act.Solution({"K+": 0.1, "Cl-": 0.1}), "pitzer", species="Ca2+", counter_ion="Cl-"
    )
    assert res.iterations > 2 and len(calls) == 1
