"""Command-line commands of the pH workflow: ``ph-calibrate``, ``ph-buffers``, ``ph-harned``.

Handlers parse arguments (units explicit; potentials in mV, temperatures with their unit),
call :mod:`activity.workflows.ph` and format. Every pH result is shown with the caution for
clinical and pharmaceutical use.
"""

from __future__ import annotations

import argparse
import re
import sys
from typing import Any

__all__ = ["register"]

_DRIFT = re.compile(r"^\s*([-+]?\d+(?:\.\d*)?(?:[eE][-+]?\d+)?)\s*mV\s*/\s*(h|min)\s*$")


def _caution_stderr(args: argparse.Namespace) -> None:
    """With CSV output (no room for prose) the caution goes to standard error."""
    from ..workflows.ph.report import PH_CAUTION

    if args.csv or getattr(args, "output", None):
        print(PH_CAUTION, file=sys.stderr)


def _thresholds(args: argparse.Namespace) -> dict:
    from ..errors import InputError
    from ..io.units import parse_potential

    out: dict[str, float] = {}
    if args.slope_range:
        try:
            lo, hi = (float(v) for v in args.slope_range.split(":"))
        except ValueError:
            raise InputError(
                "give MIN:MAX in percent, e.g. 95:105", field="--slope-range", value=args.slope_range
            ) from None
        if not lo < hi:
            raise InputError("MIN must be below MAX", field="--slope-range", value=args.slope_range)
        out.update(slope_percent_min=lo, slope_percent_max=hi)
    if args.offset_max:
        out["offset_max"] = abs(parse_potential(args.offset_max, field="--offset-max"))
    if args.stability_max:
        out["stability_max"] = abs(parse_potential(args.stability_max, field="--stability-max"))
    if args.drift_max:
        m = _DRIFT.match(args.drift_max)
        if not m:
            raise InputError("give e.g. '2 mV/h' or '0.05 mV/min'", field="--drift-max", value=args.drift_max)
        out["drift_max"] = abs(float(m.group(1))) * 1e-3 * (60.0 if m.group(2) == "min" else 1.0)
    for name, attr in (
        ("check_tolerance", "check_tolerance"),
        ("check_En_max", "check_en_max"),
        ("residual_max", "residual_max"),
    ):
        value = getattr(args, attr)
        if value is not None:
            out[name] = value
    return out


def cmd_ph_calibrate(args: argparse.Namespace) -> int:
    from ..errors import InputError
    from ..io.units import parse_potential, parse_temperature
    from ..workflows.ph import files
    from ..workflows.ph.buffers import standard_buffers
    from ..workflows.ph.report import validation_record, validation_report
    from ..workflows.ph.validation import validate_meter
    from .common import emit, output_format

    if args.examples:
        paths = files.write_examples(args.examples)
        print("\n".join(str(p) for p in paths))
        print(
            f"try: activity ph-calibrate {paths[0]} --samples {paths[1]} --buffers {paths[3]}",
            file=sys.stderr,
        )
        return 0
    if not args.readings:
        raise InputError(
            "give a CSV of buffer readings (or --examples DIR to write example files)",
            field="readings",
            value=None,
        )
    T = parse_temperature(args.temperature, field="--temperature") if args.temperature else None
    table = standard_buffers(args.buffers) if args.buffers else None
    r = files.read_buffer_readings(args.readings, temperature=T)
    s = files.read_samples(args.samples, temperature=T) if args.samples else None
    u_emf = parse_potential(args.u_reading, field="--u-reading") if args.u_reading else None
    u_T = None
    if args.u_temperature:
        u_T = parse_temperature(args.u_temperature, field="--u-temperature")
        if args.u_temperature.strip().endswith(("°C", "C", "degC", "℃")):
            u_T -= 273.15  # a temperature difference: 1 °C = 1 K
    kw: dict[str, Any] = {}
    if u_emf is not None:
        kw["u_emf"] = abs(u_emf)
    if u_T is not None:
        kw["u_T"] = abs(u_T)
    v = validate_meter(
        r.buffers,
        r.emf,
        r.T,
        time=r.time,
        roles=r.roles,
        thresholds=_thresholds(args),
        method=args.method,
        buffer_table=table,
        samples_emf=None if s is None else s.emf,
        samples_T=None if s is None else s.T,
        sample_labels=None if s is None else s.labels,
        sample_compositions=None if s is None else s.compositions,
        uncertainty_method="monte-carlo" if args.monte_carlo else "gum",
        seed=args.seed,
        **kw,
    )
    sE = None if s is None else s.emf
    sT = None if s is None else s.T
    if args.plot:
        from ..workflows.ph.plots import calibration_figure
        from ..workflows.plotting import save_figure

        save_figure(calibration_figure(v), args.plot)
    if args.record:
        from ..io.files import write_text

        write_text(
            args.record,
            validation_record(v, title=args.title, subtitle=args.subtitle, samples_emf=sE, samples_T=sT),
        )
    emit(args, validation_report(v, output_format(args), samples_emf=sE, samples_T=sT))
    _caution_stderr(args)
    return 0 if v.passed or not args.strict else 1


def cmd_ph_buffers(args: argparse.Namespace) -> int:
    from ..io.units import parse_temperature
    from ..workflows.ph.buffers import standard_buffers
    from ..workflows.ph.report import buffers_report
    from .common import emit, output_format

    T = parse_temperature(args.temperature, field="--temperature") if args.temperature else 298.15
    emit(args, buffers_report(T, output_format(args), standard_buffers(args.buffers) if args.buffers else None))
    _caution_stderr(args)
    return 0


def cmd_ph_harned(args: argparse.Namespace) -> int:
    import numpy as np

    from ..constants import P_ATM
    from ..errors import InputError
    from ..io.units import parse_amount, parse_potential, parse_pressure
    from ..workflows.ph.files import read_harned
    from ..workflows.ph.harned import harned_ph
    from ..workflows.ph.report import harned_report
    from .common import emit, output_format

    h = read_harned(args.emfs)
    if (args.buffer is None) == (args.ionic_strength is None):
        raise InputError("give either --buffer NAME or --ionic-strength 'I mol/kg'", field="--buffer", value=None)
    I = None
    if args.ionic_strength:
        amt = parse_amount(args.ionic_strength, field="--ionic-strength")
        if amt.basis != "kg" or amt.mass:
            raise InputError("ionic strength in mol/kg", field="--ionic-strength", value=args.ionic_strength)
        I = amt.value
    E0 = parse_potential(args.e0, field="--e0") if args.e0 else None
    u_E0 = parse_potential(args.u_e0, field="--u-e0") if args.u_e0 else None
    if E0 is not None and u_E0 is None:
        raise InputError("give --u-e0 with --e0", field="--u-e0", value=None)
    if args.hcl_emf is not None and E0 is not None:
        raise InputError("give either --e0 or --hcl-emf", field="--hcl-emf", value=args.hcl_emf)
    u_emf = parse_potential(args.u_emf, field="--u-emf") if args.u_emf else 2e-5
    p_default = parse_pressure(args.pressure, field="--pressure") if args.pressure else P_ATM
    results = []
    for T in np.unique(np.round(h.T, 6)):
        ix = np.isclose(h.T, T, atol=1e-6)
        p = float(np.mean(h.pressure[ix])) if h.pressure is not None else p_default
        if args.hcl_emf is not None:
            from ..workflows.ph.harned import silver_chloride_e0_from_hcl

            hcl = silver_chloride_e0_from_hcl(parse_potential(args.hcl_emf, field="--hcl-emf"), float(T), pressure=p)
            E0, u_E0 = hcl.value, hcl.standard_uncertainty
        results.append(
            harned_ph(
                h.m_cl[ix],
                h.emf[ix],
                float(T),
                buffer=args.buffer,
                ionic_strength=I,
                E0=E0,
                u_E0=u_E0,
                pressure=p,
                u_emf=abs(u_emf),
                u_convention=args.u_convention,
            )
        )
    emit(args, harned_report(results, output_format(args)))
    _caution_stderr(args)
    return 0


def register(subparsers: Any) -> None:
    """Add the pH-workflow subcommands to an argparse ``subparsers`` object."""
    from .common import CAUTION, add_output

    p = subparsers.add_parser(
        "ph-calibrate",
        help="calibrate and validate a pH meter from a CSV of buffer readings",
        description="Calibrate a pH cell from readings in standard buffers (one-, two- or multipoint), judge "
        "slope, offset, linearity, check buffers, drift and stability, and give sample pH with uncertainty "
        "budgets. CSV columns: buffer, reading [mV], temperature [°C], optional time [min], role "
        "(calibration/check).",
        epilog=CAUTION,
    )
    p.add_argument("readings", nargs="?", metavar="CSV", help="buffer readings")
    p.add_argument(
        "--samples",
        metavar="CSV",
        help="sample readings: label, reading [mV], temperature [°C], "
        "optional species columns (e.g. 'Na+ [mol/kg]') for the liquid-junction estimate",
    )
    p.add_argument("-t", "--temperature", metavar="T", help="temperature for rows without one, e.g. '25 °C'")
    p.add_argument("--buffers", metavar="TOML", help="user buffers with certificate values ([buffers.NAME] tables)")
    p.add_argument(
        "--method", choices=("one-point", "two-point", "multipoint"), help="default by the number of buffers"
    )
    p.add_argument("--u-reading", metavar="U", help="standard uncertainty of a reading (default '0.2 mV')")
    p.add_argument("--u-temperature", metavar="U", help="standard uncertainty of a temperature (default '0.2 K')")
    g = p.add_argument_group("acceptance limits (defaults: common practice)")
    g.add_argument("--slope-range", metavar="MIN:MAX", help="slope in %% of RT ln10/F (default 95:105)")
    g.add_argument("--offset-max", metavar="E", help="largest |E(pH 7)| (default '30 mV')")
    g.add_argument("--residual-max", type=float, metavar="PH", help="largest multipoint residual, pH (default 0.02)")
    g.add_argument(
        "--check-tolerance",
        type=float,
        metavar="PH",
        help="largest |pH − pH(S)| of a check buffer (default 0.05)",
    )
    g.add_argument(
        "--check-en-max",
        type=float,
        metavar="EN",
        help="largest normalised error of a check buffer (default 1)",
    )
    g.add_argument("--drift-max", metavar="RATE", help="largest drift, e.g. '2 mV/h' (default)")
    g.add_argument("--stability-max", metavar="E", help="largest sd of replicate readings (default '0.3 mV')")
    p.add_argument("--strict", action="store_true", help="exit with status 1 when a criterion fails")
    p.add_argument("--monte-carlo", action="store_true", help="sample uncertainties by Monte Carlo instead of the GUM")
    p.add_argument("--seed", type=int, help="random seed for --monte-carlo")
    p.add_argument("--plot", metavar="FILE", help="write the calibration figure (.png, .svg or .pdf)")
    p.add_argument("--record", metavar="FILE", help="write the one-page HTML validation record")
    p.add_argument("--title", default="pH-meter validation record", help="title of the record")
    p.add_argument("--subtitle", help="one line under the title (instrument, electrode, operator)")
    p.add_argument("--examples", metavar="DIR", help="write example input files into DIR and stop")
    add_output(p)
    p.set_defaults(func=cmd_ph_calibrate)

    p = subparsers.add_parser(
        "ph-buffers",
        help="standard pH buffers with pH(S) at a temperature",
        description="List the standard buffers (IUPAC 2002 primary and common secondary "
        "standards, plus yours) with pH(S), its expanded uncertainty and the source status.",
        epilog=CAUTION,
    )
    p.add_argument("-t", "--temperature", metavar="T", help="e.g. '37 °C' (default 25 °C)")
    p.add_argument("--buffers", metavar="TOML", help="add user buffers from a TOML file")
    add_output(p)
    p.set_defaults(func=cmd_ph_buffers)

    p = subparsers.add_parser(
        "ph-harned",
        help="pH(PS) of a buffer from Harned-cell EMFs (primary method)",
        description="Reduce EMFs of Pt|H2|buffer + KCl|AgCl|Ag at several chloride molalities: "
        "acidity function, extrapolation to zero chloride, Bates–Guggenheim convention, "
        "uncertainty budget. CSV columns: chloride [mol/kg], emf [mV], temperature [°C], "
        "optional pressure [kPa] (barometric).",
        epilog=CAUTION,
    )
    p.add_argument("emfs", metavar="CSV", help="cell EMFs")
    p.add_argument("--buffer", help="standard buffer name (for its ionic strength)")
    p.add_argument("--ionic-strength", metavar="I", help="ionic strength of the buffer, e.g. '0.053 mol/kg'")
    p.add_argument(
        "--e0",
        metavar="E",
        help="E°(AgCl/Ag) of your electrodes, e.g. '222.30 mV' (default: Bates & Bower 1954)",
    )
    p.add_argument("--u-e0", metavar="U", help="its standard uncertainty, e.g. '0.02 mV'")
    p.add_argument(
        "--hcl-emf",
        metavar="E",
        help="EMF of the same cell filled with HCl 0.01 mol/kg, e.g. '463.76 mV': E° from it (γ± by Pitzer)",
    )
    p.add_argument("--u-emf", metavar="U", help="standard uncertainty of each EMF (default '0.02 mV')")
    p.add_argument("--pressure", metavar="P", help="barometric pressure when the CSV has none (default '1 atm')")
    p.add_argument(
        "--u-convention",
        type=float,
        default=0.0,
        metavar="PH",
        help="uncertainty assigned to the Bates–Guggenheim convention (default 0: it defines pH(PS))",
    )
    add_output(p)
    p.set_defaults(func=cmd_ph_harned)
