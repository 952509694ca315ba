"""Writing output files: whole or not at all, and only what the user named.

* A **regular file** (or a new name) is written atomically: a temporary file in the
  target's directory is renamed over the target, so a reader never sees half a file and
  an interrupted run leaves the old file in place. An existing file keeps its permission
  bits; a new file gets the usual ``0o666`` less the umask.
* A **symbolic link** is written through: its final target is written (atomically, by the
  rules above) and the link itself stays in place.
* A **character device or FIFO** (``/dev/null``, ``/dev/stdout``, a named pipe) is written
  by streaming into it, as a shell redirection would; nothing is renamed over it.
* A **directory, block device or socket** is refused.

Errors name the path the user gave, never the temporary file.
"""

from __future__ import annotations

import errno
import os
import stat
import tempfile
from collections.abc import Iterator
from contextlib import contextmanager, suppress
from pathlib import Path
from typing import TextIO

from ..errors import InputError

__all__ = ["write_text", "write_bytes", "atomic_output"]


def _umask() -> int:
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def _fail(exc: OSError, path: str | Path) -> OSError:
    """The same error, naming the user's path instead of a temporary file."""
    return type(exc)(exc.errno, exc.strerror or str(exc), str(path))


def _target(path: str | Path) -> tuple[str, Path, int | None]:
    """('regular', target, mode) or ('stream', target, None) for the path the user named."""
    user_path = str(path)
    if user_path == "":
        raise InputError("an empty file name", field="output", value=user_path)
    target = Path(os.path.realpath(path))  # through symbolic links: the link stays, its target is written
    try:
        st = os.stat(target)
    except FileNotFoundError:
        st = None
    except OSError as exc:
        raise _fail(exc, user_path) from None
    if st is not None and not stat.S_ISREG(st.st_mode):
        if stat.S_ISCHR(st.st_mode) or stat.S_ISFIFO(st.st_mode):
            return "stream", target, None
        kind = "a directory" if stat.S_ISDIR(st.st_mode) else "not a regular file, a character device or a FIFO"
        raise InputError(f"{kind}; give a file name", field="output", value=user_path)
    return "regular", target, stat.S_IMODE(st.st_mode) if st is not None else 0o666 & ~_umask()


def _temporary_beside(target: Path, user_path: str) -> tuple[int, str]:
    try:
        return tempfile.mkstemp(prefix=f".{target.name}.", dir=target.parent)
    except FileNotFoundError:
        raise OSError(errno.ENOENT, "no such directory", user_path) from None
    except OSError as exc:
        raise _fail(exc, user_path) from None


def write_bytes(path: str | Path, data: bytes) -> None:
    """Write ``data`` to ``path``: atomically for a regular file (see the module docstring).

    Raises
    ------
    InputError
        ``path`` is a directory, a block device or a socket.
    OSError
        The file could not be written; the error names ``path``.

    Examples
    --------
    >>> import os, tempfile
    >>> d = tempfile.mkdtemp(); p = os.path.join(d, "out.txt")
    >>> write_bytes(p, b"one\\n"); open(p).read()
    'one\\n'
    """
    user_path = str(path)
    kind, target, mode = _target(path)
    if kind == "stream":
        try:
            with open(target, "wb") as fh:
                fh.write(data)
        except OSError as exc:
            raise _fail(exc, user_path) from None
        return
    fd, tmp = _temporary_beside(target, user_path)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
        os.chmod(tmp, mode)
        os.replace(tmp, target)
    except BaseException as exc:
        with suppress(FileNotFoundError):
            os.unlink(tmp)
        if isinstance(exc, OSError):
            raise _fail(exc, user_path) from None
        raise


@contextmanager
def atomic_output(path: str | Path | None) -> Iterator[TextIO]:
    """A text stream (UTF-8) whose whole content reaches ``path`` when the block ends
    normally, and nothing at all when it raises.

    ``path`` None or ``'-'`` is standard output. For a regular file (or a new name) the
    text goes to a temporary file beside it, renamed over it at the end (the rules of
    :func:`write_bytes`); for standard output, a character device or a FIFO it is spooled
    to an anonymous temporary file and copied at the end. Either way memory stays flat
    however much is written, and an error half-way leaves no partial output.

    Examples
    --------
    >>> import os, tempfile
    >>> d = tempfile.mkdtemp(); p = os.path.join(d, "out.csv")
    >>> with atomic_output(p) as out:
    ...     _ = out.write("a,b\\n")
    >>> open(p).read()
    'a,b\\n'
    >>> try:
    ...     with atomic_output(os.path.join(d, "never.csv")) as out:
    ...         _ = out.write("half")
    ...         raise ValueError("a bad row")
    ... except ValueError:
    ...     pass
    >>> sorted(os.listdir(d))
    ['out.csv']
    """
    import sys

    if path is None or str(path) == "-":
        with tempfile.TemporaryFile("w+", encoding="utf-8", newline="") as spool:
            yield spool
            spool.seek(0)
            while block := spool.read(1 << 20):
                sys.stdout.write(block)
            sys.stdout.flush()
        return
    user_path = str(path)
    kind, target, mode = _target(path)
    if kind == "stream":
        with tempfile.TemporaryFile("w+", encoding="utf-8", newline="") as spool:
            yield spool
            spool.seek(0)
            try:
                with open(target, "w", encoding="utf-8", newline="") as fh:
                    while block := spool.read(1 << 20):
                        fh.write(block)
            except OSError as exc:
                raise _fail(exc, user_path) from None
        return
    fd, tmp = _temporary_beside(target, user_path)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
            yield fh
        os.chmod(tmp, mode)
        os.replace(tmp, target)
    except BaseException as exc:
        with suppress(FileNotFoundError):
            os.unlink(tmp)
        if isinstance(exc, OSError) and exc.filename in (None, tmp):
            raise _fail(exc, user_path) from None
        raise


def write_text(path: str | Path, text: str) -> None:
    """Write ``text`` (UTF-8) to ``path``: whole or not at all (see :func:`write_bytes`)."""
    write_bytes(path, text.encode("utf-8"))
