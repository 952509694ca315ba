"""Run several activity models on the same question and keep each answer or its error.

The one loop behind "every model side by side": the ``solution --model all`` report, the
demo's columns and the model-choice spread of a measurement all call :func:`run_models`.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from dataclasses import dataclass
from typing import Any

from ..errors import ActivityError
from ..solution import Solution
from . import available_models, resolve_model
from .base import ActivityModel

__all__ = ["ModelRun", "run_models", "compare_models"]


@dataclass(frozen=True)
class ModelRun:
    """One model's answer, or why it has none.

    Attributes
    ----------
    name : str
        The model's name.
    value : object or None
        What the question returned for this model.
    error : str or None
        The message of the :class:`~activity.errors.ActivityError` (or ImportError) that
        stopped it.
    model : ActivityModel or None
        The model object (None when it could not be constructed).
    """

    name: str
    value: Any = None
    error: str | None = None
    model: ActivityModel | None = None

    @property
    def ok(self) -> bool:
        """True when the model answered."""
        return self.error is None


def run_models(
    question: Callable[[ActivityModel], Any], models: Iterable[str | ActivityModel] | None = None
) -> tuple[ModelRun, ...]:
    """Ask ``question(model)`` of each model (default: every registered one).

    Each model is resolved once. A model that cannot be built or cannot answer is kept
    with its error, never dropped.

    Examples
    --------
    >>> runs = run_models(lambda m: m.name.upper(), ["davies", "no-such-model"])
    >>> [(r.name, r.value, r.ok) for r in runs]
    [('davies', 'DAVIES', True), ('no-such-model', None, False)]
    """
    out = []
    for item in available_models() if models is None else models:
        name = getattr(item, "name", item)
        try:
            model = resolve_model(item)
        except (ActivityError, ImportError) as exc:
            out.append(ModelRun(str(name), error=str(exc)))
            continue
        try:
            out.append(ModelRun(model.name, question(model), model=model))
        except (ActivityError, ImportError) as exc:
            out.append(ModelRun(model.name, error=str(exc), model=model))
    return tuple(out)


def compare_models(sol: Solution, models: Iterable[str | ActivityModel] | None = None) -> tuple[ModelRun, ...]:
    """Activity coefficients of ``sol`` by each model; ``value`` is the
    :class:`~activity.coefficients.CoefficientResult` (its notes record every excursion,
    nothing is warned).

    Examples
    --------
    >>> runs = compare_models(Solution({"Na+": 0.1, "Cl-": 0.1}), ["davies", "pitzer"])
    >>> [(r.name, round(r.value["Na+"], 3)) for r in runs]
    [('davies', 0.781), ('pitzer', 0.777)]
    """
    return run_models(lambda m: m.activity_coefficients(sol, warn=False), models)
