"""Safety cautions that the command line shows beside results (no chemistry is changed).

Some compositions call for a reminder that a computed number is not a procedure:
fluoride with acid (hydrofluoric acid), concentrated strong acids or bases, and pH work
whose results may reach patients or products.
"""

from __future__ import annotations

import numpy as np

__all__ = ["GENERAL", "cautions_for"]

GENERAL = (
    "Caution: results are estimates from published models and data. For clinical or "
    "pharmaceutical pH, for hydrofluoric acid, strong acids and other hazardous reagents, "
    "follow your local codes, validated procedures and licensed practice; this tool does "
    "not replace them."
)


def cautions_for(sol) -> list[str]:
    """Cautions that apply to a :class:`~activity.Solution` (empty for ordinary samples).

    Examples
    --------
    >>> from activity import Solution
    >>> cautions_for(Solution({"H+": 0.5, "F-": 0.5}))[0][:40]
    'caution: hydrofluoric acid (H+ with F-):'
    >>> cautions_for(Solution({"Na+": 0.1, "Cl-": 0.1}))
    []
    """
    names = set(sol.species)
    out = []

    def most(name: str) -> float:
        return float(np.max(sol.m[sol.species.index(name)])) if name in names else 0.0

    if ("F-" in names or "HF" in names or "HF2-" in names) and ("H+" in names or "HF" in names):
        out.append(
            "caution: hydrofluoric acid (H+ with F-): HF penetrates skin and causes delayed, "
            "deep burns and systemic poisoning; handle only under your site's HF procedure, "
            "with the first aid it prescribes at hand"
        )
    # 0.1 mol/kg (pH ≈ 1, pH ≈ 13 for OH-): our threshold for "strong"; solutions this
    # concentrated are handled as corrosive in common laboratory practice.
    if most("H+") >= 0.1:
        out.append(
            "caution: strong acid (H+ ≥ 0.1 mol/kg): corrosive; follow your local codes and validated procedures"
        )
    if most("OH-") >= 0.1:
        out.append(
            "caution: strong base (OH- ≥ 0.1 mol/kg): corrosive; follow your local codes and validated procedures"
        )
    return out
