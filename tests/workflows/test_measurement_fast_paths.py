"""The fast paths of a GUM evaluation give the numbers of the previous path.

Two shortcuts are checked against the path they replace, on random compositions:

* the model spread evaluates the models on the sample itself (a plain ``Solution``), not on
  a re-validated copy made by ``Solution.replace`` with the same numbers;
* ``activity.water`` keeps Aφ and B for scalar T and P (an lru memo of the array function).

The reference turns both off (the builder always re-validates, the memo is bypassed);
every figure of the result must agree to 1e-12 relative (the task's rule; the arithmetic
is the same, so equality is expected and the tolerance only allows for nothing).
"""

import contextlib
import math
import warnings

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from activity import Solution, water
from activity.errors import ActivityWarning
from activity.nernst.cell import Cell
from activity.nernst.electrodes import IonSelectiveElectrode, silver_chloride_electrode
from activity.workflows import measurement
from activity.workflows.measurement import emf_with_uncertainty, molality_with_uncertainty, potential_with_uncertainty

RTOL = 1e-12


@contextlib.contextmanager
def reference_path():
    """The previous path: a re-validated copy at the estimates, no water memo."""
    original = measurement._point_builder

    def builder(sample, inputs, reading):
        build = original(sample, inputs, reading)
        return lambda cols, **_: build(cols)  # ignore at_estimates: always sample.replace

    with pytest.MonkeyPatch.context() as mp:
        mp.setattr(measurement, "_point_builder", builder)
        mp.setattr(water, "_scalar_key", lambda T, P: None)
        yield


def _close(a, b):
    return a == b or math.isclose(a, b, rel_tol=RTOL, abs_tol=0.0)


def _summary(r):
    p = r.propagation
    out = [r.value, r.standard_uncertainty, p.dof]
    out += [x for row in p.budget for x in (row.sensitivity, row.contribution, row.share)]
    spread = sorted(r.spread.values.items()) if r.spread is not None else []
    return out, [name for name, _ in spread], [v for _, v in spread], r.notes, [row.name for row in p.budget]


def _same(new, old):
    (nv, nn, ns, nnotes, nrows), (ov, on, os_, onotes, orows) = _summary(new), _summary(old)
    assert nrows == orows and nn == on and nnotes == onotes
    assert all(_close(a, b) for a, b in zip(nv, ov)), (nv, ov)
    assert all(_close(a, b) for a, b in zip(ns, os_)), (ns, os_)


compositions = st.tuples(
    st.floats(1e-5, 0.05), st.floats(1e-3, 0.5), st.floats(278.15, 318.15), st.floats(0.0, 0.5)
)


def _three(case):
    ca, k, T, uT = case
    sample = Solution({"Ca^2+": ca, "K+": k, "Cl-": 2 * ca + k}, T=T)
    matrix = Solution({"K+": k, "Cl-": k}, T=T)
    ise = IonSelectiveElectrode("Ca^2+", E0=0.1, selectivity={"K+": 1e-4})
    cell = Cell(left=silver_chloride_electrode(3.0), right=ise)
    opts = dict(u_amount=0.01, u_e0=1e-4, u_temperature=uT)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        return (
            potential_with_uncertainty(ise, sample, **opts),
            emf_with_uncertainty(cell, sample, "extended-debye-huckel", **opts),
            molality_with_uncertainty(ise, -0.02, matrix, "pitzer", counter_ion="Cl-", u_reading=2e-4, **opts),
        )


@settings(deadline=None, max_examples=8)
@given(case=compositions)
def test_gum_chain_equals_the_previous_path(case):
    # every registered model in the spread (the default), each of the three chain functions
    new = _three(case)
    with reference_path():
        old = _three(case)
    for a, b in zip(new, old):
        _same(a, b)


def test_speciated_or_other_subclass_still_goes_through_replace(monkeypatch):
    # only a plain Solution is used as it is; anything else is rebuilt as before
    class Tagged(Solution):
        __slots__ = ()

    sample = Tagged({"K+": 0.01, "Cl-": 0.01})
    seen = []
    original = Solution.replace

    def spy(self, *args, **kw):
        seen.append(type(self).__name__)
        return original(self, *args, **kw)

    monkeypatch.setattr(Solution, "replace", spy)
    ise = IonSelectiveElectrode("K+", E0=0.1)
    potential_with_uncertainty(ise, sample, u_amount=0.01, spread_models=["davies"])
    assert seen == ["Tagged", "Tagged"]  # the GUM rows and the point of the estimates
    seen.clear()
    potential_with_uncertainty(ise, Solution({"K+": 0.01, "Cl-": 0.01}), u_amount=0.01, spread_models=["davies"])
    assert seen == ["Solution"]  # the GUM rows only
