"""Truesdell–Jones equation: extended Debye–Hückel plus an ion-specific linear term."""

from __future__ import annotations

import numpy as np

from ._dh_form import DebyeHuckelForm, IonTerms, table_values
from .base import Validity
from .extended_debye_huckel import _clean, ion_sizes

__all__ = ["TruesdellJones"]


class TruesdellJones(DebyeHuckelForm):
    """log10 γ_i = −A z_i² √I / (1 + B a_i √I) + b_i I (Truesdell & Jones 1974).

    The b_i are 25 °C values and are used unchanged at other temperatures.

    Parameters
    ----------
    params : Mapping[str, tuple[float, float]], optional
        (a in Å, b in kg/mol) per ion, overriding the table.
    fallback_size : float, optional
        a for ions absent from the table, with b = 0 (recorded in the notes).

    Examples
    --------
    >>> from activity import Solution
    >>> g = TruesdellJones().activity_coefficients(Solution({"Na+": 0.5, "Cl-": 0.5}))
    >>> round(g["Na+"], 3)
    0.709
    """

    name = "truesdell-jones"
    validity = Validity(
        2.0,
        T_min=273.15 + 15.0,
        T_max=273.15 + 35.0,
        species="Na, K, Mg, Ca, Cl, SO4, HCO3, CO3 (models/species.toml); with a divalent anion to "
        "I = 0.1, with a 2:2 pair to I = 0.01",
        basis="Truesdell & Jones 1974: b fitted at 25 °C to chloride data to about 2 mol/kg (from memory); "
        "15–35 °C for 25 °C constants (common practice, as for 25 °C Pitzer parameters)",
    )
    # Against Robinson & Stokes (1959, App. 8.10; from memory): MgSO4 +73 % at 0.1 mol/kg and +210 %
    # at 0.5; Na2SO4 +14 % at 0.1 and +55 % at 0.5. Chlorides hold to 2 mol/kg (CaCl2 0.5: 0.2 %).
    associated_max_ionic_strength = 0.01
    multivalent_anion_max_ionic_strength = 0.1

    def __init__(self, params=None, fallback_size: float | None = None, **kw):
        super().__init__(**kw)
        self._pairs = {}
        for k, (a, b) in (params or {}).items():
            name = next(iter(_clean({k: a}, "params")))
            self._pairs[name] = (float(a), float(b))
        self._fallback = fallback_size
        if params:
            self.params["params"] = dict(self._pairs)
        if fallback_size is not None:
            self.params["fallback_size"] = fallback_size

    def _ion_terms(self, species, charges):
        sizes = {k: v[0] for k, v in self._pairs.items()}
        size, notes = ion_sizes(species, charges, "truesdell_jones", self._fallback, sizes)
        table = table_values("truesdell_jones")
        b = np.zeros(len(species))
        for i, name in enumerate(species):
            if name in self._pairs:
                b[i] = self._pairs[name][1]
            elif name in table:
                b[i] = table[name][1]
        return IonTerms(size, np.zeros(len(species)), 0.0, b, notes)
