"""Calibration of an ion-selective electrode from standards: the fit and what follows from it.

The response is the Nikolsky–Eisenman equation with a low-activity term (Buck & Lindner
1994, IUPAC recommendations on ion-selective electrodes)::

    E = E0 + S·lg(aᵢ + Σⱼ Kᵢⱼ·aⱼ^(zᵢ/zⱼ) + a₀)

with the activities of the standards from the chosen activity model. S = k·RT ln10/(zᵢF):
the fitted number is the fraction k of the Nernst slope, so standards at different
temperatures share one parameter; the slope is reported in V per decade at the mean
temperature of the standards. E0 is taken as independent of temperature over the
standards (noted).

The fit is a weighted non-linear least-squares fit (:func:`scipy.optimize.least_squares`,
analytic Jacobian). a₀ and the selectivity coefficients asked for with ``"fit"`` are fitted
on a log scale and kept only when the data determine them (standard uncertainty of the
lg below one decade and no near-perfect correlation with another parameter); otherwise they
are dropped and the notes say why. The parameter covariance is s²(JᵀWJ)⁻¹ with s² the
weighted residual variance (the scatter of the standards sets the uncertainty).

The detection limit is the IUPAC one (Buck & Lindner 1994): the activity at the intersection
of the extrapolated linear response E0 + S·lg aᵢ with the low-activity asymptote
E0 + S·lg(a₀ + Σⱼ Kᵢⱼ·aⱼ^(zᵢ/zⱼ)), i.e. a_DL = a₀ + Σⱼ Kᵢⱼ·aⱼ^(zᵢ/zⱼ) with the interferent
activities of the lowest standard's matrix. At a_DL the response lies S·lg 2 (17.8/zᵢ mV at
25 °C) above the extrapolated line.
"""

from __future__ import annotations

import warnings
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ...errors import ActivityWarning, InputError
from ...solution import Solution
from ...species import parse_species
from ._model import check_ion, finite, ion_terms, molarity_factor, nernst_slope_z
from .acceptance import Acceptance, Verdict

__all__ = ["ISECalibration", "calibrate_ise", "judge"]

SLOPE_MODES = ("free", "nernstian")
#: Largest standard uncertainty of a fitted lg a₀ or lg K for the term to be kept, decades
#: (design choice: beyond it the data say little more than "somewhere in this range").
MAX_U_LG = 1.0
#: Correlation beyond which two fitted parameters are taken as not separable (design choice).
MAX_CORRELATION = 0.999
#: Default deviation that bounds the linear range, V (common practice: the ±1 mV tolerance
#: of a reading).
LINEAR_DEVIATION = 1.0e-3
#: Largest |EMF| accepted, V: readings beyond it are millivolts given as volts.
MAX_EMF = 5.0


#: Version of the saved-calibration format written by :meth:`ISECalibration.to_dict` (format 1:
#: potentials in V; format 2: keys with their units, potentials in mV). Both are read.
FORMAT = 2
#: Internal name → (key in the saved file, factor from SI) for the fitted parameters,
#: the standards' columns and the acceptance thresholds.
_PARAM_JSON = {"E0": ("E0_mV", 1e3), "slope": ("slope_mV_per_decade", 1e3)}
_STD_JSON = {
    "label": ("label", 1.0),
    "molality": ("molality_mol_per_kg", 1.0),
    "molarity": ("molarity_mol_per_L", 1.0),
    "activity": ("activity", 1.0),
    "lg_activity": ("lg_activity", 1.0),
    "gamma": ("gamma", 1.0),
    "emf": ("emf_mV", 1e3),
    "fitted": ("fitted_mV", 1e3),
    "residual": ("residual_mV", 1e3),
    "T": ("T_K", 1.0),
}
_ACC_JSON = {
    "slope_min_percent": ("slope_min_percent", 1.0),
    "slope_max_percent": ("slope_max_percent", 1.0),
    "max_residual_sd": ("max_residual_sd_mV", 1e3),
    "max_detection_limit": ("max_detection_limit_activity", 1.0),
    "max_drift": ("max_drift_mV_per_h", 1e3 * 3600.0),
}


@dataclass(frozen=True, repr=False)
class ISECalibration:
    """A fitted ion-selective electrode calibration.

    Attributes
    ----------
    ion : str
        Primary ion (canonical name); ``z`` its charge.
    model : str
        Activity model of the standards (and of samples read with this calibration).
    slope_mode : {'free', 'nernstian'}
    E0 : float
        Electrode constant, V.
    slope : float
        S at the standards' mean temperature ``T``, V per decade of aᵢ.
    slope_factor : float
        k = S / (RT ln10 / zᵢF); ``slope_percent`` = 100 k.
    a0 : float
        Low-activity term a₀ (0 when not determined or not fitted).
    selectivity : dict
        Kᵢⱼ by interferent (fitted or given).
    parameters : tuple of str
        Names of the fitted parameters, in the order of ``covariance`` (``'E0'`` V,
        ``'slope'`` V/decade, ``'lg a0'``, ``'lg K(<ion>)'``).
    covariance : ndarray
        Covariance of the fitted parameters.
    residuals : ndarray
        E(measured) − E(fit) per standard, V.
    residual_sd : float
        sqrt(Σ r²/(n − p)), V; ``dof`` = n − p.
    detection_limit_activity : float
        IUPAC detection limit as activity (NaN when the data do not reach it).
    u_lg_detection_limit : float
        Standard uncertainty of lg a_DL.
    detection_limit_molality, detection_limit_molarity : float
        The same in the standards' matrix, mol/kg and mol/L.
    linear_range : tuple of float
        (low, high) activity of the range where the response is within
        ``linear_deviation`` of the line E0 + S·lg aᵢ, limited to the standards' range.
    verdicts : tuple of Verdict
    notes : tuple of str
    standards : dict
        Per standard: ``label``, ``molality``, ``activity``, ``lg_activity``, ``emf``,
        ``fitted``, ``T``, ``gamma`` (with speciation: free activity / total molality).
    speciation : dict or None
        Keyword arguments of :func:`activity.speciate` when the free-ion activities come
        from the speciation layer (``activity_basis`` says which, in words).
    """

    ion: str
    z: int
    model: str
    slope_mode: str
    E0: float
    slope: float
    slope_factor: float
    a0: float
    selectivity: dict
    T: float
    parameters: tuple
    covariance: NDArray[np.float64]
    residuals: NDArray[np.float64]
    residual_sd: float
    dof: int
    detection_limit_activity: float
    u_lg_detection_limit: float
    detection_limit_molality: float
    detection_limit_molarity: float
    linear_range: tuple
    linear_deviation: float
    verdicts: tuple
    notes: tuple
    standards: dict
    acceptance: Acceptance = field(default_factory=Acceptance)
    interference_at_limit: float = 0.0  # Σ K·a_j^(zi/zj) in the lowest standard's matrix
    fixed_selectivity: tuple = ()  # interferents whose K was given, not fitted
    standards_solution: Solution | None = None  # the standards as given (for refits by other models)
    fit_options: dict = field(default_factory=dict)  # slope, interferents, detection_term, weights
    speciation: dict | None = None  # keyword arguments of activity.speciate, or None (total ion × γ)

    @property
    def activity_basis(self) -> str:
        """How the activities of the standards (and of samples read) were found, in words."""
        if self.speciation is None:
            return "total ion × γ (no speciation)"
        opts = ", ".join(f"{k}={v!r}" for k, v in self.speciation.items())
        return "free ion from speciation" + (f" ({opts})" if opts else "")

    # ------------------------------------------------------------------ derived
    @property
    def slope_percent(self) -> float:
        """Slope as % of the Nernst slope at the standards' temperature."""
        return 100.0 * self.slope_factor

    @property
    def standard_errors(self) -> dict:
        """Standard uncertainty of each fitted parameter."""
        return dict(zip(self.parameters, np.sqrt(np.diag(self.covariance))))

    def confidence_intervals(self, p: float = 0.95) -> dict:
        """Student-t intervals of the fitted parameters (dof = n − p)."""
        from scipy import stats

        t = float(stats.t.ppf(0.5 + p / 2, max(self.dof, 1)))
        values = self.parameter_values()
        return {n: (values[n] - t * u, values[n] + t * u) for n, u in self.standard_errors.items()}

    def parameter_values(self) -> dict:
        """Current value of every fitted parameter (same names as ``parameters``)."""
        out = {"E0": self.E0, "slope": self.slope}
        if self.a0 > 0:
            out["lg a0"] = float(np.log10(self.a0))
        for j, k in self.selectivity.items():
            if k > 0:
                out[f"lg K({j})"] = float(np.log10(k))
        return {n: out[n] for n in self.parameters}

    @property
    def passed(self) -> bool | None:
        """False if any verdict failed, True if all judged ones passed."""
        judged = [v.passed for v in self.verdicts if v.passed is not None]
        return all(judged) if judged else None

    def slope_at(self, T: ArrayLike) -> NDArray[np.float64]:
        """Slope at temperature T, V per decade."""
        return self.slope_factor * nernst_slope_z(T, self.z)

    def emf_from_activity(self, a_primary: ArrayLike, interference: ArrayLike = 0.0, T: ArrayLike | None = None) -> Any:
        """Fitted response for activities (interference = Σ K·aⱼ^(zᵢ/zⱼ)), V."""
        T = self.T if T is None else T
        total = np.asarray(a_primary, float) + np.asarray(interference, float) + self.a0
        out = self.E0 + self.slope_at(T) * np.log10(total)
        return float(out) if np.ndim(out) == 0 else out

    # ------------------------------------------------------------------ unknowns
    def read(self, emf: ArrayLike, matrix: Solution, *, counter_ion: str | None = None) -> Any:
        """Read samples: molality, mol/L, mg/L, activity and flags (see :func:`read_samples`)."""
        from .unknowns import read_samples

        return read_samples(self, emf, matrix, counter_ion=counter_ion)

    def molality(self, emf: ArrayLike, matrix: Solution, *, counter_ion: str | None = None) -> Any:
        """Molality of the primary ion in ``matrix`` from its reading(s), mol/kg.

        Parameters
        ----------
        emf : array_like
            Reading(s), V (scalar or array broadcasting with the matrix batch).
        matrix : Solution
            The sample without the primary ion (background, interferents, T).
        counter_ion : str, optional
            Added with the primary ion in the electroneutral amount (e.g. 'Cl-').
        """
        return self.read(emf, matrix, counter_ion=counter_ion).molality

    def molality_with_uncertainty(
        self, emf: ArrayLike, matrix: Solution, *, u_emf: float | None = None, method: str = "gum", **options: Any
    ) -> Any:
        """Molality with its uncertainty; see :func:`activity.workflows.ise.unknowns.read_with_uncertainty`."""
        from .unknowns import read_with_uncertainty

        return read_with_uncertainty(self, emf, matrix, u_emf=u_emf, method=method, **options)

    # ------------------------------------------------------------------ I/O forms
    def to_dict(self) -> dict:
        """Plain data (JSON-ready) from which :meth:`from_dict` rebuilds the calibration.

        Format 2: every key names its unit (``E0_mV``, ``slope_mV_per_decade``, ``T_K``,
        ``molality_mol_per_kg`` …); potentials in mV as the reports show them; activities,
        γ, K and lg values carry no unit. The covariance is in the units of ``parameters``
        (``E0_mV``, ``slope_mV_per_decade``, ``lg a0``, ``lg K(<ion>)``).
        """
        scale = np.array([_PARAM_JSON.get(p, (p, 1.0))[1] for p in self.parameters])
        acc = self.acceptance.to_dict()
        return {
            "kind": "activity ISE calibration",
            "format": FORMAT,
            "ion": self.ion,
            "model": self.model,
            "slope_mode": self.slope_mode,
            "speciation": None if self.speciation is None else dict(self.speciation),
            "E0_mV": 1e3 * self.E0,
            "slope_mV_per_decade": 1e3 * self.slope,
            "slope_percent": self.slope_percent,
            "T_K": self.T,
            "a0": self.a0,
            "selectivity": dict(self.selectivity),
            "fixed_selectivity": list(self.fixed_selectivity),
            "parameters": [_PARAM_JSON.get(p, (p, 1.0))[0] for p in self.parameters],
            "covariance": (np.asarray(self.covariance) * np.outer(scale, scale)).tolist(),
            "residual_sd_mV": 1e3 * self.residual_sd,
            "dof": self.dof,
            "detection_limit": {
                "activity": self.detection_limit_activity,
                "u_lg_activity": self.u_lg_detection_limit,
                "molality_mol_per_kg": self.detection_limit_molality,
                "molarity_mol_per_L": self.detection_limit_molarity,
                "interference_activity": self.interference_at_limit,
            },
            "linear_range_activity": list(self.linear_range),
            "linear_deviation_mV": 1e3 * self.linear_deviation,
            "acceptance": {
                _ACC_JSON[k][0]: (None if v is None else v * _ACC_JSON[k][1]) for k, v in acc.items() if k in _ACC_JSON
            }
            | {"user_set": [_ACC_JSON[k][0] for k in acc["user_set"]]},
            "verdicts": [v.to_dict() for v in self.verdicts],
            "notes": list(self.notes),
            "fit_options": {
                k if k != "linear_deviation" else "linear_deviation_mV": (v if k != "linear_deviation" else 1e3 * v)
                for k, v in self.fit_options.items()
            },
            "composition": None
            if self.standards_solution is None
            else {
                "molality_mol_per_kg": {
                    k: np.asarray(v).tolist() for k, v in self.standards_solution.molalities.items()
                },
                "T_K": np.broadcast_to(self.standards_solution.T_compact, self.standards_solution.shape).tolist(),
            },
            "standards": [
                {
                    _STD_JSON[key][0]: (
                        vals[i] if isinstance(vals, (list, tuple)) else float(vals[i]) * _STD_JSON[key][1]
                    )
                    for key, vals in self.standards.items()
                    if key in _STD_JSON
                }
                for i in range(len(self.residuals))
            ],
        }

    @classmethod
    def from_dict(cls, d: Mapping[str, Any]) -> ISECalibration:
        """Rebuild a calibration saved with :meth:`to_dict` (format 2, or format 1 of earlier
        versions, potentials in V and other key names). InputError names a missing key."""
        if not isinstance(d, Mapping) or d.get("kind") != "activity ISE calibration":
            raise InputError(
                "not a saved ISE calibration (missing kind = 'activity ISE calibration')",
                field="calibration",
                value=None,
            )
        fmt_ = d.get("format", 1)
        if fmt_ not in (1, 2):
            raise InputError(
                f"saved calibration format {fmt_!r} is not known to this version (reads 1 and {FORMAT})",
                field="calibration.format",
                value=fmt_,
            )
        try:
            return cls._from_v2(d) if fmt_ == 2 else cls._from_v1(d)
        except KeyError as exc:
            raise InputError("saved calibration lacks a key", field="calibration", value=str(exc.args[0])) from None
        except (TypeError, ValueError, AttributeError) as exc:
            if isinstance(exc, InputError):
                raise
            raise InputError(
                f"saved calibration has a malformed value ({exc})", field="calibration", value=None
            ) from None

    @classmethod
    def _from_v2(cls, d: Mapping[str, Any]) -> ISECalibration:
        """Format 2 → the format-1 layout (SI, the old key names), read by :meth:`_from_v1`."""
        back_std = {v[0]: (k, v[1]) for k, v in _STD_JSON.items()}
        back_par = {v[0]: (k, v[1]) for k, v in _PARAM_JSON.items()}
        back_acc = {v[0]: (k, v[1]) for k, v in _ACC_JSON.items()}
        names = list(d["parameters"])
        scale = np.array([back_par.get(p, (p, 1.0))[1] for p in names])
        dl = d["detection_limit"]
        acc = dict(d.get("acceptance", {}))
        comp = d.get("composition")
        opts = dict(d.get("fit_options", {}))
        if "linear_deviation_mV" in opts:
            opts["linear_deviation"] = 1e-3 * float(opts.pop("linear_deviation_mV"))
        v1 = {
            "kind": d["kind"],
            "ion": d["ion"],
            "model": d["model"],
            "slope_mode": d["slope_mode"],
            "speciation": d.get("speciation"),
            "E0_V": 1e-3 * float(d["E0_mV"]),
            "slope_V_per_decade": 1e-3 * float(d["slope_mV_per_decade"]),
            "T_K": d["T_K"],
            "a0": d["a0"],
            "selectivity": d["selectivity"],
            "fixed_selectivity": d.get("fixed_selectivity", []),
            "parameters": [back_par.get(p, (p, 1.0))[0] for p in names],
            "covariance": (
                np.asarray(d["covariance"], float).reshape(len(names), len(names)) / np.outer(scale, scale)
            ).tolist(),
            "residual_sd_V": 1e-3 * float(d["residual_sd_mV"]),
            "dof": d["dof"],
            "detection_limit": {
                "activity": dl["activity"],
                "u_lg": dl["u_lg_activity"],
                "mol/kg": dl["molality_mol_per_kg"],
                "mol/L": dl["molarity_mol_per_L"],
                "interference_part": dl.get("interference_activity", 0.0),
            },
            "linear_range_activity": d["linear_range_activity"],
            "linear_deviation_V": 1e-3 * float(d["linear_deviation_mV"]),
            "acceptance": {
                back_acc[k][0]: (None if v is None else float(v) / back_acc[k][1])
                for k, v in acc.items()
                if k in back_acc
            }
            | {"user_set": [back_acc[k][0] for k in acc.get("user_set", []) if k in back_acc]},
            "verdicts": d.get("verdicts", []),
            "notes": d.get("notes", []),
            "fit_options": opts,
            "composition": None if not comp else {"molality": comp["molality_mol_per_kg"], "T_K": comp["T_K"]},
            "standards": [
                {
                    back_std[k][0]: (v if back_std[k][0] == "label" else float(v) / back_std[k][1])
                    for k, v in row.items()
                    if k in back_std
                }
                for row in d.get("standards", [])
            ],
        }
        return cls._from_v1(v1)

    @classmethod
    def _from_v1(cls, d: Mapping[str, Any]) -> ISECalibration:
        ion, z = check_ion(d["ion"], "calibration.ion")
        acc = d.get("acceptance", {})
        acceptance = Acceptance.from_mapping({k: v for k, v in acc.items() if k in set(acc.get("user_set", []))})
        std_rows = d.get("standards", [])
        keys = list(std_rows[0]) if std_rows else []
        standards = {
            k: ([r[k] for r in std_rows] if k == "label" else np.array([r[k] for r in std_rows], float)) for k in keys
        }
        dl = d["detection_limit"]
        slope = float(d["slope_V_per_decade"])
        T = float(d["T_K"])
        verdicts = tuple(
            Verdict(v["criterion"], v["passed"], v["value"], v["threshold"], v["basis"]) for v in d.get("verdicts", [])
        )
        comp = d.get("composition")
        sol = None if not comp else Solution(comp["molality"], T=comp["T_K"], neutrality="ignore")
        return cls(
            standards_solution=sol,
            fit_options=dict(d.get("fit_options", {})),
            ion=ion,
            z=z,
            model=str(d["model"]),
            slope_mode=str(d["slope_mode"]),
            E0=float(d["E0_V"]),
            slope=slope,
            slope_factor=slope / float(nernst_slope_z(T, z)),
            a0=float(d["a0"]),
            selectivity={parse_species(k).name: float(v) for k, v in d["selectivity"].items()},
            T=T,
            parameters=tuple(d["parameters"]),
            covariance=np.array(d["covariance"], float).reshape(len(d["parameters"]), len(d["parameters"])),
            residuals=np.array(standards.get("residual", []), float),
            residual_sd=float(d["residual_sd_V"]),
            dof=int(d["dof"]),
            detection_limit_activity=_num(dl["activity"]),
            u_lg_detection_limit=_num(dl["u_lg"]),
            detection_limit_molality=_num(dl["mol/kg"]),
            detection_limit_molarity=_num(dl["mol/L"]),
            linear_range=tuple(float(x) for x in d["linear_range_activity"]),
            linear_deviation=float(d["linear_deviation_V"]),
            verdicts=verdicts,
            notes=tuple(d.get("notes", ())),
            standards=standards,
            acceptance=acceptance,
            interference_at_limit=float(dl.get("interference_part", 0.0)),
            fixed_selectivity=tuple(d.get("fixed_selectivity", ())),
            speciation=None if d.get("speciation") is None else dict(d["speciation"]),
        )

    def refit(self, model: Any) -> ISECalibration:
        """The same standards and options fitted with another activity model."""
        if self.standards_solution is None:
            raise InputError(
                "this calibration carries no standards composition to refit", field="calibration", value=None
            )
        o = self.fit_options
        return calibrate_ise(
            self.standards_solution,
            self.standards["emf"],
            self.ion,
            model=model,
            slope=o["slope"],
            interferents=o.get("interferents") or None,
            weights=o.get("weights"),
            detection_term=o.get("detection_term", "auto"),
            acceptance=self.acceptance,
            linear_deviation=o.get("linear_deviation", LINEAR_DEVIATION),
            labels=o.get("labels"),
            speciation=self.speciation,
        )

    def with_drift(self, drift: Any) -> ISECalibration:
        """A copy whose drift verdict is judged from a :class:`~activity.workflows.ise.drift.DriftResult`."""
        return replace(self, verdicts=judge(self, self.acceptance, drift))

    def summary(self) -> str:
        """Plain-text summary (the report module formats the full tables)."""
        from .report import calibration_text

        return calibration_text(self)

    def __repr__(self) -> str:
        return (
            f"ISECalibration({self.ion}, E0={1000 * self.E0:.2f} mV, slope={1000 * self.slope:.2f} mV/decade "
            f"({self.slope_percent:.1f} %), a0={self.a0:.3g}, detection limit={self.detection_limit_activity:.3g}, "
            f"residual sd={1000 * self.residual_sd:.3g} mV, model={self.model!r})"
        )


def _num(x: Any) -> float:
    return float("nan") if x is None else float(x)


# ---------------------------------------------------------------------- inputs
def _interferent_spec(interferents: Any, ion: str, z: int) -> tuple[dict, list]:
    """Interferent name → fixed K (float) or 'fit'; returns (fixed, to_fit)."""
    fixed: dict[str, float] = {}
    to_fit: list[str] = []
    if interferents is None:
        return fixed, to_fit
    if isinstance(interferents, str) or not isinstance(interferents, Mapping):
        raise InputError(
            "give interferents as a mapping ion → K (a number) or 'fit'", field="interferents", value=interferents
        )
    for raw, value in interferents.items():
        sp = parse_species(raw)
        if sp.name == ion or not sp.is_ion or np.sign(sp.charge) != np.sign(z):
            raise InputError(
                "an interferent must be another ion of the primary ion's sign", field="interferents", value=raw
            )
        if isinstance(value, str):
            if value.strip().lower() != "fit":
                raise InputError(
                    "a selectivity coefficient is a number or 'fit'", field=f"interferents[{raw!r}]", value=value
                )
            to_fit.append(sp.name)
            continue
        if value is None:
            raise InputError(
                "interferent without a selectivity coefficient: give K (a number) or 'fit'",
                field=f"interferents[{raw!r}]",
                value=None,
            )
        k = float(finite(value, f"interferents[{raw!r}]"))
        if k < 0:
            raise InputError("must not be negative", field=f"interferents[{raw!r}]", value=k)
        fixed[sp.name] = k
    return fixed, to_fit


@dataclass
class _Data:
    """Arrays of the standards, shared by the fit's residual and Jacobian."""

    E: NDArray[np.float64]
    w: NDArray[np.float64]  # weights normalised to mean 1
    s: NDArray[np.float64]  # Nernst slope per standard, V/decade
    ai: NDArray[np.float64]
    fixed_interference: NDArray[np.float64]
    fit_terms: dict  # name → aⱼ^(zᵢ/zⱼ)


class _Problem:
    """Parameter vector ↔ named parameters, model and Jacobian for one choice of free terms."""

    def __init__(self, data: _Data, free_slope: bool, fit_a0: bool, fit_k: Sequence[str], a0_fixed: float):
        self.d = data
        self.free_slope, self.fit_a0, self.fit_k, self.a0_fixed = free_slope, fit_a0, list(fit_k), a0_fixed
        self.names = (
            ["E0"] + (["k"] if free_slope else []) + (["lg a0"] if fit_a0 else []) + [f"lg K({j})" for j in self.fit_k]
        )

    def unpack(self, p: NDArray[np.float64]) -> tuple[float, float, float, dict]:
        it = iter(p)
        E0 = next(it)
        k = next(it) if self.free_slope else 1.0
        a0 = 10.0 ** next(it) if self.fit_a0 else self.a0_fixed
        K = {j: 10.0 ** next(it) for j in self.fit_k}
        return E0, k, a0, K

    def total(self, a0: float, K: Mapping[str, float]) -> NDArray[np.float64]:
        t = self.d.ai + self.d.fixed_interference + a0
        for j, kj in K.items():
            t = t + kj * self.d.fit_terms[j]
        return t

    def model(self, p: NDArray[np.float64]) -> NDArray[np.float64]:
        E0, k, a0, K = self.unpack(p)
        return E0 + k * self.d.s * np.log10(self.total(a0, K))

    def residual(self, p: NDArray[np.float64]) -> NDArray[np.float64]:
        return np.sqrt(self.d.w) * (self.model(p) - self.d.E)

    def jacobian(self, p: NDArray[np.float64]) -> NDArray[np.float64]:
        _E0, k, a0, K = self.unpack(p)
        t = self.total(a0, K)
        cols = [np.ones_like(t)]
        if self.free_slope:
            cols.append(self.d.s * np.log10(t))
        if self.fit_a0:
            cols.append(k * self.d.s * a0 / t)  # d/d lg a0 = k s a0 ln10 / (t ln10)
        for j in self.fit_k:
            cols.append(k * self.d.s * K[j] * self.d.fit_terms[j] / t)
        return np.sqrt(self.d.w)[:, None] * np.stack(cols, axis=1)


def _linear_start(d: _Data, free_slope: bool) -> tuple[float, float]:
    """E0 and k from a straight line through the upper half of the standards."""
    order = np.argsort(d.ai)
    top = order[len(order) // 2 - (1 if len(order) % 2 == 0 else 0) :] if len(order) > 2 else order
    x = d.s[top] * np.log10(d.ai[top])
    y = d.E[top]
    if free_slope and len(top) >= 2 and np.ptp(x) > 0:
        k, E0 = np.polyfit(x, y, 1)
        return float(E0), float(k)
    return float(np.mean(y - x)), 1.0


def _solve(prob: _Problem, starts: Sequence[NDArray[np.float64]], lower: NDArray, upper: NDArray):
    from scipy.optimize import least_squares

    # optimise from the best point of the start grid (a grid point is cheap, a fit is not)
    starts = [np.clip(x0, lower + 1e-9, upper - 1e-9) for x0 in starts]
    with np.errstate(all="ignore"):
        costs = [float(np.sum(prob.residual(x0) ** 2)) for x0 in starts]
        x0 = starts[int(np.nanargmin(costs))]
        return least_squares(
            prob.residual,
            x0,
            jac=prob.jacobian,
            bounds=(lower, upper),
            method="trf",
            x_scale="jac",
            xtol=1e-12,
            ftol=1e-12,
            gtol=1e-12,
            max_nfev=2000,
        )


def _fit(d: _Data, free_slope: bool, fit_a0: bool, fit_k: list, a0_fixed: float):
    prob = _Problem(d, free_slope, fit_a0, fit_k, a0_fixed)
    E0s, k0 = _linear_start(d, free_slope)
    lg_lo = float(np.log10(d.ai.min()))
    lower = [-np.inf] + ([0.01] if free_slope else [])
    upper = [np.inf] + ([5.0] if free_slope else [])
    base = [E0s] + ([k0] if free_slope else [])
    grids: list[list[float]] = [[]]
    if fit_a0:
        lower.append(lg_lo - 8.0)
        upper.append(float(np.log10(d.ai.max())) + 1.0)
        grids = [g + [v] for g in grids for v in (lg_lo - 2.0, lg_lo, lg_lo + 1.0)]
    for _ in fit_k:
        lower.append(-12.0)
        upper.append(4.0)
        grids = [g + [v] for g in grids for v in (-4.0, -1.5)]
    starts = [np.array(base + g, float) for g in grids]
    res = _solve(prob, starts, np.array(lower), np.array(upper))
    n, p = len(d.E), len(prob.names)
    J = res.jac
    s2 = float(np.sum(res.fun**2)) / max(n - p, 1)
    JtJ = J.T @ J
    cov = s2 * np.linalg.pinv(JtJ, rcond=1e-13)
    at_bound = (np.abs(res.x - np.array(lower)) < 1e-6) | (np.abs(res.x - np.array(upper)) < 1e-6)
    return prob, res, cov, at_bound


def _undetermined(prob: _Problem, x: NDArray, cov: NDArray, at_bound: NDArray) -> tuple[str, str] | None:
    """The optional parameter least determined by the data, with the reason, or None."""
    u = np.sqrt(np.maximum(np.diag(cov), 0.0))
    with np.errstate(all="ignore"):
        corr = cov / np.outer(u, u)
    worst = None
    for i, name in enumerate(prob.names):
        if not name.startswith("lg "):
            continue
        reason = None
        if at_bound[i]:
            reason = "the fit ran to the bound of its range"
        elif not np.isfinite(u[i]) or u[i] > MAX_U_LG:
            reason = f"u(lg) = {u[i]:.2g} decades > {MAX_U_LG:g}"
        else:
            others = [abs(corr[i, j]) for j in range(len(u)) if j != i and prob.names[j].startswith("lg ")]
            if others and max(others) > MAX_CORRELATION:
                reason = f"correlation {max(others):.4f} with another term: the data cannot separate them"
        if reason is not None:
            score = np.inf if at_bound[i] or not np.isfinite(u[i]) else u[i]
            if worst is None or score > worst[0]:
                worst = (score, name, reason)
    return None if worst is None else (worst[1], worst[2])


def _monotonic_note(ai: NDArray, E: NDArray, z: int, labels: Sequence[str]) -> str | None:
    order = np.argsort(ai)
    step = np.diff(E[order]) * np.sign(z)
    bad = np.flatnonzero(step <= 0)
    if bad.size == 0:
        return None
    pairs = ", ".join(f"{labels[order[b]]} → {labels[order[b + 1]]}" for b in bad[:5])
    return (
        f"readings are not monotonic in the primary-ion activity ({pairs}): check the standards and the "
        f"electrode; the fit uses them as given"
    )


def calibrate_ise(
    standards: Solution,
    emf: ArrayLike,
    ion: str,
    *,
    model: Any = "davies",
    slope: str = "free",
    interferents: Mapping[str, Any] | None = None,
    weights: ArrayLike | None = None,
    detection_term: Any = "auto",
    acceptance: Acceptance | Mapping[str, Any] | None = None,
    linear_deviation: float = LINEAR_DEVIATION,
    labels: Sequence[str] | None = None,
    drift: Any = None,
    speciation: Mapping[str, Any] | None = None,
) -> ISECalibration:
    """Fit an ion-selective electrode calibration to standards.

    Parameters
    ----------
    standards : Solution
        A batch of n standards (primary ion, background, interferents; T per standard
        allowed), on the molal scale (build it with :meth:`Solution.from_molarity` for mol/L).
    emf : array_like, shape (n,)
        Readings, V (EMF of the cell, any fixed reference).
    ion : str
        Primary ion, e.g. ``'Ca^2+'``.
    model : str or ActivityModel, default 'davies'
        Activity model for the standards.
    slope : {'free', 'nernstian'}
        Fit the slope, or fix it at the Nernst slope at each standard's temperature.
    interferents : Mapping[str, float or 'fit'], optional
        Selectivity coefficients Kᵢⱼ: a number (held fixed) or ``'fit'``. An interferent
        whose activity is constant over the standards cannot be told apart from a₀ (noted).
    weights : array_like, shape (n,), optional
        Relative weights of the standards (e.g. 1/u² of each reading).
    detection_term : 'auto', 'fit', or float
        a₀: fitted when the data determine it ('auto', default), always fitted ('fit'; the
        notes say when it is undetermined), or held at a given activity (0 for none).
    acceptance : Acceptance or Mapping, optional
        Thresholds of the verdicts (defaults are common practice; see :class:`Acceptance`).
    linear_deviation : float, default 1e-3
        Deviation from the fitted line (V) that bounds the linear range (common practice).
    labels : sequence of str, optional
        Names of the standards (for notes and reports).
    drift : DriftResult, optional
        A bracketing check (:func:`activity.workflows.ise.drift.drift_check`) for the drift verdict.
    speciation : Mapping, optional
        Keyword arguments of :func:`activity.speciate` (``{}`` for its defaults): the activity
        of the free ion after speciation is used, for a matrix that complexes or pairs the
        ion (Ca²⁺ with sulfate or citrate); samples read with this calibration are speciated
        the same way. Default: the total ion × γ.

    Returns
    -------
    ISECalibration

    Examples
    --------
    >>> import numpy as np
    >>> from activity import Solution
    >>> c = np.array([1e-5, 1e-4, 1e-3, 1e-2, 1e-1])
    >>> std = Solution({"Ca^2+": c, "K+": 0.1, "Cl-": 0.1 + 2 * c})
    >>> emf = [-0.2120, -0.1847, -0.1565, -0.1285, -0.1010]
    >>> import warnings; warnings.simplefilter("ignore")   # Davies is stretched by the 0.1 mol/L standard
    >>> cal = calibrate_ise(std, emf, "Ca^2+")
    >>> round(cal.slope * 1000, 1), round(cal.slope_percent)
    (29.1, 98)
    >>> cal.verdicts[0].criterion, cal.verdicts[0].word
    ('slope window', 'pass')
    """
    ion, z = check_ion(ion)
    if not isinstance(standards, Solution):
        raise InputError(
            "expected an activity.Solution batch of the standards", field="standards", value=type(standards).__name__
        )
    if slope not in SLOPE_MODES:
        raise InputError(f"must be one of {SLOPE_MODES}", field="slope", value=slope)
    if ion not in standards.species:
        raise InputError(
            f"the standards do not contain the primary ion (species: {', '.join(standards.species)})",
            field="ion",
            value=ion,
        )
    n = standards.size
    if standards.shape != (n,):
        raise InputError(
            "give the standards as a 1-D batch (one row per standard)", field="standards", value=standards.shape
        )
    E = finite(emf, "emf").reshape(-1)
    if E.size != n:
        raise InputError(f"needs one reading per standard ({n})", field="emf", value=E.size)
    if np.max(np.abs(E)) > MAX_EMF:
        raise InputError(
            f"readings up to {np.max(np.abs(E)):g} look like millivolts: EMFs are in volts here",
            field="emf",
            value=float(np.max(np.abs(E))),
        )
    labels = [str(x) for x in labels] if labels is not None else [f"standard {i + 1}" for i in range(n)]
    if len(labels) != n:
        raise InputError(f"needs one label per standard ({n})", field="labels", value=len(labels))
    if weights is None:
        w = np.ones(n)
    else:
        w = finite(weights, "weights", positive=True).reshape(-1)
        if w.size != n:
            raise InputError(f"needs one weight per standard ({n})", field="weights", value=w.size)
        w = w / w.mean()
    acc = acceptance if isinstance(acceptance, Acceptance) else Acceptance.from_mapping(acceptance)
    lin_dev = float(finite(linear_deviation, "linear_deviation", positive=True))
    fixed_K, fit_K = _interferent_spec(interferents, ion, z)

    if speciation is not None and not isinstance(speciation, Mapping):
        raise InputError(
            "give the keyword arguments of activity.speciate as a mapping ({} for its defaults)",
            field="speciation",
            value=speciation,
        )
    terms = ion_terms(standards, ion, z, list(fixed_K) + fit_K, model, None if speciation is None else dict(speciation))
    ai = np.asarray(terms.a_primary, float)
    if np.any(ai <= 0):
        raise InputError(
            "every standard needs the primary ion at a positive amount",
            field="standards",
            value=labels[int(np.flatnonzero(ai <= 0)[0])],
        )
    T = np.broadcast_to(np.asarray(standards.T_compact, float), (n,))
    s = nernst_slope_z(T, z)
    notes: list[str] = list(dict.fromkeys(terms.notes))
    absent = [j for j in list(fixed_K) + fit_K if j not in terms.interferents]
    for j in absent:
        notes.append(
            f"interferent {j} is not in the standards (activity 0): "
            + ("its K cannot be fitted from them and is left out" if j in fit_K else "its K has no effect here")
        )
    fit_K = [j for j in fit_K if j in terms.interferents]
    fixed_part = terms.interference(fixed_K)
    fit_terms = {j: (terms.interferents[j][0] ** terms.interferents[j][1]) for j in fit_K}
    d = _Data(E, w, s, ai, fixed_part, fit_terms)

    free_slope = slope == "free"
    n_required = 1 + int(free_slope)
    if n < n_required + 1:
        raise InputError(
            f"{n} standard(s) for {n_required} free parameter(s): need at least {n_required + 1} "
            f"(one more than the parameters, for a residual standard deviation)",
            field="emf",
            value=n,
        )
    if isinstance(detection_term, str):
        if detection_term not in ("auto", "fit"):
            raise InputError("must be 'auto', 'fit' or an activity", field="detection_term", value=detection_term)
        fit_a0, a0_fixed = True, 0.0
    else:
        a0_fixed = float(finite(detection_term, "detection_term"))
        if a0_fixed < 0:
            raise InputError("must not be negative", field="detection_term", value=a0_fixed)
        fit_a0 = False

    # unit sanity: a line through the upper standards with < 5 % of the Nernst slope
    span = float(np.log10(ai.max() / ai.min()))
    if span >= 1.0:
        _E0s, k0 = _linear_start(d, True)
        if abs(k0) < 0.05:
            raise InputError(
                f"the readings change by only {1000 * np.ptp(E):.3g} mV over {span:.1f} decades "
                f"({100 * k0:.2g} % of the Nernst slope): volts given as millivolts, or an electrode "
                f"that does not respond",
                field="emf",
                value=float(np.ptp(E)),
            )
    mono = _monotonic_note(ai, E, z, labels)
    if mono:
        warnings.warn(mono, ActivityWarning, stacklevel=2)
        notes.append(mono)

    # drop optional terms that the number of standards cannot carry
    optional = (["lg a0"] if fit_a0 else []) + [f"lg K({j})" for j in fit_K]
    while optional and n - (n_required + len(optional)) < 1:
        dropped = optional.pop()
        notes.append(f"{dropped[3:]} not fitted: {n} standards leave no degree of freedom for it")
    fit_a0 = "lg a0" in optional
    fit_K = [j for j in fit_K if f"lg K({j})" in optional]

    while True:
        prob, res, cov, at_bound = _fit(d, free_slope, fit_a0, fit_K, a0_fixed)
        bad = _undetermined(prob, res.x, cov, at_bound)
        if bad is None:
            break
        name, reason = bad
        if name == "lg a0":
            fit_a0 = False
            if detection_term == "fit" or detection_term == "auto":
                notes.append(
                    f"a0 not determined by these standards ({reason}): the response shows no low-activity "
                    f"curvature; a0 set to 0 and the detection limit lies below the lowest standard"
                )
        else:
            j = name[5:-1]
            fit_K.remove(j)
            notes.append(
                f"K({j}) not determined by these standards ({reason}); left out — measure it by a "
                f"selectivity method (SSM, FIM, MPM) and give it as a number"
            )
    if not res.success:
        notes.append(f"the least-squares fit stopped without converging: {res.message}")
    E0, k, a0, Kfit = prob.unpack(res.x)
    K = dict(fixed_K)
    K.update(Kfit)
    T_mean = float(np.mean(T))
    s_cal = float(nernst_slope_z(T_mean, z))
    # covariance in the reported parameters: slope = k·s_cal
    names = ["E0"] + (["slope"] if free_slope else []) + (["lg a0"] if fit_a0 else []) + [f"lg K({j})" for j in fit_K]
    scale = np.array([s_cal if nm == "k" else 1.0 for nm in prob.names])
    cov_r = cov * np.outer(scale, scale)
    fitted = prob.model(res.x)
    resid = E - fitted
    dof = n - len(names)
    rsd = float(np.sqrt(np.sum(resid**2) / dof))
    if np.ptp(T) > 0.5:
        notes.append(
            f"standards at {T.min():.2f}–{T.max():.2f} K: one slope fraction k and a temperature-independent "
            f"E0 are fitted; the slope is reported at the mean temperature {T_mean:.2f} K"
        )

    # detection limit (IUPAC intersection) in the lowest standard's matrix
    low = int(np.argmin(ai))
    interf_low = float(fixed_part[low] + sum(Kfit[j] * fit_terms[j][low] for j in fit_K))
    a_dl = a0 + interf_low
    grad = np.zeros(len(names))
    for idx, nm in enumerate(names):
        if nm == "lg a0":
            grad[idx] = a0 / a_dl if a_dl > 0 else 0.0
        elif nm.startswith("lg K("):
            j = nm[5:-1]
            grad[idx] = Kfit[j] * fit_terms[j][low] / a_dl if a_dl > 0 else 0.0
    u_lg_dl = float(np.sqrt(max(grad @ cov_r @ grad, 0.0))) if a_dl > 0 else float("nan")
    factor, vnotes = molarity_factor(standards)
    notes += list(vnotes)
    gamma_low = float(terms.gamma_primary[low])
    if a_dl > 0:
        m_dl = a_dl / gamma_low
        c_dl = m_dl * float(factor[low])
        if a_dl < 1e-3 * ai.min():
            notes.append(
                f"the detection limit lies {np.log10(ai.min() / a_dl):.1f} decades below the lowest "
                f"standard: extrapolated, not measured"
            )
    else:
        m_dl = c_dl = float("nan")
        a_dl = float("nan")
        notes.append(
            f"detection limit not reached by the standards: below the lowest standard's activity {ai.min():.3g}"
        )
    # linear range: where the response lies within lin_dev of the line E0 + S lg a
    S_abs = abs(k * s_cal)
    total_low = a0 + interf_low
    raw_low = total_low / (10.0 ** (lin_dev / S_abs) - 1.0) if total_low > 0 else 0.0
    lin_range = (float(max(raw_low, ai.min())), float(ai.max()))
    if raw_low > ai.max():
        notes.append("no standard lies in the linear range: the whole series is curved")
    notes.append(f"linear range: response within {1000 * lin_dev:g} mV of the fitted line (common practice)")
    if terms.in_range is not None and not np.all(terms.in_range):
        notes.append(f"some standards lie outside the validity of the {terms.model} model")
    gam = np.asarray(terms.gamma_primary, float)
    std_table = {
        "label": labels,
        "molality": np.asarray(standards.m[standards.index(ion)], float).copy(),
        "molarity": np.asarray(standards.m[standards.index(ion)] * factor, float),
        "activity": ai,
        "lg_activity": np.log10(ai),
        "gamma": gam,
        "emf": E,
        "fitted": fitted,
        "residual": resid,
        "T": T.copy(),
    }
    cal = ISECalibration(
        ion=ion,
        z=z,
        model=terms.model,
        slope_mode=slope,
        E0=float(E0),
        slope=float(k * s_cal),
        slope_factor=float(k),
        a0=float(a0),
        selectivity={j: float(v) for j, v in K.items()},
        T=T_mean,
        parameters=tuple(names),
        covariance=cov_r,
        residuals=resid,
        residual_sd=rsd,
        dof=dof,
        detection_limit_activity=float(a_dl),
        u_lg_detection_limit=u_lg_dl,
        detection_limit_molality=float(m_dl),
        detection_limit_molarity=float(c_dl),
        linear_range=lin_range,
        linear_deviation=lin_dev,
        verdicts=(),
        notes=tuple(dict.fromkeys(notes)),
        standards=std_table,
        acceptance=acc,
        interference_at_limit=interf_low,
        fixed_selectivity=tuple(fixed_K),
        standards_solution=standards,
        fit_options={
            "slope": slope,
            "interferents": dict(interferents or {}),
            "detection_term": detection_term,
            "weights": None if weights is None else w.tolist(),
            "linear_deviation": lin_dev,
            "labels": labels,
        },
        speciation=None if speciation is None else dict(speciation),
    )
    return replace(cal, verdicts=judge(cal, acc, drift))


def judge(cal: ISECalibration, acc: Acceptance, drift: Any = None) -> tuple:
    """The acceptance verdicts of a calibration (slope window, residual SD, detection limit, drift)."""
    out = []
    pct = cal.slope_percent
    out.append(
        Verdict(
            "slope window",
            acc.slope_min_percent <= pct <= acc.slope_max_percent,
            f"{pct:.1f} % ({1000 * cal.slope:.2f} mV/decade)" + (" (fixed)" if cal.slope_mode == "nernstian" else ""),
            f"{acc.slope_min_percent:g}–{acc.slope_max_percent:g} % of Nernstian",
            acc.basis("slope_min_percent") if "slope_max_percent" not in acc.user_set else "user",
        )
    )
    out.append(
        Verdict(
            "residual standard deviation",
            cal.residual_sd <= acc.max_residual_sd,
            f"{1000 * cal.residual_sd:.3g} mV (dof {cal.dof})",
            f"≤ {1000 * acc.max_residual_sd:g} mV",
            acc.basis("max_residual_sd"),
        )
    )
    dl = cal.detection_limit_activity
    lowest = float(np.min(cal.standards["activity"])) if len(cal.standards.get("activity", [])) else float("nan")
    if acc.max_detection_limit is None:
        limit, thr = lowest, f"≤ lowest standard's activity ({lowest:.3g})"
    else:
        limit, thr = acc.max_detection_limit, f"≤ {acc.max_detection_limit:.3g} (activity)"
    if np.isfinite(dl):
        out.append(
            Verdict("detection limit", bool(dl <= limit), f"{dl:.3g} (activity)", thr, acc.basis("max_detection_limit"))
        )
    else:
        out.append(
            Verdict(
                "detection limit",
                True,
                f"below the lowest standard ({lowest:.3g})",
                thr,
                acc.basis("max_detection_limit"),
            )
        )
    if drift is None:
        out.append(
            Verdict(
                "drift", None, "no bracketing calibration", f"≤ {acc.max_drift * 3.6e6:g} mV/h", acc.basis("max_drift")
            )
        )
    else:
        rate = abs(float(drift.rate))
        out.append(
            Verdict(
                "drift",
                bool(rate <= acc.max_drift),
                f"{drift.rate * 3.6e6:+.3g} mV/h",
                f"≤ {acc.max_drift * 3.6e6:g} mV/h",
                acc.basis("max_drift"),
            )
        )
    return tuple(out)
