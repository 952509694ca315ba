"""Pitzer parameter files: layout, validation, temperature functions, overlays.

Layout (TOML, our own)::

    [salt."Na+ Cl-"]                        # one cation and one anion
    beta0 = { at25 = 0.0765, slope = 7.159e-4 }
    beta1 = 0.2664                          # a bare number: the same at every T
    cphi = { terms = [0.00127, 0.0, 0.0, -1.054e-4] }
    alpha1 = 2.0                            # optional; else the charge-type rule
    max_molality = 6.0                      # mol/kg of the binary solution
    celsius = [0, 50]                       # temperature range of the fit
    source = "Author Year, Table N"
    note = "from memory"                    # optional

    [mixing."Na+ K+"]        theta = ...    # two ions of the same sign
    [mixing."Na+ K+ Cl-"]    psi = ...      # two of one sign, one of the other
    [neutral."CO2 Na+"]      lambda = ...   # a neutral species with a species
    [neutral."CO2 Na+ Cl-"]  zeta = ...     # a neutral, a cation and an anion

A coefficient is a number, ``{at25, slope, curvature}`` (value and first and second
temperature derivatives at 298.15 K, per K and per K²), or ``{terms = [a1, a2, a3, a4]}``
for P(T) = a1 + a2 (1/T − 1/Tr) + a3 ln(T/Tr) + a4 (T − Tr) with Tr = 298.15 K (the
common form of Pitzer 1991, ch. 3). Entries of a later file replace entries of an earlier
one with the same interaction key, whatever the order of the ions in the key.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from ...constants import T_REF, ZERO_CELSIUS
from ...errors import InputError
from ...species import parse_species

__all__ = ["Entry", "ParameterSet", "load_parameters", "basis"]

_COEFFS = {
    ("salt", 2): ("beta0", "beta1", "beta2", "cphi"),
    ("mixing", 2): ("theta",),
    ("mixing", 3): ("psi",),
    ("neutral", 2): ("lambda",),
    ("neutral", 3): ("zeta",),
}
_KIND = {
    ("salt", 2): "salt",
    ("mixing", 2): "theta",
    ("mixing", 3): "psi",
    ("neutral", 2): "lambda",
    ("neutral", 3): "zeta",
}
_COMMON = {"source", "note", "celsius", "max_molality"}
_SALT_ONLY = {"alpha1", "alpha2", "max_ionic_strength"}


def basis(T: ArrayLike) -> np.ndarray:
    """Temperature basis, shape ``(5,) + shape(T)``: 1, 1/T − 1/Tr, ln(T/Tr), T − Tr, (T − Tr)²."""
    T = np.asarray(T, dtype=float)
    d = T - T_REF
    return np.stack([np.ones_like(T), 1.0 / T - 1.0 / T_REF, np.log(T / T_REF), d, d * d])


@dataclass(frozen=True)
class Entry:
    """One interaction: kind, canonical ion key, coefficients and where they hold.

    ``coeffs`` maps a coefficient name to its 5 basis weights (see :func:`basis`).
    """

    kind: str
    key: tuple
    coeffs: Mapping[str, tuple]
    alpha: tuple
    T_range: tuple
    max_molality: float
    max_ionic_strength: float | None
    source: str
    note: str
    origin: str

    def value(self, name: str, T: ArrayLike = T_REF) -> Any:
        """Coefficient ``name`` at temperature ``T`` (K); 0 if the entry lacks it."""
        c = self.coeffs.get(name)
        if c is None:
            return 0.0 * np.asarray(T, dtype=float)
        return np.tensordot(np.asarray(c), basis(T), axes=(0, 0))


class ParameterSet(Mapping):
    """A read-only mapping of interaction key → :class:`Entry`, built from one or more files.

    Keys are ``("salt", cation, anion)``, ``("theta", i, j)``, ``("psi", i, j, k)``,
    ``("lambda", n, i)`` and ``("zeta", n, cation, anion)`` with canonical species names
    (same-sign pairs and neutral pairs sorted).
    """

    def __init__(self, entries: Mapping[tuple, Entry]):
        self._entries = dict(entries)

    def __getitem__(self, key: tuple) -> Entry:
        return self._entries[key]

    def __iter__(self):
        return iter(self._entries)

    def __len__(self) -> int:
        return len(self._entries)

    def overlay(self, other: ParameterSet) -> ParameterSet:
        """A new set: these entries, replaced or extended by those of ``other``."""
        return ParameterSet({**self._entries, **other._entries})


def _fail(origin: str, where: str, message: str, value: Any) -> InputError:
    return InputError(message, field=f"{origin}: {where}", value=value)


def _number(x: ArrayLike, origin: str, where: str) -> float:
    if isinstance(x, bool) or not isinstance(x, (int, float)) or not np.isfinite(x):
        raise _fail(origin, where, "must be a finite number", x)
    return float(x)


def _tfunc(spec: Any, origin: str, where: str) -> tuple:
    if not isinstance(spec, Mapping):
        return (_number(spec, origin, where), 0.0, 0.0, 0.0, 0.0)
    keys = set(spec)
    if keys == {"terms"}:
        terms = spec["terms"]
        if not isinstance(terms, (list, tuple)) or not 1 <= len(terms) <= 4:
            raise _fail(origin, where + ".terms", "must be a list of 1 to 4 numbers [a1, a2, a3, a4]", terms)
        a = [_number(t, origin, f"{where}.terms[{i}]") for i, t in enumerate(terms)] + [0.0] * (4 - len(terms))
        return (a[0], a[1], a[2], a[3], 0.0)
    if "at25" in keys and keys <= {"at25", "slope", "curvature"}:
        v = _number(spec["at25"], origin, where + ".at25")
        s = _number(spec.get("slope", 0.0), origin, where + ".slope")
        c = _number(spec.get("curvature", 0.0), origin, where + ".curvature")
        return (v, 0.0, 0.0, s, c / 2.0)
    raise _fail(origin, where, "expected a number, {at25, slope, curvature} or {terms = [...]}", dict(spec))


def _key(section: str, raw: str, origin: str) -> tuple:
    where = f'[{section}."{raw}"]'
    names = str(raw).split()
    if (section, len(names)) not in _COEFFS:
        raise _fail(origin, where, "wrong number of species in the key for this section", raw)
    try:
        sp = [parse_species(n) for n in names]
    except InputError as exc:
        raise _fail(origin, where, f"bad species name ({exc})", raw) from None
    z = [s.charge for s in sp]
    n = [s.name for s in sp]
    kind = _KIND[(section, len(names))]
    pos = [x for x, q in zip(n, z) if q > 0]
    neg = [x for x, q in zip(n, z) if q < 0]
    neu = [x for x, q in zip(n, z) if q == 0]
    if kind == "salt" and len(pos) == 1 and len(neg) == 1:
        return ("salt", pos[0], neg[0])
    if kind == "theta" and len(set(n)) == 2 and (len(pos) == 2 or len(neg) == 2):
        return ("theta", *sorted(n))
    if kind == "psi" and sorted([len(pos), len(neg)]) == [1, 2] and len(set(n)) == 3:
        pair, other = (pos, neg) if len(pos) == 2 else (neg, pos)
        return ("psi", *sorted(pair), other[0])
    if kind == "lambda" and neu:
        return ("lambda", *sorted(n, key=lambda x: (x not in neu, x)))
    if kind == "zeta" and len(neu) == 1 and len(pos) == 1 and len(neg) == 1:
        return ("zeta", neu[0], pos[0], neg[0])
    raise _fail(origin, where, f"species charges {z} do not fit a {kind!r} interaction", raw)


def _entry(section: str, raw: str, body: Any, origin: str) -> Entry:
    where = f'[{section}."{raw}"]'
    if not isinstance(body, Mapping):
        raise _fail(origin, where, "must be a table", body)
    key = _key(section, raw, origin)
    names = _COEFFS[(section, len(key) - 1)]
    allowed = set(names) | _COMMON | (_SALT_ONLY if key[0] == "salt" else set())
    for k in body:
        if k not in allowed:
            raise _fail(origin, f"{where}.{k}", f"unknown key (allowed: {', '.join(sorted(allowed))})", body[k])
    coeffs = {c: _tfunc(body[c], origin, f"{where}.{c}") for c in names if c in body}
    if not coeffs:
        raise _fail(origin, where, f"no coefficient given (expected one of {', '.join(names)})", dict(body))
    source = body.get("source")
    if not isinstance(source, str) or not source.strip():
        raise _fail(origin, f"{where}.source", "every entry needs a source (author, year, table)", source)
    note = body.get("note", "")
    if not isinstance(note, str):
        raise _fail(origin, f"{where}.note", "must be a string", note)
    if "celsius" not in body:
        raise _fail(origin, f"{where}.celsius", "give the temperature range [min, max] in °C", None)
    rng = body["celsius"]
    if not isinstance(rng, (list, tuple)) or len(rng) != 2:
        raise _fail(origin, f"{where}.celsius", "must be [min, max] in °C", rng)
    lo, hi = (_number(x, origin, f"{where}.celsius") for x in rng)
    if not (-0.01 <= lo <= hi <= 150.0):
        raise _fail(origin, f"{where}.celsius", "must satisfy 0 ≤ min ≤ max ≤ 150 °C", rng)
    if key[0] == "salt" and "max_molality" not in body:
        raise _fail(origin, f"{where}.max_molality", "give the highest molality of the fit, mol/kg", None)
    mmax = _number(body["max_molality"], origin, f"{where}.max_molality") if "max_molality" in body else np.inf
    if mmax <= 0:
        raise _fail(origin, f"{where}.max_molality", "must be positive", mmax)
    alpha: tuple = ()
    if key[0] == "salt":
        alpha = tuple(_number(body[a], origin, f"{where}.{a}") if a in body else None for a in ("alpha1", "alpha2"))
        for a, v in zip(("alpha1", "alpha2"), alpha):
            if v is not None and v <= 0:
                raise _fail(origin, f"{where}.{a}", "must be positive", v)
    i_max = None
    if "max_ionic_strength" in body:
        i_max = _number(body["max_ionic_strength"], origin, f"{where}.max_ionic_strength")
        if i_max <= 0:
            raise _fail(origin, f"{where}.max_ionic_strength", "must be positive", i_max)
    T_range = (lo + ZERO_CELSIUS, hi + ZERO_CELSIUS)
    return Entry(key[0], key[1:], coeffs, alpha, T_range, mmax, i_max, source, note, origin)


def parse_parameters(doc: Mapping[str, Any], origin: str) -> ParameterSet:
    """Validate a parsed parameter document; ``origin`` names it in error messages."""
    if not isinstance(doc, Mapping):
        raise _fail(origin, "top level", "must be a table of sections", type(doc).__name__)
    entries: dict[tuple, Entry] = {}
    for section, table in doc.items():
        if section == "about":
            continue
        if section not in ("salt", "mixing", "neutral"):
            raise _fail(origin, f"[{section}]", "unknown section (expected about, salt, mixing, neutral)", section)
        if not isinstance(table, Mapping):
            raise _fail(origin, f"[{section}]", "must be a table of entries", table)
        for raw, body in table.items():
            e = _entry(section, raw, body, origin)
            full = (e.kind, *e.key)
            if full in entries:
                raise _fail(origin, f'[{section}."{raw}"]', "the same interaction is given twice", raw)
            entries[full] = e
    return ParameterSet(entries)


def load_parameters(source: Any) -> ParameterSet:
    """Load and validate a Pitzer parameter set.

    Parameters
    ----------
    source : str, path or Mapping
        A shipped set by name (``"pitzer"`` is ``models/pitzer.toml``), a path to a TOML
        file, or an already parsed mapping with the same layout.

    Returns
    -------
    ParameterSet

    Raises
    ------
    InputError
        For a missing or malformed file; the message names the file and the key.

    Examples
    --------
    >>> p = load_parameters("pitzer")
    >>> round(float(p["salt", "Na+", "Cl-"].value("beta0")), 4)
    0.0765
    >>> load_parameters({"salt": {"Na+ Cl-": {"beta0": 0.1, "source": "demo"}}})
    Traceback (most recent call last):
    ...
    activity.errors.InputError: <mapping>: [salt."Na+ Cl-"].celsius = None: give the temperature range [min, max] in °C
    """
    from ... import data

    if isinstance(source, ParameterSet):
        return source
    if isinstance(source, Mapping):
        return parse_parameters(source, "<mapping>")
    text = str(source)
    if isinstance(source, str) and "/" not in text and "\\" not in text and not text.endswith(".toml"):
        try:
            doc = data.load(text)
        except InputError:
            raise InputError("no shipped parameter set of this name", field="parameters", value=text) from None
        return parse_parameters(doc, f"models/{text}.toml")
    return parse_parameters(data.load_file(Path(source)), str(source))


def combine(sources: Iterable[Any]) -> ParameterSet:
    """Overlay several sources, later ones replacing earlier entries."""
    out = ParameterSet({})
    for s in sources:
        out = out.overlay(load_parameters(s))
    return out
