"""Command-line commands of the ISE workflow: ``calibrate`` and ``ise-examples``.

Handlers parse files and options (units explicit), call :mod:`activity.workflows.ise` and
format. Everything is computed before any file is written, and each file is written whole
(:mod:`activity.io.files`), so a bad input leaves no output behind.
"""

from __future__ import annotations

import argparse
import sys
from typing import Any

__all__ = ["register"]


def _method(args: argparse.Namespace) -> Any:
    from ..errors import InputError
    from ..workflows.ise.files import Method, read_method

    method = read_method(args.method) if args.method else None
    if method is None:
        if not args.ion and not args.use and not args.demo:
            raise InputError("give --method FILE.toml or --ion ION", field="method", value=None)
        method = Method(ion=args.ion or "")
    over = {}
    if args.ion:
        over["ion"] = args.ion
    if args.model:
        over["model"] = args.model
    if args.slope:
        over["slope"] = args.slope
    if args.counter_ion:
        over["counter_ion"] = args.counter_ion
    if args.uncertainty:
        over["uncertainty_method"] = args.uncertainty
    if getattr(args, "speciate", False):
        over["speciation"] = dict(method.speciation or {})
    if args.u_reading:
        from ..io.units import parse_potential

        over["u_reading"] = parse_potential(args.u_reading, field="--u-reading")
    if over:
        from dataclasses import replace

        method = replace(method, **over)
    return method


def _calibration(args: argparse.Namespace, method: Any) -> Any:
    from ..errors import InputError
    from ..workflows.ise import calibrate_ise
    from ..workflows.ise.files import load_calibration, read_standards

    if args.use:
        if args.standards:
            raise InputError(
                "give either a standards file or --use CALIBRATION.json, not both", field="use", value=args.use
            )
        return load_calibration(args.use)
    if not args.standards:
        raise InputError("give the standards CSV (or --use CALIBRATION.json, or --demo)", field="standards", value=None)
    std, emf, labels = read_standards(args.standards)
    return calibrate_ise(
        std,
        emf,
        method.ion,
        model=method.model,
        slope=method.slope,
        interferents=method.interferents or None,
        detection_term=method.detection_term,
        acceptance=method.acceptance,
        linear_deviation=method.linear_deviation,
        labels=labels,
        speciation=method.speciation,
    )


def _samples(args: argparse.Namespace, cal: Any, method: Any) -> Any:
    from ..workflows.ise.files import read_samples_file
    from ..workflows.ise.report import Samples

    labels, E, matrix = read_samples_file(args.samples, method)
    read = cal.read(E, matrix, counter_ion=method.counter_ion)
    unc = cal.molality_with_uncertainty(
        E,
        matrix,
        counter_ion=method.counter_ion,
        u_emf=method.u_reading,
        u_temperature=method.u_temperature,
        u_matrix=method.u_matrix,
        method=method.uncertainty_method,
        trials=method.trials,
        seed=method.seed,
        model_choice=method.model_choice,
        progress=True,  # drawn only when standard error is a terminal
    )
    return Samples(labels, E, read, unc)


def _addition(path: str, cal: Any) -> Any:
    from ..workflows.ise.addition import multiple_addition, single_addition
    from ..workflows.ise.files import read_addition

    d = read_addition(path)
    slope = {"calibration": cal, "fit": "fit", "nernstian": None}[d["slope"]]
    common = {
        "matrix": d["matrix"],
        "model": cal.model,
        "counter_ion": d["counter_ion"],
        "standard_in_matrix": d["standard_in_matrix"],
        "T": cal.T,
    }
    if d["E"].size == 2:
        if slope == "fit":
            from ..errors import InputError

            raise InputError(
                "a single addition cannot fit the slope: use 'calibration' or 'nernstian'",
                field=f"{path}: slope",
                value="fit",
            )
        return single_addition(
            d["E"][0],
            d["E"][1],
            d["V_sample"],
            d["V_added"][1] - d["V_added"][0],
            d["c_standard"],
            cal.ion,
            slope=slope,
            **common,
        ), None
    res = multiple_addition(d["E"], d["V_added"], d["V_sample"], d["c_standard"], cal.ion, slope=slope, **common)
    return res, d["V_sample"]


def _selectivity(path: str, cal: Any) -> dict:
    from ..species import parse_species
    from ..workflows.ise.selectivity import (
        fixed_interference,
        matched_potential,
        separate_solution,
    )

    out = {}
    for item in read_selectivity_items(path):
        j = parse_species(item["interferent"])
        zj = j.charge
        key = f"{j.name} ({item['kind'].replace('_', ' ')})"
        if item["kind"] == "separate_solution":
            out[key] = separate_solution(
                item["E_primary"],
                item["E_interferent"],
                item["a_primary"],
                item["a_interferent"],
                cal.z,
                zj,
                slope=cal,
                T=cal.T,
                u_emf=cal.residual_sd,
            )
        elif item["kind"] == "fixed_interference":
            out[key] = fixed_interference(
                item["E"], item["a_primary"], item["a_interferent"], cal.z, zj, slope=cal, T=cal.T
            )
        else:
            out[key] = matched_potential(
                item["a_reference"],
                item["delta_a_primary"],
                item["delta_E"],
                item["a_interferent_added"],
                item["delta_E_interferent"],
                u_emf=cal.residual_sd,
            )
    return out


def read_selectivity_items(path: str) -> list:
    from ..workflows.ise.files import read_selectivity

    return read_selectivity(path)


def cmd_calibrate(args: argparse.Namespace) -> int:
    from pathlib import Path

    from ..errors import InputError
    from ..workflows.ise.report import (
        calibration_csv,
        calibration_json,
        calibration_record,
        calibration_text,
    )
    from .common import CAUTION, emit, output_format

    for opt in ("plot", "gran_plot"):
        value = getattr(args, opt)
        if value and Path(value).suffix.lower() not in (".png", ".svg", ".pdf"):
            raise InputError("plot files end in .png, .svg or .pdf", field=f"--{opt.replace('_', '-')}", value=value)
    if args.record and Path(args.record).suffix.lower() not in (".html", ".htm"):
        raise InputError("the record is an HTML file (.html)", field="--record", value=args.record)
    title = subtitle = None
    if args.demo:
        if args.standards or args.use or args.samples:
            raise InputError("--demo runs the built-in scenario; give no files with it", field="demo", value=None)
        from ..workflows.ise.demo import SCENARIO, run_ise_demo

        demo = run_ise_demo()
        cal, samples, method = demo.calibration, demo.samples, None
        title, subtitle = "Calcium electrode — calibration record", SCENARIO["title"]
    else:
        method = _method(args)
        cal = _calibration(args, method)
        samples = _samples(args, cal, method) if args.samples else None
        if method.title:
            title, subtitle = method.title, method.subtitle
    extras: dict[str, Any] = {}
    gran_fig = None
    if args.addition:
        res, _ = _addition(args.addition, cal)
        extras["addition"] = res
        if args.gran_plot:
            if not res.gran:
                raise InputError("a Gran plot needs multiple additions", field="--gran-plot", value=args.gran_plot)
            from ..workflows.ise.plots import gran_figure

            gran_fig = gran_figure(res)
    elif args.gran_plot:
        raise InputError("--gran-plot needs --addition FILE", field="--gran-plot", value=args.gran_plot)
    if args.selectivity:
        extras["selectivity"] = _selectivity(args.selectivity, cal)
    if args.bracket:
        from ..workflows.ise import calibrate_ise
        from ..workflows.ise.drift import drift_check
        from ..workflows.ise.files import duration, read_standards

        if not args.elapsed:
            raise InputError(
                "give the time between the calibrations, e.g. --elapsed '90 min'", field="--elapsed", value=None
            )
        std2, emf2, labels2 = read_standards(args.bracket)
        m = method
        after = calibrate_ise(
            std2,
            emf2,
            cal.ion,
            model=cal.model,
            slope=cal.slope_mode,
            interferents=(m.interferents or None) if m else None,
            detection_term=m.detection_term if m else "auto",
            acceptance=cal.acceptance,
            labels=labels2,
        )
        drift = drift_check(cal, after, 0.0, duration(args.elapsed, "--elapsed"))
        cal = cal.with_drift(drift)
        extras["drift"] = drift
    # everything computed: now render, then write (each file whole)
    form = output_format(args)
    if form == "json":
        text = calibration_json(cal, samples, extras)
    elif form == "csv":
        text = calibration_csv(cal, samples, extras).rstrip("\n")
    else:
        text = calibration_text(cal, samples, extras) + "\n\n" + CAUTION
    outputs: list[tuple[str, Any]] = []
    if args.record:
        outputs.append((args.record, calibration_record(cal, samples, extras, title=title, subtitle=subtitle)))
    if args.plot:
        from ..workflows.ise.plots import calibration_figure

        outputs.append(
            (
                args.plot,
                calibration_figure(
                    cal,
                    samples.read if samples else None,
                    list(samples.labels) if samples else None,
                    samples.emf if samples else None,
                ),
            )
        )
    if gran_fig is not None:
        outputs.append((args.gran_plot, gran_fig))
    save_text = None
    if args.save:
        from ..formatting import to_json

        save_text = to_json(cal.to_dict()) + "\n"
    from ..io.files import write_text
    from ..workflows.plotting import save_figure

    for path, obj in outputs:
        if isinstance(obj, str):
            write_text(path, obj)
        else:
            save_figure(obj, path)
    if save_text is not None:
        write_text(args.save, save_text)
    emit(args, text)
    return 0


def cmd_examples(args: argparse.Namespace) -> int:
    from ..workflows.ise.examples import write_examples

    written = write_examples(args.folder)
    for p in written:
        print(p)
    print(
        f"wrote {len(written)} example files; start with:\n  activity calibrate {written[0]} --method {written[1]}",
        file=sys.stderr,
    )
    return 0


def run_calibration_demo(args: argparse.Namespace) -> int:
    """``activity demo``: the calibrate command on the built-in scenario, with the demo's
    output options (--plot, --record, --json, --csv, -o)."""
    argv = ["calibrate", "--demo"]
    for flag, value in (("--plot", args.plot), ("--record", args.record), ("-o", args.output)):
        if value:
            argv += [flag, value]
    argv += ["--json"] if args.json else ["--csv"] if args.csv else []
    parser = argparse.ArgumentParser(prog="activity", add_help=False)
    register(parser.add_subparsers(dest="command"))
    return cmd_calibrate(parser.parse_args(argv))


def register(subparsers: Any) -> None:
    """Add ``calibrate`` and ``ise-examples`` to an argparse ``subparsers`` object."""
    from .common import CAUTION, add_output

    p = subparsers.add_parser(
        "calibrate",
        help="fit an ion-selective electrode calibration; read samples; additions; selectivity",
        description="Fit E = E0 + S·lg(a + ΣK·a_j^(z/z_j) + a0) to standards (activities from the model), "
        "report slope, % of Nernstian, IUPAC detection limit, linear range and verdicts; read samples "
        "with uncertainty. Potentials are shown in mV.",
        epilog=CAUTION,
    )
    p.add_argument(
        "standards",
        nargs="?",
        metavar="STANDARDS.csv",
        help="one standard per row: composition columns with units ('Ca2+ [mol/L]'), 'reading [mV]', "
        "optional 'temperature [°C]' and 'label'",
    )
    p.add_argument(
        "--method",
        metavar="FILE.toml",
        help="method file: ion, model, slope, interferents, thresholds, uncertainty (see ise-examples)",
    )
    p.add_argument("--ion", help="primary ion, e.g. 'Ca2+' (overrides the method file)")
    p.add_argument("-m", "--model", help="activity model (default davies)")
    p.add_argument("--slope", choices=("free", "nernstian"), help="fit the slope or fix it at Nernstian")
    p.add_argument(
        "--speciate",
        action="store_true",
        help="activities of the free ion after speciation (for a complexing matrix: sulfate, citrate …)",
    )
    p.add_argument("--counter-ion", metavar="ION", help="ion added with the primary ion in samples, e.g. 'Cl-'")
    p.add_argument(
        "--samples",
        metavar="FILE.csv",
        help="samples: 'reading [mV]', matrix columns (or the method's "
        "[sample_matrix]), optional 'label', 'temperature [°C]'",
    )
    p.add_argument("--uncertainty", choices=("gum", "monte-carlo"), help="uncertainty method for samples")
    p.add_argument(
        "--u-reading",
        metavar="U",
        help="standard uncertainty of a reading, e.g. '0.3 mV' (default: the calibration's residual SD)",
    )
    p.add_argument("--addition", metavar="FILE.toml", help="known addition(s) read with this calibration's slope")
    p.add_argument("--gran-plot", metavar="FILE", help="Gran plot of the additions (.png, .svg, .pdf)")
    p.add_argument("--selectivity", metavar="FILE.toml", help="selectivity series (SSM, FIM, MPM)")
    p.add_argument("--bracket", metavar="STANDARDS.csv", help="the standards read again after the samples (drift)")
    p.add_argument("--elapsed", metavar="TIME", help="time between the two calibrations, e.g. '90 min'")
    p.add_argument("--save", metavar="FILE.json", help="save the calibration to reuse with --use")
    p.add_argument("--use", metavar="FILE.json", help="reuse a saved calibration instead of fitting standards")
    p.add_argument("--plot", metavar="FILE", help="calibration plot (.png, .svg or .pdf)")
    p.add_argument("--record", metavar="FILE.html", help="one-page HTML calibration record")
    p.add_argument("--demo", action="store_true", help="run the built-in calcium electrode scenario (invented data)")
    add_output(p)
    p.set_defaults(func=cmd_calibrate)

    p = subparsers.add_parser(
        "ise-examples",
        help="write example input files of the calibration workflow",
        description="Write standards.csv, method.toml, samples.csv, addition.toml and "
        "selectivity.toml (invented teaching-lab data) into FOLDER.",
    )
    p.add_argument("folder", metavar="FOLDER")
    p.set_defaults(func=cmd_examples)
