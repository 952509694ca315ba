"""Writing output files: whole or not at all.

A temporary file is written in the target's directory and renamed over the target, so a
reader never sees half a file and an interrupted run leaves the old file in place.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

__all__ = ["write_text", "write_bytes"]


def write_bytes(path: str | Path, data: bytes) -> None:
    """Write ``data`` to ``path`` atomically: the file appears whole or not at all."""
    target = Path(path)
    directory = target.parent if str(target.parent) else Path(".")
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", dir=directory)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
        os.replace(tmp, target)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise


def write_text(path: str | Path, text: str) -> None:
    """Write ``text`` (UTF-8) to ``path`` atomically: the file appears whole or not at all."""
    write_bytes(path, text.encode("utf-8"))
