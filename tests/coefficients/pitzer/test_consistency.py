"""Thermodynamic consistency of the Pitzer model: the three outputs (ln γ, φ, Gex) are
checked against each other, against the defining integral of J(x), and against the
Debye–Hückel limiting law."""

import importlib.util
import warnings

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from scipy.integrate import quad

import activity as act
from activity import Solution
from activity.coefficients.pitzer import PitzerModel, e_theta, j_pitzer1975
from activity.constants import LN10

MODEL = PitzerModel()
# ζ and λ terms are absent from the shipped set except CO2 λ; this demo overlay (invented
# numbers, for the consistency checks only) exercises every term of the equations.
DEMO = {
    "neutral": {
        "CO2 Na+ Cl-": {"zeta": -0.012, "celsius": [15, 35], "source": "demo value, not a measurement"},
        "CO2 CO2": {"lambda": 0.02, "celsius": [15, 35], "source": "demo value, not a measurement"},
    }
}
FULL = PitzerModel(extra=DEMO)
MIX = {
    "Na+": 0.52,
    "K+": 0.11,
    "Mg^2+": 0.053,
    "Ca^2+": 0.021,
    "H+": 0.004,
    "Cl-": 0.61,
    "SO4^2-": 0.031,
    "HCO3-": 0.012,
    "CO3^2-": 0.004,
    "OH-": 0.001,
    "CO2": 0.015,
}


def quiet(f, *a):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", act.ActivityWarning)
        return f(*a)


def J_integral(x):
    """J(x) = (1/x) ∫₀^∞ [1 + q + q²/2 − e^q] y² dy, q = −(x/y) e^(−y) (Pitzer 1975), by quad.

    For |q| < 0.1 the bracket is summed as a series, −Σ_{k≥3} q^k/k!, to avoid cancellation.
    """

    def f(y):
        q = -(x / y) * np.exp(-y)
        if abs(q) < 0.1:
            term, s, k = q**3 / 6.0, 0.0, 3
            while abs(term) > 1e-18 * max(abs(s), 1e-300):
                s += term
                k += 1
                term *= q / k
            return -s * y * y
        return (1.0 + q + 0.5 * q * q - np.exp(q)) * y * y

    # the integrand changes fast near y ≈ ln x; split there
    split = max(np.log(max(x, 1.0)), 1.0)
    a, _ = quad(f, 0.0, split, limit=400, epsabs=1e-15, epsrel=1e-11)
    b, _ = quad(f, split, np.inf, limit=400, epsabs=1e-15, epsrel=1e-11)
    return (a + b) / x


@pytest.mark.parametrize("x", [0.1, 0.3, 1.0, 3.0, 10.0, 30.0, 100.0])
def test_J_against_its_defining_integral(x):
    # Pitzer (1975) gives his approximation as accurate to about 1 % (from memory). Measured
    # here: largest relative deviation 1.4 % at x = 0.1 (absolute 5e-5), about 1.1 % at
    # x = 2, below 0.5 % from x = 10 up; 1.5 % is asserted.
    J, dJ = j_pitzer1975(np.array([x]))
    assert J[0] == pytest.approx(J_integral(x), rel=0.015)
    h = 1e-4 * x
    dnum = (J_integral(x + h) - J_integral(x - h)) / (2 * h)
    assert dJ[0] == pytest.approx(dnum, rel=0.03)


@pytest.mark.parametrize("x", [1e-3, 0.01, 0.1, 0.37, 1.0, 2.9, 10.0, 55.0, 300.0, 2000.0])
def test_J_used_by_the_model_matches_adaptive_quadrature(x):
    # The model's J (Gauss–Legendre table + spline in ln x) against scipy's adaptive quad of
    # the same defining integral (Pitzer 1975): relative 1e-8 for J, 1e-6 for J′.
    from activity.coefficients.pitzer._unsym import j_exact

    J, dJ = j_exact(np.array([x]))
    assert J[0] == pytest.approx(J_integral(x), rel=1e-8)
    h = 1e-4 * x
    dnum = (J_integral(x + h) - J_integral(x - h)) / (2 * h)
    assert dJ[0] == pytest.approx(dnum, rel=1e-6)


def test_J_small_x_is_tiny_in_absolute_terms():
    # Below x = 0.1 the approximation's relative error grows (measured: 35 % at x = 1e-3,
    # 7 % at 1e-2) while J itself vanishes; the absolute deviations measured are 3.8e-7 and
    # 5.1e-6. 1e-5 is asserted (about twice the larger; J(0.3) is already 0.02).
    for x in (1e-3, 1e-2):
        J, _ = j_pitzer1975(np.array([x]))
        assert abs(J[0] - J_integral(x)) < 1e-5


def test_e_theta_prime_is_the_derivative_of_e_theta():
    I = np.array([0.05, 0.5, 3.0])
    h = 1e-6 * I
    et_p, _ = e_theta(1, 2, 0.39, I + h)
    et_m, _ = e_theta(1, 2, 0.39, I - h)
    _, etp = e_theta(1, 2, 0.39, I)
    assert np.allclose(etp, (et_p - et_m) / (2 * h), rtol=1e-6)


def pm_sol(comp):
    return Solution(comp, neutrality="ignore")


def test_ln_gamma_is_the_derivative_of_the_excess_gibbs_energy():
    """ln γ_i = ∂(Gex/wRT)/∂m_i for every species, including neutral CO2 (ζ, λ terms)."""
    ln = FULL.ln_gamma(pm_sol(MIX))
    for i, name in enumerate(pm_sol(MIX).species):
        h = 1e-6
        up, dn = dict(MIX), dict(MIX)
        up[name] += h
        dn[name] -= h
        num = (FULL.excess_gibbs(pm_sol(up)) - FULL.excess_gibbs(pm_sol(dn))) / (2 * h)
        assert ln[i] == pytest.approx(num, abs=1e-8), name


def test_osmotic_coefficient_matches_excess_gibbs_energy():
    """Σm(φ − 1) = Σ m_i ln γ_i − Gex/(wRT) (Euler's relation for Gex)."""
    sol = pm_sol(MIX)
    phi = quiet(FULL.osmotic_coefficient, sol)
    rhs = 1.0 + (np.sum(sol.m * FULL.ln_gamma(sol)) - FULL.excess_gibbs(sol)) / sol.total_molality
    assert phi == pytest.approx(rhs, abs=1e-12)
    assert FULL.ln_gamma(sol)[sol.index("CO2")] != MODEL.ln_gamma(sol)[sol.index("CO2")]


SALTS = {
    "NaCl": ("Na+", "Cl-", 1, 1),
    "CaCl2": ("Ca^2+", "Cl-", 1, 2),
    "Na2SO4": ("Na+", "SO4^2-", 2, 1),
    "MgSO4": ("Mg^2+", "SO4^2-", 1, 1),
    "HCl": ("H+", "Cl-", 1, 1),
}


@pytest.mark.parametrize("salt, m", [("NaCl", 6.0), ("CaCl2", 2.5), ("Na2SO4", 3.0), ("MgSO4", 2.0), ("HCl", 4.0)])
def test_gibbs_duhem_binary(salt, m):
    """ln γ± = (φ − 1) + ∫₀ᵐ (φ − 1)/m′ dm′; with m′ = u² the integrand 2(φ − 1)/u is smooth."""
    c, a, nc, na = SALTS[salt]

    def phi(x):
        return quiet(MODEL.osmotic_coefficient, Solution({c: nc * x, a: na * x}))

    integral, _ = quad(lambda u: 2.0 * (phi(u * u) - 1.0) / u, 0.0, np.sqrt(m), epsabs=1e-12, epsrel=1e-11, limit=200)
    sol = Solution({c: nc * m, a: na * m})
    ln_pm = np.log(quiet(act.mean_activity_coefficient, sol, c, a, MODEL))
    assert ln_pm == pytest.approx(phi(m) - 1.0 + integral, abs=1e-5)


COMPONENTS = {
    "NaCl": {"Na+": 1, "Cl-": 1},
    "MgSO4": {"Mg^2+": 1, "SO4^2-": 1},
    "CaCl2": {"Ca^2+": 1, "Cl-": 2},
    "K2SO4": {"K+": 2, "SO4^2-": 1},
    "Na2CO3": {"Na+": 2, "CO3^2-": 1},
}


def nu_ln_gamma(amounts, salt):
    """Σ ν_i ln γ_i of a neutral salt component in a mixture of salt components."""
    comp = {}
    for s, x in amounts.items():
        for ion, nu in COMPONENTS[s].items():
            comp[ion] = comp.get(ion, 0.0) + nu * x
    sol = Solution(comp)
    ln = MODEL.ln_gamma(sol)
    return sum(nu * ln[sol.index(ion)] for ion, nu in COMPONENTS[salt].items())


@given(
    st.lists(st.floats(0.01, 1.0), min_size=5, max_size=5), st.sampled_from([(0, 1), (0, 2), (1, 3), (2, 4), (3, 4)])
)
def test_cross_differentiation_over_salt_components(x, pair):
    """∂(ν ln γ±)_1/∂m_2 = ∂(ν ln γ±)_2/∂m_1 at constant other salt molalities."""
    names = list(COMPONENTS)
    amounts = dict(zip(names, x))
    s1, s2 = names[pair[0]], names[pair[1]]
    h = 1e-5

    def d(f_salt, wrt):
        up, dn = dict(amounts), dict(amounts)
        up[wrt] += h
        dn[wrt] -= h
        return (nu_ln_gamma(up, f_salt) - nu_ln_gamma(dn, f_salt)) / (2 * h)

    assert d(s1, s2) == pytest.approx(d(s2, s1), rel=1e-6, abs=1e-7)


@given(
    st.lists(st.sampled_from(["NaCl", "CaCl2", "Na2SO4", "MgSO4", "HCl"]), min_size=1, max_size=3),
    st.floats(-10.0, -6.0),
    st.floats(273.15, 323.15),
)
def test_limiting_law(salts, log_I, T):
    """As I → 0, ln γ_i → −3Aφ z_i² √I (Debye & Hückel 1923); the relative deviation of a
    Pitzer model vanishes like √I (f^γ contributes ≈ 1.5 b √I, the β terms ≈ 2|β| m/(3Aφ z²√I)).

    Bound on the coefficient of √I: for MgSO4 (β0 + β1 + β2 ≈ −33.7 at I → 0, m = I/4, z² = 4)
    the two terms give 1.5·1.2 + 2·33.7/(4·3·0.39·4) ≈ 5.4 at 25 °C, more at 0 °C where Aφ is
    smaller; the largest value seen over these salts, 0–50 °C and I = 1e-10…1e-6 mol/kg is 8.0.
    12 is asserted (50 % margin); a 1 % error in Aφ would exceed it below I ≈ 1e-7 mol/kg."""
    comp = {}
    for s in salts:
        c, a, nc, na = SALTS[s]
        comp[c] = comp.get(c, 0.0) + nc
        comp[a] = comp.get(a, 0.0) + na
    scale = 10**log_I / Solution(comp).ionic_strength
    sol = Solution({k: v * scale for k, v in comp.items()}, T=T)
    sqI = np.sqrt(sol.ionic_strength)
    ll = -3.0 * act.debye_huckel_Aphi(T) * sol.charges**2 * sqI
    rel = np.abs(MODEL.ln_gamma(sol) / ll - 1.0)
    assert np.all(rel <= 12.0 * sqI)


KERNELS = ["numpy"] + (["compiled"] if importlib.util.find_spec("numba") else [])


@pytest.mark.parametrize("kernel", KERNELS)
@pytest.mark.parametrize("m", [5e-324, 1e-320, 1e-310, 1e-300])
def test_limiting_law_down_to_subnormal_molalities(kernel, m):
    """The same law where 1/I overflows (I below the least normal float, 2.2e-308): the g′ term
    of F, which vanishes like I^1.5, gave inf · 0 = NaN for every γ before (found by the
    explore profile of the conformance test, CaCl2 at 5e-324 mol/kg). Both kernels; rows of
    ordinary strength beside them are unchanged."""
    sol = Solution({"Ca^2+": [m, 0.01], "Na+": [m, 0.1], "Cl-": [3 * m, 0.12]}, T=298.15)
    res = quiet(PitzerModel(kernel=kernel).activity_coefficients, sol)
    assert np.all(np.isfinite(res.log10_gamma)) and np.all(np.isfinite(res.osmotic_coefficient))
    sqI = np.sqrt(sol.ionic_strength[0])
    ll = -3.0 * act.debye_huckel_Aphi(298.15) * sol.charges**2 * sqI
    np.testing.assert_allclose(LN10 * res.log10_gamma[:, 0], ll, rtol=1e-6)
    ordinary = quiet(MODEL.activity_coefficients, Solution({"Ca^2+": 0.01, "Na+": 0.1, "Cl-": 0.12}))
    np.testing.assert_allclose(res.log10_gamma[:, 1], ordinary.log10_gamma, rtol=1e-13)


def test_temperature_array_equals_scalar_temperatures():
    T = np.array([278.15, 298.15, 318.15])
    m = np.array([0.5, 1.0, 2.0])
    comp = {"Na+": m, "K+": 0.1 * m, "Cl-": 1.1 * m - 0.04 * m, "SO4^2-": 0.02 * m}
    batch = quiet(MODEL.activity_coefficients, Solution(comp, T=T))
    for k in range(3):
        row = quiet(MODEL.activity_coefficients, Solution({s: v[k] for s, v in comp.items()}, T=T[k]))
        assert np.allclose(batch.log10_gamma[:, k], row.log10_gamma, rtol=1e-13, atol=1e-15)
        assert batch.osmotic_coefficient[k] == pytest.approx(row.osmotic_coefficient, rel=1e-13)


def test_chunked_evaluation_matches_small_batches(monkeypatch):
    from activity.coefficients.pitzer import _model

    m = np.linspace(0.01, 2.0, 50)
    sol = Solution({"Na+": m, "Mg^2+": 0.1 * m, "Cl-": 1.2 * m}, T=np.linspace(280, 320, 50))
    whole = quiet(MODEL.log10_gamma, sol)
    monkeypatch.setattr(_model, "CHUNK", 7)
    assert np.array_equal(quiet(PitzerModel().log10_gamma, sol), whole)


@given(st.floats(-300.0, 1.0), st.floats(273.15, 323.15))
def test_finite_down_to_vanishing_ionic_strength(log_m, T):
    m = 10**log_m
    sol = Solution({"Na+": m, "Ca^2+": m, "Mg^2+": 0.1 * m, "Cl-": 2.2 * m, "SO4^2-": 0.5 * m}, T=T)
    res = quiet(MODEL.activity_coefficients, sol)
    assert np.all(np.isfinite(res.log10_gamma)) and np.isfinite(res.osmotic_coefficient)
