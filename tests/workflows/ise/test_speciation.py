"""Calibration with free-ion activities from the speciation layer (Ca²⁺ standards in sulfate)."""

import json
import warnings

import numpy as np
import pytest

from activity import Solution, speciate
from activity.cli import main
from activity.coefficients import get_model
from activity.errors import ActivityWarning, InputError
from activity.workflows.ise import calibrate_ise
from activity.workflows.ise._model import nernst_slope_z
from activity.workflows.ise.calibration import ISECalibration

C = np.logspace(-5, -2, 5)
# standards of CaCl2 in 0.05 mol/kg Na2SO4: about half of the calcium is paired as CaSO4 (aq)
STANDARDS = Solution({"Ca^2+": C, "Na+": 0.1, "SO4^2-": 0.05, "Cl-": 2 * C})
MATRIX = Solution({"Na+": 0.1, "SO4^2-": 0.05})
E0, K = 0.080, 0.98  # an electrode of our own (invented): 98 % of the Nernst slope


def free_activity(sol):
    free = speciate(sol, "davies").solution
    g = get_model("davies").activity_coefficients(free, warn=False)
    k = free.index("Ca^2+")
    return free.m[k] * 10 ** g.log10_gamma[k]


@pytest.fixture(scope="module")
def readings():
    # the electrode answers to the free Ca²⁺ (synthesised, noise-free)
    return E0 + K * nernst_slope_z(298.15, 2) * np.log10(free_activity(STANDARDS))


def fit(readings, speciation):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        return calibrate_ise(STANDARDS, readings, "Ca^2+", speciation=speciation, detection_term=0.0)


def test_with_speciation_the_fit_recovers_E0_and_slope(readings):
    cal = fit(readings, {})
    # noise-free readings built on the same free activities: recovered to the fit's rounding (1 µV)
    assert cal.E0 == pytest.approx(E0, abs=1e-6)
    assert cal.slope_factor == pytest.approx(K, abs=1e-6)
    assert cal.activity_basis.startswith("free ion from speciation")
    assert any("free ions from speciation" in n for n in cal.notes)
    # the standards' γ is the free activity over the total: the pairing (about half) is in it; the
    # γ of the unpaired solution is at a higher I than the speciated one, so the ratio is 0.51–0.56 here
    plain = get_model("davies").activity_coefficients(STANDARDS, warn=False)["Ca^2+"]
    assert np.all(cal.standards["gamma"] < 0.6 * plain)


def test_without_speciation_the_fit_is_biased(readings):
    cal = fit(readings, None)
    # about half the calcium is paired: lg(0.5) · 28.9 mV ≈ −8.7 mV on E0 if the fraction were constant;
    # demand a bias of more than 3 mV (the fit would pass this only if the pairing were ignored by the data)
    assert abs(cal.E0 - E0) > 3e-3
    assert cal.activity_basis == "total ion × γ (no speciation)"


def test_unknowns_read_with_the_speciated_calibration(readings):
    cal = fit(readings, {})
    m_true = np.array([3e-5, 2e-3])
    sample = Solution({"Ca^2+": m_true, "Na+": 0.1, "SO4^2-": 0.05, "Cl-": 2 * m_true})
    E = E0 + K * nernst_slope_z(298.15, 2) * np.log10(free_activity(sample))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        res = cal.read(E, MATRIX, counter_ion="Cl-")
        g = cal.molality_with_uncertainty(E, MATRIX, counter_ion="Cl-", u_emf=2e-4, model_choice=False)
        mc = cal.molality_with_uncertainty(
            E, MATRIX, counter_ion="Cl-", u_emf=2e-4, model_choice=False, method="monte-carlo", trials=400, seed=3
        )
    # the reader's fixed point stops at 1e-11 in ln m; the speciation converges to 1e-11: 1e-8 covers both
    np.testing.assert_allclose(res.molality, m_true, rtol=1e-8)
    assert any("free ions from speciation" in n for n in res.notes)
    # Monte Carlo through the general reader (speciation in the loop): 400 trials, SD of an SD ≈ 3.5 %
    np.testing.assert_allclose(mc.standard_uncertainty, g.standard_uncertainty, rtol=0.15)


def test_saved_calibration_keeps_speciation(readings):
    cal = fit(readings, {"ph": 7.0})
    back = ISECalibration.from_dict(json.loads(json.dumps(cal.to_dict())))
    assert back.speciation == {"ph": 7.0}
    assert back.activity_basis == cal.activity_basis


def test_speciation_must_be_a_mapping(readings):
    with pytest.raises(InputError, match="speciation"):
        calibrate_ise(STANDARDS, readings, "Ca^2+", speciation=True)


def test_cli_flag_and_method_key(tmp_path, readings, capsys):
    rows = ["label,Ca2+ [mol/kg],Na+ [mol/kg],SO4^2- [mol/kg],Cl- [mol/kg],reading [mV]"]
    for i, c in enumerate(C):
        rows.append(f"S{i + 1},{c:.6g},0.1,0.05,{2 * c:.6g},{1000 * readings[i]:.4f}")
    (tmp_path / "std.csv").write_text("\n".join(rows) + "\n")
    (tmp_path / "m.toml").write_text('ion = "Ca^2+"\ndetection_term = 0\nspeciation = true\n')
    (tmp_path / "plain.toml").write_text('ion = "Ca^2+"\ndetection_term = 0\n')
    assert main(["calibrate", str(tmp_path / "std.csv"), "--method", str(tmp_path / "m.toml"), "--json"]) == 0
    a = json.loads(capsys.readouterr().out)
    flag = ["calibrate", str(tmp_path / "std.csv"), "--method", str(tmp_path / "plain.toml"), "--speciate"]
    assert main(flag) == 0
    text = capsys.readouterr().out
    assert "free ion from speciation" in text
    assert main(["calibrate", str(tmp_path / "std.csv"), "--method", str(tmp_path / "plain.toml"), "--json"]) == 0
    b = json.loads(capsys.readouterr().out)
    e0_a = a["calibration"].get("E0_mV", a["calibration"].get("E0_V"))
    e0_b = b["calibration"].get("E0_mV", b["calibration"].get("E0_V"))
    assert e0_a != pytest.approx(e0_b, rel=1e-3)
