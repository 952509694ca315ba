"""The bad-input corpus (issue 12): every input has one exact expected outcome.

* ``CLI_ERRORS`` / ``API_ERRORS`` (in :mod:`cases`): a one-line error naming the field and the
  value — exit status 2, nothing on standard output, no traceback; in Python the exact
  :class:`~activity.errors.ActivityError` message.
* ``CLI_NOTES`` / ``API_NOTES``: computed, with a recorded note or warning that says what to look at.
* ``CLI_CORRECT`` / ``API_CORRECT``: inputs that look odd but are valid, with the correct result.

CLI cases run in-process through :func:`activity.cli.main` (fast); ``{d}`` is a scratch folder.
"""

from __future__ import annotations

import io
import json
import math
import os
import warnings

import numpy as np
import pytest

from activity import Cell, IonSelectiveElectrode, Solution, get_model, standard_couple
from activity.cli.main import main
from activity.errors import ActivityError, ActivityWarning
from activity.io.files import write_text
from activity.io.units import parse_pressure

from .cases import API_ERRORS, CLI_ERRORS, FILES


@pytest.fixture
def scratch(tmp_path):
    for name, text in FILES.items():
        (tmp_path / name).write_text(text, encoding="utf-8")
    (tmp_path / "latin1.csv").write_bytes("K+ [mmol/kg],Cl- [mmol/kg],temperature [°C]\n1,1,25\n".encode("latin-1"))
    (tmp_path / "utf16.csv").write_bytes("K+ [mmol/kg],Cl- [mmol/kg]\n1,1\n".encode("utf-16"))
    (tmp_path / "ok_api.csv").write_text("K+ [mmol/kg],Cl- [mmol/kg]\n1,1\n")
    return str(tmp_path)


def run(capsys, argv, d=""):
    try:
        rc = main([a.replace("{d}", d) for a in argv])
    except SystemExit as exc:  # argparse errors
        rc = exc.code
    out, err = capsys.readouterr()
    return rc, out, err


# ---------------------------------------------------------------- clear errors
@pytest.mark.parametrize("group, argv, line", CLI_ERRORS, ids=[f"{g}:{' '.join(a)[:60]}" for g, a, _ in CLI_ERRORS])
def test_cli_error(capsys, scratch, group, argv, line):
    rc, out, err = run(capsys, argv, scratch)
    assert rc == 2 and out == ""
    assert "Traceback" not in err
    errors = [x for x in err.splitlines() if x.startswith("activity")]
    assert errors == [line.replace("{d}", scratch)]


def _namespace(d):
    """The names the corpus expressions use."""
    import activity
    from activity.cli.electrode import electrode_from_spec
    from activity.formatting import ascii_fallback
    from activity.io import recipe, tables, units
    from activity.nernst.inverse import molality_from_potential
    from activity.species import check_solute

    names = ["balance_half_reaction", "parse_reaction", "parse_species", "silver_chloride_electrode"]
    names += ["Cell", "IonSelectiveElectrode", "Solution", "get_model", "standard_couple"]
    return {
        **{n: getattr(activity, n) for n in names},
        **{n: getattr(units, n) for n in units.__all__},
        "parse_pairs": recipe.parse_pairs,
        "solution_from_recipe": recipe.solution_from_recipe,
        "read_table": tables.read_table,
        "solution_from_table": tables.solution_from_table,
        "electrode_from_spec": electrode_from_spec,
        "ascii_fallback": ascii_fallback,
        "molality_from_potential": molality_from_potential,
        "check_solute": check_solute,
        "write_text": write_text,
        "np": np,
        "HARNED": Cell(left=standard_couple("H+/H2"), right=standard_couple("AgCl/Ag")),
        "HCL": Solution({"H+": 0.01, "Cl-": 0.01}),
        "KNO3": Solution({"K+": 0.1, "NO3-": 0.1}),
        "TMPDIR": d,
        "OKCSV": os.path.join(d, "ok_api.csv"),
    }


@pytest.mark.parametrize("expr, cls, message", API_ERRORS, ids=[e[:70] for e, _, _ in API_ERRORS])
def test_api_error(scratch, expr, cls, message):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        with pytest.raises(ActivityError) as info:
            eval(expr, _namespace(scratch))
    assert type(info.value).__name__ == cls
    assert str(info.value) == message.replace("{d}", scratch)
    if cls == "InputError":
        assert isinstance(info.value, ValueError) and info.value.field


# ---------------------------------------------------------------- computed, with a note
S = ["Na+=0.1 mol/kg", "Cl-=0.1 mol/kg"]
CLI_NOTES = [  # (argv, text expected on standard error (warning) or standard output (note))
    (["solution", "--table", "{d}/ok.csv", "-t", "37 °C"], "warning: temperature 37 °C applied to every row of 2"),
    (["solution", "--table", "{d}/ok.csv", "-p", "2 bar"], "warning: pressure 2 bar applied to every row of 2"),
    (
        ["solution", *S, "-p", "5000 bar"],
        "the water density model ignores pressure (good to about 0.5 % up to 100 bar)",
    ),
    (
        ["solution", "-r", "{d}/recipe.toml", "Na+=0.2 mol/kg", "Cl-=0.2 mol/kg"],
        "warning: Na+=0.2 mol/kg on the command line replaces Na+ = '0.1 mol/kg' of the recipe",
    ),
    (["solution", "Mg2+=0.05 mol/kg", "SO4^2-=0.05 mol/kg"], "note: davies: with a 2:2 pair (ion association)"),
    (["solution", "Na+=1 mol/kg", "I-=1 mol/kg", "-m", "pitzer"], "note: pitzer: no parameters for the pair Na+ I-"),
    (["solution", "Na+=0.1 mol/kg", "Cl-=0.2 mol/kg"], "warning: composition is not electrically neutral"),
    (
        ["solution", "Na+=0.5 mol/kg", "Cl-=0.5 mol/kg", "-m", "truesdell-jones", "-t", "50 °C"],
        "note: truesdell-jones: temperature outside 15–35 °C",
    ),
    (["solution", "Na+=1 mol/kg", "Cl-=1 mol/kg"], "note: davies: ionic strength above 0.2 mol/kg"),
    (
        ["solution", "Na+=0.2 mol/kg", "SO4^2-=0.1 mol/kg", "-m", "truesdell-jones"],
        "note: truesdell-jones: with a divalent or higher anion the model holds to I = 0.1 mol/kg",
    ),
    (["solution", "Na+=1 mol/kg", "Cl-=1 mol/kg", "-m", "all"], "OUTSIDE validity"),
    (
        ["solution", "Na+=0.05 mol/kg", "K+=0.05 mol/kg", "Cl-=0.1 mol/kg", "-m", "extended-debye-huckel"],
        "do not satisfy Gibbs–Duhem",
    ),
    (["models"], "15–35 (108 of 120; rest 0–50)"),
    (["reference", "silver-chloride"], "note: common-practice value"),
    (
        ["invert", "--couple", "Ag+/Ag", "--table", "{d}/read.csv", "--counter-ion", "NO3-", "-t", "37 °C"],
        "warning: temperature 37 °C applied to every row of 1",
    ),
    (
        ["solution", "--table", "{d}/perL.csv", "--density", "1.001 g/cm3"],
        "warning: composition is not electrically neutral",
    ),
]


@pytest.mark.parametrize("argv, text", CLI_NOTES, ids=[" ".join(a)[:60] for a, _ in CLI_NOTES])
def test_cli_note(capsys, scratch, argv, text):
    (tmp := os.path.join(scratch, "perL.csv")) and open(tmp, "w").write("K+ [mmol/L],Cl- [mmol/L]\n1,2\n")
    rc, out, err = run(capsys, argv, scratch)
    assert rc == 0 and "Traceback" not in err
    assert text in out + err


def _warned(func, *a, **kw):
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        out = func(*a, **kw)
    return out, [str(w.message) for w in caught if issubclass(w.category, ActivityWarning)]


API_NOTES = [  # (callable, text expected among the warnings or the result's notes)
    (lambda: parse_pressure("5000 bar"), "the water density model ignores pressure"),
    (lambda: parse_pressure("200 bar"), "pressure up to 200 bar"),
    (
        lambda: get_model("davies").activity_coefficients(Solution({"Mg^2+": 0.05, "SO4^2-": 0.05}), warn=False),
        "davies: with a 2:2 pair",
    ),
    (
        lambda: get_model("extended-debye-huckel").activity_coefficients(
            Solution({"Zn^2+": 0.01, "SO4^2-": 0.01}), warn=False
        ),
        "extended-debye-huckel: with a 2:2 pair",
    ),
    (
        lambda: get_model("truesdell-jones").activity_coefficients(
            Solution({"K+": 0.1, "SO4^2-": 0.05, "Cl-": 0.0}), warn=False
        ),
        "truesdell-jones: with a divalent or higher anion",
    ),
    (
        lambda: get_model("pitzer").activity_coefficients(Solution({"Na+": 1.0, "I-": 1.0}), warn=False),
        "pitzer: no parameters for the pair Na+ I-",
    ),
    (
        lambda: get_model("truesdell-jones").activity_coefficients(
            Solution({"Na+": 0.1, "Cl-": 0.1}, T=278.15), warn=False
        ),
        "truesdell-jones: temperature outside 15–35 °C",
    ),
    (
        lambda: get_model("truesdell-jones").activity_coefficients(
            Solution({"Na+": 0.05, "K+": 0.05, "Cl-": 0.1}), warn=False
        ),
        "do not satisfy Gibbs–Duhem",
    ),
    (lambda: Solution({"Na+": 0.1, "Cl-": 0.2}), "composition is not electrically neutral"),
    (
        lambda: get_model("davies").activity_coefficients(Solution({"Na+": 0.1, "Cl-": 0.1}, P=5e8), warn=False),
        "davies: pressure up to 5000 bar: the water density model ignores pressure",
    ),
]


@pytest.mark.parametrize("func, text", API_NOTES)
def test_api_note(func, text):
    out, caught = _warned(func)
    notes = list(getattr(out, "notes", ())) + caught
    assert any(text in n for n in notes), notes


# ---------------------------------------------------------------- valid after all: correct results
def _json(capsys, argv, d=""):
    rc, out, err = run(capsys, argv + ["--json"], d)
    assert rc == 0, err
    return json.loads(out)


@pytest.mark.parametrize(
    "pairs",
    [
        ["Ca²⁺=1 mmol/kg", "Cl⁻=2 mmol/kg"],
        ["Ca++=1 mmol/kg", "Cl-=2 mmol/kg"],
        ["Ca+2=1 mmol/kg", "Cl-=2 mmol/kg"],
        ["Ca^2+=1 mmol/kg", "Cl-=2 mmol/kg"],
        ["Ca2+=1 mmol/kg", "Cl-=2 mmol/kg"],
        ["Ca2+ = 1 mmol/kg", " Cl- =2mmol/kg"],
        ["Ca2+=1000 µmol/kg", "Cl-=2000 umol/kg"],
        ["Ca2+=0.001 m", "Cl-=0.002 m"],
    ],
)
def test_cli_spellings_of_one_solution(capsys, pairs):
    data = _json(capsys, ["solution", *pairs])
    assert data["ionic_strength_mol_per_kg"] == pytest.approx(0.003, rel=1e-12)  # ½(4·0.001 + 0.002)
    assert [s["name"] for s in data["species"]] == ["Ca^2+", "Cl-"]


@pytest.mark.parametrize("text", ["298.15 K", "25 C", "25 degC", "25 ℃", "25°C", " 25 °C "])
def test_cli_spellings_of_25_celsius(capsys, text):
    assert _json(capsys, ["solution", *S, "-t", text])["temperature_K"] == pytest.approx(298.15, abs=1e-9)


@pytest.mark.parametrize("text", ["1 atm", "101.325 kPa", "1.01325 bar", "101325 Pa", "0.101325 MPa", "1013.25 mbar"])
def test_cli_spellings_of_one_atmosphere(capsys, text):
    assert _json(capsys, ["solution", *S, "-p", text])["pressure_Pa"] == pytest.approx(101325.0, rel=1e-12)


def test_cli_neutral_species_on_purpose(capsys):
    data = _json(capsys, ["solution", "CaSO4(aq)=1 mmol/kg", *S])
    assert data["ionic_strength_mol_per_kg"] == pytest.approx(0.1)


def test_cli_explicit_caret_charge_is_taken_at_its_word(capsys):
    # 'Na^2+' is not an aqueous ion anyone meets, but the caret makes the charge explicit:
    # judged valid (the unambiguous spelling is the user's own statement), with I = ½·4·0.1 + ½·0.2.
    data = _json(capsys, ["solution", "Na^2+=0.1 mol/kg", "Cl-=0.2 mol/kg"])
    assert data["ionic_strength_mol_per_kg"] == pytest.approx(0.3)


def test_cli_molar_and_mass_units_agree(capsys):
    # 0.1 mol/L Na+ = 2.298977 g/L (IUPAC atomic weight of Na 22.98977, common practice)
    a = _json(capsys, ["solution", "Na+=100 mM", "Cl-=100 mM"])
    b = _json(capsys, ["solution", "Na+=2298.977 mg/L", "Cl-=3545.3 mg/L"])
    ma = {s["name"]: s["molality_mol_per_kg"] for s in a["species"]}
    mb = {s["name"]: s["molality_mol_per_kg"] for s in b["species"]}
    assert ma["Na+"] == pytest.approx(mb["Na+"], rel=1e-5)  # the 5th digit of the weights given
    assert ma["Na+"] == pytest.approx(Solution.from_molarity({"Na+": 0.1, "Cl-": 0.1}).molality("Na+"), rel=1e-12)


def test_cli_density_in_kg_per_m3_is_converted(capsys):
    # 1 mol/L NaCl of density 1.037 g/cm³ (CRC Handbook, concentrative properties, from memory):
    # molality = 1 / (1.037 − 0.05844) = 1.0219 mol/kg
    data = _json(capsys, ["solution", "Na+=1 mol/L", "Cl-=1 mol/L", "--density", "1037 kg/m3"])
    assert data["species"][0]["molality_mol_per_kg"] == pytest.approx(1.0219, abs=1e-4)


def test_cli_output_to_file_and_fifo(capsys, tmp_path):
    import threading

    target = tmp_path / "r.json"
    rc, out, err = run(capsys, ["solution", *S, "--json", "-o", str(target)])
    assert rc == 0 and out == "" and json.loads(target.read_text())["ionic_strength_mol_per_kg"] == 0.1
    fifo = tmp_path / "pipe"  # a FIFO, not /dev/null: a regression must not be able to replace a system file
    os.mkfifo(fifo)
    got = []
    reader = threading.Thread(target=lambda: got.append(open(fifo).read()))
    reader.start()
    rc, out, err = run(capsys, ["solution", *S, "--json", "-o", str(fifo)])
    reader.join(10)
    assert rc == 0 and out == "" and json.loads(got[0])["ionic_strength_mol_per_kg"] == 0.1


def test_cli_reference_electrode_potential(capsys):
    # Ag/AgCl in saturated KCl at 25 °C: 0.197 V vs SHE (common practice; Bates 1973, from memory).
    # 3 mV: the spread of the computed value over the activity-model choice for saturated KCl.
    data = _json(capsys, ["reference", "silver-chloride"])
    assert data["results"]["E"]["value"] == pytest.approx(0.197, abs=3e-3)


def test_cli_harned_cell(capsys):
    # Harned cell, 0.01 mol/kg HCl, 25 °C, 1 atm H2: 0.4641 V (Harned & Ehlers 1933; from memory)
    argv = ["cell", "--left", "H+/H2", "--right", "AgCl/Ag", "H+=0.01 mol/kg", "Cl-=0.01 mol/kg"]
    data = _json(capsys, argv + ["--gas", "H2(g)=1 atm"])
    assert data["results"]["EMF"]["value"] == pytest.approx(0.4641, abs=5e-4)  # Davies at I = 0.01: < 0.5 mV


def test_cli_trace_gas_with_explicit_unit_is_valid(capsys):
    # '0.5 Pa' states its unit: judged valid. E changes by (RT/2F) ln(101325/0.5) against 1 atm.
    argv = ["cell", "--left", "H+/H2", "--right", "AgCl/Ag", "H+=0.01 mol/kg", "Cl-=0.01 mol/kg"]
    one = _json(capsys, argv + ["--gas", "H2(g)=1 atm"])["results"]["EMF"]["value"]
    low = _json(capsys, argv + ["--gas", "H2(g)=0.5 Pa"])["results"]["EMF"]["value"]
    assert one - low == pytest.approx(8.314462618 * 298.15 / (2 * 96485.33212) * math.log(101325 / 0.5), rel=1e-6)


def test_cli_invert_follows_nernst(capsys):
    # Ag+/Ag, E° = 0.7996 V (Bard, Parsons & Jordan 1985): a(Ag+) = 10^((E − E°)/(RT ln10/F))
    argv = ["invert", "--couple", "Ag+/Ag", "--reading", "500 mV", "K+=0.1 mol/kg", "NO3-=0.1 mol/kg"]
    data = _json(capsys, argv + ["--counter-ion", "NO3-"])
    slope = 8.314462618 * 298.15 * math.log(10) / 96485.33212
    assert data["results"]["activity"]["value"] == pytest.approx(10 ** ((0.5 - 0.7996) / slope), rel=1e-3)


def test_cli_invert_table_csv_has_temperature(capsys, scratch):
    rc, out, err = run(
        capsys, ["invert", "--couple", "Ag+/Ag", "--table", "{d}/read.csv", "--counter-ion", "NO3-", "--csv"], scratch
    )
    header, row = out.strip().splitlines()
    assert header.split(",")[:3] == ["label", "temperature_K", "reading_V"] and float(row.split(",")[1]) == 298.15


def test_cli_uncertainty_with_percent_coverage(capsys):
    data = _json(
        capsys, ["potential", "AgCl/Ag", "K+=0.1 mol/kg", "Cl-=0.1 mol/kg", "--u-amount", "1%", "--coverage", "95%"]
    )
    assert data["uncertainty"]["coverage"] == pytest.approx(0.95)


def test_cli_legacy_console_gets_ascii(monkeypatch):
    raw = io.BytesIO()
    stream = io.TextIOWrapper(raw, encoding="ascii", errors="strict")
    monkeypatch.setattr("sys.stdout", stream)
    assert main(["solution", "Ca²⁺=1 mmol/kg", "Cl-=2 mmol/kg"]) == 0
    stream.flush()
    text = raw.getvalue().decode("ascii")
    assert "Solution at 25.00 degC" in text and "gamma" in text


API_CORRECT = [  # (expression, expected value); tolerances are round-off unless stated
    ("parse_amount('10 mM').value", 0.01),
    ("parse_amount('1 m').basis", "kg"),
    ("parse_amount('40 mg/L').mass", True),
    ("parse_amount('0 mol/kg').value", 0.0),
    ("parse_amount('1e-3 mol/kg').value", 1e-3),
    ("parse_amount('+.5 mol/kg').value", 0.5),
    ("parse_temperature('0 °C')", 273.15),
    ("parse_temperature('150 °C')", 423.15),
    ("parse_temperature('273.15 K')", 273.15),
    ("parse_pressure('1 bar')", 1e5),
    ("parse_potential('-35.2 mV')", -0.0352),
    ("parse_potential('52.1 µV')", 52.1e-6),
    ("parse_density('1000 g/L')", 1.0),
    ("parse_density('1.2 g/mL')", 1.2),
    ("parse_species('H₂PO₄⁻').name", "H2PO4-"),
    ("parse_species('Hg₂²⁺').name", "Hg2^2+"),
    ("parse_species('Fe3+').charge", 3),
    ("parse_species('Cu2+').name", "Cu^2+"),
    ("parse_species('CO3--').name", "CO3^2-"),
    ("parse_species('NH4+').name", "NH4+"),
    ("parse_species('AgCl(s)').phase", "s"),
    ("check_solute('CO2').name", "CO2"),
    ("check_solute('NH3').name", "NH3"),
    ("check_solute('O2').name", "O2"),
    ("check_solute('Ar').name", "Ar"),
    ("check_solute('CaSO4(aq)').name", "CaSO4"),
    ("Solution({'Na+': '0.1', 'Cl-': 0.1}).ionic_strength", 0.1),  # a number in text, unit by contract: valid
    ("Solution({'Na⁺': 0.1, 'Cl⁻': 0.1}).species", ("Na+", "Cl-")),
    ("Solution({'Na+': 0.1, 'Cl-': 0.1}).molality('K+', default=0.0)", 0.0),
    ("Solution({'Na+': 0.1, 'Cl-': 0.1}).molality('K+', default=-1.0)", -1.0),
    ("Solution({'Na+': 0.1, 'Cl-': 0.1}, T=423.15).T", 423.15),
    ("Solution({'Na+': 0.1, 'Cl-': 0.1}, P=5e8).P", 5e8),
    ("round(Solution.from_molarity({'Na+': 1.0, 'Cl-': 1.0}, density=1.037).molality('Na+'), 4)", 1.0219),
    ("Solution.from_molarity({'Na+': 0.1, 'Cl-': 0.1}, density=2.9).shape", ()),
    ("parse_pairs(['Na+ = 0.1 mol/kg'])", {"Na+": "0.1 mol/kg"}),
    ("str(parse_reaction('Ag⁺ + e⁻ = Ag(s)'))", "Ag+ + e- = Ag(s)"),
    ("str(balance_half_reaction('Fe^3+ = Fe^2+'))", "Fe^3+ + e- = Fe^2+"),
    ("electrode_from_spec('calomel:3 mol/L').name", "Hg2Cl2/Hg in 3 mol/L KCl"),
    ("electrode_from_spec('silver-chloride').name", "AgCl/Ag in saturated KCl"),
    ("ascii_fallback('γ(Ca²⁺) ≤ 0.5 at 25 °C')", "gamma(Ca^2+) <= 0.5 at 25 degC"),
    ("IonSelectiveElectrode('Ca2+', [0.05, 0.06]).E0.tolist()", [0.05, 0.06]),
    ("silver_chloride_electrode(3.0).filling", 3.0),
    ("solution_from_table(read_table(OKCSV), temperature='37 °C').T.tolist()", [310.15]),
]


@pytest.mark.parametrize("expr, expected", API_CORRECT, ids=[e[:70] for e, _ in API_CORRECT])
def test_api_correct(scratch, expr, expected):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        value = eval(expr, _namespace(scratch))
    if isinstance(expected, float):
        assert value == pytest.approx(expected, rel=1e-12, abs=1e-15)
    else:
        assert value == expected


def test_api_writes_keep_nothing_half_written(tmp_path):
    p = tmp_path / "x.txt"
    write_text(p, "whole")
    assert p.read_text() == "whole" and [f.name for f in tmp_path.iterdir()] == ["x.txt"]


def test_api_array_e0_works():
    # the issue listed a bare TypeError for an array E0: it works (one electrode constant per row)
    ise = IonSelectiveElectrode("Ca2+", np.array([0.05, 0.06]))
    assert np.shape(ise.E0) == (2,)


def test_corpus_size():
    counted = len(CLI_ERRORS) + len(API_ERRORS) + len(CLI_NOTES) + len(API_NOTES) + len(API_CORRECT)
    assert counted >= 200
