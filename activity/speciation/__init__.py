"""Speciation: free species, activities and pH from what was dissolved, for batches.

An electrode answers to the free ion; part of it may be bound in pairs, complexes and
acid–base forms. This layer solves the mass-action and balance equations of a reaction
network (``models/equilibria.toml``) with the activity coefficients of any registered
model recomputed until self-consistent, for one solution or millions of rows at once.

* :func:`speciate` — the entry point (``activity.speciate``); :func:`free_activity` — the
  free activity of one ion, for electrodes in complexing matrices;
* :class:`SpeciationResult` — what it returns; its ``.solution`` is a
  :class:`SpeciatedSolution`, which records the ion pairs counted as species (so the
  Debye–Hückel family does not flag them as uncounted association);
* :mod:`.network` — reactions as data, stoichiometry, lg K(T);
* :mod:`.solver` — the batched Newton–Raphson;
* :mod:`.overlap` — the rule that keeps Pitzer parameter sets from counting pairs twice: a
  formation reaction is left out when the set has a β entry for a cation–anion pair among
  its reactants, unless the product is itself a species of the set or the reaction is a
  protonation (H⁺ + anion); CaSO4⁰, MgSO4⁰, NaSO4⁻, KSO4⁻, NaCO3⁻, CaHCO3⁺, MgHCO3⁺ and
  CaOH⁺ are thus left out under the shipped set, HSO4⁻, HCO3⁻, CaCO3⁰ and the chelates kept;
* :mod:`.metal_buffers` — metal-ion buffers (total metal for a target free activity).
"""

from __future__ import annotations

from .api import free_activity, speciate
from .metal_buffers import MetalBuffer, free_metal, metal_buffer
from .network import Network, default_network, water_lg_kw
from .result import SpeciatedSolution, SpeciationResult

__all__ = [
    "MetalBuffer",
    "Network",
    "SpeciatedSolution",
    "SpeciationResult",
    "default_network",
    "free_activity",
    "free_metal",
    "metal_buffer",
    "speciate",
    "water_lg_kw",
]
