"""Ideal solution: γ = 1 for every species."""

from __future__ import annotations

import numpy as np

from .base import ActivityModel, Validity

__all__ = ["IdealModel"]


class IdealModel(ActivityModel):
    """γ_i = 1 and φ = 1; honest only in the limit of infinite dilution.

    Examples
    --------
    >>> from activity import Solution
    >>> IdealModel().activity_coefficients(Solution({"Na+": 1e-4, "Cl-": 1e-4}))["Na+"]
    1.0
    """

    name = "ideal"
    validity = Validity(1e-4, species="all species", basis="common practice: deviations reach 1 % near I = 1e-4 mol/kg")

    def compute_log10_gamma(self, sol, bound, I):
        return np.zeros((len(sol.species),) + I.shape)

    def compute_osmotic(self, sol, bound, I):
        return np.ones(I.shape)
