"""What the command line prints: library calls arranged into tables, JSON or CSV.

Kept apart from the argument parsing so that argument parsing stays import-light.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..coefficients import available_models, get_model
from ..coefficients.compare import compare_models
from ..errors import ActivityError
from ..formatting import fmt, table, to_csv, to_json

__all__ = ["evaluate_models", "solution_report", "models_report", "demo_report"]


def _models_for(model: str) -> list:
    """Every registered name for 'all', else the one model (unknown names fail here)."""
    return list(available_models()) if model == "all" else [get_model(model)]


def evaluate_models(sol, models) -> list[dict[str, Any]]:
    """Evaluate several models on one solution; failures and warnings are recorded."""
    out = []
    for run in compare_models(sol, models):
        entry: dict[str, Any] = {"model": run.name}
        if not run.ok:
            entry["error"] = run.error
            out.append(entry)
            continue
        res = run.value
        entry["gamma"] = {n: float(res[n]) for n in res}
        entry["activity"] = {n: float(res[n]) * float(sol.m[i]) for i, n in enumerate(sol.species)}
        entry["osmotic_coefficient"] = res.osmotic_coefficient
        entry["water_activity"] = res.water_activity
        entry["in_range"] = bool(np.all(res.in_range))
        entry["notes"] = list(dict.fromkeys(res.notes))
        entry["missing"] = list(res.missing)
        entry["validity"] = run.model.validity.describe()
        out.append(entry)
    return out


#: species columns per table in the side-by-side report
_SPECIES_PER_TABLE = 5


def _verdict(entry: dict[str, Any]) -> str:
    if "error" in entry:
        return "cannot evaluate"
    return "within validity" if entry["in_range"] else "OUTSIDE validity"


def solution_report(sol, model: str = "davies", form: str = "table") -> str:
    """Report one solution by one model, or by every model when ``model == 'all'``."""
    if sol.shape != ():
        raise ActivityError("the solution report takes one composition, not a batch")
    results = evaluate_models(sol, _models_for(model))
    if len(results) == 1 and "error" in results[0]:
        raise ActivityError(results[0]["error"])
    head = {
        "temperature_K": float(sol.T),
        "pressure_Pa": float(sol.P),
        "ionic_strength_mol_per_kg": float(sol.ionic_strength),
        "species": [
            {"name": n, "charge": int(z), "molality_mol_per_kg": float(sol.m[i])}
            for i, (n, z) in enumerate(zip(sol.species, sol.charges))
        ],
    }
    if form == "json":
        return to_json({**head, "models": results})
    ok = [r for r in results if "error" not in r]
    if form == "csv":
        rows = [
            [r["model"], n, float(sol.m[i]), r["gamma"][n], r["activity"][n]]
            for r in ok
            for i, n in enumerate(sol.species)
        ]
        return to_csv(["model", "species", "molality_mol_per_kg", "gamma", "activity"], rows)
    lines = [
        f"Solution at {sol.T - 273.15:.2f} °C, {sol.P / 1000:.3f} kPa; ionic strength {fmt(sol.ionic_strength)} mol/kg"
    ]
    if len(results) == 1:
        r = results[0]
        lines.append(f"Model: {r['model']} — {r['validity']}")
        rows = [
            [n, int(z), float(sol.m[i]), r["gamma"][n], r["activity"][n]]
            for i, (n, z) in enumerate(zip(sol.species, sol.charges))
        ]
        lines.append(table(["species", "z", "m / (mol/kg)", "γ", "activity"], rows))
        if r["osmotic_coefficient"] is not None:
            lines.append(
                f"osmotic coefficient φ = {fmt(r['osmotic_coefficient'])}; "
                f"water activity = {fmt(r['water_activity'], 7)}"
            )
    else:
        # one row per model, the species across (five to a table, so that a row stays one line)
        lines.append(
            "molalities / (mol/kg): " + ", ".join(f"{n} {fmt(float(sol.m[i]))}" for i, n in enumerate(sol.species))
        )
        title = "Activity coefficients by model (side by side)"
        for k in range(0, len(sol.species), _SPECIES_PER_TABLE):
            names = sol.species[k : k + _SPECIES_PER_TABLE]
            rows = [[r["model"], _verdict(r)] + [r["gamma"][n] for n in names] for r in ok]
            lines.append(table(["model", "verdict"] + [f"γ {n}" for n in names], rows, title=title))
            title = None
        for r in results:
            if "error" in r:
                lines.append(f"{r['model']}: cannot evaluate — {r['error']}")
    for r in results:
        for note in r.get("notes", []):
            lines.append(f"note: {note}")
    return "\n".join(lines)


def table_report(sol, labels, model: str = "davies", form: str = "table") -> str:
    """Report a batch read from a CSV file: one row per composition."""
    I = np.atleast_1d(np.asarray(sol.ionic_strength))
    results: list[dict[str, Any]] = []
    for run in compare_models(sol, _models_for(model)):
        if not run.ok:
            results.append({"model": run.name, "error": run.error})
            continue
        res = run.value
        results.append(
            {
                "model": run.name,
                "notes": list(dict.fromkeys(res.notes)),
                "gamma": res.gamma,
                "in_range": np.broadcast_to(res.in_range, sol.shape),
            }
        )
    ok = [r for r in results if "error" not in r]
    if not ok:
        raise ActivityError(results[0]["error"])
    if form == "json":
        return to_json(
            {
                "rows": [
                    {
                        "label": lab,
                        "temperature_K": float(np.broadcast_to(sol.T, sol.shape)[k]),
                        "ionic_strength_mol_per_kg": float(I[k]),
                        "molality_mol_per_kg": {n: float(sol.m[i, k]) for i, n in enumerate(sol.species)},
                        "models": {
                            r["model"]: {
                                "gamma": {n: float(r["gamma"][i, k]) for i, n in enumerate(sol.species)},
                                "activity": {
                                    n: float(r["gamma"][i, k] * sol.m[i, k]) for i, n in enumerate(sol.species)
                                },
                                "in_range": bool(r["in_range"][k]),
                            }
                            for r in ok
                        },
                    }
                    for k, lab in enumerate(labels)
                ],
                "notes": {r["model"]: r.get("notes", [r.get("error")]) for r in results},
            }
        )
    if form == "csv":
        T_rows = np.broadcast_to(sol.T, sol.shape)
        headers = (
            ["label", "model", "temperature_K", "ionic_strength_mol_per_kg"]
            + [f"gamma {n}" for n in sol.species]
            + [f"activity {n}" for n in sol.species]
            + ["in_range"]
        )
        rows = [
            [lab, r["model"], float(T_rows[k]), float(I[k])]
            + [float(r["gamma"][i, k]) for i in range(len(sol.species))]
            + [float(r["gamma"][i, k] * sol.m[i, k]) for i in range(len(sol.species))]
            + [bool(r["in_range"][k])]
            for r in ok
            for k, lab in enumerate(labels)
        ]
        return to_csv(headers, rows)
    out = []
    T_rows = np.broadcast_to(sol.T, sol.shape)
    for r in ok:
        headers = ["label", "t / °C", "I mol/kg"] + [f"a({n})" for n in sol.species]
        rows = [
            [lab, round(float(T_rows[k]) - 273.15, 2), float(I[k])]
            + [
                fmt(r["gamma"][i, k] * sol.m[i, k], 5) + ("" if r["in_range"][k] else "*")
                for i in range(len(sol.species))
            ]
            for k, lab in enumerate(labels)
        ]
        out.append(table(headers, rows, title=f"Activities by {r['model']} (* = outside the model's validity)"))
        out.extend(f"note: {n}" for n in r["notes"])
        out.append("")
    out.extend(f"{r['model']}: cannot evaluate — {r['error']}" for r in results if "error" in r)
    return "\n".join(out).rstrip()


def _entry_ranges(model) -> tuple[float, float, int, int] | None:
    """(T_min, T_max, count, total) of the narrowest temperature range held by the entries of a
    parameter-set model such as Pitzer (None for a model without per-entry ranges)."""
    table = getattr(model, "table", None)
    if table is None or not hasattr(table, "values"):
        return None
    ranges = [getattr(e, "T_range", None) for e in table.values()]
    ranges = [tuple(r) for r in ranges if r]
    if not ranges:
        return None
    narrowest = min(ranges, key=lambda r: r[1] - r[0])
    return narrowest[0], narrowest[1], ranges.count(narrowest), len(ranges)


def models_report(form: str = "table") -> str:
    """The registered models with their validity ranges (for a parameter set, also the
    narrowest range that its entries hold: a mixture is only as good as its narrowest pair)."""
    rows = []
    for name in available_models():
        try:
            model = get_model(name)
            v = model.validity
            row = {
                "model": name,
                "max_ionic_strength_mol_per_kg": v.max_ionic_strength,
                "T_min_K": v.T_min,
                "T_max_K": v.T_max,
                "species": v.species,
                "basis": v.basis,
            }
            narrow = _entry_ranges(model)
            if narrow is not None:
                row["narrowest_T_min_K"], row["narrowest_T_max_K"] = narrow[0], narrow[1]
                row["entries_with_narrowest_range"] = f"{narrow[2]} of {narrow[3]}"
            rows.append(row)
        except ActivityError as exc:
            rows.append({"model": name, "error": str(exc)})
    if form == "json":
        return to_json(rows)
    cols = [
        "model",
        "max_ionic_strength_mol_per_kg",
        "T_min_K",
        "T_max_K",
        "narrowest_T_min_K",
        "narrowest_T_max_K",
        "species",
        "basis",
    ]
    if form == "csv":
        return to_csv(cols, [[r.get(c) for c in cols] for r in rows])
    trows = []
    for r in rows:
        if "error" in r:
            trows.append([r["model"], "—", "—", "cannot load: " + r["error"]])
            continue
        imax = (
            "no limit"
            if not np.isfinite(r["max_ionic_strength_mol_per_kg"])
            else f"{r['max_ionic_strength_mol_per_kg']:g}"
        )
        t_range = f"{r['T_min_K'] - 273.15:g}–{r['T_max_K'] - 273.15:g}"
        if "narrowest_T_min_K" in r:
            t_range = (
                f"{r['narrowest_T_min_K'] - 273.15:g}–{r['narrowest_T_max_K'] - 273.15:g} "
                f"({r['entries_with_narrowest_range']}; rest {t_range})"
            )
        trows.append([r["model"], imax, t_range, f"{r['species']} ({r['basis']})"])
    return table(["model", "I max / (mol/kg)", "T / °C", "species covered (basis)"], trows)


def demo_report(form: str = "table") -> str:
    """The built-in demo: calcium ISE standards, every model side by side."""
    from ..workflows.demo import run_demo

    res = run_demo()
    ok = [c for c in res.columns if c.error is None]
    if form == "json":
        return to_json(
            {
                "title": res.title,
                "temperature_K": res.T,
                "standards": [
                    {
                        "calcium_mol_per_L": float(c),
                        "calcium_mol_per_kg": float(m),
                        "ionic_strength_mol_per_kg": float(i),
                    }
                    for c, m, i in zip(res.calcium_molarity, res.calcium_molality, res.ionic_strength)
                ],
                "nernst_slope_V_per_decade": res.nernst_slope,
                "reference_electrode": {
                    "name": "Ag/AgCl in 3 mol/L KCl",
                    "potential_V_vs_SHE": res.reference_potential,
                    "notes": list(res.reference_notes),
                },
                "models": [
                    {
                        "model": c.model,
                        "gamma_Ca": c.gamma,
                        "activity_Ca": c.activity,
                        "emf_V": c.emf,
                        "in_range": c.in_range,
                        "notes": list(c.notes),
                        "error": c.error,
                    }
                    for c in res.columns
                ],
            }
        )
    if form == "csv":
        rows = [
            [
                c.model,
                float(res.calcium_molarity[k]),
                float(res.calcium_molality[k]),
                float(res.ionic_strength[k]),
                float(c.gamma[k]),
                float(c.activity[k]),
                float(c.emf[k]),
                bool(c.in_range[k]),
            ]
            for c in ok
            for k in range(len(res.calcium_molarity))
        ]
        return to_csv(
            [
                "model",
                "calcium_mol_per_L",
                "calcium_mol_per_kg",
                "ionic_strength_mol_per_kg",
                "gamma_Ca",
                "activity_Ca",
                "emf_V",
                "in_range",
            ],
            rows,
        )
    out = [res.title, f"Temperature {res.T - 273.15:.2f} °C. Each standard: CaCl2 in 0.1 mol/L KCl.", ""]
    headers = ["c(Ca) mol/L", "m(Ca) mol/kg", "I mol/kg"] + [f"a(Ca) {c.model}" for c in ok]
    rows = []
    for k in range(len(res.calcium_molarity)):
        row = [float(res.calcium_molarity[k]), float(res.calcium_molality[k]), float(res.ionic_strength[k])]
        row += [fmt(c.activity[k], 4) + ("" if c.in_range[k] else "*") for c in ok]
        rows.append(row)
    out.append(
        table(headers, rows, title="Calcium activity of each standard by model (* = outside the model's validity)")
    )
    rows = [[c.model] + [float(g) for g in c.gamma] for c in ok]
    out.append("")
    out.append(
        table(
            ["model"] + [f"γ(Ca) std {k + 1}" for k in range(len(res.calcium_molarity))],
            rows,
            digits=4,
            title="γ(Ca²⁺) by model",
        )
    )
    out.append("")
    rows = [
        [c.model] + [f"{float(e) * 1000:.1f}" + ("" if c.in_range[k] else "*") for k, e in enumerate(c.emf)] for c in ok
    ]
    out.append(
        table(
            ["model"] + [f"std {k + 1}" for k in range(len(res.calcium_molarity))],
            rows,
            digits=5,
            title="Expected EMF / mV of Ag|AgCl|KCl(3 mol/L) ‖ standard | Ca²⁺ ISE "
            "(invented electrode: E0 = 50.0 mV, K(Ca,K) = 1e-4; * = outside the model's validity)",
        )
    )
    out.append(
        f"Nernst slope at {res.T - 273.15:.2f} °C for Ca²⁺ (z = 2): {res.nernst_slope * 1000:.3f} mV per decade; "
        f"reference Ag/AgCl (3 mol/L KCl) computed from its filling: {res.reference_potential * 1000:.1f} mV vs SHE "
        f"({'; '.join(res.reference_notes[:1])})"
    )
    for c in res.columns:
        if c.error:
            out.append(f"{c.model}: cannot evaluate — {c.error}")
    return "\n".join(out)
