"""Speed of the speciation solver: rows/s, ratio to a per-row loop, peak memory.

Run:  python benchmarks/bench_speciation.py [--quick] [--no-reference]   (one BLAS thread)

A 10-component carbonate–sulfate–phosphate–fluoride matrix (H+, Na+, K+, Ca2+, Mg2+,
Cl-, CO3^2-, SO4^2-, PO4^3-, F-; 30 species with the formed ones) with Davies, charge
balance on H+, random natural-water-like compositions. Prints figures only; nothing here
asserts on time. Targets (issue 9): ≥ 5·10⁴ rows/s at 10⁵ rows, ≥ 100× the per-row loop,
peak memory at 10⁵ rows under 500 MB.

The column "x previous" is the ratio to the solver before the speed work (kept as the
reference in ``tests/speciation/_reference_solver.py``), both timed in turn in this run
(median of interleaved calls), so that the load of a shared machine cancels out.
"""

from __future__ import annotations

import argparse
import os
import tracemalloc
import warnings

for _v in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_v, "1")  # one core, before numpy loads its BLAS

import numpy as np  # noqa: E402
from _common import ROOT, best_of, interleaved  # noqa: E402  (also puts this checkout on sys.path)

import activity as act  # noqa: E402
from activity.speciation import speciate  # noqa: E402


def composition(n: int, rng: np.random.Generator) -> dict[str, np.ndarray]:
    na = rng.uniform(1e-4, 0.02, n)
    k = rng.uniform(1e-5, 0.002, n)
    ca = rng.uniform(1e-5, 0.005, n)
    mg = rng.uniform(1e-5, 0.003, n)
    hco3 = rng.uniform(1e-4, 0.005, n)
    so4 = rng.uniform(1e-5, 0.005, n)
    h2po4 = rng.uniform(1e-7, 1e-4, n)
    f = rng.uniform(1e-7, 1e-4, n)
    cl = na + k + 2 * ca + 2 * mg - hco3 - 2 * so4 - h2po4 - f
    cl = np.maximum(cl, 1e-6)
    return {
        "Na+": na,
        "K+": k,
        "Ca^2+": ca,
        "Mg^2+": mg,
        "Cl-": cl,
        "HCO3-": hco3,
        "SO4^2-": so4,
        "H2PO4-": h2po4,
        "F-": f,
    }


def _previous_solver():
    """Swap the speciation layer's solver for the reference copy of the previous one; returns undo."""
    import importlib.util
    import sys
    from pathlib import Path

    import activity.speciation.api as api

    path = Path(ROOT) / "tests" / "speciation" / "_reference_solver.py"
    spec = importlib.util.spec_from_file_location("_reference_solver", path)
    ref = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = ref  # dataclasses look their module up
    spec.loader.exec_module(ref)
    saved = (api.solve_blocks, api.System)

    def use(previous: bool) -> None:
        api.solve_blocks, api.System = (ref.solve_blocks, ref.System) if previous else saved

    return use


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="only 10³ and 10⁴ rows")
    ap.add_argument("--no-reference", action="store_true", help="skip the timing of the previous solver")
    args = ap.parse_args()
    warnings.simplefilter("ignore", act.ActivityWarning)
    rng = np.random.default_rng(7)
    sizes = [1000, 10_000] if args.quick else [1000, 10_000, 100_000]
    loop_rows = 50
    comp1 = composition(loop_rows, rng)
    rows = [act.Solution({k: float(v[i]) for k, v in comp1.items()}, neutrality="ignore") for i in range(loop_rows)]
    t_loop, _ = best_of(lambda: [speciate(s) for s in rows], repeat=2)
    per_row = t_loop / loop_rows
    use_previous = None if args.no_reference else _previous_solver()
    print("10-component carbonate-sulfate-phosphate matrix, Davies, charge balance on H+, 25 °C")
    print(f"per-row loop over speciate(): {1 / per_row:,.0f} rows/s ({loop_rows} rows)")
    print(
        f"{'rows':>8s} {'rows/s':>12s} {'x per-row loop':>15s} {'x previous':>11s} {'peak MB':>8s} "
        f"{'mean iter':>10s} {'max iter':>9s}"
    )
    for n in sizes:
        sol = act.Solution(composition(n, rng), neutrality="ignore")
        res = speciate(sol)
        if use_previous is None:
            t, _ = best_of(lambda sol=sol: speciate(sol), repeat=3 if n < 100_000 else 2)
            ratio = "-"
        else:

            def previous(sol=sol):
                use_previous(True)
                try:
                    speciate(sol)
                finally:
                    use_previous(False)

            times = interleaved(
                {"now": lambda sol=sol: speciate(sol), "previous": previous},
                repeat=3 if n < 100_000 else 2,
                warmup=0,
            )
            t = times["now"]
            ratio = f"{times['previous'] / t:11.1f}"
        tracemalloc.start()
        speciate(sol)
        peak = tracemalloc.get_traced_memory()[1] / 1e6
        tracemalloc.stop()
        print(
            f"{n:8d} {n / t:12,.0f} {per_row * n / t:15.0f} {ratio:>11s} {peak:8.0f} "
            f"{float(np.mean(res.iterations)):10.2f} {int(np.max(res.iterations)):9d}"
        )


if __name__ == "__main__":
    main()
