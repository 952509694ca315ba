"""The public API of the pH workflow (pinned: other codes import these names).

The integrator re-exports them at the package top level (``act.buffer_ph`` …); here they are
imported from :mod:`activity.workflows.ph`, which stays valid.
"""

from __future__ import annotations

import numpy as np
import pytest

from activity.constants import LN10, F, R
from activity.workflows import ph

PINNED = [
    "buffer_ph",
    "standard_buffers",
    "get_buffer",
    "load_buffers",
    "StandardBuffer",
    "BufferValue",
    "bates_guggenheim_log10_gamma_cl",
    "harned_ph",
    "HarnedResult",
    "silver_chloride_e0",
    "silver_chloride_e0_from_hcl",
    "water_vapour_pressure",
    "calibrate_ph",
    "PhCalibration",
    "isothermal_intersection",
    "validate_meter",
    "Thresholds",
    "residual_junction",
]


def test_names_exist():
    for name in PINNED:
        assert getattr(ph, name) is not None, name
    assert set(PINNED) <= set(ph.__all__)


def test_buffer_ph_scalar_and_array():
    value, u = ph.buffer_ph("phthalate-0.05", 298.15)  # 4.005, Buck et al. 2002 (read, secondary)
    assert (value, u) == (4.005, 0.002)
    res = ph.buffer_ph("borax", np.array([298.15, 310.15]))  # 9.180 (read), 9.088 (from memory)
    assert res.value.shape == (2,) and np.allclose(res.value, [9.180, 9.088])
    assert res.standard_uncertainty.shape == (2,)
    b = ph.standard_buffers()
    assert {
        "tartrate-sat",
        "citrate-0.05",
        "phthalate-0.05",
        "phosphate-1:1",
        "phosphate-1:3.5",
        "borax-0.01",
        "carbonate",
        "tetroxalate-0.05",
        "calcium-hydroxide-sat",
    } <= set(b)


def test_calibrate_ph_result_attributes_and_methods():
    k = R * 298.15 * LN10 / F
    pH = np.array([4.005, 6.865, 9.180])
    emf = 0.001 - 0.99 * k * (pH - 7)
    cal = ph.calibrate_ph(["KHP", "phosphate", "borax"], emf, 298.15)
    assert cal.slope == pytest.approx(-0.99 * k) and cal.slope_percent == pytest.approx(99.0)
    assert cal.E_pH7 == pytest.approx(0.001)
    assert cal.covariance.shape == (2, 2)
    assert cal.verdicts and all(hasattr(v, "passed") for v in cal.verdicts)
    assert isinstance(cal.notes, tuple)
    assert cal.ph(emf[1]) == pytest.approx(6.865)
    assert np.allclose(cal.ph(emf, 298.15), pH)
    r = cal.ph_with_uncertainty(emf[:2])
    assert r.pH.shape == (2,) and np.all(r.standard_uncertainty > 0)
    one = cal.ph_with_uncertainty(float(emf[0]))
    assert isinstance(one.pH, float) and one.expanded_uncertainty > one.standard_uncertainty


def test_harned_ph_returns_pH_with_budget():
    from activity.workflows.ph.harned import harned_emf

    m = [0.005, 0.01, 0.015]
    E = harned_emf(6.865, m, 298.15, ionic_strength=0.1, E0=0.22234)
    res = ph.harned_ph(m, E, 298.15, buffer="phosphate-1:1")
    assert res.pH == pytest.approx(6.865, abs=1e-9)
    assert 0 < res.standard_uncertainty < res.expanded_uncertainty
    assert res.budget_rows()
