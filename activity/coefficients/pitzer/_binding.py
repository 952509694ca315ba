"""Bind a Pitzer parameter set to a species set: index arrays and weight matrices.

Everything here depends on the species set only. Coefficients are kept as basis weights
(last axis of length 5, see :func:`._params.basis`) so that evaluating them at one
temperature or at an array of temperatures is a single matrix product
(:meth:`Bound.at`).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from itertools import combinations

import numpy as np

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

    def at(self, T: np.ndarray) -> dict:
        """Coefficient blocks at ``T``: scalar T gives arrays without a row axis (cached per
        value); T of shape (N,) gives arrays with a trailing row axis of length N."""
        T = np.asarray(T, dtype=float)
        if T.ndim == 0:
            key = float(T)
            hit = self._cache.get(key)
            if hit is None:
                if len(self._cache) > 64:
                    self._cache.clear()
                hit = self._cache[key] = self._evaluate(basis(T))
            return hit
        return self._evaluate(basis(T))

    def _evaluate(self, b: np.ndarray) -> dict:
        # All-zero blocks are skipped: the kernel reads them only when flagged, except the
        # B and C blocks, which it always reads. The cation-major transposes are views.
        P = {
            k: np.tensordot(w, b, axes=(-1, 0))
            for k, w in self.blocks.items()
            if self.flags[k] or k in ("b0", "Bk", "C")
        }
        P.update(b0T=P["b0"].swapaxes(0, 1), BkT=P["Bk"].swapaxes(1, 2), CT=P["C"].swapaxes(0, 1))
        return P


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
