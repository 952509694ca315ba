"""Reading samples with a calibration: molality in the sample's own matrix, and its uncertainty.

The reading gives the total aᵢ + Σ Kᵢⱼ·aⱼ^(zᵢ/zⱼ) + a₀ = 10^((E − E0)/S(T)) in closed form; the
activity coefficients depend on the ionic strength, which depends on the unknown, so the
molality is found by a fixed-point iteration m ← aᵢ(m)/γᵢ(m) over every row at once (the
activity model is evaluated on the whole batch each step; a contraction for every model
and range where d ln γ/d ln m is well below 1, which holds for dilute to moderate samples;
rows that do not converge raise a ConvergenceError naming them).

A reading below what a₀ and the interferents alone give has no molality (NaN, flagged);
a reading outside the standards' range or the linear range is computed and flagged, not
refused.

Uncertainty (:func:`read_with_uncertainty`): the inputs are the fitted calibration
parameters (correlated, with the fit's covariance), the reading, the temperature, the
matrix composition (one relative factor on every matrix molality) and the activity-model
choice (the spread of the result over the activity models with the calibration refitted by
each, as a rectangular input of half-width spread/2). GUM: the law of propagation with
central-difference sensitivities, vectorised over the samples; Monte Carlo: every trial of
every sample at once (:mod:`._mc`: the calibration drawn once per trial, as the samples
share it; temperature, matrix factor and model choice drawn once per trial too; the reading
per trial and sample), with the budget's sensitivities those of the GUM at the estimates as
:func:`activity.uncertainty.propagate` gives them.
"""

from __future__ import annotations

import warnings
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ...constants import LN10
from ...errors import (
    ActivityError,
    ActivityWarning,
    ConvergenceError,
    InputError,
    ValidityWarning,
    catch_package_warnings,
)
from ...solution import Solution
from ...species import parse_species
from ._model import finite, molarity_factor, nernst_slope_z

__all__ = ["ReadResult", "UnknownResult", "read_samples", "read_with_uncertainty"]

#: Budget label of the calibration parameters taken together (with their covariance).
CALIBRATION = "calibration (E0, slope, a0, K together, with their covariance)"
#: Convergence of the fixed point on ln m: 1e-11 relative in m (design choice, far below any
#: measurement uncertainty and above the rounding noise of the model evaluation).
RTOL = 1e-11
MAX_ITER = 200


@dataclass(frozen=True)
class ReadResult:
    """Samples read with a calibration (arrays have the batch shape; scalars for one sample).

    Attributes
    ----------
    molality : float or ndarray
        mol/kg (NaN below the detection limit).
    molarity, mass_concentration : float or ndarray
        mol/L and mg/L (density model of :meth:`Solution.from_molarity`).
    activity, gamma, ionic_strength : float or ndarray
    flags : tuple of str
        One text per sample ('' when nothing to flag).
    notes : tuple of str
    """

    molality: Any
    molarity: Any
    mass_concentration: Any
    activity: Any
    gamma: Any
    ionic_strength: Any
    flags: tuple
    notes: tuple = ()


def _out(a: NDArray) -> Any:
    return float(a) if np.ndim(a) == 0 else a


class _Reader:
    """The inverse of a calibration for one sample matrix; every argument broadcasts."""

    def __init__(self, cal: Any, matrix: Solution, counter_ion: str | None, model: Any = None):
        from ...coefficients import get_model

        if not isinstance(matrix, Solution):
            raise InputError(
                "expected an activity.Solution for the sample matrix", field="matrix", value=type(matrix).__name__
            )
        if cal.ion in matrix.species and np.any(np.asarray(matrix.molality(cal.ion)) > 0):
            raise InputError(
                "the matrix already holds the primary ion; give the matrix without it", field="matrix", value=cal.ion
            )
        self.cal = cal
        self.model = get_model(model or cal.model)
        self.matrix = matrix
        species = list(matrix.species)
        if cal.ion not in species:
            species.append(cal.ion)
        self.counter = None
        self.ratio = 0.0
        if counter_ion is not None:
            sp = parse_species(counter_ion)
            if sp.charge == 0 or np.sign(sp.charge) == np.sign(cal.z):
                raise InputError(
                    "the counter-ion must carry charge opposite to the primary ion",
                    field="counter_ion",
                    value=counter_ion,
                )
            self.counter, self.ratio = sp.name, abs(cal.z / sp.charge)
            if sp.name not in species:
                species.append(sp.name)
        self.species = tuple(species)
        self.charges = np.array([parse_species(s).charge for s in species], int)
        self.i = self.species.index(cal.ion)
        self.c = self.species.index(self.counter) if self.counter else None
        base = np.zeros((len(species),) + matrix.shape)
        for k, name in enumerate(matrix.species):
            base[self.species.index(name)] = matrix.m[k]
        self.base = base
        self.inter = [
            (j, self.species.index(j), cal.z / self.charges[self.species.index(j)], K)
            for j, K in cal.selectivity.items()
            if j in self.species and K > 0
        ]
        self.T0 = np.asarray(matrix.T_compact, float)
        self.P0 = np.asarray(matrix.P_compact, float)
        self.speciation = getattr(cal, "speciation", None)

    def _terms(self, sol: Solution, m: NDArray) -> tuple[NDArray, list, Any, tuple]:
        """lg γᵢ (apparent: free activity / total with speciation), the interferents' activities,
        the model result and the speciation notes."""
        if self.speciation is None:
            g = self.model.activity_coefficients(sol)
            lg = g.log10_gamma
            return lg[self.i], [sol.m[idx] * 10.0 ** lg[idx] for _, idx, _, _ in self.inter], g, ()
        from ...nernst.electrodes import free_solution

        free, notes = free_solution(sol, self.model, self.speciation)
        g = self.model.activity_coefficients(free)
        lg = g.log10_gamma
        fi = free.index(self.cal.ion)
        with np.errstate(divide="ignore"):
            lgi = lg[fi] + np.log10(free.m[fi]) - np.log10(m)
        acts = []
        for j, _, _, _ in self.inter:
            k = free.index(j)
            acts.append(free.m[k] * 10.0 ** lg[k])
        return lgi, acts, g, tuple(notes)

    def _solution(self, m: NDArray, scale: Any, T: Any) -> Solution:
        shape = np.broadcast_shapes(np.shape(m), np.shape(scale), np.shape(T), self.matrix.shape)
        arr = np.empty((len(self.species),) + shape)
        mshape = self.matrix.shape
        arr[:] = self.base.reshape(self.base.shape[:1] + (1,) * (len(shape) - len(mshape)) + mshape)
        arr *= scale
        arr[self.i] = m
        if self.c is not None:
            arr[self.c] += self.ratio * m
        return Solution._from_arrays(self.species, self.charges, arr, np.asarray(T, float), self.P0)

    def solve(
        self,
        E: Any,
        E0: Any = None,
        k: Any = None,
        a0: Any = None,
        K: Mapping[str, Any] | None = None,
        T: Any = None,
        scale: Any = 1.0,
        m_start: Any = None,
        details: bool = True,
    ) -> Any:
        """Molality, activity, γ, the solution and the model result (``details=False``: molality only)."""
        cal = self.cal
        E0 = cal.E0 if E0 is None else E0
        k = cal.slope_factor if k is None else k
        a0 = cal.a0 if a0 is None else a0
        Kd = {j: (K or {}).get(j, Kj) for j, _, _, Kj in self.inter}
        T = self.T0 if T is None else np.asarray(T, float)
        with np.errstate(over="ignore"):
            total = 10.0 ** ((np.asarray(E, float) - E0) / (np.asarray(k) * nernst_slope_z(T, cal.z)))
        shape = np.broadcast_shapes(
            np.shape(total), np.shape(scale), self.matrix.shape, np.shape(a0), *(np.shape(v) for v in Kd.values())
        )
        total = np.broadcast_to(total, shape)
        m = np.full(shape, 1e-3) if m_start is None else np.array(np.broadcast_to(m_start, shape), float)
        x = np.log(np.where(np.isfinite(m) & (m > 0), m, 1e-3))
        x_prev = g_prev = None
        done = np.zeros(shape, bool)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ActivityWarning)
            for _ in range(MAX_ITER):
                m = np.exp(x)
                sol = self._solution(m, scale, T)
                lgi, acts, _, _ = self._terms(sol, m)
                interf = 0.0
                for (j, _, r, _), aj in zip(self.inter, acts):
                    interf = interf + Kd[j] * (aj if r == 1 else aj**r)
                ai = total - interf - a0
                below = ai <= 0
                # the map x → ln(aᵢ/γᵢ); relaxed by its own secant slope (Steffensen-like), so that
                # it also converges where γ rises with m (the map's slope below −1)
                gx = np.where(below, np.log(1e-30), np.log(np.where(below, 1.0, ai)) - LN10 * lgi)
                step = gx - x
                lam = np.ones(shape)
                if x_prev is not None:
                    dx = x - x_prev
                    ok = np.abs(dx) > 1e-7  # below, the secant slope is rounding noise: plain fixed point
                    slope = np.where(ok, (gx - g_prev) / np.where(ok, dx, 1.0), 0.0)
                    lam = np.where(ok, np.where(slope < 1.0, np.clip(1.0 / (1.0 - slope), 0.05, 3.0), 0.5), 1.0)
                done = below | (np.abs(step) <= RTOL)
                if np.all(done):
                    break
                x_prev, g_prev = x, gx
                x = np.where(done, x, x + lam * np.clip(step, -5.0, 5.0))
        if not np.all(done):
            rows = np.flatnonzero(~np.ravel(done))
            raise ConvergenceError(
                f"the molality of {cal.ion} did not converge in {MAX_ITER} iterations in "
                f"{rows.size} row(s): {rows[:10].tolist()}",
                rows=rows,
            )
        m = np.exp(x)
        if not details:
            return np.where(below, np.nan, m)
        sol = self._solution(m, scale, T)
        lgi, _, g, snotes = self._terms(sol, m)
        gi = 10.0**lgi
        m = np.where(below, np.nan, m)
        if snotes:
            from dataclasses import replace as _replace

            g = _replace(g, notes=tuple(g.notes) + tuple(snotes))
        return m, m * gi, gi, sol, g


def _flags(cal: Any, a: NDArray) -> tuple:
    lo_std = float(np.min(cal.standards["activity"])) if len(cal.standards.get("activity", [])) else np.nan
    hi_std = float(np.max(cal.standards["activity"])) if len(cal.standards.get("activity", [])) else np.nan
    out = []
    for x in np.ravel(a):
        f = []
        if not np.isfinite(x):
            f.append("below detection: the reading is at or below what a0 and the interferents give")
        else:
            if np.isfinite(cal.detection_limit_activity) and x < cal.detection_limit_activity:
                f.append("below the detection limit")
            elif x < cal.linear_range[0]:
                f.append("below the linear range")
            if x < lo_std:
                f.append("below the lowest standard (extrapolated)")
            if x > hi_std:
                f.append("above the highest standard (extrapolated)")
        out.append("; ".join(f))
    return tuple(out)


def read_samples(cal: Any, emf: ArrayLike, matrix: Solution, *, counter_ion: str | None = None) -> ReadResult:
    """Molality of the primary ion in each sample matrix from its reading.

    Parameters
    ----------
    cal : ISECalibration
    emf : array_like
        Reading(s), V; broadcasts with the matrix batch.
    matrix : Solution
        Sample matrix without the primary ion (background electrolyte, interferents, T).
    counter_ion : str, optional
        Added with the primary ion in the electroneutral amount.

    Examples
    --------
    >>> import numpy as np
    >>> from activity import Solution
    >>> from activity.workflows.ise import calibrate_ise
    >>> c = np.array([1e-4, 1e-3, 1e-2])
    >>> cal = calibrate_ise(Solution({"K+": c, "Cl-": c}), [0.0120, 0.0695, 0.1260], "K+", slope="nernstian")
    >>> res = read_samples(cal, 0.0695, Solution({"Na+": 0.0, "Cl-": 0.0}), counter_ion="Cl-")
    >>> round(res.molality, 5), res.flags
    (0.00102, ('',))
    """
    E = finite(emf, "emf")
    if np.any(np.abs(E) > 5.0):
        raise InputError(
            "readings this large look like millivolts: EMFs are in volts here",
            field="emf",
            value=float(np.max(np.abs(E))),
        )
    reader = _Reader(cal, matrix, counter_ion)
    m, a, gi, sol, g = reader.solve(E)
    factor, vnotes = molarity_factor(sol)
    c = m * factor
    mg = c * parse_species(cal.ion).molar_mass * 1e6  # kg/mol → mg/mol
    notes = list(dict.fromkeys(g.notes)) + list(vnotes)
    if counter_ion is None:
        notes.append(
            f"{cal.ion} added without a counter-ion: its charge is not balanced in the sample's ionic strength"
        )
    return ReadResult(_out(m), _out(c), _out(mg), _out(a), _out(gi), sol.ionic_strength, _flags(cal, a), tuple(notes))


# ---------------------------------------------------------------------- uncertainty
@dataclass(frozen=True, repr=False)
class UnknownResult:
    """Molality of samples with uncertainty.

    Attributes
    ----------
    value : float or ndarray
        Molality, mol/kg (GUM: at the input estimates; Monte Carlo: mean of the trials).
    standard_uncertainty : float or ndarray
        u(m), mol/kg.
    method : str
    molarity, u_molarity, mass_concentration, u_mass_concentration : float or ndarray
        mol/L and mg/L with their uncertainties (the mol/kg → mol/L factor taken as exact).
    inputs : tuple of str
        Names of the uncertain inputs.
    contributions : dict
        Input → |cᵢ|·u(xᵢ) (mol/kg), per sample.
    propagation : tuple
        One :class:`~activity.uncertainty.PropagationResult` per sample (Monte Carlo always;
        GUM for up to ``budget_rows`` samples), with the full budget.
    model_spread : dict
        Model → molality at the estimates (the model-choice input); models not counted are
        in the notes.
    flags : tuple of str
    notes : tuple of str
    """

    value: Any
    standard_uncertainty: Any
    method: str
    molarity: Any
    u_molarity: Any
    mass_concentration: Any
    u_mass_concentration: Any
    inputs: tuple
    contributions: dict
    propagation: tuple
    model_spread: dict
    flags: tuple
    notes: tuple = ()

    def expanded_uncertainty(self, k: float = 2.0) -> Any:
        """k·u (k = 2 by default, about 95 % for a normal output; common practice)."""
        return _out(k * np.asarray(self.standard_uncertainty))

    def budget_rows(self, index: int = 0, *, grouped: bool = True) -> list:
        """Budget of one sample: (input, |c|·u, share) rows, shares of the linearised variance.

        ``grouped`` (default) shows the calibration parameters as one row, their correlation
        included (shares then add up to 1); otherwise one row each plus a row for the cross terms.
        """
        u = np.ravel(np.asarray(self.standard_uncertainty))[index]
        rows = []
        names = list(self.inputs)
        if grouped and CALIBRATION in self.contributions:
            names = [CALIBRATION] + [
                n for n in names if not n.endswith("[calibration]") and not n.endswith("calibration]")
            ]
        for name in names:
            c = float(np.ravel(np.asarray(self.contributions[name]))[index])
            rows.append((name, c, (c / u) ** 2 if u > 0 else 0.0))
        rest = 1.0 - sum(r[2] for r in rows)
        if abs(rest) > 1e-6:  # cross terms of the correlated calibration parameters
            rows.append(("(correlation of the calibration parameters)", None, rest))
        return rows

    def __repr__(self) -> str:
        v = np.ravel(np.asarray(self.value))
        u = np.ravel(np.asarray(self.standard_uncertainty))
        return f"UnknownResult({self.method}, m = {v[:3]} mol/kg, u = {u[:3]}, inputs={list(self.inputs)})"


@dataclass(frozen=True)
class _In:
    key: str
    label: str
    mean: float
    u: float
    kind: str  # 'normal' or 'rectangular' (u is the standard uncertainty either way)
    dof: float = np.inf


def _calibration_inputs(cal: Any) -> tuple[list[_In], NDArray]:
    """Calibration parameters as inputs (E0, k, lg a0, lg K) and their correlation matrix."""
    s_cal = float(nernst_slope_z(cal.T, cal.z))
    values = cal.parameter_values()
    cov = np.asarray(cal.covariance, float)
    u = np.sqrt(np.maximum(np.diag(cov), 0.0))
    ins = []
    for idx, name in enumerate(cal.parameters):
        if name == "slope":
            ins.append(
                _In("k", "slope fraction k [calibration]", values[name] / s_cal, u[idx] / s_cal, "normal", cal.dof)
            )
        elif name == "E0":  # in mV, as the reports show potentials
            ins.append(_In("E0", "E0 [mV, calibration]", 1e3 * values[name], 1e3 * u[idx], "normal", cal.dof))
        elif name == "lg a0":
            ins.append(_In("lga0", "lg a0 [calibration]", values[name], u[idx], "normal", cal.dof))
        else:
            j = name[5:-1]
            ins.append(_In(f"lgK_{idx}", f"lg K({j}) [calibration]", values[name], u[idx], "normal", cal.dof))
    with np.errstate(all="ignore"):
        corr = cov / np.outer(u, u)
    corr = np.where(np.isfinite(corr), corr, 0.0)
    return ins, corr


def _spread(
    cal: Any, emf: Any, matrix: Solution, counter_ion: str | None, models: Sequence[Any] | None, m_ref: NDArray
) -> tuple[dict, NDArray, list]:
    """Molality by each activity model (calibration refitted by each); spread per sample."""
    from ...coefficients import available_models

    values: dict[str, NDArray] = {}
    notes: list[str] = []
    for item in available_models() if models is None else models:
        name = getattr(item, "name", item)
        try:

            def one(item=item, name=name):
                other = cal.refit(item) if name != cal.model else cal
                return read_samples(other, emf, matrix, counter_ion=counter_ion).molality

            m, seen = catch_package_warnings(one)
        except Exception as exc:  # noqa: BLE001 - a registered (plug-in) model may fail in any way; it is
            # left out of the spread and named, never allowed to stop the reading
            kind = "" if isinstance(exc, ActivityError) else f"{type(exc).__name__}: "
            notes.append(f"model choice: {name} not counted ({kind}{exc})")
            continue
        outside = [
            str(w.message)
            for w in seen
            if issubclass(w.category, ValidityWarning) and "row(s)" in str(w.message) and name != cal.model
        ]
        if outside and name != cal.model:
            notes.append(
                f"model choice: {name} not counted, outside its validity for these standards or samples ({outside[0]})"
            )
            continue
        values[name] = np.asarray(m, float)
    if not values:
        return {}, np.zeros(np.shape(m_ref)), notes
    stack = np.stack([np.broadcast_to(v, np.shape(m_ref)) for v in values.values()])
    spread = np.nanmax(stack, axis=0) - np.nanmin(stack, axis=0)
    notes.append(
        f"model choice: {len(values)} model(s) counted ({', '.join(values)}); input half-width = spread/2 "
        f"(rectangular, JCGM 100:2008 4.3.7)"
    )
    return values, spread, notes


def read_with_uncertainty(
    cal: Any,
    emf: ArrayLike,
    matrix: Solution,
    *,
    u_emf: float | None = None,
    u_temperature: float = 0.0,
    u_matrix: float = 0.0,
    counter_ion: str | None = None,
    method: str = "gum",
    model_choice: bool = True,
    spread_models: Sequence[Any] | None = None,
    trials: int | None = None,
    seed: Any = None,
    coverage: float = 0.95,
    budget_rows: int = 20,
    progress: bool = False,
) -> UnknownResult:
    """Molality of samples with the full uncertainty (GUM or Monte Carlo).

    Parameters
    ----------
    cal : ISECalibration
    emf : array_like
        Reading(s), V.
    matrix : Solution
        Sample matrix without the primary ion (a batch broadcasting with ``emf``).
    u_emf : float, optional
        Standard uncertainty of a reading, V. Default: the calibration's residual standard
        deviation (the scatter of readings about the line; common practice).
    u_temperature : float, default 0
        Standard uncertainty of the sample temperature, K.
    u_matrix : float, default 0
        Relative standard uncertainty of the matrix composition (one factor on every
        matrix molality: ionic strength and interferents move together).
    counter_ion : str, optional
    method : {'gum', 'monte-carlo'}
    model_choice : bool, default True
        Include the activity-model spread as an input.
    spread_models : sequence, optional
        Models for the spread (default: every registered model).
    trials, seed, coverage
        Monte Carlo: number of trials (default 10⁵), seed of the generator, coverage
        probability. The samples are drawn together: one calibration draw per trial for
        all of them, and one draw each of the temperature offset, matrix factor and model
        choice per trial (a shared thermostat, matrix recipe and model); each sample's own
        distribution is what it would be with draws of its own. With a calibration that
        speciates, every trial is speciated (the general reader): about 4·10³ trial-samples
        per second on the shared 2-core machine, against about 5·10⁶ per second without.
    budget_rows : int, default 20
        GUM: a full :class:`PropagationResult` budget is made for up to this many samples.
    progress : bool, default False
        A progress bar on standard error (only when it is a terminal; see
        :mod:`activity.workflows.progress`): Monte Carlo trials × samples, or for the GUM the
        model evaluations × samples.

    Returns
    -------
    UnknownResult
    """
    from ...uncertainty import Normal, Rectangular, propagate

    if method not in ("gum", "monte-carlo"):
        raise InputError("must be 'gum' or 'monte-carlo'", field="method", value=method)
    E = finite(emf, "emf")
    if np.any(np.abs(E) > 5.0):
        raise InputError(
            "readings this large look like millivolts: EMFs are in volts here",
            field="emf",
            value=float(np.max(np.abs(E))),
        )
    u_e = cal.residual_sd if u_emf is None else float(finite(u_emf, "u_emf"))
    u_T = float(finite(u_temperature, "u_temperature"))
    u_x = float(finite(u_matrix, "u_matrix"))
    for nm, v in (("u_emf", u_e), ("u_temperature", u_T), ("u_matrix", u_x)):
        if v < 0:
            raise InputError("must not be negative", field=nm, value=v)
    reader = _Reader(cal, matrix, counter_ion)
    base = read_samples(cal, E, matrix, counter_ion=counter_ion)
    m0 = np.asarray(base.molality, float)
    shape = np.shape(m0)
    notes = list(base.notes)
    if u_emf is None:
        notes.append(f"u(reading) = residual SD of the calibration, {1000 * u_e:.3g} mV (common practice)")
    cal_in, corr = _calibration_inputs(cal)
    ins = list(cal_in)
    ins.append(_In("E", "reading [mV]", 0.0, 1e3 * u_e, "normal"))  # offset added to each reading, mV
    float(np.mean(reader.T0))
    if u_T > 0:
        ins.append(_In("T", "temperature [K]", 0.0, u_T, "normal"))  # offset on the sample T
    if u_x > 0:
        ins.append(_In("scale", "matrix composition [relative]", 1.0, u_x, "normal"))
    spread_vals: dict = {}
    spread = np.zeros(shape)
    if model_choice:
        spread_vals, spread, snotes = _spread(cal, E, matrix, counter_ion, spread_models, m0)
        notes += snotes
    spread = np.where(np.isfinite(spread), spread, 0.0)
    has_model = model_choice and np.any(spread > 0)
    if has_model:
        ins.append(
            _In(
                "dmodel", "activity-model choice [mol/kg]", 0.0, float(np.max(spread)) / 2 / np.sqrt(3.0), "rectangular"
            )
        )
    n_cal = len(cal_in)

    spread_scale = spread / np.max(spread) if has_model else np.zeros(shape)
    if matrix.shape not in ((), shape):
        raise InputError(
            f"the matrix batch {matrix.shape} does not match the readings {shape}", field="matrix", value=matrix.shape
        )
    m_start = m0 if np.all(np.isfinite(m0)) else None
    f = _make_f(cal, reader, cal_in, np.broadcast_to(E, shape), m_start, spread_scale)

    def f_row(idx: int) -> Callable:
        rows = np.unravel_index(idx, shape) if shape else ()
        sub = reader if matrix.shape == () else _Reader(cal, matrix[rows], counter_ion)
        return _make_f(
            cal,
            sub,
            cal_in,
            np.broadcast_to(E, shape)[rows],
            None if m_start is None else np.broadcast_to(m0, shape)[rows],
            spread_scale[rows],
        )

    means = {i.key: i.mean for i in ins}
    us = np.array([i.u for i in ins])
    n_in = len(ins)
    C = np.eye(n_in)
    C[:n_cal, :n_cal] = corr
    cov = C * np.outer(us, us)
    from ..progress import Progress

    results: list = []
    n_s = int(np.prod(shape)) if shape else 1
    n_evals = 2 * sum(1 for i in ins if i.u > 0) + (1 if method == "gum" else 0)
    total = n_s * (n_evals + (int(trials or 100_000) if method != "gum" else 0))
    bar = Progress(total, progress=progress, desc="uncertainty of unknowns", unit="eval")
    f_plain = f

    def f(**q: Any) -> NDArray:
        out = f_plain(**q)
        bar.update(n_s)
        return out

    S = _sensitivities(f, ins, means, shape)
    contributions = {i.label: np.abs(S[idx]) * i.u for idx, i in enumerate(ins)}
    Sc = S[:n_cal]
    contributions[CALIBRATION] = np.sqrt(np.maximum(np.einsum("i...,ij,j...->...", Sc, cov[:n_cal, :n_cal], Sc), 0.0))
    if method == "gum":
        var = np.einsum("i...,ij,j...->...", S, cov, S)
        value = f(**means)
        u = np.sqrt(np.maximum(var, 0.0))
        if np.size(m0) <= budget_rows:
            results = [
                _propagate_one(f_row(idx), ins, C, n_cal, "gum", trials, seed, coverage, Normal, Rectangular, propagate)
                for idx in range(int(np.size(m0)))
            ]
    else:
        value, u, results = _monte_carlo(
            cal,
            matrix,
            counter_ion,
            ins,
            cov,
            n_cal,
            E,
            m0,
            shape,
            spread_scale,
            has_model,
            S,
            trials,
            seed,
            coverage,
            bar,
        )
    bar.close()
    factor, _ = molarity_factor(reader._solution(np.where(np.isfinite(m0), m0, 0.0), 1.0, reader.T0))
    factor = np.broadcast_to(factor, shape)
    mm = parse_species(cal.ion).molar_mass * 1e6
    c = value * factor
    return UnknownResult(
        _out(np.asarray(value)),
        _out(np.asarray(u)),
        method,
        _out(c),
        _out(u * factor),
        _out(c * mm),
        _out(u * factor * mm),
        tuple(i.label for i in ins if i.u > 0),
        {
            k: _out(np.asarray(v))
            for k, v in contributions.items()
            if k in [i.label for i in ins if i.u > 0] + [CALIBRATION]
        },
        tuple(results),
        {k: _out(v) for k, v in spread_vals.items()},
        base.flags,
        tuple(dict.fromkeys(notes)),
    )


def _sensitivities(f: Callable, ins: list, means: dict, shape: tuple) -> NDArray:
    """∂m/∂xᵢ by central differences (step 1e-3·u), every sample at once: (n_inputs,) + shape."""
    sens = []
    for i in ins:
        if i.u == 0:
            sens.append(np.zeros(shape))
            continue
        h = 1e-3 * i.u
        up = dict(means)
        dn = dict(means)
        up[i.key] += h
        dn[i.key] -= h
        sens.append((f(**up) - f(**dn)) / (2 * h))
    return np.stack([np.broadcast_to(s_, shape) for s_ in sens])


def _flat_matrix(matrix: Solution) -> Solution:
    """The matrix batch with its rows on one axis (a scalar or 1-D batch is returned as it is)."""
    if len(matrix.shape) <= 1:
        return matrix
    n = len(matrix.species)
    T = np.asarray(matrix.T_compact, float)
    P = np.asarray(matrix.P_compact, float)
    T = np.ravel(np.broadcast_to(T, matrix.shape)) if T.ndim else T
    P = np.ravel(np.broadcast_to(P, matrix.shape)) if P.ndim else P
    return Solution._from_arrays(matrix.species, matrix.charges, matrix.m.reshape(n, -1), T, P)


def _monte_carlo(
    cal: Any,
    matrix: Solution,
    counter_ion: str | None,
    ins: list,
    cov: NDArray,
    n_cal: int,
    E: NDArray,
    m0: NDArray,
    shape: tuple,
    spread_scale: NDArray,
    has_model: bool,
    S: NDArray,
    trials: int | None,
    seed: Any,
    coverage: float,
    bar: Any = None,
) -> tuple[NDArray, NDArray, list]:
    """Monte Carlo of every sample at once (:mod:`._mc`); a PropagationResult per sample.

    The budget rows carry the GUM sensitivities at the estimates, as
    :func:`activity.uncertainty.propagate` gives them for a Monte Carlo run.
    """
    from ...uncertainty.result import BudgetRow, PropagationResult
    from ._mc import DrawOrderSample, MCDraws, run_monte_carlo

    trials = 100_000 if trials is None else int(trials)
    if trials < 2:
        raise InputError("at least 2 Monte Carlo trials are needed", field="trials", value=trials)
    reader = _Reader(cal, _flat_matrix(matrix), counter_ion)
    by = {i.key: i for i in ins}
    draws = MCDraws(
        cal_keys=tuple(i.key for i in ins[:n_cal]),
        cal_mean=np.array([i.mean for i in ins[:n_cal]]),
        cal_cov=cov[:n_cal, :n_cal],
        u_emf=1e-3 * by["E"].u,  # the reading input is in mV
        u_T=by["T"].u if "T" in by else 0.0,
        u_scale=by["scale"].u if "scale" in by else 0.0,
        model_half=by["dmodel"].u * np.sqrt(3.0) if has_model else 0.0,
        spread_scale=np.ravel(np.broadcast_to(spread_scale, shape)),
    )
    m_start = np.ravel(np.broadcast_to(m0, shape))
    mean, sd, ref, store = run_monte_carlo(
        reader, draws, np.broadcast_to(E, shape), m_start, trials, seed, RTOL, bar=bar
    )
    Sf = S.reshape(len(ins), -1)
    var_lin = np.einsum("ik,ij,jk->k", Sf, cov, Sf)
    used = [idx for idx, i in enumerate(ins) if i.u > 0]
    results = []
    for k in range(mean.size):
        rows = []
        for idx in used:
            i = ins[idx]
            c = float(Sf[idx, k])
            contrib = float(abs(c) * i.u)
            rows.append(
                BudgetRow(
                    name=i.label,
                    distribution=i.kind,
                    value=float(i.mean),
                    standard_uncertainty=float(i.u),
                    dof=float("inf"),
                    sensitivity=c,
                    contribution=contrib,
                    share=float(contrib**2 / var_lin[k]) if var_lin[k] > 0 else 0.0,
                )
            )
        cross = var_lin[k] - sum(r.contribution**2 for r in rows)
        results.append(
            PropagationResult(
                value=float(mean[k]),
                standard_uncertainty=float(sd[k]),
                dof=None,
                method="monte-carlo",
                coverage=coverage,
                budget=tuple(rows),
                correlation_share=float(cross / var_lin[k]) if var_lin[k] > 0 else 0.0,
                trials=trials,
                samples=DrawOrderSample(float(ref[k]), store[k]),
            )
        )
    return mean.reshape(shape), sd.reshape(shape), results


def _make_f(cal: Any, reader: _Reader, cal_in: list, E: Any, m_start: Any, spread_scale: Any) -> Callable:
    """The molality as a function of the named uncertain inputs (arrays broadcast with the samples)."""
    lgk = [(nm[5:-1], i.key) for nm, i in zip(cal.parameters, cal_in) if nm.startswith("lg K(")]

    def f(**q: Any) -> NDArray:
        K = {j: 10.0 ** q[key] for j, key in lgk}
        m = reader.solve(
            E + 1e-3 * q.get("E", 0.0),
            E0=1e-3 * q["E0"] if "E0" in q else cal.E0,
            k=q.get("k", cal.slope_factor),
            a0=10.0 ** q["lga0"] if "lga0" in q else cal.a0,
            K=K,
            T=reader.T0 + q.get("T", 0.0),
            scale=q.get("scale", 1.0),
            m_start=m_start,
            details=False,
        )
        return m + q.get("dmodel", 0.0) * spread_scale

    return f


def _propagate_one(
    f: Callable,
    ins: list,
    C: NDArray,
    n_cal: int,
    method: str,
    trials: Any,
    seed: Any,
    coverage: float,
    Normal: Any,
    Rectangular: Any,
    propagate: Any,
) -> Any:
    """One sample through :func:`activity.uncertainty.propagate` (full budget, GUM or Monte Carlo)."""
    dists: dict[str, Any] = {}
    for i in ins:
        if i.u <= 0:
            continue
        dists[i.key] = Rectangular(i.mean, i.u * np.sqrt(3.0)) if i.kind == "rectangular" else Normal(i.mean, i.u)
    corr = {}
    keys = [i.key for i in ins]
    for a in range(n_cal):
        for b in range(a + 1, n_cal):
            if ins[a].u > 0 and ins[b].u > 0 and C[a, b] != 0:
                corr[(keys[a], keys[b])] = float(np.clip(C[a, b], -1.0, 1.0))
    labels = {i.key: i.label for i in ins}

    import dataclasses

    res = propagate(
        f,
        dists,
        method,
        correlation=corr or None,
        trials=trials if method != "gum" else None,
        seed=seed,
        coverage=coverage,
    )
    return dataclasses.replace(res, budget=tuple(dataclasses.replace(b, name=labels[b.name]) for b in res.budget))
