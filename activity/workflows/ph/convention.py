"""The Bates–Guggenheim convention: the single-ion activity coefficient of chloride.

pH(PS) of a primary standard needs lg γ(Cl⁻), which no measurement gives. By convention
(Bates & Guggenheim 1960, adopted by IUPAC; Gold Book, "Bates–Guggenheim convention",
PAC 1984, 56, 567, p. 569)

    lg γ(Cl⁻) = −A √I / (1 + 1.5 √I),    I ≤ 0.1 mol/kg,

with A the Debye–Hückel constant of water at the temperature (here from
:func:`activity.water.debye_huckel_A`) and 1.5 (kg/mol)^½ the product B·å fixed at every
temperature.
"""

from __future__ import annotations

from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from activity.errors import InputError
from activity.water import debye_huckel_A

__all__ = ["BG_MAX_IONIC_STRENGTH", "BG_PRODUCT", "bates_guggenheim_log10_gamma_cl"]

#: B·å of the convention, (kg/mol)^½ (IUPAC Gold Book, read).
BG_PRODUCT = 1.5
#: Highest ionic strength for which the convention is defined, mol/kg (IUPAC Gold Book, read).
BG_MAX_IONIC_STRENGTH = 0.1


def bates_guggenheim_log10_gamma_cl(ionic_strength: ArrayLike, T: ArrayLike = 298.15) -> Any:
    """lg γ(Cl⁻) by the Bates–Guggenheim convention.

    Parameters
    ----------
    ionic_strength : array_like
        I in mol/kg, 0 ≤ I ≤ 0.1.
    T : array_like, default 298.15
        Temperature in kelvin (A from the water layer). Broadcasts with ``ionic_strength``.

    Returns
    -------
    float or ndarray

    Raises
    ------
    InputError
        For I above 0.1 mol/kg, where the convention is not defined.

    Examples
    --------
    >>> round(bates_guggenheim_log10_gamma_cl(0.1, 298.15), 5)
    -0.10939
    """
    I = np.asarray(ionic_strength, dtype=float)
    if not np.all(np.isfinite(I)) or np.any(I < 0):
        raise InputError(
            "must be a finite, non-negative ionic strength in mol/kg",
            field="ionic_strength",
            value=ionic_strength,
        )
    if np.any(I > BG_MAX_IONIC_STRENGTH + 1e-9):
        raise InputError(
            "the Bates–Guggenheim convention is defined for I ≤ 0.1 mol/kg only",
            field="ionic_strength",
            value=float(np.max(I)),
        )
    A = np.asarray(debye_huckel_A(T), dtype=float)
    s = np.sqrt(I)
    out = -A * s / (1.0 + BG_PRODUCT * s)
    return float(out) if out.ndim == 0 else out
