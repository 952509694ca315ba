"""The starting point of the solver: the refined start (charge balance and γ in the sweeps)
and the second chance from the plain start for rows the refined one does not bring home.

Check values come from the solver itself (the converged speciation) or from the previous
solver kept in ``_reference_solver.py``; compositions are invented.
"""

import sys
from pathlib import Path

import numpy as np
import pytest

import activity as act
from activity.speciation import solver

sys.path.insert(0, str(Path(__file__).parent))
from test_solver_reference import assert_same, natural_water, previous  # noqa: E402


def _captured_start(monkeypatch, sol):
    """The arguments of the first call of :func:`solver.start` while ``sol`` is speciated."""
    calls = []
    real = solver.start

    def spy(*args, **kw):
        calls.append((args, kw))
        return real(*args, **kw)

    monkeypatch.setattr(solver, "start", spy)
    result = act.speciate(sol)
    monkeypatch.undo()
    return result, calls[0]


@pytest.mark.filterwarnings("ignore::activity.ActivityWarning")
def test_refined_start_lands_nearer_the_solution(monkeypatch):
    # benchmark matrix, Davies, charge balance on H+: the refined start (H+ stepped on its
    # balance, γ at the sweep's I) against the plain one (pH 7, γ = 1), both measured by
    # the largest error in ln m of the free components. Measured: median 0.26 against 2.0.
    sol = act.Solution(natural_water(300, np.random.default_rng(3)), neutrality="ignore")
    res, (args, kw) = _captured_start(monkeypatch, sol)
    system = args[0]
    assert kw["charge_col"] == 0 and kw["lnk_shift"] is not None  # the refined start was used
    u_refined, I_start = solver.start(*args, **kw)
    u_plain, I_none = solver.start(*args)
    assert I_none is None
    exact = np.log(res.m[: system.n].T)
    err_refined = np.median(np.max(np.abs(u_refined - exact), axis=1))
    err_plain = np.median(np.max(np.abs(u_plain - exact), axis=1))
    assert err_refined < err_plain / 3
    # its ionic strength starts the ln I unknown: within a few percent of the answer (measured 4.7 %)
    assert np.median(np.abs(I_start / res.ionic_strength - 1)) < 0.1


@pytest.mark.filterwarnings("ignore::activity.ActivityWarning")
def test_rows_the_refined_start_loses_are_solved_from_the_plain_one():
    # HCl, borax, NaOH, a little phosphate and acetic acid (pH 1.8), ideal γ: from the
    # refined start the Newton iteration stalls for all of max_iter = 200 steps (measured);
    # the second attempt from the plain start converges, to the previous solver's answer
    comp = {"H+": [0.28067898], "Cl-": [0.28067898], "CH3COOH": [1.65549448e-05], "Na+": [0.26598758],
            "HPO4^2-": [0.00013056], "OH-": [1.481817e-06], "B(OH)3": [0.26572499], "B(OH)4-": [0.26572499]}
    sol = act.Solution(comp, neutrality="ignore")
    new = act.speciate(sol, "ideal")
    assert new.iterations[0] > 200  # both attempts counted
    assert_same(new, previous(sol, "ideal"))
