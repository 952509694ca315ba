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

Errors name the file, the row and the column. :func:`read_table` reads the whole file;
:func:`iter_table` reads it in chunks of rows, so that a command can compute and write a
table of any length with flat memory (its output is written whole at the end, so a bad row
in a late chunk still leaves no output behind).
"""

from __future__ import annotations

import csv
import itertools
import operator
import re
from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from .._checks import T_MAX, T_MIN, pressure_notes
from ..constants import ZERO_CELSIUS
from ..errors import InputError

__all__ = ["TableInput", "read_table", "iter_table", "concat_tables", "solution_from_table", "CHUNK_ROWS"]

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


def _check_dialect(p: Path, header: list[str], body: list[list[str]], first: int = 2) -> None:
    """Refuse decimal-comma rows (and rows with more cells than the header) with one clear
    message; the header's separators are checked by :func:`_columns`."""
    for k, row in enumerate(body, start=first):
        if any(re.fullmatch(r"[-+]?\d*,\d+", c.strip()) for c in row):
            raise InputError(f"a number with a decimal comma; {_DIALECT}", field=f"{p.name}: row {k}", value=row)
        if len(row) > len(header):
            raise InputError(
                f"has {len(row)} cells, the header {len(header)} (decimal commas?); {_DIALECT}",
                field=f"{p.name}: row {k}",
                value=",".join(row),
            )


#: Rows per chunk when a table is streamed (``iter_table``); 10⁵ rows of a few columns keep a
#: chunk's arrays and text near 10–50 MB.
CHUNK_ROWS = 100_000


def _open_error(p: Path, exc: Exception) -> InputError:
    if isinstance(exc, FileNotFoundError):
        return InputError("file not found", field="table", value=str(p))
    if isinstance(exc, UnicodeDecodeError):
        return InputError("not a UTF-8 text file; save it as UTF-8 (CSV UTF-8)", field="table", value=str(p))
    if isinstance(exc, IsADirectoryError):
        return InputError("a directory, not a CSV file", field="table", value=str(p))
    return InputError(f"not a readable CSV file ({exc})", field="table", value=str(p))


_READ_ERRORS = (FileNotFoundError, UnicodeDecodeError, IsADirectoryError, csv.Error)


def _columns(p: Path, header: list[str]) -> list[tuple[str, str | None]]:
    """(name, unit) of each header cell; unit None for the label column."""
    for sep, name in ((";", "semicolons"), ("\t", "tabs")):
        if len(header) == 1 and sep in header[0]:
            raise InputError(f"cells are separated by {name}; {_DIALECT}", field=f"{p.name}: header", value=header[0])
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
    return columns


def _parse_rows_slowly(p: Path, columns: list, body: list[list[str]], first: int) -> tuple[list, dict]:
    """Row by row, cell by cell: the reference parser, and the one that names a bad cell."""
    body = [r for r in body if any(c.strip() for c in r)]
    _check_dialect(p, [c[0] for c in columns], body, first)
    values: dict[str, list[float]] = {n: [] for n, u in columns if u is not None}
    labels: list[str] = []
    for k, row in enumerate(body, start=first):
        if len(row) != len(columns):
            raise InputError(f"has {len(row)} cells, the header {len(columns)}", field=f"{p.name}: row {k}", value=row)
        label = f"row {k}"
        for (name, unit), cell in zip(columns, row):
            if unit is None:
                label = cell.strip() or label
            else:
                values[name].append(_number(cell.strip(), f"{p.name}: row {k}, column '{name} [{unit}]'"))
        labels.append(label)
    return labels, {n: np.array(v, dtype=float) for n, v in values.items()}


def _parse_rows(
    p: Path, columns: list, rows: Callable[[], Iterable[list[str]]], first: int, cols: list | None = None
) -> tuple[list, dict]:
    """Labels and float columns of a chunk (data rows numbered from ``first``).

    ``rows()`` gives the chunk's rows (lists of cells; blank rows may be among them);
    ``cols``, when given, its cells column by column (the fast path of plain lines, every
    row with the header's cell count). Whole columns are converted at once; anything unusual
    (a wrong cell count, a blank row, a cell that is not a finite number, a comma inside a
    cell) goes to the row-by-row parser, which skips blank rows and raises the error naming
    the row and column.
    """
    if cols is None:
        body = [r for r in rows() if r]
        if set(map(len, body)) != {len(columns)}:
            return _parse_rows_slowly(p, columns, body, first)
        cols = list(zip(*body))
        rows = lambda: body  # noqa: E731
    values: dict[str, Any] = {}
    labels: list[str] | None = None
    for (name, unit), col in zip(columns, cols):
        if unit is None:
            if "," in "".join(col):  # a quoted cell with a comma: the decimal-comma check
                return _parse_rows_slowly(p, columns, [r for r in rows() if r], first)
            labels = [c.strip() or f"row {k}" for k, c in enumerate(col, start=first)]
            continue
        try:
            arr = np.fromiter(map(float, col), dtype=float, count=len(col))
        except ValueError:
            return _parse_rows_slowly(p, columns, [r for r in rows() if r], first)
        if not np.all(np.isfinite(arr)):
            return _parse_rows_slowly(p, columns, [r for r in rows() if r], first)
        values[name] = arr
    if labels is None:
        labels = [f"row {k}" for k in range(first, first + len(cols[0]))]
    return labels, values


class _Chunks:
    """The rows of an open CSV file, a chunk at a time.

    While the file has no quote character its lines are split at commas directly (one
    string operation per chunk, cells sliced column by column); from the first quote on,
    the csv module reads the rest (quoted cells may hold commas and line breaks).
    """

    def __init__(self, fh: Any, size: int):
        self.fh, self.size = fh, size
        self.reader: Any = None  # the csv reader, once a quote was seen

    def header(self) -> list[str] | None:
        """The first row with a non-blank cell."""
        for line in self.fh:
            if '"' in line:
                self.reader = csv.reader(itertools.chain([line], self.fh))
                return next((r for r in self.reader if any(c.strip() for c in r)), None)
            row = next(csv.reader([line]), [])
            if any(c.strip() for c in row):
                return row
        return None

    def next(self, nc: int) -> tuple[Callable[[], Iterable[list[str]]], list | None] | None:
        """``(rows, cols)`` of the next chunk (see :func:`_parse_rows`), None at the end."""
        if self.reader is None:
            lines = list(itertools.islice(self.fh, self.size))
            if not lines:
                return None
            text = "".join(lines)
            if '"' in text:  # from here on, the csv module
                self.reader = csv.reader(itertools.chain(lines, self.fh))
            else:
                if "\r" in text:
                    text = text.replace("\r\n", "\n")
                parts = text.split("\n")
                if parts[-1] == "":
                    parts.pop()

                def rows(parts: list[str] = parts) -> Iterable[list[str]]:
                    return csv.reader(parts)

                if nc > 1 and "\r" not in text and set(map(_COMMAS, parts)) == {nc - 1}:
                    cells = ",".join(parts).split(",")
                    return rows, [cells[j::nc] for j in range(nc)]
                return rows, None
        body = list(itertools.islice(self.reader, self.size))
        return (lambda: body, None) if body else None


_COMMAS = operator.methodcaller("count", ",")


def _table_input(p: Path, columns: list, labels: list, values: dict) -> TableInput:
    species, conditions, extra = {}, {}, {}
    for name, unit in columns:
        if unit is None:
            continue
        arr = values[name]
        key = name.strip().lower()
        if key in _CONDITIONS:
            conditions[key] = (unit, arr)
        elif key in ("reading", "potential", "emf"):
            extra[key] = (unit, arr)
        else:
            species[name.strip()] = (unit, arr)
    return TableInput(str(p), tuple(labels), species, conditions, extra)


def iter_table(path: str | Path, chunk_rows: int = CHUNK_ROWS) -> Iterator[TableInput]:
    """Read a CSV batch in chunks of at most ``chunk_rows`` data rows (see the module docstring).

    Yields one :class:`TableInput` per chunk, with the labels and values of its rows only
    (rows are numbered, and labelled by default, as in the whole file: the header is row 1,
    blank rows are skipped and not counted). The file is read as it is consumed, so memory
    follows the chunk, not the file; an error in a late chunk is raised when that chunk is
    reached, so a caller writes its output only at the end (see
    :func:`activity.io.files.atomic_output`).

    Examples
    --------
    >>> import tempfile, os
    >>> d = tempfile.mkdtemp(); p = os.path.join(d, "b.csv")
    >>> _ = open(p, "w").write("K+ [mmol/kg],Cl- [mmol/kg]\\n1,1\\n2,2\\n3,3\\n")
    >>> [chunk.labels for chunk in iter_table(p, chunk_rows=2)]
    [('row 2', 'row 3'), ('row 4',)]
    """
    if isinstance(chunk_rows, bool) or not isinstance(chunk_rows, (int, np.integer)) or chunk_rows < 1:
        raise InputError("a whole number of rows, at least 1", field="chunk_rows", value=chunk_rows)
    p = Path(path)
    try:
        with p.open(newline="", encoding="utf-8-sig") as fh:
            source = _Chunks(fh, int(chunk_rows))
            header = source.header()
            nc = len(header) if header is not None else 0
            chunk = source.next(nc) if header is not None else None
            while chunk is not None and not any(any(c.strip() for c in r) for r in chunk[0]()):
                chunk = source.next(nc)  # blank lines only, so far
            if chunk is None:
                raise InputError("needs a header row and at least one data row", field="table", value=str(p))
            columns = _columns(p, header)
            first = 2
            while chunk is not None:
                labels, values = _parse_rows(p, columns, chunk[0], first, chunk[1])
                chunk = None  # the text of the chunk is not kept while the caller computes
                if labels:
                    first += len(labels)
                    yield _table_input(p, columns, labels, values)
                chunk = source.next(nc)
    except _READ_ERRORS as exc:
        raise _open_error(p, exc) from None


def read_table(path: str | Path) -> TableInput:
    """Read a whole CSV batch (see the module docstring and :func:`iter_table`).

    Examples
    --------
    >>> import tempfile, os
    >>> d = tempfile.mkdtemp(); p = os.path.join(d, "b.csv")
    >>> _ = open(p, "w").write("K+ [mmol/kg],Cl- [mmol/kg],temperature [°C]\\n1,1,25\\n2,2,37\\n")
    >>> read_table(p).species["K+"][1]
    array([1., 2.])
    """
    chunks = list(iter_table(path, chunk_rows=1 << 62))
    return chunks[0] if len(chunks) == 1 else concat_tables(chunks)


def concat_tables(chunks: list[TableInput]) -> TableInput:
    """One :class:`TableInput` from the chunks of one file, in order."""
    first = chunks[0]

    def joined(attr: str) -> dict:
        return {
            k: (unit, np.concatenate([getattr(c, attr)[k][1] for c in chunks]))
            for k, (unit, _) in getattr(first, attr).items()
        }

    labels = tuple(lab for c in chunks for lab in c.labels)
    return TableInput(first.path, labels, joined("species"), joined("conditions"), joined("extra"))


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
        if unit == "K":  # (0 K itself is outside the range parse_temperature accepts)
            T = arr
        else:
            offset = parse_temperature(f"0 {unit}", field="column 'temperature'")
            scale = parse_temperature(f"1 {unit}", field="column 'temperature'")
            T = arr * (scale - offset) + offset
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
