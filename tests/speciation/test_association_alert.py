"""The "2:2 pair (ion association)" alert of the Debye–Hückel family after speciation.

The Davies, extended Debye–Hückel and Truesdell–Jones parameters assume that ion pairs of
doubly charged ions are counted explicitly (Davies 1962, Ion Association — common
practice: I ≤ 0.01 mol/kg without them). A plain composition with Ca²⁺ and SO4²⁻ above that
ionic strength must be flagged; the speciated solution, where CaSO4⁰ is a species, must
not — unless a pair of it is *not* counted (an inert ion the reaction data do not pair).
"""

import numpy as np
import pytest

import activity as act
from activity.nernst.electrodes import free_solution
from activity.speciation.result import SpeciatedSolution, association_pairs

ALERT = "2:2 pair (ion association)"
CASO4 = {"Ca^2+": 0.01, "SO4^2-": 0.01}  # I = 0.04 mol/kg as given, ≈ 0.029 speciated


def _alerted(notes):
    return any(ALERT in n for n in notes)


@pytest.mark.parametrize("model", ["davies", "truesdell-jones"])
def test_plain_composition_is_flagged(model):
    with pytest.warns(act.ValidityWarning, match="2:2 pair"):
        res = act.get_model(model).activity_coefficients(act.Solution(CASO4))
    assert res.in_range is False and _alerted(res.alerts)


@pytest.mark.parametrize("model", ["davies", "truesdell-jones"])
def test_speciated_solution_is_not_flagged(model):
    mdl = act.get_model(model, fallback_size=4.0) if model == "truesdell-jones" else model
    res = act.speciate(CASO4, mdl)
    assert not _alerted(res.notes)
    assert res.in_range is True  # I ≈ 0.029 lies inside both models' general limits
    # the speciated composition handed on (to an electrode, another model) keeps the record
    coeffs = act.get_model(model, **({"fallback_size": 4.0} if model == "truesdell-jones" else {}))
    g = coeffs.activity_coefficients(res.solution, warn=False)
    assert isinstance(res.solution, SpeciatedSolution)
    assert ("Ca^2+", "SO4^2-") in res.solution.explicit_ion_pairs
    assert not _alerted(g.alerts) and g.in_range is True


def test_batch_rows_follow_the_same_rule():
    sol = act.Solution({"Ca^2+": np.array([0.002, 0.01]), "SO4^2-": np.array([0.002, 0.01])})
    res = act.speciate(sol)
    assert not _alerted(res.notes) and np.all(res.in_range)


def test_pair_not_counted_still_flagged():
    # Sr²⁺ declared inert: the data pair it with nothing, so SrSO4 association is not counted
    res = act.speciate({"Sr^2+": 0.01, "Ca^2+": 0.001, "SO4^2-": 0.011}, inert=["Sr^2+"])
    assert ("Sr^2+", "SO4^2-") not in res.solution.explicit_ion_pairs
    assert ("Ca^2+", "SO4^2-") in res.solution.explicit_ion_pairs
    assert _alerted(res.notes) and res.in_range is False


def test_electrode_path_uses_the_speciated_record():
    # the Nernst layer's free-ion option evaluates the model on res.solution
    free, notes = free_solution(act.Solution(CASO4), act.get_model("davies"), {})
    g = act.get_model("davies").activity_coefficients(free, warn=False)
    assert not _alerted(g.alerts) and not _alerted(notes)


def test_association_pairs_from_stoichiometry():
    # components H+, Ca2+, PO4^3-; formed HPO4^2- (H + PO4), CaHPO4 (Ca + H + PO4), CaPO4- (Ca + PO4)
    species = ("H+", "Ca^2+", "PO4^3-", "HPO4^2-", "CaHPO4", "CaPO4-")
    charges = np.array([1, 2, -3, -2, 0, -1])
    nu = np.array([[1, 0, 0], [0, 1, 0], [0, 0, 1], [1, 0, 1], [1, 1, 1], [0, 1, 1]], dtype=float)
    assert association_pairs(species, charges, nu) == {("Ca^2+", "HPO4^2-"), ("Ca^2+", "PO4^3-")}
