"""Membrane potentials: Goldman–Hodgkin–Katz, Donnan, Nikolsky–Eisenman.

Array-level functions; a leading axis runs over ions, the rest is the batch. Each
reduces to the Nernst equation when a single ion is permeant (GHK), mobile (Donnan) or
free of interference (Nikolsky–Eisenman).

Sign conventions: membrane and Donnan potentials are φ(inside) − φ(outside); the
Nikolsky–Eisenman potential is that of the ion-selective electrode in the cell, rising
with the activity of a cation.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .. import _checks
from ..constants import T_REF, F, R
from ..errors import InputError

__all__ = ["ghk_potential", "DonnanResult", "donnan_potential", "nikolsky_eisenman", "nikolsky_eisenman_core"]


def _charges(z: ArrayLike, k: int, field: str = "z") -> np.ndarray:
    zz = np.asarray(z, dtype=float).reshape(-1)
    if zz.size != k:
        raise InputError(f"need one charge per ion ({k})", field=field, value=z)
    if np.any(zz == 0) or np.any(zz != np.round(zz)):
        raise InputError("charges must be non-zero integers", field=field, value=z)
    return zz


def _leading(values: Any, k: int, field: str) -> np.ndarray:
    arr = _checks.finite_array(values, field, nonnegative=True)
    if arr.ndim == 0 or arr.shape[0] != k:
        raise InputError(f"needs a leading axis of length {k} (one entry per ion)", field=field, value=np.shape(values))
    return arr


def _expand(v: np.ndarray, ndim: int) -> np.ndarray:
    return v.reshape(v.shape + (1,) * (ndim - 1))


def ghk_potential(permeability: Any, c_in: Any, c_out: Any, z: ArrayLike, T: ArrayLike = T_REF) -> Any:
    """Goldman–Hodgkin–Katz zero-current membrane potential φ(in) − φ(out), V.

    For ions of one charge magnitude the closed form
    V = (RT/|z|F) ln[(Σ_cations P c_out + Σ_anions P c_in) / (Σ_cations P c_in + Σ_anions P c_out)]
    is used; with mixed charge magnitudes the zero of the total GHK current is found by
    bisection (vectorised over the batch, to 1e-13 V).

    Parameters
    ----------
    permeability : array_like, shape (k,)
        Relative permeabilities P (any common unit; only ratios matter).
    c_in, c_out : array_like, shape (k,) + batch
        Concentrations (or activities) inside and outside.
    z : array_like, shape (k,)
        Charge numbers.
    T : array_like
        Temperature, K.

    Examples
    --------
    >>> # K+, Na+, Cl- with P = 1 : 0.04 : 0.45 (a textbook resting potential, invented concentrations)
    >>> v = ghk_potential([1, 0.04, 0.45], [140, 15, 10], [5, 145, 110], [1, 1, -1], 310.15)
    >>> round(v * 1000, 1)
    -67.3
    """
    P = np.asarray(_checks.finite_array(permeability, "permeability", nonnegative=True), float).reshape(-1)
    k = P.size
    zz = _charges(z, k)
    cin = _leading(c_in, k, "c_in")
    cout = _leading(c_out, k, "c_out")
    Tk = _checks.finite_array(T, "T", positive=True)
    nd = max(cin.ndim, cout.ndim)
    Pz = _expand(P, nd)
    cat = _expand(zz > 0, nd)
    mag = np.abs(zz)
    if np.all(mag == mag[0]):
        num = np.sum(Pz * np.where(cat, cout, cin), axis=0)
        den = np.sum(Pz * np.where(cat, cin, cout), axis=0)
        if np.any(num <= 0) or np.any(den <= 0):
            raise InputError("no permeant ion on one side: the potential is unbounded", field="c_in", value=None)
        return _checks.scalar_or_array(R * Tk / (mag[0] * F) * np.log(num / den))
    zc = _expand(zz, nd)

    def current(u):  # ∝ total GHK current at reduced potential u = FV/RT (increasing in u)
        x = zc * u
        h = np.where(x == 0, 1.0, x / np.where(x == 0, 1.0, -np.expm1(-x)))
        return np.sum(Pz * zc * h * (cin - cout * np.exp(-x)), axis=0)

    shape = np.broadcast_shapes(cin.shape[1:], cout.shape[1:])
    lo, hi = np.full(shape, -60.0), np.full(shape, 60.0)
    if np.any(current(lo) > 0) or np.any(current(hi) < 0):
        raise InputError("no zero-current potential within ±1.5 V", field="c_in", value=None)
    for _ in range(70):
        mid = 0.5 * (lo + hi)
        pos = current(mid) > 0
        hi = np.where(pos, mid, hi)
        lo = np.where(pos, lo, mid)
    return _checks.scalar_or_array(0.5 * (lo + hi) * R * Tk / F)


@dataclass(frozen=True)
class DonnanResult:
    """Donnan equilibrium between an outer solution and a phase with fixed charges.

    Attributes
    ----------
    potential : float or ndarray
        φ(inside) − φ(outside), V.
    c_in : ndarray
        Mobile-ion concentrations inside, shape ``(k,) + batch``.
    ratio : float or ndarray
        Donnan ratio r with c_in = c_out · r^z.
    """

    potential: ArrayLike
    c_in: np.ndarray
    ratio: Any


def donnan_potential(c_out: Any, z: ArrayLike, fixed_charge: Any, T: ArrayLike = T_REF) -> DonnanResult:
    """Donnan potential of a phase holding fixed charges (ideal: equal γ in both phases).

    Every mobile ion is distributed so that its electrochemical potential is the same in
    both phases, c_in = c_out r^z, and the inner phase is electrically neutral,
    Σ z c_out r^z + ρ = 0, with ρ the signed concentration of fixed charge (negative for
    a cation exchanger). The equation is monotonic in ln r and is solved by bisection.

    Parameters
    ----------
    c_out : array_like, shape (k,) + batch
        Mobile-ion concentrations outside.
    z : array_like, shape (k,)
    fixed_charge : array_like
        ρ, in the unit of ``c_out`` (broadcasts with the batch).
    T : array_like

    Examples
    --------
    >>> # a cation exchanger with 1 mol/kg fixed charge in 0.01 mol/kg NaCl
    >>> res = donnan_potential([0.01, 0.01], [1, -1], -1.0)
    >>> round(res.potential * 1000, 1), round(float(res.c_in[0]), 4)
    (-118.3, 1.0001)
    """
    cout = _checks.finite_array(c_out, "c_out", nonnegative=True)
    if cout.ndim == 0:
        raise InputError("needs a leading axis (one entry per ion)", field="c_out", value=c_out)
    k = cout.shape[0]
    zz = _charges(z, k)
    rho = _checks.finite_array(fixed_charge, "fixed_charge")
    Tk = _checks.finite_array(T, "T", positive=True)
    zc = _expand(zz, cout.ndim)
    shape = np.broadcast_shapes(cout.shape[1:], rho.shape)
    has_pos = np.any((zc > 0) & (cout > 0), axis=0)
    has_neg = np.any((zc < 0) & (cout > 0), axis=0)
    if np.any(~np.broadcast_to(has_pos, shape) & (rho < 0)) or np.any(~np.broadcast_to(has_neg, shape) & (rho > 0)):
        raise InputError("no mobile counter-ion to neutralise the fixed charge", field="c_out", value=None)

    def excess(s):
        return np.sum(zc * cout * np.exp(zc * s), axis=0) + rho

    lo, hi = np.full(shape, -40.0), np.full(shape, 40.0)
    for _ in range(110):
        mid = 0.5 * (lo + hi)
        pos = excess(mid) > 0
        hi = np.where(pos, mid, hi)
        lo = np.where(pos, lo, mid)
    s = 0.5 * (lo + hi)
    return DonnanResult(
        _checks.scalar_or_array(-R * Tk / F * s),
        cout * np.exp(zc * s),
        _checks.scalar_or_array(np.exp(s)),
    )


def nikolsky_eisenman(
    E0: ArrayLike,
    a_primary: Any,
    z_primary: int,
    a_interferents: Any = None,
    z_interferents: Any = (),
    selectivity: Any = (),
    T: ArrayLike = T_REF,
    slope_factor: Any = 1.0,
) -> Any:
    """Nikolsky–Eisenman response E = E0 + (s/zᵢ) log10(aᵢ + Σⱼ Kᵢⱼ aⱼ^(zᵢ/zⱼ)), V.

    s = slope_factor · RT ln10/F is the (fraction of the) Nernst slope.

    Parameters
    ----------
    E0 : array_like
        Electrode constant, V.
    a_primary : array_like
        Activity of the primary ion i (batch shape).
    z_primary : int
    a_interferents : array_like, shape (k,) + batch, optional
    z_interferents, selectivity : array_like, shape (k,)
        Charges and selectivity coefficients Kᵢⱼ of the interfering ions (same sign of
        charge as the primary ion).
    T : array_like
    slope_factor : array_like, default 1

    Examples
    --------
    >>> # a calcium electrode with Mg interference K = 0.01
    >>> E = nikolsky_eisenman(0.0, 1e-3, 2, [1e-2], [2], [0.01])
    >>> round(E * 1000, 3)
    -87.515
    """
    zi = float(_charges([z_primary], 1, "z_primary")[0])
    ai = _checks.finite_array(a_primary, "a_primary", nonnegative=True)
    K = np.asarray(_checks.finite_array(selectivity, "selectivity", nonnegative=True), float).reshape(-1)
    zj = np.zeros(0)
    aj = np.zeros((0,) + ai.shape)
    if K.size:
        zj = _charges(z_interferents, K.size, "z_interferents")
        if np.any(np.sign(zj) != np.sign(zi)):
            raise InputError(
                "interferents must carry charge of the primary ion's sign", field="z_interferents", value=z_interferents
            )
        aj = _leading(a_interferents, K.size, "a_interferents")
    Tk = _checks.finite_array(T, "T", positive=True)
    return _checks.scalar_or_array(nikolsky_eisenman_core(E0, ai, zi, aj, zi / zj, K, Tk, slope_factor))


def nikolsky_eisenman_core(
    E0: ArrayLike, ai: np.ndarray, zi: float, aj: Any, ratio: Any, K: Any, T: ArrayLike, slope_factor: Any = 1.0
) -> np.ndarray:
    """Nikolsky–Eisenman potential from checked arrays (no validation; internal fast path).

    ``aj`` is a sequence of interferent activities, ``ratio`` the exponents zᵢ/zⱼ.
    """
    total = ai
    for a, r, k in zip(aj, ratio, K):
        total = total + k * (a if r == 1 else a**r)
    if not np.all(total > 0):
        raise InputError("primary and interfering activities are all zero in some row", field="a_primary", value=None)
    ln_total = np.log(total)
    ln_total *= np.asarray(slope_factor, float) * R * np.asarray(T, float) / (zi * F)
    ln_total += E0
    return ln_total
