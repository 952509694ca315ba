"""The built-in ISE scenario (invented data, for demonstration only).

A teaching laboratory of our own invention calibrates a calcium ion-selective electrode
against an Ag/AgCl reference with five CaCl2 standards, 10⁻⁵ to 10⁻¹ mol/L, each made up in
0.1 mol/L KCl as ionic-strength background, at 25 °C. The students read the five standards,
fit the calibration with activities from the Davies model, judge it against the
common-practice acceptance criteria, and read two water samples (each diluted into the
same KCl background) with their uncertainty. Every reading below is invented.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ...solution import Solution

__all__ = ["SCENARIO", "ISEDemo", "demo_dict", "run_ise_demo"]

SCENARIO = {
    "title": "Calcium ISE calibration, teaching laboratory (invented scenario and readings)",
    "ion": "Ca^2+",
    "model": "davies",
    "temperature": 298.15,  # K
    "calcium": (1e-5, 1e-4, 1e-3, 1e-2, 1e-1),  # mol/L CaCl2 in each standard
    "background": 0.1,  # mol/L KCl
    "readings_mV": (-199.1, -172.6, -143.5, -116.2, -89.3),  # invented
    "samples": (
        # label, reading in mV, matrix (mol/L) — all invented
        ("A: tap water 1+1", -131.0, {"K+": 0.1, "Cl-": 0.1}),
        ("B: well water 1+1", -154.2, {"K+": 0.1, "Na+": 0.01, "Cl-": 0.11}),
    ),
    "u_reading_mV": 0.3,  # invented repeatability of a reading
    "u_temperature_K": 0.2,
    "u_matrix_relative": 0.01,
}


def demo_standards() -> Solution:
    """The five standards as one batch (converted from mol/L)."""
    ca = np.array(SCENARIO["calcium"])
    kcl = SCENARIO["background"]
    return Solution.from_molarity({"Ca^2+": ca, "K+": kcl, "Cl-": 2 * ca + kcl}, T=SCENARIO["temperature"])


@dataclass(frozen=True)
class ISEDemo:
    """The demo's calibration and samples (for reports: :mod:`activity.workflows.ise.report`)."""

    title: str
    calibration: Any
    samples: Any  # report.Samples

    def to_dict(self) -> dict:
        from .report import calibration_dict

        d = calibration_dict(self.calibration, self.samples)
        d["title"] = self.title
        d["scenario"] = "invented teaching-lab data (no real laboratory, person or product)"
        return d

    def text(self) -> str:
        from .report import calibration_text

        return self.title + "\n\n" + calibration_text(self.calibration, self.samples)

    def record(self, generated: str | None = None) -> str:
        from .report import calibration_record

        return calibration_record(
            self.calibration,
            self.samples,
            title="Calcium electrode — calibration record",
            subtitle=SCENARIO["title"],
            generated=generated,
        )

    def figure(self) -> Any:
        from .plots import calibration_figure

        return calibration_figure(self.calibration, self.samples.read, list(self.samples.labels), self.samples.emf)


def run_ise_demo(method: str = "gum", seed: int | None = 1) -> ISEDemo:
    """Calibrate the demo electrode and read the two demo samples with their uncertainty.

    Examples
    --------
    >>> demo = run_ise_demo()
    >>> len(demo.to_dict()["standards"]), round(demo.calibration.slope_percent)
    (5, 98)
    """
    from ...errors import call_with_notes
    from .calibration import calibrate_ise
    from .report import Samples

    std = demo_standards()
    emf = np.array(SCENARIO["readings_mV"]) * 1e-3
    labels = [f"S{i + 1} ({c:.0e} M)" for i, c in enumerate(SCENARIO["calcium"])]
    cal, _ = call_with_notes(calibrate_ise, std, emf, SCENARIO["ion"], model=SCENARIO["model"], labels=labels)
    names = sorted({k for _, _, m in SCENARIO["samples"] for k in m})
    comp = {k: np.array([m.get(k, 0.0) for _, _, m in SCENARIO["samples"]]) for k in names}
    matrix = Solution.from_molarity(comp, T=SCENARIO["temperature"])
    E = np.array([e for _, e, _ in SCENARIO["samples"]]) * 1e-3
    read, _ = call_with_notes(cal.read, E, matrix, counter_ion="Cl-")
    unc, _ = call_with_notes(
        cal.molality_with_uncertainty,
        E,
        matrix,
        counter_ion="Cl-",
        u_emf=SCENARIO["u_reading_mV"] * 1e-3,
        u_temperature=SCENARIO["u_temperature_K"],
        u_matrix=SCENARIO["u_matrix_relative"],
        method=method,
        seed=seed,
    )
    samples = Samples(
        tuple(lab for lab, _, _ in SCENARIO["samples"]),
        E,
        read,
        unc,
        tuple(", ".join(f"{k} {v:g} mol/L" for k, v in m.items()) for _, _, m in SCENARIO["samples"]),
    )
    return ISEDemo(SCENARIO["title"], cal, samples)


def demo_dict() -> dict:
    """The demo in its JSON form (top-level ``standards`` holds the five standards)."""
    return run_ise_demo().to_dict()
