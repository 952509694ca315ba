"""Uncertainty through the whole chain: composition → activity model → Nernst → inverse.

The functions here name the uncertain inputs of an electrode potential, a cell EMF or a
molality found from a reading — each species' amount, the temperature, the E° of each
electrode (or the constant of an ion-selective electrode), selectivity coefficients and
the measured reading — build one vectorised function of them (a batch
:class:`~activity.solution.Solution` from the input columns, never a loop over rows) and
hand it to :func:`activity.uncertainty.propagate`, GUM or Monte Carlo.

Beside the budget each result carries the spread of the same quantity over the
activity models (:func:`activity.uncertainty.model_spread`): every registered model that
can evaluate the sample inside its declared validity is counted; the others are listed
in the notes with the reason. An analyst sees at a glance when the choice of model
matters more than the measurement.

Conventions shared by the three functions:

* Every input is a normal distribution with the stated standard uncertainty; inputs are
  independent (in particular the amounts of different species, even when they come
  from one salt). A zero uncertainty leaves the input out of the budget.
* E° enters every potential additively, so an uncertain E° is applied as a shift of the
  electrode's potential (for the inverse: of the reading it must reproduce).
* ``models/standard_potentials.toml`` states no uncertainties of E°; the caller states
  them (``u_e0``).
* The sample is one solution (not a batch): its rows are made by the propagation.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .. import _checks
from ..coefficients import available_models, resolve_model
from ..coefficients.base import ActivityModel, ModelLike
from ..errors import ActivityError, InputError, warn_alerts
from ..nernst.cell import Cell
from ..nernst.electrodes import IonSelectiveElectrode
from ..nernst.inverse import molality_from_emf, molality_from_potential
from ..nernst.protocol import Electrode
from ..solution import Solution
from ..species import parse_species
from ..uncertainty import Normal, PropagationResult, propagate
from .model_choice import ModelSpread, model_spread
from .progress import Progress, counting

__all__ = ["ChainResult", "potential_with_uncertainty", "emf_with_uncertainty", "molality_with_uncertainty"]


@dataclass(frozen=True, repr=False)
class ChainResult:
    """A quantity of the Nernst chain with its uncertainty budget and model-choice spread.

    Attributes
    ----------
    quantity : str
        What was computed, e.g. ``'E'``, ``'EMF'``, ``'m(Ca^2+)'``.
    unit : str
        Its unit (``'V'``, ``'mol/kg'``).
    model : str
        Activity model of the propagation.
    propagation : PropagationResult
        The GUM or Monte Carlo result; budget rows are labelled ``'m(K+) [mol/kg]'``,
        ``'T [K]'``, ``'E°(right) [V]'``, ``'reading [V]'``, ``'K(Mg^2+)'``.
    spread : ModelSpread or None
        The quantity at the input estimates by every usable model (None if none was).
    notes : tuple of str
        Models left out of the spread and why; warnings met during the propagation.
    """

    quantity: str
    unit: str
    model: str
    propagation: PropagationResult
    spread: ModelSpread | None
    notes: tuple = ()

    @property
    def value(self) -> float:
        """Estimate of the quantity."""
        return self.propagation.value

    @property
    def standard_uncertainty(self) -> float:
        """Combined standard uncertainty u_c."""
        return self.propagation.standard_uncertainty

    def expanded_uncertainty(self, p: float | None = None) -> float:
        """Expanded uncertainty at coverage probability ``p`` (default: the one asked for)."""
        return self.propagation.expanded_uncertainty(p)

    def coverage_interval(self, p: float | None = None) -> tuple[float, float]:
        """Probabilistically symmetric coverage interval (low, high)."""
        return self.propagation.coverage_interval(p)

    def format_budget(self) -> str:
        """Budget table, result line and the model-choice line, as text."""
        return self.propagation.format_budget(spread=self.spread)

    def __repr__(self) -> str:
        return (
            f"ChainResult({self.quantity} = {self.value:.6g} {self.unit}, "
            f"u = {self.standard_uncertainty:.3g}, method={self.propagation.method!r}, "
            f"inputs={[r.name for r in self.propagation.budget]})"
        )


# ------------------------------------------------------------------ inputs
@dataclass(frozen=True)
class _Input:
    key: str  # identifier handed to propagate
    label: str  # name in the budget
    role: str  # 'amount', 'T', 'e0', 'reading', 'K'
    target: str  # species, electrode side or interferent
    dist: Normal


def _one_sample(sample: Any, field: str = "sample") -> Solution:
    if not isinstance(sample, Solution):
        raise InputError("expected an activity.Solution", field=field, value=type(sample).__name__)
    if sample.shape != ():
        raise InputError(
            "give one solution, not a batch: the propagation makes its own rows", field=field, value=sample.shape
        )
    return sample


def _nonnegative(value: Any, field: str) -> float:
    return float(_checks.finite_array(value, field, nonnegative=True))


def _amount_inputs(sample: Solution, u_amount: Any, u_molality: Mapping[str, Any] | None) -> list[_Input]:
    relative: dict[str, float] = {}
    if isinstance(u_amount, Mapping):
        for name, u in u_amount.items():
            relative[_sample_species(sample, name, "u_amount")] = _nonnegative(u, f"u_amount[{name!r}]")
    elif u_amount is not None:
        u = _nonnegative(u_amount, "u_amount")
        relative = {name: u for name in sample.species}
    absolute = {name: relative.get(name, 0.0) * float(sample.molality(name)) for name in sample.species}
    for name, u in (u_molality or {}).items():
        absolute[_sample_species(sample, name, "u_molality")] = _nonnegative(u, f"u_molality[{name!r}]")
    return [
        _Input(f"m_{i}", f"m({name}) [mol/kg]", "amount", name, Normal(float(sample.molality(name)), absolute[name]))
        for i, name in enumerate(sample.species)
        if absolute[name] > 0
    ]


def _sample_species(sample: Solution, name: str, field: str) -> str:
    canonical = parse_species(name).name
    if canonical not in sample.species:
        raise InputError(f"not a species of the sample ({', '.join(sample.species)})", field=field, value=name)
    return canonical


def _e0_inputs(u_e0: Any, sides: Mapping[str, Any]) -> list[_Input]:
    """``sides`` maps a side key ('electrode', 'left', 'right') to its electrode."""
    if isinstance(u_e0, Mapping):
        unknown = [k for k in u_e0 if k not in sides]
        if unknown:
            raise InputError(f"electrodes here: {', '.join(sides)}", field="u_e0", value=unknown[0])
        given = {k: _nonnegative(v, f"u_e0[{k!r}]") for k, v in u_e0.items()}
    else:
        u = _nonnegative(u_e0 or 0.0, "u_e0")
        given = {k: u for k in sides}
    label = (
        (lambda k: f"E°({sides[k].name}) [V]")
        if list(sides) == ["electrode"]
        else (lambda k: f"E°({k}: {sides[k].name}) [V]")
    )
    return [
        _Input(f"E0_{k}", label(k), "e0", k, Normal(sides[k].electrode_constant, u)) for k, u in given.items() if u > 0
    ]


def _selectivity_inputs(electrodes: list[Any], u_selectivity: Mapping[str, Any] | None) -> list[_Input]:
    known: dict[str, float] = {}
    for e in electrodes:
        known.update(e.selectivity)
    out = []
    for i, (name, u) in enumerate((u_selectivity or {}).items()):
        j = parse_species(name).name
        if j not in known:
            raise InputError(
                f"no selectivity coefficient given for this ion (known: {', '.join(known) or 'none'})",
                field="u_selectivity",
                value=name,
            )
        u = _nonnegative(u, f"u_selectivity[{name!r}]")
        if u > 0:
            out.append(_Input(f"K_{i}", f"K({j})", "K", j, Normal(float(known[j]), u)))
    return out


def _temperature_input(sample: Solution, u_temperature: Any) -> list[_Input]:
    u = _nonnegative(u_temperature or 0.0, "u_temperature")
    return [_Input("T", "T [K]", "T", "T", Normal(float(sample.T), u))] if u > 0 else []


# ------------------------------------------------------------------ the point
@dataclass(frozen=True)
class _Point:
    """One batch of the chain's inputs: the sample rows, E° shifts, selectivities, reading."""

    sol: Solution
    e0: dict  # side → E° − its tabulated value (E° enters every potential additively)
    selectivity: dict
    reading: ArrayLike
    shape: tuple  # batch shape of the columns

    def shift(self, side: str) -> Any:
        return self.e0.get(side, 0.0)


def _point_builder(sample: Solution, inputs: list[_Input], reading: ArrayLike) -> Callable[[Mapping[str, Any]], _Point]:
    def build(cols: Mapping[str, Any], *, at_estimates: bool = False) -> _Point:
        # At the estimates the amounts and T are the sample's own numbers (each input's mean
        # is the sample's float), so a plain sample is itself the solution: no re-validation.
        # (``replace`` makes a plain Solution: a subclass, e.g. a speciated one, goes through it.)
        amounts = {i.target: cols[i.key] for i in inputs if i.role == "amount"}
        T = next((cols[i.key] for i in inputs if i.role == "T"), None)
        changed = (amounts or T is not None) and not (at_estimates and type(sample) is Solution)
        sol = sample.replace(amounts, T=T) if changed else sample
        read = next((cols[i.key] for i in inputs if i.role == "reading"), reading)
        return _Point(
            sol,
            {i.target: cols[i.key] - i.dist.mean for i in inputs if i.role == "e0"},
            {i.target: cols[i.key] for i in inputs if i.role == "K"},
            read,
            np.broadcast_shapes(*(np.shape(cols[i.key]) for i in inputs)),
        )

    return build


def _cell_at(cell: Cell, K: Mapping[str, Any]) -> Cell:
    if not K:
        return cell
    return Cell(left=cell.left.with_selectivity(K), right=cell.right.with_selectivity(K), junction=cell.junction)


# ------------------------------------------------------------------ running
Quantity = Callable[[_Point, Any, list], Any]

#: Models of the spread, kept between calls: a model named by a string is otherwise built
#: afresh each time, and a parameter-based model (Pitzer) then re-reads and re-binds its
#: parameter set on every call — about 80 % of a GUM evaluation. The key is the class and
#: the parameters of the freshly resolved model, so a model registered anew under the same
#: name, or with other parameters, is not confused with the kept one. A memo, bounded in
#: size; the models in it are never changed (their bindings are caches of their own).
_SPREAD_MODELS: dict[tuple, Any] = {}
_SPREAD_MODELS_MAX = 32


def _spread_model(item: Any) -> Any:
    model = resolve_model(item)
    if not isinstance(item, str):
        return model  # an object given by the caller is used as it is
    try:
        key = (type(model), repr(sorted(model.params.items(), key=lambda kv: kv[0])))
    except Exception:  # parameters without a usable repr: no memo
        return model
    kept = _SPREAD_MODELS.get(key)
    if kept is None:
        if len(_SPREAD_MODELS) >= _SPREAD_MODELS_MAX:
            _SPREAD_MODELS.clear()
        kept = _SPREAD_MODELS[key] = model
    return kept


def _spread(quantity: Quantity, point: _Point, names: Any) -> tuple[ModelSpread | None, list[str]]:
    """The quantity at the estimates by each model; notes for the models not counted."""
    values, notes = {}, []
    for item in available_models() if names is None else names:
        name = getattr(item, "name", item)
        alerts: list[str] = []
        try:
            y = float(quantity(point, _spread_model(item), alerts))
        except (ActivityError, ImportError) as exc:
            notes.append(f"model choice: {name} not counted, cannot evaluate this sample ({exc})")
            continue
        if alerts:
            notes.append(f"model choice: {name} not counted, outside its validity ({alerts[0]}); it gives {y:.6g}")
            continue
        values[name] = y
    if not values:
        notes.append("model choice: no model could evaluate the sample inside its validity")
    return (model_spread(values) if values else None), notes


def _run(
    quantity: Quantity,
    sample: Solution,
    model: ModelLike,
    inputs: list[_Input],
    reading: ArrayLike,
    label: str,
    unit: str,
    *,
    method: str = "gum",
    trials: int | None = None,
    seed: Any = None,
    coverage: float = 0.95,
    spread_models: Any = None,
    progress: bool = False,
) -> ChainResult:
    if not inputs:
        raise InputError("no uncertain input: state at least one non-zero uncertainty", field="uncertainty", value=None)
    model = resolve_model(model)
    build = _point_builder(sample, inputs, reading)
    alerts: list[str] = []

    def f(**cols: Any) -> Any:
        return quantity(build(cols), model, alerts)

    dists = {i.key: i.dist for i in inputs}
    mc = str(method).replace("_", "-").lower() in ("monte-carlo", "mc")
    with Progress(trials if mc else None, progress=progress and mc, desc="Monte Carlo", unit="trial") as bar:
        result = propagate(counting(f, bar), dists, method, trials=trials, seed=seed, coverage=coverage)
    labels = {i.key: i.label for i in inputs}
    result = dataclasses.replace(
        result, budget=tuple(dataclasses.replace(r, name=labels[r.name]) for r in result.budget)
    )
    kinds: dict[str, list] = {}
    for message in alerts:  # Monte Carlo chunks repeat an excursion with other numbers: one note per kind
        kinds.setdefault(message.split(":")[0], []).append(message)
    notes = [
        f"during the propagation ({len(m)} batch call(s) outside a validity; the first): {m[0]}" for m in kinds.values()
    ]
    warn_alerts(notes, stacklevel=3)
    estimates = {i.key: i.dist.mean for i in inputs}
    spread, spread_notes = _spread(quantity, build(estimates, at_estimates=True), spread_models)
    return ChainResult(label, unit, model.name, result, spread, tuple(notes) + tuple(spread_notes))


_OPTIONS_DOC = """
    Other Parameters
    ----------------
    u_amount : float or Mapping[str, float], optional
        Relative standard uncertainty of the amounts (0.01 for 1 %): one number for every
        species, or per species.
    u_molality : Mapping[str, float], optional
        Absolute standard uncertainty per species, mol/kg (overrides ``u_amount``).
    u_temperature : float, default 0
        Standard uncertainty of the temperature, K.
    u_selectivity : Mapping[str, float], optional
        Standard uncertainty of selectivity coefficients of an ion-selective electrode,
        by interfering ion.
    method : {'gum', 'monte-carlo'}, default 'gum'
    trials, seed, coverage
        As for :func:`activity.uncertainty.propagate`.
    spread_models : sequence of str or ActivityModel, optional
        Models for the model-choice spread (default: every registered model).
    progress : bool, default False
        Show a progress bar of the Monte Carlo trials on standard error (only when it is a
        terminal; see :mod:`activity.workflows.progress`).
"""


def potential_with_uncertainty(
    electrode: Any,
    sample: Solution,
    model: ModelLike = "davies",
    *,
    u_e0: Any = 0.0,
    pressures: Mapping[str, Any] | None = None,
    u_amount: Any = None,
    u_molality: Mapping[str, Any] | None = None,
    u_temperature: Any = 0.0,
    u_selectivity: Mapping[str, Any] | None = None,
    **options: Any,
) -> ChainResult:
    """Electrode potential in a sample, with its uncertainty budget and the model spread.

    Parameters
    ----------
    electrode : HalfReaction or IonSelectiveElectrode
    sample : Solution
        One solution.
    model : str or ActivityModel, default 'davies'
    u_e0 : float, default 0
        Standard uncertainty of the electrode's E° (or ISE constant), V.
    pressures : Mapping[str, float], optional
        Gas partial pressures, Pa.
    {options}

    Returns
    -------
    ChainResult
        Quantity ``'E'`` in V (vs SHE for a half-reaction).

    Examples
    --------
    >>> from activity import Solution
    >>> from activity.nernst import standard_couple
    >>> r = potential_with_uncertainty(standard_couple("AgCl/Ag"), Solution({{"K+": 0.01, "Cl-": 0.01}}),
    ...                                u_amount=0.01, u_e0=1e-4, spread_models=["davies"])
    >>> round(r.value, 4), round(r.standard_uncertainty * 1e3, 2)     # V, mV
    (0.3433, 0.27)
    >>> [row.name for row in r.propagation.budget]
    ['m(K+) [mol/kg]', 'm(Cl-) [mol/kg]', 'E°(AgCl/Ag) [V]']
    """
    if not isinstance(electrode, Electrode) or electrode.own_compartment:
        raise InputError(
            "expected a HalfReaction or an IonSelectiveElectrode", field="electrode", value=type(electrode).__name__
        )
    inputs = (
        _amount_inputs(_one_sample(sample), u_amount, u_molality)
        + _temperature_input(sample, u_temperature)
        + _e0_inputs(u_e0, {"electrode": electrode})
        + _selectivity_inputs([electrode], u_selectivity)
    )

    def quantity(p: _Point, m: ActivityModel, alerts: list) -> Any:
        at = electrode.with_selectivity(p.selectivity)
        res = at.evaluate_in(p.sol, m.activity_coefficients(p.sol, warn=False), pressures=pressures)
        alerts.extend(res.alerts)
        return res.potential + p.shift("electrode")

    return _run(quantity, sample, model, inputs, None, "E", "V", **options)


def emf_with_uncertainty(
    cell: Cell,
    sample: Solution,
    model: ModelLike = "davies",
    *,
    u_e0: Any = 0.0,
    pressures: Mapping[str, Any] | None = None,
    u_amount: Any = None,
    u_molality: Mapping[str, Any] | None = None,
    u_temperature: Any = 0.0,
    u_selectivity: Mapping[str, Any] | None = None,
    **options: Any,
) -> ChainResult:
    """Cell EMF for a sample, with its uncertainty budget and the model spread.

    Parameters
    ----------
    cell : Cell
    sample : Solution
        The solution of every compartment that is not a reference electrode's filling.
    model : str or ActivityModel, default 'davies'
    u_e0 : float or Mapping[str, float], default 0
        Standard uncertainty of E°, V: one number for each electrode (independent), or
        ``{{'left': ..., 'right': ...}}``.
    pressures : Mapping[str, float], optional
    {options}

    Returns
    -------
    ChainResult
        Quantity ``'EMF'`` in V.

    Examples
    --------
    >>> from activity import Solution
    >>> from activity.nernst.electrodes import IonSelectiveElectrode, silver_chloride_electrode
    >>> cell = Cell(left=silver_chloride_electrode(3.0), right=IonSelectiveElectrode("Ca^2+", E0=0.05))
    >>> std = Solution({{"Ca^2+": 1e-3, "K+": 0.1, "Cl-": 0.102}})
    >>> r = emf_with_uncertainty(cell, std, u_e0={{"right": 3e-4}}, u_temperature=0.2, spread_models=["davies"])
    >>> round(r.value * 1e3, 1), round(r.standard_uncertainty * 1e3, 2)     # mV
    (-257.8, 0.3)
    """
    if not isinstance(cell, Cell):
        raise InputError("expected an activity.Cell", field="cell", value=type(cell).__name__)
    inputs = (
        _amount_inputs(_one_sample(sample), u_amount, u_molality)
        + _temperature_input(sample, u_temperature)
        + _e0_inputs(u_e0, {"left": cell.left, "right": cell.right})
        + _selectivity_inputs([cell.left, cell.right], u_selectivity)
    )

    def quantity(p: _Point, m: ActivityModel, alerts: list) -> Any:
        res = _cell_at(cell, p.selectivity).evaluate(p.sol, m, pressures=pressures, warn=False)
        alerts.extend(res.alerts)
        return res.emf + p.shift("right") - p.shift("left")

    return _run(quantity, sample, model, inputs, None, "EMF", "V", **options)


def molality_with_uncertainty(
    electrode: Any,
    reading: float,
    matrix: Solution,
    model: ModelLike = "davies",
    *,
    species: str | None = None,
    counter_ion: str | None = None,
    u_reading: Any = 0.0,
    u_e0: Any = 0.0,
    pressures: Mapping[str, Any] | None = None,
    u_amount: Any = None,
    u_molality: Mapping[str, Any] | None = None,
    u_temperature: Any = 0.0,
    u_selectivity: Mapping[str, Any] | None = None,
    speciation: Mapping[str, Any] | None = None,
    **options: Any,
) -> ChainResult:
    """Molality of the determinand from a reading, with its uncertainty budget and the model spread.

    Each row of the propagation solves the inverse (see :mod:`activity.nernst.inverse`); all rows
    are solved together in one vectorised call.

    Parameters
    ----------
    electrode : HalfReaction, IonSelectiveElectrode or Cell
        With a cell the reading is its EMF and ``species`` is required unless the right
        or left electrode is an ion-selective electrode.
    reading : float
        Measured potential (on the electrode's scale) or EMF, V.
    matrix : Solution
        The sample without the determinand.
    model : str or ActivityModel, default 'davies'
    species, counter_ion : str, optional
        As for :func:`activity.nernst.inverse.molality_from_potential`.
    u_reading : float, default 0
        Standard uncertainty of the reading, V.
    u_e0 : float or Mapping[str, float], default 0
        Standard uncertainty of E°, V (per side for a cell, as for :func:`emf_with_uncertainty`).
    pressures : Mapping[str, float], optional
    speciation : Mapping, optional
        Keyword arguments of :func:`activity.speciation.speciate` (``{{}}`` for its
        defaults): the electrode answers to the free ion of the speciated sample and the
        molality is the determinand's total, as for
        :func:`activity.nernst.inverse.molality_from_potential`; every perturbed or drawn
        sample is speciated, so the budget carries the uncertainty through the speciation.
    {options}

    Returns
    -------
    ChainResult
        Quantity ``'m(<species>)'`` in mol/kg.

    Examples
    --------
    >>> from activity import Solution
    >>> from activity.nernst.electrodes import IonSelectiveElectrode
    >>> ise = IonSelectiveElectrode("Ca^2+", E0=0.1)
    >>> r = molality_with_uncertainty(ise, 0.0, Solution({{"K+": 0.1, "Cl-": 0.1}}), counter_ion="Cl-",
    ...                               u_reading=2e-4, spread_models=["davies"])
    >>> round(r.value, 6), round(r.standard_uncertainty / r.value * 100, 2)    # mol/kg, %
    (0.001128, 1.57)
    """
    reading = float(_checks.finite_array(reading, "reading"))
    if isinstance(electrode, Cell):
        sides = {"left": electrode.left, "right": electrode.right}
        parts = [electrode.left, electrode.right]
        if species is None:
            ions = [e.ion for e in parts if isinstance(e, IonSelectiveElectrode)]  # an ISE's ion comes first
            if len(ions) != 1:
                raise InputError("say which species to solve for", field="species", value=None)
            species = ions[0]
        name = parse_species(species).name

        def quantity(p: _Point, m: ActivityModel, alerts: list) -> Any:
            target = np.broadcast_to(p.reading - p.shift("right") + p.shift("left"), p.shape)
            res = molality_from_emf(
                _cell_at(electrode, p.selectivity),
                target,
                p.sol,
                m,
                species=name,
                counter_ion=counter_ion,
                pressures=pressures,
                warn=False,
                speciation=speciation,
            )
            alerts.extend(res.alerts)
            return res.molality
    elif isinstance(electrode, Electrode) and not electrode.own_compartment:
        sides, parts = {"electrode": electrode}, [electrode]
        name = electrode.determinand(species)

        def quantity(p: _Point, m: ActivityModel, alerts: list) -> Any:
            target = np.broadcast_to(p.reading - p.shift("electrode"), p.shape)  # rows even when only K varies
            res = molality_from_potential(
                electrode.with_selectivity(p.selectivity),
                target,
                p.sol,
                m,
                species=species,
                counter_ion=counter_ion,
                pressures=pressures,
                warn=False,
                speciation=speciation,
            )
            alerts.extend(res.alerts)
            return res.molality
    else:
        raise InputError(
            "expected a HalfReaction, IonSelectiveElectrode or Cell", field="electrode", value=type(electrode).__name__
        )
    u_read = _nonnegative(u_reading or 0.0, "u_reading")
    inputs = (
        _amount_inputs(_one_sample(matrix, "matrix"), u_amount, u_molality)
        + _temperature_input(matrix, u_temperature)
        + _e0_inputs(u_e0, sides)
        + _selectivity_inputs(parts, u_selectivity)
        + ([_Input("reading", "reading [V]", "reading", "reading", Normal(reading, u_read))] if u_read > 0 else [])
    )
    return _run(quantity, matrix, model, inputs, reading, f"m({name})", "mol/kg", **options)


for _f in (potential_with_uncertainty, emf_with_uncertainty, molality_with_uncertainty):
    if _f.__doc__:  # absent under python -OO
        _f.__doc__ = _f.__doc__.format(options=_OPTIONS_DOC.strip())
del _f
