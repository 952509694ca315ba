"""Plots for the workflows: matplotlib imported lazily, a non-interactive backend, files
written whole.

Nothing here is chemistry: a workflow draws its figure with :func:`pyplot` and hands it to
:func:`save_figure` (PNG, SVG or PDF by the file's suffix) or :func:`figure_svg` (inline SVG
for an HTML record).
"""

from __future__ import annotations

import io
from pathlib import Path
from typing import Any

from ..errors import InputError

__all__ = ["pyplot", "save_figure", "figure_svg", "figure_png", "FORMATS"]

#: File suffixes :func:`save_figure` writes, and matplotlib's format name for each.
FORMATS = {".png": "png", ".svg": "svg", ".pdf": "pdf"}


def pyplot() -> Any:
    """Return ``matplotlib.pyplot`` with the non-interactive Agg backend selected.

    matplotlib is imported only when a plot is asked for, so the library and the command
    line start without it; a missing matplotlib is an :class:`InputError` that says how to
    install it.
    """
    try:
        import matplotlib
    except ImportError:  # pragma: no cover - matplotlib is a declared dependency
        raise InputError("plots need matplotlib: pip install matplotlib", field="plot", value="matplotlib") from None
    matplotlib.use("Agg", force=True)
    import matplotlib.pyplot as plt

    return plt


def _render(fig: Any, fmt: str) -> bytes:
    buf = io.BytesIO()
    # A fixed creation date keeps SVG/PDF output reproducible run to run.
    metadata = {"Date": None} if fmt in ("svg", "pdf") else None
    fig.savefig(buf, format=fmt, bbox_inches="tight", dpi=150, metadata=metadata)
    return buf.getvalue()


def figure_svg(fig: Any) -> str:
    """The figure as SVG text, for embedding in an HTML record."""
    return _render(fig, "svg").decode("utf-8")


def figure_png(fig: Any) -> bytes:
    """The figure as PNG bytes."""
    return _render(fig, "png")


def save_figure(fig: Any, path: str | Path) -> Path:
    """Write ``fig`` to ``path`` (format from the suffix: .png, .svg or .pdf), whole or not
    at all, then close the figure. Returns the path."""
    from ..io.files import write_bytes

    target = Path(path)
    fmt = FORMATS.get(target.suffix.lower())
    if fmt is None:
        raise InputError(f"plot files end in {', '.join(FORMATS)}", field="plot", value=str(path))
    data = _render(fig, fmt)
    pyplot().close(fig)
    write_bytes(target, data)
    return target
