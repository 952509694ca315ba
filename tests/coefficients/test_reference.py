"""Debye–Hückel family and Davies against published values and worked examples."""

import numpy as np
import pytest

import activity as act
from activity import InputError, Solution, mean_activity_coefficient

# Mean activity coefficients of NaCl and KCl at 25 °C, Hamer & Wu, J. Phys. Chem. Ref. Data 1
# (1972) 1047, Tables 8 (NaCl) and 11 (KCl) — from memory, 4 significant figures.
HAMER_WU = {
    ("Na+", "Cl-"): {0.001: 0.9649, 0.002: 0.9519, 0.005: 0.9275, 0.01: 0.9024},
    ("K+", "Cl-"): {0.001: 0.9648, 0.002: 0.9516, 0.005: 0.9268, 0.01: 0.9014},
}


@pytest.mark.parametrize("salt", list(HAMER_WU))
@pytest.mark.parametrize("m", [0.001, 0.002, 0.005, 0.01])
def test_extended_debye_huckel_against_hamer_wu(salt, m):
    sol = Solution({salt[0]: m, salt[1]: m})
    g = mean_activity_coefficient(sol, *salt, "extended-debye-huckel")
    assert g == pytest.approx(HAMER_WU[salt][m], rel=5e-3)


@pytest.mark.parametrize("salt", list(HAMER_WU))
def test_limiting_law_at_one_millimolal(salt):
    # The limiting law is within 0.5 % of Hamer & Wu (1972) at 0.001 mol/kg, and below it:
    # it overstates the lowering of γ± because it ignores the ion size (common practice).
    sol = Solution({salt[0]: 0.001, salt[1]: 0.001})
    g = mean_activity_coefficient(sol, *salt, "debye-huckel-limiting")
    assert g == pytest.approx(HAMER_WU[salt][0.001], rel=5e-3)
    assert g < HAMER_WU[salt][0.001]


@pytest.mark.parametrize("salt", list(HAMER_WU))
@pytest.mark.parametrize("m", [0.001, 0.01])
def test_davies_against_hamer_wu(salt, m):
    sol = Solution({salt[0]: m, salt[1]: m})
    assert mean_activity_coefficient(sol, *salt, "davies") == pytest.approx(HAMER_WU[salt][m], rel=5e-3)


def test_davies_worked_example():
    # Worked by hand (common textbook exercise; from memory): I = 0.1 mol/kg, A = 0.509,
    # log γ = −A z² (√I/(1+√I) − 0.3 I) → γ(z=1) = 0.781, γ(z=2) = 0.372.
    sol = Solution({"Ca^2+": 0.1 / 3, "Cl-": 0.2 / 3})
    g = act.get_model("davies").activity_coefficients(sol)
    assert g["Cl-"] == pytest.approx(0.781, abs=1.5e-3)
    assert g["Ca^2+"] == pytest.approx(0.372, abs=1.5e-3)


@pytest.mark.parametrize(
    "ion, counter, gamma",
    [
        # Kielland (1937), Table of individual activity coefficients at I = 0.1 (from memory):
        ("H+", "Cl-", 0.83),
        ("Na+", "Cl-", 0.78),
        ("K+", "Cl-", 0.755),
        ("Ca^2+", "Cl-", 0.405),
        ("Mg^2+", "Cl-", 0.45),
        ("Ba^2+", "Cl-", 0.38),
        ("SO4^2-", "Na+", 0.355),
    ],
)
def test_extended_debye_huckel_kielland_table(ion, counter, gamma):
    zi = act.parse_species(ion).charge
    zc = act.parse_species(counter).charge
    # choose molalities with I = 0.1 and charge balance
    mi = 0.2 / (zi * zi + abs(zi * zc))
    sol = Solution({ion: mi, counter: mi * abs(zi / zc)})
    assert sol.ionic_strength == pytest.approx(0.1)
    g = act.get_model("extended-debye-huckel").activity_coefficients(sol)[ion]
    # Kielland tabulated 2–3 digits with the 1937 values of A and B: 2 % tolerance.
    assert g == pytest.approx(gamma, rel=2e-2)


def test_truesdell_jones_reduces_to_extended_form_without_b():
    sol = Solution({"HCO3-": 0.05, "Na+": 0.05})
    tj = act.get_model("truesdell-jones", params={"Na+": (4.0, 0.0)})
    edh = act.get_model("extended-debye-huckel", sizes={"Na+": 4.0, "HCO3-": 5.4})
    assert tj.log10_gamma(sol) == pytest.approx(edh.log10_gamma(sol), rel=1e-12)


def test_missing_ion_size_is_an_error_or_a_recorded_fallback():
    sol = Solution({"Na+": 0.01, "Cl-": 0.005, "ClO2-": 0.005})
    with pytest.raises(InputError) as err:
        act.get_model("extended-debye-huckel").activity_coefficients(sol)
    assert err.value.value == "ClO2-"
    res = act.get_model("extended-debye-huckel", fallback_size=4.0).activity_coefficients(sol)
    assert any("ClO2-" in n and "fallback" in n for n in res.notes)


def test_validity_excursion_warns_and_is_recorded():
    sol = Solution({"Na+": np.array([0.01, 0.5]), "Cl-": np.array([0.01, 0.5])})
    with pytest.warns(act.ValidityWarning, match="ionic strength above 0.1"):
        res = act.get_model("extended-debye-huckel").activity_coefficients(sol)
    assert res.in_range.tolist() == [True, False]
    assert any("up to 0.5" in n and "1 of 2 row" in n for n in res.notes)


def test_setschenow_salting_of_neutral_species():
    # log10 γ = k_s I for a neutral species (Setschenow 1889); k_s = 0.1 kg/mol is a
    # typical magnitude for CO2 in NaCl (common practice).
    sol = Solution({"Na+": 0.5, "Cl-": 0.5, "CO2": 0.01})
    g = act.get_model("davies", salting={"CO2": 0.1}).activity_coefficients(sol)
    assert g["CO2"] == pytest.approx(10 ** (0.1 * 0.5))
    assert act.get_model("davies").activity_coefficients(sol)["CO2"] == 1.0


def test_mean_activity_coefficient_stoichiometry():
    sol = Solution({"La^3+": 0.001, "SO4^2-": 0.0015})
    g = act.get_model("davies").activity_coefficients(sol)
    expected = (g["La^3+"] ** 2 * g["SO4^2-"] ** 3) ** (1 / 5)
    assert mean_activity_coefficient(sol, "La3+", "SO4^2-", "davies") == pytest.approx(expected)
    with pytest.raises(InputError):
        mean_activity_coefficient(sol, "SO4^2-", "La3+", "davies")


def test_temperature_dependence_follows_A():
    # At fixed I the limiting-law log γ scales with A(T) (Debye & Hückel 1923).
    lo = Solution({"Na+": 0.001, "Cl-": 0.001}, T=273.15)
    hi = Solution({"Na+": 0.001, "Cl-": 0.001}, T=353.15)
    model = act.get_model("debye-huckel-limiting")
    ratio = model.log10_gamma(hi)[0] / model.log10_gamma(lo)[0]
    assert ratio == pytest.approx(act.debye_huckel_A(353.15) / act.debye_huckel_A(273.15), rel=1e-12)


@pytest.mark.parametrize("m, gamma", [(0.05, 0.8216), (0.1, 0.7780), (0.2, 0.7347)])
def test_davies_declared_validity_for_nacl(m, gamma):
    # Hamer & Wu (1972), Table 8, NaCl at 25 °C (from memory): Davies stays within the 2 %
    # its declared validity (I ≤ 0.2 mol/kg) promises.
    sol = Solution({"Na+": m, "Cl-": m})
    assert mean_activity_coefficient(sol, "Na+", "Cl-", "davies") == pytest.approx(gamma, rel=2e-2)
    assert act.get_model("davies").validity.max_ionic_strength >= m
