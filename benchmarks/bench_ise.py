"""Speed of the ISE calibration workflow; prints figures, asserts nothing.

Run from the repository root::

    python benchmarks/bench_ise.py

Scenario: the invented calcium-electrode calibration of the demo (5 standards in 0.1 mol/L
KCl, Davies activities), samples in 0.1 mol/L KCl read with counter-ion Cl-.

Figures (target under 1 s each on the 2-core machine):
1. the calibration fit;
2. the fit plus 10⁴ unknowns with GUM uncertainty (vectorised over the samples; inputs:
   calibration parameters with covariance, reading, temperature, matrix composition),
   without and with the activity-model spread (which refits the calibration by each model);
3. 10⁵ Monte Carlo trials each for 100 unknowns (10⁷ inversions, vectorised over trials ×
   samples in blocks: activity.workflows.ise._mc);
and for 2 and 3 the ratio to the bare model evaluation: one forward evaluation of the
calibrated response (Davies γ + Nikolsky–Eisenman) on the same number of rows.
"""

from __future__ import annotations

import warnings

import numpy as np
from _common import best_of  # also puts this checkout on sys.path

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


def main() -> None:
    matrix = Solution({"K+": 0.1, "Cl-": 0.1})
    rng = np.random.default_rng(0)
    t_fit, cal = best_of(fit, 3)
    print(f"1. calibration fit (5 standards):                      {t_fit * 1000:8.1f} ms")

    n = 10_000
    E = cal.E0 + cal.slope * rng.uniform(-5, -1.5, n)
    t_bare, _ = best_of(lambda: bare(cal, np.full(n, 1e-3)), 5)

    def gum(choice):
        c = fit()
        return c.molality_with_uncertainty(
            E, matrix, counter_ion="Cl-", u_emf=3e-4, u_temperature=0.2, u_matrix=0.01, model_choice=choice
        )

    t_gum, res = best_of(lambda: gum(False), 3)
    print(
        f"2. fit + 10^4 unknowns, GUM:                           {t_gum * 1000:8.1f} ms "
        f"(x{t_gum / t_bare:.0f} the bare evaluation of 10^4 rows, {t_bare * 1000:.2f} ms)"
    )
    t_gum2, _ = best_of(lambda: gum(True), 2)
    print(f"   same with the activity-model spread (6 models):     {t_gum2 * 1000:8.1f} ms (x{t_gum2 / t_bare:.0f})")
    assert np.all(np.isfinite(res.standard_uncertainty))

    k, trials = 100, 100_000
    E100 = cal.E0 + cal.slope * rng.uniform(-5, -1.5, k)
    t_bare_mc, _ = best_of(lambda: bare(cal, np.full(trials, 1e-3)), 5)

    def mc():
        return cal.molality_with_uncertainty(
            E100,
            matrix,
            counter_ion="Cl-",
            u_emf=3e-4,
            u_temperature=0.2,
            u_matrix=0.01,
            method="monte-carlo",
            trials=trials,
            seed=1,
            model_choice=False,
        )

    t_mc, res = best_of(mc, 3)
    print(
        f"3. 10^5 Monte Carlo trials x 100 unknowns:             {t_mc * 1000:8.1f} ms "
        f"(x{t_mc / (k * t_bare_mc):.2f} the bare evaluation of 100 x 10^5 rows, {k * t_bare_mc * 1000:.0f} ms)"
    )
    assert np.all(np.isfinite(res.standard_uncertainty))

    def mc_fixed_T():
        return cal.molality_with_uncertainty(
            E100,
            matrix,
            counter_ion="Cl-",
            u_emf=3e-4,
            u_matrix=0.01,
            method="monte-carlo",
            trials=trials,
            seed=1,
            model_choice=False,
        )

    t_mc2, _ = best_of(mc_fixed_T, 3)
    print(
        f"   same without the temperature input (T scalar):      {t_mc2 * 1000:8.1f} ms "
        f"(x{t_mc2 / (k * t_bare_mc):.2f})"
    )


if __name__ == "__main__":
    main()
