"""Davies equation: log10 γ_i = −A z_i² (√I/(1 + √I) − c I), c = 0.3 by default."""

from __future__ import annotations

import numpy as np

from ..errors import InputError
from ._dh_form import DebyeHuckelForm, IonTerms
from .base import Validity

__all__ = ["DaviesModel"]


class DaviesModel(DebyeHuckelForm):
    """Davies (1938; 1962, *Ion Association*) equation, A from :mod:`activity.water`.

    Parameters
    ----------
    c : float, default 0.3
        Coefficient of the linear term (Davies 1962 uses 0.3; 0.2 is also met).
    salting : Mapping[str, float], optional
        Setschenow coefficients of neutral species.

    Examples
    --------
    >>> from activity import Solution
    >>> g = DaviesModel().activity_coefficients(Solution({"Ca^2+": 0.01, "Cl-": 0.02}))
    >>> round(g["Ca^2+"], 3)
    0.521
    """

    name = "davies"
    validity = Validity(
        0.2,
        species="all ions, no specific parameters",
        basis="common practice; for NaCl within 2 % of Hamer & Wu (1972) up to I = 0.2 mol/kg, 7 % off at 0.5",
    )

    # MgSO4 at 0.05 mol/kg (I = 0.2): γ± 0.31 by Davies against about 0.23 measured (+37 %);
    # 2:2 salts associate (Davies 1962, Ion Association) — common practice: I ≤ 0.01.
    associated_max_ionic_strength = 0.01

    def __init__(self, c: float = 0.3, **kw):
        if not np.isfinite(c) or c < 0:
            raise InputError("must be a finite non-negative number", field="c", value=c)
        super().__init__(**kw)
        self.params["c"] = float(c)

    def _ion_terms(self, species, charges):
        n = len(species)
        return IonTerms(np.zeros(n), np.ones(n), self.params["c"], np.zeros(n))
