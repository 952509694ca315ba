"""The shared Debye–Hückel functional form behind four of the built-in models.

    log10 γ_i = −A z_i² √I / (1 + K_i √I) + β_i I,
    K_i = B(T) å_i + d_i,      β_i = c A z_i² + b_i

* limiting law: å = d = c = b = 0;
* extended Debye–Hückel: å_i from Kielland (1937);
* Truesdell–Jones: å_i = a_i and b_i from Truesdell & Jones (1974);
* Davies: å = 0, d = 1, c = 0.3 (configurable), b = 0.

Neutral species (z = 0) get log10 γ = k_s I with a Setschenow coefficient k_s (default 0).

The osmotic coefficient follows from the Gibbs–Duhem equation integrated along the
dilution path at constant composition ratios and temperature:

    (φ − 1) Σm = ln10 Σ_i (m_i / I) [ −A z_i² (I √I/(1 + K_i √I) − J(K_i, I)) + β_i I²/2 ],
    J(K, I) = ∫₀^I √x / (1 + K √x) dx.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..constants import LN10
from ..species import parse_species
from ..water import debye_huckel_A, debye_huckel_B
from .base import ActivityModel

__all__ = ["DebyeHuckelForm", "IonTerms"]


@dataclass(frozen=True)
class IonTerms:
    """Per-species parameters of the shared form (arrays of shape ``(n_species,)``)."""

    size: np.ndarray  # å in Å (multiplies B)
    d: np.ndarray  # constant added to K
    c: float  # multiplies A z² in the linear term
    b: np.ndarray  # linear coefficient, kg/mol
    notes: tuple = ()


@dataclass(frozen=True)
class _Bound:
    z2: np.ndarray
    terms: IonTerms
    groups: tuple  # ((size, d), index array) for each distinct denominator


def _J(K: np.ndarray, s: np.ndarray) -> np.ndarray:
    """∫₀^{s²} √x/(1+K√x) dx, accurate for small K s (series below K s = 0.01)."""
    K, s = np.broadcast_arrays(np.asarray(K, float), np.asarray(s, float))
    y = K * s
    out = np.empty(y.shape)
    small = y < 1e-2
    big = ~small
    yb, Kb = y[big], K[big]
    out[big] = 2.0 / Kb**3 * (yb * yb / 2 - yb + np.log1p(yb))
    ys, ss = y[small], s[small]
    out[small] = 2.0 * ss**3 * (1 / 3 - ys / 4 + ys**2 / 5 - ys**3 / 6 + ys**4 / 7 - ys**5 / 8)
    return out


class DebyeHuckelForm(ActivityModel):
    """Base of the Debye–Hückel-type models; subclasses supply :meth:`_ion_terms`."""

    def __init__(self, *, salting: Mapping[str, float] | None = None, **params: Any):
        super().__init__(**params, **({"salting": dict(salting)} if salting else {}))
        self._salting = {parse_species(k).name: float(v) for k, v in (salting or {}).items()}

    def _ion_terms(self, species: tuple[str, ...], charges: np.ndarray) -> IonTerms:
        raise NotImplementedError

    def prepare(self, species, charges):
        terms = self._ion_terms(species, charges)
        b = np.array(terms.b, dtype=float)
        for i, name in enumerate(species):
            if charges[i] == 0:
                b[i] = self._salting.get(name, 0.0)
        terms = IonTerms(np.asarray(terms.size, float), np.asarray(terms.d, float), float(terms.c), b, terms.notes)
        keys = list(zip(terms.size.tolist(), terms.d.tolist()))
        groups = tuple(
            (key, np.array([i for i, k in enumerate(keys) if k == key and charges[i] != 0], dtype=int))
            for key in dict.fromkeys(k for k, z in zip(keys, charges) if z != 0)
        )
        return _Bound(charges.astype(float) ** 2, terms, groups)

    #: In rows where a cation and an anion both of charge magnitude ≥ 2 are present (MgSO4,
    #: CaSO4, ZnSO4, CuSO4, MgCO3 …), the ions associate (Bjerrum pairs) and a Debye–Hückel
    #: form without ion pairs leaves its tolerance above about this ionic strength (mol/kg).
    #: None: no such limit. Subclasses set it.
    associated_max_ionic_strength: float | None = None
    #: Limit (mol/kg) for rows with an anion of charge ≤ −2 (SO4^2-, CO3^2-, HPO4^2- …).
    multivalent_anion_max_ionic_strength: float | None = None

    def binding_notes(self, bound):
        notes = bound.terms.notes
        ions = np.flatnonzero(bound.z2 > 0)
        if len(ions) >= 3:
            t = bound.terms
            params = {(float(t.size[i]), float(t.d[i]), float(t.b[i] / bound.z2[i])) for i in ions}
            if len(params) > 1:
                notes = notes + (
                    f"{self.name}: in a mixture of ions with different size or linear parameters the osmotic "
                    "coefficient and water activity do not satisfy Gibbs–Duhem with these γ (the single-ion "
                    "equations derive from no common excess Gibbs energy); treat φ and a(H2O) as estimates",
                )
        return notes, ()

    def check_range(self, sol, I):
        from .._checks import pressure_notes

        ok, notes = super().check_range(sol, I)
        notes = notes + tuple(f"{self.name}: {n}" for n in pressure_notes(sol.P_compact))  # A, B from 1-atm density
        z = sol.charges
        if not np.any(z <= -2):
            return ok, notes  # neither limit below applies without a multivalent anion
        m = sol.m.reshape(len(z), -1)
        n_rows = m.shape[1]
        multi_cat = (m[z >= 2] > 0).any(axis=0) if np.any(z >= 2) else np.zeros(n_rows, bool)
        multi_an = (m[z <= -2] > 0).any(axis=0) if np.any(z <= -2) else np.zeros(n_rows, bool)
        paired = multi_cat & multi_an
        explicit = sol.explicit_ion_pairs
        if explicit and np.any(paired):  # speciated: only pairs not counted as species
            paired = np.zeros(n_rows, bool)
            for i in np.flatnonzero(z >= 2):
                for j in np.flatnonzero(z <= -2):
                    if (sol.species[i], sol.species[j]) not in explicit:
                        paired |= (m[i] > 0) & (m[j] > 0)
        flat_I = np.asarray(I, dtype=float).reshape(-1)
        for limit, rows, what in (
            (self.associated_max_ionic_strength, paired, "a 2:2 pair (ion association)"),
            (self.multivalent_anion_max_ionic_strength, multi_an, "a divalent or higher anion"),
        ):
            if limit is None:
                continue
            bad = rows & (flat_I > limit)
            if np.any(bad):
                ok = ok & ~bad.reshape(np.shape(ok))
                notes = notes + (
                    f"{self.name}: with {what} the model holds to I = {limit:g} mol/kg; I up to "
                    f"{float(np.max(flat_I[bad])):.4g} in {int(np.count_nonzero(bad))} of {sol.size} row(s): "
                    "outside the model's validity",
                )
        return ok, notes

    @staticmethod
    def _AB(sol):
        T, P = sol.T_compact, sol.P_compact
        return np.asarray(debye_huckel_A(T, P)), np.asarray(debye_huckel_B(T, P))

    def _group_rows(self, sol, bound, I, groups):
        """Yield (indices, h) for each group of ``groups`` (pairs of the binding's ``groups``):
        h = −A √I/(1 + K √I) + c A I, the row that log10 γ_i = z_i² h + b_i I scales, formed
        once per group (not once per ion). B(T) is evaluated only when an ion size multiplies
        it (not for Davies or the limiting law: it costs a second pass of the water model)."""
        if not groups:
            return
        if any(size for (size, _), _ in groups):
            A, B = self._AB(sol)
        else:
            A, B = np.asarray(debye_huckel_A(sol.T_compact, sol.P_compact)), 0.0
        s = np.sqrt(I)
        t = bound.terms
        As = A * s
        last = len(groups) - 1
        for g, ((size, d), idx) in enumerate(groups):
            K = B * size + d
            # the last group may write into √I and A√I (no longer needed): two row arrays for
            # the whole kernel instead of four (each new array costs page faults on a shared
            # machine); the same operations, so the same values
            own = g == last and np.ndim(s) > 0 and np.shape(As) == s.shape == np.broadcast_shapes(np.shape(K), s.shape)
            if size or d:
                # q = A√I / (1 + K√I), formed in place; K = 1 (Davies) needs no product
                if not size and d == 1.0:
                    q = np.add(s, 1.0, out=s if own else None)
                else:
                    q = np.add(np.multiply(K, s, out=s if own else None), 1.0, out=s if own else None)
                if own:
                    q = np.divide(As, q, out=As)
                else:
                    q = np.divide(As, q, out=q) if np.ndim(q) and np.shape(q) == np.shape(As) else As / q
            else:
                q = As
            if t.c:
                if own:
                    h = np.subtract(np.multiply(t.c * A, I, out=s), q, out=s)
                else:
                    h = np.asarray((t.c * A) * I)
                    h = h - q if h.ndim == 0 or h.shape != np.shape(q) else np.subtract(h, q, out=h)
            else:
                h = np.negative(q, out=q) if own else np.negative(q)
            yield idx, h

    def compute_log10_gamma(self, sol, bound, I):
        k = len(bound.z2)
        t = bound.terms
        out = np.empty((k,) + I.shape)
        for idx, h in self._group_rows(sol, bound, I, bound.groups):
            for i in idx:
                np.multiply(h, bound.z2[i], out=out[i, ...])
                if t.b[i]:
                    out[i] += t.b[i] * I
        for i in range(k):
            if bound.z2[i] == 0:
                out[i] = t.b[i] * I
        return out

    def log10_gamma_rows(self, sol, bound, I, wanted):
        """log10 γ of the species at the positions ``wanted`` alone, as {position: row}: the
        same arithmetic as :meth:`compute_log10_gamma` (bit for bit), but the groups no
        wanted ion belongs to are skipped and an ion with z² = 1 and no linear term gets the
        group's row itself (z² h is h), not a copy. Rows may be shared: do not write to them."""
        t = bound.terms
        want = np.asarray(wanted, dtype=int)
        groups = tuple((key, idx[np.isin(idx, want)]) for key, idx in bound.groups)
        rows = {}
        for idx, h in self._group_rows(sol, bound, I, tuple(g for g in groups if g[1].size)):
            for i in idx.tolist():
                if bound.z2[i] == 1.0 and not t.b[i]:
                    rows[i] = np.asarray(h)
                else:
                    r = rows[i] = np.asarray(np.multiply(h, bound.z2[i]))
                    if t.b[i]:
                        r += t.b[i] * I
        for i in want.tolist():
            if bound.z2[i] == 0:
                rows[i] = np.asarray(t.b[i] * I)
        return rows

    def compute_osmotic(self, sol, bound, I):
        A, B = self._AB(sol)
        s = np.sqrt(I)
        m = sol.m
        acc = np.zeros(I.shape)
        for (size, d), idx in bound.groups:
            K = np.broadcast_to(B * size + d, I.shape)
            w = np.tensordot(bound.z2[idx], m[idx], axes=(0, 0))
            acc -= A * w * (I * s / (1.0 + K * s) - _J(K, s))
        t = bound.terms
        beta = t.c * A * bound.z2[:, None] + t.b[:, None] if np.ndim(A) == 0 else None
        if beta is not None:
            lin = np.tensordot(beta[:, 0], m, axes=(0, 0))
        else:
            lin = sum((t.c * A * bound.z2[i] + t.b[i]) * m[i] for i in range(len(bound.z2)))
        acc += lin * I * I / 2.0
        total = np.asarray(sol.total_molality)
        denom = total * I
        with np.errstate(divide="ignore", invalid="ignore"):
            phi = 1.0 + LN10 * np.where(denom > 0, acc / np.where(denom > 0, denom, 1.0), 0.0)
        return phi


def table_values(name: str) -> Mapping[str, Any]:
    """The ``values`` table of a section of ``models/species.toml``."""
    from .. import data

    return data.load("species")[name]["values"]


def source_of(name: str) -> str:
    from .. import data

    sec = data.load("species")[name]
    return sec["source"] + (f" ({sec['note']})" if "note" in sec else "")
