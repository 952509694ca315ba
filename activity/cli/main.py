"""The entry point of the ``activity`` command: build the parser, run one command, and turn
every error a user can cause into one line on standard error with exit status 2."""

from __future__ import annotations

import argparse
import importlib
import sys
from collections.abc import Callable, Sequence
from typing import Any

from .. import __version__
from ..errors import ActivityError, call_with_notes
from .common import CAUTION, Parser

__all__ = ["main", "build_parser", "CAUTION"]

#: Modules of the command groups (in ``activity.cli``), in the order ``--help`` lists them;
#: each has ``register(subparsers)``.
GROUPS = ("solution", "ise", "ph", "speciate", "electrode")
#: The group that declares each command (a test checks this against the groups' ``register``):
#: a run of one command imports and registers only its group, which keeps start-up short.
COMMANDS = {
    "solution": "solution",
    "models": "solution",
    "demo": "solution",
    "calibrate": "ise",
    "ise-examples": "ise",
    "ph-calibrate": "ph",
    "ph-buffers": "ph",
    "ph-harned": "ph",
    "speciate": "speciate",
    "potential": "electrode",
    "reference": "electrode",
    "cell": "electrode",
    "invert": "electrode",
}


def __getattr__(name: str) -> Any:
    if name == "COMMAND_GROUPS":  # the modules themselves, imported when asked for
        return tuple(importlib.import_module(f".{g}", __package__) for g in GROUPS)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


_QUIET_HELP = "no progress bars on standard error (they are drawn only when it is a terminal)"


def build_parser(groups: Sequence[str] = GROUPS) -> argparse.ArgumentParser:
    """The argument parser of the command groups ``groups`` (default all; imports no numpy)."""
    parser = Parser(
        prog="activity",
        description="Activity-corrected Nernst engine: ionic strength, activity coefficients, "
        "activities, electrode and cell potentials.",
        epilog=CAUTION,
    )
    parser.add_argument("--version", action="version", version=f"activity {__version__}")
    parser.add_argument("-q", "--quiet", action="store_true", help=_QUIET_HELP)
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=Parser)
    for group in groups:
        importlib.import_module(f".{group}", __package__).register(sub)
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


def _command(argv: Sequence[str]) -> str | None:
    """The command named on the command line (the first word that is not an option), or
    None when help is asked for before it or no known command is named."""
    for word in argv:
        if word in ("-h", "--help"):
            return None
        if not word.startswith("-"):
            return word if word in COMMANDS else None
    return None


def _batch_work(args: argparse.Namespace) -> bool:
    """Whether the command runs over many rows or trials: a table, or Monte Carlo (asked for as
    ``--method``, ``--uncertainty`` or ``--monte-carlo``, by command). Such a run keeps freed
    memory for its next block (see :mod:`activity._allocator`); a one-composition command does
    not need it and does not pay for the import."""
    return bool(
        getattr(args, "table", None)
        or "monte-carlo" in (getattr(args, "method", None), getattr(args, "uncertainty", None))
        or getattr(args, "monte_carlo", False)
    )


def _main(argv: Sequence[str] | None) -> int:
    argv = sys.argv[1:] if argv is None else list(argv)
    command = _command(argv)
    parser = build_parser(GROUPS if command is None else (COMMANDS[command],))
    args = parser.parse_args(argv)
    if not getattr(args, "func", None):
        parser.print_help()
        return 2
    if _batch_work(args):
        from .._allocator import keep_freed_memory

        keep_freed_memory()
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
