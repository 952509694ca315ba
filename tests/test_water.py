"""Water properties and Debye–Hückel parameters against outside references."""

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

import activity as act
from activity import InputError
from activity.water import density, permittivity


def test_aphi_at_25C_archer_wang():
    # Aφ(25 °C) = 0.3915 (kg/mol)^½ — Archer & Wang, J. Phys. Chem. Ref. Data 19 (1990) 371.
    assert act.debye_huckel_Aphi(298.15) == pytest.approx(0.3915, abs=3e-4)


@pytest.mark.parametrize(
    "T, aphi",
    [
        # Aφ tabulated in Pitzer (ed.), Activity Coefficients in Electrolyte Solutions,
        # 2nd ed. (1991), ch. 3, Table 1 (from memory).
        (273.15, 0.3767),
        (323.15, 0.4102),
    ],
)
def test_aphi_other_temperatures(T, aphi):
    assert act.debye_huckel_Aphi(T) == pytest.approx(aphi, rel=1.5e-3)


def test_limiting_slope_A_and_B_at_25C():
    # A(25 °C) = 0.509–0.511 kg^½ mol^-½ depending on the permittivity used, and
    # B = 0.3283–0.3291 kg^½ mol^-½ Å^-1 (Robinson & Stokes 1959, Appendix 7.1; from memory).
    assert 0.509 <= act.debye_huckel_A(298.15) <= 0.511
    assert 0.3280 <= act.debye_huckel_B(298.15) <= 0.3292
    # A = 3 Aφ / ln 10 exactly (definition).
    assert act.debye_huckel_A(298.15) == pytest.approx(3 * act.debye_huckel_Aphi(298.15) / np.log(10), rel=1e-12)


@pytest.fixture(scope="module")
def iapws():
    # IAPWS reference implementation (a test dependency in pyproject.toml). Requested per test,
    # so that without it only the IAPWS comparisons skip, not the Aφ, A and B checks above.
    return pytest.importorskip("iapws")


@pytest.mark.parametrize("t_c", [0.01, 10, 25, 40, 60, 80, 99])
def test_density_against_iapws95(iapws, t_c):
    # IAPWS-95 via the iapws package (test-only reference), 0.101325 MPa.
    ref = iapws.IAPWS95(T=t_c + 273.15, P=0.101325).rho
    assert density(t_c + 273.15) == pytest.approx(ref, rel=3e-5)


@pytest.mark.parametrize("t_c", [0.01, 25, 50, 75, 99, 125, 150])
def test_permittivity_against_iapws_r8_97(iapws, t_c):
    # IAPWS R8-97 (Fernández et al. 1997) as implemented in the iapws package; the
    # Bradley–Pitzer correlation agrees within a few tenths of a percent over 0–150 °C.
    from iapws._iapws import _Dielectric

    T = t_c + 273.15
    p = 0.101325 if t_c < 100 else 0.5  # liquid: 0.5 MPa above 100 °C
    rho = iapws.IAPWS95(T=T, P=p).rho
    assert permittivity(T, p * 1e6) == pytest.approx(_Dielectric(rho, T), rel=4e-3)


@given(st.lists(st.floats(273.15, 423.15), min_size=1, max_size=20))
def test_batch_equals_scalar(Ts):
    arr = act.debye_huckel_A(np.array(Ts))
    assert np.allclose(arr, [act.debye_huckel_A(t) for t in Ts], rtol=1e-13)


def test_celsius_given_as_kelvin_gets_a_hint():
    with pytest.raises(InputError, match="did you mean 25 °C = 298.15 K"):
        act.debye_huckel_A(25)


@pytest.mark.parametrize("bad", [float("nan"), float("inf"), 500.0, -300.0])
def test_bad_temperatures(bad):
    with pytest.raises(InputError) as err:
        density(bad)
    assert err.value.field == "T"


@pytest.mark.parametrize("t_c", [100.5, 110, 125, 140, 150])
def test_density_along_saturation_to_150C(iapws, t_c):
    # Above 100 °C the Kell (1975) 1-atm equation is used along saturation; against IAPWS-95
    # (iapws package) just above the saturation pressure it stays within 0.05 %.
    T = t_c + 273.15
    p_sat = iapws.IAPWS97(T=T, x=0).P
    ref = iapws.IAPWS95(T=T, P=1.01 * p_sat).rho
    assert density(T) == pytest.approx(ref, rel=5e-4)
