"""Calibration of a pH meter (glass electrode cell) as the IUPAC 2002 recommendations describe.

The cell reads E = E(pH 7) + s·(pH − 7), with s the practical slope in V per pH (negative
for the usual cell, reference | bridge ‖ solution | glass electrode, where E falls as pH
rises). Its size relative to the Nernst slope k = RT ln10/F is the slope percentage
100·(−s)/k.

* **one-point**: one buffer fixes E(pH 7); the slope is assumed (theoretical at T, or
  carried over from an earlier calibration) with its uncertainty.
* **two-point (bracketing)**: two buffers whose pH(S) bracket the samples fix both.
* **multipoint**: a weighted linear regression of E on pH(S) over three or more buffers
  (effective-variance weights 1/(u(E)² + s²u(pH(S))²)); the covariance of (E(pH 7), s) comes
  from the input uncertainties and is scaled up by the reduced χ² when the scatter is larger
  than they explain (Birge ratio; recorded in the notes).

Readings at slightly different temperatures are put on the calibration temperature by the
usual temperature compensation of a meter: the slope is proportional to the absolute
temperature, s(T) = s·T/T_cal, about an isothermal intersection point (pH 7 and E(pH 7) unless
an isothermal intersection was measured, see :func:`isothermal_intersection`).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from activity.constants import ZERO_CELSIUS
from activity.errors import InputError

from .buffers import StandardBuffer, get_buffer
from .criteria import Thresholds, Verdict

__all__ = [
    "DEFAULT_U_EMF",
    "DEFAULT_U_SLOPE_FRACTION",
    "DEFAULT_U_T",
    "IsothermalIntersection",
    "PhCalibration",
    "SamplePH",
    "calibrate_ph",
    "isothermal_intersection",
]

#: Standard uncertainty of one reading, V: 0.2 mV, the stability of a glass-electrode reading
#: within a minute (common practice).
DEFAULT_U_EMF = 2e-4
#: Standard uncertainty of an assumed slope in a one-point calibration, as a fraction of the
#: Nernst slope: 2 % (common practice: electrodes in service lie within about 95–102 %).
DEFAULT_U_SLOPE_FRACTION = 0.02
#: Standard uncertainty of a temperature, K (a calibrated probe; common practice).
DEFAULT_U_T = 0.2
#: Two buffers closer than this in pH(S) cannot fix a slope.
MIN_PH_SPAN = 0.05


def _nernst(T: Any) -> Any:
    from activity import nernst_slope

    return nernst_slope(T)


def _as_array(x: ArrayLike, field: str) -> np.ndarray:
    try:
        a = np.atleast_1d(np.asarray(x, dtype=float))
    except (TypeError, ValueError):
        raise InputError("not a number", field=field, value=x) from None
    if not np.all(np.isfinite(a)):
        raise InputError("must be finite", field=field, value=x)
    return a


def _check_volts(emf: np.ndarray, field: str = "emf") -> None:
    if np.any(np.abs(emf) > 2.0):
        raise InputError(
            "potentials are in volts here (|E| < 2 V); were millivolts given?",
            field=field,
            value=float(emf[np.argmax(np.abs(emf))]),
        )


@dataclass(frozen=True, repr=False)
class SamplePH:
    """pH of samples with uncertainty.

    Attributes
    ----------
    pH, standard_uncertainty, expanded_uncertainty : float or ndarray
    coverage : float
    budgets : tuple of PropagationResult
        One per sample.
    labels : dict
        Budget input name → readable label.
    junction : tuple
        The :class:`~activity.workflows.ph.junction.JunctionEstimate` per sample (or None).
    outside_bracket : bool or ndarray
        True where the sample's pH lies outside the pH(S) range of the calibration buffers.
    notes : tuple of str
    """

    pH: Any
    standard_uncertainty: Any
    expanded_uncertainty: Any
    coverage: float
    budgets: tuple
    labels: dict
    junction: tuple
    outside_bracket: Any
    notes: tuple = ()

    def __repr__(self) -> str:
        return f"SamplePH(pH={self.pH!r}, u={self.standard_uncertainty!r}, U={self.expanded_uncertainty!r})"

    def budget_rows(self, i: int = 0) -> list[dict]:
        """Budget rows of sample ``i`` with readable labels."""
        rows = self.budgets[i].budget_table()
        for r in rows:
            r["label"] = self.labels.get(r["name"], r["name"])
        return rows


@dataclass(frozen=True, repr=False)
class PhCalibration:
    """A calibrated pH cell.

    Attributes
    ----------
    method : str
        'one-point', 'two-point' or 'multipoint'.
    slope : float
        Practical slope s at ``T``, V per pH (negative for the usual cell).
    slope_percent : float
        100·(−s)/(RT ln10/F) at ``T``.
    E_pH7 : float
        Potential at pH 7 at ``T``, V.
    pH_zero_potential : float
        pH at which the cell reads 0 V: 7 − E(pH 7)/s.
    covariance : ndarray, shape (2, 2)
        Covariance of (E_pH7, slope), V² and V²/pH.
    T : float
        Calibration temperature (mean of the buffers'), K.
    standards : tuple of str
        Labels of the calibration buffers.
    pH_standards, u_pH_standards, emf, u_emf, T_standards : ndarray
        The calibration data (pH(S), V, K).
    residuals : ndarray
        pH(S) − pH(fitted) of each buffer, pH.
    chi2_reduced : float or None
        Weighted residual sum / (n − 2) for multipoint calibrations.
    isothermal_pH : float
        pH of the isothermal intersection used for temperature compensation.
    verdicts : tuple of Verdict
    notes : tuple of str
    """

    method: str
    slope: float
    slope_percent: float
    E_pH7: float
    pH_zero_potential: float
    covariance: np.ndarray
    T: float
    standards: tuple
    pH_standards: np.ndarray
    u_pH_standards: np.ndarray
    emf: np.ndarray
    u_emf: np.ndarray
    T_standards: np.ndarray
    residuals: np.ndarray
    chi2_reduced: float | None
    isothermal_pH: float
    verdicts: tuple
    notes: tuple
    buffers: tuple = ()
    dpH_dT: np.ndarray = field(default_factory=lambda: np.zeros(0))
    u_slope_assumed: float = 0.0
    thresholds: Thresholds = field(default_factory=Thresholds)

    def __repr__(self) -> str:
        return (
            f"PhCalibration({self.method}, slope={self.slope * 1000:.3f} mV/pH "
            f"({self.slope_percent:.2f} %), E_pH7={self.E_pH7 * 1000:.2f} mV, "
            f"T={self.T - ZERO_CELSIUS:.2f} °C, standards={list(self.standards)})"
        )

    # ---------------------------------------------------------------- the line
    @property
    def isothermal_E(self) -> float:
        """Potential of the isothermal intersection, V (on the calibration line)."""
        return self.E_pH7 + self.slope * (self.isothermal_pH - 7.0)

    @property
    def pH_range(self) -> tuple[float, float]:
        """The pH(S) range spanned by the calibration buffers."""
        return float(np.min(self.pH_standards)), float(np.max(self.pH_standards))

    def slope_at(self, T: ArrayLike) -> Any:
        """Temperature-compensated slope s(T) = s·T/T_cal, V per pH."""
        out = self.slope * np.asarray(T, float) / self.T
        return float(out) if np.ndim(out) == 0 else out

    def potential(self, pH: ArrayLike, T: ArrayLike | None = None) -> Any:
        """The potential the cell should read at pH and T, V."""
        Tk = self.T if T is None else np.asarray(T, float)
        out = self.isothermal_E + self.slope * (Tk / self.T) * (np.asarray(pH, float) - self.isothermal_pH)
        return float(out) if np.ndim(out) == 0 else out

    def ph(self, emf: ArrayLike, T: ArrayLike | None = None) -> Any:
        """pH from readings (V) at T (kelvin; default the calibration temperature).

        Broadcasts over ``emf`` and ``T``.

        Examples
        --------
        >>> cal = calibrate_ph(["KHP", "phosphate", "borax"], [0.1763, 0.0099, -0.1249], 298.15)
        >>> round(cal.ph(0.0500), 3)
        6.175
        """
        E = np.asarray(emf, dtype=float)
        _check_volts(np.atleast_1d(E))
        Tk = self.T if T is None else _temperature(T)
        out = self.isothermal_pH + (E - self.isothermal_E) / (self.slope * Tk / self.T)
        return float(out) if np.ndim(out) == 0 else out

    def with_isothermal_intersection(self, pH_iso: float) -> PhCalibration:
        """The same calibration compensating temperature about an isothermal pH ``pH_iso``."""
        return replace(
            self,
            isothermal_pH=float(pH_iso),
            notes=self.notes + (f"temperature compensation about the isothermal intersection at pH {pH_iso:.3f}",),
        )

    # ---------------------------------------------------------------- uncertainty
    def _measurement_function(self, n_samples_T: Any = None):
        """f(pHS_i, E_i, dT_cal, E_x, T_x, slope_assumed, junction) → pH, vectorised over rows."""
        n = self.pH_standards.size
        x_scale = self.T_standards / self.T
        method = self.method
        pH_iso = self.isothermal_pH
        dpH_dT = self.dpH_dT if self.dpH_dT.size == n else np.zeros(n)
        w = _weights(self.u_emf, self.slope, self.u_pH_standards)

        def f(E_x, T_x, dT_cal, junction, slope_assumed=None, **kw):
            pHs = np.stack([np.asarray(kw[f"pHS_{i + 1}"], float) for i in range(n)], axis=-1)
            Es = np.stack([np.asarray(kw[f"E_{i + 1}"], float) for i in range(n)], axis=-1)
            dT = np.asarray(dT_cal, float)[..., None]
            pHs = pHs + dpH_dT * dT  # buffers read at T_i + δ: their pH(S) moves along the table
            x = (pHs - 7.0) * x_scale
            if method == "one-point":
                s = np.asarray(slope_assumed, float)
                e7 = Es[..., 0] - s * x[..., 0]
            else:
                e7, s = _wls(x, Es, w)
            iso_E = e7 + s * (pH_iso - 7.0)
            return pH_iso + (np.asarray(E_x) - iso_E) / (s * np.asarray(T_x) / self.T) + junction

        return f

    def ph_with_uncertainty(
        self,
        emf: ArrayLike,
        T: ArrayLike | None = None,
        *,
        u_emf: float = DEFAULT_U_EMF,
        u_T: float = DEFAULT_U_T,
        u_T_calibration: float = DEFAULT_U_T,
        sample: Any = None,
        junction_half_width: float | None = None,
        bridge: Any = None,
        method: str = "gum",
        seed: int | None = None,
        trials: int | None = None,
        coverage: float = 0.95,
    ) -> SamplePH:
        """pH of samples with an uncertainty budget.

        Budget inputs: pH(S) and reading of each calibration buffer, a common error of the
        calibration temperature (moves every pH(S) along its table), the assumed slope
        (one-point), the sample reading and temperature, and the residual liquid-junction
        term (rectangular, half-width from the Henderson equation when the sample's
        composition is known, or as given).

        Parameters
        ----------
        emf : array_like
            Sample readings, V.
        T : array_like, optional
            Sample temperatures, K (default: the calibration temperature).
        u_emf, u_T, u_T_calibration : float
            Standard uncertainties of a sample reading (V) and of the sample and calibration
            temperatures (K).
        sample : Solution, optional
            The sample composition (one row, used for every reading) for the junction estimate.
        junction_half_width : float, optional
            Half-width of the residual liquid-junction term in pH, if known otherwise.
        bridge : Solution, optional
            Reference electrolyte (default 3 mol/L KCl).
        method : {'gum', 'monte-carlo'}

        Returns
        -------
        SamplePH

        Examples
        --------
        >>> cal = calibrate_ph(["KHP", "phosphate", "borax"], [0.1763, 0.0099, -0.1249], 298.15)
        >>> r = cal.ph_with_uncertainty(0.0500)
        >>> round(r.pH, 3), round(r.standard_uncertainty, 3)
        (6.175, 0.004)
        """
        from activity.uncertainty import Normal, Rectangular, propagate

        E = _as_array(emf, "emf")
        _check_volts(E)
        Tx = np.broadcast_to(self.T if T is None else _temperature(T), E.shape).astype(float)
        n = self.pH_standards.size
        notes = list(self.notes)
        junctions: list = []
        half = None
        if junction_half_width is not None:
            half = float(junction_half_width)
            if half < 0:
                raise InputError("must not be negative", field="junction_half_width", value=half)
            notes.append(f"residual liquid junction: ±{half:g} pH as given")
        elif sample is not None:
            if not self.buffers:
                raise InputError(
                    "the junction estimate needs named calibration buffers (with compositions)",
                    field="sample",
                    value=None,
                )
            from .junction import residual_junction

            est = residual_junction(sample, list(self.buffers), float(np.mean(Tx)), bridge=bridge)
            half = est.half_width
            junctions.append(est)
            notes.extend(est.notes)
            notes.append(f"residual liquid junction (Henderson): ±{half:.3g} pH")
        else:
            notes.append(
                "residual liquid junction not estimated (sample composition unknown); "
                "pass sample= or junction_half_width="
            )
        scale = 1.0
        if self.chi2_reduced is not None and self.chi2_reduced > 1.0:
            scale = math.sqrt(self.chi2_reduced)
            notes.append(f"calibration readings' uncertainty scaled by √χ²ᵣ = {scale:.3g} (scatter above u)")
        labels = {
            "E_x": "sample reading",
            "T_x": "sample temperature",
            "dT_cal": "calibration temperature",
            "junction": "residual liquid junction",
            "slope_assumed": "assumed slope",
        }
        for i, name in enumerate(self.standards):
            labels[f"pHS_{i + 1}"] = f"pH(S) {name}"
            labels[f"E_{i + 1}"] = f"reading in {name}"
        f = self._measurement_function()
        values, us, Us, budgets = [], [], [], []
        for Ei, Ti in zip(E, Tx):
            inputs: dict[str, Any] = {
                "E_x": Normal(float(Ei), u_emf),
                "T_x": Normal(float(Ti), u_T),
                "dT_cal": Normal(0.0, u_T_calibration if self.dpH_dT.size else 0.0),
            }
            inputs["junction"] = Rectangular(0.0, half) if half else 0.0
            if self.method == "one-point":
                inputs["slope_assumed"] = Normal(self.slope, self.u_slope_assumed)
            for i in range(n):
                inputs[f"pHS_{i + 1}"] = Normal(float(self.pH_standards[i]), float(self.u_pH_standards[i]))
                inputs[f"E_{i + 1}"] = Normal(float(self.emf[i]), float(self.u_emf[i]) * scale)
            kw = {"seed": seed, "trials": trials} if method == "monte-carlo" else {}
            res = propagate(f, inputs, method, coverage=coverage, **kw)
            values.append(res.value)
            us.append(res.standard_uncertainty)
            Us.append(res.expanded_uncertainty())
            budgets.append(res)
        lo, hi = self.pH_range
        values_a = np.array(values)
        outside = (values_a < lo - 1e-9) | (values_a > hi + 1e-9)
        if np.any(outside):
            notes.append(
                f"{int(outside.sum())} sample(s) outside the calibrated range pH {lo:.3f}–{hi:.3f}: "
                "extrapolated; bracket the samples with buffers (IUPAC 2002)"
            )

        def sc(a):
            return float(a[0]) if np.ndim(emf) == 0 else np.asarray(a)

        return SamplePH(
            sc(values),
            sc(us),
            sc(Us),
            coverage,
            tuple(budgets),
            labels,
            tuple(junctions),
            bool(outside[0]) if np.ndim(emf) == 0 else outside,
            tuple(dict.fromkeys(notes)),
        )


def _temperature(T: ArrayLike) -> Any:
    Tk = np.asarray(T, dtype=float)
    if not np.all(np.isfinite(Tk)) or np.any(Tk < 250.0) or np.any(Tk > 400.0):
        bad = float(np.atleast_1d(Tk)[0])
        hint = f"; did you mean {bad + ZERO_CELSIUS:.2f} K?" if -5 <= bad <= 100 else ""
        raise InputError(f"temperature in kelvin{hint}", field="T", value=bad)
    return Tk


def _weights(u_emf: np.ndarray, slope: float, u_pH: np.ndarray) -> np.ndarray:
    return 1.0 / (u_emf**2 + (slope * u_pH) ** 2)


def _wls(x: np.ndarray, E: np.ndarray, w: np.ndarray) -> tuple[Any, Any]:
    """Weighted straight line E = a + b·x along the last axis; returns (a, b)."""
    sw = w.sum()
    xm = (w * x).sum(axis=-1) / sw
    Em = (w * E).sum(axis=-1) / sw
    dx = x - xm[..., None]
    b = (w * dx * (E - Em[..., None])).sum(axis=-1) / (w * dx * dx).sum(axis=-1)
    return Em - b * xm, b


def _resolve_standards(
    pH_standards: Sequence[Any],
    T: np.ndarray,
    u_pH: ArrayLike | None,
    buffers: Mapping[str, StandardBuffer] | None,
):
    names, values, us, bufs, dT = [], [], [], [], []
    given_u = None if u_pH is None else np.broadcast_to(_as_array(u_pH, "u_pH"), (len(pH_standards),))
    all_named = True
    for i, item in enumerate(pH_standards):
        if isinstance(item, (str, StandardBuffer)):
            b = get_buffer(item, buffers)
            v = b.ph(T[i])
            names.append(b.key)
            values.append(v.value)
            us.append(v.standard_uncertainty if given_u is None else given_u[i])
            bufs.append(b)
            h = 0.5
            lo, hi = max(T[i] - h, b.T_min), min(T[i] + h, b.T_max)
            dT.append((b.ph(hi).value - b.ph(lo).value) / (hi - lo) if hi > lo else 0.0)
        else:
            all_named = False
            try:
                v = float(item)
            except (TypeError, ValueError):
                raise InputError("a buffer name or a pH value", field=f"pH_standards[{i}]", value=item) from None
            if not (-2 < v < 16):
                raise InputError("not a pH value", field=f"pH_standards[{i}]", value=item)
            if given_u is None:
                raise InputError(
                    "numeric pH(S) values need their standard uncertainties (u_pH=)", field="u_pH", value=None
                )
            names.append(f"pH {v:g}")
            values.append(v)
            us.append(given_u[i])
            dT.append(0.0)
    return (
        tuple(names),
        np.array(values, float),
        np.array(us, float),
        tuple(bufs) if all_named else (),
        np.array(dT, float),
    )


def calibrate_ph(
    pH_standards: Sequence[Any],
    emf: ArrayLike,
    T: ArrayLike = 298.15,
    *,
    u_pH: ArrayLike | None = None,
    u_emf: ArrayLike = DEFAULT_U_EMF,
    method: str | None = None,
    slope: float | None = None,
    u_slope: float | None = None,
    thresholds: Thresholds | Mapping[str, float] | None = None,
    buffers: Mapping[str, StandardBuffer] | None = None,
) -> PhCalibration:
    """Calibrate a pH cell with standard buffers.

    Parameters
    ----------
    pH_standards : sequence of str or float
        Buffer names (pH(S) taken from the table at each T, with its uncertainty) or pH(S)
        values (then ``u_pH`` is required).
    emf : array_like
        Reading in each buffer, V.
    T : array_like, default 298.15
        Temperature of each buffer (or one for all), K.
    u_pH : array_like, optional
        Standard uncertainties of pH(S) (default: from the buffer table).
    u_emf : array_like, default 2e-4
        Standard uncertainty of each reading, V (0.2 mV, common practice).
    method : {'one-point', 'two-point', 'multipoint'}, optional
        Default by the number of buffers: 1, 2, ≥ 3.
    slope, u_slope : float, optional
        One-point only: the slope to assume, V/pH at the calibration temperature (default
        the Nernst slope, negative) and its standard uncertainty (default 2 % of it).
    thresholds : Thresholds or mapping, optional
        Acceptance limits for the verdicts (defaults: common practice).
    buffers : mapping, optional
        Buffer table including user buffers (see :func:`~.buffers.standard_buffers`).

    Returns
    -------
    PhCalibration

    Raises
    ------
    InputError
        Unknown buffer, temperature outside a buffer's table, readings not in volts, two
        buffers of (nearly) equal pH for a two-point calibration, too few buffers.

    Examples
    --------
    >>> cal = calibrate_ph(["KHP", "phosphate", "borax"], [0.1763, 0.0099, -0.1249], 298.15)
    >>> round(cal.slope * 1000, 1), round(cal.slope_percent, 1), round(cal.E_pH7 * 1000, 1)
    (-58.2, 98.4, 2.0)
    >>> [v.passed for v in cal.verdicts]
    [True, True, True]
    """
    th = thresholds if isinstance(thresholds, Thresholds) else Thresholds.from_mapping(thresholds)
    if isinstance(pH_standards, (str, bytes)) or not isinstance(pH_standards, Sequence) and np.ndim(pH_standards) == 0:
        pH_standards = [pH_standards]
    pH_standards = list(pH_standards)
    n = len(pH_standards)
    E = _as_array(emf, "emf")
    if E.size != n:
        raise InputError(f"{n} buffers but {E.size} readings", field="emf", value=E.size)
    _check_volts(E)
    Ts = np.broadcast_to(_temperature(np.atleast_1d(T)), (n,)).astype(float)
    uE = np.broadcast_to(_as_array(u_emf, "u_emf"), (n,)).astype(float)
    if np.any(uE <= 0):
        raise InputError("must be positive", field="u_emf", value=float(uE.min()))
    names, pHs, upH, bufs, dpH_dT = _resolve_standards(pH_standards, Ts, u_pH, buffers)
    if method is None:
        method = {1: "one-point", 2: "two-point"}.get(n, "multipoint")
    need = {"one-point": 1, "two-point": 2, "multipoint": 3}
    if method not in need:
        raise InputError(f"one of {', '.join(need)}", field="method", value=method)
    if method == "two-point" and n != 2 or method == "one-point" and n != 1 or n < need[method]:
        raise InputError(
            f"{method} calibration needs {'exactly ' if method != 'multipoint' else ''}{need[method]}"
            f"{' or more' if method == 'multipoint' else ''} buffers",
            field="pH_standards",
            value=n,
        )
    Tcal = float(np.mean(Ts))
    notes: list[str] = []
    if np.ptp(Ts) > 0.2:
        notes.append(f"buffers read at {np.ptp(Ts):.2g} K apart: slope compensated as ∝ T about pH 7")
    kN = _nernst(Tcal)
    x = (pHs - 7.0) * Ts / Tcal
    chi2 = None
    u_slope_assumed = 0.0
    if method == "one-point":
        s = -kN if slope is None else float(slope)
        if slope is None:
            notes.append("one-point calibration: Nernst slope at T assumed")
        if abs(s) > 0.2 or s == 0:
            raise InputError("slope in V per pH (about −0.059 at 25 °C)", field="slope", value=s)
        u_slope_assumed = DEFAULT_U_SLOPE_FRACTION * abs(s) if u_slope is None else float(u_slope)
        e7 = float(E[0] - s * x[0])
        var_e7 = uE[0] ** 2 + (s * upH[0]) ** 2 + x[0] ** 2 * u_slope_assumed**2
        cov = np.array([[var_e7, -x[0] * u_slope_assumed**2], [-x[0] * u_slope_assumed**2, u_slope_assumed**2]])
    else:
        span = float(np.ptp(pHs))
        if span < MIN_PH_SPAN:
            raise InputError(
                f"the buffers' pH(S) differ by {span:.3g} only: the slope is undetermined; "
                "use buffers that bracket the samples",
                field="pH_standards",
                value=list(names),
            )
        if method == "two-point" and span < 2.0:
            notes.append(f"two-point calibration over {span:.2g} pH only: the slope is poorly determined")
        # effective-variance weights need the slope: start from the Nernst slope, iterate twice
        s = -kN
        for _ in range(3):
            w = _weights(uE, s, upH)
            e7, s = (float(v) for v in _wls(x, E, w))
        w = _weights(uE, s, upH)
        X = np.column_stack([np.ones(n), x])
        cov = np.linalg.inv(X.T @ (w[:, None] * X))
        if n > 2:
            r = E - (e7 + s * x)
            chi2 = float(np.sum(w * r * r) / (n - 2))
            if chi2 > 1.0:
                cov = cov * chi2
                notes.append(
                    f"scatter about the line exceeds the stated uncertainties (χ²ᵣ = {chi2:.3g}): "
                    "covariance scaled by χ²ᵣ"
                )
    pct = 100.0 * (-s) / kN
    if abs(pct) < 10.0:
        raise InputError(
            f"the slope is {pct:.3g} % of the Nernst slope: readings in volts given as millivolts (or the reverse)?",
            field="emf",
            value=E.tolist(),
        )
    residuals = pHs - (7.0 + (E - e7) / (s * Ts / Tcal))
    cal = PhCalibration(
        method=method,
        slope=float(s),
        slope_percent=float(pct),
        E_pH7=float(e7),
        pH_zero_potential=float(7.0 - e7 / s),
        covariance=cov,
        T=Tcal,
        standards=names,
        pH_standards=pHs,
        u_pH_standards=upH,
        emf=E,
        u_emf=uE,
        T_standards=Ts,
        residuals=residuals,
        chi2_reduced=chi2,
        isothermal_pH=7.0,
        verdicts=(),
        notes=(),
        buffers=bufs,
        dpH_dT=dpH_dT if bufs else np.zeros(0),
        u_slope_assumed=u_slope_assumed,
        thresholds=th,
    )
    return replace(cal, verdicts=tuple(_calibration_verdicts(cal, th)), notes=tuple(notes))


def _calibration_verdicts(cal: PhCalibration, th: Thresholds) -> list[Verdict]:
    out = []
    if cal.method == "one-point":
        out.append(Verdict("slope", None, f"assumed {cal.slope_percent:.2f} % (one-point calibration)", "not judged"))
    elif cal.slope_percent < 0:
        out.append(
            Verdict(
                "slope",
                False,
                f"slope {cal.slope_percent:.2f} %: the potential rises with pH — check the "
                "sign convention of the readings or the electrode connections",
                th.basis("slope_percent_min"),
            )
        )
    else:
        ok = th.slope_percent_min <= cal.slope_percent <= th.slope_percent_max
        out.append(
            Verdict(
                "slope",
                ok,
                f"slope {cal.slope_percent:.2f} % of RT ln10/F (limits "
                f"{th.slope_percent_min:g}–{th.slope_percent_max:g} %)",
                th.basis("slope_percent_min"),
            )
        )
    ok = abs(cal.E_pH7) <= th.offset_max
    out.append(
        Verdict(
            "offset",
            ok,
            f"E(pH 7) = {cal.E_pH7 * 1000:.1f} mV (limit ±{th.offset_max * 1000:g} mV)",
            th.basis("offset_max"),
        )
    )
    if cal.method == "multipoint":
        worst = float(np.max(np.abs(cal.residuals)))
        out.append(
            Verdict(
                "linearity",
                worst <= th.residual_max,
                f"largest residual {worst:.4f} pH (limit {th.residual_max:g})",
                th.basis("residual_max"),
            )
        )
    return out


@dataclass(frozen=True)
class IsothermalIntersection:
    """Isothermal intersection of calibration lines at two temperatures.

    Attributes
    ----------
    pH, E : float
        Coordinates of the intersection (pH, V).
    u_pH, u_E : float
        Standard uncertainties from the two calibrations' covariances.
    notes : tuple of str
    """

    pH: float
    E: float
    u_pH: float
    u_E: float
    notes: tuple = ()


def isothermal_intersection(cal_a: PhCalibration, cal_b: PhCalibration) -> IsothermalIntersection:
    """Intersection of two calibration lines taken at different temperatures.

    The lines E = E7 + s(pH − 7) cross at pH_iso = 7 − (E7_a − E7_b)/(s_a − s_b); the
    uncertainty follows by the GUM from the two covariance matrices (independent
    calibrations). The slopes differ by only ~0.34 % per kelvin, so the intersection is
    ill-conditioned unless the temperatures are far apart (≥ 10 K, our rule of thumb).

    Examples
    --------
    >>> a = calibrate_ph(["KHP", "phosphate", "borax"], [0.1763, 0.0099, -0.1249], 298.15)
    >>> b = calibrate_ph(["KHP", "phosphate", "borax"], [0.18183, 0.01116, -0.12488], 310.15)
    >>> round(isothermal_intersection(a, b).pH, 1)
    6.8
    """
    ds = cal_a.slope - cal_b.slope
    if abs(cal_a.T - cal_b.T) < 1.0 or ds == 0:
        raise InputError(
            "the calibrations must be at temperatures at least 1 K apart", field="T", value=(cal_a.T, cal_b.T)
        )
    dE = cal_a.E_pH7 - cal_b.E_pH7
    pH = 7.0 - dE / ds
    E = cal_a.E_pH7 + cal_a.slope * (pH - 7.0)
    # gradients with respect to (E7a, sa, E7b, sb)
    gp = np.array([-1 / ds, dE / ds**2, 1 / ds, -dE / ds**2])
    gE = np.array([1.0, 0.0, 0.0, 0.0]) + cal_a.slope * gp + np.array([0.0, pH - 7.0, 0.0, 0.0])
    C = np.zeros((4, 4))
    C[:2, :2] = cal_a.covariance
    C[2:, 2:] = cal_b.covariance
    notes = []
    if abs(cal_a.T - cal_b.T) < 10.0:
        notes.append("temperatures less than 10 K apart: the intersection is poorly determined")
    return IsothermalIntersection(
        float(pH), float(E), float(np.sqrt(gp @ C @ gp)), float(np.sqrt(gE @ C @ gE)), tuple(notes)
    )
