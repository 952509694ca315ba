"""Validation session: check buffers, drift, stability, replicates, samples."""

from __future__ import annotations

import numpy as np
import pytest

from activity.constants import LN10, F, R
from activity.errors import InputError
from activity.solution import Solution
from activity.workflows.ph.buffers import buffer_ph
from activity.workflows.ph.validation import validate_meter

T = 298.15
S = -0.985 * R * T * LN10 / F  # an invented cell: 98.5 % slope, E(pH 7) = +4 mV


def E(name, t=T, shift=0.0):
    return 0.004 + S * (t / T) * (buffer_ph(name, t).value - 7.0) + shift


def test_check_buffer_normalised_error():
    good = validate_meter(
        ["KHP", "phosphate", "borax", "7.413"],
        [E("KHP"), E("phosphate"), E("borax"), E("7.413")],
        T,
        roles=["calibration"] * 3 + ["check"],
    )
    c = good.checks[0]
    assert c.pH == pytest.approx(7.413, abs=1e-9) and abs(c.En) < 1e-6 and c.passed
    # a 3 mV error in the check reading is 0.051 pH: beyond the 0.05 tolerance (common practice)
    bad = validate_meter(
        ["KHP", "phosphate", "borax", "7.413"],
        [E("KHP"), E("phosphate"), E("borax"), E("7.413", shift=-0.003)],
        T,
        roles=["calibration"] * 3 + ["check"],
    )
    c = bad.checks[0]
    assert c.difference == pytest.approx(0.003 / -S, rel=1e-6)
    # E_n = Δ / √(U(pH)² + U(pH(S))²), with U(pH(S)) = 0.004 (k = 2)
    assert c.En == pytest.approx(c.difference / np.hypot(c.U_pH, 0.004), rel=1e-9)
    assert not c.passed and not bad.passed


def test_drift_and_stability_from_replicates():
    names = ["KHP", "phosphate", "borax", "phosphate", "phosphate"]
    t = np.array([0.0, 300.0, 600.0, 1800.0, 3600.0])  # s
    drift = 0.0015 / 3600.0  # 1.5 mV/h on the phosphate readings
    emf = np.array([E(n) for n in names])
    emf[[1, 3, 4]] += drift * t[[1, 3, 4]]
    v = validate_meter(names, emf, T, time=t, roles=["calibration"] * 3 + ["check"] * 2)
    assert v.drift == pytest.approx(0.0015, rel=1e-9)
    assert v.stability == pytest.approx(0.0, abs=1e-12)  # only a drift, no scatter
    verdict = {x.criterion: x for x in v.verdicts}
    assert verdict["drift"].passed is True  # limit 2 mV/h (common practice)
    strict = validate_meter(
        names, emf, T, time=t, roles=["calibration"] * 3 + ["check"] * 2, thresholds={"drift_max": 0.001}
    )
    assert {x.criterion: x for x in strict.verdicts}["drift"].passed is False
    none = validate_meter(names[:3], emf[:3], T)
    assert {x.criterion: x.passed for x in none.verdicts}["drift"] is None
    assert {x.criterion: x.passed for x in none.verdicts}["stability"] is None


def test_replicate_calibration_readings_are_averaged():
    names = ["KHP", "KHP", "borax"]
    v = validate_meter(names, [E("KHP", shift=2e-4), E("KHP", shift=-2e-4), E("borax")], T)
    assert v.calibration.standards == ("phthalate-0.05", "borax-0.01")
    assert v.calibration.E_pH7 == pytest.approx(0.004, abs=1e-12)
    assert v.stability == pytest.approx(np.sqrt(2) * 2e-4, rel=1e-9)  # sd of two readings ±0.2 mV


def test_samples_with_composition_and_labels():
    v = validate_meter(
        ["KHP", "phosphate", "borax"],
        [E("KHP"), E("phosphate"), E("borax")],
        T,
        samples_emf=[E("phosphate"), 0.004 + S * (3.0 - 7.0)],
        samples_T=[T, T],
        sample_labels=["a", "b"],
        sample_compositions=[Solution({"Na+": 0.5, "Cl-": 0.5}), None],
    )
    s = v.samples
    assert s.pH[0] == pytest.approx(6.865, abs=1e-9) and s.pH[1] == pytest.approx(3.0, abs=1e-9)
    assert s.junction[0].half_width > 0 and s.junction[1] is None
    assert list(s.outside_bracket) == [False, True]
    assert any(n.startswith("a: residual liquid junction (Henderson)") for n in s.notes)


def test_validation_bad_input():
    with pytest.raises(InputError, match="role = 'verify'"):
        validate_meter(["KHP", "borax"], [0.17, -0.13], T, roles=["calibration", "verify"])
    with pytest.raises(InputError, match="no calibration readings"):
        validate_meter(["KHP", "borax"], [0.17, -0.13], T, roles=["check", "check"])
    with pytest.raises(InputError, match="2 buffers but 3 readings"):
        validate_meter(["KHP", "borax"], [0.17, -0.13, 0.0], T)


def test_calibrate_at_25_and_check_at_37_degrees():
    # the scenario: 4.005 / 6.865 / 9.180 at 25 °C, a check in the 1:1 phosphate at 37 °C.
    # An ideal cell (isothermal point at pH 7, slope ∝ T) reads at 37 °C what compensation predicts.
    names = ["4.005", "6.865", "9.180", "6.865"]
    T = [298.15, 298.15, 298.15, 310.15]
    emf = [E("4.005"), E("6.865"), E("9.180"), E("6.865", t=310.15)]
    v = validate_meter(names, emf, T, roles=["calibration"] * 3 + ["check"])
    c = v.checks[0]
    assert c.pH_S == 6.841  # Buck et al. 2002 at 37 °C (from memory, group 1b)
    assert c.pH == pytest.approx(6.841, abs=1e-9) and c.passed
    # a cell whose potential moves by +1 mV between 25 and 37 °C reads 1 mV / s(37 °C) = −0.0165 pH low
    shifted = validate_meter(names, emf[:3] + [emf[3] + 0.001], T, roles=["calibration"] * 3 + ["check"])
    assert shifted.checks[0].difference == pytest.approx(0.001 / (S * 310.15 / 298.15), rel=1e-9)
