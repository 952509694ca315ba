"""The batched equilibrium solver: Newton–Raphson on ln of the free component molalities.

Unknowns are u_c = ln m_c of the free components. Every species follows from them by mass
action,

    ln m_s = ln β_s(T) + Σ_c ν_sc (u_c + ln γ_c) − ln γ_s,

and each component contributes one equation, chosen by its *closure*:

* ``mass``: Σ_s ν_sc m_s = total_c (scaled by the total; for H⁺ by the gross amount of
  protons put in, since its net total may be 0 or negative); a component whose total is 0 in
  a row is pinned at a negligible molality there;
* ``charge``: Σ_s z_s m_s = 0 (scaled by the gross charge put in) — charge balance on
  that ion;
* ``activity``: ln m_s + ln γ_s = target for one species s made of the component — a fixed
  pH (s = H⁺) or a fixed gas partial pressure (s = the dissolved gas).

With γ held fixed the Jacobian is exact: ∂m_s/∂u_c = ν_sc m_s, so the mass rows are
S = νᵀ diag(m) ν (scaled by the totals) — one dense product with a precomputed
(n² × n_species) weight matrix for all rows.

**γ in the loop.** For models whose γ depends on the ionic strength alone (the
Debye–Hückel family, Davies, ideal), ln I is a further unknown with the equation
½ Σ z_s² m_s / I = 1; γ is evaluated at that I, so the Newton step treats the coupling
exactly (∂m_s/∂ln I = m_s I (Σ_c ν_sc G_c − G_s), G = ∂ln γ/∂I by a difference of
relative size ``EPS_I``) and converges quadratically with one exponential pass per step.
For other models (Pitzer, plug-ins) γ is recomputed from the speciated composition
``GAMMA_SWEEPS`` times per step and its dependence on I enters the Jacobian as a rank-one
term. Either way iteration stops when the residuals are below ``tol`` and the change of
ln γ below ``gamma_tol`` (the fixed point of γ and speciation).

**The linear step.** Without fixed-activity closures the charge row is a combination of
the mass rows (z_s = Σ_c ν_sc z_c), so after a change of rows the matrix is the symmetric
positive definite S; the coupling to I is a border (or rank-one) term. The step then takes
one Cholesky factorisation over all rows (:func:`~activity.speciation._batched.spd_solve`)
with two right-hand sides. With fixed activities (pH, gases, metal buffers) the full
Jacobian is solved by ``numpy.linalg.solve``. Each step is limited to a change of
``MAX_STEP`` in ln m and, while a row's residual is above ``NEAR``, backtracked (halved up
to ``BACKTRACKS`` times) where it does not decrease the residual norm.

**Rows.** Arrays are held rows last (species × rows: each operation is a pass over
contiguous rows); converged rows leave the working set at once; rows are processed in
blocks of ``CHUNK`` (bounded memory, arrays kept in cache). Rows that do not converge
within ``max_iter`` are reported by number; the solver never returns an unconverged row
as if it were a result.
"""

from __future__ import annotations

from dataclasses import dataclass
from types import SimpleNamespace
from typing import Any

import numpy as np

from ..coefficients._dh_form import DebyeHuckelForm
from ..coefficients.davies import DaviesModel
from ..coefficients.ideal import IdealModel
from ..constants import LN10
from ..solution import Solution
from ._batched import SparseCholesky

__all__ = ["CHUNK", "SolveOutput", "System", "solve", "solve_blocks", "start"]

#: Largest change of ln m per Newton step (about 1.7 decades).
MAX_STEP = 4.0
#: Rows whose largest scaled residual is below this take Newton steps without a line search.
NEAR = 1e-3
#: Step halvings tried when a step does not reduce the residual.
BACKTRACKS = 8
#: Updates of γ at fixed free components per Newton step (models whose γ is not a function of I).
GAMMA_SWEEPS = 2
#: Relative change of I (or of all molalities) used to estimate ∂ln γ/∂I by a difference.
EPS_I = 1e-4
#: ln m of a component absent from a row (m ≈ 1e-300 mol/kg).
LN_ABSENT = -690.0
#: With γ a function of I (quadratic convergence) rows stop at this fraction of ``tol``.
TIGHTEN = 1e-2
#: Sweeps of the start at γ = 1, then with γ(I) (models of I alone; see :func:`start`).
START_SWEEPS = 3
START_GAMMA_SWEEPS = 4


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
        nu = np.ascontiguousarray(self.nu, dtype=float)
        n = nu.shape[1]
        z = self.charges.astype(float)
        put = object.__setattr__
        put(self, "nuT", np.ascontiguousarray(nu.T))
        # rows of νᵀ diag(m) ν as one (n², n_species) matrix: S = (W2 @ m).reshape(n, n, rows)
        put(self, "W2", np.ascontiguousarray(np.einsum("sj,sk->jks", nu, nu).reshape(n * n, len(nu))))
        put(self, "zf", z)
        put(self, "z2", z * z)
        put(self, "h2T", np.ascontiguousarray((0.5 * (z * z)[:, None] * nu).T))  # ∂I/∂u = h2T @ m
        # the sums over species of one pass: component totals, charge and ionic strength
        put(self, "lin", np.ascontiguousarray(np.vstack([nu.T, z, 0.5 * (z * z)])))
        # the charge row is a combination of the mass rows when every species' charge is the
        # sum of its components' charges (true of balanced reactions)
        put(self, "zc", z[:n].copy())
        put(self, "charge_from_mass", bool(np.allclose(nu @ z[:n], z, atol=1e-12)))
        # S = νᵀ diag(m) ν has the pattern of components sharing a species; its Cholesky
        # factorisation is planned once, S is formed packed (entry p = S[pairs[p]])
        chol = SparseCholesky(np.abs(nu).T @ np.abs(nu) > 0)
        put(self, "chol", chol)
        from scipy import sparse

        Wp = np.array([nu[:, a] * nu[:, b] for a, b in chol.pairs])
        put(self, "Wp", sparse.csr_matrix(Wp))
        put(self, "diag_slot", {a: p for p, (a, b) in enumerate(chol.pairs) if a == b})
        off = {c: [p for p, (a, b) in enumerate(chol.pairs) if a != b and c in (a, b)] for c in range(n)}
        put(self, "off_slots", off)


@dataclass
class SolveOutput:
    """What :func:`solve` returns (rows first)."""

    lnm: np.ndarray  # (N, n_species)
    lng: np.ndarray  # (N, n_species)
    converged: np.ndarray  # (N,)
    iterations: np.ndarray  # (N,)
    residual: np.ndarray  # (N,) largest scaled residual
    m: np.ndarray | None = None  # (N, n_species) exp(lnm), as evaluated at the last iterate
    parked: np.ndarray | None = None  # rows left unfinished on purpose (``park``)
    u_parked: np.ndarray | None = None  # (len(parked), n) their free components


def ionic_strength_only(model: Any) -> bool:
    """True for models whose γ is a function of I, T and P alone (our Debye–Hückel family, ideal)."""
    cls = type(model)
    if isinstance(model, IdealModel):
        return cls.compute_log10_gamma is IdealModel.compute_log10_gamma
    return isinstance(model, DebyeHuckelForm) and cls.compute_log10_gamma is DebyeHuckelForm.compute_log10_gamma


class _Gamma:
    """ln γ of one model for one species set.

    For a model of I alone the species are grouped by their γ(I) (probed once: species
    with the same parameters, under Davies those of the same charge, share one group), so
    each evaluation computes ln γ for the groups only (``Gr``, groups × rows), and ln m
    follows from one product with [ν | M], M_sj = Σ_c ν_sc [c in group j] − [s in group j].
    """

    #: Ionic strengths (mol/kg) and temperatures (K) at which the groups are probed.
    PROBE_I = np.array([1e-5, 1e-3, 0.03, 0.3, 1.5])
    PROBE_T = np.array([283.15, 298.15, 313.15, 333.15, 353.15])

    def __init__(self, model: Any, system: System):
        self.model = model
        self.system = system
        self.by_I = ionic_strength_only(model)
        if self.by_I:
            self._group()

    def _proxy(self, species, charges, T, P):
        return SimpleNamespace(species=species, charges=charges, T_compact=T, P_compact=P)

    def _group(self) -> None:
        sy, model = self.system, self.model
        full = model.bind(sy.species, sy.charges)
        probe = np.asarray(model.compute_log10_gamma(self._proxy(sy.species, sy.charges, self.PROBE_T, 101325.0), full,
                                                     self.PROBE_I))
        ids: dict[bytes, int] = {}
        grp = np.array([ids.setdefault(row.tobytes(), len(ids)) for row in probe], dtype=int)
        reps = np.array([int(np.flatnonzero(grp == j)[0]) for j in range(len(ids))], dtype=int)
        species = tuple(sy.species[i] for i in reps)
        charges = sy.charges[reps]
        bound = model.bind(species, charges)
        check = model.compute_log10_gamma(self._proxy(species, charges, self.PROBE_T, 101325.0), bound, self.PROBE_I)
        if not np.array_equal(np.asarray(check), probe[reps]):  # γ of a species depends on the others
            grp, reps = np.arange(len(sy.species)), np.arange(len(sy.species))
            species, charges, bound = sy.species, sy.charges, full
        self.grp, self.species, self.charges, self.bound = grp, species, charges, bound
        E = np.zeros((len(sy.species), len(reps)))
        E[np.arange(len(sy.species)), grp] = 1.0
        M = sy.nu @ E[: sy.n] - E
        self.numM = np.ascontiguousarray(np.hstack([sy.nu, M]))  # ln m = lnk + [ν | M] @ [u; Gr]
        self.numM_formed = np.ascontiguousarray(self.numM[sy.n :])
        self.M32 = np.ascontiguousarray(M, dtype=np.float32)
        self.grp_c = grp[: sy.n]

    def of_I(self, I: np.ndarray, T: Any, P: Any) -> np.ndarray:
        """ln γ of the groups at ionic strength I (rows,), (groups, rows)."""
        out = self.model.compute_log10_gamma(self._proxy(self.species, self.charges, T, P), self.bound, I)
        out *= LN10
        return out

    def lnk_shift(self, I: np.ndarray, T: Any, P: Any) -> np.ndarray:
        """The change of ln m at fixed free components that γ at I brings, (n_species, rows),
        in single precision (for :func:`start`)."""
        return self.M32 @ self.of_I(I, T, P).astype(np.float32)

    def lnm_of_I(self, lnk: np.ndarray, u: np.ndarray, Gr: np.ndarray) -> np.ndarray:
        n = self.system.n
        out = np.empty((len(self.numM), u.shape[1]))
        out[:n] = u  # components: ln m = u (their rows of [ν | M] are [1 | 0], ln β = 0)
        np.matmul(self.numM_formed, np.vstack([u, Gr]), out=out[n:])
        out[n:] += lnk[n:]
        return out

    def of_m(self, m: np.ndarray, T: Any, P: Any) -> np.ndarray:
        """ln γ of the composition m (n_species, rows), any model."""
        sol = Solution._from_arrays(self.system.species, self.system.charges, m, T, P)
        return LN10 * np.asarray(self.model.log10_gamma(sol)).reshape(m.shape)


def _lnm(system: System, lnk: np.ndarray, u: np.ndarray, g: np.ndarray) -> np.ndarray:
    """ln m (n_species, rows) from free components u (n, rows) and ln γ g (n_species, rows)."""
    n = system.n
    out = system.nu @ (u + g[:n])
    out += lnk
    out -= g
    return out


def _exp(lnm: np.ndarray, out: np.ndarray | None = None) -> np.ndarray:
    """exp of ln m capped at e^230 (``out=lnm`` to work in place)."""
    out = np.minimum(lnm, 230.0, out=out)
    return np.exp(out, out=out)


def start(
    system: System,
    lnk: np.ndarray,
    totals: np.ndarray,
    cols: np.ndarray,
    u0: np.ndarray,
    sweeps: int = START_SWEEPS,
    *,
    charge_col: int | None = None,
    lnk_shift: Any = None,
    gamma_sweeps: int = START_GAMMA_SWEEPS,
) -> tuple[np.ndarray, np.ndarray | None]:
    """A starting point: rescale each free component so its computed total matches the given one.

    Successive substitution (all ``cols`` at once, ``sweeps`` times): u_c ← u_c +
    ½ ln(total_c / computed_c) / max_s ν_sc. Keeps the first Newton steps away from the
    huge overshoots a start at "free = total" gives when most of a component is bound
    (phosphate at pH 7, calcium in EDTA). Two optional refinements:

    * ``charge_col``: the component q closed by charge balance (every other one by its
      total) takes a Newton step per sweep on its own balance, Σ_s ν_sq m_s = −Σ_c z_c
      total_c / z_q (the charge balance once the other totals hold), with each other
      component following it so as to hold its own total (the Schur complement of the
      diagonal of the others; at most ``3`` in ln m): without that, a buffer (carbonate,
      phosphate) takes up each step of H⁺ and the sweeps leave pH half a unit off;
    * ``lnk_shift``: a function of I (rows,) giving the change of ln m at fixed free
      components, (n_species, rows), that γ(I) brings (models of I alone): ``gamma_sweeps``
      more sweeps with γ evaluated at the I of each sweep (clipped to
      [1e-12, ½ Σ_c z_c² |total_c|]).

    Arrays rows first: ``lnk`` (N, n_species), ``totals`` and ``u0`` (N, n). Returns
    u (N, n) and, with ``lnk_shift``, the ionic strength (N,) of the last sweep (else None).
    """
    u = np.array(u0, dtype=float)
    if not np.any(cols):
        return u, None
    cidx = np.flatnonzero(cols)
    numax = np.maximum(np.max(system.nu[:, cidx], axis=0), 1.0)[:, None]
    # single precision is plenty for a starting point and halves the cost of the sweeps
    # (ln m kept within ±80, where float32 exp neither overflows nor loses the molality)
    f4 = np.float32
    u4 = np.ascontiguousarray(u.T, dtype=f4)
    moved = slice(cidx[0], cidx[-1] + 1) if cidx[-1] - cidx[0] + 1 == cidx.size else cidx  # a slice if it can
    lk0 = lkT = np.ascontiguousarray(lnk.T, dtype=f4)
    tot = np.ascontiguousarray(totals[:, cidx].T)
    ok = tot > 0
    log_tot = np.log(np.where(ok, np.maximum(tot, 1e-30), 1.0)).astype(f4)
    nu4 = system.nu.astype(f4)
    half = (np.where(ok, 0.5, 0.0) / numax).astype(f4)  # damped: coupled pairs (Ca with EDTA) oscillate otherwise
    q = charge_col
    nc = len(cidx)
    # one product per sweep: the totals of ``cols``; with q, Σ ν_q m, S_qq = Σ ν_q² m,
    # S_cq = Σ ν_c ν_q m and S_cc = Σ ν_c² m of the columns; last ½ Σ z² m
    rows = [system.nuT[cidx]]
    if q is not None:
        others = [c for c in range(system.n) if c != q]
        target_q = (-(totals[:, others] @ system.zc[others]) / system.zc[q]).astype(f4)
        nq = system.nu[:, q]
        rows += [nq, nq**2, (nq[:, None] * system.nu[:, cidx]).T, (system.nu[:, cidx] ** 2).T]
    W = np.ascontiguousarray(np.vstack(rows + [0.5 * system.z2]), dtype=f4)
    I_max = 0.5 * (np.abs(totals) @ system.z2[: system.n]) + 1e-6
    I = None
    m = np.empty_like(lkT)
    sums = np.empty((len(W), m.shape[1]), dtype=f4)
    for k in range(sweeps + (gamma_sweeps if lnk_shift is not None else 0)):
        if k >= sweeps:  # γ at the ionic strength of the previous sweep
            I = np.clip(sums[-1].astype(float), 1e-12, I_max)
            lkT = lk0 + lnk_shift(I)
        np.matmul(nu4, u4, out=m)
        m += lkT
        np.clip(m, -80.0, 80.0, out=m)
        np.exp(m, out=m)
        np.matmul(W, m, out=sums)
        calc = sums[:nc]
        if q is not None:
            # Newton on q's balance with every other component holding its total (each
            # alone: S_cc δ_c = −f_c − S_cq δ_q), i.e. the Schur complement of the
            # diagonal of the others: δ_q = −(f_q − Σ r_c f_c) / (S_qq − Σ r_c S_cq),
            # r_c = S_cq / S_cc; the others then follow q by −r_c δ_q
            S_cq = sums[nc + 2 : 2 * nc + 2]
            ratio = S_cq / np.maximum(sums[2 * nc + 2 : 3 * nc + 2], 1e-30)
            ratio *= ok
            f_q = sums[nc] - target_q
            f_q -= np.einsum("cr,cr->r", ratio, calc - tot)
            S_qq = sums[nc + 1]
            schur = np.maximum(S_qq - np.einsum("cr,cr->r", ratio, S_cq), 0.05 * S_qq)
            step = np.clip(f_q / np.maximum(schur, 1e-30), -3.0, 3.0)  # −δ_q
        np.maximum(calc, 1e-34, out=calc)
        np.log(calc, out=calc)
        np.subtract(log_tot, calc, out=calc)
        calc *= half
        if q is not None:
            u4[q] -= step
            ratio *= step
            calc += ratio
        u4[moved] += calc
    if I is not None:
        I = np.clip(sums[-1].astype(float), 1e-12, I_max)
    u[:, cidx] = u4[cidx].T  # the other columns keep their u0 exactly
    if q is not None:
        u[:, q] = u4[q]
    return u, I


class _Rows(SimpleNamespace):
    """Arrays of the working set, rows last; ``keep`` selects rows (scalars stay)."""

    def keep(self, sel: np.ndarray) -> None:
        for name, a in list(self.__dict__.items()):
            if isinstance(a, np.ndarray) and a.ndim:
                self.__dict__[name] = np.take(a, sel, axis=-1)

    def subset(self, sel: np.ndarray) -> _Rows:
        out = _Rows(**self.__dict__)
        out.keep(sel)
        return out


@dataclass
class _Problem:
    """What every row of one solve shares."""

    system: System
    gam: _Gamma
    by_I: bool
    coupled: bool
    charge_col: int | None
    act_cols: list
    act_species: list
    any_pin: bool
    tol: float


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
    park: int = 0,
    I0: np.ndarray | None = None,
    g0: np.ndarray | None = None,
    gam: _Gamma | None = None,
    out: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None,
) -> SolveOutput:
    """Solve all rows; arrays in and out are rows first.

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
        whose ln a is fixed and the target ln a per row (N,).
    T, P : (N,) or scalar arrays.
    u0 : (N, n) starting ln m of the components.
    coupled : bool
        Let the Newton step see how γ follows I (the border or rank-one term); without it
        γ lags one step behind (slower, same answer).
    park : int
        Once no more than this many rows are left (after the third step), stop and return
        them unfinished (``parked``, with their ``u_parked``), so that the slow rows of many
        blocks can be finished together (:func:`solve_blocks`); 0: finish every row.
    I0 : (N,), optional
        Starting ionic strength (models of I alone; else from the start at γ = 1).
    g0 : (n_species, N), optional
        Starting ln γ (other models; else 0, γ = 1).
    gam : the γ of ``model`` bound to ``system`` (:class:`_Gamma`), if already made.
    out : three arrays (n_species, N), optional
        Where to write ln m, ln γ and m (rows last; e.g. column slices of a bigger batch's
        arrays); the returned arrays are their transposes.
    """
    N, n = totals.shape
    ns = len(system.species)
    gam = _Gamma(model, system) if gam is None else gam
    by_I = gam.by_I and coupled
    lnkT = np.ascontiguousarray(lnk.T)
    st = _Rows(
        idx=np.arange(N),
        u=np.ascontiguousarray(np.asarray(u0, dtype=float).T),
        lk=lnkT,
        tot=np.ascontiguousarray(totals.T),
        sc=np.ascontiguousarray(scale.T),
        pin=np.ascontiguousarray((pin_cols[None, :] & (totals <= 0)).T),
        tg=np.array([np.broadcast_to(t, (N,)) for t in act_targets]).reshape(len(act_targets), N),
        T=np.broadcast_to(T, (N,)) if np.ndim(T) else T,
        P=np.broadcast_to(P, (N,)) if np.ndim(P) else P,
        met=np.zeros(N, dtype=bool),
    )
    if by_I and I0 is not None:
        st.w = np.log(I0)
    elif by_I:  # ln I at the start: from γ = 1
        st.w = np.log(np.maximum(0.5 * (system.z2 @ _exp(lnkT + system.nu @ st.u)), 1e-12))
    else:
        st.g = np.zeros((ns, N)) if g0 is None else np.ascontiguousarray(g0, dtype=float)
    pb = _Problem(system, gam, by_I, coupled, charge_col, list(act_cols), list(act_species),
                  bool(np.any(st.pin)), tol)
    structured = system.charge_from_mass and not act_cols
    # quadratic convergence: a hundredfold below tol costs a fraction of a step on average
    # and keeps the charge-balanced H⁺ (whose residual is scaled by all the charge put in)
    # well inside 1e-10 relative; a row at tol that does not get there takes one more step
    tol_in = tol * TIGHTEN if by_I else tol
    lnm_out, lng_out, m_out = (np.empty((ns, N)), np.zeros((ns, N)), np.empty((ns, N))) if out is None else out
    converged = np.zeros(N, dtype=bool)
    iterations = np.zeros(N, dtype=int)
    resid = np.full(N, np.inf)
    cache = None
    for it in range(1, max_iter + 1):
        ev = _evaluate(pb, st, cache)
        _terms(pb, st, ev)
        res = ev.res
        err = np.max(np.abs(res), axis=0)
        iterations[st.idx] = it
        resid[st.idx] = err
        near = (err < tol) & (ev.dg < gamma_tol)
        done = near & ((err < tol_in) | st.met)
        if np.any(done):
            di = st.idx[done]
            converged[di] = True
            lnm_out[:, di], lng_out[:, di] = _final(pb, st, ev, done)
            m_out[:, di] = ev.m[:, done]
            keep = np.flatnonzero(~done)
            if not keep.size:
                st.idx = st.idx[:0]
                break
            st.keep(keep)
            ev.keep(keep)
            err, near = err[keep], near[keep]
            res = ev.res
        st.met = near
        if park and it >= 3 and st.idx.size <= park:
            left = st.idx.copy(), st.u.T.copy()
            return SolveOutput(lnm_out.T, lng_out.T, converged, iterations, resid, m_out.T, *left)
        if not by_I:
            st.g = ev.g
        if structured:
            step, ok = _step_spd(pb, st, ev)
            if not np.all(ok):
                bad = np.flatnonzero(~ok)
                step[:, bad] = _step_general(pb, st.subset(bad), ev.subset(bad))
        else:
            step = _step_general(pb, st, ev)
        step = np.where(np.isfinite(step), step, 0.0)
        big = np.max(np.abs(step), axis=0)
        lam = np.minimum(1.0, MAX_STEP / np.maximum(big, 1e-300))
        trial = (np.vstack([st.u, st.w[None]]) if by_I else st.u) + lam * step
        # backtracking: for models of I alone on every row (the trial evaluation is the next
        # iterate's, so checking costs nothing); otherwise only away from the solution (rows
        # whose scaled residuals are all below NEAR take the Newton step whole)
        far = np.arange(err.size) if by_I else np.flatnonzero(err > NEAR)
        cache = _backtrack(pb, st, far, res, lam, step, trial) if far.size else None
        st.u = trial[:n]
        if by_I:
            st.w = trial[n]
    if st.idx.size:
        ev = _evaluate(pb, st, None)
        lnm_out[:, st.idx], lng_out[:, st.idx] = _final(pb, st, ev, np.ones(st.idx.size, dtype=bool))
        m_out[:, st.idx] = np.exp(lnm_out[:, st.idx])
    return SolveOutput(lnm_out.T, lng_out.T, converged, iterations, resid, m_out.T)


def _final(pb: _Problem, st: _Rows, ev: _Eval, sel: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """ln m and ln γ (n_species, rows) of the rows ``sel`` (a mask)."""
    if pb.by_I:
        Gr = ev.Gr[:, sel]
        return pb.gam.lnm_of_I(st.lk[:, sel], st.u[:, sel], Gr), Gr[pb.gam.grp]
    return ev.lnm[:, sel], ev.g[:, sel]


def _backtrack(pb: _Problem, st: _Rows, far, res, lam, step, trial) -> _Eval | None:
    """Halve the steps of the rows ``far`` (columns of ``trial``, changed in place) while
    the residual norm does not decrease, up to ``BACKTRACKS`` times; only the rows still
    failing are evaluated again. For models of I alone (``far`` is then every row) returns
    the evaluations at the accepted points, the next iterate's (rows not accepted are
    marked in ``have``); otherwise None."""
    n = pb.system.n
    rows = st.idx.size
    full = far.size == rows
    sub = _Rows(**st.__dict__) if full else st.subset(far)
    sub.sweep = False  # γ held where it is (other models)
    f0 = np.sum(res[:, far] ** 2, axis=0) if not full else np.sum(res * res, axis=0)
    lam_f, step_f = (lam.copy(), step) if full else (lam[far], step[:, far])
    trial_f = trial if full else trial[:, far]
    base_f = trial_f - lam_f * step_f
    pend = np.arange(far.size)  # rows of ``far`` still on trial
    cache = None
    for r in range(BACKTRACKS):
        if r:
            sub.u = trial_f[:n, pend]
            if pb.by_I:
                sub.w = trial_f[n, pend]
        else:
            sub.u = trial_f[:n].copy() if full else trial_f[:n]
            if pb.by_I:
                sub.w = trial_f[n].copy() if full else trial_f[n]
        ev = _evaluate(pb, sub, None)
        f1 = np.sum(ev.res * ev.res, axis=0)
        lp = lam_f[pend]
        worse = ~(f1 <= f0[pend] * (1.0 - 1e-4 * lp)) & (f0[pend] > pb.tol * pb.tol)
        if pb.by_I and full:
            if r == 0:
                cache = ev
                cache.have = ~worse
            else:
                ok = np.flatnonzero(~worse)
                cols = pend[ok]
                cache.have[cols] = True
                for name in _cached(pb):
                    getattr(cache, name)[..., cols] = getattr(ev, name)[..., ok]
        if not np.any(worse):
            break
        pend = pend[worse]
        sub.keep(np.flatnonzero(worse))
        lam_f[pend] *= 0.5
        trial_f[:, pend] = base_f[:, pend] + lam_f[pend] * step_f[:, pend]
    if not full:
        trial[:, far] = trial_f
    return cache


class _Eval(_Rows):
    """Species, γ and residuals at one point of the working set (rows last)."""


def _cached(pb: _Problem) -> tuple:
    """What a cached evaluation holds per row (models of I alone)."""
    return ("res", "Gr", "m", "I", "Ic") + (("qs",) if pb.charge_col is not None else ())


def _evaluate(pb: _Problem, st: _Rows, cache: _Eval | None) -> _Eval:
    """Species, γ and scaled residuals (k, rows) at the working set's unknowns.

    With a ``cache`` (models of I alone) the rows it has are taken from it and only the
    others are evaluated. For other models γ is updated ``GAMMA_SWEEPS`` times at fixed u
    (its change is ``dg``).
    """
    if cache is not None and np.any(cache.have):
        todo = np.flatnonzero(~cache.have)
        if todo.size:
            ev = _evaluate(pb, st.subset(todo), None)
            for name in _cached(pb):
                getattr(cache, name)[..., todo] = getattr(ev, name)
        del cache.have
        return cache
    system = pb.system
    n = system.n
    ev = _Eval()
    if pb.by_I:
        I = np.exp(st.w)
        Gr = pb.gam.of_I(I, st.T, st.P)
        lnm = pb.gam.lnm_of_I(st.lk, st.u, Gr)
        m = _exp(lnm, out=lnm)
        ev.I, ev.Gr = I, Gr
    else:
        g = st.g
        lnm = _lnm(system, st.lk, st.u, g)
        m = _exp(lnm)
        g_prev = g
        if getattr(st, "sweep", True):
            for _ in range(GAMMA_SWEEPS):
                g_prev, g = g, pb.gam.of_m(m, st.T, st.P)
                lnm = _lnm(system, st.lk, st.u, g)
                m = _exp(lnm)
        ev.dg = np.max(np.abs(g - g_prev), axis=0)
        ev.lnm, ev.g = lnm, g
    sums = system.lin @ m  # totals (n), charge, ionic strength
    res = sums[: n + 1] if pb.by_I else sums[:n]  # row n (the charge) is overwritten last
    res[:n] -= st.tot
    res[:n] /= st.sc
    if pb.charge_col is not None:
        # Σ z m scaled by the gross charge put in, or by Σ z² m of the species where that is
        # larger: an acid or base dissolved as a neutral species puts in no charge but forms
        # ions (0.01 mol/kg H3PO4 alone could not meet the tolerance against a floor of 1e-7)
        ev.qs = np.maximum(st.sc[pb.charge_col], 2.0 * sums[n + 1])
        res[pb.charge_col] = sums[n] / ev.qs
    if pb.by_I:
        ev.Ic = sums[n + 1]
    for col, sp, tgt in zip(pb.act_cols, pb.act_species, st.tg):
        res[col] = _lna(pb, st, ev, sp) - tgt
    if pb.any_pin:
        for c in np.flatnonzero(np.any(st.pin, axis=1)):
            p = st.pin[c]
            res[c, p] = st.u[c, p] - LN_ABSENT
    if pb.by_I:
        res[n] = ev.Ic / ev.I - 1.0
    ev.res, ev.m = res, m
    return ev


def _lna(pb: _Problem, st: _Rows, ev: _Eval, sp: int) -> np.ndarray:
    """ln a of species ``sp``: ln β + Σ_c ν (u_c + ln γ_c)."""
    nu = pb.system.nu[sp]
    g_c = ev.Gr[pb.gam.grp_c] if pb.by_I else ev.g[: pb.system.n]
    return st.lk[sp] + nu @ (st.u + g_c)


def _terms(pb: _Problem, st: _Rows, ev: _Eval) -> None:
    """Models of I alone: ∂ln γ/∂I of the groups (``dGr``) and the change of ln γ were I
    moved to the computed one (``dg``)."""
    if not pb.by_I:
        return
    dGr = pb.gam.of_I(ev.I * (1.0 + EPS_I), st.T, st.P)
    dGr -= ev.Gr
    dGr /= EPS_I * ev.I
    ev.dGr = dGr
    ev.dg = np.max(np.abs(dGr), axis=0) * np.abs(ev.Ic - ev.I)


def _coupling(pb: _Problem, st: _Rows, ev: _Eval):
    """The γ terms: ∂ln γ_c/∂I of the components (n, rows), D = ∂ln m/∂I (n_species,
    rows) and dI = ∂I/∂u (n, rows)."""
    system = pb.system
    n = system.n
    m = ev.m
    if pb.by_I:
        Gc = ev.dGr[pb.gam.grp_c]
        D = pb.gam.numM[:, n:] @ ev.dGr
    else:
        I = 0.5 * (system.z2 @ m)
        G = pb.gam.of_m(m * (1.0 + EPS_I), st.T, st.P)
        G -= ev.g
        G /= np.maximum(EPS_I * I, 1e-300)
        Gc = G[:n]
        D = system.nu @ Gc
        D -= G
    dI = system.h2T @ m
    if not pb.by_I:
        # I moves with γ too: δI = dI·δu + c δI with c = ½ Σ z² m D, so the total change is
        # dI·δu / (1 − c). Without the factor the step undershot where c is large (triply
        # charged phosphate: phosphate buffers with Pitzer did not converge); kept off zero
        c = 0.5 * (system.z2 @ (m * D))
        dI /= np.maximum(1.0 - c, 0.05)
    return Gc, D, dI


def _step_spd(pb: _Problem, st: _Rows, ev: _Eval):
    """Newton step for mass and charge closures: sparse Cholesky of S = νᵀ diag(m) ν (rows last)."""
    system = pb.system
    n = system.n
    m = ev.m
    rows = m.shape[1]
    A = system.Wp @ m  # packed S
    Y = np.empty((2, n, rows))
    np.multiply(ev.res[:n], st.sc, out=Y[0])  # unscaled residuals
    if pb.coupled:
        _, D, dI = _coupling(pb, st, ev)
        mD = np.multiply(D, m, out=D)
        sums = system.lin @ mD  # Σ ν m D, Σ z m D, ½ Σ z² m D
        Y[1] = sums[:n]
    else:
        Y[1] = 0.0
    pins = [(c, st.pin[c]) for c in np.flatnonzero(np.any(st.pin, axis=1))] if pb.any_pin else []
    for c, p in pins:  # an absent component's mass row is ≈ 0 (its species have m ≈ 0)
        Y[:, c, p] = 0.0
    q = pb.charge_col
    if q is not None:
        # the charge row is Σ_c z_c (mass row c): take the other mass rows out of it
        zc = system.zc
        Q = ev.res[q] * ev.qs  # Σ z m (unscaled)
        Y[0, q] = (Q - (zc @ Y[0] - zc[q] * Y[0, q])) / zc[q]
        if pb.coupled:
            Y[1, q] = (sums[n] - (zc @ Y[1] - zc[q] * Y[1, q])) / zc[q]
    for c, p in pins:  # pinned: row and column of the identity, u_c → LN_ABSENT
        for slot in system.off_slots[c]:
            A[slot, p] = 0.0
        A[system.diag_slot[c], p] = 1.0
        Y[0, c, p] = st.u[c, p] - LN_ABSENT
        if pb.coupled:
            dI[c, p] = 0.0
    X, ok = system.chol.solve(A, Y)
    x0, x1 = X[0], X[1]
    if pb.by_I:
        # border: S δ + a ε = −y, (dI/I)·δ + c ε = −r_I with ε the change of ln I
        I = ev.I
        x1 *= I
        b = dI / I
        c = sums[n + 1] - ev.Ic / I
        eps = (np.einsum("kn,kn->n", b, x0) - ev.res[n]) / (c - np.einsum("kn,kn->n", b, x1))
        step = np.empty((n + 1, rows))
        np.multiply(x1, eps, out=step[:n])
        step[:n] += x0
        np.negative(step[:n], out=step[:n])
        step[n] = eps
    elif pb.coupled:
        # rank one (Sherman–Morrison): S δ + a (dI·δ) = −y
        t = -np.einsum("kn,kn->n", dI, x0) / (1.0 + np.einsum("kn,kn->n", dI, x1))
        step = -(x0 + x1 * t)
    else:
        step = -x0
    return step, ok & np.all(np.isfinite(step), axis=0)


def _step_general(pb: _Problem, st: _Rows, ev: _Eval) -> np.ndarray:
    """Newton step from the full Jacobian (any closures), ``numpy.linalg.solve`` per row."""
    system = pb.system
    n = system.n
    m = ev.m
    rows = m.shape[1]
    k = n + 1 if pb.by_I else n
    J = np.zeros((k, k, rows))
    J[:n, :n] = (system.W2 @ m).reshape(n, n, rows) / st.sc[:, None, :]
    if pb.charge_col is not None:
        J[pb.charge_col, :n] = (system.zf * system.nu.T) @ m / ev.qs
    for col, sp in zip(pb.act_cols, pb.act_species):
        J[col, :n] = system.nu[sp][:, None]
    if pb.coupled:
        Gc, D, dI = _coupling(pb, st, ev)
        mD = m * D
        a = (system.nuT @ mD) / st.sc
        if pb.charge_col is not None:
            a[pb.charge_col] = (system.zf @ mD) / ev.qs
        for col, sp in zip(pb.act_cols, pb.act_species):
            a[col] = system.nu[sp] @ Gc
        a[st.pin] = 0.0
        if pb.by_I:
            I = ev.I
            J[:n, n] = a * I
            J[n, :n] = dI / I
            J[n, n] = 0.5 * (system.z2 @ mD) - ev.Ic / I
        else:
            J[:n, :n] += a[:, None, :] * dI[None, :, :]
    for c in np.flatnonzero(np.any(st.pin, axis=1)):
        p = st.pin[c]
        J[c][:, p] = 0.0
        J[c, c, p] = 1.0
    Jr = np.ascontiguousarray(J.transpose(2, 0, 1))
    res = ev.res.T.copy()
    bad = ~np.all(np.isfinite(Jr), axis=(1, 2)) | ~np.all(np.isfinite(res), axis=1)
    Jr[bad] = np.eye(k)
    res[bad] = 0.0
    try:
        step = np.linalg.solve(Jr, -res[:, :, None])[:, :, 0]
    except np.linalg.LinAlgError:
        ridge = 1e-12 * np.maximum(np.abs(np.diagonal(Jr, axis1=1, axis2=2)), 1e-300)
        step = np.linalg.solve(Jr + ridge[:, :, None] * np.eye(k), -res[:, :, None])[:, :, 0]
    return step.T


#: Rows of a block left for the joint finish once the rest has converged (see solve_blocks):
#: at most PARK, and at most the share PARK_SHARE of the block.
PARK = 256
PARK_SHARE = 1 / 32

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
    progress: Any = None,
    **kw: Any,
) -> SolveOutput:
    """:func:`start` and :func:`solve` on blocks of :data:`CHUNK` rows (same arguments).

    The few slow rows of each block (at most ``PARK`` once the rest has converged) are
    set aside and finished together after the last block, from where they were: a block
    does not run dozens of near-empty iterations for a handful of rows. ``progress``, if
    given, is called with the number of rows finished after each block and after the joint
    finish (e.g. the ``update`` of a progress bar); it sums to the number of rows.
    """
    N, ns = totals.shape[0], len(system.species)
    gam = _Gamma(model, system)
    shift = kw.get("coupled", True)
    # the start's γ(I): the model's own where it is a function of I alone; for any other
    # model (Pitzer, plug-ins) Davies', which only has to bring the start near the answer
    # (from the plain start, 0.01 mol/kg H3PO4 alone under Pitzer stalled far from it)
    start_gam = gam if gam.by_I else _Gamma(DaviesModel(), system)
    # the charge-balanced component joins the start when every other one has a total
    others_by_mass = charge_col is not None and not act_cols and all(pin_cols[np.arange(system.n) != charge_col])
    lnm, lng, m = np.empty((ns, N)), np.zeros((ns, N)), np.empty((ns, N))  # rows last, filled in place
    full = SolveOutput(lnm.T, lng.T, np.zeros(N, dtype=bool), np.zeros(N, dtype=int), np.full(N, np.inf), m.T)

    def rows_of(rows, u_rows):  # solve the rows ``rows`` (indices) from ``u_rows``
        T_r = T[rows] if np.ndim(T) else T
        P_r = P[rows] if np.ndim(P) else P
        targets = [np.broadcast_to(t, (N,))[rows] for t in act_targets]
        return solve(system, lnk[rows], totals[rows], scale[rows], pin_cols, charge_col, act_cols, act_species,
                     targets, model, T_r, P_r, u_rows, gam=gam, **kw)

    def put(rows, part, add_iterations=0):
        full.lnm[rows], full.lng[rows], full.m[rows] = part.lnm, part.lng, part.m
        full.converged[rows], full.residual[rows] = part.converged, part.residual
        full.iterations[rows] = part.iterations + add_iterations

    parked, u_parked = [], []
    blocks = range(0, N, CHUNK)
    for lo in blocks:
        sl = slice(lo, min(N, lo + CHUNK))
        T_b = T[sl] if np.ndim(T) else T
        P_b = P[sl] if np.ndim(P) else P
        u_start, I_start = start(
            system,
            lnk[sl],
            totals[sl],
            pin_cols,
            u0[sl],
            charge_col=charge_col if others_by_mass else None,
            lnk_shift=(lambda I, T_b=T_b, P_b=P_b: start_gam.lnk_shift(I, T_b, P_b)) if shift else None,
        )
        if shift and not gam.by_I:
            # any other model starts from the answer under Davies (whose solve has ln I as an
            # unknown and is robust); its γ iteration alone from a distant start stalled
            # (phosphoric acid and phosphate buffers under Pitzer)
            pre = solve(system, lnk[sl], totals[sl], scale[sl], pin_cols, charge_col, act_cols, act_species,
                        [t[sl] for t in act_targets], start_gam.model, T_b, P_b, u_start, I0=I_start,
                        gam=start_gam, **kw)
            u_start = np.where(pre.converged[:, None], pre.lnm[:, : system.n], u_start)
            g_start = np.where(pre.converged[None, :], pre.lng.T, 0.0)  # its ln γ with it
        else:
            g_start = None
        part = solve(
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
            T_b,
            P_b,
            u_start,
            park=min(PARK, int((sl.stop - sl.start) * PARK_SHARE)) if len(blocks) > 1 else 0,
            I0=I_start,
            g0=g_start,
            gam=gam,
            out=(lnm[:, sl], lng[:, sl], m[:, sl]),
            **kw,
        )
        full.converged[sl], full.iterations[sl], full.residual[sl] = part.converged, part.iterations, part.residual
        if part.parked is not None:
            parked.append(part.parked + lo)
            u_parked.append(part.u_parked)
        if progress is not None:
            progress(sl.stop - sl.start - (0 if part.parked is None else part.parked.size))
    if parked:
        rows = np.concatenate(parked)
        put(rows, rows_of(rows, np.concatenate(u_parked)), full.iterations[rows] - 1)  # the first re-evaluates
        if progress is not None:
            progress(rows.size)
    if (charge_col is not None and others_by_mass) or shift:
        # rows the refined start did not bring to convergence get a second chance from the plain one
        rows = np.flatnonzero(~full.converged)
        if rows.size:
            u_plain, _ = start(system, lnk[rows], totals[rows], pin_cols, u0[rows])
            again = rows_of(rows, u_plain)
            ok = again.converged
            if np.any(ok):
                put(rows[ok], SolveOutput(*(getattr(again, f)[ok] for f in _FIELDS)), full.iterations[rows[ok]])
    return full


_FIELDS = ("lnm", "lng", "converged", "iterations", "residual", "m")
