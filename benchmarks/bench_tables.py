"""CSV batches on the command line (issue 13): time against a lean numpy script, and peak memory.

Run::

    python benchmarks/bench_tables.py                       # 10⁵ rows for the ratios, 10⁶ for memory
    python benchmarks/bench_tables.py --rows 20000 --big 200000 --rounds 3      # a quicker look
    python benchmarks/bench_tables.py --before /tmp/old     # the old checkout's 10⁶-row run beside

Two commands, each on a table of our own (invented compositions, written to a temporary
directory): ``activity solution --table T.csv --csv -o OUT`` (Davies, four ions, a
temperature per row) and ``activity invert --table R.csv --csv -o OUT`` (a Ca²⁺ ISE
against Ag/AgCl, a reading and a KCl matrix per row).

* **ratio**: the command's time / the time of a lean script doing the same job: the
  table parsed with ``numpy.loadtxt`` (the faster of two lean ways, taken per call), the
  same library calls (``Solution`` + the model, or ``molality_from_emf``) on the whole
  table at once, and the same CSV written with ``repr`` of floats joined in one pass. Both
  run in child processes that import everything first and then time only the job; the
  children alternate (command, script, command, …) and the medians are compared. The
  script's file is checked to be byte for byte the command's (the same numbers written).
* **peak memory**: the maximum resident set of a child running the command on the big
  table (``ru_maxrss``), and its wall time; the lean script on the same table, which
  holds the whole table, beside it.

Nothing here asserts a time; the targets of issue 13 are printed beside the figures.
"""

from __future__ import annotations

import argparse
import contextlib
import json
import os
import statistics
import subprocess
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent

SOLUTION_HEADER = "label,Na+ [mol/kg],K+ [mol/kg],Ca2+ [mol/kg],Cl- [mol/kg],temperature [°C]"
INVERT_HEADER = "label,reading [mV],K+ [mol/kg],Cl- [mol/kg]"
ISE = ["--ise", "Ca2+", "--e0", "52.1 mV", "--against", "silver-chloride:3 mol/L", "--counter-ion", "Cl-"]


# --------------------------------------------------------------------------- tables
def write_tables(directory: Path, n: int) -> tuple[Path, Path]:
    import numpy as np

    rng = np.random.default_rng(1)
    na, k = rng.uniform(1e-4, 0.05, n), rng.uniform(1e-4, 0.05, n)
    ca = rng.uniform(1e-5, 0.02, n)
    cl = na + k + 2 * ca
    T = rng.uniform(5.0, 45.0, n).round(2)
    sol = directory / f"solution-{n}.csv"
    with sol.open("w", encoding="utf-8") as fh:
        fh.write(SOLUTION_HEADER + "\n")
        for start in range(0, n, 100_000):
            s = slice(start, start + 100_000)
            rows = zip(range(start, n), na[s].tolist(), k[s].tolist(), ca[s].tolist(), cl[s].tolist(), T[s].tolist())
            fh.write("".join(f"s{i},{a!r},{b!r},{c!r},{d!r},{t!r}\n" for i, a, b, c, d, t in rows))
    E = rng.uniform(-290.0, -230.0, n).round(2)
    kcl = rng.uniform(0.01, 0.1, n)
    inv = directory / f"invert-{n}.csv"
    with inv.open("w", encoding="utf-8") as fh:
        fh.write(INVERT_HEADER + "\n")
        for start in range(0, n, 100_000):
            s = slice(start, start + 100_000)
            rows = zip(range(start, n), E[s].tolist(), kcl[s].tolist())
            fh.write("".join(f"r{i},{e!r},{c!r},{c!r}\n" for i, e, c in rows))
    return sol, inv


# --------------------------------------------------------------------------- children
def _lean_parse(path: str, ncols: int):
    """Labels and float columns by numpy.loadtxt, the faster of two lean ways."""
    import time

    import numpy as np

    def by_columns():
        labels = np.loadtxt(path, delimiter=",", skiprows=1, usecols=0, dtype=str).tolist()
        return labels, np.loadtxt(path, delimiter=",", skiprows=1, usecols=range(1, ncols + 1), ndmin=2).T

    def by_lines():
        with open(path, encoding="utf-8") as fh:
            fh.readline()
            lines = fh.read().splitlines()
        labels = [line[: line.index(",")] for line in lines]
        return labels, np.loadtxt([line[line.index(",") + 1 :] for line in lines], delimiter=",", ndmin=2).T

    best = None
    for f in (by_columns, by_lines):
        start = time.perf_counter()
        out = f()
        spent = time.perf_counter() - start
        best = (spent, out) if best is None or spent < best[0] else best
    return best


def _csv_lines(labels, columns) -> str:
    numbers = map(",".join, zip(*(list(map(repr, c.tolist())) for c in columns)))
    return "\n".join(map(",".join, zip(labels, numbers)))


def lean_solution(path: str, out: str) -> float:
    import time

    import numpy as np

    import activity as act

    parse_time, (labels, v) = _lean_parse(path, 5)
    start = time.perf_counter()  # the setup is timed, as the command's is
    model = act.get_model("davies")
    na, k, ca, cl, t = v
    T = t * (274.15 - 273.15) + 273.15  # °C → K as the table reader converts a column (its 0 and 1 °C)
    sol = act.Solution({"Na+": na, "K+": k, "Ca^2+": ca, "Cl-": cl}, T=T)
    res = model.activity_coefficients(sol, warn=False)
    g = res.gamma
    species = sol.species
    header = (
        ["label", "model", "temperature_K", "ionic_strength_mol_per_kg"]
        + [f"gamma {n}" for n in species]
        + [f"activity {n}" for n in species]
        + ["in_range"]
    )
    flags = np.where(np.broadcast_to(res.in_range, sol.shape), "True", "False").tolist()
    body = _csv_lines([f"{lab},davies" for lab in labels], [T, np.asarray(sol.ionic_strength), *g, *(g * sol.m)])
    with open(out, "w", encoding="utf-8") as fh:
        fh.write(",".join(header) + "\n" + "\n".join(map(",".join, zip(body.split("\n"), flags))) + "\n")
    return parse_time + time.perf_counter() - start


def lean_invert(path: str, out: str) -> float:
    import time

    import numpy as np

    import activity as act

    parse_time, (labels, v) = _lean_parse(path, 3)
    start = time.perf_counter()  # the setup is timed, as the command's is
    cell = act.Cell(
        left=act.silver_chloride_electrode(3.0, basis="mol/L"), right=act.IonSelectiveElectrode("Ca2+", 0.0521)
    )
    E, k, cl = v
    matrix = act.Solution({"K+": k, "Cl-": cl})
    reading = E * 1e-3
    res = act.molality_from_emf(cell, reading, matrix, "davies", species="Ca^2+", counter_ion="Cl-")
    n = len(labels)
    cols = [
        np.broadcast_to(np.asarray(c, float), (n,))
        for c in (298.15, reading, res.molality, res.activity, res.gamma, res.ionic_strength)
    ]
    header = "label,temperature_K,reading_V,molality_mol_per_kg,activity,gamma,ionic_strength_mol_per_kg"
    with open(out, "w", encoding="utf-8") as fh:
        fh.write(header + "\n" + _csv_lines(labels, cols) + "\n")
    return parse_time + time.perf_counter() - start


def cli(argv: list[str]) -> float:
    import importlib
    import time

    import activity.coefficients  # noqa: F401  (imports done before the clock starts, as in the lean script)
    import activity.nernst  # noqa: F401
    from activity.cli.main import main

    for name in ("activity.cli.batch", "activity.cli.solution", "activity.cli.electrode", "activity.io.tables"):
        with contextlib.suppress(ImportError):  # an older checkout without the module
            importlib.import_module(name)

    start = time.perf_counter()
    code = main(argv)
    if code:
        raise SystemExit(f"the command failed: {argv}")
    return time.perf_counter() - start


def _child_main(kind: str, path: str, out: str) -> None:
    import resource
    import warnings

    warnings.simplefilter("ignore")
    import _common  # noqa: F401  (puts the chosen checkout on sys.path)

    quiet = [] if os.environ.get("ACTIVITY_BENCH_ROOT") else ["--quiet"]  # (an old checkout has no --quiet)

    if kind == "lean-solution":
        seconds = lean_solution(path, out)
    elif kind == "lean-invert":
        seconds = lean_invert(path, out)
    elif kind == "cli-solution":
        seconds = cli(quiet + ["solution", "--table", path, "--csv", "-o", out])
    else:
        seconds = cli(quiet + ["invert", *ISE, "--table", path, "--csv", "-o", out])
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024  # kB on Linux
    print(json.dumps({"seconds": seconds, "rss_MB": rss}))


def _child(kind: str, path: Path, out: Path, root: str | None = None) -> dict:
    env = dict(os.environ)
    if root:
        env["ACTIVITY_BENCH_ROOT"] = str(Path(root).resolve())
    args = [sys.executable, str(Path(__file__).resolve()), "--child", kind, str(path), str(out)]
    proc = subprocess.run(args, env=env, capture_output=True, text=True, cwd=str(HERE))
    if proc.returncode:
        raise SystemExit(f"{kind} failed:\n{proc.stderr[-2000:]}")
    return json.loads(proc.stdout.strip().splitlines()[-1])


# --------------------------------------------------------------------------- parent
def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rows", type=int, default=100_000, help="rows of the tables timed against the lean script")
    ap.add_argument("--big", type=int, default=1_000_000, help="rows of the table whose peak memory is measured")
    ap.add_argument("--rounds", type=int, default=5, help="alternating child runs per command")
    ap.add_argument("--before", metavar="DIR", help="also run an older checkout on the big table")
    ap.add_argument("--child", nargs=3, help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.child:
        _child_main(*args.child)
        return
    print(f"python {' '.join(sys.argv)}")
    with tempfile.TemporaryDirectory() as d:
        d = Path(d)
        sol, inv = write_tables(d, args.rows)
        print(f"{'row':62s} {'unit':>5s} {'value':>9s} {'target':>8s}")
        for name, path in (("solution", sol), ("invert", inv)):
            times: dict[str, list[float]] = {"cli": [], "lean": [], "before": []}
            for _ in range(args.rounds):
                times["cli"].append(_child(f"cli-{name}", path, d / "cli.csv")["seconds"])
                times["lean"].append(_child(f"lean-{name}", path, d / "lean.csv")["seconds"])
                if args.before:
                    times["before"].append(_child(f"cli-{name}", path, d / "before.csv", args.before)["seconds"])
            same = (d / "cli.csv").read_bytes() == (d / "lean.csv").read_bytes()
            lean = statistics.median(times["lean"])
            for when, key in (("after", "cli"), ("before", "before")):
                if not times[key]:
                    continue
                if key == "before":
                    same = (d / "before.csv").read_bytes() == (d / "lean.csv").read_bytes()
                ratio = statistics.median(times[key]) / lean
                label = f"{name} --table --csv, {args.rows:.0e} rows / lean numpy script ({when})"
                flag = "" if same else "  (OUTPUTS DIFFER)"
                spent = statistics.median(times[key])
                print(f"{label:62s} {'x':>5s} {ratio:9.3g} {'≤ 1.2':>8s}   ({spent:.3g} s){flag}")
            print(f"    lean script {lean:.3g} s (median)")
        big_sol, big_inv = write_tables(d, args.big)
        for name, path in (("solution", big_sol), ("invert", big_inv)):
            runs = [("after", None)] + ([("before", args.before)] if args.before else [])
            for when, root in runs:
                r = _child(f"cli-{name}", path, d / "big.csv", root)
                label = f"{name} --table --csv, {args.big:.0e} rows, peak RSS ({when})"
                print(f"{label:62s} {'MB':>5s} {r['rss_MB']:9.4g} {'< 300':>8s}   ({r['seconds']:.3g} s)")
            r = _child(f"lean-{name}", path, d / "lean.csv")
            label = "  the lean script on the same table (holds it whole), peak RSS"
            print(f"{label:62s} {'MB':>5s} {r['rss_MB']:9.4g} {'':>8s}   ({r['seconds']:.3g} s)")


if __name__ == "__main__":
    main()
