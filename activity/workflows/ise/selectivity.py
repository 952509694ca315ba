"""Potentiometric selectivity coefficients from measurements, reported as lg K.

Three IUPAC methods (Buck & Lindner 1994; Umezawa et al. 2000), each with its own input:

* **Separate solution method** (:func:`separate_solution`): the electrode in a solution of
  the primary ion alone (activity aᵢ, reading Eᵢ) and in one of the interferent alone (aⱼ,
  Eⱼ). From the Nikolsky–Eisenman equation with one ion at a time,
  lg Kᵢⱼ = (Eⱼ − Eᵢ)/S + lg aᵢ − (zᵢ/zⱼ)·lg aⱼ, which for aᵢ = aⱼ is the IUPAC form
  (Eⱼ − Eᵢ)zᵢF/(RT ln10) + (1 − zᵢ/zⱼ) lg aᵢ.
* **Fixed interference method** (:func:`fixed_interference`): a series with the interferent
  fixed at aⱼ and the primary ion varied; Kᵢⱼ = aᵢ*/aⱼ^(zᵢ/zⱼ) with aᵢ* the activity where the
  extrapolated linear response meets the interferent plateau. aᵢ* is found by fitting
  E = E0 + S·lg(aᵢ + A) to the whole series (A = aᵢ* exactly for data on the Nikolsky curve,
  the intersection of its two asymptotes), so every point counts and u(A) comes from the fit.
* **Matched potential method** (:func:`matched_potential`): to a reference solution of the
  primary ion, a step Δaᵢ of the primary ion gives ΔE; the interferent is added to the same
  reference until the same ΔE; K = Δaᵢ/Δaⱼ (no charge exponent; it equals the
  Nikolsky–Eisenman K for ions of equal charge).

The slope S (V per decade, sign of zᵢ) comes from a calibration or is the Nernst slope.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from ...errors import InputError
from ._model import finite, nernst_slope_z

__all__ = ["SelectivityResult", "fixed_interference", "matched_potential", "separate_solution"]


@dataclass(frozen=True)
class SelectivityResult:
    """A selectivity coefficient from data.

    Attributes
    ----------
    method : str
        'separate solution', 'fixed interference' or 'matched potential'.
    lg_K : float
        lg Kᵢⱼ (mean over the points for a series).
    u_lg_K : float
        Its standard uncertainty.
    K : float
        10^lg_K.
    points : ndarray
        lg K of each point (SSM, MPM) or the fitted quantities (FIM).
    notes : tuple of str
    """

    method: str
    lg_K: float
    u_lg_K: float
    points: Any
    notes: tuple = ()

    @property
    def K(self) -> float:
        return float(10.0**self.lg_K)

    def to_dict(self) -> dict:
        return {
            "method": self.method,
            "lg_K": self.lg_K,
            "u_lg_K": self.u_lg_K,
            "K": self.K,
            "lg_K_points": np.asarray(self.points).tolist(),
            "notes": list(self.notes),
        }


def _slope(slope: Any, z: int, T: Any) -> tuple[float, float]:
    """(S, u(S)) from a number, a (value, u) pair, a calibration, or None (Nernstian)."""
    if slope is None:
        return float(nernst_slope_z(T, z)), 0.0
    if hasattr(slope, "slope") and hasattr(slope, "standard_errors"):
        return float(slope.slope_at(T)), float(slope.standard_errors.get("slope", 0.0))
    arr = finite(slope, "slope").reshape(-1)
    if arr.size == 1:
        return float(arr[0]), 0.0
    if arr.size == 2:
        return float(arr[0]), float(abs(arr[1]))
    raise InputError("give the slope as a number, (value, u), a calibration, or None", field="slope", value=slope)


def _charges(z_primary: int, z_interferent: int) -> float:
    zi, zj = int(z_primary), int(z_interferent)
    if zi == 0 or zj == 0 or np.sign(zi) != np.sign(zj):
        raise InputError(
            "primary ion and interferent need charges of one sign", field="z_interferent", value=z_interferent
        )
    return zi / zj


def separate_solution(
    E_primary: ArrayLike,
    E_interferent: ArrayLike,
    a_primary: ArrayLike,
    a_interferent: ArrayLike,
    z_primary: int,
    z_interferent: int,
    *,
    slope: Any = None,
    T: float = 298.15,
    u_emf: float = 0.0,
) -> SelectivityResult:
    """Separate solution method: lg Kᵢⱼ = (Eⱼ − Eᵢ)/S + lg aᵢ − (zᵢ/zⱼ) lg aⱼ.

    Parameters
    ----------
    E_primary, E_interferent : array_like
        Readings (V) in the primary-ion solution(s) and the interferent solution(s); equal
        shapes (one pair per point).
    a_primary, a_interferent : array_like
        Activities of those solutions.
    z_primary, z_interferent : int
    slope : float, (value, u), ISECalibration or None
        Slope at T in V/decade (None: Nernstian).
    T : float
    u_emf : float
        Standard uncertainty of one reading, V.

    Examples
    --------
    >>> # K+ electrode, 0.01 activity each, Na+ reads 177.5 mV below K+ (invented numbers)
    >>> r = separate_solution(0.100, 0.100 - 0.1775, 0.01, 0.01, 1, 1)
    >>> round(r.lg_K, 2)
    -3.0
    """
    Ei = finite(E_primary, "E_primary")
    Ej = finite(E_interferent, "E_interferent")
    ai = finite(a_primary, "a_primary", positive=True)
    aj = finite(a_interferent, "a_interferent", positive=True)
    r = _charges(z_primary, z_interferent)
    S, uS = _slope(slope, z_primary, T)
    try:
        dE, ai_b, aj_b = np.broadcast_arrays(Ej - Ei, ai, aj)
    except ValueError:
        raise InputError("readings and activities do not match in shape", field="E_interferent", value=None) from None
    lgK = dE / S + np.log10(ai_b) - r * np.log10(aj_b)
    # GUM per point: ∂/∂ΔE = 1/S, ∂/∂S = −ΔE/S²; u(ΔE)² = 2 u_emf²
    u_pt = np.sqrt(2 * u_emf**2 / S**2 + (dE * uS / S**2) ** 2)
    mean = float(np.mean(lgK))
    n = lgK.size
    notes = []
    if n > 1:
        sem = float(np.std(lgK, ddof=1) / np.sqrt(n))
        u = float(np.sqrt(sem**2 + np.mean(u_pt) ** 2 / n))
        notes.append(f"mean of {n} points; u combines their scatter and the reading uncertainty")
        if np.ptp(lgK) > 0.3:
            notes.append(
                f"lg K varies by {np.ptp(lgK):.2f} over the points: SSM values depend on the activity "
                f"(non-Nernstian interferent response); IUPAC (Umezawa et al. 2000) prefers FIM or MPM"
            )
    else:
        u = float(u_pt.ravel()[0])
    return SelectivityResult("separate solution", mean, u, lgK.ravel(), tuple(notes))


def fixed_interference(
    E: ArrayLike,
    a_primary: ArrayLike,
    a_interferent: float,
    z_primary: int,
    z_interferent: int,
    *,
    slope: Any = None,
    T: float = 298.15,
) -> SelectivityResult:
    """Fixed interference method: Kᵢⱼ = aᵢ*/aⱼ^(zᵢ/zⱼ) from a series at fixed aⱼ.

    Parameters
    ----------
    E : array_like, shape (n,)
        Readings, V, n ≥ 4, spanning the plateau and the linear response.
    a_primary : array_like, shape (n,)
        Primary-ion activities of the series.
    a_interferent : float
        The fixed interferent activity.
    slope : 'fit', float, (value, u), ISECalibration or None
        'fit' fits S with the intersection; otherwise S is held (None: Nernstian).

    Examples
    --------
    >>> import numpy as np
    >>> from activity.workflows.ise._model import nernst_slope_z
    >>> a = np.logspace(-7, -2, 6)
    >>> E = 0.2 + nernst_slope_z(298.15, 2) * np.log10(a + 0.05 * 0.01)   # K = 0.05, a(Mg) = 0.01
    >>> round(fixed_interference(E, a, 0.01, 2, 2).lg_K, 6)
    -1.30103
    """
    from .calibration import _Data, _fit

    Ev = finite(E, "E").reshape(-1)
    ai = finite(a_primary, "a_primary", positive=True).reshape(-1)
    aj = float(finite(a_interferent, "a_interferent", positive=True))
    if Ev.size != ai.size:
        raise InputError(f"needs one reading per activity ({ai.size})", field="E", value=Ev.size)
    free = isinstance(slope, str) and slope == "fit"
    if isinstance(slope, str) and not free:
        raise InputError("slope is 'fit', a number, (value, u), a calibration or None", field="slope", value=slope)
    if Ev.size < 3 + int(free):
        raise InputError(f"needs at least {3 + int(free)} points", field="E", value=Ev.size)
    r = _charges(z_primary, z_interferent)
    s = np.full(ai.size, float(nernst_slope_z(T, z_primary)))
    notes = []
    if free:
        factor, uS = 1.0, 0.0
    else:
        S, uS = _slope(slope, z_primary, T)
        factor = S / s[0]
        s = s * factor
    d = _Data(Ev, np.ones(ai.size), s, ai, np.zeros(ai.size), {})
    prob, res, cov, at_bound = _fit(d, free, True, [], 0.0)
    idx = prob.names.index("lg a0")
    lgA = float(res.x[idx])
    u = float(np.sqrt(cov[idx, idx]))
    if at_bound[idx] or u > 1.0:
        notes.append(
            "the series does not show both the plateau and the linear response: the intersection is poorly determined"
        )
    if uS > 0:
        notes.append("u(lg K) from the fit only (the given slope held fixed)")
    lgK = lgA - r * np.log10(aj)
    notes.append("aᵢ* from a fit of E = E0 + S·lg(aᵢ + aᵢ*) to the whole series (the intersection of its asymptotes)")
    return SelectivityResult("fixed interference", float(lgK), u, np.array([lgA, res.x[0]]), tuple(notes))


def matched_potential(
    a_reference: float,
    delta_a_primary: float,
    delta_E: float,
    a_interferent_added: ArrayLike,
    delta_E_interferent: ArrayLike,
    *,
    u_emf: float = 0.0,
) -> SelectivityResult:
    """Matched potential method: K = Δaᵢ/Δaⱼ at equal potential change.

    Parameters
    ----------
    a_reference : float
        Primary-ion activity of the reference solution (for the record; K does not use it).
    delta_a_primary : float
        Increase of the primary-ion activity that gave ``delta_E``.
    delta_E : float
        Potential change from the primary-ion step, V.
    a_interferent_added : array_like, shape (n,)
        Interferent activities added to the reference solution (increasing).
    delta_E_interferent : array_like, shape (n,)
        Potential change of each, V; ``delta_E`` must lie within their range.
    u_emf : float
        Standard uncertainty of one reading, V (u(ΔE) = √2·u_emf).

    Examples
    --------
    >>> import numpy as np
    >>> S = 0.05916; a_ref = 1e-4
    >>> dE = S * np.log10((a_ref + 1e-4) / a_ref)
    >>> aj = np.array([1e-3, 1e-2, 1e-1]); dEj = S * np.log10((a_ref + 0.01 * aj) / a_ref)
    >>> round(matched_potential(a_ref, 1e-4, dE, aj, dEj).K, 6)    # K = 0.01 for equal charges
    0.01
    """
    daj = finite(a_interferent_added, "a_interferent_added", positive=True).reshape(-1)
    dEj = finite(delta_E_interferent, "delta_E_interferent").reshape(-1)
    dai = float(finite(delta_a_primary, "delta_a_primary", positive=True))
    dE = float(finite(delta_E, "delta_E"))
    finite(a_reference, "a_reference", positive=True)
    if daj.size != dEj.size or daj.size < 2:
        raise InputError(
            "needs at least two interferent steps, one potential change each",
            field="delta_E_interferent",
            value=dEj.size,
        )
    order = np.argsort(dEj)
    x, y = dEj[order], np.log10(daj[order])
    if np.any(np.diff(x) <= 0):
        raise InputError(
            "the interferent's potential changes must be strictly monotonic", field="delta_E_interferent", value=None
        )
    if not x[0] <= dE <= x[-1]:
        raise InputError(
            f"ΔE of the primary step ({1000 * dE:.3g} mV) is outside the interferent's range "
            f"({1000 * x[0]:.3g}–{1000 * x[-1]:.3g} mV): the potentials cannot be matched",
            field="delta_E",
            value=dE,
        )
    # interpolate lg Δaⱼ against ΔE (the response is close to linear in lg a over one step)
    lg_aj = float(np.interp(dE, x, y))
    k = int(np.clip(np.searchsorted(x, dE), 1, x.size - 1))
    local = (x[k] - x[k - 1]) / (y[k] - y[k - 1])  # dΔE / d lg Δaⱼ
    # two independent ΔE's (primary step and interferent step) each with u = √2·u_emf
    u = float(np.sqrt(2 * (np.sqrt(2) * u_emf / local) ** 2))
    lgK = float(np.log10(dai) - lg_aj)
    notes = ("Δaⱼ interpolated linearly in lg a between the bracketing interferent steps",)
    return SelectivityResult("matched potential", lgK, u, np.array([lg_aj]), notes)
