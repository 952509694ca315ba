"""Liquid-junction potentials: the Henderson equation and the Lewis–Sargent case.

Sign convention: a junction α | β (left | right) has E_j = φ(β) − φ(α), the inner
potential of the right solution minus that of the left, so that a cell's EMF is
E(right electrode) − E(left electrode) + E_j.

With molar ionic conductivities λᵢ = |zᵢ| F uᵢ (uᵢ the electrical mobility) the
Henderson equation (linear concentration profiles) reads

    E_j = (RT/F) · [Σ (λᵢ/zᵢ) Δcᵢ] / [Σ λᵢ Δcᵢ] · ln(Σ λᵢ cᵢ(α) / Σ λᵢ cᵢ(β)),  Δc = c(β) − c(α).

For two solutions of the same concentration sharing one ion it reduces to the
Lewis–Sargent form E_j = (RT/F) ln(Λ(α)/Λ(β)) (1:1 electrolytes, common anion).
Limiting conductivities at 25 °C come from ``models/ionic_conductivities.toml``;
molalities stand in for concentrations.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .. import _checks, data
from ..constants import T_REF, F, R
from ..errors import InputError
from ..solution import Solution
from ..species import parse_species

__all__ = ["JunctionResult", "limiting_conductivity", "henderson_potential", "lewis_sargent_potential"]


@dataclass(frozen=True)
class JunctionResult:
    """A liquid-junction potential φ(right) − φ(left) in V, with notes."""

    potential: ArrayLike
    notes: tuple = ()


def limiting_conductivity(species: str, table: Mapping[str, float] | None = None) -> float:
    """Limiting molar ionic conductivity λ° at 25 °C, S cm² mol⁻¹ (per mole of ion).

    Examples
    --------
    >>> limiting_conductivity("Ca2+")
    119.0
    """
    values = table if table is not None else data.load("ionic_conductivities")["values"]
    name = parse_species(species).name
    if name not in values:
        raise InputError(
            "no limiting ionic conductivity in models/ionic_conductivities.toml; pass conductivities=",
            field="species",
            value=name,
        )
    return float(values[name])


def henderson_potential(
    left: Solution, right: Solution, conductivities: Mapping[str, float] | None = None
) -> JunctionResult:
    """Henderson liquid-junction potential φ(right) − φ(left), V.

    Parameters
    ----------
    left, right : Solution
        The two solutions in contact (batches broadcast against each other).
    conductivities : Mapping[str, float], optional
        λ° per ion overriding the table.

    Examples
    --------
    >>> hcl = Solution({"H+": 0.1, "Cl-": 0.1})
    >>> kcl = Solution({"K+": 0.1, "Cl-": 0.1})
    >>> round(henderson_potential(hcl, kcl).potential * 1000, 2)
    26.85
    """
    for s, side in ((left, "left"), (right, "right")):
        if not isinstance(s, Solution):
            raise InputError("expected an activity.Solution", field=side, value=type(s).__name__)
    table = dict(data.load("ionic_conductivities")["values"])
    table.update({parse_species(k).name: float(v) for k, v in (conductivities or {}).items()})
    ions = [n for n in dict.fromkeys(left.species + right.species) if parse_species(n).charge != 0]
    lam = np.array([limiting_conductivity(n, table) for n in ions])
    z = np.array([parse_species(n).charge for n in ions], dtype=float)
    batch = np.broadcast_shapes(left.shape, right.shape)
    cl = np.array([np.broadcast_to(left.molality(n, default=0.0), batch) for n in ions])
    cr = np.array([np.broadcast_to(right.molality(n, default=0.0), batch) for n in ions])
    shape = cl.shape
    ex = (slice(None),) + (None,) * (len(shape) - 1)
    dc = cr - cl
    num = np.sum((lam / z)[ex] * dc, axis=0)
    ka = np.sum(lam[ex] * cl, axis=0)
    kb = np.sum(lam[ex] * cr, axis=0)
    if np.any(ka <= 0) or np.any(kb <= 0):
        raise InputError("a solution without ions cannot form a liquid junction", field="solution", value=None)
    d = kb - ka
    near = np.abs(d) <= 1e-12 * (ka + kb)
    ratio = np.where(near, -2.0 / (ka + kb), np.log(ka / kb) / np.where(near, 1.0, d))
    T = np.asarray(right.T_compact, float)
    notes = [
        "Henderson equation with limiting conductivities at 25 °C (models/ionic_conductivities.toml); "
        "molalities for concentrations"
    ]
    if np.any(np.asarray(left.T_compact) != T):
        notes.append("the two solutions differ in temperature; the right one's is used")
    return JunctionResult(_checks.scalar_or_array(R * T / F * num * ratio), tuple(notes))


def lewis_sargent_potential(conductance_left: Any, conductance_right: Any, T: ArrayLike = T_REF) -> Any:
    """Lewis–Sargent junction potential φ(right) − φ(left) = (RT/F) ln(Λ_left/Λ_right), V.

    For 1:1 electrolytes of equal concentration sharing an ion; Λ are the molar
    conductivities of the two electrolytes.

    Examples
    --------
    >>> round(lewis_sargent_potential(349.65 + 76.31, 73.48 + 76.31) * 1000, 2)
    26.85
    """
    a = _checks.finite_array(conductance_left, "conductance_left", positive=True)
    b = _checks.finite_array(conductance_right, "conductance_right", positive=True)
    Tk = _checks.finite_array(T, "T", positive=True)
    return _checks.scalar_or_array(R * Tk / F * np.log(a / b))
