"""The Monte Carlo kernel of unknowns (activity.workflows.ise._mc) against its earlier form.

`_mc_reference.py` keeps the kernel as it was before its speed work (Newton on ln m with a
logarithm of the total and e^x per pass, statistics merged per block). Same seed → same
draws, so the two must give the same values within the solver tolerance; the new Newton
kernel is also checked on its own against the activity model evaluated on a Solution.
"""

import sys
import warnings
from pathlib import Path

import numpy as np
import pytest

import activity.workflows.ise._mc as mc
from activity import Solution
from activity.errors import ActivityWarning
from activity.workflows.ise.unknowns import RTOL, _Reader

sys.path.insert(0, str(Path(__file__).parent))
import _mc_reference as reference  # noqa: E402  (the pre-speed-work kernel)
from test_monte_carlo import MATRIX, calcium_cal  # noqa: E402

DH_MODELS = ["davies", "extended_debye_huckel", "truesdell_jones", "debye_huckel_limiting", "ideal"]


def _both(cal, E, matrix, monkeypatch, **kw):
    """The same Monte Carlo by the current kernel and by the reference (same seed, same draws)."""
    kw = dict(method="monte-carlo", model_choice=False) | kw
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        new = cal.molality_with_uncertainty(E, matrix, **kw)
        monkeypatch.setattr(mc, "run_monte_carlo", reference.run_monte_carlo)
        old = cal.molality_with_uncertainty(E, matrix, **kw)
        monkeypatch.undo()
    return new, old


def _assert_same(new, old):
    # both solve ln m to RTOL = 1e-11 per trial (the reference stops each element there, the new
    # kernel iterates the block as a whole): the means agree to 2·RTOL; an SD of about 1 % of
    # the value moves by at most 2·RTOL·m/SD, 1e-9 covers it
    np.testing.assert_allclose(new.value, old.value, rtol=2 * RTOL, atol=0)
    np.testing.assert_allclose(new.standard_uncertainty, old.standard_uncertainty, rtol=1e-9, atol=0)
    for a, b in zip(new.propagation, old.propagation):
        # the stored offsets are float32 (relative rounding 6e-8): a value may round to the
        # neighbouring float32 in one run and not in the other; the offsets reach some 5 SD,
        # so two of those roundings are within 1e-6 SD, plus the solver tolerance
        tol = 1e-6 * b.standard_uncertainty + 2 * RTOL * abs(b.value)
        np.testing.assert_allclose(np.sort(a.samples.offsets), b.samples.offsets, rtol=0, atol=tol)
        for x, y in zip(a.coverage_interval(), b.coverage_interval()):
            assert abs(x - y) <= tol
        assert a.samples.reference == pytest.approx(b.samples.reference, rel=2 * RTOL)


@pytest.mark.parametrize("model", DH_MODELS)
@pytest.mark.parametrize(
    "inputs",
    [dict(u_temperature=0.3, u_matrix=0.02), dict(u_matrix=0.02), dict(u_temperature=0.5)],
    ids=["T-and-matrix", "matrix", "T"],
)
def test_same_draws_same_values_as_the_reference(model, inputs, monkeypatch):
    cal = calcium_cal(model)
    matrix, hi = MATRIX, -1.5
    if model == "debye_huckel_limiting":  # the limiting law: dilute samples in a dilute matrix only
        matrix, hi = Solution({"K+": 0.002, "Cl-": 0.002}), -3.0
    E = cal.E0 + cal.slope * np.random.default_rng(3).uniform(-5.0, hi, 7)
    new, old = _both(cal, E, matrix, monkeypatch, counter_ion="Cl-", u_emf=3e-4, trials=6000, seed=5, **inputs)
    _assert_same(new, old)


def test_same_values_with_the_model_spread_and_a_temperature_per_sample(monkeypatch):
    cal = calcium_cal("extended_debye_huckel")
    matrix = Solution({"K+": [0.05, 0.1, 0.2], "Cl-": [0.05, 0.1, 0.2]}, T=[293.15, 298.15, 308.15])
    E = cal.E0 + cal.slope * np.array([-4.0, -3.0, -2.0])
    kw = dict(counter_ion="Cl-", u_emf=3e-4, u_temperature=0.5, u_matrix=0.02, trials=5000, seed=9)
    new, old = _both(cal, E, matrix, monkeypatch, model_choice=True, **kw)
    _assert_same(new, old)


def test_same_values_with_an_interferent(monkeypatch):
    cal = calcium_cal(interferents={"Mg^2+": 0.02})
    matrix = Solution({"Mg^2+": [0.002, 0.01], "K+": 0.1, "Cl-": [0.104, 0.12]})
    E = cal.E0 + cal.slope * np.array([-3.5, -2.5])
    kw = dict(counter_ion="Cl-", u_emf=3e-4, u_temperature=0.2, u_matrix=0.02, trials=3000, seed=3)
    new, old = _both(cal, E, matrix, monkeypatch, **kw)
    _assert_same(new, old)


@pytest.mark.parametrize("model", ["davies", "extended_debye_huckel", "truesdell_jones", "debye_huckel_limiting"])
def test_newton_kernel_solves_the_reading_equation(model):
    # the molality the kernel returns, put back into the activity model on a Solution (the
    # general path: Solution → model → lg γ), gives back the total: ln(γ·m) = ln tot within RTOL
    cal = calcium_cal(model)
    reader = _Reader(cal, MATRIX, "Cl-")
    terms = mc._fast_terms(reader)
    rng = np.random.default_rng(8)
    n, k = 300, 20
    hi = -3.0 if model == "debye_huckel_limiting" else -1.3
    tot = 10.0 ** rng.uniform(-6.5, hi, (n, k))
    scale = rng.uniform(0.5, 1.5, (n, 1))
    T = rng.uniform(283.15, 318.15, (n, 1))
    A, B = mc._water_AB(T, np.full(T.shape, 101325.0), True)
    sq = reader.charges.astype(float) ** 2
    w = 0.5 * sq[reader.i] + 0.5 * sq[reader.c] * reader.ratio
    Ib = scale * (0.5 * np.tensordot(sq, reader.base, axes=(0, 0)))
    r0 = rng.uniform(1.0, 3.0, k)  # a start of 1/γ, deliberately not the answer
    buf = mc._Buffers((n, k)).take(n)
    m = mc._newton_primary(terms[reader.i], tot, w, Ib, A, B, r0, np.log(r0), RTOL, buf)
    assert m is not None and np.all(np.isfinite(m))
    lg, _, _, _ = reader._terms(reader._solution(m, scale, T), m)
    resid = np.log(m) + np.log(10.0) * lg - np.log(tot)
    assert np.max(np.abs(resid)) <= RTOL


def test_newton_kernel_marks_readings_below_detection():
    cal = calcium_cal()
    reader = _Reader(cal, MATRIX, "Cl-")
    terms = mc._fast_terms(reader)
    tot = np.array([[1e-4, -1e-7, 0.0], [2e-3, 1e-5, 3e-6]])
    sq = reader.charges.astype(float) ** 2
    Ib = 0.5 * float(np.tensordot(sq, reader.base, axes=(0, 0)))
    w = 0.5 * sq[reader.i] + 0.5 * sq[reader.c] * reader.ratio
    A, B = mc._water_AB(np.array([298.15]), np.array([101325.0]), False)
    r0 = np.full(3, 1.5)
    m = mc._newton_primary(terms[reader.i], tot, w, Ib, A, B, r0, np.log(r0), RTOL, mc._Buffers(tot.shape).take(2))
    np.testing.assert_array_equal(np.isnan(m), tot <= 0)
    assert np.all(m[tot > 0] > tot[tot > 0])  # γ < 1 in 0.1 mol/kg KCl: m = a/γ above the activity


@pytest.mark.parametrize("amax", [3e-9, 1e-6, 7e-6, 1e-4, 1e-3, 0.016, 0.03])
def test_exponential_by_taylor_polynomial(amax):
    # m·e^(−δ) by the Taylor polynomial of the degree chosen for max|δ| against np.exp: the
    # truncation is below 2⁻⁵³ by the choice; with Horner's rounding and that of both products
    # and of np.exp, 5e-16 relative (a little over 2 ulp)
    n = mc._exp_taylor_degree(amax)
    assert n > 0
    delta = np.random.default_rng(1).uniform(-amax, amax, 5000)
    m = np.random.default_rng(2).uniform(1e-6, 1e-1, 5000)
    exact = m * np.exp(-delta)
    mc._times_exp_minus(m, delta, n, np.empty_like(m))
    np.testing.assert_allclose(m, exact, rtol=5e-16, atol=0)


def test_large_steps_take_the_exponential():
    assert mc._exp_taylor_degree(0.05) == 0  # degree 8 would be needed
    assert mc._exp_taylor_degree(0.5) == 0
    assert mc._exp_taylor_degree(5.0) == 0
    assert mc._exp_taylor_degree(float("nan")) == 0
    # the degree grows with the step: 1 only for steps near the rounding level
    assert mc._exp_taylor_degree(1e-9) == 1


def test_draw_order_sample_gives_the_intervals_of_the_sorted_values():
    # the store is kept in draw order and sorted on first use: every interval, symmetric or
    # shortest, at any p, equals the one from the values sorted up front (exactly: same values)
    from activity.uncertainty.result import SortedSample

    rng = np.random.default_rng(4)
    values = (rng.lognormal(0.0, 0.4, 20_001) - 1.0).astype(np.float32)  # skewed: shortest ≠ symmetric
    drawn = mc.DrawOrderSample(0.25, values.copy())
    ordered = SortedSample(0.25, np.sort(values))
    for p in (0.95, 0.5, 0.99):
        for kind in ("symmetric", "shortest"):
            assert drawn.interval(p, kind) == ordered.interval(p, kind)
    np.testing.assert_array_equal(drawn.offsets, ordered.offsets)  # sorted in place, nothing lost
    assert drawn.interval(0.95, "shortest") != drawn.interval(0.95, "symmetric")


def test_temperature_polynomial_fitted_once_per_run():
    from activity.water import debye_huckel_A, debye_huckel_B

    T0 = np.array([293.15, 298.15, 310.15])
    P0 = np.full(3, 101325.0)
    ab = mc._run_water_AB(T0, P0, 0.3, True)
    rng = np.random.default_rng(6)
    T = T0 + rng.normal(0.0, 0.3, (2000, 1))
    P = np.full(T.shape, 101325.0)
    A, B = ab(T, P, True)
    # accepted only where it meets POLY_RTOL = 1e-13 at 41 points of the range; at the draws
    # themselves 1e-12 relative (rounding of the Chebyshev sum) is the stated bound
    np.testing.assert_allclose(A, debye_huckel_A(T, P), rtol=1e-12)
    np.testing.assert_allclose(B, debye_huckel_B(T, P), rtol=1e-12)
    # beyond the fitted range (T0 ± 10 u_T) and at another pressure: the water model itself
    far = np.array([[T0[2] + 5.0]])
    np.testing.assert_array_equal(ab(far, np.full((1, 1), 101325.0), True)[0], debye_huckel_A(far, 101325.0))
    np.testing.assert_array_equal(ab(T[:5], np.full((5, 3), 2e5), True)[0], debye_huckel_A(T[:5], 2e5))
    # the range stops at the water model's own limits (no evaluation outside them)
    cold = mc._run_water_AB(np.array([274.15]), np.array([101325.0]), 0.5, False)
    assert cold(np.array([[274.0]]), np.array([[101325.0]]), False)[0] == pytest.approx(
        debye_huckel_A(274.0, 101325.0), rel=1e-12
    )
