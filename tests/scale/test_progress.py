"""Progress bars: drawn on a terminal when asked, silent otherwise; results unchanged."""

import io

import numpy as np
import pytest

from activity.nernst.electrodes import IonSelectiveElectrode
from activity.solution import Solution
from activity.workflows.measurement import potential_with_uncertainty
from activity.workflows.progress import Progress, counting, wants_bar


class FakeTerminal(io.StringIO):
    def isatty(self):
        return True


def test_bar_only_on_a_terminal_and_only_when_asked():
    assert wants_bar(True, FakeTerminal())
    assert not wants_bar(False, FakeTerminal())
    assert not wants_bar(True, io.StringIO())  # a file or pipe: silent


def test_bar_is_drawn_on_a_terminal():
    pytest.importorskip("tqdm")
    term = FakeTerminal()
    with Progress(100, progress=True, stream=term, desc="trials") as bar:
        bar.update(40)
        bar.update(60)
    assert bar.done == 100
    assert "trials" in term.getvalue()  # tqdm wrote its bar to the stream


def test_counting_counts_rows_of_each_batch_call():
    bar = Progress(None, progress=False)
    f = counting(lambda a, b: a * b, bar)
    f(a=np.ones(7), b=2.0)
    f(np.ones(3), 2.0)
    assert bar.done == 10


def test_monte_carlo_with_progress_asked_but_no_terminal_is_silent_and_unchanged(capsys):
    ise = IonSelectiveElectrode("Ca^2+", E0=0.1)
    sample = Solution({"Ca^2+": 0.001, "K+": 0.1, "Cl-": 0.102})
    kw = dict(u_amount=0.01, u_e0=1e-4, method="monte-carlo", trials=20_000, seed=4, spread_models=["davies"])
    quiet = potential_with_uncertainty(ise, sample, **kw)
    asked = potential_with_uncertainty(ise, sample, progress=True, **kw)  # stderr is captured: not a tty
    out = capsys.readouterr()
    assert out.err == "" and out.out == ""
    assert asked.value == quiet.value and asked.standard_uncertainty == quiet.standard_uncertainty
