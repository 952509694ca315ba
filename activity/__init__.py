"""activity — an activity-corrected Nernst engine.

Ionic strength, activity coefficients (ideal, Debye–Hückel family, Davies, Pitzer),
activities, electrode and cell potentials, and their uncertainties, for one solution or
millions at once.

Names are imported lazily so that ``import activity`` (and the command line) start fast.
"""

from __future__ import annotations

import importlib
import importlib.abc
import importlib.util
from typing import Any

__version__ = "0.1.0"

_EXPORTS: dict[str, str] = {
    # errors and warnings
    "ActivityError": "errors",
    "InputError": "errors",
    "ConvergenceError": "errors",
    "ModelError": "errors",
    "ActivityWarning": "errors",
    "ValidityWarning": "errors",
    "CoverageWarning": "errors",
    "ElectroneutralityWarning": "errors",
    # composition
    "Species": "species",
    "parse_species": "species",
    "canonical_name": "species",
    "Solution": "solution",
    # water and Debye–Hückel parameters
    "debye_huckel_A": "water",
    "debye_huckel_B": "water",
    "debye_huckel_Aphi": "water",
    "water_density": "water:density",
    "water_permittivity": "water:permittivity",
    # models
    "ActivityModel": "coefficients",
    "CoefficientResult": "coefficients",
    "Validity": "coefficients",
    "available_models": "coefficients",
    "get_model": "coefficients",
    "register_model": "coefficients",
    "activity_coefficients": "coefficients.activities",
    "activities": "coefficients.activities",
    "mean_activity_coefficient": "coefficients.activities",
    # Pitzer
    "PitzerModel": "coefficients.pitzer",
    "load_pitzer_parameters": "coefficients.pitzer:load_parameters",
    # potentials: electrochemical potential, half-reactions, electrodes, cells, junctions, membranes, inverse
    "nernst_slope": "nernst.equations",
    "electrochemical_potential": "nernst.equations",
    "reaction_gibbs": "nernst.equations",
    "nernst_potential": "nernst.equations",
    "parse_reaction": "reactions",
    "balance_half_reaction": "reactions",
    "HalfReaction": "nernst.half_reaction",
    "ElectrodeResult": "nernst.half_reaction",
    "standard_couple": "nernst.half_reaction",
    "available_couples": "nernst.half_reaction",
    "ReferenceElectrode": "nernst.electrodes",
    "silver_chloride_electrode": "nernst.electrodes",
    "calomel_electrode": "nernst.electrodes",
    "IonSelectiveElectrode": "nernst.electrodes",
    "Cell": "nernst.cell",
    "CellResult": "nernst.cell",
    "henderson_potential": "nernst.junction",
    "ghk_potential": "nernst.membrane",
    "donnan_potential": "nernst.membrane",
    "nikolsky_eisenman": "nernst.membrane",
    "activity_from_potential": "nernst.inverse",
    "molality_from_potential": "nernst.inverse",
    "molality_from_emf": "nernst.inverse",
    # uncertainty (GUM, Monte Carlo) and its use along the whole chain
    "potential_with_uncertainty": "workflows.measurement",
    "emf_with_uncertainty": "workflows.measurement",
    "molality_with_uncertainty": "workflows.measurement",
    "ChainResult": "workflows.measurement",
    "propagate": "uncertainty",
    "validate_gum": "uncertainty",
    "model_spread": "workflows.model_choice",
    "Normal": "uncertainty",
    "Rectangular": "uncertainty",
    "Triangular": "uncertainty",
    "StudentT": "uncertainty",
    "measured": "uncertainty",
    "Distribution": "uncertainty",
    "PropagationResult": "uncertainty",
    "ValidationResult": "uncertainty",
    "BudgetRow": "uncertainty",
    "ModelSpread": "workflows.model_choice",
    # speciation: free ions and pH from total compositions; metal-ion buffers
    "speciate": "speciation",
    "SpeciationResult": "speciation",
    "free_activity": "speciation",
    "metal_buffer": "speciation",
    "free_metal": "speciation",
    # ion-selective electrode calibration: fit, selectivity, known addition, drift
    "calibrate_ise": "workflows.ise.calibration",
    "ISECalibration": "workflows.ise.calibration",
    "separate_solution": "workflows.ise.selectivity",
    "fixed_interference": "workflows.ise.selectivity",
    "matched_potential": "workflows.ise.selectivity",
    "single_addition": "workflows.ise.addition",
    "multiple_addition": "workflows.ise.addition",
    "drift_check": "workflows.ise.drift",
    # pH-meter validation: standard buffers, the Harned-cell primary method, meter calibration
    "buffer_ph": "workflows.ph.buffers",
    "standard_buffers": "workflows.ph.buffers",
    "calibrate_ph": "workflows.ph.meter",
    "PhCalibration": "workflows.ph.meter",
    "harned_ph": "workflows.ph.harned",
    "validate_meter": "workflows.ph.validation",
}

__all__ = sorted(_EXPORTS) + ["__version__"]

# Modules that moved when the package was regrouped by layer. The old dotted paths still
# import (with a DeprecationWarning naming the new one) so that code written against them
# keeps working; they will be removed in a later minor version.
_MOVED: dict[str, str] = {
    "activity.evaluate": "activity.coefficients.activities",
    "activity.electrochem": "activity.nernst.equations",
    "activity.electrodes": "activity.nernst.electrodes",
    "activity.cell": "activity.nernst.cell",
    "activity.junction": "activity.nernst.junction",
    "activity.membrane": "activity.nernst.membrane",
    "activity.inverse": "activity.nernst.inverse",
    "activity.chain": "activity.workflows.measurement",
    "activity.demo": "activity.workflows.demo",
    "activity.units": "activity.io.units",
    "activity.recipe": "activity.io.recipe",
    "activity.tablefile": "activity.io.tables",
    "activity.report": "activity.formatting",
    "activity.commands": "activity.cli.render",
    "activity.uncertainty.spread": "activity.workflows.model_choice",
}


class _MovedModuleFinder(importlib.abc.MetaPathFinder, importlib.abc.Loader):
    """Serves a moved module under its old name (the same module object) with a warning."""

    def find_spec(self, fullname: str, path: Any = None, target: Any = None) -> Any:
        if fullname not in _MOVED:
            return None
        return importlib.util.spec_from_loader(fullname, self)

    def create_module(self, spec: Any) -> Any:
        import sys
        import warnings

        new = _MOVED[spec.name]
        warnings.warn(f"{spec.name} moved to {new}; import it from there", DeprecationWarning, stacklevel=3)
        module = importlib.import_module(new)
        sys.modules[spec.name] = module
        return module

    def exec_module(self, module: Any) -> None:
        return None


if not any(isinstance(f, _MovedModuleFinder) for f in __import__("sys").meta_path):
    __import__("sys").meta_path.append(_MovedModuleFinder())


def __getattr__(name: str) -> Any:
    target = _EXPORTS.get(name)
    if target is None:
        raise AttributeError(f"module 'activity' has no attribute {name!r}")
    module, _, attr = target.partition(":")
    value = getattr(importlib.import_module(f".{module}", __name__), attr or name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return __all__
