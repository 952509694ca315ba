"""Acids dissolved as their neutral form: no charge is put in, yet ions form.

The charge balance was scaled by the gross charge put in (zero here, floored at 1e-7
mol/kg), so 0.01 mol/kg H3PO4 or H2C2O4 alone could not meet the tolerance and raised
ConvergenceError. Checked here against an independent solution of the same equations:
ideal γ, the network's own lg β at 25 °C, and the charge balance solved for [H+] by
bracketing (scipy.optimize.brentq) — the solver's answer, not the data, is under test.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import brentq

import activity as act
from activity.speciation.network import default_network


def _ph_ideal(acid: str, base: str, total: float) -> float:
    """pH (−lg m(H+), ideal) of ``total`` mol/kg of ``acid`` whose anion component is ``base``."""
    net = default_network()
    comps = net.components
    ih, ib = comps.index("H+"), comps.index(base)
    lgb = net.lg_beta(298.15)
    forms = [(0.0, 0.0, 1.0, _charge(base))]  # (lg β, ν_H, ν_base, z); the free base first
    for j, name in enumerate(net.products):
        nu = net.stoichiometry(name)
        if np.count_nonzero(nu) == np.count_nonzero(nu[[ih, ib]]) and nu[ib] == 1:
            forms.append((float(lgb[j]), float(nu[ih]), 1.0, _charge(name)))
    lg_kw = float(lgb[net.products.index("OH-")])  # OH- = H2O − H+

    def charge(lgh: float) -> float:
        h = 10.0**lgh
        w = [10.0 ** (lb + nh * lgh) for lb, nh, _, _ in forms]  # per unit free base
        free = total / sum(w)
        return h - 10.0 ** (lg_kw - lgh) + sum(z * wi * free for (_, _, _, z), wi in zip(forms, w))

    return -brentq(charge, -14.0, 0.5, xtol=1e-14, rtol=1e-14)


def _charge(name: str) -> int:
    return act.Solution({name: 1.0}).charges[0]


@pytest.mark.parametrize(
    "acid, base",
    [("H3PO4", "PO4^3-"), ("H2C2O4", "C2O4^2-"), ("CH3COOH", "CH3COO-")],
)
@pytest.mark.parametrize("total", [1e-5, 1e-3, 0.01, 0.1, 1.0])
def test_neutral_acid_alone_ideal_matches_independent_solution(acid, base, total):
    r = act.speciate({acid: total}, "ideal")
    assert bool(np.all(r.converged))
    assert r.ph == pytest.approx(_ph_ideal(acid, base, total), abs=1e-8)


@pytest.mark.parametrize("model", ["davies", "ideal"])
def test_neutral_acids_converge_with_balances_closed(model):
    totals = np.geomspace(1e-6, 1.0, 40)
    for acid in ("H3PO4", "H2C2O4"):
        r = act.speciate({acid: totals}, model)
        assert bool(np.all(r.converged))
        m = np.array([r.molality(s) for s in r.species])
        z = np.array([_charge(s) for s in r.species], float)
        gross = np.abs(z) @ m
        assert np.max(np.abs(z @ m) / gross) < 1e-10  # charge balance, relative to the ions formed
        # phosphorus / oxalate recovered from the species
        base = "PO4^3-" if acid == "H3PO4" else "C2O4^2-"
        net = default_network()
        ib = net.components.index(base)
        nu_b = np.array([net.stoichiometry(s)[ib] for s in r.species])
        np.testing.assert_allclose(nu_b @ m, totals, rtol=1e-10)


@pytest.mark.xfail(strict=True, reason="known, open: with the limiting law the solver stalls at a scaled "
                   "residual of 1 for 0.35–1 mol/kg H3PO4 (far outside that law's validity); Davies converges")
def test_limiting_law_concentrated_phosphoric_acid():
    r = act.speciate({"H3PO4": np.array([0.35, 1.0])}, "debye-huckel-limiting")
    assert bool(np.all(r.converged))


def test_limiting_law_neutral_acids_up_to_0_1():
    for acid in ("H3PO4", "H2C2O4"):
        r = act.speciate({acid: np.geomspace(1e-6, 0.1, 30)}, "debye-huckel-limiting")
        assert bool(np.all(r.converged))


# Under Pitzer the solver iterates γ from the speciated composition (not a function of I
# alone). From the plain start it stalled on phosphate: these now converge, starting from
# the Davies answer, with I's own response to γ in the step. The pH is compared with
# Davies' only as a sanity bound (same data; the models differ by a few hundredths here).
@pytest.mark.parametrize(
    "composition",
    [
        {"H3PO4": 0.01},
        {"H2PO4-": 0.01, "Na+": 0.01},
        {"H2PO4-": 0.025, "HPO4^2-": 0.025, "Na+": 0.075},  # the phosphate pH standard's recipe
        {"H2C2O4": 0.01},
    ],
)
def test_pitzer_phosphate_and_neutral_acids_converge(composition):
    r = act.speciate(composition, "pitzer")
    assert bool(np.all(r.converged))
    assert abs(r.ph - act.speciate(composition, "davies").ph) < 0.1
    m = np.array([r.molality(s) for s in r.species])
    z = np.array([_charge(s) for s in r.species], float)
    assert abs(z @ m) / (np.abs(z) @ m) < 1e-10


@pytest.mark.xfail(strict=True, reason="known, open: under Pitzer (no phosphate parameters in the shipped "
                   "set) 0.3 mol/kg H3PO4 alone does not converge; Davies does")
def test_pitzer_concentrated_phosphoric_acid():
    assert bool(np.all(act.speciate({"H3PO4": 0.3}, "pitzer").converged))
