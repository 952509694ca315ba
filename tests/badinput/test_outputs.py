"""Outputs in the units people use and the shape programs read (issue 12, item 3)."""

from __future__ import annotations

import json

import pytest

from activity.cli.main import main

HARNED = ["cell", "--left", "H+/H2", "--right", "AgCl/Ag", "H+=0.01 mol/kg", "Cl-=0.01 mol/kg"]
INVERT = ["invert", "--couple", "Ag+/Ag", "--reading", "500 mV", "K+=0.1 mol/kg", "NO3-=0.1 mol/kg"]
INVERT += ["--counter-ion", "NO3-"]


def out_of(capsys, argv):
    assert main(argv) == 0
    return capsys.readouterr().out


def test_potentials_in_millivolts_in_text_and_volts_in_json(capsys):
    text = out_of(capsys, HARNED)
    data = json.loads(out_of(capsys, HARNED + ["--json"]))
    emf_v = data["results"]["EMF"]["value"]
    assert data["results"]["EMF"]["unit"] == "V"
    row = next(line for line in text.splitlines() if line.startswith("EMF"))
    assert row.split()[-1] == "mV" and float(row.split()[1]) == pytest.approx(emf_v * 1000, abs=5e-4)
    e_right = next(line for line in text.splitlines() if line.startswith("E(right)"))
    assert e_right.endswith("mV vs SHE")


def test_csv_keeps_volts(capsys):
    lines = out_of(capsys, HARNED + ["--csv"]).strip().splitlines()
    assert lines[0] == "quantity,value,unit"
    assert any(line.startswith("EMF,") and line.endswith(",V") for line in lines)


def test_invert_csv_with_uncertainty_includes_the_result(capsys):
    lines = out_of(capsys, INVERT + ["--u-reading", "0.2 mV", "--csv"]).strip().splitlines()
    data = json.loads(out_of(capsys, INVERT + ["--u-reading", "0.2 mV", "--json"]))
    last = lines[-1].split(",")
    assert last[0] == "result: m(Ag+) [mol/kg]"
    assert float(last[2]) == pytest.approx(data["results"]["molality"]["value"], rel=1e-12)
    assert float(last[3]) == pytest.approx(data["uncertainty"]["standard_uncertainty"], rel=1e-12)


@pytest.mark.parametrize(
    "argv",
    [
        ["solution", "Na+=0.1 mol/kg", "Cl-=0.1 mol/kg"],
        ["solution", "Na+=0.1 mol/kg", "Cl-=0.1 mol/kg", "-m", "all"],
        ["models"],
        ["demo"],
        ["reference", "calomel"],
        HARNED,
        INVERT,
        ["potential", "AgCl/Ag", "K+=0.1 mol/kg", "Cl-=0.1 mol/kg", "--u-amount", "1%"],
    ],
)
def test_text_output_fits_100_columns(capsys, argv):
    text = out_of(capsys, argv)
    assert max(len(line) for line in text.splitlines()) <= 100


def test_json_keys_follow_one_style(capsys):
    # bare numbers: snake_case keys ending in their unit; results of the Nernst commands: {value, unit}
    sol = json.loads(out_of(capsys, ["solution", "Na+=0.1 mol/kg", "Cl-=0.1 mol/kg", "--json"]))
    assert {"temperature_K", "pressure_Pa", "ionic_strength_mol_per_kg"} <= set(sol)
    cell = json.loads(out_of(capsys, HARNED + ["--json"]))
    assert all(set(v) == {"value", "unit"} for v in cell["results"].values())
