"""One conformance suite that every registered activity model must pass.

The suite itself is :func:`activity.coefficients.testing.check_model` (importable, so a
plug-in package runs the same checks in its own CI); here it runs for every registered
model, is shown to catch models that break each law, and the laws are searched further with
hypothesis. Compositions are drawn from NaCl, KCl, CaCl2, Na2SO4 and MgSO4.
"""

import warnings

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from scipy.integrate import quad

import activity as act
from activity import ActivityModel, ModelError, Solution, Validity
from activity.coefficients.davies import DaviesModel
from activity.coefficients.testing import ConformanceError, check_model

SALTS = {
    "NaCl": {"Na+": 1, "Cl-": 1},
    "KCl": {"K+": 1, "Cl-": 1},
    "CaCl2": {"Ca^2+": 1, "Cl-": 2},
    "Na2SO4": {"Na+": 2, "SO4^2-": 1},
    "MgSO4": {"Mg^2+": 1, "SO4^2-": 1},
}
MODELS = list(act.available_models())


def compose(parts):
    comp: dict[str, float] = {}
    for salt, m in parts:
        for ion, nu in SALTS[salt].items():
            comp[ion] = comp.get(ion, 0.0) + nu * m
    return comp


def max_I(model):
    return min(model.validity.max_ionic_strength, 3.0)


@pytest.fixture(params=MODELS, scope="module")
def model(request):
    try:
        return act.get_model(request.param)
    except act.InputError as exc:  # e.g. a plug-in that fails to load
        pytest.fail(f"registered model {request.param!r} cannot be constructed: {exc}")


def test_check_model_passes_every_registered_model(model):
    report = check_model(model)
    assert report.model == model.name and len(report.passed) + len(report.skipped) == 9
    assert "limiting law" in report.passed and "batch equals rows" in report.passed


class _Scaled(DaviesModel):
    """Davies with log γ scaled by 1.1: breaks the limiting law."""

    def compute_log10_gamma(self, sol, bound, I):
        return 1.1 * super().compute_log10_gamma(sol, bound, I)


class _RowCoupled(DaviesModel):
    """Each row's γ depends on the batch mean: breaks batch = row by row."""

    def compute_log10_gamma(self, sol, bound, I):
        lg = super().compute_log10_gamma(sol, bound, I)
        return lg * (1.0 + 0.01 * (np.asarray(I) - np.mean(I)))


class _OrderDependent(DaviesModel):
    """The first species listed gets γ lowered: breaks species-order invariance."""

    def compute_log10_gamma(self, sol, bound, I):
        lg = np.array(super().compute_log10_gamma(sol, bound, I), copy=True)
        lg[0] -= 0.01 * np.asarray(I)  # ∝ I: invisible in the limiting law, not in the order check
        return lg


class _BadOsmotic(DaviesModel):
    """φ shifted by 0.01: breaks Gibbs–Duhem."""

    def compute_osmotic(self, sol, bound, I):
        return super().compute_osmotic(sol, bound, I) + 0.01


@pytest.mark.parametrize(
    "broken, law",
    [
        (_Scaled, "limiting law"),
        (_RowCoupled, "batch equals row by row"),
        (_OrderDependent, "species order"),
        (_BadOsmotic, "Gibbs–Duhem"),
    ],
)
def test_check_model_catches_each_broken_law(broken, law):
    with pytest.raises(ConformanceError, match=law):
        check_model(broken())


def test_check_model_refuses_a_non_model():
    with pytest.raises(ConformanceError, match="not an ActivityModel"):
        check_model(object())


def test_is_a_model_with_declared_validity(model):
    assert isinstance(model, ActivityModel)
    assert model.name in MODELS
    assert isinstance(model.validity, Validity)
    assert model.validity.max_ionic_strength > 0
    assert model.validity.T_min < model.validity.T_max
    assert isinstance(model.validity.describe(), str)


def test_result_is_a_mapping_over_the_species(model):
    sol = Solution(compose([("NaCl", 1e-5), ("CaCl2", 1e-6)]))
    res = model.activity_coefficients(sol)
    assert list(res) == list(sol.species)
    assert res.log10_gamma.shape == (len(sol.species),)
    assert all(isinstance(n, str) for n in res.notes)
    # I = 1.3e-5 mol/kg: the limiting law gives γ(Ca²⁺) = 10^(−0.51·4·√I) = 0.983 and
    # γ(Na⁺, Cl⁻) = 0.996 (Debye & Hückel 1923); no model may lower γ by more than 2 % or
    # raise it above 1 for ions this dilute.
    for name in sol.species:
        assert 0.98 < res[name] <= 1.0


@pytest.mark.parametrize("salt", list(SALTS))
def test_limiting_law_as_I_goes_to_zero(model, salt):
    """As I → 0, log10 γ_i → −A z_i² √I (Debye & Hückel 1923); the ideal model gives 0."""
    sol = Solution(compose([(salt, 1e-7)]), T=310.15)
    lg = model.log10_gamma(sol)
    A = act.debye_huckel_A(310.15)
    limit = -A * sol.charges**2 * np.sqrt(sol.ionic_strength)
    if model.name == "ideal":
        assert np.all(lg == 0)
    else:
        assert lg == pytest.approx(limit, rel=2e-3)


@given(
    parts=st.lists(st.tuples(st.sampled_from(list(SALTS)), st.floats(1e-6, 1.0)), min_size=1, max_size=3),
    T=st.floats(278.15, 348.15),
    n=st.integers(2, 6),
)
def test_batch_equals_row_by_row(model, parts, T, n):
    scale = np.linspace(0.2, 1.0, n)
    comp = compose(parts)
    I1 = Solution(comp).ionic_strength
    factor = min(1.0, max_I(model) / I1) * scale
    batch = Solution({k: v * factor for k, v in comp.items()}, T=T)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", act.ActivityWarning)
        lg = model.log10_gamma(batch)
        rows = np.stack([model.log10_gamma(r) for r in batch.rows()], axis=-1)
    assert lg.shape == (len(comp), n)
    assert np.allclose(lg, rows, rtol=1e-12, atol=1e-14)


@given(
    parts=st.lists(st.tuples(st.sampled_from(list(SALTS)), st.floats(1e-6, 0.5)), min_size=1, max_size=4),
    seed=st.integers(0, 2**16),
)
def test_species_order_invariance(model, parts, seed):
    comp = compose(parts)
    names = list(comp)
    np.random.default_rng(seed).shuffle(names)
    a = Solution(comp)
    b = Solution({k: comp[k] for k in names})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", act.ActivityWarning)
        ga, gb = model.activity_coefficients(a), model.activity_coefficients(b)
    for k in comp:
        assert ga[k] == pytest.approx(gb[k], rel=1e-12)


@given(
    parts=st.lists(st.tuples(st.sampled_from(list(SALTS)), st.floats(0, 1)), min_size=1, max_size=4),
    T=st.floats(273.15, 423.15),
)
def test_finite_on_the_valid_domain(model, parts, T):
    comp = compose(parts)
    I1 = Solution(comp).ionic_strength
    if I1 == 0:
        return
    comp = {k: v * min(1.0, max_I(model) / I1) for k, v in comp.items()}
    T = float(np.clip(T, model.validity.T_min, model.validity.T_max))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", act.ActivityWarning)
        res = model.activity_coefficients(Solution(comp, T=T))
    assert np.all(np.isfinite(res.log10_gamma))
    if res.osmotic_coefficient is not None:
        assert np.isfinite(res.osmotic_coefficient) and res.osmotic_coefficient > 0


@pytest.mark.parametrize("salt", ["NaCl", "CaCl2", "Na2SO4"])
def test_gibbs_duhem_binary_salt(model, salt):
    """ln γ± = (φ − 1) + ∫₀ᵐ (φ − 1)/m′ dm′ for a single salt (Gibbs–Duhem)."""
    try:
        model.osmotic_coefficient(Solution(compose([(salt, 0.01)])))
    except ModelError:
        pytest.skip(f"{model.name} defines no osmotic coefficient")
    cation, anion = list(SALTS[salt])
    m = 0.9 * min(1.0, max_I(model) / Solution(compose([(salt, 1.0)])).ionic_strength)

    def phi_minus_1_over_m(x):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", act.ActivityWarning)
            return (model.osmotic_coefficient(Solution(compose([(salt, x)]))) - 1.0) / x

    integral, _ = quad(phi_minus_1_over_m, 0.0, m, epsabs=1e-12, epsrel=1e-10, limit=200)
    sol = Solution(compose([(salt, m)]))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", act.ActivityWarning)
        phi = model.osmotic_coefficient(sol)
        ln_gpm = np.log(act.mean_activity_coefficient(sol, cation, anion, model))
    assert ln_gpm == pytest.approx(phi - 1.0 + integral, abs=1e-5)


def test_water_activity_matches_osmotic_coefficient(model):
    sol = Solution(compose([("NaCl", 0.05)]))
    try:
        phi = model.osmotic_coefficient(sol)
    except ModelError:
        pytest.skip(f"{model.name} defines no osmotic coefficient")
    # ln a_w = −φ M_w Σm (definition of the molal osmotic coefficient); M_w = 18.015 g/mol
    # (IUPAC abridged atomic weights, Prohaska et al. 2022: 2 × 1.0080 + 15.999); Σm = 0.1 mol/kg.
    assert np.log(model.water_activity(sol)) == pytest.approx(-phi * 0.018015 * 0.1, rel=1e-12)


def test_constructor_only_stores_parameters(model):
    clone = type(model)(**model.params)
    assert clone.params == model.params
    assert clone._bindings == {}
