"""Ion-selective electrode calibration: the fit, unknowns with uncertainty, selectivity,
known addition, drift, plots and the calibration record.

Examples
--------
>>> import numpy as np
>>> from activity import Solution
>>> from activity.workflows.ise import calibrate_ise
>>> c = np.array([1e-4, 1e-3, 1e-2, 1e-1])
>>> cal = calibrate_ise(Solution({"K+": c, "Cl-": c}), [0.0120, 0.0695, 0.1260, 0.1805], "K+")
>>> round(cal.slope_percent)
98
"""

from .acceptance import Acceptance, Verdict
from .addition import (
    AdditionResult,
    known_addition_closed_form,
    multiple_addition,
    single_addition,
)
from .calibration import ISECalibration, calibrate_ise
from .drift import DriftResult, drift_check
from .selectivity import (
    SelectivityResult,
    fixed_interference,
    matched_potential,
    separate_solution,
)
from .unknowns import ReadResult, UnknownResult, read_samples, read_with_uncertainty

__all__ = [
    "Acceptance",
    "AdditionResult",
    "DriftResult",
    "ISECalibration",
    "ReadResult",
    "SelectivityResult",
    "UnknownResult",
    "Verdict",
    "calibrate_ise",
    "drift_check",
    "fixed_interference",
    "known_addition_closed_form",
    "matched_potential",
    "multiple_addition",
    "read_samples",
    "read_with_uncertainty",
    "separate_solution",
    "single_addition",
]
