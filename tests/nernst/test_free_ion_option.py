"""An electrode answers to the free ion: the ``speciation=`` option of the ISE potential and of
the inverse (sulfate pairs Ca²⁺ as CaSO4⁰, constant from models/equilibria.toml)."""

import warnings

import numpy as np
import pytest

import activity as act
from activity.nernst.inverse import molality_from_potential

S25 = act.nernst_slope(298.15)  # RT ln10/F at 25 °C, CODATA constants


@pytest.fixture(autouse=True)
def _quiet():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", act.ActivityWarning)
        yield


def test_potential_follows_the_free_calcium_activity():
    ise = act.IonSelectiveElectrode("Ca^2+", E0=0.1)
    sample = act.Solution({"Ca^2+": [0.002, 0.002], "Na+": [0.0, 0.02], "SO4^2-": [0.0, 0.01], "Cl-": 0.004})
    res = ise.evaluate(sample, "davies", speciation={})
    free = act.speciate(sample, "davies").activity("Ca^2+")
    assert res.potential == pytest.approx(0.1 + S25 / 2 * np.log10(free), abs=1e-9)
    # with sulfate, pairing lowers the free activity: the potential falls by several mV
    total_based = ise.potential(sample, "davies")
    assert total_based[1] - res.potential[1] > 3e-3
    assert abs(total_based[0] - res.potential[0]) < 2e-5  # no ligand: the same within 0.02 mV
    assert any("free ions from speciation" in n for n in res.notes)


def test_inverse_with_speciation_recovers_the_total_from_the_free_ion_reading():
    ise = act.IonSelectiveElectrode("Ca^2+", E0=0.1)
    totals = np.array([5e-4, 2e-3, 8e-3])
    sample = act.Solution({"Ca^2+": totals, "Na+": 0.02, "SO4^2-": 0.01, "Cl-": 2 * totals})
    E = ise.evaluate(sample, "davies", speciation={}).potential
    matrix = act.Solution({"Na+": np.full(3, 0.02), "SO4^2-": 0.01})
    res = molality_from_potential(ise, E, matrix, "davies", counter_ion="Cl-", speciation={})
    assert res.molality == pytest.approx(totals, rel=1e-8)
    assert np.all(res.activity < res.molality * 0.6)  # γ·(free fraction) well below 1 here
    plain = molality_from_potential(ise, E, matrix, "davies", counter_ion="Cl-")
    assert np.all(plain.molality < totals)  # read without speciation, the pairs are missed


def test_inverse_from_a_cell_emf_with_speciation_recovers_the_total():
    ise = act.IonSelectiveElectrode("Ca^2+", E0=0.05)
    cell = act.Cell(left=act.silver_chloride_electrode(3.0), right=ise)
    totals = np.array([1e-3, 4e-3])
    sample = act.Solution({"Ca^2+": totals, "Na+": 0.02, "SO4^2-": 0.01, "Cl-": 2 * totals})
    free = act.speciate(sample, "davies").solution
    emf = cell.emf(free, "davies")
    matrix = act.Solution({"Na+": np.full(2, 0.02), "SO4^2-": 0.01})
    res = act.molality_from_emf(cell, emf, matrix, "davies", species="Ca2+", counter_ion="Cl-", speciation={})
    assert res.molality == pytest.approx(totals, rel=1e-7)


def test_cli_invert_free_ion(capsys):
    from activity.cli import main

    args = [
        "invert",
        "--ise",
        "Ca2+",
        "--e0",
        "100 mV",
        "--reading",
        "6.633 mV",
        "Na+=20 mmol/kg",
        "SO4^2-=10 mmol/kg",
        "--counter-ion",
        "Cl-",
        "--json",
    ]
    assert main(args + ["--free-ion"]) == 0
    import json

    free = json.loads(capsys.readouterr().out)
    assert main(args) == 0
    plain = json.loads(capsys.readouterr().out)
    # 2 mmol/kg total Ca in 10 mmol/kg sulfate reads 6.63 mV (test above); about 30 % is paired
    text = json.dumps(free)
    assert "free ions from speciation" in text
    # with the uncertainty options too (checked against Monte Carlo in
    # tests/speciation/test_free_ion_uncertainty.py)
    assert main(args + ["--free-ion", "--u-reading", "0.2 mV"]) == 0
    assert "uncertainty" in json.loads(capsys.readouterr().out)
    m_free, m_plain = free["results"]["molality"]["value"], plain["results"]["molality"]["value"]
    assert m_free == pytest.approx(2e-3, rel=1e-3)  # the reading was computed for 2 mmol/kg total
    assert m_plain < 0.75 * m_free  # without speciation the paired calcium is missed
