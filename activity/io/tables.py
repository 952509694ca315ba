"""Batches from CSV files: one composition per row, units in the column headers.

Headers name a quantity and its unit in square brackets::

    label,Ca2+ [mmol/L],K+ [mol/L],Cl- [mol/L],temperature [°C],reading [mV]
    std 1,0.01,0.1,0.10002,25.0,-314.2
    std 2,0.1,0.1,0.1002,25.0,-286.5

* a species column holds amounts (all species columns on one basis: per kg of water or
  per litre of solution);
* ``temperature`` and ``pressure`` columns (optional) hold the conditions of each row;
* ``label`` (optional) names the rows; any other bracketed column (e.g. ``reading``) is
  kept as a float array for the command that needs it.

Errors name the file, the row and the column. The whole file is read before anything is
computed, so a bad row stops the batch before any output is written.
"""

from __future__ import annotations

import csv
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from .._checks import T_MAX, T_MIN, pressure_notes
from ..constants import ZERO_CELSIUS
from ..errors import InputError

__all__ = ["TableInput", "read_table", "solution_from_table"]

_HEADER = re.compile(r"^\s*(?P<name>[^\[\]]+?)\s*\[(?P<unit>[^\[\]]+)\]\s*$")
_CONDITIONS = ("temperature", "pressure")


@dataclass(frozen=True)
class TableInput:
    """A parsed CSV batch."""

    path: str
    labels: tuple
    species: dict = field(default_factory=dict)  # name → (unit, values)
    conditions: dict = field(default_factory=dict)  # 'temperature'/'pressure' → (unit, values)
    extra: dict = field(default_factory=dict)  # other name → (unit, values)


def _number(text: str, where: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise InputError("not a number", field=where, value=text) from None
    if not np.isfinite(value):
        raise InputError("must be finite", field=where, value=text)
    return value


_DIALECT = "use commas between cells and decimal points in numbers (e.g. 0.5, not 0,5)"


def _check_dialect(p: Path, header: list[str], body: list[list[str]]) -> None:
    """Refuse semicolon-, tab-separated and decimal-comma files with one clear message."""
    for sep, name in ((";", "semicolons"), ("\t", "tabs")):
        if len(header) == 1 and sep in header[0]:
            raise InputError(f"cells are separated by {name}; {_DIALECT}", field=f"{p.name}: header", value=header[0])
    for k, row in enumerate(body, start=2):
        if any(re.fullmatch(r"[-+]?\d*,\d+", c.strip()) for c in row):
            raise InputError(f"a number with a decimal comma; {_DIALECT}", field=f"{p.name}: row {k}", value=row)
        if len(row) > len(header):
            raise InputError(
                f"has {len(row)} cells, the header {len(header)} (decimal commas?); {_DIALECT}",
                field=f"{p.name}: row {k}",
                value=",".join(row),
            )


def read_table(path: str | Path) -> TableInput:
    """Read a CSV batch (see the module docstring).

    Examples
    --------
    >>> import tempfile, os
    >>> d = tempfile.mkdtemp(); p = os.path.join(d, "b.csv")
    >>> _ = open(p, "w").write("K+ [mmol/kg],Cl- [mmol/kg],temperature [°C]\\n1,1,25\\n2,2,37\\n")
    >>> read_table(p).species["K+"][1]
    array([1., 2.])
    """
    p = Path(path)
    try:
        with p.open(newline="", encoding="utf-8-sig") as fh:
            rows = list(csv.reader(fh))
    except FileNotFoundError:
        raise InputError("file not found", field="table", value=str(p)) from None
    except UnicodeDecodeError:
        raise InputError("not a UTF-8 text file; save it as UTF-8 (CSV UTF-8)", field="table", value=str(p)) from None
    except IsADirectoryError:
        raise InputError("a directory, not a CSV file", field="table", value=str(p)) from None
    except csv.Error as exc:
        raise InputError(f"not a readable CSV file ({exc})", field="table", value=str(p)) from None
    rows = [r for r in rows if any(c.strip() for c in r)]
    if len(rows) < 2:
        raise InputError("needs a header row and at least one data row", field="table", value=str(p))
    header, body = rows[0], rows[1:]
    _check_dialect(p, header, body)
    columns: list[tuple[str, str | None]] = []
    for h in header:
        if h.strip().lower() == "label":
            columns.append(("label", None))
            continue
        m = _HEADER.match(h)
        if not m:
            raise InputError("column headers are 'name [unit]' (or 'label')", field=f"{p.name}: header", value=h)
        columns.append((m.group("name"), m.group("unit").strip()))
    names = [c[0] for c in columns]
    if len(set(names)) != len(names):
        raise InputError("a column name appears twice", field=f"{p.name}: header", value=header)
    values: dict[str, list[float]] = {n: [] for n, u in columns if u is not None}
    labels: list[str] = []
    for k, row in enumerate(body, start=2):
        if len(row) != len(columns):
            raise InputError(f"has {len(row)} cells, the header {len(columns)}", field=f"{p.name}: row {k}", value=row)
        label = f"row {k}"
        for (name, unit), cell in zip(columns, row):
            if unit is None:
                label = cell.strip() or label
            else:
                values[name].append(_number(cell.strip(), f"{p.name}: row {k}, column '{name} [{unit}]'"))
        labels.append(label)
    species, conditions, extra = {}, {}, {}
    for name, unit in columns:
        if unit is None:
            continue
        arr = np.array(values[name])
        key = name.strip().lower()
        if key in _CONDITIONS:
            conditions[key] = (unit, arr)
        elif key in ("reading", "potential", "emf"):
            extra[key] = (unit, arr)
        else:
            species[name.strip()] = (unit, arr)
    return TableInput(str(p), tuple(labels), species, conditions, extra)


def solution_from_table(
    table: TableInput,
    *,
    temperature: str | None = None,
    pressure: str | None = None,
    density: str | None = None,
    **kw: Any,
):
    """Build one batch :class:`~activity.Solution` from a :class:`TableInput`.

    ``temperature``, ``pressure`` and ``density`` (text with units, e.g. from the command
    line) apply to every row. A condition given both here and as a column is refused; one
    given here for a table without that column is applied to every row and said so with an
    :class:`~activity.errors.ActivityWarning`, so that it is never silently ignored.
    """
    import warnings

    from ..constants import P_ATM, T_REF
    from ..errors import ActivityWarning
    from ..solution import Solution
    from ..species import check_solute as parse_species
    from ..species import solute_key
    from .units import parse_amount, parse_density, parse_pressure, parse_temperature

    for key, given in (("temperature", temperature), ("pressure", pressure)):
        if given is not None and key in table.conditions:
            raise InputError(
                f"the table has a '{key}' column; give the {key} there or here, not both", field=key, value=given
            )
    if not table.species:
        raise InputError("no species columns", field="table", value=table.path)
    amounts, bases = {}, set()
    for name, (unit, arr) in table.species.items():
        sp = parse_species(name)
        if solute_key(sp.name) in amounts:
            raise InputError(f"a second column for {sp.name}", field=f"column '{name} [{unit}]'", value=name)
        amt = parse_amount(f"1 {unit}", field=f"column '{name} [{unit}]'")
        if np.any(arr < 0):
            row = int(np.flatnonzero(arr < 0)[0])
            raise InputError(
                "must not be negative", field=f"{table.labels[row]}, column '{name}'", value=float(arr[row])
            )
        bases.add(amt.basis)
        amounts[solute_key(sp.name)] = arr * amt.moles(sp.molar_mass)
    if len(bases) > 1:
        raise InputError("species columns mix per-kg and per-litre units", field="table", value=table.path)
    T, P = T_REF, P_ATM
    n = len(table.labels)
    if temperature is not None:
        T = parse_temperature(temperature)
        warnings.warn(f"temperature {temperature} applied to every row of {n}", ActivityWarning, stacklevel=2)
    if pressure is not None:
        P = parse_pressure(pressure)
        warnings.warn(f"pressure {pressure} applied to every row of {n}", ActivityWarning, stacklevel=2)
    if "temperature" in table.conditions:
        unit, arr = table.conditions["temperature"]
        offset = parse_temperature(f"0 {unit}", field="column 'temperature'")
        scale = parse_temperature(f"1 {unit}", field="column 'temperature'") if unit != "K" else 1.0
        T = arr * (scale - offset) + offset if unit != "K" else arr
        if np.any((T < T_MIN) | (T > T_MAX)):
            row = int(np.flatnonzero((T < T_MIN) | (T > T_MAX))[0])
            raise InputError(
                f"outside {T_MIN - ZERO_CELSIUS:g}–{T_MAX - ZERO_CELSIUS:g} °C, the range covered",
                field=f"{table.labels[row]}, column 'temperature [{unit}]'",
                value=float(arr[row]),
            )
    if "pressure" in table.conditions:
        unit, arr = table.conditions["pressure"]
        P = arr * parse_pressure(f"1 {unit}", field="column 'pressure'")
        if np.any(P <= 0):
            row = int(np.flatnonzero(P <= 0)[0])
            raise InputError(
                "must be positive", field=f"{table.labels[row]}, column 'pressure [{unit}]'", value=float(arr[row])
            )
        for note in pressure_notes(P, field="column 'pressure'"):
            warnings.warn(note, ActivityWarning, stacklevel=2)
    if bases == {"L"}:
        rho = parse_density(density) if density is not None else None
        return Solution.from_molarity(amounts, T=T, P=P, density=rho, **kw)
    if density is not None:
        raise InputError("density is only used with per-litre amounts", field="density", value=density)
    return Solution(amounts, T=T, P=P, **kw)
