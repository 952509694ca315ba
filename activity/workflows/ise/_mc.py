"""Monte Carlo of unknowns, vectorised over trials × samples at once (internal).

The reading → activity step is closed form: with a draw of the calibration (E0, k, a₀, K)
and of the reading and temperature, aᵢ + Σ Kᵢⱼ·aⱼ^(zᵢ/zⱼ) + a₀ = 10^((E − E0)/(k·s(T))).
Only activity → molality needs the ionic strength of the sample's own matrix. The trials
are evaluated in blocks of 2¹⁶ values (trials × samples) so the arrays stay in cache:

* draws: one generator call per input per block (the calibration parameters together, by
  their covariance, one draw per trial shared by every sample, as the samples share the
  calibration; the reading, temperature, matrix and model-choice inputs one per trial and
  sample);
* for the Debye–Hückel family (ideal, limiting law, extended, Truesdell–Jones, Davies —
  models that keep the shared form) γ is a function of I alone: a Newton iteration with the
  analytic derivative, started from the sample's estimate, on the same tolerance as
  :class:`~activity.workflows.ise.unknowns._Reader` (2 passes as a rule, the background
  dominating I). Without interferents (:func:`_newton_primary`) the unknown is ln(m/total),
  so a pass takes one square root and no logarithm or exponential (m moves by a Taylor
  polynomial of e^(−step)), in place on block buffers allocated once; with interferents
  (:func:`_newton`) it is ln m, element by element. A(T) and B(T) at the drawn temperatures
  come from a polynomial in T fitted once per run at Chebyshev nodes of T0 ± 10 u(T), checked
  against the water model to 1e-13 relative (else evaluated directly);
* any other model (Pitzer, plug-ins), or a block where the Newton iteration does not
  settle, goes through the general reader on the whole block (the activity model on a
  Solution batch): slower, the same answer.

Mean and standard deviation come from running sums of the offsets from the first block's mean
(and of their squares); the offsets themselves are kept as float32 in draw order, and a
sample's are sorted only when a coverage interval is asked for (:class:`DrawOrderSample`).

Nothing here loops in Python over trials or samples.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import NDArray

from ...constants import LN10
from ...errors import InputError
from ...uncertainty.result import SortedSample
from ._model import nernst_slope_z

__all__ = ["DrawOrderSample", "MCDraws", "run_monte_carlo"]

#: Values per block (trials × samples): 2¹⁶ float64 = 512 kB an array, which stays in the
#: L2 cache: an elementwise operation ran 4–5× faster per value than on blocks of 2²⁰ in
#: the same run (measured on the 2-core machine; numpy's per-call cost is still small).
BLOCK = 1 << 16
#: Largest store of Monte Carlo values (float32, kept sorted per sample for the coverage
#: intervals) one call may hold: 2 GB (design choice, a quarter of a small machine's memory).
MAX_STORE_BYTES = 2_000_000_000
#: Newton passes before a block is handed to the general reader.
MAX_NEWTON = 30
#: Relative accuracy demanded of the polynomial A(T), B(T) against the water model.
POLY_RTOL = 1e-13


@dataclass(frozen=True)
class MCDraws:
    """Inputs of the Monte Carlo (the same as the GUM path's; see ``unknowns._In``)."""

    cal_keys: tuple  # 'E0' (mV), 'k', 'lga0', 'lgK_<i>'
    cal_mean: NDArray[np.float64]
    cal_cov: NDArray[np.float64]
    u_emf: float  # V
    u_T: float
    u_scale: float
    model_half: float  # half-width of the rectangular model-choice input (0: none)
    spread_scale: NDArray[np.float64]  # per sample


@dataclass(frozen=True)
class DrawOrderSample(SortedSample):
    """A sample's Monte Carlo offsets kept in draw order, sorted in place the first time a coverage
    interval is asked for (sorting every sample's values up front cost about a tenth of a run of
    10⁵ trials × 100 samples, and a reading of unknowns often needs no interval)."""

    def interval(self, p, kind):
        if not self.__dict__.get("_sorted", False):
            self.offsets.sort()
            object.__setattr__(self, "_sorted", True)
        return super().interval(p, kind)


# ----------------------------------------------------------------- fast γ(I) kernel
@dataclass(frozen=True)
class _DHTerms:
    """log10 γ = z²(−A√I/(1 + (B·size + d)√I) + c·A·I) + b·I for one ion."""

    z2: float
    size: float
    d: float
    c: float
    b: float

    def lg(self, A: Any, B: Any, I: NDArray, s: NDArray) -> tuple[NDArray, NDArray]:
        """log10 γ and its derivative in I (formed in place: these are the hot arrays)."""
        if self.z2 == 0:
            return self.b * I, np.full(np.shape(I), self.b)
        if self.size:
            den = np.multiply(B, self.size)
            den += self.d
            den = np.multiply(den, s)
            den += 1.0
        elif self.d:
            den = np.multiply(s, self.d)
            den += 1.0
        else:
            den = None
        q = np.multiply(A, s)
        if den is not None:
            q /= den
            u = np.multiply(den, den, out=den)
            u *= s
        else:
            u = np.array(s)
        u *= 2.0
        np.divide(A, u, out=u)  # A/(2√I(1 + K√I)²) = d(A√I/(1 + K√I))/dI
        if self.c:
            cA = np.multiply(A, self.c)
            lg = np.multiply(cA, I)
            lg -= q
            dlg = np.subtract(cA, u, out=u)
        else:
            lg = np.negative(q, out=q)
            dlg = np.negative(u, out=u)
        lg *= self.z2
        dlg *= self.z2
        if self.b:
            lg += self.b * I
            dlg += self.b
        return lg, dlg


def _fast_terms(reader: Any) -> dict | None:
    """Per-ion terms of the shared Debye–Hückel form, or None when the model does not keep it."""
    from ...coefficients._dh_form import DebyeHuckelForm
    from ...coefficients.ideal import IdealModel

    if getattr(reader, "speciation", None) is not None:
        return None  # free ions from the speciation layer: the general reader
    model = reader.model
    cls = type(model)
    ions = [reader.i] + [idx for _, idx, _, _ in reader.inter]
    if isinstance(model, IdealModel) and cls.compute_log10_gamma is IdealModel.compute_log10_gamma:
        return {i: _DHTerms(0.0, 0.0, 0.0, 0.0, 0.0) for i in ions} | {"ideal": True}
    if not (
        isinstance(model, DebyeHuckelForm)
        and cls.compute_log10_gamma is DebyeHuckelForm.compute_log10_gamma
        and cls._AB is DebyeHuckelForm._AB
    ):
        return None
    bound = model.bind(reader.species, reader.charges)
    t = bound.terms
    out: dict = {"ideal": False}
    for i in ions:
        out[i] = _DHTerms(float(bound.z2[i]), float(t.size[i]), float(t.d[i]), float(t.c), float(t.b[i]))
    return out


class _WaterAB:
    """A(T, P) and B(T, P) for temperatures in [lo, hi] at one pressure: a Chebyshev polynomial in T
    per parameter, fitted once and accepted where it meets the water model to POLY_RTOL at 41
    points of the range; the water model itself for a parameter no degree ≤ 12 fits, for
    temperatures outside the range and for pressures other than P0."""

    def __init__(self, lo: float, hi: float, P0: float, need_B: bool):
        from ...water import debye_huckel_A, debye_huckel_B

        self.funcs = [debye_huckel_A] + ([debye_huckel_B] if need_B else [])
        self.lo, self.hi, self.P0 = lo, hi, P0
        self.mid, self.half = 0.5 * (lo + hi), 0.5 * (hi - lo)
        self.coef: list = []
        for f in self.funcs:
            if self.half < 1e-9:
                self.coef.append(float(f(lo, P0)))
                continue
            check = np.linspace(lo, hi, 41)
            exact = np.asarray(f(check, P0), float)
            for deg in (4, 6, 8, 10, 12):
                nodes = self.mid + self.half * np.cos(np.pi * (np.arange(deg + 1) + 0.5) / (deg + 1))
                coef = np.polynomial.chebyshev.chebfit(self._x(nodes), np.asarray(f(nodes, P0), float), deg)
                approx = np.polynomial.chebyshev.chebval(self._x(check), coef)
                if np.max(np.abs(approx / exact - 1.0)) <= POLY_RTOL:
                    self.coef.append(coef)
                    break
            else:
                self.coef.append(None)

    def _x(self, T: Any) -> Any:
        return (T - self.mid) / self.half

    def __call__(self, T: NDArray, P: NDArray) -> tuple[NDArray, Any]:
        T = np.asarray(T, float)
        P = np.asarray(P, float)
        inside = np.all(P == self.P0) and float(np.min(T)) >= self.lo and float(np.max(T)) <= self.hi
        out = []
        for f, coef in zip(self.funcs, self.coef):
            if not inside or coef is None:
                out.append(np.asarray(f(T, P), float))
            elif isinstance(coef, float):
                out.append(np.full(T.shape, coef))
            else:
                out.append(np.polynomial.chebyshev.chebval(self._x(T), coef))
        return out[0], (out[1] if len(out) > 1 else 0.0)


def _water_AB(T: NDArray, P: NDArray, need_B: bool) -> tuple[NDArray, Any]:
    """A(T, P) and B(T, P) at many temperatures: a polynomial in T checked against the water model."""
    from ...water import debye_huckel_A, debye_huckel_B

    T = np.asarray(T, float)
    P = np.asarray(P, float)
    if T.size < 2000 or np.ptp(P) > 0:
        vals = [np.asarray(f(T, P), float) for f in [debye_huckel_A] + ([debye_huckel_B] if need_B else [])]
        return vals[0], (vals[1] if need_B else 0.0)
    return _WaterAB(float(np.min(T)), float(np.max(T)), float(np.ravel(P)[0]), need_B)(T, P)


#: Half-width of the temperature range over which A(T), B(T) are fitted once per run, in
#: standard uncertainties of the temperature about the samples' temperatures (a normal draw
#: beyond it, p < 2e-23 per trial, is evaluated by the water model directly).
T_SPAN = 10.0


def _run_water_AB(T0: NDArray, P0: NDArray, u_T: float, need_B: bool) -> Any:
    """The A(T), B(T) evaluator of a run with drawn temperatures (the water model's range at most)."""
    from ...water import T_MAX, T_MIN

    lo = max(float(np.min(T0)) - T_SPAN * u_T, T_MIN)
    hi = min(float(np.max(T0)) + T_SPAN * u_T, T_MAX)
    if np.ptp(P0) > 0 or lo >= hi:
        return _water_AB
    ab = _WaterAB(lo, hi, float(P0[0]), need_B)
    return lambda T, P, need_B: ab(T, P)


def _exp_taylor_degree(amax: float) -> int:
    """Smallest Taylor degree n ≤ 7 for e^(−δ) with |δ| ≤ amax whose remainder amax^(n+1)/(n+1)! is
    at most 2⁻⁵³ (half an ulp at 1); 0 when no such n (then e^x is taken: it costs about as
    much as 14 arithmetic passes over the block)."""
    term = amax
    for n in range(1, 8):
        term *= amax / (n + 1)
        if term <= 2.0**-53:
            return n
    return 0


#: Taylor coefficients of e^(−δ): (−1)ʲ/j!
_EXP_MINUS = tuple((-1.0) ** j / math.factorial(j) for j in range(9))


def _times_exp_minus(m: NDArray, step: NDArray, n: int, buf: NDArray) -> None:
    """m ← m·e^(−step) in place by the Taylor polynomial of degree ``n`` (Horner, 2n operations)."""
    coef = _EXP_MINUS
    e = np.multiply(step, coef[n], out=buf)
    for j in range(n - 1, 0, -1):
        e += coef[j]
        e *= step
    e += 1.0
    m *= e


class _Buffers:
    """Block-sized work arrays, allocated once per run (views of the first ``n`` rows per block)."""

    NAMES = ("E", "I", "s", "q", "F", "F2", "u", "Y", "m", "d")

    def __init__(self, shape: tuple):
        self.full = {name: np.empty(shape) for name in self.NAMES}

    def take(self, n: int) -> dict:
        return {name: arr[:n] for name, arr in self.full.items()}


def _abs_max(x: NDArray) -> float:
    """max |x| from two reductions (no array written; NaN if x holds one)."""
    return max(float(x.max()), -float(x.min()))


def _newton_primary(
    prim: _DHTerms,
    tot: NDArray,
    w: float,
    Ib: NDArray,
    A: Any,
    B: Any,
    r0: NDArray,
    Y0: NDArray,
    rtol: float,
    buf: dict,
) -> NDArray | None:
    """Molality of every element of a block without interferents (NaN below detection); None if
    some element did not settle or γ rises too steeply with m for Newton (the general reader then).

    Unknown Y = ln(m/tot) (m = tot·e^Y): F(Y) = Y + ln10·lg γᵢ(I) = 0 with I = w·m + Ib, and
    F′(Y) = 1 + w·m·ln10·dlg γᵢ/dI, so no logarithm is taken; started from Y0 = ln r0, r0 = m0/tot0
    the sample's estimate (γ as at the estimate). With K = B·size + d and α = ln10·z²·A:
    ln10·lg γᵢ = α(c·I − √I/(1 + K√I)) + ln10·b·I, and its I-derivative is
    α(c − 1/(2√I(1 + K√I)²)) + ln10·b. Each pass moves m by e^(−δ) as a Taylor polynomial whose
    remainder is below 2⁻⁵³ (e^Y itself after a large step). Stopping rule as in :func:`_newton`
    (every element at once, the block iterating as a whole): a step within ``rtol``, or from the
    second pass |δₖ|³ ≤ rtol·|δₖ₋₁|²; max|δₖ|·max|δₖ/δₖ₋₁|² ≤ rtol is tried first (it implies it).
    """
    any_below = not float(tot.min()) > 0  # (a reduction; the mask only when needed)
    below = tot <= 0 if any_below else None
    t = np.where(below, 1.0, tot) if any_below else tot
    alpha = np.multiply(LN10 * prim.z2, A)
    alpha_w = alpha * w
    if prim.size:
        K = np.multiply(B, prim.size) + prim.d
    else:
        K = float(prim.d) if prim.d else None
    c, beta = prim.c, LN10 * prim.b
    neg_alpha = None if c else -alpha
    m = np.multiply(t, r0, out=buf["m"])
    I, s, q, u, Y = (buf[k] for k in ("I", "s", "q", "u", "Y"))
    prev = None
    for it in range(MAX_NEWTON):
        F = buf["F" if it % 2 == 0 else "F2"]  # the previous step stays in the other one
        np.multiply(m, w, out=I)
        I += Ib
        np.sqrt(I, out=s)
        if K is None:  # limiting law: 1 + K√I = 1
            frac = s
            np.divide(-0.5, s, out=u)
        else:
            if isinstance(K, float) and K == 1.0:
                den = np.add(s, 1.0, out=q)
            else:
                den = np.multiply(s, K, out=q)
                den += 1.0
            frac = np.divide(s, den, out=F)  # √I/(1 + K√I)
            np.multiply(den, den, out=u)
            u *= s
            np.divide(-0.5, u, out=u)  # −1/(2√I(1 + K√I)²)
        if c:
            np.subtract(np.multiply(I, c, out=q), frac, out=F)
            F *= alpha
        else:
            np.multiply(frac, neg_alpha, out=F)
        if beta:
            F += np.multiply(I, beta, out=q)
        F += Y0 if it == 0 else Y
        # F′ = 1 + m·(α·w·(c − 1/(2√I(1 + K√I)²)) + ln10·b·w)
        if c:
            u += c
        u *= alpha_w
        if beta:
            u += beta * w
        u *= m
        u += 1.0
        if it == 0 and float(u.min()) < 0.05:
            if not any_below or np.any((u < 0.05) & ~below):  # γ rises too steeply with m: the general reader
                return None
        step = np.divide(F, u, out=F)
        amax = _abs_max(step)
        if amax > 5.0:
            np.clip(step, -5.0, 5.0, out=step)
            amax = 5.0
        if it == 0:
            np.subtract(Y0, step, out=Y)
        else:
            Y -= step
        n = _exp_taylor_degree(amax)
        if n:
            _times_exp_minus(m, step, n, u)
        else:
            np.exp(Y, out=m)
            m *= t
        if amax <= rtol:
            break
        if prev is not None:
            with np.errstate(divide="ignore", invalid="ignore"):
                ratio = _abs_max(np.divide(step, prev, out=u))
            if amax * ratio * ratio <= rtol:  # (NaN, inf: not settled by this test)
                break
            # element by element: the next step, by the quadratic convergence, |δₖ|³/|δₖ₋₁|², within rtol
            a = np.abs(step)
            if np.all((a <= rtol) | (a * a * a <= rtol * prev * prev)):
                break
        prev = step
    else:
        return None
    return np.where(below, np.nan, m) if any_below else m


def _newton(
    reader: Any,
    terms: dict,
    tot: NDArray,
    Kvals: list,
    A: Any,
    B: Any,
    scale: Any,
    m0: NDArray,
    tot0: NDArray,
    rtol: float,
) -> NDArray | None:
    """Molality of every element of a block with interferents (NaN below detection); None if some
    did not settle.

    ``tot`` is the reading's total less a₀ (aᵢ + Σ Kᵢⱼ·aⱼ^(zᵢ/zⱼ)), ``m0`` and ``tot0`` the
    sample's estimate and its total. Newton on F(x) = x + ln10·lg γᵢ(I(eˣ)) − ln aᵢ(x) = 0, x = ln m
    (aᵢ moves with x only through the interferents' γ), all elements at once, started from
    m0·tot/tot0 (γ as at the estimate). An element stops once its step is within ``rtol`` or,
    from the second pass, once the step predicted by the quadratic convergence,
    |δₖ|³/|δₖ₋₁|², is; it is then left as it is.
    """
    shape = tot.shape
    sq = reader.charges.astype(float) ** 2
    w = 0.5 * sq[reader.i] + (0.5 * sq[reader.c] * reader.ratio if reader.c is not None else 0.0)
    Ib = scale * (0.5 * np.tensordot(sq, reader.base, axes=(0, 0)))
    inter = [(terms[idx], r, K, scale * reader.base[idx]) for (_, idx, r, _), K in zip(reader.inter, Kvals)]
    prim = terms[reader.i]
    below = tot <= 0
    t = np.where(below, 1.0, tot)
    r0 = m0 / tot0
    m = t * r0
    x = np.log(t) + np.log(r0)
    done = below.copy()
    gone = done.copy()
    prev = None
    for _ in range(MAX_NEWTON):
        I = np.multiply(m, w)
        I += Ib
        s = np.sqrt(I)
        lg, dlg = prim.lg(A, B, I, s)
        dlg *= LN10 * w
        dlg *= m
        dF = np.add(dlg, 1.0, out=dlg)
        ai = np.array(t)
        dai = np.zeros(shape)
        for tj, r, K, mj in inter:
            lgj, dlgj = tj.lg(A, B, I, s)
            aj = mj * np.exp(LN10 * lgj)
            term = K * (aj if r == 1 else aj**r)
            ai -= term
            dai -= term * r * LN10 * dlgj * w * m
        g = ai <= 0
        gone |= g
        done |= g
        ai = np.where(g, 1.0, ai)
        F = x + LN10 * lg - np.log(ai)
        dF = dF - dai / ai
        if np.any((dF < 0.05) & ~done):  # γ rises too steeply with m here: the general reader takes it
            return None
        step = np.divide(F, dF, out=F)
        np.clip(step, -5.0, 5.0, out=step)
        step[done] = 0.0
        x -= step
        a = np.abs(step)
        if prev is not None and float(a.max()) < 1e-4:
            _times_exp_minus(m, step, 3, dai)  # for |δ| < 1e-4 the rest is below 5e-18 relative
        else:
            m = np.exp(x, out=m)
        if prev is None:
            done |= a <= rtol
        else:
            # stop where the step is within rtol, or where the next one, by the quadratic
            # convergence, would be: |δₖ|³/|δₖ₋₁|² ≤ rtol (this also stops a step that grew,
            # but only once it is within rtol itself)
            done |= (a <= rtol) | (a * a * a <= rtol * prev * prev)
        if done.all():
            return np.where(gone, np.nan, m)
        prev = a
    return None


# ----------------------------------------------------------------------- the run
@dataclass(frozen=True)
class _Setup:
    """What a run fixes before its first block (flattened per sample)."""

    E: NDArray
    k_s: int
    m0: NDArray  # the estimates (start of the iteration)
    tot0: NDArray  # the totals at the estimates
    spread_scale: NDArray
    T0: NDArray
    P0: NDArray
    T_uniform: bool
    terms: dict | None
    need_B: bool
    L: NDArray  # calibration covariance = L Lᵀ
    lgk_keys: list
    rng: Any
    tb: int  # trials per block


def _setup(reader: Any, draws: MCDraws, E: Any, m_start: Any, trials: int, seed: Any, block: int | None) -> _Setup:
    """Check the size of the store and fix what every block shares."""
    cal = reader.cal
    E = np.ravel(np.asarray(E, float))
    k_s = E.size
    m0 = np.ravel(np.broadcast_to(m_start, (k_s,)))
    m0 = np.where(np.isfinite(m0) & (m0 > 0), m0, 1e-3)
    T0 = np.ravel(np.broadcast_to(reader.T0, reader.matrix.shape)) * np.ones(k_s)
    terms = _fast_terms(reader)
    wv, V = np.linalg.eigh(draws.cal_cov)
    if k_s * trials * 4 > MAX_STORE_BYTES:
        raise InputError(
            f"{k_s} samples × {trials} trials need {k_s * trials * 4 / 1e9:.1f} GB for the values behind the "
            f"coverage intervals (limit {MAX_STORE_BYTES / 1e9:g} GB): read the samples in groups, or use fewer trials",
            field="trials",
            value=trials,
        )
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        tot0 = 10.0 ** ((E - cal.E0) / (cal.slope_factor * nernst_slope_z(T0, cal.z))) - cal.a0
    return _Setup(
        E=E,
        k_s=k_s,
        m0=m0,
        tot0=np.where(np.isfinite(tot0) & (tot0 > 0), tot0, m0),
        spread_scale=np.ravel(np.broadcast_to(draws.spread_scale, (k_s,))),
        T0=T0,
        P0=np.ravel(np.broadcast_to(reader.P0, reader.matrix.shape)) * np.ones(k_s),
        T_uniform=bool(np.ptp(T0) == 0),
        terms=terms,
        need_B=terms is not None
        and any(isinstance(v, _DHTerms) and v.size for key, v in terms.items() if key != "ideal"),
        L=V * np.sqrt(np.clip(wv, 0.0, None)),  # also when a parameter has no uncertainty
        lgk_keys=[key for key in draws.cal_keys if key.startswith("lgK_")],
        rng=np.random.default_rng(seed),
        tb=max(1, min(trials, (block or BLOCK) // max(k_s, 1))),
    )


def _draw_block(su: _Setup, reader: Any, draws: MCDraws, n: int, Eb: NDArray) -> tuple:
    """The draws of a block of ``n`` trials, in the generator's order of every run: the calibration
    (one call, by its covariance), the readings (into ``Eb``, shape (n, samples)), then the
    temperature offset, matrix factor and model choice, one per trial shared by the samples (each
    sample's distribution is the same as with draws of its own; see the module notes).

    Returns T, scale, dmodel (or None), E0, k, a0, K by interferent, and the K values in order.
    """
    cal, rng = reader.cal, su.rng
    c = rng.standard_normal((n, len(draws.cal_keys))) @ su.L.T
    c += draws.cal_mean
    q = {key: c[:, j : j + 1] for j, key in enumerate(draws.cal_keys)}
    if draws.u_emf > 0:
        rng.standard_normal(out=Eb)
        Eb *= draws.u_emf
    else:
        Eb.fill(0.0)
    Eb += su.E
    dT = rng.standard_normal((n, 1)) * draws.u_T if draws.u_T > 0 else np.zeros((1, 1))
    T = su.T0 + dT if not su.T_uniform else su.T0[:1] + dT  # (n, k) or (n, 1)
    scale = 1.0 + rng.standard_normal((n, 1)) * draws.u_scale if draws.u_scale > 0 else np.ones((1, 1))
    dmodel = rng.uniform(-1.0, 1.0, (n, 1)) * draws.model_half if draws.model_half > 0 else None
    E0 = 1e-3 * q["E0"] if "E0" in q else cal.E0  # the E0 input is in mV
    kf = q.get("k", cal.slope_factor)
    a0 = np.exp(LN10 * q["lga0"]) if "lga0" in q else cal.a0
    Kd = {j: 10.0 ** q[key] for (j, _, _, _), key in zip(reader.inter, su.lgk_keys)} if su.lgk_keys else {}
    Kvals = [Kd.get(j, Kj) for j, _, _, Kj in reader.inter]
    return T, scale, dmodel, E0, kf, a0, Kd, Kvals


def _totals(Eb: NDArray, E0: Any, kf: Any, c_s: float, T: Any, a0: Any) -> NDArray:
    """In place: the drawn readings ``Eb`` → aᵢ + Σ Kᵢⱼ·aⱼ^(zᵢ/zⱼ) = e^((E − E0)·ln10/(k·s(T))) − a₀."""
    Eb -= E0
    Eb *= LN10 / (kf * c_s * T)
    with np.errstate(over="ignore"):
        tot = np.exp(Eb, out=Eb)
    tot -= a0
    return tot


def _general(
    reader: Any, E: NDArray, shape: tuple, m0: NDArray, E0: Any, kf: Any, a0: Any, Kd: dict, T: Any, scale: Any
):
    """The molality of a block by the general reader (the activity model on a Solution batch)."""
    return reader.solve(
        E,
        E0=E0,
        k=kf,
        a0=a0,
        K=Kd,
        T=np.broadcast_to(T, shape),
        scale=np.broadcast_to(scale, shape),
        m_start=m0,
        details=False,
    )


def _below_detection(y: NDArray, E: NDArray) -> InputError:
    """The error for a block whose values ``y`` (trials × samples) are not all finite."""
    bad = ~np.isfinite(y)
    cols = np.flatnonzero(bad.any(axis=0))
    return InputError(
        f"{int(np.count_nonzero(bad))} of {y.size} Monte Carlo trials fall below detection (the drawn "
        f"reading is at or below what a0 and the interferents give) for sample(s) {cols[:10].tolist()}; "
        "the uncertainty of such a reading is not defined by this model",
        field="emf",
        value=float(E[cols[0]]),
    )


def run_monte_carlo(
    reader: Any,
    draws: MCDraws,
    E: NDArray,
    m_start: NDArray,
    trials: int,
    seed: Any,
    rtol: float,
    block: int | None = None,
    bar: Any = None,
) -> tuple[NDArray, NDArray, NDArray, NDArray]:
    """Monte Carlo of every sample at once (``bar``: a progress bar advanced per block).

    Returns
    -------
    mean, sd : ndarray
        Per sample (flattened sample axis).
    reference : ndarray
        Per sample: the mean of its first block (the float32 store holds offsets from it).
    offsets : ndarray, float32, shape (samples, trials)
        Values minus the reference, per sample, in draw order (for coverage intervals: wrap
        each row in a :class:`DrawOrderSample`, which sorts it when first asked).
    """
    su = _setup(reader, draws, E, m_start, trials, seed, block)
    cal, E, k_s, m0, terms, need_B = reader.cal, su.E, su.k_s, su.m0, su.terms, su.need_B
    store = np.empty((k_s, trials), np.float32)
    reference = None
    s1 = np.zeros(k_s)  # running sums of the offsets from the reference and of their squares
    s2 = np.zeros(k_s)
    r0 = m0 / su.tot0  # 1/γ at the estimate: the start of the Newton iteration
    lnr0 = np.log(r0)
    c_s = nernst_slope_z(1.0, cal.z)  # s(T) = c_s·T
    if terms is not None:
        sq = reader.charges.astype(float) ** 2
        w = 0.5 * sq[reader.i] + (0.5 * sq[reader.c] * reader.ratio if reader.c is not None else 0.0)
        I_mat = 0.5 * np.tensordot(sq, reader.base, axes=(0, 0))  # per sample
    work = _Buffers((su.tb, k_s))
    water_AB = _run_water_AB(su.T0, su.P0, draws.u_T, need_B) if terms is not None and draws.u_T > 0 else _water_AB
    for start in range(0, trials, su.tb):
        n = min(su.tb, trials - start)
        shape = (n, k_s)
        buf = work.take(n)
        Eb = buf["E"]
        T, scale, dmodel, E0, kf, a0, Kd, Kvals = _draw_block(su, reader, draws, n, Eb)
        m = None
        if terms is not None:
            tot = _totals(Eb, E0, kf, c_s, T, a0)
            if draws.u_T > 0 or not start:  # else A, B as in the first block
                A, B = water_AB(T, np.broadcast_to(su.P0[:1] if su.T_uniform else su.P0, np.shape(T)), need_B)
            if reader.inter:
                m = _newton(reader, terms, tot, Kvals, A, B, scale, m0, su.tot0, rtol)
            elif terms["ideal"]:
                m = np.where(tot <= 0, np.nan, tot)
            else:
                Ib = np.multiply(scale, I_mat, out=buf["d"]) if np.ndim(I_mat) else scale * I_mat
                m = _newton_primary(terms[reader.i], tot, w, Ib, A, B, r0, lnr0, rtol, buf)
            if m is None:  # the general reader on this block
                Eb = E0 + np.log10(tot + a0) * (kf * c_s * T)  # the drawn readings again
        if m is None:
            m = _general(reader, Eb, shape, m0, E0, kf, a0, Kd, T, scale)
        y = m if dmodel is None else m + dmodel * su.spread_scale
        if reference is None:
            reference = y.mean(axis=0)
        d = np.subtract(y, reference, out=buf["d"])  # offsets from the reference: the moments are taken on them
        b1 = d.sum(axis=0)
        if not np.all(np.isfinite(b1)):
            raise _below_detection(y, E)
        s1 += b1
        s2 += np.einsum("ij,ij->j", d, d)
        store[:, start : start + n] = d.T
        if bar is not None:
            bar.update(n * k_s)
    mean_offset = s1 / trials
    sd = np.sqrt(np.maximum(s2 - s1 * mean_offset, 0.0) / (trials - 1)) if trials > 1 else np.zeros(k_s)
    return reference + mean_offset, sd, reference, store
