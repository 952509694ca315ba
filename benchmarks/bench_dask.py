"""Beyond one process: activity.coefficients.parallel on dask (prints figures; asserts nothing).

Run::

    python benchmarks/bench_dask.py            # 10⁷ Pitzer rows, 10⁸-row Davies grid
    python benchmarks/bench_dask.py --quick    # 10⁶ and 10⁷

1. Pitzer, 8-ion seawater compositions generated lazily in chunks, reduced to the mean
   log10 γ of every species (nothing of size N is gathered; ``stacked=True``, so the
   reduction is fused into the task that evaluates the block): the same dask graph computed
   by one process (the synchronous scheduler, in a process spawned with the workers'
   environment) and by a LocalCluster of two worker processes; the ratio of the two wall
   times is the speed-up (target ≥ 1.7 on 2 cores; on a shared machine the figure shows the
   cores actually free). Beside it the floor, with no dask at all: the same blocks (same
   rows, same reduction) in one plain process and split over two — the speed-up this
   machine allows two processes, which dask can at best reach. Once more the graph of the
   per-species dict (each species reduced on its own, the graph before ``stacked``), for
   comparison. Rows are medians of ``--rounds`` interleaved rounds; every process is
   started and warmed before any timing.
2. Davies on a 10⁴ × 10⁴ grid (NaCl molality × temperature, 10⁸ compositions) reduced
   chunk by chunk to min, max and mean of γ±, in a fresh process whose peak resident
   memory is printed (target < 1 GB).

Requires the optional extra: ``pip install 'activity[dask]'``.
"""

from __future__ import annotations

import argparse
import multiprocessing
import os
import resource
import statistics
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
# Periodic callbacks of an idle LocalCluster (2 workers; the scheduler and both nannies live in
# this process): the 20 ms event-loop tick, the 0.5 s system monitor and the 0.1 s memory
# monitor cost 0.12 CPU-seconds per second in all, measured (2 workers 0.053, this process
# 0.068); with the tick at 1 s, the system monitor at 5 s and the memory monitor at 1 s, 0.023.
# Over a run of a few seconds on two busy cores that is about 5 % of the wall time. None of
# them does work for this graph (no dashboard; memory limits still apply, checked each second).
for _var, _value in (
    ("DASK_DISTRIBUTED__ADMIN__TICK__INTERVAL", "1s"),
    ("DASK_DISTRIBUTED__ADMIN__SYSTEM_MONITOR__INTERVAL", "5s"),
    ("DASK_DISTRIBUTED__WORKER__MEMORY__MONITOR_INTERVAL", "1s"),
):
    os.environ.setdefault(_var, _value)

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


def pitzer_graph(n, chunk, stacked=True):
    """The mean log10 γ of every species over ``n`` rows; ``stacked``: one reduction per block.

    stacked=False is the graph of the per-species dict: each species reduced on its own,
    eight more tasks per block, each reading the block's stacked result.
    """
    import dask.array as da

    from activity.coefficients.parallel import activity_coefficients

    k = da.random.default_rng(1).uniform(0.2, 2.0, n, chunks=chunk)  # a scale factor per row
    comp = {s: v * k for s, v in SEAWATER.items()}
    g = activity_coefficients(comp, "pitzer", output="log10_gamma", stacked=stacked)
    return [g.mean(axis=1)] if stacked else [g[s].mean() for s in SEAWATER]


def _warm(chunk, variants):
    """What warms a process before any timing: one full block of each graph, synchronously.

    Imports dask.array and its random and reduction modules, reads the parameter set,
    builds the J table and touches a block's worth of memory. A worker that has not run
    it imports dask.array inside its first task: measured on this machine under load, the
    second worker of the LocalCluster then started its first block 3 to 4 s late.
    """
    import dask

    for stacked in variants:
        dask.compute(*pitzer_graph(chunk, chunk, stacked), scheduler="sync")


def _block_sums(n_blocks, chunk, blocks):
    """Plain numpy, no dask: the rows of ``pitzer_graph`` block by block, summed per species.

    The scale factors of block i come from the i-th child of SeedSequence(1), which is how
    dask's ``default_rng(1)`` seeds its blocks, so these are the same rows (the means are
    printed against dask's).
    """
    import numpy as np

    from activity.coefficients.parallel import activity_coefficients

    seeds = np.random.SeedSequence(1).spawn(n_blocks)
    total = np.zeros(len(SEAWATER))
    for i in blocks:
        k = np.random.Generator(np.random.PCG64(seeds[i])).uniform(0.2, 2.0, chunk)
        g = activity_coefficients({s: v * k for s, v in SEAWATER.items()}, "pitzer", output="log10_gamma", stacked=True)
        total += g.sum(axis=1)
    return total


def _plain_child(conn, n_blocks, chunk, variants):
    """A spawned process: warms up, then runs what it is sent until None.

    A list of blocks: their sums in plain numpy (no dask). A bool ``stacked``: the whole
    dask graph of that kind on the synchronous scheduler — the one-process baseline, in a
    process started like the workers (same environment, no cluster threads beside it).
    """
    warnings.simplefilter("ignore")
    _block_sums(1, chunk, [0])  # warm: imports, the parameter set, the J table, a block's memory
    _warm(chunk, variants)
    conn.send("ready")
    while (job := conn.recv()) is not None:
        start, cpu = time.perf_counter(), time.process_time()
        if isinstance(job, bool):
            import dask
            import numpy as np

            out = np.ravel(np.asarray(dask.compute(*pitzer_graph(n_blocks * chunk, chunk, job), scheduler="sync")))
        else:
            out = _block_sums(n_blocks, chunk, job)
        conn.send((out, time.perf_counter() - start, time.process_time() - cpu))


class PlainProcesses:
    """Two started, warmed processes (spawned, no dask): the floor of what any scheduler can do."""

    def __init__(self, n_blocks, chunk, variants):
        ctx = multiprocessing.get_context("spawn")
        self.n_blocks = n_blocks
        self.pipes, self.procs = [], []
        for _ in range(2):
            parent, child = ctx.Pipe()
            proc = ctx.Process(target=_plain_child, args=(child, n_blocks, chunk, variants), daemon=True)
            proc.start()
            self.pipes.append(parent)
            self.procs.append(proc)
        for parent in self.pipes:
            parent.recv()  # started and warm, outside any timing

    def run(self, n_procs):
        """All blocks over ``n_procs`` processes (block i to process i mod n).

        Returns the sums, the wall time, the CPU time of the processes and their busy time
        (each process's own wall time from its first block to its last, summed).
        """
        pipes = self.pipes[:n_procs]
        start = time.perf_counter()
        for p, parent in enumerate(pipes):
            parent.send(list(range(p, self.n_blocks, n_procs)))
        got = [parent.recv() for parent in pipes]
        wall = time.perf_counter() - start
        return sum(g[0] for g in got), wall, sum(g[2] for g in got), sum(g[1] for g in got)

    def one_dask(self, stacked):
        """The dask graph in the first process, synchronous scheduler: means, wall, CPU."""
        self.pipes[0].send(stacked)
        return self.pipes[0].recv()

    def close(self):
        for parent, proc in zip(self.pipes, self.procs):
            parent.send(None)
            proc.join()


def run_pitzer(n, chunk, rounds=2, per_species=True):
    import dask
    import distributed
    import numpy as np

    # dask's nanny starts workers with MALLOC_TRIM_THRESHOLD_=65536, which also freezes
    # glibc's mmap threshold at 128 kB: every temporary of a block is then a fresh mapping
    # with page faults (measured: one Pitzer block of 5·10⁴ rows 2.6x slower). Values set in
    # the environment take precedence over dask's; large thresholds keep temporaries on the
    # heap, as in an ordinary process. The plain processes below inherit the same values.
    os.environ.setdefault("MALLOC_TRIM_THRESHOLD_", str(256 << 20))
    os.environ.setdefault("MALLOC_MMAP_THRESHOLD_", str(64 << 20))

    warnings.simplefilter("ignore")
    n_blocks = n // chunk
    graphs = {True: pitzer_graph(n, chunk)}
    if per_species:
        graphs[False] = pitzer_graph(n, chunk, stacked=False)

    def timed(func):
        start, cpu = time.perf_counter(), time.process_time()
        out = func()
        return np.ravel(np.asarray(out, dtype=float)), time.perf_counter() - start, time.process_time() - cpu

    rows = {}  # name → list of (wall, cpu of the workers, cpu of this process, busy time of the workers)
    results = {}

    def record(name, out, wall, cpu, main_cpu=0.0, busy=None):
        rows.setdefault(name, []).append((wall, cpu, main_cpu, wall if busy is None else busy))
        results[name] = out

    load = [os.getloadavg()[0]]
    plain = PlainProcesses(n_blocks, chunk, list(graphs))
    with (
        distributed.LocalCluster(
            n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None, silence_logs=40
        ) as cluster,
        distributed.Client(cluster) as client,
    ):
        for w in client.scheduler_info()["workers"]:  # each worker in its task thread, as this process
            client.submit(_warm, chunk, list(graphs), workers=[w], allow_other_workers=False, pure=False).result()
        for stacked in graphs:  # and each graph on the cluster, two blocks per worker (the scheduler learns)
            dask.compute(*pitzer_graph(4 * chunk, chunk, stacked))

        def on_cluster(graph):
            before = client.run(time.process_time)
            with distributed.get_task_stream(client) as stream:
                out, wall, main_cpu = timed(lambda: dask.compute(*graph))
            after = client.run(time.process_time)
            busy = sum(s["stop"] - s["start"] for t in stream.data for s in t["startstops"] if s["action"] == "compute")
            return out, wall, sum(after[w] - before[w] for w in after), main_cpu, busy

        for r in range(rounds):  # interleaved: each round runs every row once
            record("one", *plain.one_dask(True))
            record("cluster", *on_cluster(graphs[True]))
            if per_species and r == 0:
                record("one, per species", *plain.one_dask(False))
                record("cluster, per species", *on_cluster(graphs[False]))
            for n_procs in (1, 2):
                sums, wall, cpu, busy = plain.run(n_procs)
                record(f"plain {n_procs}", sums / n, wall, cpu, busy=busy)
            load.append(os.getloadavg()[0])
    plain.close()

    def med(name, i=0):
        return statistics.median([row[i] for row in rows[name]])

    def line(label, name, cores_note=""):
        wall = med(name)
        walls = ", ".join(f"{row[0]:.2f}" for row in rows[name])
        print(f"  {label:44s} {wall:7.2f} s  {n / wall:11,.0f} rows/s  CPU {med(name, 1):6.2f} s", end="")
        print(f"  (runs {walls}){cores_note}")

    print(f"Pitzer, {n:.0e} rows in {n_blocks} blocks of {chunk:.0e}, mean log10 γ of 8 species; medians of", end="")
    print(f" {rounds} interleaved rounds (load average {min(load):.1f}–{max(load):.1f}); all processes were started")
    print("  and warmed (imports, parameter set, one full block in each) before any timing, one BLAS thread each;")
    print("  the one-process baseline runs in a process spawned like the workers, with no cluster threads in it:")
    line("one spawned process, dask sync scheduler", "one")
    line("LocalCluster, 2 workers, stacked reduction", "cluster", f"  + {med('cluster', 2):.2f} s CPU here")
    line("no dask: one plain process", "plain 1")
    line("no dask: two plain processes", "plain 2")
    speed = med("one") / med("cluster")
    floor = med("plain 1") / med("plain 2")
    print(f"  speed-up on the cluster {speed:.2f}x; two plain processes {floor:.2f}x (the ceiling here);", end="")
    print(f" dask reaches {speed / floor:.0%} of it (target ≥ 1.7x)")
    print(
        f"  CPU for the same rows: cluster workers / one process {med('cluster', 1) / med('one', 1):.2f}, "
        f"two plain / one plain {med('plain 2', 1) / med('plain 1', 1):.2f}"
    )
    # speed-up = 2 x (busy / (2 x wall)) / (busy / one-process time): idle cores or slower blocks
    print("  where the time goes (busy = the workers' summed task time, or the plain processes' own):")
    for label, two, one in (("cluster", "cluster", "one"), ("two plain", "plain 2", "plain 1")):
        busy = med(two, 3)
        print(
            f"    {label:9s}: busy {busy / (2 * med(two)):.0%} of 2 cores x wall; the blocks took "
            f"{busy / med(one):.2f}x their time in one process"
        )
    same = np.max(np.abs(results["cluster"] - results["one"]))
    plain_diff = np.max(np.abs(results["plain 2"] - results["one"]))
    print(f"  results: cluster vs one process differ by {same:.1e}; plain sums vs dask means {plain_diff:.1e}")
    if per_species:
        one, two = rows["one, per species"][0], rows["cluster, per species"][0]
        print("  the per-species dict reduced species by species (the graph before stacked=True), one round:")
        print(
            f"    one process {one[0]:.2f} s CPU {one[1]:.2f} s; cluster {two[0]:.2f} s, workers CPU {two[1]:.2f} s",
            end="",
        )
        print(f" + {two[2]:.2f} s here; speed-up {one[0] / two[0]:.2f}x", end="")
        diff = np.max(np.abs(results["cluster, per species"] - results["one"]))
        print(f"; means differ from the stacked ones by {diff:.1e}")


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
    # 10⁶ rows per block: 64 MB of stacked log10 γ and ~0.25 s of work per task, as dask's
    # array best practices ask (chunks of about 100 MB, tasks well above the scheduler's
    # overhead); 5·10⁵-row blocks (20 tasks) gave 1.62–1.65x here, 10⁶-row blocks 1.74x
    ap.add_argument(
        "--blocks", type=int, help="Pitzer rows split into this many blocks (default: 10⁶ rows per block, at least 4)"
    )
    ap.add_argument("--rounds", type=int, default=2, help="interleaved rounds of the Pitzer rows (medians)")
    ap.add_argument("--no-per-species", action="store_true", help="skip the per-species dict graph")
    ap.add_argument("--davies-child", nargs=2, type=int, help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.davies_child:
        davies_child(*args.davies_child)
        return
    n = args.rows or (1_000_000 if args.quick else 10_000_000)
    blocks = args.blocks or max(4, n // 1_000_000)  # at least two per worker
    run_pitzer(n, n // blocks, args.rounds, not args.no_per_species)
    if args.pitzer_only:
        return
    side = 3163 if args.quick else 10_000
    sys.stdout.flush()
    subprocess.run([sys.executable, __file__, "--davies-child", str(side), "1000"], check=True)


if __name__ == "__main__":
    main()
