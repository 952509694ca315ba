"""The measurement model: a vectorised function plus its named inputs.

Shared by the GUM and Monte Carlo engines. It separates uncertain inputs
(distributions) from constants, validates the correlation, draws (possibly
correlated) samples and evaluates the function on a batch of rows.
"""

from __future__ import annotations

import numpy as np

from activity.errors import InputError

from .correlation import correlation_factor, correlation_matrix
from .distributions import Distribution

__all__ = ["Model"]


class Model:
    """A vectorised measurement function with named inputs.

    Parameters
    ----------
    f : callable
        ``f(**inputs)`` taking one keyword per input; uncertain inputs arrive
        as 1-D arrays of equal length N and constants as given. It must
        return N values (or a scalar when it does not depend on the inputs).
    inputs : mapping of str to Distribution or constant
        Distributions are uncertain inputs; anything else is passed unchanged
        as a constant (numbers are converted to float).
    correlation : mapping of (str, str) to float, optional
        Correlation coefficients between uncertain inputs.
    """

    def __init__(self, f, inputs, correlation=None):
        if not callable(f):
            raise InputError(f"f must be callable, got {type(f).__name__}", field="f", value=f)
        if not hasattr(inputs, "items"):
            raise InputError(
                f"inputs must be a mapping of name to distribution or constant, got {type(inputs).__name__}",
                field="inputs",
                value=inputs,
            )
        self.f = f
        self.names = []
        self.distributions = []
        self.constants = {}
        for name, item in inputs.items():
            if not isinstance(name, str) or not name.isidentifier():
                raise InputError(f"input names must be Python identifiers, got {name!r}", field="inputs", value=name)
            if isinstance(item, Distribution):
                self.names.append(name)
                self.distributions.append(item)
            elif isinstance(item, (int, float, np.number)) and not isinstance(item, bool):
                self.constants[name] = float(item)
            else:
                self.constants[name] = item
        self.means = np.array([d.mean for d in self.distributions], dtype=float)
        self.uncertainties = np.array([d.standard_uncertainty for d in self.distributions], dtype=float)
        self.dofs = np.array([d.dof for d in self.distributions], dtype=float)
        self.correlation = correlation_matrix(self.names, correlation, self.constants)
        self._copula = self._copula_plan()

    def _copula_plan(self):
        """Indices of the correlated inputs and the factor of their sub-matrix."""
        if self.correlation is None:
            return None
        off_diagonal = self.correlation - np.eye(len(self.names))
        linked = np.flatnonzero(np.any(off_diagonal != 0.0, axis=1))
        factor = correlation_factor(self.correlation[np.ix_(linked, linked)])
        return linked, factor

    def evaluate(self, columns, n):
        """Evaluate ``f`` on ``n`` rows; ``columns`` maps uncertain names to arrays.

        Returns
        -------
        ndarray, shape (n,)
        """
        kwargs = dict(self.constants)
        kwargs.update(columns)
        y = np.asarray(self.f(**kwargs), dtype=float)
        if y.shape == (n,):
            return y
        if y.ndim == 0:
            return np.full(n, float(y))
        raise InputError(
            f"f must return one value per row: expected shape ({n},), got {y.shape}", field="f", value=y.shape
        )

    def draw(self, rng, n):
        """Draw ``n`` rows of the uncertain inputs.

        Independent inputs use their own sampler; correlated ones are drawn
        through a Gaussian copula: correlated standard normals ``z = L g``
        (``L Lᵀ = R``) mapped through each marginal's inverse CDF.

        Returns
        -------
        dict of str to ndarray of shape (n,)
        """
        linked = () if self._copula is None else self._copula[0]
        columns = {}
        for index, (name, dist) in enumerate(zip(self.names, self.distributions)):
            if index not in linked:
                columns[name] = dist.sample(rng, n)
        if self._copula is not None:
            linked, factor = self._copula
            z = rng.standard_normal((n, len(linked))) @ factor.T
            for column, index in enumerate(linked):
                dist = self.distributions[index]
                columns[self.names[index]] = dist.from_standard_normal(z[:, column])
        return columns

    def first_bad_row(self, columns, y):
        """Describe the first row where ``y`` is not finite (for error messages)."""
        row = int(np.flatnonzero(~np.isfinite(y))[0])
        return {name: float(values[row]) for name, values in columns.items()}
