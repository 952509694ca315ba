"""Speciation: free species, activities and pH from what was dissolved, for batches.

An electrode answers to the free ion; part of it may be bound in pairs, complexes and
acid–base forms. This layer solves the mass-action and balance equations of a reaction
network (``models/equilibria.toml``) with the activity coefficients of any registered
model recomputed until self-consistent, for one solution or millions of rows at once.

* :func:`speciate` — the entry point (``activity.speciate``);
* :class:`SpeciationResult` — what it returns;
* :mod:`.network` — reactions as data, stoichiometry, lg K(T);
* :mod:`.solver` — the batched Newton–Raphson;
* :mod:`.overlap` — the rule that keeps Pitzer parameter sets from counting pairs twice;
* :mod:`.metal_buffers` — metal-ion buffers (total metal for a target free activity).
"""

from __future__ import annotations

from .api import speciate
from .metal_buffers import MetalBuffer, free_metal, metal_buffer
from .network import Network, default_network, water_lg_kw
from .result import SpeciationResult

__all__ = [
    "MetalBuffer",
    "Network",
    "SpeciationResult",
    "default_network",
    "free_metal",
    "metal_buffer",
    "speciate",
    "water_lg_kw",
]
