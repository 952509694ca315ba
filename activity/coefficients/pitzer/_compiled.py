"""The Pitzer equations of :mod:`._kernel` compiled with numba: one fused pass over the rows.

Optional (the extra ``fast``): this module imports numba and is itself imported only
when :class:`~._model.PitzerModel` decides to use it (see its ``kernel`` parameter), so
``import activity`` and the command line never load numba.

The rows are taken in blocks of :data:`BLOCK`; for each block every term of the
equations (the same as :mod:`._kernel`) is one loop over the block's rows, over the
non-zero interactions only, accumulating into per-row sums that stay in the L1/L2 cache.
lg γ, φ and Gex/(wRT) are written straight into the output arrays: no temporaries of the
batch's size. (A loop over rows with all sums of one row inside it was tried first: its
accumulations form chains of dependent additions and stores, and it ran slower than the
numpy kernel; with the rows innermost the iterations are independent.)

The unsymmetrical terms Eθ, Eθ′ use the same cubic pieces of ln J(x) as the numpy path
(:func:`._unsym._pieces`). At one temperature the coefficients are ``Bound.at(T)``, the
very values the numpy kernel uses; with a temperature per row the temperature-dependent
ones are evaluated per row from their basis weights in the order of
``Bound._evaluate_rows``. Results agree with the numpy kernel to rounding (summation
order differs; the tests compare both on random compositions).
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from ...constants import LN10, T_REF
from ._kernel import B_CONST, I_TINY
from ._unsym import _U_MAX, _U_MIN, _X_MAX, _X_MIN, _pieces

__all__ = ["run", "BLOCK"]

INV_LN10 = 1.0 / LN10

# numba freezes the module-level constants the compiled functions read into the code it
# caches on disk, and keys that cache on this file alone. So their values are written out
# here too: a change in their home modules stops this import (and editing the line below
# renews the cache) instead of leaving stale constants in cached code.
_WRITTEN_OUT = (2.302585092994046, 298.15, 1.2, 1e-5, 1e4, 2.2250738585072014e-308)  # LN10, T_REF, B_CONST,
# the J table range, I_TINY
if (LN10, T_REF, B_CONST, _X_MIN, _X_MAX, I_TINY) != _WRITTEN_OUT:
    raise ImportError("a constant of the compiled Pitzer kernel changed: update _WRITTEN_OUT in " + __name__)

#: Rows per block: the per-row sums and the coefficient rows of a block stay in cache.
BLOCK = 128


def _entries(con):
    """(row, column, index) of a contraction's non-zero coefficients, in storage order."""
    counts = np.diff(np.append(con.starts, len(con.cols)))
    rows = np.repeat(con.urows, counts)
    return list(zip(rows.tolist(), con.cols.tolist(), range(len(con.cols))))


class _Plan:
    """The interaction lists of a binding in species indices, derived once per binding.

    Every coefficient the lists use has an index q; ``sources[q]`` = (contraction name,
    index of its non-zero entry), so its value at one T is ``Bound.at(T)[name][index]``.
    """

    def __init__(self, bound):
        cat, an, neu = bound.cat.tolist(), bound.an.tolist(), bound.neu.tolist()
        na, nc = len(an), len(cat)
        con = bound.contractions
        self.sources: list = []
        index: dict = {}

        def q_of(name, k):
            if (name, k) not in index:
                index[(name, k)] = len(self.sources)
                self.sources.append((name, k))
            return index[(name, k)]

        # cation–anion pairs: β0, C and the Bk entries (k = which α) of each pair
        b0 = {(r, c): k for r, c, k in _entries(con["b0"])}
        C = {(r, c): k for r, c, k in _entries(con["C"])}
        Bk: dict = {}
        for r, c, k in _entries(con["Bk"]):  # rows of Bk are (α index, cation)
            Bk.setdefault((r % nc, c), []).append((r // nc, k))
        pairs, bk_ptr, bk = [], [0], []
        for i in range(nc):
            for j in range(na):
                if (i, j) not in b0 and (i, j) not in C and (i, j) not in Bk:
                    continue
                qb = q_of("b0", b0[i, j]) if (i, j) in b0 else -1  # -1: the row of zeros after the last
                pairs.append((cat[i], an[j], qb, q_of("C", C[i, j]) if (i, j) in C else -1))
                bk += [(al, q_of("Bk", k)) for al, k in Bk.get((i, j), [])]
                bk_ptr.append(len(bk))
        self.ca = np.array(pairs, dtype=np.int64).reshape(-1, 4)
        self.bk_ptr = np.array(bk_ptr, dtype=np.int64)
        self.bk = np.array(bk, dtype=np.int64).reshape(-1, 2)
        # θ over unordered pairs of the same sign
        th = [(cat[r], cat[c], q_of("thc", k)) for r, c, k in _entries(con["thc"]) if r < c]
        th += [(an[r], an[c], q_of("tha", k)) for r, c, k in _entries(con["tha"]) if r < c]
        self.th = np.array(th, dtype=np.int64).reshape(-1, 3)
        # ψ over triples (i < j of one sign, k of the other)
        ps = []
        for r, col, k in _entries(con["psiC"]):  # [c, (c', a)]
            c2, a = divmod(col, na)
            if r < c2:
                ps.append((cat[r], cat[c2], an[a], q_of("psiC", k)))
        for r, col, k in _entries(con["psiA"]):  # [a, (c, a')]
            c, a2 = divmod(col, na)
            if r < a2:
                ps.append((an[r], an[a2], cat[c], q_of("psiA", k)))
        self.ps = np.array(ps, dtype=np.int64).reshape(-1, 4)
        # λ over ordered pairs (both orders stored), ζ over (n, c, a)
        self.lam = np.array([(r, c, q_of("lam", k)) for r, c, k in _entries(con["lam"])], dtype=np.int64).reshape(-1, 3)
        ze = []
        for r, col, k in _entries(con["zN"]):  # [n, (c, a)]
            c, a = divmod(col, na)
            ze.append((neu[r], cat[c], an[a], q_of("zN", k)))
        self.ze = np.array(ze, dtype=np.int64).reshape(-1, 4)
        # Eθ over unlike-charge pairs of one sign: (i, j, k_ij, k_ii, k_jj), k into ln_prods
        prods: list = []

        def k_of(p):
            if p not in prods:
                prods.append(p)
            return prods.index(p)

        z = bound.z.tolist()
        et, combos = [], []
        for ions in (cat, an):
            for x in range(len(ions)):
                for y in range(x + 1, len(ions)):
                    zi, zj = z[ions[x]], z[ions[y]]
                    if zi != zj:  # Eθ depends on the charges only: one value per combination
                        cb = (k_of(zi * zj), k_of(zi * zi), k_of(zj * zj))
                        if cb not in combos:
                            combos.append(cb)
                        et.append((ions[x], ions[y], combos.index(cb)))
        self.et = np.array(et, dtype=np.int64).reshape(-1, 3)
        self.combos = np.array(combos, dtype=np.int64).reshape(-1, 3)
        self.zz = np.array([prods[k] for k, _, _ in combos], dtype=float)
        self.ln_prods = np.log(np.array(prods, dtype=float))
        self.absz = np.abs(bound.z).astype(float)
        self.alphas = np.asarray(bound.alphas, dtype=float)
        # basis weights of every coefficient, and which depend on T
        W = np.array([con[n].weights[k] for n, k in self.sources], dtype=float).reshape(-1, 5)
        self.W = W
        self.dep = np.flatnonzero(np.any(W[:, 1:] != 0, axis=1)).astype(np.int64)

    def values(self, P: dict) -> np.ndarray:
        """The coefficients at one temperature, from ``Bound.at(T)``."""
        return np.array([float(P[n][k]) for n, k in self.sources], dtype=float)


def _plan(bound) -> _Plan:
    plan = bound._cache.get("_compiled_plan")
    if plan is None:
        plan = bound._cache["_compiled_plan"] = _Plan(bound)
    return plan


def _frozen(x: np.ndarray) -> np.ndarray:
    """A read-only C-contiguous view (a copy only where the layout needs one): the compiled
    function then sees one signature whatever the caller's arrays, and compiles once."""
    v = np.ascontiguousarray(x, dtype=float).view()
    v.flags.writeable = False
    return v


def run(bound, m: np.ndarray, I: np.ndarray, T, Aphi, want: set) -> dict:
    """lg γ (``"lng"``), φ and Gex/(wRT) for all rows ``m`` (n, N) in one compiled pass.

    ``T`` and ``Aphi`` are scalars (one temperature) or arrays (N,). Returns the arrays of
    ``want`` ⊆ {"lng", "phi", "gex"}; "lng" is lg γ (ln γ / ln 10), shape (n, N).
    """
    plan = _plan(bound)
    n, N = m.shape
    T = np.asarray(T, dtype=float)
    nq = len(plan.sources)
    cfr = np.zeros((nq + 1, BLOCK))  # a coefficient per row of a block; the last row stays 0
    if T.ndim == 0:
        cfr[:nq] = plan.values(bound.at(T))[:, None]
        T_rows, dep = np.zeros(1), plan.dep[:0]
    else:
        cfr[:nq] = plan.W[:, :1]
        T_rows, dep = T, plan.dep
    m, I, T_rows, A = (_frozen(x) for x in (m, I, T_rows, np.asarray(Aphi, dtype=float).reshape(-1)))
    lng = np.empty((n, N) if "lng" in want else (n, 0))
    phi = np.empty(N if "phi" in want else 0)
    gex = np.empty(N if "gex" in want else 0)
    p = plan
    _blocks(
        m, I, A, T_rows, cfr, p.W, dep, p.absz, p.alphas,
        p.ca, p.bk_ptr, p.bk, p.th, p.ps, p.lam, p.ze, p.et, p.combos, p.zz, p.ln_prods,
        *_pieces(), lng, phi, gex,
    )  # fmt: skip
    return {k: v for k, v in (("lng", lng), ("phi", phi), ("gex", gex)) if k in want}


@njit(cache=True, fastmath=False)
def _g_e(x):
    """g(x), g′(x), e^(−x) as :func:`._kernel._g_funcs_e` (Taylor series below x = 0.02)."""
    if x < 0.02:
        g = 1.0 - x * (2.0 / 3.0 - x * (0.25 - x * (1.0 / 15.0 - x / 72.0)))
        gp = -x * (1.0 / 3.0 - x * (0.25 - x * (0.1 - x / 36.0)))
        return g, gp, math.exp(-x)
    e = math.exp(-x)
    r = 2.0 / (x * x)
    g = (1.0 - (x + 1.0) * e) * r
    return g, e - g, e


@njit(cache=True, fastmath=False)
def _j_xdj(lnx, u0, inv_h, knots, c0, c1, c2, c3, last):
    """J and x J′ from ln x, as :func:`._unsym._j_xdj_log` (the same cubic pieces)."""
    u = min(max(lnx, _U_MIN), _U_MAX)
    i = min(max(int((u - u0) * inv_h), 0), last)
    t = u - knots[i]
    at = c0[i] * t
    b = c1[i]
    c = c2[i]
    S = ((at + b) * t + c) * t + c3[i]
    dS = (at * 3.0 + b * 2.0) * t + c
    J = math.exp(S)
    xdJ = J * dS
    if lnx < _U_MIN or lnx > _U_MAX:
        x = math.exp(lnx)
        xdJ *= x / min(max(x, _X_MIN), _X_MAX)
        if lnx < _U_MIN:
            r = (x / _X_MIN) ** 2
            xdJ = 2.0 * J * r
            J = J * r
        else:
            J = J + (x - _X_MAX) / 4.0
            xdJ = 0.25 * x
    return J, xdJ


@njit(cache=True, fastmath=False)
def _blocks(
    m, I, A, T, cfr, W, dep, absz, alphas, ca, bk_ptr, bk, th, ps, lam, ze, et, combos, zz, ln_prods,
    u0, inv_h, knots, c0, c1, c2, c3, last, lng, phi, gex,
):  # fmt: skip
    ns, N = m.shape
    K, BR, NP = len(alphas), cfr.shape[1], len(ln_prods)
    want_lng, want_phi, want_gex = lng.shape[1] > 0, phi.shape[0] > 0, gex.shape[0] > 0
    a_step = 1 if A.shape[0] > 1 else 0
    out = np.empty((ns, BR))
    mb = np.empty((ns, BR))
    g, gp, ek, Pk = np.empty((K, BR)), np.empty((K, BR)), np.empty((K, BR)), np.empty((K, BR))
    Jv, xJv = np.empty((NP, BR)), np.empty((NP, BR))
    NC = len(combos)
    Et, Etp = np.empty((NC, BR)), np.empty((NC, BR))
    Fr = np.empty(BR)
    rowsums = np.empty((16, BR))  # per-row quantities of a block, one row each
    Ib, a, Z, tot = rowsums[0], rowsums[1], rowsums[2], rowsums[3]
    sI, opb, ln1, Bv = rowsums[4], rowsums[5], rowsums[6], rowsums[7]
    SB0, SC, sp, sE = rowsums[8], rowsums[9], rowsums[10], rowsums[11]
    sPhi, sPsi, lq, zq = rowsums[12], rowsums[13], rowsums[14], rowsums[15]
    for r0 in range(0, N, BR):
        L = min(BR, N - r0)
        for i in range(ns):
            for r in range(L):
                mb[i, r] = m[i, r0 + r]
        for r in range(L):
            Ib[r] = I[r0 + r]
            a[r] = A[(r0 + r) * a_step]
        if len(dep):  # T-dependent coefficients of these rows (order of Bound._evaluate_rows)
            for r in range(L):
                Tr = T[r0 + r]
                d = Tr - T_REF
                b1, b2, b3, b4 = 1.0 / Tr - 1.0 / T_REF, math.log(Tr / T_REF), d, d * d
                for qd in dep:
                    v = 0.0
                    if W[qd, 1] != 0.0:
                        v = v + W[qd, 1] * b1
                    if W[qd, 2] != 0.0:
                        v = v + W[qd, 2] * b2
                    if W[qd, 3] != 0.0:
                        v = v + W[qd, 3] * b3
                    if W[qd, 4] != 0.0:
                        v = v + W[qd, 4] * b4
                    cfr[qd, r] = v + W[qd, 0]
        for r in range(L):
            z = 0.0
            t = 0.0
            for i in range(ns):
                z += absz[i] * mb[i, r]
                t += mb[i, r]
            Z[r] = z
            tot[r] = t
            s = math.sqrt(Ib[r])
            sI[r] = s
            opb[r] = 1.0 + B_CONST * s
            ln1[r] = math.log1p(B_CONST * s)
            for k in range(K):
                g[k, r], gp[k, r], ek[k, r] = _g_e(alphas[k] * s)
                Pk[k, r] = 0.0
        for k in range(8, 16):
            for r in range(L):
                rowsums[k, r] = 0.0
        for i in range(ns):
            for r in range(L):
                out[i, r] = 0.0
        # Rows are indexed in place (out[i, r], not a row view out[i]): a view in these loops
        # costs a reference count each time it is formed.
        # cation–anion pairs: 2 B_ca and Z C_ca into ln γ; Σ m m β0, Σ m m Bk, Σ m m C
        for p in range(len(ca)):
            c, an, qb, qc = ca[p, 0], ca[p, 1], ca[p, 2], ca[p, 3]
            for r in range(L):
                Bv[r] = cfr[qb, r]
            for e in range(bk_ptr[p], bk_ptr[p + 1]):
                k, q = bk[e, 0], bk[e, 1]
                for r in range(L):
                    Bv[r] += cfr[q, r] * g[k, r]
                    Pk[k, r] += cfr[q, r] * mb[c, r] * mb[an, r]
            for r in range(L):
                mc, ma, wb, wc = mb[c, r], mb[an, r], cfr[qb, r], cfr[qc, r]
                t = 2.0 * Bv[r] + Z[r] * wc
                out[c, r] += t * ma
                out[an, r] += t * mc
                SB0[r] += wb * mc * ma
                SC[r] += wc * mc * ma
        # θ: 2 θ_ij m_j into ln γ_i; Σ_{i<j} 2 m_i m_j θ_ij
        for p in range(len(th)):
            i, j, q = th[p, 0], th[p, 1], th[p, 2]
            for r in range(L):
                w2 = 2.0 * cfr[q, r]
                out[i, r] += w2 * mb[j, r]
                out[j, r] += w2 * mb[i, r]
                sPhi[r] += w2 * mb[i, r] * mb[j, r]
        # ψ_ijk: into ln γ of each of the three; Σ_c m_c PsiC_c + Σ_a m_a PsiA_a = 2 Σ triples
        for p in range(len(ps)):
            i, j, k, q = ps[p, 0], ps[p, 1], ps[p, 2], ps[p, 3]
            for r in range(L):
                w, mi, mj, mk = cfr[q, r], mb[i, r], mb[j, r], mb[k, r]
                wk = w * mk
                out[i, r] += wk * mj
                out[j, r] += wk * mi
                t = w * mi * mj
                out[k, r] += t
                sPsi[r] += 2.0 * t * mk
        # Eθ, Eθ′ (0 where I ≤ 1e-20 mol/kg, as e_theta)
        if len(et):
            for r in range(L):
                if Ib[r] > 1e-20:
                    lb = math.log(6.0 * a[r] * sI[r])
                    for kp in range(NP):
                        Jv[kp, r], xJv[kp, r] = _j_xdj(lb + ln_prods[kp], u0, inv_h, knots, c0, c1, c2, c3, last)
            for cb in range(NC):  # Eθ and Eθ′ of each charge combination, per row
                kij, kii, kjj, zp = combos[cb, 0], combos[cb, 1], combos[cb, 2], zz[cb]
                for r in range(L):
                    Ir = Ib[r]
                    if Ir > 1e-20:
                        q = zp * (0.25 / Ir)  # z_i z_j / (4 I)
                        e1 = q * (Jv[kij, r] - 0.5 * Jv[kii, r] - 0.5 * Jv[kjj, r])
                        Et[cb, r] = e1
                        Etp[cb, r] = (0.5 * q * (xJv[kij, r] - 0.5 * xJv[kii, r] - 0.5 * xJv[kjj, r]) - e1) / Ir
                    else:
                        Et[cb, r] = 0.0
                        Etp[cb, r] = 0.0
            for p in range(len(et)):
                i, j, cb = et[p, 0], et[p, 1], et[p, 2]
                for r in range(L):
                    e1, mi, mj = Et[cb, r], mb[i, r], mb[j, r]
                    out[i, r] += 2.0 * e1 * mj
                    out[j, r] += 2.0 * e1 * mi
                    sp[r] += Etp[cb, r] * mi * mj
                    sE[r] += e1 * mi * mj
        # λ (ordered pairs) and ζ
        for p in range(len(lam)):
            i, j, q = lam[p, 0], lam[p, 1], lam[p, 2]
            for r in range(L):
                out[i, r] += 2.0 * cfr[q, r] * mb[j, r]
                lq[r] += mb[i, r] * cfr[q, r] * mb[j, r]
        for p in range(len(ze)):
            nn, c, an, q = ze[p, 0], ze[p, 1], ze[p, 2], ze[p, 3]
            for r in range(L):
                w, mn, mc, ma = cfr[q, r], mb[nn, r], mb[c, r], mb[an, r]
                out[nn, r] += w * mc * ma
                out[c, r] += w * mn * ma
                out[an, r] += w * mn * mc
                zq[r] += w * mn * mc * ma
        # the per-row closing terms
        for r in range(L):
            Ir = Ib[r]
            inv_I = 1.0 / Ir if Ir >= I_TINY else 0.0  # see I_TINY in _kernel
            Sp = 0.0
            Sg = 0.0
            Sphi = SB0[r]
            for k in range(K):
                Sp += gp[k, r] * inv_I * Pk[k, r]
                Sg += g[k, r] * Pk[k, r]
                Sphi += ek[k, r] * Pk[k, r]
            Fr[r] = -a[r] * (sI[r] / opb[r] + (2.0 / B_CONST) * ln1[r]) + Sp + sp[r]
            sPh = 2.0 * sE[r] + sPhi[r]
            if want_phi:
                acc = 2.0 * (-a[r] * Ir * sI[r] / opb[r] + Sphi + Z[r] * SC[r] + 0.5 * (sPh + sPsi[r]) + Ir * sp[r])
                acc += lq[r] + 2.0 * zq[r]
                phi[r0 + r] = 1.0 + acc / tot[r] if tot[r] > 0 else 1.0
            if want_gex:
                gex[r0 + r] = (
                    -a[r] * (4.0 * Ir / B_CONST) * ln1[r]
                    + 2.0 * (SB0[r] + Sg) + Z[r] * SC[r] + sPh + 0.5 * sPsi[r] + lq[r] + zq[r]
                )  # fmt: skip
        if want_lng:
            for i in range(ns):
                zi = absz[i]
                for r in range(L):
                    lng[i, r0 + r] = (out[i, r] + ((zi * zi) * Fr[r] + zi * SC[r])) * INV_LN10
