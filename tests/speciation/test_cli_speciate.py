"""The ``speciate`` command, run through activity.cli.main."""

import json

import pytest

from activity.cli import main


def test_table_output_shows_species_ph_ionic_strength_and_closure(capsys):
    rc = main(["speciate", "Ca2+=10 mmol/kg", "SO4^2-=10 mmol/kg"])
    out = capsys.readouterr().out
    assert rc == 0
    assert "closure: charge balance on H+" in out
    assert "pH 7.05" in out and "ionic strength" in out
    for name in ("Ca^2+", "SO4^2-", "CaSO4", "HSO4-", "OH-"):
        assert name in out


def test_json_output(capsys):
    rc = main(["speciate", "K+=50 mmol/kg", "C8H5O4-=50 mmol/kg", "--json"])
    doc = json.loads(capsys.readouterr().out)
    assert rc == 0
    assert doc["closure"] == "charge balance on H+"
    # IUPAC 2002 pH(S) of 0.05 mol/kg KH phthalate: 4.005 (published-values.toml 1b, from memory);
    # Davies instead of the Bates–Guggenheim convention: within 0.02
    assert doc["ph"] == pytest.approx(4.005, abs=0.02)
    names = [s["name"] for s in doc["species"]]
    assert "C8H4O4^2-" in names and "C8H6O4" in names
    assert doc["totals_mol_per_kg"]["K+"] == pytest.approx(0.05)


def test_csv_output_with_fixed_ph_and_gas(capsys):
    rc = main(["speciate", "Na+=1 mmol/kg", "Cl-=1 mmol/kg", "--gas", "CO2(g)=0.0415 kPa", "--csv"])
    lines = capsys.readouterr().out.strip().splitlines()
    assert rc == 0
    assert lines[0] == "species,charge,molality_mol_per_kg,gamma,activity"
    assert any(line.startswith("HCO3-,") for line in lines)
    rc = main(["speciate", "Na+=10 mmol/kg", "H2PO4-=10 mmol/kg", "--ph", "7", "--balance", "Na+", "--json"])
    doc = json.loads(capsys.readouterr().out)
    assert doc["ph"] == pytest.approx(7.0, abs=1e-9)
    assert "fixed pH" in doc["closure"] and "charge balance on Na+" in doc["closure"]


def test_table_batch(tmp_path, capsys):
    csv = tmp_path / "batch.csv"
    csv.write_text(
        "label,Ca2+ [mmol/kg],SO4^2- [mmol/kg],temperature [°C]\na,1,1,25\nb,10,10,25\nc,10,10,40\n",
        encoding="utf-8",
    )
    rc = main(["speciate", "--table", str(csv), "--json"])
    doc = json.loads(capsys.readouterr().out)
    assert rc == 0
    assert [r["label"] for r in doc["rows"]] == ["a", "b", "c"]
    free_b = doc["rows"][1]["species"]["Ca^2+"]["molality_mol_per_kg"]
    assert free_b < 0.01
    rc = main(["speciate", "--table", str(csv)])
    assert rc == 0 and "a(Ca^2+)" in capsys.readouterr().out


def test_written_to_file(tmp_path, capsys):
    out = tmp_path / "r.json"
    assert main(["speciate", "Na+=1 mmol/kg", "Cl-=1 mmol/kg", "--json", "-o", str(out)]) == 0
    assert json.loads(out.read_text(encoding="utf-8"))["model"] == "davies"


@pytest.mark.parametrize(
    "argv, needle",
    [
        (["speciate", "Sr2+=1 mmol/kg", "Cl-=2 mmol/kg"], "solution = 'Sr^2+'"),
        (["speciate", "Na+=1 mmol/kg", "Cl-=1 mmol/kg", "--ph", "7", "--balance", "H+"], "balance"),
        (["speciate", "Na+=1 mmol/kg", "Cl-=1 mmol/kg", "--ph", "seven"], "--ph"),
        (["speciate"], "composition"),
    ],
)
def test_errors_are_one_line_exit_2(argv, needle, capsys):
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert err.startswith("activity: error:") and needle in err
    assert "Traceback" not in err


def _batch_csv(tmp_path, n):
    csv = tmp_path / "many.csv"
    lines = ["label,Ca2+ [mmol/kg],SO4^2- [mmol/kg]"] + [f"r{k},{1 + k % 9},{1 + k % 7}" for k in range(n)]
    csv.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return csv


def test_big_batch_progress_bar_only_on_a_terminal(tmp_path, capsys, monkeypatch):
    import io
    import sys

    from activity.speciation import solver

    monkeypatch.setattr(solver, "CHUNK", 8)  # 40 rows = five solver blocks: a "big" batch here
    csv = _batch_csv(tmp_path, 40)
    # not a terminal (captured): nothing on standard error
    assert main(["speciate", "--table", str(csv), "--csv"]) == 0
    captured = capsys.readouterr()
    assert captured.err == "" and len(captured.out.strip().splitlines()) == 41

    class Terminal(io.StringIO):
        def isatty(self):
            return True

    term = Terminal()
    monkeypatch.setattr(sys, "stderr", term)
    assert main(["speciate", "--table", str(csv), "--csv"]) == 0
    assert "speciate:" in term.getvalue() and "/40" in term.getvalue()  # tqdm's bar over the 40 rows
    assert len(capsys.readouterr().out.strip().splitlines()) == 41  # the report itself unchanged
