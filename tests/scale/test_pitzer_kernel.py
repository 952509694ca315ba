"""The faster Pitzer kernel gives the old kernel's results (1e-12 relative in γ and φ).

The code below ``# ---- reference`` is the kernel as it was before the speed work (dense
coefficient blocks contracted with tensordot/einsum, J(x) through scipy's spline object),
kept verbatim as the reference. Both run on the same binding; random compositions of up to
ten ions and a neutral, one temperature or one per row.
"""

import sys
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from activity.coefficients.pitzer import PitzerModel
from activity.coefficients.pitzer._params import basis
from activity.coefficients.pitzer._unsym import _j_xdj, j_exact
from activity.solution import Solution
from activity.water import debye_huckel_Aphi

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _pitzer_reference import old_g_funcs, old_j_exact  # noqa: E402  (the pre-speed-work pieces)

B_CONST = 1.2


# ---- reference (the kernel before the speed work) --------------------------------------
def old_at(bound, T):
    T = np.asarray(T, dtype=float)
    b = basis(T)
    P = {
        k: np.tensordot(w, b, axes=(-1, 0)) for k, w in bound.blocks.items() if bound.flags[k] or k in ("b0", "Bk", "C")
    }
    P.update(b0T=P["b0"].swapaxes(0, 1), BkT=P["Bk"].swapaxes(1, 2), CT=P["C"].swapaxes(0, 1))
    return P




def old_e_theta(zi, zj, Aphi, I, cache=None):
    I = np.asarray(I, dtype=float)
    if zi == zj:
        z = np.zeros(np.broadcast_shapes(np.shape(Aphi), I.shape))
        return z, z.copy()
    pos = I > 1e-20
    Is = np.where(pos, I, 1.0)
    base = 6.0 * Aphi * np.sqrt(Is)
    cache = {} if cache is None else cache

    def jx(p):
        if p not in cache:
            J, dJ = old_j_exact(p * base)
            cache[p] = (J, p * base * dJ)
        return cache[p]

    zz = zi * zj
    (Jij, xdij), (Jii, xdii), (Jjj, xdjj) = jx(zz), jx(zi * zi), jx(zj * zj)
    et = zz / (4.0 * Is) * (Jij - 0.5 * Jii - 0.5 * Jjj)
    etp = -et / Is + zz / (8.0 * Is * Is) * (xdij - 0.5 * xdii - 0.5 * xdjj)
    return np.where(pos, et, 0.0), np.where(pos, etp, 0.0)




def _dot(A, x, rowwise):
    if rowwise:
        return np.einsum("...jN,jN->...N", A, x)
    return np.tensordot(A, x, axes=(-1, 0))


def _outer(u, v):
    return (u[:, None, :] * v[None, :, :]).reshape(u.shape[0] * v.shape[0], u.shape[1])


def _etheta_sums(pairs, m, Aphi, I, cache):
    em = np.zeros_like(m)
    sp = np.zeros(m.shape[1:])
    for zi, zj, mask in pairs:
        et, etp = old_e_theta(zi, zj, Aphi, I, cache)
        mm = mask @ m
        em += et * mm
        sp += 0.5 * etp * np.sum(m * mm, axis=0)
    return em, sp


def old_evaluate(bound, P, rowwise, m, I, Aphi, want):
    f = bound.flags
    N = m.shape[1]
    mc, ma, mn = m[bound.cat], m[bound.an], m[bound.neu]
    zc, za = bound.z[bound.cat], bound.z[bound.an]
    Z = np.abs(bound.z) @ m
    sI = np.sqrt(I)
    bs = B_CONST * sI
    mm = _outer(mc, ma)
    b0A, b0C = _dot(P["b0"], ma, rowwise), _dot(P["b0T"], mc, rowwise)
    BA, BC = b0A.copy(), b0C.copy()
    SB0 = np.sum(mc * b0A, axis=0) if want & {"phi", "gex"} else 0.0
    Sg, Sphi, Sp = np.zeros(N), SB0 + np.zeros(N), np.zeros(N)
    if len(bound.alphas):
        BkA = _dot(P["Bk"], ma, rowwise)
        BkC = _dot(P["BkT"], mc, rowwise)
        Pk = np.sum(mc[None] * BkA, axis=1)
        I_pos = I > 0
        I_safe = np.where(I_pos, I, 1.0)
        with np.errstate(divide="ignore", invalid="ignore"):
            for k, al in enumerate(bound.alphas):
                x = al * sI
                g, gp = old_g_funcs(x)
                BA += g * BkA[k]
                BC += g * BkC[k]
                Sp += np.where(I_pos, gp / I_safe, 0.0) * Pk[k]
                if "gex" in want:
                    Sg += g * Pk[k]
                if "phi" in want:
                    Sphi += np.exp(-x) * Pk[k]
    CA, CC = _dot(P["C"], ma, rowwise), _dot(P["CT"], mc, rowwise)
    SC = np.sum(mc * CA, axis=0)
    PhiC = _dot(P["thc"], mc, rowwise) if f["thc"] else np.zeros_like(mc)
    PhiA = _dot(P["tha"], ma, rowwise) if f["tha"] else np.zeros_like(ma)
    jcache = {}
    e_c, spc = _etheta_sums(bound.etheta_c, mc, Aphi, I, jcache)
    e_a, spa = _etheta_sums(bound.etheta_a, ma, Aphi, I, jcache)
    PhiC += e_c
    PhiA += e_a
    PsiC = _dot(P["psiC"], mm, rowwise) if f["psiC"] else 0.0 * mc
    PsiA = _dot(P["psiA"], mm, rowwise) if f["psiA"] else 0.0 * ma
    out = {}
    ln1 = np.log1p(bs)
    if "lng" in want:
        F = -Aphi * (sI / (1.0 + bs) + (2.0 / B_CONST) * ln1) + Sp + spc + spa
        lng = np.empty_like(m)
        lc = (zc * zc)[:, None] * F + 2.0 * BA + Z * CA + 2.0 * PhiC + PsiC + np.abs(zc)[:, None] * SC
        la = (za * za)[:, None] * F + 2.0 * BC + Z * CC + 2.0 * PhiA + PsiA + np.abs(za)[:, None] * SC
        if f["psiAM"]:
            lc += 0.5 * _dot(P["psiAM"], _outer(ma, ma), rowwise)
        if f["psiCX"]:
            la += 0.5 * _dot(P["psiCX"], _outer(mc, mc), rowwise)
        lng[bound.cat], lng[bound.an] = lc, la
        lng[bound.neu] = 0.0
        if f["lam"]:
            lng += 2.0 * _dot(P["lam"], m, rowwise)
        if f["zN"]:
            lng[bound.neu] += _dot(P["zN"], mm, rowwise)
            lng[bound.cat] += _dot(P["zC"], _outer(mn, ma), rowwise)
            lng[bound.an] += _dot(P["zA"], _outer(mn, mc), rowwise)
        out["lng"] = lng
    if not want & {"phi", "gex"}:
        return out
    lam_q = np.sum(m * _dot(P["lam"], m, rowwise), axis=0) if f["lam"] else 0.0
    zeta_q = np.sum(mn * _dot(P["zN"], mm, rowwise), axis=0) if f["zN"] else 0.0
    sPhi = np.sum(mc * PhiC, axis=0) + np.sum(ma * PhiA, axis=0)
    sPsi = np.sum(mc * PsiC, axis=0) + np.sum(ma * PsiA, axis=0)
    if "phi" in want:
        acc = 2.0 * (-Aphi * I * sI / (1.0 + bs) + Sphi + Z * SC + 0.5 * (sPhi + sPsi) + I * (spc + spa))
        acc += lam_q + 2.0 * zeta_q
        total = np.sum(m, axis=0)
        with np.errstate(divide="ignore", invalid="ignore"):
            out["phi"] = 1.0 + np.where(total > 0, acc / np.where(total > 0, total, 1.0), 0.0)
    if "gex" in want:
        out["gex"] = -Aphi * (4.0 * I / B_CONST) * ln1 + 2.0 * (SB0 + Sg) + Z * SC + sPhi + 0.5 * sPsi + lam_q + zeta_q
    return out


# ---- the comparison ---------------------------------------------------------------------
IONS = ["Na+", "K+", "Mg^2+", "Ca^2+", "H+", "Cl-", "SO4^2-", "HCO3-", "Br-", "OH-", "CO3^2-"]
#: an invented ζ (test data only), so that the neutral triple terms are exercised as well
EXTRA = {"neutral": {"CO2 Na+ Cl-": {"zeta": -0.0045, "celsius": [0, 50], "source": "invented for a test"}}}


@settings(deadline=None, max_examples=40)
@given(
    seed=st.integers(0, 2**32 - 1),
    n=st.integers(1, 3000),
    k=st.integers(2, len(IONS)),
    neutral=st.booleans(),
    t_rows=st.booleans(),
)
def test_new_kernel_equals_old(seed, n, k, neutral, t_rows):
    rng = np.random.default_rng(seed)
    species = list(rng.choice(IONS, size=k, replace=False))
    if not any(s.endswith("+") for s in species):
        species.append("Na+")
    if not any(s.endswith("-") for s in species):
        species.append("Cl-")
    if neutral:
        species.append("CO2")
    comp = {s: rng.uniform(0, 1.0, n) * rng.choice([1e-6, 1e-3, 0.1, 1.0]) for s in species}
    comp[species[0]][0] = 0.0  # an absent ion in a row
    T = rng.uniform(273.15, 323.15, n) if t_rows else float(rng.uniform(273.15, 323.15))
    model = PitzerModel(extra=EXTRA)
    sol = Solution(comp, T=T, neutrality="ignore")
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        bound = model.bind(sol.species, sol.charges)
    m = sol.m.reshape(len(species), n)
    I = np.asarray(sol.ionic_strength).reshape(n)
    Aphi = np.asarray(debye_huckel_Aphi(sol.T_compact, sol.P_compact))
    Aphi = np.broadcast_to(Aphi, (n,)) if Aphi.size > 1 else float(Aphi)
    from activity.coefficients.pitzer._kernel import evaluate

    want = {"lng", "phi", "gex"}
    new = evaluate(bound, bound.at(T), t_rows, m, I, Aphi, want)
    old = old_evaluate(bound, old_at(bound, T), t_rows, m, I, Aphi, want)
    # γ = exp(ln γ) to 1e-12 relative ⇔ |Δ ln γ| ≤ 1e-12
    np.testing.assert_allclose(new["lng"], old["lng"], rtol=0, atol=1e-12)
    np.testing.assert_allclose(new["phi"], old["phi"], rtol=1e-12, atol=0)
    # Gex/(wRT) is a sum of terms of either sign: 1e-12 of the largest term's size
    np.testing.assert_allclose(new["gex"], old["gex"], rtol=1e-12, atol=1e-12 * max(1.0, np.max(np.abs(old["gex"]))))


def test_j_and_x_dj_equal_the_spline_object():
    x = np.concatenate([10 ** np.random.default_rng(3).uniform(-7, 5, 20_000), [0.0, 1e-5, 1e4, 2e4]])
    J_old, dJ_old = old_j_exact(x)
    J, xdJ = _j_xdj(x)
    np.testing.assert_allclose(J, J_old, rtol=1e-13, atol=0)
    np.testing.assert_allclose(xdJ, x * dJ_old, rtol=1e-13, atol=0)
    np.testing.assert_allclose(j_exact(x)[0], J_old, rtol=0, atol=0)  # the public function unchanged


def test_model_results_for_seawater_unchanged_by_blocking():
    # rows computed in one call equal the same rows computed one by one (batch = rows)
    rng = np.random.default_rng(5)
    base = {"Na+": 0.486, "K+": 0.0106, "Mg^2+": 0.0547, "Ca^2+": 0.0107, "Cl-": 0.566, "SO4^2-": 0.0293}
    k = rng.uniform(0.2, 2.0, 50)
    sol = Solution({s: v * k for s, v in base.items()}, neutrality="ignore")
    model = PitzerModel()
    batch = model.activity_coefficients(sol, warn=False)
    for i in (0, 17, 49):
        one = model.activity_coefficients(sol[i], warn=False)
        np.testing.assert_allclose(batch.log10_gamma[:, i], one.log10_gamma, rtol=0, atol=1e-14)
        assert batch.osmotic_coefficient[i] == pytest.approx(one.osmotic_coefficient, rel=1e-14)


def _reference_pair_checks(sol, bound):
    """The model's range checks as they were before the lean version (kept verbatim as the
    reference: every check materialised at once, O(n_checks · rows) memory)."""
    from activity.constants import ZERO_CELSIUS

    if not bound.checks:
        return np.ones(sol.shape, dtype=bool), ()
    idx, i_max, t_lo, t_hi = bound.check_arrays
    n, N = len(sol.species), sol.size
    pos = np.ones((n + 1, N), dtype=bool)
    pos[:n] = sol.m.reshape(n, N) > 0
    present = pos[idx].all(axis=1)
    I = np.asarray(sol.ionic_strength, dtype=float).reshape(N)
    T = np.asarray(sol.T_compact, dtype=float)
    T = T.reshape(()) if T.size == 1 else np.broadcast_to(T, sol.shape).reshape(N)
    high = present & (I > i_max[:, None] * (1 + 1e-9))
    cold = present & ((T < t_lo[:, None] - 1e-9) | (T > t_hi[:, None] + 1e-9))
    notes = []
    for r in np.flatnonzero(high.any(axis=1) | cold.any(axis=1)):
        label = bound.checks[r][0]
        nh, nc = int(np.count_nonzero(high[r])), int(np.count_nonzero(cold[r]))
        if nh:
            notes.append(
                f"pitzer: {label} parameters hold to I = {i_max[r]:g} mol/kg; "
                f"I up to {float(np.max(I[high[r]])):.4g} in {nh} of {N} row(s)"
            )
        if nc:
            notes.append(
                f"pitzer: {label} parameters hold at {t_lo[r] - ZERO_CELSIUS:g}–{t_hi[r] - ZERO_CELSIUS:g} °C; "
                f"outside in {nc} of {N} row(s)"
            )
    ok = ~(high | cold).any(axis=0)
    return ok.reshape(sol.shape), tuple(notes)


@settings(deadline=None, max_examples=25)
@given(seed=st.integers(0, 2**32 - 1), n=st.integers(1, 400), t_rows=st.booleans(), hot=st.booleans())
def test_lean_pair_checks_equal_the_models(seed, n, t_rows, hot):
    rng = np.random.default_rng(seed)
    species = ["Na+", "K+", "Mg^2+", "Cl-", "SO4^2-", "CO2"]
    comp = {s: rng.uniform(0, 1, n) * rng.choice([0.01, 1.0, 8.0]) for s in species}
    comp["K+"][rng.random(n) < 0.3] = 0.0  # absent in some rows: its checks do not apply there
    T0 = 340.0 if hot else 298.15  # 340 K lies outside every shipped 0–50 °C range
    T = rng.uniform(275.0, T0 + 10, n) if t_rows else T0
    sol = Solution(comp, T=T, neutrality="ignore")
    model = PitzerModel()
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        bound = model.bind(sol.species, sol.charges)
    ok_ref, notes_ref = _reference_pair_checks(sol, bound)
    assert model._pair_checks(sol, bound)[1] == notes_ref  # the model uses the lean checks
    ok, notes = bound.pair_checks(sol.m.reshape(len(species), n), np.asarray(sol.ionic_strength), sol.T_compact)
    np.testing.assert_array_equal(ok, ok_ref)
    assert notes == notes_ref  # same notes, same order
