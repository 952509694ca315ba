"""Acceptance criteria of a pH-meter validation and the verdicts they give.

Every default is marked "common practice": values found in laboratory procedures for pH
meters, not taken from a standard. Give your own (your procedure, pharmacopoeia or local
code decides); a verdict records which limit it used and where the limit came from.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, fields, replace
from typing import Any

from activity.errors import InputError

__all__ = ["Thresholds", "Verdict"]


@dataclass(frozen=True)
class Thresholds:
    """Limits for the verdicts (defaults: common practice).

    Attributes
    ----------
    slope_percent_min, slope_percent_max : float
        Acceptable slope, % of RT ln10/F (95–105 %).
    offset_max : float
        Largest |E(pH 7)|, V (0.030 V).
    residual_max : float
        Largest |residual| of a multipoint calibration, pH (0.02).
    check_En_max : float
        Largest normalised error |E_n| of a check buffer (1).
    check_tolerance : float
        Largest |pH(measured) − pH(S)| of a check buffer, pH (0.05).
    drift_max : float
        Largest |drift| of repeated readings of one buffer, V per hour (0.002 V/h).
    stability_max : float
        Largest standard deviation of replicate readings of one buffer, V (0.0003 V).
    """

    slope_percent_min: float = 95.0
    slope_percent_max: float = 105.0
    offset_max: float = 0.030
    residual_max: float = 0.02
    check_En_max: float = 1.0
    check_tolerance: float = 0.05
    drift_max: float = 0.002
    stability_max: float = 0.0003
    user_set: tuple = ()

    @classmethod
    def from_mapping(cls, values: Mapping[str, Any] | None) -> Thresholds:
        """Thresholds with the given fields replaced (each becomes a "user" limit)."""
        if not values:
            return cls()
        names = {f.name for f in fields(cls)} - {"user_set"}
        changes = {}
        for k, v in values.items():
            if k not in names:
                raise InputError(f"unknown threshold; known: {', '.join(sorted(names))}", field="thresholds", value=k)
            try:
                changes[k] = float(v)
            except (TypeError, ValueError):
                raise InputError("not a number", field=f"thresholds.{k}", value=v) from None
        return replace(cls(), **changes, user_set=tuple(changes))

    def basis(self, name: str) -> str:
        """'user' when the limit was given, else 'common practice'."""
        return "user" if name in self.user_set else "common practice"


@dataclass(frozen=True)
class Verdict:
    """One criterion judged: ``passed`` is True, False, or None (not judged: too little data)."""

    criterion: str
    passed: bool | None
    detail: str
    basis: str = "common practice"

    def as_tuple(self) -> tuple:
        return (self.criterion, self.passed, f"{self.detail} [limit: {self.basis}]")
