"""The ``speciate`` command: free species, activities, pH and ionic strength of a composition.

Parsing and formatting only; the chemistry is :func:`activity.speciation.speciate`.
"""

from __future__ import annotations

import argparse
from typing import Any

__all__ = ["cmd_speciate", "register"]


def _closure_kwargs(args: argparse.Namespace) -> dict[str, Any]:
    from ..io.recipe import parse_pairs
    from ..io.units import parse_pressure

    kw: dict[str, Any] = {}
    if args.ph is not None:
        from ..errors import InputError

        try:
            kw["ph"] = float(args.ph)
        except ValueError:
            raise InputError("not a number", field="--ph", value=args.ph) from None
    if args.balance is not None:
        kw["balance"] = None if args.balance.lower() == "none" else args.balance
    if args.gas:
        kw["gases"] = {k: parse_pressure(v, field=f"gas[{k}]") for k, v in parse_pairs(args.gas, field="gas").items()}
    if args.inert:
        kw["inert"] = tuple(args.inert)
    return kw


def _species_rows(res, k: Any = ()) -> list[list[Any]]:
    import numpy as np

    out = []
    for i, name in enumerate(res.species):
        m = float(np.asarray(res.m[i])[k])
        g = float(10.0 ** np.asarray(res.log10_gamma[i])[k])
        out.append([name, int(res.charges[i]), m, g, g * m])
    return out


def _single_report(res, form: str) -> str:
    from ..formatting import fmt, table, to_csv, to_json

    rows = _species_rows(res)
    if form == "json":
        return to_json(
            {
                "temperature_K": float(res.T),
                "model": res.model,
                "closure": res.closure,
                "ph": float(res.ph),
                "ionic_strength_mol_per_kg": float(res.ionic_strength),
                "converged": bool(res.converged),
                "iterations": int(res.iterations),
                "species": [
                    {"name": n, "charge": z, "molality_mol_per_kg": m, "gamma": g, "activity": a}
                    for n, z, m, g, a in rows
                ],
                "totals_mol_per_kg": {c: float(v) for c, v in res.totals.items()},
                "notes": list(res.notes),
            }
        )
    if form == "csv":
        return to_csv(["species", "charge", "molality_mol_per_kg", "gamma", "activity"], rows)
    lines = [
        f"Speciation at {float(res.T) - 273.15:.2f} °C by {res.model}; closure: {res.closure}",
        f"pH {fmt(res.ph, 5)} (−lg a(H+)); ionic strength {fmt(res.ionic_strength)} mol/kg; "
        f"converged in {res.iterations} iterations",
        table(["species", "z", "m / (mol/kg)", "γ", "activity"], rows),
        "totals / (mol/kg): " + ", ".join(f"{c} {fmt(v)}" for c, v in res.totals.items()),
    ]
    lines.extend(f"note: {n}" for n in res.notes)
    return "\n".join(lines)


def _batch_report(res, labels, form: str) -> str:
    import numpy as np

    from ..formatting import fmt, table, to_csv, to_json

    ph = np.atleast_1d(res.ph)
    ionic = np.atleast_1d(res.ionic_strength)
    if form == "json":
        return to_json(
            {
                "model": res.model,
                "closure": res.closure,
                "rows": [
                    {
                        "label": lab,
                        "ph": float(ph[k]),
                        "ionic_strength_mol_per_kg": float(ionic[k]),
                        "species": {
                            n: {"molality_mol_per_kg": m, "gamma": g, "activity": a}
                            for n, _, m, g, a in _species_rows(res, k)
                        },
                    }
                    for k, lab in enumerate(labels)
                ],
                "notes": list(res.notes),
            }
        )
    if form == "csv":
        head = ["label", "ph", "ionic_strength_mol_per_kg"]
        head += [f"molality {n}" for n in res.species] + [f"activity {n}" for n in res.species]
        rows = []
        for k, lab in enumerate(labels):
            sp = _species_rows(res, k)
            rows.append([lab, float(ph[k]), float(ionic[k])] + [r[2] for r in sp] + [r[4] for r in sp])
        return to_csv(head, rows)
    shown = list(res.components)
    rows = [
        [lab, float(ph[k]), float(ionic[k])] + [fmt(r[4], 5) for r in _species_rows(res, k) if r[0] in shown]
        for k, lab in enumerate(labels)
    ]
    out = [
        table(
            ["label", "pH", "I mol/kg"] + [f"a({n})" for n in shown],
            rows,
            title=f"Free activities by {res.model}; closure: {res.closure}",
        )
    ]
    out.extend(f"note: {n}" for n in res.notes)
    return "\n".join(out)


def cmd_speciate(args: argparse.Namespace) -> int:
    """Run the ``speciate`` command."""
    from ..speciation import speciate
    from .common import emit, output_format, show_cautions, solution_from_args

    form = output_format(args)
    kw = _closure_kwargs(args)
    if args.table:
        from ..errors import InputError
        from ..io.tables import read_table, solution_from_table

        if args.pairs or args.recipe:
            raise InputError("give either --table FILE or a composition, not both", field="table", value=args.table)
        tbl = read_table(args.table)
        sol = show_cautions(solution_from_table(tbl, balance_with=args.balance_with, neutrality="ignore"))
        from ..speciation.solver import CHUNK
        from ..workflows.progress import Progress

        # a bar on standard error for a batch of several solver blocks, only on a terminal
        with Progress(sol.size, progress=sol.size > CHUNK, desc="speciate") as bar:
            res = speciate(sol, args.model, progress=bar.update, **kw)
        emit(args, _batch_report(res, tbl.labels, form))
        return 0
    sol = solution_from_args(args)
    if sol.shape != ():
        from ..errors import InputError

        raise InputError("one composition expected (use --table for a batch)", field="composition", value=None)
    res = speciate(sol, args.model, **kw)
    show_cautions(res.solution)
    emit(args, _single_report(res, form))
    return 0


def register(subparsers: Any) -> None:
    """Add the ``speciate`` subcommand to an argparse ``subparsers`` object."""
    from .common import CAUTION, add_output, add_solution_arguments

    p = subparsers.add_parser(
        "speciate",
        help="free species, activities, pH and ionic strength from what was dissolved",
        description="Speciate a composition with the reaction data of models/equilibria.toml: pairs, "
        "complexes and acid-base forms, with the activity model's γ recomputed until self-consistent.",
        epilog=CAUTION,
    )
    add_solution_arguments(p)
    p.add_argument(
        "--table",
        metavar="CSV",
        help="a batch: one composition per row, headers 'Ca2+ [mmol/kg]', 'temperature [°C]', optional 'label'",
    )
    p.add_argument("-m", "--model", default="davies", help="activity model name (default davies)")
    p.add_argument("--ph", metavar="PH", help="hold the pH fixed at this value (default: from the charge balance)")
    p.add_argument(
        "--balance",
        metavar="ION",
        help="ion whose total closes the charge balance (default H+ without --ph; 'none' for no charge balance)",
    )
    p.add_argument(
        "--gas",
        action="append",
        metavar="GAS=PRESSURE",
        help="open to a gas at this partial pressure, e.g. 'CO2(g)=0.042 kPa'",
    )
    p.add_argument("--inert", action="append", metavar="ION", help="an ion that takes part in no reaction")
    add_output(p)
    p.set_defaults(func=cmd_speciate)
