"""The fixed-trials Monte Carlo driver, with the finiteness test folded into the mean and
the deviations and the float32 store written without temporaries, gives the statistics of
the driver before bit for bit: mean, standard deviation and every stored value (hence every
coverage interval). ``_previous_run_fixed`` is a copy of the code before."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from activity.errors import InputError
from activity.uncertainty import Normal, Rectangular, Triangular, propagate
from activity.uncertainty._model import Model
from activity.uncertainty.montecarlo import _Moments, run_fixed


def _previous_run_fixed(model, rng, trials, chunk):
    store = np.empty(trials, dtype=np.float32)
    moments = _Moments()
    reference = None
    done = 0
    while done < trials:
        n = min(chunk, trials - done)
        y = model.evaluate(model.draw(rng, n), n)
        assert np.all(np.isfinite(y))
        mean = float(y.mean())
        if reference is None:
            reference = mean
        moments.add(n, mean, float(np.sum((y - mean) ** 2)))
        store[done : done + n] = y - reference
        done += n
    store.sort()
    return moments.mean, moments.sd, reference, store


FUNCTIONS = {
    "sum": lambda a, b, c: a + 2.0 * b - c,
    "log": lambda a, b, c: np.log(np.abs(a) + 1e-3) * b + c,
    "wide": lambda a, b, c: 1e6 * a * b + 1e-6 * c,  # float32 rounding of the store matters
}


@settings(deadline=None, max_examples=30)
@given(
    seed=st.integers(0, 2**32 - 1),
    trials=st.integers(2, 5000),
    chunk=st.integers(1, 3000),
    name=st.sampled_from(sorted(FUNCTIONS)),
)
def test_fixed_driver_equals_the_previous_driver(seed, trials, chunk, name):
    inputs = {"a": Normal(0.3, 0.2), "b": Rectangular(2.0, 0.5), "c": Triangular(-1.0, 0.1)}
    model = Model(FUNCTIONS[name], inputs)
    mean, sd, sample = run_fixed(model, np.random.default_rng(seed), trials, chunk)
    mean0, sd0, ref0, store0 = _previous_run_fixed(model, np.random.default_rng(seed), trials, chunk)
    assert mean == mean0 and sd == sd0
    assert sample.reference == ref0
    np.testing.assert_array_equal(sample.offsets, store0)


def test_propagate_statistics_equal_the_previous_driver():
    inputs = {"a": Normal(0.3105, 0.0004), "b": Normal(0.05, 0.0003), "c": Rectangular(298.15, 0.3)}
    f = FUNCTIONS["log"]
    r = propagate(f, inputs, "monte-carlo", trials=250_000, seed=1, chunk_size=100_000)
    mean0, sd0, ref0, store0 = _previous_run_fixed(Model(f, inputs), np.random.default_rng(1), 250_000, 100_000)
    assert (r.value, r.standard_uncertainty) == (mean0, sd0)
    # probabilistically symmetric 95 % interval of M = 250000 sorted values: q = pM = 237500,
    # r = (M − q)/2 = 6250, [y(r), y(r+q)] one-based (JCGM 101:2008 7.7)
    assert r.coverage_interval() == (ref0 + float(store0[6249]), ref0 + float(store0[6249 + 237500]))


@pytest.mark.parametrize("bad", [np.nan, np.inf])
def test_non_finite_outputs_still_refused_with_the_row(bad):
    def f(x):
        y = np.array(x, dtype=float)
        y[3] = bad
        return y

    with pytest.raises(InputError, match="non-finite values in"):
        propagate(f, {"x": Normal(1.0, 0.1)}, "monte-carlo", trials=100, seed=0)
    with pytest.raises(InputError, match="non-finite values in"):
        propagate(f, {"x": Normal(1.0, 0.1)}, "monte-carlo", seed=0)  # adaptive


def test_an_overflowing_sum_of_finite_outputs_is_not_refused():
    # the mean overflows (1e308 + 1e308) but every value is finite: the elementwise test decides
    def f(x):
        return np.full(np.shape(x), 1e308)

    r = propagate(f, {"x": Normal(1.0, 0.1)}, "monte-carlo", trials=10, seed=0)
    assert r.trials == 10
