"""Calibration fit: parameter recovery, interval coverage, detection limit, linear range, verdicts, bad input."""

import json
import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from activity import Solution
from activity.errors import ActivityWarning, InputError
from activity.workflows.ise import Acceptance, ISECalibration, calibrate_ise
from activity.workflows.ise._model import ion_terms, nernst_slope_z
from activity.workflows.ise.calibration import _Data, _fit

S25 = float(nernst_slope_z(298.15, 1))


def synthetic(c, ion="Na+", E0=0.1, k=0.98, a0=1e-6, noise=0.0, seed=0, model="davies", K=None, extra=None):
    """Standards and readings from a known Nikolsky model (activities by ``model``)."""
    comp = {ion: c, "Cl-": c} if ion == "Na+" else {ion: c, "Cl-": 2 * c}
    comp.update(extra or {})
    std = Solution(comp, neutrality="ignore")
    z = 1 if ion == "Na+" else 2
    t = ion_terms(std, ion, z, list(K or {}), model)
    total = t.a_primary + t.interference(K or {}) + a0
    E = E0 + k * nernst_slope_z(298.15, z) * np.log10(total)
    return std, E + np.random.default_rng(seed).normal(0, noise, np.shape(E)), t


C9 = np.logspace(-7, -1, 9)


def test_noise_free_recovers_parameters_and_detection_limit_equals_a0():
    # exact data from the model: the fit must return the generating values (to solver precision)
    std, E, _ = synthetic(C9)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        cal = calibrate_ise(std, E, "Na+")
    assert cal.E0 == pytest.approx(0.1, abs=1e-9)
    assert cal.slope_factor == pytest.approx(0.98, rel=1e-8)
    assert cal.a0 == pytest.approx(1e-6, rel=1e-6)
    # the IUPAC detection limit is a0 for data built on this model (no interferent)
    assert cal.detection_limit_activity == pytest.approx(1e-6, rel=1e-6)
    assert cal.residual_sd < 1e-9


def test_detection_limit_is_the_intersection_of_the_two_lines():
    # At a = a_DL the response lies S·lg 2 above the extrapolated line: 17.8/z mV at 25 °C
    # (the IUPAC practical criterion, 18/z mV; published-values.toml entry 5a, status "from memory").
    std, E, _ = synthetic(C9)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        cal = calibrate_ise(std, E, "Na+", slope="nernstian", detection_term="fit")
    a = cal.detection_limit_activity
    curve = cal.emf_from_activity(a)
    line = cal.E0 + cal.slope * np.log10(a)
    assert (curve - line) * 1000 == pytest.approx(17.81, abs=0.01)  # S·lg2 = 59.159·0.30103 mV


def test_interference_limited_detection_limit_is_K_times_aj():
    # Wang, Analytical Electrochemistry 2nd ed. (2000), eq. 5-8: a_i,min = K_ij·a_j^(zi/zj)
    # (published-values.toml entry 5a, status "read"). Ca²⁺ electrode, Mg²⁺ background at fixed activity.
    c = np.logspace(-7, -2, 6)
    K = {"Mg^2+": 0.02}
    std, E, t = synthetic(c, ion="Ca^2+", E0=0.05, k=1.0, a0=0.0, K=K, extra={"Mg^2+": 0.001, "Cl-": 2 * c + 0.002})
    cal = calibrate_ise(std, E, "Ca^2+", interferents=K, detection_term=0.0)
    a_mg = t.interferents["Mg^2+"][0][0]
    assert cal.detection_limit_activity == pytest.approx(0.02 * a_mg, rel=1e-9)


def test_fixed_background_interferent_cannot_be_fitted_apart_from_a0():
    c = np.logspace(-7, -2, 6)
    std, E, t = synthetic(
        c, ion="Ca^2+", E0=0.05, k=1.0, a0=0.0, K={"Mg^2+": 0.02}, extra={"Mg^2+": 0.001, "Cl-": 2 * c + 0.002}
    )
    cal = calibrate_ise(std, E, "Ca^2+", interferents={"Mg^2+": "fit"})
    assert "lg K(Mg^2+)" not in cal.parameters or "lg a0" not in cal.parameters
    assert any("not determined" in n for n in cal.notes)
    # whichever term is kept carries the same intercept: the detection limit is still K·a(Mg)
    # (noise-free data; a(Mg) falls by ~30 % from the lowest to the highest standard as I rises, so a
    # constant term fits it only approximately: 1 % on the limit)
    a_mg = t.interferents["Mg^2+"][0][0]
    assert cal.detection_limit_activity == pytest.approx(0.02 * a_mg, rel=1e-2)


def test_varying_interferent_is_fitted():
    # Mg²⁺ varied independently of Ca²⁺: K is determined; the fit returns it (noise-free)
    c = np.array([1e-6, 1e-5, 1e-4, 1e-3, 1e-2, 1e-5, 1e-5, 1e-5])
    mg = np.array([0, 0, 0, 0, 0, 1e-3, 1e-2, 1e-1])
    std, E, _ = synthetic(
        c, ion="Ca^2+", E0=0.05, k=1.0, a0=1e-7, K={"Mg^2+": 0.01}, extra={"Mg^2+": mg, "Cl-": 2 * c + 2 * mg}
    )
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        cal = calibrate_ise(std, E, "Ca^2+", interferents={"Mg^2+": "fit"}, detection_term="fit")
    assert cal.selectivity["Mg^2+"] == pytest.approx(0.01, rel=1e-5)


def test_linear_region_only_drops_a0_and_says_so():
    c = np.logspace(-4, -1, 4)
    std, E, _ = synthetic(c, a0=0.0, noise=2e-4)
    cal = calibrate_ise(std, E, "Na+")
    assert "lg a0" not in cal.parameters and cal.a0 == 0.0
    assert any("a0 not determined" in n for n in cal.notes)
    assert np.isnan(cal.detection_limit_activity)
    assert cal.verdicts[2].passed is True  # below the lowest standard


def test_recovery_within_confidence_interval():
    std, E, _ = synthetic(C9, noise=3e-4, seed=7)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        cal = calibrate_ise(std, E, "Na+")
    ci = cal.confidence_intervals(0.95)
    truth = {"E0": 0.1, "slope": 0.98 * S25, "lg a0": -6.0}
    for name, (lo, hi) in ci.items():
        assert lo <= truth[name] <= hi, name


def test_interval_coverage_over_seeds():
    # 300 synthetic calibrations (noise 0.3 mV, 9 standards, a0 = 1e-6): the 95 % Student-t intervals
    # of E0, k and lg a0 must cover the truth 95 ± 3 % of the time (binomial sd at 300 seeds: 1.3 %).
    # Uses the fit engine on fixed activities (the activity model is not what is tested here).
    a = np.logspace(-7, -1, 9)
    s = np.full(9, S25)
    E_true = 0.1 + 0.98 * s * np.log10(a + 1e-6)
    truth = np.array([0.1, 0.98, -6.0])
    t = stats.t.ppf(0.975, 9 - 3)
    hits = np.zeros(3)
    n_seeds = 300
    rng = np.random.default_rng(2024)
    for _ in range(n_seeds):
        d = _Data(E_true + rng.normal(0, 3e-4, 9), np.ones(9), s, a, np.zeros(9), {})
        _prob, res, cov, _ = _fit(d, True, True, [], 0.0)
        u = np.sqrt(np.diag(cov))
        hits += np.abs(res.x - truth) <= t * u
    coverage = hits / n_seeds
    assert np.all(np.abs(coverage - 0.95) <= 0.03), coverage


def test_slope_percent_and_nernstian_mode():
    std, E, _ = synthetic(np.logspace(-4, -1, 4), a0=0.0, k=1.0)
    cal = calibrate_ise(std, E, "Na+", slope="nernstian")
    assert cal.slope_percent == 100.0
    assert cal.slope == pytest.approx(S25, rel=1e-12)  # 59.159 mV/decade at 25 °C (CODATA R, F)
    assert cal.parameters[0] == "E0" and "slope" not in cal.parameters


def test_temperature_per_standard():
    c = np.logspace(-4, -1, 4)
    T = np.array([293.15, 298.15, 303.15, 308.15])
    std = Solution({"Na+": c, "Cl-": c}, T=T)
    t = ion_terms(std, "Na+", 1, [], "davies")
    E = 0.2 + 0.97 * nernst_slope_z(T, 1) * np.log10(t.a_primary)
    cal = calibrate_ise(std, E, "Na+", detection_term=0.0)
    assert cal.slope_factor == pytest.approx(0.97, rel=1e-9)
    assert cal.T == pytest.approx(300.65)
    assert any("mean temperature" in n for n in cal.notes)


def test_linear_range_bound():
    std, E, _ = synthetic(C9)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        cal = calibrate_ise(std, E, "Na+", linear_deviation=1e-3)
    lo = cal.linear_range[0]
    dev = cal.emf_from_activity(lo) - (cal.E0 + cal.slope * np.log10(lo))
    assert dev == pytest.approx(1e-3, rel=1e-9)


def test_verdicts_thresholds_user_and_default():
    std, E, _ = synthetic(np.logspace(-4, -1, 4), a0=0.0, k=0.85, noise=1e-4)
    cal = calibrate_ise(std, E, "Na+", acceptance={"max_residual_sd": 1e-6})
    v = {x.criterion: x for x in cal.verdicts}
    assert v["slope window"].passed is False and v["slope window"].basis == "common practice default"
    assert v["residual standard deviation"].passed is False and v["residual standard deviation"].basis == "user"
    assert v["drift"].passed is None
    assert cal.passed is False
    with pytest.raises(InputError, match="acceptance"):
        Acceptance.from_mapping({"slope_window": 3})


def test_save_and_reload_reads_the_same():
    std, E, _ = synthetic(C9, noise=3e-4)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        cal = calibrate_ise(std, E, "Na+")
        back = ISECalibration.from_dict(json.loads(json.dumps(cal.to_dict())))
        matrix = Solution({"K+": 0.01, "NO3-": 0.01})
        m1 = cal.molality([0.0, -0.1], matrix)
        m2 = back.molality([0.0, -0.1], matrix)
    np.testing.assert_allclose(m1, m2, rtol=1e-12)
    np.testing.assert_allclose(back.covariance, cal.covariance)
    assert [v.word for v in back.verdicts] == [v.word for v in cal.verdicts]
    with pytest.raises(InputError, match="calibration"):
        ISECalibration.from_dict({"kind": "something else"})


@settings(deadline=None, max_examples=15)
@given(st.permutations(range(5)))
def test_fit_does_not_depend_on_the_order_of_the_standards(order):
    c = np.logspace(-5, -1, 5)
    std, E, _ = synthetic(c, a0=3e-6, noise=2e-4, seed=3)
    idx = np.array(order)
    cal_a = calibrate_ise(std, E, "Na+")
    cal_b = calibrate_ise(std[idx], E[idx], "Na+")
    assert cal_b.E0 == pytest.approx(cal_a.E0, abs=1e-9)
    assert cal_b.slope == pytest.approx(cal_a.slope, rel=1e-7)


# ---------------------------------------------------------------------- bad input
def test_bad_input_names_the_field():
    c = np.logspace(-4, -1, 4)
    std, E, _ = synthetic(c, a0=0.0)
    with pytest.raises(InputError, match="emf.*standard"):
        calibrate_ise(std[:2], E[:2], "Na+")  # 2 standards, 2 free parameters
    calibrate_ise(std[:2], E[:2], "Na+", slope="nernstian")  # 1 free parameter: enough
    with pytest.raises(InputError, match="millivolts"):
        calibrate_ise(std, E * 1000, "Na+")  # mV given as V
    with pytest.raises(InputError, match="volts given as millivolts"):
        calibrate_ise(std, E * 1e-3, "Na+")  # V given as mV
    bad = E.copy()
    bad[1] = np.nan
    with pytest.raises(InputError, match="emf"):
        calibrate_ise(std, bad, "Na+")
    with pytest.raises(InputError, match="emf"):
        calibrate_ise(std, ["a", 1, 2, 3], "Na+")
    with pytest.raises(InputError, match=r"interferents\['K\+'\]"):
        calibrate_ise(std, E, "Na+", interferents={"K+": None})
    with pytest.raises(InputError, match="interferents"):
        calibrate_ise(std, E, "Na+", interferents={"Cl-": 0.1})
    with pytest.raises(InputError, match="ion"):
        calibrate_ise(std, E, "Ca^2+")
    with pytest.raises(InputError, match="slope"):
        calibrate_ise(std, E, "Na+", slope="fixed")
    with pytest.raises(InputError, match="weights"):
        calibrate_ise(std, E, "Na+", weights=[1, 1])


def test_non_monotonic_series_warns():
    c = np.logspace(-4, -1, 4)
    std, E, _ = synthetic(c, a0=0.0)
    E = E.copy()
    E[2], E[1] = E[1], E[2]
    with pytest.warns(ActivityWarning, match="not monotonic"):
        cal = calibrate_ise(std, E, "Na+")
    assert any("not monotonic" in n for n in cal.notes)
