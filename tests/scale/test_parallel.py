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


def test_stacked_numpy_is_the_dict_in_one_array_in_the_given_order():
    comp = _comp(40, 3)
    g = activity_coefficients(comp, "pitzer", T=300.0, in_range=True)
    st = activity_coefficients(comp, "pitzer", T=300.0, in_range=True, stacked=True)
    assert isinstance(st, np.ndarray) and st.shape == (len(comp) + 1, 40)
    for i, s in enumerate(comp):
        np.testing.assert_array_equal(st[i], g[s])  # the same numbers, not only close
    np.testing.assert_array_equal(st[-1] > 0.5, g["in_range"])
    assert set(np.unique(st[-1])) <= {0.0, 1.0}


def test_stacked_dask_stays_lazy_and_reduces_over_rows():
    comp = _comp(300, 4)
    T = np.linspace(280.0, 340.0, 300)  # part of the rows beyond Pitzer's 0–50 °C: flag 0.0 there
    dcomp = {k: da.from_array(v, chunks=70) for k, v in comp.items()}
    st = activity_coefficients(dcomp, "pitzer", T=da.from_array(T, chunks=70), output="log10_gamma", stacked=True)
    assert isinstance(st, da.Array) and st.chunks == ((4,), (70, 70, 70, 70, 20))
    st_flag = activity_coefficients(dcomp, "pitzer", T=T, in_range=True, stacked=True)
    ref = get_model("pitzer").activity_coefficients(Solution(comp, T=T, neutrality="ignore"), warn=False)
    lg = np.asarray(ref.log10_gamma)
    means, flag = da.compute(st.mean(axis=1), st_flag[-1], scheduler="sync")
    np.testing.assert_allclose(means, lg.mean(axis=1), rtol=1e-13)
    np.testing.assert_array_equal(flag > 0.5, ref.in_range)
    assert 0.0 < flag.mean() < 1.0


def test_stacked_xarray_has_a_species_dimension_with_canonical_names():
    xr = pytest.importorskip("xarray")
    m = xr.DataArray(np.linspace(0.001, 0.3, 6), dims="m", coords={"m": np.arange(6) * 0.05})
    st = activity_coefficients({"Ca2+": m, "Cl-": 2 * m}, "davies", in_range=True, stacked=True)
    assert st.dims == ("species", "m") and list(st.coords["species"].values) == ["Ca^2+", "Cl-", "in_range"]
    g = activity_coefficients({"Ca2+": m, "Cl-": 2 * m}, "davies")
    np.testing.assert_array_equal(st.sel(species="Ca^2+").values, g["Ca^2+"].values)
    np.testing.assert_array_equal(st.coords["m"].values, m.coords["m"].values)
    lazy = activity_coefficients({"Ca2+": m.chunk({"m": 3}), "Cl-": 2 * m}, "davies", stacked=True)
    assert isinstance(lazy.data, da.Array)
    np.testing.assert_allclose(lazy.sel(species="Cl-").compute().values, g["Cl-"].values, rtol=1e-15)
    clash = xr.DataArray(np.full(2, 0.1), dims="species")
    with pytest.raises(InputError, match="species"):
        activity_coefficients({"Na+": clash, "Cl-": clash}, "davies", stacked=True)


def test_stacked_must_be_a_bool():
    with pytest.raises(InputError, match="stacked"):
        activity_coefficients({"Na+": 0.1, "Cl-": 0.1}, stacked="yes")


def test_stacked_reduction_on_the_local_cluster(client):
    comp = _comp(1000, 5)
    k = da.random.default_rng(9).uniform(0.5, 1.5, 1000, chunks=200)  # rows made inside the graph, as in bench_dask
    dcomp = {s: da.from_array(v, chunks=200) * k for s, v in comp.items()}
    st = activity_coefficients(dcomp, "pitzer", output="log10_gamma", stacked=True)
    got = client.compute(st.mean(axis=1), sync=True)
    scale = k.compute(scheduler="sync")
    scaled = {s: v * scale for s, v in comp.items()}
    ref = get_model("pitzer").activity_coefficients(Solution(scaled, neutrality="ignore"), warn=False)
    np.testing.assert_allclose(got, np.asarray(ref.log10_gamma).mean(axis=1), rtol=1e-13)
