"""The public signature of speciate and its result (issue 9; to be pinned in tests/test_public_api.py)."""

import inspect

import pytest

from activity.speciation import SpeciationResult, speciate


def test_speciate_signature():
    sig = inspect.signature(speciate)
    params = list(sig.parameters)
    assert params[:2] == ["solution", "model"]
    assert sig.parameters["model"].default == "davies"
    for name in ("ph", "balance", "gases"):
        assert sig.parameters[name].kind is inspect.Parameter.KEYWORD_ONLY
    assert sig.parameters["ph"].default is None and sig.parameters["gases"].default is None


def test_result_attributes():
    res = speciate({"Na+": 0.01, "Cl-": 0.01})
    assert isinstance(res, SpeciationResult)
    for attr in ("species", "ph", "ionic_strength", "converged", "iterations", "notes", "closure", "totals"):
        assert hasattr(res, attr)
    assert res.activity("Na+") == res.gamma("Na+") * res.molality("Na+")


def test_free_activity_is_batch_first():
    import numpy as np

    import activity as act
    from activity.speciation import free_activity

    so4 = np.array([0.0, 0.005, 0.01])
    sol = act.Solution({"Ca^2+": np.full(3, 0.01), "Cl-": np.full(3, 0.02), "Na+": 2 * so4, "SO4^2-": so4})
    a = free_activity(sol, "Ca^2+")
    assert a.shape == (3,)
    assert np.all(np.diff(a) < 0)  # sulfate binds calcium: the electrode sees less
    assert a[1] == pytest.approx(speciate(sol[1]).activity("Ca^2+"), rel=1e-9)
