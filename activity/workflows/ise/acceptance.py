"""Acceptance criteria of an electrode calibration and the verdicts they give.

Each threshold has a default marked as common practice (no single standard fixes these
numbers; they are the values laboratories commonly write into their procedures) and can
be set by the user; the verdict says which it used.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field, fields, replace
from typing import Any

from ...errors import InputError

__all__ = ["COMMON_PRACTICE", "Acceptance", "Verdict"]

COMMON_PRACTICE = "common practice default"


@dataclass(frozen=True)
class Acceptance:
    """Thresholds of the acceptance verdicts.

    Attributes
    ----------
    slope_min_percent, slope_max_percent : float
        Window of the slope as % of the Nernst slope at the standards' temperature
        (default 90–105 %, common practice).
    max_residual_sd : float
        Largest residual standard deviation of the fit, V (default 1 mV, common practice).
    max_detection_limit : float or None
        Largest detection limit (activity). ``None`` (default): the detection limit must lie
        at or below the lowest standard's activity (common practice: the calibration should
        reach down to where the electrode still responds linearly).
    max_drift : float
        Largest drift between bracketing calibrations, V/s (default 1 mV/h, common practice).
    user_set : frozenset of str
        The attributes the user set (the others are the common-practice defaults).

    Examples
    --------
    >>> acc = Acceptance.from_mapping({"slope_min_percent": 95})
    >>> acc.slope_min_percent, acc.basis("slope_min_percent"), acc.basis("max_drift")
    (95.0, 'user', 'common practice default')
    """

    slope_min_percent: float = 90.0  # common practice
    slope_max_percent: float = 105.0  # common practice
    max_residual_sd: float = 1.0e-3  # V, common practice
    max_detection_limit: float | None = None  # activity; None: at or below the lowest standard
    max_drift: float = 1.0e-3 / 3600.0  # V/s = 1 mV/h, common practice
    user_set: frozenset = field(default=frozenset())

    @classmethod
    def from_mapping(cls, values: Mapping[str, Any] | None) -> Acceptance:
        """Build from a mapping of attribute → number; unknown keys are an InputError."""
        names = [f.name for f in fields(cls) if f.name != "user_set"]
        out: dict[str, Any] = {}
        for key, value in (values or {}).items():
            if key not in names:
                raise InputError(f"unknown threshold; choose from {', '.join(names)}", field="acceptance", value=key)
            if value is None and key == "max_detection_limit":
                out[key] = None
                continue
            try:
                number = float(value)
            except (TypeError, ValueError):
                raise InputError("not a number", field=f"acceptance.{key}", value=value) from None
            if not number > 0 and key != "slope_min_percent":
                raise InputError("must be positive", field=f"acceptance.{key}", value=value)
            out[key] = number
        acc = replace(cls(), **out, user_set=frozenset(out))
        if acc.slope_min_percent >= acc.slope_max_percent:
            raise InputError("slope window is empty", field="acceptance.slope_min_percent", value=acc.slope_min_percent)
        return acc

    def basis(self, name: str) -> str:
        """'user' or the common-practice label, for one threshold."""
        return "user" if name in self.user_set else COMMON_PRACTICE

    def to_dict(self) -> dict:
        return {f.name: getattr(self, f.name) for f in fields(self) if f.name != "user_set"} | {
            "user_set": sorted(self.user_set)
        }


@dataclass(frozen=True)
class Verdict:
    """One acceptance criterion and its outcome.

    ``passed`` is True, False, or None when the data cannot judge it (e.g. no bracketing
    calibration for the drift).
    """

    criterion: str
    passed: bool | None
    value: str
    threshold: str
    basis: str

    @property
    def word(self) -> str:
        return {True: "pass", False: "FAIL"}.get(self.passed, "not judged")

    def to_dict(self) -> dict:
        return {
            "criterion": self.criterion,
            "verdict": self.word,
            "passed": self.passed,
            "value": self.value,
            "threshold": self.threshold,
            "basis": self.basis,
        }
