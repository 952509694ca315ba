"""Which reactions a Pitzer-type parameter set already accounts for (no double counting).

A Pitzer parameter set describes some associations through its own terms — most clearly
the 2:2 sulfates, whose β(2) stands for the CaSO4⁰ and MgSO4⁰ pairs, and the 1:1 and 1:2
salts of sulfate and carbonate with Na⁺, K⁺, Ca²⁺, Mg²⁺, whose β terms absorb NaSO4⁻,
KSO4⁻, NaCO3⁻, CaHCO3⁺, MgHCO3⁺. Counting such a pair both as a species and through β
would count it twice. The rule, applied to each formation reaction *as written in the
data* (stepwise):

1. the formed species itself appears in an entry of the set → **keep** (the set treats it
   as a species of its own, e.g. MgOH⁺);
2. the reactants are H⁺ and one anion (a protonation, e.g. HSO4⁻, HCO3⁻, H2PO4⁻) →
   **keep**: the shipped set (after Harvie, Møller & Weare 1984) treats protonated forms as
   species, and its H⁺–SO4²⁻ parameters describe what is left;
3. the reactants contain a cation and an anion for which the set has a ``salt`` entry →
   **skip** (and skip every species formed from a skipped one);
4. otherwise → **keep** (e.g. CaCO3⁰, MgCO3⁰, the EDTA and NTA complexes: the set has no
   β for those pairs, so the pair must be counted explicitly).

Models without a parameter table (Davies, Debye–Hückel family, ideal) skip nothing.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from ..species import parse_species

__all__ = ["parameter_table", "pitzer_skips"]


def parameter_table(model: Any) -> Mapping | None:
    """The model's interaction table if it has one in the Pitzer layout, else None."""
    table = getattr(model, "table", None)
    if table is None or not isinstance(table, Mapping):
        return None
    return table


def pitzer_skips(network: Any, table: Mapping) -> dict[str, str]:
    """Formed species to leave out under ``table``: name → the reason (for the notes).

    Examples
    --------
    >>> from activity.speciation.network import default_network
    >>> from activity.coefficients import get_model
    >>> skips = pitzer_skips(default_network(), get_model("pitzer").table)
    >>> "CaSO4" in skips, "HSO4-" in skips, "CaCO3" in skips
    (True, False, False)
    """
    named = set()
    salts = set()
    for key in table:
        named.update(key[1:])
        if key[0] == "salt":
            salts.add((key[1], key[2]))
    out: dict[str, str] = {}
    for p in network.products:  # ordered: a species comes after those it is made from
        rx = network.reactions[p]
        if p in named:
            continue
        parents = [r for r in rx.reactants if r in out]
        if parents:
            out[p] = f"made from {parents[0]}, which the Pitzer set accounts for"
            continue
        charged = {r: parse_species(r).charge for r in rx.reactants if r != "H2O"}
        cations = [r for r, z in charged.items() if z > 0 and rx.reactants[r] > 0]
        anions = [r for r, z in charged.items() if z < 0 and rx.reactants[r] > 0]
        if cations == ["H+"] and len(anions) == 1:
            continue
        for c in cations:
            for a in anions:
                if (c, a) in salts:
                    out[p] = f"the Pitzer set has β parameters for {c}–{a}"
                    break
            if p in out:
                break
    return out
