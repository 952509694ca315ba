"""dask and xarray inputs: lazy blockwise evaluation, same numbers as numpy, dims kept.

The distributed tests start a LocalCluster of two worker processes inside the test (small
arrays: the point is that the blocks travel to other processes and come back equal).
"""

import numpy as np
import pytest

from activity.coefficients import get_model
from activity.coefficients.parallel import activity_coefficients
from activity.errors import InputError
from activity.solution import Solution

da = pytest.importorskip("dask.array")


def _comp(n, seed=0):
    rng = np.random.default_rng(seed)
    na = rng.uniform(0.01, 1.0, n)
    mg = rng.uniform(0.0, 0.2, n)
    so4 = rng.uniform(0.0, 0.1, n)
    return {"Na+": na, "Mg^2+": mg, "Cl-": na + 2 * mg - 2 * so4 + 0.2, "SO4^2-": so4}


def test_numpy_in_numpy_out_equals_the_model():
    comp = _comp(50)
    g = activity_coefficients(comp, "pitzer", T=310.0)
    ref = get_model("pitzer").activity_coefficients(Solution(comp, T=310.0, neutrality="ignore"), warn=False)
    for s in comp:
        np.testing.assert_allclose(g[s], ref[s], rtol=1e-15)


def test_dask_stays_lazy_until_computed():
    calls = []

    def source(block):
        calls.append(block.size)
        return block

    m = da.map_blocks(source, da.from_array(np.linspace(0.001, 0.5, 400), chunks=100), dtype=float, meta=np.array(()))
    g = activity_coefficients({"Na+": m, "Cl-": m}, "davies")
    assert isinstance(g["Na+"], da.Array) and g["Na+"].chunks == ((100, 100, 100, 100),)
    assert calls == []  # nothing evaluated yet
    ref = get_model("davies").activity_coefficients(
        Solution({"Na+": np.linspace(0.001, 0.5, 400), "Cl-": np.linspace(0.001, 0.5, 400)}), warn=False
    )
    np.testing.assert_allclose(g["Cl-"].compute(scheduler="sync"), ref["Cl-"], rtol=1e-15)
    assert calls  # evaluated on compute


def test_dask_temperature_per_row_and_in_range():
    comp = _comp(300, 1)
    T = np.linspace(280.0, 360.0, 300)
    dcomp = {k: da.from_array(v, chunks=70) for k, v in comp.items()}
    g = activity_coefficients(dcomp, "pitzer", T=da.from_array(T, chunks=70), in_range=True)
    ref = get_model("pitzer").activity_coefficients(Solution(comp, T=T, neutrality="ignore"), warn=False)
    got = da.compute(*[g[s] for s in comp], g["in_range"], scheduler="sync")
    for s, arr in zip(comp, got[:-1]):
        np.testing.assert_allclose(arr, ref[s], rtol=1e-14)
    # blocks see only their rows, so the per-row flag is the same; > 323.15 K is outside Pitzer's 0–50 °C
    np.testing.assert_array_equal(got[-1], ref.in_range)
    assert not got[-1].all() and got[-1].any()


def test_bad_model_and_output_fail_before_any_work():
    m = da.ones(10, chunks=5) * 0.1
    with pytest.raises(InputError):
        activity_coefficients({"Na+": m, "Cl-": m}, "no-such-model")
    with pytest.raises(InputError):
        activity_coefficients({"Na+": m, "Cl-": m}, output="ln")


def test_xarray_keeps_dims_and_coords():
    xr = pytest.importorskip("xarray")
    m = xr.DataArray(np.linspace(0.001, 0.3, 6), dims="m", coords={"m": np.arange(6) * 0.05})
    T = xr.DataArray([288.15, 298.15, 308.15], dims="T", coords={"T": [15, 25, 35]})
    g = activity_coefficients({"Na+": m, "Cl-": m}, "davies", T=T)
    assert g["Na+"].dims == ("m", "T") and list(g["Na+"].coords["T"].values) == [15, 25, 35]
    ref = get_model("davies").activity_coefficients(
        Solution({"Na+": m.values[:, None], "Cl-": m.values[:, None]}, T=T.values[None, :]), warn=False
    )
    np.testing.assert_allclose(g["Na+"].values, ref["Na+"], rtol=1e-15)
    lazy = activity_coefficients({"Na+": m.chunk({"m": 2}), "Cl-": m}, "davies", T=T)
    assert isinstance(lazy["Na+"].data, da.Array)
    np.testing.assert_allclose(lazy["Na+"].compute().values, ref["Na+"], rtol=1e-15)
    with pytest.raises(InputError):
        activity_coefficients({"Na+": m, "Cl-": np.ones(6)}, "davies")  # unnamed dimension


@pytest.fixture(scope="module")
def client():
    distributed = pytest.importorskip("distributed")
    cluster = distributed.LocalCluster(
        n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None, silence_logs=40
    )
    c = distributed.Client(cluster)
    yield c
    c.close()
    cluster.close()


def test_on_a_local_cluster_of_two_worker_processes(client):
    import os

    import activity

    here = os.path.dirname(activity.__file__)
    workers = client.run(lambda: (os.getpid(), __import__("activity").__file__))
    assert len(workers) == 2 and len({pid for pid, _ in workers.values()}) == 2
    assert all(os.path.dirname(f) == here for _, f in workers.values())  # this checkout's package
    comp = _comp(1000, 2)
    dcomp = {k: da.from_array(v, chunks=250) for k, v in comp.items()}
    g = activity_coefficients(dcomp, "pitzer", T=298.15)
    got = client.compute([g[s] for s in comp], sync=True)
    ref = get_model("pitzer").activity_coefficients(Solution(comp, neutrality="ignore"), warn=False)
    for s, arr in zip(comp, got):
        np.testing.assert_allclose(arr, ref[s], rtol=1e-14)
    # a reduction that never gathers the array: mean γ± of NaCl-type rows, chunk by chunk
    mean = client.compute(da.sqrt(g["Na+"] * g["Cl-"]).mean(), sync=True)
    assert mean == pytest.approx(float(np.mean(np.sqrt(ref["Na+"] * ref["Cl-"]))), rel=1e-13)
