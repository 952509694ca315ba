"""The ion-selective electrode reading only its own rows of log10 γ gives the results of the
code before (bit for bit), and the Debye–Hückel kernel that now reuses its row buffers
gives the log10 γ of the kernel before (bit for bit).

``_previous_kernel`` and ``_previous_potential`` are copies of the code they replaced (the
whole-model evaluation followed by the shared-γ or general Nikolsky–Eisenman path). The
new code performs the same floating-point operations in the same order, only into other
buffers and on fewer species, so equality is exact (``assert_array_equal``), not a
tolerance.
"""

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import activity as act
from activity.constants import LN10, F, R
from activity.nernst.electrodes import IonSelectiveElectrode
from activity.nernst.membrane import nikolsky_eisenman_core
from activity.water import debye_huckel_A

DH_MODELS = ["davies", "extended-debye-huckel", "truesdell-jones", "debye-huckel-limiting", "ideal"]
MODELS = DH_MODELS + ["pitzer"]


def _previous_kernel(model, sol, bound, I):
    """DebyeHuckelForm.compute_log10_gamma before the buffer reuse (copied)."""
    if any(size for (size, _), _ in bound.groups):
        A, B = model._AB(sol)
    else:
        A, B = np.asarray(debye_huckel_A(sol.T_compact, sol.P_compact)), 0.0
    s = np.sqrt(I)
    k = len(bound.z2)
    t = bound.terms
    out = np.empty((k,) + I.shape)
    As = A * s
    for (size, d), idx in bound.groups:
        if size or d:
            K = B * size + d
            q = np.add(s, 1.0) if (not size and d == 1.0) else np.add(np.multiply(K, s), 1.0)
            q = np.divide(As, q, out=q) if np.ndim(q) and np.shape(q) == np.shape(As) else As / q
        else:
            q = As
        if t.c:
            h = np.asarray((t.c * A) * I)
            h = h - q if h.ndim == 0 or h.shape != np.shape(q) else np.subtract(h, q, out=h)
        else:
            h = np.negative(q)
        for i in idx:
            np.multiply(h, bound.z2[i], out=out[i, ...])
            if t.b[i]:
                out[i] += t.b[i] * I
    for i in range(k):
        if bound.z2[i] == 0:
            out[i] = t.b[i] * I
    return out


def _previous_potential(ise, sol, model):
    """IonSelectiveElectrode.evaluate before the own-rows path: (E, notes, in_range, alerts, the
    model's result, log10 activities)."""
    model = act.get_model(model) if isinstance(model, str) else model
    g = model.activity_coefficients(sol, warn=False)
    lg = g.log10_gamma
    T = sol.T_compact
    E0 = ise.e0_at(T)
    i = sol.index(ise.ion)
    present = [(j, sol.index(j)) for j in ise.selectivity if j in sol.species]
    E = None
    names = [ise.ion] + [j for j, _ in present]
    lga = {j: sol.m[k] * 10.0 ** lg[k] for j, k in [(ise.ion, i)] + present}  # the shared path's activities
    if not any(sol.charges[k] != ise.z or not np.array_equal(lg[k], lg[i]) for _, k in present):
        shape = np.broadcast_shapes(sol.shape, *(np.shape(ise.selectivity[j]) for j, _ in present))
        if present:
            total = np.empty(shape)
            (j0, k0), rest = present[0], present[1:]
            np.multiply(ise.selectivity[j0], sol.m[k0], out=total)
            for j, k in rest:
                total += ise.selectivity[j] * sol.m[k]
            total += sol.m[i]
        else:
            total = sol.m[i]
        if total.size == 0 or total.min() > 0:
            E = np.log(total, out=total) if present else np.log(total)
            E *= 1.0 / LN10
            E += lg[i]
            E *= ise.slope_factor * R * LN10 * np.asarray(T, float) / (ise.z * F)
            E += E0
    if E is None:
        ai, names, zj, aj = ise.activity_terms(sol, lg)
        K = [ise.selectivity[j] for j in names]
        E = nikolsky_eisenman_core(E0, ai, ise.z, aj, [ise.z / z for z in zj], K, T, ise.slope_factor)
        lga = dict(zip([ise.ion] + names, [ai, *aj]))
    absent = tuple(
        f"interferent {j} absent from the solution (activity 0)" for j in ise.selectivity if j not in sol.species
    )
    with np.errstate(divide="ignore"):
        lga = {j: np.where(a > 0, np.log10(a), -np.inf) for j, a in lga.items()}
    return E, tuple(g.notes) + absent, g.in_range, g.alerts, g, lga


def _sample(rng, n, per_row, zero_k=False):
    k = 10.0 ** rng.uniform(-6, -0.5, n)
    if zero_k:
        k[0] = 0.0  # a row without the primary ion
    na = rng.uniform(0.0, 0.3, n)
    ca = rng.uniform(0.0, 0.01, n)
    T = rng.uniform(278.15, 358.15, n) if per_row else 298.15
    return act.Solution({"K+": k, "Na+": na, "Ca^2+": ca, "Cl-": k + na + 2 * ca}, T=T, neutrality="ignore")


@settings(deadline=None, max_examples=40)
@given(
    seed=st.integers(0, 2**31),
    model=st.sampled_from(MODELS),
    interferents=st.sampled_from([{}, {"Na+": 0.01}, {"Ca^2+": 0.02}, {"Na+": 0.1, "Ca^2+": 1e-3}, {"Li+": 0.1}]),
    per_row=st.booleans(),
    zero_k=st.booleans(),
)
def test_potential_record_and_activities_equal_the_previous_code(seed, model, interferents, per_row, zero_k):
    rng = np.random.default_rng(seed)
    n = 17
    sol = _sample(rng, n, per_row, zero_k)
    E0 = rng.uniform(-0.1, 0.1, n) if per_row else 0.05
    sel = {j: (v * rng.uniform(0.5, 2.0, n) if per_row else v) for j, v in interferents.items()}
    ise = IonSelectiveElectrode("K+", E0=E0, selectivity=sel, slope_factor=0.98, dE0dT=1e-4)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            E, notes, in_range, alerts, g, lga = _previous_potential(ise, sol, model)
        except act.InputError as e:  # a row without primary ion or interferents: the same error
            with pytest.raises(act.InputError, match=str(e.args[0])[:30]):
                ise.evaluate(sol, model, warn=False)
            return
        res = ise.evaluate(sol, model, warn=False)
    np.testing.assert_array_equal(res.potential, E)
    assert res.notes == notes and res.alerts == alerts and res.model == g.model
    np.testing.assert_array_equal(res.in_range, in_range)
    assert list(res.log10_activity) == list(lga)
    for name, value in res.log10_activity.items():  # the activities reported are the model's, as before
        np.testing.assert_array_equal(value, lga[name])


@pytest.mark.parametrize("model", DH_MODELS)
def test_single_solution_and_out_of_range_rows(model):
    """A single composition gives floats; rows above the model's I limit are flagged alike."""
    sol1 = act.Solution({"K+": 0.004, "Na+": 0.1, "Cl-": 0.104}, T=310.0)
    ise = IonSelectiveElectrode("K+", E0=0.05, selectivity={"Na+": 0.01, "Li+": 0.001})
    res = ise.evaluate(sol1, model)
    E, notes, in_range, alerts, _, _ = _previous_potential(ise, sol1, model)
    assert isinstance(res.potential, float) and res.potential == E and res.notes == notes
    salty = act.Solution({"K+": [0.01, 0.01], "Na+": [0.1, 3.0], "Cl-": [0.11, 3.01]})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        res = ise.evaluate(salty, model, warn=False)
        E, notes, in_range, alerts, _, _ = _previous_potential(ise, salty, model)
    np.testing.assert_array_equal(res.potential, E)
    np.testing.assert_array_equal(res.in_range, in_range)
    assert res.alerts == alerts and res.notes == notes


def test_missing_primary_ion_is_still_named():
    sol = act.Solution({"Na+": 0.1, "Cl-": 0.1})
    with pytest.raises(act.InputError, match="primary ion"):
        IonSelectiveElectrode("K+", E0=0.05).evaluate(sol, "davies")


@pytest.mark.parametrize("model", [m for m in DH_MODELS if m != "ideal"])
@settings(deadline=None, max_examples=15)
@given(n=st.integers(1, 300), seed=st.integers(0, 2**32 - 1), t_rows=st.booleans(), shape0=st.booleans())
def test_kernel_equals_the_previous_kernel(model, n, seed, t_rows, shape0):
    rng = np.random.default_rng(seed)
    m = act.get_model(model, salting={"CO2": 0.1})
    species = ["Na+", "K+", "Ca^2+", "Cl-", "SO4^2-"] + ([] if model == "truesdell-jones" else ["CO2"])
    size = () if shape0 else (n,)
    comp = {s: 10 ** rng.uniform(-6, 0.3, size) for s in species}
    T = rng.uniform(273.15, 373.15, size) if t_rows else 310.0
    sol = act.Solution(comp, T=T, neutrality="ignore")
    bound = m.bind(sol.species, sol.charges)
    I = np.asarray(sol.ionic_strength, dtype=float)
    new = m.compute_log10_gamma(sol, bound, I)
    np.testing.assert_array_equal(new, _previous_kernel(m, sol, bound, I))
    assert new.shape == (len(species),) + size
    wanted = sorted(rng.choice(len(species), size=rng.integers(1, len(species) + 1), replace=False).tolist())
    rows = m.log10_gamma_rows(sol, bound, I, wanted)
    assert sorted(rows) == wanted
    for i in wanted:  # the rows asked for alone are the rows of the whole evaluation
        np.testing.assert_array_equal(rows[i], new[i])
