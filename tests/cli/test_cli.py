"""The command line: exit codes, formats, one-line errors, whole-or-nothing output."""

import json
import subprocess
import sys

import pytest

from activity.cli.main import main


def run(*args):
    proc = subprocess.run([sys.executable, "-m", "activity.cli", *args], capture_output=True, text=True, timeout=120)
    return proc.returncode, proc.stdout, proc.stderr


def test_help_does_not_import_numpy():
    # `activity --help` must start fast: building the parser imports no numerical modules.
    code = (
        "import sys, activity.cli as c; c.build_parser(); "
        "print(sorted(m for m in ('numpy', 'scipy', 'sympy') if m in sys.modules))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.strip()
    assert out == "[]"


def test_solution_table(capsys):
    assert main(["solution", "Na+=0.1 mol/kg", "Cl-=0.1 mol/kg", "-t", "25 °C"]) == 0
    out = capsys.readouterr().out
    assert "ionic strength 0.1 mol/kg" in out
    assert "Na+" in out and "davies" in out


def test_solution_json_all_models(capsys):
    assert main(["solution", "Ca2+=1 mmol/kg", "Cl-=2 mmol/kg", "--model", "all", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["ionic_strength_mol_per_kg"] == pytest.approx(0.003)
    names = [m["model"] for m in data["models"]]
    assert "davies" in names and "extended-debye-huckel" in names
    davies = next(m for m in data["models"] if m["model"] == "davies")
    # Davies (1938) written out: log10 γ = −A z² (√I/(1+√I) − 0.3 I), I = 0.003 mol/kg
    from activity import debye_huckel_A

    s = 0.003**0.5
    expected = 10 ** (-debye_huckel_A(298.15) * 4 * (s / (1 + s) - 0.3 * 0.003))
    assert davies["gamma"]["Ca^2+"] == pytest.approx(expected, rel=1e-9)


def test_solution_csv_from_recipe(tmp_path, capsys):
    recipe = tmp_path / "r.toml"
    recipe.write_text(
        'temperature = "37 °C"\n[composition]\n"K+" = "5 mmol/kg"\n"Cl-" = "5 mmol/kg"\n', encoding="utf-8"
    )
    assert main(["solution", "--recipe", str(recipe), "--csv", "-m", "extended-debye-huckel"]) == 0
    lines = capsys.readouterr().out.strip().splitlines()
    assert lines[0] == "model,species,molality_mol_per_kg,gamma,activity"
    assert len(lines) == 3
    # extended Debye–Hückel written out, log10 γ = −A z² √I / (1 + B å √I), I = 0.005 mol/kg at
    # 37 °C, Kielland (1937) å = 3 Å for K+ and Cl- (from memory); A, B checked in test_water.py
    from activity import debye_huckel_A, debye_huckel_B

    s = 0.005**0.5
    gamma = 10 ** (-debye_huckel_A(310.15) * s / (1 + debye_huckel_B(310.15) * 3.0 * s))
    for line, ion in zip(lines[1:], ["K+", "Cl-"]):
        model, species, m, g, a = line.split(",")
        assert (model, species) == ("extended-debye-huckel", ion)
        assert float(m) == pytest.approx(0.005, rel=1e-12)
        assert float(g) == pytest.approx(gamma, rel=1e-9)
        assert float(a) == pytest.approx(0.005 * gamma, rel=1e-9)


@pytest.mark.parametrize(
    "args, text",
    [
        (["solution", "Na+=0.1"], "a unit is required"),
        (["solution", "SO42-=1 mmol/kg"], "SO4^2-"),
        (["solution", "Na+=0.1 mol/kg", "Cl-=0.1 mol/kg", "-t", "25"], "a unit is required"),
        (["solution", "Na+=0.1 mol/kg", "Cl-=0.1 mol/kg", "-t", "25 K"], "did you mean 25 °C"),
        (["solution", "Na+=0.1 mol/kg", "Cl-=0.1 mol/kg", "-m", "nonsense"], "unknown model"),
        (["solution", "--recipe", "/nonexistent/recipe.toml"], "file not found"),
        (["solution"], "give a composition"),
        (["frobnicate"], "invalid choice"),
    ],
)
def test_errors_are_one_line_exit_2(args, text):
    code, out, err = run(*args)
    assert code == 2
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert len(lines) == 1, err
    assert text in lines[0]
    assert "Traceback" not in err


def test_output_file_is_whole_or_absent(tmp_path):
    target = tmp_path / "out.json"
    assert main(["solution", "Na+=0.01 mol/kg", "Cl-=0.01 mol/kg", "--json", "-o", str(target)]) == 0
    assert json.loads(target.read_text(encoding="utf-8"))["ionic_strength_mol_per_kg"] == pytest.approx(0.01)
    bad = tmp_path / "bad.json"
    assert main(["solution", "Na+=-1 mol/kg", "--json", "-o", str(bad)]) == 2
    assert not bad.exists()
    assert [p.name for p in tmp_path.iterdir()] == ["out.json"]


def test_models_lists_validity(capsys):
    assert main(["models"]) == 0
    out = capsys.readouterr().out
    # (a line starting with a space continues a wrapped cell of the row above: tables fit 100 columns)
    rows = {line.split()[0]: line.split()[1] for line in out.splitlines()[2:] if line[:1].strip()}
    # the I max column shows each model's declared limit: Davies 0.2 mol/kg (Hamer & Wu 1972
    # comparison in test_models_reference.py), extended Debye–Hückel 0.1 (common practice)
    assert float(rows["davies"]) == 0.2
    assert float(rows["extended-debye-huckel"]) == 0.1
    from activity import get_model

    for name in ["ideal", "davies", "extended-debye-huckel", "truesdell-jones"]:
        assert float(rows[name]) == get_model(name).validity.max_ionic_strength


def test_demo_is_the_calibration_and_shows_caution(capsys):
    assert main(["demo"]) == 0
    out = capsys.readouterr().out
    assert "Ca^2+ electrode calibration" in out and "detection limit (IUPAC)" in out
    assert "A: tap water 1+1" in out and "uncertainty budget" in out
    assert "Caution" in out


def test_demo_json(capsys):
    assert main(["demo", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert len(data["standards"]) == 5
    # the activity of a standard is below its molality (γ < 1) at I ≈ 0.1 mol/kg
    assert all(0 < s["activity"] < s["molality_mol_per_kg"] for s in data["standards"])
    assert 90 < data["calibration"]["slope_percent"] < 105


def test_demo_by_model_shows_every_model(capsys):
    assert main(["demo", "--by-model", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert len(data["standards"]) == 5
    davies = next(m for m in data["models"] if m["model"] == "davies")
    assert all(a < s["calcium_mol_per_kg"] for a, s in zip(davies["activity_Ca"], data["standards"]))


def test_validity_excursion_is_shown_with_the_result():
    code, out, err = run("solution", "Na+=1 mol/kg", "Cl-=1 mol/kg", "-m", "extended-debye-huckel")
    assert code == 0
    assert "note: extended-debye-huckel: ionic strength above 0.1" in out


def test_demo_emf_follows_the_nernst_slope():
    # Between standards 3 and 4 (K+ interference negligible: K·a_K² ≪ a_Ca), the EMF step
    # equals the Nernst slope RT ln10/(2F) times the change in log10 a(Ca²⁺).
    import numpy as np

    from activity.workflows.demo import run_demo

    res = run_demo(["davies"])
    col = res.columns[0]
    step = col.emf[3] - col.emf[2]
    assert step == pytest.approx(res.nernst_slope * np.log10(col.activity[3] / col.activity[2]), rel=2e-3)
    assert res.nernst_slope == pytest.approx(0.029580, abs=2e-6)  # 59.16/2 mV, CODATA constants
    # Ag/AgCl in 3 mol/L KCl: about 0.210 V vs SHE at 25 °C (common practice).
    assert res.reference_potential == pytest.approx(0.210, abs=5e-3)


TABLE = """label,Ca2+ [mmol/L],K+ [mol/L],Cl- [mol/L],temperature [°C]
std 1,0.01,0.1,0.10002,25
std 2,0.1,0.1,0.1002,25
std 3,1,0.1,0.102,37
"""


def test_table_batch_equals_single_solutions(tmp_path, capsys):
    path = tmp_path / "standards.csv"
    path.write_text(TABLE, encoding="utf-8")
    assert main(["solution", "--table", str(path), "--json", "-m", "davies"]) == 0
    rows = json.loads(capsys.readouterr().out)["rows"]
    assert [r["label"] for r in rows] == ["std 1", "std 2", "std 3"]
    assert rows[2]["temperature_K"] == pytest.approx(310.15)
    # the same composition given on the command line gives the same activity
    assert main(["solution", "Ca2+=1 mmol/L", "K+=0.1 mol/L", "Cl-=0.102 mol/L", "-t", "37 °C", "--json"]) == 0
    single = json.loads(capsys.readouterr().out)
    davies = next(m for m in single["models"] if m["model"] == "davies")
    assert rows[2]["models"]["davies"]["activity"]["Ca^2+"] == pytest.approx(davies["activity"]["Ca^2+"], rel=1e-12)


@pytest.mark.parametrize(
    "body, text",
    [
        ("Ca2+ [mmol/L],Cl- [mmol/L]\n1,x\n", "row 2, column 'Cl- [mmol/L]'"),
        ("Ca2+ [mmol/L],Cl- [mmol/L]\n1,2,3\n", "row 2"),
        ("Ca2+,Cl- [mmol/L]\n1,2\n", "headers are 'name [unit]'"),
        ("Ca2+ [mmol/L],Cl- [mmol/kg]\n1,2\n", "mix per-kg and per-litre"),
        ("Ca2+ [mmol/L],Cl- [mmol/L]\n", "at least one data row"),
        ("Ca2+ [mmol/L],Cl- [mmol/L]\n1,-2\n", "must not be negative"),
    ],
)
def test_bad_tables_fail_whole(tmp_path, body, text):
    path = tmp_path / "bad.csv"
    path.write_text(body, encoding="utf-8")
    out = tmp_path / "out.csv"
    code, _, err = run("solution", "--table", str(path), "--csv", "-o", str(out))
    assert code == 2
    assert text in err and len(err.strip().splitlines()) == 1
    assert not out.exists()


def test_invert_table_equals_single_readings(tmp_path, capsys):
    path = tmp_path / "readings.csv"
    path.write_text("label,reading [mV],K+ [mol/L],Cl- [mol/L]\nA,-255.3,0.1,0.1\nB,-270.1,0.1,0.1\n", encoding="utf-8")
    common = [
        "invert",
        "--ise",
        "Ca2+",
        "--e0",
        "52.1 mV",
        "--against",
        "silver-chloride:3 mol/L",
        "--counter-ion",
        "Cl-",
    ]
    assert main(common + ["--table", str(path), "--json"]) == 0
    rows = json.loads(capsys.readouterr().out)["rows"]
    assert [r["label"] for r in rows] == ["A", "B"]
    for row, reading in zip(rows, ["-255.3 mV", "-270.1 mV"]):
        assert main(common + ["--reading", reading, "K+=0.1 mol/L", "Cl-=0.1 mol/L", "--json"]) == 0
        single = json.loads(capsys.readouterr().out)["results"]["molality"]["value"]
        assert row["molality_mol_per_kg"] == pytest.approx(single, rel=1e-9)
    # readings 14.8 mV apart are a factor 10^(14.8/29.58) ≈ 3.2 apart in activity (Nernst, z = 2)
    assert rows[0]["activity"] / rows[1]["activity"] == pytest.approx(10 ** (14.8 / 29.58), rel=2e-3)


def test_invert_needs_a_reading(capsys):
    code, _, err = run("invert", "--ise", "Ca2+", "--e0", "52.1 mV", "K+=0.1 mol/L", "Cl-=0.1 mol/L")
    assert code == 2 and "--reading" in err


def test_cautions_for_hazardous_compositions():
    from activity.cautions import GENERAL
    from activity.cli.main import CAUTION

    assert CAUTION == GENERAL  # the fast-start copy in cli.py has not drifted
    code, out, err = run("solution", "H+=0.5 mol/kg", "F-=0.5 mol/kg")
    assert code == 0
    assert "caution: hydrofluoric acid" in err and "caution: strong acid" in err
    code, out, err = run("solution", "Na+=0.1 mol/kg", "Cl-=0.1 mol/kg")
    assert code == 0 and "caution" not in err
