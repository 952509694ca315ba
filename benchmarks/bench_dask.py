"""Beyond one process: activity.coefficients.parallel on dask (prints figures; asserts nothing).

Run::

    python benchmarks/bench_dask.py            # 10⁷ Pitzer rows, 10⁸-row Davies grid
    python benchmarks/bench_dask.py --quick    # 10⁶ and 10⁷

1. Pitzer, 8-ion seawater compositions generated lazily in chunks, reduced to the mean
   ln γ of every species (nothing of size N is gathered): the same dask graph computed by
   one process (the synchronous scheduler) and by a LocalCluster of two worker processes;
   the ratio of the two wall times is the speed-up (target ≥ 1.7 on 2 cores; on a shared
   machine the figure shows the cores actually free).
2. Davies on a 10⁴ × 10⁴ grid (NaCl molality × temperature, 10⁸ compositions) reduced
   chunk by chunk to min, max and mean of γ±, in a fresh process whose peak resident
   memory is printed (target < 1 GB).

Requires the optional extra: ``pip install 'activity[dask]'``.
"""

from __future__ import annotations

import argparse
import os
import resource
import subprocess
import sys
import time
import warnings

# One BLAS/OpenMP thread per process, set before numpy loads (the worker processes inherit
# the environment): the baseline is then one core, and two workers on two cores do not
# each start a second BLAS thread (Solution's weighted sums are a matrix product).
for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")
# The workers' sampling profiler (a thread that takes the GIL every 10 ms, for the dashboard,
# which is off here) measured 1.15x more worker CPU per task on this graph; off, as for any
# throughput run.
os.environ.setdefault("DASK_DISTRIBUTED__WORKER__PROFILE__ENABLED", "False")

from _common import ROOT  # noqa: E402, F401  (puts this checkout on sys.path)

SEAWATER = {
    "Na+": 0.486,
    "K+": 0.0106,
    "Mg^2+": 0.0547,
    "Ca^2+": 0.0107,
    "Cl-": 0.566,
    "SO4^2-": 0.0293,
    "HCO3-": 0.00178,
    "Br-": 0.00087,
}


def pitzer_graph(n, chunk):
    import dask.array as da

    from activity.coefficients.parallel import activity_coefficients

    k = da.random.default_rng(1).uniform(0.2, 2.0, n, chunks=chunk)  # a scale factor per row
    g = activity_coefficients({s: v * k for s, v in SEAWATER.items()}, "pitzer", output="log10_gamma")
    return [g[s].mean() for s in SEAWATER]


def run_pitzer(n, chunk):
    import dask
    import distributed

    # dask's nanny starts workers with MALLOC_TRIM_THRESHOLD_=65536, which also freezes
    # glibc's mmap threshold at 128 kB: every temporary of a block is then a fresh mapping
    # with page faults (measured: one Pitzer block of 5·10⁴ rows 2.6x slower). Values set in
    # the environment take precedence over dask's; large thresholds keep temporaries on the
    # heap, as in an ordinary process.
    os.environ.setdefault("MALLOC_TRIM_THRESHOLD_", str(256 << 20))
    os.environ.setdefault("MALLOC_MMAP_THRESHOLD_", str(64 << 20))

    warnings.simplefilter("ignore")
    graph = pitzer_graph(n, chunk)
    dask.compute(*pitzer_graph(chunk, chunk), scheduler="sync")  # warm: imports, parameters, J table

    def one_process():
        start, cpu = time.perf_counter(), time.process_time()
        out = dask.compute(*graph, scheduler="sync")
        return out, time.perf_counter() - start, time.process_time() - cpu

    one, t_a, cpu_one = one_process()
    load = os.getloadavg()[0]
    with (
        distributed.LocalCluster(
            n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None, silence_logs=40
        ) as cluster,
        distributed.Client(cluster) as client,
    ):
        client.run(lambda: __import__("activity.coefficients.pitzer"))  # warm the workers' imports
        dask.compute(*pitzer_graph(chunk, chunk))  # and the model's parameter set in each worker
        before = client.run(time.process_time)
        start = time.perf_counter()
        two = dask.compute(*graph)
        t_two = time.perf_counter() - start
        after = client.run(time.process_time)
    _, t_b, _ = one_process()  # the baseline again after the cluster: the load drifts
    t_one = 0.5 * (t_a + t_b)
    cpu_two = sum(after[w] - before[w] for w in after)
    same = max(abs(a - b) for a, b in zip(one, two))
    print(f"Pitzer, {n:.0e} rows in chunks of {chunk:.0e}, mean log10 γ of 8 species", end="")
    print(f" (load average {load:.1f}):")
    print(f"  one process (sync scheduler)          {t_one:8.2f} s   {n / t_one:12,.0f} rows/s", end="")
    print(f"  (runs {t_a:.2f}, {t_b:.2f} s)")
    print(f"  LocalCluster, 2 worker processes       {t_two:8.2f} s   {n / t_two:12,.0f} rows/s")
    print(f"  speed-up {t_one / t_two:.2f}x (target ≥ 1.7 on 2 free cores); results differ by {same:.1e}")
    print(
        f"  CPU: one process {cpu_one:.1f} s; the workers {cpu_two:.1f} s in all = "
        f"{cpu_two / t_two:.2f} cores "
        "busy on average (2 when both cores are free)"
    )


def davies_child(side, chunk):
    import dask.array as da
    import numpy as np

    from activity.coefficients.parallel import activity_coefficients

    warnings.simplefilter("ignore")
    m = da.linspace(1e-4, 0.5, side, chunks=chunk)[:, None]
    T = da.linspace(273.15, 373.15, side, chunks=chunk)[None, :]
    before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    start = time.perf_counter()
    g = activity_coefficients({"Na+": m, "Cl-": m}, "davies", T=T)
    pm = da.sqrt(g["Na+"] * g["Cl-"])
    lo, hi, mean = da.compute(pm.min(), pm.max(), pm.mean(), scheduler="threads", num_workers=2)
    elapsed = time.perf_counter() - start
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    n = side * side
    print(f"Davies on a {side} x {side} grid ({n:.0e} compositions), chunks {chunk} x {chunk}, 2 threads:")
    print(f"  γ± min {lo:.6f}, max {hi:.6f}, mean {mean:.6f}; {elapsed:.1f} s = {n / elapsed:,.0f} rows/s")
    print(f"  peak RSS of the process {peak:.0f} MB (after imports {before:.0f} MB; target < 1024 MB;")
    print(f"  the grid as float64 would take {n * 8 / 1e6:,.0f} MB per array)")
    del np


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--rows", type=int, help="Pitzer rows (default 10⁷, 10⁶ with --quick)")
    ap.add_argument("--pitzer-only", action="store_true", help="skip the Davies grid")
    ap.add_argument("--blocks", type=int, default=20, help="Pitzer rows split into this many blocks")
    ap.add_argument("--davies-child", nargs=2, type=int, help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.davies_child:
        davies_child(*args.davies_child)
        return
    n = args.rows or (1_000_000 if args.quick else 10_000_000)
    run_pitzer(n, n // args.blocks)
    if args.pitzer_only:
        return
    side = 3163 if args.quick else 10_000
    sys.stdout.flush()
    subprocess.run([sys.executable, __file__, "--davies-child", str(side), "1000"], check=True)


if __name__ == "__main__":
    main()
