"""The ``activity`` command line: parse arguments, run the library, render the results.

* :mod:`.main` — the entry point, the parser and the one-line error handling;
* :mod:`.common` — arguments and helpers shared by commands (solutions, output, cautions);
* one module per group of commands (:mod:`.solution`, :mod:`.electrode`, …), each with a
  ``register(subparsers)`` that declares its arguments and a handler per command;
* :mod:`.render` — turns results into tables, JSON and CSV (no argument parsing).

Nothing here is chemistry, and nothing in the library imports this package. Building the
parser imports no numpy, so ``activity --help`` starts fast.
"""

from __future__ import annotations

from .main import CAUTION, build_parser, main

__all__ = ["main", "build_parser", "CAUTION"]
