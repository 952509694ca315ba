"""Batches from CSV tables (``solution --table``, ``invert --table``), streamed in chunks.

The table is read, computed and written one chunk of rows at a time
(:data:`activity.io.tables.CHUNK_ROWS`, read when a batch starts), so memory stays flat
however long the table is.
The text is the same as the whole table would give: the notes and warnings of the chunks
are merged (:class:`activity.io.streaming.NoteMerger`), aligned tables are measured
before they are written (:class:`activity.io.streaming.SpooledTable`), and sections that
come one model after another are spooled to temporary files and joined at the end. The
output is written whole at the end (:func:`activity.io.files.atomic_output`): a bad row
in a late chunk stops the batch with its error and leaves no output behind. A progress
bar of the rows done is drawn on standard error when it is a terminal (not with
``--quiet``).
"""

from __future__ import annotations

import argparse
import csv
import itertools
import re
import shutil
import sys
import tempfile
import textwrap
import warnings
from collections.abc import Callable, Iterator
from pathlib import Path
from typing import Any, TextIO

import numpy as np

from ..errors import ActivityError, catch_package_warnings
from ..io import tables as _tables
from ..io.streaming import NoteMerger, SpooledTable, json_document
from ..io.tables import TableInput, iter_table

__all__ = ["solution_table", "invert_table", "ChunkRun"]


def _line_for_people(line: str) -> str:
    """What :func:`activity.cli.common.emit` does to each line of a table-form report."""
    return textwrap.fill(line, 100, subsequent_indent="    ", break_long_words=False) if len(line) > 100 else line


class _Lines:
    """Writes lines joined by newlines, dropping trailing blank lines (``str.rstrip`` of the
    whole text, for lines that do not end in spaces)."""

    def __init__(self, out: TextIO, for_people: bool):
        self.out, self.for_people = out, for_people
        self.started, self.blank = False, 0

    def write(self, line: str) -> None:
        if not line.strip():
            self.blank += 1
            return
        if self.for_people:
            line = _line_for_people(line)
        if self.started:
            self.out.write("\n" * (self.blank + 1))
        elif self.blank:
            self.out.write("\n" * self.blank)
        self.out.write(line)
        self.started, self.blank = True, 0


def _reprs(values: Any) -> list[str]:
    return list(map(repr, np.asarray(values, dtype=float).tolist()))


class ChunkRun:
    """The chunks of one table with what they share: progress, cautions, warnings, rows.

    Iterating gives the chunks (:class:`activity.io.tables.TableInput`); :meth:`call` runs a
    computation on a chunk with the package's warnings recorded for merging; :meth:`finish`
    warns the merged warnings once, as the whole table would have.
    """

    def __init__(self, path: str, *, quiet: bool, chunk_rows: int | None = None):
        self.path, self.quiet = path, quiet
        self.chunk_rows = _tables.CHUNK_ROWS if chunk_rows is None else chunk_rows
        self.rows = 0
        self._warned = NoteMerger()
        self._categories: dict[str, type] = {}
        self._cautions: set[str] = set()

    def __iter__(self) -> Iterator[TableInput]:
        from ..workflows.progress import Progress

        with Progress(None, progress=not self.quiet, desc=Path(self.path).name, unit="row") as bar:
            for chunk in iter_table(self.path, self.chunk_rows):
                yield chunk
                self.rows += len(chunk.labels)
                bar.update(len(chunk.labels))

    def call(self, func: Callable[..., Any], *args: Any, **kw: Any) -> Any:
        out, caught = catch_package_warnings(func, *args, **kw)
        messages = [str(w.message) for w in caught]
        for w, text in zip(caught, messages):
            self._categories.setdefault(NoteMerger._split(text)[0], w.category)
        self._warned.add(messages)
        return out

    def solution(self, chunk: TableInput, args: argparse.Namespace) -> Any:
        """The chunk's solution under the command's conditions (temperature, pressure,
        density, balancing ion), with its cautions printed (the first time each is met)."""
        from ..io.tables import solution_from_table

        sol = self.call(
            solution_from_table,
            chunk,
            temperature=args.temperature,
            pressure=args.pressure,
            density=args.density,
            balance_with=args.balance_with,
        )
        self.cautions(sol)
        return sol

    def cautions(self, sol: Any) -> None:
        """Print the cautions of a chunk's solution that were not printed yet."""
        from ..cautions import cautions_for

        for line in cautions_for(sol):
            if line not in self._cautions:
                self._cautions.add(line)
                print(line, file=sys.stderr)

    def finish(self) -> None:
        for text in self._warned.result(self.rows):
            category = self._categories.get(NoteMerger._split(text)[0], UserWarning)
            warnings.warn(text, category, stacklevel=2)


def _finish_text(out: TextIO, ends_with_newline: bool, to_stdout: bool) -> None:
    """The newline(s) :func:`activity.cli.common.emit` adds: ``print`` adds one, a file gets
    one unless the text has it."""
    if to_stdout or not ends_with_newline:
        out.write("\n")


def _to_stdout(args: argparse.Namespace) -> bool:
    return getattr(args, "output", None) in (None, "-")


# --------------------------------------------------------------------------- solution --table
def solution_table(args: argparse.Namespace, form: str, *, chunk_rows: int | None = None) -> None:
    """``activity solution --table``: every row by one model or all, in the chosen form."""
    from ..coefficients.compare import compare_models
    from ..io.files import atomic_output
    from .render import _models_for

    run = ChunkRun(args.table, quiet=getattr(args, "quiet", False), chunk_rows=chunk_rows)
    wanted: list[Any] = list(_models_for(args.model))
    errors: dict[str, str] = {}
    order: list[str] = []
    notes: dict[str, NoteMerger] = {}
    sections: dict[str, Any] = {}
    species: tuple[str, ...] = ()

    def evaluate(chunk: TableInput) -> tuple[Any, list]:
        nonlocal wanted, species
        sol = run.solution(chunk, args)
        runs = run.call(compare_models, sol, wanted)
        if not order:  # the first chunk: which models answer
            order.extend(r.name for r in runs)
            for r in runs:
                if not r.ok:
                    errors[r.name] = r.error
            if not any(r.ok for r in runs):
                raise ActivityError(runs[0].error)
            wanted = [r.model for r in runs if r.ok]
            species = sol.species
        ok = []
        for r in runs:
            if not r.ok:
                raise ActivityError(
                    f"{r.name} answered for the first rows of the table but not for the rows from "
                    f"{chunk.labels[0]!r} on: {r.error}"
                )
            notes.setdefault(r.name, NoteMerger()).add(dict.fromkeys(r.value.notes))
            ok.append((r.name, r.value.gamma, np.broadcast_to(r.value.in_range, sol.shape)))
        return sol, ok

    def notes_by_model() -> list[tuple[str, Any]]:
        return [
            ("notes", {n: notes[n].result(run.rows) if n not in errors else [errors[n]] for n in order})
        ]

    with atomic_output(getattr(args, "output", None)) as out:
        if form == "json":
            json_document(out, {}, "rows", _solution_json_rows(run, evaluate), notes_by_model)
            _finish_text(out, False, _to_stdout(args))
        else:
            try:
                for chunk in run:
                    sol, ok = evaluate(chunk)
                    T = np.broadcast_to(sol.T, sol.shape)
                    I = np.atleast_1d(np.asarray(sol.ionic_strength))
                    for name, gamma, in_range in ok:
                        if form == "csv":
                            if not sections and len(ok) == 1:  # one model: no section to spool
                                _csv_header(out, species)
                                sections[name] = out
                            if name not in sections:
                                sections[name] = tempfile.TemporaryFile("w+", encoding="utf-8", newline="")
                            for text in _csv_chunk(name, chunk.labels, sol, T, I, gamma, in_range):
                                sections[name].write(text)
                        else:
                            _table_rows(sections, name, chunk.labels, sol, T, I, gamma, in_range)
                if form == "csv":
                    if out not in sections.values():
                        _csv_header(out, species)
                        for name in order:
                            if name in sections:
                                sections[name].seek(0)
                                shutil.copyfileobj(sections[name], out)
                    _finish_text(out, True, _to_stdout(args))
                else:
                    lines = _Lines(out, for_people=True)
                    for name in order:
                        if name not in sections:
                            continue
                        for line in sections[name].lines():
                            lines.write(line)
                        for note in notes[name].result(run.rows):
                            lines.write(f"note: {note}")
                        lines.write("")
                    for name in order:
                        if name in errors:
                            lines.write(f"{name}: cannot evaluate — {errors[name]}")
                    _finish_text(out, False, _to_stdout(args))
            finally:
                for s in sections.values():
                    if s is not out:
                        s.close()
    run.finish()


def _csv_header(out: TextIO, species: tuple[str, ...]) -> None:
    header = (
        ["label", "model", "temperature_K", "ionic_strength_mol_per_kg"]
        + [f"gamma {n}" for n in species]
        + [f"activity {n}" for n in species]
        + ["in_range"]
    )
    csv.writer(out, lineterminator="\n").writerow(header)


_CSV_SPECIAL = re.compile(r'[,"\n]')  # what csv.writer (QUOTE_MINIMAL, lineterminator '\n') quotes


def _csv_cells(texts: Any) -> list[str]:
    """Text cells as ``csv.writer`` writes them (quoted where they hold a comma, a quote or a
    line break)."""
    texts = list(texts)
    if not _CSV_SPECIAL.search("".join(texts)):
        return texts
    return ['"' + t.replace('"', '""') + '"' if _CSV_SPECIAL.search(t) else t for t in texts]


def _number_lines(columns: list[Any]) -> list[str]:
    """Rows of comma-joined ``repr`` s of float columns (each column one value per row)."""
    return list(map(",".join, zip(*(_reprs(c) for c in columns))))


#: Rows formatted at a time when a chunk is written: the text of 2¹⁴ rows (a few MB) is
#: built and written before the next, so the strings of a whole chunk never coexist.
_WRITE_ROWS = 1 << 14


def _csv_chunk(name: str, labels: tuple, sol: Any, T: Any, I: Any, gamma: Any, in_range: Any) -> Iterator[str]:
    """The CSV rows of one chunk by one model, as ``to_csv`` writes them (``repr`` of floats),
    in pieces of :data:`_WRITE_ROWS` rows."""
    m = sol.m.reshape(len(sol.species), -1)
    g = np.asarray(gamma).reshape(len(sol.species), -1)
    columns = np.vstack([np.broadcast_to(T, (len(labels),)), np.broadcast_to(I, (len(labels),)), g, g * m])
    flags = np.asarray(in_range).reshape(-1)
    model = _csv_cells([name])[0]
    for start in range(0, len(labels), _WRITE_ROWS):
        part = slice(start, start + _WRITE_ROWS)
        numbers = _number_lines(list(columns[:, part]))
        texts = ["True" if v else "False" for v in flags[part].tolist()]
        cells = zip(_csv_cells(labels[part]), itertools.repeat(model), numbers, texts)
        yield "\n".join(map(",".join, cells)) + "\n"


def _table_rows(
    sections: dict, name: str, labels: tuple, sol: Any, T: Any, I: Any, gamma: Any, in_range: Any
) -> None:
    from ..formatting import fmt

    t = sections.get(name)
    if t is None:
        t = sections[name] = SpooledTable(
            ["label", "t / °C", "I mol/kg"] + [f"a({n})" for n in sol.species],
            title=f"Activities by {name} (* = outside the model's validity)",
        )
    a = np.asarray(gamma).reshape(len(sol.species), -1) * sol.m.reshape(len(sol.species), -1)
    ok = np.asarray(in_range).tolist()
    acts = [[fmt(v, 5) + ("" if flag else "*") for v, flag in zip(row.tolist(), ok)] for row in a]
    t_c = [round(v - 273.15, 2) for v in np.asarray(T, dtype=float).tolist()]
    t.add([lab, tc, i, *cells] for lab, tc, i, *cells in zip(labels, t_c, np.asarray(I, float).tolist(), *acts))


def _solution_json_rows(run: ChunkRun, evaluate: Callable) -> Iterator[dict]:
    for chunk in run:
        sol, ok = evaluate(chunk)
        T = np.broadcast_to(sol.T, sol.shape).tolist()
        I = np.atleast_1d(np.asarray(sol.ionic_strength)).tolist()
        m = sol.m.reshape(len(sol.species), -1)
        m_rows = m.T.tolist()
        per_model = []
        for name, gamma, in_range in ok:
            g = np.asarray(gamma).reshape(len(sol.species), -1)
            per_model.append((name, g.T.tolist(), (g * m).T.tolist(), np.asarray(in_range).tolist()))
        names = sol.species
        for k, lab in enumerate(chunk.labels):
            yield {
                "label": lab,
                "temperature_K": T[k],
                "ionic_strength_mol_per_kg": I[k],
                "molality_mol_per_kg": dict(zip(names, m_rows[k])),
                "models": {
                    name: {
                        "gamma": dict(zip(names, g[k])),
                        "activity": dict(zip(names, a[k])),
                        "in_range": bool(flags[k]),
                    }
                    for name, g, a, flags in per_model
                },
            }


# --------------------------------------------------------------------------- invert --table
_INVERT_COLUMNS = (
    "temperature_K",
    "reading_V",
    "molality_mol_per_kg",
    "activity",
    "gamma",
    "ionic_strength_mol_per_kg",
)


def invert_table(
    args: argparse.Namespace,
    solve: Callable[[Any, Any], Any],
    *,
    chunk_rows: int | None = None,
) -> None:
    """``activity invert --table``: one inverted molality per reading, chunk by chunk.

    ``solve(reading_V, matrix)`` is the inverse for one chunk (an
    :class:`~activity.nernst.inverse.InverseResult`).
    """
    from ..errors import InputError
    from ..io.files import atomic_output
    from ..io.streaming import json_value
    from ..io.units import parse_potential

    run = ChunkRun(args.table, quiet=getattr(args, "quiet", False), chunk_rows=chunk_rows)
    notes = NoteMerger()
    head: dict[str, Any] = {}

    def evaluate(chunk: TableInput) -> tuple[tuple, dict[str, Any]]:
        if "reading" not in chunk.extra:
            raise InputError("needs a 'reading [mV]' (or [V]) column", field="table", value=args.table)
        unit, values = chunk.extra["reading"]
        reading = values * parse_potential(f"1 {unit}", field="column 'reading'")
        matrix = run.solution(chunk, args)
        res = run.call(solve, reading, matrix)
        if not head:
            head.update(species=res.species, model=res.model)
        notes.add(res.notes)
        n = len(chunk.labels)
        cols = dict(
            zip(
                _INVERT_COLUMNS,
                (matrix.T, reading, res.molality, res.activity, res.gamma, res.ionic_strength),
            )
        )
        return chunk.labels, {k: np.broadcast_to(np.asarray(v, dtype=float), (n,)) for k, v in cols.items()}

    form = "json" if args.json else "csv" if args.csv else "table"
    with atomic_output(getattr(args, "output", None)) as out:
        if form == "json":

            def rows() -> Iterator[dict]:
                for chunk in run:
                    labels, cols = evaluate(chunk)
                    lists = [v.tolist() for v in cols.values()]
                    for k, lab in enumerate(labels):
                        yield {"label": lab, **{key: col[k] for key, col in zip(cols, lists)}}

            # species and model are known after the first chunk: the rows are spooled, then placed
            with tempfile.TemporaryFile("w+", encoding="utf-8", newline="") as body:
                json_document(body, {}, "rows", rows(), lambda: [("notes", notes.result(run.rows))])
                body.seek(0)
                text = body.read(1)  # "{"
                out.write(text)
                for key, value in head.items():
                    out.write(f"\n  {_json_key(key)}: {json_value(value, 2)},")
                shutil.copyfileobj(body, out)
            _finish_text(out, False, _to_stdout(args))
        elif form == "csv":
            out.write(",".join(["label", *_INVERT_COLUMNS]))  # each row starts with its newline
            for chunk in run:
                labels, cols = evaluate(chunk)
                columns = np.vstack(list(cols.values()))
                for start in range(0, len(labels), _WRITE_ROWS):
                    part = slice(start, start + _WRITE_ROWS)
                    cells = zip(_csv_cells(labels[part]), _number_lines(list(columns[:, part])))
                    out.write("\n" + "\n".join(map(",".join, cells)))
            _finish_text(out, False, _to_stdout(args))  # the CSV's last newline was stripped; emit adds one
        else:
            t = SpooledTable(["label", "t / °C", "reading / mV", "m / (mol/kg)", "activity", "γ", "I / (mol/kg)"],
                             digits=6)
            try:
                for chunk in run:
                    labels, cols = evaluate(chunk)
                    lists = [v.tolist() for v in cols.values()]
                    t.add(
                        [lab, T - 273.15, E * 1000, m, a, g, i]
                        for lab, T, E, m, a, g, i in zip(labels, *lists)
                    )
                t.title = f"{head['species']} from {run.rows} readings by {head['model']}"
                lines = _Lines(out, for_people=True)
                for line in t.lines():
                    lines.write(line)
                for note in dict.fromkeys(notes.result(run.rows)):
                    lines.write(f"note: {note}")
            finally:
                t.close()
            _finish_text(out, False, _to_stdout(args))
    run.finish()


def _json_key(key: str) -> str:
    import json

    return json.dumps(key, ensure_ascii=False)
