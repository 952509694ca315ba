"""What every electrode offers the cell, the inverse and the measurement chain.

An electrode — a half-reaction dipping into the sample, an ion-selective electrode, or a
reference electrode with its own filling — answers the same questions:

* which compartment it sits in (:attr:`Electrode.own_compartment`);
* which dissolved species its potential responds to (:attr:`Electrode.responds_to`) and,
  given a choice, which one a measurement determines (:meth:`Electrode.determinand`);
* its electrode constant at 298.15 K (:attr:`Electrode.electrode_constant`), the input an
  uncertainty budget perturbs;
* its potential in a solution whose activity coefficients are already known
  (:meth:`Electrode.evaluate_in`), so that electrodes sharing one solution share one
  evaluation of the activity model.

The result of every evaluation is an :class:`ElectrodeResult`.
"""

from __future__ import annotations

import abc
from collections.abc import Callable, Iterator, Mapping
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any, ClassVar

from numpy.typing import ArrayLike

from ..constants import T_REF
from ..errors import InputError
from ..species import parse_species

if TYPE_CHECKING:
    from ..coefficients import CoefficientResult
    from ..solution import Solution

__all__ = ["Electrode", "ElectrodeResult", "LazyMapping"]


class LazyMapping(Mapping):
    """A read-only mapping whose values may be zero-argument callables, evaluated on first access."""

    def __init__(self, items: Mapping[str, Any | Callable[[], Any]]):
        self._items = dict(items)

    def __getitem__(self, key: str) -> Any:
        value = self._items[key]
        if callable(value):
            value = self._items[key] = value()
        return value

    def __iter__(self) -> Iterator[str]:
        return iter(self._items)

    def __len__(self) -> int:
        return len(self._items)

    def __repr__(self) -> str:
        return f"{type(self).__name__}({list(self._items)})"


@dataclass(frozen=True)
class ElectrodeResult:
    """An electrode potential with what went into it.

    Attributes
    ----------
    potential : float or ndarray
        V vs SHE (or on the scale of the electrode's constant).
    standard_potential : float or ndarray
        E° (or the electrode constant) at the solution's temperature, V.
    log10_activity : Mapping
        Species → log10 a used in the Nernst term.
    T : float or ndarray
        Temperature, K.
    model : str
        Activity model used.
    notes : tuple of str
        Fallbacks, assumptions and validity excursions.
    in_range : bool or ndarray
        Whether the activity model was inside its declared validity.
    alerts : tuple of str
        The notes that call for a :class:`~activity.errors.ValidityWarning`.
    """

    potential: ArrayLike
    standard_potential: Any
    log10_activity: Mapping[str, Any] = field(default_factory=dict)
    T: ArrayLike = T_REF
    model: str = ""
    notes: tuple = ()
    in_range: Any = True
    alerts: tuple = ()


class Electrode(abc.ABC):
    """The electrode protocol (see the module docstring)."""

    #: A human-readable label.
    name: str
    #: True when the electrode brings its own compartment (a reference electrode and its
    #: filling) and never dips into the sample.
    own_compartment: ClassVar[bool] = False

    @property
    def responds_to(self) -> tuple[str, ...]:
        """Dissolved species of the sample whose activity the potential depends on."""
        return ()

    @property
    def selectivity(self) -> Mapping[str, Any]:
        """Selectivity coefficients by interfering ion (none unless the electrode has them)."""
        return {}

    @property
    @abc.abstractmethod
    def electrode_constant(self) -> float:
        """The electrode's constant at 298.15 K, V (E° of a couple, E0 of an ISE)."""

    def determinand(self, species: str | None = None) -> str:
        """The species a reading of this electrode determines.

        ``species`` chooses among :attr:`responds_to` when there are several; it is
        refused when the electrode does not respond to it.
        """
        options = self.responds_to
        if not options:
            raise InputError(f"{self.name} responds to no species of the sample", field="electrode", value=self.name)
        if species is None:
            if len(options) != 1:
                raise InputError(f"say which species to solve for: one of {options}", field="species", value=None)
            return options[0]
        name = parse_species(species).name
        if name not in options:
            raise InputError(f"{self.name} responds to {', '.join(options)}", field="species", value=species)
        return name

    def with_selectivity(self, K: Mapping[str, Any]) -> Electrode:
        """A copy with the selectivity coefficients in ``K`` replaced (itself if it has none)."""
        return self

    @abc.abstractmethod
    def evaluate_in(
        self, sol: Solution, coefficients: CoefficientResult, *, pressures: Mapping[str, Any] | None = None
    ) -> ElectrodeResult:
        """The potential in ``sol``, given the activity model's result for ``sol``."""
