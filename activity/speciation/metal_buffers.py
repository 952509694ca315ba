"""Metal-ion buffers: the total metal for a target free activity, and the free activity of a recipe.

Below about 10⁻⁶ mol/kg a plain dilution of a metal salt cannot be trusted (adsorption,
impurities), so ion-selective electrodes are calibrated there with *metal-ion buffers*: a
chelator in excess binds most of the metal and holds the free activity at a value set by
the ratio of bound to free chelator, the complex's stability constant and the pH.

:func:`metal_buffer` answers "how much metal must I add?" by closing the speciation with a
fixed free activity of the metal (its total is then an output);
:func:`free_metal` answers "what free activity does this recipe give?". Both are
:func:`~activity.speciation.speciate` underneath and broadcast over rows.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from .._checks import finite_array, scalar_or_array
from ..errors import InputError
from ..solution import Solution
from ..species import parse_species
from .api import speciate
from .result import SpeciationResult

__all__ = ["MetalBuffer", "free_metal", "metal_buffer"]


@dataclass(frozen=True, eq=False)
class MetalBuffer:
    """A metal-ion buffer recipe and its speciation.

    Attributes
    ----------
    metal : str
    metal_total : float or ndarray
        Total metal to add, mol/kg.
    free_activity : float or ndarray
        Free activity of the metal ion.
    p_metal : float or ndarray
        −lg of the free activity (pCa, pMg, ...).
    free_molality : float or ndarray
    ph : float or ndarray
    result : SpeciationResult
    notes : tuple of str
    """

    metal: str
    metal_total: Any
    free_activity: Any
    p_metal: Any
    free_molality: Any
    ph: Any
    result: SpeciationResult
    notes: tuple = ()


def _buffer(metal: str, res: SpeciationResult) -> MetalBuffer:
    a = res.activity(metal)
    return MetalBuffer(
        metal=metal,
        metal_total=res.totals[metal],
        free_activity=a,
        p_metal=scalar_or_array(-np.log10(np.asarray(a))),
        free_molality=res.molality(metal),
        ph=res.ph,
        result=res,
        notes=res.notes,
    )


def _metal(name: str) -> str:
    sp = parse_species(name)
    if sp.charge <= 0:
        raise InputError("a metal ion (a cation) is needed", field="metal", value=name)
    return sp.name


def metal_buffer(
    metal: str,
    chelator: Mapping[str, Any],
    p_metal: Any,
    *,
    ph: Any,
    background: Mapping[str, Any] | None = None,
    T: Any = 298.15,
    model: Any = "davies",
    balance: str | None = None,
) -> MetalBuffer:
    """Total metal to add for a target free activity (e.g. pCa 8 in EDTA at pH 7).

    Parameters
    ----------
    metal : str
        The metal ion, e.g. ``"Ca^2+"``.
    chelator : Mapping[str, array_like]
        The chelator as dissolved, species → mol/kg (e.g. ``{"C10H14N2O8^2-": 0.01,
        "K+": 0.02}`` for 10 mmol/kg K2H2EDTA).
    p_metal : array_like
        Target −lg a(metal).
    ph : array_like
        pH at which the buffer is used (held fixed; in practice set with KOH or HCl).
    background : Mapping[str, array_like], optional
        Background electrolyte, e.g. ``{"K+": 0.1, "Cl-": 0.1}``.
    T : array_like
        Temperature, K.
    model : str or ActivityModel
    balance : str, optional
        Ion whose total is found from the charge balance (e.g. ``"K+"`` for the KOH used to
        set the pH); default none (the recipe's charge is reported, not closed).

    Returns
    -------
    MetalBuffer

    Examples
    --------
    >>> buf = metal_buffer("Ca^2+", {"C10H14N2O8^2-": 0.01, "K+": 0.02}, 8.0, ph=7.0,
    ...                    background={"K+": 0.1, "Cl-": 0.1})
    >>> round(buf.p_metal, 6), round(buf.metal_total * 1e3, 2)   # mmol/kg of Ca to add
    (8.0, 3.28)
    """
    key = _metal(metal)
    p = finite_array(p_metal, "p_metal")
    comp: dict[str, Any] = {}
    for part in (chelator, background or {}):
        for name, value in part.items():
            k = parse_species(name).name
            comp[k] = comp.get(k, 0.0) + np.asarray(value, dtype=float)
    if key in comp:
        raise InputError(
            "the metal total is what is computed; leave it out of the recipe", field="chelator", value=metal
        )
    sol = Solution(comp, T=T, neutrality="ignore")
    res = speciate(sol, model, ph=ph, balance=balance, activities={key: 10.0 ** (-p)})
    return _buffer(key, res)


def free_metal(
    metal: str,
    recipe: Any,
    *,
    ph: Any = None,
    model: Any = "davies",
    balance: Any = "H+ unless ph is given",
) -> MetalBuffer:
    """Free activity of a metal in a given recipe (the inverse of :func:`metal_buffer`).

    Parameters
    ----------
    metal : str
    recipe : Solution or Mapping
        Everything dissolved, metal included, mol/kg.
    ph : array_like, optional
        Fixed pH; without it the pH follows from the charge balance on H⁺.
    model, balance
        As for :func:`~activity.speciation.speciate`.

    Examples
    --------
    >>> buf = free_metal("Ca^2+", {"C10H14N2O8^2-": 0.01, "K+": 0.12, "Cl-": 0.1,
    ...                            "Ca^2+": 0.00328}, ph=7.0)
    >>> round(buf.p_metal, 2)
    8.0
    """
    key = _metal(metal)
    kw: dict[str, Any] = {}
    if balance != "H+ unless ph is given":
        kw["balance"] = balance
    res = speciate(recipe, model, ph=ph, **kw)
    if key not in res.species:
        raise InputError("the recipe contains none of this metal", field="metal", value=metal)
    return _buffer(key, res)
