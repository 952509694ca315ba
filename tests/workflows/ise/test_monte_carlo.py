"""Monte Carlo of unknowns, vectorised over trials × samples (activity.workflows.ise._mc).

References kept here: the general reader (`_Reader.solve`, the activity model on a Solution
batch) on the very same draws, and the per-sample Monte Carlo through
`activity.uncertainty.propagate` that the workflow used before (same inputs, own draws).
"""

import warnings

import numpy as np
import pytest

import activity.workflows.ise._mc as mc
from activity import Solution
from activity.errors import ActivityWarning, InputError
from activity.uncertainty import Normal, propagate
from activity.workflows.ise import calibrate_ise
from activity.workflows.ise._model import ion_terms, nernst_slope_z
from activity.workflows.ise.unknowns import _calibration_inputs, _make_f, _Reader

MATRIX = Solution({"K+": 0.1, "Cl-": 0.1})


def calcium_cal(model="davies", noise=3e-4, seed=1, interferents=None):
    c = np.logspace(-6, -2, 5)
    std = Solution({"Ca^2+": c, "K+": 0.1, "Cl-": 0.1 + 2 * c})
    t = ion_terms(std, "Ca^2+", 2, [], model)
    E = 0.05 + 0.97 * nernst_slope_z(298.15, 2) * np.log10(t.a_primary + 2e-7)
    E = E + np.random.default_rng(seed).normal(0, noise, 5)
    return calibrate_ise(std, E, "Ca^2+", model=model, interferents=interferents)


def _run(cal, E, matrix, monkeypatch=None, general=False, **kw):
    if general:
        monkeypatch.setattr(mc, "_fast_terms", lambda reader: None)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        return cal.molality_with_uncertainty(E, matrix, method="monte-carlo", model_choice=False, **kw)


@pytest.mark.parametrize("model", ["davies", "extended_debye_huckel", "truesdell_jones", "ideal"])
def test_fast_kernel_equals_the_general_reader_on_the_same_draws(model, monkeypatch):
    # same seed → same draws; the Newton kernel and the general reader both solve ln m to 1e-11,
    # so every statistic agrees to 1e-9 relative (the stored values are float32 offsets: the
    # coverage ends to 1e-6 of the spread)
    cal = calcium_cal(model)
    E = cal.E0 + cal.slope * np.array([-4.5, -3.0, -1.8])
    kw = dict(counter_ion="Cl-", u_emf=3e-4, u_temperature=0.3, u_matrix=0.02, trials=3000, seed=7)
    fast = _run(cal, E, MATRIX, **kw)
    slow = _run(cal, E, MATRIX, monkeypatch, general=True, **kw)
    np.testing.assert_allclose(fast.value, slow.value, rtol=1e-9)
    np.testing.assert_allclose(fast.standard_uncertainty, slow.standard_uncertainty, rtol=1e-7)
    for a, b in zip(fast.propagation, slow.propagation):
        lo_a, hi_a = a.coverage_interval()
        lo_b, hi_b = b.coverage_interval()
        assert abs(lo_a - lo_b) < 1e-6 * (hi_b - lo_b) and abs(hi_a - hi_b) < 1e-6 * (hi_b - lo_b)


def test_fast_kernel_with_an_interferent_in_the_matrix(monkeypatch):
    cal = calcium_cal(interferents={"Mg^2+": 0.02})
    matrix = Solution({"Mg^2+": [0.002, 0.01], "K+": 0.1, "Cl-": [0.104, 0.12]})
    E = cal.E0 + cal.slope * np.array([-3.5, -2.5])
    kw = dict(counter_ion="Cl-", u_emf=3e-4, u_temperature=0.2, u_matrix=0.02, trials=2000, seed=3)
    fast = _run(cal, E, matrix, **kw)
    slow = _run(cal, E, matrix, monkeypatch, general=True, **kw)
    np.testing.assert_allclose(fast.value, slow.value, rtol=1e-9)
    np.testing.assert_allclose(fast.standard_uncertainty, slow.standard_uncertainty, rtol=1e-7)


def test_water_model_polynomial_against_the_water_model():
    from activity.water import debye_huckel_A, debye_huckel_B

    T = 298.15 + np.random.default_rng(0).normal(0, 0.5, 5000)
    A, B = mc._water_AB(T, np.full(T.shape, 101325.0), True)
    # the polynomial is accepted only when it meets POLY_RTOL = 1e-13 at 41 check points; at the
    # draws themselves 1e-12 relative (rounding of the Chebyshev sum) is the stated bound
    np.testing.assert_allclose(A, debye_huckel_A(T, 101325.0), rtol=1e-12)
    np.testing.assert_allclose(B, debye_huckel_B(T, 101325.0), rtol=1e-12)


def test_same_distribution_as_the_per_sample_monte_carlo():
    # the reference: one sample through activity.uncertainty.propagate, as the workflow did before
    # (own draws). Mean within 4 standard errors, SD within 4·SD/sqrt(2N) of each other (both
    # runs carry MC noise: the combined bound is sqrt(2) times that of one, 4 covers it).
    cal = calcium_cal()
    E = cal.E0 + cal.slope * -3.2
    N = 40_000
    new = _run(
        cal, np.array([E]), MATRIX, counter_ion="Cl-", u_emf=4e-4, u_temperature=0.3, u_matrix=0.03, trials=N, seed=11
    )
    reader = _Reader(cal, MATRIX, "Cl-")
    cal_in, corr = _calibration_inputs(cal)
    m0 = cal.molality(E, MATRIX, counter_ion="Cl-")
    f = _make_f(cal, reader, cal_in, E, m0, 0.0)
    dists = {i.key: Normal(i.mean, i.u) for i in cal_in if i.u > 0}
    dists |= {"E": Normal(0.0, 0.4), "T": Normal(0.0, 0.3), "scale": Normal(1.0, 0.03)}  # reading offset in mV
    keys = [i.key for i in cal_in]
    c = {
        (keys[a], keys[b]): float(corr[a, b])
        for a in range(len(keys))
        for b in range(a + 1, len(keys))
        if cal_in[a].u > 0 and cal_in[b].u > 0
    }
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        old = propagate(f, dists, "monte-carlo", correlation=c, trials=N, seed=12)
    u = old.standard_uncertainty
    assert abs(new.value[0] - old.value) < 4 * u / np.sqrt(N) * np.sqrt(2)
    assert abs(new.standard_uncertainty[0] - u) < 4 * u / np.sqrt(2 * N) * np.sqrt(2)
    lo_n, hi_n = new.propagation[0].coverage_interval()
    lo_o, hi_o = old.coverage_interval()
    assert abs(lo_n - lo_o) < 0.03 * (hi_o - lo_o) and abs(hi_n - hi_o) < 0.03 * (hi_o - lo_o)


def test_monte_carlo_equals_gum_for_small_uncertainties_and_batch_equals_rows():
    # small inputs: the model is nearly linear over them, so the MC SD equals the GUM u within the
    # MC noise (u/sqrt(2N) = 0.5 % at N = 2·10⁴) plus the curvature (< 0.1 % here): 2 %
    cal = calcium_cal(noise=5e-5)
    E = cal.E0 + cal.slope * np.array([-4.0, -2.0])
    kw = dict(counter_ion="Cl-", u_emf=5e-5, u_temperature=0.05, u_matrix=0.005)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        g = cal.molality_with_uncertainty(E, MATRIX, model_choice=False, **kw)
    m = _run(cal, E, MATRIX, trials=20_000, seed=2, **kw)
    np.testing.assert_allclose(m.standard_uncertainty, g.standard_uncertainty, rtol=0.02)
    np.testing.assert_allclose(m.value, g.value, rtol=0.002)
    # each sample alone (same seed: the calibration draws are shared; the reading draws differ
    # with the number of samples) gives the same distribution within MC noise
    one = _run(cal, E[1:], MATRIX, trials=20_000, seed=2, **kw)
    assert one.standard_uncertainty[0] == pytest.approx(m.standard_uncertainty[1], rel=0.04)
    # the budget keeps the GUM sensitivities at the estimates
    assert set(m.contributions) == set(g.contributions)
    for k in g.contributions:
        np.testing.assert_allclose(m.contributions[k], g.contributions[k], rtol=1e-9)


def test_pitzer_goes_through_the_general_reader():
    cal = calcium_cal("pitzer")
    E = cal.E0 + cal.slope * np.array([-3.0])
    m = _run(cal, E, MATRIX, counter_ion="Cl-", u_emf=3e-4, trials=2000, seed=1)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        g = cal.molality_with_uncertainty(E, MATRIX, counter_ion="Cl-", u_emf=3e-4, model_choice=False)
    # 2000 trials: the SD of an SD is 1.6 %; 8 % covers 5 of them
    np.testing.assert_allclose(m.standard_uncertainty, g.standard_uncertainty, rtol=0.08)


def test_a_reading_whose_trials_fall_below_detection_is_an_error():
    cal = calcium_cal()
    E = cal.E0 + cal.slope * np.log10(cal.a0 * 1.001)  # barely above a0: the draws fall below
    with pytest.raises(InputError, match="below detection"):
        _run(cal, np.array([E]), MATRIX, counter_ion="Cl-", u_emf=1e-3, trials=1000, seed=1)


def test_progress_bar_only_on_a_terminal(monkeypatch, capsys):
    import io
    import sys

    class Terminal(io.StringIO):
        def isatty(self):
            return True

    cal = calcium_cal()
    E = cal.E0 + cal.slope * np.array([-3.0, -2.0])
    kw = dict(counter_ion="Cl-", u_emf=3e-4, trials=5000, seed=4)
    quiet = _run(cal, E, MATRIX, progress=True, **kw)  # stderr captured by pytest: not a terminal, no bar
    assert capsys.readouterr().err == ""
    term = Terminal()
    monkeypatch.setattr(sys, "stderr", term)
    shown = _run(cal, E, MATRIX, progress=True, **kw)
    assert "uncertainty of unknowns" in term.getvalue()
    # the bar changes nothing in the result
    np.testing.assert_array_equal(shown.standard_uncertainty, quiet.standard_uncertainty)


def test_fast_kernel_with_a_temperature_per_sample(monkeypatch):
    # samples at 20, 25 and 30 °C: A(T) per trial and sample from the checked polynomial
    cal = calcium_cal("extended_debye_huckel")
    matrix = Solution({"K+": 0.1, "Cl-": 0.1}, T=[293.15, 298.15, 303.15])
    E = cal.E0 + cal.slope * np.array([-4.0, -3.0, -2.0])
    kw = dict(counter_ion="Cl-", u_emf=3e-4, u_temperature=0.5, trials=3000, seed=9)
    fast = _run(cal, E, matrix, **kw)
    slow = _run(cal, E, matrix, monkeypatch, general=True, **kw)
    np.testing.assert_allclose(fast.value, slow.value, rtol=1e-9)
    np.testing.assert_allclose(fast.standard_uncertainty, slow.standard_uncertainty, rtol=1e-7)


def test_too_many_values_to_keep_is_refused(monkeypatch):
    monkeypatch.setattr(mc, "MAX_STORE_BYTES", 4 * 1000 * 2 - 1)  # room for 1000 trials of one sample only
    cal = calcium_cal()
    E = cal.E0 + cal.slope * np.array([-3.0, -2.0])
    with pytest.raises(InputError, match="trials"):
        _run(cal, E, MATRIX, counter_ion="Cl-", u_emf=3e-4, trials=1000, seed=1)
