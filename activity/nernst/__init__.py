"""The Nernst layer: from activities to electrode and cell potentials, and back.

One module per idea, in the order data flows:

* :mod:`.equations` — μ̃ = μ° + RT ln a + zFφ, ΔrG, E = −ΔrG/(nF), the Nernst slope, E°(T),
  gas activities (the one copy of each equation);
* :mod:`.half_reaction` — :class:`HalfReaction`, tabulated couples, the electrode protocol;
* :mod:`.electrodes` — reference electrodes computed from their filling, ion-selective
  electrodes (Nikolsky–Eisenman);
* :mod:`.junction`, :mod:`.membrane` — Henderson and Lewis–Sargent junctions; GHK, Donnan,
  Nikolsky–Eisenman membrane terms;
* :mod:`.cell` — cells (EMF with the junction term apart);
* :mod:`.inverse` — from a potential or EMF back to an activity and a molality.
"""

from __future__ import annotations

from .cell import Cell, CellResult
from .electrodes import IonSelectiveElectrode, ReferenceElectrode, calomel_electrode, silver_chloride_electrode
from .equations import electrochemical_potential, nernst_potential, nernst_slope, reaction_gibbs
from .half_reaction import ElectrodeResult, HalfReaction, available_couples, standard_couple
from .inverse import activity_from_potential, molality_from_emf, molality_from_potential
from .junction import henderson_potential
from .membrane import donnan_potential, ghk_potential, nikolsky_eisenman

__all__ = [
    "Cell",
    "CellResult",
    "ElectrodeResult",
    "HalfReaction",
    "IonSelectiveElectrode",
    "ReferenceElectrode",
    "activity_from_potential",
    "available_couples",
    "calomel_electrode",
    "donnan_potential",
    "electrochemical_potential",
    "ghk_potential",
    "henderson_potential",
    "molality_from_emf",
    "molality_from_potential",
    "nernst_potential",
    "nernst_slope",
    "nikolsky_eisenman",
    "reaction_gibbs",
    "silver_chloride_electrode",
    "standard_couple",
]
