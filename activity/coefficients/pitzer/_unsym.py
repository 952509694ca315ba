"""Unsymmetrical mixing: the functions J(x), J′(x) and the terms Eθ, Eθ′.

For two ions i, j of the same sign and different charge (Pitzer 1975, J. Solution Chem.
4, 249; Pitzer 1991, ch. 3):

    Eθ_ij  = z_i z_j / (4 I) · [J(x_ij) − ½ J(x_ii) − ½ J(x_jj)],   x_ij = 6 z_i z_j Aφ √I
    Eθ′_ij = −Eθ_ij / I + z_i z_j / (8 I²) · [x_ij J′(x_ij) − ½ x_ii J′(x_ii) − ½ x_jj J′(x_jj)]

with J(x) = (1/x) ∫₀^∞ [1 + q + q²/2 − e^q] y² dy, q = −(x/y) e^(−y).

J is evaluated from its defining integral: on first use the integral is computed by
composite Gauss–Legendre quadrature (graded panels near y = 0, the bracket summed as a
series where |q| < 0.1) at 241 points x = 10⁻⁵ … 10⁴, and ln J is interpolated by a
cubic spline in ln x (:func:`j_exact`; agreement with adaptive quadrature to about 1e-8,
checked in the tests). The closed approximation of Pitzer (1975), eq. 47, with a
relative error of about 1 %, is kept as :func:`j_pitzer1975` for comparison.
"""

from __future__ import annotations

import functools

import numpy as np

__all__ = ["j_exact", "j_integral", "j_pitzer1975", "e_theta"]

_X_MIN, _X_MAX, _N_TABLE = 1e-5, 1e4, 241


def _bracket(q: np.ndarray) -> np.ndarray:
    """1 + q + q²/2 − e^q, summed as −Σ_{k≥3} q^k/k! where |q| < 0.1 (no cancellation)."""
    small = np.abs(q) < 0.1
    qs = np.where(small, q, 0.0)
    series = np.zeros_like(q)
    term = qs**3 / 6.0
    for k in range(4, 18):
        series += term
        term = term * qs / k
    direct = 1.0 + q + 0.5 * q * q - np.exp(np.where(small, 0.0, q))
    return np.where(small, -series, direct)


def j_integral(x: np.ndarray, order: int = 24) -> np.ndarray:
    """J(x) from its defining integral by composite Gauss–Legendre quadrature (x > 0).

    Examples
    --------
    >>> round(float(j_integral(np.array([1.0]))[0]), 10)
    0.1164372171
    """
    nodes, weights = np.polynomial.legendre.leggauss(order)
    x = np.atleast_1d(np.asarray(x, dtype=float))
    out = np.empty(x.shape)
    for n, xv in enumerate(x.ravel()):  # a table-building loop over grid points, not rows
        lo = min(xv, 1.0) * 1e-4
        top = max(np.log(max(xv, 1.0)), 1.0) + 45.0  # integrand ~ e^(−3y) beyond ln x
        edges = np.concatenate([[0.0], np.geomspace(lo, 2.0, 40), np.arange(2.5, top, 0.5)])
        a, b = edges[:-1, None], edges[1:, None]
        y = 0.5 * (b - a) * nodes + 0.5 * (a + b)
        q = -(xv / y) * np.exp(-y)
        out.flat[n] = np.sum(0.5 * (b - a) * weights * _bracket(q) * y * y) / xv
    return out


@functools.lru_cache(maxsize=1)
def _spline():
    from scipy.interpolate import CubicSpline

    u = np.linspace(np.log(_X_MIN), np.log(_X_MAX), _N_TABLE)
    return CubicSpline(u, np.log(j_integral(np.exp(u))))


@functools.lru_cache(maxsize=1)
def _table() -> tuple[float, float, np.ndarray, np.ndarray]:
    """The spline's knots (uniform in ln x: first knot, spacing) and its cubic pieces,
    coefficients (n − 1, 4) highest power first, for evaluation without scipy's per-call
    overhead (the pieces are those of :func:`_spline`, so the values are the same)."""
    sp = _spline()
    u0, h = float(sp.x[0]), float(sp.x[1] - sp.x[0])
    return u0, h, np.ascontiguousarray(sp.x[:-1]), np.ascontiguousarray(sp.c.T)


@functools.lru_cache(maxsize=1)
def _pieces() -> tuple:
    """:func:`_table` laid out for gathers: first knot, 1/spacing, knots, and the cubic's
    four coefficients as separate contiguous vectors."""
    u0, h, knots, c = _table()
    c0, c1, c2, c3 = (np.ascontiguousarray(c[:, k]) for k in range(4))
    return u0, 1.0 / h, knots, c0, c1, c2, c3, len(c) - 1


def _ln_j(u: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """S(u) = ln J(e^u) and dS/du from the cubic pieces (u inside the table).

    S = ((a t + b) t + c) t + d and dS/du = (3 a t + 2 b) t + c with t = u − knot, from
    one gather of each coefficient.
    """
    u0, inv_h, knots, c0, c1, c2, c3, last = _pieces()
    # u ≥ u0, so truncation is the floor; take(mode="clip") puts u = u_max in the last piece
    i = ((u - u0) * inv_h).astype(np.intp)
    t = u - knots.take(i, mode="clip")
    at = c0.take(i, mode="clip")
    at *= t
    b = c1.take(i, mode="clip")
    c = c2.take(i, mode="clip")
    S = at + b
    S *= t
    S += c
    S *= t
    S += c3.take(i, mode="clip")
    at *= 3.0
    b *= 2.0
    dS = at
    dS += b
    dS *= t
    dS += c
    return S, dS


def _j_xdj(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """J(x) and x J′(x) (what Eθ′ needs), x ≥ 0, continued outside the table as j_exact."""
    x = np.asarray(x, dtype=float)
    with np.errstate(divide="ignore"):
        return _j_xdj_log(np.log(x.reshape(-1)), x.reshape(-1), shape=x.shape)


_U_MIN, _U_MAX = float(np.log(_X_MIN)), float(np.log(_X_MAX))


def _j_xdj_log(lnx: np.ndarray, x: np.ndarray | None = None, shape: tuple | None = None):
    """J and x J′ from ln x (1-d; −inf for x = 0): the kernel passes ln x = ln p + ln(6Aφ√I)
    for the three charge products p of a pair, so one logarithm serves all three. ``x``
    (if known) is used only outside the table."""
    u = np.clip(lnx, _U_MIN, _U_MAX)
    S, dS = _ln_j(u)
    J = np.exp(S)
    xdJ = J * dS
    if lnx.size and (lnx.min() < _U_MIN or lnx.max() > _U_MAX):
        low, high = lnx < _U_MIN, lnx > _U_MAX
        if x is None:
            x = np.exp(lnx)
        xs = np.clip(x, _X_MIN, _X_MAX)
        xdJ *= x / xs  # x J′ = J dS/du · x/xs (x/xs = 1 inside the table)
        J0 = J
        J = np.where(low, J0 * (x / _X_MIN) ** 2, J)
        xdJ = np.where(low, 2.0 * J0 * (x / _X_MIN) ** 2, xdJ)
        J = np.where(high, J + (x - _X_MAX) / 4.0, J)
        xdJ = np.where(high, 0.25 * x, xdJ)
    if shape is not None:
        return J.reshape(shape), xdJ.reshape(shape)
    return J, xdJ


def j_exact(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """J(x) and J′(x) from the tabulated defining integral; x ≥ 0, J(0) = 0.

    Below x = 1e-5 (I below about 1e-12 mol/kg) J is continued as J(x_min)(x/x_min)²;
    above 1e4 as J(x_max) + (x − x_max)/4 (the asymptotic slope).

    Examples
    --------
    >>> J, dJ = j_exact(np.array([1.0]))
    >>> round(float(J[0]), 6), round(float(dJ[0]), 5)
    (0.116437, 0.16053)
    """
    x = np.asarray(x, dtype=float)
    spline = _spline()
    xs = np.clip(x, _X_MIN, _X_MAX)
    u = np.log(xs)
    J = np.exp(spline(u))
    dJ = J * spline(u, 1) / xs
    low, high = x < _X_MIN, x > _X_MAX
    if np.any(low):
        J0 = J
        J = np.where(low, J0 * (x / _X_MIN) ** 2, J)
        dJ = np.where(low, 2.0 * J0 * x / _X_MIN**2, dJ)
    if np.any(high):
        J = np.where(high, J + (x - _X_MAX) / 4.0, J)
        dJ = np.where(high, 0.25, dJ)
    return J, dJ


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
    all_pos = bool(I.size) and float(np.min(I)) > 1e-20
    pos = True if all_pos else I > 1e-20
    Is = I if all_pos else np.where(pos, I, 1.0)
    base = 6.0 * Aphi * np.sqrt(Is)
    cache = {} if cache is None else cache
    if "ln_base" not in cache:
        cache["ln_base"] = np.log(base).reshape(-1)  # one logarithm for every charge product

    zz = zi * zj
    todo = [p for p in dict.fromkeys((zz, zi * zi, zj * zj)) if p not in cache]
    if todo:  # the missing charge products in one pass over (len(todo), N) values
        lnx = cache["ln_base"][None, :] + np.log(np.asarray(todo, dtype=float))[:, None]
        J, xdJ = _j_xdj_log(lnx.reshape(-1))
        J, xdJ = J.reshape(len(todo), -1), xdJ.reshape(len(todo), -1)
        for r, p in enumerate(todo):
            cache[p] = (J[r].reshape(base.shape), xdJ[r].reshape(base.shape))
    (Jij, xdij), (Jii, xdii), (Jjj, xdjj) = cache[zz], cache[zi * zi], cache[zj * zj]
    et = zz / (4.0 * Is) * (Jij - 0.5 * Jii - 0.5 * Jjj)
    etp = -et / Is + zz / (8.0 * Is * Is) * (xdij - 0.5 * xdii - 0.5 * xdjj)
    if all_pos:
        return et, etp
    return np.where(pos, et, 0.0), np.where(pos, etp, 0.0)
