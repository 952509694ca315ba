"""From a measured potential back to the activity and the molality of the determinand.

Two questions, two functions:

* :func:`activity_from_potential` — the activity that makes an electrode read E in a
  given solution (the other species' activities taken from that solution as it is);
  a closed form, no iteration.
* :func:`molality_from_potential` and :func:`molality_from_emf` — the molality of the
  determinand in a stated sample matrix. The activity coefficient depends on the ionic
  strength, which depends on the unknown, so the equation E(m) = E_measured is solved
  for ln m by a vectorised secant iteration (every row at once) to a relative change
  below ``rtol`` (default 1e-10); rows that do not converge raise
  :class:`~activity.errors.ConvergenceError` naming them.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .. import _checks
from ..coefficients import resolve_model
from ..coefficients.base import CoefficientResult, ModelLike
from ..constants import LN10, F, R
from ..errors import ConvergenceError, InputError, warn_alerts
from ..solution import Solution
from ..species import parse_species
from .cell import Cell
from .electrodes import IonSelectiveElectrode, _own_row_model, free_solution
from .half_reaction import HalfReaction
from .protocol import Electrode

__all__ = ["InverseResult", "activity_from_potential", "molality_from_potential", "molality_from_emf"]

#: Bounds of the search on ln m (design choice, not data): 1e-16 mol/kg lies far below any
#: measurable activity, 30 mol/kg above the validity of every shipped model.
_LN_M_MIN, _LN_M_MAX = np.log(1e-16), np.log(30.0)

#: Whether the secant may take the determinand's own rows (see :func:`_ise_rows`). The tests
#: switch it off to compare with the general path, which rebuilds the whole sample per step.
_ROW_PATH = True


@dataclass(frozen=True)
class InverseResult:
    """The determinand found from a measured potential.

    Attributes
    ----------
    species : str
    molality : float or ndarray
        mol/kg in the sample.
    activity : float or ndarray
        a = γ m at that molality.
    gamma : float or ndarray
        Activity coefficient of the determinand.
    ionic_strength : float or ndarray
        Of the sample with the determinand (and its counter-ion) added.
    iterations : int
        Secant iterations used (0 for a closed form).
    solution : Solution
        The sample as solved.
    model : str
    notes : tuple of str
    alerts : tuple of str
        The notes that call for a :class:`~activity.errors.ValidityWarning`.
    """

    species: str
    molality: Any
    activity: ArrayLike
    gamma: Any
    ionic_strength: Any
    iterations: int
    solution: Solution
    model: str
    notes: tuple = ()
    alerts: tuple = ()


def _determinand(electrode: Any, species: str | None) -> str:
    """The determinand of a single electrode dipping into the sample."""
    if not isinstance(electrode, Electrode) or electrode.own_compartment:
        raise InputError(
            "expected an electrode that dips into the sample (a HalfReaction or an IonSelectiveElectrode)",
            field="electrode",
            value=type(electrode).__name__,
        )
    return electrode.determinand(species)


def activity_from_potential(
    electrode: Any, E: ArrayLike, sol: Solution, model: ModelLike = "davies", species: str | None = None, **kw: Any
) -> Any:
    """Activity of the determinand that makes ``electrode`` read ``E`` in ``sol``.

    The other species' activities (and, for an ion-selective electrode, the interfering
    ions) are those of ``sol`` under ``model``; the determinand's own molality in
    ``sol`` is not used except through the ionic strength.

    Parameters
    ----------
    electrode : HalfReaction or IonSelectiveElectrode
    E : array_like
        Measured electrode potential, V (vs SHE, or the scale of the electrode's E0).
    sol : Solution
    model : str or ActivityModel
    species : str, optional
        Which species to solve for when a half-reaction has several.
    **kw
        ``pressures=`` for half-reactions with gases.

    Examples
    --------
    >>> from activity import Solution
    >>> from activity.nernst import standard_couple
    >>> hr = standard_couple("AgCl/Ag")
    >>> round(activity_from_potential(hr, 0.3405, Solution({"Na+": 0.1, "NO3-": 0.1})), 6)
    0.010062
    """
    name = _determinand(electrode, species)
    E = _checks.finite_array(E, "E")
    T = np.asarray(sol.T_compact, float)
    if isinstance(electrode, HalfReaction):
        ref = electrode.evaluate(sol, model, activities={name: 1.0}, **kw).potential
        i = electrode.species.index(name)
        ln_a = (np.asarray(ref) - E) * electrode.n * F / (R * T * electrode.nu[i])
        return _checks.scalar_or_array(np.exp(ln_a))
    probe = sol if name in sol.species else sol.replace({name: 0.0})
    g = resolve_model(model).activity_coefficients(probe)
    _, present, zj, aj = electrode.activity_terms(probe, g.log10_gamma)
    total = 10.0 ** ((E - electrode.e0_at(T)) / electrode.slope(T))  # slope carries 1/z
    zi = electrode.z
    interf = sum(electrode.selectivity[j] * a_j ** (zi / z_j) for j, z_j, a_j in zip(present, zj, aj))
    a = total - interf
    if np.any(a <= 0):
        rows = np.flatnonzero(np.ravel(a <= 0))[:10].tolist()
        raise InputError(
            f"potential at or below what the interfering ions alone give (rows {rows})", field="E", value=None
        )
    return _checks.scalar_or_array(a)


def _counter_amount(species: str, counter_ion: str | None) -> tuple[str | None, float]:
    if counter_ion is None:
        return None, 0.0
    zc = parse_species(counter_ion).charge
    zd = parse_species(species).charge
    if zc == 0 or zd == 0 or np.sign(zc) == np.sign(zd):
        raise InputError(
            "the counter-ion must carry charge opposite to the determinand", field="counter_ion", value=counter_ion
        )
    return parse_species(counter_ion).name, abs(zd / zc)


def _builder(
    matrix: Solution, species: str, counter: str | None, ratio: float, base_c: Any, shape: tuple
) -> Callable[[np.ndarray], Solution]:
    """x = ln m ↦ the matrix with the determinand (and its counter-ion) at m.

    The species order, charges, the matrix molalities broadcast to the batch, T and P are
    fixed once; each step only writes the determinand's row and the counter-ion's row into
    a copy and wraps it without re-validating (the matrix was checked when it was built,
    and exp(x) is finite and positive), so a step costs a copy and two row writes rather
    than a new :class:`Solution` from a mapping.
    """
    names = list(matrix.species)
    charges = list(matrix.charges)
    for name in (species, counter):
        if name is not None and name not in names:
            names.append(name)
            charges.append(parse_species(name).charge)
    k = len(names)
    base = np.zeros((k,) + shape)
    n0 = len(matrix.species)
    lead = (1,) * (len(shape) - len(matrix.shape))  # batch axes align on the right
    base[:n0] = np.broadcast_to(matrix.m.reshape((n0,) + lead + matrix.shape), (n0,) + shape)
    i_d = names.index(species)
    i_c = names.index(counter) if counter is not None else None
    c_row = np.broadcast_to(base_c, shape)
    species_t = tuple(names)
    charges_a = np.array(charges, dtype=int)
    T = np.asarray(matrix.T_compact, float)
    P = np.asarray(matrix.P_compact, float)

    def build(x: np.ndarray, last: bool = False) -> Solution:
        m = base if last else base.copy()  # the last build may take the template itself
        row = m[i_d, ...]
        np.exp(x, out=row)
        if i_c is not None:
            crow = m[i_c, ...]
            np.multiply(row, ratio, out=crow)
            crow += c_row
        return Solution._adopt(species_t, charges_a, m, T, P)

    return build


def _ise_rows(
    electrode: Any, model: Any, matrix: Solution, species: str, counter: str | None, ratio: float, shape: tuple
) -> Callable[[np.ndarray], Any] | None:
    """x = ln m ↦ the potential of an ion-selective electrode, from the rows it reads alone.

    For a model whose γ of an ion depends only on I and the ion's own parameters, a step
    needs γ of the primary ion and the interferents present, not of the whole sample: the
    ionic strength is updated as I = I_matrix + ½ (z_d² + r z_c²) m (r the counter-ion's
    amount per determinand), the model is bound once to those few species, and the
    electrode evaluates on a solution of them alone (without interferents the Nernst term
    takes log10 m = x/ln 10 directly). None where this does not apply (the
    general path of :func:`_builder` is taken).
    """
    if not (_ROW_PATH and isinstance(electrode, IonSelectiveElectrode) and _own_row_model(model)):
        return None
    present = [j for j in electrode.selectivity if j in matrix.species]
    names = (species,) + tuple(present)
    charges = np.array([parse_species(species).charge] + [matrix.charges[matrix.index(j)] for j in present], int)
    lead = (1,) * (len(shape) - len(matrix.shape))  # batch axes align on the right
    rest = np.zeros((len(names),) + shape)
    for k, j in enumerate(present, start=1):
        rest[k] = np.asarray(matrix.m[matrix.index(j)]).reshape(lead + matrix.shape)
    I0 = np.broadcast_to(np.asarray(matrix.ionic_strength, float).reshape(lead + matrix.shape), shape)
    zc = parse_species(counter).charge if counter is not None else 0
    per_m = 0.5 * (float(charges[0]) ** 2 + ratio * zc * zc)
    T = np.asarray(matrix.T_compact, float)
    P = np.asarray(matrix.P_compact, float)
    bound = model.bind(names, charges)
    E0, slope = electrode.e0_at(T), electrode.slope(T)

    def potential(x: np.ndarray) -> Any:
        if present:
            m = rest.copy()
            np.exp(x, out=m[0, ...])
        else:
            m = np.exp(x).reshape((1,) + shape)
        I = per_m * m[0, ...]
        I += I0
        sub = Solution._adopt(names, charges, m, T, P)
        if not present:
            # E0 + slope (log10 m + log10 γ) with log10 m = x / ln 10: no logarithm per step
            E = x * (1.0 / LN10)
            E += model.compute_log10_gamma(sub, bound, I)[0]
            E *= slope
            return E + E0
        g = CoefficientResult(names, model.compute_log10_gamma(sub, bound, I), I, model.name)
        return electrode.evaluate_in(sub, g).potential

    return potential


def _outside_validity(model: Any, sol: Solution, x: np.ndarray, done: np.ndarray) -> str:
    """For the message of a failed solve: the failed rows that ended inside the search bounds
    (the secant wandered, rather than being pinned at a bound by a target beyond reach, as
    after a unit slip) and lie outside the model's validity at the last iterate. There the
    potential need not rise steadily with the molality (under the limiting law, Ca²⁺ alone in
    water: log10 m − 4A√(2m) peaks at m ≈ 0.09 mol/kg for A = 0.509), so a root may be missing
    or not unique. Empty when there are none."""
    x, failed = np.ravel(x), ~np.ravel(done)
    wandered = failed & (x > _LN_M_MIN) & (x < _LN_M_MAX)
    if not np.any(wandered):
        return ""
    try:
        res = model.activity_coefficients(sol, warn=False)
    except Exception:  # noqa: BLE001 - the message must not hide the convergence failure
        return ""
    outside = wandered & ~np.ravel(np.broadcast_to(np.asarray(res.in_range, dtype=bool), sol.shape))
    if not np.any(outside):
        return ""
    return (
        f"; at the last iterate row(s) {np.flatnonzero(outside)[:10].tolist()} lie outside the model's validity "
        f"({res.alerts[0] if res.alerts else model.name}), where the potential need not rise steadily with "
        "the molality: a root may be missing or not unique"
    )


def _solve(
    forward: Callable[[Solution], Any],
    target: Any,
    matrix: Solution,
    species: str,
    counter_ion: str | None,
    model: ModelLike,
    rtol: float,
    max_iter: int,
    warn: bool,
    electrode: Any = None,
) -> InverseResult:
    if not isinstance(matrix, Solution):
        raise InputError(
            "expected an activity.Solution for the sample matrix", field="matrix", value=type(matrix).__name__
        )
    counter, ratio = _counter_amount(species, counter_ion)
    base_c = np.asarray(matrix.molality(counter, default=0.0), float) if counter else 0.0
    base_d = np.asarray(matrix.molality(species, default=0.0), float)
    if np.any(base_d > 0):
        raise InputError(
            "the matrix already holds the determinand; give the matrix without it", field="matrix", value=species
        )
    target = _checks.finite_array(target, "potential")
    shape = np.broadcast_shapes(matrix.shape, target.shape)
    build = _builder(matrix, species, counter, ratio, base_c, shape)
    rows = _ise_rows(electrode, model, matrix, species, counter, ratio, shape) if electrode is not None else None

    def f(x: np.ndarray) -> np.ndarray:
        E = rows(x) if rows is not None else forward(build(x))
        return np.broadcast_to(np.asarray(E, float), shape) - target

    # two starting points in the usual analytical range; steps capped at e^5 ≈ 150-fold (design choices)
    x0 = np.full(shape, np.log(1e-3))
    x1 = np.full(shape, np.log(1e-2))
    f0, f1 = f(x0), f(x1)
    done = np.zeros(shape, bool)
    it = 0
    for it in range(1, max_iter + 1):  # noqa: B007 - the count is reported after the loop
        df = f1 - f0
        ok = (df != 0) & ~done
        step = np.where(ok, -f1 * (x1 - x0) / np.where(ok, df, 1.0), 0.0)
        step = np.clip(step, -5.0, 5.0)
        x2 = np.clip(x1 + step, _LN_M_MIN, _LN_M_MAX)
        inside = (x2 > _LN_M_MIN) & (x2 < _LN_M_MAX)
        done |= (np.abs(x2 - x1) <= rtol) & inside
        x0, f0, x1 = x1, f1, x2
        if np.all(done):
            break
        f1 = f(x1)
    if not np.all(done):
        rows = np.flatnonzero(~np.ravel(done))
        raise ConvergenceError(
            f"no molality of {species} between 1e-16 and 30 mol/kg reproduces the potential within "
            f"{max_iter} iterations in {rows.size} row(s): {rows[:10].tolist()}"
            f"{_outside_validity(model, build(x1), x1, done)}",
            rows=rows,
        )
    sol = build(x1, last=True)
    j = sol.index(species)
    if _ROW_PATH and _own_row_model(model):
        # γ of the determinand alone (its row is the full evaluation's, bit for bit), with the
        # validity record the full evaluation carries: the other species' rows are not formed
        I = np.asarray(sol.ionic_strength, dtype=float)
        bound = model.bind(sol.species, sol.charges)
        lg = model.log10_gamma_rows(sol, bound, I, [j])[j]
        _, notes_t, _, alerts = model._range_record(sol, bound, I)
    else:
        g = model.activity_coefficients(sol, warn=False)
        lg, notes_t, alerts = g.log10_gamma[j], g.notes, g.alerts
    if warn:
        warn_alerts(alerts)
    gamma = 10.0**lg
    notes = list(notes_t)
    if counter is None:
        notes.append(
            f"{species} added without a counter-ion (counter_ion=None): the sample's charge balance ignores it"
        )
    return InverseResult(
        species,
        _checks.scalar_or_array(sol.m[j].copy()),
        _checks.scalar_or_array(gamma * sol.m[j]),
        _checks.scalar_or_array(gamma),
        sol.ionic_strength,
        it,
        sol,
        model.name,
        tuple(notes),
        alerts,
    )


def _free_result(res: InverseResult, model: Any, speciation: Mapping[str, Any] | None, warn: bool) -> InverseResult:
    """With speciation, the activity reported is the free ion's and γ the ratio activity/total;
    the model's validity is that on the free species (where γ is used), not on the totals."""
    if speciation is None:
        return res
    free, notes = free_solution(res.solution, model, speciation)
    k = free.index(res.species)
    g = model.activity_coefficients(free, warn=False)
    if warn:
        warn_alerts(g.alerts)
    a = _checks.scalar_or_array(free.m[k] * 10.0 ** g.log10_gamma[k])
    gamma = _checks.scalar_or_array(np.asarray(a) / np.asarray(res.molality))
    kept = tuple(n for n in res.notes if n not in res.alerts)  # the totals' excursions do not apply
    return dataclasses.replace(
        res, activity=a, gamma=gamma, notes=tuple(dict.fromkeys(kept + notes + g.notes)), alerts=g.alerts
    )


def molality_from_potential(
    electrode: Any,
    E: ArrayLike,
    matrix: Solution,
    model: ModelLike = "davies",
    *,
    species: str | None = None,
    counter_ion: str | None = None,
    pressures: Mapping[str, Any] | None = None,
    rtol: float = 1e-10,
    max_iter: int = 60,
    warn: bool = True,
    speciation: Mapping[str, Any] | None = None,
) -> InverseResult:
    """Molality of the determinand in ``matrix`` from a measured electrode potential.

    Parameters
    ----------
    electrode : HalfReaction or IonSelectiveElectrode
    E : array_like
        Measured potential, V (broadcasts with the matrix batch).
    matrix : Solution
        The sample without the determinand (background electrolyte, other ions, T).
    model : str or ActivityModel, default 'davies'
    species : str, optional
        Determinand, when a half-reaction involves several dissolved species.
    counter_ion : str, optional
        Ion added with the determinand in the electroneutral amount (e.g. ``'Cl-'`` for
        CaCl2); without one only the determinand enters the ionic strength (noted).
    pressures : Mapping, optional
        Gas partial pressures (Pa) for half-reactions with gases.
    rtol : float, default 1e-10
        Convergence: change of ln m (relative change of m) per iteration.
    max_iter : int, default 60
    warn : bool, default True
        Warn once about the final result's ``alerts`` (validity excursions).
    speciation : Mapping, optional
        Keyword arguments of :func:`activity.speciation.speciate` (``{}`` for its defaults):
        the electrode answers to the free ion of the speciated sample, and the molality found
        is the determinand's total (free plus paired and complexed); ``activity`` is the free
        ion's and ``gamma`` the ratio activity/total molality.

    Returns
    -------
    InverseResult

    Examples
    --------
    >>> from activity import Solution
    >>> from activity.nernst.electrodes import IonSelectiveElectrode
    >>> ise = IonSelectiveElectrode("Ca^2+", E0=0.1)
    >>> matrix = Solution({"K+": 0.1, "Cl-": 0.1})
    >>> res = molality_from_potential(ise, 0.0, matrix, counter_ion="Cl-")
    >>> round(res.molality, 6), round(res.activity, 6)
    (0.001128, 0.000416)
    """
    name = _determinand(electrode, species)
    model = resolve_model(model)

    def forward(s: Solution) -> Any:
        s, _ = free_solution(s, model, speciation)
        # Per step only log10 γ is needed: the validity checks, notes and φ come from the
        # full evaluation of the converged solution in _solve.
        lg = model.log10_gamma(s)
        g = CoefficientResult(s.species, lg, s.ionic_strength, model.name)
        return electrode.evaluate_in(s, g, pressures=pressures).potential

    res = _solve(
        forward,
        E,
        matrix,
        name,
        counter_ion,
        model,
        rtol,
        max_iter,
        warn and speciation is None,
        electrode if speciation is None else None,
    )
    return _free_result(res, model, speciation, warn)


def molality_from_emf(
    cell: Cell,
    emf: ArrayLike,
    matrix: Solution,
    model: ModelLike = "davies",
    *,
    species: str,
    counter_ion: str | None = None,
    pressures: Mapping[str, Any] | None = None,
    rtol: float = 1e-10,
    max_iter: int = 60,
    warn: bool = True,
    speciation: Mapping[str, Any] | None = None,
) -> InverseResult:
    """Molality of ``species`` in the sample from a measured cell EMF.

    The sample is the solution of every compartment that is not a reference
    electrode's filling; the junction term (if the cell has one) is recomputed at each
    step, since it too depends on the unknown. ``speciation`` works as for
    :func:`molality_from_potential` (the sample is speciated at each step).

    Examples
    --------
    >>> from activity import Solution
    >>> from activity.nernst.electrodes import IonSelectiveElectrode, silver_chloride_electrode
    >>> cell = Cell(left=silver_chloride_electrode(3.0), right=IonSelectiveElectrode("Ca^2+", E0=0.05))
    >>> matrix = Solution({"K+": 0.1, "Cl-": 0.1})
    >>> emf = cell.emf(Solution({"Ca^2+": 0.002, "K+": 0.1, "Cl-": 0.104}))
    >>> round(molality_from_emf(cell, emf, matrix, species="Ca2+", counter_ion="Cl-").molality, 9)
    0.002
    """
    if not isinstance(cell, Cell):
        raise InputError("expected an activity.Cell", field="cell", value=type(cell).__name__)
    name = parse_species(species).name
    model = resolve_model(model)  # once: every step of the secant reuses the bound model

    def forward(s: Solution) -> Any:
        s, _ = free_solution(s, model, speciation)
        return cell.evaluate(s, model, pressures=pressures, warn=False).emf

    res = _solve(forward, emf, matrix, name, counter_ion, model, rtol, max_iter, warn and speciation is None)
    return _free_result(res, model, speciation, warn)
