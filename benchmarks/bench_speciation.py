"""Speed of the speciation solver: rows/s, ratio to a per-row loop, peak memory.

Run:  python benchmarks/bench_speciation.py [--quick]   (one BLAS thread, like bench_pitzer.py)

A 10-component carbonate–sulfate–phosphate–fluoride matrix (H+, Na+, K+, Ca2+, Mg2+,
Cl-, CO3^2-, SO4^2-, PO4^3-, F-; 30 species with the formed ones) with Davies, charge
balance on H+, random natural-water-like compositions. Prints figures only; nothing here
asserts on time. Targets (issue 9): ≥ 5·10⁴ rows/s at 10⁵ rows, ≥ 100× the per-row loop,
peak memory at 10⁵ rows under 500 MB.
"""

from __future__ import annotations

import argparse
import os
import tracemalloc
import warnings

for _v in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_v, "1")  # one core, before numpy loads its BLAS

import numpy as np  # noqa: E402
from _common import best_of  # noqa: E402  (also puts this checkout on sys.path)

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


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="only 10³ and 10⁴ rows")
    args = ap.parse_args()
    warnings.simplefilter("ignore", act.ActivityWarning)
    rng = np.random.default_rng(7)
    sizes = [1000, 10_000] if args.quick else [1000, 10_000, 100_000]
    loop_rows = 50
    comp1 = composition(loop_rows, rng)
    rows = [act.Solution({k: float(v[i]) for k, v in comp1.items()}, neutrality="ignore") for i in range(loop_rows)]
    t_loop, _ = best_of(lambda: [speciate(s) for s in rows], repeat=2)
    per_row = t_loop / loop_rows
    print("10-component carbonate-sulfate-phosphate matrix, Davies, charge balance on H+, 25 °C")
    print(f"per-row loop over speciate(): {1 / per_row:,.0f} rows/s ({loop_rows} rows)")
    print(f"{'rows':>8s} {'rows/s':>12s} {'x per-row loop':>15s} {'peak MB':>8s} {'max iter':>9s}")
    for n in sizes:
        sol = act.Solution(composition(n, rng), neutrality="ignore")
        t, res = best_of(lambda sol=sol: speciate(sol), repeat=3 if n < 100_000 else 2)
        tracemalloc.start()
        speciate(sol)
        peak = tracemalloc.get_traced_memory()[1] / 1e6
        tracemalloc.stop()
        print(f"{n:8d} {n / t:12,.0f} {per_row * n / t:15.0f} {peak:8.0f} {int(np.max(res.iterations)):9d}")


if __name__ == "__main__":
    main()
