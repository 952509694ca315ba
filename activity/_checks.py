"""Input checks shared by the core modules (internal)."""

from __future__ import annotations

from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .constants import ZERO_CELSIUS
from .errors import InputError

#: Temperature range covered by the water-property correlations, K.
T_MIN, T_MAX = ZERO_CELSIUS, ZERO_CELSIUS + 150.0


def finite_array(value: Any, field: str, *, nonnegative: bool = False, positive: bool = False) -> np.ndarray:
    """Convert to a float ndarray, refusing NaN, infinities and (optionally) negatives."""
    if value is None:
        raise InputError("not a number", field=field, value=value)
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError("not a number", field=field, value=value) from None
    if arr.size > 1:
        # two reductions instead of three elementwise tests with their boolean temporaries:
        # min and max are NaN when any value is, so both finite means every value is; the
        # sign conditions follow from the least value. Only a failure takes the tests below,
        # which name the first offending value as before.
        lo, hi = arr.min(), arr.max()
        if np.isfinite(lo) and np.isfinite(hi) and not (positive and lo <= 0) and not (nonnegative and lo < 0):
            return arr
    if not np.all(np.isfinite(arr)):
        bad = arr if arr.ndim == 0 else arr[~np.isfinite(arr)][0]
        raise InputError("must be finite (no NaN or infinity)", field=field, value=float(bad))
    if positive and np.any(arr <= 0):
        bad = arr if arr.ndim == 0 else arr[arr <= 0][0]
        raise InputError("must be positive", field=field, value=float(bad))
    if nonnegative and np.any(arr < 0):
        bad = arr if arr.ndim == 0 else arr[arr < 0][0]
        raise InputError("must not be negative", field=field, value=float(bad))
    return arr


def temperature(T: ArrayLike, field: str = "T", t_min: float = T_MIN, t_max: float = T_MAX) -> np.ndarray:
    """Validate a thermodynamic temperature in kelvin.

    A value below 273.15 K that would be a plausible Celsius temperature gets a hint.
    """
    try:
        arr = np.asarray(T, dtype=float)
    except (TypeError, ValueError):
        arr = None
    if arr is not None and arr.size:  # min and max serve both checks (NaN makes them NaN)
        lo, hi = float(arr.min()), float(arr.max())
        if not (np.isfinite(lo) and np.isfinite(hi)):
            finite_array(T, field)  # raises, naming the first bad value
    else:
        arr = finite_array(T, field)
        lo, hi = t_min, t_max
    if lo < t_min:
        if t_min <= lo + ZERO_CELSIUS <= t_max:  # a plausible Celsius number given as kelvin
            raise InputError(
                f"{lo:g} K is below {t_min:g} K — did you mean {lo:g} °C = "
                f"{lo + ZERO_CELSIUS:.2f} K? Temperatures are in kelvin",
                field=field,
                value=lo,
            )
        raise InputError(f"below the lowest temperature covered, {t_min:g} K", field=field, value=lo)
    if hi > t_max:
        raise InputError(
            f"above the highest temperature covered, {t_max:g} K ({t_max - ZERO_CELSIUS:g} °C)",
            field=field,
            value=hi,
        )
    return arr


def scalar_or_array(arr: np.ndarray) -> Any:
    """Return a Python float for 0-d arrays, else the array itself."""
    return float(arr) if np.ndim(arr) == 0 else arr


#: Pressures: the water density model ignores pressure (1 atm), which is good to about
#: 0.5 % in density up to 10 MPa (compressibility of water 4.6e-10 1/Pa, common practice);
#: the permittivity correlation holds to 500 MPa (Bradley & Pitzer 1979).
P_NOTE, P_MAX = 10e6, 500e6


def pressure_notes(P: ArrayLike, field: str = "P") -> tuple[str, ...]:
    """Refuse pressures beyond every correlation; return a note for those beyond the density model."""
    arr = finite_array(P, field, positive=True)
    hi = float(arr.max()) if arr.size else 0.0
    if hi > P_MAX:
        raise InputError(
            f"above {P_MAX / 1e5:g} bar, beyond the water correlations (pressures are in Pa)", field=field, value=hi
        )
    if hi > P_NOTE:
        return (
            f"pressure up to {hi / 1e5:g} bar: the water density model ignores pressure (good to about 0.5 % "
            f"up to {P_NOTE / 1e5:g} bar), so A, B and molarities are approximate",
        )
    return ()
