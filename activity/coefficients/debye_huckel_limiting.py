"""Debye–Hückel limiting law: log10 γ_i = −A z_i² √I."""

from __future__ import annotations

import numpy as np

from ._dh_form import DebyeHuckelForm, IonTerms
from .base import Validity

__all__ = ["DebyeHuckelLimiting"]


class DebyeHuckelLimiting(DebyeHuckelForm):
    """Debye–Hückel limiting law (Debye & Hückel 1923), A from :mod:`activity.water`.

    Parameters
    ----------
    salting : Mapping[str, float], optional
        Setschenow coefficients k_s (kg/mol) of neutral species: log10 γ = k_s I.

    Examples
    --------
    >>> from activity import Solution
    >>> g = DebyeHuckelLimiting().activity_coefficients(Solution({"Na+": 0.001, "Cl-": 0.001}))
    >>> round(g["Cl-"], 4)
    0.9635
    """

    name = "debye-huckel-limiting"
    validity = Validity(
        0.005,
        species="all ions",
        basis="common practice: the limiting law holds to about 1 % below I ≈ 0.005 mol/kg for 1:1 salts",
    )

    def _ion_terms(self, species, charges):
        zero = np.zeros(len(species))
        return IonTerms(zero, zero, 0.0, zero)
