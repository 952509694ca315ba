"""Correlation between named input quantities.

A correlation is given as a mapping over pairs of input names,
``{("a", "b"): 0.5}``. It is turned into a full correlation matrix, checked to
be a valid correlation matrix (|r| <= 1, symmetric, positive semi-definite),
and factorised for correlated Monte Carlo draws (Gaussian copula).
"""

from __future__ import annotations

import math

import numpy as np

from activity.errors import InputError

__all__ = ["correlation_matrix", "correlation_factor"]

#: Eigenvalues above ``-_PSD_TOLERANCE`` count as non-negative. Our choice: far above
#: the rounding of ``eigh`` on a matrix with entries <= 1 (about k·ε ≈ 1e-15 for a few
#: inputs), far below the eigenvalue of any real inconsistency (-0.8 for r = 0.9, 0.9, -0.9).
_PSD_TOLERANCE = 1e-10


def _pair(key, names, constants):
    """Validate one key of the correlation mapping; return its two indices."""
    if not (isinstance(key, tuple) and len(key) == 2 and all(isinstance(name, str) for name in key)):
        raise InputError(f"correlation keys must be pairs of input names, got {key!r}", field="correlation", value=key)
    for name in key:
        if name in constants:
            raise InputError(
                f"correlation {key!r}: input {name!r} is a constant, only uncertain inputs can be correlated",
                field="correlation",
                value=key,
            )
        if name not in names:
            known = ", ".join(repr(n) for n in names) or "none"
            raise InputError(
                f"correlation {key!r} names unknown input {name!r} (uncertain inputs: {known})",
                field="correlation",
                value=key,
            )
    return names.index(key[0]), names.index(key[1])


def correlation_matrix(names, correlation, constants=()):
    """Build and validate the correlation matrix over ``names``.

    Parameters
    ----------
    names : sequence of str
        Names of the uncertain inputs, in order.
    correlation : mapping of (str, str) to float, or None
        Correlation coefficients of pairs of inputs. A pair may be given in
        either order; giving it both ways with different values is an error.
        Pairs not given are uncorrelated.
    constants : collection of str, optional
        Names of inputs that are constants (named only for a clearer error).

    Returns
    -------
    ndarray of shape (k, k) or None
        ``None`` when there is no non-zero correlation.

    Raises
    ------
    InputError
        For an unknown or constant input, |r| > 1, a conflicting pair, a
        diagonal entry other than 1, or a matrix that is not positive
        semi-definite. ``field`` is ``"correlation"`` and ``value`` the pair.

    Examples
    --------
    >>> correlation_matrix(["a", "b"], {("a", "b"): 0.5})
    array([[1. , 0.5],
           [0.5, 1. ]])
    """
    if not correlation:
        return None
    if not hasattr(correlation, "items"):
        raise InputError(
            f"correlation must be a mapping {{(name, name): r}}, got {type(correlation).__name__}",
            field="correlation",
            value=correlation,
        )
    names = list(names)
    matrix = np.eye(len(names))
    given = {}
    for key, r in correlation.items():
        i, j = _pair(key, names, set(constants))
        try:
            r = float(r)
        except (TypeError, ValueError):
            raise InputError(
                f"correlation {key!r} must be a number, got {r!r}", field="correlation", value=key
            ) from None
        if not (math.isfinite(r) and -1.0 <= r <= 1.0):
            raise InputError(f"correlation {key!r} = {r!r} is outside [-1, 1]", field="correlation", value=key)
        if i == j:
            if r != 1.0:
                raise InputError(
                    f"correlation {key!r} of an input with itself must be 1, got {r!r}", field="correlation", value=key
                )
            continue
        pair = (min(i, j), max(i, j))
        if pair in given and given[pair] != r:
            raise InputError(
                f"correlation {key!r} is given twice with different values "
                f"({given[pair]!r} and {r!r}); the matrix must be symmetric",
                field="correlation",
                value=key,
            )
        given[pair] = r
        matrix[i, j] = matrix[j, i] = r
    if not np.any(matrix != np.eye(len(names))):
        return None
    _check_psd(matrix, names)
    return matrix


def _check_psd(matrix, names):
    """Raise InputError if ``matrix`` is not positive semi-definite."""
    eigenvalues, eigenvectors = np.linalg.eigh(matrix)
    if eigenvalues[0] >= -_PSD_TOLERANCE:
        return
    # The eigenvector of the most negative eigenvalue shows which inputs take
    # part in the inconsistency; name the two that weigh most.
    weights = np.abs(eigenvectors[:, 0])
    first, second = np.argsort(weights)[::-1][:2]
    # Components below 1e-8 (our choice, far above eigh's rounding) count as zero.
    involved = [names[i] for i in np.flatnonzero(weights > 1e-8)]
    pair = (names[min(first, second)], names[max(first, second)])
    raise InputError(
        "correlation matrix is not positive semi-definite (smallest eigenvalue "
        f"{eigenvalues[0]:.3g}); the coefficients among {involved} are mutually "
        f"inconsistent, check the pair {pair!r} first",
        field="correlation",
        value=pair,
    )


def correlation_factor(matrix):
    """Return ``L`` with ``L @ L.T == matrix`` for a valid correlation matrix.

    Uses the Cholesky factor when the matrix is positive definite and an
    eigen-decomposition when it is only semi-definite (e.g. r = ±1).

    Parameters
    ----------
    matrix : ndarray, shape (k, k)
        A validated correlation matrix.

    Returns
    -------
    ndarray, shape (k, k)

    Examples
    --------
    >>> factor = correlation_factor(np.array([[1.0, 1.0], [1.0, 1.0]]))
    >>> np.allclose(factor @ factor.T, [[1, 1], [1, 1]])
    True
    """
    try:
        return np.linalg.cholesky(matrix)
    except np.linalg.LinAlgError:
        eigenvalues, eigenvectors = np.linalg.eigh(matrix)
        return eigenvectors * np.sqrt(np.clip(eigenvalues, 0.0, None))
