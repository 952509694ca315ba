"""Uncertainty of the total from a reading when the electrode answers to the free ion.

A calcium ISE in a sulfate matrix (CaSO4⁰ from models/equilibria.toml): the molality found
is the total calcium, the electrode sees the free ion. The GUM budget of the chain
(numeric sensitivities through the speciated inverse) is checked against a Monte Carlo
run done here by hand — draws of the reading and the sulfate amount pushed through
``molality_from_potential(..., speciation={})`` in one batch (JCGM 101) — and against the
chain's own Monte Carlo option; the sensitivity to the reading against a central difference.
The sample and electrode are invented.
"""

import json
import warnings

import numpy as np
import pytest

import activity as act
from activity.nernst.inverse import molality_from_potential
from activity.workflows.measurement import molality_with_uncertainty

ISE = act.IonSelectiveElectrode("Ca^2+", E0=0.1)
MATRIX = act.Solution({"Na+": 0.02, "SO4^2-": 0.01})
READING = 0.006633  # V: 2 mmol/kg total Ca in this matrix (tests/nernst/test_free_ion_option.py)
U_READING = 2e-4  # V
U_SO4 = 0.02  # relative


@pytest.fixture(autouse=True)
def _quiet():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", act.ActivityWarning)
        yield


def _chain(**kw):
    return molality_with_uncertainty(
        ISE, READING, MATRIX, "davies", counter_ion="Cl-", u_reading=U_READING,
        u_molality={"SO4^2-": U_SO4 * 0.01}, speciation={}, spread_models=["davies"], **kw,
    )


def test_gum_through_the_speciated_inverse_against_a_hand_monte_carlo():
    gum = _chain()
    assert gum.value == pytest.approx(2e-3, rel=1e-3)
    rng = np.random.default_rng(11)
    n = 4000
    E = rng.normal(READING, U_READING, n)
    so4 = rng.normal(0.01, U_SO4 * 0.01, n)
    draws = act.Solution({"Na+": np.full(n, 0.02), "SO4^2-": so4})
    m = molality_from_potential(ISE, E, draws, "davies", counter_ion="Cl-", speciation={}, warn=False).molality
    # the standard deviation of 4000 draws scatters by about 1/sqrt(2·4000) = 1.1 %; the model is
    # nearly linear over ±3 u (u(E) = 0.2 mV against 12.8 mV per decade), so 5 % is a 4.5-sigma bound
    assert np.std(m, ddof=1) == pytest.approx(gum.standard_uncertainty, rel=0.05)
    assert np.mean(m) == pytest.approx(gum.value, rel=3 * gum.standard_uncertainty / gum.value / np.sqrt(n) + 1e-3)


def test_sensitivity_to_the_reading_against_a_central_difference():
    gum = _chain()
    row = next(r for r in gum.propagation.budget if r.name.startswith("reading"))
    h = 1e-5  # V; the inverse and the speciation converge to ~1e-10, far below m·h·slope
    m = molality_from_potential(
        ISE, np.array([READING - h, READING + h]), MATRIX, "davies", counter_ion="Cl-", speciation={}, warn=False
    ).molality
    assert row.sensitivity == pytest.approx((m[1] - m[0]) / (2 * h), rel=1e-3)


def test_chain_monte_carlo_agrees_with_gum():
    gum = _chain()
    mc = _chain(method="monte-carlo", trials=3000, seed=4)
    # 3000 trials: the standard deviation scatters by about 1.3 %; 6 % is a 4.5-sigma bound
    assert mc.standard_uncertainty == pytest.approx(gum.standard_uncertainty, rel=0.06)
    assert mc.propagation.method == "monte-carlo"


def test_cli_free_ion_with_uncertainty(capsys):
    from activity.cli import main

    args = ["invert", "--ise", "Ca2+", "--e0", "100 mV", "--reading", "6.633 mV", "Na+=20 mmol/kg",
            "SO4^2-=10 mmol/kg", "--counter-ion", "Cl-", "--free-ion", "--u-reading", "0.2 mV", "--json"]
    assert main(args) == 0
    out = json.loads(capsys.readouterr().out)
    gum = _chain()
    assert out["uncertainty"]["method"] == "gum"
    assert out["uncertainty"]["standard_uncertainty"] == pytest.approx(
        np.sqrt(gum.standard_uncertainty**2 - (gum.propagation.budget[0].contribution) ** 2), rel=1e-3
    )
    # the validity reported is that of the speciated sample: no uncounted 2:2 pair alert
    assert "2:2 pair" not in json.dumps(out)
    assert main(args + ["--method", "monte-carlo", "--trials", "2000", "--seed", "3"]) == 0
    mc = json.loads(capsys.readouterr().out)["uncertainty"]
    # 2000 trials: about 1.6 % scatter of the standard deviation; 7 % is a 4.4-sigma bound
    assert mc["standard_uncertainty"] == pytest.approx(out["uncertainty"]["standard_uncertainty"], rel=0.07)
