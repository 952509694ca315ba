"""Reports of an ISE calibration: text tables, JSON, CSV rows and the one-page HTML record.

Formatting only (no chemistry, no I/O): the command line writes what these return.
Potentials are shown in mV, activities and concentrations with their units.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ...formatting import fmt, table, to_csv, to_json

__all__ = [
    "Samples",
    "calibration_csv",
    "calibration_dict",
    "calibration_json",
    "calibration_record",
    "calibration_text",
    "fit_rows",
    "sample_rows",
    "standards_rows",
]


@dataclass(frozen=True)
class Samples:
    """Samples read with a calibration, for reports.

    Attributes
    ----------
    labels : tuple of str
    emf : ndarray
        Readings, V.
    read : ReadResult
    uncertainty : UnknownResult or None
    matrices : tuple of str
        A short description of each sample's matrix.
    """

    labels: tuple
    emf: Any
    read: Any
    uncertainty: Any = None
    matrices: tuple = field(default_factory=tuple)


def _pm(value: float, u: float, scale: float = 1.0, digits: int = 4) -> str:
    if u is None or not np.isfinite(u):
        return fmt(value * scale, digits)
    return f"{fmt(value * scale, digits)} ± {fmt(u * scale, 2)}"


def fit_rows(cal: Any) -> list[list[Any]]:
    """[quantity, value, unit] rows of the fit (uncertainties are standard uncertainties)."""
    se = cal.standard_errors
    lg_a0 = f" (lg a0 = {_pm(np.log10(cal.a0), se['lg a0'])})" if "lg a0" in se else ""
    rows: list[list[Any]] = [
        ["E0", _pm(cal.E0, se.get("E0"), 1000, 5), "mV"],
        [
            "slope" + (" (fixed, Nernstian)" if cal.slope_mode == "nernstian" else ""),
            _pm(cal.slope, se.get("slope", 0.0), 1000, 4)
            + f" = {_pm(cal.slope_percent, 100 * se.get('slope', 0.0) / (cal.slope / cal.slope_factor), 1, 4)} %",
            f"mV/decade at {cal.T - 273.15:.1f} °C (% of Nernstian)",
        ],
        ["a0 (low-activity term)", (fmt(cal.a0, 3) + lg_a0) if cal.a0 > 0 else "not determined (0)", "activity"],
    ]
    for j, k in cal.selectivity.items():
        name = f"lg K({j})"
        how = "given" if j in cal.fixed_selectivity else "fitted"
        rows.append([f"{name} ({how})", _pm(np.log10(k), se.get(name)) if k > 0 else "—", "-"])
    dl = cal.detection_limit_activity
    rows += [
        ["residual standard deviation", fmt(1000 * cal.residual_sd, 3), f"mV (dof {cal.dof})"],
        [
            "detection limit (IUPAC)",
            f"{fmt(dl, 3)} (u(lg) = {fmt(cal.u_lg_detection_limit, 2)})"
            if np.isfinite(dl)
            else "below the lowest standard",
            "activity",
        ],
        [
            "  in the standards' matrix",
            f"{fmt(cal.detection_limit_molality, 3)} mol/kg = {fmt(cal.detection_limit_molarity, 3)} mol/L"
            if np.isfinite(dl)
            else "—",
            "",
        ],
        [
            "linear range",
            f"{fmt(cal.linear_range[0], 3)} – {fmt(cal.linear_range[1], 3)}",
            f"activity (within {1000 * cal.linear_deviation:g} mV)",
        ],
        ["activity model", cal.model, ""],
        ["activities", getattr(cal, "activity_basis", "total ion × γ (no speciation)"), ""],
    ]
    return rows


def standards_rows(cal: Any) -> tuple[list[str], list[list[Any]]]:
    s = cal.standards
    head = ["standard", "c / mol/L", "m / mol/kg", "γ", "a", "E / mV", "fit / mV", "residual / mV"]
    rows = [
        [
            s["label"][i],
            float(s["molarity"][i]),
            float(s["molality"][i]),
            float(s["gamma"][i]),
            float(s["activity"][i]),
            round(1000 * float(s["emf"][i]), 2),
            round(1000 * float(s["fitted"][i]), 2),
            round(1000 * float(s["residual"][i]), 2),
        ]
        for i in range(len(s["label"]))
    ]
    return head, rows


def sample_rows(samples: Samples, unit: str = "mg/L") -> tuple[list[str], list[list[Any]]]:
    """One row per sample: reading, molality ± u, mol/L, mg/L ± U(k=2), flag."""
    r, u = samples.read, samples.uncertainty
    n = len(samples.labels)

    def at(x: Any, i: int) -> float:
        return float(np.ravel(np.asarray(x, float))[i if np.size(x) > 1 else 0])

    head = ["sample", "E / mV", "m / mol/kg", "u(m)", "c / mol/L", "mg/L", "U(k=2) mg/L", "flag"]
    rows = []
    for i in range(n):
        um = at(u.standard_uncertainty, i) if u is not None else None
        Umg = 2 * at(u.u_mass_concentration, i) if u is not None else None
        rows.append(
            [
                samples.labels[i],
                round(1000 * at(samples.emf, i), 2),
                at(r.molality, i),
                um,
                at(r.molarity, i),
                at(r.mass_concentration, i),
                Umg,
                r.flags[i] or "—",
            ]
        )
    return head, rows


def _budget_rows(samples: Samples, i: int) -> list[list[Any]]:
    u = samples.uncertainty
    if u is None:
        return []
    return [[name, c, f"{100 * share:.1f} %"] for name, c, share in u.budget_rows(i)]


def _budget_matrix(samples: Samples, condense: float = 0.0) -> tuple[list[str], list[list[Any]]]:
    """All samples' budgets side by side: one row per input, one column per sample.

    ``condense`` > 0 folds the inputs whose share stays below it in every sample into one
    row (their contributions added in quadrature, their shares summed).
    """
    if samples.uncertainty is None:
        return [], []
    per = [samples.uncertainty.budget_rows(i) for i in range(len(samples.labels))]
    names = [r[0] for r in per[0]]
    small = [
        k
        for k, name in enumerate(names)
        if condense > 0 and per[0][k][1] is not None and all(abs(b[k][2]) < condense for b in per)
    ]
    if len(small) < 2:
        small = []
    rows = []
    for k, name in enumerate(names):
        if k in small:
            continue
        row: list[Any] = [_SHORT.get(name, name) if condense else name]
        for b in per:
            c, share = b[k][1], b[k][2]
            row.append(("—" if c is None else fmt(c, 3)) + f" ({100 * share:.1f} %)")
        rows.append(row)
    if small:
        row = [f"{len(small)} more, each below {100 * condense:g} %"]
        for b in per:
            c = float(np.sqrt(sum(b[k][1] ** 2 for k in small)))
            row.append(f"{fmt(c, 3)} ({100 * sum(b[k][2] for k in small):.1f} %)")
        rows.append(row)
    return ["input"] + list(samples.labels), rows


#: Shorter input names for the printed record.
_SHORT = {
    "calibration (E0, slope, a0, K together, with their covariance)": "calibration (E0, S, a0, K; covariance)",
    "(correlation of the calibration parameters)": "(correlation of calibration parameters)",
}


def calibration_text(cal: Any, samples: Samples | None = None, extras: dict | None = None) -> str:
    """The calibration (and samples, extras) as plain-text tables."""
    out = [table(["quantity", "value", "unit"], fit_rows(cal), title=f"{cal.ion} electrode calibration")]
    head, rows = standards_rows(cal)
    out.append(table(head, rows, digits=4, title="standards"))
    out.append(
        table(
            ["criterion", "verdict", "value", "threshold", "basis"],
            [[v.criterion, v.word, v.value, v.threshold, v.basis] for v in cal.verdicts],
            title="verdicts",
        )
    )
    if samples is not None:
        head, rows = sample_rows(samples)
        title = "samples" + (f" (uncertainty: {samples.uncertainty.method})" if samples.uncertainty else "")
        out.append(table(head, rows, digits=4, title=title))
        for i, lab in enumerate(samples.labels):
            b = _budget_rows(samples, i)
            if b:
                out.append(
                    table(
                        ["input", "|c|·u(x) / mol/kg", "share"],
                        b,
                        digits=3,
                        title=f"uncertainty budget of {lab} (linearised shares)",
                    )
                )
    out.extend(_extra_text(extras).values())
    notes = list(cal.notes) + (
        list(samples.read.notes) + list(samples.uncertainty.notes if samples.uncertainty else []) if samples else []
    )
    if notes:
        out.append("notes:\n" + "\n".join(f"- {n}" for n in _compact_notes(notes)))
    return "\n\n".join(out)


def _extra_text(extras: dict | None) -> dict:
    out = {}
    for key, val in (extras or {}).items():
        if key == "selectivity":
            out[key] = table(
                ["interferent", "method", "lg K", "u(lg K)", "K"],
                [[j, r.method, r.lg_K, r.u_lg_K, r.K] for j, r in val.items()],
                digits=4,
                title="selectivity coefficients",
            )
        elif key == "addition":
            rows = [
                ["c(x)", val.concentration, "mol/L"],
                ["u(c(x))", val.standard_uncertainty, "mol/L"],
                ["slope", 1000 * val.slope, "mV/decade" + (" (fitted)" if val.slope_fitted else "")],
            ]
            if val.gran_concentration is not None:
                rows.append(["c(x), Gran", val.gran_concentration, "mol/L"])
            out[key] = table(["quantity", "value", "unit"], rows, digits=5, title="known addition")
        elif key == "drift":
            out[key] = table(
                ["quantity", "value", "unit"],
                [
                    ["drift of E0", val.rate_mV_per_h, "mV/h"],
                    ["slope change", val.slope_change_percent, "% of Nernstian"],
                    ["verdict", "pass" if val.passed else "FAIL", ""],
                ],
                digits=4,
                title="drift",
            )
    return out


#: Keys of a sample in the JSON output (the columns of :func:`sample_rows`, units in the names).
SAMPLE_KEYS = (
    "label",
    "emf_mV",
    "molality_mol_per_kg",
    "u_molality_mol_per_kg",
    "molarity_mol_per_L",
    "mass_concentration_mg_per_L",
    "U_k2_mass_concentration_mg_per_L",
    "flag",
)


def calibration_dict(cal: Any, samples: Samples | None = None, extras: dict | None = None) -> dict:
    """JSON-ready dict: the calibration (reloadable), samples and extras."""
    d = {"calibration": cal.to_dict()}
    d["standards"] = d["calibration"]["standards"]
    if samples is not None:
        _head, rows = sample_rows(samples)
        items = []
        for i, row in enumerate(rows):
            item = dict(zip(SAMPLE_KEYS, row))
            item["flag"] = samples.read.flags[i]
            if samples.uncertainty is not None:
                item["budget"] = [
                    {"input": n, "contribution_mol_per_kg": c, "share": s}
                    for n, c, s in samples.uncertainty.budget_rows(i)
                ]
            items.append(item)
        d["samples"] = items
        d["sample_notes"] = list(samples.read.notes) + (list(samples.uncertainty.notes) if samples.uncertainty else [])
    for key, val in (extras or {}).items():
        if key == "selectivity":
            d[key] = [{"label": j} | r.to_dict() for j, r in val.items()]
        elif hasattr(val, "to_dict"):
            d[key] = val.to_dict()
    return d


def calibration_json(cal: Any, samples: Samples | None = None, extras: dict | None = None) -> str:
    return to_json(calibration_dict(cal, samples, extras))


def calibration_csv(cal: Any, samples: Samples | None = None, extras: dict | None = None) -> str:
    """Long-format CSV: section, item, quantity, value, unit (one number per row)."""
    rows: list[list[Any]] = []
    se = cal.standard_errors
    for name, val, unit in [
        ("E0", 1e3 * cal.E0, "mV"),
        ("slope", 1e3 * cal.slope, "mV/decade"),
        ("slope_percent", cal.slope_percent, "%"),
        ("a0", cal.a0, "activity"),
        ("residual_sd", 1e3 * cal.residual_sd, "mV"),
        ("detection_limit_activity", cal.detection_limit_activity, "activity"),
        ("detection_limit_molality", cal.detection_limit_molality, "mol/kg"),
        ("detection_limit_molarity", cal.detection_limit_molarity, "mol/L"),
        ("linear_range_low", cal.linear_range[0], "activity"),
        ("linear_range_high", cal.linear_range[1], "activity"),
    ]:
        rows.append(["fit", cal.ion, name, float(val), unit])
    for name, u in se.items():
        mv = name in ("E0", "slope")
        unit = "mV" if name == "E0" else "mV/decade" if name == "slope" else "-"
        rows.append(["fit", cal.ion, f"u({name})", float(u) * (1e3 if mv else 1.0), unit])
    for j, k in cal.selectivity.items():
        rows.append(["fit", j, "K", float(k), "-"])
    s = cal.standards
    for i, lab in enumerate(s["label"]):
        for key, unit, f in (
            ("molality", "mol/kg", 1.0),
            ("activity", "-", 1.0),
            ("emf", "mV", 1e3),
            ("residual", "mV", 1e3),
        ):
            rows.append(["standard", lab, key, f * float(s[key][i]), unit])
    for v in cal.verdicts:
        rows.append(["verdict", v.criterion, v.word, v.value, v.basis])
    if samples is not None:
        _, srows = sample_rows(samples)
        for row in srows:
            for key, val, unit in (
                ("molality", row[2], "mol/kg"),
                ("u_molality", row[3], "mol/kg"),
                ("molarity", row[4], "mol/L"),
                ("mass_concentration", row[5], "mg/L"),
                ("U_k2_mass_concentration", row[6], "mg/L"),
            ):
                rows.append(["sample", row[0], key, val, unit])
    return to_csv(["section", "item", "quantity", "value", "unit"], rows)


def calibration_record(
    cal: Any,
    samples: Samples | None = None,
    extras: dict | None = None,
    *,
    title: str | None = None,
    subtitle: str | None = None,
    generated: str | None = None,
    figure: bool = True,
) -> str:
    """The one-page HTML calibration record (self-contained; the plot inline as SVG)."""
    from ...cautions import GENERAL, cautions_for
    from ..record import Record
    from .plots import calibration_figure

    rec = Record(
        title or f"{cal.ion} ion-selective electrode — calibration record",
        subtitle=subtitle
        or f"activity model: {cal.model}"
        + ("; free ions from speciation" if getattr(cal, "speciation", None) is not None else "")
        + f"; slope {cal.slope_mode}; {len(cal.standards['label'])} standards at {cal.T - 273.15:.1f} °C",
        style=RECORD_STYLE,
    )
    rec.begin("ise-top")
    rec.begin("ise-left")
    rec.heading("Fit")
    rec.table(
        ["quantity", "value"],
        [[q, f"{v} {u if u != '-' else ''}".strip()] for q, v, u in fit_rows(cal)],
        caption="E = E0 + S·lg(aᵢ + Σ Kᵢⱼ·aⱼ^(zᵢ/zⱼ) + a0); ± standard uncertainty from the fit",
    )
    rec.end()
    rec.begin("ise-right")
    if figure:
        unk = samples.read if samples is not None else None
        fig = calibration_figure(
            cal, unk, list(samples.labels) if samples else None, samples.emf if samples else None, compact=True
        )
        rec.figure(
            fig,
            caption="Calibration curve (top) and residuals (bottom); shaded: linear range; dash-dot: "
            "IUPAC detection limit",
        )
    rec.end()
    rec.end()
    rec.heading("Verdicts")
    marks = {"common practice default": "†", "user": " (set by the user)"}
    rec.verdicts(
        [
            (f"{v.criterion} ({v.threshold}){marks.get(v.basis, '; ' + v.basis)}", v.passed, v.value)
            for v in cal.verdicts
        ]
    )
    if any(v.basis == "common practice default" for v in cal.verdicts):
        rec.begin("mark")
        rec.paragraph("† threshold: common practice default, not a standard — set your laboratory's own")
        rec.end()
    head, rows = standards_rows(cal)
    rec.heading("Standards")
    rec.table(head, rows, digits=4)
    if samples is not None:
        rec.heading("Samples")
        head, rows = sample_rows(samples)
        rec.table(
            head,
            rows,
            digits=4,
            caption=(f"uncertainty by {samples.uncertainty.method}; U = 2u" if samples.uncertainty else None),
        )
        head, rows = _budget_matrix(samples, condense=0.01)
        if rows:
            rec.table(head, rows, digits=3, caption="uncertainty budgets: |c|·u(x) in mol/kg (share of u²)")
    shown = [k for k in ("addition", "selectivity", "drift") if k in (extras or {})]
    if len(shown) > 1:
        rec.begin("ise-extras")
    for key in shown:
        val = extras[key]
        if len(shown) > 1:
            rec.begin("ise-extra")
        if key == "selectivity":
            rec.heading("Selectivity coefficients")
            named = all(r.method in j for j, r in val.items())  # the label already names the method
            rec.table(
                ["interferent"] + ([] if named else ["method"]) + ["lg K", "u(lg K)"],
                [[j] + ([] if named else [r.method]) + [r.lg_K, r.u_lg_K] for j, r in val.items()],
                digits=4,
            )
        elif key == "addition":
            rec.heading("Known addition")
            rec.table(
                ["quantity", "mol/L"],
                [["c(x)", val.concentration], ["u(c(x))", val.standard_uncertainty]]
                + ([["c(x), Gran", val.gran_concentration]] if val.gran_concentration else []),
                digits=4,
            )
        elif key == "drift":
            rec.heading("Drift")
            rec.table(
                ["quantity", "value"],
                [
                    ["drift of E0", f"{fmt(val.rate_mV_per_h, 3)} mV/h"],
                    ["slope change", f"{fmt(val.slope_change_percent, 3)} % of Nernstian"],
                ],
            )
        if len(shown) > 1:
            rec.end()
    if len(shown) > 1:
        rec.end()
    rec.heading("Notes")
    notes = list(cal.notes)
    if samples is not None:
        notes += list(samples.read.notes) + (list(samples.uncertainty.notes) if samples.uncertainty else [])
    rec.notes(_compact_notes(notes))
    extra_cautions = cautions_for(cal.standards_solution) if cal.standards_solution is not None else []
    rec.cautions([GENERAL] + list(extra_cautions))
    return rec.to_html(generated=generated)


#: The record's own layout: verdicts and fit beside the figure, notes in two columns, and a
#: print style that keeps the demo's record (two samples with budgets) on one A4 page.
RECORD_STYLE = """
.ise-top { display: grid; grid-template-columns: minmax(0, 57fr) minmax(0, 43fr); column-gap: 5mm;
           align-items: start; }
.ise-top figure { margin-top: 8pt; }
.ise-top figure svg { max-height: none; }
.ise-left table { width: 100%; }
.ise-left td:first-child { white-space: nowrap; }
.mark p { color: #555; font-size: 8.5pt; margin: 0 0 4pt; }
.ise-extras { display: flex; flex-wrap: wrap; column-gap: 8mm; align-items: flex-start; }
ul.notes { columns: 2; column-gap: 7mm; padding-left: 12pt; font-size: 9pt; margin: 2pt 0; }
.cautions ul { margin: 2pt 0; padding-left: 12pt; }
@media print {
  .ise-top figure svg { max-height: none; }
  .mark p { font-size: 7pt; }
  ul.notes { font-size: 7pt; line-height: 1.2; }
  .notes li, .cautions li { margin-bottom: 1pt; }
  .cautions { font-size: 7.2pt; padding: 2pt 6pt; margin-top: 5pt; }
  .cautions h2 { font-size: 8.5pt; margin: 0; }
  footer { margin-top: 4pt; font-size: 7pt; }
  caption, figcaption { font-size: 7pt; }
  body { font-size: 8.2pt; }
  h2 { margin: 5pt 0 1.5pt; font-size: 9.5pt; }
  table { margin: 1pt 0 3pt; }
  th, td { padding: 0.6pt 4pt; }
}
"""


def _compact_notes(notes: Sequence[str]) -> list[str]:
    """Notes without repeats; the per-model 'not counted' notes folded into one line."""
    out, left_out = [], []
    for n in dict.fromkeys(notes):
        if n.startswith("model choice: ") and " not counted" in n:
            left_out.append(n.split(":", 2)[1].split(" not counted")[0].strip())
        elif n.startswith("some standards lie outside the validity"):
            continue
        else:
            out.append(n)
    if left_out:
        out.append(
            f"model choice: not counted (outside their validity here or unable to evaluate): {', '.join(left_out)}"
        )
    return out


def labels_or_default(labels: Sequence[str] | None, n: int) -> tuple:
    return tuple(labels) if labels is not None else tuple(f"sample {i + 1}" for i in range(n))
