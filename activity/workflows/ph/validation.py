"""Validation of a pH meter: calibration, check buffers, drift, stability and samples.

A session is a list of readings in standard buffers, each with its temperature and,
optionally, its time and role ("calibration" or "check"):

* calibration readings (replicates of one buffer are averaged) fix the calibration
  (:func:`~.meter.calibrate_ph`);
* each check buffer read afterwards is converted to pH with the calibration and compared
  with its pH(S)(T): the normalised error E_n = (pH − pH(S)) / √(U(pH)² + U(pH(S))²) and the
  plain difference are judged;
* replicates of one buffer give the stability (pooled standard deviation, after removing
  a linear drift when times are given) and, with times, the drift (pooled slope of reading
  against time, V per hour);
* samples get their pH with a budget (:meth:`~.meter.PhCalibration.ph_with_uncertainty`).

Limits are :class:`~.criteria.Thresholds` (defaults: common practice).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from activity.errors import InputError

from .buffers import StandardBuffer, get_buffer
from .criteria import Thresholds, Verdict
from .junction import residual_junction
from .meter import DEFAULT_U_EMF, DEFAULT_U_T, PhCalibration, SamplePH, calibrate_ph

__all__ = ["CheckResult", "MeterValidation", "Thresholds", "residual_junction", "validate_meter"]

ROLES = ("calibration", "check")


@dataclass(frozen=True)
class CheckResult:
    """One check buffer measured after calibration."""

    buffer: str
    T: float
    emf: float
    pH: float
    U_pH: float
    pH_S: float
    U_pH_S: float
    difference: float
    En: float
    passed: bool


@dataclass(frozen=True, repr=False)
class MeterValidation:
    """Outcome of :func:`validate_meter`.

    Attributes
    ----------
    calibration : PhCalibration
    checks : tuple of CheckResult
    drift : float or None
        Pooled drift of repeated readings, V per hour (None without times or repeats).
    stability : float or None
        Pooled standard deviation of replicate readings, V (None without replicates).
    verdicts : tuple of Verdict
        The calibration's verdicts, then check buffers, drift and stability.
    samples : SamplePH or None
    sample_labels : tuple of str
    notes : tuple of str
    """

    calibration: PhCalibration
    checks: tuple
    drift: float | None
    stability: float | None
    verdicts: tuple
    samples: SamplePH | None
    sample_labels: tuple
    notes: tuple

    @property
    def passed(self) -> bool:
        """True when no verdict failed (verdicts not judged do not count)."""
        return all(v.passed is not False for v in self.verdicts)

    def __repr__(self) -> str:
        word = "passed" if self.passed else "FAILED"
        return f"MeterValidation({word}: {self.calibration!r}, {len(self.checks)} check buffer(s))"


def _drift_and_stability(keys: list, E: np.ndarray, t: np.ndarray | None) -> tuple[float | None, float | None, int]:
    groups = {}
    for i, k in enumerate(keys):
        groups.setdefault(k, []).append(i)
    reps = [np.array(ix) for ix in groups.values() if len(ix) >= 2]
    if not reps:
        return None, None, 0
    drift = None
    resid_groups = []
    if t is not None:
        sxy = sxx = 0.0
        for ix in reps:
            dt = t[ix] - t[ix].mean()
            sxy += float(np.sum(dt * (E[ix] - E[ix].mean())))
            sxx += float(np.sum(dt * dt))
        if sxx > 0:
            drift = sxy / sxx * 3600.0  # V/s → V/h
            for ix in reps:
                dt = t[ix] - t[ix].mean()
                resid_groups.append(E[ix] - E[ix].mean() - drift / 3600.0 * dt)
    if not resid_groups:
        resid_groups = [E[ix] - E[ix].mean() for ix in reps]
    ss = sum(float(np.sum(r * r)) for r in resid_groups)
    dof = sum(r.size - 1 for r in resid_groups) - (1 if drift is not None else 0)
    stability = float(np.sqrt(ss / dof)) if dof > 0 else None
    return drift, stability, sum(ix.size for ix in reps)


def _label_note(label: str, note: str) -> str:
    """Prefix the sample's label to notes that concern one sample."""
    if note.startswith(("residual liquid junction (Henderson)", "sample ionic strength")):
        return f"{label}: {note}"
    return note


def validate_meter(
    buffers: Sequence[str | StandardBuffer],
    emf: ArrayLike,
    T: ArrayLike,
    *,
    time: ArrayLike | None = None,
    roles: Sequence[str] | None = None,
    thresholds: Thresholds | Mapping[str, float] | None = None,
    u_emf: float = DEFAULT_U_EMF,
    method: str | None = None,
    samples_emf: ArrayLike | None = None,
    samples_T: ArrayLike | None = None,
    sample_labels: Sequence[str] | None = None,
    sample_compositions: Sequence[Any] | None = None,
    u_T: float = DEFAULT_U_T,
    buffer_table: Mapping[str, StandardBuffer] | None = None,
    uncertainty_method: str = "gum",
    seed: int | None = None,
) -> MeterValidation:
    """Calibrate and validate a pH meter from one session of buffer readings.

    Parameters
    ----------
    buffers : sequence of str
        Buffer of each reading (names or aliases, or user buffers in ``buffer_table``).
    emf : array_like
        Readings, V.
    T : array_like
        Temperature of each reading, K.
    time : array_like, optional
        Time of each reading, s (enables the drift verdict).
    roles : sequence of {'calibration', 'check'}, optional
        Default: every reading calibrates.
    thresholds : Thresholds or mapping, optional
    u_emf : float
        Standard uncertainty of one reading, V.
    method : str, optional
        Calibration method (default by the number of distinct calibration buffers).
    samples_emf, samples_T, sample_labels, sample_compositions : optional
        Sample readings (V), temperatures (K), labels and compositions (a Solution or None
        each) for the sample pH with its budget.

    Returns
    -------
    MeterValidation

    Examples
    --------
    >>> v = validate_meter(["KHP", "phosphate", "borax", "phosphate-1:3.5"],
    ...                    [0.1763, 0.0099, -0.1249, -0.0220], 298.15,
    ...                    roles=["calibration"] * 3 + ["check"])
    >>> v.passed, round(v.checks[0].pH, 3)
    (True, 7.412)
    """
    th = thresholds if isinstance(thresholds, Thresholds) else Thresholds.from_mapping(thresholds)
    names = list(buffers)
    n = len(names)
    E = np.atleast_1d(np.asarray(emf, dtype=float))
    if E.size != n:
        raise InputError(f"{n} buffers but {E.size} readings", field="emf", value=E.size)
    Ts = np.broadcast_to(np.atleast_1d(np.asarray(T, dtype=float)), (n,)).astype(float)
    role = ["calibration"] * n if roles is None else [str(r).strip().lower() for r in roles]
    if len(role) != n:
        raise InputError(f"{n} readings but {len(role)} roles", field="roles", value=len(role))
    for r in role:
        if r not in ROLES:
            raise InputError(f"one of {', '.join(ROLES)}", field="role", value=r)
    bufs = [get_buffer(b, buffer_table) for b in names]
    keys = [b.key for b in bufs]
    tt = None if time is None else np.broadcast_to(np.atleast_1d(np.asarray(time, dtype=float)), (n,)).astype(float)
    notes: list[str] = []
    # calibration: replicates of one buffer averaged
    cal_keys: list[str] = []
    for i in range(n):
        if role[i] == "calibration" and keys[i] not in cal_keys:
            cal_keys.append(keys[i])
    if not cal_keys:
        raise InputError("no calibration readings", field="role", value=None)
    cal_E, cal_T, cal_u = [], [], []
    for k in cal_keys:
        ix = [i for i in range(n) if keys[i] == k and role[i] == "calibration"]
        cal_E.append(float(np.mean(E[ix])))
        cal_T.append(float(np.mean(Ts[ix])))
        cal_u.append(u_emf)
        if len(ix) > 1:
            notes.append(f"{k}: {len(ix)} calibration readings averaged")
    cal_bufs = [next(b for b in bufs if b.key == k) for k in cal_keys]
    cal = calibrate_ph(cal_bufs, cal_E, cal_T, u_emf=cal_u, method=method, thresholds=th)
    verdicts = list(cal.verdicts)
    # check buffers
    checks = []
    for i in range(n):
        if role[i] != "check":
            continue
        ref = bufs[i].ph(Ts[i])
        res = cal.ph_with_uncertainty(E[i], Ts[i], u_emf=u_emf, u_T=u_T)
        U_s = 2.0 * ref.standard_uncertainty
        diff = float(res.pH - ref.value)
        En = diff / float(np.sqrt(res.expanded_uncertainty**2 + U_s**2))
        ok = abs(En) <= th.check_En_max and abs(diff) <= th.check_tolerance
        checks.append(
            CheckResult(
                bufs[i].key,
                float(Ts[i]),
                float(E[i]),
                float(res.pH),
                float(res.expanded_uncertainty),
                float(ref.value),
                U_s,
                diff,
                float(En),
                ok,
            )
        )
        verdicts.append(
            Verdict(
                f"check buffer {bufs[i].key}",
                ok,
                f"pH {res.pH:.3f} vs pH(S) {ref.value:.3f}: Δ = {diff:+.3f}, |E_n| = {abs(En):.2f} "
                f"(limits |E_n| ≤ {th.check_En_max:g}, |Δ| ≤ {th.check_tolerance:g})",
                th.basis("check_En_max"),
            )
        )
        if role[:i].count("check") == 0 and "calibration" in role[i + 1 :]:
            notes.append("a check buffer precedes some calibration readings")
    if not checks:
        notes.append("no check buffers: the calibration was not verified independently (IUPAC 2002 recommends one)")
    drift, stab, nrep = _drift_and_stability(keys, E, tt)
    if drift is None:
        why = "no times given" if tt is None else "no buffer read twice"
        verdicts.append(Verdict("drift", None, f"not judged ({why})", th.basis("drift_max")))
    else:
        verdicts.append(
            Verdict(
                "drift",
                abs(drift) <= th.drift_max,
                f"drift {drift * 1000:+.2f} mV/h over repeated readings (limit ±{th.drift_max * 1000:g} mV/h)",
                th.basis("drift_max"),
            )
        )
    if stab is None:
        verdicts.append(Verdict("stability", None, "not judged (no replicate readings)", th.basis("stability_max")))
    else:
        verdicts.append(
            Verdict(
                "stability",
                stab <= th.stability_max,
                f"replicate sd {stab * 1000:.2f} mV from {nrep} readings (limit {th.stability_max * 1000:g} mV)",
                th.basis("stability_max"),
            )
        )
    samples = None
    labels: tuple = ()
    if samples_emf is not None:
        sE = np.atleast_1d(np.asarray(samples_emf, dtype=float))
        sT = np.broadcast_to(
            np.atleast_1d(np.asarray(cal.T if samples_T is None else samples_T, dtype=float)), sE.shape
        ).astype(float)
        labels = tuple(sample_labels) if sample_labels is not None else tuple(f"sample {i + 1}" for i in range(sE.size))
        comps = list(sample_compositions) if sample_compositions is not None else [None] * sE.size
        if len(labels) != sE.size or len(comps) != sE.size:
            raise InputError("one label and one composition (or None) per sample", field="samples", value=sE.size)
        parts = [
            cal.ph_with_uncertainty(e, t, u_emf=u_emf, u_T=u_T, sample=c, method=uncertainty_method, seed=seed)
            for e, t, c in zip(sE, sT, comps)
        ]
        samples = SamplePH(
            np.array([p.pH for p in parts]),
            np.array([p.standard_uncertainty for p in parts]),
            np.array([p.expanded_uncertainty for p in parts]),
            parts[0].coverage,
            tuple(b for p in parts for b in p.budgets),
            parts[0].labels,
            tuple(p.junction[0] if p.junction else None for p in parts),
            np.array([bool(p.outside_bracket) for p in parts]),
            tuple(dict.fromkeys(_label_note(lab, nn) for lab, p in zip(labels, parts) for nn in p.notes)),
        )
    return MeterValidation(
        cal,
        tuple(checks),
        drift,
        stab,
        tuple(verdicts),
        samples,
        labels,
        tuple(dict.fromkeys(notes + list(cal.notes))),
    )
