"""Probability distributions for the input quantities of a measurement model.

Each distribution describes what is known about one input quantity, in the
sense of JCGM 100:2008 (GUM) and JCGM 101:2008 (propagation of distributions).
It exposes the three numbers the GUM law of propagation needs (``mean``,
``standard_uncertainty``, ``dof``) and the two operations Monte Carlo needs:
vectorised sampling (:meth:`Distribution.sample`) and the inverse CDF
(:meth:`Distribution.ppf`), the latter for correlated draws through a Gaussian
copula.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import special, stats

from activity.errors import InputError

__all__ = [
    "Distribution",
    "Normal",
    "Rectangular",
    "Triangular",
    "StudentT",
    "measured",
]


def real_number(value, field):
    """Return ``value`` as a finite float or raise InputError naming ``field``."""
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{field} must be a real number, got {value!r}", field=field, value=value) from None
    if not math.isfinite(number):
        raise InputError(f"{field} must be finite, got {value!r}", field=field, value=value)
    return number


def _width(value, field):
    """Return a finite, non-negative float (a standard deviation or half-width)."""
    number = real_number(value, field)
    if number < 0:
        raise InputError(f"{field} must not be negative, got {value!r}", field=field, value=value)
    return number


def _dof(value, field="dof", finite=False):
    """Return degrees of freedom: a positive float, ``inf`` allowed unless ``finite``."""
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{field} must be a positive number, got {value!r}", field=field, value=value) from None
    if math.isnan(number) or number <= 0 or (finite and math.isinf(number)):
        kind = "a finite positive number" if finite else "positive (inf allowed)"
        raise InputError(f"{field} must be {kind}, got {value!r}", field=field, value=value)
    return number


class Distribution:
    """Base class of the input distributions.

    Subclasses are frozen dataclasses. Every subclass provides

    ``mean``
        Expectation of the quantity (the estimate used by the GUM).
    ``standard_uncertainty``
        The standard uncertainty u(x) used by the GUM law of propagation.
    ``dof``
        Degrees of freedom of u(x); ``inf`` for a type B evaluation unless
        stated otherwise.

    and the methods :meth:`sample` and :meth:`ppf`.
    """

    kind = "distribution"

    def sample(self, rng, n):
        """Draw ``n`` independent values.

        Parameters
        ----------
        rng : numpy.random.Generator
            Source of randomness.
        n : int
            Number of draws.

        Returns
        -------
        ndarray, shape (n,)
        """
        return self.ppf(rng.random(n))

    def ppf(self, q):
        """Inverse cumulative distribution function, broadcast over ``q``."""
        raise NotImplementedError

    def from_standard_normal(self, z):
        """Map standard-normal values ``z`` through this marginal (Gaussian copula).

        Parameters
        ----------
        z : array_like
            Standard normal values.

        Returns
        -------
        ndarray
            ``ppf(Phi(z))``, same shape as ``z``.
        """
        return self.ppf(special.ndtr(z))


@dataclass(frozen=True)
class Normal(Distribution):
    """Gaussian distribution N(mean, sd²).

    Parameters
    ----------
    mean : float
        Expectation.
    sd : float
        Standard deviation, used as the standard uncertainty; must be >= 0.
    dof : float, optional
        Degrees of freedom attached to ``sd`` for the Welch–Satterthwaite
        formula (default ``inf``). Sampling is always Gaussian; use
        :class:`StudentT` (or :func:`measured`) to sample a t distribution.

    Examples
    --------
    >>> x = Normal(0.1, 0.002)
    >>> x.mean, x.standard_uncertainty, x.dof
    (0.1, 0.002, inf)
    """

    mean: float
    sd: float
    dof: float = math.inf
    kind = "normal"

    def __post_init__(self):
        object.__setattr__(self, "mean", real_number(self.mean, "mean"))
        object.__setattr__(self, "sd", _width(self.sd, "sd"))
        object.__setattr__(self, "dof", _dof(self.dof))

    @property
    def standard_uncertainty(self):
        return self.sd

    def sample(self, rng, n):
        return self.mean + self.sd * rng.standard_normal(n)

    def ppf(self, q):
        return self.mean + self.sd * special.ndtri(q)

    def from_standard_normal(self, z):
        return self.mean + self.sd * np.asarray(z, dtype=float)


@dataclass(frozen=True)
class _Bounded(Distribution):
    """Shared part of the symmetric distributions on [centre ± half_width]."""

    centre: float
    half_width: float
    dof: float = math.inf
    _divisor = 1.0

    def __post_init__(self):
        object.__setattr__(self, "centre", real_number(self.centre, "centre"))
        object.__setattr__(self, "half_width", _width(self.half_width, "half_width"))
        object.__setattr__(self, "dof", _dof(self.dof))

    @property
    def mean(self):
        return self.centre

    @property
    def standard_uncertainty(self):
        return self.half_width / self._divisor


@dataclass(frozen=True)
class Rectangular(_Bounded):
    """Rectangular (uniform) distribution on [centre − half_width, centre + half_width].

    The standard uncertainty is ``half_width / sqrt(3)`` (JCGM 100:2008 4.3.7).

    Parameters
    ----------
    centre : float
        Mid-point of the interval.
    half_width : float
        Half the width of the interval; must be >= 0.
    dof : float, optional
        Degrees of freedom (default ``inf``, a type B evaluation).

    Examples
    --------
    >>> x = Rectangular(25.0, 0.3)
    >>> round(x.standard_uncertainty, 6)
    0.173205
    """

    kind = "rectangular"
    _divisor = math.sqrt(3.0)

    def sample(self, rng, n):
        return self.centre + self.half_width * (2.0 * rng.random(n) - 1.0)

    def ppf(self, q):
        return self.centre + self.half_width * (2.0 * np.asarray(q, dtype=float) - 1.0)


@dataclass(frozen=True)
class Triangular(_Bounded):
    """Symmetric triangular distribution on [centre − half_width, centre + half_width].

    The standard uncertainty is ``half_width / sqrt(6)`` (JCGM 100:2008 4.3.9).

    Parameters
    ----------
    centre : float
        Mode and mid-point.
    half_width : float
        Half the width of the support; must be >= 0.
    dof : float, optional
        Degrees of freedom (default ``inf``).

    Examples
    --------
    >>> round(Triangular(0.0, 6.0).standard_uncertainty, 6)
    2.44949
    """

    kind = "triangular"
    _divisor = math.sqrt(6.0)

    def sample(self, rng, n):
        # The difference of two independent U(0, 1) values is triangular on [-1, 1].
        return self.centre + self.half_width * (rng.random(n) - rng.random(n))

    def ppf(self, q):
        q = np.asarray(q, dtype=float)
        low = np.sqrt(2.0 * np.minimum(q, 0.5))
        high = np.sqrt(2.0 * np.minimum(1.0 - q, 0.5))
        unit = np.where(q <= 0.5, low - 1.0, 1.0 - high)
        return self.centre + self.half_width * unit


@dataclass(frozen=True)
class StudentT(Distribution):
    """Scaled and shifted t distribution t_dof(mean, sd²) (JCGM 101:2008 6.4.9).

    This is the distribution assigned to a quantity estimated by the mean of
    ``n`` repeated indications: ``mean`` is their average, ``sd`` is the
    standard uncertainty of the average, s/sqrt(n), and ``dof = n − 1``.

    ``standard_uncertainty`` is ``sd`` — the type A value the GUM law of
    propagation uses together with ``dof`` (Welch–Satterthwaite). The sampled
    distribution itself has the larger standard deviation
    ``sd * sqrt(dof / (dof − 2))`` for ``dof > 2`` (infinite otherwise), as in
    JCGM 101:2008 6.4.9.4; this is one reason Monte Carlo and GUM may differ.

    Parameters
    ----------
    mean : float
        Location (the average of the indications).
    sd : float
        Scale (standard uncertainty of the average); must be >= 0.
    dof : float
        Degrees of freedom, finite and > 0.

    Examples
    --------
    >>> x = StudentT(7.012, 0.004, dof=9)
    >>> x.standard_uncertainty, x.dof
    (0.004, 9.0)
    """

    mean: float
    sd: float
    dof: float
    kind = "student-t"

    def __post_init__(self):
        object.__setattr__(self, "mean", real_number(self.mean, "mean"))
        object.__setattr__(self, "sd", _width(self.sd, "sd"))
        object.__setattr__(self, "dof", _dof(self.dof, finite=True))

    @property
    def standard_uncertainty(self):
        return self.sd

    def sample(self, rng, n):
        return self.mean + self.sd * rng.standard_t(self.dof, n)

    def ppf(self, q):
        return self.mean + self.sd * stats.t.ppf(q, self.dof)


def measured(value, u, dof=math.inf):
    """Distribution for a measured value with its standard uncertainty.

    Parameters
    ----------
    value : float
        The estimate.
    u : float
        Its standard uncertainty (>= 0).
    dof : float, optional
        Degrees of freedom of ``u``. ``inf`` (default) gives a :class:`Normal`;
        a finite value gives a :class:`StudentT`, which is what JCGM 101:2008
        6.4.9 assigns to a type A evaluation.

    Returns
    -------
    Normal or StudentT

    Examples
    --------
    >>> measured(0.2223, 0.0002)
    Normal(mean=0.2223, sd=0.0002, dof=inf)
    >>> measured(0.2223, 0.0002, dof=5)
    StudentT(mean=0.2223, sd=0.0002, dof=5.0)
    """
    if math.isinf(_dof(dof)):
        return Normal(value, u)
    return StudentT(value, u, dof)
