"""Uncertainty propagation: GUM law of propagation and Monte Carlo, with a budget.

Wraps any vectorised function ``f(**inputs) -> array`` of named inputs.

* :func:`propagate` — GUM (JCGM 100:2008) or Monte Carlo (JCGM 101:2008),
  returning a :class:`PropagationResult` with the uncertainty budget.
* :func:`validate_gum` — JCGM 101:2008 clause 8 check of the GUM against
  Monte Carlo.
* Input distributions: :class:`Normal`, :class:`Rectangular`,
  :class:`Triangular`, :class:`StudentT` and :func:`measured`.

Examples
--------
>>> import numpy as np
>>> from activity.uncertainty import Normal, Rectangular, propagate
>>> def slope_times_log(k, a):
...     return k * np.log10(a)
>>> r = propagate(slope_times_log, {"k": Normal(0.05916, 0.00005),
...                                 "a": Rectangular(0.01, 0.0002)})
>>> round(r.value, 5)
-0.11832
>>> [row.name for row in r.budget]
['k', 'a']
"""

from .distributions import Distribution, Normal, Rectangular, StudentT, Triangular, measured
from .propagation import ValidationResult, propagate, validate_gum
from .result import BudgetRow, PropagationResult

__all__ = [
    "propagate",
    "validate_gum",
    "Distribution",
    "Normal",
    "Rectangular",
    "Triangular",
    "StudentT",
    "measured",
    "PropagationResult",
    "ValidationResult",
    "BudgetRow",
]
