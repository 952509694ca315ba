"""HalfReaction, the standard-potential table, reference electrodes and cells."""
import warnings

import numpy as np
import pytest

import activity as act
from activity.electrochem import nernst_slope
from activity.errors import InputError
from activity.nernst import HalfReaction, available_couples, best_available_model, standard_couple

S25 = nernst_slope(298.15)

# "ideal" is used below where exact arithmetic is checked; its validity warning is expected.
pytestmark = pytest.mark.filterwarnings("ignore::activity.errors.ValidityWarning")


def pitzer_covers(*species):
    """Whether the Pitzer model (written concurrently) is installed and has parameters."""
    try:
        model = act.get_model("pitzer")
        model.bind(tuple(species), np.array([act.parse_species(s).charge for s in species]))
        return True
    except (InputError, ImportError):
        return False


# ------------------------------------------------------------------ half-reactions
def test_potential_is_nernst_with_model_activities():
    sol = act.Solution({"K+": np.array([0.001, 0.01, 0.05]), "Cl-": np.array([0.001, 0.01, 0.05])})
    hr = HalfReaction("AgCl(s) + e- = Ag(s) + Cl-", E0=0.22233)
    E = hr.potential(sol, "davies")
    a_cl = act.activities(sol, "davies")["Cl-"]
    assert np.allclose(E, 0.22233 - S25 * np.log10(a_cl), atol=1e-12, rtol=0)


def test_reduction_form_required():
    with pytest.raises(InputError, match="reduction"):
        HalfReaction("Ag(s) = Ag+ + e-", E0=0.7996)
    with pytest.raises(InputError, match="not balanced"):
        HalfReaction("AgCl(s) + 2 e- = Ag(s) + Cl-", E0=0.2)


def test_missing_species_named():
    hr = standard_couple("Fe3+/Fe2+")
    with pytest.raises(InputError, match="Fe\\^3\\+"):
        hr.potential(act.Solution({"Fe^2+": 0.001, "Cl-": 0.002}), "davies")


def test_ratio_couple_and_overrides():
    hr = standard_couple("Fe^3+/Fe^2+")
    sol = act.Solution({"Fe^3+": 0.001, "Fe^2+": 0.01, "Cl-": 0.05}, neutrality="ignore")
    res = hr.evaluate(sol, "ideal")
    assert res.potential == pytest.approx(0.771 - S25 * np.log10(10.0))
    assert hr.potential(sol, "ideal", activities={"Fe^3+": 1.0, "Fe^2+": 1.0}) == pytest.approx(0.771)


def test_gas_pressure_and_water_activity():
    hr = standard_couple("O2/H2O")
    sol = act.Solution({"H+": 0.1, "Cl-": 0.1})
    res = hr.evaluate(sol, "ideal")
    assert any("1 bar" in n for n in res.notes)
    # half the oxygen pressure lowers E by (RT/4F) ln 2
    E1 = hr.potential(sol, "ideal", pressures={"O2(g)": 1e5})
    E2 = hr.potential(sol, "ideal", pressures={"O2(g)": 0.5e5})
    assert E1 - E2 == pytest.approx(S25 / 4 * np.log10(2), rel=1e-12)
    # Davies defines an osmotic coefficient: water activity enters (2 H2O, n = 4)
    g = act.get_model("davies").activity_coefficients(sol)
    assert g.water_activity is not None and g.water_activity < 1
    Ed = hr.potential(sol, "davies", pressures={"O2(g)": 1e5})
    a_h = act.activities(sol, "davies")["H+"]
    expected = 1.229 - S25 / 4 * (2 * np.log10(g.water_activity) - 4 * np.log10(a_h))
    assert Ed == pytest.approx(expected, abs=1e-12)


def test_temperature_coefficients_used():
    hr = standard_couple("AgCl/Ag")
    T = np.array([288.15, 298.15, 318.15])
    assert np.allclose(hr.standard_potential(T), 0.22233 + -6.457e-4 * (T - 298.15) + 0.5 * -5.96e-6 * (T - 298.15) ** 2)
    # Bates & Bower (1954) polynomial at 45 °C (from memory): 0.23659 − 4.8564e-4·45 − 3.4205e-6·45² + 5.869e-9·45³
    t = 45.0
    bb = 0.23659 - 4.8564e-4 * t - 3.4205e-6 * t**2 + 5.869e-9 * t**3
    assert hr.standard_potential(318.15) == pytest.approx(bb, abs=2e-4)


def test_quinhydrone_responds_to_ph_only():
    hr = standard_couple("quinhydrone")
    assert hr.determinands == ("H+",)
    sol = act.Solution({"H+": np.array([1e-2, 1e-3]), "Cl-": np.array([1e-2, 1e-3])})
    E = hr.potential(sol, "ideal")
    assert E[0] - E[1] == pytest.approx(S25, rel=1e-12)


def test_table_has_sources_and_parses():
    for name in available_couples():
        hr = standard_couple(name)
        assert hr.source, name
        hr.reaction.check_balance()
    with pytest.raises(InputError, match="tabulated"):
        standard_couple("Unobtainium/U")


def test_daniell_standard_emf():
    # Daniell cell E° = 1.100 V (common practice); Cu 0.3419 and Zn −0.7618 V give 1.1037 V (CRC table, from memory)
    e0 = standard_couple("Cu^2+/Cu").E0 - standard_couple("Zn^2+/Zn").E0
    assert e0 == pytest.approx(1.100, abs=0.005)


def test_best_available_model_records_fallback():
    model, notes = best_available_model(["K+", "Cl-"])
    if pitzer_covers("K+", "Cl-"):
        assert model.name == "pitzer" and notes == ()
    else:
        assert model.name == "truesdell-jones"
        assert notes[0].startswith("pitzer unavailable") and notes[-1] == "used truesdell-jones instead"
