"""The v0 public API that other codes import (see DESIGN.md). Renames need a deprecation path."""
import inspect

import pytest

import activity as act

CORE_NAMES = [
    "Solution",
    "available_models",
    "get_model",
    "register_model",
    "activities",
    "activity_coefficients",
    "mean_activity_coefficient",
    "debye_huckel_A",
    "debye_huckel_B",
    "debye_huckel_Aphi",
    "parse_species",
    "ActivityModel",
    "CoefficientResult",
    "Validity",
    "ActivityError",
    "InputError",
    "ConvergenceError",
    "ModelError",
    "ActivityWarning",
    "ValidityWarning",
    "CoverageWarning",
    "ElectroneutralityWarning",
]
LATER_NAMES = ["nernst_slope", "HalfReaction", "Cell", "propagate"]
BUILTIN_MODELS = ["ideal", "debye-huckel-limiting", "extended-debye-huckel", "truesdell-jones", "davies", "pitzer"]


@pytest.mark.parametrize("name", CORE_NAMES)
def test_core_names_exist(name):
    assert hasattr(act, name)
    assert name in dir(act)


@pytest.mark.parametrize("name", LATER_NAMES)
def test_electrode_and_uncertainty_names_exist(name):
    if name not in act.__all__:
        pytest.skip(f"{name} belongs to a layer not yet merged")
    assert callable(getattr(act, name))


def test_builtin_models_are_registered():
    assert set(BUILTIN_MODELS) <= set(act.available_models())


def test_signatures():
    assert list(inspect.signature(act.Solution).parameters)[:3] == ["composition", "T", "P"]
    assert "density" in inspect.signature(act.Solution.from_molarity).parameters
    assert list(inspect.signature(act.mean_activity_coefficient).parameters)[:4] == ["sol", "cation", "anion", "model"]


def test_design_example_runs():
    sol = act.Solution({"Na+": 0.1, "Cl-": 0.1}, T=298.15)
    sol2 = act.Solution.from_molarity({"K+": 0.1, "Cl-": 0.1}, T=298.15)
    assert isinstance(sol.ionic_strength, float)
    assert sol.species == ("Na+", "Cl-")
    assert sol2.ionic_strength == pytest.approx(0.1, rel=1e-2)
    g = act.get_model("davies").activity_coefficients(sol)
    assert set(g) == {"Na+", "Cl-"}
    a = act.activities(sol, act.get_model("davies"))
    assert a["Na+"] == pytest.approx(g["Na+"] * 0.1)
    assert 0 < act.mean_activity_coefficient(act.Solution({"Ca^2+": 0.01, "Cl-": 0.02}), "Ca^2+", "Cl-", "davies") < 1


def test_unknown_attribute():
    with pytest.raises(AttributeError):
        act.no_such_name  # noqa: B018


def test_input_error_hierarchy():
    assert issubclass(act.InputError, act.ActivityError)
    assert issubclass(act.InputError, ValueError)
    assert issubclass(act.ValidityWarning, act.ActivityWarning)
