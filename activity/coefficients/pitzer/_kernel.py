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
    x2 = xs * xs
    g = 2.0 * (1.0 - (1.0 + xs) * e) / x2
    gp = -2.0 * (1.0 - (1.0 + xs + 0.5 * x2) * e) / x2
    if not any_small:
        return g, gp, e
    gs = 1.0 - x * (2.0 / 3.0 - x * (0.25 - x * (1.0 / 15.0 - x / 72.0)))
    gps = -x * (1.0 / 3.0 - x * (0.25 - x * (0.1 - x / 36.0)))
    return np.where(small, gs, g), np.where(small, gps, gp), np.exp(-x)


def _outer(u: np.ndarray, v: np.ndarray) -> np.ndarray:
    return (u[:, None, :] * v[None, :, :]).reshape(u.shape[0] * v.shape[0], u.shape[1])


def _etheta_sums(pairs, m, Aphi, I, cache):
    """Σ_j Eθ_ij m_j (per ion) and Σ_{i<j} m_i m_j Eθ′_ij for unlike-charge pairs.

    ``pairs`` holds one (zi, zj, mask) per distinct charge combination; ``mask`` marks
    every ion pair with those charges. The masks are tiny (ions of one sign), so the sums
    over them run as explicit loops over the marked pairs rather than matrix products.
    """
    em = np.zeros_like(m)
    sp = np.zeros(m.shape[1:])
    for zi, zj, mask in pairs:
        et, etp = e_theta(zi, zj, Aphi, I, cache)
        mm = np.zeros_like(m)
        for i, j in zip(*np.nonzero(mask)):
            mm[i] += m[j]
        em += et * mm
        sp += 0.5 * etp * np.sum(m * mm, axis=0)
    return em, sp


def evaluate(bound, P: dict, rowwise: bool, m: np.ndarray, I: np.ndarray, Aphi, want: set) -> dict:
    """ln γ (``"lng"``), φ (``"phi"``) and Gex/(wRT) (``"gex"``) for rows ``m`` (n, N).

    ``P`` holds the non-zero coefficients of each contraction (:meth:`Bound.at`): vectors at
    one temperature, or arrays with a row axis (``rowwise``).
    """
    f = bound.flags
    con = bound.contractions

    def dot(name: str, x: np.ndarray) -> np.ndarray:
        return con[name](P[name], x)

    N = m.shape[1]
    mc, ma, mn = m[bound.cat], m[bound.an], m[bound.neu]
    zc, za = bound.z[bound.cat], bound.z[bound.an]
    Z = _weighted_sum(np.abs(bound.z), m)
    sI = np.sqrt(I)
    bs = B_CONST * sI
    mm = _outer(mc, ma)
    # B terms: one pass per distinct α. Sums that only φ (Sphi) or only Gex (SB0, Sg) use
    # are formed only when asked for.
    b0A, b0C = dot("b0", ma), dot("b0T", mc)
    BA, BC = b0A.copy(), b0C.copy()
    SB0 = np.sum(mc * b0A, axis=0) if want & {"phi", "gex"} else 0.0
    Sg, Sphi, Sp = np.zeros(N), SB0 + np.zeros(N), np.zeros(N)
    if len(bound.alphas):
        BkA = dot("Bk", ma)  # (K, n_c, N)
        BkC = dot("BkT", mc)
        Pk = np.sum(mc[None] * BkA, axis=1)  # Σ_ca m_c m_a Bk_ca, (K, N)
        I_pos = I > 0
        I_safe = np.where(I_pos, I, 1.0)
        with np.errstate(divide="ignore", invalid="ignore"):
            for k, al in enumerate(bound.alphas):
                x = al * sI
                g, gp, e = _g_funcs_e(x)
                BA += g * BkA[k]
                BC += g * BkC[k]
                Sp += np.where(I_pos, gp / I_safe, 0.0) * Pk[k]
                if "gex" in want:
                    Sg += g * Pk[k]
                if "phi" in want:
                    Sphi += e * Pk[k]
    CA, CC = dot("C", ma), dot("CT", mc)
    SC = np.sum(mc * CA, axis=0)
    # like-charge mixing
    PhiC = dot("thc", mc) if f["thc"] else np.zeros_like(mc)
    PhiA = dot("tha", ma) if f["tha"] else np.zeros_like(ma)
    jcache: dict = {}
    e_c, spc = _etheta_sums(bound.etheta_c, mc, Aphi, I, jcache)
    e_a, spa = _etheta_sums(bound.etheta_a, ma, Aphi, I, jcache)
    PhiC += e_c
    PhiA += e_a
    PsiC = dot("psiC", mm) if f["psiC"] else 0.0 * mc
    PsiA = dot("psiA", mm) if f["psiA"] else 0.0 * ma
    out = {}
    ln1 = np.log1p(bs)
    if "lng" in want:
        F = -Aphi * (sI / (1.0 + bs) + (2.0 / B_CONST) * ln1) + Sp + spc + spa
        lng = np.empty_like(m)
        lc = (zc * zc)[:, None] * F + 2.0 * BA + Z * CA + 2.0 * PhiC + PsiC + np.abs(zc)[:, None] * SC
        la = (za * za)[:, None] * F + 2.0 * BC + Z * CC + 2.0 * PhiA + PsiA + np.abs(za)[:, None] * SC
        if f["psiAM"]:
            lc += 0.5 * dot("psiAM", _outer(ma, ma))
        if f["psiCX"]:
            la += 0.5 * dot("psiCX", _outer(mc, mc))
        lng[bound.cat], lng[bound.an] = lc, la
        lng[bound.neu] = 0.0
        if f["lam"]:
            lng += 2.0 * dot("lam", m)
        if f["zN"]:
            lng[bound.neu] += dot("zN", mm)
            lng[bound.cat] += dot("zC", _outer(mn, ma))
            lng[bound.an] += dot("zA", _outer(mn, mc))
        out["lng"] = lng
    if not want & {"phi", "gex"}:
        return out
    lam_q = np.sum(m * dot("lam", m), axis=0) if f["lam"] else 0.0
    zeta_q = np.sum(mn * dot("zN", mm), axis=0) if f["zN"] else 0.0
    sPhi = np.sum(mc * PhiC, axis=0) + np.sum(ma * PhiA, axis=0)  # 2 Σ_{i<j} m_i m_j Φ_ij
    sPsi = np.sum(mc * PsiC, axis=0) + np.sum(ma * PsiA, axis=0)  # 2 Σ_{i<j} m_i m_j Σ_k m_k ψ_ijk
    if "phi" in want:
        acc = 2.0 * (-Aphi * I * sI / (1.0 + bs) + Sphi + Z * SC + 0.5 * (sPhi + sPsi) + I * (spc + spa))
        acc += lam_q + 2.0 * zeta_q
        total = np.sum(m, axis=0)
        with np.errstate(divide="ignore", invalid="ignore"):
            out["phi"] = 1.0 + np.where(total > 0, acc / np.where(total > 0, total, 1.0), 0.0)
    if "gex" in want:
        out["gex"] = -Aphi * (4.0 * I / B_CONST) * ln1 + 2.0 * (SB0 + Sg) + Z * SC + sPhi + 0.5 * sPsi + lam_q + zeta_q
    return out


def _weighted_sum(w: np.ndarray, x: np.ndarray) -> np.ndarray:
    """Σ_i w_i x_i over the first axis, as a loop over the non-zero weights (no BLAS)."""
    out = np.zeros(x.shape[1:])
    for i in np.flatnonzero(w):
        out += w[i] * x[i]
    return out
