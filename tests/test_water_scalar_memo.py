"""The scalar memo of the Debye–Hückel parameters gives the same bits as the array path."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from activity import water
from activity.errors import InputError

T_ = st.floats(273.15, 423.15)
P_ = st.one_of(st.none(), st.floats(1e4, 4e8))


@settings(deadline=None, max_examples=50)
@given(T=T_, P=P_)
def test_scalar_memo_is_the_array_function(T, P):
    # the uncached functions are the reference: equality, not a tolerance (same arithmetic)
    for public, reference in ((water.debye_huckel_Aphi, water._aphi), (water.debye_huckel_B, water._b)):
        expected = reference(np.asarray(T), None if P is None else np.asarray(P))
        for t in (T, np.float64(T), np.asarray(T)):
            got = public(t, P)
            assert type(got) is float and got == expected
            assert public(t, P) == expected  # second call, from the memo
    assert water.debye_huckel_A(T, P) == 3.0 * water._aphi(T, P) / np.log(10.0)


def test_arrays_bypass_the_memo_and_agree_row_by_row():
    T = np.linspace(273.15, 423.15, 7)
    rows = water.debye_huckel_A(T)
    assert isinstance(rows, np.ndarray)
    scalars = [water.debye_huckel_A(float(t)) for t in T]
    assert all(type(v) is float for v in scalars)
    # the same arithmetic, but not always the same bits: on a CPU with AVX-512 numpy's vector
    # loop of x**1.5 rounds the last bit differently from its one-element call (seen at 273.15 K,
    # 1 ulp); on an AVX2-only machine the two were equal
    np.testing.assert_array_max_ulp(np.array(scalars), rows, maxulp=2)


@pytest.mark.parametrize("T", [np.nan, 25.0, 500.0, "hot"])
def test_bad_temperature_raises_every_time(T):
    for _ in range(2):  # an exception is not kept by the memo
        with pytest.raises(InputError):
            water.debye_huckel_A(T)


def test_bad_pressure_raises_every_time():
    for _ in range(2):
        with pytest.raises(InputError):
            water.debye_huckel_B(298.15, -1.0)
