"""Known (standard) addition: the original concentration of a sample from readings before and
after adding a standard of the primary ion.

With the sample (volume Vₓ, unknown cₓ) read before and after additions of a standard
(concentration cₛ, cumulative added volume vₖ), the concentration at step k is
cₖ = (cₓVₓ + cₛvₖ)/(Vₓ + vₖ) and the reading Eₖ = E' + S·lg(γₖcₖ).

* Single addition, constant γ (closed form, e.g. the textbook formula of known addition):
  cₓ = cₛVₛ/(Vₓ + Vₛ) / (10^(ΔE/S) − Vₓ/(Vₓ + Vₛ)).
* With a sample matrix, γₖ at each step comes from the activity model (the matrix diluted by
  the additions unless the standard is made up in the same matrix), and the closed form is
  iterated on γ₁/γ₂.
* Multiple additions: E', cₓ (and S if asked) by non-linear least squares over all steps,
  with the uncertainty from the fit covariance; the Gran-type linearisation
  G = (Vₓ + vₖ)·10^(Eₖ/S)/γₖ ∝ cₓVₓ + cₛvₖ, whose volume intercept −cₓVₓ/cₛ gives a second,
  graphical estimate (and the Gran plot).

Concentrations are per litre of solution (the volumetric quantities of the procedure); the
activity model is evaluated on the molal scale with the matrix's mol/L ↔ mol/kg factor.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from ...errors import InputError
from ...solution import Solution
from ...species import parse_species
from ._model import check_ion, finite, molarity_factor, nernst_slope_z

__all__ = ["AdditionResult", "known_addition_closed_form", "multiple_addition", "single_addition"]


@dataclass(frozen=True)
class AdditionResult:
    """Original concentration of the sample from known addition.

    Attributes
    ----------
    concentration : float
        cₓ, mol/L.
    standard_uncertainty : float
        u(cₓ), mol/L.
    slope : float
        S used (V/decade); ``slope_fitted`` says whether it came from the additions.
    gran_concentration : float or None
        cₓ from the Gran linearisation (multiple additions).
    gran : dict
        'volume' (L), 'G' and the regression 'intercept', 'gradient' (multiple additions).
    residuals : ndarray
        Eₖ − fit, V (multiple additions).
    gamma : ndarray
        γ at each step (1 without a matrix).
    budget : object
        :class:`~activity.uncertainty.PropagationResult` (single addition) or None.
    notes : tuple of str
    """

    concentration: float
    standard_uncertainty: float
    slope: float
    slope_fitted: bool
    gran_concentration: float | None = None
    gran: dict = field(default_factory=dict)
    residuals: Any = None
    gamma: Any = None
    budget: Any = None
    notes: tuple = ()

    def to_dict(self) -> dict:
        return {
            "concentration_mol_per_L": self.concentration,
            "u_concentration_mol_per_L": self.standard_uncertainty,
            "slope_mV_per_decade": 1e3 * self.slope,
            "slope_fitted": self.slope_fitted,
            "gran_concentration_mol_per_L": self.gran_concentration,
            "residuals_mV": None if self.residuals is None else (1e3 * np.asarray(self.residuals)).tolist(),
            "gamma": None if self.gamma is None else np.asarray(self.gamma).tolist(),
            "notes": list(self.notes),
        }


def known_addition_closed_form(
    delta_E: ArrayLike, slope: ArrayLike, V_sample: ArrayLike, V_standard: ArrayLike, c_standard: ArrayLike
) -> Any:
    """cₓ = cₛVₛ/(Vₓ + Vₛ) / (10^(ΔE/S) − Vₓ/(Vₓ + Vₛ)) (constant activity coefficient).

    Examples
    --------
    >>> # 50 mL sample, 0.5 mL of 0.1 mol/L added, +10.0 mV on a 29.58 mV/decade electrode
    >>> round(float(known_addition_closed_form(0.0100, 0.02958, 0.050, 0.0005, 0.1)), 7)
    0.0008335
    """
    Vt = np.asarray(V_sample) + np.asarray(V_standard)
    return (
        np.asarray(c_standard)
        * np.asarray(V_standard)
        / Vt
        / (10.0 ** (np.asarray(delta_E) / np.asarray(slope)) - np.asarray(V_sample) / Vt)
    )


class _Gamma:
    """γ of the primary ion at each step of an addition (1 without a matrix)."""

    def __init__(
        self, ion: str, z: int, matrix: Solution | None, model: Any, counter_ion: str | None, standard_in_matrix: bool
    ):
        self.ion, self.z, self.matrix = ion, z, matrix
        self.standard_in_matrix = standard_in_matrix
        if matrix is None:
            return
        from ...coefficients import get_model

        if not isinstance(matrix, Solution) or matrix.shape != ():
            raise InputError("give one sample matrix as an activity.Solution", field="matrix", value=None)
        if ion in matrix.species and float(matrix.molality(ion)) > 0:
            raise InputError("the matrix already holds the primary ion; give it without", field="matrix", value=ion)
        self.model = get_model(model) if isinstance(model, str) else model
        self.factor = float(molarity_factor(matrix)[0])
        self.counter = None
        if counter_ion is not None:
            sp = parse_species(counter_ion)
            if sp.charge == 0 or np.sign(sp.charge) == np.sign(z):
                raise InputError(
                    "the counter-ion must carry charge opposite to the primary ion",
                    field="counter_ion",
                    value=counter_ion,
                )
            self.counter, self.ratio = sp.name, abs(z / sp.charge)

    def __call__(self, c: Any, dilution: Any) -> Any:
        """γ for ion concentration c (mol/L) with the matrix diluted by ``dilution`` (Vₓ/V)."""
        if self.matrix is None:
            return np.ones(np.broadcast_shapes(np.shape(c), np.shape(dilution)))
        d = np.ones_like(np.asarray(dilution, float)) if self.standard_in_matrix else np.asarray(dilution, float)
        m = np.asarray(c, float) / self.factor
        comp = {name: self.matrix.m[k] * d for k, name in enumerate(self.matrix.species)}
        comp[self.ion] = m
        if self.counter:
            comp[self.counter] = comp.get(self.counter, 0.0) + self.ratio * m
        sol = Solution(comp, T=self.matrix.T_compact, neutrality="ignore")
        return 10.0 ** self.model.activity_coefficients(sol).log10_gamma[sol.index(self.ion)]


def _slope_of(slope: Any, z: int, T: float) -> tuple[float, float]:
    from .selectivity import _slope

    return _slope(slope, z, T)


def _volumes(V_sample: Any, V_added: Any, c_standard: Any) -> tuple[float, np.ndarray, float]:
    Vx = float(finite(V_sample, "V_sample", positive=True))
    v = finite(V_added, "V_added").reshape(-1)
    if np.any(v < 0):
        raise InputError("added volumes must not be negative", field="V_added", value=float(v[v < 0][0]))
    cs = float(finite(c_standard, "c_standard", positive=True))
    return Vx, v, cs


def single_addition(
    E_before: float,
    E_after: float,
    V_sample: float,
    V_standard: float,
    c_standard: float,
    ion: str,
    *,
    slope: Any = None,
    T: float = 298.15,
    matrix: Solution | None = None,
    model: Any = "davies",
    counter_ion: str | None = None,
    standard_in_matrix: bool = False,
    u_emf: float = 0.0,
    u_volume_rel: float = 0.0,
    u_c_standard_rel: float = 0.0,
) -> AdditionResult:
    """Single known addition, activity-corrected when a matrix is given.

    Parameters
    ----------
    E_before, E_after : float
        Readings before and after the addition, V.
    V_sample, V_standard : float
        Sample volume and added volume, L.
    c_standard : float
        Concentration of the primary ion in the standard, mol/L.
    ion : str
    slope : float, (value, u), ISECalibration or None
        S at T, V/decade (None: Nernstian).
    matrix : Solution, optional
        The sample matrix (without the primary ion) for γ at each step.
    standard_in_matrix : bool
        True when the standard is made up in the same background (no dilution of it).
    u_emf, u_volume_rel, u_c_standard_rel : float
        Standard uncertainty of a reading (V), relative of each volume, relative of cₛ.

    Examples
    --------
    >>> r = single_addition(0.1000, 0.1100, 0.050, 0.0005, 0.1, "Ca^2+", slope=0.02958)
    >>> round(r.concentration, 7)
    0.0008335
    """
    from ...uncertainty import Normal, propagate

    ion, z = check_ion(ion)
    Vx, v, cs = _volumes(V_sample, V_standard, c_standard)
    if v.size != 1 or v[0] <= 0:
        raise InputError("one positive added volume", field="V_standard", value=V_standard)
    Vs = float(v[0])
    E1 = float(finite(E_before, "E_before"))
    E2 = float(finite(E_after, "E_after"))
    if abs(E1) > 5 or abs(E2) > 5:
        raise InputError(
            "readings this large look like millivolts: EMFs are in volts here",
            field="E_before",
            value=max(abs(E1), abs(E2)),
        )
    S, uS = _slope_of(slope, z, T)
    gam = _Gamma(ion, z, matrix, model, counter_ion, standard_in_matrix)
    Vt = Vx + Vs

    def solve(dE: Any, S_: Any, Vx_: Any, Vs_: Any, cs_: Any) -> Any:
        c = known_addition_closed_form(dE, S_, Vx_, Vs_, cs_)
        if matrix is None:
            return c
        for _ in range(100):
            V = Vx_ + Vs_
            g1 = gam(c, 1.0)
            g2 = gam((c * Vx_ + cs_ * Vs_) / V, Vx_ / V)
            R = 10.0 ** (dE / S_) * g1 / g2
            c_new = cs_ * Vs_ / V / (R - Vx_ / V)
            if np.all(np.abs(c_new / c - 1) < 1e-12):
                return c_new
            c = c_new
        return c

    dE = E2 - E1
    c0 = float(solve(dE, S, Vx, Vs, cs))
    notes = []
    if not np.isfinite(c0) or c0 <= 0:
        raise InputError(
            f"ΔE = {1000 * dE:.3g} mV is too small for this addition (or of the wrong sign for the "
            f"slope): no positive concentration reproduces it",
            field="E_after",
            value=E2,
        )
    inputs = {
        "dE": Normal(dE, np.sqrt(2) * u_emf),
        "S": Normal(S, uS),
        "Vx": Normal(Vx, u_volume_rel * Vx),
        "Vs": Normal(Vs, u_volume_rel * Vs),
        "cs": Normal(cs, u_c_standard_rel * cs),
    }
    budget = None
    u = 0.0
    if any(d.sd > 0 for d in inputs.values()):
        budget = propagate(lambda dE, S, Vx, Vs, cs: solve(dE, S, Vx, Vs, cs), inputs)
        u = budget.standard_uncertainty
    else:
        notes.append("no input uncertainty stated: u(cₓ) = 0")
    gamma = None
    if matrix is not None:
        gamma = np.array([float(gam(c0, 1.0)), float(gam((c0 * Vx + cs * Vs) / Vt, Vx / Vt))])
        notes.append(f"activity-corrected: γ = {gamma[0]:.4f} before, {gamma[1]:.4f} after the addition")
    else:
        notes.append(
            "constant activity coefficient assumed (no matrix given): keep the ionic strength fixed with an "
            "ionic-strength adjuster"
        )
    if c0 * Vx > 10 * cs * Vs or cs * Vs > 100 * c0 * Vx:
        notes.append(
            "the addition is far from the common-practice size (about 1–4 times the amount in the sample): "
            "ΔE is then poorly conditioned"
        )
    return AdditionResult(c0, float(u), S, False, residuals=None, gamma=gamma, budget=budget, notes=tuple(notes))


def multiple_addition(
    E: ArrayLike,
    V_added: ArrayLike,
    V_sample: float,
    c_standard: float,
    ion: str,
    *,
    slope: Any = "fit",
    T: float = 298.15,
    matrix: Solution | None = None,
    model: Any = "davies",
    counter_ion: str | None = None,
    standard_in_matrix: bool = False,
) -> AdditionResult:
    """Multiple known additions: cₓ by least squares over all steps, plus the Gran estimate.

    Parameters
    ----------
    E : array_like, shape (n,)
        Readings, V; the first usually before any addition (V_added = 0).
    V_added : array_like, shape (n,)
        Cumulative added volume at each reading, L.
    slope : 'fit', float, (value, u), ISECalibration or None
        'fit' (default) fits S from the additions (needs ≥ 4 readings); otherwise held.

    Examples
    --------
    >>> import numpy as np
    >>> v = np.array([0, 0.0002, 0.0004, 0.0006, 0.0008])
    >>> c = (1e-3 * 0.05 + 0.1 * v) / (0.05 + v)
    >>> E = 0.05 + 0.02958 * np.log10(c)
    >>> r = multiple_addition(E, v, 0.05, 0.1, "Ca^2+")
    >>> round(r.concentration, 9), round(r.gran_concentration, 9)
    (0.001, 0.001)
    """
    from scipy.optimize import least_squares

    ion, z = check_ion(ion)
    Vx, v, cs = _volumes(V_sample, V_added, c_standard)
    Ev = finite(E, "E").reshape(-1)
    if Ev.size != v.size:
        raise InputError(f"needs one added volume per reading ({Ev.size})", field="V_added", value=v.size)
    if np.any(np.abs(Ev) > 5):
        raise InputError(
            "readings this large look like millivolts: EMFs are in volts here",
            field="E",
            value=float(np.max(np.abs(Ev))),
        )
    free = isinstance(slope, str) and slope == "fit"
    if isinstance(slope, str) and not free:
        raise InputError("slope is 'fit', a number, (value, u), a calibration or None", field="slope", value=slope)
    n_par = 2 + int(free)
    if Ev.size < n_par + 1:
        raise InputError(
            f"{Ev.size} readings for {n_par} parameters: need at least {n_par + 1}", field="E", value=Ev.size
        )
    if np.any(np.diff(v) <= 0):
        raise InputError("cumulative added volumes must increase", field="V_added", value=None)
    S_given, uS = (0.0, 0.0) if free else _slope_of(slope, z, T)
    gam = _Gamma(ion, z, matrix, model, counter_ion, standard_in_matrix)
    V = Vx + v

    def conc(lgcx: float) -> np.ndarray:
        return (10.0**lgcx * Vx + cs * v) / V

    def model_E(p: np.ndarray) -> np.ndarray:
        S = p[2] if free else S_given
        c = conc(p[1])
        return p[0] + S * np.log10(gam(c, Vx / V) * c)

    # start: Gran with the Nernst slope (or the given one)
    S0 = float(nernst_slope_z(T, z)) if free else S_given
    gran0 = _gran(Ev, v, Vx, cs, S0, np.ones_like(Ev))
    cx0 = gran0[0] if np.isfinite(gran0[0]) and gran0[0] > 0 else cs * v[-1] / Vx
    p0 = [float(np.mean(Ev - S0 * np.log10(conc(np.log10(cx0))))), float(np.log10(cx0))] + ([S0] if free else [])
    res = least_squares(lambda p: model_E(p) - Ev, p0, method="lm", xtol=1e-14, ftol=1e-14, gtol=1e-14)
    J = res.jac
    dof = Ev.size - n_par
    s2 = float(np.sum(res.fun**2)) / dof
    cov = s2 * np.linalg.pinv(J.T @ J)
    lgcx = float(res.x[1])
    cx = 10.0**lgcx
    u_lg = float(np.sqrt(cov[1, 1]))
    S = float(res.x[2]) if free else S_given
    notes = [f"fit of E = E' + S·lg(γc) over {Ev.size} readings ({'S fitted' if free else 'S held'}), dof {dof}"]
    u_c = cx * np.log(10) * u_lg
    if not free and uS > 0:
        # add the slope's own uncertainty by a finite difference of the fit
        h = uS
        p_up = least_squares(
            lambda p: p[0] + (S_given + h) * np.log10(gam(conc(p[1]), Vx / V) * conc(p[1])) - Ev, res.x[:2], method="lm"
        ).x
        u_c = float(np.hypot(u_c, cx * np.log(10) * (p_up[1] - lgcx)))
        notes.append("u(cₓ) includes the uncertainty of the given slope")
    gamma = np.asarray(gam(conc(lgcx), Vx / V), float)
    gran_c, G, intercept, gradient = _gran(Ev, v, Vx, cs, S, gamma)
    if matrix is None:
        notes.append("constant activity coefficient assumed (no matrix given)")
    return AdditionResult(
        cx,
        float(u_c),
        S,
        free,
        gran_concentration=float(gran_c),
        gran={"volume": v, "G": G, "intercept": intercept, "gradient": gradient},
        residuals=-res.fun,
        gamma=gamma,
        notes=tuple(notes),
    )


def _gran(E: np.ndarray, v: np.ndarray, Vx: float, cs: float, S: float, gamma: np.ndarray) -> tuple:
    """Gran function G = (Vₓ + v)·10^((E − E_ref)/S)/γ, its regression on v and cₓ from the intercept."""
    G = (Vx + v) * 10.0 ** ((E - E[0]) / S) / gamma
    gradient, intercept = np.polyfit(v, G, 1)
    v_e = -intercept / gradient  # volume axis intercept = −cₓVₓ/cₛ
    return -v_e * cs / Vx, G, float(intercept), float(gradient)
