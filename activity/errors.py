"""Exception and warning classes of the package.

Every error raised on purpose derives from :class:`ActivityError`; bad input raises
:class:`InputError`, which is also a :class:`ValueError` and names the offending field
and value. Warnings derive from :class:`ActivityWarning` so that a caller can filter
them as a group.
"""

from __future__ import annotations

import warnings
from collections.abc import Callable, Iterable
from typing import Any

__all__ = [
    "ActivityError",
    "InputError",
    "ConvergenceError",
    "ModelError",
    "ActivityWarning",
    "ValidityWarning",
    "CoverageWarning",
    "ElectroneutralityWarning",
    "catch_package_warnings",
    "call_with_notes",
]

_MISSING = object()


class ActivityError(Exception):
    """Base class of every error raised by the package."""


class InputError(ActivityError, ValueError):
    """Bad input: names the field and the value that were refused.

    Parameters
    ----------
    message : str
        What is wrong and, where possible, what to do instead.
    field : str, optional
        Name of the input field (argument, species, file key, CSV column).
    value : object, optional
        The offending value.

    Examples
    --------
    >>> err = InputError("must be positive", field="T", value=-3.0)
    >>> str(err)
    'T = -3.0: must be positive'
    """

    def __init__(self, message: str, field: str | None = None, value: Any = _MISSING):
        self.field = field
        self.value = None if value is _MISSING else value
        if field is not None and value is not _MISSING:
            text = f"{field} = {value!r}: {message}"
        elif field is not None:
            text = f"{field}: {message}"
        else:
            text = message
        super().__init__(text)


class ConvergenceError(ActivityError, RuntimeError):
    """An iterative solution did not converge; ``rows`` lists the rows that failed."""

    #: Added to a message about reproducing a potential: the usual cause is a unit slip.
    POTENTIAL_HINT = (
        "; potentials are in volts in the Python API (a reading of -35.2 mV is -0.0352): check the unit, "
        "the sign and the electrode constant E0"
    )

    def __init__(self, message: str, rows: Any = None):
        self.rows = rows
        if "potential" in message and "volts" not in message:
            message += self.POTENTIAL_HINT
        super().__init__(message)


class ModelError(ActivityError):
    """A model cannot compute what was asked (e.g. a quantity it does not define)."""


class ActivityWarning(UserWarning):
    """Base class of the package's warnings: "computed, but look"."""


class ValidityWarning(ActivityWarning):
    """A result was computed outside the declared validity of a model or data set."""


class CoverageWarning(ActivityWarning):
    """Parameters are missing for some interactions; their terms are absent."""


class ElectroneutralityWarning(ActivityWarning):
    """The composition is not electrically neutral within the tolerance."""


def warn_alerts(alerts: Iterable[str], category: type[Warning] = ValidityWarning, stacklevel: int = 3) -> None:
    """Warn once per distinct message: what a public entry point does with the ``alerts`` of
    the result it returns (inner code records, it does not warn)."""
    for message in dict.fromkeys(alerts):
        warnings.warn(message, category, stacklevel=stacklevel)


def catch_package_warnings(func: Callable[..., Any], *args: Any, **kw: Any) -> tuple[Any, list]:
    """Call ``func``; return its value and the records of the package's warnings it raised.

    Warnings of other origins (e.g. numpy's) are passed on unchanged.
    """
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", ActivityWarning)
        out = func(*args, **kw)
    for w in caught:
        if not issubclass(w.category, ActivityWarning):
            warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
    return out, [w for w in caught if issubclass(w.category, ActivityWarning)]


def call_with_notes(func: Callable[..., Any], *args: Any, **kw: Any) -> tuple[Any, tuple[str, ...]]:
    """Call ``func`` with the package's warnings recorded instead of shown.

    Returns ``(result, notes)``: the messages of the :class:`ActivityWarning` s raised,
    each once, in order. Other warnings are passed on unchanged.

    Examples
    --------
    >>> call_with_notes(lambda: warnings.warn("look", ActivityWarning) or 1)
    (1, ('look',))
    """
    out, caught = catch_package_warnings(func, *args, **kw)
    return out, tuple(dict.fromkeys(str(w.message) for w in caught))
