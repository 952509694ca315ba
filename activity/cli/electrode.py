"""Command-line commands of the Nernst layer: ``potential``, ``reference``, ``cell``, ``invert``.

Handlers only parse arguments (units explicit) and format results; the chemistry is in
the library. Bad input raises :class:`~activity.errors.InputError`, which the main
program turns into one line and exit status 2.
"""

from __future__ import annotations

import argparse
from typing import Any

from .common import add_output, add_solution_arguments, emit, solution_from_args

__all__ = ["register", "electrode_from_spec"]

_REFERENCE_KINDS = ("silver-chloride", "calomel")
#: Upper bound of a KCl filling: saturation at 100 °C, about 7.6 mol/kg (CRC Handbook, aqueous
#: solubility of KCl, 56.3 g per 100 g water; from memory) and, as a generous bound, as many mol/L.
_KCL_MAX = {"kg": 7.6, "L": 7.6}


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
    from ..errors import InputError
    from ..io.units import parse_amount
    from ..nernst.electrodes import calomel_electrode, silver_chloride_electrode
    from ..nernst.half_reaction import standard_couple

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
        if amount.value > _KCL_MAX[amount.basis]:
            raise InputError(
                f"more KCl than dissolves at any temperature covered (saturation about "
                f"{_KCL_MAX[amount.basis]:g} mol/{amount.basis} at 100 °C); use 'saturated'",
                field="filling",
                value=filling,
            )
        return make(amount.value, basis="mol/kg" if amount.basis == "kg" else "mol/L")
    if filling:
        raise InputError(f"a filling applies only to {', '.join(_REFERENCE_KINDS)}", field="electrode", value=text)
    return standard_couple(text)


def _gases(pairs: list[str] | None) -> dict[str, float] | None:
    if not pairs:
        return None
    from ..io.recipe import parse_pairs
    from ..io.units import parse_pressure

    return {k: parse_pressure(v, field=f"gas[{k}]") for k, v in parse_pairs(pairs, field="gas").items()}


def _render(
    args: argparse.Namespace,
    title: str,
    rows: list[list[Any]],
    notes: tuple | list,
    extra: dict | None = None,
    chain: Any = None,
) -> str:
    """Table, JSON or CSV of the result rows; with ``chain`` (a ChainResult) its uncertainty too."""
    from ..formatting import table, to_csv, to_json

    if chain is not None:
        rows = rows + _uncertainty_rows(chain)
        notes = list(notes) + list(chain.notes)
    if args.json:
        body = {r[0]: {"value": r[1], "unit": r[2]} for r in rows}
        extra = {**(extra or {}), **({"uncertainty": _uncertainty_json(chain)} if chain is not None else {})}
        return to_json({"title": title, "results": body, **extra, "notes": list(notes)})
    if args.csv:
        if chain is not None:
            budget = chain.propagation.budget_table()
            result = dict.fromkeys(budget[0])  # the result itself, last, in the budget's columns
            result.update(
                name=f"result: {chain.quantity} [{chain.unit}]",
                distribution="-",
                value=chain.value,
                standard_uncertainty=chain.standard_uncertainty,
                dof=chain.propagation.dof,
            )
            budget = budget + [result]
            return to_csv(list(budget[0]), [list(r.values()) for r in budget]).rstrip("\n")
        return to_csv(["quantity", "value", "unit"], rows).rstrip("\n")
    rows = [_in_millivolts(r) for r in rows]
    text = table(["quantity", "value", "unit"], rows, digits=6, title=title)
    if chain is not None:
        text += (
            f"\n\nuncertainty budget of {chain.quantity} ({chain.unit}), {chain.propagation.method}\n"
            f"{chain.format_budget()}"
        )
    return text + "".join(f"\nnote: {n}" for n in dict.fromkeys(notes))


def _in_millivolts(row: list[Any]) -> list[Any]:
    """A potential row in mV for people (V stays in JSON and CSV, where the unit is in the key)."""
    name, value, unit = row
    if isinstance(unit, str) and (unit == "V" or unit.startswith("V ")) and isinstance(value, (int, float)):
        return [name, float(value) * 1000.0, "m" + unit]
    return row


def _render_table(args: argparse.Namespace, labels: tuple, reading: Any, res: Any, T: Any = 298.15) -> str:
    """One row per reading of a --table batch."""
    import numpy as np

    from ..formatting import table, to_csv, to_json

    cols = {
        "temperature_K": T,
        "reading_V": reading,
        "molality_mol_per_kg": res.molality,
        "activity": res.activity,
        "gamma": res.gamma,
        "ionic_strength_mol_per_kg": res.ionic_strength,
    }
    cols = {k: np.broadcast_to(np.asarray(v, dtype=float), (len(labels),)) for k, v in cols.items()}
    if args.json:
        rows = [{"label": lab, **{k: float(v[i]) for k, v in cols.items()}} for i, lab in enumerate(labels)]
        return to_json({"species": res.species, "model": res.model, "rows": rows, "notes": list(res.notes)})
    if args.csv:
        return to_csv(
            ["label"] + list(cols), [[lab] + [float(v[i]) for v in cols.values()] for i, lab in enumerate(labels)]
        ).rstrip("\n")
    rows = [
        [
            lab,
            float(cols["temperature_K"][i]) - 273.15,
            float(cols["reading_V"][i]) * 1000,
            float(cols["molality_mol_per_kg"][i]),
            float(cols["activity"][i]),
            float(cols["gamma"][i]),
            float(cols["ionic_strength_mol_per_kg"][i]),
        ]
        for i, lab in enumerate(labels)
    ]
    text = table(
        ["label", "t / °C", "reading / mV", "m / (mol/kg)", "activity", "γ", "I / (mol/kg)"],
        rows,
        digits=6,
        title=f"{res.species} from {len(labels)} readings by {res.model}",
    )
    return text + "".join(f"\nnote: {n}" for n in dict.fromkeys(res.notes))


def _uncertainty_rows(chain: Any) -> list[list[Any]]:
    q, unit, res = chain.quantity, chain.unit, chain.propagation
    low, high = chain.coverage_interval()
    p = f"{100 * res.coverage:g} %"
    return [
        [f"u({q}), standard", chain.standard_uncertainty, unit],
        [f"U({q}), expanded, k = {res.coverage_factor():.3g}", chain.expanded_uncertainty(), unit],
        [f"coverage interval ({p}), low", low, unit],
        [f"coverage interval ({p}), high", high, unit],
    ]


def _uncertainty_json(chain: Any) -> dict[str, Any]:
    res, spread = chain.propagation, chain.spread
    return {
        "quantity": chain.quantity,
        "unit": chain.unit,
        "model": chain.model,
        "method": res.method,
        "value": chain.value,
        "standard_uncertainty": chain.standard_uncertainty,
        "expanded_uncertainty": chain.expanded_uncertainty(),
        "coverage": res.coverage,
        "coverage_factor": res.coverage_factor(),
        "coverage_interval": list(chain.coverage_interval()),
        "dof": res.dof,
        "trials": res.trials,
        "budget": res.budget_table(),
        "model_choice": None
        if spread is None
        else {
            "values": spread.values,
            "lowest": spread.lowest,
            "highest": spread.highest,
            "spread": spread.spread,
            "standard_uncertainty": spread.standard_uncertainty,
            "line": spread.format_line(chain.standard_uncertainty),
        },
    }


def _temperature_row(T: float) -> list[Any]:
    return ["temperature", T - 273.15, "°C"]


def _one(value: Any) -> float:
    return float(value)


# ------------------------------------------------------------ uncertainty options
_U_OPTIONS = ("u_amount", "u", "u_temperature", "u_e0", "u_reading", "u_selectivity")


def _percent(text: str, field: str) -> float:
    """'1%' or '0.5 %' → 0.01, 0.005; anything else is an InputError naming ``field``."""
    import re

    from ..errors import InputError

    m = re.fullmatch(r"\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*%\s*", str(text))
    if not m:
        raise InputError("expected a relative standard uncertainty with %, e.g. '1%'", field=field, value=text)
    return _not_negative(float(m.group(1)) / 100.0, field, text)


def _relative_amount(text: str, field: str) -> float:
    """A relative standard uncertainty of an amount: below 100 % (else the amount can go negative)."""
    from ..errors import InputError

    u = _percent(text, field)
    if u >= 1.0:
        raise InputError(
            "a relative standard uncertainty of 100 % or more puts the amount at or below zero within one "
            "standard uncertainty; give the uncertainty of the amount, e.g. '2%'",
            field=field,
            value=text,
        )
    return u


def _not_negative(value: float, field: str, text: str) -> float:
    from ..errors import InputError

    if value < 0:
        raise InputError("an uncertainty must not be negative", field=field, value=text)
    return value


def _u_potential(text: str, field: str) -> float:
    from ..io.units import parse_potential

    return _not_negative(parse_potential(text, field=field), field, text)


_TEMPERATURE_DIFFERENCE = {"K": 1.0, "mK": 1e-3, "°C": 1.0, "degC": 1.0, "C": 1.0, "℃": 1.0}


def _u_temperature(text: str, field: str = "--u-temperature") -> float:
    """A temperature difference: '0.2 K', '0.2 °C', '50 mK' → kelvin."""
    from ..io.units import _scaled

    return _not_negative(_scaled(text, field, _TEMPERATURE_DIFFERENCE, "temperature-difference"), field, text)


def _stated_amounts(args: argparse.Namespace) -> dict[str, Any]:
    """Species → the Amount stated for it (recipe file, then SPECIES=AMOUNT pairs)."""
    from ..io.recipe import load_recipe, parse_pairs
    from ..io.units import parse_amount
    from ..species import parse_species

    comp = dict(load_recipe(args.recipe).get("composition", {})) if args.recipe else {}
    comp.update(parse_pairs(args.pairs or []))
    return {parse_species(k).name: parse_amount(v, field=f"composition[{k!r}]") for k, v in comp.items()}


def _e0_uncertainty(texts: list[str]) -> Any:
    """--u-e0 '0.3 mV' (every electrode) or repeated --u-e0 SIDE=VALUE (SIDE left, right)."""
    from ..errors import InputError
    from ..io.recipe import parse_pairs

    keyed = [t for t in texts if "=" in t]
    if not keyed:
        if len(texts) > 1:
            raise InputError("give one value for every electrode, or SIDE=VALUE entries", field="--u-e0", value=texts)
        return _u_potential(texts[0], "--u-e0")
    if len(keyed) != len(texts):
        raise InputError(
            "give either one value for every electrode or SIDE=VALUE entries, not both", field="--u-e0", value=texts
        )
    return {
        side.strip().lower(): _u_potential(v, f"--u-e0 {side}")
        for side, v in parse_pairs(keyed, field="--u-e0").items()
    }


def _coverage(text: str) -> float:
    from ..errors import InputError

    if str(text).strip().endswith("%"):
        return _percent(text, "--coverage")
    try:
        return float(text)
    except ValueError:
        raise InputError(
            "expected a coverage probability such as 0.95 or '95%'", field="--coverage", value=text
        ) from None


def _chain_options(
    args: argparse.Namespace, sample: Any, selectivity: dict[str, float] | None = None
) -> dict[str, Any] | None:
    """Keyword arguments for :mod:`activity.workflows.measurement` from the uncertainty options (None if none
    was given)."""
    from ..errors import InputError
    from ..io.recipe import parse_pairs
    from ..species import parse_species

    if not any(getattr(args, k, None) for k in _U_OPTIONS):
        for flag, value, default in (
            ("--method", args.method, "gum"),
            ("--trials", args.trials, None),
            ("--seed", args.seed, None),
        ):
            if value != default:
                raise InputError(
                    "state an uncertainty (--u-amount, --u, --u-temperature, --u-e0, …) to propagate",
                    field=flag,
                    value=value,
                )
        return None
    u_amount, u_molality = _amount_uncertainties(args, sample)
    opts: dict[str, Any] = dict(
        u_amount=u_amount,
        u_molality=u_molality,
        method=args.method,
        trials=args.trials,
        seed=args.seed,
        coverage=_coverage(args.coverage),
        progress=not getattr(args, "quiet", False),  # a bar of the Monte Carlo trials, on a terminal only
    )
    if args.u_temperature:
        opts["u_temperature"] = _u_temperature(args.u_temperature)
    if args.u_e0:
        opts["u_e0"] = _e0_uncertainty(args.u_e0)
    if getattr(args, "u_reading", None):
        opts["u_reading"] = _u_potential(args.u_reading, "--u-reading")
    if getattr(args, "u_selectivity", None):
        u_sel = {}
        for raw, text in parse_pairs(args.u_selectivity, field="--u-selectivity").items():
            field = f"--u-selectivity {raw}"
            ion = parse_species(raw).name
            K = (selectivity or {}).get(ion)
            if K is None:
                raise InputError("no --selectivity given for this ion", field=field, value=text)
            if text.rstrip().endswith("%"):
                u_sel[ion] = _percent(text, field) * K
            else:
                try:
                    u_sel[ion] = _not_negative(float(text), field, text)
                except ValueError:
                    raise InputError(
                        "expected '20%' or a number (K is dimensionless)", field=field, value=text
                    ) from None
        opts["u_selectivity"] = u_sel
    return opts


def _propagate(args: argparse.Namespace, func: Any, *a: Any, **kw: Any) -> Any:
    """Run an uncertainty chain; a perturbed amount that goes negative is blamed on the option that
    stated the uncertainty, not reported as if the user had typed a negative amount."""
    from ..errors import InputError

    try:
        return func(*a, **kw)
    except InputError as exc:
        if not (exc.field or "").startswith("composition["):
            raise
        species = exc.field[len("composition[") : -1].strip("'\"")
        given = [t for t in (args.u or []) if t.split("=", 1)[0].strip() and _same(t.split("=", 1)[0], species)]
        option, text = ("--u", given[-1]) if given else ("--u-amount", args.u_amount)
        raise InputError(
            f"this uncertainty lets the amount of {species} go below zero during the propagation ({args.method}); "
            "give a smaller uncertainty (a normal distribution needs u well below the amount)",
            field=option,
            value=text,
        ) from None


def _same(a: str, b: str) -> bool:
    from ..species import parse_species

    try:
        return parse_species(a.strip()).name == parse_species(b).name
    except ValueError:  # pragma: no cover - the names were parsed before
        return False


def _selectivity(ion: str, text: str) -> float:
    """A selectivity coefficient: a finite, non-negative number (dimensionless)."""
    import math

    from ..errors import InputError

    try:
        value = float(text)
    except ValueError:
        raise InputError("expected a number (K is dimensionless)", field=f"selectivity {ion}", value=text) from None
    if not math.isfinite(value) or value < 0:
        raise InputError("must be a finite non-negative number", field=f"selectivity {ion}", value=text)
    return value


def _amount_uncertainties(args: argparse.Namespace, sample: Any) -> tuple[dict[str, float] | None, dict[str, float]]:
    """Relative and absolute (mol/kg) standard uncertainties by species, from --u-amount and --u.

    ``--u-amount`` applies to every species of ``sample``; ``--u SPECIES=...`` overrides it.
    A per-litre absolute uncertainty becomes relative to the amount stated for the species.
    """
    from ..errors import InputError
    from ..io.recipe import parse_pairs
    from ..io.units import parse_amount
    from ..species import parse_species

    relative: dict[str, float] = {}
    if args.u_amount is not None:
        every = _relative_amount(args.u_amount, "--u-amount")
        relative = {name: every for name in sample.species}
    absolute: dict[str, float] = {}
    stated = None
    for name, text in parse_pairs(args.u or [], field="--u").items():
        field = f"--u {name}"
        key = parse_species(name).name
        absolute.pop(key, None)
        relative.pop(key, None)
        if text.rstrip().endswith("%"):
            relative[key] = _relative_amount(text, field)
            continue
        u = parse_amount(text, field=field)
        molar_mass = parse_species(key).molar_mass
        if u.basis == "kg":
            absolute[key] = u.moles(molar_mass)
            continue
        stated = _stated_amounts(args) if stated is None else stated
        given = stated.get(key)
        if given is None or given.basis != "L" or given.moles(molar_mass) == 0:
            raise InputError(
                f"a per-litre uncertainty needs {key} stated per litre (non-zero); give it in % or per kg",
                field=field,
                value=text,
            )
        relative[key] = u.moles(molar_mass) / given.moles(molar_mass)
    return (relative or None), absolute


def cmd_potential(args: argparse.Namespace) -> int:
    from ..nernst.half_reaction import standard_couple

    hr = standard_couple(args.couple)
    sol = solution_from_args(args)
    res = hr.evaluate(sol, args.model, pressures=_gases(args.gas), low_pressure=True)  # units were explicit
    rows = [
        ["reaction", str(hr.reaction), ""],
        _temperature_row(_one(res.T)),
        ["E° at T", _one(res.standard_potential), "V vs SHE"],
        ["E", _one(res.potential), "V vs SHE"],
    ]
    rows += [[f"log10 a({n})", _one(v), ""] for n, v in res.log10_activity.items() if not n.endswith(("(s)", "(l)"))]
    notes = list(res.notes) + ([f"E° source: {hr.source}"] if hr.source else [])
    chain = None
    opts = _chain_options(args, sol)
    if opts is not None:
        from ..workflows.measurement import potential_with_uncertainty

        chain = _propagate(args, potential_with_uncertainty, hr, sol, args.model, pressures=_gases(args.gas), **opts)
    emit(args, _render(args, f"{hr.name} by {res.model}", rows, notes, chain=chain))
    return 0


def cmd_reference(args: argparse.Namespace) -> int:
    from ..io.units import parse_temperature
    from ..nernst.electrodes import common_practice_potential

    spec = f"{args.kind}:{args.filling}"
    electrode = electrode_from_spec(spec)
    T = parse_temperature(args.temperature) if args.temperature else 298.15
    res = electrode.evaluate(T)
    rows = [
        _temperature_row(T),
        ["E", _one(res.potential), "V vs SHE"],
        ["log10 a(Cl-)", _one(res.log10_activity["Cl-"]), ""],
    ]
    notes = list(res.notes)
    practice = common_practice_potential(args.kind, electrode.filling)
    if practice is not None and abs(T - 298.15) < 1e-9:
        rows += [
            ["E, common practice", practice[0], "V vs SHE"],
            ["computed − practice", _one(res.potential) - practice[0], "V"],
        ]
        notes.append(f"common-practice value: {practice[1]}")
    emit(args, _render(args, electrode.name, rows, notes))
    return 0


def cmd_cell(args: argparse.Namespace) -> int:
    from ..nernst.cell import Cell

    junction = None if args.junction == "none" else args.junction
    cell = Cell(left=electrode_from_spec(args.left), right=electrode_from_spec(args.right), junction=junction)
    sol = solution_from_args(args)
    res = cell.evaluate(sol, args.model, pressures=_gases(args.gas), low_pressure=True)  # units were explicit
    rows = [
        _temperature_row(float(sol.T)),
        ["E(right)", _one(res.right_potential), "V vs SHE"],
        ["E(left)", _one(res.left_potential), "V vs SHE"],
        ["liquid junction", _one(res.junction_potential), "V"],
        ["EMF", _one(res.emf), "V"],
    ]
    chain = None
    opts = _chain_options(args, sol)
    if opts is not None:
        from ..workflows.measurement import emf_with_uncertainty

        chain = _propagate(args, emf_with_uncertainty, cell, sol, args.model, pressures=_gases(args.gas), **opts)
    emit(args, _render(args, f"{args.left} | sample | {args.right} by {res.model}", rows, res.notes, chain=chain))
    return 0


def cmd_invert(args: argparse.Namespace) -> int:
    from ..errors import InputError
    from ..io.recipe import parse_pairs
    from ..io.units import parse_potential
    from ..nernst.cell import Cell
    from ..nernst.electrodes import IonSelectiveElectrode
    from ..nernst.half_reaction import HalfReaction
    from ..nernst.inverse import molality_from_emf, molality_from_potential
    from ..species import parse_species

    if (args.couple is None) == (args.ise is None):
        raise InputError("give either --couple NAME or --ise ION (with --e0)", field="electrode", value=args.couple)
    sel: dict[str, float] = {}
    if args.ise is not None:
        if args.e0 is None:
            raise InputError("an ion-selective electrode needs --e0, e.g. '52.1 mV'", field="e0", value=None)
        sel = {k: _selectivity(k, v) for k, v in parse_pairs(args.selectivity or [], field="selectivity").items()}
        electrode = IonSelectiveElectrode(args.ise, parse_potential(args.e0, field="e0"), selectivity=sel)
    else:
        electrode = electrode_from_spec(args.couple)
        if not isinstance(electrode, HalfReaction):
            raise InputError(
                "a reference electrode has no determinand; give a couple such as 'Ag+/Ag' (or --ise)",
                field="couple",
                value=args.couple,
            )
    if args.table:
        if args.pairs or args.recipe or args.reading is not None:
            raise InputError(
                "with --table the readings and the matrix come from the file", field="table", value=args.table
            )
        if any(getattr(args, k, None) for k in _U_OPTIONS):
            raise InputError(
                "uncertainty options take one reading; give the reading with --reading", field="table", value=args.table
            )
        matrix = reading = None  # read chunk by chunk in activity.cli.batch
    else:
        if args.reading is None:
            raise InputError(
                "give the measured potential with --reading, or a --table of readings", field="reading", value=None
            )
        reading = parse_potential(args.reading, field="reading")
        matrix = solution_from_args(args)
    kw = dict(counter_ion=args.counter_ion, pressures=_gases(args.gas))
    if args.free_ion:
        kw["speciation"] = {}  # also through the uncertainty chain: every perturbed sample is speciated
    if args.against:
        cell = Cell(
            left=electrode_from_spec(args.against),
            right=electrode,
            junction=None if args.junction == "none" else args.junction,
        )
        species = (
            args.species
            or getattr(electrode, "ion", None)
            or (electrode.determinands[0] if len(electrode.determinands) == 1 else None)
        )
        if species is None:
            raise InputError("say which species to solve for (--species)", field="species", value=None)

        def solve(reading: Any, matrix: Any) -> Any:
            return molality_from_emf(cell, reading, matrix, args.model, species=species, **kw)

    else:
        species = args.species

        def solve(reading: Any, matrix: Any) -> Any:
            return molality_from_potential(electrode, reading, matrix, args.model, species=species, **kw)

    if args.table:
        from .batch import invert_table

        invert_table(args, solve)  # streamed in chunks, written whole at the end
        return 0
    res = solve(reading, matrix)
    chain = None
    opts = _chain_options(args, matrix, {parse_species(k).name: v for k, v in sel.items()})
    if opts is not None:
        from ..workflows.measurement import molality_with_uncertainty

        measured = cell if args.against else electrode
        chain = _propagate(
            args, molality_with_uncertainty, measured, reading, matrix, args.model, species=species, **kw, **opts
        )
    rows = [
        ["species", res.species, ""],
        ["molality", _one(res.molality), "mol/kg"],
        ["activity", _one(res.activity), ""],
        ["activity coefficient", _one(res.gamma), ""],
        ["ionic strength", _one(res.ionic_strength), "mol/kg"],
        ["iterations", res.iterations, ""],
    ]
    emit(
        args,
        _render(args, f"{res.species} from a reading of {args.reading} by {res.model}", rows, res.notes, chain=chain),
    )
    return 0


def _add_uncertainty(p: argparse.ArgumentParser, inverse: bool = False) -> None:
    g = p.add_argument_group("uncertainty (any of these prints a budget and the spread between activity models)")
    g.add_argument("--u-amount", metavar="PCT", help="relative standard uncertainty of every amount, e.g. '1%%'")
    g.add_argument(
        "--u",
        action="append",
        metavar="SPECIES=U",
        help="standard uncertainty of one amount: '0.5%%', '0.002 mmol/L' or '0.01 mmol/kg' "
        "(repeatable; overrides --u-amount)",
    )
    g.add_argument("--u-temperature", metavar="DT", help="standard uncertainty of the temperature, e.g. '0.2 K'")
    g.add_argument(
        "--u-e0",
        action="append",
        metavar="[SIDE=]E",
        help="standard uncertainty of E° (ISE constant), e.g. '0.3 mV' for every electrode, "
        "or 'right=0.3 mV' (SIDE left/right of a cell)",
    )
    if inverse:
        g.add_argument("--u-reading", metavar="E", help="standard uncertainty of the reading, e.g. '0.2 mV'")
        g.add_argument(
            "--u-selectivity",
            action="append",
            metavar="ION=U",
            help="standard uncertainty of a selectivity coefficient: '20%%' or a number",
        )
    g.add_argument(
        "--method",
        choices=("gum", "monte-carlo"),
        default="gum",
        help="GUM (JCGM 100, default) or Monte Carlo (JCGM 101)",
    )
    g.add_argument("--trials", type=int, metavar="N", help="Monte Carlo trials (default: adaptive, JCGM 101 7.9)")
    g.add_argument("--seed", type=int, metavar="N", help="Monte Carlo random seed, for a repeatable result")
    g.add_argument(
        "--coverage", default="0.95", metavar="P", help="coverage probability, e.g. 0.95 (default) or '99%%'"
    )


def register(subparsers: Any) -> None:
    """Add the Nernst-layer subcommands to an argparse ``subparsers`` object."""

    def common(p: argparse.ArgumentParser, default_model: str = "davies") -> None:
        p.add_argument(
            "-m", "--model", default=default_model, help=f"activity model for the sample (default {default_model})"
        )
        p.add_argument(
            "--gas",
            action="append",
            metavar="GAS=PRESSURE",
            help="gas partial pressure, e.g. 'H2(g)=1 atm' (default 1 bar)",
        )
        add_output(p)

    p = subparsers.add_parser(
        "potential",
        help="activity-corrected potential of a tabulated couple in one solution",
        description="E vs SHE of a couple from models/standard_potentials.toml in the given solution.",
    )
    p.add_argument("couple", help="couple name, e.g. 'AgCl/Ag', 'Fe3+/Fe2+', 'quinhydrone'")
    add_solution_arguments(p)
    common(p)
    _add_uncertainty(p)
    p.set_defaults(func=cmd_potential)

    p = subparsers.add_parser(
        "reference",
        help="potential of a KCl reference electrode, computed from its filling",
        description="Potential vs SHE of Ag/AgCl or calomel in a stated KCl filling.",
    )
    p.add_argument("kind", choices=_REFERENCE_KINDS)
    p.add_argument("--filling", default="saturated", help="'saturated' (default) or an amount such as '3.5 mol/L'")
    p.add_argument("-t", "--temperature", metavar="T", help="e.g. '25 °C' (default)")
    add_output(p)
    p.set_defaults(func=cmd_reference)

    p = subparsers.add_parser(
        "cell",
        help="EMF of a cell with the sample between two electrodes",
        description="EMF = E(right) − E(left) + liquid junction, for one sample solution.",
    )
    p.add_argument(
        "--left",
        required=True,
        metavar="ELECTRODE",
        help="couple name, or 'silver-chloride[:FILLING]' / 'calomel[:FILLING]'",
    )
    p.add_argument("--right", required=True, metavar="ELECTRODE", help="as --left")
    p.add_argument(
        "--junction", choices=("none", "henderson"), default="none", help="liquid-junction treatment (default none)"
    )
    add_solution_arguments(p)
    common(p)
    _add_uncertainty(p)
    p.set_defaults(func=cmd_cell)

    p = subparsers.add_parser(
        "invert",
        help="molality of the determinand from a measured potential",
        description="Solve for the determinand's molality in the stated sample matrix (iterating on ionic strength).",
    )
    p.add_argument("--couple", metavar="COUPLE", help="couple name, e.g. 'Ag+/Ag' (or use --ise)")
    p.add_argument("--reading", metavar="E", help="measured potential or EMF, e.g. '-35.2 mV'")
    p.add_argument(
        "--table",
        metavar="CSV",
        help="a batch of readings: columns 'reading [mV]', the matrix species "
        "('K+ [mol/L]', …), optional 'temperature [°C]' and 'label'",
    )
    p.add_argument(
        "--against", metavar="ELECTRODE", help="reference electrode on the left; the reading is then the EMF"
    )
    p.add_argument("--junction", choices=("none", "henderson"), default="none")
    p.add_argument("--ise", metavar="ION", help="an ion-selective electrode for ION")
    p.add_argument("--e0", metavar="E0", help="its electrode constant, e.g. '52.1 mV'")
    p.add_argument("--selectivity", action="append", metavar="ION=K", help="selectivity coefficient, repeatable")
    p.add_argument("--species", help="determinand, when the couple has several")
    p.add_argument("--counter-ion", help="ion added with the determinand to keep the sample neutral, e.g. 'Cl-'")
    p.add_argument(
        "--free-ion",
        action="store_true",
        help="the electrode answers to the free ion: speciate the sample (models/equilibria.toml) and report the "
        "total",
    )
    add_solution_arguments(p)
    common(p)
    _add_uncertainty(p, inverse=True)
    p.set_defaults(func=cmd_invert)
