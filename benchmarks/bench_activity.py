"""Speed of the activity models: rows/s, ratio to a per-row loop, ratio to bare numpy.

Run:  python benchmarks/bench_activity.py [--quick]

Prints figures only; nothing here asserts on time. Targets (issue: the activity layer):
Davies and extended Debye–Hückel on 10⁶ rows within 2× of a bare fused numpy expression of
the same formula, at least 50× faster per row than a per-row loop over the same API, and
peak memory for 10⁶ rows under 500 MB.
"""

from __future__ import annotations

import argparse
import tracemalloc
import warnings

import numpy as np
from _common import best_of

import activity as act

SPECIES = ("Na+", "K+", "Ca^2+", "Cl-")
Z = np.array([1, 1, 2, -1], dtype=float)


def composition(n: int, rng: np.random.Generator) -> dict[str, np.ndarray]:
    na = rng.uniform(1e-4, 0.05, n)
    k = rng.uniform(1e-4, 0.05, n)
    ca = rng.uniform(1e-5, 0.02, n)
    return {"Na+": na, "K+": k, "Ca^2+": ca, "Cl-": na + k + 2 * ca}


def bare_davies(m: np.ndarray, A: float) -> np.ndarray:
    I = 0.5 * (Z * Z) @ m
    s = np.sqrt(I)
    f = A * (s / (1.0 + s) - 0.3 * I)
    return 10.0 ** (-(Z * Z)[:, None] * f)


def bare_extended(m: np.ndarray, A: float, B: float, size: np.ndarray) -> np.ndarray:
    I = 0.5 * (Z * Z) @ m
    s = np.sqrt(I)
    return 10.0 ** (-A * (Z * Z)[:, None] * s / (1.0 + B * size[:, None] * s))


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="10⁵ instead of 10⁶ rows for the largest size")
    args = ap.parse_args()
    rng = np.random.default_rng(1)
    sizes = [1, 1000, 100_000 if args.quick else 1_000_000]
    T = 298.15
    A, B = act.debye_huckel_A(T), act.debye_huckel_B(T)
    kielland = np.array([4.5, 3.0, 6.0, 3.0])
    warnings.simplefilter("ignore", act.ActivityWarning)
    print(f"4-ion solution {SPECIES}, T = {T} K; times are best of several runs")
    print(f"{'model':24s} {'rows':>9s} {'rows/s':>12s} {'x per-row loop':>15s} {'x bare numpy':>13s} {'peak MB':>8s}")
    for name in act.available_models():
        try:
            model = act.get_model(name)
            model.activity_coefficients(act.Solution({k: v[0] for k, v in composition(1, rng).items()}))
        except act.ActivityError as exc:
            print(f"{name:24s} skipped: {exc}")
            continue
        # per-row loop over the public API (Solution + model call per row)
        comp_loop = composition(300, rng)
        rows = [{k: float(v[i]) for k, v in comp_loop.items()} for i in range(300)]
        t_loop = best_of(lambda: [model.activity_coefficients(act.Solution(r, T=T)) for r in rows], 3)[0] / 300
        for n in sizes:
            comp = composition(n, rng)
            m = np.stack([comp[s] for s in SPECIES])
            repeat = 3 if n >= 100_000 else 20

            def api():
                return model.activity_coefficients(act.Solution(comp, T=T)).gamma

            t = best_of(api, repeat)[0]
            bare = ""
            if name == "davies":
                bare = f"{t / best_of(lambda: bare_davies(m, A), repeat)[0]:13.2f}"
            elif name == "extended-debye-huckel":
                bare = f"{t / best_of(lambda: bare_extended(m, A, B, kielland), repeat)[0]:13.2f}"
            peak = ""
            if n >= 100_000:
                tracemalloc.start()
                api()
                peak = f"{tracemalloc.get_traced_memory()[1] / 1e6:8.1f}"
                tracemalloc.stop()
            print(f"{name:24s} {n:9d} {n / t:12.3e} {t_loop * n / t:15.1f} {bare:>13s} {peak:>8s}")
    print("x per-row loop: time of a Python loop over single-row API calls / time of one batched call")
    print("x bare numpy: time of the batched API call (Solution + model) / time of a fused numpy expression")


if __name__ == "__main__":
    main()
