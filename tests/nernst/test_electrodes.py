"""HalfReaction, the standard-potential table, reference electrodes and cells."""

import warnings

import numpy as np
import pytest

import activity as act
from activity.errors import InputError
from activity.nernst.equations import nernst_slope
from activity.nernst.half_reaction import HalfReaction, available_couples, best_available_model, standard_couple

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
    # E° = 0.771 V (Bard, Parsons & Jordan 1985 — from memory, as in models/standard_potentials.toml)
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
    # E°(O2/H2O) = 1.229 V (Bard, Parsons & Jordan 1985 — from memory)
    expected = 1.229 - S25 / 4 * (2 * np.log10(g.water_activity) - 4 * np.log10(a_h))
    assert Ed == pytest.approx(expected, abs=1e-12)


def test_temperature_coefficients_used():
    """E°(T) of AgCl/Ag against Bates & Bower (1954), Table 1 (read; shared published values
    PV 475-492): within 0.1 mV from 0 to 50 °C, where the quadratic in (T − 298.15) holds."""
    hr = standard_couple("AgCl/Ag")
    t = np.array([0, 5, 10, 15, 20, 25, 30, 35, 40, 45, 50.0])
    table = np.array(
        [0.23665, 0.23413, 0.23142, 0.22857, 0.22557, 0.22234, 0.21904, 0.21566, 0.21208, 0.20835, 0.20449]
    )
    assert np.max(np.abs(hr.standard_potential(t + 273.15) - table)) < 1e-4
    # and it is the stated quadratic, not a constant: 20 mV lower at 50 °C than at 25 °C
    assert hr.standard_potential(323.15) - hr.standard_potential(298.15) == pytest.approx(
        -6.442e-4 * 25 + 0.5 * -5.76e-6 * 25**2, abs=1e-12
    )


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


# ------------------------------------------------------------------ cells
from activity.nernst.cell import Cell  # noqa: E402
from activity.nernst.electrodes import (  # noqa: E402
    IonSelectiveElectrode,
    calomel_electrode,
    kcl_saturation_molality,
    silver_chloride_electrode,
)

HCL = act.Solution({"H+": 0.01, "Cl-": 0.01})
H2 = {"H2(g)": 1e5}


def harned_cell():
    return Cell(left=standard_couple("H+/H2"), right=standard_couple("AgCl/Ag"))


def test_harned_cell_arithmetic():
    # Pt|H2|HCl(0.01 mol/kg)|AgCl|Ag at 25 °C: E ≈ 0.4642 V with E° = 0.22234 V (Bates & Bower 1954, Table 1, read) and
    # γ± = 0.904 (Harned & Ehlers 1933; Bates & Bower 1954 — from memory).
    a = 0.01 * 0.904
    right = standard_couple("AgCl/Ag").potential(HCL, "ideal", activities={"Cl-": a})
    left = standard_couple("H+/H2").potential(HCL, "ideal", activities={"H+": a}, pressures=H2)
    E = right - left
    assert E == pytest.approx(0.22234 - 2 * S25 * np.log10(a), abs=1e-12)
    assert E == pytest.approx(0.4642, abs=1e-4)


@pytest.mark.parametrize("model", ["davies", "extended-debye-huckel", "pitzer"])
def test_harned_cell_with_models(model):
    # Tolerance 0.5 mV: about 1 % in γ±, the spread of the models at I = 0.01 mol/kg.
    if model == "pitzer" and not pitzer_covers("H+", "Cl-"):
        pytest.skip("pitzer model or its H+/Cl- parameters not installed yet")
    res = harned_cell().evaluate(HCL, model, pressures=H2)
    assert res.junction_potential == 0.0
    assert res.emf == pytest.approx(0.4642, abs=5e-4)
    assert res.emf == pytest.approx(res.right_potential - res.left_potential)


def test_cell_batch_and_two_compartments():
    sol = act.Solution({"H+": np.array([0.001, 0.01, 0.1]), "Cl-": np.array([0.001, 0.01, 0.1])})
    emf = harned_cell().emf(sol, "davies", pressures=H2)
    assert emf.shape == (3,) and np.all(np.diff(emf) < 0)
    # Daniell cell with unit activities: E° = 1.1037 V (CRC table, from memory), junction left out → noted
    zn = act.Solution({"Zn^2+": 0.1, "SO4^2-": 0.1})
    cu = act.Solution({"Cu^2+": 0.1, "SO4^2-": 0.1})
    cell = Cell(left=standard_couple("Zn^2+/Zn"), right=standard_couple("Cu^2+/Cu"))
    res = cell.evaluate(model="davies", left_solution=zn, right_solution=cu)
    # equal molalities and charges: Davies γ equal, the Nernst terms cancel
    assert res.emf == pytest.approx(0.3419 + 0.7618, abs=1e-12)
    assert any("junction" in n for n in res.notes)
    with pytest.raises(InputError):
        Cell(left=standard_couple("Zn^2+/Zn"), right="copper")


def test_cell_in_one_solution_evaluates_the_model_once():
    # both electrodes of the Harned cell dip into the same solution: one model evaluation serves both
    model = act.get_model("davies")
    seen = []
    evaluate = model.activity_coefficients
    model.activity_coefficients = lambda s, **kw: seen.append(s) or evaluate(s, **kw)
    res = harned_cell().evaluate(HCL, model, pressures=H2)
    assert seen == [HCL]
    assert res.emf == pytest.approx(harned_cell().emf(HCL, "davies", pressures=H2), abs=1e-15)


def test_cell_junction_reported_separately():
    ref = silver_chloride_electrode("saturated")
    sample = act.Solution({"H+": 0.001, "Cl-": 0.001})
    plain = Cell(left=ref, right=standard_couple("H+/H2")).evaluate(sample, "davies", pressures=H2)
    with_j = Cell(left=ref, right=standard_couple("H+/H2"), junction="henderson").evaluate(
        sample, "davies", pressures=H2
    )
    assert plain.junction_potential == 0.0
    assert with_j.emf - plain.emf == pytest.approx(with_j.junction_potential, abs=1e-15)
    # a saturated-KCl bridge against a dilute sample: a few mV at most
    assert 0 < abs(with_j.junction_potential) < 0.005
    fixed = Cell(left=ref, right=standard_couple("H+/H2"), junction=0.002).evaluate(sample, "davies", pressures=H2)
    assert fixed.emf - plain.emf == pytest.approx(0.002)


# ------------------------------------------------------------------ reference electrodes
# Values of common practice at 25 °C (models/reference_electrodes.toml): Ag/AgCl in saturated
# KCl 0.197 V, in 3.5 mol/L KCl 0.205 V, in 3 mol/L KCl 0.210 V; saturated calomel 0.241 V.
# Bound 5 mV: the computed value rests on a single-ion chloride activity (a convention,
# ±1–2 mV at these molalities), on E° values recalled to ±0.1 mV, on the molarity→molality
# conversion (±0.3 mV), and the practical values are rounded to 1 mV and measured with AgCl
# complexation and residual junctions that the equation leaves out.
COMMON_PRACTICE = [
    (silver_chloride_electrode, "saturated", 0.197),
    (silver_chloride_electrode, 3.5, 0.205),
    (silver_chloride_electrode, 3.0, 0.210),
    (calomel_electrode, "saturated", 0.241),
]


@pytest.mark.parametrize("make, filling, practice", COMMON_PRACTICE)
def test_reference_electrodes_against_common_practice(make, filling, practice):
    res = make(filling).evaluate(298.15)
    assert abs(res.potential - practice) < 0.005
    assert res.notes[0].startswith("filling")


def test_common_practice_table_matches_tests():
    table = act.data.load("reference_electrodes")["common_practice"]["values"]
    got = {(v["electrode"], str(v["filling"])): v["E"] for v in table}
    assert got[("silver-chloride", "saturated")] == 0.197
    assert got[("calomel", "saturated")] == 0.241


def test_reference_electrode_follows_chloride_activity():
    # more concentrated filling → more chloride → lower potential; temperature array broadcasts
    assert silver_chloride_electrode(0.1).potential() > silver_chloride_electrode(1.0).potential()
    T = np.array([288.15, 298.15, 308.15])
    E = silver_chloride_electrode("saturated").potential(T)
    assert E.shape == (3,) and np.all(np.diff(E) < 0)
    # saturated KCl at 25 °C: 4.81 mol/kg (CRC Handbook, aqueous solubility of inorganic
    # compounds, converted with M(KCl) = 74.551 g/mol — from memory)
    assert kcl_saturation_molality(298.15) == 4.81
    with pytest.raises(InputError, match="tabulated"):
        kcl_saturation_molality(380.0)
    with pytest.raises(InputError, match="chloride"):
        from activity.nernst.electrodes import ReferenceElectrode

        ReferenceElectrode("Cu^2+/Cu", 1.0)


def test_reference_electrode_model_choice_recorded():
    res = silver_chloride_electrode(3.0).evaluate()
    assert any("chloride activity from" in n for n in res.notes)
    if not pitzer_covers("K+", "Cl-"):
        assert any("pitzer unavailable" in n for n in res.notes)


def test_reference_electrode_records_once_and_warns_once():
    """Notes are the single record: the excursion is noted, and warned once by the entry point."""
    ref = silver_chloride_electrode(3.0, model="davies")  # Davies beyond its validity: a note
    with warnings.catch_warnings(record=True) as seen:
        warnings.simplefilter("always")
        res = ref.evaluate()
    validity = [w for w in seen if issubclass(w.category, act.ValidityWarning)]
    assert len(validity) == 1 and str(validity[0].message) in res.notes
    assert res.alerts == (str(validity[0].message),)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        quiet = ref.evaluate(warn=False)
    assert quiet.notes == res.notes


def test_cell_warns_each_excursion_once():
    cell = Cell(left=silver_chloride_electrode(3.0, model="davies"), right=standard_couple("AgCl/Ag"))
    sample = act.Solution({"K+": 0.5, "Cl-": 0.5})  # Davies outside its validity in both compartments
    with warnings.catch_warnings(record=True) as seen:
        warnings.simplefilter("always")
        res = cell.evaluate(sample, "davies")
    messages = [str(w.message) for w in seen if issubclass(w.category, act.ValidityWarning)]
    assert len(messages) == len(set(messages)) == len(res.alerts) == 2


# ------------------------------------------------------------------ ion-selective electrodes
def test_ise_nernstian_and_selectivity():
    ise = IonSelectiveElectrode("Ca^2+", E0=0.1, selectivity={"Mg^2+": 0.02, "Na+": 1e-3})
    sol = act.Solution({"Ca^2+": np.array([1e-4, 1e-3]), "Mg^2+": 1e-3, "Na+": 0.01, "Cl-": np.array([0.0122, 0.014])})
    g = act.activities(sol, "davies")
    res = ise.evaluate(sol, "davies")
    expected = 0.1 + S25 / 2 * np.log10(g["Ca^2+"] + 0.02 * g["Mg^2+"] + 1e-3 * g["Na+"] ** 2)
    assert np.allclose(res.potential, expected, atol=1e-13, rtol=0)
    assert ise.slope(298.15) == pytest.approx(S25 / 2)
    with pytest.raises(InputError, match="interferent"):
        IonSelectiveElectrode("Ca^2+", 0.0, selectivity={"Cl-": 0.1})
    with pytest.raises(InputError, match="primary ion"):
        ise.potential(act.Solution({"Na+": 0.01, "Cl-": 0.01}))


def test_ise_calibration_against_reference():
    # the demo's pattern: expected EMF of Ca standards against Ag/AgCl, per model
    std = act.Solution.from_molarity(
        {"Ca^2+": np.array([1e-5, 1e-3, 1e-1]), "K+": 0.1, "Cl-": 0.1 + 2 * np.array([1e-5, 1e-3, 1e-1])}
    )
    cell = Cell(left=silver_chloride_electrode(3.0), right=IonSelectiveElectrode("Ca^2+", E0=0.0))
    res = cell.evaluate(std, "davies")
    a_ca = act.activities(std, "davies")["Ca^2+"]
    assert np.allclose(res.emf, S25 / 2 * np.log10(a_ca) - res.left_potential, atol=1e-13, rtol=0)


# ------------------------------------------------------------------ command line
def _run_cli(capsys, *argv):
    from activity.cli.main import main

    rc = main(list(argv))
    out = capsys.readouterr()
    return rc, out.out, out.err


def test_cli_potential_and_cell(capsys):
    import json

    rc, out, _ = _run_cli(capsys, "potential", "AgCl/Ag", "K+=0.01 mol/kg", "Cl-=0.01 mol/kg", "--json")
    assert rc == 0
    doc = json.loads(out)
    sol = act.Solution({"K+": 0.01, "Cl-": 0.01})
    assert doc["results"]["E"]["value"] == pytest.approx(standard_couple("AgCl/Ag").potential(sol, "davies"), abs=1e-15)
    rc, out, _ = _run_cli(
        capsys, "cell", "--left", "H+/H2", "--right", "AgCl/Ag", "H+=0.01 mol/kg", "Cl-=0.01 mol/kg", "--csv"
    )
    assert rc == 0
    emf = float([line for line in out.splitlines() if line.startswith("EMF,")][0].split(",")[1])
    assert emf == pytest.approx(harned_cell().emf(HCL, "davies"), abs=1e-15)


def test_cli_reference_and_invert(capsys):
    rc, out, _ = _run_cli(capsys, "reference", "calomel")
    assert rc == 0 and "common practice" in out
    rc, out, _ = _run_cli(
        capsys, "invert", "--couple", "Ag+/Ag", "--reading", "500 mV", "K+=0.1 mol/kg", "NO3-=0.1 mol/kg", "--json"
    )
    assert rc == 0
    import json

    m = json.loads(out)["results"]["molality"]["value"]
    back = standard_couple("Ag+/Ag").potential(
        act.Solution({"K+": 0.1, "NO3-": 0.1, "Ag+": m}, neutrality="ignore"), "davies"
    )
    assert back == pytest.approx(0.5, abs=1e-12)


@pytest.mark.parametrize(
    "argv, field",
    [
        (("potential", "Foo/Bar", "K+=0.1 mol/kg", "Cl-=0.1 mol/kg"), "couple"),
        (("reference", "calomel", "--filling", "3 g/L"), "filling"),
        (("invert", "--reading", "0.5 V", "K+=0.1 mol/kg", "Cl-=0.1 mol/kg"), "electrode"),
        (("invert", "--ise", "Ca2+", "--reading", "0.5", "K+=0.1 mol/kg", "Cl-=0.1 mol/kg"), "e0"),
        # a reference electrode named as the measuring couple: one line, not a traceback
        (
            (
                "invert",
                "--couple",
                "calomel",
                "--against",
                "silver-chloride",
                "--reading",
                "0.1 V",
                "K+=0.1 mol/kg",
                "Cl-=0.1 mol/kg",
            ),
            "couple",
        ),
    ],
)
def test_cli_errors_are_one_line_exit_2(capsys, argv, field):
    rc, _, err = _run_cli(capsys, *argv)
    assert rc == 2
    assert err.count("\n") == 1 and field in err


def test_every_electrode_follows_the_protocol():
    """One protocol: compartment, determinand and electrode constant without isinstance."""
    from activity.nernst.protocol import Electrode

    ise = IonSelectiveElectrode("Ca^2+", E0=0.05, selectivity={"Mg^2+": 0.01})
    ref = silver_chloride_electrode(3.0)
    hr = standard_couple("AgCl/Ag")
    assert all(isinstance(e, Electrode) for e in (ise, ref, hr))
    assert (ise.own_compartment, ref.own_compartment, hr.own_compartment) == (False, True, False)
    assert ise.determinand() == "Ca^2+" and hr.determinand() == "Cl-"
    with pytest.raises(InputError, match="responds to no species"):
        ref.determinand()
    with pytest.raises(InputError, match="responds to Ca"):
        ise.determinand("Mg2+")
    assert ref.electrode_constant == hr.E0 and ise.electrode_constant == 0.05
    assert ise.with_selectivity({"Mg^2+": 0.02}).selectivity == {"Mg^2+": 0.02}
    assert hr.with_selectivity({"Mg^2+": 0.02}) is hr


def test_ion_selective_electrode_takes_an_array_E0():
    """A batch of electrode constants (e.g. a calibration's draws) broadcasts with the rows."""
    sol = act.Solution({"Ca^2+": [1e-3, 1e-3], "K+": 0.1, "Cl-": 0.102})
    one = IonSelectiveElectrode("Ca^2+", E0=0.05).potential(sol, "davies")
    two = IonSelectiveElectrode("Ca^2+", E0=np.array([0.05, 0.06])).potential(sol, "davies")
    assert two[0] == pytest.approx(one[0], abs=1e-15)
    assert two[1] - two[0] == pytest.approx(0.01, abs=1e-12)
