"""Activities and mean activity coefficients from a solution and a model."""

from __future__ import annotations

from math import gcd
from typing import Any

from .._checks import scalar_or_array
from ..errors import InputError
from ..solution import Solution
from ..species import parse_species
from . import resolve_model
from .base import ModelLike

__all__ = ["activity_coefficients", "activities", "mean_activity_coefficient", "salt_stoichiometry"]


def activity_coefficients(sol: Solution, model: ModelLike = "davies"):
    """Shorthand for ``get_model(model).activity_coefficients(sol)``."""
    return resolve_model(model).activity_coefficients(sol)


def activities(sol: Solution, model: ModelLike = "davies") -> dict[str, Any]:
    """Activities a_i = γ_i m_i / (1 mol/kg) of every species in ``sol``.

    Broadcasts like ``sol``: floats for one solution, arrays for a batch.

    Examples
    --------
    >>> from activity import Solution
    >>> a = activities(Solution({"Na+": 0.01, "Cl-": 0.01}), "extended-debye-huckel")
    >>> round(a["Cl-"], 6)
    0.008986
    """
    model = resolve_model(model)
    lg = model.activity_coefficients(sol).log10_gamma
    a = 10.0**lg * sol.m
    return {n: scalar_or_array(a[i]) for i, n in enumerate(sol.species)}


def salt_stoichiometry(cation: str, anion: str) -> tuple[int, int]:
    """(ν+, ν−) of the neutral salt formed by two ions, e.g. Ca^2+ with Cl- → (1, 2)."""
    zc, za = parse_species(cation).charge, parse_species(anion).charge
    if zc <= 0:
        raise InputError("not a cation", field="cation", value=cation)
    if za >= 0:
        raise InputError("not an anion", field="anion", value=anion)
    g = gcd(zc, -za)
    return -za // g, zc // g


def mean_activity_coefficient(sol: Solution, cation: str, anion: str, model: ModelLike = "davies") -> Any:
    """Mean ionic activity coefficient γ± = (γ+^ν+ γ−^ν−)^(1/(ν+ + ν−)).

    Examples
    --------
    >>> from activity import Solution
    >>> sol = Solution({"Ca^2+": 0.001, "Cl-": 0.002})
    >>> round(mean_activity_coefficient(sol, "Ca2+", "Cl-", "debye-huckel-limiting"), 4)
    0.8793
    """
    nu_p, nu_m = salt_stoichiometry(cation, anion)
    i, j = sol.index(cation), sol.index(anion)
    lg = resolve_model(model).activity_coefficients(sol).log10_gamma
    return scalar_or_array(10.0 ** ((nu_p * lg[i] + nu_m * lg[j]) / (nu_p + nu_m)))
