"""Extended Debye–Hückel equation with Kielland's ion-size parameters."""

from __future__ import annotations

import numpy as np

from ..errors import InputError
from ._dh_form import DebyeHuckelForm, IonTerms, source_of, table_values
from .base import Validity

__all__ = ["ExtendedDebyeHuckel", "ion_sizes"]


def ion_sizes(species, charges, table: str, fallback: float | None, overrides) -> tuple[np.ndarray, tuple[str, ...]]:
    """Look up ion sizes; missing ions raise, or use ``fallback`` and say so."""
    values = table_values(table)
    out = np.zeros(len(species))
    notes = []
    for i, (name, z) in enumerate(zip(species, charges)):
        if z == 0:
            continue
        if name in overrides:
            out[i] = overrides[name]
        elif name in values:
            v = values[name]
            out[i] = v[0] if isinstance(v, (tuple, list)) else v
        elif fallback is not None:
            out[i] = fallback
            notes.append(f"no ion size for {name} in {table}; used the fallback {fallback:g} Å")
        else:
            raise InputError(
                f"no ion-size parameter in models/species.toml [{table}]; give sizes={{{name!r}: å}} "
                f"or fallback_size=å",
                field="species",
                value=name,
            )
    return out, tuple(notes)


def _clean(mapping, field):
    from ..species import parse_species

    out = {}
    for k, v in (mapping or {}).items():
        if not np.isfinite(v) or v < 0:
            raise InputError("must be a finite non-negative number", field=f"{field}[{k!r}]", value=v)
        out[parse_species(k).name] = float(v)
    return out


class ExtendedDebyeHuckel(DebyeHuckelForm):
    """log10 γ_i = −A z_i² √I / (1 + B å_i √I), å from Kielland (1937).

    Parameters
    ----------
    sizes : Mapping[str, float], optional
        Ion sizes in Å overriding the table.
    fallback_size : float, optional
        Size used for ions absent from the table (recorded in the result's notes).
        Without it, an ion without a size is an error naming it.
    salting : Mapping[str, float], optional
        Setschenow coefficients of neutral species.

    Examples
    --------
    >>> from activity import Solution
    >>> g = ExtendedDebyeHuckel().activity_coefficients(Solution({"Na+": 0.01, "Cl-": 0.01}))
    >>> round(g["Na+"], 4), round(g["Cl-"], 4)
    (0.9027, 0.8986)
    """

    name = "extended-debye-huckel"
    validity = Validity(
        0.1, species="ions with a Kielland size (models/species.toml)", basis="common practice: ≲ 0.1 mol/kg"
    )

    # Kielland sizes do not describe ion association of 2:2 salts (common practice: I ≤ 0.01).
    associated_max_ionic_strength = 0.01

    def __init__(self, sizes=None, fallback_size: float | None = None, **kw):
        super().__init__(**kw)
        self._sizes = _clean(sizes, "sizes")
        if fallback_size is not None and not (np.isfinite(fallback_size) and fallback_size >= 0):
            raise InputError("must be a finite non-negative size in Å", field="fallback_size", value=fallback_size)
        self._fallback = fallback_size
        if sizes:
            self.params["sizes"] = dict(self._sizes)
        if fallback_size is not None:
            self.params["fallback_size"] = fallback_size

    def _ion_terms(self, species, charges):
        size, notes = ion_sizes(species, charges, "ion_size", self._fallback, self._sizes)
        n = len(species)
        return IonTerms(size, np.zeros(n), 0.0, np.zeros(n), notes)

    @staticmethod
    def source() -> str:
        return source_of("ion_size")
