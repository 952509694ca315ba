"""Pieces of the faster Pitzer kernel against the forms they replace (kept here verbatim).

The whole kernel is compared with the kernel before the speed work in
tests/scale/test_pitzer_kernel.py (ln γ to 1e-12); these tests pin the replaced pieces
one by one over wider ranges than random compositions reach:

* g(x), g′(x): g′ is now formed as e^(−x) − g (one division for both);
* Eθ, Eθ′: the three J(x) of a pair from one logarithm and one pass over the spline pieces;
* coefficients with a temperature per row: only the T-dependent ones are arrays.
"""

import sys
import warnings
from pathlib import Path

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from activity.coefficients.pitzer import PitzerModel
from activity.coefficients.pitzer._kernel import _g_funcs_e
from activity.coefficients.pitzer._params import basis
from activity.coefficients.pitzer._unsym import e_theta
from activity.solution import Solution

sys.path.insert(0, str(Path(__file__).resolve().parent / "../../scale"))
from _pitzer_reference import old_g_funcs, old_j_exact  # noqa: E402  (the pre-speed-work pieces)

EPS = np.finfo(float).eps


# ---- reference (before the speed work) ---------------------------------------------------




def old_e_theta(zi, zj, Aphi, I):
    I = np.asarray(I, dtype=float)
    pos = I > 1e-20
    Is = np.where(pos, I, 1.0)
    base = 6.0 * Aphi * np.sqrt(Is)

    def jx(p):
        J, dJ = old_j_exact(p * base)
        return J, p * base * dJ

    zz = zi * zj
    (Jij, xdij), (Jii, xdii), (Jjj, xdjj) = jx(zz), jx(zi * zi), jx(zj * zj)
    et = zz / (4.0 * Is) * (Jij - 0.5 * Jii - 0.5 * Jjj)
    etp = -et / Is + zz / (8.0 * Is * Is) * (xdij - 0.5 * xdii - 0.5 * xdjj)
    return np.where(pos, et, 0.0), np.where(pos, etp, 0.0)


# ---- comparisons ----------------------------------------------------------------------------
def test_g_and_g_prime_equal_the_closed_forms():
    x = np.concatenate([[0.0, 0.019999, 0.02, 0.020001], np.geomspace(1e-6, 200.0, 20_000)])
    g, gp, e = _g_funcs_e(x)
    g_old, gp_old = old_g_funcs(x)
    np.testing.assert_array_equal(e, np.exp(-x))
    # Both forms lose digits to the cancellation in 1 − (1 + x) e^(−x) ≈ x²/2 (x ≥ 0.02, the
    # series below): round-off of a few ε amplified by 2/x² — 1e-12 relative covers it.
    np.testing.assert_allclose(g, g_old, rtol=1e-12, atol=0)
    # g′ ≈ −x/3 for small x: e − g and the old −2[1 − (1 + x + x²/2)e]/x² both carry round-off
    # of order ε·2/x² ≤ 6e-13 (x ≥ 0.02) in absolute terms; the series branch is unchanged.
    big = x >= 0.02
    np.testing.assert_allclose(gp[big], gp_old[big], rtol=0, atol=10 * EPS * np.max(2 / x[big] ** 2))
    np.testing.assert_array_equal(gp[~big], gp_old[~big])
    assert np.max(np.abs(gp - gp_old)) < 1e-12


@settings(deadline=None, max_examples=30)
@given(
    zz=st.sampled_from([(1, 2), (2, 1), (1, 3), (2, 3), (-1, -2), (-2, -3)]),
    Aphi=st.floats(0.37, 0.42),
    lo=st.floats(-30, 3),
)
def test_e_theta_equals_the_spline_object_form(zz, Aphi, lo):
    # I from 1e-30 (below the 1e-20 cut and the table) to 1e3 mol/kg (x beyond the table)
    I = np.concatenate([[0.0, 1e-20, 2e-20], 10.0 ** np.linspace(lo, 3.0, 500)])
    et, etp = e_theta(*zz, Aphi, I)
    et_old, etp_old = old_e_theta(*zz, Aphi, I)
    # J from ln x = ln p + ln(6Aφ√I) instead of ln(p·6Aφ√I): round-off only; Eθ is a difference
    # of J values, so compare to 1e-12 of the size of its terms (z_i z_j J/(4I) ~ |Eθ| + J/I)
    Is = np.where(I > 0, I, 1.0)
    scale_e = np.abs(et_old) + abs(zz[0] * zz[1]) * old_j_exact(6 * Aphi * np.sqrt(I) * zz[0] * zz[1])[0] / Is
    assert np.all(np.abs(et - et_old) <= 1e-12 * scale_e + 1e-300)
    assert np.all(np.abs(etp - etp_old) <= 1e-12 * (np.abs(etp_old) + scale_e / Is) + 1e-300)


@settings(deadline=None, max_examples=20)
@given(seed=st.integers(0, 2**32 - 1), n=st.integers(1, 50))
def test_coefficients_per_row_equal_the_dense_evaluation(seed, n):
    rng = np.random.default_rng(seed)
    species = ["Na+", "K+", "Mg^2+", "Ca^2+", "Cl-", "SO4^2-", "HCO3-", "CO2"]
    T = rng.uniform(273.15, 373.15, n)
    sol = Solution({s: np.full(n, 0.1) for s in species}, T=T, neutrality="ignore")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        bound = PitzerModel().bind(sol.species, sol.charges)
    rows = bound.at(T)
    dense = bound._evaluate(basis(T))  # every coefficient as one product with the 5 basis functions
    for name, ref in dense.items():
        got = np.array([np.broadcast_to(np.asarray(c, dtype=float), (n,)) for c in rows[name]])
        got = got.reshape(ref.shape)
        np.testing.assert_allclose(got, ref, rtol=1e-13, atol=1e-15)  # sums of the same terms, other order
    W = bound._all_weights
    n_dep = int(np.count_nonzero(np.any(W[:, 1:] != 0, axis=1)))
    n_arrays = sum(not isinstance(c, float) for name in rows for c in rows[name])
    assert n_arrays == n_dep  # only the T-dependent coefficients are arrays
