"""The built-in demo scenario (invented data, for demonstration only).

A teaching laboratory of our own invention calibrates a calcium ion-selective electrode
with five CaCl2 standards, 10⁻⁵ to 10⁻¹ mol/L, each made up in 0.1 mol/L KCl as an
ionic-strength background, at 25 °C. The electrode answers to the calcium *activity*;
this module computes ionic strength, γ(Ca²⁺) and a(Ca²⁺) of every standard by every
registered activity model, side by side, with each model's validity verdict, and the EMF
each standard should give in the cell

    Ag | AgCl | KCl (3 mol/L) ‖ standard | Ca²⁺-selective membrane

with the Nernst slope at the demo temperature. The electrode constant (E0 = 50.0 mV) and
the selectivity coefficient K(Ca, K) = 10⁻⁴ are invented demo values of a plausible order
of magnitude; the reference potential is computed from its KCl filling.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from ..coefficients.compare import run_models
from ..solution import Solution

__all__ = ["SCENARIO", "calcium_standards", "demo_cell", "ModelColumn", "DemoResult", "run_demo"]

SCENARIO = {
    "title": "Calcium ISE calibration standards in 0.1 mol/L KCl (invented teaching-lab scenario)",
    "temperature": 298.15,  # K
    "calcium": (1e-5, 1e-4, 1e-3, 1e-2, 1e-1),  # mol/L CaCl2 in each standard
    "background": 0.1,  # mol/L KCl
    "ise_E0": 0.050,  # V, invented demo value
    "ise_selectivity": {"K+": 1e-4},  # invented demo value
    "reference_filling": 3.0,  # mol/L KCl
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
    activity: ArrayLike = None  # a(Ca²⁺) per standard
    in_range: Any = None  # bool per standard
    emf: ArrayLike = None  # expected EMF against the Ag/AgCl reference, V
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
    nernst_slope: float = 0.0  # V per decade of a(Ca²⁺)
    reference_potential: float = 0.0  # V vs SHE
    reference_notes: tuple = ()


def demo_cell():
    """The demo cell: Ag/AgCl (3 mol/L KCl) on the left, the calcium ISE on the right."""
    from ..nernst.cell import Cell
    from ..nernst.electrodes import IonSelectiveElectrode, silver_chloride_electrode

    ise = IonSelectiveElectrode(
        "Ca^2+", E0=SCENARIO["ise_E0"], selectivity=SCENARIO["ise_selectivity"], name="demo calcium ISE"
    )
    return Cell(left=silver_chloride_electrode(SCENARIO["reference_filling"]), right=ise)


def run_demo(models: Sequence[str] | None = None) -> DemoResult:
    """Compute the demo table; a model that cannot evaluate is reported, not hidden."""
    from ..nernst.equations import nernst_slope

    sol = calcium_standards()
    i = sol.index("Ca^2+")
    cell = demo_cell()
    columns = []
    ref = None
    for run in run_models(lambda m: cell.evaluate(sol, m, warn=False), models):
        if not run.ok:
            columns.append(ModelColumn(run.name, error=run.error))
            continue
        res = run.value
        name = run.name
        # one evaluation gives the EMF and, through the ISE's record, the calcium activity
        activity = 10.0 ** np.asarray(res.right.log10_activity["Ca^2+"])
        notes = tuple(dict.fromkeys(res.right.notes))
        columns.append(
            ModelColumn(
                name,
                activity / sol.m[i],
                activity,
                np.broadcast_to(res.right.in_range, sol.shape),
                np.asarray(res.emf),
                notes,
            )
        )
        ref = res.left  # the reference electrode uses its own model, the same for every column
    if ref is None:
        ref = cell.left.evaluate(SCENARIO["temperature"], warn=False)
    return DemoResult(
        SCENARIO["title"],
        SCENARIO["temperature"],
        np.array(SCENARIO["calcium"]),
        sol.m[i].copy(),
        np.asarray(sol.ionic_strength),
        tuple(columns),
        float(nernst_slope(SCENARIO["temperature"], 2)),
        float(ref.potential),
        tuple(ref.notes),
    )
