"""Public entry points: :func:`propagate` and :func:`validate_gum`."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from activity.errors import InputError

from ._model import Model
from .distributions import real_number
from .gum import gum
from .montecarlo import block_size, numerical_tolerance, run_adaptive, run_fixed
from .result import PropagationResult, coverage_kind, coverage_probability

__all__ = ["propagate", "validate_gum", "ValidationResult"]

METHODS = ("gum", "monte-carlo")


def _count(value, field, minimum=1):
    if isinstance(value, bool):
        raise InputError(f"{field} must be an integer, got {value!r}", field=field, value=value)
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{field} must be an integer, got {value!r}", field=field, value=value) from None
    if not (math.isfinite(number) and number.is_integer() and number >= minimum):
        raise InputError(f"{field} must be an integer >= {minimum}, got {value!r}", field=field, value=value)
    return int(number)


def _positive(value, field):
    number = real_number(value, field)
    if number <= 0:
        raise InputError(f"{field} must be a positive number, got {value!r}", field=field, value=value)
    return number


def propagate(
    f,
    inputs,
    method="gum",
    *,
    trials=None,
    seed=None,
    correlation=None,
    coverage=0.95,
    tolerance=None,
    digits=2,
    interval="symmetric",
    step=1e-3,
    chunk_size=100_000,
    max_trials=10_000_000,
):
    """Propagate input uncertainties through a vectorised function.

    Parameters
    ----------
    f : callable
        ``f(**inputs)`` → array. Uncertain inputs arrive as 1-D float arrays
        of one common length N, constants as given; ``f`` must return N
        values (a scalar output is broadcast). Each method calls ``f`` on
        whole batches: the GUM once, Monte Carlo once per chunk.
    inputs : mapping of str to Distribution or constant
        Named inputs: :class:`Normal`, :class:`Rectangular`,
        :class:`Triangular`, :class:`StudentT` (or :func:`measured`), or plain
        values passed to ``f`` unchanged.
    method : {"gum", "monte-carlo"}
        GUM law of propagation (JCGM 100:2008) or propagation of
        distributions by Monte Carlo (JCGM 101:2008).
    trials : int, optional
        Monte Carlo only: a fixed number of trials. If omitted, the adaptive
        procedure of JCGM 101:2008 7.9 decides.
    seed : int, numpy.random.Generator or None
        Monte Carlo random source; the same seed, trials and chunk size give
        the same result. Unused by the GUM.
    correlation : mapping of (str, str) to float, optional
        Correlation coefficients, e.g. ``{("E0", "T"): 0.3}``. Used in the
        GUM quadratic form and, for Monte Carlo, through a Gaussian copula
        (exact Pearson correlation for normal inputs; for other marginals the
        Pearson correlation of the draws is slightly smaller in magnitude).
    coverage : float
        Default coverage probability p of the result (0 < p < 1).
    tolerance : float, optional
        Adaptive Monte Carlo: numerical tolerance δ in output units. Default:
        δ derived from ``digits`` significant digits of u(y).
    digits : int
        Significant digits of u(y) the adaptive procedure must stabilise.
    interval : {"symmetric", "shortest"}
        Adaptive Monte Carlo: which coverage-interval endpoints must be
        stable.
    step : float
        GUM finite-difference step in units of each input's standard
        uncertainty (see :mod:`activity.uncertainty.gum`).
    chunk_size : int
        Monte Carlo trials per call of ``f``; bounds the memory of one call.
        The default 10⁵ keeps the working arrays of a typical model (0.8 MB
        each) cache-friendly: with the Davies + Nernst model it ran about
        twice as fast as 2.5·10⁵ or 10⁶ (benchmarks/bench_uncertainty.py).
    max_trials : int
        Adaptive Monte Carlo: upper limit of trials (warns if reached).

    Returns
    -------
    PropagationResult
        With ``value``, ``standard_uncertainty``, ``dof``, ``method``,
        ``trials``, ``budget`` and the methods ``expanded_uncertainty``,
        ``coverage_interval``, ``budget_table`` and ``format_budget``. The
        budget always uses the GUM sensitivity coefficients at the input
        estimates (Monte Carlo pays one extra batched call for them).

    Raises
    ------
    InputError
        For an unknown method, bad option values, bad correlations, or a
        model that is not finite where it is evaluated.

    Examples
    --------
    >>> from activity.uncertainty import Normal, Rectangular
    >>> inputs = {"x": Normal(1.0, 0.1), "y": Rectangular(2.0, 0.3)}
    >>> r = propagate(lambda x, y: x + 2 * y, inputs)
    >>> round(r.standard_uncertainty, 6)        # sqrt(0.1² + (2·0.3/√3)²)
    0.360555
    >>> mc = propagate(lambda x, y: x + 2 * y, inputs, "monte-carlo",
    ...                trials=200_000, seed=1)
    >>> abs(mc.standard_uncertainty - r.standard_uncertainty) < 0.003
    True
    """
    if method not in METHODS:
        raise InputError(f"method must be one of {METHODS}, got {method!r}", field="method", value=method)
    coverage = coverage_probability(coverage, "coverage")
    step = _positive(step, "step")
    model = Model(f, inputs, correlation)
    if method == "gum":
        for name, given in (("trials", trials), ("tolerance", tolerance)):
            if given is not None:
                raise InputError(f"{name} applies to method='monte-carlo' only", field=name, value=given)
        return gum(model, coverage, step)
    coverage_kind(interval, "interval")
    digits = _count(digits, "digits")
    chunk_size = _count(chunk_size, "chunk_size")
    rng = np.random.default_rng(seed)
    if trials is not None:
        if tolerance is not None:
            raise InputError(
                "give either trials (fixed) or tolerance (adaptive), not both", field="tolerance", value=tolerance
            )
        trials = _count(trials, "trials", 2)
        mean, sd, sample = run_fixed(model, rng, trials, chunk_size)
        delta, converged = None, None
    else:
        if tolerance is not None:
            tolerance = _positive(tolerance, "tolerance")
        max_trials = _count(max_trials, "max_trials", 2 * block_size(coverage))
        mean, sd, sample, trials, delta, converged = run_adaptive(
            model, rng, coverage, interval, tolerance, digits, chunk_size, max_trials
        )
    linear = gum(model, coverage, step)  # the budget: GUM sensitivities at the estimates
    return PropagationResult(
        value=mean,
        standard_uncertainty=sd,
        dof=None,
        method="monte-carlo",
        coverage=coverage,
        budget=linear.budget,
        correlation_share=linear.correlation_share,
        trials=trials,
        tolerance=delta,
        converged=converged,
        samples=sample,
    )


@dataclass(frozen=True, repr=False)
class ValidationResult:
    """Outcome of :func:`validate_gum` (JCGM 101:2008 clause 8).

    Attributes
    ----------
    passed : bool
        ``d_low <= delta and d_high <= delta``.
    d_low, d_high : float
        |y − U_p − y_low| and |y + U_p − y_high|: distances between the GUM
        interval ends and the Monte Carlo probabilistically symmetric
        interval ends.
    delta : float
        Numerical tolerance from ``digits`` significant digits of the GUM u(y).
    coverage : float
        Coverage probability p.
    gum, monte_carlo : PropagationResult
        The two results compared.
    """

    passed: bool
    d_low: float
    d_high: float
    delta: float
    coverage: float
    gum: PropagationResult
    monte_carlo: PropagationResult

    def __repr__(self):
        verdict = "passed" if self.passed else "failed"
        return (
            f"ValidationResult({verdict}: d_low={self.d_low:.3g}, "
            f"d_high={self.d_high:.3g}, delta={self.delta:.3g}, "
            f"p={self.coverage:g}, trials={self.monte_carlo.trials})"
        )

    def summary(self):
        """Text lines: both intervals, d_low, d_high, δ and the verdict."""
        g_low, g_high = self.gum.coverage_interval()
        m_low, m_high = self.monte_carlo.coverage_interval()
        verdict = "PASSED" if self.passed else "FAILED"
        return "\n".join(
            [
                f"GUM interval         [{g_low:.6g}, {g_high:.6g}] (p = {self.coverage:g})",
                f"Monte Carlo interval [{m_low:.6g}, {m_high:.6g}] ({self.monte_carlo.trials} trials)",
                f"d_low = {self.d_low:.3g}, d_high = {self.d_high:.3g}, "
                f"delta = {self.delta:.3g}: GUM validation {verdict}",
            ]
        )


def validate_gum(
    f,
    inputs,
    *,
    correlation=None,
    coverage=0.95,
    digits=2,
    seed=None,
    mc_tolerance=None,
    step=1e-3,
    chunk_size=100_000,
    max_trials=10_000_000,
):
    """Validate the GUM result against Monte Carlo (JCGM 101:2008 clause 8).

    The GUM interval y ± U_p is compared with the probabilistically
    symmetric Monte Carlo interval [y_low, y_high]. With δ the numerical
    tolerance of the GUM u(y) at ``digits`` significant digits, the GUM is
    validated when d_low = |y − U_p − y_low| ≤ δ and
    d_high = |y + U_p − y_high| ≤ δ. The Monte Carlo run is adaptive with
    tolerance δ/5 unless ``mc_tolerance`` is given (the δ/5 is our reading of
    JCGM 101:2008 8.2, from memory).

    Parameters
    ----------
    f, inputs, correlation, coverage, seed, step, chunk_size, max_trials
        As for :func:`propagate`.
    digits : int
        Significant digits of u(y) that must agree.
    mc_tolerance : float, optional
        Numerical tolerance of the Monte Carlo run (default δ/5).

    Returns
    -------
    ValidationResult

    Examples
    --------
    >>> from activity.uncertainty import Normal
    >>> v = validate_gum(lambda a, b: a - b, {"a": Normal(1.0, 0.1),
    ...                  "b": Normal(0.5, 0.1)}, seed=3)
    >>> v.passed
    True
    """
    coverage = coverage_probability(coverage, "coverage")
    digits = _count(digits, "digits")
    g = propagate(f, inputs, "gum", correlation=correlation, coverage=coverage, step=step)
    delta = numerical_tolerance(g.standard_uncertainty, digits)
    if mc_tolerance is None:
        mc_tolerance = delta / 5.0 if delta > 0 else None
    mc = propagate(
        f,
        inputs,
        "monte-carlo",
        seed=seed,
        correlation=correlation,
        coverage=coverage,
        tolerance=mc_tolerance,
        digits=digits,
        step=step,
        chunk_size=chunk_size,
        max_trials=max_trials,
    )
    expanded = g.expanded_uncertainty()
    low, high = mc.coverage_interval(kind="symmetric")
    d_low = abs(g.value - expanded - low)
    d_high = abs(g.value + expanded - high)
    return ValidationResult(
        passed=bool(d_low <= delta and d_high <= delta),
        d_low=d_low,
        d_high=d_high,
        delta=delta,
        coverage=coverage,
        gum=g,
        monte_carlo=mc,
    )
