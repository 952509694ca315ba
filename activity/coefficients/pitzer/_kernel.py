"""The Pitzer equations evaluated on a block of rows (rows on the last axis).

Notation follows Harvie, Møller & Weare (1984) and Pitzer (1991, ch. 3); m_c, m_a, m_n
are cation, anion and neutral molalities, Z = Σ|z_i| m_i, b = 1.2 (kg/mol)^½.

    Gex/(w RT) = −Aφ (4I/b) ln(1 + b√I) + Σ_c Σ_a m_c m_a (2 B_ca + Z C_ca)
                 + Σ_{c<c'} m_c m_c' (2 Φ_cc' + Σ_a m_a ψ_cc'a) + (same for anions)
                 + Σ_i Σ_j m_i m_j λ_ij + Σ_n Σ_c Σ_a m_n m_c m_a ζ_nca

where λ_ij is non-zero only when i or j is neutral (so 2 Σ_n Σ_c m_n m_c λ_nc + … as in
the published form), B_ca = β0 + β1 g(α1√I) + β2 g(α2√I), g(x) = 2[1 − (1 + x)e^(−x)]/x²,
C_ca = Cφ_ca / (2√|z_c z_a|), Φ_ij = θ_ij + Eθ_ij(I). ln γ_i = ∂(Gex/wRT)/∂m_i gives the
published expressions evaluated here, and the osmotic coefficient follows as

    Σm (φ − 1) = 2 [ −Aφ I^{3/2}/(1 + b√I) + Σ_c Σ_a m_c m_a (Bφ_ca + Z C_ca)
                 + Σ_{c<c'} m_c m_c' (Φφ_cc' + Σ_a m_a ψ_cc'a) + (anions) ]
                 + Σ_i Σ_j m_i m_j λ_ij + 2 Σ m_n m_c m_a ζ_nca,

Bφ = β0 + β1 e^(−α1√I) + β2 e^(−α2√I), Φφ = Φ + I Φ′.
"""

from __future__ import annotations

import numpy as np

from ._unsym import e_theta

__all__ = ["evaluate", "B_CONST", "g_funcs"]

#: b = 1.2 (kg/mol)^½ for all electrolytes (Pitzer 1973; common practice).
B_CONST = 1.2

#: The least normal float. Below it 1/I overflows (I of subnormal molalities, ~1e-310), and
#: the g′ term of F, g′(α√I) Σ m_c m_a B⁽ᵏ⁾/I, which vanishes as I^1.5 when I → 0, is taken
#: as its limit 0 instead of inf · 0 = NaN.
I_TINY = float(np.finfo(float).tiny)


def g_funcs(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """g(x) = 2[1 − (1+x)e^(−x)]/x² and g′(x) = −2[1 − (1+x+x²/2)e^(−x)]/x² (x ≥ 0).

    A Taylor series replaces the closed forms below x = 0.02, where they lose digits.
    """
    g, gp, _ = _g_funcs_e(x)
    return g, gp


def _g_funcs_e(x: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """g, g′ and e^(−x) (the last for Bφ), from one exponential."""
    small = x < 0.02
    any_small = bool(np.any(small))
    xs = np.where(small, 1.0, x) if any_small else x
    e = np.exp(-xs)
    r = xs * xs
    np.divide(2.0, r, out=r)
    g = xs + 1.0
    g *= e
    np.subtract(1.0, g, out=g)
    g *= r  # g = 2 [1 − (1 + x) e^(−x)] / x²
    gp = e - g  # g′ = −2 [1 − (1 + x + x²/2) e^(−x)] / x² = e^(−x) − g
    if not any_small:
        return g, gp, e
    gs = 1.0 - x * (2.0 / 3.0 - x * (0.25 - x * (1.0 / 15.0 - x / 72.0)))
    gps = -x * (1.0 / 3.0 - x * (0.25 - x * (0.1 - x / 36.0)))
    return np.where(small, gs, g), np.where(small, gps, gp), np.exp(-x)


def _outer(u: np.ndarray, v: np.ndarray) -> np.ndarray:
    return (u[:, None, :] * v[None, :, :]).reshape(u.shape[0] * v.shape[0], u.shape[1])


def _pairs(u: np.ndarray) -> np.ndarray:
    """Products u_i u_j over the pairs i < j in row order (0,1), (0,2), …, (1,2), …"""
    n = u.shape[0]
    out = np.empty((n * (n - 1) // 2, u.shape[1]))
    k = 0
    for i in range(n - 1):
        np.multiply(u[i], u[i + 1 :], out=out[k : k + n - 1 - i])
        k += n - 1 - i
    return out


def _rows(idx: np.ndarray) -> slice | np.ndarray:
    """A slice when the indices are a contiguous ascending run (a view, no copy), else them."""
    idx = np.asarray(idx, dtype=np.intp)
    if len(idx) and np.array_equal(idx, np.arange(idx[0], idx[0] + len(idx))):
        return slice(int(idx[0]), int(idx[0]) + len(idx))
    return idx


class _Layout:
    """What the kernel needs of a binding beyond its coefficients, derived once per binding.

    * ``cat``/``an``/``neu``: the species rows as slices where they are contiguous;
    * ``zc_groups``/``za_groups``: the rows of the cations (anions) by |z|, for the terms
      z² F + |z| Σ m_c m_a C_ca that depend on the charge only;
    * ``eth_c``/``eth_a``: per unlike-charge combination (zi, zj), the rows of charge zi
      and of charge zj. The bound mask of a combination marks every pair of ions with those
      charges (a complete bipartite pattern), so Σ_j Eθ_ij m_j = Eθ · S_other for every
      ion of a class and Σ_{i<j} m_i m_j = S_A S_B.
    """

    def __init__(self, bound):
        z = bound.z
        self.cat, self.an, self.neu = _rows(bound.cat), _rows(bound.an), _rows(bound.neu)
        self.nz = np.flatnonzero(z).tolist()
        self.absz = np.abs(z).tolist()
        self.zc_groups = self._groups(z[bound.cat])
        self.za_groups = self._groups(z[bound.an])
        self.eth_c = self._classes(z[bound.cat], bound.etheta_c)
        self.eth_a = self._classes(z[bound.an], bound.etheta_a)

    @staticmethod
    def _groups(zs: np.ndarray) -> tuple:
        return tuple((float(q), _rows(np.flatnonzero(np.abs(zs) == q))) for q in np.unique(np.abs(zs)))

    @staticmethod
    def _classes(zs: np.ndarray, pairs: tuple) -> tuple:
        out = []
        for zi, zj, mask in pairs:
            A, B = (zs == zi), (zs == zj)
            expected = np.outer(A, B) | np.outer(B, A)
            if not np.array_equal(mask != 0, expected):  # not produced by bind; kept general
                raise AssertionError("Eθ mask is not the pattern of two charge classes")
            out.append((zi, zj, _rows(np.flatnonzero(A)), _rows(np.flatnonzero(B))))
        return tuple(out)


def _layout(bound) -> _Layout:
    lay = bound._cache.get("_layout")
    if lay is None:
        lay = bound._cache["_layout"] = _Layout(bound)
    return lay


def _etheta_terms(classes, m, Aphi, I, cache, rows_out, want_lng):
    """Eθ terms of one sign: adds 2 Eθ S_other to the rows of each class (in ``rows_out``),
    returns (Σ_{i<j} m_i m_j Eθ′_ij, Σ_{i<j} m_i m_j Eθ_ij)."""
    sp = 0.0
    se = 0.0
    for zi, zj, ra, rb in classes:
        et, etp = e_theta(zi, zj, Aphi, I, cache)
        SA = np.sum(m[ra], axis=0) if not isinstance(ra, slice) or ra.stop - ra.start > 1 else m[ra.start]
        SB = np.sum(m[rb], axis=0) if not isinstance(rb, slice) or rb.stop - rb.start > 1 else m[rb.start]
        if want_lng:
            e2 = 2.0 * et
            rows_out[ra] += e2 * SB
            rows_out[rb] += e2 * SA
        AB = SA * SB
        sp = sp + etp * AB
        se = se + et * AB
    return sp, se


def evaluate(bound, P: dict, rowwise: bool, m: np.ndarray, I: np.ndarray, Aphi, want: set) -> dict:
    """ln γ (``"lng"``), φ (``"phi"``) and Gex/(wRT) (``"gex"``) for rows ``m`` (n, N).

    ``P`` holds the non-zero coefficients of each contraction (:meth:`Bound.at`): vectors at
    one temperature, or arrays with a row axis (``rowwise``).
    """
    f = bound.flags
    con = bound.contractions
    lay = _layout(bound)

    def dot(name: str, x: np.ndarray) -> np.ndarray:
        return con[name](P[name], x)

    mc, ma, mn = m[lay.cat], m[lay.an], m[lay.neu]
    Z = _weighted_sum(lay.absz, lay.nz, m)
    sI = np.sqrt(I)
    bs = B_CONST * sI
    opb = 1.0 + bs
    mm = _outer(mc, ma)
    want_lng = "lng" in want
    want_pg = bool(want & {"phi", "gex"})
    # B terms: B_ca = β0 + Σ_k Bk_ca g(α_k √I), one pass per distinct α
    BA = dot("b0", ma)  # Σ_a β0_ca m_a, becomes Σ_a B_ca m_a
    BC = dot("b0T", mc) if want_lng else None
    SB0 = _vdot(mc, BA) if want_pg else 0.0
    Sg, Sphi, Sp = 0.0, SB0, 0.0
    if len(bound.alphas):
        BkA = dot("Bk", ma)  # (K, n_c, N)
        BkC = dot("BkT", mc) if want_lng else None
        Pk = np.einsum("cn,kcn->kn", mc, BkA)  # Σ_ca m_c m_a Bk_ca, (K, N)
        with np.errstate(divide="ignore", invalid="ignore"):
            inv_I = np.where(I >= I_TINY, 1.0 / I, 0.0)
        with np.errstate(divide="ignore", invalid="ignore"):
            for k, al in enumerate(bound.alphas.tolist()):
                g, gp, e = _g_funcs_e(al * sI)
                if want_lng:
                    BkA[k] *= g
                    BA += BkA[k]
                    BkC[k] *= g
                    BC += BkC[k]
                gp *= inv_I
                gp *= Pk[k]
                Sp = Sp + gp
                if "gex" in want:
                    Sg = Sg + g * Pk[k]
                if "phi" in want:
                    e *= Pk[k]
                    Sphi = Sphi + e
    CA = dot("C", ma)
    SC = _vdot(mc, CA)
    # like-charge mixing: θ by contraction, Eθ by charge class
    PhiC = dot("thc", mc) if f["thc"] else None
    PhiA = dot("tha", ma) if f["tha"] else None
    PsiC = dot("psiC", mm) if f["psiC"] else None
    PsiA = dot("psiA", mm) if f["psiA"] else None
    out = {}
    lc = la = None
    if want_lng:
        lc, la = BA, BC  # 2 (B + Φ) + ψ + Z C + z² F + |z| SC, built in place
        if PhiC is not None:
            lc += PhiC
        if PhiA is not None:
            la += PhiA
        lc *= 2.0
        la *= 2.0
    jcache: dict = {}
    spc, sec = _etheta_terms(lay.eth_c, mc, Aphi, I, jcache, lc, want_lng)
    spa, sea = _etheta_terms(lay.eth_a, ma, Aphi, I, jcache, la, want_lng)
    ln1 = np.log1p(bs)
    if want_lng:
        F = sI / opb
        F += (2.0 / B_CONST) * ln1
        F *= -Aphi
        F += Sp
        F += spc
        F += spa
        if PsiC is not None:
            lc += PsiC
        if PsiA is not None:
            la += PsiA
        CA *= Z
        lc += CA
        CC = dot("CT", mc)
        CC *= Z
        la += CC
        if f["psiAMu"]:
            lc += dot("psiAMu", _pairs(ma))
        if f["psiCXu"]:
            la += dot("psiCXu", _pairs(mc))
        for rows, groups in ((lc, lay.zc_groups), (la, lay.za_groups)):
            for q, r in groups:
                rows[r] += (q * q) * F + q * SC
        lng = np.empty_like(m)
        lng[lay.cat], lng[lay.an] = lc, la
        lng[lay.neu] = 0.0
        if f["lam"]:
            lng += 2.0 * dot("lam", m)
        if f["zN"]:
            lng[lay.neu] += dot("zN", mm)
            lng[lay.cat] += dot("zC", _outer(mn, ma))
            lng[lay.an] += dot("zA", _outer(mn, mc))
        out["lng"] = lng
    if not want_pg:
        return out
    lam_q = np.sum(m * dot("lam", m), axis=0) if f["lam"] else 0.0
    zeta_q = np.sum(mn * dot("zN", mm), axis=0) if f["zN"] else 0.0
    # 2 Σ_{i<j} m_i m_j Φ_ij and 2 Σ_{i<j} m_i m_j Σ_k m_k ψ_ijk
    sPhi = 2.0 * (sec + sea)
    if PhiC is not None:
        sPhi = sPhi + _vdot(mc, PhiC)
    if PhiA is not None:
        sPhi = sPhi + _vdot(ma, PhiA)
    sPsi = 0.0
    if PsiC is not None:
        sPsi = sPsi + _vdot(mc, PsiC)
    if PsiA is not None:
        sPsi = sPsi + _vdot(ma, PsiA)
    if "phi" in want:
        acc = 2.0 * (-Aphi * I * sI / opb + Sphi + Z * SC + 0.5 * (sPhi + sPsi) + I * (spc + spa))
        acc += lam_q + 2.0 * zeta_q
        total = np.sum(m, axis=0)
        with np.errstate(divide="ignore", invalid="ignore"):
            out["phi"] = 1.0 + np.where(total > 0, acc / np.where(total > 0, total, 1.0), 0.0)
    if "gex" in want:
        out["gex"] = -Aphi * (4.0 * I / B_CONST) * ln1 + 2.0 * (SB0 + Sg) + Z * SC + sPhi + 0.5 * sPsi + lam_q + zeta_q
    return out


def _vdot(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Σ_i x_i y_i over the first axis in one pass (no product array)."""
    return np.einsum("in,in->n", x, y)


def _weighted_sum(w: list, nz: list, x: np.ndarray) -> np.ndarray:
    """Σ_i w_i x_i over the first axis, as a loop over the non-zero weights (no BLAS)."""
    if not nz:
        return np.zeros(x.shape[1:])
    out = x[nz[0]] * w[nz[0]]
    for i in nz[1:]:
        out += w[i] * x[i]
    return out
