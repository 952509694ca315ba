"""Drift between bracketing calibrations and the time-interpolated correction of readings.

A calibration before a sample run and one repeated after it (bracketing) show how E0 and
the slope moved. Assuming a linear change with time between them (the usual bracketing
assumption, common practice), a sample read at time t is corrected to the first
calibration's frame::

    E0(t) = E0₁ + (E0₂ − E0₁)·(t − t₁)/(t₂ − t₁),   S(t) likewise
    E_corrected = E0₁ + (E − E0(t))·S₁/S(t)

and then read with the first calibration. The drift rate (E0₂ − E0₁)/(t₂ − t₁) is judged
against the calibration's acceptance threshold (default 1 mV/h, common practice).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from ...errors import InputError
from ._model import finite

__all__ = ["DriftResult", "drift_check"]


@dataclass(frozen=True)
class DriftResult:
    """Drift between two calibrations.

    Attributes
    ----------
    rate : float
        dE0/dt, V/s (``rate_mV_per_h`` for people).
    slope_change_percent : float
        Change of the slope as % of Nernstian.
    elapsed : float
        t₂ − t₁, s.
    passed : bool
        |rate| within the threshold of the first calibration's acceptance criteria.
    notes : tuple of str
    """

    before: Any
    after: Any
    t_before: float
    t_after: float
    rate: float
    slope_change_percent: float
    passed: bool
    notes: tuple = ()

    @property
    def elapsed(self) -> float:
        return self.t_after - self.t_before

    @property
    def rate_mV_per_h(self) -> float:
        return self.rate * 3.6e6

    def correct(self, emf: ArrayLike, t: ArrayLike) -> Any:
        """Readings taken at times t (s, same clock as the calibrations) moved to the first
        calibration's frame, V. Times outside [t₁, t₂] are extrapolated (noted by the caller)."""
        E = finite(emf, "emf")
        tt = finite(t, "t")
        f = (tt - self.t_before) / self.elapsed
        E0t = self.before.E0 + (self.after.E0 - self.before.E0) * f
        St = self.before.slope_factor + (self.after.slope_factor - self.before.slope_factor) * f
        out = self.before.E0 + (E - E0t) * self.before.slope_factor / St
        return float(out) if np.ndim(out) == 0 else out

    def to_dict(self) -> dict:
        return {
            "rate_mV_per_h": self.rate_mV_per_h,
            "E0_before_mV": 1e3 * self.before.E0,
            "E0_after_mV": 1e3 * self.after.E0,
            "slope_percent_before": self.before.slope_percent,
            "slope_percent_after": self.after.slope_percent,
            "elapsed_s": self.elapsed,
            "passed": self.passed,
            "notes": list(self.notes),
        }


def drift_check(before: Any, after: Any, t_before: float, t_after: float) -> DriftResult:
    """Compare two calibrations of one electrode (bracketing a sample run).

    Parameters
    ----------
    before, after : ISECalibration
        Calibrations of the same ion with the same activity model.
    t_before, t_after : float
        Times of the two calibrations, s (any common origin).

    Examples
    --------
    >>> import numpy as np
    >>> from activity import Solution
    >>> from activity.workflows.ise import calibrate_ise
    >>> c = np.array([1e-4, 1e-3, 1e-2])
    >>> std = Solution({"K+": c, "Cl-": c})
    >>> lg = np.log10(c * 0.9)
    >>> one = calibrate_ise(std, 0.100 + 0.0585 * lg, "K+", detection_term=0)
    >>> two = calibrate_ise(std, 0.1015 + 0.0585 * lg, "K+", detection_term=0)
    >>> d = drift_check(one, two, 0.0, 5400.0)
    >>> round(d.rate_mV_per_h, 3), d.passed
    (1.0, True)
    """
    if before.ion != after.ion:
        raise InputError(f"calibrations of different ions ({before.ion}, {after.ion})", field="after", value=after.ion)
    t1 = float(finite(t_before, "t_before"))
    t2 = float(finite(t_after, "t_after"))
    if t2 <= t1:
        raise InputError("the second calibration must come after the first", field="t_after", value=t2)
    notes = []
    if before.model != after.model:
        notes.append(f"calibrations use different activity models ({before.model}, {after.model})")
    rate = (after.E0 - before.E0) / (t2 - t1)
    limit = before.acceptance.max_drift
    # within rounding of the threshold (1e-9 relative) counts as within
    passed = bool(abs(rate) <= limit * (1 + 1e-9))
    dS = after.slope_percent - before.slope_percent
    if abs(dS) > 2.0:
        notes.append(f"the slope changed by {dS:+.2f} % of Nernstian between the calibrations")
    return DriftResult(before, after, t1, t2, float(rate), float(dS), passed, tuple(notes))
