"""Speed of the ISE calibration workflow; prints figures, asserts nothing.

Run from the repository root::

    python benchmarks/bench_ise.py                                  # this checkout
    python benchmarks/bench_ise.py --before /tmp/old --figures 3    # an older checkout beside it

Scenario: the invented calcium-electrode calibration of the demo (5 standards in 0.1 mol/L
KCl, Davies activities), samples in 0.1 mol/L KCl read with counter-ion Cl-.

Figures (target under 1 s each on the 2-core machine):
1. the calibration fit;
2. the fit plus 10⁴ unknowns with GUM uncertainty (vectorised over the samples; inputs:
   calibration parameters with covariance, reading, temperature, matrix composition),
   without and with the activity-model spread (which refits the calibration by each model);
3. 10⁵ Monte Carlo trials each for 100 unknowns (10⁷ inversions, vectorised over trials ×
   samples in blocks: activity.workflows.ise._mc), with and without the temperature input,
   and followed by the 95 % coverage interval of every sample (the values are sorted for
   it: up front before, on the first interval now);
and for 2 and 3 the ratio to the bare model evaluation: one forward evaluation of the
calibrated response (Davies γ + Nikolsky–Eisenman) on the same number of rows.

Each figure is the shortest of a few calls. With ``--before DIR`` every figure is measured
in child processes, one for the older checkout and one for this one, taken in turn
``--rounds`` times (the machine is shared: the load drifts over both alike); the table
shows the median of the rounds for each and their ratio.
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import time
import warnings
from pathlib import Path

HERE = Path(__file__).resolve().parent

#: figure key → label (the bare evaluation rows are printed as a ratio beside 2 and 3)
FIGURES = {
    "1": "1. calibration fit (5 standards)",
    "2": "2. fit + 10^4 unknowns, GUM",
    "2s": "   same with the activity-model spread (6 models)",
    "3": "3. 10^5 Monte Carlo trials x 100 unknowns",
    "3T": "   same without the temperature input (T scalar)",
    "3i": "   3 and then the 95 % interval of every sample",
}
GROUPS = {"1": ("1",), "2": ("2", "2s"), "3": ("3", "3T", "3i")}


def _best(func, repeat: int, cpu: dict, key: str):
    """Shortest wall time of ``repeat`` calls (s) and the last result; the shortest CPU time of
    this process (all threads) for the same calls goes to ``cpu[key]``."""
    walls, cpus, result = [], [], None
    for _ in range(repeat):
        w0, c0 = time.perf_counter(), time.process_time()
        result = func()
        walls.append(time.perf_counter() - w0)
        cpus.append(time.process_time() - c0)
    cpu[key] = min(cpus)
    return min(walls), result


def measure(groups: tuple) -> tuple[dict, dict]:
    """Seconds per figure of the checked-out package (and the bare evaluations they are compared
    with): wall times, and the CPU times of the same calls."""
    import _common  # noqa: F401  (puts the chosen checkout on sys.path)
    import numpy as np

    from activity import Solution
    from activity.coefficients import get_model
    from activity.errors import ActivityWarning
    from activity.workflows.ise import calibrate_ise
    from activity.workflows.ise.demo import SCENARIO, demo_standards

    warnings.simplefilter("ignore", ActivityWarning)

    def fit():
        return calibrate_ise(demo_standards(), np.array(SCENARIO["readings_mV"]) * 1e-3, "Ca^2+", model="davies")

    def bare(cal, m):
        """Forward response for n samples: build the batch, Davies γ, E = E0 + S lg(γm + a0)."""
        n = m.size
        sol = Solution({"Ca^2+": m, "K+": np.full(n, 0.1), "Cl-": 0.1 + 2 * m})
        g = get_model("davies").activity_coefficients(sol)
        return cal.E0 + cal.slope * np.log10(10 ** g.log10_gamma[0] * m + cal.a0)

    out: dict = {}
    cpu: dict = {}

    def best_of(func, repeat, key):
        return _best(func, repeat, cpu, key)

    matrix = Solution({"K+": 0.1, "Cl-": 0.1})
    rng = np.random.default_rng(0)
    t_fit, cal = best_of(fit, 3, "1")
    if "1" in groups:
        out["1"] = t_fit
    else:
        cpu.pop("1")
    n = 10_000
    E = cal.E0 + cal.slope * rng.uniform(-5, -1.5, n)
    if "2" in groups:
        out["bare 10^4"], _ = best_of(lambda: bare(cal, np.full(n, 1e-3)), 5, "bare 10^4")

        def gum(choice):
            c = fit()
            return c.molality_with_uncertainty(
                E, matrix, counter_ion="Cl-", u_emf=3e-4, u_temperature=0.2, u_matrix=0.01, model_choice=choice
            )

        out["2"], res = best_of(lambda: gum(False), 3, "2")
        out["2s"], _ = best_of(lambda: gum(True), 2, "2s")
        assert np.all(np.isfinite(res.standard_uncertainty))
    if "3" in groups:
        k, trials = 100, 100_000
        E100 = cal.E0 + cal.slope * rng.uniform(-5, -1.5, k)
        t_bare, _ = best_of(lambda: bare(cal, np.full(trials, 1e-3)), 5, "bare 10^7")
        out["bare 10^7"], cpu["bare 10^7"] = k * t_bare, k * cpu["bare 10^7"]

        def mc(u_T):
            return cal.molality_with_uncertainty(
                E100,
                matrix,
                counter_ion="Cl-",
                u_emf=3e-4,
                u_temperature=u_T,
                u_matrix=0.01,
                method="monte-carlo",
                trials=trials,
                seed=1,
                model_choice=False,
            )

        out["3"], res = best_of(lambda: mc(0.2), 3, "3")
        assert np.all(np.isfinite(res.standard_uncertainty))
        out["3T"], _ = best_of(lambda: mc(0.0), 3, "3T")

        def mc_intervals():
            res = mc(0.2)
            return [p.coverage_interval(0.95) for p in res.propagation]

        out["3i"], _ = best_of(mc_intervals, 3, "3i")
    return out, cpu


def _bare_note(key: str, t: float, figs: dict) -> str:
    if key in ("2", "2s") and "bare 10^4" in figs:
        return f"x{t / figs['bare 10^4']:.0f} the bare evaluation of 10^4 rows, {figs['bare 10^4'] * 1000:.2f} ms"
    if key in ("3", "3T", "3i") and "bare 10^7" in figs:
        return f"x{t / figs['bare 10^7']:.2f} the bare evaluation of 100 x 10^5 rows, {figs['bare 10^7'] * 1000:.0f} ms"
    return ""


def _child(groups: tuple, root: str | None) -> list:
    env = dict(os.environ)
    if root:
        env["ACTIVITY_BENCH_ROOT"] = str(Path(root).resolve())
    else:
        env.pop("ACTIVITY_BENCH_ROOT", None)
    args = [sys.executable, str(Path(__file__).resolve()), "--child", ",".join(groups)]
    done = subprocess.run(args, env=env, capture_output=True, text=True, cwd=str(HERE), check=True)
    return json.loads(done.stdout.strip().splitlines()[-1])


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--before", metavar="DIR", help="an older checkout to measure beside this one, in turn")
    ap.add_argument("--rounds", type=int, default=3, help="child runs per checkout with --before (median shown)")
    ap.add_argument("--figures", default="1,2,3", help="comma-separated figure groups: 1, 2, 3 (default all)")
    ap.add_argument("--child", help=argparse.SUPPRESS)
    args = ap.parse_args()
    groups = tuple(g.strip() for g in (args.child or args.figures).split(",") if g.strip())
    unknown = [g for g in groups if g not in GROUPS]
    if unknown:
        ap.error(f"unknown figure group(s) {unknown}; choose from {list(GROUPS)}")
    if args.child:
        print(json.dumps(measure(groups)))
        return
    if not args.before:
        figs, cpu = measure(groups)
        for key, label in FIGURES.items():
            if key in figs:
                note = _bare_note(key, figs[key], figs)
                print(
                    f"{label + ':':55s}{figs[key] * 1000:8.1f} ms (CPU {cpu[key] * 1000:.0f} ms)"
                    + (f" ({note})" if note else "")
                )
        return
    runs: dict = {"before": [], "after": []}
    for _ in range(args.rounds):
        runs["before"].append(_child(groups, args.before))
        runs["after"].append(_child(groups, None))
    # per side and kind (0: wall, 1: CPU): figure → median over the rounds
    med = {
        side: [{k: statistics.median(r[kind][k] for r in rs) for k in rs[0][kind]} for kind in (0, 1)]
        for side, rs in runs.items()
    }
    print(f"python {' '.join(sys.argv)}")
    print(f"{'figure':52s} {'before':>10s} {'after':>10s} {'after/before':>13s}   CPU: before, after, ratio")
    bare_rows = {key: f"   bare evaluation, {key[5:]} rows" for key in ("bare 10^4", "bare 10^7")}
    for key, label in (FIGURES | bare_rows).items():
        if key in med["after"][0]:
            b, a = med["before"][0][key], med["after"][0][key]
            cb, ca = med["before"][1][key], med["after"][1][key]
            print(
                f"{label:52s} {b * 1000:7.1f} ms {a * 1000:7.1f} ms {a / b:13.2f}"
                f"   {cb * 1000:7.1f} ms {ca * 1000:7.1f} ms {ca / cb:5.2f}"
            )
    print(
        f"medians of {args.rounds} round(s) taken in turn; each figure the shortest of a few calls within a "
        "child (wall time, and the CPU time of those calls)"
    )


if __name__ == "__main__":
    main()
