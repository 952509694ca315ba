"""Solution recipes: a TOML file or ``name=amount`` pairs with explicit units → Solution.

A recipe file looks like::

    label = "calcium standard 3"
    temperature = "25 °C"          # optional, default 25 °C
    pressure = "1 atm"             # optional
    density = "1.004 g/cm3"        # optional; only for per-litre amounts
    balance_with = "Cl-"           # optional: adjust this ion for neutrality

    [composition]
    "Ca^2+" = "1 mmol/L"
    "Cl-" = "2 mmol/L"
    "K+" = "0.1 mol/L"
    "NO3-" = "0.1 mol/L"

All amounts must share one basis: per kg of water (mol/kg, mg/kg, …) or per litre of
solution (mol/L, mg/L, …); per-litre amounts are converted with
:meth:`activity.Solution.from_molarity`.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from pathlib import Path
from typing import Any

from ..constants import P_ATM, T_REF
from ..data import load_file
from ..errors import InputError
from ..solution import Solution
from ..species import check_solute, solute_key
from .units import parse_amount, parse_density, parse_pressure, parse_temperature

__all__ = ["RECIPE_KEYS", "load_recipe", "parse_pairs", "solution_from_recipe"]

RECIPE_KEYS = ("label", "temperature", "pressure", "density", "balance_with", "composition")


def load_recipe(path: str | Path) -> Mapping[str, Any]:
    """Read a recipe TOML file (InputError names the file when it is missing or malformed)."""
    p = Path(path)
    if p.is_dir():
        raise InputError("a directory, not a recipe file", field="recipe", value=str(path))
    try:
        recipe = load_file(path)
    except InputError as exc:
        raise InputError(str(exc).split(": ", 1)[-1], field="recipe", value=str(path)) from None
    except (UnicodeDecodeError, OSError) as exc:
        raise InputError(f"cannot read it ({exc.__class__.__name__})", field="recipe", value=str(path)) from None
    if "composition" not in recipe:
        raise InputError("missing the [composition] table", field="recipe", value=str(path))
    return recipe


def parse_pairs(pairs: Iterable[str], field: str = "composition") -> dict[str, str]:
    """Turn ``["Na+=0.1 mol/kg", "Cl-=0.1 mol/kg"]`` into a mapping.

    Examples
    --------
    >>> parse_pairs(["Na+ = 0.1 mol/kg", "Cl-=0.1 mol/kg"])
    {'Na+': '0.1 mol/kg', 'Cl-': '0.1 mol/kg'}
    """
    out: dict[str, str] = {}
    for pair in pairs:
        if not isinstance(pair, str):
            raise InputError("expected text SPECIES=AMOUNT UNIT", field=field, value=pair)
        name, sep, amount = pair.partition("=")
        if not sep or not name.strip() or not amount.strip():
            raise InputError("expected SPECIES=AMOUNT UNIT, e.g. 'Na+=0.1 mol/kg'", field=field, value=pair)
        if name.strip() in out:
            raise InputError(
                f"given twice ({out[name.strip()]!r} and {amount.strip()!r}); give each once",
                field=field,
                value=name.strip(),
            )
        out[name.strip()] = amount.strip()
    return out


def solution_from_recipe(recipe: Mapping[str, Any], **kw: Any) -> Solution:
    """Build a :class:`Solution` from a recipe mapping (see the module docstring).

    Examples
    --------
    >>> sol = solution_from_recipe({"temperature": "37 °C",
    ...                             "composition": {"Na+": "140 mmol/kg", "Cl-": "140 mmol/kg"}})
    >>> sol.T, sol.ionic_strength
    (310.15, 0.14)
    """
    unknown = [k for k in recipe if k not in RECIPE_KEYS]
    if unknown:
        raise InputError(f"unknown recipe key; allowed: {', '.join(RECIPE_KEYS)}", field="recipe", value=unknown[0])
    comp = recipe.get("composition")
    if not isinstance(comp, Mapping) or not comp:
        raise InputError(
            "composition must be a non-empty table of species = 'amount unit'", field="composition", value=comp
        )
    T = parse_temperature(recipe["temperature"]) if "temperature" in recipe else T_REF
    P = parse_pressure(recipe["pressure"]) if "pressure" in recipe else P_ATM
    amounts = {}
    given: dict[str, str] = {}
    bases = set()
    for name, text in comp.items():
        sp = check_solute(name)
        if sp.name in given:
            raise InputError(
                f"species given twice (as {given[sp.name]!r} and {name!r}); give each once",
                field="composition",
                value=name,
            )
        given[sp.name] = name
        amt = parse_amount(text, field=f"composition[{name!r}]")
        bases.add(amt.basis)
        amounts[solute_key(sp.name)] = amt.moles(sp.molar_mass)
    if len(bases) > 1:
        raise InputError(
            "amounts mix per-kg and per-litre units; use one basis for the whole recipe",
            field="composition",
            value=dict(comp),
        )
    if "balance_with" in recipe:
        kw.setdefault("balance_with", recipe["balance_with"])
    if bases == {"L"}:
        density = parse_density(recipe["density"]) if "density" in recipe else None
        return Solution.from_molarity(amounts, T=T, P=P, density=density, **kw)
    if "density" in recipe:
        raise InputError("density is only used with per-litre amounts", field="density", value=recipe["density"])
    return Solution(amounts, T=T, P=P, **kw)
