"""One-page HTML records of a workflow: self-contained, printable, escaped.

A record is built section by section and rendered to a single HTML file with its style
inline and its figures as inline SVG, so it can be mailed, archived or printed to PDF
without anything beside it. Every text is HTML-escaped; a figure's SVG comes from
matplotlib (:func:`activity.workflows.plotting.figure_svg`).

Examples
--------
>>> rec = Record("Calibration record", subtitle="calcium electrode, bench 2")
>>> rec.heading("Fit")
>>> rec.table(["quantity", "value", "unit"], [["slope", 29.1, "mV/decade"]])
>>> rec.verdicts([("slope within 90–105 % of Nernstian", True, "98.4 %")])
>>> html = rec.to_html(generated="2026-01-01 00:00 UTC")
>>> html.startswith("<!DOCTYPE html>") and "29.1" in html and "pass" in html
True
"""

from __future__ import annotations

import html
import platform
from collections.abc import Iterable, Sequence
from datetime import datetime, timezone
from typing import Any

from ..formatting import fmt

__all__ = ["Record"]

_STYLE = """
@page { size: A4; margin: 14mm 12mm; }
* { box-sizing: border-box; }
body { font: 10.5pt/1.35 system-ui, -apple-system, "Segoe UI", "DejaVu Sans", sans-serif;
       color: #1a1a1a; max-width: 190mm; margin: 0 auto; padding: 8mm 4mm; }
h1 { font-size: 16pt; margin: 0 0 2pt; }
.subtitle { color: #555; margin: 0 0 8pt; }
h2 { font-size: 12pt; margin: 12pt 0 4pt; border-bottom: 1px solid #bbb; padding-bottom: 1pt;
     break-after: avoid; }
table { border-collapse: collapse; margin: 2pt 0 6pt; font-size: 9.5pt; break-inside: avoid; }
caption { text-align: left; color: #555; font-size: 9pt; padding-bottom: 2pt; }
th, td { padding: 1.5pt 6pt; border-bottom: 1px solid #e2e2e2; text-align: left;
         vertical-align: top; }
th { background: #f2f2f2; font-weight: 600; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
.verdict-pass { color: #0b6b2e; font-weight: 600; }
.verdict-fail { color: #a11d1d; font-weight: 600; }
.verdict-none { color: #6b5a0b; font-weight: 600; }
figure { margin: 4pt 0 8pt; break-inside: avoid; }
figure svg { width: 100%; height: auto; max-height: 120mm; }
figcaption { color: #555; font-size: 9pt; }
.notes li, .cautions li { margin-bottom: 2pt; }
.cautions { border: 1px solid #c9a227; background: #fffbea; padding: 4pt 8pt; margin-top: 10pt;
            break-inside: avoid; }
.cautions h2 { border: none; margin-top: 2pt; }
footer { margin-top: 10pt; color: #666; font-size: 8.5pt; border-top: 1px solid #bbb;
         padding-top: 3pt; }
@media print {
  body { padding: 0; font-size: 8.6pt; line-height: 1.25; }
  h1 { font-size: 13pt; } h2 { font-size: 10pt; margin: 7pt 0 2pt; }
  table { font-size: 7.8pt; margin: 1pt 0 4pt; } th, td { padding: 0.8pt 4pt; }
  figure svg { max-height: 62mm; }
}
"""


def _esc(value: Any) -> str:
    return html.escape(str(value), quote=True)


def _cell(value: Any, digits: int) -> str:
    text = fmt(value, digits)
    numeric = isinstance(value, (int, float)) and not isinstance(value, bool) or hasattr(value, "dtype")
    return f'<td class="num">{_esc(text)}</td>' if numeric else f"<td>{_esc(text)}</td>"


class Record:
    """An HTML record under construction.

    Parameters
    ----------
    title : str
        The record's title (first heading and the page title).
    subtitle : str, optional
        One line under the title (what, where, which instrument — the user's words).
    style : str, optional
        CSS added after the common style (a workflow's own layout, e.g. for one printed page).
    """

    def __init__(self, title: str, *, subtitle: str | None = None, style: str = "") -> None:
        self.title = title
        self.subtitle = subtitle
        self.style = style
        self._parts: list[str] = []
        self._open = 0

    def begin(self, css_class: str) -> None:
        """Open a block (a ``div`` of ``css_class``) around what follows, until :meth:`end`."""
        self._parts.append(f'<div class="{_esc(css_class)}">')
        self._open += 1

    def end(self) -> None:
        """Close the innermost block opened by :meth:`begin`."""
        if self._open:
            self._parts.append("</div>")
            self._open -= 1

    def heading(self, text: str) -> None:
        """Start a section."""
        self._parts.append(f"<h2>{_esc(text)}</h2>")

    def paragraph(self, text: str) -> None:
        """A paragraph of plain text."""
        self._parts.append(f"<p>{_esc(text)}</p>")

    def table(
        self, headers: Sequence[str], rows: Iterable[Sequence[Any]], *, caption: str | None = None, digits: int = 6
    ) -> None:
        """A table; numbers are right-aligned and shown with ``digits`` significant figures."""
        out = ["<table>"]
        if caption:
            out.append(f"<caption>{_esc(caption)}</caption>")
        out.append("<thead><tr>" + "".join(f"<th>{_esc(h)}</th>" for h in headers) + "</tr></thead>")
        out.append("<tbody>")
        for row in rows:
            out.append("<tr>" + "".join(_cell(c, digits) for c in row) + "</tr>")
        out.append("</tbody></table>")
        self._parts.append("".join(out))

    def verdicts(self, items: Iterable[Sequence[Any]]) -> None:
        """A verdict table from ``(criterion, passed, detail)`` triples; ``passed`` may be
        ``None`` for "not judged" (too little data)."""
        out = ["<table><thead><tr><th>criterion</th><th>verdict</th><th>detail</th></tr></thead><tbody>"]
        for criterion, passed, detail in items:
            word, cls = {True: ("pass", "pass"), False: ("FAIL", "fail")}.get(passed, ("not judged", "none"))
            out.append(
                f'<tr><td>{_esc(criterion)}</td><td class="verdict-{cls}">{word}</td><td>{_esc(detail)}</td></tr>'
            )
        out.append("</tbody></table>")
        self._parts.append("".join(out))

    def notes(self, lines: Iterable[str]) -> None:
        """A bulleted list of notes (nothing is added when there are none)."""
        items = [f"<li>{_esc(n)}</li>" for n in lines]
        if items:
            self._parts.append('<ul class="notes">' + "".join(items) + "</ul>")

    def svg(self, svg_text: str, *, caption: str | None = None) -> None:
        """An inline SVG figure (trusted text produced by matplotlib, not user input)."""
        start = svg_text.find("<svg")
        body = svg_text[start:] if start >= 0 else svg_text
        cap = f"<figcaption>{_esc(caption)}</figcaption>" if caption else ""
        self._parts.append(f"<figure>{body}{cap}</figure>")

    def figure(self, fig: Any, *, caption: str | None = None) -> None:
        """A matplotlib figure, embedded as SVG; the figure is closed afterwards."""
        from .plotting import figure_svg, pyplot

        self.svg(figure_svg(fig), caption=caption)
        pyplot().close(fig)

    def cautions(self, lines: Iterable[str]) -> None:
        """The cautions box (always shown when given)."""
        items = "".join(f"<li>{_esc(n)}</li>" for n in lines)
        self._parts.append(f'<div class="cautions"><h2>Cautions</h2><ul>{items}</ul></div>')

    def to_html(self, *, generated: str | None = None) -> str:
        """The complete HTML document. ``generated`` overrides the timestamp (for tests)."""
        import numpy
        import scipy

        from .. import __version__

        when = generated or datetime.now(timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
        sub = f'<p class="subtitle">{_esc(self.subtitle)}</p>' if self.subtitle else ""
        footer = (
            f"<footer>activity {_esc(__version__)} · Python {_esc(platform.python_version())}, "
            f"numpy {_esc(numpy.__version__)}, scipy {_esc(scipy.__version__)} · "
            f"generated {_esc(when)}</footer>"
        )
        return (
            '<!DOCTYPE html>\n<html lang="en"><head><meta charset="utf-8">'
            f'<meta name="viewport" content="width=device-width, initial-scale=1">'
            f"<title>{_esc(self.title)}</title><style>{_STYLE}{self.style}</style></head><body>"
            f"<h1>{_esc(self.title)}</h1>{sub}"
            + "\n".join(self._parts)
            + "</div>" * self._open
            + footer
            + "</body></html>\n"
        )
