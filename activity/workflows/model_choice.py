"""Spread of a result over the choice of activity model.

Different activity-coefficient models give different answers for the same
solution. That difference is not a measurement uncertainty, but an analyst
should see it beside the budget: when the spread between models exceeds the
combined standard uncertainty, the model choice matters more than the
measurement.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..errors import InputError
from ..uncertainty.distributions import Distribution

__all__ = ["ModelSpread", "model_spread"]


@dataclass(frozen=True)
class ModelSpread:
    """Spread of one output over several models.

    Attributes
    ----------
    values : dict of str to float
        Output per model name.
    minimum, maximum : float
        Smallest and largest value.
    lowest, highest : str
        Models giving them.
    spread : float
        ``maximum − minimum``.
    standard_uncertainty : float
        ``spread / sqrt(12)``: the standard deviation of a rectangular
        distribution over [minimum, maximum] (JCGM 100:2008 4.3.7 with
        half-width spread/2), a way to express the model choice on the same
        scale as a standard uncertainty.
    """

    values: dict
    minimum: float
    maximum: float
    lowest: str
    highest: str
    spread: float
    standard_uncertainty: float

    def format_line(self, reference_u=None):
        """One line of text for a report; compares with ``reference_u`` if given."""
        line = (
            f"model choice: {len(self.values)} models, {self.minimum:.6g} "
            f"({self.lowest}) to {self.maximum:.6g} ({self.highest}), spread "
            f"{self.spread:.6g}, u = spread/sqrt(12) = {self.standard_uncertainty:.6g}"
        )
        if reference_u is not None and reference_u > 0:
            ratio = self.standard_uncertainty / reference_u
            verdict = "model choice dominates" if ratio > 1 else "measurement dominates"
            line += f"; {ratio:.3g} x the measurement u ({verdict})"
        return line


def model_spread(models, inputs=None):
    """Minimum, maximum and spread of an output over activity models.

    Parameters
    ----------
    models : mapping of str to float or callable
        Output per model name. A callable is evaluated at the estimates of
        ``inputs`` (means of distributions, constants as given), with the same
        keyword convention as :func:`propagate`; without ``inputs`` it is
        called with no arguments.
    inputs : mapping, optional
        Inputs for callables.

    Returns
    -------
    ModelSpread

    Raises
    ------
    InputError
        If ``models`` is empty or a value is not a finite number
        (``field="models"``).

    Examples
    --------
    >>> s = model_spread({"davies": 0.7620, "extended-debye-huckel": 0.7580})
    >>> round(s.spread, 6), s.lowest
    (0.004, 'extended-debye-huckel')
    >>> round(s.standard_uncertainty, 6)
    0.001155
    """
    if not hasattr(models, "items") or not models:
        raise InputError("models must be a non-empty mapping of model name to value", field="models", value=models)
    point = {}
    for name, item in (inputs or {}).items():
        point[name] = item.mean if isinstance(item, Distribution) else item
    values = {}
    for name, item in models.items():
        raw = item(**point) if callable(item) else item
        try:
            number = float(raw)
        except (TypeError, ValueError):
            raise InputError(f"model {name!r} gave {raw!r}, not a single number", field="models", value=name) from None
        if not math.isfinite(number):
            raise InputError(f"model {name!r} gave a non-finite value {number!r}", field="models", value=name)
        values[name] = number
    lowest = min(values, key=values.get)
    highest = max(values, key=values.get)
    spread = values[highest] - values[lowest]
    return ModelSpread(
        values=values,
        minimum=values[lowest],
        maximum=values[highest],
        lowest=lowest,
        highest=highest,
        spread=spread,
        standard_uncertainty=spread / math.sqrt(12.0),
    )
