"""activity — an activity-corrected Nernst engine.

Ionic strength, activity coefficients (ideal, Debye–Hückel family, Davies, Pitzer),
activities, electrode and cell potentials, and their uncertainties, for one solution or
millions at once.

Names are imported lazily so that ``import activity`` (and the command line) start fast.
"""
from __future__ import annotations

import importlib
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
    "activity_coefficients": "evaluate",
    "activities": "evaluate",
    "mean_activity_coefficient": "evaluate",
    # Pitzer
    "PitzerModel": "coefficients.pitzer",
    "load_pitzer_parameters": "coefficients.pitzer:load_parameters",
    # potentials: electrochemical potential, half-reactions, electrodes, cells, junctions, membranes, inverse
    "nernst_slope": "electrochem",
    "electrochemical_potential": "electrochem",
    "reaction_gibbs": "electrochem",
    "nernst_potential": "electrochem",
    "parse_reaction": "reactions",
    "balance_half_reaction": "reactions",
    "HalfReaction": "nernst",
    "ElectrodeResult": "nernst",
    "standard_couple": "nernst",
    "available_couples": "nernst",
    "ReferenceElectrode": "electrodes",
    "silver_chloride_electrode": "electrodes",
    "calomel_electrode": "electrodes",
    "IonSelectiveElectrode": "electrodes",
    "Cell": "cell",
    "CellResult": "cell",
    "henderson_potential": "junction",
    "ghk_potential": "membrane",
    "donnan_potential": "membrane",
    "nikolsky_eisenman": "membrane",
    "activity_from_potential": "inverse",
    "molality_from_potential": "inverse",
    "molality_from_emf": "inverse",
    # uncertainty (GUM, Monte Carlo) and its use along the whole chain
    "potential_with_uncertainty": "chain",
    "emf_with_uncertainty": "chain",
    "molality_with_uncertainty": "chain",
    "ChainResult": "chain",
    "propagate": "uncertainty",
    "validate_gum": "uncertainty",
    "model_spread": "uncertainty",
    "Normal": "uncertainty",
    "Rectangular": "uncertainty",
    "Triangular": "uncertainty",
    "StudentT": "uncertainty",
    "measured": "uncertainty",
    "Distribution": "uncertainty",
    "PropagationResult": "uncertainty",
    "ValidationResult": "uncertainty",
    "BudgetRow": "uncertainty",
    "ModelSpread": "uncertainty",
}

__all__ = sorted(_EXPORTS) + ["__version__"]


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
