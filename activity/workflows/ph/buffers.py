"""Standard pH buffers: pH(S) against temperature with its uncertainty, and user buffers.

The shipped table (``models/ph_buffers.toml``) holds the primary standards of the IUPAC 2002
recommendations (Buck et al., Pure Appl. Chem. 74, 2169) and common secondary standards,
each value with its source and status ("read" or "from memory"). Between tabulated
temperatures pH(S) is interpolated with a local quadratic through the three nearest
points; the difference to linear interpolation is taken as the half-width of a rectangular
interpolation error and added to the table's uncertainty. Outside the tabulated range a
value is refused, never extrapolated.

Users add their own buffers (certificate values) from a TOML file with the same keys:

.. code-block:: toml

    [buffers.bench-ph7]
    label = "phosphate pH 7 working buffer, lot 0417"
    temperature = [20.0, 25.0, 30.0]      # °C
    pH = [7.02, 7.00, 6.99]
    expanded_uncertainty = 0.02
    coverage_factor = 2
    source = "certificate 0417"
"""

from __future__ import annotations

import functools
import math
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from activity import data
from activity.constants import ZERO_CELSIUS
from activity.errors import InputError

__all__ = [
    "BufferEquation",
    "BufferValue",
    "StandardBuffer",
    "buffer_ph",
    "get_buffer",
    "load_buffers",
    "standard_buffers",
]

#: A buffer tabulated at one temperature only is accepted within this distance of it, K.
SINGLE_POINT_TOLERANCE = 0.1


@dataclass(frozen=True)
class BufferEquation:
    """A published equation pH(S) = a/T + b + c·T + d·T², T = t + ``T_offset`` in kelvin."""

    name: str
    coefficients: tuple
    T_offset: float
    range_C: tuple
    source: str
    status: str

    def __call__(self, T: ArrayLike) -> Any:
        """pH(S) at T (kelvin; the equation's own temperature offset is applied)."""
        Tk = np.asarray(T, dtype=float)
        t = Tk - ZERO_CELSIUS
        lo, hi = self.range_C
        if np.any(t < lo - 1e-9) or np.any(t > hi + 1e-9):
            raise InputError(f"equation {self.name} holds for {lo:g}–{hi:g} °C", field="T", value=float(np.max(Tk)))
        x = t + self.T_offset
        a, b, c, d = self.coefficients
        out = a / x + b + c * x + d * x * x
        return float(out) if out.ndim == 0 else out


@dataclass(frozen=True)
class BufferValue:
    """pH(S) of a buffer at a temperature, with its standard uncertainty.

    Unpacks as ``value, standard_uncertainty``.

    Attributes
    ----------
    buffer : str
        Key of the buffer.
    T : float or ndarray
        Temperature, K.
    value : float or ndarray
        pH(S).
    standard_uncertainty : float or ndarray
        u(pH(S)): the table's standard uncertainty combined with the interpolation error.
    table_uncertainty : float
        The table's standard uncertainty U/k.
    interpolation_error : float or ndarray
        Half-width of the rectangular interpolation error (0 at a tabulated temperature).
    notes : tuple of str
    """

    buffer: str
    T: Any
    value: Any
    standard_uncertainty: Any
    table_uncertainty: float
    interpolation_error: Any
    notes: tuple = ()

    def __iter__(self) -> Iterator[Any]:
        yield self.value
        yield self.standard_uncertainty

    def expanded_uncertainty(self, k: float = 2.0) -> Any:
        """U = k·u."""
        return k * self.standard_uncertainty


@dataclass(frozen=True)
class StandardBuffer:
    """One buffer: its table of pH(S) against temperature and what it is made of."""

    key: str
    label: str
    kind: str
    temperature: np.ndarray  # K
    pH: np.ndarray
    status: tuple
    source: str
    expanded_uncertainty: float
    coverage_factor: float
    uncertainty_source: str = ""
    uncertainty_status: str = ""
    aliases: tuple = ()
    ionic_strength: float | None = None
    composition: Mapping[str, float] = field(default_factory=dict)
    composition_source: str = ""
    equations: Mapping[str, BufferEquation] = field(default_factory=dict)

    @property
    def standard_uncertainty(self) -> float:
        """The table's standard uncertainty U/k."""
        return self.expanded_uncertainty / self.coverage_factor

    @property
    def T_min(self) -> float:
        return float(self.temperature[0]) - (SINGLE_POINT_TOLERANCE if self.temperature.size == 1 else 0.0)

    @property
    def T_max(self) -> float:
        return float(self.temperature[-1]) + (SINGLE_POINT_TOLERANCE if self.temperature.size == 1 else 0.0)

    @property
    def range_text(self) -> str:
        lo, hi = self.temperature[0] - ZERO_CELSIUS, self.temperature[-1] - ZERO_CELSIUS
        return f"{lo:g} °C" if self.temperature.size == 1 else f"{lo:g}–{hi:g} °C"

    def ph(self, T: ArrayLike) -> BufferValue:
        """pH(S) at T (kelvin), interpolated, with its standard uncertainty.

        Examples
        --------
        >>> khp = get_buffer("KHP")
        >>> v = khp.ph(298.15)
        >>> v.value, round(v.standard_uncertainty, 4)
        (4.005, 0.002)
        """
        Tk = _temperature(T)
        lo, hi = self.T_min, self.T_max
        bad = (Tk < lo - 1e-9) | (Tk > hi + 1e-9)
        if np.any(bad):
            worst = float(Tk[bad].flat[0])
            raise InputError(
                f"buffer {self.key!r} is tabulated for {self.range_text} only "
                f"({worst - ZERO_CELSIUS:.2f} °C asked); pH(S) is not extrapolated",
                field="T",
                value=worst,
            )
        value, err = _interpolate(self.temperature, self.pH, Tk)
        u_tab = self.standard_uncertainty
        u = np.sqrt(u_tab**2 + (err / math.sqrt(3.0)) ** 2)
        notes = []
        if (
            self.temperature.size == 2
            and np.any(err == 0)
            and np.any((Tk > self.temperature[0]) & (Tk < self.temperature[-1]))
        ):
            notes.append(f"{self.key}: linear interpolation between two points; its error is not estimated")
        statuses = set(self.status)
        if any("memory" in s for s in statuses):
            notes.append(f"{self.key}: pH(S) values are from memory (not read in the source); check before use")
        sc = _scalar
        return BufferValue(self.key, sc(Tk), sc(value), sc(u), u_tab, sc(err), tuple(notes))

    def status_at(self, T: float) -> str:
        """Status of the tabulated value(s) pH(S) at T rests on (both neighbours between points)."""
        t = self.temperature
        near = np.flatnonzero(np.isclose(t, T, rtol=0, atol=1e-9))
        if near.size == 0:
            j = int(np.clip(np.searchsorted(t, T) - 1, 0, max(t.size - 2, 0)))
            near = np.arange(j, min(j + 2, t.size))
        return ", ".join(dict.fromkeys(self.status[i] for i in near))

    def solution(self, T: ArrayLike = 298.15) -> Any:
        """The buffer's nominal ion composition as a :class:`~activity.Solution` at T."""
        from activity.solution import Solution

        if not self.composition:
            raise InputError(
                f"buffer {self.key!r} has no composition; add one to estimate junctions",
                field="composition",
                value=self.key,
            )
        return Solution(dict(self.composition), T=T)


def _scalar(a: Any) -> Any:
    arr = np.asarray(a)
    return float(arr) if arr.ndim == 0 else arr


def _temperature(T: ArrayLike) -> np.ndarray:
    try:
        Tk = np.asarray(T, dtype=float)
    except (TypeError, ValueError):
        raise InputError("not a temperature in kelvin", field="T", value=T) from None
    if not np.all(np.isfinite(Tk)):
        raise InputError("must be finite", field="T", value=T)
    if np.any(Tk < 200.0):
        bad = float(Tk[Tk < 200.0].flat[0])
        raise InputError(f"temperatures are in kelvin; did you mean {bad + ZERO_CELSIUS:.2f} K?", field="T", value=bad)
    return Tk


def _interpolate(x: np.ndarray, y: np.ndarray, xi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Local quadratic interpolation and its estimated error (|quadratic − linear|)."""
    n = x.size
    if n == 1:
        return np.full(xi.shape, y[0]), np.zeros(xi.shape)
    lin = np.interp(xi, x, y)
    if n == 2:
        return lin, np.zeros(xi.shape)
    j = np.clip(np.searchsorted(x, xi, side="right") - 1, 0, n - 2)  # interval [x_j, x_j+1]
    left = np.clip(j - 1, 0, n - 1)
    right = np.clip(j + 2, 0, n - 1)
    xm = 0.5 * (x[j] + x[j + 1])
    use_left = (j + 2 > n - 1) | ((j - 1 >= 0) & (np.abs(xi - x[left]) <= np.abs(x[right] - xi)) & (xi <= xm))
    use_left &= j - 1 >= 0
    k0 = np.where(use_left, j - 1, j)
    x0, x1, x2 = x[k0], x[k0 + 1], x[k0 + 2]
    y0, y1, y2 = y[k0], y[k0 + 1], y[k0 + 2]
    quad = (
        y0 * (xi - x1) * (xi - x2) / ((x0 - x1) * (x0 - x2))
        + y1 * (xi - x0) * (xi - x2) / ((x1 - x0) * (x1 - x2))
        + y2 * (xi - x0) * (xi - x1) / ((x2 - x0) * (x2 - x1))
    )
    err = np.abs(quad - lin)
    at_node = np.isclose(xi, x[j], rtol=0, atol=1e-9) | np.isclose(xi, x[j + 1], rtol=0, atol=1e-9)
    return np.where(at_node, lin, quad), np.where(at_node, 0.0, err)


def _readonly(a: np.ndarray) -> np.ndarray:
    a.flags.writeable = False
    return a


def _float_list(value: Any, where: str) -> np.ndarray:
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError("expected a list of numbers", field=where, value=value) from None
    if arr.ndim != 1 or arr.size == 0 or not np.all(np.isfinite(arr)):
        raise InputError("expected a non-empty list of finite numbers", field=where, value=value)
    return arr


def _build(key: str, entry: Mapping[str, Any], where: str, default_kind: str) -> StandardBuffer:
    for req in ("temperature", "pH", "expanded_uncertainty", "source"):
        if req not in entry:
            raise InputError("missing", field=f"{where}.{req}")
    t = _float_list(entry["temperature"], f"{where}.temperature")
    ph = _float_list(entry["pH"], f"{where}.pH")
    if t.size != ph.size:
        raise InputError(f"{t.size} temperatures but {ph.size} pH values", field=f"{where}.pH", value=list(ph))
    if np.any(np.diff(t) <= 0):
        raise InputError("temperatures must increase strictly", field=f"{where}.temperature", value=list(t))
    if np.any(t < -5) or np.any(t > 150):
        raise InputError("temperatures are in °C (−5 to 150)", field=f"{where}.temperature", value=list(t))
    if np.any(ph < -2) or np.any(ph > 16):
        raise InputError("not a pH value", field=f"{where}.pH", value=list(ph))
    U = float(entry["expanded_uncertainty"])
    k = float(entry.get("coverage_factor", 2.0))
    if not (U > 0 and math.isfinite(U)):
        raise InputError("must be a positive number (pH units)", field=f"{where}.expanded_uncertainty", value=U)
    if not (k > 0 and math.isfinite(k)):
        raise InputError("must be positive", field=f"{where}.coverage_factor", value=k)
    status = entry.get("status", "user value")
    status = tuple(status) if isinstance(status, (list, tuple)) else (str(status),) * t.size
    if len(status) != t.size:
        raise InputError("one status per value, or one for all", field=f"{where}.status", value=status)
    comp = {str(s): float(m) for s, m in dict(entry.get("composition", {})).items()}
    eqs = {}
    for name, e in dict(entry.get("equations", {})).items():
        coeffs = tuple(float(c) for c in e["coefficients"])
        if len(coeffs) != 4:
            raise InputError("four coefficients a, b, c, d", field=f"{where}.equations.{name}", value=coeffs)
        eqs[name] = BufferEquation(
            name,
            coeffs,
            float(e.get("T_offset", ZERO_CELSIUS)),
            tuple(float(v) for v in e["range"]),
            str(e.get("source", "")),
            str(e.get("status", "")),
        )
    I = entry.get("ionic_strength")
    t.flags.writeable = False
    ph.flags.writeable = False
    return StandardBuffer(
        key=key,
        label=str(entry.get("label", key)),
        kind=str(entry.get("kind", default_kind)),
        temperature=_readonly(t + ZERO_CELSIUS),
        pH=ph,
        status=status,
        source=str(entry["source"]),
        expanded_uncertainty=U,
        coverage_factor=k,
        uncertainty_source=str(entry.get("uncertainty_source", entry["source"])),
        uncertainty_status=str(entry.get("uncertainty_status", status[0])),
        aliases=tuple(str(a) for a in entry.get("aliases", ())),
        ionic_strength=None if I is None else float(I),
        composition=comp,
        composition_source=str(entry.get("composition_source", "")),
        equations=eqs,
    )


@functools.lru_cache(maxsize=1)
def _shipped_cached() -> tuple[tuple[str, StandardBuffer], ...]:
    table = data.load("ph_buffers")["buffers"]
    return tuple((k, _build(k, v, f"ph_buffers.toml: buffers.{k}", "primary")) for k, v in table.items())


def _shipped() -> dict[str, StandardBuffer]:
    """The shipped buffers (built once; their arrays are read-only)."""
    return dict(_shipped_cached())


def load_buffers(path: str | Path) -> dict[str, StandardBuffer]:
    """User buffers from a TOML file (``[buffers.<name>]`` tables, see the module docstring).

    Errors name the file, the buffer and the key.
    """
    p = Path(path)
    raw = data.load_file(p)
    table = raw.get("buffers")
    if not table:
        raise InputError("no [buffers.<name>] tables", field=str(p), value=None)
    return {str(k): _build(str(k), v, f"{p.name}: buffers.{k}", "user") for k, v in table.items()}


def standard_buffers(
    extra: str | Path | Mapping[str, StandardBuffer] | None = None,
) -> dict[str, StandardBuffer]:
    """The shipped standard buffers by key (plus user buffers from ``extra``).

    Parameters
    ----------
    extra : path or mapping, optional
        A TOML file of user buffers, or buffers already loaded. A user buffer may not reuse
        the key of a shipped one.

    Examples
    --------
    >>> b = standard_buffers()
    >>> [k for k, v in b.items() if v.kind == "primary"][:3]
    ['tartrate-sat', 'citrate-0.05', 'phthalate-0.05']
    """
    out = _shipped()
    if extra is not None:
        users = extra if isinstance(extra, Mapping) else load_buffers(extra)
        for k, v in users.items():
            if k in out:
                raise InputError("a user buffer may not reuse the name of a standard buffer", field="buffers", value=k)
            out[k] = v
    return out


def get_buffer(name: str | StandardBuffer, buffers: Mapping[str, StandardBuffer] | None = None) -> StandardBuffer:
    """A buffer by key or alias (case-insensitive).

    Examples
    --------
    >>> get_buffer("khp").key
    'phthalate-0.05'
    """
    if isinstance(name, StandardBuffer):
        return name
    table = buffers if buffers is not None else _shipped()
    wanted = str(name).strip().lower()
    for key, buf in table.items():
        if wanted == key.lower() or wanted in (a.lower() for a in buf.aliases):
            return buf
    raise InputError(f"unknown buffer; known: {', '.join(table)}", field="buffer", value=name)


def buffer_ph(
    name: str | StandardBuffer, T: ArrayLike = 298.15, *, buffers: Mapping[str, StandardBuffer] | None = None
) -> BufferValue:
    """pH(S) of a standard buffer at T (kelvin) and its standard uncertainty.

    Parameters
    ----------
    name : str
        Key or alias, e.g. ``'phthalate-0.05'``, ``'KHP'``, ``'borax'``, ``'6.865'``.
    T : array_like, default 298.15
        Temperature(s) in kelvin.
    buffers : mapping, optional
        The buffers to look in (default: the shipped ones; see :func:`standard_buffers`).

    Returns
    -------
    BufferValue
        Unpacks as ``(value, standard_uncertainty)``; arrays for an array of T.

    Raises
    ------
    InputError
        An unknown buffer, or T outside the buffer's tabulated range.

    Examples
    --------
    >>> ph, u = buffer_ph("borax", 310.15)
    >>> ph, u
    (9.088, 0.002)
    >>> round(buffer_ph("phosphate", 300.15).value, 4)     # between 25 and 30 °C
    6.8597
    """
    return get_buffer(name, buffers).ph(T)
