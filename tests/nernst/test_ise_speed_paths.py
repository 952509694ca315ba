"""The ion-selective electrode's potential after the issue-13 speed work equals the code it
replaced. ``_reference_potential`` below is a copy of the previous ``evaluate`` (shared-γ
path with its row comparison, ln-scale arithmetic and a temporary for ln10·log10 γ).

Tolerance: the new path forms (k s/z)(log10 total + log10 γ) instead of
(k s/(z ln10))·ln10·(ln total/ln10 + …) — the same terms rounded in another order, a few
units of 1e-16 relative to the largest term; potentials are compared to 1e-12 relative with
an absolute floor of 1e-15 V (1e-12 of the ~1 V scale of the terms, for E near 0).
"""

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import activity as act
from activity.constants import LN10, F, R
from activity.nernst.electrodes import IonSelectiveElectrode, _own_row_model
from activity.nernst.membrane import nikolsky_eisenman_core

MODELS = ["davies", "extended-debye-huckel", "truesdell-jones", "debye-huckel-limiting", "pitzer"]


def _reference_potential(ise, sol, model):
    """The previous IonSelectiveElectrode.evaluate(...).potential, copied."""
    model = act.get_model(model)
    g = model.activity_coefficients(sol, warn=False)
    lg = g.log10_gamma
    T = sol.T_compact
    E0 = ise.e0_at(T)
    i = sol.index(ise.ion)
    present = [(j, sol.index(j)) for j in ise.selectivity if j in sol.species]
    if not any(sol.charges[k] != ise.z or not np.array_equal(lg[k], lg[i]) for _, k in present):
        shape = np.broadcast_shapes(sol.shape, *(np.shape(ise.selectivity[j]) for j, _ in present))
        total = np.zeros(shape) + sol.m[i]
        for j, k in present:
            total = total + ise.selectivity[j] * sol.m[k]
        if total.size == 0 or total.min() > 0:
            E = (np.log(total) + LN10 * lg[i]) * ise.slope_factor * R * np.asarray(T, float) / (ise.z * F)
            return E + E0, g
    ai, names, zj, aj = ise.activity_terms(sol, lg)
    K = [ise.selectivity[j] for j in names]
    return nikolsky_eisenman_core(E0, ai, ise.z, aj, [ise.z / z for z in zj], K, T, ise.slope_factor), g


def _compare(ise, sol, model):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", act.ActivityWarning)
        res = ise.evaluate(sol, model)
        E_ref, g = _reference_potential(ise, sol, model)
    np.testing.assert_allclose(res.potential, E_ref, rtol=1e-12, atol=1e-15)
    assert res.alerts == g.alerts
    assert res.notes[: len(g.notes)] == g.notes
    np.testing.assert_array_equal(res.in_range, g.in_range)
    return res


@settings(deadline=None, max_examples=40)
@given(
    seed=st.integers(0, 2**31),
    model=st.sampled_from(MODELS),
    interferents=st.sampled_from([{}, {"Na+": 0.01}, {"Ca^2+": 0.02}, {"Na+": 0.1, "Ca^2+": 1e-3}]),
    per_row=st.booleans(),
)
def test_potential_equals_previous_code(seed, model, interferents, per_row):
    rng = np.random.default_rng(seed)
    n = 13
    k = 10.0 ** rng.uniform(-6, -0.5, n)
    na = rng.uniform(0.0, 0.3, n)
    ca = rng.uniform(0.0, 0.01, n)
    T = rng.uniform(278.15, 318.15, n) if per_row else 298.15
    sol = act.Solution({"K+": k, "Na+": na, "Ca^2+": ca, "Cl-": k + na + 2 * ca}, T=T, neutrality="ignore")
    E0 = rng.uniform(-0.1, 0.1, n) if per_row else 0.05
    sel = {j: (v * rng.uniform(0.5, 2.0, n) if per_row else v) for j, v in interferents.items()}
    ise = IonSelectiveElectrode("K+", E0=E0, selectivity=sel, slope_factor=0.98, dE0dT=1e-4)
    res = _compare(ise, sol, model)
    for name, lga in res.log10_activity.items():  # the activities reported stay those of the model
        a = act.activities(sol, model)[name] if model != "pitzer" else None
        if a is not None:
            np.testing.assert_allclose(lga, np.log10(a), rtol=1e-12)


def test_scalar_and_absent_interferent():
    sol = act.Solution({"K+": 0.004, "Na+": 0.1, "Cl-": 0.104})
    ise = IonSelectiveElectrode("K+", E0=0.05, selectivity={"Na+": 0.01, "Li+": 0.001})
    res = _compare(ise, sol, "davies")
    assert any("Li+" in n for n in res.notes)  # the absent interferent is still noted
    assert np.ndim(res.potential) == 0


def test_rows_known_equal_only_from_the_binding():
    sol = act.Solution({"K+": 0.004, "Na+": 0.1, "Ca^2+": 0.001, "Cl-": 0.106})
    davies, edh = act.get_model("davies"), act.get_model("extended-debye-huckel")
    same_charge = IonSelectiveElectrode("K+", E0=0.05, selectivity={"Na+": 0.01})
    assert _own_row_model(davies) and not _own_row_model(act.get_model("pitzer"))
    assert same_charge._rows_equal_by_binding(sol, davies)  # Davies: γ from |z| alone
    assert not same_charge._rows_equal_by_binding(sol, edh)  # Kielland sizes differ (3 vs 4–4.5 Å)
    assert not same_charge._rows_equal_by_binding(sol, act.get_model("pitzer"))
    mixed = IonSelectiveElectrode("K+", E0=0.05, selectivity={"Ca^2+": 0.01})
    assert not mixed._rows_equal_by_binding(sol, davies)


@pytest.mark.parametrize("model", MODELS)
def test_cell_and_evaluate_in_agree(model):
    """evaluate_in (used by cells, with the row comparison) and evaluate (binding) agree."""
    sol = act.Solution({"K+": [1e-4, 1e-2], "Na+": 0.05, "Cl-": [0.0501, 0.06]})
    ise = IonSelectiveElectrode("K+", E0=0.05, selectivity={"Na+": 0.02})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", act.ActivityWarning)
        g = act.get_model(model).activity_coefficients(sol, warn=False)
        np.testing.assert_array_equal(ise.evaluate_in(sol, g).potential, ise.evaluate(sol, model).potential)
