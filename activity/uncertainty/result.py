"""Result objects of uncertainty propagation, with the uncertainty budget."""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass, field

import numpy as np
from scipy import stats

from activity.errors import InputError
from activity.formatting import fmt, table

__all__ = [
    "BudgetRow",
    "PropagationResult",
    "SortedSample",
    "interval_indices",
    "coverage_probability",
    "coverage_kind",
]

_KINDS = ("symmetric", "shortest")


def coverage_probability(p, field="p"):
    """Validate a coverage probability 0 < p < 1 and return it as float."""
    try:
        value = float(p)
    except (TypeError, ValueError):
        raise InputError(f"{field} must be a probability, got {p!r}", field=field, value=p) from None
    if not 0.0 < value < 1.0:
        raise InputError(f"{field} must lie strictly between 0 and 1, got {p!r}", field=field, value=p)
    return value


def coverage_kind(kind, field="kind"):
    """Validate the kind of coverage interval."""
    if kind not in _KINDS:
        raise InputError(f"{field} must be one of {_KINDS}, got {kind!r}", field=field, value=kind)
    return kind


def interval_indices(m, p):
    """Zero-based indices for a coverage interval from ``m`` sorted values.

    Follows JCGM 101:2008 7.7: ``q = pM`` if that is an integer, otherwise
    ``floor(pM + 1/2)``; the probabilistically symmetric interval is
    ``[y(r), y(r+q)]`` (one-based) with ``r = (M − q)/2`` if integer, otherwise
    ``(M − q + 1)/2``.

    Returns
    -------
    q : int
        Number of values spanned.
    start : int
        Zero-based index of the lower end of the symmetric interval.
    """
    # floor(pM + 1/2) is pM itself when pM is an integer, and (M − q + 1) // 2
    # is (M − q)/2 when that is an integer: one expression covers each case.
    q = math.floor(p * m + 0.5)
    r = (m - q + 1) // 2
    if q >= m or r < 1:
        raise InputError(
            f"{m} Monte Carlo trials are too few for a coverage interval "
            f"with p = {p}; use at least {math.ceil(100 / (1 - p))}",
            field="p",
            value=p,
        )
    return q, r - 1


def shortest_start(ordered, q, block=1 << 20):
    """Zero-based start of the shortest interval spanning ``q`` steps of ``ordered``.

    ``ordered`` is sorted along its last axis; a 2-D array gives one start per
    row. 1-D input is scanned in blocks of 2²⁰ widths (8 MB of float64 at a
    time; our choice) to keep memory bounded.
    """
    ordered = np.asarray(ordered)
    if ordered.ndim == 2:
        return np.argmin(ordered[:, q:] - ordered[:, :-q], axis=1)
    count = ordered.shape[0] - q
    best, best_width = 0, math.inf
    for begin in range(0, count, block):
        end = min(begin + block, count)
        widths = ordered[begin + q : end + q] - ordered[begin:end]
        local = int(np.argmin(widths))
        if widths[local] < best_width:
            best, best_width = begin + local, float(widths[local])
    return best


@dataclass(frozen=True)
class SortedSample:
    """Sorted Monte Carlo output values, stored compactly.

    Values are kept as float32 offsets from a float64 ``reference`` (the mean
    of the first chunk): the offsets are of the size of the spread of the
    output, so their relative rounding (about 6e-8) is far below any
    statistical uncertainty of a coverage limit, at half the memory of
    float64. Mean and standard deviation are accumulated separately in
    float64 and do not depend on this storage.
    """

    reference: float
    offsets: np.ndarray = field(repr=False)

    @property
    def count(self):
        return int(self.offsets.shape[0])

    def interval(self, p, kind):
        """Coverage interval (low, high) per JCGM 101:2008 7.7."""
        q, start = interval_indices(self.count, p)
        if kind == "shortest":
            start = shortest_start(self.offsets, q)
        low = float(self.offsets[start])
        high = float(self.offsets[start + q])
        return self.reference + low, self.reference + high


@dataclass(frozen=True)
class BudgetRow:
    """One line of an uncertainty budget.

    Attributes
    ----------
    name : str
        Input name.
    distribution : str
        Kind of distribution (``"normal"``, ``"rectangular"``, ...).
    value : float
        Estimate (mean) of the input.
    standard_uncertainty : float
        u(x_i).
    dof : float
        Degrees of freedom of u(x_i).
    sensitivity : float
        c_i = ∂f/∂x_i at the estimates.
    contribution : float
        |c_i|·u(x_i), the input's standard uncertainty in output units.
    share : float
        (c_i·u(x_i))² / u_c², the fraction of the (linearised) output variance.
    """

    name: str
    distribution: str
    value: float
    standard_uncertainty: float
    dof: float
    sensitivity: float
    contribution: float
    share: float


@dataclass(frozen=True, repr=False)
class PropagationResult:
    """Outcome of :func:`activity.uncertainty.propagate`.

    Attributes
    ----------
    value : float
        Estimate of the output: f at the input means (GUM) or the mean of the
        Monte Carlo values.
    standard_uncertainty : float
        Combined standard uncertainty u_c (GUM) or standard deviation of the
        Monte Carlo values.
    dof : float or None
        Welch–Satterthwaite effective degrees of freedom (GUM; ``inf`` when
        every input has infinite dof); ``None`` for Monte Carlo, where
        coverage intervals come from the values themselves.
    method : str
        ``"gum"`` or ``"monte-carlo"``.
    coverage : float
        Default coverage probability of :meth:`expanded_uncertainty` and
        :meth:`coverage_interval`.
    budget : tuple of BudgetRow
        One row per uncertain input. Sensitivities are always those of the
        GUM linearisation at the input means (also for Monte Carlo, where they
        cost one extra batched call); shares are of the linearised variance.
    correlation_share : float
        Share of the linearised variance from the correlation cross terms,
        2 ΣΣ c_i c_j u_i u_j r_ij / u_c²; the shares of the rows plus this add
        up to 1. Zero without correlation.
    trials : int or None
        Number of Monte Carlo trials used.
    tolerance : float or None
        Numerical tolerance δ reached (adaptive Monte Carlo).
    converged : bool or None
        Whether the adaptive Monte Carlo procedure met its tolerance.
    """

    value: float
    standard_uncertainty: float
    dof: float | None
    method: str
    coverage: float
    budget: tuple
    correlation_share: float = 0.0
    trials: int | None = None
    tolerance: float | None = None
    converged: bool | None = None
    samples: SortedSample | None = field(default=None, compare=False)

    # -- coverage ---------------------------------------------------------
    def coverage_factor(self, p=None):
        """Coverage factor k for coverage probability ``p``.

        GUM: the Student t quantile t_p(ν) with ν the effective degrees of
        freedom truncated to the next lower integer (JCGM 100:2008 G.4.1,
        note); the normal quantile when ν is infinite. Monte Carlo: the
        half-width of the symmetric interval divided by the standard
        uncertainty.
        """
        p = coverage_probability(self.coverage if p is None else p)
        if self.method == "monte-carlo":
            if self.standard_uncertainty == 0:
                return math.nan
            return self.expanded_uncertainty(p) / self.standard_uncertainty
        tail = 0.5 * (1.0 + p)
        if self.dof is None or math.isinf(self.dof):
            return float(stats.norm.ppf(tail))
        return float(stats.t.ppf(tail, max(1.0, math.floor(self.dof))))

    def expanded_uncertainty(self, p=None):
        """Expanded uncertainty U_p.

        GUM: k_p·u_c. Monte Carlo: half the length of the probabilistically
        symmetric coverage interval (common practice; JCGM 101 itself reports
        the interval).
        """
        p = coverage_probability(self.coverage if p is None else p)
        if self.method == "monte-carlo":
            low, high = self.samples.interval(p, "symmetric")
            return 0.5 * (high - low)
        return self.coverage_factor(p) * self.standard_uncertainty

    def coverage_interval(self, p=None, kind="symmetric"):
        """Coverage interval (low, high) for coverage probability ``p``.

        Parameters
        ----------
        p : float, optional
            Coverage probability (default: ``self.coverage``).
        kind : {"symmetric", "shortest"}
            Probabilistically symmetric or shortest interval (JCGM 101:2008
            7.7). For the GUM both are ``value ± U_p``, the t and normal
            distributions being symmetric.
        """
        p = coverage_probability(self.coverage if p is None else p)
        coverage_kind(kind)
        if self.method == "monte-carlo":
            return self.samples.interval(p, kind)
        half = self.expanded_uncertainty(p)
        return self.value - half, self.value + half

    # -- budget -----------------------------------------------------------
    def budget_table(self):
        """The budget as a list of dicts (one per input, plus correlations).

        Keys: ``name, distribution, value, standard_uncertainty, dof,
        sensitivity, contribution, share``. When inputs are correlated a last
        row named ``"(correlation)"`` carries ``correlation_share``; its other
        numbers are ``None``.
        """
        rows = [asdict(row) for row in self.budget]
        if self.correlation_share:
            rows.append(
                {
                    "name": "(correlation)",
                    "distribution": "-",
                    "value": None,
                    "standard_uncertainty": None,
                    "dof": None,
                    "sensitivity": None,
                    "contribution": None,
                    "share": self.correlation_share,
                }
            )
        return rows

    def format_budget(self, spread=None):
        """Plain-text budget table followed by the result line.

        Parameters
        ----------
        spread : ModelSpread, optional
            If given, a "model choice" line is added that compares the
            spread between activity models with the combined uncertainty.

        Returns
        -------
        str
        """
        header = ["input", "distribution", "value", "u(x)", "dof", "sensitivity", "|c|*u(x)", "share"]
        rows = [
            [
                r["name"],
                r["distribution"],
                r["value"],
                r["standard_uncertainty"],
                r["dof"],
                r["sensitivity"],
                r["contribution"],
                f"{100 * r['share']:.1f} %",
            ]
            for r in self.budget_table()
        ]
        text = [table(header, rows, digits=6), self._result_line()]
        if self.method == "monte-carlo" and self.budget:
            text.append("(budget: GUM sensitivities at the input estimates; shares of the linearised variance)")
        if spread is not None:
            text.append(spread.format_line(self.standard_uncertainty))
        return "\n".join(text)

    def _result_line(self):
        low, high = self.coverage_interval()
        percent = f"{100 * self.coverage:g} %"
        line = f"output ({self.method}): {fmt(self.value, 6)}, u = {fmt(self.standard_uncertainty, 6)}"
        if self.method == "gum":
            line += f", dof = {fmt(self.dof, 6)}, k = {fmt(self.coverage_factor(), 6)}"
        else:
            line += f", trials = {self.trials}"
        return line + f", {percent} interval [{fmt(low, 6)}, {fmt(high, 6)}]"

    def summary(self):
        """Multi-line text: method, output, interval and the budget."""
        return self.format_budget()

    def __repr__(self):
        parts = [
            f"method={self.method!r}",
            f"value={self.value:.10g}",
            f"standard_uncertainty={self.standard_uncertainty:.6g}",
        ]
        if self.method == "gum":
            parts.append(f"dof={self.dof:.6g}")
        else:
            parts.append(f"trials={self.trials}")
            if self.converged is not None:
                parts.append(f"converged={self.converged}")
        parts.append(f"expanded_uncertainty({self.coverage:g})={self.expanded_uncertainty():.6g}")
        parts.append(f"inputs={[row.name for row in self.budget]}")
        return "PropagationResult(" + ", ".join(parts) + ")"
