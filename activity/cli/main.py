"""The entry point of the ``activity`` command: build the parser, run one command, and turn
every error a user can cause into one line on standard error with exit status 2."""

from __future__ import annotations

import argparse
import sys
from collections.abc import Callable, Sequence
from typing import Any

from .. import __version__
from ..errors import ActivityError, call_with_notes
from . import electrode, ise, ph, solution, speciate
from .common import CAUTION, Parser

__all__ = ["main", "build_parser", "CAUTION"]

#: Command groups, in the order they are listed by ``--help``; each has ``register(subparsers)``.
COMMAND_GROUPS = (solution, ise, ph, speciate, electrode)


_QUIET_HELP = "no progress bars on standard error (they are drawn only when it is a terminal)"


def build_parser() -> argparse.ArgumentParser:
    """The full argument parser (imports no numpy)."""
    parser = Parser(
        prog="activity",
        description="Activity-corrected Nernst engine: ionic strength, activity coefficients, "
        "activities, electrode and cell potentials.",
        epilog=CAUTION,
    )
    parser.add_argument("--version", action="version", version=f"activity {__version__}")
    parser.add_argument("-q", "--quiet", action="store_true", help=_QUIET_HELP)
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=Parser)
    for group in COMMAND_GROUPS:
        group.register(sub)
    for command in {id(c): c for c in sub.choices.values()}.values():  # also after the command
        command.add_argument("-q", "--quiet", action="store_true", default=argparse.SUPPRESS, help=_QUIET_HELP)
    return parser


def _run(func: Callable[[argparse.Namespace], int], args: argparse.Namespace) -> int:
    rc, notes = call_with_notes(func, args)
    for msg in notes:
        print(f"warning: {msg}", file=sys.stderr)
    return rc


class _FallbackStream:
    """A text stream that writes what its encoding cannot hold in ASCII spellings (γ → gamma),
    so that a console with a legacy code page gets a readable report instead of a traceback."""

    def __init__(self, stream: Any):
        self._stream = stream

    def write(self, text: str) -> int:
        from ..formatting import encodable

        return self._stream.write(encodable(text, getattr(self._stream, "encoding", None) or "utf-8"))

    def __getattr__(self, name: str) -> Any:
        return getattr(self._stream, name)


def _needs_fallback(stream: Any) -> bool:
    try:
        "γ°≤²⁺—".encode(getattr(stream, "encoding", None) or "utf-8")  # no encoding: a str buffer
        return False
    except (UnicodeEncodeError, LookupError):
        return True


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``activity`` console script; returns the exit status."""
    saved = sys.stdout, sys.stderr
    if _needs_fallback(sys.stdout):
        sys.stdout = _FallbackStream(sys.stdout)
    if _needs_fallback(sys.stderr):
        sys.stderr = _FallbackStream(sys.stderr)
    try:
        return _main(argv)
    finally:
        sys.stdout, sys.stderr = saved


def _main(argv: Sequence[str] | None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "func", None):
        parser.print_help()
        return 2
    try:
        return _run(args.func, args)
    except ActivityError as exc:
        print(f"activity: error: {exc}", file=sys.stderr)
        return 2
    except BrokenPipeError:  # output piped into a program that stopped reading (e.g. head)
        import os

        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 141
    except OSError as exc:
        print(f"activity: error: {exc.strerror or exc}: {exc.filename or ''}".rstrip(": "), file=sys.stderr)
        return 2
    except KeyboardInterrupt:  # pragma: no cover
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
