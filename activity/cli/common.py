"""Arguments and helpers shared by the commands: solutions, output, cautions.

Heavy modules are imported inside the functions, so that building the parser stays fast.
"""

from __future__ import annotations

import argparse
import sys
from typing import Any

__all__ = [
    "CAUTION",
    "Parser",
    "add_output",
    "add_solution_arguments",
    "solution_from_args",
    "show_cautions",
    "emit",
    "output_format",
]

CAUTION = (  # the same text as activity.cautions.GENERAL, kept here so --help imports nothing heavy
    "Caution: results are estimates from published models and data. For clinical or "
    "pharmaceutical pH, for hydrofluoric acid, strong acids and other hazardous reagents, "
    "follow your local codes, validated procedures and licensed practice; this tool does "
    "not replace them."
)


class Parser(argparse.ArgumentParser):
    """An ArgumentParser whose errors are one line and exit 2."""

    def error(self, message: str) -> None:  # type: ignore[override]
        self.exit(2, f"{self.prog}: error: {message} (see --help)\n")


def add_output(p: argparse.ArgumentParser) -> None:
    g = p.add_mutually_exclusive_group()
    g.add_argument("--json", action="store_true", help="print JSON instead of a table")
    g.add_argument("--csv", action="store_true", help="print CSV instead of a table")
    p.add_argument(
        "-o",
        "--output",
        metavar="FILE",
        help="write to FILE (whole or not at all; '-' is standard output) instead of standard output",
    )


def add_solution_arguments(p: argparse.ArgumentParser) -> None:
    """Arguments that describe one solution (shared by several commands)."""
    p.add_argument(
        "pairs", nargs="*", metavar="SPECIES=AMOUNT", help="e.g. 'Ca2+=1 mmol/L' 'Cl-=2 mmol/L' (units required)"
    )
    p.add_argument("-r", "--recipe", metavar="FILE", help="TOML recipe file with a [composition] table")
    p.add_argument("-t", "--temperature", metavar="T", help="e.g. '25 °C' or '298.15 K' (default 25 °C)")
    p.add_argument("-p", "--pressure", metavar="P", help="e.g. '1 atm' (default)")
    p.add_argument("--density", metavar="RHO", help="solution density for per-litre amounts, e.g. '1.02 g/cm3'")
    p.add_argument("--balance-with", metavar="ION", help="adjust this ion so the solution is neutral")


def solution_from_args(args: argparse.Namespace):
    """Build the Solution described by :func:`add_solution_arguments`."""
    from ..errors import InputError
    from ..io.recipe import load_recipe, parse_pairs, solution_from_recipe

    recipe: dict[str, Any] = {}
    if args.recipe:
        recipe.update(load_recipe(args.recipe))
    if args.pairs:
        import warnings

        from ..errors import ActivityWarning
        from ..species import parse_species

        comp = dict(recipe.get("composition", {}))
        in_recipe = {parse_species(k).name: k for k in comp}
        for name, amount in parse_pairs(args.pairs).items():
            key = in_recipe.get(parse_species(name).name)
            if key is not None:  # the command line overrides the recipe, and says so
                warnings.warn(
                    f"{name}={amount} on the command line replaces {key} = {comp.pop(key)!r} of the recipe",
                    ActivityWarning,
                    stacklevel=2,
                )
            comp[name] = amount
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
    from ..cautions import cautions_for

    for line in cautions_for(sol):
        print(line, file=sys.stderr)
    return sol


def emit(args: argparse.Namespace, text: str) -> None:
    """Print, or write to ``--output`` (``-`` is standard output; files are written whole).

    Text for people (no --json or --csv) is kept within 100 columns: tables wrap their own
    text columns; a longer line of prose (a note, a title) is wrapped here. A table row (cells
    set apart by two or more spaces) is never re-wrapped, which would break its columns.
    """
    if output_format(args) == "table":
        import re
        import textwrap

        text = "\n".join(
            textwrap.fill(line, 100, subsequent_indent="    ", break_long_words=False)
            if len(line) > 100 and not re.search(r"\S {2,}\S", line)
            else line
            for line in text.splitlines()
        )
    if getattr(args, "output", None) not in (None, "-"):
        from ..io.files import write_text

        write_text(args.output, text if text.endswith("\n") else text + "\n")
    else:
        print(text)


def output_format(args: argparse.Namespace) -> str:
    """'json', 'csv' or 'table', from the --json / --csv flags."""
    return "json" if args.json else "csv" if args.csv else "table"
