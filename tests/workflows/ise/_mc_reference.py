"""The Monte Carlo of unknowns as it was before its speed work (reference for the tests).

``activity.workflows.ise._mc`` at commit 017c47c: the Newton iteration on x = ln m (a logarithm
of the total and e^x per pass, elements frozen once settled), the statistics merged per block,
kept here unchanged so that the faster kernel can be compared with it on the same draws.
The pieces that did not change (the γ terms, the polynomial A(T), B(T)) come from the package.
"""

from __future__ import annotations

from typing import Any

import numpy as np
from numpy.typing import NDArray

from activity.constants import LN10
from activity.errors import InputError
from activity.workflows.ise._mc import BLOCK, MAX_NEWTON, MAX_STORE_BYTES, MCDraws, _DHTerms, _fast_terms, _water_AB
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
    """Monte Carlo of every sample at once (``bar``: a progress bar advanced per block).

    Returns
    -------
    mean, sd : ndarray
        Per sample (flattened sample axis).
    reference : ndarray
        Per sample: the mean of its first block (the float32 store holds offsets from it).
    offsets : ndarray, float32, shape (samples, trials)
        Sorted values minus the reference, per sample (for coverage intervals).
    """
    cal = reader.cal
    E = np.ravel(np.asarray(E, float))
    k_s = E.size
    m0 = np.ravel(np.broadcast_to(m_start, (k_s,)))
    m0 = np.where(np.isfinite(m0) & (m0 > 0), m0, 1e-3)
    spread_scale = np.ravel(np.broadcast_to(draws.spread_scale, (k_s,)))
    T0 = np.ravel(np.broadcast_to(reader.T0, reader.matrix.shape)) * np.ones(k_s)
    P0 = np.ravel(np.broadcast_to(reader.P0, reader.matrix.shape)) * np.ones(k_s)
    T_uniform = bool(np.ptp(T0) == 0)
    terms = _fast_terms(reader)
    need_B = terms is not None and any(isinstance(v, _DHTerms) and v.size for key, v in terms.items() if key != "ideal")
    n_cal = len(draws.cal_keys)
    wv, V = np.linalg.eigh(draws.cal_cov)
    L = V * np.sqrt(np.clip(wv, 0.0, None))  # cov = L Lᵀ, also when a parameter has no uncertainty
    lgk_keys = [key for key in draws.cal_keys if key.startswith("lgK_")]
    rng = np.random.default_rng(seed)
    tb = max(1, min(trials, (block or BLOCK) // max(k_s, 1)))
    if k_s * trials * 4 > MAX_STORE_BYTES:
        raise InputError(
            f"{k_s} samples × {trials} trials need {k_s * trials * 4 / 1e9:.1f} GB for the values behind the "
            f"coverage intervals (limit {MAX_STORE_BYTES / 1e9:g} GB): read the samples in groups, or use fewer trials",
            field="trials",
            value=trials,
        )
    store = np.empty((k_s, trials), np.float32)
    reference = None
    sums = np.zeros(k_s)
    m2 = np.zeros(k_s)
    count = 0
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        tot0 = 10.0 ** ((E - cal.E0) / (cal.slope_factor * nernst_slope_z(T0, cal.z))) - cal.a0
    tot0 = np.where(np.isfinite(tot0) & (tot0 > 0), tot0, m0)
    c_s = nernst_slope_z(1.0, cal.z)  # s(T) = c_s·T
    for start in range(0, trials, tb):
        n = min(tb, trials - start)
        shape = (n, k_s)
        c = rng.standard_normal((n, n_cal)) @ L.T  # the calibration, one call
        c += draws.cal_mean
        q = {key: c[:, j : j + 1] for j, key in enumerate(draws.cal_keys)}
        Eb = rng.standard_normal(shape) if draws.u_emf > 0 else np.zeros(shape)
        Eb *= draws.u_emf
        Eb += E
        # temperature, matrix and model choice: one draw per trial, shared by the samples (each
        # sample's distribution is the same as with draws of its own; see the module notes)
        dT = rng.standard_normal((n, 1)) * draws.u_T if draws.u_T > 0 else np.zeros((1, 1))
        T = T0 + dT if not T_uniform else T0[:1] + dT  # (n, k) or (n, 1)
        scale = 1.0 + rng.standard_normal((n, 1)) * draws.u_scale if draws.u_scale > 0 else np.ones((1, 1))
        dmodel = rng.uniform(-1.0, 1.0, (n, 1)) * draws.model_half if draws.model_half > 0 else None
        E0 = 1e-3 * q["E0"] if "E0" in q else cal.E0  # the E0 input is in mV
        kf = q.get("k", cal.slope_factor)
        a0 = np.exp(LN10 * q["lga0"]) if "lga0" in q else cal.a0
        Kd = {j: 10.0 ** q[key] for (j, _, _, _), key in zip(reader.inter, lgk_keys)} if lgk_keys else {}
        Kvals = [Kd.get(j, Kj) for j, _, _, Kj in reader.inter]
        m = None
        if terms is not None:
            inv = LN10 / (kf * c_s * T)
            Eb -= E0
            Eb *= inv
            with np.errstate(over="ignore"):
                tot = np.exp(Eb, out=Eb)
            tot -= a0
            if draws.u_T > 0 or not start:  # else A, B as in the first block
                A, B = _water_AB(T, np.broadcast_to(P0[:1] if T_uniform else P0, np.shape(T)), need_B)
            m = _newton(reader, terms, tot, Kvals, A, B, scale, m0, tot0, rtol)
            if m is None:  # the general reader on this block
                Eb = E0 + np.log10(tot + a0) * (kf * c_s * T)  # the drawn readings again
        if m is None:
            m = reader.solve(
                Eb,
                E0=E0,
                k=kf,
                a0=a0,
                K=Kd,
                T=np.broadcast_to(T, shape),
                scale=np.broadcast_to(scale, shape),
                m_start=m0,
                details=False,
            )
        y = m if dmodel is None else m + dmodel * spread_scale
        bad = ~np.isfinite(y)
        if np.any(bad):
            cols = np.flatnonzero(bad.any(axis=0))
            raise InputError(
                f"{int(np.count_nonzero(bad))} of {n * k_s} Monte Carlo trials fall below detection (the drawn "
                f"reading is at or below what a0 and the interferents give) for sample(s) {cols[:10].tolist()}; "
                "the uncertainty of such a reading is not defined by this model",
                field="emf",
                value=float(E[cols[0]]),
            )
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
