"""The speed-and-scale table (issue 13): each row a ratio or a rate measured in one run.

Run::

    python benchmarks/bench_speed.py                       # this checkout
    python benchmarks/bench_speed.py --before /tmp/old     # old code beside it, same run
    python benchmarks/bench_speed.py --rows pitzer-one-T,ise --quick

Each row runs in a fresh child process (so import caches, bindings and memory peaks of
one row do not leak into the next); with ``--before DIR`` the child for the old checkout
and the child for this one run one after the other for every row, ``--rounds`` times, and
the table shows the median of the rounds. Inside a child, the candidate and its bare-numpy
reference are timed in turn (a, b, a, b, …) and the ratio of their medians is printed: the
machine is shared, so ratios, not times. Nothing here asserts; targets are printed beside
the figures.

Bare-numpy references are written here, once, and are the same for both checkouts:

* ``davies``/``extended-dh``: the fused expression of the formula from the molality array
  (ionic strength by one product, then 10**(−z² A f(I)));
* ``inverse``: the same secant on ln m (same start points, step caps and stopping rule)
  with the formula written out;
* ``monte-carlo``: the same draws in the same chunks, the formula written out (A(T) from
  ``activity.water``, a numpy function of T), running moments, a float32 store, one sort.
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

ROWS = {
    "davies": ("Davies incl. building the Solution / bare fused numpy, 10⁶ rows", "x", "≤ 1.5"),
    "extended-dh": ("extended DH incl. building the Solution / bare fused numpy, 10⁶ rows", "x", "≤ 1.5"),
    "pitzer-one-T": ("Pitzer 8-ion seawater, one T, γ+φ+checks, 10⁶ rows, auto", "rows/s", "≥ 2.5e6"),
    "pitzer-one-T-numpy": ("  the same, numpy kernel", "rows/s", ""),
    "pitzer-one-T-compiled": ("  the same, compiled kernel", "rows/s", ""),
    "pitzer-one-T-x": ("  speed compiled / numpy kernel, one child, interleaved", "x", ""),
    "pitzer-T-per-row": ("Pitzer 8-ion seawater, T/row, γ+φ+checks, 10⁶ rows, auto", "rows/s", "≥ 1e6"),
    "pitzer-T-per-row-numpy": ("  the same, numpy kernel", "rows/s", ""),
    "pitzer-T-per-row-compiled": ("  the same, compiled kernel", "rows/s", ""),
    "pitzer-T-per-row-x": ("  speed compiled / numpy kernel, one child, interleaved", "x", ""),
    "pitzer-compile": ("  compiled: 1st call, numba import + JIT, empty cache", "s", ""),
    "pitzer-compile-cached": ("  compiled: 1st call, numba import + on-disk cache", "s", ""),
    "pitzer-memory": ("Pitzer peak memory above output (γ, φ, in_range), auto", "MB", "≤ 150"),
    "pitzer-memory-numpy": ("  the same, numpy kernel", "MB", "≤ 150"),
    "pitzer-memory-compiled": ("  the same, compiled kernel", "MB", "≤ 150"),
    "pitzer-checks": ("  of which the per-interaction range checks alone (see report)", "MB", ""),
    "ise": ("ISE potential / the model alone, 10⁶ rows", "x", "≤ 1.3"),
    "ise-floor": ("  floor: the model + one np.log per row / the model alone", "x", ""),
    "inverse": ("inverse (reading → molality) / bare numpy secant, 10⁵ rows", "x", "≤ 1.5"),
    "monte-carlo": ("10⁶ Monte Carlo trials, full chain / bare numpy MC", "x", "≤ 1.2"),
    "gum": ("GUM for one composition, with the model spread", "ms", "≤ 5"),
    "cli": ("`activity solution Na+=0.1 Cl-=0.1`, one composition, wall", "s", "< 0.2"),
    "cli-source": ("  the same from source, recompiled on every start", "s", ""),
    "cli-floor": ("  floor: a python that only imports numpy", "s", ""),
    "cli-python": ("  floor: a python that does nothing", "s", ""),
}


# --------------------------------------------------------------------------- rows (children)
def _davies_comp(n, rng):
    import numpy as np

    na = rng.uniform(1e-4, 0.05, n)
    k = rng.uniform(1e-4, 0.05, n)
    ca = rng.uniform(1e-5, 0.02, n)
    return {"Na+": na, "K+": k, "Ca^2+": ca, "Cl-": na + k + 2 * ca}, np.array([1.0, 1.0, 2.0, -1.0])


def row_dh(name, quick):
    import numpy as np
    from _common import interleaved

    import activity as act

    n = 100_000 if quick else 1_000_000
    comp, z = _davies_comp(n, np.random.default_rng(1))
    species = list(comp)
    T = 298.15
    A, B = float(act.debye_huckel_A(T)), float(act.debye_huckel_B(T))
    z2 = z * z
    size = np.array([4.5, 3.0, 6.0, 3.0])  # Kielland (1937) å, Å: Na+, K+, Ca2+, Cl-

    if name == "davies":
        model = act.get_model("davies")

        def bare():
            m = np.stack([comp[s] for s in species])
            s = np.sqrt(0.5 * z2 @ m)
            return 10.0 ** (-z2[:, None] * (A * (s / (1.0 + s) - 0.3 * s * s)))
    else:
        model = act.get_model("extended-debye-huckel")

        def bare():
            m = np.stack([comp[s] for s in species])
            s = np.sqrt(0.5 * z2 @ m)
            return 10.0 ** (-A * z2[:, None] * s / (1.0 + B * size[:, None] * s))

    def api():
        return model.activity_coefficients(act.Solution(comp, T=T)).gamma

    np.testing.assert_allclose(api(), bare(), rtol=1e-12)  # same formula, same numbers
    t = interleaved({"api": api, "bare": bare}, repeat=5 if quick else 9)
    return t["api"] / t["bare"]


SEAWATER = {  # mol/kg, seawater-like (invented scale factors per row)
    "Na+": 0.486,
    "K+": 0.0106,
    "Mg^2+": 0.0547,
    "Ca^2+": 0.0107,
    "Cl-": 0.566,
    "SO4^2-": 0.0293,
    "HCO3-": 0.00178,
    "Br-": 0.00087,
}


def _seawater(n, T_per_row):
    import numpy as np

    import activity as act

    rng = np.random.default_rng(1)
    k = rng.uniform(0.2, 2.0, n)
    T = rng.uniform(288.15, 308.15, n) if T_per_row else 298.15
    return act.Solution({s: v * k for s, v in SEAWATER.items()}, T=T, neutrality="ignore")


def _pitzer_model(name):
    """The model a Pitzer row measures: the kernel named by the row's suffix (numpy or compiled),
    else the default. A checkout without the ``kernel`` option has the numpy kernel only."""
    import activity as act

    kernel = "compiled" if name.endswith("-compiled") else "numpy" if name.endswith("-numpy") else None
    if kernel is None:
        return act.get_model("pitzer")
    try:
        return act.get_model("pitzer", kernel=kernel)
    except TypeError:
        if kernel == "compiled":
            raise
        return act.get_model("pitzer")


def row_pitzer(name, quick):
    from _common import interleaved

    import activity as act

    n = 100_000 if quick else 1_000_000
    sol = _seawater(n, name.startswith("pitzer-T-per-row"))
    if name.endswith("-x"):  # both kernels in this child, interleaved: the ratio of speeds
        models = {k: act.get_model("pitzer", kernel=k) for k in ("numpy", "compiled")}
    else:
        models = {"run": _pitzer_model(name)}

    def runner(model):
        def run():
            fresh = act.Solution._from_arrays(sol.species, sol.charges, sol.m, sol.T_compact, sol.P_compact)
            r = model.activity_coefficients(fresh, warn=False)
            return r.log10_gamma, r.osmotic_coefficient, r.in_range

        return run

    t = interleaved({k: runner(m) for k, m in models.items()}, repeat=3 if quick else 5)
    return t["numpy"] / t["compiled"] if name.endswith("-x") else n / t["run"]


def row_pitzer_compile(name, quick):
    """Wall time of the first compiled call in a process (numba's import, then compiling or
    loading from the on-disk cache), on 1000 rows. "pitzer-compile" points numba's cache
    at an empty directory; "-cached" first fills one in a child, then measures another."""
    import tempfile

    with tempfile.TemporaryDirectory() as tmp:
        env = dict(os.environ, NUMBA_CACHE_DIR=tmp)
        code = (
            f"import sys, time, warnings; warnings.simplefilter('ignore'); sys.path.insert(0, {str(HERE)!r});"
            "import _common;"
            "import activity as act; from bench_speed import _seawater; s = _seawater(1000, False);"
            "m = act.get_model('pitzer', kernel='compiled'); m.bind(s.species, s.charges);"
            "t = time.perf_counter(); m.activity_coefficients(s, warn=False); print(time.perf_counter() - t)"
        )
        args = dict(env=env, capture_output=True, text=True, check=True, cwd=str(HERE))
        if name.endswith("-cached"):
            subprocess.run([sys.executable, "-c", code], **args)
        out = subprocess.run([sys.executable, "-c", code], **args)
        return float(out.stdout.strip().splitlines()[-1])


def row_pitzer_memory(name, quick):
    import tracemalloc

    import numpy as np

    import activity as act

    n = 100_000 if quick else 1_000_000
    sol = _seawater(n, False)
    model = _pitzer_model(name)
    model.activity_coefficients(sol, warn=False)  # bind, load parameters (and numba, if used)
    fresh = act.Solution._from_arrays(sol.species, sol.charges, sol.m, sol.T_compact, sol.P_compact)
    tracemalloc.start()
    r = model.activity_coefficients(fresh, warn=False)
    out = (r.log10_gamma, r.osmotic_coefficient, r.in_range)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return (peak - sum(np.asarray(a).nbytes for a in out)) / 1e6


def row_pitzer_checks(name, quick):
    """Peak memory of the per-interaction range checks alone: Bound.pair_checks where the
    checkout has it (the lean form, not yet called by the model), else the model's own."""
    import tracemalloc

    import numpy as np

    import activity as act

    n = 100_000 if quick else 1_000_000
    sol = _seawater(n, False)
    model = act.get_model("pitzer")
    bound = model.bind(sol.species, sol.charges)
    I = np.asarray(sol.ionic_strength)
    lean = getattr(bound, "pair_checks", None)
    tracemalloc.start()
    if lean is not None:
        lean(sol.m.reshape(len(sol.species), n), I, sol.T_compact)
    else:
        model._pair_checks(sol, bound)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return peak / 1e6


def row_ise(name, quick):
    import numpy as np
    from _common import interleaved

    import activity as act

    n = 100_000 if quick else 1_000_000
    m = np.random.default_rng(1).uniform(1e-4, 0.1, n)
    model = act.get_model("davies")
    ise = act.IonSelectiveElectrode("K+", E0=0.05, selectivity={"Na+": 0.01})
    sol = act.Solution({"K+": m, "Na+": 0.01, "Cl-": m + 0.01})
    if name == "ise-floor":  # what any potential costs beyond γ: one logarithm per row
        funcs = {
            "ise": lambda: (model.activity_coefficients(sol), np.log(m)),
            "model": lambda: model.activity_coefficients(sol),
        }
    else:
        funcs = {"ise": lambda: ise.potential(sol, model), "model": lambda: model.activity_coefficients(sol)}
    t = interleaved(funcs, repeat=5 if quick else 11)
    return t["ise"] / t["model"]


def _bare_secant(E, bg, A, slope, E0, rtol=1e-10, max_iter=60):
    """Ca²⁺ ISE in NaCl + CaCl2 (counter-ion Cl-), Davies γ, solved for ln m like the package."""
    import numpy as np

    lo, hi = np.log(1e-16), np.log(30.0)

    def f(x):
        m = np.exp(x)
        s = np.sqrt(bg + 3.0 * m)  # I = bg + 3 m
        lg = -4.0 * A * (s / (1.0 + s) - 0.3 * s * s)
        return E0 + slope * (lg + np.log10(m)) - E

    x0 = np.full(E.shape, np.log(1e-3))
    x1 = np.full(E.shape, np.log(1e-2))
    f0, f1 = f(x0), f(x1)
    done = np.zeros(E.shape, bool)
    for _ in range(max_iter):
        df = f1 - f0
        ok = (df != 0) & ~done
        step = np.clip(np.where(ok, -f1 * (x1 - x0) / np.where(ok, df, 1.0), 0.0), -5.0, 5.0)
        x2 = np.clip(x1 + step, lo, hi)
        done |= (np.abs(x2 - x1) <= rtol) & (x2 > lo) & (x2 < hi)
        x0, f0, x1 = x1, f1, x2
        if np.all(done):
            break
        f1 = f(x1)
    return np.exp(x1)


def row_inverse(name, quick):
    import numpy as np
    from _common import interleaved

    import activity as act

    n = 100_000
    rng = np.random.default_rng(1)
    mi = rng.uniform(1e-5, 0.05, n)
    bg = rng.uniform(0.0, 0.1, n)
    model = act.get_model("davies")
    ca = act.IonSelectiveElectrode("Ca^2+", E0=0.03)
    E = ca.potential(act.Solution({"Ca^2+": mi, "Na+": bg, "Cl-": bg + 2 * mi}), model)
    matrix = act.Solution({"Na+": bg, "Cl-": bg})
    A = float(act.debye_huckel_A(298.15))
    slope = float(act.nernst_slope(298.15, 2))

    def api():
        return act.molality_from_potential(ca, E, matrix, model, counter_ion="Cl-").molality

    def bare():
        return _bare_secant(E, bg, A, slope, 0.03)

    np.testing.assert_allclose(api(), bare(), rtol=1e-8)  # both converge on the same m
    t = interleaved({"api": api, "bare": bare}, repeat=3 if quick else 7)
    return t["api"] / t["bare"]


def row_monte_carlo(name, quick):
    import numpy as np
    from _common import interleaved

    import activity as act
    from activity.uncertainty import Normal, Rectangular, propagate
    from activity.water import debye_huckel_A

    trials, chunk = (200_000 if quick else 1_000_000), 100_000
    inputs = {"E0": Normal(0.3105, 0.0004), "m": Normal(0.0500, 0.0003), "T": Rectangular(298.15, 0.3)}  # demo
    davies = act.get_model("davies")

    def chain(E0, m, T):
        sol = act.Solution({"Na+": m, "Cl-": m}, T=T)
        return E0 + act.nernst_slope(T) * np.log10(davies.activity_coefficients(sol, warn=False)["Na+"] * m)

    from activity.constants import F, R

    k = R * np.log(10.0) / F

    def bare():
        rng = np.random.default_rng(1)
        store = np.empty(trials, np.float32)
        total, total2 = 0.0, 0.0
        for start in range(0, trials, chunk):
            n = min(chunk, trials - start)
            E0 = 0.3105 + 0.0004 * rng.standard_normal(n)
            m = 0.05 + 0.0003 * rng.standard_normal(n)
            T = 298.15 + 0.3 * (2.0 * rng.random(n) - 1.0)
            s = np.sqrt(m)
            y = E0 + k * T * (np.log10(m) - debye_huckel_A(T) * (s / (1.0 + s) - 0.3 * m))
            total += float(y.sum())
            total2 += float(np.sum((y - y.mean()) ** 2))
            store[start : start + n] = y - 0.31
        store.sort()
        return total / trials

    def api():
        return propagate(chain, inputs, "monte-carlo", trials=trials, seed=1, chunk_size=chunk).value

    assert abs(api() - bare()) < 1e-6  # the same draws through the same formula (V)
    t = interleaved({"api": api, "bare": bare}, repeat=3 if quick else 7)
    return t["api"] / t["bare"]


def row_gum(name, quick):
    import numpy as np
    from _common import interleaved

    import activity as act
    from activity.workflows.measurement import potential_with_uncertainty

    warnings.simplefilter("ignore", act.ActivityWarning)
    sample = act.Solution({"Ca^2+": 0.001, "K+": 0.1, "Cl-": 0.102})
    ise = act.IonSelectiveElectrode("Ca^2+", E0=0.1)

    def run():
        return potential_with_uncertainty(ise, sample, u_amount=0.01, u_e0=1e-4, u_temperature=0.2)

    r = run()
    assert np.isfinite(r.standard_uncertainty) and r.spread is not None
    return 1e3 * interleaved({"gum": run}, repeat=11 if quick else 25)["gum"]


def _wall(args, env, repeat):
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        subprocess.run(args, env=env, check=True, stdout=subprocess.DEVNULL, cwd="/")
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def row_cli(name, quick):
    """Wall time of one command in a new interpreter, with the package's bytecode compiled.

    An installed package has its ``.pyc`` files (pip compiles them at install); a checkout
    run under ``PYTHONDONTWRITEBYTECODE=1`` (as this environment sets) would recompile every
    module on every start. So the checkout is compiled once into a private cache
    (``PYTHONPYCACHEPREFIX``) and the timed runs read it. ``cli-source`` keeps the
    recompile-every-time figure; ``cli-floor`` and ``cli-python`` are what any command pays
    here before our code runs: the interpreter with numpy, and the bare interpreter (both
    include whatever start-up hooks this environment's site-packages installs).
    """
    import tempfile

    from _common import ROOT

    env = dict(os.environ, PYTHONPATH=ROOT)
    code = "from activity.cli import main; main(['solution', 'Na+=0.1 mol/kg', 'Cl-=0.1 mol/kg'])"
    if name == "cli-floor":
        code = "import numpy"
    elif name == "cli-python":
        code = "pass"
    with tempfile.TemporaryDirectory() as cache:
        if name != "cli-source":
            env.pop("PYTHONDONTWRITEBYTECODE", None)
            env["PYTHONPYCACHEPREFIX"] = cache
            compile_pkg = f"import compileall; compileall.compile_dir({str(ROOT)!r} + '/activity', quiet=1)"
            subprocess.run([sys.executable, "-c", compile_pkg], env=env, check=True, stdout=subprocess.DEVNULL, cwd="/")
            _wall([sys.executable, "-c", code], env, 1)  # warm the file cache
        return _wall([sys.executable, "-c", code], env, 5 if quick else 9)


RUNNERS = {
    "davies": row_dh,
    "extended-dh": row_dh,
    **{f"pitzer-{c}{k}": row_pitzer for c in ("one-T", "T-per-row") for k in ("", "-numpy", "-compiled", "-x")},
    "pitzer-compile": row_pitzer_compile,
    "pitzer-compile-cached": row_pitzer_compile,
    **{f"pitzer-memory{k}": row_pitzer_memory for k in ("", "-numpy", "-compiled")},
    "pitzer-checks": row_pitzer_checks,
    "ise": row_ise,
    "ise-floor": row_ise,
    "inverse": row_inverse,
    "monte-carlo": row_monte_carlo,
    "gum": row_gum,
    "cli": row_cli,
    "cli-source": row_cli,
    "cli-floor": row_cli,
    "cli-python": row_cli,
}


# --------------------------------------------------------------------------- parent
def _child(row, root, quick):
    env = dict(os.environ)
    if root:
        env["ACTIVITY_BENCH_ROOT"] = str(Path(root).resolve())
    args = [sys.executable, str(Path(__file__).resolve()), "--child", row] + (["--quick"] if quick else [])
    out = subprocess.run(args, env=env, capture_output=True, text=True, cwd=str(HERE))
    if out.returncode:
        return None, out.stderr.strip().splitlines()[-1] if out.stderr.strip() else "failed"
    return json.loads(out.stdout.strip().splitlines()[-1])["value"], None


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--before", metavar="DIR", help="an older checkout to measure in the same run")
    ap.add_argument("--rows", default=",".join(ROWS), help="comma-separated rows (default all)")
    ap.add_argument("--rounds", type=int, default=1, help="child runs per row and checkout (median shown)")
    ap.add_argument("--quick", action="store_true", help="10⁵ rows instead of 10⁶ (smoke run)")
    ap.add_argument("--child", help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.child:
        warnings.simplefilter("ignore")
        import _common  # noqa: F401  (puts the chosen checkout on sys.path)

        print(json.dumps({"value": RUNNERS[args.child](args.child, args.quick)}))
        return
    rows = [r.strip() for r in args.rows.split(",") if r.strip()]
    print(f"python {' '.join(sys.argv)}")
    print(f"{'row':58s} {'unit':>6s} {'before':>10s} {'after':>10s} {'target':>9s}")
    for row in rows:
        label, unit, target = ROWS[row]
        before, after, errors = [], [], []
        for _ in range(args.rounds):
            if args.before:
                v, err = _child(row, args.before, args.quick)
                before.append(v) if v is not None else errors.append(f"before: {err}")
            v, err = _child(row, None, args.quick)
            after.append(v) if v is not None else errors.append(f"after: {err}")

        def fmt(vals):
            return f"{statistics.median(vals):10.4g}" if vals else f"{'-':>10s}"

        print(f"{label[:58]:58s} {unit:>6s} {fmt(before)} {fmt(after)} {target:>9s}", flush=True)
        for e in errors:
            print(f"    {e}")
    print("x = time of the package path / time of its bare-numpy reference, medians of interleaved calls")
    if any(r.startswith("pitzer-") and r.endswith("-x") for r in rows):
        print("speed compiled / numpy kernel = median time of the numpy kernel / of the compiled one, same child")


if __name__ == "__main__":
    main()
