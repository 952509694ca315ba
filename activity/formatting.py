"""Formatting of results for people and programs: aligned tables, JSON, CSV.

Only formatting lives here — no chemistry and no I/O; files are written by
:mod:`activity.io.files`.
"""

from __future__ import annotations

import io
import math
import re
from collections.abc import Iterable, Sequence
from typing import Any

__all__ = ["fmt", "table", "to_json", "to_csv", "ascii_fallback", "encodable"]


def fmt(value: Any, digits: int = 5) -> str:
    """Format a number compactly with ``digits`` significant figures; text passes through.

    Examples
    --------
    >>> fmt(0.000123456), fmt(12.0), fmt(None), fmt(True)
    ('0.00012346', '12', '—', 'yes')
    """
    if value is None:
        return "—"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, (int, float)) or hasattr(value, "dtype"):
        v = float(value)
        if math.isnan(v):
            return "nan"
        if v != 0 and (abs(v) < 1e-4 or abs(v) >= 1e7):
            return f"{v:.{digits - 1}e}"
        return f"{v:.{digits}g}"
    return str(value)


_BLANKS = ("", "—", "-", "nan")


def _numeric(c: str) -> bool:
    """A cell right-aligned as a number: the whole cell reads as one (text after a number does not)."""
    if not (c[:1].isdigit() or (c[:1] in "-+." and c[1:2].isdigit())):
        return False
    try:
        float(c)
    except ValueError:
        return False
    return True


def table(
    headers: Sequence[str],
    rows: Iterable[Sequence[Any]],
    *,
    digits: int = 5,
    title: str | None = None,
    width: int | None = 100,
) -> str:
    """An aligned plain-text table (numbers right-aligned, text left-aligned).

    A table wider than ``width`` characters has its widest text columns wrapped onto
    several lines (numbers are never wrapped); ``width=None`` never wraps.

    Examples
    --------
    >>> print(table(["species", "γ"], [["Na+", 0.778], ["Cl-", 0.7701]]))
    species  γ
    -------  ------
    Na+       0.778
    Cl-      0.7701
    >>> print(table(["model", "where it holds"], [["davies", "all ions, up to I = 0.2 mol/kg"]], width=30))
    model   where it holds
    ------  ----------------------
    davies  all ions, up to I =
            0.2 mol/kg
    """
    import textwrap

    cells = [[fmt(c, digits) for c in row] for row in rows]
    widths = [len(h) for h in headers]
    for row in cells:
        for j, c in enumerate(row):
            widths[j] = max(widths[j], len(c))
    text_cols = {j for j in range(len(widths)) if any(j < len(r) and is_text_cell(r[j]) for r in cells)}
    widths = narrow(widths, text_cols, headers, width)
    lines = []
    if title:
        lines.extend(textwrap.wrap(title, width) if width else [title])
    lines.append("  ".join(h.ljust(w) for h, w in zip(headers, widths)).rstrip())
    lines.append("  ".join("-" * w for w in widths))
    for row in cells:
        lines.extend(row_lines(row, widths, text_cols))
    return "\n".join(lines)


def is_text_cell(c: str) -> bool:
    """Whether a cell makes its column a text column (cells saying "no value" do not)."""
    return c not in _BLANKS and not _numeric(c)


def narrow(widths: Sequence[int], text_cols: set[int], headers: Sequence[str], width: int | None) -> list[int]:
    """Column widths of a table kept within ``width`` characters by narrowing text columns.

    The widest text column loses a character at a time (ties: the rightmost, usually prose),
    so the narrowing is shared; no column goes below 12 characters or its header.
    """
    widths = list(widths)
    if width is None:
        return widths
    excess = sum(widths) + 2 * (len(widths) - 1) - width
    while excess > 0:
        shrinkable = [j for j in text_cols if widths[j] > max(12, len(headers[j]))]
        if not shrinkable:
            break
        j = max(shrinkable, key=lambda k: (widths[k], k))
        widths[j] -= 1
        excess -= 1
    return widths


def row_lines(row: Sequence[str], widths: Sequence[int], text_cols: set[int]) -> list[str]:
    """The line(s) of one table row: text cells wrapped to their column, numbers right-aligned."""
    import textwrap

    right = [j not in text_cols for j in range(len(row))]
    if all(len(c) <= w for c, w in zip(row, widths)):  # the common case: no wrapping
        return ["  ".join(c.rjust(w) if r else c.ljust(w) for c, w, r in zip(row, widths, right)).rstrip()]
    parts = [textwrap.wrap(c, w, break_long_words=False) or [""] if len(c) > w else [c] for c, w in zip(row, widths)]
    out = []
    for k in range(max(len(p) for p in parts)):
        cells = [p[k] if k < len(p) else "" for p in parts]
        out.append("  ".join(c.rjust(w) if r else c.ljust(w) for c, w, r in zip(cells, widths, right)).rstrip())
    return out


def _plain(obj: Any) -> Any:
    if isinstance(obj, dict):
        return {str(k): _plain(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_plain(v) for v in obj]
    if hasattr(obj, "tolist"):
        return _plain(obj.tolist())
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    return obj


def to_json(obj: Any) -> str:
    """JSON text of nested dicts/lists/numpy values (NaN and infinities become null)."""
    import json  # here, not at the top: a one-composition command that prints a table never loads it

    return json.dumps(_plain(obj), indent=2, ensure_ascii=False)


def to_csv(headers: Sequence[str], rows: Iterable[Sequence[Any]]) -> str:
    """CSV text with full-precision numbers (``repr`` of floats)."""
    import csv

    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(headers)
    for row in rows:
        w.writerow(
            [repr(float(c)) if isinstance(c, float) or hasattr(c, "dtype") else ("" if c is None else c) for c in row]
        )
    return buf.getvalue()


_ASCII = {
    "γ": "gamma", "φ": "phi", "±": "+/-", "°C": "degC", "℃": "degC", "°": "deg", "≤": "<=", "≥": ">=",
    "≈": "~", "≲": "<~", "—": "--", "–": "-", "−": "-", "×": "x", "·": ".", "µ": "u", "μ": "u", "‖": "||",
    "…": "...", "Δ": "Delta", "σ": "sigma", "√": "sqrt", "→": "->", "’": "'", "‘": "'", "“": '"', "”": '"',
    "Å": "A", "ü": "ue", "ö": "oe", "ä": "ae", "é": "e",
}  # fmt: skip
_SUPERSCRIPT = re.compile(r"([⁰¹²³⁴⁵⁶⁷⁸⁹]*)([⁺⁻])")
_DIGITS = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹₀₁₂₃₄₅₆₇₈₉", "01234567890123456789")


def ascii_fallback(text: str) -> str:
    """Plain-ASCII spelling of report text: ``'γ(Ca²⁺) at 25 °C'`` → ``'gamma(Ca^2+) at 25 degC'``.

    Examples
    --------
    >>> ascii_fallback("γ(Ca²⁺) ≤ 0.5 at 25 °C; H₂PO₄⁻")
    'gamma(Ca^2+) <= 0.5 at 25 degC; H2PO4-'
    """
    text = _SUPERSCRIPT.sub(
        lambda m: ("^" + m.group(1).translate(_DIGITS) if m.group(1) else "") + ("+" if m.group(2) == "⁺" else "-"),
        text,
    )
    for k, v in _ASCII.items():
        text = text.replace(k, v)
    return text.translate(_DIGITS)


def encodable(text: str, encoding: str | None) -> str:
    """``text`` if ``encoding`` can encode it, else its ASCII fallback with any rest replaced by '?'."""
    enc = encoding or "ascii"
    try:
        text.encode(enc)
        return text
    except (UnicodeEncodeError, LookupError):
        plain = ascii_fallback(text)
        try:
            return plain.encode(enc, errors="replace").decode(enc)
        except LookupError:
            return plain.encode("ascii", errors="replace").decode("ascii")
