"""Text, JSON, CSV and HTML output of the pH workflow. Formatting only: no chemistry, no I/O."""

from __future__ import annotations

from typing import Any

import numpy as np

from activity.constants import ZERO_CELSIUS
from activity.formatting import table, to_csv, to_json

__all__ = ["PH_CAUTION", "buffers_report", "harned_report", "validation_record", "validation_report"]

#: Shown with every pH result.
PH_CAUTION = (
    "Caution: pH values here are computed estimates. For clinical or pharmaceutical pH follow "
    "validated procedures, the applicable pharmacopoeia, your local codes and licensed practice; "
    "this tool does not replace them."
)


def _c(T: float) -> float:
    return round(float(T) - ZERO_CELSIUS, 3)


def _all_notes(v: Any) -> list[str]:
    """The validation's notes and the samples', each once."""
    return list(dict.fromkeys(list(v.notes) + (list(v.samples.notes) if v.samples is not None else [])))


def _calibration_rows(cal: Any) -> list[list[Any]]:
    u_e7, u_s = np.sqrt(np.diag(cal.covariance))
    corr = cal.covariance[0, 1] / (u_e7 * u_s)
    return [
        ["method", cal.method, ""],
        ["temperature", _c(cal.T), "°C"],
        ["slope", cal.slope * 1000, "mV/pH"],
        ["u(slope)", u_s * 1000, "mV/pH"],
        ["slope, % of RT ln10/F", cal.slope_percent, "%"],
        ["E(pH 7)", cal.E_pH7 * 1000, "mV"],
        ["u(E(pH 7))", u_e7 * 1000, "mV"],
        ["correlation E(pH 7), slope", corr, ""],
        ["pH of zero potential", cal.pH_zero_potential, ""],
        ["calibrated range", f"{cal.pH_range[0]:.3f}–{cal.pH_range[1]:.3f}", "pH"],
        ["reduced χ²", cal.chi2_reduced, ""],
    ]


def _buffer_rows(cal: Any) -> list[list[Any]]:
    return [
        [name, _c(T), pH, 2 * u, E * 1000, r]
        for name, T, pH, u, E, r in zip(
            cal.standards, cal.T_standards, cal.pH_standards, cal.u_pH_standards, cal.emf, cal.residuals
        )
    ]


_BUF_HEAD = ["buffer", "t / °C", "pH(S)", "U(pH(S))", "reading / mV", "residual / pH"]
_CHECK_HEAD = [
    "check buffer",
    "t / °C",
    "reading / mV",
    "pH (meter)",
    "U (95 %)",
    "pH(S)",
    "U(pH(S))",
    "Δ",
    "|E_n|",
    "verdict",
]
_SAMPLE_HEAD = ["sample", "t / °C", "reading / mV", "pH", "u", "U (95 %)", "junction ±", "in range"]


def _check_rows(v: Any) -> list[list[Any]]:
    return [
        [
            c.buffer,
            _c(c.T),
            c.emf * 1000,
            c.pH,
            c.U_pH,
            c.pH_S,
            c.U_pH_S,
            c.difference,
            abs(c.En),
            "pass" if c.passed else "FAIL",
        ]
        for c in v.checks
    ]


def _sample_rows(v: Any, emf: Any, T: Any) -> list[list[Any]]:
    s = v.samples
    if s is None:
        return []
    rows = []
    for i, label in enumerate(v.sample_labels):
        j = s.junction[i] if i < len(s.junction) else None
        rows.append(
            [
                label,
                _c(np.atleast_1d(T)[i]),
                float(np.atleast_1d(emf)[i]) * 1000,
                float(s.pH[i]),
                float(s.standard_uncertainty[i]),
                float(s.expanded_uncertainty[i]),
                None if j is None else j.half_width,
                "no" if s.outside_bracket[i] else "yes",
            ]
        )
    return rows


def _budget_rows(v: Any, i: int) -> list[list[Any]]:
    rows = v.samples.budget_rows(i)
    return [
        [
            r["label"],
            r["distribution"],
            r["value"],
            r["standard_uncertainty"],
            r["sensitivity"],
            r["contribution"],
            f"{100 * r['share']:.1f} %",
        ]
        for r in rows
        if r["standard_uncertainty"]
    ]


_BUDGET_HEAD = ["input", "distribution", "value", "u(x)", "sensitivity", "|c|·u(x) / pH", "share"]


def validation_report(v: Any, form: str = "table", *, samples_emf: Any = None, samples_T: Any = None) -> str:
    """The validation as an aligned text report, JSON, or CSV.

    The CSV is in long format: section, item, quantity, value, unit.
    """
    cal = v.calibration
    samples = _sample_rows(v, samples_emf, samples_T) if v.samples is not None else []
    if form == "json":
        return to_json(
            {
                "calibration": {r[0]: {"value": r[1], "unit": r[2]} for r in _calibration_rows(cal)},
                "covariance": {"parameters": ["E_pH7 [V]", "slope [V/pH]"], "matrix": cal.covariance},
                "buffers": [dict(zip(_BUF_HEAD, r)) for r in _buffer_rows(cal)],
                "verdicts": [
                    {"criterion": x.criterion, "passed": x.passed, "detail": x.detail, "limit": x.basis}
                    for x in v.verdicts
                ],
                "passed": v.passed,
                "checks": [dict(zip(_CHECK_HEAD, r)) for r in _check_rows(v)],
                "drift [mV/h]": None if v.drift is None else v.drift * 1000,
                "stability [mV]": None if v.stability is None else v.stability * 1000,
                "samples": [
                    dict(zip(_SAMPLE_HEAD, r), budget=[dict(zip(_BUDGET_HEAD, b)) for b in _budget_rows(v, i)])
                    for i, r in enumerate(samples)
                ],
                "notes": _all_notes(v),
                "caution": PH_CAUTION,
            }
        )
    if form == "csv":
        rows = [["calibration", "", r[0], r[1], r[2]] for r in _calibration_rows(cal)]
        for r in _buffer_rows(cal):
            rows += [["buffer", r[0], h, val, ""] for h, val in zip(_BUF_HEAD[1:], r[1:])]
        rows += [["verdict", x.criterion, "passed", x.passed, x.basis] for x in v.verdicts]
        for r in _check_rows(v):
            rows += [["check", r[0], h, val, ""] for h, val in zip(_CHECK_HEAD[1:], r[1:])]
        for r in samples:
            rows += [["sample", r[0], h, val, ""] for h, val in zip(_SAMPLE_HEAD[1:], r[1:])]
        return to_csv(["section", "item", "quantity", "value", "unit"], rows).rstrip("\n")
    word = "PASSED" if v.passed else "FAILED"
    parts = [
        f"pH-meter validation: {word}",
        table(["quantity", "value", "unit"], _calibration_rows(cal), digits=6, title="\ncalibration"),
        table(_BUF_HEAD, _buffer_rows(cal), digits=6, title="\ncalibration buffers"),
        table(
            ["criterion", "verdict", "detail", "limit"],
            [
                [x.criterion, {True: "pass", False: "FAIL"}.get(x.passed, "not judged"), x.detail, x.basis]
                for x in v.verdicts
            ],
            title="\nverdicts",
        ),
    ]
    if v.checks:
        parts.append(table(_CHECK_HEAD, _check_rows(v), digits=5, title="\ncheck buffers"))
    if samples:
        parts.append(table(_SAMPLE_HEAD, samples, digits=5, title="\nsamples"))
        for i, label in enumerate(v.sample_labels):
            parts.append(table(_BUDGET_HEAD, _budget_rows(v, i), digits=4, title=f"\nuncertainty budget: {label}"))
    notes = _all_notes(v)
    if notes:
        parts.append("\n" + "\n".join(f"note: {n}" for n in notes))
    parts.append("\n" + PH_CAUTION)
    return "\n".join(parts)


def validation_record(
    v: Any,
    *,
    title: str = "pH-meter validation record",
    subtitle: str | None = None,
    samples_emf: Any = None,
    samples_T: Any = None,
    generated: str | None = None,
    figure: bool = True,
) -> str:
    """The one-page HTML validation record."""
    from activity.workflows.record import Record

    cal = v.calibration
    rec = Record(title, subtitle=subtitle)
    word = "all criteria passed" if v.passed else "one or more criteria FAILED"
    rec.paragraph(
        f"Result: {word}. Calibration at {cal.T - ZERO_CELSIUS:.2f} °C with "
        f"{len(cal.standards)} buffer(s) ({cal.method}); {len(v.checks)} check buffer(s); "
        f"{0 if v.samples is None else len(v.sample_labels)} sample(s)."
    )
    rec.heading("Calibration buffers and readings")
    rec.table(_BUF_HEAD, _buffer_rows(cal), digits=4)
    rec.heading("Calibration")
    rec.table(["quantity", "value", "unit"], _calibration_rows(cal), digits=6)
    rec.heading("Verdicts")
    rec.verdicts([x.as_tuple() for x in v.verdicts])
    if v.checks:
        rec.heading("Check buffers")
        rec.table(_CHECK_HEAD, _check_rows(v), digits=4)
    if figure:
        from .plots import calibration_figure

        rec.figure(
            calibration_figure(v),
            caption="E against pH(S) with the fitted line (grey band: calibrated "
            "range); residuals in pH with the expanded uncertainty of pH(S).",
        )
    if v.samples is not None:
        rec.heading("Samples")
        rec.table(_SAMPLE_HEAD, _sample_rows(v, samples_emf, samples_T), digits=4)
        for i, label in enumerate(v.sample_labels):
            rec.table(
                _BUDGET_HEAD,
                _budget_rows(v, i),
                digits=5,
                caption=f"uncertainty budget of the pH of {label} (values in pH, V and K)",
            )
    notes = _all_notes(v)
    buf_sources = {}
    from .buffers import standard_buffers

    known = {**standard_buffers(), **{b.key: b for b in cal.buffers}}  # cal.buffers holds user buffers too
    for name in cal.standards + tuple(c.buffer for c in v.checks):
        b = known.get(name)
        if b is None:  # a numeric pH(S) given without a buffer
            continue
        buf_sources[b.key] = f"{b.key}: {b.source}; status: {', '.join(sorted(set(b.status)))}"
    if notes or buf_sources:
        rec.heading("Notes and sources")
        rec.notes(notes + list(buf_sources.values()))
    rec.cautions([PH_CAUTION])
    return rec.to_html(generated=generated)


def buffers_report(T: float, form: str = "table", buffers: Any = None) -> str:
    """The standard buffers with pH(S) at T (or '—' outside a buffer's range)."""
    from .buffers import standard_buffers

    table_ = standard_buffers() if buffers is None else buffers
    rows = []
    for key, b in table_.items():
        if b.T_min - 1e-9 <= T <= b.T_max + 1e-9:
            v = b.ph(T)
            ph, U, err, status = (
                round(v.value, 4),
                2 * v.standard_uncertainty,
                v.interpolation_error,
                b.status_at(T),
            )
        else:
            ph = U = err = None
            status = "outside the table"
        rows.append([key, b.kind, ph, U, err, b.range_text, b.ionic_strength, status, b.label])
    head = [
        "buffer",
        "kind",
        "pH(S)",
        "U (k=2)",
        "interp. error",
        "range",
        "I / (mol/kg)",
        "status",
        "description",
    ]
    if form == "json":
        return to_json(
            {
                "temperature [°C]": _c(T),
                "buffers": [dict(zip(head, r)) for r in rows],
                "source": "Buck et al., Pure Appl. Chem. 74 (2002) 2169 and others (models/ph_buffers.toml)",
                "caution": PH_CAUTION,
            }
        )
    if form == "csv":
        return to_csv(head, rows).rstrip("\n")
    # the descriptions (with the ionic strength) go below the table, one line each, so the
    # table keeps its columns within 100 characters (JSON and CSV keep every field)
    shown = [[r[0], r[1], None if r[2] is None else f"{r[2]:.3f}"] + r[3:6] + [r[7]] for r in rows]
    legend = "\n".join(f"  {r[0]}: {r[-1]}" + ("" if r[6] is None else f" (I = {r[6]:g} mol/kg)") for r in rows)
    return (
        table(head[:6] + [head[7]], shown, digits=3, title=f"standard buffers at {_c(T):g} °C")
        + "\n\nbuffers\n"
        + legend
        + "\n\n"
        "values marked 'from memory' were not read in the source: check them before relying on them\n" + PH_CAUTION
    )


def harned_report(results: list, form: str = "table") -> str:
    """One or more Harned-cell reductions (one per temperature)."""
    if form == "json":
        return to_json(
            {
                "results": [
                    {
                        "temperature [°C]": _c(r.T),
                        "pH(PS)": r.pH,
                        "u": r.standard_uncertainty,
                        "U (95 %)": r.expanded_uncertainty,
                        "acidity function at m=0": r.acidity_function_zero,
                        "slope in m(Cl-) [kg/mol]": r.slope_in_chloride,
                        "lg gamma(Cl-)": r.log10_gamma_cl,
                        "ionic strength [mol/kg]": r.ionic_strength,
                        "E0 [V]": r.E0,
                        "p(H2) [Pa]": r.p_h2,
                        "points": [
                            {"m(Cl-) [mol/kg]": m, "emf [mV]": e * 1000, "acidity function": a}
                            for m, e, a in zip(r.m_cl, r.emf, r.acidity_function)
                        ],
                        "budget": [
                            {
                                k: b[k]
                                for k in (
                                    "label",
                                    "distribution",
                                    "value",
                                    "standard_uncertainty",
                                    "sensitivity",
                                    "contribution",
                                    "share",
                                )
                            }
                            for b in r.budget_rows()
                        ],
                        "notes": list(r.notes),
                    }
                    for r in results
                ],
                "caution": PH_CAUTION,
            }
        )
    if form == "csv":
        rows = [
            [_c(r.T), m, e * 1000, a, r.pH, r.standard_uncertainty, r.expanded_uncertainty]
            for r in results
            for m, e, a in zip(r.m_cl, r.emf, r.acidity_function)
        ]
        return to_csv(["t [°C]", "m(Cl-) [mol/kg]", "emf [mV]", "acidity function", "pH(PS)", "u", "U"], rows).rstrip(
            "\n"
        )
    parts = []
    for r in results:
        rows = [
            ["pH(PS)", r.pH, ""],
            ["u(pH(PS))", r.standard_uncertainty, ""],
            ["U(pH(PS)), 95 %", r.expanded_uncertainty, ""],
            ["p(a_H γ_Cl) at m(Cl-) = 0", r.acidity_function_zero, ""],
            ["slope in m(Cl-)", r.slope_in_chloride, "kg/mol"],
            ["lg γ(Cl-), Bates–Guggenheim", r.log10_gamma_cl, ""],
            ["ionic strength", r.ionic_strength, "mol/kg"],
            ["E°(AgCl/Ag)", r.E0 * 1000, "mV"],
            ["p(H2)", r.p_h2 / 1000, "kPa"],
            ["scatter about the line", r.residual_sd, ""],
        ]
        parts.append(
            table(
                ["quantity", "value", "unit"],
                rows,
                digits=6,
                title=f"Harned cell at {_c(r.T):g} °C ({r.m_cl.size} chloride molalities)",
            )
        )
        parts.append(
            table(
                ["m(Cl-) / (mol/kg)", "emf / mV", "p(a_H γ_Cl)"],
                [[m, e * 1000, a] for m, e, a in zip(r.m_cl, r.emf, r.acidity_function)],
                digits=7,
            )
        )
        parts.append(
            table(
                _BUDGET_HEAD,
                [
                    [
                        b["label"],
                        b["distribution"],
                        b["value"],
                        b["standard_uncertainty"],
                        b["sensitivity"],
                        b["contribution"],
                        f"{100 * b['share']:.1f} %",
                    ]
                    for b in r.budget_rows()
                ],
                digits=4,
                title="uncertainty budget",
            )
        )
        parts.extend(f"note: {n}" for n in r.notes)
        parts.append("")
    parts.append(PH_CAUTION)
    return "\n".join(parts)
