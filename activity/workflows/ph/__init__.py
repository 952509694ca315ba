"""pH-meter validation: standard buffers, the Harned-cell primary method, meter calibration,
checks and sample pH with uncertainty budgets, plots and an HTML record.

* :mod:`.buffers` — pH(S) of standard buffers against temperature, user buffers
* :mod:`.convention` — the Bates–Guggenheim convention for γ(Cl⁻)
* :mod:`.harned` — pH(PS) from Harned-cell EMFs, with its budget
* :mod:`.meter` — one-point, two-point and multipoint calibration of a pH meter
* :mod:`.validation` — check buffers, verdicts, sample pH with a budget (liquid junction)
* :mod:`.files`, :mod:`.report`, :mod:`.plots` — CSV input, text/JSON/CSV/HTML output, figures
"""

from __future__ import annotations

import importlib
from typing import Any

_EXPORTS = {
    "buffer_ph": "buffers",
    "standard_buffers": "buffers",
    "get_buffer": "buffers",
    "load_buffers": "buffers",
    "StandardBuffer": "buffers",
    "BufferValue": "buffers",
    "bates_guggenheim_log10_gamma_cl": "convention",
    "harned_ph": "harned",
    "HarnedResult": "harned",
    "silver_chloride_e0": "harned",
    "silver_chloride_e0_from_hcl": "harned",
    "water_vapour_pressure": "harned",
    "calibrate_ph": "meter",
    "PhCalibration": "meter",
    "isothermal_intersection": "meter",
    "validate_meter": "validation",
    "Thresholds": "validation",
    "residual_junction": "validation",
}

__all__ = [
    "BufferValue",
    "HarnedResult",
    "PhCalibration",
    "StandardBuffer",
    "Thresholds",
    "bates_guggenheim_log10_gamma_cl",
    "buffer_ph",
    "calibrate_ph",
    "get_buffer",
    "harned_ph",
    "isothermal_intersection",
    "load_buffers",
    "residual_junction",
    "silver_chloride_e0",
    "silver_chloride_e0_from_hcl",
    "standard_buffers",
    "validate_meter",
    "water_vapour_pressure",
]


def __getattr__(name: str) -> Any:
    module = _EXPORTS.get(name)
    if module is None:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    value = getattr(importlib.import_module(f".{module}", __name__), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return __all__
