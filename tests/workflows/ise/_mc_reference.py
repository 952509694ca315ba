"""The Monte Carlo of unknowns as it was before its speed work (reference for the tests).

``activity.workflows.ise._mc`` at commit 017c47c: the Newton iteration on x = ln m (a logarithm
of the total and e^x per pass, elements frozen once settled), the statistics merged per block,
kept here so that the faster kernel can be compared with it on the same draws. The pieces
that did not change come from the package: the γ terms, the polynomial A(T), B(T) (evaluated
per block, as then), the setup of a run, the draws of a block and the below-detection error.
"""

from __future__ import annotations

from typing import Any

import numpy as np
from numpy.typing import NDArray

from activity.constants import LN10
from activity.workflows.ise._mc import (
    MAX_NEWTON,
    MCDraws,
    _below_detection,
    _draw_block,
    _general,
    _setup,
    _totals,
    _water_AB,
)
from activity.workflows.ise._model import nernst_slope_z


def _newton(
    reader: Any,
    terms: dict,
    tot: NDArray,
    Kvals: list,
    A: Any,
    B: Any,
    scale: Any,
    m0: NDArray,
    tot0: NDArray,
    rtol: float,
) -> NDArray | None:
    """Molality of every element of a block (NaN below detection); None if some did not settle.

    ``tot`` is the reading's total less a₀ (aᵢ + Σ Kᵢⱼ·aⱼ^(zᵢ/zⱼ)), ``m0`` and ``tot0`` the
    sample's estimate and its total. Newton on F(x) = x + ln10·lg γᵢ(I(eˣ)) − ln aᵢ(x) = 0, x = ln m
    (aᵢ moves with x only through the interferents' γ), all elements at once, started from
    m0·tot/tot0 (γ as at the estimate). An element stops once its step is within ``rtol`` or,
    from the second pass, once the step predicted by the quadratic convergence,
    |δₖ|³/|δₖ₋₁|², is; it is then left as it is.
    """
    shape = tot.shape
    sq = reader.charges.astype(float) ** 2
    I_mat = 0.5 * np.tensordot(sq, reader.base, axes=(0, 0))  # per sample
    w = 0.5 * sq[reader.i] + (0.5 * sq[reader.c] * reader.ratio if reader.c is not None else 0.0)
    Ib = scale * I_mat
    inter = [(terms[idx], r, K, scale * reader.base[idx]) for (_, idx, r, _), K in zip(reader.inter, Kvals)]
    prim = terms[reader.i]
    below = tot <= 0
    any_below = bool(below.any())
    t = np.where(below, 1.0, tot) if any_below else tot
    ln_tot = np.log(t)
    if terms["ideal"] and not inter:
        return np.where(below, np.nan, t)
    r0 = m0 / tot0
    m = t * r0
    x = ln_tot + np.log(r0)
    done = below.copy() if any_below else np.zeros(shape, bool)
    gone = done.copy()
    prev = None
    for _ in range(MAX_NEWTON):
        I = np.multiply(m, w)
        I += Ib
        s = np.sqrt(I)
        lg, dlg = prim.lg(A, B, I, s)
        dlg *= LN10 * w
        dlg *= m
        dF = np.add(dlg, 1.0, out=dlg)
        if inter:
            ai = np.array(t)
            dai = np.zeros(shape)
            for tj, r, K, mj in inter:
                lgj, dlgj = tj.lg(A, B, I, s)
                aj = mj * np.exp(LN10 * lgj)
                term = K * (aj if r == 1 else aj**r)
                ai -= term
                dai -= term * r * LN10 * dlgj * w * m
            g = ai <= 0
            gone |= g
            done |= g
            ai = np.where(g, 1.0, ai)
            F = x + LN10 * lg - np.log(ai)
            dF = dF - dai / ai
        else:
            lg *= LN10
            F = np.add(x, lg, out=lg)
            F -= ln_tot
        if prev is None or inter:
            if np.any((dF < 0.05) & ~done):  # γ rises too steeply with m here: the general reader takes it
                return None
        step = np.divide(F, dF, out=F)
        np.clip(step, -5.0, 5.0, out=step)
        if prev is not None or any_below or inter:
            step[done] = 0.0
        x -= step
        a = np.abs(step)
        if prev is not None and float(a.max()) < 1e-4:
            # m·e^(−δ) = m·(1 − δ + δ²/2 − δ³/6): for |δ| < 1e-4 the rest is below 5e-18 relative
            e = step * (-1.0 / 6.0)
            e += 0.5
            e *= step
            e -= 1.0
            e *= step
            e += 1.0
            m *= e
        else:
            m = np.exp(x, out=m)
        if prev is None:
            done |= a <= rtol
        else:
            # stop where the step is within rtol, or where the next one, by the quadratic
            # convergence, would be: |δₖ|³/|δₖ₋₁|² ≤ rtol (this also stops a step that grew,
            # but only once it is within rtol itself)
            done |= (a <= rtol) | (a * a * a <= rtol * prev * prev)
        if done.all():
            return np.where(gone, np.nan, m) if (any_below or inter) else m
        prev = a
    return None


# ----------------------------------------------------------------------- the run
def run_monte_carlo(
    reader: Any,
    draws: MCDraws,
    E: NDArray,
    m_start: NDArray,
    trials: int,
    seed: Any,
    rtol: float,
    block: int | None = None,
    bar: Any = None,
) -> tuple[NDArray, NDArray, NDArray, NDArray]:
    """The run before the speed work: mean, SD, reference and the sorted float32 offsets."""
    su = _setup(reader, draws, E, m_start, trials, seed, block)
    cal, E, k_s, m0, tot0, terms, need_B = reader.cal, su.E, su.k_s, su.m0, su.tot0, su.terms, su.need_B
    store = np.empty((k_s, trials), np.float32)
    reference = None
    sums = np.zeros(k_s)
    m2 = np.zeros(k_s)
    count = 0
    c_s = nernst_slope_z(1.0, cal.z)  # s(T) = c_s·T
    for start in range(0, trials, su.tb):
        n = min(su.tb, trials - start)
        shape = (n, k_s)
        Eb = np.empty(shape)
        T, scale, dmodel, E0, kf, a0, Kd, Kvals = _draw_block(su, reader, draws, n, Eb)
        m = None
        if terms is not None:
            tot = _totals(Eb, E0, kf, c_s, T, a0)
            if draws.u_T > 0 or not start:  # else A, B as in the first block
                A, B = _water_AB(T, np.broadcast_to(su.P0[:1] if su.T_uniform else su.P0, np.shape(T)), need_B)
            m = _newton(reader, terms, tot, Kvals, A, B, scale, m0, tot0, rtol)
            if m is None:  # the general reader on this block
                Eb = E0 + np.log10(tot + a0) * (kf * c_s * T)  # the drawn readings again
        if m is None:
            m = _general(reader, Eb, shape, m0, E0, kf, a0, Kd, T, scale)
        y = m if dmodel is None else m + dmodel * su.spread_scale
        if not np.all(np.isfinite(y)):
            raise _below_detection(y, E)
        if reference is None:
            reference = y.mean(axis=0)
        d = y - reference  # offsets from the reference: also the float64 moments are taken on them
        bm = d.mean(axis=0)
        d2 = d - bm
        bm2 = np.einsum("ij,ij->j", d2, d2)
        if count:
            delta = bm - sums
            tot_n = count + n
            sums = sums + delta * n / tot_n
            m2 = m2 + bm2 + delta * delta * count * n / tot_n
        else:
            sums, m2 = bm, bm2
        count += n
        store[:, start : start + n] = d.T
        if bar is not None:
            bar.update(n * k_s)
    store.sort(axis=1)
    sd = np.sqrt(m2 / (count - 1)) if count > 1 else np.zeros(k_s)
    return reference + sums, sd, reference, store
