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
POTENTIAL_NAMES = [
    "nernst_slope",
    "HalfReaction",
    "Cell",
    "standard_couple",
    "silver_chloride_electrode",
    "IonSelectiveElectrode",
    "henderson_potential",
    "molality_from_emf",
]
SPECIATION_NAMES = ["speciate", "free_activity", "metal_buffer", "free_metal"]
ISE_NAMES = [
    "calibrate_ise",
    "separate_solution",
    "fixed_interference",
    "matched_potential",
    "single_addition",
    "multiple_addition",
    "drift_check",
]
PH_NAMES = ["buffer_ph", "standard_buffers", "calibrate_ph", "harned_ph", "validate_meter"]
UNCERTAINTY_NAMES = ["propagate", "Normal", "Rectangular", "Triangular", "StudentT", "molality_with_uncertainty"]
BUILTIN_MODELS = ["ideal", "debye-huckel-limiting", "extended-debye-huckel", "truesdell-jones", "davies", "pitzer"]


@pytest.mark.parametrize("name", CORE_NAMES)
def test_core_names_exist(name):
    assert hasattr(act, name)
    assert name in dir(act)


@pytest.mark.parametrize("name", POTENTIAL_NAMES + UNCERTAINTY_NAMES + PH_NAMES + ISE_NAMES + SPECIATION_NAMES)
def test_electrode_and_uncertainty_names_exist(name):
    assert name in act.__all__
    assert callable(getattr(act, name))


@pytest.mark.parametrize("name", sorted(set(act.__all__) - {"__version__"}))
def test_every_exported_name_resolves(name):
    assert getattr(act, name) is not None


def test_design_potential_examples_run():
    sol = act.Solution({"Na+": 0.1, "Cl-": 0.1})
    hr = act.HalfReaction("AgCl(s) + e- = Ag(s) + Cl-", E0=0.22233)
    E = hr.potential(sol, act.get_model("davies"))
    # E = E° − (RT/F) ln a(Cl-): the Nernst equation written out
    g = act.get_model("davies").activity_coefficients(sol)["Cl-"]
    assert E == pytest.approx(0.22233 - act.nernst_slope(298.15) * __import__("math").log10(0.1 * g), abs=1e-9)
    cell = act.Cell(left=act.standard_couple("H+/H2"), right=hr)
    assert cell.emf(act.Solution({"H+": 0.01, "Cl-": 0.01}), "davies", pressures={"H2(g)": 1e5}) > 0.4
    res = act.propagate(lambda x: 2 * x, {"x": act.Normal(1.0, 0.1)}, method="gum")
    assert res.standard_uncertainty == pytest.approx(0.2)


def test_builtin_models_are_registered():
    assert set(BUILTIN_MODELS) <= set(act.available_models())


def test_speciate_signature():
    params = inspect.signature(act.speciate).parameters
    assert list(params)[:2] == ["solution", "model"] and params["model"].default == "davies"
    assert {"ph", "balance", "gases"} <= set(params) and str(params["balance"].default).startswith("H+")


def test_speciation_additions():
    # issue 9 follow-ups: progress callback, the speciated solution's record of explicit ion
    # pairs, and free-ion readings through the uncertainty chain
    from activity.speciation import SpeciatedSolution
    from activity.workflows.measurement import molality_with_uncertainty

    assert inspect.signature(act.speciate).parameters["progress"].default is None
    assert act.Solution.explicit_ion_pairs == frozenset()
    assert issubclass(SpeciatedSolution, act.Solution)
    assert isinstance(act.speciate({"Ca^2+": 0.01, "SO4^2-": 0.01}).solution, SpeciatedSolution)
    assert inspect.signature(molality_with_uncertainty).parameters["speciation"].default is None


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
    # γ± of CaCl2 by the Davies equation written out (Davies 1938): log10 γ± = −A|z+ z−|(√I/(1+√I) − 0.3 I)
    s = 0.03**0.5
    expected = 10 ** (-act.debye_huckel_A(298.15) * 2 * (s / (1 + s) - 0.3 * 0.03))
    got = act.mean_activity_coefficient(act.Solution({"Ca^2+": 0.01, "Cl-": 0.02}), "Ca^2+", "Cl-", "davies")
    assert got == pytest.approx(expected, rel=1e-12)


def test_unknown_attribute():
    with pytest.raises(AttributeError):
        act.no_such_name  # noqa: B018


def test_input_error_hierarchy():
    assert issubclass(act.InputError, act.ActivityError)
    assert issubclass(act.InputError, ValueError)
    assert issubclass(act.ValidityWarning, act.ActivityWarning)


SUBPACKAGE_NAMES = {
    "activity.coefficients.testing": ["check_model", "ConformanceError", "ConformanceReport"],
    "activity.coefficients.compare": ["run_models", "compare_models", "ModelRun"],
    "activity.nernst": [
        "Cell",
        "HalfReaction",
        "IonSelectiveElectrode",
        "ReferenceElectrode",
        "nernst_slope",
        "standard_couple",
        "molality_from_emf",
        "molality_from_potential",
    ],
    "activity.nernst.protocol": ["Electrode", "ElectrodeResult"],
    "activity.workflows.measurement": [
        "molality_with_uncertainty",
        "potential_with_uncertainty",
        "emf_with_uncertainty",
        "ChainResult",
    ],
    "activity.workflows.model_choice": ["model_spread", "ModelSpread"],
    "activity.workflows.record": ["Record"],
    "activity.io.files": ["write_text", "write_bytes", "atomic_output"],
    "activity.io.tables": ["read_table", "iter_table", "solution_from_table", "TableInput", "CHUNK_ROWS"],
    "activity.io.streaming": ["NoteMerger", "SpooledTable", "json_document"],
}


@pytest.mark.parametrize("module, names", list(SUBPACKAGE_NAMES.items()))
def test_subpackage_names(module, names):
    import importlib

    mod = importlib.import_module(module)
    for name in names:
        assert hasattr(mod, name), f"{module}.{name}"


@pytest.mark.parametrize(
    "old, new",
    [
        ("activity.chain", "activity.workflows.measurement"),
        ("activity.electrochem", "activity.nernst.equations"),
        ("activity.units", "activity.io.units"),
    ],
)
def test_moved_modules_import_under_their_old_names_with_a_warning(old, new):
    import importlib
    import sys

    sys.modules.pop(old, None)
    with pytest.warns(DeprecationWarning, match=new.replace(".", r"\.")):
        mod = importlib.import_module(old)
    assert mod is importlib.import_module(new)
    sys.modules.pop(old, None)


def test_lower_layers_import_no_higher_layer():
    """The data flow is one-directional: core → coefficients → nernst → uncertainty → workflows;
    io/ and cli/ only at the edges (checked on the import statements of each module)."""
    import ast
    import pathlib

    root = pathlib.Path(act.__file__).parent
    rank = {"coefficients": 1, "speciation": 2, "nernst": 3, "uncertainty": 3, "workflows": 4, "io": 5, "cli": 6}
    bad = []
    for path in root.rglob("*.py"):
        rel = path.relative_to(root).parts
        layer = rank.get(rel[0], 0) if len(rel) > 1 else 0
        if rel[0] == "__init__.py":
            continue
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.ImportFrom):
                if node.level:
                    base = list(rel[:-1])[: len(rel) - node.level]
                    target = (base + (node.module or "").split("."))[:1]
                elif (node.module or "").startswith("activity."):
                    target = node.module.split(".")[1:2]
                else:
                    continue
                target_rank = rank.get(target[0], 0) if target and target[0] else 0
                if target_rank > layer and not (layer == 4 and target and target[0] == "io"):
                    bad.append(f"{'/'.join(rel)} imports {target[0] if target else '?'}")
    assert not bad, bad


def test_calibrate_ise_signature():
    params = inspect.signature(act.calibrate_ise).parameters
    assert list(params)[:3] == ["standards", "emf", "ion"]
    assert {"model", "slope", "interferents", "weights", "speciation"} <= set(params)
    assert params["speciation"].default is None and params["model"].default == "davies"
    from activity.workflows.ise.calibration import FORMAT, ISECalibration
    from activity.workflows.ise.unknowns import read_with_uncertainty

    assert FORMAT == 2 and isinstance(ISECalibration.activity_basis, property)
    assert {"method", "trials", "seed", "progress"} <= set(inspect.signature(read_with_uncertainty).parameters)
