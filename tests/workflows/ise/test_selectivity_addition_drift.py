"""Selectivity (SSM, FIM, MPM), known addition (single, multiple, Gran) and bracketing drift."""

import numpy as np
import pytest
import uncertainties
from uncertainties import umath

from activity import Solution
from activity.errors import InputError
from activity.workflows.ise import calibrate_ise
from activity.workflows.ise._model import nernst_slope_z
from activity.workflows.ise.addition import (
    known_addition_closed_form,
    multiple_addition,
    single_addition,
)
from activity.workflows.ise.drift import drift_check
from activity.workflows.ise.selectivity import (
    fixed_interference,
    matched_potential,
    separate_solution,
)

S1 = float(nernst_slope_z(298.15, 1))
S2 = float(nernst_slope_z(298.15, 2))


# ---------------------------------------------------------------------- selectivity
def test_ssm_reproduces_the_iupac_equal_activity_form():
    # IUPAC SSM with a_A = a_B: lg K = (E_B − E_A)·z_A F/(RT ln10) + (1 − z_A/z_B)·lg a_A
    # (Umezawa et al., Pure Appl. Chem. 72 (2000) 1851 — form from memory). Ca²⁺ electrode, Na⁺ interferent.
    a = 1e-2
    K = 3e-4
    E_A = 0.05 + S2 * np.log10(a)
    E_B = 0.05 + S2 * np.log10(K * a**2)  # a_B^(zA/zB) = a²
    r = separate_solution(E_A, E_B, a, a, 2, 1)
    iupac = (E_B - E_A) / S2 + (1 - 2 / 1) * np.log10(a)
    assert r.lg_K == pytest.approx(iupac, abs=1e-12)
    assert r.K == pytest.approx(K, rel=1e-10)


def test_ssm_series_and_uncertainty():
    a = np.array([1e-3, 1e-2, 1e-1])
    E_A = 0.1 + S1 * np.log10(a)
    E_B = 0.1 + S1 * np.log10(1e-3 * a)
    r = separate_solution(E_A, E_B, a, a, 1, 1, u_emf=1e-4)
    assert r.lg_K == pytest.approx(-3.0, abs=1e-12)
    # one pair: u(lg K) = √2·u_emf/S exactly
    one = separate_solution(E_A[0], E_B[0], a[0], a[0], 1, 1, u_emf=1e-4)
    assert one.u_lg_K == pytest.approx(np.sqrt(2) * 1e-4 / S1, rel=1e-12)


def test_fim_reproduces_its_defining_formula():
    # FIM: K = a_A*/a_B^(zA/zB) at the intersection of the extrapolated segments
    # (IUPAC Orange Book §8.3.2.3; published-values.toml 5a, status "read"). Ca²⁺ electrode, Na⁺ fixed.
    a_na = 0.1
    K = 5e-4
    a = np.logspace(-8, -2, 7)
    E = 0.2 + S2 * np.log10(a + K * a_na**2)
    r = fixed_interference(E, a, a_na, 2, 1)
    assert r.K == pytest.approx(K, rel=1e-7)
    r2 = fixed_interference(E, a, a_na, 2, 1, slope="fit")
    assert r2.K == pytest.approx(K, rel=1e-6)


def test_mpm_equals_nikolsky_K_for_equal_charges():
    a_ref, K = 1e-4, 0.02
    da = 2e-4
    dE = S1 * np.log10((a_ref + da) / a_ref)
    aj = np.logspace(-3, 0, 7)
    dEj = S1 * np.log10((a_ref + K * aj) / a_ref)
    r = matched_potential(a_ref, da, dE, aj, dEj)
    # interpolation in lg a between steps of half a decade: the curve is not straight there, 2 % on K
    assert r.K == pytest.approx(K, rel=0.02)
    exact = matched_potential(a_ref, da, dEj[3], aj, dEj)  # matched exactly at a step
    assert exact.K == pytest.approx(da / aj[3], rel=1e-12)
    with pytest.raises(InputError, match="delta_E"):
        matched_potential(a_ref, da, 1.0, aj, dEj)


# ---------------------------------------------------------------------- known addition
def test_single_addition_reproduces_closed_form_and_constructed_data():
    cx, Vx, Vs, cs = 8e-4, 0.05, 0.0005, 0.1
    c2 = (cx * Vx + cs * Vs) / (Vx + Vs)
    E1 = 0.02 + S2 * np.log10(cx)
    E2 = 0.02 + S2 * np.log10(c2)
    r = single_addition(E1, E2, Vx, Vs, cs, "Ca^2+")
    assert r.concentration == pytest.approx(cx, rel=1e-12)
    assert known_addition_closed_form(E2 - E1, S2, Vx, Vs, cs) == pytest.approx(cx, rel=1e-12)


def test_single_addition_uncertainty_against_uncertainties_package():
    dE, S, Vx, Vs, cs = 0.0100, 0.02958, 0.050, 0.0005, 0.1
    r = single_addition(
        0.1, 0.1 + dE, Vx, Vs, cs, "Ca^2+", slope=(S, 2e-4), u_emf=1e-4, u_volume_rel=0.002, u_c_standard_rel=0.001
    )
    e = uncertainties.ufloat(dE, np.sqrt(2) * 1e-4)
    s = uncertainties.ufloat(S, 2e-4)
    vx = uncertainties.ufloat(Vx, 0.002 * Vx)
    vs = uncertainties.ufloat(Vs, 0.002 * Vs)
    c = uncertainties.ufloat(cs, 0.001 * cs)
    ref = c * vs / (vx + vs) / (umath.pow(10, e / s) - vx / (vx + vs))
    assert r.concentration == pytest.approx(ref.nominal_value, rel=1e-12)
    assert r.standard_uncertainty == pytest.approx(ref.std_dev, rel=1e-4)  # finite differences vs exact


def test_single_addition_activity_corrected():
    # data built with γ from the Davies model at each step; the corrected solver recovers cₓ,
    # the constant-γ closed form does not (the matrix is diluted by the addition)
    from activity.coefficients import get_model

    matrix = Solution({"Na+": 0.05, "NO3-": 0.05})
    cx, Vx, Vs, cs = 5e-4, 0.05, 0.001, 0.05
    model = get_model("davies")
    from activity.workflows.ise._model import molarity_factor

    f = float(molarity_factor(matrix)[0])

    def gamma(c, d):
        m = c / f
        sol = Solution({"Na+": 0.05 * d, "NO3-": 0.05 * d, "Ca^2+": m, "Cl-": 2 * m}, neutrality="ignore")
        return 10 ** model.activity_coefficients(sol).log10_gamma[2]

    c2 = (cx * Vx + cs * Vs) / (Vx + Vs)
    E1 = S2 * np.log10(gamma(cx, 1.0) * cx)
    E2 = S2 * np.log10(gamma(c2, Vx / (Vx + Vs)) * c2)
    r = single_addition(E1, E2, Vx, Vs, cs, "Ca^2+", matrix=matrix, counter_ion="Cl-")
    assert r.concentration == pytest.approx(cx, rel=1e-9)
    plain = single_addition(E1, E2, Vx, Vs, cs, "Ca^2+")
    assert abs(plain.concentration / cx - 1) > 1e-3


def test_multiple_addition_fit_and_gran():
    cx, Vx, cs = 2e-4, 0.025, 0.01
    v = np.array([0.0, 0.0005, 0.001, 0.0015, 0.002, 0.0025])
    c = (cx * Vx + cs * v) / (Vx + v)
    E = 0.03 + 0.97 * S1 * np.log10(c)
    r = multiple_addition(E, v, Vx, cs, "K+")
    assert r.concentration == pytest.approx(cx, rel=1e-9)
    assert r.slope == pytest.approx(0.97 * S1, rel=1e-9)
    assert r.gran_concentration == pytest.approx(cx, rel=1e-9)  # exact data, constant γ: Gran is exact
    noisy = multiple_addition(E + np.random.default_rng(3).normal(0, 2e-4, 6), v, Vx, cs, "K+")
    assert abs(noisy.concentration - cx) < 4 * noisy.standard_uncertainty
    with pytest.raises(InputError, match="V_added"):
        multiple_addition(E, v[::-1], Vx, cs, "K+")


# ---------------------------------------------------------------------- drift
def test_drift_rate_verdict_and_correction():
    c = np.logspace(-5, -2, 4)
    std = Solution({"K+": c, "Cl-": c})
    cal0 = calibrate_ise(std, 0.1 + S1 * np.log10(c * 0.95), "K+", detection_term=0)  # γ ≈ 0.95 for the line
    ai = cal0.standards["activity"]
    one = calibrate_ise(std, 0.100 + 0.98 * S1 * np.log10(ai), "K+", detection_term=0)
    two = calibrate_ise(std, 0.103 + 0.96 * S1 * np.log10(ai), "K+", detection_term=0)
    d = drift_check(one, two, 0.0, 3600.0)
    assert d.rate_mV_per_h == pytest.approx(3.0, rel=1e-9)
    assert d.passed is False
    assert one.with_drift(d).verdicts[3].passed is False
    # a sample read half-way through by an electrode drifting linearly: corrected, it reads as at t = 0
    a = 2e-4
    E_mid = 0.1015 + 0.97 * S1 * np.log10(a)
    E_corr = d.correct(E_mid, 1800.0)
    assert E_corr == pytest.approx(0.100 + 0.98 * S1 * np.log10(a), abs=1e-12)
    with pytest.raises(InputError, match="t_after"):
        drift_check(one, two, 10.0, 0.0)
