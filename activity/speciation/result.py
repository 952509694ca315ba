"""The result of a speciation: free species, activities, pH, ionic strength, closure."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .._checks import scalar_or_array
from ..errors import InputError
from ..solution import Solution
from ..species import parse_species

__all__ = ["SpeciatedSolution", "SpeciationResult", "association_pairs"]


def association_pairs(species: tuple, charges: np.ndarray, stoichiometry: np.ndarray) -> frozenset:
    """(cation, anion) pairs of charge magnitude ≥ 2 whose association product is a species.

    ``stoichiometry`` is (n_species, n_components) with the components first. A formed
    species s holding one cation component c (z ≥ 2) is the pair of c with the species
    whose stoichiometry is that of s less c, when that one has z ≤ −2: CaSO4⁰ pairs Ca²⁺
    with SO4²⁻, CaHPO4⁰ pairs Ca²⁺ with HPO4²⁻, CaY²⁻ pairs Ca²⁺ with Y⁴⁻.

    Examples
    --------
    >>> nu = np.array([[1.0, 0.0], [0.0, 1.0], [1.0, 1.0]])
    >>> sorted(association_pairs(("Ca^2+", "SO4^2-", "CaSO4"), np.array([2, -2, 0]), nu))
    [('Ca^2+', 'SO4^2-')]
    """
    nu = np.asarray(stoichiometry, dtype=float)
    n = nu.shape[1] if nu.ndim == 2 else 0
    by_row = {tuple(np.round(row, 9)): s for s, row in enumerate(nu)}
    pairs = set()
    for s in range(n, len(species)):
        for c in np.flatnonzero((nu[s] == 1.0) & (np.asarray(charges[:n]) >= 2)):
            rest = nu[s].copy()
            rest[c] = 0.0
            a = by_row.get(tuple(np.round(rest, 9)))
            if a is not None and a != s and charges[a] <= -2:
                pairs.add((species[c], species[a]))
    return frozenset(pairs)


class SpeciatedSolution(Solution):
    """The free species of a speciation as a :class:`~activity.Solution`.

    Unlike a plain composition it records which ion pairs are counted as species
    (:attr:`explicit_ion_pairs`): a Debye–Hückel-type model, whose parameters assume the
    pairs are counted, then raises no "2:2 pair (ion association)" alert for them.
    """

    __slots__ = ("explicit_ion_pairs",)

    @classmethod
    def of(cls, species, charges, m, T, P, stoichiometry) -> SpeciatedSolution:
        """Build from checked arrays (``m`` of shape ``(n_species,) + shape``)."""
        obj = cls._from_arrays(species, charges, m, T, P)
        obj.explicit_ion_pairs = association_pairs(tuple(species), np.asarray(charges), stoichiometry)
        return obj


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

        Feed this to an electrode or another model to use free-ion activities. It is a
        :class:`SpeciatedSolution`: the ion pairs counted as species are recorded, so a
        Debye–Hückel-type model does not flag them as uncounted association.
        """
        return SpeciatedSolution.of(
            self.species, self.charges, self.m, np.asarray(self.T), np.asarray(self.P), self.stoichiometry
        )

    def __repr__(self) -> str:
        if np.ndim(self.ph) == 0:
            return (
                f"SpeciationResult(model={self.model!r}, pH={float(self.ph):.4f}, "
                f"I={float(self.ionic_strength):.5g} mol/kg, {len(self.species)} species, {self.closure})"
            )
        batch = np.shape(self.ph)
        return f"SpeciationResult(model={self.model!r}, <batch {batch}>, {len(self.species)} species)"
