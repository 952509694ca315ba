"""Bind a Pitzer parameter set to a species set: index arrays and weight matrices.

Everything here depends on the species set only. Coefficients are kept as basis weights
(last axis of length 5, see :func:`._params.basis`) so that evaluating them at one
temperature or at an array of temperatures is a single matrix product
(:meth:`Bound.at`).

The kernel contracts coefficient blocks with molality vectors ("Σ_a β0_ca m_a" for every
c). Most entries of those blocks are zero (in the shipped seawater set, 137 of 368), so
each contraction is stored sparse (:class:`Contraction`: the non-zero (row, column) pairs
and their basis weights) and evaluated by a gather, a product and a segmented sum —
no BLAS call, so no thread pool to contend for, and no multiplication of zeros. With a
temperature per row only the non-zero coefficients are evaluated per row.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from itertools import combinations
from typing import Any

import numpy as np

from ...constants import T_REF, ZERO_CELSIUS
from ._params import ParameterSet, basis

__all__ = ["Bound", "bind"]


def default_alpha(zc: int, za: int) -> tuple[float, float]:
    """(α1, α2) in (kg/mol)^½ by charge type (Pitzer 1991, ch. 3; common practice).

    α1 = 2.0 (α2 = 12, used only where a β2 is given, e.g. Ca–OH of Harvie, Møller &
    Weare 1984), except for 2:2 electrolytes: α1 = 1.4, α2 = 12 (Pitzer & Mayorga 1974).
    """
    if abs(zc) == 2 and abs(za) == 2:
        return 1.4, 12.0
    return 2.0, 12.0


@dataclass(frozen=True)
class Contraction:
    """out[r] = Σ_j A[r, j] x[j] over the non-zero entries of a block A of shape lead + (J,).

    ``rows``/``cols`` are the non-zero pairs in row order, ``weights`` their basis weights
    (nnz, 5); ``urows`` the distinct rows and ``starts`` where each begins in the pairs.
    """

    lead: tuple
    cols: np.ndarray
    urows: np.ndarray
    starts: np.ndarray
    weights: np.ndarray

    @classmethod
    def of(cls, w: np.ndarray) -> Contraction:
        lead, J = w.shape[:-2], w.shape[-2]
        flat = w.reshape(int(np.prod(lead, dtype=int)), J, w.shape[-1])
        rows, cols = np.nonzero(np.any(flat != 0, axis=-1))  # C order: sorted by row, then column
        urows, starts = np.unique(rows, return_index=True)
        return cls(tuple(lead), cols, urows, starts, np.ascontiguousarray(flat[rows, cols]))

    @property
    def nrows(self) -> int:
        return int(np.prod(self.lead, dtype=int))

    @property
    def plan(self) -> tuple:
        """((row, ((col, k), ...)), ...): per output row, its columns and coefficient index."""
        return self._prepared[1]

    @property
    def _prepared(self) -> tuple:
        """(number of rows, plan, rows without entries), formed once."""
        got = self.__dict__.get("_prep")
        if got is None:
            ends = list(self.starts[1:]) + [len(self.cols)]
            plan = tuple(
                (int(r), tuple((int(self.cols[k]), k) for k in range(s, e)))
                for r, s, e in zip(self.urows, self.starts, ends)
            )
            empty = sorted(set(range(self.nrows)) - {r for r, _ in plan})
            got = (self.nrows, plan, empty)
            object.__setattr__(self, "_prep", got)
        return got

    def __call__(self, coef: np.ndarray, x: np.ndarray) -> np.ndarray:
        """Contract with ``x`` (J, N); ``coef`` (nnz,) at one T, or with T per row (nnz, N) or
        a list of nnz floats and (N,) arrays (:meth:`Bound.at`).

        A loop over the non-zero entries with in-place products on rows of the block (the
        kernel works on blocks of a few thousand rows, which stay in cache): no BLAS thread
        pool, no multiplication of zeros, no gathered copy of ``x``.
        """
        N = x.shape[1]
        nrows, plan, empty = self._prepared
        out = np.empty((nrows, N))
        if empty:
            out[empty] = 0.0
        if not plan:
            return out.reshape(self.lead + (N,))
        c = coef.tolist() if isinstance(coef, np.ndarray) and coef.ndim == 1 else coef
        tmp = np.empty(N)
        for r, entries in plan:
            o = out[r]
            (j, k), rest = entries[0], entries[1:]
            np.multiply(x[j], c[k], out=o)
            for j, k in rest:
                np.multiply(x[j], c[k], out=tmp)
                o += tmp
        return out.reshape(self.lead + (N,))


#: Which block each contraction of the kernel reads, and how it is laid out:
#: name → (block, axes to move so that the contracted axis comes last).
_CONTRACTIONS = {
    "b0": ("b0", None),
    "b0T": ("b0", (1, 0)),
    "Bk": ("Bk", None),
    "BkT": ("Bk", (0, 2, 1)),
    "C": ("C", None),
    "CT": ("C", (1, 0)),
    "thc": ("thc", None),
    "tha": ("tha", None),
    "psiC": ("psiC", None),
    "psiA": ("psiA", None),
    "psiAM": ("psiAM", None),
    "psiCX": ("psiCX", None),
    "psiAMu": ("psiAMu", None),
    "psiCXu": ("psiCXu", None),
    "lam": ("lam", None),
    "zN": ("zN", None),
    "zC": ("zC", None),
    "zA": ("zA", None),
}


@dataclass
class Bound:
    """A species set bound to a parameter set (see module docstring)."""

    species: tuple
    z: np.ndarray  # charges, float (n,)
    cat: np.ndarray
    an: np.ndarray
    neu: np.ndarray
    alphas: np.ndarray  # distinct α values (K,)
    blocks: dict  # name -> weights array (..., 5)
    flags: dict  # name -> bool, whether the block has any non-zero weight
    etheta_c: tuple  # ((zi, zj, mask (n_c, n_c)), ...) per unlike-charge combination
    etheta_a: tuple
    checks: tuple  # ((label, species index array, I_max, T_min, T_max), ...)
    check_arrays: tuple  # the same as arrays: (index (n_checks, 3), I_max, T_min, T_max)
    missing: tuple
    notes: tuple
    _cache: dict = field(default_factory=dict, repr=False)
    contractions: dict = field(default_factory=dict, repr=False)

    def __post_init__(self):
        for name, (block, axes) in _CONTRACTIONS.items():
            w = self.blocks[block]
            if axes is not None:
                w = w.transpose(*axes, w.ndim - 1)  # the weight axis stays last
            self.contractions[name] = Contraction.of(w)
        # all non-zero weights in one matrix, so that one product evaluates every coefficient
        sizes = [len(c.cols) for c in self.contractions.values()]
        self._offsets = dict(zip(self.contractions, np.cumsum([0] + sizes[:-1]).tolist()))
        self._sizes = dict(zip(self.contractions, sizes))
        self._all_weights = (
            np.concatenate([c.weights for c in self.contractions.values()]) if sum(sizes) else np.zeros((0, 5))
        )

    def pair_checks(self, m: np.ndarray, I: np.ndarray, T: Any) -> tuple[np.ndarray, tuple]:
        """Rows beyond an interaction's fitted ionic strength or temperature range.

        ``m`` (n, N), ``I`` (N,), ``T`` scalar or (N,). Returns (ok (N,), notes), the same as
        ``PitzerModel._pair_checks`` (the notes word for word), with memory O(N) instead of
        O(n_checks · N): the checks run one at a time, and a check that cannot fail (no
        ionic-strength limit, T inside its range) costs nothing.
        """
        N = m.shape[1]
        ok = np.ones(N, dtype=bool)
        notes = []
        T = np.asarray(T, dtype=float)
        scalar_T = T.ndim == 0
        positive: dict[int, np.ndarray] = {}

        def present(idx: np.ndarray) -> np.ndarray:
            out = None
            for i in idx.tolist():
                if i not in positive:
                    positive[i] = m[i] > 0
                out = positive[i] if out is None else out & positive[i]
            return out

        I_top = float(np.max(I)) if N else 0.0
        T_bot, T_top = (float(np.min(T)), float(np.max(T))) if T.size else (0.0, 0.0)
        for label, idx, i_max, t_lo, t_hi in self.checks:
            # 1e-9 (relative for I, in K for T): round-off slack, as in the model's check.
            # A limit that no row reaches (I below it, every T inside the range) costs nothing.
            i_check = np.isfinite(i_max) and I_top > i_max * (1 + 1e-9)
            t_check = T_bot < t_lo - 1e-9 or T_top > t_hi + 1e-9
            if not i_check and not t_check:
                continue
            pres = present(idx)
            high = pres & (I > i_max * (1 + 1e-9)) if i_check else None
            if not t_check:
                cold = None
            elif scalar_T:
                cold = pres
            else:
                cold = pres & ((T < t_lo - 1e-9) | (T > t_hi + 1e-9))
            nh = int(np.count_nonzero(high)) if high is not None else 0
            nc = int(np.count_nonzero(cold)) if cold is not None else 0
            if nh:
                notes.append(
                    f"pitzer: {label} parameters hold to I = {i_max:g} mol/kg; "
                    f"I up to {float(np.max(I[high])):.4g} in {nh} of {N} row(s)"
                )
                ok &= ~high
            if nc:
                notes.append(
                    f"pitzer: {label} parameters hold at {t_lo - ZERO_CELSIUS:g}–{t_hi - ZERO_CELSIUS:g} °C; "
                    f"outside in {nc} of {N} row(s)"
                )
                ok &= ~cold
        return ok, tuple(notes)

    def at(self, T: np.ndarray) -> dict:
        """Non-zero coefficients of every contraction at ``T``: scalar T gives vectors (nnz,)
        (cached per value); T of shape (N,) gives arrays (nnz, N)."""
        T = np.asarray(T, dtype=float)
        if T.ndim == 0:
            key = float(T)
            hit = self._cache.get(key)
            if hit is None:
                if len(self._cache) > 64:
                    self._cache.clear()
                hit = self._cache[key] = self._evaluate(basis(T))
            return hit
        return self._evaluate_rows(T)

    def _evaluate_rows(self, T: np.ndarray) -> dict:
        """Coefficients with a temperature per row: the T-independent ones (most of them)
        stay Python floats, each distinct T-dependent one is one array of the rows, built
        from the basis functions it uses only. Per contraction a list, indexed like the
        vectors of one temperature."""
        W = self._all_weights
        vals: list = W[:, 0].tolist()
        dep = np.flatnonzero(np.any(W[:, 1:] != 0, axis=1))
        if len(dep):
            used = np.flatnonzero(np.any(W[dep] != 0, axis=0)).tolist()
            d = T - T_REF
            funcs = {
                1: lambda: 1.0 / T - 1.0 / T_REF,
                2: lambda: np.log(T / T_REF),
                3: lambda: d,
                4: lambda: d * d,
            }
            b = {k: funcs[k]() for k in used if k}
            made: dict = {}
            for r in dep.tolist():
                key = tuple(W[r].tolist())
                if key not in made:
                    v = None
                    for k, bk in b.items():
                        if key[k] != 0.0:
                            v = key[k] * bk if v is None else v + key[k] * bk
                    made[key] = v + key[0]
                vals[r] = made[key]
        return {k: vals[o : o + self._sizes[k]] for k, o in self._offsets.items()}

    def _evaluate(self, b: np.ndarray) -> dict:
        # One product of the stacked non-zero weights with the basis, without BLAS (einsum
        # loops in C): a BLAS call here would start its thread pool for a small product.
        allc = np.einsum("kb,b...->k...", self._all_weights, b)
        return {k: allc[o : o + self._sizes[k]] for k, o in self._offsets.items()}


def _weights(entries, kind, key, name) -> np.ndarray:
    e = entries.get((kind, *key))
    if e is None or name not in e.coeffs:
        return np.zeros(5)
    return np.asarray(e.coeffs[name], dtype=float)


def bind(params: ParameterSet, species: tuple, charges: np.ndarray) -> Bound:
    """Precompute index arrays and weight blocks for ``species``."""
    z = np.asarray(charges, dtype=float)
    cat, an, neu = (np.flatnonzero(c) for c in (z > 0, z < 0, z == 0))
    Cn, A, Nn = ([species[i] for i in idx] for idx in (cat, an, neu))
    nc, na, nn, ns = len(Cn), len(A), len(Nn), len(species)
    zc, za = z[cat], z[an]
    W = np.zeros((4, nc, na, 5))  # beta0, beta1, beta2, cphi
    a1 = np.zeros((nc, na))
    a2 = np.zeros((nc, na))
    checks, missing = [], []
    for i, c in enumerate(Cn):
        for j, a in enumerate(A):
            e = params.get(("salt", c, a))
            d1, d2 = default_alpha(int(zc[i]), int(za[j]))
            if e is None:
                missing.append(f"{c} {a}")
                a1[i, j], a2[i, j] = d1, d2
                continue
            for k, nm in enumerate(("beta0", "beta1", "beta2", "cphi")):
                W[k, i, j] = _weights(params, "salt", (c, a), nm)
            a1[i, j] = e.alpha[0] if e.alpha[0] is not None else d1
            a2[i, j] = e.alpha[1] if e.alpha[1] is not None else d2
            nu_c, nu_a = -za[j], zc[i]  # unreduced stoichiometry; I of the binary solution
            i_max = e.max_ionic_strength
            if i_max is None:
                g = np.gcd(int(zc[i]), int(-za[j]))
                i_max = 0.5 * e.max_molality * (nu_c * zc[i] ** 2 + nu_a * za[j] ** 2) / g
            checks.append((f"{c} {a}", np.array([cat[i], an[j]]), i_max, *e.T_range))
    alphas = np.unique(np.concatenate([a1[np.any(W[1] != 0, -1)], a2[np.any(W[2] != 0, -1)]]))
    # β1 and β2 regrouped by α value: B = β0 + Σ_k Bk g(α_k √I)
    Bk = np.zeros((len(alphas), nc, na, 5))
    for k, al in enumerate(alphas):
        Bk[k] = W[1] * (a1 == al)[..., None] + W[2] * (a2 == al)[..., None]
    C = W[3] / (2.0 * np.sqrt(np.abs(np.outer(zc, za))))[..., None]  # C = Cφ / (2 √|z_c z_a|)
    blocks = {"b0": W[0], "Bk": Bk, "C": C}  # transposes b0T, BkT, CT: views made in Bound.at

    def same_sign(names, zs, idx, opp_names, opp_idx):
        n, no = len(names), len(opp_names)
        th = np.zeros((n, n, 5))
        ps = np.zeros((n, n, no, 5))
        et: dict = {}
        for (i, p), (j, q) in combinations(enumerate(names), 2):
            key = tuple(sorted((p, q)))
            th[i, j] = th[j, i] = _weights(params, "theta", key, "theta")
            e = params.get(("theta", *key))
            if e is not None:
                checks.append((f"θ {p} {q}", np.array([idx[i], idx[j]]), np.inf, *e.T_range))
            if zs[i] != zs[j]:
                zkey = (float(min(zs[i], zs[j], key=abs)), float(max(zs[i], zs[j], key=abs)))
                mask = et.setdefault(zkey, np.zeros((n, n)))
                mask[i, j] = mask[j, i] = 1.0
            for k, o in enumerate(opp_names):
                ps[i, j, k] = ps[j, i, k] = _weights(params, "psi", (*key, o), "psi")
                e = params.get(("psi", *key, o))
                if e is not None:
                    checks.append((f"ψ {p} {q} {o}", np.array([idx[i], idx[j], opp_idx[k]]), np.inf, *e.T_range))
        return th, ps, tuple((zi, zj, mask) for (zi, zj), mask in et.items())

    thc, psc, etc = same_sign(Cn, zc, cat, A, an)
    tha, psa, eta = same_sign(A, za, an, Cn, cat)  # psa[a, a', c]
    blocks.update(
        thc=thc,
        tha=tha,
        psiC=psc.reshape(nc, nc * na, 5),  # [c, (c', a)]
        psiCX=psc.transpose(2, 0, 1, 3).reshape(na, nc * nc, 5),  # [X, (c, c')]
        psiA=psa.transpose(0, 2, 1, 3).reshape(na, nc * na, 5),  # [X, (c, a')]: psa[X, a', c] → [X, c, a']
        psiAM=psa.transpose(2, 0, 1, 3).reshape(nc, na * na, 5),  # [M, (a, a')]
        # the same over the unordered pairs a < a' (c < c') only: ½ Σ_{a,a'} = Σ_{a<a'}
        psiAMu=psa[np.triu_indices(na, 1)].transpose(1, 0, 2).reshape(nc, na * (na - 1) // 2, 5),
        psiCXu=psc[np.triu_indices(nc, 1)].transpose(1, 0, 2).reshape(na, nc * (nc - 1) // 2, 5),
    )
    lam = np.zeros((ns, ns, 5))
    zeta = np.zeros((nn, nc, na, 5))
    for p, n in zip(neu, Nn):
        found = False
        for q, s in enumerate(species):
            key = tuple(sorted((n, s), key=lambda x: (x != n, x))) if s not in Nn else tuple(sorted((n, s)))
            e = params.get(("lambda", *key))
            if e is not None:
                lam[p, q] = lam[q, p] = e.coeffs.get("lambda", np.zeros(5))
                checks.append((f"λ {n} {s}", np.array([p, q]), np.inf, *e.T_range))
                found = True
        if not found:
            missing.append(f"{n} (no λ)")
        for i, c in enumerate(Cn):
            for j, a in enumerate(A):
                e = params.get(("zeta", n, c, a))
                if e is not None:
                    zeta[list(Nn).index(n), i, j] = e.coeffs["zeta"]
                    checks.append((f"ζ {n} {c} {a}", np.array([p, cat[i], an[j]]), np.inf, *e.T_range))
    blocks.update(
        lam=lam,
        zN=zeta.reshape(nn, nc * na, 5),
        zC=zeta.transpose(1, 0, 2, 3).reshape(nc, nn * na, 5),
        zA=zeta.transpose(2, 0, 1, 3).reshape(na, nn * nc, 5),
    )
    flags = {k: bool(np.any(v)) for k, v in blocks.items()}
    check_idx = np.full((len(checks), 3), ns, dtype=int)  # padded with ns: an always-present row
    for r, c in enumerate(checks):
        check_idx[r, : len(c[1])] = c[1]
    check_arrays = (
        check_idx,
        np.array([c[2] for c in checks], dtype=float),
        np.array([c[3] for c in checks], dtype=float),
        np.array([c[4] for c in checks], dtype=float),
    )
    notes = ()
    if missing:
        notes = (f"pitzer: no parameters for {', '.join(missing)}; those terms are absent",)
    return Bound(
        tuple(species),
        z,
        cat,
        an,
        neu,
        alphas,
        blocks,
        flags,
        etc,
        eta,
        tuple(checks),
        check_arrays,
        tuple(missing),
        notes,
    )
