"""The ISE fast path (equal γ of primary ion and interferents) equals the Nikolsky–Eisenman
equation written out."""

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from activity.coefficients import get_model
from activity.constants import LN10, F, R
from activity.nernst.electrodes import IonSelectiveElectrode
from activity.solution import Solution


@settings(deadline=None, max_examples=30)
@given(seed=st.integers(0, 2**32 - 1), n=st.integers(1, 500), k_array=st.booleans())
def test_fast_path_equals_the_equation(seed, n, k_array):
    rng = np.random.default_rng(seed)
    k_na = rng.uniform(0, 0.1, n) if k_array else 0.02
    ise = IonSelectiveElectrode("K+", E0=0.05, selectivity={"Na+": k_na, "NH4+": 0.003, "Li+": 0.5})
    m = {"K+": rng.uniform(1e-5, 0.1, n), "Na+": rng.uniform(0, 0.1, n), "NH4+": rng.uniform(0, 0.01, n)}
    m["Cl-"] = m["K+"] + m["Na+"] + m["NH4+"]
    sol = Solution(m, T=310.0)
    g = get_model("davies").activity_coefficients(sol)
    E = ise.evaluate(sol, "davies").potential
    gam = g["K+"]  # Davies: one γ for all monovalent ions
    # Nikolsky–Eisenman (IUPAC 2000 recommendations), Li+ absent from the solution
    ref = 0.05 + R * 310.0 * LN10 / F * np.log10(gam * m["K+"] + k_na * gam * m["Na+"] + 0.003 * gam * m["NH4+"])
    np.testing.assert_allclose(E, ref, rtol=0, atol=1e-13)  # volts; rounding of a few terms of 0.1 V
