"""Laws of the solver as property tests: batch = rows, order invariance, totals, monotonicity."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import activity as act
from activity.speciation import speciate

amount = st.floats(min_value=1e-5, max_value=0.02)


def _comp(ca, so4, na, hco3):
    cl = max(2 * ca + na - 2 * so4 - hco3, 0.0)
    extra_na = max(-(2 * ca + na - 2 * so4 - hco3), 0.0)
    return {"Ca^2+": ca, "SO4^2-": so4, "Na+": na + extra_na, "HCO3-": hco3, "Cl-": cl}


@settings(deadline=None, max_examples=15)
@given(
    st.lists(st.tuples(amount, amount, amount, amount), min_size=2, max_size=5),
    st.lists(st.floats(min_value=278.15, max_value=318.15), min_size=5, max_size=5),
)
def test_batch_equals_row_by_row(rows, temps):
    comps = [_comp(*r) for r in rows]
    names = list(comps[0])
    T = np.array(temps[: len(rows)])
    batch = speciate(act.Solution({n: np.array([c[n] for c in comps]) for n in names}, T=T, neutrality="ignore"))
    for k, c in enumerate(comps):
        one = speciate(act.Solution(c, T=float(T[k]), neutrality="ignore"))
        assert batch.ph[k] == pytest.approx(one.ph, abs=1e-9)
        for name in one.species:
            assert batch.molality(name)[k] == pytest.approx(one.molality(name), rel=1e-8, abs=1e-20)


@settings(deadline=None, max_examples=15)
@given(amount, amount, amount, amount, st.randoms(use_true_random=False))
def test_species_order_invariance(ca, so4, na, hco3, rnd):
    comp = _comp(ca, so4, na, hco3)
    items = list(comp.items())
    rnd.shuffle(items)
    a = speciate(dict(comp))
    b = speciate(dict(items))
    assert a.ph == pytest.approx(b.ph, abs=1e-9)
    for name in a.species:
        assert a.molality(name) == pytest.approx(b.molality(name), rel=1e-8, abs=1e-20)


@settings(deadline=None, max_examples=15)
@given(amount, amount, amount, amount)
def test_totals_recovered_from_the_species(ca, so4, na, hco3):
    comp = _comp(ca, so4, na, hco3)
    res = speciate(comp)
    expected = {"Ca^2+": comp["Ca^2+"], "SO4^2-": comp["SO4^2-"], "Na+": comp["Na+"], "CO3^2-": comp["HCO3-"]}
    for c, total in expected.items():
        j = res.components.index(c)
        recovered = float(res.stoichiometry[:, j] @ res.m)
        assert recovered == pytest.approx(total, rel=1e-10)
        assert res.totals[c] == pytest.approx(total, rel=1e-10)


@settings(deadline=None, max_examples=10)
@given(st.floats(min_value=1e-4, max_value=0.01), st.floats(min_value=1e-4, max_value=0.05))
def test_free_calcium_falls_as_sulfate_rises(ca, so4_max):
    so4 = np.linspace(0.0, so4_max, 8)
    sol = act.Solution({"Ca^2+": np.full(8, ca), "Cl-": np.full(8, 2 * ca), "Na+": 2 * so4, "SO4^2-": so4})
    free = speciate(sol).molality("Ca^2+")
    assert np.all(np.diff(free) < 0)
