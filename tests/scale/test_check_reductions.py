"""Checks decided by reductions (min, max) before any elementwise mask give the decisions,
errors, flags and notes of the elementwise code they front; γ read from a result as
exp(ln10 · lg) equals 10**lg to rounding.

The ``_previous_*`` functions are copies of the code before (the elementwise tests).
"""

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import activity as act
from activity import _checks
from activity.coefficients.base import ActivityModel, _exp10
from activity.constants import ZERO_CELSIUS
from activity.errors import InputError


def _previous_finite_array(value, field, *, nonnegative=False, positive=False):
    if value is None:
        raise InputError("not a number", field=field, value=value)
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError("not a number", field=field, value=value) from None
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


def _previous_temperature(T, field="T", t_min=_checks.T_MIN, t_max=_checks.T_MAX):
    arr = _previous_finite_array(T, field)
    lo = float(arr.min()) if arr.size else t_min
    hi = float(arr.max()) if arr.size else t_max
    if lo < t_min:
        if t_min <= lo + ZERO_CELSIUS <= t_max:
            raise InputError("Celsius hint", field=field, value=lo)
        raise InputError("below", field=field, value=lo)
    if hi > t_max:
        raise InputError("above", field=field, value=hi)
    return arr


def _outcome(f, *args, **kw):
    try:
        return ("ok", f(*args, **kw))
    except InputError as e:
        return ("error", e.field, e.value)


SPECIALS = [np.nan, np.inf, -np.inf, 0.0, -0.0, -1e-300, 5e-324, -3.0]


@settings(deadline=None, max_examples=150)
@given(
    n=st.integers(0, 40),
    seed=st.integers(0, 2**32 - 1),
    special=st.lists(st.sampled_from(SPECIALS), max_size=3),
    flags=st.sampled_from([{}, {"positive": True}, {"nonnegative": True}]),
)
def test_finite_array_decides_and_names_as_before(n, seed, special, flags):
    rng = np.random.default_rng(seed)
    x = rng.uniform(-1.0, 2.0, n) if rng.random() < 0.3 else rng.uniform(1e-6, 2.0, n)
    for k, v in enumerate(special):
        if n:
            x[(k * 7) % n] = v
    new, old = _outcome(_checks.finite_array, x, "x", **flags), _outcome(_previous_finite_array, x, "x", **flags)
    assert new[0] == old[0]
    if new[0] == "error":  # the same field and the same first offending value
        assert new[1] == old[1] and (new[2] == old[2] or (np.isnan(new[2]) and np.isnan(old[2])))
    else:
        np.testing.assert_array_equal(new[1], old[1])


@settings(deadline=None, max_examples=100)
@given(
    n=st.integers(0, 30), seed=st.integers(0, 2**32 - 1), special=st.lists(st.sampled_from(SPECIALS + [25.0, 500.0]))
)
def test_temperature_decides_as_before(n, seed, special):
    rng = np.random.default_rng(seed)
    T = rng.uniform(273.15, 423.15, n)
    for k, v in enumerate(special[:3]):
        if n:
            T[(k * 5) % n] = v
    new, old = _outcome(_checks.temperature, T), _outcome(_previous_temperature, T)
    assert new[0] == old[0]
    if new[0] == "error":
        assert new[1] == old[1] and (new[2] == old[2] or (np.isnan(new[2]) and np.isnan(old[2])))
    for bad in (None, "warm", [300.0, None]):  # not numbers: the same error as before
        with pytest.raises(InputError) as new_error:
            _checks.temperature(bad)
        with pytest.raises(InputError) as old_error:
            _previous_temperature(bad)
        assert str(new_error.value) == str(old_error.value)


def _previous_neutral_rows(sol, tol):
    s = sol._sums()
    return np.abs(s[0]) > tol * s[1]


@settings(deadline=None, max_examples=80)
@given(n=st.integers(1, 50), seed=st.integers(0, 2**32 - 1), tol=st.sampled_from([0.0, 1e-12, 1e-3, 0.05]))
def test_neutrality_decision_equals_the_elementwise_rule(n, seed, tol):
    rng = np.random.default_rng(seed)
    na = rng.uniform(0, 0.1, n)
    ca = rng.uniform(0, 0.01, n) * (rng.random(n) < 0.5)
    off = rng.choice([0.0, 1e-15, 1e-6, 1e-4, -1e-4], n) * (rng.random(n) < 0.2)
    comp = {"Na+": na, "Ca^2+": ca, "Cl-": np.maximum(na + 2 * ca + off, 0.0), "CO2": rng.uniform(0, 1e-3, n)}
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        sol = act.Solution(comp, neutrality="warn", neutrality_tol=tol)
    warned = [w for w in caught if issubclass(w.category, act.ElectroneutralityWarning)]
    assert bool(warned) == bool(np.any(_previous_neutral_rows(sol, tol)))
    if warned:
        assert f"in {int(np.count_nonzero(_previous_neutral_rows(sol, tol)))} of {n} row(s)" in str(warned[0].message)


def _previous_base_check_range(model, sol, I):
    v = model.validity
    notes = []
    ok = np.ones(np.shape(I), dtype=bool)
    if np.isfinite(v.max_ionic_strength):
        high = I > v.max_ionic_strength
        if np.any(high):
            ok &= ~high
            notes.append(f"I {int(np.count_nonzero(high))}")
    T = sol.T_compact
    t_bad = (T < v.T_min) | (T > v.T_max)
    if np.any(t_bad):
        ok &= ~np.broadcast_to(t_bad, ok.shape)
        notes.append("T")
    return ok, len(notes)


@pytest.mark.parametrize("model", ["davies", "extended-debye-huckel", "truesdell-jones", "pitzer", "ideal"])
@settings(deadline=None, max_examples=20)
@given(n=st.integers(1, 40), seed=st.integers(0, 2**32 - 1), t_rows=st.booleans(), sulfate=st.booleans())
def test_range_flags_and_notes_as_before(model, n, seed, t_rows, sulfate):
    rng = np.random.default_rng(seed)
    m = act.get_model(model)
    na = 10 ** rng.uniform(-4, 0.8, n)
    so4 = 10 ** rng.uniform(-4, -0.5, n) if sulfate else np.zeros(n)
    mg = so4 * rng.uniform(0, 1, n)
    T = rng.uniform(273.15, 423.15, n) if t_rows else float(rng.choice([278.15, 298.15, 360.0, 420.0]))
    sol = act.Solution({"Na+": na, "Mg^2+": mg, "Cl-": na, "SO4^2-": so4}, T=T, neutrality="ignore")
    I = np.asarray(sol.ionic_strength, dtype=float)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ok, notes = m.check_range(sol, I)
    ok0, k0 = _previous_base_check_range(m, sol, I)
    # the base flags are part of the model's flags; the base notes come first
    assert np.all(ok <= ok0) and len(notes) >= k0
    base_ok, base_notes = ActivityModel.check_range(m, sol, I)
    np.testing.assert_array_equal(base_ok, ok0)
    assert len(base_notes) == k0
    if not sulfate and model in ("davies", "extended-debye-huckel", "truesdell-jones"):
        # without a multivalent anion the Debye–Hückel-form limits add nothing (early return)
        from activity._checks import pressure_notes

        assert notes == base_notes + tuple(f"{m.name}: {x}" for x in pressure_notes(sol.P_compact))
        np.testing.assert_array_equal(ok, base_ok)


def test_gamma_from_exp_equals_the_power_to_rounding():
    lg = np.random.default_rng(7).uniform(-6.0, 3.0, 100_000)
    # |Δγ/γ| ≤ |lg| ln10 · 2⁻⁵³ + a few ulp of exp: below 1e-14 for |lg| ≤ 6 (common practice:
    # rounding of the argument of exp)
    np.testing.assert_allclose(_exp10(lg), 10.0**lg, rtol=1e-14, atol=0)
    assert _exp10(np.float64(0.0)) == 1.0 and np.ndim(_exp10(np.asarray(0.3))) == 0
    sol = act.Solution({"Na+": [0.01, 0.1], "Cl-": [0.01, 0.1]})
    g = act.get_model("davies").activity_coefficients(sol)
    np.testing.assert_allclose(g["Na+"], 10.0 ** g.log10_gamma[0], rtol=1e-15)
    np.testing.assert_allclose(g.gamma, 10.0**g.log10_gamma, rtol=1e-15)
