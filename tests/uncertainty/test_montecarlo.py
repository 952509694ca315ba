"""Monte Carlo propagation (JCGM 101:2008) and GUM validation in activity.uncertainty."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import constants, optimize, special

from activity.errors import ActivityWarning, InputError
from activity.uncertainty import Normal, Rectangular, StudentT, Triangular, propagate, validate_gum
from activity.uncertainty.montecarlo import block_size, numerical_tolerance

R = constants.R  # CODATA via scipy.constants
F = constants.physical_constants["Faraday constant"][0]


def additive(x1, x2, x3, x4):
    """Additive model Y = X1 + X2 + X3 + X4 (JCGM 101:2008 9.2)."""
    return x1 + x2 + x3 + x4


def irwin_hall_quantile(p, n=4):
    """Quantile of the sum of n independent U(0, 1) (Irwin 1927; Hall 1927).

    CDF F(x) = (1/n!) Σ_{k=0}^{floor x} (-1)^k C(n,k) (x-k)^n (common practice).
    """

    def cdf(x):
        k = np.arange(math.floor(x) + 1)
        return np.sum((-1.0) ** k * special.comb(n, k) * (x - k) ** n) / math.factorial(n)

    return optimize.brentq(lambda x: cdf(x) - p, 0.0, float(n), xtol=1e-12)


RECTANGULAR_INPUTS = {f"x{i}": Rectangular(0.0, math.sqrt(3.0)) for i in range(1, 5)}
NORMAL_INPUTS = {f"x{i}": Normal(0.0, 1.0) for i in range(1, 5)}


def test_jcgm101_additive_model_rectangular_inputs():
    # JCGM 101:2008 9.2.3 (from memory): four rectangular inputs with u = 1:
    # GUM 95 % interval ±3.92, Monte Carlo probabilistically symmetric ±3.88.
    gum = propagate(additive, RECTANGULAR_INPUTS)
    assert gum.standard_uncertainty == pytest.approx(2.0)
    assert gum.expanded_uncertainty() == pytest.approx(3.92, abs=0.005)
    mc = propagate(additive, RECTANGULAR_INPUTS, "monte-carlo", trials=1_000_000, seed=20)
    # Standard error of the 97.5 % quantile, √(p(1−p)/M)/f(y) (common practice), with
    # f ≈ 0.033 near ±3.88: 0.005, so abs=0.015 is 3 standard errors (the quoted 3.88
    # carries ±0.005 of rounding). Standard error of the sd: about 0.07 %.
    low, high = mc.coverage_interval(0.95, "symmetric")
    assert low == pytest.approx(-3.88, abs=0.015)
    assert high == pytest.approx(3.88, abs=0.015)
    # Exact value: sum of four U(-√3, √3) = 2√3·(IH4 − 2), IH4 Irwin–Hall.
    exact = 2 * math.sqrt(3) * (irwin_hall_quantile(0.975) - 2)
    assert exact == pytest.approx(3.879, abs=0.001)
    assert high == pytest.approx(exact, abs=0.015)
    assert mc.expanded_uncertainty() == pytest.approx(exact, abs=0.015)
    assert mc.standard_uncertainty == pytest.approx(2.0, rel=0.005)


def test_jcgm101_additive_model_normal_inputs():
    # JCGM 101:2008 9.2.2 (from memory): normal inputs with u = 1; GUM and
    # Monte Carlo both give the 95 % interval ±3.92.
    gum = propagate(additive, NORMAL_INPUTS)
    mc = propagate(additive, NORMAL_INPUTS, "monte-carlo", trials=1_000_000, seed=4)
    # Standard error of a 2.5 % or 97.5 % quantile of N(0, 2²) from 10⁶ values:
    # √(p(1−p)/M)/f(3.92) = 0.0053 (common practice); abs=0.02 is almost 4 of them.
    assert gum.coverage_interval() == pytest.approx((-3.92, 3.92), abs=0.005)
    assert mc.coverage_interval() == pytest.approx((-3.92, 3.92), abs=0.02)
    # For a symmetric density the shortest interval has the same length; its
    # position is poorly determined (the width is flat near its minimum).
    s_low, s_high = mc.coverage_interval(kind="shortest")
    assert s_high - s_low == pytest.approx(7.84, abs=0.03)
    assert s_high - s_low <= mc.coverage_interval()[1] - mc.coverage_interval()[0]


def test_monte_carlo_agrees_with_gum_for_near_linear_nernst():
    # Nernst E = E0 + (RT ln10/F) log10(a) with small relative u(a): nearly
    # linear, so MC and GUM agree (JCGM 101:2008 clause 8 logic; common practice).
    def nernst(E0, T, a):
        return E0 + R * T * np.log(10) / F * np.log10(a)

    inputs = {"E0": Normal(0.22233, 0.0003), "T": Triangular(298.15, 0.5), "a": Normal(0.01, 0.0001)}
    gum = propagate(nernst, inputs)
    mc = propagate(nernst, inputs, "monte-carlo", trials=200_000, seed=5)
    assert mc.value == pytest.approx(gum.value, abs=3e-6)
    assert mc.standard_uncertainty == pytest.approx(gum.standard_uncertainty, rel=0.01)
    assert mc.coverage_interval() == pytest.approx(gum.coverage_interval(), abs=2e-5)
    # The Monte Carlo budget carries the GUM sensitivities, and says so.
    assert [r.sensitivity for r in mc.budget] == [r.sensitivity for r in gum.budget]
    text = mc.format_budget()
    assert "GUM sensitivities" in text and "trials = 200000" in text


def test_skewed_output_shortest_interval_is_shorter():
    # Y = exp(X), X ~ N(0, 0.5²): lognormal, symmetric 95 % interval
    # exp(±1.95996·0.5) = [0.3753, 2.6645] (lognormal quantiles, common practice);
    # for a right-skewed density the shortest interval is shorter and lies lower.
    mc = propagate(lambda x: np.exp(x), {"x": Normal(0.0, 0.5)}, "monte-carlo", trials=400_000, seed=8)
    low, high = mc.coverage_interval(kind="symmetric")
    assert low == pytest.approx(0.3753, rel=0.01)
    assert high == pytest.approx(2.6645, rel=0.01)
    s_low, s_high = mc.coverage_interval(kind="shortest")
    assert s_high - s_low < 0.97 * (high - low)
    assert s_low < low and s_high < high


def test_correlated_inputs_monte_carlo():
    # Y = X1 + X2, u = 1 each: r = +1 gives u(y) = 2, r = -1 gives 0
    # (JCGM 100:2008 eq. 16, hand-computed).
    inputs = {"x1": Normal(1.0, 1.0), "x2": Normal(2.0, 1.0)}
    f = lambda x1, x2: x1 + x2  # noqa: E731
    plus = propagate(f, inputs, "monte-carlo", trials=100_000, seed=1, correlation={("x1", "x2"): 1.0})
    minus = propagate(f, inputs, "monte-carlo", trials=100_000, seed=1, correlation={("x1", "x2"): -1.0})
    assert plus.standard_uncertainty == pytest.approx(2.0, rel=0.01)
    assert minus.standard_uncertainty == pytest.approx(0.0, abs=1e-9)
    assert minus.value == pytest.approx(3.0, abs=1e-9)


def test_gaussian_copula_with_rectangular_marginals():
    # Gaussian copula with r = 0.5 and uniform marginals: Pearson = Spearman
    # correlation = (6/π) arcsin(r/2) = 0.4826 (Kruskal 1958, common practice),
    # so u(x1 + x2)² = 2 + 2·0.4826 for unit u, i.e. 1.7219, slightly below
    # the GUM 1.7321.
    inputs = {"x1": Rectangular(0.0, math.sqrt(3)), "x2": Rectangular(0.0, math.sqrt(3))}
    mc = propagate(
        lambda x1, x2: x1 + x2, inputs, "monte-carlo", trials=1_000_000, seed=2, correlation={("x1", "x2"): 0.5}
    )
    rho = 6 / math.pi * math.asin(0.25)
    assert mc.standard_uncertainty == pytest.approx(math.sqrt(2 + 2 * rho), abs=0.004)
    # Each marginal keeps its bounds: |x1 + x2| <= 2√3.
    assert mc.coverage_interval(0.999)[1] <= 2 * math.sqrt(3)


def test_student_t_input_in_monte_carlo():
    # t_5 scaled by s has sd s·sqrt(5/3) (JCGM 101:2008 6.4.9.4, from memory),
    # wider than the GUM, which uses s with dof 5.
    x = {"x": StudentT(10.0, 0.1, 5)}
    mc = propagate(lambda x: x, x, "monte-carlo", trials=300_000, seed=9)
    gum = propagate(lambda x: x, x)
    assert mc.standard_uncertainty == pytest.approx(0.1 * math.sqrt(5 / 3), rel=0.03)
    assert gum.standard_uncertainty == pytest.approx(0.1)
    # 95 % interval of t_5: ±2.571 s (Student t table, from memory), for both.
    assert mc.expanded_uncertainty() == pytest.approx(0.2571, rel=0.02)
    assert gum.expanded_uncertainty() == pytest.approx(0.2571, abs=5e-4)


def test_seed_reproducibility():
    kwargs = dict(method="monte-carlo", trials=50_000, chunk_size=20_000)
    a = propagate(additive, RECTANGULAR_INPUTS, seed=123, **kwargs)
    b = propagate(additive, RECTANGULAR_INPUTS, seed=123, **kwargs)
    c = propagate(additive, RECTANGULAR_INPUTS, seed=124, **kwargs)
    assert (a.value, a.standard_uncertainty) == (b.value, b.standard_uncertainty)
    assert a.coverage_interval(kind="shortest") == b.coverage_interval(kind="shortest")
    assert a.value != c.value
    g1 = propagate(additive, RECTANGULAR_INPUTS, seed=np.random.default_rng(7), **kwargs)
    g2 = propagate(additive, RECTANGULAR_INPUTS, seed=np.random.default_rng(7), **kwargs)
    assert g1.value == g2.value


def test_chunks_are_batched_calls():
    sizes = []

    def f(x):
        sizes.append(np.size(x))
        return 2 * x

    result = propagate(f, {"x": Normal(0.0, 1.0)}, "monte-carlo", trials=25_000, chunk_size=10_000, seed=0)
    # Three Monte Carlo chunks, then one GUM call (5 rows) for the budget.
    assert sizes == [10_000, 10_000, 5_000, 5]
    assert result.trials == 25_000


def test_adaptive_procedure_meets_its_tolerance():
    # Block size M = max(100/(1-p), 10⁴) = 10⁴ for p = 0.95 and δ = ½·10^ℓ
    # (JCGM 101:2008 7.9.4 b and 7.2, from memory).
    assert block_size(0.95) == 10_000
    assert numerical_tolerance(2.0, 2) == 0.05
    assert numerical_tolerance(0.0123, 2) == pytest.approx(0.0005)
    assert numerical_tolerance(9.97, 2) == pytest.approx(0.5)  # 9.97 -> "10"
    mc = propagate(additive, RECTANGULAR_INPUTS, "monte-carlo", seed=3)
    assert mc.converged is True
    assert mc.trials % 10_000 == 0 and mc.trials >= 20_000
    assert mc.tolerance == 0.05
    exact = 2 * math.sqrt(3) * (irwin_hall_quantile(0.975) - 2)
    # The stabilised quantities lie within the tolerance of the exact values
    # (u = 2 exactly; interval end from the Irwin–Hall quantile).
    assert abs(mc.standard_uncertainty - 2.0) <= mc.tolerance
    assert abs(mc.coverage_interval()[1] - exact) <= 2 * mc.tolerance
    # A ten times smaller tolerance needs more trials and gets closer.
    fine = propagate(additive, RECTANGULAR_INPUTS, "monte-carlo", seed=3, tolerance=0.005)
    assert fine.converged is True and fine.tolerance == 0.005
    assert fine.trials > 10 * mc.trials
    assert abs(fine.coverage_interval()[1] - exact) <= 0.01


def test_adaptive_procedure_warns_when_limit_reached():
    with pytest.warns(ActivityWarning, match="max_trials"):
        mc = propagate(additive, NORMAL_INPUTS, "monte-carlo", seed=1, tolerance=1e-5, max_trials=40_000)
    assert mc.converged is False and mc.trials == 40_000


def test_validate_gum_passes_for_linear_normal_model():
    # JCGM 101:2008 9.2.2 (from memory): GUM validated for normal inputs.
    v = validate_gum(additive, NORMAL_INPUTS, seed=6)
    assert v.passed
    assert v.delta == 0.05  # u = 2.0 at two significant digits
    assert v.d_low <= v.delta and v.d_high <= v.delta
    assert "PASSED" in v.summary()


def test_validate_gum_fails_for_strongly_nonlinear_model():
    # Y = X², X ~ N(0, 1): the first-order GUM gives u = 0 while Y follows
    # chi-squared with 1 dof, 97.5 % quantile 5.024 (chi-squared table, common
    # practice); the GUM is not validated.
    v = validate_gum(lambda x: x**2, {"x": Normal(0.0, 1.0)}, seed=1, digits=1, mc_tolerance=0.05)
    assert not v.passed
    assert v.gum.standard_uncertainty == pytest.approx(0.0, abs=1e-9)
    assert v.monte_carlo.coverage_interval()[1] == pytest.approx(5.024, abs=0.1)
    assert v.d_high == pytest.approx(5.024, abs=0.1)
    assert "FAILED" in v.summary()


def test_monte_carlo_errors():
    with pytest.raises(InputError) as info, np.errstate(all="ignore"):
        propagate(lambda x: np.log(x), {"x": Normal(0.01, 0.01)}, "monte-carlo", trials=10_000, seed=0)
    assert info.value.field == "f" and "non-finite" in str(info.value)
    with pytest.raises(InputError) as info:
        propagate(lambda x: x, {"x": Normal(0, 1)}, "monte-carlo", trials=10, seed=0).coverage_interval(0.95)
    assert info.value.field == "p"
    with pytest.raises(InputError) as info:
        propagate(lambda x: x, {"x": Normal(0, 1)}, "monte-carlo", max_trials=100)
    assert info.value.field == "max_trials"


@settings(max_examples=25, deadline=None)
@given(mean=st.floats(-100, 100), u=st.floats(0.01, 10), a=st.floats(-10, 10), seed=st.integers(0, 2**32 - 1))
def test_monte_carlo_mean_converges(mean, u, a, seed):
    # For Y = aX the Monte Carlo mean has standard error |a| u / sqrt(M); a
    # 5-sigma bound fails with probability below 1e-6 per example (common practice).
    trials = 20_000
    mc = propagate(lambda x: a * x, {"x": Rectangular(mean, u * math.sqrt(3))}, "monte-carlo", trials=trials, seed=seed)
    assert abs(mc.value - a * mean) <= 5 * abs(a) * u / math.sqrt(trials) + 1e-9 * abs(a * mean)
    assert mc.standard_uncertainty == pytest.approx(abs(a) * u, rel=0.05, abs=1e-12)
