"""The residual liquid-junction term of a pH measurement, estimated with the Henderson equation.

A pH cell reads reference | KCl bridge ‖ solution | glass electrode, so every reading holds
the junction potential E_j = φ(solution) − φ(bridge). Calibration cancels it only when the
sample's junction equals the buffers'. The residual

    ΔpH_j = (E_j(sample) − E_j(buffer)) / (RT ln10 / F)

is what the reported pH misses (true pH ≈ reported + ΔpH_j). The Henderson equation gives
an estimate from the compositions (limiting conductivities, linear mixing profiles); its
size, not its sign, is used: the largest |ΔpH_j| over the calibration buffers becomes the
half-width of a rectangular uncertainty in the sample's budget. A sample of high ionic
strength thus gets a larger, honest uncertainty.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from activity import data
from activity.errors import InputError
from activity.solution import Solution

from .buffers import StandardBuffer, get_buffer

__all__ = ["JunctionEstimate", "bridge_solution", "residual_junction"]

#: Default bridge: 3 mol/L KCl, the usual filling of combination pH electrodes (common practice).
DEFAULT_BRIDGE_MOLARITY = 3.0


@dataclass(frozen=True)
class JunctionEstimate:
    """Residual liquid-junction estimate.

    Attributes
    ----------
    half_width : float
        max |ΔpH_j| over the buffers: half-width of the rectangular uncertainty, pH.
    delta_pH : dict
        Buffer key → ΔpH_j = (E_j(sample) − E_j(buffer))/k.
    E_sample : float
        E_j between bridge and sample, V.
    E_buffers : dict
        Buffer key → E_j between bridge and buffer, V.
    notes : tuple of str
    """

    half_width: float
    delta_pH: dict
    E_sample: float
    E_buffers: dict
    notes: tuple = ()


def bridge_solution(T: float = 298.15, molarity: float = DEFAULT_BRIDGE_MOLARITY) -> Solution:
    """KCl bridge (reference electrolyte) of the given molarity at T."""
    return Solution.from_molarity({"K+": molarity, "Cl-": molarity}, T=T)


def _conductivities(extra: Mapping[str, float] | None) -> dict:
    table = dict(data.load("ph_buffers")["junction_conductivities"]["values"])
    table.update(extra or {})
    return table


def residual_junction(
    sample: Solution,
    buffers: Sequence[str | StandardBuffer],
    T: float = 298.15,
    *,
    bridge: Solution | None = None,
    conductivities: Mapping[str, float] | None = None,
    buffer_table: Mapping[str, StandardBuffer] | None = None,
) -> JunctionEstimate:
    """Estimate the residual liquid-junction term between a sample and the calibration buffers.

    Parameters
    ----------
    sample : Solution
        The sample's composition (one row).
    buffers : sequence of str or StandardBuffer
        The calibration buffers (each needs a composition).
    T : float
        Temperature, K.
    bridge : Solution, optional
        The reference electrolyte (default 3 mol/L KCl).
    conductivities : mapping, optional
        Extra limiting conductivities (S cm² mol⁻¹) for ions missing from the tables.

    Examples
    --------
    >>> sea = Solution({"Na+": 0.49, "Mg^2+": 0.055, "Cl-": 0.60})
    >>> j = residual_junction(sea, ["phthalate-0.05", "phosphate-1:1"], 298.15)
    >>> round(j.half_width, 3)          # pH; seawater-like sample against dilute buffers
    0.064
    """
    from activity import henderson_potential, nernst_slope

    if not isinstance(sample, Solution):
        raise InputError("expected an activity.Solution", field="sample", value=type(sample).__name__)
    if sample.shape != ():
        raise InputError("one sample composition at a time", field="sample", value=sample.shape)
    if not buffers:
        raise InputError("no calibration buffers", field="buffers", value=buffers)
    lam = _conductivities(conductivities)
    br = bridge if bridge is not None else bridge_solution(T)
    k = nernst_slope(T)
    sample_T = Solution({s: float(sample.molality(s)) for s in sample.species}, T=T)
    e_x = float(henderson_potential(br, sample_T, lam).potential)
    e_b, d = {}, {}
    for b in buffers:
        buf = get_buffer(b, buffer_table)
        e = float(henderson_potential(br, buf.solution(T), lam).potential)
        e_b[buf.key] = e
        d[buf.key] = (e_x - e) / k
    notes = [
        "residual liquid junction: Henderson equation, bridge "
        + ("3 mol/L KCl (common practice)" if bridge is None else "as given")
        + ", nominal buffer compositions; used as a rectangular uncertainty, not a correction"
    ]
    if sample.ionic_strength > 0.5:
        notes.append(f"sample ionic strength {sample.ionic_strength:.3g} mol/kg: the Henderson estimate is rough here")
    return JunctionEstimate(float(max(abs(v) for v in d.values())), d, e_x, e_b, tuple(notes))
