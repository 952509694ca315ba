"""Propagation of distributions by Monte Carlo (JCGM 101:2008).

Draws are evaluated in chunks, each chunk one batched call of the model, so
memory stays bounded: per chunk only the running float64 moments are updated
and the output values are appended to a compact float32 store (see
:class:`~activity.uncertainty.result.SortedSample`), which is needed for the
coverage intervals. 10⁷ trials keep 40 MB of values.

Two modes:

fixed
    ``trials`` draws.
adaptive (JCGM 101:2008 7.9)
    Blocks of M = max(J, 10⁴) trials, J = ⌈100/(1 − p)⌉. After block h ≥ 2,
    with the block averages, standard deviations and coverage-interval
    endpoints y⁽ʳ⁾, u⁽ʳ⁾, y_low⁽ʳ⁾, y_high⁽ʳ⁾ (r = 1..h), compute for each of
    the four quantities s = sd(block values)/√h. Stop as soon as 2s ≤ δ for
    all four, where δ is the numerical tolerance: given, or ½·10^ℓ from u(y)
    of all h·M values written as c·10^ℓ with c an integer of ``digits``
    significant digits (7.2). Several blocks are evaluated per call of the
    model; the criterion is still checked after every single block.
"""

from __future__ import annotations

import math
import warnings

import numpy as np

from activity.errors import ActivityWarning, InputError

from .result import SortedSample, interval_indices, shortest_start

__all__ = ["block_size", "numerical_tolerance", "run_fixed", "run_adaptive"]


def block_size(p):
    """JCGM 101:2008 7.9.4 b): M = max(J, 10⁴), J = ⌈100/(1 − p)⌉.

    Examples
    --------
    >>> block_size(0.95), block_size(0.999)
    (10000, 100000)
    """
    # 1e-9 absorbs rounding: 100/(1 − 0.9) evaluates to 1000.0000000000002.
    return max(math.ceil(100.0 / (1.0 - p) - 1e-9), 10_000)


def numerical_tolerance(u, digits):
    """δ = ½·10^ℓ for u = c·10^ℓ, c having ``digits`` significant digits (JCGM 101 7.2).

    Examples
    --------
    >>> numerical_tolerance(0.0123, 2)
    0.0005
    >>> numerical_tolerance(2.0, 2)
    0.05
    """
    if u <= 0 or not math.isfinite(u):
        return 0.0
    exponent = math.floor(math.log10(u)) - digits + 1
    # Guard against log10 rounding just below a power of ten.
    if round(u / 10.0**exponent) >= 10**digits:
        exponent += 1
    return 0.5 * 10.0**exponent


class _Moments:
    """Running count, mean and sum of squared deviations (Chan et al. merge)."""

    def __init__(self):
        self.n, self.mean, self.m2 = 0, 0.0, 0.0

    def add(self, n, mean, m2):
        total = self.n + n
        delta = mean - self.mean
        self.mean += delta * n / total
        self.m2 += m2 + delta * delta * self.n * n / total
        self.n = total

    @property
    def sd(self):
        return math.sqrt(self.m2 / (self.n - 1)) if self.n > 1 else 0.0


def _simulate(model, rng, n, mean=None):
    """Draw ``n`` rows and evaluate the model; reject non-finite outputs.

    ``mean``, a function of the outputs computed anyway (their mean), saves the pass of the
    finiteness test: a sum is finite only when every term is, so the elementwise test runs
    only when the mean is not finite (then some value is, or the sum overflowed).
    """
    columns = model.draw(rng, n)
    y = model.evaluate(columns, n)
    if mean is not None:
        center = mean(y)
        if np.all(np.isfinite(center)):
            return y, center
    if not np.all(np.isfinite(y)):
        bad = int(np.count_nonzero(~np.isfinite(y)))
        raise InputError(
            f"f gave {bad} non-finite values in {n} Monte Carlo trials, e.g. at "
            f"{model.first_bad_row(columns, y)}; the input distributions reach outside "
            "the model's domain (consider a bounded distribution such as Rectangular)",
            field="f",
            value=bad,
        )
    return y if mean is None else (y, mean(y))


def run_fixed(model, rng, trials, chunk):
    """``trials`` Monte Carlo trials in chunks of ``chunk``.

    Returns
    -------
    mean, sd : float
    sample : SortedSample
    """
    store = np.empty(trials, dtype=np.float32)
    moments = _Moments()
    reference = None
    done = 0
    while done < trials:
        n = min(chunk, trials - done)
        y, mean = _simulate(model, rng, n, np.mean)
        mean = float(mean)
        if reference is None:
            reference = mean
        moments.add(n, mean, float(np.sum((y - mean) ** 2)))
        # y − reference rounded to float32 straight into the store (no float64 temporary)
        np.subtract(y, reference, out=store[done : done + n], casting="same_kind")
        done += n
    store.sort()
    return moments.mean, moments.sd, SortedSample(reference, store)


def _block_endpoints(blocks, p, kind):
    """Coverage-interval endpoints of each row of ``blocks`` (one block per row)."""
    ordered = np.sort(blocks, axis=1)
    q, start = interval_indices(blocks.shape[1], p)
    rows = np.arange(blocks.shape[0])
    starts = shortest_start(ordered, q) if kind == "shortest" else np.full_like(rows, start)
    return ordered[rows, starts], ordered[rows, starts + q]


def _pooled_sd(means, m2s, m):
    """Standard deviation of all values of h equal blocks of size m."""
    means, m2s = np.asarray(means), np.asarray(m2s)
    total = m2s.sum() + m * np.sum((means - means.mean()) ** 2)
    return math.sqrt(total / (m * means.size - 1))


def _stable(history, m, tolerance, digits):
    """JCGM 101 7.9.4 f)–i): return (stopped, δ) for the blocks so far."""
    h = len(history["mean"])
    if h < 2:
        return False, math.nan
    delta = tolerance
    if delta is None:
        delta = numerical_tolerance(_pooled_sd(history["mean"], history["m2"], m), digits)
    spread = max(np.std(history[key], ddof=1) for key in ("mean", "sd", "low", "high"))
    return bool(2.0 * spread / math.sqrt(h) <= delta), delta


def run_adaptive(model, rng, p, kind, tolerance, digits, chunk, max_trials):
    """Adaptive Monte Carlo (JCGM 101:2008 7.9).

    Returns
    -------
    mean, sd : float
    sample : SortedSample
    trials : int
    delta : float
        The tolerance δ in force at the end.
    converged : bool
    """
    m = block_size(p)
    per_call = max(1, chunk // m)
    history = {key: [] for key in ("mean", "sd", "low", "high", "m2")}
    stored = []
    reference = None
    batch, converged, delta = min(per_call, 4), False, math.nan
    while len(history["mean"]) * m < max_trials and not converged:
        batch = min(batch, (max_trials - len(history["mean"]) * m) // m)
        if batch < 1:
            break
        y, means = _simulate(model, rng, batch * m, lambda y, k=batch: y.reshape(k, m).mean(axis=1))
        blocks = y.reshape(batch, m)
        m2s = np.sum((blocks - means[:, None]) ** 2, axis=1)
        lows, highs = _block_endpoints(blocks, p, kind)
        if reference is None:
            reference = float(means[0])
        used = batch
        for j in range(batch):
            history["mean"].append(float(means[j]))
            history["m2"].append(float(m2s[j]))
            history["sd"].append(math.sqrt(m2s[j] / (m - 1)))
            history["low"].append(float(lows[j]))
            history["high"].append(float(highs[j]))
            converged, delta = _stable(history, m, tolerance, digits)
            if converged:
                used = j + 1
                break
        stored.append((blocks[:used].ravel() - reference).astype(np.float32))
        batch = min(2 * batch, per_call)
    if not converged:
        warnings.warn(
            f"adaptive Monte Carlo stopped at max_trials={max_trials} before reaching "
            f"the numerical tolerance (delta = {delta:.3g}); the result has fewer "
            "significant digits than asked",
            ActivityWarning,
            stacklevel=3,
        )
    values = np.concatenate(stored)
    del stored
    values.sort()
    h = len(history["mean"])
    # Equal blocks: the overall mean is the mean of the block means.
    mean = float(np.mean(history["mean"]))
    sd = _pooled_sd(history["mean"], history["m2"], m)
    return mean, sd, SortedSample(reference, values), h * m, delta, converged
