"""The Bates–Guggenheim convention and the Harned-cell primary method."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from activity.constants import LN10, P_ATM, F, R
from activity.errors import InputError
from activity.water import debye_huckel_A
from activity.workflows.ph.convention import bates_guggenheim_log10_gamma_cl
from activity.workflows.ph.harned import (
    harned_emf,
    harned_ph,
    silver_chloride_e0,
    silver_chloride_e0_from_hcl,
    water_vapour_pressure,
)

K = 273.15


# ------------------------------------------------------------------ the convention
def test_bates_guggenheim_against_its_definition():
    # IUPAC Gold Book, "Bates–Guggenheim convention" (PAC 1984, 56, 567, p. 569; read):
    # lg γ(Cl-) = −A √I / (1 + 1.5 √I), I ≤ 0.1 mol/kg
    for t, I in [(25, 0.1), (25, 0.053), (37, 0.02), (0, 0.0341), (50, 0.1)]:
        A = debye_huckel_A(t + K)
        expected = -A * np.sqrt(I) / (1 + 1.5 * np.sqrt(I))
        assert bates_guggenheim_log10_gamma_cl(I, t + K) == pytest.approx(expected, rel=1e-14)


def test_A_from_the_water_layer_against_a_tabulated_A():
    # Debye–Hückel A, textbook appendix IV (reference group 3c, read; scale "probably molar").
    # Our molal A from Kell density and Bradley–Pitzer permittivity is 0.29–0.52 % higher
    # over 0–50 °C (molar/molal scale √ρ ≈ 0.15 % and older constants); 0.6 % bound. In
    # lg γ(Cl-) at I = 0.1 that is 0.0007 pH, well inside U(pH(PS)) = 0.004.
    table = {0: 0.4883, 10: 0.4960, 25: 0.5085, 37.0: None, 40: 0.5221, 50: 0.5319}
    for t, A_ref in table.items():
        if A_ref is not None:
            assert debye_huckel_A(t + K) == pytest.approx(A_ref, rel=0.006)


@settings(deadline=None, max_examples=40)
@given(st.floats(1e-8, 0.1), st.floats(273.15, 323.15))
def test_convention_between_the_limiting_law_and_zero(I, T):
    lg = bates_guggenheim_log10_gamma_cl(I, T)
    limiting = -debye_huckel_A(T) * np.sqrt(I)
    assert limiting < lg < 0
    assert bates_guggenheim_log10_gamma_cl(np.array([I, I]), T)[1] == pytest.approx(lg, rel=1e-14)


def test_convention_refused_above_0_1():
    with pytest.raises(InputError, match="ionic_strength = 0.2"):
        bates_guggenheim_log10_gamma_cl(0.2, 298.15)


# ------------------------------------------------------------------ hydrogen pressure and E°
def test_water_vapour_pressure_against_iapws():
    from iapws.iapws97 import _PSat_T  # IAPWS-IF97 region 4, as implemented by `iapws`

    for T in (273.16, 283.15, 298.15, 310.15, 323.15, 368.15):
        # Wagner & Pruss (1993) vs IF97: measured at most 1.0e-4 relative over 0–95 °C
        assert water_vapour_pressure(T) == pytest.approx(_PSat_T(T) * 1e6, rel=2e-4)


def test_e0_table_and_hcl_cell():
    # Bates & Bower (1954), Table 1 (read): E° = 0.22234 V at 25 °C, 0.21566 V at 35 °C
    assert silver_chloride_e0(298.15).value == 0.22234
    assert silver_chloride_e0(308.15).value == 0.21566
    assert silver_chloride_e0(298.15).standard_uncertainty == pytest.approx(1e-5)  # 0.01 mV (read)
    # HCl 0.01 mol/kg at 25 °C: γ± = 0.904 (Kaye & Laby §3.9.6, read). Build the EMF from
    # E° = 0.22234 V at 1 atm barometric pressure and recover E°.
    k = R * 298.15 * LN10 / F
    p_h2 = P_ATM - water_vapour_pressure(298.15)
    emf = 0.22234 - 2 * k * np.log10(0.01 * 0.904) + 0.5 * k * np.log10(p_h2 / P_ATM)
    assert silver_chloride_e0_from_hcl(emf, 298.15, gamma=0.904).value == pytest.approx(0.22234, abs=1e-12)
    # with γ± from the Pitzer model (0.9045) instead: 2k lg(0.9045/0.904) = 0.03 mV apart
    assert silver_chloride_e0_from_hcl(emf, 298.15).value == pytest.approx(0.22234, abs=4e-5)


# ------------------------------------------------------------------ the Harned cell
def _synthetic(pH, t, I, slope, noise, seed):
    m = np.array([0.005, 0.010, 0.015, 0.020])  # KCl molalities of the kind used by Hetzer et al. 1977
    E0 = silver_chloride_e0(t + K).value
    E = harned_emf(pH, m, t + K, ionic_strength=I, E0=E0, slope_in_chloride=slope, pressure=100_500.0)
    return m, E + np.random.default_rng(seed).normal(0.0, noise, m.size), E0


@pytest.mark.parametrize(
    "name,t,I",
    [
        ("phthalate-0.05", 25, 0.053),
        ("phosphate-1:1", 37, 0.1),
        ("borax-0.01", 10, 0.02),
        ("carbonate", 50, 0.1),
    ],
)
def test_synthetic_harned_emfs_recover_pH(name, t, I):
    from activity.workflows.ph.buffers import buffer_ph

    true = buffer_ph(name, t + K).value
    m, E, E0 = _synthetic(true, t, I, slope=0.25, noise=2e-5, seed=7)
    res = harned_ph(m, E, t + K, buffer=name, E0=E0, u_E0=1e-5, pressure=100_500.0)
    assert abs(res.pH - true) <= res.expanded_uncertainty
    assert res.expanded_uncertainty < 0.004  # below the typical U(pH(PS)) of Buck et al. 2002
    assert res.slope_in_chloride == pytest.approx(0.25, abs=0.2)
    assert res.residual_sd is not None and res.residual_sd < 0.002
    # p(aγ) at each point equals the line it was built from, within the noise
    assert np.allclose(res.acidity_function, res.acidity_function_zero + res.slope_in_chloride * m, atol=0.002)


def test_noise_free_synthetic_data_give_pH_exactly_and_monte_carlo_agrees():
    m, E, E0 = _synthetic(6.865, 25, 0.1, slope=-0.1, noise=0.0, seed=0)
    gum = harned_ph(m, E, 298.15, ionic_strength=0.1, E0=E0, u_E0=1e-5, pressure=100_500.0)
    assert gum.pH == pytest.approx(6.865, abs=1e-10)
    mc = harned_ph(
        m,
        E,
        298.15,
        ionic_strength=0.1,
        E0=E0,
        u_E0=1e-5,
        pressure=100_500.0,
        method="monte-carlo",
        seed=3,
        trials=200_000,
    )
    # the model is nearly linear: u agrees within 2 % (Monte Carlo sampling error ~0.3 %)
    assert mc.standard_uncertainty == pytest.approx(gum.standard_uncertainty, rel=0.02)


def test_budget_contains_every_input_and_the_pressure_matters():
    m, E, E0 = _synthetic(4.005, 25, 0.053, slope=0.1, noise=0.0, seed=0)
    res = harned_ph(m, E, 298.15, buffer="KHP", E0=E0, u_E0=1e-5, pressure=100_500.0, u_convention=0.01)
    labels = {r["label"] for r in res.budget_rows()}
    assert {
        "E°(AgCl/Ag)",
        "temperature",
        "barometric pressure (p(H2) = p − p_w)",
        "chloride molalities (relative)",
        "Bates–Guggenheim convention",
    } <= labels
    assert sum(lab.startswith("EMF at") for lab in labels) == 4
    # the convention's 0.01 dominates when given (Buck et al. 2002 order of magnitude, from memory)
    assert res.standard_uncertainty == pytest.approx(0.01, rel=0.05)
    # forgetting the water vapour correction would shift pH by ½ lg(p/(p − p_w)) ≈ 0.007 at 25 °C
    E_dry = harned_emf(
        4.005, m, 298.15, ionic_strength=0.053, E0=E0, pressure=100_500.0 + water_vapour_pressure(298.15)
    )
    shifted = harned_ph(m, E_dry, 298.15, buffer="KHP", E0=E0, u_E0=1e-5, pressure=100_500.0)
    pw = water_vapour_pressure(298.15)
    assert shifted.pH - 4.005 == pytest.approx(0.5 * np.log10(100_500.0 / (100_500.0 - pw)), abs=1e-9)


def test_harned_bad_input():
    m = [0.005, 0.01, 0.015]
    E = harned_emf(4.005, m, 298.15, ionic_strength=0.053, E0=0.22234)
    with pytest.raises(InputError, match="emf = .*millivolts"):
        harned_ph(m, E * 1000, 298.15, buffer="KHP")
    with pytest.raises(InputError, match="m_cl"):
        harned_ph([0.01, 0.01], E[:2], 298.15, buffer="KHP")
    with pytest.raises(InputError, match="ionic_strength = 0.5"):
        harned_ph(m, E, 298.15, ionic_strength=0.5)
    with pytest.raises(InputError, match="u_E0"):
        harned_ph(m, E, 298.15, buffer="KHP", E0=0.2223)
    with pytest.raises(InputError, match="buffer = 'nope'"):
        harned_ph(m, E, 298.15, buffer="nope")


def test_e0_from_hcl_uncertainty_against_the_uncertainties_package():
    from uncertainties import ufloat, umath

    T, p, m, g = 298.15, 100_800.0, 0.01, 0.904
    emf = 0.4638
    res = silver_chloride_e0_from_hcl(emf, T, gamma=g, pressure=p)
    uT, up = ufloat(T, 0.01), ufloat(p, 20.0)
    k = R * uT * LN10 / F
    # p_w depends on T too; its sensitivity enters through the GUM row of T: linearise here
    pw0 = water_vapour_pressure(T)
    dpw = (water_vapour_pressure(T + 1e-3) - water_vapour_pressure(T - 1e-3)) / 2e-3
    pw = pw0 + dpw * (uT - T)
    ref = (
        ufloat(emf, 2e-5)
        + 2 * k * umath.log10(ufloat(m, 1e-5) * ufloat(g, 0.002 / np.sqrt(3)))
        - 0.5 * k * umath.log10((up - pw) / P_ATM)
    )
    assert res.value == pytest.approx(ref.nominal_value, abs=1e-12)
    # finite-difference GUM vs exact derivatives: 1e-4 relative
    assert res.standard_uncertainty == pytest.approx(ref.std_dev, rel=1e-4)
    # the Kaye & Laby ±0.002 on γ± dominates: E° is known to about 0.09 mV this way
    assert 6e-5 < res.standard_uncertainty < 1.2e-4


@settings(deadline=None, max_examples=30)
@given(
    st.floats(3.0, 11.0),
    st.floats(0.0, 50.0),
    st.floats(0.005, 0.1),
    st.floats(-1.0, 1.0),
    st.floats(95_000.0, 103_000.0),
)
def test_harned_round_trip(pH, t, I, slope, p):
    m = np.array([0.004, 0.008, 0.012, 0.016])
    E0 = silver_chloride_e0(t + K).value
    E = harned_emf(pH, m, t + K, ionic_strength=I, E0=E0, slope_in_chloride=slope, pressure=p)
    res = harned_ph(m, E, t + K, ionic_strength=I, E0=E0, u_E0=1e-5, pressure=p)
    assert res.pH == pytest.approx(pH, abs=1e-9)
    assert res.slope_in_chloride == pytest.approx(slope, abs=1e-6)
