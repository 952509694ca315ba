"""Reference electrodes computed from their filling solutions, and ion-selective electrodes.

A reference electrode's potential is not looked up: the engine builds the KCl filling
solution (a stated molarity or molality, or saturated at the temperature), evaluates the
chloride activity with the best available model for concentrated KCl (Pitzer when
installed, else the next in :data:`activity.nernst.half_reaction.MODEL_PREFERENCE`; the choice is
recorded), and applies the Nernst equation of the AgCl/Ag or Hg2Cl2/Hg couple.

An :class:`IonSelectiveElectrode` follows the Nikolsky–Eisenman equation.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .. import _checks, data
from ..coefficients import ActivityModel, resolve_model
from ..coefficients.base import ModelLike
from ..constants import LN10, T_REF, ZERO_CELSIUS, F, R
from ..errors import InputError, warn_alerts
from ..solution import Solution
from ..species import parse_species
from .equations import nernst_slope
from .half_reaction import HalfReaction, best_available_model, standard_couple
from .membrane import nikolsky_eisenman_core
from .protocol import Electrode, ElectrodeResult, LazyMapping

__all__ = [
    "kcl_saturation_molality",
    "ReferenceElectrode",
    "silver_chloride_electrode",
    "calomel_electrode",
    "common_practice_potential",
    "IonSelectiveElectrode",
]


def _log10_or_nan(a: np.ndarray) -> Any:
    with np.errstate(divide="ignore"):
        return _checks.scalar_or_array(np.where(a > 0, np.log10(a), -np.inf))


def kcl_saturation_molality(T: ArrayLike = T_REF) -> Any:
    """Molality of saturated KCl at T (linear interpolation of the table), mol/kg.

    Examples
    --------
    >>> kcl_saturation_molality(298.15)
    4.81
    """
    tab = data.load("reference_electrodes")["kcl_saturation"]
    t = _checks.finite_array(T, "T", positive=True) - ZERO_CELSIUS
    lo, hi = tab["temperature"][0], tab["temperature"][-1]
    if np.any(t < lo) or np.any(t > hi):
        raise InputError(
            f"KCl solubility is tabulated for {lo:g}–{hi:g} °C only", field="T", value=float(np.max(t) + ZERO_CELSIUS)
        )
    return _checks.scalar_or_array(np.interp(t, tab["temperature"], tab["molality"]))


class ReferenceElectrode(Electrode):
    """A metal | sparingly soluble chloride | KCl(aq) reference electrode.

    Parameters
    ----------
    couple : HalfReaction or str
        The chloride couple (e.g. ``'AgCl/Ag'``).
    filling : 'saturated' or float
        The KCl filling: saturated at the working temperature, or a concentration.
    basis : {'mol/L', 'mol/kg'}, default 'mol/L'
        Unit of a numeric ``filling``. Per-litre values are converted with the density
        model of :meth:`Solution.from_molarity` (excess volume neglected).
    model : str or ActivityModel, optional
        Model for the filling; by default the best available for concentrated KCl.
    name : str, optional

    Examples
    --------
    >>> ref = silver_chloride_electrode("saturated")
    >>> round(ref.potential(298.15), 3)
    0.196
    """

    def __init__(
        self,
        couple: HalfReaction | str,
        filling: Any = "saturated",
        *,
        basis: str = "mol/L",
        model: ModelLike = None,
        name: str | None = None,
    ):
        self.couple = couple if isinstance(couple, HalfReaction) else standard_couple(couple)
        if "Cl-" not in self.couple.species:
            raise InputError(
                "a KCl-filled reference electrode needs a chloride couple", field="couple", value=self.couple.name
            )
        if isinstance(filling, str):
            if filling.strip().lower() != "saturated":
                raise InputError("give 'saturated' or a number with basis=", field="filling", value=filling)
            self.filling = "saturated"
        else:
            self.filling = float(_checks.finite_array(filling, "filling", positive=True))
        if basis not in ("mol/L", "mol/kg"):
            raise InputError("must be 'mol/L' or 'mol/kg'", field="basis", value=basis)
        self.basis = basis
        if model is None:
            self._model, self._model_notes = best_available_model(("K+", "Cl-"))
        else:
            self._model, self._model_notes = resolve_model(model), ()
        label = "saturated" if self.filling == "saturated" else f"{self.filling:g} {basis}"
        self.name = name or f"{self.couple.name} in {label} KCl"

    own_compartment = True

    @property
    def model(self) -> ActivityModel:
        """The activity model applied to the filling solution."""
        return self._model

    @property
    def electrode_constant(self) -> float:
        """E° of the chloride couple at 298.15 K, V."""
        return self.couple.E0

    def evaluate_in(
        self, sol: Solution, coefficients: Any, *, pressures: Mapping[str, Any] | None = None
    ) -> ElectrodeResult:
        """The potential at the temperature of ``sol``; the electrode sits in its own filling."""
        return self.evaluate(sol.T_compact, warn=False)

    def filling_solution(self, T: ArrayLike = T_REF) -> Solution:
        """The KCl filling as a :class:`Solution` at temperature T."""
        if self.filling == "saturated":
            m = kcl_saturation_molality(T)
            return Solution({"K+": m, "Cl-": m}, T=T)
        if self.basis == "mol/kg":
            return Solution({"K+": self.filling, "Cl-": self.filling}, T=T)
        return Solution.from_molarity({"K+": self.filling, "Cl-": self.filling}, T=T)

    def evaluate(self, T: ArrayLike = T_REF, *, warn: bool = True) -> ElectrodeResult:
        """Potential vs SHE at T with the model used and every assumption in the notes."""
        sol = self.filling_solution(T)
        res = self.couple.evaluate_in(sol, self._model.activity_coefficients(sol, warn=False))
        notes = (
            (f"filling {self.name}: chloride activity from {res.model}",)
            + self._model_notes
            + res.notes
            + ("single-ion activity of Cl- as given by the model (not measurable on its own)",)
        )
        out = ElectrodeResult(
            res.potential,
            res.standard_potential,
            res.log10_activity,
            res.T,
            res.model,
            tuple(dict.fromkeys(notes)),
            res.in_range,
            res.alerts,
        )
        if warn:
            warn_alerts(out.alerts)
        return out

    def potential(self, T: ArrayLike = T_REF) -> Any:
        """Potential vs SHE at T, V."""
        return self.evaluate(T).potential

    def __repr__(self) -> str:
        return f"ReferenceElectrode({self.name!r})"


def silver_chloride_electrode(filling: Any = "saturated", **kw: Any) -> ReferenceElectrode:
    """Ag | AgCl(s) | KCl(aq), e.g. ``silver_chloride_electrode(3.5)`` for 3.5 mol/L KCl."""
    return ReferenceElectrode("AgCl/Ag", filling, **kw)


def calomel_electrode(filling: Any = "saturated", **kw: Any) -> ReferenceElectrode:
    """Hg(l) | Hg2Cl2(s) | KCl(aq); ``calomel_electrode()`` is the saturated calomel electrode.

    Examples
    --------
    >>> round(calomel_electrode().potential(298.15), 3)
    0.241
    """
    return ReferenceElectrode("Hg2Cl2/Hg", filling, **kw)


def common_practice_potential(kind: str, filling: Any) -> tuple[float, str] | None:
    """The potential of common practice at 25 °C for comparison, with its source, or None.

    Parameters
    ----------
    kind : {'silver-chloride', 'calomel'}
    filling : 'saturated' or float
        KCl in mol/L.

    Examples
    --------
    >>> common_practice_potential("calomel", "saturated")[0]
    0.241
    """
    table = data.load("reference_electrodes")["common_practice"]
    label = (
        "saturated"
        if isinstance(filling, str) and filling.strip().lower() == "saturated"
        else f"{float(filling):g} mol/L"
    )
    for entry in table["values"]:
        if entry["electrode"] == kind and entry["filling"] == label:
            return float(entry["E"]), f"{table['source']} ({table['note']})"
    return None


def _own_row_model(model: Any) -> bool:
    """Whether ``model`` computes γ of an ion from I, T, P and that ion's own parameters
    only: the Debye–Hückel form as shipped (a subclass that changes how γ is computed, or
    the binding, does not count). Then a caller may ask for a few species' rows alone."""
    from ..coefficients._dh_form import DebyeHuckelForm

    kind = type(model)
    return (
        isinstance(model, DebyeHuckelForm)
        and kind.compute_log10_gamma is DebyeHuckelForm.compute_log10_gamma
        and kind.prepare is DebyeHuckelForm.prepare
    )


def _record(g: Any) -> tuple:
    """(model name, notes, in_range, alerts) of a model's result, what an electrode passes on."""
    return g.model, g.notes, g.in_range, g.alerts


def free_solution(sol: Solution, model: Any, speciation: Mapping[str, Any] | None) -> tuple[Solution, tuple[str, ...]]:
    """``sol`` itself, or — when ``speciation`` is given — its free species after speciation
    (:func:`activity.speciation.speciate` with those keyword arguments), with a note."""
    if speciation is None:
        return sol, ()
    from ..speciation import speciate

    res = speciate(sol, model, **dict(speciation))
    return res.solution, (f"free ions from speciation ({res.closure})",) + tuple(res.notes)


class IonSelectiveElectrode(Electrode):
    """An ion-selective electrode following the Nikolsky–Eisenman equation.

    E = E0 + (k·s/zᵢ) log10(aᵢ + Σⱼ Kᵢⱼ aⱼ^(zᵢ/zⱼ)), s = RT ln10/F, k = ``slope_factor``.

    Parameters
    ----------
    ion : str
        Primary ion, e.g. ``'Ca^2+'``.
    E0 : array_like
        Electrode constant at 298.15 K, V (on the scale of the cell it is used in); an
        array broadcasts with the solution's batch (e.g. to propagate a calibration's
        uncertainty).
    selectivity : Mapping[str, array_like], optional
        Selectivity coefficients Kᵢⱼ by interfering ion (an array broadcasts with the
        solution's batch, e.g. to propagate their uncertainty).
    slope_factor : float, default 1
        Fraction of the Nernst slope.
    dE0dT : float, default 0
        Temperature coefficient of E0, V/K.

    Examples
    --------
    >>> from activity import Solution
    >>> from activity.nernst.cell import Cell
    >>> ise = IonSelectiveElectrode("Ca^2+", E0=0.05, selectivity={"Mg^2+": 0.01})
    >>> std = Solution({"Ca^2+": [1e-4, 1e-3], "K+": 0.1, "Cl-": [0.1002, 0.102]})
    >>> res = Cell(left=silver_chloride_electrode(3.0), right=ise).evaluate(std, "davies")
    >>> [round(float(e) * 1000, 1) for e in res.emf]
    [-287.3, -257.8]
    """

    def __init__(
        self,
        ion: str,
        E0: float,
        *,
        selectivity: Mapping[str, float] | None = None,
        slope_factor: float = 1.0,
        dE0dT: float = 0.0,
        name: str | None = None,
    ):
        sp = parse_species(ion)
        if not sp.is_ion:
            raise InputError("the primary species of an ion-selective electrode must be an ion", field="ion", value=ion)
        self.ion = sp.name
        self.z = sp.charge
        self.E0 = _checks.scalar_or_array(_checks.finite_array(E0, "E0"))
        self.dE0dT = float(_checks.finite_array(dE0dT, "dE0dT"))
        self.slope_factor = float(_checks.finite_array(slope_factor, "slope_factor", positive=True))
        self._selectivity: dict[str, Any] = {}
        for k, v in (selectivity or {}).items():
            j = parse_species(k)
            if j.name == self.ion or not j.is_ion or np.sign(j.charge) != np.sign(self.z):
                raise InputError(
                    "an interferent must be another ion of the primary ion's sign", field="selectivity", value=k
                )
            self._selectivity[j.name] = _checks.scalar_or_array(
                _checks.finite_array(v, f"selectivity[{k!r}]", nonnegative=True)
            )
        self.name = name or f"{self.ion} ion-selective electrode"

    @property
    def selectivity(self) -> dict[str, Any]:
        """Selectivity coefficients Kᵢⱼ by interfering ion."""
        return self._selectivity

    @property
    def responds_to(self) -> tuple[str, ...]:
        """The primary ion."""
        return (self.ion,)

    @property
    def electrode_constant(self) -> float:
        """E0 at 298.15 K, V (the mean, when E0 was given as an array)."""
        return float(np.mean(self.E0))

    def with_selectivity(self, K: Mapping[str, Any]) -> IonSelectiveElectrode:
        """A copy with the selectivity coefficients named in ``K`` replaced."""
        if not K:
            return self
        sel = {j: K.get(j, k) for j, k in self.selectivity.items()}
        return IonSelectiveElectrode(
            self.ion, self.E0, selectivity=sel, slope_factor=self.slope_factor, dE0dT=self.dE0dT, name=self.name
        )

    def slope(self, T: ArrayLike = T_REF) -> Any:
        """Response slope k·RT ln10/(zF), V per decade of the primary ion's activity."""
        return self.slope_factor * nernst_slope(T, self.z)

    def e0_at(self, T: ArrayLike) -> Any:
        """E0 at temperature T from its value at 298.15 K and dE0dT, V."""
        return self.E0 + self.dE0dT * (np.asarray(T) - T_REF)

    def activity_terms(self, sol: Solution, lg: np.ndarray) -> tuple[np.ndarray, list, list, list]:
        """Activity of the primary ion, the interferents present, their charges and activities,
        from the model's log10 γ rows ``lg`` for ``sol``."""
        if self.ion not in sol.species:
            raise InputError(f"the primary ion of {self.name} is not in the solution", field="species", value=self.ion)
        present = [j for j in self.selectivity if j in sol.species]
        done: list[tuple[int, np.ndarray]] = []

        def activity(k: int) -> np.ndarray:
            # models of the Debye–Hückel family give equal log γ rows to ions of equal |z|:
            # reuse γ instead of exponentiating again (a comparison is far cheaper than exp)
            for k2, gamma in done:
                if np.array_equal(lg[k], lg[k2]):
                    return sol.m[k] * gamma
            gamma = np.exp(LN10 * lg[k])
            done.append((k, gamma))
            return sol.m[k] * gamma

        ai = activity(sol.index(self.ion))
        aj = [activity(sol.index(j)) for j in present]
        return ai, present, [parse_species(j).charge for j in present], aj

    def _shared_gamma(self, sol: Solution, lg: np.ndarray, same: bool = False):
        """Fast exact path when every interferent present has the primary ion's charge and
        the same γ (the Debye–Hückel family, Davies): then
        ln(aᵢ + Σ Kᵢⱼ aⱼ) = ln γ + ln(mᵢ + Σ Kᵢⱼ mⱼ), and no exponential is needed.
        ``same=True`` says the caller knows the rows of log10 γ are equal (from the model's
        binding), which spares comparing them. Returns (E − E0, lazy log10 activities) or None."""
        if self.ion not in sol.species:
            return None
        i = sol.index(self.ion)
        present = [(j, sol.index(j)) for j in self.selectivity if j in sol.species]
        charges = sol._charges
        if any(charges[k] != self.z for _, k in present):
            return None
        if not same and any(not np.array_equal(lg[k], lg[i]) for _, k in present):
            return None
        shape = np.broadcast_shapes(sol.shape, *(np.shape(self.selectivity[j]) for j, _ in present))
        # mᵢ + Σ Kᵢⱼ mⱼ written into one new array (no copy of mᵢ first; without interferents
        # mᵢ itself, the logarithm being the new array); it is > 0 when every molality is
        # (Kᵢⱼ ≥ 0), else "min > 0" is checked, False for NaN as well, without a boolean temporary
        if present:
            total = np.empty(shape)
            (j0, k0), rest = present[0], present[1:]
            np.multiply(self.selectivity[j0], sol.m[k0], out=total)
            for j, k in rest:
                total += self.selectivity[j] * sol.m[k]
            total += sol.m[i]
        else:
            total = sol.m[i]
        if not (total.size == 0 or sol._known_positive() or total.min() > 0):
            return None  # the general path raises the error naming the field
        # (k s/z)(log10 total + log10 γᵢ), in place: no temporary for ln10·log10 γ
        E = np.log(total, out=total) if present else np.log(total)
        E *= 1.0 / LN10
        E += lg[i]
        E *= self.slope_factor * R * LN10 * np.asarray(sol.T_compact, float) / (self.z * F)
        acts = {name: (lambda k=k: _log10_or_nan(sol.m[k] * 10.0 ** lg[k])) for name, k in [(self.ion, i)] + present}
        return E, LazyMapping(acts)

    def _rows_equal_by_binding(self, sol: Solution, model: Any) -> bool:
        """Whether ``model`` gives the primary ion and every interferent present the same
        log10 γ row bit for bit, read from its binding (Debye–Hückel form: same |z|, same
        denominator and same linear term mean the same arithmetic)."""
        if self.ion not in sol.species or not _own_row_model(model):
            return False
        bound = model.bind(sol.species, sol.charges)
        t = bound.terms

        def key(k: int) -> tuple:
            return (bound.z2[k], t.size[k], t.d[k], t.b[k])

        i = sol.index(self.ion)
        return all(key(sol.index(j)) == key(i) for j in self.selectivity if j in sol.species)

    def evaluate(
        self,
        sol: Solution,
        model: ModelLike = "davies",
        *,
        warn: bool = True,
        speciation: Mapping[str, Any] | None = None,
    ) -> ElectrodeResult:
        """Electrode potential in ``sol`` (same scale as E0), with activities used.

        With ``speciation`` (keyword arguments of :func:`activity.speciation.speciate`, ``{}``
        for its defaults) ``sol`` holds totals: it is speciated first, and the electrode
        answers to the free ions (pairs and complexes of the primary ion do not count).
        """
        model = resolve_model(model)
        sol, free_notes = free_solution(sol, model, speciation)
        own = self._own_rows(sol, model)
        if own is None:
            g = model.activity_coefficients(sol, warn=False)
            res = self._evaluate(sol, g.log10_gamma, _record(g), False)
        else:
            res = self._evaluate(sol, *own)
        if free_notes:
            res = dataclasses.replace(res, notes=res.notes + free_notes)
        if warn:
            warn_alerts(res.alerts)
        return res

    def _own_rows(self, sol: Solution, model: Any) -> tuple[dict, tuple, bool] | None:
        """For a model whose γ of an ion needs only I and the ion's own parameters: the rows
        of log10 γ this electrode reads, and nothing else, as (rows by species position, the
        model's record, rows known equal). γ of the other species (the counter-ions) is not
        formed; the record (validity flags and notes) is the one the whole result would carry.
        None where this does not apply."""
        if not (isinstance(sol, Solution) and self.ion in sol.species and _own_row_model(model)):
            return None
        bound = model.bind(sol.species, sol.charges)
        I = np.asarray(sol.ionic_strength, dtype=float)
        i = sol.index(self.ion)
        present = [sol.index(j) for j in self.selectivity if j in sol.species]
        same = self._rows_equal_by_binding(sol, model)
        rows = model.log10_gamma_rows(sol, bound, I, [i] if same else [i] + present)
        if same:  # the interferents' rows are the primary ion's, bit for bit
            rows.update(dict.fromkeys(present, rows[i]))
        in_range, notes, _, alerts = model._range_record(sol, bound, I)
        return rows, (model.name, notes, in_range, alerts), same

    def evaluate_in(self, sol: Solution, g: Any, *, pressures: Mapping[str, Any] | None = None) -> ElectrodeResult:
        """:meth:`evaluate` with the model's result ``g`` for ``sol`` already computed."""
        return self._evaluate(sol, g.log10_gamma, _record(g), False)

    def _evaluate(self, sol: Solution, lg: Any, record: tuple, same: bool) -> ElectrodeResult:
        """The potential from the log10 γ rows ``lg`` (indexed by species position) and the
        model's ``record`` (name, notes, in_range, alerts)."""
        T = sol.T_compact
        E0 = self.e0_at(T)
        shared = self._shared_gamma(sol, lg, same)
        if shared is not None:
            E, lga = shared
            E += E0
        else:
            ai, present, zj, aj = self.activity_terms(sol, lg)
            K = [self.selectivity[j] for j in present]
            E = nikolsky_eisenman_core(E0, ai, self.z, aj, [self.z / z for z in zj], K, T, self.slope_factor)
            lga = LazyMapping({j: (lambda a=a: _log10_or_nan(a)) for j, a in zip([self.ion] + present, [ai, *aj])})
        absent = tuple(
            f"interferent {j} absent from the solution (activity 0)" for j in self.selectivity if j not in sol.species
        )
        name, notes, in_range, alerts = record
        return ElectrodeResult(
            _checks.scalar_or_array(E),
            _checks.scalar_or_array(E0),
            lga,
            _checks.scalar_or_array(T),
            name,
            tuple(notes) + absent,
            in_range,
            alerts,
        )

    def potential(self, sol: Solution, model: ModelLike = "davies") -> Any:
        """Electrode potential, V (shorthand for ``evaluate(...).potential``)."""
        return self.evaluate(sol, model).potential

    def __repr__(self) -> str:
        return f"IonSelectiveElectrode({self.ion!r}, E0={self.E0!r}, selectivity={self.selectivity!r})"
