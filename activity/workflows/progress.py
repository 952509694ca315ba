"""Progress of long library work on standard error, only when asked and only on a terminal.

The library stays silent by default. A caller that wants a bar (the command line, with its
own ``--quiet``) passes ``progress=True``; the bar is drawn with tqdm on standard error, and
only when that stream is a terminal — redirected to a file or a pipe, nothing is written,
so logs and captured output stay clean. tqdm is imported only when a bar is drawn.
"""

from __future__ import annotations

import sys
from collections.abc import Callable
from typing import Any, TextIO

__all__ = ["wants_bar", "counting", "Progress"]


def wants_bar(progress: bool, stream: TextIO | None = None) -> bool:
    """True when ``progress`` is asked for and ``stream`` (default stderr) is a terminal.

    Examples
    --------
    >>> import io
    >>> wants_bar(True, io.StringIO()), wants_bar(False)
    (False, False)
    """
    if not progress:
        return False
    stream = sys.stderr if stream is None else stream
    try:
        return bool(stream.isatty())
    except (AttributeError, ValueError):  # closed or file-like without isatty
        return False


class Progress:
    """A bar of ``total`` units on ``stream`` (stderr), or nothing when not wanted.

    Use as a context manager; :meth:`update` advances it. When the bar is not wanted every
    method is a no-op and tqdm is never imported.

    Examples
    --------
    >>> with Progress(1000, progress=False) as bar:   # silent: no terminal asked for
    ...     bar.update(500)
    >>> bar.done
    500
    """

    def __init__(
        self,
        total: int | None,
        *,
        progress: bool = False,
        desc: str = "",
        unit: str = "row",
        stream: TextIO | None = None,
    ):
        self.done = 0
        self._bar = None
        if wants_bar(progress, stream):
            from tqdm import tqdm

            self._bar = tqdm(
                total=total,
                desc=desc,
                unit=unit,
                unit_scale=True,
                file=sys.stderr if stream is None else stream,
                leave=False,
                dynamic_ncols=True,
            )

    def update(self, n: int) -> None:
        self.done += int(n)
        if self._bar is not None:
            self._bar.update(int(n))

    def close(self) -> None:
        if self._bar is not None:
            self._bar.close()
            self._bar = None

    def __enter__(self) -> Progress:
        return self

    def __exit__(self, *exc: Any) -> None:
        self.close()


def counting(f: Callable[..., Any], bar: Progress) -> Callable[..., Any]:
    """Wrap a batched ``f(**columns)`` so that each call advances ``bar`` by its row count.

    Examples
    --------
    >>> import numpy as np
    >>> bar = Progress(10, progress=False)
    >>> g = counting(lambda x, y: x + y, bar)
    >>> _ = g(x=np.zeros(4), y=1.0); _ = g(x=np.zeros(6), y=1.0)
    >>> bar.done
    10
    """

    def wrapped(*args: Any, **kwargs: Any) -> Any:
        out = f(*args, **kwargs)
        rows = max((getattr(v, "size", 1) for v in list(args) + list(kwargs.values())), default=1)
        bar.update(rows)
        return out

    return wrapped
