"""Speed of the Pitzer model on batches (prints figures; never asserts on time).

Run: ``python benchmarks/bench_pitzer.py``. Compares

* a batch of 10⁵ seawater-type compositions (8 ions, all pairs parameterised) in one call,
  at one temperature and with a temperature per row;
* the same model called row by row (extrapolated from a few hundred rows);
* a bare numpy expression of the binary NaCl Pitzer equation on 10⁵ rows (a floor: no
  mixing terms, no binding, no checks).
"""

from __future__ import annotations

import os
import warnings

for _v in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_v, "1")  # one core, before numpy loads its BLAS

import numpy as np  # noqa: E402
from _common import best_of  # noqa: E402  (also puts this checkout on sys.path)

import activity as act  # noqa: E402
from activity import Solution  # noqa: E402
from activity.water import debye_huckel_Aphi  # noqa: E402

N = 100_000
ROWS_LOOP = 300
# seawater-like background (mol/kg), scaled per row by a random factor 0.2–2
BASE = {
    "Na+": 0.486,
    "K+": 0.0106,
    "Mg^2+": 0.0547,
    "Ca^2+": 0.0107,
    "Cl-": 0.566,
    "SO4^2-": 0.0293,
    "HCO3-": 0.00178,
    "Br-": 0.00087,
}


def nacl_bare(m, Aphi):
    """ln γ± of NaCl: Pitzer & Mayorga (1973) parameters, one expression."""
    b0, b1, c = 0.0765, 0.2664, 0.00127
    s = np.sqrt(m)
    x = 2.0 * s
    f = -Aphi * (s / (1 + 1.2 * s) + (2 / 1.2) * np.log1p(1.2 * s))
    bg = 2 * b0 + 2 * b1 / (x * x) * (1 - (1 + x - 0.5 * x * x) * np.exp(-x))
    return f + m * bg + 1.5 * c * m * m


def main():
    rng = np.random.default_rng(1)
    k = rng.uniform(0.2, 2.0, N)
    comp = {s: v * k for s, v in BASE.items()}
    sol = Solution(comp, neutrality="ignore")
    solT = Solution(comp, T=rng.uniform(288.15, 308.15, N), neutrality="ignore")
    model = act.get_model("pitzer")
    warnings.simplefilter("ignore", act.ActivityWarning)
    model.activity_coefficients(sol)  # bind once

    t_full = best_of(lambda: model.activity_coefficients(sol))[0]
    t_lg = best_of(lambda: model.log10_gamma(sol))[0]
    t_T = best_of(lambda: model.activity_coefficients(solT), 3)[0]
    rows = [Solution({s: float(v[i]) for s, v in comp.items()}, neutrality="ignore") for i in range(ROWS_LOOP)]
    t_loop = best_of(lambda: [model.activity_coefficients(r) for r in rows], 2)[0] * N / ROWS_LOOP
    m = k * 0.5
    Aphi = debye_huckel_Aphi(298.15)
    t_bare = best_of(lambda: nacl_bare(m, Aphi))[0]

    print(f"Pitzer model, {len(BASE)}-ion seawater-type batch, {N:,} rows, one core")
    print(f"  activity_coefficients (γ, φ, a_w, checks), scalar T : {t_full * 1e3:8.1f} ms  {N / t_full:12,.0f} rows/s")
    print(f"  log10_gamma only, scalar T                          : {t_lg * 1e3:8.1f} ms  {N / t_lg:12,.0f} rows/s")
    print(f"  activity_coefficients, T per row                    : {t_T * 1e3:8.1f} ms  {N / t_T:12,.0f} rows/s")
    print(
        f"  row-by-row loop (extrapolated from {ROWS_LOOP} rows)          : {t_loop * 1e3:8.1f} ms  "
        f"{N / t_loop:12,.0f} rows/s"
    )
    print(f"  bare numpy binary NaCl formula (floor)              : {t_bare * 1e3:8.1f} ms  {N / t_bare:12,.0f} rows/s")
    print(f"  batch / loop speed-up                  : {t_loop / t_full:8.0f}x")
    print(f"  batch time / bare NaCl formula time    : {t_full / t_bare:8.1f}x")


if __name__ == "__main__":
    main()
