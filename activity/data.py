"""Load the parameter sets shipped in ``models/`` (TOML), with their sources.

The directory is found the same way from a source checkout (``<repo>/models``) and from
an installed wheel (``activity/_models``, copied there at build time). Files are parsed
once and cached; callers receive read-only views.
"""

from __future__ import annotations

import functools
import sys
from collections.abc import Mapping
from pathlib import Path
from types import MappingProxyType
from typing import Any

from .errors import InputError

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - exercised on Python 3.10 only
    import tomli as tomllib

__all__ = ["models_dir", "load", "load_file", "freeze"]


def models_dir() -> Path:
    """Return the directory holding the shipped parameter files.

    Looks first inside the installed package (``activity/_models``), then beside the
    package in a source checkout (``models/``).
    """
    here = Path(__file__).resolve().parent
    for candidate in (here / "_models", here.parent / "models"):
        if candidate.is_dir() and (candidate / "elements.toml").is_file():
            return candidate
    raise FileNotFoundError(  # pragma: no cover - broken installation
        "the parameter directory 'models' was not found beside or inside the package"
    )


def freeze(obj: Any) -> Any:
    """Return a read-only deep view of parsed TOML (dicts → mappingproxy, lists → tuples)."""
    if isinstance(obj, dict):
        return MappingProxyType({k: freeze(v) for k, v in obj.items()})
    if isinstance(obj, list):
        return tuple(freeze(v) for v in obj)
    return obj


def load_file(path: str | Path) -> Mapping[str, Any]:
    """Parse a TOML parameter file given by path; malformed files raise InputError."""
    p = Path(path)
    try:
        with p.open("rb") as fh:
            return freeze(tomllib.load(fh))
    except FileNotFoundError:
        raise InputError("file not found", field="parameter file", value=str(p)) from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"not valid TOML ({exc})", field="parameter file", value=str(p)) from None


@functools.cache
def load(name: str) -> Mapping[str, Any]:
    """Load ``models/<name>.toml`` (cached).

    Examples
    --------
    >>> load("elements")["weights"]["Na"]
    22.99
    """
    return load_file(models_dir() / f"{name}.toml")
