"""Pieces of the Pitzer kernel as they were before the speed work, kept verbatim as references.

Shared by tests/scale/test_pitzer_kernel.py (the whole kernel) and
tests/coefficients/pitzer/test_kernel_pieces.py (piece by piece).
"""

import numpy as np

from activity.coefficients.pitzer._unsym import _spline


def old_g_funcs(x):
    small = x < 0.02
    xs = np.where(small, 1.0, x)
    e = np.exp(-xs)
    x2 = xs * xs
    g = 2.0 * (1.0 - (1.0 + xs) * e) / x2
    gp = -2.0 * (1.0 - (1.0 + xs + 0.5 * x2) * e) / x2
    gs = 1.0 - x * (2.0 / 3.0 - x * (0.25 - x * (1.0 / 15.0 - x / 72.0)))
    gps = -x * (1.0 / 3.0 - x * (0.25 - x * (0.1 - x / 36.0)))
    return np.where(small, gs, g), np.where(small, gps, gp)


def old_j_exact(x):
    _X_MIN, _X_MAX = 1e-5, 1e4
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
