"""Membrane potentials: each reduces to the Nernst equation for a single ion."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from activity.constants import F, R
from activity.errors import InputError
from activity.nernst.membrane import donnan_potential, ghk_potential, nikolsky_eisenman

conc = st.floats(1e-6, 5.0)
temps = st.floats(273.15, 363.15)
charges = st.sampled_from([-2, -1, 1, 2, 3])


def nernst(z, c_out, c_in, T):
    return R * T / (z * F) * np.log(c_out / c_in)


@settings(max_examples=80, deadline=None)
@given(c_in=conc, c_out=conc, z=charges, T=temps, others=st.lists(conc, min_size=2, max_size=2))
def test_ghk_single_permeant_ion_is_nernst(c_in, c_out, z, T, others):
    # a second, impermeant ion (P = 0) of another charge must not matter
    other_z = 1 if abs(z) != 1 else 2
    v = ghk_potential([1.0, 0.0], [c_in, others[0]], [c_out, others[1]], [z, other_z], T)
    assert v == pytest.approx(nernst(z, c_out, c_in, T), abs=1e-11)


@settings(max_examples=40, deadline=None)
@given(c=st.lists(conc, min_size=6, max_size=6), P=st.lists(st.floats(0.01, 10), min_size=3, max_size=3), T=temps)
def test_ghk_mixed_charges_gives_zero_current_and_brackets(c, P, T):
    z = np.array([1.0, 2.0, -1.0])
    cin, cout = np.array(c[:3]), np.array(c[3:])
    v = ghk_potential(P, cin, cout, z, T)
    u = F * v / (R * T)
    x = z * u
    current = np.sum(np.array(P) * z * x / -np.expm1(-x) * (cin - cout * np.exp(-x)))
    scale = np.sum(np.array(P) * z**2 * (cin + cout))
    assert abs(current) < 1e-9 * scale
    e = nernst(z, cout, cin, T)
    assert e.min() - 1e-12 <= v <= e.max() + 1e-12


def test_ghk_closed_form_batch():
    cin = np.array([[140, 150], [15, 10], [10, 8]])
    cout = np.array([[5, 4], [145, 140], [110, 120]])
    v = ghk_potential([1, 0.04, 0.45], cin, cout, [1, 1, -1], 310.15)
    assert v.shape == (2,)
    num = cout[0] + 0.04 * cout[1] + 0.45 * cin[2]
    den = cin[0] + 0.04 * cin[1] + 0.45 * cout[2]
    assert np.allclose(v, R * 310.15 / F * np.log(num / den))
    with pytest.raises(InputError, match="one charge per ion"):
        ghk_potential([1, 1], [1, 1], [1, 1], [1])


@settings(max_examples=60, deadline=None)
@given(c=conc, rho=st.floats(-5, 5), T=temps)
def test_donnan_1_1_closed_form_and_nernst(c, rho, T):
    res = donnan_potential([c, c], [1, -1], rho, T)
    c_plus = (-rho + np.sqrt(rho**2 + 4 * c**2)) / 2
    assert float(res.c_in[0]) == pytest.approx(c_plus, rel=1e-9)
    # every mobile ion is in Nernst equilibrium across the boundary (φ_in − φ_out)
    for i, z in enumerate([1, -1]):
        assert res.potential == pytest.approx(nernst(z, c, float(res.c_in[i]), T), abs=1e-10)
    # the inner phase is neutral
    assert float(res.c_in[0] - res.c_in[1]) + rho == pytest.approx(0.0, abs=1e-9 * (1 + abs(rho)))


def test_donnan_mixed_and_errors():
    res = donnan_potential(np.array([0.01, 0.001, 0.012]), [1, 2, -1], -0.5)
    assert res.potential < 0  # a cation exchanger is negative inside
    assert np.sum(np.array([1, 2, -1]) * res.c_in) - 0.5 == pytest.approx(0.0, abs=1e-12)
    assert res.potential == pytest.approx(nernst(2, 0.001, res.c_in[1], 298.15), abs=1e-10)
    with pytest.raises(InputError, match="counter-ion"):
        donnan_potential([0.0, 0.01], [1, -1], -1.0)


@settings(max_examples=60, deadline=None)
@given(a=st.floats(1e-8, 1.0), z=charges, T=temps, E0=st.floats(-1, 1))
def test_nikolsky_eisenman_without_interference_is_nernst(a, z, T, E0):
    E = nikolsky_eisenman(E0, a, z, [a], [z], [0.0], T)
    assert E == pytest.approx(E0 + R * T / (z * F) * np.log(a), abs=1e-12)


def test_nikolsky_eisenman_interference_floor():
    # with no primary ion the electrode reads the interferent, scaled by K
    E = nikolsky_eisenman(0.0, 0.0, 1, [[1e-2]], [1], [1e-3])
    assert E == pytest.approx(R * 298.15 / F * np.log(1e-5))
    # divalent primary, monovalent interferent: a_j^(2/1)
    E2 = nikolsky_eisenman(0.0, 1e-4, 2, [1e-2], [1], [1.0])
    assert E2 == pytest.approx(R * 298.15 / (2 * F) * np.log(2e-4))
    with pytest.raises(InputError, match="sign"):
        nikolsky_eisenman(0.0, 1e-3, 2, [1e-3], [-1], [0.1])
    with pytest.raises(InputError, match="all zero"):
        nikolsky_eisenman(0.0, 0.0, 1)
