"""Speed and memory of activity.uncertainty; prints figures, asserts nothing.

Run from the repository root::

    python benchmarks/bench_uncertainty.py

Model: the potential of a sodium-responsive electrode in a NaCl solution,
E = E0 + S(T)·log10(γ(Na+)·m), with γ from the Davies model and the Nernst
slope S(T) = R T ln10 / F. Uncertain inputs: E0 (normal), the molality m
(normal), the temperature T (rectangular). Demo values.

Figures:
1. one GUM evaluation (one batched call of 13 rows), seconds;
2. 10⁶ Monte Carlo trials, seconds (target < 1.5 s on a 2-core machine), and
   the ratio to one GUM evaluation;
3. the engine alone (f = a sum) for 10⁶ trials, to separate the cost of the
   propagation machinery from that of the chemistry;
4. peak memory of 10⁷ trials, measured in a fresh subprocess (ru_maxrss of the
   whole process, and tracemalloc's peak of the allocations made by the run);
   target < 300 MB.
"""

from __future__ import annotations

import os
import resource
import subprocess
import sys
import time

import numpy as np  # noqa: E402
from _common import best_of  # also puts this checkout on sys.path

import activity as act  # noqa: E402
from activity.uncertainty import Normal, Rectangular, propagate  # noqa: E402

INPUTS = {
    "E0": Normal(0.3105, 0.0004),  # V, demo value
    "m": Normal(0.0500, 0.0003),  # mol/kg, demo value
    "T": Rectangular(298.15, 0.3),  # K, demo value
}


def build_model():
    """Return (f, label): the potential through the package's Davies model and Nernst slope."""
    davies = act.get_model("davies")

    def f(E0, m, T):
        sol = act.Solution({"Na+": m, "Cl-": m}, T=T)
        gamma = davies.activity_coefficients(sol)["Na+"]
        return E0 + act.nernst_slope(T) * np.log10(gamma * m)

    return f, "package API: act.Solution + get_model('davies') + act.nernst_slope"


def memory_child(trials):
    """Run in a subprocess: 10⁷ trials, print peak memory figures."""
    import tracemalloc

    f, label = build_model()
    f(0.31, np.array([0.05]), np.array([298.15]))  # warm imports and caches
    baseline = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    tracemalloc.start()
    start = time.perf_counter()
    result = propagate(f, INPUTS, "monte-carlo", trials=trials, seed=1)
    low, high = result.coverage_interval()
    elapsed = time.perf_counter() - start
    _, traced_peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"  model: {label}")
    print(
        f"  {trials:.0e} trials: {elapsed:.2f} s, u = {result.standard_uncertainty:.4g} V, "
        f"95 % interval [{low:.6f}, {high:.6f}] V"
    )
    print(f"  peak RSS of the whole process: {peak:.0f} MB (after imports, before the run: {baseline:.0f} MB)")
    print(f"  tracemalloc peak of the run's allocations: {traced_peak / 2**20:.0f} MB")


def main():
    f, label = build_model()
    print(f"model: {label}")
    f(0.31, np.array([0.05]), np.array([298.15]))  # warm imports and caches

    gum_time, gum = best_of(lambda: propagate(f, INPUTS), 20)
    print(f"GUM, one evaluation (13-row batch): {gum_time * 1e3:.2f} ms; u = {gum.standard_uncertainty:.4g} V")

    mc_time, mc = best_of(lambda: propagate(f, INPUTS, "monte-carlo", trials=1_000_000, seed=1), 3)
    print(f"Monte Carlo, 1e6 trials: {mc_time:.3f} s (best of 3; target < 1.5 s); u = {mc.standard_uncertainty:.4g} V")
    print(f"  ratio Monte Carlo 1e6 / one GUM evaluation: {mc_time / gum_time:.0f}")

    def plain(E0, m, T):
        return E0 + m + T

    engine_time, _ = best_of(lambda: propagate(plain, INPUTS, "monte-carlo", trials=1_000_000, seed=1), 3)
    print(
        f"engine alone (f = sum), 1e6 trials: {engine_time:.3f} s "
        f"({100 * engine_time / mc_time:.0f} % of the Davies + Nernst run)"
    )

    adaptive_time, adaptive = best_of(lambda: propagate(f, INPUTS, "monte-carlo", seed=1), 1)
    print(
        f"adaptive Monte Carlo (2 significant digits): {adaptive.trials} trials, "
        f"{adaptive_time:.3f} s, delta = {adaptive.tolerance:.2g} V"
    )

    print("memory, 1e7 trials in a fresh process:")
    sys.stdout.flush()
    subprocess.run([sys.executable, os.path.abspath(__file__), "--memory-child", "10000000"], check=True)


if __name__ == "__main__":
    if len(sys.argv) == 3 and sys.argv[1] == "--memory-child":
        memory_child(int(sys.argv[2]))
    else:
        main()
