"""Small dense linear systems for a batch stored rows last (one system per column).

numpy's ``linalg.solve`` handles a stack of small matrices one LAPACK call at a time (about
2 µs for a 10 × 10 system); for the speciation Newton step, whose matrix is symmetric
positive definite after a change of rows, a Cholesky factorisation written over the row
axis (each operation one pass over all rows) costs a fraction of that.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

__all__ = ["spd_solve"]


def spd_solve(S: NDArray[np.float64], Y: NDArray[np.float64]) -> tuple[NDArray[np.float64], NDArray[np.bool_]]:
    """Solve S X = Y for symmetric positive definite S, a batch stored rows last.

    Parameters
    ----------
    S : ndarray (k, k, N)
        The matrices (only the lower triangle is read); overwritten.
    Y : ndarray (r, k, N)
        ``r`` right-hand sides per matrix; not changed.

    Returns
    -------
    X : ndarray (r, k, N)
    ok : ndarray (N,) bool
        False where the factorisation broke down (a pivot not clearly positive after the
        symmetric diagonal scaling); X is not meaningful there.

    Notes
    -----
    The matrices are first scaled to unit diagonal (S' = D S D, D = diag(S)^-½: Cholesky
    needs no pivoting for a positive definite matrix, and the scaling keeps molalities
    that differ by hundreds of decades within the floating-point range). Then the lower
    triangle is factored column by column in place, and the triangular systems are solved
    forward and back.

    Examples
    --------
    >>> S = np.array([[4.0, 2.0], [2.0, 3.0]])[:, :, None]
    >>> X, ok = spd_solve(S.copy(), np.array([[2.0, 1.0]])[:, :, None])
    >>> np.round(X[0, :, 0], 12).tolist(), bool(ok[0])
    ([0.5, 0.0], True)
    """
    k = S.shape[0]
    diag = np.einsum("iin->in", S)
    ok = np.all(diag > 0, axis=0) & np.all(np.isfinite(diag), axis=0)
    d = 1.0 / np.sqrt(np.where(diag > 0, diag, 1.0))
    S *= d[:, None, :]
    S *= d[None, :, :]
    for j in range(k):
        piv = S[j, j]
        bad = ~(piv > 1e-14)
        if np.any(bad):
            ok &= ~bad
            piv[bad] = 1.0
        np.sqrt(piv, out=piv)
        if j + 1 < k:
            col = S[j + 1 :, j]
            col /= piv
            for i in range(j + 1, k):
                S[i, j + 1 : i + 1] -= S[i, j] * col[: i - j]
    X = Y * d  # (r, k, N)
    for j in range(k):  # forward: L z = y
        if j:
            X[:, j] -= np.einsum("jn,rjn->rn", S[j, :j], X[:, :j])
        X[:, j] /= S[j, j]
    for j in range(k - 1, -1, -1):  # back: Lᵀ x = z
        if j + 1 < k:
            X[:, j] -= np.einsum("pn,rpn->rn", S[j + 1 :, j], X[:, j + 1 :])
        X[:, j] /= S[j, j]
    X *= d
    return X, ok
