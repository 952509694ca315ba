"""JSON of the ISE commands: one key style with units in the names, potentials in mV; the saved
calibration is versioned and files of format 1 still load."""

import json
import re
import sys
import warnings
from pathlib import Path

import numpy as np
import pytest

from activity import Solution
from activity.cli import main
from activity.errors import ActivityWarning, InputError
from activity.workflows.ise.calibration import FORMAT, ISECalibration
from activity.workflows.ise.demo import run_ise_demo
from activity.workflows.ise.files import load_calibration, save_calibration
from activity.workflows.ise.report import calibration_text

sys.path.insert(0, str(Path(__file__).parent))
from _examples import calibrate_args  # noqa: E402

OLD = Path(__file__).with_name("calibration_format1.json")  # written by format 1 (potentials in V)
# keys that hold data names (species, interferents), not quantities
DATA_KEYS = {"selectivity", "molality_mol_per_kg", "interferents"}
STYLE = re.compile(r"^[A-Za-z][A-Za-z0-9]*(_[A-Za-z0-9]+)*$")


def _keys(x, parent=""):
    if isinstance(x, dict):
        for k, v in x.items():
            if parent not in DATA_KEYS:
                yield k
            yield from _keys(v, k)
    elif isinstance(x, list):
        for v in x:
            yield from _keys(v, parent)


@pytest.fixture(scope="module")
def full_json(tmp_path_factory):
    ex = tmp_path_factory.mktemp("ex") / "ex"
    assert main(["ise-examples", str(ex)]) == 0
    out = tmp_path_factory.mktemp("out") / "o.json"
    args = calibrate_args(ex) + ["--json", "-o", str(out)]
    assert main(args) == 0
    return json.loads(out.read_text()), ex


def test_one_key_style_with_units_and_no_volts(full_json):
    d, _ = full_json
    keys = set(_keys(d))
    bad = sorted(k for k in keys if not STYLE.match(k))
    assert not bad, bad
    volts = sorted(k for k in keys if re.search(r"_V(_|$)", k))
    assert not volts, volts
    for k in ("E0_mV", "slope_mV_per_decade", "residual_sd_mV", "linear_deviation_mV", "T_K"):
        assert k in d["calibration"]
    assert {"emf_mV", "fitted_mV", "residual_mV", "molality_mol_per_kg"} <= set(d["standards"][0])
    assert {"emf_mV", "molality_mol_per_kg", "u_molality_mol_per_kg", "mass_concentration_mg_per_L"} <= set(
        d["samples"][0]
    )
    assert {"slope_mV_per_decade", "residuals_mV", "u_concentration_mol_per_L"} <= set(d["addition"])


def test_potentials_in_mV_as_the_text_shows(full_json):
    d, ex = full_json
    # the standards CSV gives the readings in mV: the JSON repeats them unchanged
    first = ex.joinpath("standards.csv").read_text().splitlines()[1].split(",")[-1]
    assert d["standards"][0]["emf_mV"] == pytest.approx(float(first), abs=1e-9)
    cal = ISECalibration.from_dict(d["calibration"])
    assert d["calibration"]["E0_mV"] == pytest.approx(1e3 * cal.E0, rel=1e-12)
    assert 20 < d["calibration"]["slope_mV_per_decade"] < 35  # a calcium electrode: about 29 mV/decade


def test_saved_format_and_old_files_load(tmp_path):
    demo = run_ise_demo()
    path = tmp_path / "cal.json"
    save_calibration(demo.calibration, path)
    saved = json.loads(path.read_text())
    assert saved["format"] == FORMAT == 2
    new = load_calibration(path)
    old = load_calibration(OLD)  # format 1, written before the keys carried units
    for a, b in ((new, demo.calibration), (old, demo.calibration)):
        assert a.E0 == pytest.approx(b.E0, rel=1e-12) and a.slope == pytest.approx(b.slope, rel=1e-12)
        np.testing.assert_allclose(a.covariance, b.covariance, rtol=1e-12)
        np.testing.assert_allclose(a.standards["emf"], b.standards["emf"], rtol=1e-12)
        assert a.acceptance == b.acceptance and a.linear_deviation == pytest.approx(b.linear_deviation)
    # both read a sample the same way as the calibration they were saved from
    matrix = Solution({"K+": 0.1, "Cl-": 0.1})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        ref = demo.calibration.molality(-0.140, matrix, counter_ion="Cl-")
        assert new.molality(-0.140, matrix, counter_ion="Cl-") == pytest.approx(ref, rel=1e-12)
        assert old.molality(-0.140, matrix, counter_ion="Cl-") == pytest.approx(ref, rel=1e-12)
    # a file of a later format is refused by name, not misread
    later = dict(saved, format=3)
    with pytest.raises(InputError, match="format"):
        ISECalibration.from_dict(later)


def test_text_budget_shows_readings_in_mV():
    demo = run_ise_demo()
    text = calibration_text(demo.calibration, demo.samples)
    assert "reading [mV]" in text and "[V" not in text
    assert "E0 [mV, calibration]" in demo.samples.uncertainty.inputs
