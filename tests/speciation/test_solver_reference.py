"""The fast solver against the previous one (kept in ``_reference_solver.py``) and its parts.

The previous solver (lagged γ with two sweeps per step, scaled dense Jacobian solved row by
row by ``numpy.linalg.solve``) is the reference: on random compositions of the benchmark
matrix, under each closure and for a model of I alone (Davies: the bordered Newton step)
and one that is not (Pitzer: the sweeps), both must give the same speciation to 1e-10
relative (issue 9). The reference is run with ``tol=1e-13`` so that its own stopping error
(up to ~1e-10 on minor species at the default 1e-11, measured) does not use up the margin.
"""

import sys
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import activity as act
import activity.speciation.api as api
from activity.speciation import solver
from activity.speciation._batched import SparseCholesky

sys.path.insert(0, str(Path(__file__).parent))
import _reference_solver as reference  # noqa: E402

RTOL = 1e-10  # issue 9: results identical to the previous solver's to 1e-10 relative


def natural_water(n, rng):
    """Random compositions of the benchmark matrix (benchmarks/bench_speciation.py), invented."""
    na = rng.uniform(1e-4, 0.02, n)
    k = rng.uniform(1e-5, 0.002, n)
    ca = rng.uniform(1e-5, 0.005, n)
    mg = rng.uniform(1e-5, 0.003, n)
    hco3 = rng.uniform(1e-4, 0.005, n)
    so4 = rng.uniform(1e-5, 0.005, n)
    h2po4 = rng.uniform(1e-7, 1e-4, n)
    f = rng.uniform(1e-7, 1e-4, n)
    cl = np.maximum(na + k + 2 * ca + 2 * mg - hco3 - 2 * so4 - h2po4 - f, 1e-6)
    return {"Na+": na, "K+": k, "Ca^2+": ca, "Mg^2+": mg, "Cl-": cl, "HCO3-": hco3,
            "SO4^2-": so4, "H2PO4-": h2po4, "F-": f}


def previous(solution, model, **kw):
    saved = api.solve_blocks, api.System
    api.solve_blocks, api.System = reference.solve_blocks, reference.System
    try:
        return act.speciate(solution, model, tol=1e-13, **kw)
    finally:
        api.solve_blocks, api.System = saved


def assert_same(new, old):
    assert new.species == old.species
    assert np.all(new.converged)
    np.testing.assert_allclose(new.m, old.m, rtol=RTOL, atol=0)
    np.testing.assert_allclose(new.log10_gamma, old.log10_gamma, rtol=0, atol=RTOL)
    np.testing.assert_allclose(new.ph, old.ph, rtol=RTOL, atol=0)
    np.testing.assert_allclose(new.ionic_strength, old.ionic_strength, rtol=RTOL, atol=0)


@pytest.mark.filterwarnings("ignore::activity.ActivityWarning")
@pytest.mark.parametrize("model", ["davies", "truesdell-jones", "pitzer"])
def test_benchmark_matrix_matches_the_previous_solver(model):
    rng = np.random.default_rng(20261202)
    comp = natural_water(300 if model != "pitzer" else 60, rng)
    if model == "truesdell-jones":  # its data cover these ions; the pairs get the fallback size
        m = act.get_model(model, fallback_size=4.0)
    else:
        m = model
    sol = act.Solution(comp, T=rng.uniform(278.15, 318.15, comp["Na+"].shape), neutrality="ignore")
    assert_same(act.speciate(sol, m), previous(sol, m))


@pytest.mark.filterwarnings("ignore::activity.ActivityWarning")
@pytest.mark.parametrize(
    "closure",
    [{"ph": 7.4}, {"ph": 6.5, "balance": "Cl-"}, {"gases": {"CO2(g)": 42.0}}, {"activities": {"Ca^2+": 1e-4}}],
    ids=["fixed-ph", "ph-and-balance-on-Cl", "open-to-co2", "fixed-ca-activity"],
)
def test_other_closures_match_the_previous_solver(closure):
    # fixed activities take the full-Jacobian step (numpy.linalg.solve), the rest the Cholesky one
    comp = natural_water(40, np.random.default_rng(5))
    if closure.get("balance") == "Cl-":
        comp["Na+"] = comp["Na+"] + 0.01  # cations in excess: the balance adds chloride (else no solution)
    sol = act.Solution(comp, neutrality="ignore")
    assert_same(act.speciate(sol, "davies", **closure), previous(sol, "davies", **closure))


@pytest.mark.filterwarnings("ignore::activity.ActivityWarning")
def test_edta_metal_buffer_matches_the_previous_solver():
    # a chelator: most calcium bound, the free ion 6 decades below its total
    comp = {"Ca^2+": np.array([1e-3, 2e-3, 5e-3]), "K+": 0.1, "Cl-": 0.1, "C10H12N2O8^4-": 0.01}
    sol = act.Solution(comp, neutrality="ignore")
    assert_same(act.speciate(sol, "davies", ph=7.0), previous(sol, "davies", ph=7.0))


@pytest.mark.filterwarnings("ignore::activity.ActivityWarning")
@settings(deadline=None, max_examples=20)
@given(st.integers(0, 2**31 - 1))
def test_blocks_and_parked_rows_do_not_change_the_answer(seed):
    # blocks of 16 rows whose last unfinished rows (up to half) are parked for the joint
    # finish: the same answer as one block, and every row counted once by ``progress``
    comp = natural_water(70, np.random.default_rng(seed))
    sol = act.Solution(comp, neutrality="ignore")
    whole = act.speciate(sol)
    saved = solver.CHUNK, solver.PARK, solver.PARK_SHARE
    solver.CHUNK, solver.PARK, solver.PARK_SHARE = 16, 8, 0.5
    counts = []
    try:
        split = act.speciate(sol, progress=counts.append)
    finally:
        solver.CHUNK, solver.PARK, solver.PARK_SHARE = saved
    np.testing.assert_allclose(split.m, whole.m, rtol=RTOL, atol=0)
    assert sum(counts) == 70 and len(counts) >= 5  # five blocks, then the joint finish if any


@settings(deadline=None, max_examples=30)
@given(st.integers(0, 2**31 - 1), st.integers(2, 9))
def test_sparse_cholesky_against_numpy(seed, k):
    # a random sparse pattern and matrices νᵀ diag(m) ν on it, against numpy.linalg.solve
    rng = np.random.default_rng(seed)
    nu = (rng.random((3 * k, k)) < 0.2) * rng.integers(1, 3, (3 * k, k)).astype(float)
    nu[:k] = np.eye(k)
    chol = SparseCholesky(np.abs(nu).T @ np.abs(nu) > 0)
    m = 10 ** rng.uniform(-6, 0, (3 * k, 16))
    S = np.einsum("sj,sn,sk->jkn", nu, m, nu)
    packed = np.array([S[a, b] for a, b in chol.pairs])
    Y = rng.normal(size=(2, k, 16))
    X, ok = chol.solve(packed, Y)
    ref = np.linalg.solve(S.transpose(2, 0, 1), Y.transpose(2, 1, 0)).transpose(2, 1, 0)
    assert np.all(ok)
    # condition number of S up to ~1e6 here: 1e-8 relative to the largest component leaves room
    np.testing.assert_allclose(X, ref, rtol=0, atol=1e-8 * np.max(np.abs(ref)))


def test_ionic_strength_models_are_recognised():
    assert solver.ionic_strength_only(act.get_model("davies"))
    assert solver.ionic_strength_only(act.get_model("ideal"))
    assert solver.ionic_strength_only(act.get_model("extended-debye-huckel"))
    assert not solver.ionic_strength_only(act.get_model("pitzer"))
