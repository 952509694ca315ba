"""Reading unknowns: round trip, flags, uncertainty against the `uncertainties` package and Monte Carlo."""

import warnings

import numpy as np
import pytest
import uncertainties
from hypothesis import given, settings
from hypothesis import strategies as st

from activity import Solution
from activity.errors import ActivityWarning, InputError
from activity.workflows.ise import calibrate_ise
from activity.workflows.ise._model import ion_terms, nernst_slope_z


def calcium_cal(noise=3e-4, seed=1, model="davies"):
    c = np.logspace(-6, -2, 5)
    std = Solution({"Ca^2+": c, "K+": 0.1, "Cl-": 0.1 + 2 * c})
    t = ion_terms(std, "Ca^2+", 2, [], model)
    E = 0.05 + 0.97 * nernst_slope_z(298.15, 2) * np.log10(t.a_primary + 2e-7)
    E = E + np.random.default_rng(seed).normal(0, noise, 5)
    return calibrate_ise(std, E, "Ca^2+", model=model), std, E


MATRIX = Solution({"K+": 0.1, "Cl-": 0.1})


def test_round_trip_each_standard_within_its_residual():
    cal, std, E = calcium_cal()
    res = cal.read(E, MATRIX, counter_ion="Cl-")
    a_true = cal.standards["activity"]
    # a reading off the fitted curve by its residual r reads back (a + a0)·10^(r/S) − a0: exact
    np.testing.assert_allclose(res.activity, (a_true + cal.a0) * 10 ** (cal.residuals / cal.slope) - cal.a0, rtol=1e-9)
    local = cal.slope * a_true / (a_true + cal.a0)  # dE/d lg a
    tol = np.abs(cal.residuals) / local
    # and the molality moves the same way, by at most the residual over the slope of lg a on lg m
    m_err = np.abs(np.log10(res.molality / std.molality("Ca^2+")))
    assert np.all(m_err <= 1.1 * tol)


@settings(deadline=None, max_examples=20)
@given(st.lists(st.floats(-0.02, 0.06), min_size=2, max_size=6))
def test_batch_equals_row_by_row(readings):
    cal, _, _ = calcium_cal()
    batch = cal.molality(np.array(readings), MATRIX, counter_ion="Cl-")
    rows = [cal.molality(r, MATRIX, counter_ion="Cl-") for r in readings]
    np.testing.assert_allclose(batch, rows, rtol=1e-10)


def test_flags_outside_the_range_not_refused():
    cal, _, _ = calcium_cal()
    res = cal.read(
        np.array([cal.E0 + cal.slope * -1.0, cal.E0 + cal.slope * -6.3, cal.E0 + cal.slope * -9]),
        MATRIX,
        counter_ion="Cl-",
    )
    assert "above the highest standard" in res.flags[0]
    assert "below" in res.flags[1] and np.isfinite(res.molality[1])
    assert np.isnan(res.molality[2]) and "below detection" in res.flags[2]


def test_units_mol_per_litre_and_mg_per_litre():
    cal, _, _ = calcium_cal()
    res = cal.read(0.0, MATRIX, counter_ion="Cl-")
    # mg/L = mol/L × 40.078 g/mol × 1000 (IUPAC 2013 standard atomic weight of Ca, from memory)
    assert res.mass_concentration == pytest.approx(res.molarity * 40078, rel=1e-4)
    assert 0.98 < res.molarity / res.molality < 1.0  # dilute: c/m ≈ ρ(water) = 0.997 kg/L at 25 °C


def test_gum_against_the_uncertainties_package():
    # ideal model, no counter-ion effect on γ: m = 10^((E − E0)/(k s)) − a0 in closed form; the
    # `uncertainties` package propagates the correlated calibration parameters and the reading.
    cal, _, _E = calcium_cal(model="ideal")
    reading = 0.0
    u_e = 4e-4
    res = cal.molality_with_uncertainty(reading, MATRIX, counter_ion="Cl-", u_emf=u_e, model_choice=False)
    values = cal.parameter_values()
    names = list(cal.parameters)
    p = uncertainties.correlated_values([values[n] for n in names], np.asarray(cal.covariance))
    q = dict(zip(names, p))
    e = uncertainties.ufloat(reading, u_e)
    s = cal.slope / cal.slope_factor
    k = q["slope"] / s
    m = 10 ** ((e - q["E0"]) / (k * s)) - 10 ** q["lg a0"]
    assert res.value == pytest.approx(m.nominal_value, rel=1e-9)
    # finite differences (step 1e-3 u) against exact derivatives: agreement to 1e-5 relative
    assert res.standard_uncertainty == pytest.approx(m.std_dev, rel=1e-5)


def test_gum_vectorised_equals_propagate_and_monte_carlo_agrees():
    cal, _, _ = calcium_cal()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        g = cal.molality_with_uncertainty(
            np.array([0.0, 0.02]), MATRIX, counter_ion="Cl-", u_emf=3e-4, u_temperature=0.2, u_matrix=0.02
        )
        mc = cal.molality_with_uncertainty(
            np.array([0.0, 0.02]),
            MATRIX,
            counter_ion="Cl-",
            u_emf=3e-4,
            u_temperature=0.2,
            u_matrix=0.02,
            method="monte-carlo",
            seed=5,
        )
    for i in range(2):
        assert g.propagation[i].standard_uncertainty == pytest.approx(g.standard_uncertainty[i], rel=1e-8)
    # 10⁵ trials: the sd of a Monte Carlo sd is u/sqrt(2·10⁵) ≈ 0.2 %; the GUM linearisation of
    # 10^x with u(lg m) ≈ 0.03 differs by about ½(ln10·u)² ≈ 0.3 %: 2 % covers both
    np.testing.assert_allclose(mc.standard_uncertainty, g.standard_uncertainty, rtol=0.02)
    assert "activity-model choice [mol/kg]" in g.inputs
    assert set(g.model_spread) >= {"davies"}


def test_reading_errors():
    cal, _, _ = calcium_cal()
    with pytest.raises(InputError, match="millivolts"):
        cal.molality(-150.0, MATRIX)
    with pytest.raises(InputError, match="matrix"):
        cal.molality(0.0, Solution({"Ca^2+": 0.001, "Cl-": 0.002}))
    with pytest.raises(InputError, match="counter_ion"):
        cal.molality(0.0, MATRIX, counter_ion="Na+")
    with pytest.raises(InputError, match="method"):
        cal.molality_with_uncertainty(0.0, MATRIX, method="bayes")


def test_interferent_in_the_sample_is_corrected_and_forward_agrees_with_the_electrode_model():
    # calibration with K(Ca, Mg) held at 0.01; a sample with Mg²⁺ in its matrix: its reading, computed
    # by the package's IonSelectiveElectrode (the Nikolsky–Eisenman implementation of the Nernst
    # layer), must read back the true molality
    from activity.nernst.electrodes import IonSelectiveElectrode

    c = np.logspace(-5, -2, 4)
    std = Solution({"Ca^2+": c, "K+": 0.1, "Cl-": 0.1 + 2 * c})
    t = ion_terms(std, "Ca^2+", 2, [], "davies")
    E = 0.05 + nernst_slope_z(298.15, 2) * np.log10(t.a_primary)
    cal = calibrate_ise(std, E, "Ca^2+", slope="nernstian", interferents={"Mg^2+": 0.01}, detection_term=0.0)
    ise = IonSelectiveElectrode("Ca^2+", E0=cal.E0, selectivity={"Mg^2+": 0.01})
    m_true = 2e-4
    sample = Solution({"Ca^2+": m_true, "Mg^2+": 0.005, "K+": 0.1, "Cl-": 0.1 + 2 * m_true + 0.01})
    reading = ise.potential(sample, "davies")
    matrix = Solution({"Mg^2+": 0.005, "K+": 0.1, "Cl-": 0.11})
    assert cal.molality(reading, matrix, counter_ion="Cl-") == pytest.approx(m_true, rel=1e-9)
    # without the correction (K ignored) the Mg²⁺ would read as calcium: about +25 % here
    plain = calibrate_ise(std, E, "Ca^2+", slope="nernstian", detection_term=0.0)
    assert plain.molality(reading, matrix, counter_ion="Cl-") > 1.2 * m_true


@pytest.mark.parametrize("u_mV, published", [(1.0, 4.0), (0.1, 0.4)])
def test_relative_error_per_millivolt_matches_the_textbook_figure(u_mV, published):
    # Wang, Analytical Electrochemistry 2nd ed. (2000) p. 146: a 1 mV uncertainty of the EMF gives about
    # 4 % relative concentration error for a monovalent ion at 25 °C, 0.1 mV about 0.4 %
    # (published-values.toml 5a, status "read"). Exact: ln10·u/S = 3.89 % per mV; "about" → ±0.2 % / ±0.02 %.
    c = np.logspace(-4, -1, 4)
    std = Solution({"K+": c, "Cl-": c})
    t = ion_terms(std, "K+", 1, [], "ideal")
    E = 0.1 + nernst_slope_z(298.15, 1) * np.log10(t.a_primary)  # noise-free: no calibration uncertainty
    cal = calibrate_ise(std, E, "K+", model="ideal", slope="nernstian", detection_term=0.0)
    res = cal.molality_with_uncertainty(0.0, Solution({"Na+": 0.0, "Cl-": 0.0}), u_emf=u_mV * 1e-3, model_choice=False)
    rel = 100 * res.standard_uncertainty / res.value
    assert rel == pytest.approx(100 * np.log(10) * u_mV / 59.159, rel=1e-4)
    assert rel == pytest.approx(published, abs=0.05 * published)
