"""Small sparse symmetric positive definite systems for a batch stored rows last.

numpy's ``linalg.solve`` handles a stack of small matrices one LAPACK call at a time (about
2 µs for a 10 × 10 system). The speciation Newton matrix, after a change of rows, is
symmetric positive definite with a sparsity pattern fixed by the reaction network (sodium
and fluoride share no species, chloride often none at all). :class:`SparseCholesky` orders
the unknowns once (minimum degree), works out the fill, and lists the few scalar
operations of the factorisation; each operation is then one pass over all rows.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

__all__ = ["SparseCholesky"]


class SparseCholesky:
    """Cholesky factorisation and solve for a fixed sparsity pattern, rows last.

    Parameters
    ----------
    pattern : array_like of bool (k, k)
        Symmetric; True where the matrices may be non-zero (the diagonal always is).

    Attributes
    ----------
    order : ndarray (k,)
        Elimination order (minimum degree; original indices).
    pairs : list of (int, int)
        The (row, column) in *original* indices of each stored entry (row ≥ column in the
        elimination order), the layout :meth:`solve` expects: entry ``p`` of the packed
        matrix is the matrix element ``pairs[p]``; fill entries start at 0.
    n_fill : int
        Entries added by the elimination beyond the pattern.

    Examples
    --------
    >>> chol = SparseCholesky([[True, True], [True, True]])
    >>> S = {(0, 0): 4.0, (1, 1): 3.0, (0, 1): 2.0, (1, 0): 2.0}
    >>> packed = np.array([[S[p]] for p in chol.pairs])
    >>> X, ok = chol.solve(packed, np.array([[[2.0], [1.0]]]))
    >>> np.round(X[0, :, 0], 12).tolist(), bool(ok[0])
    ([0.5, 0.0], True)
    """

    def __init__(self, pattern: NDArray[np.bool_] | list) -> None:
        P = np.array(pattern, dtype=bool)
        k = P.shape[0]
        P = P | P.T | np.eye(k, dtype=bool)
        adj = [set(np.flatnonzero(P[i])) - {i} for i in range(k)]
        order: list[int] = []
        left = set(range(k))
        fill = 0
        while left:
            v = min(left, key=lambda i: (len(adj[i] & left), i))
            nb = sorted(adj[v] & left)
            for a in nb:
                for b in nb:
                    if a != b and b not in adj[a]:
                        adj[a].add(b)
                        fill += 1
            order.append(v)
            left.remove(v)
        self.order = np.array(order, dtype=int)
        self.k = k
        pos = {v: i for i, v in enumerate(order)}  # original → elimination position
        slot: dict[tuple[int, int], int] = {}
        pairs: list[tuple[int, int]] = []
        for j in range(k):  # column j (elimination position), then its rows below
            vj = order[j]
            for i in [j] + sorted(pos[a] for a in adj[vj] if pos[a] > j):
                slot[(i, j)] = len(pairs)
                pairs.append((order[i], vj))
        self.pairs = pairs
        self.n_fill = fill // 2
        self._diag = [slot[(j, j)] for j in range(k)]
        self._cols = []  # per column j: [(i, slot_ij)] for i > j
        self._updates = []  # per column j: [(slot_il, slot_ij, slot_lj)] for i ≥ l > j
        for j in range(k):
            below = sorted(i for (i, jj) in slot if jj == j and i > j)
            self._cols.append([(i, slot[(i, j)]) for i in below])
            self._updates.append(
                [(slot[(i, l)], slot[(i, j)], slot[(l, j)]) for a, l in enumerate(below) for i in below[a:]]
            )
        self._pos = np.array([pos[v] for v in range(k)], dtype=int)
        self._scale_a = np.array([pos[a] for a, _ in pairs], dtype=int)
        self._scale_b = np.array([pos[b] for _, b in pairs], dtype=int)

    def solve(self, A: NDArray[np.float64], Y: NDArray[np.float64]) -> tuple[NDArray[np.float64], NDArray[np.bool_]]:
        """Solve S X = Y for every row; ``A`` (n_entries, N) packed as :attr:`pairs`, overwritten.

        ``Y`` is (r, k, N) in original order (not changed); returns X (r, k, N) and a flag
        per row, False where the factorisation broke down (a pivot not clearly positive
        after scaling to unit diagonal). The matrices are first scaled to unit diagonal
        (D S D, D = diag(S)^-½), which keeps molalities hundreds of decades apart in range.
        """
        k = self.k
        diag = A[self._diag]  # (k, N) in elimination order
        ok = np.all(diag > 0, axis=0) & np.all(np.isfinite(diag), axis=0)
        d = 1.0 / np.sqrt(np.where(diag > 0, diag, 1.0))
        A *= d[self._scale_a] * d[self._scale_b]  # entry (a, b) times d_a d_b, all at once
        tmp = np.empty(A.shape[1])
        for j in range(k):
            piv = A[self._diag[j]]
            bad = ~(piv > 1e-14)
            if np.any(bad):
                ok &= ~bad
                piv[bad] = 1.0
            np.sqrt(piv, out=piv)
            for _, s_ij in self._cols[j]:
                A[s_ij] /= piv
            for s_il, s_ij, s_lj in self._updates[j]:
                np.multiply(A[s_ij], A[s_lj], out=tmp)
                A[s_il] -= tmp
        X = Y[:, self.order] * d  # (r, k, N), elimination order
        for j in range(k):  # forward: L z = y
            X[:, j] /= A[self._diag[j]]
            for i, s_ij in self._cols[j]:
                X[:, i] -= A[s_ij] * X[:, j]
        for j in range(k - 1, -1, -1):  # back: Lᵀ x = z
            for i, s_ij in self._cols[j]:
                X[:, j] -= A[s_ij] * X[:, i]
            X[:, j] /= A[self._diag[j]]
        X *= d
        return X[:, self._pos], ok
