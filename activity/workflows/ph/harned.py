"""The primary method: pH(PS) of a buffer from the Harned cell, with an uncertainty budget.

The cell without transference Pt | H₂ | buffer S + KCl(m_Cl) | AgCl | Ag has

    E = E°(AgCl/Ag) − k lg(a(H⁺) γ(Cl⁻) m_Cl/m°) + (k/2) lg(p(H₂)/p°),   k = RT ln10 / F,

so each EMF gives the acidity function (IUPAC Gold Book, "pH", working equation; read)

    p(a_H γ_Cl) = −lg(a(H⁺) γ(Cl⁻)) = (E − E°)/k + lg(m_Cl/m°) − ½ lg(p(H₂)/p°).

The acidity function is measured at several added chloride molalities, extrapolated
linearly to m_Cl = 0, and pH(PS) = p(a_H γ_Cl)° + lg γ°(Cl⁻) with γ°(Cl⁻) from the
Bates–Guggenheim convention at the buffer's ionic strength (Buck et al. 2002).

p(H₂) is the barometric pressure at the cell minus the vapour pressure of water at T (the
gas leaves the cell saturated with water vapour); p° = 101.325 kPa, the standard state of
the E° values of Bates & Bower (1954). E° of the AgCl/Ag electrodes is measured in the same
cell filled with HCl(0.01 mol/kg) (:func:`silver_chloride_e0_from_hcl`), or taken from the
Bates & Bower table (:func:`silver_chloride_e0`).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from activity import data
from activity.constants import LN10, P_ATM, ZERO_CELSIUS, F, R
from activity.errors import InputError

from ..._checks import scalar_or_array
from .buffers import _interpolate, get_buffer
from .convention import bates_guggenheim_log10_gamma_cl

__all__ = [
    "E0Value",
    "HarnedResult",
    "harned_emf",
    "harned_ph",
    "silver_chloride_e0",
    "silver_chloride_e0_from_hcl",
    "water_vapour_pressure",
]

# Saturation pressure of water, Wagner & Pruss, J. Phys. Chem. Ref. Data 22 (1993) 783,
# eq. 2.5 (IAPWS 1992 supplementary release); coefficients from memory, checked in the tests
# against the IAPWS-IF97 implementation of the `iapws` package.
_TC, _PC = 647.096, 22.064e6
_WP = (-7.85951783, 1.84408259, -11.7866497, 22.6807411, -15.9618719, 1.80122502)
_WP_EXP = (1.0, 1.5, 3.0, 3.5, 4.0, 7.5)


def water_vapour_pressure(T: ArrayLike) -> Any:
    """Saturation vapour pressure of water at T (kelvin, 273.16–647 K), Pa.

    Examples
    --------
    >>> round(water_vapour_pressure(298.15))
    3170
    """
    Tk = np.asarray(T, dtype=float)
    if np.any(Tk < 273.0) or np.any(Tk >= _TC):
        raise InputError("outside 273–647 K", field="T", value=T)
    tau = 1.0 - Tk / _TC
    s = sum(a * tau**e for a, e in zip(_WP, _WP_EXP))
    out = _PC * np.exp(_TC / Tk * s)
    return float(out) if out.ndim == 0 else out


def _k(T: Any) -> Any:
    return R * np.asarray(T, dtype=float) * LN10 / F


@dataclass(frozen=True)
class E0Value:
    """E° of AgCl/Ag (V, molality scale, p° = 101.325 kPa) with its standard uncertainty."""

    value: Any
    standard_uncertainty: Any
    source: str
    notes: tuple = ()

    def __iter__(self):
        yield self.value
        yield self.standard_uncertainty


_TABLE_E0_NOTE = (
    "E° from the Bates & Bower table: the IUPAC procedure measures E° of the electrodes "
    "actually used, in the same cell with HCl(0.01 mol/kg)"
)


def silver_chloride_e0_table() -> Mapping[str, Any]:
    """The Bates & Bower (1954) E°(AgCl/Ag) table, read from ``models/standard_potentials.toml``.

    The same table serves the electrode path: E0 of the couple ``AgCl/Ag`` there is its 25 °C
    entry, so the pH and the electrode code see one set of values.

    Examples
    --------
    >>> tab = silver_chloride_e0_table()
    >>> tab["E0"][tab["temperature"].index(25.0)]
    0.22234
    """
    return data.load("standard_potentials")["couples"]["AgCl/Ag"]["E0_table"]


def silver_chloride_e0(T: ArrayLike = 298.15) -> E0Value:
    """E°(AgCl/Ag) at T from the Bates & Bower (1954) table (0–95 °C), interpolated.

    The standard uncertainty is their standard deviation of E° (0.02, 0.01, 0.09 mV at
    0, 25, 95 °C; interpolated linearly) combined with the interpolation error.

    Examples
    --------
    >>> e = silver_chloride_e0(298.15)
    >>> e.value, e.standard_uncertainty
    (0.22234, 1e-05)
    """
    tab = silver_chloride_e0_table()
    t = np.asarray(tab["temperature"], float) + ZERO_CELSIUS
    Tk = np.asarray(T, dtype=float)
    if np.any(Tk < t[0] - 1e-9) or np.any(Tk > t[-1] + 1e-9):
        raise InputError("E°(AgCl/Ag) is tabulated for 0–95 °C", field="T", value=T)
    val, err = _interpolate(t, np.asarray(tab["E0"], float), Tk)
    sd = np.interp(Tk, np.asarray(tab["sd_temperature"], float) + ZERO_CELSIUS, np.asarray(tab["sd"], float))
    u = np.sqrt(sd**2 + err**2 / 3.0)
    return E0Value(scalar_or_array(val), scalar_or_array(u), f"{tab['source']} ({tab['status']})", (_TABLE_E0_NOTE,))


def silver_chloride_e0_from_hcl(
    emf: ArrayLike,
    T: ArrayLike = 298.15,
    *,
    m_hcl: float = 0.01,
    gamma: ArrayLike | None = None,
    pressure: ArrayLike = P_ATM,
    u_emf: float = 2e-5,
    u_T: float = 0.01,
    u_pressure: float = 20.0,
    u_m_relative: float = 1e-3,
    u_gamma: float = 0.002 / math.sqrt(3.0),
) -> E0Value:
    """E°(AgCl/Ag) from the EMF of Pt | H₂ | HCl(m) | AgCl | Ag, with its standard uncertainty.

    E° = E + 2k lg(m γ±) − (k/2) lg(p(H₂)/p°), p(H₂) = ``pressure`` − p_w(T).

    Parameters
    ----------
    emf : array_like
        Cell EMF, V (one value per electrode pair, or a batch).
    T : array_like
        Temperature, K.
    m_hcl : float, default 0.01
        HCl molality, mol/kg.
    gamma : array_like, optional
        γ±(HCl) at m and T. By default from the Pitzer model (at 25 °C and 0.01 mol/kg
        it gives 0.9045; Kaye & Laby §3.9.6 gives 0.904).
    pressure : array_like
        Barometric pressure at the cell, Pa.
    u_emf, u_T, u_pressure, u_m_relative : float
        Standard uncertainties of the EMF (V), T (K), pressure (Pa) and, relative, of m.
    u_gamma : float
        Standard uncertainty of γ±: rectangular ±0.002, the accuracy Kaye & Laby state for
        their γ± table (read).

    Returns
    -------
    E0Value
        ``standard_uncertainty`` by the GUM for a scalar EMF (None for a batch).

    Examples
    --------
    >>> e = silver_chloride_e0_from_hcl(0.46376, 298.15, gamma=0.904)   # 1 atm barometric
    >>> round(e.value, 5), round(e.standard_uncertainty * 1e3, 3)      # V, mV
    (0.22234, 0.086)
    """
    from activity.uncertainty import Normal, Rectangular, propagate

    notes = []
    if gamma is None:
        from activity import Solution, mean_activity_coefficient

        m = float(m_hcl)
        gamma = mean_activity_coefficient(Solution({"H+": m, "Cl-": m}, T=T), "H+", "Cl-", "pitzer")
        notes.append("γ±(HCl) from the Pitzer model")
    E = np.asarray(emf, float)
    if np.any(np.abs(E) > 2.0):
        raise InputError("EMFs are in volts (|E| < 2 V); were millivolts given?", field="emf", value=emf)

    def f(emf, T, p, m, gamma):
        k = _k(T)
        p_h2 = np.asarray(p, float) - water_vapour_pressure(T)
        return emf + 2 * k * np.log10(m * np.asarray(gamma, float)) - 0.5 * k * np.log10(p_h2 / P_ATM)

    e0 = np.asarray(f(E, np.asarray(T, float), np.asarray(pressure, float), m_hcl, gamma))
    u = None
    if e0.ndim == 0 and np.ndim(T) == 0 and np.ndim(gamma) == 0 and np.ndim(pressure) == 0:
        budget = propagate(
            f,
            {
                "emf": Normal(float(E), u_emf),
                "T": Normal(float(T), u_T),
                "p": Normal(float(pressure), u_pressure),
                "m": Normal(float(m_hcl), u_m_relative * float(m_hcl)),
                "gamma": Rectangular(float(gamma), math.sqrt(3.0) * u_gamma),
            },
        )
        u = float(budget.standard_uncertainty)
    return E0Value(float(e0) if e0.ndim == 0 else e0, u, "Harned cell with HCl", tuple(notes))


def harned_emf(
    pH: float,
    m_cl: ArrayLike,
    T: float,
    *,
    ionic_strength: float,
    E0: float,
    slope_in_chloride: float = 0.0,
    pressure: float = P_ATM,
) -> np.ndarray:
    """The EMFs a Harned cell would show for a buffer of given pH(PS) (the forward model).

    The acidity function is taken linear in m_Cl with ``slope_in_chloride`` (per mol/kg).
    Used to build test and demonstration data.
    """
    m = np.asarray(m_cl, float)
    p0 = pH - bates_guggenheim_log10_gamma_cl(ionic_strength, T)
    pA = p0 + slope_in_chloride * m
    p_h2 = pressure - water_vapour_pressure(T)
    return E0 + _k(T) * (pA - np.log10(m) + 0.5 * np.log10(p_h2 / P_ATM))


@dataclass(frozen=True, repr=False)
class HarnedResult:
    """pH(PS) from the Harned cell.

    Attributes
    ----------
    pH : float
        pH(PS).
    standard_uncertainty, expanded_uncertainty : float
        u and U (coverage as in ``budget``; k ≈ 2).
    acidity_function : ndarray
        p(a_H γ_Cl) at each chloride molality.
    acidity_function_zero : float
        Its extrapolation to m_Cl = 0.
    slope_in_chloride : float
        d p(a_H γ_Cl) / d m_Cl of the fitted line, kg/mol.
    log10_gamma_cl : float
        lg γ°(Cl⁻) by the Bates–Guggenheim convention.
    ionic_strength, T, E0, p_h2 : float
        I (mol/kg), K, V, Pa.
    m_cl, emf : ndarray
        The data, mol/kg and V.
    residual_sd : float or None
        Scatter of the acidity function about the line (None for two points).
    budget : PropagationResult
    labels : dict
        Budget input name → readable label.
    notes : tuple of str
    """

    pH: float
    standard_uncertainty: float
    expanded_uncertainty: float
    acidity_function: np.ndarray
    acidity_function_zero: float
    slope_in_chloride: float
    log10_gamma_cl: float
    ionic_strength: float
    T: float
    E0: float
    p_h2: float
    m_cl: np.ndarray
    emf: np.ndarray
    residual_sd: float | None
    budget: Any
    labels: dict
    notes: tuple

    def __repr__(self) -> str:
        return (
            f"HarnedResult(pH={self.pH:.4f}, u={self.standard_uncertainty:.4f}, "
            f"U={self.expanded_uncertainty:.4f}, T={self.T:.2f} K, points={self.m_cl.size})"
        )

    def budget_rows(self) -> list[dict]:
        """Budget rows with readable input labels."""
        rows = self.budget.budget_table()
        for r in rows:
            r["label"] = self.labels.get(r["name"], r["name"])
        return rows


def _intercept(m: np.ndarray, y: np.ndarray) -> tuple[Any, Any]:
    """OLS line y = b0 + b1 m along the last axis; returns (b0, b1)."""
    mb = m.mean()
    dm = m - mb
    b1 = np.sum(dm * (y - y.mean(axis=-1, keepdims=True)), axis=-1) / np.sum(dm * dm)
    b0 = y.mean(axis=-1) - b1 * mb
    return b0, b1


def harned_ph(
    m_cl: ArrayLike,
    emf: ArrayLike,
    T: float,
    *,
    buffer: str | None = None,
    ionic_strength: float | None = None,
    E0: float | None = None,
    u_E0: float | None = None,
    pressure: float = P_ATM,
    u_emf: float = 2e-5,
    u_T: float = 0.01,
    u_pressure: float = 20.0,
    u_m_cl_relative: float = 1e-3,
    u_convention: float = 0.0,
    method: str = "gum",
    seed: int | None = None,
    trials: int | None = None,
) -> HarnedResult:
    """pH(PS) of a buffer from Harned-cell EMFs at several added chloride molalities.

    Parameters
    ----------
    m_cl : array_like
        Molalities of added KCl (chloride), mol/kg; at least two distinct values
        (three or more to see the scatter about the extrapolation line).
    emf : array_like
        Cell EMFs, V, one per molality.
    T : float
        Temperature, K.
    buffer, ionic_strength :
        The buffer's ionic strength without added chloride, mol/kg, given directly or
        taken from a standard buffer's table entry.
    E0, u_E0 : float, optional
        E°(AgCl/Ag) of the electrodes used and its standard uncertainty, V (from an HCl cell;
        default: the Bates & Bower table).
    pressure, u_pressure : float
        Barometric pressure at the cell and its standard uncertainty, Pa.
    u_emf : float, default 2e-5
        Standard uncertainty of each EMF, V (0.02 mV: our default, the repeatability of a
        Harned cell in common practice).
    u_T : float, default 0.01
        Standard uncertainty of T, K (a thermostat bath; common practice).
    u_m_cl_relative : float, default 1e-3
        Relative standard uncertainty of the chloride molalities (one stock: fully correlated).
    u_convention : float, default 0
        Standard uncertainty assigned to the Bates–Guggenheim convention, pH. pH(PS) is
        defined by the convention, so 0 by default; give e.g. 0.01 to compare with a
        thermodynamic pH.
    method : {'gum', 'monte-carlo'}

    Returns
    -------
    HarnedResult

    Examples
    --------
    >>> m = [0.005, 0.010, 0.015]
    >>> E = harned_emf(4.005, m, 298.15, ionic_strength=0.053, E0=0.22234)
    >>> res = harned_ph(m, E, 298.15, buffer="phthalate-0.05")
    >>> round(res.pH, 4), round(res.expanded_uncertainty, 4)
    (4.005, 0.0014)
    """
    from activity.uncertainty import Normal, propagate

    m = np.asarray(m_cl, dtype=float).ravel()
    E = np.asarray(emf, dtype=float).ravel()
    if m.size != E.size:
        raise InputError(f"{m.size} molalities but {E.size} EMFs", field="emf", value=E.size)
    if m.size < 2 or np.unique(m).size < 2:
        raise InputError(
            "the extrapolation to zero chloride needs at least two distinct chloride molalities",
            field="m_cl",
            value=m.tolist(),
        )
    if np.any(~np.isfinite(m)) or np.any(m <= 0):
        raise InputError("chloride molalities must be positive", field="m_cl", value=m.tolist())
    if np.any(~np.isfinite(E)) or np.any(np.abs(E) > 2.0):
        raise InputError(
            "EMFs are in volts (|E| < 2 V); were millivolts given?",
            field="emf",
            value=float(np.max(np.abs(E))),
        )
    T = float(T)
    if not (ZERO_CELSIUS <= T <= ZERO_CELSIUS + 95):
        raise InputError("temperature in kelvin, 273.15–368.15 K", field="T", value=T)
    notes: list[str] = []
    if ionic_strength is None:
        if buffer is None:
            raise InputError(
                "give the buffer's ionic strength or a standard buffer name",
                field="ionic_strength",
                value=None,
            )
        b = get_buffer(buffer)
        if b.ionic_strength is None:
            raise InputError("this buffer has no ionic strength; give ionic_strength=", field="buffer", value=buffer)
        ionic_strength = b.ionic_strength
        notes.append(f"ionic strength {ionic_strength:g} mol/kg from the table entry of {b.key}")
    I = float(ionic_strength)
    lg_gamma = bates_guggenheim_log10_gamma_cl(I, T)
    if E0 is None:
        e0v = silver_chloride_e0(T)
        E0 = e0v.value
        u_E0 = e0v.standard_uncertainty if u_E0 is None else u_E0
        notes.extend(e0v.notes)
    elif u_E0 is None:
        raise InputError("give the standard uncertainty of E° (u_E0) with E0", field="u_E0", value=None)
    pressure = float(pressure)
    p_w = water_vapour_pressure(T)
    if pressure - p_w <= 0.5 * P_ATM:
        raise InputError(
            "barometric pressure in Pa (hydrogen partial pressure would be below 0.5 atm)",
            field="pressure",
            value=pressure,
        )
    n = m.size
    dm = m - m.mean()
    sxx = float(np.sum(dm * dm))

    def acidity(E0_, Es, T_, p_, scale_):
        k = _k(T_)[..., None]
        ph2 = (p_ - water_vapour_pressure(T_))[..., None]
        return (Es - E0_[..., None]) / k + np.log10(m * scale_[..., None]) - 0.5 * np.log10(ph2 / P_ATM)

    pA = acidity(np.asarray(E0), E, np.asarray(T), np.asarray(pressure), np.asarray(1.0))
    b0, b1 = _intercept(m, pA)
    resid_sd = None
    u_extrap = 0.0
    if n > 2:
        res = pA - (b0 + b1 * m)
        resid_sd = float(np.sqrt(np.sum(res * res) / (n - 2)))
        u_extrap = resid_sd * math.sqrt(1.0 / n + m.mean() ** 2 / sxx)
    else:
        notes.append("two chloride molalities: the scatter about the extrapolation line is not estimated")
    if u_convention == 0.0:
        notes.append("the Bates–Guggenheim convention defines pH(PS) and carries no uncertainty here")

    names = [f"E_{i + 1}" for i in range(n)]

    def f(E0, T, p, m_scale, convention, extrapolation, **emfs):
        Es = np.stack([np.broadcast_to(emfs[nm], np.shape(E0)) for nm in names], axis=-1)
        y = acidity(np.asarray(E0), Es, np.asarray(T), np.asarray(p), np.asarray(m_scale))
        a0, _ = _intercept(m, y)
        # The water layer starts at 273.15 K: at 0 °C the GUM's step below it takes A(273.15 K)
        # (A changes by 0.002 % per 0.01 K there, far below any other term).
        T_A = np.maximum(np.asarray(T, float), ZERO_CELSIUS)
        return a0 + bates_guggenheim_log10_gamma_cl(I, T_A) + convention + extrapolation

    inputs = {
        "E0": Normal(E0, u_E0),
        "T": Normal(T, u_T),
        "p": Normal(pressure, u_pressure),
        "m_scale": Normal(1.0, u_m_cl_relative),
        "convention": Normal(0.0, u_convention),
        "extrapolation": Normal(0.0, u_extrap),
    }
    inputs.update({nm: Normal(float(e), u_emf) for nm, e in zip(names, E)})
    labels = {
        "E0": "E°(AgCl/Ag)",
        "T": "temperature",
        "p": "barometric pressure (p(H2) = p − p_w)",
        "m_scale": "chloride molalities (relative)",
        "convention": "Bates–Guggenheim convention",
        "extrapolation": "extrapolation to m(Cl-) = 0 (scatter)",
    }
    labels.update({nm: f"EMF at m(Cl-) = {mi:g} mol/kg" for nm, mi in zip(names, m)})
    kw = {"seed": seed, "trials": trials} if method == "monte-carlo" else {}
    budget = propagate(f, inputs, method, **kw)
    pH = float(b0 + lg_gamma)
    return HarnedResult(
        pH=pH,
        standard_uncertainty=float(budget.standard_uncertainty),
        expanded_uncertainty=float(budget.expanded_uncertainty()),
        acidity_function=pA,
        acidity_function_zero=float(b0),
        slope_in_chloride=float(b1),
        log10_gamma_cl=float(lg_gamma),
        ionic_strength=I,
        T=T,
        E0=float(E0),
        p_h2=pressure - p_w,
        m_cl=m,
        emf=E,
        residual_sd=resid_sd,
        budget=budget,
        labels=labels,
        notes=tuple(notes),
    )
