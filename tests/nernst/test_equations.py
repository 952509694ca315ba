"""Electrochemical thermodynamics: μ̃, ΔrG̃, E and the Nernst slope."""

import numpy as np
import pytest
import scipy.constants as sc
from hypothesis import given, settings
from hypothesis import strategies as st

from activity.errors import InputError
from activity.nernst import equations as ec

FARADAY = sc.physical_constants["Faraday constant"][0]


def test_nernst_slope_codata():
    # 59.16 mV per decade at 25 °C (common practice): RT ln10 / F with CODATA R and F (scipy.constants)
    slope = ec.nernst_slope(298.15)
    assert slope == pytest.approx(sc.R * 298.15 * np.log(10) / FARADAY, rel=1e-15)
    assert round(slope * 1e3, 2) == 59.16


def test_nernst_slope_broadcasts_and_signs():
    s = ec.nernst_slope(np.array([273.15, 298.15, 310.15]), z=np.array([[1], [-2]]))
    assert s.shape == (2, 3)
    assert np.all(s[1] < 0) and np.allclose(s[1], -s[0] / 2)
    with pytest.raises(InputError, match="z"):
        ec.nernst_slope(298.15, z=0)


def test_electrochemical_potential_terms():
    T = 310.0
    mu = ec.electrochemical_potential(-1000.0, 0.5, -2, 0.03, T)
    assert mu == pytest.approx(-1000.0 + sc.R * T * np.log(0.5) - 2 * FARADAY * 0.03)
    with pytest.raises(InputError, match="activity"):
        ec.electrochemical_potential(0.0, 0.0, 1, 0.0)


def test_gibbs_and_potential_are_inverse():
    E = np.array([-0.76, 0.0, 0.34])
    assert np.allclose(ec.potential_from_gibbs(ec.gibbs_from_potential(E, 2), 2), E)
    assert ec.gibbs_from_potential(1.0, 1) == pytest.approx(-FARADAY)


def test_reaction_gibbs_shape_checked():
    with pytest.raises(InputError, match="mu"):
        ec.reaction_gibbs([1, -1], [1.0, 2.0, 3.0])


@settings(max_examples=60, deadline=None)
@given(
    mu0=st.lists(st.floats(-3e5, 3e5), min_size=3, max_size=3),
    log_a=st.lists(st.floats(-8, 1), min_size=2, max_size=2),
    T=st.floats(273.15, 373.15),
    phi_s=st.floats(-1, 1),
)
def test_nernst_equals_electrochemical_equilibrium(mu0, log_a, T, phi_s):
    # Fe^3+ + e- = Fe^2+ : species Fe3+ (sol), e- (metal), Fe2+ (sol)
    nu = np.array([-1.0, -1.0, 1.0])
    z = np.array([3.0, -1.0, 2.0])
    a = np.array([10 ** log_a[0], 1.0, 10 ** log_a[1]])
    dphi = ec.equilibrium_galvani_potential(nu, mu0, a, z, [False, True, False], T)
    # ΔrG̃ evaluated with μ̃ at the equilibrium potentials is zero
    phis = np.array([phi_s, phi_s + dphi, phi_s])
    mut = [ec.electrochemical_potential(mu0[i], a[i], z[i], phis[i], T) for i in range(3)]
    assert abs(ec.reaction_gibbs(nu, np.array(mut))) < 1e-9 * max(1.0, max(abs(m) for m in mut))
    # ... and equals the Nernst equation with E° = −ΔrG°/(nF), electron μ° included in E°
    E0 = ec.potential_from_gibbs(float(nu @ np.array(mu0)), 1)
    E = ec.nernst_potential(E0, [-1, 1], [a[0], a[2]], 1, T)
    assert dphi == pytest.approx(E, abs=1e-9)


def test_equilibrium_galvani_batch_and_checks():
    a = np.array([[0.1, 0.01], [1.0, 1.0], [1.0, 1.0]])
    E = ec.equilibrium_galvani_potential([-1, -1, 1], [0.7996 * FARADAY, 0, 0], a, [1, -1, 0], [False, True, True])
    assert E.shape == (2,)
    assert E[0] - E[1] == pytest.approx(ec.nernst_slope(298.15), rel=1e-12)
    with pytest.raises(InputError, match="charge"):
        ec.equilibrium_galvani_potential([-1, 1], [0, 0], [1, 1], [1, 0], [True, False])


def test_standard_potential_temperature_terms():
    # E°(T) = E° + (dE°/dT)ΔT + ½(d²E°/dT²)ΔT², ΔT = 10 K, by hand: 0.5 + 1e-3·10; 0.5 + ½·2e-6·100
    assert ec.standard_potential_at(0.5, 1e-3, 0.0, 308.15) == pytest.approx(0.51)
    assert ec.standard_potential_at(0.5, 0.0, 2e-6, 308.15) == pytest.approx(0.5 + 1e-4)


def test_gas_activity_and_standard_pressure_shift():
    assert ec.gas_activity(1e5) == 1.0
    # 1 atm hydrogen: a = 1.01325 on the bar scale
    assert ec.gas_activity(101325.0) == pytest.approx(1.01325)
    shift = ec.atm_to_bar_shift(1, 2)
    assert shift == pytest.approx(sc.R * 298.15 / (2 * FARADAY) * np.log(1.01325))
    with pytest.raises(InputError):
        ec.gas_activity(-1.0)
