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
from .calibration import ISECalibration, calibrate_ise

__all__ = ["Acceptance", "ISECalibration", "Verdict", "calibrate_ise"]
