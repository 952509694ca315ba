"""The model spread keeps the models it resolved by name (no re-reading of parameter sets),
without confusing models that differ in class or parameters."""

import numpy as np

from activity.coefficients import get_model
from activity.coefficients.davies import DaviesModel
from activity.nernst.electrodes import IonSelectiveElectrode
from activity.solution import Solution
from activity.workflows import measurement
from activity.workflows.measurement import _spread_model, potential_with_uncertainty


def test_a_name_gives_the_same_bound_model_each_time():
    a, b = _spread_model("pitzer"), _spread_model("pitzer")
    assert a is b
    sol = Solution({"Na+": 0.1, "Cl-": 0.1})
    a.activity_coefficients(sol)
    assert b._bindings  # the binding made through a is there for b


def test_objects_pass_through_and_parameters_are_part_of_the_key():
    own = DaviesModel(c=0.2)
    assert _spread_model(own) is own
    assert _spread_model("davies") is not own
    assert _spread_model("davies").params == get_model("davies").params


def test_spread_results_unchanged_by_the_memo():
    measurement._SPREAD_MODELS.clear()
    ise = IonSelectiveElectrode("Ca^2+", E0=0.1)
    sample = Solution({"Ca^2+": 0.001, "K+": 0.1, "Cl-": 0.102})
    names = ["davies", "truesdell-jones", "pitzer"]
    first = potential_with_uncertainty(ise, sample, u_amount=0.01, u_e0=1e-4, spread_models=names)
    second = potential_with_uncertainty(ise, sample, u_amount=0.01, u_e0=1e-4, spread_models=names)  # kept
    assert first.spread.values == second.spread.values
    # the same spread from freshly built models, with no memo involved
    fresh = potential_with_uncertainty(
        ise, sample, u_amount=0.01, u_e0=1e-4, spread_models=[get_model(n) for n in first.spread.values]
    )
    assert np.allclose(list(fresh.spread.values.values()), list(first.spread.values.values()), rtol=1e-14, atol=0)
