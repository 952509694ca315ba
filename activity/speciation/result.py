"""The result of a speciation: free species, activities, pH, ionic strength, closure."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .._checks import scalar_or_array
from ..errors import InputError
from ..species import parse_species

__all__ = ["SpeciationResult"]


@dataclass(frozen=True, eq=False)
class SpeciationResult:
    """Speciated solution(s): every species' molality, activity coefficient and activity.

    Values are floats for a single solution and arrays of the batch shape for a batch.

    Attributes
    ----------
    species : tuple of str
        Components first, then the formed species considered.
    m : ndarray, shape ``(n_species,) + shape``
        Free (equilibrium) molalities, mol/kg.
    log10_gamma : ndarray, shape ``(n_species,) + shape``
    ionic_strength : float or ndarray
        Of the speciated solution, mol/kg.
    ph : float or ndarray
        −lg a(H⁺) on the model's activity scale.
    converged : bool or ndarray of bool
    iterations : int or ndarray of int
    totals : Mapping[str, float or ndarray]
        Component totals (given, or found by the closure), mol/kg.
    closure : str
        How the system was closed (fixed pH, charge balance on an ion, gases).
    model : str
    in_range : bool or ndarray
        Whether the activity model holds at the speciated ionic strength and T.
    notes : tuple of str
    skipped : Mapping[str, str]
        Formed species left out and why (e.g. pairs a Pitzer set accounts for).
    T : float or ndarray
        Temperature, K.
    """

    species: tuple
    m: np.ndarray
    log10_gamma: np.ndarray
    ionic_strength: Any
    ph: Any
    converged: Any
    iterations: Any
    totals: Mapping[str, Any]
    closure: str
    model: str
    in_range: Any = True
    notes: tuple = ()
    skipped: Mapping[str, str] = field(default_factory=dict)
    T: Any = 298.15
    P: Any = 101325.0
    charges: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=int))
    components: tuple = ()
    stoichiometry: np.ndarray = field(default_factory=lambda: np.zeros((0, 0)))

    def _index(self, name: str) -> int:
        key = name if name in self.species else parse_species(name).name
        try:
            return self.species.index(key)
        except ValueError:
            raise InputError(
                f"not a species of this result (species: {', '.join(self.species)})",
                field="species",
                value=name,
            ) from None

    def molality(self, name: str) -> Any:
        """Free molality of ``name``, mol/kg."""
        return scalar_or_array(self.m[self._index(name)])

    def gamma(self, name: str) -> Any:
        """Activity coefficient of ``name`` (molal scale)."""
        return scalar_or_array(10.0 ** self.log10_gamma[self._index(name)])

    def activity(self, name: str) -> Any:
        """Activity γ m / (1 mol/kg) of ``name``."""
        i = self._index(name)
        return scalar_or_array(10.0 ** self.log10_gamma[i] * self.m[i])

    def fraction(self, name: str, component: str) -> Any:
        """Share of a component's total present as ``name``: ν m / total (0 where the total is 0)."""
        c = parse_species(component).name
        if c not in self.components:
            raise InputError(
                f"not a component (components: {', '.join(self.components)})",
                field="component",
                value=component,
            )
        j = self.components.index(c)
        i = self._index(name)
        total = np.asarray(self.totals[c], dtype=float)
        part = self.stoichiometry[i, j] * self.m[i]
        return scalar_or_array(np.divide(part, total, out=np.zeros(np.shape(part)), where=total != 0))

    @property
    def molalities(self) -> dict[str, Any]:
        """Species → free molality."""
        return {n: scalar_or_array(self.m[i]) for i, n in enumerate(self.species)}

    @property
    def activities(self) -> dict[str, Any]:
        """Species → activity."""
        return {n: self.activity(n) for n in self.species}

    @property
    def solution(self):
        """The speciated composition as a :class:`~activity.Solution` (free species only).

        Feed this to an electrode or another model to use free-ion activities.
        """
        from ..solution import Solution

        return Solution._from_arrays(self.species, self.charges, self.m, np.asarray(self.T), np.asarray(self.P))

    def __repr__(self) -> str:
        if np.ndim(self.ph) == 0:
            return (
                f"SpeciationResult(model={self.model!r}, pH={float(self.ph):.4f}, "
                f"I={float(self.ionic_strength):.5g} mol/kg, {len(self.species)} species, {self.closure})"
            )
        batch = np.shape(self.ph)
        return f"SpeciationResult(model={self.model!r}, <batch {batch}>, {len(self.species)} species)"
