"""The batched equilibrium solver: Newton–Raphson on ln of the free component molalities.

Unknowns are u_c = ln m_c of the free components (rows × n). Every species follows from
them by mass action,

    ln m_s = ln β_s(T) + Σ_c ν_sc (u_c + ln γ_c) − ln γ_s,

and each component contributes one equation, chosen by its *closure*:

* ``mass``: Σ_s ν_sc m_s = total_c (scaled by the total; for H⁺ by the gross amount of
  protons put in, since its net total may be 0 or negative); a component whose total is 0 in
  a row is pinned at a negligible molality there;
* ``charge``: Σ_s z_s m_s = 0 (scaled by the gross charge put in) — charge balance on
  that ion;
* ``activity``: ln m_s + ln γ_s = target for one species s made of the component — a fixed
  pH (s = H⁺) or a fixed gas partial pressure (s = the dissolved gas).

With γ held at its current value the Jacobian is exact: ∂m_s/∂u_c = ν_sc m_s, so the
mass rows are J_ck = Σ_s ν_sc ν_sk m_s / total_c — one (sparse) matrix product with a
precomputed (n_species × n²) weight matrix for all rows. The activity coefficients of the
chosen model are recomputed from the speciated composition (``GAMMA_SWEEPS`` times per
step), and their dependence on ionic strength enters the Jacobian as a rank-one term
(∂ln γ/∂I from a relative change ``EPS_I`` of all molalities, exact for models whose γ
depends on I alone); iteration stops when both the residuals and the change of ln γ are
below tolerance (the fixed point of γ and speciation). The steps of all rows are solved in
one batched ``numpy.linalg.solve``; each step is limited to a change of ``MAX_STEP`` in
ln m and, while a row's residual is above ``NEAR``, backtracked (halved up to
``BACKTRACKS`` times) where it does not decrease the residual norm. Converged rows drop
out of the working set; rows are processed in blocks of ``CHUNK`` (bounded memory). Rows
that do not converge within ``max_iter`` are reported by number; the solver never returns
an unconverged row as if it were a result.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from activity.constants import LN10
from activity.solution import Solution

__all__ = ["CHUNK", "SolveOutput", "System", "solve", "solve_blocks", "start"]

#: Largest change of ln m per Newton step (about 1.7 decades).
MAX_STEP = 4.0
#: Rows whose largest scaled residual is below this take Newton steps without a line search.
NEAR = 1e-3
#: Step halvings tried when a step does not reduce the residual.
BACKTRACKS = 8
#: Updates of γ at fixed free components per Newton step (each shrinks the lag of γ).
GAMMA_SWEEPS = 2
#: Relative change of all molalities used to estimate ∂ln γ/∂I by a difference.
EPS_I = 1e-4
#: ln m of a component absent from a row (m ≈ 1e-300 mol/kg).
LN_ABSENT = -690.0


class _RightSparse:
    """A sparse matrix S applied from the right, ``X @ S`` = (Sᵀ Xᵀ)ᵀ, with Sᵀ stored once
    (scipy would build the transpose on every product)."""

    __slots__ = ("ST",)
    __array_ufunc__ = None  # makes ndarray @ self defer to __rmatmul__

    def __init__(self, ST):
        self.ST = ST

    def __rmatmul__(self, X: np.ndarray) -> np.ndarray:
        return (self.ST @ X.T).T


@dataclass(frozen=True, eq=False)
class System:
    """A network bound to the species of one problem (precomputed arrays).

    Attributes
    ----------
    species : tuple of str
        Components first (``n``), then formed species.
    charges : ndarray (n_species,)
    nu : ndarray (n_species, n)
        Stoichiometry in components (identity block for the components).
    """

    species: tuple
    charges: np.ndarray
    nu: np.ndarray

    @property
    def n(self) -> int:
        return self.nu.shape[1]

    def __post_init__(self):
        nu = self.nu
        n = nu.shape[1]
        object.__setattr__(self, "nuT", np.ascontiguousarray(nu.T))
        object.__setattr__(self, "W", np.einsum("sj,sk->sjk", nu, nu).reshape(len(nu), n * n))
        object.__setattr__(self, "zn", self.charges[:, None] * nu)
        object.__setattr__(self, "absz", np.abs(self.charges).astype(float))
        object.__setattr__(self, "z2", self.charges.astype(float) ** 2)
        # ν is sparse (a species holds 1-3 components): sparse products beat dense BLAS on
        # these thin matrices by a factor of about 2-4
        from scipy import sparse

        for name in ("nu", "nuT", "W", "zn"):
            object.__setattr__(self, "sp_" + name, _RightSparse(sparse.csr_matrix(getattr(self, name).T)))


@dataclass
class SolveOutput:
    """What :func:`solve` returns (rows first)."""

    lnm: np.ndarray  # (N, n_species)
    lng: np.ndarray  # (N, n_species)
    converged: np.ndarray  # (N,)
    iterations: np.ndarray  # (N,)
    residual: np.ndarray  # (N,) largest scaled residual


def _lng(model: Any, system: System, m: np.ndarray, T: np.ndarray, P: np.ndarray) -> np.ndarray:
    sol = Solution._from_arrays(system.species, system.charges, m.T, T, P)
    return LN10 * np.asarray(model.log10_gamma(sol)).reshape(len(system.species), -1).T


def _species_lnm(system: System, lnk: np.ndarray, u: np.ndarray, lng: np.ndarray) -> np.ndarray:
    return lnk + (u + lng[:, : system.n]) @ system.sp_nuT - lng


def _residual(system, m, lna, u, totals, scale, kinds, charge_col, act_cols, act_species, targets, want_j=True):
    """Scaled residuals (N, n) and, if asked, the Jacobian (N, n, n)."""
    n = system.n
    calc = m @ system.sp_nu
    res = (calc - totals) / scale
    J = (m @ system.sp_W).reshape(-1, n, n) / scale[:, :, None] if want_j else None
    if charge_col is not None:
        s = scale[:, charge_col]
        res[:, charge_col] = (m @ system.charges.astype(float)) / s
        if want_j:
            J[:, charge_col, :] = (m @ system.sp_zn) / s[:, None]
    for col, sp, tgt in zip(act_cols, act_species, targets):
        res[:, col] = lna[:, sp] - tgt
        if want_j:
            J[:, col, :] = system.nu[sp]
    pinned = kinds & (totals <= 0)
    if np.any(pinned):
        rr, cc = np.nonzero(pinned)
        res[rr, cc] = u[rr, cc] - LN_ABSENT
        if want_j:
            J[rr, cc, :] = 0.0
            J[rr, cc, cc] = 1.0
    return res, J


def start(
    system: System, lnk: np.ndarray, totals: np.ndarray, cols: np.ndarray, u0: np.ndarray, sweeps: int = 6
) -> np.ndarray:
    """A starting point: rescale each free component so its computed total matches the given one.

    Successive substitution at fixed H⁺ and γ = 1 (all ``cols`` at once, ``sweeps``
    times): u_c ← u_c + ½ ln(total_c / computed_c) / max_s ν_sc. Keeps the first Newton
    steps away from the huge overshoots a start at "free = total" gives when most of a
    component is bound (phosphate at pH 7, calcium in EDTA).
    """
    u = np.array(u0, dtype=float)
    if not np.any(cols):
        return u
    cidx = np.flatnonzero(cols)
    numax = np.maximum(np.max(system.nu[:, cidx], axis=0), 1.0)
    zero = np.zeros_like(lnk)
    for _ in range(sweeps):
        lnm = _species_lnm(system, lnk, u, zero)
        m = np.exp(np.clip(lnm, -700.0, 230.0))
        calc = m @ system.nu[:, cidx]
        tot = totals[:, cidx]
        ok = tot > 0
        ratio = np.where(ok, np.log(np.where(ok, tot, 1.0) / np.maximum(calc, 1e-300)), 0.0)
        u[:, cidx] += 0.5 * ratio / numax  # damped: coupled pairs (Ca with EDTA) oscillate otherwise
    return u


def solve(
    system: System,
    lnk: np.ndarray,
    totals: np.ndarray,
    scale: np.ndarray,
    pin_cols: np.ndarray,
    charge_col: int | None,
    act_cols: list[int],
    act_species: list[int],
    act_targets: list[np.ndarray],
    model: Any,
    T: np.ndarray,
    P: np.ndarray,
    u0: np.ndarray,
    *,
    tol: float = 1e-11,
    gamma_tol: float = 1e-10,
    max_iter: int = 200,
    coupled: bool = True,
) -> SolveOutput:
    """Solve all rows; arrays are rows first.

    Parameters
    ----------
    lnk : (N, n_species) ln β of each species (0 for components).
    totals : (N, n) component totals (used by mass rows only).
    scale : (N, n) positive constants dividing the mass and charge residuals (the totals;
        for H⁺ and for the charge row, the gross amount of protons or charge put in).
    pin_cols : (n,) bool, components closed by mass balance that may be absent from a row
        (pinned at a negligible molality where their total is 0).
    charge_col : index of the component closed by charge balance, or None.
    act_cols, act_species, act_targets : components closed by a fixed activity: the species
        whose ln a is fixed and the target ln a per row (N,) (ln γ-dependent targets are not
        needed: the residual uses ln m + ln γ).
    T, P : (N,) or scalar arrays.
    u0 : (N, n) starting ln m of the components.
    """
    N, n = totals.shape
    ns = len(system.species)
    u = np.array(u0, dtype=float)
    lng = np.zeros((N, ns))
    lnm_out = np.empty((N, ns))
    converged = np.zeros(N, dtype=bool)
    iterations = np.zeros(N, dtype=int)
    resid = np.full(N, np.inf)
    act = np.arange(N)
    T_rows = np.broadcast_to(T, (N,)) if np.ndim(T) else T
    P_rows = np.broadcast_to(P, (N,)) if np.ndim(P) else P
    kinds = np.broadcast_to(pin_cols, (N, n))
    targets_all = [np.broadcast_to(t, (N,)) for t in act_targets]
    for it in range(1, max_iter + 1):
        ua, ga = u[act], lng[act]
        lk, tot, kd, sc = lnk[act], totals[act], kinds[act], scale[act]
        tg = [t[act] for t in targets_all]
        Ta = T_rows[act] if np.ndim(T_rows) else T_rows
        Pa = P_rows[act] if np.ndim(P_rows) else P_rows
        lnm = _species_lnm(system, lk, ua, ga)
        m = np.exp(np.minimum(lnm, 230.0))
        g_new = ga
        for _ in range(GAMMA_SWEEPS):
            g_prev, g_new = g_new, _lng(model, system, m, Ta, Pa)
            lnm = _species_lnm(system, lk, ua, g_new)
            m = np.exp(np.minimum(lnm, 230.0))
        dg = np.max(np.abs(g_new - g_prev), axis=1)
        res, J = _residual(system, m, lnm + g_new, ua, tot, sc, kd, charge_col, act_cols, act_species, tg)
        err = np.max(np.abs(res), axis=1)
        lng[act] = g_new
        iterations[act] = it
        resid[act] = err
        done = (err < tol) & (dg < gamma_tol)
        if np.any(done):
            idx = act[done]
            converged[idx] = True
            lnm_out[idx] = lnm[done]
        keep = ~done
        if not np.any(keep):
            act = act[:0]
            break
        act, ua, g_new, res, J = act[keep], ua[keep], g_new[keep], res[keep], J[keep]
        lk, tot, kd, sc = lk[keep], tot[keep], kd[keep], sc[keep]
        tg = [t[keep] for t in tg]
        if coupled:
            # ln γ follows I: add ∂ln γ/∂I · ∂I/∂u to the Jacobian (a rank-one term per row)
            m_k = m[keep]
            Ta_k = Ta[keep] if np.ndim(Ta) else Ta
            Pa_k = Pa[keep] if np.ndim(Pa) else Pa
            I = 0.5 * (m_k @ system.z2)
            g_eps = _lng(model, system, m_k * (1.0 + EPS_I), Ta_k, Pa_k)
            G = (g_eps - g_new) / np.maximum(EPS_I * I, 1e-300)[:, None]
            D = G[:, :n] @ system.sp_nuT - G
            dI = (0.5 * m_k * system.z2) @ system.sp_nu
            mD = m_k * D
            a = (mD @ system.sp_nu) / sc
            if charge_col is not None:
                a[:, charge_col] = (mD @ system.charges.astype(float)) / sc[:, charge_col]
            for col, sp in zip(act_cols, act_species):
                a[:, col] = G[:, :n] @ system.nu[sp]
            pinned = kd & (tot <= 0)
            a[pinned] = 0.0
            J += a[:, :, None] * dI[:, None, :]
        bad = ~np.all(np.isfinite(J), axis=(1, 2)) | ~np.all(np.isfinite(res), axis=1)
        J[bad] = np.eye(n)
        res[bad] = 0.0
        try:
            step = np.linalg.solve(J, -res[:, :, None])[:, :, 0]
        except np.linalg.LinAlgError:
            ridge = 1e-12 * np.maximum(np.abs(np.diagonal(J, axis1=1, axis2=2)), 1e-300)
            step = np.linalg.solve(J + ridge[:, :, None] * np.eye(n), -res[:, :, None])[:, :, 0]
        step = np.where(np.isfinite(step), step, 0.0)
        big = np.max(np.abs(step), axis=1)
        lam = np.minimum(1.0, MAX_STEP / np.maximum(big, 1e-300))
        trial = ua + lam[:, None] * step
        # backtracking only away from the solution; where every scaled residual is already
        # below NEAR the step is taken whole (the quadratic regime of Newton's method, where
        # checking would cost an extra pass)
        far = np.flatnonzero(err[keep] > NEAR)
        if far.size:
            f0 = np.sum(res[far] ** 2, axis=1)
            lam_f, step_f, u_f, g_f = lam[far], step[far], ua[far], g_new[far]
            lk_f, tot_f, sc_f, kd_f = lk[far], tot[far], sc[far], kd[far]
            tg_f = [t[far] for t in tg]
            trial_f = trial[far]
            for _ in range(BACKTRACKS):
                lnm_t = _species_lnm(system, lk_f, trial_f, g_f)
                m_t = np.exp(np.minimum(lnm_t, 230.0))
                r_t, _ = _residual(
                    system,
                    m_t,
                    lnm_t + g_f,
                    trial_f,
                    tot_f,
                    sc_f,
                    kd_f,
                    charge_col,
                    act_cols,
                    act_species,
                    tg_f,
                    want_j=False,
                )
                f1 = np.sum(r_t * r_t, axis=1)
                worse = ~(f1 <= f0 * (1.0 - 1e-4 * lam_f)) & (f0 > tol * tol)
                if not np.any(worse):
                    break
                lam_f = np.where(worse, lam_f * 0.5, lam_f)
                trial_f = np.where(worse[:, None], u_f + lam_f[:, None] * step_f, trial_f)
            trial[far] = trial_f
        u[act] = trial
    if act.size:
        lnm_out[act] = _species_lnm(system, lnk[act], u[act], lng[act])
    return SolveOutput(lnm_out, lng, converged, iterations, resid)


#: Rows solved together: bounds the temporary memory (the Jacobians alone take
#: 8 n² bytes per row) and keeps the working arrays in cache.
CHUNK = 8192


def solve_blocks(
    system: System,
    lnk: np.ndarray,
    totals: np.ndarray,
    scale: np.ndarray,
    pin_cols: np.ndarray,
    charge_col: int | None,
    act_cols: list[int],
    act_species: list[int],
    act_targets: list[np.ndarray],
    model: Any,
    T: np.ndarray,
    P: np.ndarray,
    u0: np.ndarray,
    **kw: Any,
) -> SolveOutput:
    """:func:`start` and :func:`solve` on blocks of :data:`CHUNK` rows (same arguments)."""
    N = totals.shape[0]
    parts = []
    for lo in range(0, N, CHUNK):
        sl = slice(lo, min(N, lo + CHUNK))
        u_start = start(system, lnk[sl], totals[sl], pin_cols, u0[sl])
        parts.append(
            solve(
                system,
                lnk[sl],
                totals[sl],
                scale[sl],
                pin_cols,
                charge_col,
                act_cols,
                act_species,
                [t[sl] for t in act_targets],
                model,
                T[sl] if np.ndim(T) else T,
                P[sl] if np.ndim(P) else P,
                u_start,
                **kw,
            )
        )
    if len(parts) == 1:
        return parts[0]
    return SolveOutput(
        *(np.concatenate([getattr(p, f) for p in parts]) for f in ("lnm", "lng", "converged", "iterations", "residual"))
    )
