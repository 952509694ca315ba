"""CSV input of the pH workflow: buffer readings, samples and Harned-cell EMFs.

Headers name a quantity with its unit in brackets, as everywhere in this package; text
columns have no unit. Everything is converted to SI once, here.

Buffer readings (one row per reading)::

    buffer,reading [mV],temperature [°C],time [min],role
    phthalate-0.05,176.1,25.0,0,calibration

``buffer`` and ``reading`` are required, ``temperature`` too unless the command gives one;
``time`` (s, min or h) and ``role`` (calibration/check) are optional; ``label`` is kept.

Samples::

    label,reading [mV],temperature [°C],Na+ [mol/kg],Cl- [mol/kg]

species columns (optional) give each sample's composition for the junction estimate.

Harned-cell EMFs::

    chloride [mol/kg],emf [mV],temperature [°C],pressure [kPa]

Errors name the file, the row and the column; the whole file is read before anything is
computed.
"""

from __future__ import annotations

import csv
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from activity.errors import InputError

__all__ = [
    "EXAMPLES",
    "BufferReadings",
    "HarnedReadings",
    "SampleReadings",
    "read_buffer_readings",
    "read_harned",
    "read_samples",
    "write_examples",
]

_HEADER = re.compile(r"^\s*(?P<name>[^\[\]]+?)\s*\[(?P<unit>[^\[\]]+)\]\s*$")
_TIME = {"s": 1.0, "min": 60.0, "h": 3600.0}
_TEXT = ("buffer", "role", "label")


@dataclass(frozen=True)
class _Table:
    path: str
    text: dict  # name → list of str
    numbers: dict  # name → (unit, ndarray)
    rows: int


def _read(path: str | Path, what: str) -> _Table:
    p = Path(path)
    try:
        with p.open(newline="", encoding="utf-8-sig") as fh:
            rows = [r for r in csv.reader(fh) if any(c.strip() for c in r)]
    except FileNotFoundError:
        raise InputError("file not found", field=what, value=str(p)) from None
    except UnicodeDecodeError:
        raise InputError("not a UTF-8 text file", field=what, value=str(p)) from None
    if len(rows) < 2:
        raise InputError("needs a header row and at least one data row", field=what, value=str(p))
    header, body = rows[0], rows[1:]
    cols: list[tuple[str, str | None]] = []
    for h in header:
        key = h.strip()
        if key.lower() in _TEXT:
            cols.append((key.lower(), None))
            continue
        m = _HEADER.match(h)
        if not m:
            raise InputError(
                "column headers are 'name [unit]' or one of buffer, role, label",
                field=f"{p.name}: header",
                value=h,
            )
        cols.append((m.group("name").strip(), m.group("unit").strip()))
    names = [c[0].lower() for c in cols]
    if len(set(names)) != len(names):
        raise InputError("a column appears twice", field=f"{p.name}: header", value=header)
    text: dict[str, list] = {c: [] for c, u in cols if u is None}
    nums: dict[str, list] = {c: [] for c, u in cols if u is not None}
    for k, row in enumerate(body, start=2):
        if len(row) != len(cols):
            raise InputError(f"has {len(row)} cells, the header {len(cols)}", field=f"{p.name}: row {k}", value=row)
        for (name, unit), cell in zip(cols, row):
            if unit is None:
                text[name].append(cell.strip())
                continue
            try:
                v = float(cell)
            except ValueError:
                raise InputError(
                    "not a number", field=f"{p.name}: row {k}, column '{name} [{unit}]'", value=cell
                ) from None
            if not np.isfinite(v):
                raise InputError("must be finite", field=f"{p.name}: row {k}, column '{name} [{unit}]'", value=cell)
            nums[name].append(v)
    numbers = {name: (unit, np.array(nums[name])) for name, unit in cols if unit is not None}
    return _Table(str(p), text, numbers, len(body))


def _find(t: _Table, *names: str) -> tuple[str, str, np.ndarray] | None:
    for key, (unit, arr) in t.numbers.items():
        if key.lower() in names:
            return key, unit, arr
    return None


def _potential(t: _Table, names: tuple, required: bool = True) -> np.ndarray | None:
    from activity.io.units import parse_potential

    hit = _find(t, *names)
    if hit is None:
        if required:
            raise InputError(f"needs a column '{names[0]} [mV]'", field=Path(t.path).name, value=list(t.numbers))
        return None
    key, unit, arr = hit
    return arr * parse_potential(f"1 {unit}", field=f"column '{key} [{unit}]'")


def _temperatures(t: _Table, default: float | None) -> np.ndarray:
    from activity.io.units import parse_temperature

    hit = _find(t, "temperature")
    if hit is None:
        if default is None:
            raise InputError(
                "needs a column 'temperature [°C]' (or give the temperature)",
                field=Path(t.path).name,
                value=list(t.numbers),
            )
        return np.full(t.rows, float(default))
    key, unit, arr = hit
    off = parse_temperature(f"0 {unit}", field=f"column '{key} [{unit}]'")
    scale = parse_temperature(f"1 {unit}", field=f"column '{key} [{unit}]'") - off
    return arr * scale + off


@dataclass(frozen=True)
class BufferReadings:
    """Buffer readings from a CSV file (SI: V, K, s)."""

    path: str
    buffers: tuple
    emf: np.ndarray
    T: np.ndarray
    time: np.ndarray | None
    roles: tuple
    labels: tuple


def read_buffer_readings(path: str | Path, *, temperature: float | None = None) -> BufferReadings:
    """Read a CSV of buffer readings (see the module docstring)."""
    t = _read(path, "readings")
    if "buffer" not in t.text:
        raise InputError("needs a 'buffer' column", field=Path(t.path).name, value=list(t.text))
    emf = _potential(t, ("reading", "emf", "potential"))
    T = _temperatures(t, temperature)
    hit = _find(t, "time")
    time = None
    if hit is not None:
        key, unit, arr = hit
        if unit not in _TIME:
            raise InputError(f"time unit one of {', '.join(_TIME)}", field=f"column '{key} [{unit}]'", value=unit)
        time = arr * _TIME[unit]
    for k, b in enumerate(t.text["buffer"], start=2):
        if not b:
            raise InputError("empty buffer name", field=f"{Path(t.path).name}: row {k}, column 'buffer'", value=b)
    roles = tuple(r or "calibration" for r in t.text.get("role", ["calibration"] * t.rows))
    labels = tuple(t.text.get("label", [f"row {k}" for k in range(2, t.rows + 2)]))
    return BufferReadings(t.path, tuple(t.text["buffer"]), emf, T, time, roles, labels)


@dataclass(frozen=True)
class SampleReadings:
    """Sample readings (V, K) and, when species columns are present, one composition per row."""

    path: str
    labels: tuple
    emf: np.ndarray
    T: np.ndarray
    compositions: tuple = field(default_factory=tuple)


def read_samples(path: str | Path, *, temperature: float | None = None) -> SampleReadings:
    """Read a CSV of sample readings (see the module docstring)."""
    from activity.io.units import parse_amount
    from activity.solution import Solution
    from activity.species import parse_species

    t = _read(path, "samples")
    emf = _potential(t, ("reading", "emf", "potential"))
    T = _temperatures(t, temperature)
    labels = tuple(t.text.get("label", [f"sample {k}" for k in range(1, t.rows + 1)]))
    species = {k: v for k, v in t.numbers.items() if k.lower() not in ("reading", "emf", "potential", "temperature")}
    comps: list[Any] = [None] * t.rows
    if species:
        amounts, bases = {}, set()
        for name, (unit, arr) in species.items():
            sp = parse_species(name)
            amt = parse_amount(f"1 {unit}", field=f"column '{name} [{unit}]'")
            if np.any(arr < 0):
                raise InputError("must not be negative", field=f"column '{name} [{unit}]'", value=float(arr.min()))
            bases.add(amt.basis)
            amounts[sp.name] = arr * amt.moles(sp.molar_mass)
        if len(bases) > 1:
            raise InputError("species columns mix per-kg and per-litre units", field="samples", value=t.path)
        make = Solution.from_molarity if bases == {"L"} else Solution
        comps = [make({s: float(a[i]) for s, a in amounts.items() if a[i] > 0}, T=float(T[i])) for i in range(t.rows)]
    return SampleReadings(t.path, labels, emf, T, tuple(comps))


@dataclass(frozen=True)
class HarnedReadings:
    """Harned-cell EMFs (V), chloride molalities (mol/kg), temperatures (K), pressures (Pa)."""

    path: str
    m_cl: np.ndarray
    emf: np.ndarray
    T: np.ndarray
    pressure: np.ndarray | None


def read_harned(path: str | Path) -> HarnedReadings:
    """Read a CSV of Harned-cell EMFs (see the module docstring)."""
    from activity.io.units import parse_amount, parse_pressure

    t = _read(path, "harned")
    hit = _find(t, "chloride", "m(cl-)", "kcl")
    if hit is None:
        raise InputError("needs a column 'chloride [mol/kg]'", field=Path(t.path).name, value=list(t.numbers))
    key, unit, arr = hit
    amt = parse_amount(f"1 {unit}", field=f"column '{key} [{unit}]'")
    if amt.basis != "kg" or amt.mass:
        raise InputError(
            "chloride must be a molality (mol/kg or mmol/kg)", field=f"column '{key} [{unit}]'", value=unit
        )
    m = arr * amt.value
    emf = _potential(t, ("emf", "reading", "potential"))
    T = _temperatures(t, None)
    hit = _find(t, "pressure")
    p = None
    if hit is not None:
        key, unit, parr = hit
        p = parr * parse_pressure(f"1 {unit}", field=f"column '{key} [{unit}]'")
    return HarnedReadings(t.path, m, emf, T, p)


# ---------------------------------------------------------------- example inputs (invented data)
# A teaching-lab bench meter, invented: slope 98.6 % of Nernstian, E(pH 7) = −3.2 mV, readings
# with a few tenths of a millivolt of scatter, rounded to 0.1 mV; a check buffer; a repeated
# phosphate reading 40 min later; two samples.
EXAMPLES = {
    "buffer_readings.csv": (
        "buffer,reading [mV],temperature [°C],time [min],role\n"
        "phthalate-0.05,171.8,25.0,0,calibration\n"
        "phosphate-1:1,4.7,25.0,3,calibration\n"
        "borax-0.01,-130.1,25.0,6,calibration\n"
        "phosphate-1:1,4.6,25.0,9,calibration\n"
        "phosphate-1:3.5,-27.3,25.0,12,check\n"
        "phosphate-1:1,4.9,25.1,40,check\n"
    ),
    "samples.csv": (
        "label,reading [mV],temperature [°C],Na+ [mol/kg],K+ [mol/kg],Cl- [mol/kg]\n"
        "rinse water A,26.0,25.0,0.001,0.0,0.001\n"
        "brine B,-49.9,25.0,1.0,0.02,1.02\n"
    ),
    "harned_emfs.csv": (
        "chloride [mol/kg],emf [mV],temperature [°C],pressure [kPa]\n"
        "0.005,600.200,25.0,101.325\n"
        "0.010,582.435,25.0,101.325\n"
        "0.015,572.062,25.0,101.325\n"
        "0.020,564.715,25.0,101.325\n"
    ),
    "my_buffers.toml": (
        "# User buffers with certificate values (invented lot for the example)\n"
        "[buffers.bench-7]\n"
        'label = "phosphate working buffer pH 7, lot 0417 (invented)"\n'
        "temperature = [20.0, 25.0, 30.0]\n"
        "pH = [7.02, 7.00, 6.99]\n"
        "expanded_uncertainty = 0.02\n"
        "coverage_factor = 2\n"
        'source = "certificate of lot 0417 (invented example)"\n'
        'composition = { "Na+" = 0.05, "K+" = 0.025, "HPO4^2-" = 0.025, "H2PO4-" = 0.025 }\n'
    ),
}


def write_examples(folder: str | Path) -> list[Path]:
    """Write the example input files into ``folder`` (created if needed); returns the paths."""
    from activity.io.files import write_text

    d = Path(folder)
    d.mkdir(parents=True, exist_ok=True)
    out = []
    for name, text in EXAMPLES.items():
        write_text(d / name, text)
        out.append(d / name)
    return out
