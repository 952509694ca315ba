"""Speed of the Nernst layer (prints figures; asserts nothing).

Targets: electrode potentials for 10⁶ rows cost no more than 1.5× the activity model
alone; the inverse (molality from potential) on 10⁵ rows runs at ≥ 10⁵ rows/s with
Davies. Run: ``python benchmarks/bench_nernst.py``.
"""

from __future__ import annotations

import warnings

import numpy as np
from _common import best_of

import activity as act
from activity.errors import ActivityWarning


def main() -> None:
    warnings.simplefilter("ignore", ActivityWarning)
    rng = np.random.default_rng(1)
    n = 1_000_000
    m = rng.uniform(1e-4, 0.1, n)
    sol = act.Solution({"K+": m, "Cl-": m})
    model = act.get_model("davies")
    hr = act.standard_couple("AgCl/Ag")
    ise = act.IonSelectiveElectrode("K+", E0=0.05, selectivity={"Na+": 0.01})
    sol_ise = act.Solution({"K+": m, "Na+": 0.01, "Cl-": m + 0.01})

    t_model = best_of(lambda: model.activity_coefficients(sol), 15)[0]
    t_hr = best_of(lambda: hr.potential(sol, model), 15)[0]
    t_model_ise = best_of(lambda: model.activity_coefficients(sol_ise), 15)[0]
    t_ise = best_of(lambda: ise.potential(sol_ise, model), 15)[0]
    print(f"rows: {n:,}  model: davies")
    print(f"  activity model alone (K+, Cl-)        {t_model * 1e3:8.1f} ms")
    print(f"  HalfReaction AgCl/Ag potential        {t_hr * 1e3:8.1f} ms   ratio {t_hr / t_model:5.2f}  (target ≤ 1.5)")
    print(f"  activity model alone (K+, Na+, Cl-)   {t_model_ise * 1e3:8.1f} ms")
    print(
        f"  ion-selective electrode potential     {t_ise * 1e3:8.1f} ms   "
        f"ratio {t_ise / t_model_ise:5.2f}  (target ≤ 1.5)"
    )

    n_inv = 100_000
    mi = rng.uniform(1e-5, 0.05, n_inv)
    bg = rng.uniform(0.0, 0.1, n_inv)
    ca = act.IonSelectiveElectrode("Ca^2+", E0=0.03)
    full = act.Solution({"Ca^2+": mi, "Na+": bg, "Cl-": bg + 2 * mi})
    E = ca.potential(full, model)
    matrix = act.Solution({"Na+": bg, "Cl-": bg})
    res = act.molality_from_potential(ca, E, matrix, model, counter_ion="Cl-")
    t_inv = best_of(lambda: act.molality_from_potential(ca, E, matrix, model, counter_ion="Cl-"), 3)[0]
    err = float(np.max(np.abs(res.molality / mi - 1)))
    print(
        f"inverse (Ca ISE, Davies, counter-ion Cl-): {n_inv:,} rows in {t_inv * 1e3:.1f} ms "
        f"= {n_inv / t_inv:,.0f} rows/s (target ≥ 100,000), {res.iterations} iterations, max rel. error {err:.1e}"
    )


if __name__ == "__main__":
    main()
