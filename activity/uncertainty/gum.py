"""GUM law of propagation of uncertainty (JCGM 100:2008, clause 5 and annex G).

Sensitivity coefficients come from central differences evaluated in ONE
batched call of the model: row 0 is the point of the input estimates; for
each input i there are two pairs of rows with input i moved by ±h_i and by
±u(x_i).

Step size: ``h_i = step · u(x_i)`` with ``step = 1e-3`` by default, but not
below ``1e-8·|x_i|`` (about √ε, so that x_i ± h_i still differ from x_i by
some 10⁸ units in the last place; common practice). A step tied to u(x_i)
makes the derivative describe the model over the range the input really varies; 1e-3 keeps the truncation error
(∝ h²) negligible. Its rounding error is about ε·|y|/|Δy| relative, with Δy
the change of the output over ±h_i; when that exceeds 1e-6 (the output is
too large to resolve so small a change) the difference over ±u(x_i) is used
instead, whose rounding error is a thousand times smaller and which is exact
for a linear model. An input with u(x_i) = 0 still gets a sensitivity (step
``1e-6·max(|x_i|, 1)``, our choice: no u to scale by, so a small relative step)
for the budget; it contributes nothing.
"""

from __future__ import annotations

import math

import numpy as np

from activity.errors import InputError

from .result import BudgetRow, PropagationResult

__all__ = ["linearise", "combine", "welch_satterthwaite", "gum"]


def _steps(means, uncertainties, step):
    """Small steps h_i and wide steps u_i (fallbacks for u_i = 0)."""
    scale = np.abs(means)
    fallback = 1e-6 * np.maximum(scale, 1.0)
    small = np.where(uncertainties > 0, np.maximum(step * uncertainties, 1e-8 * scale), fallback)
    wide = np.where(uncertainties > 0, uncertainties, fallback)
    return small, wide


#: Largest accepted relative rounding error of the small-step difference.
_ROUNDING_LIMIT = 1e-6


def linearise(model, step=1e-3):
    """Output estimate and sensitivity coefficients, from one batched call.

    Parameters
    ----------
    model : Model
        The measurement model.
    step : float
        Relative step, in units of each input's standard uncertainty.

    Returns
    -------
    value : float
        f at the input estimates.
    sensitivities : ndarray, shape (k,)
        c_i = ∂f/∂x_i by central differences.
    """
    k = len(model.names)
    means = model.means
    small, wide = _steps(means, model.uncertainties, step)
    index = np.arange(k)
    points = np.tile(means, (4 * k + 1, 1))
    for offset, h in ((1, small), (1 + 2 * k, wide)):
        points[offset + 2 * index, index] += h
        points[offset + 1 + 2 * index, index] -= h
    columns = {name: points[:, i] for i, name in enumerate(model.names)}
    # Points at ±u(x_i) may leave the model's domain; such values are only
    # used when finite, so numpy's floating-point warnings are muted here.
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        y = model.evaluate(columns, 4 * k + 1)
    if not np.isfinite(y[0]):
        raise InputError(f"f is not finite at the input estimates ({y[0]!r})", field="f", value=float(y[0]))

    def difference(offset):
        # Divide by the step actually represented in floating point.
        up, down = offset + 2 * index, offset + 1 + 2 * index
        rise = y[up] - y[down]
        scale = np.maximum(np.abs(y[up]), np.abs(y[down]))
        with np.errstate(divide="ignore", invalid="ignore"):
            rounding = np.finfo(float).eps * scale / np.abs(rise)
        return rise / (points[up, index] - points[down, index]), rounding

    sensitivities, rounding = difference(1)
    wide_sensitivities, _ = difference(1 + 2 * k)
    unresolved = ~(rounding <= _ROUNDING_LIMIT) & np.isfinite(wide_sensitivities)
    sensitivities = np.where(unresolved, wide_sensitivities, sensitivities)
    bad = ~np.isfinite(sensitivities) & (model.uncertainties > 0)
    if np.any(bad):
        i = int(np.flatnonzero(bad)[0])
        raise InputError(
            f"f is not finite within ±{small[i]:.3g} of input {model.names[i]!r}; the sensitivity cannot be computed",
            field=model.names[i],
            value=float(means[i]),
        )
    return float(y[0]), sensitivities


def combine(sensitivities, uncertainties, correlation=None):
    """Combined variance u_c² = Σ c_i² u_i² + 2 ΣΣ_{i<j} c_i c_j u_i u_j r_ij.

    JCGM 100:2008 equation (16), written as the quadratic form wᵀ R w with
    w_i = c_i u_i.

    Returns
    -------
    variance : float
        u_c².
    cross : float
        The part of ``variance`` from the correlation terms.

    Examples
    --------
    >>> combine(np.array([1.0, 1.0]), np.array([1.0, 1.0]), np.array([[1, -1], [-1, 1]]))
    (0.0, -2.0)
    """
    with np.errstate(invalid="ignore"):
        w = np.where(uncertainties > 0, sensitivities * uncertainties, 0.0)
    diagonal = float(np.sum(w * w))
    if correlation is None:
        return diagonal, 0.0
    total = float(w @ correlation @ w)
    return max(total, 0.0), total - diagonal


def welch_satterthwaite(contributions, dofs, combined):
    """Effective degrees of freedom (JCGM 100:2008 G.4.1, equation G.2b).

    ν_eff = u_c⁴ / Σ_i (c_i u_i)⁴ / ν_i. Inputs with infinite ν add nothing;
    when every ν is infinite (or u_c = 0) the result is ``inf``. The formula
    assumes independent inputs; with correlation it is an approximation.

    Examples
    --------
    >>> welch_satterthwaite(np.array([1.0, 1.0]), np.array([4.0, 4.0]), math.sqrt(2.0))
    8.0
    """
    finite = np.isfinite(dofs) & (contributions > 0)
    denominator = float(np.sum(contributions[finite] ** 4 / dofs[finite]))
    if denominator == 0.0 or combined == 0.0:
        return math.inf
    return float(combined**4 / denominator)


def budget_rows(model, sensitivities, variance):
    """Budget rows from the linearisation (shares of the linearised variance)."""
    rows = []
    with np.errstate(invalid="ignore"):
        contributions = np.where(model.uncertainties > 0, np.abs(sensitivities) * model.uncertainties, 0.0)
    for i, (name, dist) in enumerate(zip(model.names, model.distributions)):
        share = contributions[i] ** 2 / variance if variance > 0 else 0.0
        rows.append(
            BudgetRow(
                name=name,
                distribution=dist.kind,
                value=float(model.means[i]),
                standard_uncertainty=float(model.uncertainties[i]),
                dof=float(model.dofs[i]),
                sensitivity=float(sensitivities[i]),
                contribution=float(contributions[i]),
                share=float(share),
            )
        )
    return tuple(rows), contributions


def gum(model, coverage=0.95, step=1e-3):
    """Propagate by the GUM law of propagation of uncertainty.

    Parameters
    ----------
    model : Model
    coverage : float
        Default coverage probability of the result.
    step : float
        Finite-difference step in units of u(x_i) (see module notes).

    Returns
    -------
    PropagationResult
    """
    value, sensitivities = linearise(model, step)
    variance, cross = combine(sensitivities, model.uncertainties, model.correlation)
    rows, contributions = budget_rows(model, sensitivities, variance)
    u_c = math.sqrt(variance)
    return PropagationResult(
        value=value,
        standard_uncertainty=u_c,
        dof=welch_satterthwaite(contributions, model.dofs, u_c),
        method="gum",
        coverage=coverage,
        budget=rows,
        correlation_share=cross / variance if variance > 0 else 0.0,
    )
