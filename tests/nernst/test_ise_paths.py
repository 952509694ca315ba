"""The ion-selective electrode's fast path (shared γ) equals the general Nikolsky–Eisenman form."""

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

import activity as act


@given(
    m_k=st.lists(st.floats(1e-7, 0.3), min_size=1, max_size=8),
    m_na=st.floats(0.0, 0.3),
    K=st.floats(0.0, 0.5),
    T=st.floats(278.15, 318.15),
    model=st.sampled_from(["davies", "extended-debye-huckel", "debye-huckel-limiting", "truesdell-jones", "pitzer"]),
)
def test_fast_path_equals_nikolsky_eisenman(m_k, m_na, K, T, model):
    import warnings

    m = np.array(m_k)
    sol = act.Solution({"K+": m, "Na+": m_na, "Cl-": m + m_na}, T=T)
    ise = act.IonSelectiveElectrode("K+", E0=0.05, selectivity={"Na+": K})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", act.ActivityWarning)
        E = ise.potential(sol, model)
        a = act.activities(sol, model)
    expected = act.nikolsky_eisenman(0.05, a["K+"], 1, [np.broadcast_to(a["Na+"], m.shape)], [1], [K], T=T)
    assert np.allclose(E, expected, rtol=0, atol=1e-12)


def test_davies_takes_the_fast_path():
    # the property test above compares values only; this pins that the shared-γ path is used
    # where Davies gives K+ and Na+ the same γ
    sol = act.Solution({"K+": 0.01, "Na+": 0.02, "Cl-": 0.03})
    ise = act.IonSelectiveElectrode("K+", E0=0.05, selectivity={"Na+": 0.1})
    lg = act.get_model("davies").activity_coefficients(sol).log10_gamma
    assert ise._shared_gamma(sol, lg) is not None


def test_mixed_charge_interferent_takes_the_general_path():
    sol = act.Solution({"Ca^2+": 1e-3, "Na+": 0.05, "Cl-": 0.052})
    ise = act.IonSelectiveElectrode("Ca^2+", E0=0.0, selectivity={"Na+": 1e-3})
    assert ise._shared_gamma(sol, act.get_model("davies").activity_coefficients(sol).log10_gamma) is None
    a = act.activities(sol, "davies")
    expected = act.nikolsky_eisenman(0.0, a["Ca^2+"], 2, [a["Na+"]], [1], [1e-3])
    assert ise.potential(sol, "davies") == pytest.approx(expected, abs=1e-12)
