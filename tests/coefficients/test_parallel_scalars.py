"""activity.coefficients.parallel keeps a scalar temperature and pressure scalar in every block.

A scalar T broadcast to the block's shape would send Pitzer down its temperature-per-row
path (coefficients and Aφ evaluated for every row); kept scalar, each block takes the
one-temperature path. The numbers are the same either way (checked against the model).
"""

import numpy as np
import pytest

from activity.coefficients import get_model, parallel
from activity.solution import Solution

da = pytest.importorskip("dask.array")


def _comp(n):
    rng = np.random.default_rng(7)
    na = rng.uniform(0.01, 1.0, n)
    mg = rng.uniform(0.0, 0.2, n)
    return {"Na+": na, "Mg^2+": mg, "Cl-": na + 2 * mg}


@pytest.fixture
def seen(monkeypatch):
    """The temperatures (T_compact shapes) the model receives, block by block."""
    shapes = []
    real = parallel._model

    class Spy:
        def __init__(self, model):
            self.model = model

        def activity_coefficients(self, sol, **kw):
            shapes.append(sol.T_compact.shape)
            return self.model.activity_coefficients(sol, **kw)

    monkeypatch.setattr(parallel, "_model", lambda m: Spy(real(m)))
    return shapes


@pytest.mark.parametrize("kind", ["numpy", "dask"])
def test_scalar_temperature_reaches_each_block_as_one_value(seen, kind):
    comp = _comp(120)
    inp = comp if kind == "numpy" else {k: da.from_array(v, chunks=40) for k, v in comp.items()}
    g = parallel.activity_coefficients(inp, "pitzer", T=310.0, P=2e5)
    got = {k: np.asarray(v.compute(scheduler="sync") if kind == "dask" else v) for k, v in g.items()}
    assert seen and all(int(np.prod(s)) == 1 for s in seen)  # one T per block, never a row array
    sol = Solution(comp, T=310.0, P=2e5, neutrality="ignore")
    ref = get_model("pitzer").activity_coefficients(sol, warn=False)
    for s in comp:
        np.testing.assert_allclose(got[s], ref[s], rtol=1e-14)  # round-off only


def test_temperature_array_still_goes_per_row(seen):
    comp = _comp(60)
    T = np.linspace(280.0, 320.0, 60)
    dcomp = {k: da.from_array(v, chunks=20) for k, v in comp.items()}
    g = parallel.activity_coefficients(dcomp, "pitzer", T=T)
    got = g["Na+"].compute(scheduler="sync")
    assert seen and all(int(np.prod(s)) == 20 for s in seen)
    ref = get_model("pitzer").activity_coefficients(Solution(comp, T=T, neutrality="ignore"), warn=False)
    np.testing.assert_allclose(got, ref["Na+"], rtol=1e-14)


def test_xarray_with_scalar_temperature_keeps_dims():
    xr = pytest.importorskip("xarray")
    comp = _comp(30)
    arrs = {k: xr.DataArray(v, dims="sample") for k, v in comp.items()}
    g = parallel.activity_coefficients(arrs, "pitzer", T=300.0)
    assert g["Na+"].dims == ("sample",)
    ref = get_model("pitzer").activity_coefficients(Solution(comp, T=300.0, neutrality="ignore"), warn=False)
    np.testing.assert_allclose(g["Cl-"].values, ref["Cl-"], rtol=1e-14)
