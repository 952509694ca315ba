"""Input distributions of activity.uncertainty: moments, sampling, inverse CDF, validation."""

import math

import numpy as np
import pytest

from activity.errors import InputError
from activity.uncertainty import Normal, Rectangular, StudentT, Triangular, measured


def test_standard_uncertainties_of_type_b_distributions():
    # Rectangular u = a/sqrt(3): JCGM 100:2008 4.3.7.
    assert Rectangular(1.0, 0.6).standard_uncertainty == pytest.approx(0.6 / math.sqrt(3))
    # Symmetric triangular u = a/sqrt(6): JCGM 100:2008 4.3.9.
    assert Triangular(1.0, 0.6).standard_uncertainty == pytest.approx(0.6 / math.sqrt(6))
    assert Rectangular(1.0, 0.6).dof == math.inf  # type B: dof infinite unless stated
    assert Rectangular(1.0, 0.6, dof=12).dof == 12.0


@pytest.mark.parametrize(
    "dist",
    [
        Normal(2.0, 0.3),
        Rectangular(-1.0, 0.5),
        Triangular(4.0, 1.2),
    ],
)
def test_sample_moments_match_stated_mean_and_u(dist):
    # Sample mean and sd of 200 000 draws agree with the stated mean and u
    # (standard error of the mean u/sqrt(n) = 0.0022 u; of the sd < 0.2 %).
    x = dist.sample(np.random.default_rng(7), 200_000)
    assert x.shape == (200_000,)
    u = dist.standard_uncertainty
    assert abs(x.mean() - dist.mean) < 0.01 * u
    assert x.std(ddof=1) == pytest.approx(u, rel=0.01)


@pytest.mark.parametrize(
    "dist",
    [
        Normal(2.0, 0.3),
        Rectangular(-1.0, 0.5),
        Triangular(4.0, 1.2),
        StudentT(1.0, 0.2, 4),
    ],
)
def test_ppf_is_inverse_of_sampling_distribution(dist):
    # Empirical quantiles of draws match ppf at the same probabilities. The standard error
    # of a sample quantile is √(p(1−p)/n)/f(x_p) (common practice): at p = 0.05, n = 2e5 it
    # is 0.005 u for the normal and 0.009 u for t with ν = 4 (u = scale), so 0.04 u is more
    # than 4 standard errors for every case here.
    q = np.array([0.05, 0.25, 0.5, 0.75, 0.95])
    draws = dist.sample(np.random.default_rng(3), 200_000)
    assert np.allclose(np.quantile(draws, q), dist.ppf(q), rtol=0, atol=0.04 * dist.standard_uncertainty)


def test_triangular_ppf_exact_points():
    # Symmetric triangular on [-1, 1]: F(x) = (1+x)²/2 for x <= 0, so
    # F^-1(1/8) = -1/2 and F^-1(7/8) = +1/2 (elementary, common practice).
    t = Triangular(0.0, 1.0)
    assert t.ppf(np.array([0.125, 0.5, 0.875])) == pytest.approx([-0.5, 0.0, 0.5])


def test_student_t_sampled_variance_is_larger_than_scale():
    # Variance of t_nu(mu, s²) is nu/(nu-2)·s² (JCGM 101:2008 6.4.9.4, from memory):
    # nu = 5 gives sd = sqrt(5/3)·s = 1.291 s.
    x = StudentT(0.0, 1.0, 5).sample(np.random.default_rng(11), 400_000)
    assert x.std() == pytest.approx(math.sqrt(5 / 3), rel=0.02)
    assert StudentT(0.0, 1.0, 5).standard_uncertainty == 1.0


def test_measured_picks_normal_or_student_t():
    assert isinstance(measured(1.0, 0.1), Normal)
    t = measured(1.0, 0.1, dof=7)
    assert isinstance(t, StudentT) and t.dof == 7.0 and t.standard_uncertainty == 0.1


@pytest.mark.parametrize(
    "make, field",
    [
        (lambda: Normal(1.0, -0.1), "sd"),
        (lambda: Normal(float("nan"), 0.1), "mean"),
        (lambda: Rectangular(0.0, -1.0), "half_width"),
        (lambda: Triangular("a", 1.0), "centre"),
        (lambda: StudentT(0.0, 1.0, 0), "dof"),
        (lambda: StudentT(0.0, 1.0, math.inf), "dof"),
        (lambda: Normal(0.0, 1.0, dof=-2), "dof"),
        (lambda: measured(0.0, -1.0), "sd"),
    ],
)
def test_bad_parameters_raise_input_error_naming_field(make, field):
    with pytest.raises(InputError) as info:
        make()
    assert info.value.field == field
    assert field in str(info.value)
