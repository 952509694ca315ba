"""Unsymmetrical mixing: the functions J(x), J′(x) and the terms Eθ, Eθ′.

For two ions i, j of the same sign and different charge (Pitzer 1975, J. Solution Chem.
4, 249; Pitzer 1991, ch. 3):

    Eθ_ij  = z_i z_j / (4 I) · [J(x_ij) − ½ J(x_ii) − ½ J(x_jj)],   x_ij = 6 z_i z_j Aφ √I
    Eθ′_ij = −Eθ_ij / I + z_i z_j / (8 I²) · [x_ij J′(x_ij) − ½ x_ii J′(x_ii) − ½ x_jj J′(x_jj)]

with J(x) = (1/x) ∫₀^∞ [1 + q + q²/2 − e^q] y² dy, q = −(x/y) e^(−y).
J is evaluated with the closed approximation of Pitzer (1975), eq. 47:
J(x) = x / (4 + C1 x^(−C2) exp(−C3 x^C4)), C1 = 4.581, C2 = 0.7237, C3 = 0.0120,
C4 = 0.528 (from memory), whose relative error against the integral is about 1 % for
x between 0.1 and 100 (checked against quadrature in the tests).
"""
from __future__ import annotations

import numpy as np

__all__ = ["j_pitzer1975", "e_theta"]

_C1, _C2, _C3, _C4 = 4.581, 0.7237, 0.0120, 0.528


def j_pitzer1975(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """J(x) and J′(x) from the approximation of Pitzer (1975); x ≥ 0, J(0) = 0.

    Examples
    --------
    >>> J, dJ = j_pitzer1975(np.array([1.0]))
    >>> round(float(J[0]), 4), round(float(dJ[0]), 4)
    (0.1173, 0.1627)
    """
    x = np.asarray(x, dtype=float)
    pos = x > 0
    xs = np.where(pos, x, 1.0)
    xc4 = xs**_C4
    h = _C1 * xs**-_C2 * np.exp(-_C3 * xc4)
    d = 4.0 + h
    J = np.where(pos, xs / d, 0.0)
    dJ = np.where(pos, (4.0 + h * (1.0 + _C2 + _C3 * _C4 * xc4)) / (d * d), 0.0)
    return J, dJ


def e_theta(zi: float, zj: float, Aphi, I: np.ndarray, cache: dict | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Eθ and Eθ′ (kg/mol and kg²/mol²) for charges ``zi``, ``zj`` of the same sign.

    Broadcasts over ``Aphi`` and ``I``; both are 0 where I ≤ 1e-20 mol/kg or zi = zj. ``cache``
    (a dict, optional) keeps J(x) and x J′(x) per charge product for reuse with the same
    ``Aphi`` and ``I``.

    Examples
    --------
    >>> et, etp = e_theta(1, 2, 0.3915, np.array([0.5]))
    >>> bool(et[0] < 0 and etp[0] > 0)
    True
    """
    I = np.asarray(I, dtype=float)
    if zi == zj:
        z = np.zeros(np.broadcast_shapes(np.shape(Aphi), I.shape))
        return z, z.copy()
    # Below I = 1e-20 mol/kg the terms (multiplied by m_i m_j ≤ 4I²) are negligible, and
    # Eθ′ ~ 1/I² would overflow; they are set to 0 there.
    pos = I > 1e-20
    Is = np.where(pos, I, 1.0)
    base = 6.0 * Aphi * np.sqrt(Is)
    cache = {} if cache is None else cache

    def jx(p):
        if p not in cache:
            J, dJ = j_pitzer1975(p * base)
            cache[p] = (J, p * base * dJ)
        return cache[p]

    zz = zi * zj
    (Jij, xdij), (Jii, xdii), (Jjj, xdjj) = jx(zz), jx(zi * zi), jx(zj * zj)
    et = zz / (4.0 * Is) * (Jij - 0.5 * Jii - 0.5 * Jjj)
    etp = -et / Is + zz / (8.0 * Is * Is) * (xdij - 0.5 * xdii - 0.5 * xdjj)
    return np.where(pos, et, 0.0), np.where(pos, etp, 0.0)
