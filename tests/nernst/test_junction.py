"""Henderson liquid-junction potentials; Lewis–Sargent check."""

import numpy as np
import pytest

import activity as act
from activity.constants import F, R
from activity.errors import InputError
from activity.nernst.junction import henderson_potential, lewis_sargent_potential, limiting_conductivity

# Limiting conductivities at 25 °C (Robinson & Stokes 1959, App. 6.1; CRC; from memory)
LAM = {"H+": 349.65, "K+": 73.48, "Na+": 50.08, "Cl-": 76.31, "NO3-": 71.42}


def sol(**ions):
    names = {"H": "H+", "K": "K+", "Na": "Na+", "Cl": "Cl-", "NO3": "NO3-", "Ca": "Ca^2+"}
    return act.Solution({names[k]: v for k, v in ions.items()})


def test_table_values_and_missing_ion():
    for ion, lam in LAM.items():
        assert limiting_conductivity(ion) == lam
    with pytest.raises(InputError, match="conductivit"):
        limiting_conductivity("Cs^2+")


def test_lewis_sargent_hcl_kcl():
    # 0.1 HCl | 0.1 KCl (common anion, same concentration):
    # φ(KCl) − φ(HCl) = (RT/F) ln(Λ_HCl/Λ_KCl) ≈ +26.8 mV (the KCl side turns positive
    # because H+ outruns K+).
    E = henderson_potential(sol(H=0.1, Cl=0.1), sol(K=0.1, Cl=0.1)).potential
    closed = R * 298.15 / F * np.log((LAM["H+"] + LAM["Cl-"]) / (LAM["K+"] + LAM["Cl-"]))
    assert E == pytest.approx(closed, rel=1e-12)
    assert E == pytest.approx(lewis_sargent_potential(LAM["H+"] + LAM["Cl-"], LAM["K+"] + LAM["Cl-"]), rel=1e-12)
    assert 0.026 < E < 0.028
    # reversing the junction reverses the sign
    assert henderson_potential(sol(K=0.1, Cl=0.1), sol(H=0.1, Cl=0.1)).potential == pytest.approx(-E)


def test_concentration_junction_single_salt():
    # c1 | c2 of one 1:1 salt: E_j = (t+ − t−)(RT/F) ln(c1/c2) with t from λ°
    c1, c2 = 0.1, 0.01
    E = henderson_potential(sol(H=c1, Cl=c1), sol(H=c2, Cl=c2)).potential
    t_plus = LAM["H+"] / (LAM["H+"] + LAM["Cl-"])
    assert E == pytest.approx((2 * t_plus - 1) * R * 298.15 / F * np.log(c1 / c2), rel=1e-12)


def test_identical_solutions_give_zero_and_batches_broadcast():
    s = sol(K=0.1, Cl=0.1)
    assert henderson_potential(s, s).potential == 0.0
    sample = act.Solution({"Na+": np.logspace(-4, -1, 4), "Cl-": np.logspace(-4, -1, 4)})
    bridge = act.Solution({"K+": 4.81, "Cl-": 4.81})
    E = henderson_potential(bridge, sample).potential
    assert E.shape == (4,)
    # saturated KCl bridge: at most ~5 mV even against 1e-4 mol/kg NaCl (the ln of the
    # conductivity ratio grows, but it is weighted by (λK − λCl)/(λK + λCl) ≈ −0.02),
    # shrinking as the sample gets more concentrated
    assert np.all(np.abs(E) < 0.006)
    assert np.all(np.diff(np.abs(E)) < 0)


def test_salt_bridge_much_smaller_than_acid_junction():
    acid = sol(H=0.1, Cl=0.1)
    direct = henderson_potential(acid, sol(Na=0.001, Cl=0.001)).potential
    bridged = henderson_potential(act.Solution({"K+": 4.81, "Cl-": 4.81}), acid).potential
    assert abs(bridged) < abs(direct) / 5


def test_override_and_errors():
    a, b = sol(H=0.1, Cl=0.1), sol(K=0.1, Cl=0.1)
    same = henderson_potential(a, b, conductivities={"H+": 73.48})
    assert same.potential == pytest.approx(0.0, abs=1e-15)
    with pytest.raises(InputError, match="left"):
        henderson_potential({"H+": 0.1}, b)
