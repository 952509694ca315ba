"""Uncertainty through the chain Solution → model → Nernst → inverse (activity.workflows.measurement)
and its CLI options."""

import json
import math

import numpy as np
import pytest

from activity import Solution, debye_huckel_A
from activity.cli.main import main
from activity.constants import LN10, F, R
from activity.errors import InputError
from activity.nernst.cell import Cell
from activity.nernst.electrodes import IonSelectiveElectrode, silver_chloride_electrode
from activity.nernst.equations import nernst_slope
from activity.nernst.half_reaction import standard_couple
from activity.workflows.measurement import emf_with_uncertainty, molality_with_uncertainty, potential_with_uncertainty


def kcl(m, T=298.15):
    return Solution({"K+": m, "Cl-": m}, T=T)


# ------------------------------------------------------------ GUM against independent linearisations
def test_gum_potential_matches_uncertainties_package():
    # Independent reference: the `uncertainties` package (first-order propagation by automatic
    # differentiation) with the Davies equation written out by hand,
    # log10 γ = −A z² (√I/(1+√I) − 0.3 I) (Davies 1938; the form stated in README.md), and the
    # Nernst equation of AgCl/Ag, E = E° − (RT/F) ln(γ m(Cl-)). A at 25 °C is the package's
    # (a fixed parameter here: only the linearisation is checked).
    unc = pytest.importorskip("uncertainties")
    umath = pytest.importorskip("uncertainties.umath")
    hr = standard_couple("AgCl/Ag")
    m_K, m_Cl, u_rel, u_e0 = 0.02, 0.02, 0.015, 2e-4
    res = potential_with_uncertainty(hr, kcl(m_Cl), "davies", u_amount=u_rel, u_e0=u_e0, spread_models=["davies"])

    K = unc.ufloat(m_K, u_rel * m_K)
    Cl = unc.ufloat(m_Cl, u_rel * m_Cl)
    E0 = unc.ufloat(hr.E0, u_e0)
    I = 0.5 * (K + Cl)
    log10_g = -debye_huckel_A(298.15) * (umath.sqrt(I) / (1 + umath.sqrt(I)) - 0.3 * I)
    E = E0 - R * 298.15 / F * (LN10 * log10_g + umath.log(Cl))

    assert res.value == pytest.approx(E.nominal_value, abs=1e-12)
    # central differences at 1e-3 u(x): truncation error ~1e-6 relative, hence rtol 1e-5
    assert res.standard_uncertainty == pytest.approx(E.std_dev, rel=1e-5)
    by_name = {row.name: row for row in res.propagation.budget}
    assert by_name["m(Cl-) [mol/kg]"].sensitivity == pytest.approx(E.derivatives[Cl], rel=1e-5)
    assert by_name["m(K+) [mol/kg]"].sensitivity == pytest.approx(E.derivatives[K], rel=1e-5)
    assert by_name["E°(AgCl/Ag) [V]"].sensitivity == pytest.approx(1.0, rel=1e-9)


def test_temperature_sensitivity_is_analytic_for_ideal_model():
    # With γ = 1: E = E°(T) − (RT/F) ln m, so ∂E/∂T = dE°/dT − (R/F) ln m at 298.15 K
    # (analytic derivative; dE°/dT from models/standard_potentials.toml via the couple).
    hr = standard_couple("AgCl/Ag")
    m = 1e-3
    res = potential_with_uncertainty(hr, kcl(m), "ideal", u_temperature=0.5, spread_models=["ideal"])
    expected = hr.dE0dT - R / F * math.log(m)
    assert res.propagation.budget[0].name == "T [K]"
    assert res.propagation.budget[0].sensitivity == pytest.approx(expected, rel=1e-6)
    assert res.standard_uncertainty == pytest.approx(abs(expected) * 0.5, rel=1e-6)


def test_emf_e0_sensitivities_are_plus_and_minus_one():
    # EMF = E(right) − E(left): ∂EMF/∂E°(right) = +1, ∂EMF/∂E°(left) = −1 (definition of the EMF).
    cell = Cell(left=silver_chloride_electrode(3.0), right=IonSelectiveElectrode("Ca^2+", E0=0.05))
    std = Solution({"Ca^2+": 1e-3, "K+": 0.1, "Cl-": 0.102})
    res = emf_with_uncertainty(cell, std, u_e0={"left": 4e-4, "right": 3e-4}, spread_models=["davies"])
    rows = {row.name.split(":")[0]: row for row in res.propagation.budget}
    assert rows["E°(left"].sensitivity == pytest.approx(-1.0, rel=1e-9)
    assert rows["E°(right"].sensitivity == pytest.approx(1.0, rel=1e-9)
    assert res.standard_uncertainty == pytest.approx(5e-4, rel=1e-9)  # √(0.4² + 0.3²) mV
    assert res.value == pytest.approx(cell.emf(std, "davies"), abs=1e-15)


# ------------------------------------------------------------ Monte Carlo against the GUM
def test_monte_carlo_agrees_with_gum_for_a_near_linear_case():
    # 1 % amounts, 0.2 K, 0.2 mV on E°: E is nearly linear over ±3u (curvature of ln m at
    # 1 % changes u by ~1e-4 relative), so the two methods must agree (JCGM 101:2008 clause 8
    # is the formal version of this comparison). Statistical sd of a sample sd from N = 2e5
    # normal draws is u/√(2N) ≈ 0.16 % of u: 1 % on u and 4 u/√N on the mean are safe bounds.
    hr = standard_couple("AgCl/Ag")
    kw = dict(u_amount=0.01, u_temperature=0.2, u_e0=2e-4, spread_models=["davies"])
    gum = potential_with_uncertainty(hr, kcl(0.01), "davies", **kw)
    n = 200_000
    mc = potential_with_uncertainty(hr, kcl(0.01), "davies", method="monte-carlo", trials=n, seed=7, **kw)
    assert mc.propagation.trials == n
    assert mc.standard_uncertainty == pytest.approx(gum.standard_uncertainty, rel=0.01)
    assert abs(mc.value - gum.value) < 4 * gum.standard_uncertainty / math.sqrt(n)
    low, high = mc.coverage_interval()
    g_low, g_high = gum.coverage_interval()
    assert low == pytest.approx(g_low, abs=0.05 * gum.standard_uncertainty)
    assert high == pytest.approx(g_high, abs=0.05 * gum.standard_uncertainty)


# ------------------------------------------------------------ the inverse
def test_inverse_uncertainty_equals_analytic_propagation_ideal_model():
    # m = 10^((E − E0)/s) with γ = 1, so u(m) = m · ln10 · u(E) / s, s = RT ln10/(zF)
    # (analytic derivative). Exact in the model; tolerance from finite differences and
    # the secant solve (rtol 1e-10): 1e-5 relative.
    ise = IonSelectiveElectrode("Ca^2+", E0=0.1)
    u_E = 3e-4
    res = molality_with_uncertainty(
        ise, -0.05, kcl(1e-5), "ideal", counter_ion="Cl-", u_reading=u_E, spread_models=["ideal"]
    )
    s = nernst_slope(298.15, 2)
    m = 10 ** ((-0.05 - 0.1) / s)
    assert res.value == pytest.approx(m, rel=1e-9)
    assert res.standard_uncertainty == pytest.approx(m * LN10 * u_E / s, rel=1e-5)


def test_inverse_uncertainty_dilute_davies_close_to_analytic():
    # Dilute (a ≈ 1e-6, I ≈ 4e-6 mol/kg): γ changes little with m, so u(m) ≈ m·ln10·u(E)/s.
    # The exact linearisation divides by 1 + d ln γ/d ln m; from the Davies form,
    # d ln γ/d ln m ≈ −ln10·A·z²/(2√I) · dI/d ln m ≈ −0.35 % here (own estimate, I = 1e-6 + 3m),
    # so the chain's u(m) must exceed the ideal formula by a few tenths of a percent: 1 % bound.
    ise = IonSelectiveElectrode("Ca^2+", E0=0.1)
    u_E = 2e-4
    s = nernst_slope(298.15, 2)
    res = molality_with_uncertainty(
        ise, 0.1 - 6 * s, kcl(1e-6), "davies", counter_ion="Cl-", u_reading=u_E, spread_models=["davies"]
    )
    analytic = res.value * LN10 * u_E / s
    assert 1.0 < res.standard_uncertainty / analytic < 1.01


def test_inverse_through_a_cell_recovers_the_standard_and_budget_names():
    # Round trip: the EMF of a 2 mmol/kg standard, inverted, gives 2 mmol/kg back (the
    # inverse's own docstring example); every stated input appears in the budget.
    cell = Cell(
        left=silver_chloride_electrode(3.0), right=IonSelectiveElectrode("Ca^2+", E0=0.05, selectivity={"Mg2+": 0.01})
    )
    matrix = Solution({"K+": 0.1, "Cl-": 0.1, "Mg2+": 1e-3}, neutrality="ignore")
    emf = cell.emf(Solution({"Ca^2+": 0.002, "K+": 0.1, "Cl-": 0.104, "Mg2+": 1e-3}, neutrality="ignore"))
    res = molality_with_uncertainty(
        cell,
        emf,
        matrix,
        counter_ion="Cl-",
        u_reading=3e-4,
        u_e0=5e-4,
        u_amount={"K+": 0.01},
        u_temperature=0.2,
        u_selectivity={"Mg2+": 0.002},
        spread_models=["davies"],
    )
    assert res.value == pytest.approx(0.002, rel=1e-8)
    names = [row.name for row in res.propagation.budget]
    assert names == [
        "m(K+) [mol/kg]",
        "T [K]",
        "E°(left: AgCl/Ag in 3 mol/L KCl) [V]",
        "E°(right: Ca^2+ ion-selective electrode) [V]",
        "K(Mg^2+)",
        "reading [V]",
    ]
    rows = dict(zip(names, res.propagation.budget))
    # a larger K means more of the EMF is explained by Mg²⁺: less calcium
    assert rows["K(Mg^2+)"].sensitivity < 0
    # the reading and E°(right) enter as E − E°: equal and opposite sensitivities
    assert rows["reading [V]"].sensitivity == pytest.approx(
        -rows["E°(right: Ca^2+ ion-selective electrode) [V]"].sensitivity, rel=1e-6
    )


# ------------------------------------------------------------ model choice
def test_model_spread_is_zero_for_one_model():
    res = potential_with_uncertainty(
        standard_couple("AgCl/Ag"), kcl(0.1), "davies", u_amount=0.01, spread_models=["davies"]
    )
    assert list(res.spread.values) == ["davies"]
    assert res.spread.spread == 0.0
    assert res.spread.values["davies"] == pytest.approx(res.value, abs=1e-15)


def test_model_spread_positive_across_models_at_ionic_strength_0_1():
    # At I ≈ 0.1 mol/kg the Debye–Hückel-family models and Pitzer differ by tenths of a mV
    # in E (common practice: models part ways above ~0.01 mol/kg); the ideal and limiting-law
    # models are outside their declared validity and must be listed, not counted.
    res = potential_with_uncertainty(standard_couple("AgCl/Ag"), kcl(0.1), "davies", u_amount=0.01)
    counted = set(res.spread.values)
    assert {"davies", "truesdell-jones"} <= counted
    assert "ideal" not in counted and "debye-huckel-limiting" not in counted
    # "tenths of a mV": at least 0.1 mV; at most 2 mV, i.e. about 8 % in γ(Cl-), more than the
    # models differ from Hamer & Wu (1972) for KCl at 0.1 mol/kg (test_models_reference.py).
    assert 1e-4 < res.spread.spread < 2e-3  # V
    assert any(n.startswith("model choice: ideal not counted, outside its validity") for n in res.notes)
    assert "model choice" in res.format_budget()


def test_validity_warnings_during_monte_carlo_become_one_note():
    # 5 % amounts around I = 0.1 mol/kg: about half the Monte Carlo rows exceed the declared
    # limit of extended Debye–Hückel (0.1 mol/kg). Three chunks of 1e5 rows warn, and so does
    # the one linearisation call for the budget (its points at +u reach I = 0.105); the result
    # carries one note and one ValidityWarning saying so.
    from activity.errors import ValidityWarning

    with pytest.warns(ValidityWarning, match=r"4 batch call\(s\) outside a validity") as seen:
        res = potential_with_uncertainty(
            standard_couple("AgCl/Ag"),
            kcl(0.1),
            "extended-debye-huckel",
            u_amount=0.05,
            method="monte-carlo",
            trials=300_000,
            seed=1,
            spread_models=["davies"],
        )
    assert len([w for w in seen if issubclass(w.category, ValidityWarning)]) == 1
    assert [n for n in res.notes if n.startswith("during the propagation")] == [str(seen[0].message)]


# ------------------------------------------------------------ input checks
def test_library_input_errors_name_the_field():
    hr = standard_couple("AgCl/Ag")
    with pytest.raises(InputError, match="uncertainty"):
        potential_with_uncertainty(hr, kcl(0.01))
    with pytest.raises(InputError, match="sample"):
        potential_with_uncertainty(hr, kcl(np.array([0.01, 0.02])), u_amount=0.01)
    with pytest.raises(InputError, match="u_amount"):
        potential_with_uncertainty(hr, kcl(0.01), u_amount=-0.01)
    with pytest.raises(InputError, match="u_molality"):
        potential_with_uncertainty(hr, kcl(0.01), u_molality={"Na+": 1e-4})
    with pytest.raises(InputError, match="u_e0"):
        potential_with_uncertainty(hr, kcl(0.01), u_e0={"left": 1e-4})
    with pytest.raises(InputError, match="u_selectivity"):
        potential_with_uncertainty(hr, kcl(0.01), u_amount=0.01, u_selectivity={"Na+": 0.1})


# ------------------------------------------------------------ command line
CELL = ["cell", "--left", "silver-chloride:3 mol/L", "--right", "AgCl/Ag", "K+=0.1 mol/L", "Cl-=0.1 mol/L"]
INVERT = [
    "invert",
    "--ise",
    "Ca2+",
    "--e0",
    "50 mV",
    "--reading",
    "-260 mV",
    "--against",
    "silver-chloride:3 mol/L",
    "--counter-ion",
    "Cl-",
    "K+=0.1 mol/L",
    "Cl-=0.1 mol/L",
]


def test_cli_cell_prints_budget_and_model_choice(capsys):
    assert main(CELL + ["--u-amount", "1%", "--u-e0", "0.2 mV", "--u-temperature", "0.1 K"]) == 0
    out = capsys.readouterr().out
    assert "uncertainty budget of EMF (V), gum" in out
    assert "m(Cl-) [mol/kg]" in out and "E°(right: AgCl/Ag) [V]" in out and "T [K]" in out
    assert "u(EMF), standard" in out and "coverage interval (95 %), low" in out
    assert "\nmodel choice: " in out


def test_cli_invert_json_has_budget_and_spread(capsys):
    assert main(INVERT + ["--u-reading", "0.3 mV", "--u-e0", "right=0.5 mV", "--u", "K+=0.002 mol/L", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    unc = data["uncertainty"]
    assert unc["quantity"] == "m(Ca^2+)" and unc["unit"] == "mol/kg" and unc["method"] == "gum"
    names = [row["name"] for row in unc["budget"]]
    assert names == ["m(K+) [mol/kg]", "E°(right: Ca^2+ ion-selective electrode) [V]", "reading [V]"]
    # 0.002 mol/L on 0.1 mol/L is 2 % of the molality
    assert unc["budget"][0]["standard_uncertainty"] == pytest.approx(0.02 * unc["budget"][0]["value"], rel=1e-12)
    assert sum(row["share"] for row in unc["budget"]) == pytest.approx(1.0, rel=1e-9)
    assert unc["model_choice"]["spread"] > 0 and "davies" in unc["model_choice"]["values"]
    low, high = unc["coverage_interval"]
    assert low < data["results"]["molality"]["value"] < high


def test_cli_monte_carlo_and_csv(capsys):
    assert (
        main(INVERT + ["--u-reading", "0.3 mV", "--method", "monte-carlo", "--trials", "20000", "--seed", "3", "--csv"])
        == 0
    )
    lines = capsys.readouterr().out.strip().splitlines()
    assert lines[0] == "name,distribution,value,standard_uncertainty,dof,sensitivity,contribution,share"
    assert lines[1].startswith("reading [V],normal,-0.26,0.0003,")
    assert lines[2].startswith("result: m(Ca^2+) [mol/kg],-,")  # the result itself closes the budget
    assert len(lines) == 3


def test_cli_relative_selectivity_uncertainty(capsys):
    # '20%' of K = 0.01 is u(K) = 0.002; the ion may be spelt 'Mg2+' in one option and 'Mg^2+' in the other
    args = [
        "invert",
        "--ise",
        "Ca2+",
        "--e0",
        "52.1 mV",
        "--selectivity",
        "Mg^2+=0.01",
        "--reading",
        "-50 mV",
        "K+=0.1 mol/L",
        "Cl-=0.102 mol/L",
        "Mg2+=1 mmol/L",
        "--counter-ion",
        "Cl-",
        "--u-selectivity",
        "Mg2+=20%",
        "--csv",
    ]
    assert main(args) == 0
    lines = capsys.readouterr().out.strip().splitlines()
    name, dist, value, u = lines[1].split(",")[:4]
    assert (name, dist) == ("K(Mg^2+)", "normal")
    assert float(value) == 0.01 and float(u) == pytest.approx(0.002, rel=1e-12)


@pytest.mark.parametrize(
    "extra, field",
    [
        (["--u-amount", "1"], "--u-amount"),  # no % sign
        (["--u-amount=-1%"], "--u-amount"),  # negative
        (["--u-e0", "-0.3 mV"], "--u-e0"),  # negative
        (["--u-temperature", "0.2"], "--u-temperature"),  # no unit
        (["--u", "Cl-=0.1"], "--u Cl-"),  # no unit
        (["--u", "Cl-=-1%"], "--u Cl-"),  # negative
        (["--seed", "3"], "--seed"),  # nothing uncertain stated
    ],
)
def test_cli_bad_uncertainty_text_exits_2_with_one_line(capsys, extra, field):
    assert main(CELL + extra) == 2
    captured = capsys.readouterr()
    err = captured.err.strip()
    assert captured.out == ""
    assert len(err.splitlines()) == 1
    assert err.startswith(f"activity: error: {field} = ")
