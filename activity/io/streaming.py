"""Pieces for writing a long batch chunk by chunk, with the same text as written whole.

* :class:`NoteMerger` joins the notes of several chunks into the notes of the whole
  batch: a note that counts rows (``in 3 of 100000 row(s)``) gets the sums, a note that
  names a maximum (``up to 0.5123``) gets the largest, any other note is kept once.
* :class:`SpooledTable` is :func:`activity.formatting.table` for rows that arrive in
  chunks: the cells go to a temporary file while the column widths are measured, and the
  aligned lines are produced at the end.
* :func:`json_document` writes ``{"key": ..., "rows": [...], ...}`` with the rows coming
  from an iterator, byte for byte as :func:`activity.formatting.to_json` writes the whole.

Nothing here holds more than one chunk of rows in memory.
"""

from __future__ import annotations

import json
import pickle
import re
import tempfile
import textwrap
from collections.abc import Iterable, Iterator, Sequence
from typing import Any, TextIO

from ..formatting import _plain, fmt, is_text_cell, narrow, row_lines

__all__ = ["NoteMerger", "SpooledTable", "json_document", "json_value"]

_NUMBER = r"[-+]?(?:\d+\.?\d*(?:e[-+]?\d+)?|inf|nan)"
_UP_TO = re.compile(rf"\bup to ({_NUMBER})")
_IN_OF = re.compile(r"\bin (\d+) of (\d+) row\(s\)")
_EVERY = re.compile(r"\bevery row of (\d+)\b")
_SLOTS = re.compile(r"\x00(\d+)\x00")


class NoteMerger:
    """The notes of a batch from the notes of its chunks, in the order first seen.

    Examples
    --------
    >>> m = NoteMerger()
    >>> m.add(["davies: I above 0.2 (up to 0.31) in 2 of 10 row(s)", "plain note"])
    >>> m.add(["davies: I above 0.2 (up to 0.45) in 1 of 10 row(s)", "plain note"])
    >>> m.result(total_rows=30)
    ['davies: I above 0.2 (up to 0.45) in 3 of 30 row(s)', 'plain note']
    """

    def __init__(self) -> None:
        self._merged: dict[str, list[Any]] = {}  # template -> merged values of its slots

    @staticmethod
    def _split(note: str) -> tuple[str, list[tuple[str, Any]]]:
        slots: list[tuple[str, Any]] = []

        def up_to(m: re.Match) -> str:
            slots.append(("max", (float(m.group(1)), m.group(1))))
            return f"up to \x00{len(slots) - 1}\x00"

        def in_of(m: re.Match) -> str:
            slots.append(("sum", int(m.group(1))))
            slots.append(("total", None))
            return f"in \x00{len(slots) - 2}\x00 of \x00{len(slots) - 1}\x00 row(s)"

        def every(m: re.Match) -> str:
            slots.append(("total", None))
            return f"every row of \x00{len(slots) - 1}\x00"

        text = _UP_TO.sub(up_to, note.replace("\x00", ""))
        text = _IN_OF.sub(in_of, text)
        text = _EVERY.sub(every, text)
        return text, slots

    def add(self, notes: Iterable[str]) -> None:
        """Take the notes of one chunk."""
        for note in notes:
            template, slots = self._split(note)
            merged = self._merged.get(template)
            if merged is None:
                self._merged[template] = slots
                continue
            for k, (kind, value) in enumerate(slots):
                if kind == "sum":
                    merged[k] = ("sum", merged[k][1] + value)
                elif kind == "max" and value[0] > merged[k][1][0]:
                    merged[k] = ("max", value)

    def result(self, total_rows: int) -> list[str]:
        """The merged notes, ``total_rows`` being the rows of the whole batch."""
        out = []
        for template, slots in self._merged.items():

            def fill(m: re.Match, slots: list = slots) -> str:
                kind, value = slots[int(m.group(1))]
                return str(total_rows) if kind == "total" else str(value) if kind == "sum" else value[1]

            out.append(_SLOTS.sub(fill, template))
        return out


class SpooledTable:
    """:func:`activity.formatting.table` for rows given in chunks (same arguments, same text).

    Examples
    --------
    >>> from activity.formatting import table
    >>> t = SpooledTable(["species", "γ"], title="two chunks")
    >>> t.add([["Na+", 0.778]]); t.add([["Cl-", 0.7701]])
    >>> "\\n".join(t.lines()) == table(["species", "γ"], [["Na+", 0.778], ["Cl-", 0.7701]], title="two chunks")
    True
    """

    def __init__(
        self, headers: Sequence[str], *, digits: int = 5, title: str | None = None, width: int | None = 100
    ) -> None:
        self.headers = list(headers)
        self.digits = digits
        self.title = title
        self.width = width
        self.widths = [len(h) for h in self.headers]
        self.text_cols: set[int] = set()
        self.rows = 0
        self._spool = tempfile.TemporaryFile()

    def add(self, rows: Iterable[Sequence[Any]]) -> None:
        """Append rows (cells as :func:`activity.formatting.table` takes them)."""
        d = self.digits
        cells = [[fmt(c, d) for c in row] for row in rows]
        widths = self.widths
        for j, col in enumerate(zip(*cells)):
            widths[j] = max(widths[j], max(map(len, col)))
            if j not in self.text_cols and any(map(is_text_cell, col)):
                self.text_cols.add(j)
        self.rows += len(cells)
        pickle.dump(cells, self._spool, protocol=pickle.HIGHEST_PROTOCOL)

    def _layout(self) -> list[int]:
        return narrow(self.widths, self.text_cols, self.headers, self.width)

    def lines(self) -> Iterator[str]:
        """The lines of the table (title, header, rule, rows); the spool is closed after."""
        widths = self._layout()
        if self.title:
            yield from textwrap.wrap(self.title, self.width) if self.width else [self.title]
        yield "  ".join(h.ljust(w) for h, w in zip(self.headers, widths)).rstrip()
        yield "  ".join("-" * w for w in widths)
        self._spool.seek(0)
        try:
            while True:
                try:
                    cells = pickle.load(self._spool)
                except EOFError:
                    break
                for row in cells:
                    yield from row_lines(row, widths, self.text_cols)
        finally:
            self.close()

    def close(self) -> None:
        self._spool.close()


def json_value(value: Any, indent: int) -> str:
    """``value`` as :func:`activity.formatting.to_json` writes it at nesting depth ``indent``/2."""
    text = json.dumps(_plain(value), indent=2, ensure_ascii=False)
    return text.replace("\n", "\n" + " " * indent) if indent else text


def json_document(
    out: TextIO, head: dict[str, Any], rows_key: str, rows: Iterable[dict[str, Any]], tail: Iterable[tuple[str, Any]]
) -> None:
    """Write ``{**head, rows_key: [*rows], **tail}`` to ``out`` as ``to_json`` would, rows
    taken from an iterator (``tail`` is read after the rows, so it may depend on them).

    Examples
    --------
    >>> import io
    >>> from activity.formatting import to_json
    >>> buf = io.StringIO()
    >>> json_document(buf, {"model": "davies"}, "rows", iter([{"a": 1.0}, {"a": 2.0}]), lambda: [("notes", [])])
    >>> buf.getvalue() == to_json({"model": "davies", "rows": [{"a": 1.0}, {"a": 2.0}], "notes": []})
    True
    """
    out.write("{")
    for key, value in head.items():
        out.write(f"\n  {json.dumps(key, ensure_ascii=False)}: {json_value(value, 2)},")
    out.write(f"\n  {json.dumps(rows_key, ensure_ascii=False)}: [")
    sep = "\n    "
    for row in rows:
        out.write(sep + json_value(row, 4))
        sep = ",\n    "
    out.write("\n  ]" if sep != "\n    " else "]")
    for key, value in tail() if callable(tail) else tail:
        out.write(f",\n  {json.dumps(key, ensure_ascii=False)}: {json_value(value, 2)}")
    out.write("\n}")
