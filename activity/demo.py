"""The built-in demo scenario (invented data, for demonstration only).

A teaching laboratory of our own invention calibrates a calcium ion-selective electrode
with five CaCl2 standards, 10⁻⁵ to 10⁻¹ mol/L, each made up in 0.1 mol/L KCl as an
ionic-strength background, at 25 °C. The electrode answers to the calcium *activity*;
this module computes ionic strength, γ(Ca²⁺) and a(Ca²⁺) of every standard by every
registered activity model, side by side, with each model's validity verdict.
"""
from __future__ import annotations

import warnings
from dataclasses import dataclass, field
from typing import Any, Sequence

import numpy as np

from .coefficients import available_models, get_model
from .errors import ActivityError, ActivityWarning
from .solution import Solution

__all__ = ["SCENARIO", "calcium_standards", "ModelColumn", "DemoResult", "run_demo"]

SCENARIO = {
    "title": "Calcium ISE calibration standards in 0.1 mol/L KCl (invented teaching-lab scenario)",
    "temperature": 298.15,  # K
    "calcium": (1e-5, 1e-4, 1e-3, 1e-2, 1e-1),  # mol/L CaCl2 in each standard
    "background": 0.1,  # mol/L KCl
}


def calcium_standards(T: float = SCENARIO["temperature"]) -> Solution:
    """The demo standards as one batch :class:`Solution` (converted from mol/L)."""
    ca = np.array(SCENARIO["calcium"])
    kcl = SCENARIO["background"]
    return Solution.from_molarity({"Ca^2+": ca, "K+": kcl, "Cl-": 2 * ca + kcl}, T=T)


@dataclass(frozen=True)
class ModelColumn:
    """One model's answer for every standard."""

    model: str
    gamma: Any = None  # γ(Ca²⁺) per standard
    activity: Any = None  # a(Ca²⁺) per standard
    in_range: Any = None  # bool per standard
    notes: tuple = ()
    error: str | None = None


@dataclass(frozen=True)
class DemoResult:
    """Everything the demo shows."""

    title: str
    T: float
    calcium_molarity: np.ndarray
    calcium_molality: np.ndarray
    ionic_strength: np.ndarray
    columns: tuple = field(default_factory=tuple)


def run_demo(models: Sequence[str] | None = None) -> DemoResult:
    """Compute the demo table; a model that cannot evaluate is reported, not hidden."""
    sol = calcium_standards()
    i = sol.index("Ca^2+")
    columns = []
    for name in models or available_models():
        try:
            with warnings.catch_warnings(record=True) as caught:
                warnings.simplefilter("always", ActivityWarning)
                res = get_model(name).activity_coefficients(sol)
            gamma = res.gamma[i]
            notes = tuple(dict.fromkeys(res.notes + tuple(str(w.message) for w in caught)))
            columns.append(ModelColumn(name, gamma, gamma * sol.m[i], np.broadcast_to(res.in_range, sol.shape), notes))
        except ActivityError as exc:
            columns.append(ModelColumn(name, error=str(exc)))
    return DemoResult(
        SCENARIO["title"],
        SCENARIO["temperature"],
        np.array(SCENARIO["calcium"]),
        sol.m[i].copy(),
        np.asarray(sol.ionic_strength),
        tuple(columns),
    )
