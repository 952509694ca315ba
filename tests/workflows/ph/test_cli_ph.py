"""The pH commands, run through activity.cli.main."""

from __future__ import annotations

import json

import pytest

from activity.cli import main


@pytest.fixture()
def examples(tmp_path):
    assert main(["ph-calibrate", "--examples", str(tmp_path / "ex")]) == 0
    return tmp_path / "ex"


def test_examples_calibrate_with_samples_plot_and_record(examples, tmp_path, capsys):
    capsys.readouterr()
    plot, record = tmp_path / "cal.png", tmp_path / "rec.html"
    rc = main(
        [
            "ph-calibrate",
            str(examples / "buffer_readings.csv"),
            "--samples",
            str(examples / "samples.csv"),
            "--plot",
            str(plot),
            "--record",
            str(record),
            "--subtitle",
            "bench 3 (invented)",
        ]
    )
    out = capsys.readouterr().out
    assert rc == 0
    assert "pH-meter validation: PASSED" in out and "slope, % of RT ln10/F" in out
    assert "check buffer phosphate-1:3.5" in out and "uncertainty budget: brine B" in out
    assert "pharmacopoeia" in out  # the caution with every pH result
    assert plot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    html = record.read_text(encoding="utf-8")
    assert html.startswith("<!DOCTYPE html>") and "<svg" in html and "Cautions" in html
    assert "bench 3 (invented)" in html and "phthalate-0.05" in html and "activity 0." in html


def test_json_and_csv(examples, capsys):
    capsys.readouterr()
    assert main(["ph-calibrate", str(examples / "buffer_readings.csv"), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["passed"] is True and data["calibration"]["slope"]["unit"] == "mV/pH"
    assert 98 < data["calibration"]["slope, % of RT ln10/F"]["value"] < 99.5
    assert "pharmacopoeia" in data["caution"]
    assert (
        main(
            [
                "ph-calibrate",
                str(examples / "buffer_readings.csv"),
                "--samples",
                str(examples / "samples.csv"),
                "--json",
            ]
        )
        == 0
    )
    samples = json.loads(capsys.readouterr().out)["samples"]
    assert [s["sample"] for s in samples] == ["rinse water A", "brine B"]
    # the brine (I ≈ 1 mol/kg) carries the larger junction term and uncertainty
    assert samples[1]["junction ±"] > samples[0]["junction ±"] and samples[1]["u"] > samples[0]["u"]
    assert {"input", "share"} <= set(samples[0]["budget"][0])
    assert main(["ph-calibrate", str(examples / "buffer_readings.csv"), "--csv"]) == 0
    cap = capsys.readouterr()
    assert cap.out.splitlines()[0] == "section,item,quantity,value,unit" and "pharmacopoeia" in cap.err


def test_thresholds_and_strict(examples, capsys):
    capsys.readouterr()
    rc = main(["ph-calibrate", str(examples / "buffer_readings.csv"), "--slope-range", "99:101", "--strict"])
    out = capsys.readouterr().out
    assert rc == 1 and "FAILED" in out and "limits 99–101 %" in out and "user" in out
    assert main(["ph-calibrate", str(examples / "buffer_readings.csv"), "--drift-max", "0.1 mV/h"]) == 0
    assert "limit ±0.1 mV/h" in capsys.readouterr().out


def test_user_buffers(examples, tmp_path, capsys):
    csv = tmp_path / "r.csv"
    csv.write_text(
        "buffer,reading [mV],temperature [°C]\nKHP,171.5,25\nbench-7,-3.0,25\nborax,-130.4,25\n",
        encoding="utf-8",
    )
    assert main(["ph-calibrate", str(csv), "--buffers", str(examples / "my_buffers.toml")]) == 0
    assert "bench-7" in capsys.readouterr().out


def test_buffers_listing(capsys):
    assert main(["ph-buffers", "-t", "37 °C"]) == 0
    out = capsys.readouterr().out
    assert "standard buffers at 37 °C" in out and "9.088" in out and "pharmacopoeia" in out
    assert main(["ph-buffers", "-t", "20 °C", "--json"]) == 0
    rows = {r["buffer"]: r for r in json.loads(capsys.readouterr().out)["buffers"]}
    assert rows["tartrate-sat"]["pH(S)"] is None  # tabulated from 25 °C only
    assert rows["phthalate-0.05"]["pH(S)"] == 4.000


def test_buffers_listing_keeps_its_columns(capsys):
    # Every table row is one line within 100 columns, and no row is split: each buffer key
    # starts a line of the table (a re-wrapped table used to scatter the descriptions).
    assert main(["ph-buffers", "-t", "37 °C"]) == 0
    out = capsys.readouterr().out
    lines = out.splitlines()
    assert max(len(line) for line in lines) <= 100
    table_rows = lines[3 : lines.index("")]
    assert [r.split()[0] for r in table_rows][-2:] == ["tetroxalate-0.05", "calcium-hydroxide-sat"]
    assert all(len(r.split()) >= 7 for r in table_rows)
    assert "  borax-0.01: disodium tetraborate (borax), 0.01 mol/kg (I = 0.02 mol/kg)" in lines


def test_harned_command(examples, capsys):
    capsys.readouterr()
    assert main(["ph-harned", str(examples / "harned_emfs.csv"), "--buffer", "KHP"]) == 0
    out = capsys.readouterr().out
    assert "pH(PS)" in out and "4.00" in out and "uncertainty budget" in out and "pharmacopoeia" in out
    assert (
        main(
            [
                "ph-harned",
                str(examples / "harned_emfs.csv"),
                "--ionic-strength",
                "0.053 mol/kg",
                "--e0",
                "222.34 mV",
                "--u-e0",
                "0.01 mV",
                "--json",
            ]
        )
        == 0
    )
    res = json.loads(capsys.readouterr().out)["results"][0]
    assert res["pH(PS)"] == pytest.approx(4.005, abs=0.001)
    # E° from the same cell with HCl(0.01 mol/kg): the γ± accuracy (±0.002) now dominates U
    assert (
        main(
            [
                "ph-harned",
                str(examples / "harned_emfs.csv"),
                "--buffer",
                "KHP",
                "--hcl-emf",
                "463.76 mV",
                "--json",
            ]
        )
        == 0
    )
    res = json.loads(capsys.readouterr().out)["results"][0]
    assert 0.002 < res["U (95 %)"] < 0.004 and res["pH(PS)"] == pytest.approx(4.005, abs=0.002)


def test_cli_errors_are_one_line_naming_the_field(tmp_path, capsys):
    volts = tmp_path / "volts.csv"
    # readings in volts under a millivolt header
    volts.write_text(
        "buffer,reading [mV],temperature [°C]\nKHP,0.1715,25\nphosphate,0.0047,25\nborax,-0.1304,25\n",
        encoding="utf-8",
    )
    assert main(["ph-calibrate", str(volts)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "emf" in err and "millivolts" in err
    unknown = tmp_path / "u.csv"
    unknown.write_text("buffer,reading [mV],temperature [°C]\nKHP,171.5,25\nlemon,10,25\n", encoding="utf-8")
    assert main(["ph-calibrate", str(unknown)]) == 2
    assert "buffer = 'lemon'" in capsys.readouterr().err
    hot = tmp_path / "hot.csv"
    hot.write_text("buffer,reading [mV],temperature [°C]\nKHP,171.5,60\nborax,-130,60\n", encoding="utf-8")
    assert main(["ph-calibrate", str(hot)]) == 2
    assert "0–50 °C" in capsys.readouterr().err
    twin = tmp_path / "twin.toml"  # a second buffer with the pH(S) of the 1:1 phosphate (invented lot)
    twin.write_text(
        "[buffers.lot-6865]\ntemperature = [25.0]\npH = [6.865]\nexpanded_uncertainty = 0.01\n"
        'source = "invented certificate"\n',
        encoding="utf-8",
    )
    same = tmp_path / "same.csv"
    same.write_text("buffer,reading [mV],temperature [°C]\nphosphate,4.7,25\nlot-6865,4.8,25\n", encoding="utf-8")
    assert main(["ph-calibrate", str(same), "--buffers", str(twin)]) == 2
    assert "pH_standards" in capsys.readouterr().err
    bad = tmp_path / "bad.csv"
    bad.write_text("buffer,reading [mV],temperature [°C]\nKHP,abc,25\n", encoding="utf-8")
    assert main(["ph-calibrate", str(bad)]) == 2
    assert "row 2, column 'reading [mV]'" in capsys.readouterr().err
    assert main(["ph-calibrate"]) == 2
    assert "--examples" in capsys.readouterr().err
    out = tmp_path / "never.json"
    assert main(["ph-calibrate", str(bad), "--json", "-o", str(out)]) == 2 and not out.exists()
