"""Commands about solutions: ``solution``, ``models`` and ``demo``."""

from __future__ import annotations

import argparse

from .common import CAUTION, add_output, add_solution_arguments, emit, output_format, solution_from_args

__all__ = ["register"]


def cmd_solution(args: argparse.Namespace) -> int:
    form = output_format(args)
    if args.table:
        from ..errors import InputError
        from .batch import solution_table

        if args.pairs or args.recipe:
            raise InputError("give either --table FILE or a composition, not both", field="table", value=args.table)
        solution_table(args, form)  # streamed in chunks, written whole at the end
        return 0
    from .render import solution_report

    sol = solution_from_args(args)
    emit(args, solution_report(sol, args.model, form=form))
    return 0


def cmd_models(args: argparse.Namespace) -> int:
    from .render import models_report

    emit(args, models_report(form=output_format(args)))
    return 0


def cmd_demo(args: argparse.Namespace) -> int:
    """The built-in scenario: the calcium electrode's calibration (or, with --by-model, the
    standards' activities by every model side by side)."""
    if not args.by_model:
        from .ise import run_calibration_demo

        return run_calibration_demo(args)
    from ..errors import InputError
    from .render import demo_report

    if args.plot or args.record:
        raise InputError("--plot and --record go with the calibration demo, not --by-model", field="by-model",
                         value=None)
    form = output_format(args)
    text = demo_report(form=form)
    emit(args, text if form != "table" else text + "\n\n" + CAUTION)
    return 0


def register(sub: argparse._SubParsersAction) -> None:
    """Declare the ``solution``, ``models`` and ``demo`` commands."""
    p = sub.add_parser(
        "solution",
        help="ionic strength, γ and activities of one solution",
        description="Evaluate one solution: ionic strength, activity coefficients and "
        "activities by one model or all side by side.",
        epilog=CAUTION,
    )
    add_solution_arguments(p)
    p.add_argument(
        "--table",
        metavar="CSV",
        help="a batch: one composition per row, headers 'Ca2+ [mmol/L]', 'temperature [°C]', optional 'label'",
    )
    p.add_argument(
        "-m",
        "--model",
        default="davies",
        help="activity model name, or 'all' for every model side by side (default davies)",
    )
    add_output(p)
    p.set_defaults(func=cmd_solution)

    p = sub.add_parser("models", help="list activity models and where they hold")
    add_output(p)
    p.set_defaults(func=cmd_models)

    p = sub.add_parser(
        "demo",
        help="run the built-in demo: calibrate a calcium electrode and read two samples",
        description="The built-in scenario (invented teaching-lab data): five CaCl2 standards in 0.1 mol/L "
        "KCl, their readings, the activity-corrected calibration with its verdicts, and two samples read with "
        "their uncertainty.",
        epilog=CAUTION,
    )
    p.add_argument("--plot", metavar="FILE", help="calibration plot (.png, .svg or .pdf)")
    p.add_argument("--record", metavar="FILE.html", help="one-page HTML calibration record")
    p.add_argument("--by-model", action="store_true",
                   help="instead: the standards' calcium activity and expected EMF by every activity model")
    add_output(p)
    p.set_defaults(func=cmd_demo)
