"""GUM law of propagation of uncertainty (JCGM 100:2008, clause 5 and annex G).

Sensitivity coefficients come from central differences evaluated in ONE
batched call of the model: row 0 is the point of the input estimates, rows
2i+1 and 2i+2 are that point with input i moved by +h_i and −h_i.

Step size: ``h_i = step · u(x_i)`` with ``step = 1e-3`` by default, but not
below ``1e-8·|x_i|``. A step tied to u(x_i) makes the derivative describe the
model over the range the input really varies; 1e-3 keeps the truncation error
(∝ h²) negligible while the rounding error (≈ ε·|y|/h) stays around 1e-13
relative to the contribution |c_i|·u(x_i). The floor keeps x ± h apart by
enough representable digits when u(x_i) is tiny compared with |x_i|. An input
with u(x_i) = 0 still gets a sensitivity (step ``1e-6·max(|x_i|, 1)``) for the
budget; it contributes nothing.
"""

from __future__ import annotations

import math

import numpy as np

from activity.errors import InputError

from .result import BudgetRow, PropagationResult

__all__ = ["linearise", "combine", "welch_satterthwaite", "gum"]


def _steps(means, uncertainties, step):
    scale = np.abs(means)
    h = np.maximum(step * uncertainties, 1e-8 * scale)
    fallback = 1e-6 * np.maximum(scale, 1.0)
    return np.where(uncertainties > 0, h, fallback)


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
    h = _steps(means, model.uncertainties, step)
    points = np.tile(means, (2 * k + 1, 1))
    index = np.arange(k)
    points[1 + 2 * index, index] += h
    points[2 + 2 * index, index] -= h
    columns = {name: points[:, i] for i, name in enumerate(model.names)}
    y = model.evaluate(columns, 2 * k + 1)
    if not np.isfinite(y[0]):
        raise InputError(f"f is not finite at the input estimates ({y[0]!r})",
                         field="f", value=float(y[0]))
    # Divide by the step actually represented in floating point.
    span = points[1 + 2 * index, index] - points[2 + 2 * index, index]
    sensitivities = (y[1::2] - y[2::2]) / span
    bad = ~np.isfinite(sensitivities) & (model.uncertainties > 0)
    if np.any(bad):
        name = model.names[int(np.flatnonzero(bad)[0])]
        raise InputError(f"f is not finite within ±{h[model.names.index(name)]:.3g} of "
                         f"input {name!r}; the sensitivity cannot be computed",
                         field=name, value=float(means[model.names.index(name)]))
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
    return float(combined ** 4 / denominator)


def budget_rows(model, sensitivities, variance):
    """Budget rows from the linearisation (shares of the linearised variance)."""
    rows = []
    with np.errstate(invalid="ignore"):
        contributions = np.where(model.uncertainties > 0,
                                 np.abs(sensitivities) * model.uncertainties, 0.0)
    for i, (name, dist) in enumerate(zip(model.names, model.distributions)):
        share = contributions[i] ** 2 / variance if variance > 0 else 0.0
        rows.append(BudgetRow(name=name, distribution=dist.kind,
                              value=float(model.means[i]),
                              standard_uncertainty=float(model.uncertainties[i]),
                              dof=float(model.dofs[i]),
                              sensitivity=float(sensitivities[i]),
                              contribution=float(contributions[i]), share=float(share)))
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
        value=value, standard_uncertainty=u_c,
        dof=welch_satterthwaite(contributions, model.dofs, u_c),
        method="gum", coverage=coverage, budget=rows,
        correlation_share=cross / variance if variance > 0 else 0.0)
