"""GUM law of propagation (JCGM 100:2008) in activity.uncertainty.propagate."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import constants, stats

from activity.errors import InputError
from activity.uncertainty import Normal, Rectangular, StudentT, Triangular, measured, propagate
from activity.workflows.model_choice import model_spread

R = constants.R  # molar gas constant, CODATA via scipy.constants
F = constants.physical_constants["Faraday constant"][0]


def nernst(E0, T, a, z):
    """E = E0 + (R T ln10 / F)/z · log10(a) (Nernst equation, common practice)."""
    return E0 + (R * T * np.log(10.0) / F) / z * np.log10(a)


NERNST_INPUTS = {
    "E0": Normal(0.22233, 0.0003),  # demo values
    "T": Rectangular(298.15, 0.2),
    "a": Normal(0.0100, 0.0002),
    "z": 1,
}


def test_nernst_matches_uncertainties_package():
    # Reference: first-order propagation by the `uncertainties` package
    # (test-only library, Lebigot, uncertainties 3.x).
    unc = pytest.importorskip("uncertainties")
    from uncertainties import umath

    E0 = unc.ufloat(0.22233, 0.0003)
    T = unc.ufloat(298.15, 0.2 / math.sqrt(3))
    a = unc.ufloat(0.0100, 0.0002)
    reference = E0 + (R * T * math.log(10.0) / F) / 1 * umath.log10(a)
    result = propagate(nernst, NERNST_INPUTS)
    # Central differences at h = 1e-3·u(x): truncation (h/a)²/3 = 1.3e-10 relative for
    # log10(a), E0 and T enter linearly; the rounding error is kept below 1e-6 by
    # construction (gum._ROUNDING_LIMIT), hence rel=1e-6 for the sensitivities. u_c
    # agrees to about 1e-10 here; rel=1e-7 leaves a factor 1000.
    assert result.value == pytest.approx(reference.nominal_value, rel=1e-12)
    assert result.standard_uncertainty == pytest.approx(reference.std_dev, rel=1e-7)
    derivatives = reference.derivatives
    for row, var in zip(result.budget, (E0, T, a)):
        assert row.sensitivity == pytest.approx(derivatives[var], rel=1e-6)


def test_nernst_with_correlation_matches_uncertainties_package():
    # Reference: uncertainties.correlated_values with the same covariance
    # (test-only library). r(E0, T) = 0.6 is a demo value.
    unc = pytest.importorskip("uncertainties")
    from uncertainties import umath

    u = np.array([0.0003, 0.2 / math.sqrt(3)])
    r = 0.6
    cov = np.outer(u, u) * np.array([[1, r], [r, 1]])
    E0, T = unc.correlated_values([0.22233, 298.15], cov)
    a = unc.ufloat(0.0100, 0.0002)
    reference = E0 + (R * T * math.log(10.0) / F) * umath.log10(a)
    result = propagate(nernst, NERNST_INPUTS, correlation={("T", "E0"): r})
    assert result.standard_uncertainty == pytest.approx(reference.std_dev, rel=1e-7)
    shares = sum(row.share for row in result.budget) + result.correlation_share
    assert shares == pytest.approx(1.0)
    assert result.correlation_share != 0.0


def test_slope_sensitivity_is_analytic():
    # dE/dlog10(a) = R T ln10/F = 0.059159 V at 298.15 K (Nernst slope, common
    # practice); here via dE/da = slope/(a ln10).
    result = propagate(nernst, NERNST_INPUTS)
    slope = R * 298.15 * math.log(10) / F
    assert slope == pytest.approx(0.059159, abs=1e-6)
    # Truncation of the central difference for log10(a): (h/a)²/3 = 1.3e-10 relative
    # with h = 1e-3·u(a) = 2e-7; rel=1e-8 leaves a factor 75.
    a_row = result.budget[2]
    assert a_row.sensitivity == pytest.approx(slope / (0.01 * math.log(10)), rel=1e-8)


@settings(max_examples=60, deadline=None)
@given(
    a=st.floats(-1e3, 1e3).filter(lambda v: abs(v) > 1e-6),
    b=st.floats(-1e3, 1e3),
    mean=st.floats(-1e3, 1e3),
    u=st.floats(1e-6, 1e2),
    kind=st.sampled_from(["normal", "rect", "tri"]),
)
def test_gum_of_linear_function_is_exact(a, b, mean, u, kind):
    # For Y = aX + b the law of propagation is exact: u(y) = |a| u(x)
    # (JCGM 100:2008 eq. 10 with a single input). The finite difference is
    # exact up to the rounding of y: the small step is used only while its
    # relative rounding error is below 1e-6, otherwise the ±u difference,
    # whose rounding error is about eps·|y| (float64 bound, common practice).
    dist = {
        "normal": Normal(mean, u),
        "rect": Rectangular(mean, u * math.sqrt(3)),
        "tri": Triangular(mean, u * math.sqrt(6)),
    }[kind]
    result = propagate(lambda x: a * x + b, {"x": dist})
    size = abs(a * mean) + abs(b)
    rounding = 4 * np.finfo(float).eps * size
    assert result.standard_uncertainty == pytest.approx(abs(a) * u, rel=2e-6, abs=rounding)
    assert result.value == pytest.approx(a * mean + b, rel=1e-12, abs=1e-9)
    if abs(a) * u > 1e3 * rounding:  # resolvable in float64 at all
        assert result.budget[0].share == pytest.approx(1.0)


@settings(max_examples=40, deadline=None)
@given(r=st.floats(-1.0, 1.0), c1=st.floats(-5, 5), c2=st.floats(-5, 5), u1=st.floats(0.01, 3), u2=st.floats(0.01, 3))
def test_gum_correlated_linear_combination(r, c1, c2, u1, u2):
    # u_c² = c1²u1² + c2²u2² + 2 c1 c2 u1 u2 r (JCGM 100:2008 eq. 16).
    result = propagate(
        lambda x, y: c1 * x + c2 * y, {"x": Normal(1.0, u1), "y": Normal(-2.0, u2)}, correlation={("x", "y"): r}
    )
    expected = c1**2 * u1**2 + c2**2 * u2**2 + 2 * c1 * c2 * u1 * u2 * r
    assert result.standard_uncertainty**2 == pytest.approx(max(expected, 0), rel=1e-6, abs=1e-9)


def test_perfect_correlation_doubles_and_anticorrelation_cancels():
    # Y = X1 + X2, u(x1) = u(x2) = u: r = +1 gives 2u, r = -1 gives 0, r = 0
    # gives sqrt(2)u (JCGM 100:2008 eq. 16, hand-computed).
    inputs = {"x1": Normal(1.0, 0.5), "x2": Normal(3.0, 0.5)}
    f = lambda x1, x2: x1 + x2  # noqa: E731
    assert propagate(f, inputs, correlation={("x1", "x2"): 1.0}).standard_uncertainty == pytest.approx(1.0)
    assert propagate(f, inputs, correlation={("x1", "x2"): -1.0}).standard_uncertainty == pytest.approx(0.0, abs=1e-9)
    assert propagate(f, inputs).standard_uncertainty == pytest.approx(math.sqrt(0.5))


def test_welch_satterthwaite_and_coverage_factor():
    # Two equal contributions with nu = 4 and nu = 5:
    # nu_eff = (1+1)² / (1/4 + 1/5) = 8.89 (JCGM 100:2008 eq. G.2b, hand-computed);
    # k uses nu truncated to 8 (G.4.1 note): t_0.975(8) = 2.31 (JCGM 100:2008
    # Table G.2, from memory).
    result = propagate(lambda x, y: x + y, {"x": StudentT(0.0, 1.0, 4), "y": measured(0.0, 1.0, dof=5)})
    assert result.dof == pytest.approx(4 / (1 / 4 + 1 / 5))
    assert result.coverage_factor() == pytest.approx(2.31, abs=0.005)
    assert result.coverage_factor() == pytest.approx(stats.t.ppf(0.975, 8))
    assert result.expanded_uncertainty() == pytest.approx(result.coverage_factor() * math.sqrt(2))
    low, high = result.coverage_interval()
    assert high - low == pytest.approx(2 * result.expanded_uncertainty())
    # Infinite dof: k = 1.96 for 95 % (normal quantile, common practice).
    normal = propagate(lambda x: x, {"x": Normal(0, 1)})
    assert normal.dof == math.inf
    assert normal.expanded_uncertainty(0.95) == pytest.approx(1.96, abs=5e-3)
    assert normal.expanded_uncertainty(0.99) == pytest.approx(2.576, abs=5e-4)


def test_one_batched_call_with_stacked_points():
    calls = []

    def f(x, y, c):
        calls.append(np.shape(x))
        return c * x * y

    result = propagate(f, {"x": Normal(2.0, 0.1), "y": Normal(3.0, 0.2), "c": 0.5})
    assert calls == [(9,)]  # centre + 4 points per uncertain input, one call
    # d(cxy)/dx = c y = 1.5, d/dy = c x = 1.0 (analytic).
    assert [row.sensitivity for row in result.budget] == pytest.approx([1.5, 1.0])


def test_budget_table_and_text():
    result = propagate(nernst, NERNST_INPUTS)
    rows = result.budget_table()
    assert [row["name"] for row in rows] == ["E0", "T", "a"]
    assert {"value", "standard_uncertainty", "sensitivity", "contribution", "share", "dof", "distribution"} <= set(
        rows[0]
    )
    assert sum(row["share"] for row in rows) == pytest.approx(1.0)
    contributions = np.array([row["contribution"] for row in rows])
    assert math.sqrt(np.sum(contributions**2)) == pytest.approx(result.standard_uncertainty)
    text = result.format_budget(spread=model_spread({"m1": 0.1, "m2": 0.1003}))
    lines = text.splitlines()
    assert lines[0].split()[0] == "input"
    assert any(line.startswith("E0 ") and "normal" in line for line in lines)
    assert any(line.startswith("T ") and "rectangular" in line for line in lines)
    assert "model choice" in lines[-1]
    assert "gum" in repr(result) and "E0" in repr(result)


def test_zero_uncertainty_input_contributes_nothing():
    result = propagate(lambda x, y: x * y, {"x": Normal(2.0, 0.0), "y": Normal(3.0, 0.1)})
    assert result.standard_uncertainty == pytest.approx(0.2)
    assert result.budget[0].contribution == 0.0
    assert result.budget[0].sensitivity == pytest.approx(3.0)


@pytest.mark.parametrize(
    "kwargs, field",
    [
        ({"method": "bayes"}, "method"),
        ({"coverage": 1.5}, "coverage"),
        ({"correlation": {("x", "w"): 0.5}}, "correlation"),
        ({"correlation": {("x", "y"): 1.2}}, "correlation"),
        ({"correlation": {("x", "k"): 0.2}}, "correlation"),
        ({"correlation": {("x", "y"): 0.2, ("y", "x"): 0.3}}, "correlation"),
        ({"correlation": {"x": 0.2}}, "correlation"),
        ({"trials": 1000}, "trials"),
        ({"method": "monte-carlo", "trials": 0}, "trials"),
        ({"method": "monte-carlo", "trials": 100, "tolerance": 0.1}, "tolerance"),
        ({"method": "monte-carlo", "interval": "widest"}, "interval"),
    ],
)
def test_bad_options_raise_input_error_naming_field(kwargs, field):
    inputs = {"x": Normal(0, 1), "y": Normal(0, 1), "z": Normal(0, 1), "k": 2.0}
    with pytest.raises(InputError) as info:
        propagate(lambda x, y, z, k: x + y + z, inputs, **kwargs)
    assert info.value.field == field


def test_correlation_error_names_the_pair():
    inputs = {"x": Normal(0, 1), "y": Normal(0, 1)}
    with pytest.raises(InputError, match="'w'") as info:
        propagate(lambda x, y: x + y, inputs, correlation={("x", "w"): 0.5})
    assert info.value.value == ("x", "w")
    with pytest.raises(InputError, match=r"outside \[-1, 1\]") as info:
        propagate(lambda x, y: x + y, inputs, correlation={("x", "y"): -1.01})
    assert info.value.value == ("x", "y")


def test_non_positive_semidefinite_correlation_is_rejected():
    # r_ab = r_bc = 0.9 with r_ac = -0.9 is impossible: (1, -1, 1) is an eigenvector of
    # the matrix with eigenvalue 1 - 0.9 - 0.9 = -0.8 < 0 (hand-computed).
    inputs = {"a": Normal(0, 1), "b": Normal(0, 1), "c": Normal(0, 1)}
    corr = {("a", "b"): 0.9, ("b", "c"): 0.9, ("a", "c"): -0.9}
    with pytest.raises(InputError, match="positive semi-definite") as info:
        propagate(lambda a, b, c: a + b + c, inputs, correlation=corr)
    assert info.value.field == "correlation"
    assert set(info.value.value) <= {"a", "b", "c"} and len(info.value.value) == 2


def test_model_errors_name_the_field():
    with pytest.raises(InputError) as info:
        propagate(lambda x: np.zeros((np.size(x), 2)), {"x": Normal(0, 1)})
    assert info.value.field == "f"
    with pytest.raises(InputError) as info, np.errstate(all="ignore"):
        propagate(lambda x: np.log(x), {"x": Normal(0.0, 1.0)})
    assert info.value.field == "f"
    with pytest.raises(InputError) as info:
        propagate("not callable", {"x": Normal(0, 1)})
    assert info.value.field == "f"


def test_model_spread_over_models():
    # spread/sqrt(12) is the sd of a rectangular distribution of full width
    # `spread` (JCGM 100:2008 4.3.7 with a = spread/2).
    s = model_spread({"davies": 0.80, "extended-debye-huckel": 0.78, "pitzer": 0.79})
    assert (s.minimum, s.maximum, s.lowest, s.highest) == (0.78, 0.80, "extended-debye-huckel", "davies")
    assert s.spread == pytest.approx(0.02)
    assert s.standard_uncertainty == pytest.approx(0.02 / math.sqrt(12))
    assert "dominates" in s.format_line(0.001)
    calls = model_spread(
        {"a": lambda x, k: k * x, "b": lambda x, k: k * x + 1}, inputs={"x": Normal(2.0, 0.1), "k": 3.0}
    )
    assert calls.values == {"a": 6.0, "b": 7.0}
    with pytest.raises(InputError) as info:
        model_spread({})
    assert info.value.field == "models"
    with pytest.raises(InputError) as info:
        model_spread({"a": float("nan")})
    assert info.value.field == "models"
