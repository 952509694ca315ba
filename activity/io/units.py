"""Quantities with explicit units, parsed at the edges (files, command line).

Inside the package everything is SI (K, Pa, V, mol/kg). These helpers turn text such as
``"25 °C"``, ``"0.1 mol/L"``, ``"2.5 mmol/kg"``, ``"40 mg/L"``, ``"1 atm"`` or
``"-12.3 mV"`` into numbers once, on the way in, and refuse anything without a unit.
"""

from __future__ import annotations

import math
import re
import warnings
from dataclasses import dataclass
from typing import Any

from .._checks import T_MAX, T_MIN, pressure_notes
from ..constants import P_ATM, ZERO_CELSIUS
from ..errors import ActivityWarning, InputError

__all__ = ["Amount", "parse_amount", "parse_temperature", "parse_pressure", "parse_potential", "parse_density"]

_NUMBER = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"
_QUANTITY = re.compile(rf"^\s*({_NUMBER})\s*(.*?)\s*$")

_PREFIX = {"": 1.0, "m": 1e-3, "u": 1e-6, "µ": 1e-6, "μ": 1e-6, "n": 1e-9}

# amount units: unit text → (factor to mol or kg, basis, kind)
_AMOUNT_RE = re.compile(r"^(?P<pre>[muµμn]?)(?P<num>mol|g)\s*/\s*(?P<den>kg|L|l|dm3|dm\^3)$")

_TEMPERATURE = {
    "K": (1.0, 0.0),
    "°C": (1.0, ZERO_CELSIUS),
    "degC": (1.0, ZERO_CELSIUS),
    "C": (1.0, ZERO_CELSIUS),
    "℃": (1.0, ZERO_CELSIUS),
}
_PRESSURE = {"Pa": 1.0, "kPa": 1e3, "MPa": 1e6, "bar": 1e5, "mbar": 1e2, "atm": P_ATM}
_POTENTIAL = {"V": 1.0, "mV": 1e-3, "µV": 1e-6, "uV": 1e-6}
_DENSITY = {"kg/L": 1.0, "g/cm3": 1.0, "g/cm^3": 1.0, "g/mL": 1.0, "kg/m3": 1e-3, "kg/m^3": 1e-3, "g/L": 1e-3}


def _split(text: Any, field: str) -> tuple[float, str]:
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        raise InputError("a unit is required (e.g. '0.1 mol/kg', '25 °C')", field=field, value=text)
    if not isinstance(text, str):
        raise InputError("expected text such as '0.1 mol/kg'", field=field, value=text)
    m = _QUANTITY.match(text)
    if not m:
        raise InputError("expected a number followed by a unit", field=field, value=text)
    unit = m.group(2).replace(" ", "")
    if not unit:
        raise InputError("a unit is required (e.g. '0.1 mol/kg', '25 °C')", field=field, value=text)
    if "," in unit or ";" in unit:
        raise InputError("one quantity per field, with a decimal point (not a comma)", field=field, value=text)
    value = float(m.group(1))
    if not math.isfinite(value):
        raise InputError("must be finite", field=field, value=text)
    return value, unit


def _lookup(table: dict, unit: str, field: str, text: str, kind: str):
    if unit not in table:
        raise InputError(f"unknown {kind} unit {unit!r}; use one of {', '.join(table)}", field=field, value=text)
    return table[unit]


@dataclass(frozen=True)
class Amount:
    """A parsed amount: ``value`` in mol (or kg when ``mass``) per kg water or per L."""

    value: float
    basis: str  # "kg" (per kg of water) or "L" (per litre of solution)
    mass: bool  # True when the numerator is a mass (needs a molar mass)

    def moles(self, molar_mass: float) -> float:
        """Amount in mol per basis, converting a mass with ``molar_mass`` (kg/mol)."""
        return self.value / molar_mass if self.mass else self.value


def parse_amount(text: Any, field: str = "amount") -> Amount:
    """Parse ``'0.1 mol/kg'``, ``'5 mmol/L'``, ``'40 mg/L'``, ``'2 M'``, ``'10 mM'``.

    Examples
    --------
    >>> parse_amount("2.5 mmol/L")
    Amount(value=0.0025, basis='L', mass=False)
    >>> parse_amount("0.1")
    Traceback (most recent call last):
    ...
    activity.errors.InputError: amount = '0.1': a unit is required (e.g. '0.1 mol/kg', '25 °C')
    """
    value, unit = _split(text, field)
    if value < 0:
        raise InputError("must not be negative", field=field, value=text)
    aliases = {
        "M": "mol/L",
        "mM": "mmol/L",
        "µM": "µmol/L",
        "uM": "umol/L",
        "m": "mol/kg",
    }  # "m": molal (common practice)
    unit = aliases.get(unit, unit)
    m = _AMOUNT_RE.match(unit)
    if not m:
        raise InputError(
            f"unknown amount unit {unit!r}; use mol/kg, mmol/kg, µmol/kg, mol/L, mmol/L, µmol/L, mg/L, g/kg, …",
            field=field,
            value=text,
        )
    factor = _PREFIX[m.group("pre")]
    mass = m.group("num") == "g"
    if mass:
        factor *= 1e-3  # g → kg
    basis = "kg" if m.group("den") == "kg" else "L"
    return Amount(value * factor, basis, mass)


def parse_temperature(text: Any, field: str = "temperature") -> float:
    """Parse ``'25 °C'``, ``'25 C'``, ``'298.15 K'`` into kelvin.

    Examples
    --------
    >>> parse_temperature("25 °C")
    298.15
    """
    value, unit = _split(text, field)
    scale, offset = _lookup(_TEMPERATURE, unit, field, text, "temperature")
    T = round(value * scale + offset, 10)
    if not T_MIN <= T <= T_MAX:
        side = "below" if T < T_MIN else "above"
        hint = f"; did you mean {value:g} °C?" if unit == "K" and T_MIN <= value + ZERO_CELSIUS <= T_MAX else ""
        raise InputError(
            f"{T:g} K is {side} the range covered, {T_MIN - ZERO_CELSIUS:g}–{T_MAX - ZERO_CELSIUS:g} °C "
            f"({T_MIN:g}–{T_MAX:g} K){hint}",
            field=field,
            value=text,
        )
    return T


def _scaled(text: Any, field: str, table: dict, kind: str, positive: bool = False) -> float:
    value, unit = _split(text, field)
    out = value * _lookup(table, unit, field, text, kind)
    if positive and out <= 0:
        raise InputError("must be positive", field=field, value=text)
    return out


def parse_pressure(text: Any, field: str = "pressure") -> float:
    """Parse ``'1 atm'``, ``'1 bar'``, ``'101.325 kPa'`` into pascal.

    Above 5 kbar (beyond the water correlations) it is an InputError; above 100 bar an
    :class:`~activity.errors.ActivityWarning` says that the density model ignores pressure.
    """
    P = _scaled(text, field, _PRESSURE, "pressure", positive=True)
    try:
        notes = pressure_notes(P, field)
    except InputError:
        raise InputError(
            "above 5000 bar, beyond the range of the water correlations", field=field, value=text
        ) from None
    for note in notes:
        warnings.warn(f"{field} = {text!r}: {note}", ActivityWarning, stacklevel=2)
    return P


def parse_potential(text: Any, field: str = "potential") -> float:
    """Parse ``'-12.3 mV'`` or ``'0.2 V'`` into volts."""
    return _scaled(text, field, _POTENTIAL, "potential")


def parse_density(text: Any, field: str = "density") -> float:
    """Parse ``'1.037 g/cm3'`` or ``'1037 kg/m3'`` into kg/L (0.85–3 kg/L; else an InputError)."""
    rho = _scaled(text, field, _DENSITY, "density", positive=True)
    from ..solution import DENSITY_RANGE

    lo, hi = DENSITY_RANGE
    if not lo <= rho <= hi:
        raise InputError(
            f"{rho:g} kg/L is not a plausible density of an aqueous solution ({lo:g}–{hi:g} g/cm³)",
            field=field,
            value=text,
        )
    return rho
