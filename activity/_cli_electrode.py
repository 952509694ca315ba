"""Command-line commands of the Nernst layer: ``potential``, ``reference``, ``cell``, ``invert``.

Handlers only parse arguments (units explicit) and format results; the chemistry is in
the library. Bad input raises :class:`~activity.errors.InputError`, which the main
program turns into one line and exit status 2.
"""
from __future__ import annotations

import argparse
from typing import Any

__all__ = ["register", "electrode_from_spec"]

_REFERENCE_KINDS = ("silver-chloride", "calomel")


def electrode_from_spec(text: str) -> Any:
    """An electrode from a command-line spec.

    ``'silver-chloride'``, ``'silver-chloride:saturated'``, ``'calomel:3 mol/L'`` give a
    reference electrode (KCl filling, saturated by default); anything else is a couple
    name from ``models/standard_potentials.toml`` such as ``'AgCl/Ag'``.

    Examples
    --------
    >>> electrode_from_spec("calomel:0.1 mol/L").name
    'Hg2Cl2/Hg in 0.1 mol/L KCl'
    >>> electrode_from_spec("Cu2+/Cu").E0
    0.3419
    """
    from .electrodes import calomel_electrode, silver_chloride_electrode
    from .errors import InputError
    from .nernst import standard_couple
    from .units import parse_amount

    kind, _, filling = str(text).partition(":")
    kind = kind.strip().lower()
    if kind in _REFERENCE_KINDS:
        make = silver_chloride_electrode if kind == "silver-chloride" else calomel_electrode
        filling = filling.strip() or "saturated"
        if filling.lower() == "saturated":
            return make("saturated")
        amount = parse_amount(filling, field="filling")
        if amount.mass:
            raise InputError("give the KCl filling in mol/L or mol/kg", field="filling", value=filling)
        return make(amount.value, basis="mol/kg" if amount.basis == "kg" else "mol/L")
    if filling:
        raise InputError(f"a filling applies only to {', '.join(_REFERENCE_KINDS)}", field="electrode", value=text)
    return standard_couple(text)


def _gases(pairs: list[str] | None) -> dict[str, float] | None:
    if not pairs:
        return None
    from .recipe import parse_pairs
    from .units import parse_pressure

    return {k: parse_pressure(v, field=f"gas[{k}]") for k, v in parse_pairs(pairs, field="gas").items()}


def _render(args: argparse.Namespace, title: str, rows: list[list[Any]], notes: tuple | list, extra: dict | None = None) -> str:
    from .report import table, to_csv, to_json

    if args.json:
        body = {r[0]: {"value": r[1], "unit": r[2]} for r in rows}
        return to_json({"title": title, "results": body, **(extra or {}), "notes": list(notes)})
    if args.csv:
        return to_csv(["quantity", "value", "unit"], rows).rstrip("\n")
    text = table(["quantity", "value", "unit"], rows, digits=6, title=title)
    return text + "".join(f"\nnote: {n}" for n in dict.fromkeys(notes))


def _temperature_row(T: float) -> list[Any]:
    return ["temperature", T - 273.15, "°C"]


def _one(value: Any) -> float:
    return float(value)


def cmd_potential(args: argparse.Namespace) -> int:
    from .cli import emit, solution_from_args
    from .nernst import standard_couple

    hr = standard_couple(args.couple)
    sol = solution_from_args(args)
    res = hr.evaluate(sol, args.model, pressures=_gases(args.gas))
    rows = [
        ["reaction", str(hr.reaction), ""],
        _temperature_row(_one(res.T)),
        ["E° at T", _one(res.standard_potential), "V vs SHE"],
        ["E", _one(res.potential), "V vs SHE"],
    ]
    rows += [[f"log10 a({n})", _one(v), ""] for n, v in res.log10_activity.items() if not n.endswith(("(s)", "(l)"))]
    notes = list(res.notes) + ([f"E° source: {hr.source}"] if hr.source else [])
    emit(args, _render(args, f"{hr.name} by {res.model}", rows, notes))
    return 0


def cmd_reference(args: argparse.Namespace) -> int:
    from .cli import emit
    from .electrodes import common_practice_potential
    from .units import parse_temperature

    spec = f"{args.kind}:{args.filling}"
    electrode = electrode_from_spec(spec)
    T = parse_temperature(args.temperature) if args.temperature else 298.15
    res = electrode.evaluate(T)
    rows = [_temperature_row(T), ["E", _one(res.potential), "V vs SHE"], ["log10 a(Cl-)", _one(res.log10_activity["Cl-"]), ""]]
    notes = list(res.notes)
    practice = common_practice_potential(args.kind, electrode.filling)
    if practice is not None and abs(T - 298.15) < 1e-9:
        rows += [["E, common practice", practice[0], "V vs SHE"], ["computed − practice", _one(res.potential) - practice[0], "V"]]
        notes.append(f"common-practice value: {practice[1]}")
    emit(args, _render(args, electrode.name, rows, notes))
    return 0


def cmd_cell(args: argparse.Namespace) -> int:
    from .cell import Cell
    from .cli import emit, solution_from_args

    junction = None if args.junction == "none" else args.junction
    cell = Cell(left=electrode_from_spec(args.left), right=electrode_from_spec(args.right), junction=junction)
    sol = solution_from_args(args)
    res = cell.evaluate(sol, args.model, pressures=_gases(args.gas))
    rows = [
        _temperature_row(float(sol.T)),
        ["E(right)", _one(res.right_potential), "V vs SHE"],
        ["E(left)", _one(res.left_potential), "V vs SHE"],
        ["liquid junction", _one(res.junction_potential), "V"],
        ["EMF", _one(res.emf), "V"],
    ]
    emit(args, _render(args, f"{args.left} | sample | {args.right} by {res.model}", rows, res.notes))
    return 0


def cmd_invert(args: argparse.Namespace) -> int:
    from .cell import Cell
    from .cli import emit, solution_from_args
    from .electrodes import IonSelectiveElectrode
    from .errors import InputError
    from .inverse import molality_from_emf, molality_from_potential
    from .recipe import parse_pairs
    from .units import parse_potential

    if (args.couple is None) == (args.ise is None):
        raise InputError("give either --couple NAME or --ise ION (with --e0)", field="electrode", value=args.couple)
    if args.ise is not None:
        if args.e0 is None:
            raise InputError("an ion-selective electrode needs --e0, e.g. '52.1 mV'", field="e0", value=None)
        sel = {k: float(v) for k, v in parse_pairs(args.selectivity or [], field="selectivity").items()}
        electrode = IonSelectiveElectrode(args.ise, parse_potential(args.e0, field="e0"), selectivity=sel)
    else:
        electrode = electrode_from_spec(args.couple)
    reading = parse_potential(args.reading, field="reading")
    matrix = solution_from_args(args)
    kw = dict(counter_ion=args.counter_ion, pressures=_gases(args.gas))
    if args.against:
        cell = Cell(left=electrode_from_spec(args.against), right=electrode, junction=None if args.junction == "none" else args.junction)
        species = args.species or getattr(electrode, "ion", None) or (electrode.determinands[0] if len(electrode.determinands) == 1 else None)
        if species is None:
            raise InputError("say which species to solve for (--species)", field="species", value=None)
        res = molality_from_emf(cell, reading, matrix, args.model, species=species, **kw)
    else:
        res = molality_from_potential(electrode, reading, matrix, args.model, species=args.species, **kw)
    rows = [
        ["species", res.species, ""],
        ["molality", _one(res.molality), "mol/kg"],
        ["activity", _one(res.activity), ""],
        ["activity coefficient", _one(res.gamma), ""],
        ["ionic strength", _one(res.ionic_strength), "mol/kg"],
        ["iterations", res.iterations, ""],
    ]
    emit(args, _render(args, f"{res.species} from a reading of {args.reading} by {res.model}", rows, res.notes))
    return 0


def register(subparsers: Any) -> None:
    """Add the Nernst-layer subcommands to an argparse ``subparsers`` object."""
    from .cli import _add_output, add_solution_arguments

    def common(p: argparse.ArgumentParser, default_model: str = "davies") -> None:
        p.add_argument("-m", "--model", default=default_model, help=f"activity model for the sample (default {default_model})")
        p.add_argument("--gas", action="append", metavar="GAS=PRESSURE", help="gas partial pressure, e.g. 'H2(g)=1 atm' (default 1 bar)")
        _add_output(p)

    p = subparsers.add_parser("potential", help="activity-corrected potential of a tabulated couple in one solution",
                              description="E vs SHE of a couple from models/standard_potentials.toml in the given solution.")
    p.add_argument("couple", help="couple name, e.g. 'AgCl/Ag', 'Fe3+/Fe2+', 'quinhydrone'")
    add_solution_arguments(p)
    common(p)
    p.set_defaults(func=cmd_potential)

    p = subparsers.add_parser("reference", help="potential of a KCl reference electrode, computed from its filling",
                              description="Potential vs SHE of Ag/AgCl or calomel in a stated KCl filling.")
    p.add_argument("kind", choices=_REFERENCE_KINDS)
    p.add_argument("--filling", default="saturated", help="'saturated' (default) or an amount such as '3.5 mol/L'")
    p.add_argument("-t", "--temperature", metavar="T", help="e.g. '25 °C' (default)")
    _add_output(p)
    p.set_defaults(func=cmd_reference)

    p = subparsers.add_parser("cell", help="EMF of a cell with the sample between two electrodes",
                              description="EMF = E(right) − E(left) + liquid junction, for one sample solution.")
    p.add_argument("--left", required=True, metavar="ELECTRODE", help="couple name, or 'silver-chloride[:FILLING]' / 'calomel[:FILLING]'")
    p.add_argument("--right", required=True, metavar="ELECTRODE", help="as --left")
    p.add_argument("--junction", choices=("none", "henderson"), default="none", help="liquid-junction treatment (default none)")
    add_solution_arguments(p)
    common(p)
    p.set_defaults(func=cmd_cell)

    p = subparsers.add_parser("invert", help="molality of the determinand from a measured potential",
                              description="Solve for the determinand's molality in the stated sample matrix (iterating on ionic strength).")
    p.add_argument("--couple", metavar="COUPLE", help="couple name, e.g. 'Ag+/Ag' (or use --ise)")
    p.add_argument("--reading", required=True, metavar="E", help="measured potential or EMF, e.g. '-35.2 mV'")
    p.add_argument("--against", metavar="ELECTRODE", help="reference electrode on the left; the reading is then the EMF")
    p.add_argument("--junction", choices=("none", "henderson"), default="none")
    p.add_argument("--ise", metavar="ION", help="an ion-selective electrode for ION")
    p.add_argument("--e0", metavar="E0", help="its electrode constant, e.g. '52.1 mV'")
    p.add_argument("--selectivity", action="append", metavar="ION=K", help="selectivity coefficient, repeatable")
    p.add_argument("--species", help="determinand, when the couple has several")
    p.add_argument("--counter-ion", help="ion added with the determinand to keep the sample neutral, e.g. 'Cl-'")
    add_solution_arguments(p)
    common(p)
    p.set_defaults(func=cmd_invert)
