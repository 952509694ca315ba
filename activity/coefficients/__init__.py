"""Pluggable activity-coefficient models and their registry.

Built-in models are imported on first use. Other packages plug in models through the
entry-point group ``activity.models`` (each entry point loads a class or factory that
accepts keyword parameters and returns an :class:`ActivityModel`), or at run time with
:func:`register_model`.
"""

from __future__ import annotations

import importlib
from collections.abc import Callable
from typing import Any

from ..coefficients.base import ModelLike
from ..errors import InputError
from .base import ActivityModel, CoefficientResult, Validity

__all__ = [
    "ActivityModel",
    "CoefficientResult",
    "Validity",
    "available_models",
    "get_model",
    "register_model",
    "resolve_model",
]

ENTRY_POINT_GROUP = "activity.models"

_BUILTIN: dict[str, str] = {
    "ideal": "activity.coefficients.ideal:IdealModel",
    "debye-huckel-limiting": "activity.coefficients.debye_huckel_limiting:DebyeHuckelLimiting",
    "extended-debye-huckel": "activity.coefficients.extended_debye_huckel:ExtendedDebyeHuckel",
    "truesdell-jones": "activity.coefficients.truesdell_jones:TruesdellJones",
    "davies": "activity.coefficients.davies:DaviesModel",
    "pitzer": "activity.coefficients.pitzer:PitzerModel",
}
_REGISTRY: dict[str, Any] = dict(_BUILTIN)
_entry_points_loaded = False


def _load_entry_points() -> None:
    global _entry_points_loaded
    if _entry_points_loaded:
        return
    _entry_points_loaded = True
    from importlib.metadata import entry_points

    for ep in entry_points(group=ENTRY_POINT_GROUP):
        _REGISTRY.setdefault(ep.name, ep)


def _normalise(name: str) -> str:
    return str(name).strip().lower().replace("_", "-").replace(" ", "-").replace("ü", "u")


def register_model(name: str, factory: Callable[..., ActivityModel], *, replace: bool = False) -> None:
    """Register a model class or factory under ``name``.

    Examples
    --------
    >>> from functools import partial
    >>> from activity.coefficients.davies import DaviesModel
    >>> register_model("davies-0.2", partial(DaviesModel, c=0.2))   # no closure over this session
    >>> get_model("davies-0.2").params
    {'c': 0.2}
    """
    key = _normalise(name)
    _load_entry_points()
    if key in _REGISTRY and not replace:
        raise InputError("a model of this name is registered already (pass replace=True)", field="name", value=name)
    if not callable(factory):
        raise InputError("factory must be callable", field="factory", value=factory)
    _REGISTRY[key] = factory


def available_models() -> tuple[str, ...]:
    """Names of all registered models (built-in, entry points, run time)."""
    _load_entry_points()
    return tuple(_REGISTRY)


def get_model(name: str, **params: Any) -> ActivityModel:
    """Construct a registered model by name.

    Examples
    --------
    >>> get_model("davies").name
    'davies'
    """
    key = _normalise(name)
    if key not in _REGISTRY:  # entry points never replace a registered name: look only for others
        _load_entry_points()
    if key not in _REGISTRY:
        raise InputError(f"unknown model; available: {', '.join(_REGISTRY)}", field="model", value=name)
    target = _REGISTRY[key]
    if isinstance(target, str):
        module, _, attr = target.partition(":")
        try:
            target = getattr(importlib.import_module(module), attr)
        except (ImportError, AttributeError) as exc:
            raise InputError(f"model is registered but cannot be loaded ({exc})", field="model", value=name) from None
        _REGISTRY[key] = target
    elif hasattr(target, "load") and not isinstance(target, type):
        target = target.load()
        _REGISTRY[key] = target
    model = target(**params)
    if not isinstance(model, ActivityModel):
        raise InputError("the factory did not return an ActivityModel", field="model", value=name)
    return model


def resolve_model(model: ModelLike) -> ActivityModel:
    """Accept a model instance or a registered name."""
    if isinstance(model, ActivityModel):
        return model
    if isinstance(model, str):
        return get_model(model)
    raise InputError("expected a model name or an ActivityModel", field="model", value=model)
