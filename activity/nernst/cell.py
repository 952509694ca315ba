"""Galvanic cells: EMF = E(right) − E(left) + E_j.

Each electrode is a :class:`~activity.nernst.half_reaction.HalfReaction` (dipping into its
compartment's solution), an :class:`~activity.nernst.electrodes.IonSelectiveElectrode`, or a
:class:`~activity.nernst.electrodes.ReferenceElectrode` (whose compartment is its own filling).
With one solution for both electrodes the cell has no liquid junction (a cell without
transference); with two different compartment solutions the junction term
E_j = φ(right solution) − φ(left solution) is computed by the Henderson equation, given
as a number, or left out — and reported separately either way.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .. import _checks
from ..coefficients import resolve_model
from ..coefficients.base import ModelLike
from ..errors import InputError, warn_alerts
from ..solution import Solution
from .half_reaction import check_pressures
from .junction import henderson_potential
from .protocol import Electrode, ElectrodeResult

__all__ = ["CellResult", "Cell"]


@dataclass(frozen=True)
class CellResult:
    """The EMF of a cell and its parts.

    Attributes
    ----------
    emf : float or ndarray
        E(right) − E(left) + junction_potential, V.
    right, left : ElectrodeResult
        The two electrode potentials with their details.
    junction_potential : float or ndarray
        φ(right solution) − φ(left solution), V (0 for one solution or when neglected).
    model : str
        Activity model applied to the sample.
    notes : tuple of str
    alerts : tuple of str
        The notes that call for a :class:`~activity.errors.ValidityWarning`.
    """

    emf: ArrayLike
    right: ElectrodeResult
    left: ElectrodeResult
    junction_potential: Any
    model: str
    notes: tuple = ()
    alerts: tuple = ()

    @property
    def right_potential(self) -> Any:
        """Potential of the right electrode, V vs SHE."""
        return self.right.potential

    @property
    def left_potential(self) -> Any:
        """Potential of the left electrode, V vs SHE."""
        return self.left.potential


class Cell:
    """A galvanic cell ``left | … | right``.

    Parameters
    ----------
    left, right : HalfReaction, ReferenceElectrode or IonSelectiveElectrode
    junction : None, 'henderson' or float, default None
        How to treat a liquid junction between two different compartment solutions:
        left out (recorded in the notes), the Henderson equation, or a fixed value in V.

    Examples
    --------
    >>> from activity import Solution
    >>> from activity.nernst import standard_couple
    >>> harned = Cell(left=standard_couple("H+/H2"), right=standard_couple("AgCl/Ag"))
    >>> round(harned.emf(Solution({"H+": 0.01, "Cl-": 0.01}), "davies", pressures={"H2(g)": 1e5}), 4)
    0.4643
    """

    def __init__(self, left: Any, right: Any, junction: Any = None):
        for side, e in (("left", left), ("right", right)):
            if not isinstance(e, Electrode):
                hint = (
                    f" (a name? use standard_couple({e!r}) or a reference electrode such as "
                    "silver_chloride_electrode('saturated'))"
                    if isinstance(e, str)
                    else ""
                )
                raise InputError(
                    f"expected a HalfReaction, ReferenceElectrode or IonSelectiveElectrode, "
                    f"not a {type(e).__name__}{hint}",
                    field=side,
                    value=e,
                )
        if not (junction is None or junction == "henderson" or isinstance(junction, (int, float))):
            raise InputError("must be None, 'henderson' or a number in V", field="junction", value=junction)
        self.left, self.right, self.junction = left, right, junction

    def evaluate(
        self,
        sol: Solution | None = None,
        model: ModelLike = "davies",
        *,
        left_solution: Solution | None = None,
        right_solution: Solution | None = None,
        pressures: Mapping[str, Any] | None = None,
        warn: bool = True,
        low_pressure: bool = False,
    ) -> CellResult:
        """EMF with both electrode potentials and the junction term.

        Parameters
        ----------
        sol : Solution, optional
            The sample: the solution of every compartment not otherwise given.
        model : str or ActivityModel, default 'davies'
            Activity model for the sample (a reference electrode uses its own).
        left_solution, right_solution : Solution, optional
            Compartment solutions of a two-compartment cell.
        pressures : Mapping[str, array_like], optional
            Gas partial pressures in Pa. A pressure below 100 Pa is refused as a likely unit
            slip (``1`` meaning 1 bar or 1 atm) unless ``low_pressure=True``.
        warn : bool, default True
            Warn once about the result's ``alerts`` (validity excursions of either side).
        low_pressure : bool, default False
            Accept gas pressures below 100 Pa (e.g. a trace gas on purpose).
        """
        check_pressures(pressures, low_pressure)
        model = resolve_model(model)
        comp = {}
        for side, e, given in (("left", self.left, left_solution), ("right", self.right, right_solution)):
            if e.own_compartment:
                if given is not None:
                    raise InputError(
                        "a reference electrode's compartment is its own filling", field=f"{side}_solution", value=None
                    )
                comp[side] = None
            else:
                comp[side] = given if given is not None else sol
                if not isinstance(comp[side], Solution):
                    raise InputError(f"the {side} electrode needs a solution", field="solution", value=comp[side])
        samples = [s for s in comp.values() if s is not None]
        if not samples:
            raise InputError("a cell of two reference electrodes has nothing to measure", field="solution", value=None)
        T = samples[0].T_compact
        gamma: dict[int, Any] = {}  # one evaluation of the model per solution, shared by the electrodes in it

        def electrode(e: Any, s: Solution | None) -> ElectrodeResult:
            if s is None:
                return e.evaluate(T, warn=False)  # a reference electrode: its own filling and model
            if id(s) not in gamma:
                gamma[id(s)] = model.activity_coefficients(s, warn=False)
            return e.evaluate_in(s, gamma[id(s)], pressures=pressures)

        left, right = electrode(self.left, comp["left"]), electrode(self.right, comp["right"])
        notes: list[str] = []
        ej: Any = 0.0
        if comp["left"] is not comp["right"]:  # two compartments (a reference electrode's filling is one)
            if self.junction is None:
                notes.append("liquid junction between the two compartments left out (junction=None)")
            elif self.junction == "henderson":
                lsol = comp["left"] if comp["left"] is not None else self.left.filling_solution(T)
                rsol = comp["right"] if comp["right"] is not None else self.right.filling_solution(T)
                jr = henderson_potential(lsol, rsol)
                ej = jr.potential
                notes.extend(jr.notes)
            else:
                ej = float(self.junction)
                notes.append(f"liquid-junction potential fixed at {ej:g} V")
        emf = np.asarray(right.potential) - np.asarray(left.potential) + np.asarray(ej)
        notes = [f"left: {n}" for n in left.notes] + [f"right: {n}" for n in right.notes] + notes
        alerts = tuple(dict.fromkeys(left.alerts + right.alerts))
        if warn:
            warn_alerts(alerts)
        return CellResult(
            _checks.scalar_or_array(emf), right, left, ej, model.name, tuple(dict.fromkeys(notes)), alerts
        )

    def emf(self, sol: Solution | None = None, model: ModelLike = "davies", **kw: Any) -> Any:
        """EMF = E(right) − E(left) + E_j in V (shorthand for ``evaluate(...).emf``)."""
        return self.evaluate(sol, model, **kw).emf

    def __repr__(self) -> str:
        return f"Cell(left={self.left!r}, right={self.right!r}, junction={self.junction!r})"
