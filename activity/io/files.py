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
from pathlib import Path

from ..errors import InputError

__all__ = ["write_text", "write_bytes"]


def _umask() -> int:
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def _fail(exc: OSError, path: str | Path) -> OSError:
    """The same error, naming the user's path instead of a temporary file."""
    return type(exc)(exc.errno, exc.strerror or str(exc), str(path))


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
            try:
                with open(target, "wb") as fh:
                    fh.write(data)
            except OSError as exc:
                raise _fail(exc, user_path) from None
            return
        kind = "a directory" if stat.S_ISDIR(st.st_mode) else "not a regular file, a character device or a FIFO"
        raise InputError(f"{kind}; give a file name", field="output", value=user_path)
    mode = stat.S_IMODE(st.st_mode) if st is not None else 0o666 & ~_umask()
    directory = target.parent
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", dir=directory)
    except FileNotFoundError:
        raise OSError(errno.ENOENT, "no such directory", user_path) from None
    except OSError as exc:
        raise _fail(exc, user_path) from None
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
        os.chmod(tmp, mode)
        os.replace(tmp, target)
    except BaseException as exc:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        if isinstance(exc, OSError):
            raise _fail(exc, user_path) from None
        raise


def write_text(path: str | Path, text: str) -> None:
    """Write ``text`` (UTF-8) to ``path``: whole or not at all (see :func:`write_bytes`)."""
    write_bytes(path, text.encode("utf-8"))
