"""Properties of liquid water and the Debye–Hückel parameters derived from them.

* Density: Kell (1975), J. Chem. Eng. Data 20, 97, eq. for 0–150 °C at 1 atm
  (IPTS-68 temperatures; the difference to ITS-90 is below 0.01 K here and is ignored).
  Above 100 °C it stands for the liquid along saturation: within 0.02 % of IAPWS-95 there
  (checked in the tests).
* Static relative permittivity: Bradley & Pitzer (1979), J. Phys. Chem. 83, 1599,
  eq. for 0–350 °C and pressures to 5 kbar (coefficients from memory; the tests check
  the result against the IAPWS R8-97 formulation as implemented by the ``iapws`` package).
* Debye–Hückel parameters from the usual expressions with CODATA constants:
  ``A = 3·Aφ/ln 10`` (decadic, molal), ``B = sqrt(2 N_A ρ e² / (ε0 εr k T))`` per Å and
  ``Aφ = (1/3) sqrt(2π N_A ρ) (e² / (4π ε0 εr k T))^{3/2}``.

Every function broadcasts over ``T`` (kelvin) and ``P`` (pascal): a scalar gives a
float, an array gives an array. The density ignores pressure (1 atm); the permittivity
uses it.
"""

from __future__ import annotations

import functools
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from . import _checks
from .constants import E_CHARGE, EPSILON_0, K_B, LN10, N_A, P_ATM, ZERO_CELSIUS

__all__ = [
    "density",
    "permittivity",
    "debye_huckel_A",
    "debye_huckel_B",
    "debye_huckel_Aphi",
    "T_MIN",
    "T_MAX",
]

T_MIN, T_MAX = _checks.T_MIN, _checks.T_MAX

# Kell (1975), density of air-free water at 1 atm, kg/m^3, t in °C.
_KELL_NUM = (999.83952, 16.945176, -7.9870401e-3, -46.170461e-6, 105.56302e-9, -280.54253e-12)
_KELL_DEN = 16.879850e-3

# Bradley & Pitzer (1979), Table I (from memory), T in K, P in bar.
_BP_U = (3.4279e2, -5.0866e-3, 9.4690e-7, -2.0525, 3.1159e3, -1.8289e2, -8.0325e3, 4.2142e6, 2.1417)


def _kell(t: np.ndarray) -> np.ndarray:
    num = _KELL_NUM[5]
    for c in _KELL_NUM[4::-1]:
        num = num * t + c
    return num / (1.0 + _KELL_DEN * t)


def _bradley_pitzer(T: np.ndarray, p_bar: np.ndarray) -> np.ndarray:
    u1, u2, u3, u4, u5, u6, u7, u8, u9 = _BP_U
    eps1000 = u1 * np.exp(u2 * T + u3 * T * T)
    c = u4 + u5 / (u6 + T)
    b = u7 + u8 / T + u9 * T
    return eps1000 + c * np.log((b + p_bar) / (b + 1000.0))


def _pressure(P: ArrayLike) -> np.ndarray:
    if P is None:
        return np.asarray(P_ATM)
    return _checks.finite_array(P, "P", positive=True)


def density(T: ArrayLike, P: ArrayLike = None) -> Any:
    """Density of liquid water in kg/m³ (Kell 1975; 1 atm).

    Parameters
    ----------
    T : array_like
        Temperature in kelvin, 273.15–423.15 K.
    P : array_like, optional
        Pressure in Pa. Accepted for a uniform signature; the correlation is for 1 atm.

    Examples
    --------
    >>> round(density(298.15), 3)
    997.045
    """
    T = _checks.temperature(T)
    if P is not None:
        _pressure(P)
    return _checks.scalar_or_array(_kell(T - ZERO_CELSIUS))


def permittivity(T: ArrayLike, P: ArrayLike = None) -> Any:
    """Static relative permittivity of water (Bradley & Pitzer 1979).

    Examples
    --------
    >>> round(permittivity(298.15), 2)
    78.38
    """
    T = _checks.temperature(T)
    return _checks.scalar_or_array(_bradley_pitzer(T, _pressure(P) / 1e5))


def _kappa_terms(T: ArrayLike, P: ArrayLike) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    T = _checks.temperature(T)
    rho = _kell(T - ZERO_CELSIUS)
    eps = _bradley_pitzer(T, _pressure(P) / 1e5)
    return T, rho, eps


def debye_huckel_Aphi(T: ArrayLike, P: ArrayLike = None) -> Any:
    """Debye–Hückel osmotic-coefficient parameter Aφ in (kg/mol)^½ (natural log basis).

    Examples
    --------
    >>> round(debye_huckel_Aphi(298.15), 4)
    0.3914
    """
    key = _scalar_key(T, P)
    return _aphi_scalar(*key) if key is not None else _aphi(T, P)


def _aphi(T: ArrayLike, P: ArrayLike) -> Any:
    T, rho, eps = _kappa_terms(T, P)
    lb = E_CHARGE**2 / (4.0 * np.pi * EPSILON_0 * eps * K_B * T)  # Bjerrum length, m
    return _checks.scalar_or_array(np.sqrt(2.0 * np.pi * N_A * rho) * lb**1.5 / 3.0)


def debye_huckel_A(T: ArrayLike, P: ArrayLike = None) -> Any:
    """Debye–Hückel A for log10 γ on the molal scale, in (kg/mol)^½.

    ``log10 γ_i = −A z_i² √I`` in the limit of low ionic strength.

    Examples
    --------
    >>> round(debye_huckel_A(298.15), 4)
    0.51
    """
    aphi = debye_huckel_Aphi(T, P)
    return 3.0 * aphi / LN10


def debye_huckel_B(T: ArrayLike, P: ArrayLike = None) -> Any:
    """Debye–Hückel B in (kg/mol)^½ per Å (so that ``B·å`` is dimensionless for å in Å).

    Examples
    --------
    >>> round(debye_huckel_B(298.15), 4)
    0.3285
    """
    key = _scalar_key(T, P)
    return _b_scalar(*key) if key is not None else _b(T, P)


def _b(T: ArrayLike, P: ArrayLike) -> Any:
    T, rho, eps = _kappa_terms(T, P)
    b = np.sqrt(2.0 * N_A * rho * E_CHARGE**2 / (EPSILON_0 * eps * K_B * T)) * 1e-10
    return _checks.scalar_or_array(b)


# One composition at one temperature (a GUM evaluation, the model spread, a CLI call) asks
# for Aφ and B at the same scalar T and P once per model: scalar answers are kept (floats,
# immutable). The cached function is the array one, called with the same numbers, so the
# values are the same bits; a bad T or P raises on every call (exceptions are not cached).
_aphi_scalar = functools.lru_cache(maxsize=256)(_aphi)
_b_scalar = functools.lru_cache(maxsize=256)(_b)
_FLOATS = (float, int, np.floating, np.integer)


def _scalar_key(T: Any, P: Any) -> tuple[float, float | None] | None:
    """(T, P) as Python floats when both are plain real scalars (or 0-d real arrays), else None."""
    if isinstance(T, np.ndarray) and T.ndim == 0 and T.dtype.kind in "fiu":
        T = T.item()
    if isinstance(P, np.ndarray) and P.ndim == 0 and P.dtype.kind in "fiu":
        P = P.item()
    if isinstance(T, bool) or isinstance(P, bool) or not isinstance(T, _FLOATS):
        return None
    if P is not None and not isinstance(P, _FLOATS):
        return None
    return float(T), (None if P is None else float(P))
