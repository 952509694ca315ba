"""The ``activity`` command line: parse, call the library, format. No chemistry here.

Heavy modules (numpy, scipy, the models) are imported inside the command handlers so that
``activity --help`` starts fast.
"""
from __future__ import annotations

import argparse
import importlib
import sys
from typing import Any, Callable, Sequence

from . import __version__
from .errors import ActivityError, call_with_notes

__all__ = ["main", "build_parser", "CAUTION"]

CAUTION = (  # the same text as activity.cautions.GENERAL, kept here so --help imports nothing heavy
    "Caution: results are estimates from published models and data. For clinical or "
    "pharmaceutical pH, for hydrofluoric acid, strong acids and other hazardous reagents, "
    "follow your local codes, validated procedures and licensed practice; this tool does "
    "not replace them."
)

# Modules that add subcommands: each defines register(subparsers).
_COMMAND_MODULES = ("activity._cli_electrode", "activity._cli_speciate")


class _Parser(argparse.ArgumentParser):
    """An ArgumentParser whose errors are one line and exit 2."""

    def error(self, message: str) -> None:  # type: ignore[override]
        self.exit(2, f"{self.prog}: error: {message} (see --help)\n")


def _add_output(p: argparse.ArgumentParser) -> None:
    g = p.add_mutually_exclusive_group()
    g.add_argument("--json", action="store_true", help="print JSON instead of a table")
    g.add_argument("--csv", action="store_true", help="print CSV instead of a table")
    p.add_argument("-o", "--output", metavar="FILE", help="write to FILE (whole or not at all) instead of standard output")


def add_solution_arguments(p: argparse.ArgumentParser) -> None:
    """Arguments that describe one solution (shared by several commands)."""
    p.add_argument("pairs", nargs="*", metavar="SPECIES=AMOUNT", help="e.g. 'Ca2+=1 mmol/L' 'Cl-=2 mmol/L' (units required)")
    p.add_argument("-r", "--recipe", metavar="FILE", help="TOML recipe file with a [composition] table")
    p.add_argument("-t", "--temperature", metavar="T", help="e.g. '25 °C' or '298.15 K' (default 25 °C)")
    p.add_argument("-p", "--pressure", metavar="P", help="e.g. '1 atm' (default)")
    p.add_argument("--density", metavar="RHO", help="solution density for per-litre amounts, e.g. '1.02 g/cm3'")
    p.add_argument("--balance-with", metavar="ION", help="adjust this ion so the solution is neutral")


def solution_from_args(args: argparse.Namespace):
    """Build the Solution described by :func:`add_solution_arguments`."""
    from .errors import InputError
    from .recipe import load_recipe, parse_pairs, solution_from_recipe

    recipe: dict[str, Any] = {}
    if args.recipe:
        recipe.update(load_recipe(args.recipe))
    if args.pairs:
        comp = dict(recipe.get("composition", {}))
        comp.update(parse_pairs(args.pairs))
        recipe["composition"] = comp
    if not recipe.get("composition"):
        raise InputError("give a composition as SPECIES=AMOUNT pairs or --recipe FILE", field="composition", value=None)
    for key in ("temperature", "pressure", "density", "balance_with"):
        value = getattr(args, key, None)
        if value is not None:
            recipe[key] = value
    return show_cautions(solution_from_recipe(recipe))


def show_cautions(sol):
    """Print the cautions that apply to ``sol`` on standard error; return ``sol``."""
    from .cautions import cautions_for

    for line in cautions_for(sol):
        print(line, file=sys.stderr)
    return sol


def emit(args: argparse.Namespace, text: str) -> None:
    """Print, or write to ``--output`` atomically."""
    if getattr(args, "output", None):
        from .io.files import write_text

        write_text(args.output, text if text.endswith("\n") else text + "\n")
    else:
        print(text)


def output_format(args: argparse.Namespace) -> str:
    """'json', 'csv' or 'table', from the --json / --csv flags."""
    return "json" if args.json else "csv" if args.csv else "table"


def cmd_solution(args: argparse.Namespace) -> int:
    from .commands import solution_report, table_report

    form = output_format(args)
    if args.table:
        from .errors import InputError
        from .tablefile import read_table, solution_from_table

        if args.pairs or args.recipe:
            raise InputError("give either --table FILE or a composition, not both", field="table", value=args.table)
        tbl = read_table(args.table)
        sol = show_cautions(solution_from_table(tbl, balance_with=args.balance_with))
        emit(args, table_report(sol, tbl.labels, args.model, form=form))
        return 0
    sol = solution_from_args(args)
    emit(args, solution_report(sol, args.model, form=form))
    return 0


def cmd_models(args: argparse.Namespace) -> int:
    from .commands import models_report

    emit(args, models_report(form=output_format(args)))
    return 0


def cmd_demo(args: argparse.Namespace) -> int:
    from .commands import demo_report

    form = output_format(args)
    text = demo_report(form=form)
    emit(args, text if form != "table" else text + "\n\n" + CAUTION)
    return 0


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="activity",
        description="Activity-corrected Nernst engine: ionic strength, activity coefficients, "
        "activities, electrode and cell potentials.",
        epilog=CAUTION,
    )
    parser.add_argument("--version", action="version", version=f"activity {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)

    p = sub.add_parser("solution", help="ionic strength, γ and activities of one solution", description="Evaluate one solution: ionic strength, activity coefficients and activities by one model or all side by side.", epilog=CAUTION)
    add_solution_arguments(p)
    p.add_argument("--table", metavar="CSV", help="a batch: one composition per row, headers 'Ca2+ [mmol/L]', 'temperature [°C]', optional 'label'")
    p.add_argument("-m", "--model", default="davies", help="activity model name, or 'all' for every model side by side (default davies)")
    _add_output(p)
    p.set_defaults(func=cmd_solution)

    p = sub.add_parser("models", help="list activity models and where they hold")
    _add_output(p)
    p.set_defaults(func=cmd_models)

    p = sub.add_parser("demo", help="run the built-in demo (calcium ISE standards, every model)", epilog=CAUTION)
    _add_output(p)
    p.set_defaults(func=cmd_demo)

    for name in _COMMAND_MODULES:
        try:
            module = importlib.import_module(name)
        except ImportError:
            continue
        module.register(sub)
    return parser


def _run(func: Callable[[argparse.Namespace], int], args: argparse.Namespace) -> int:
    rc, notes = call_with_notes(func, args)
    for msg in notes:
        print(f"warning: {msg}", file=sys.stderr)
    return rc


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``activity`` console script; returns the exit status."""
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "func", None):
        parser.print_help()
        return 2
    try:
        return _run(args.func, args)
    except ActivityError as exc:
        print(f"activity: error: {exc}", file=sys.stderr)
        return 2
    except BrokenPipeError:  # output piped into a program that stopped reading (e.g. head)
        import os

        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 141
    except OSError as exc:
        print(f"activity: error: {exc.strerror or exc}: {exc.filename or ''}".rstrip(": "), file=sys.stderr)
        return 2
    except KeyboardInterrupt:  # pragma: no cover
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
