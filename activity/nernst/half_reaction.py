"""Half-reactions and their activity-corrected Nernst potentials.

A :class:`HalfReaction` is a reduction ``Ox + n e- = Red`` with a standard potential E°
(V vs SHE at 298.15 K) and optional temperature coefficients. Its potential in a
solution follows from the activities of the species taking part:

* dissolved species — a = γ m from the activity model;
* solids and pure liquids (``AgCl(s)``, ``Hg(l)``) — a = 1;
* gases — a = p / 1 bar from a partial pressure (1 bar when none is given, recorded);
* water — the model's water activity where the model defines an osmotic coefficient,
  else 1 (recorded).

Couples met in practice are tabulated in ``models/standard_potentials.toml`` and are
obtained with :func:`standard_couple` (or :meth:`HalfReaction.from_table`).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .. import _checks, data
from ..coefficients import ActivityModel, get_model, resolve_model
from ..coefficients.base import ModelLike
from ..constants import LN10, P_STANDARD, T_REF, F, R
from ..errors import InputError, warn_alerts
from ..reactions import Reaction, parse_reaction
from ..solution import Solution
from ..species import parse_species
from .equations import standard_potential_at
from .protocol import Electrode, ElectrodeResult

__all__ = [
    "ElectrodeResult",
    "HalfReaction",
    "standard_couple",
    "available_couples",
    "best_available_model",
]

#: Order in which :func:`best_available_model` tries models for concentrated solutions.
MODEL_PREFERENCE = ("pitzer", "truesdell-jones", "extended-debye-huckel", "davies")


def best_available_model(
    species: Sequence[str], preference: Sequence[str] = MODEL_PREFERENCE
) -> tuple[ActivityModel, tuple[str, ...]]:
    """The first model in ``preference`` that loads and covers ``species``.

    Models that cannot be loaded (for example ``pitzer`` before it is installed) or that
    lack parameters for a species are skipped; every skip is returned as a note.

    Examples
    --------
    >>> model, notes = best_available_model(["K+", "Cl-"], ["no-such-model", "davies"])
    >>> model.name, notes[0].startswith("no-such-model unavailable")
    ('davies', True)
    """
    names = tuple(parse_species(s).name for s in species)
    charges = np.array([parse_species(s).charge for s in names])
    notes = []
    for name in preference:
        try:
            model = get_model(name)
            model.bind(names, charges)
        except (InputError, ImportError) as exc:
            notes.append(f"{name} unavailable ({exc})")
            continue
        if notes:
            notes.append(f"used {model.name} instead")
        return model, tuple(notes)
    raise InputError("none of the preferred models covers these species", field="model", value=list(preference))


#: Below this gas pressure (Pa) a value is most likely a pressure in bar or atm given as Pa.
LOW_PRESSURE = 100.0


def check_pressures(pressures: Mapping[str, Any] | None, low_pressure: bool = False) -> None:
    """Refuse gas pressures that are not finite and positive, or (unless ``low_pressure``) below 100 Pa."""
    if pressures is None:
        return
    if not isinstance(pressures, Mapping):
        raise InputError("expected a mapping of gas to pressure in Pa", field="pressures", value=pressures)
    for gas, value in pressures.items():
        arr = _checks.finite_array(value, f"pressures[{gas!r}]", positive=True)
        if not low_pressure and arr.size and float(arr.min()) < LOW_PRESSURE:
            raise InputError(
                f"below {LOW_PRESSURE:g} Pa: pressures are in Pa (1 bar = 1e5 Pa, 1 atm = 101325 Pa); "
                "pass low_pressure=True for a trace gas on purpose",
                field=f"pressures[{gas!r}]",
                value=float(arr.min()),
            )


class HalfReaction(Electrode):
    """A reduction half-reaction with its standard potential.

    Parameters
    ----------
    reaction : str or Reaction
        Written as a reduction, e.g. ``"AgCl(s) + e- = Ag(s) + Cl-"``; checked for
        element and charge balance.
    E0 : float
        Standard potential at 298.15 K, V vs SHE.
    dE0dT, d2E0dT2 : float, default 0
        Temperature coefficients at 298.15 K (V/K, V/K²).
    fixed : Mapping[str, float], optional
        Activities fixed by the electrode's construction (e.g. quinhydrone).
    name, source : str, optional
        Label and literature source.

    Examples
    --------
    >>> from activity import Solution
    >>> hr = HalfReaction("AgCl(s) + e- = Ag(s) + Cl-", E0=0.22233)
    >>> hr.n
    1
    >>> round(hr.potential(Solution({"K+": 0.01, "Cl-": 0.01}), "davies"), 4)
    0.3433
    """

    def __init__(
        self,
        reaction: str | Reaction,
        E0: float,
        *,
        dE0dT: float = 0.0,
        d2E0dT2: float = 0.0,
        fixed: Mapping[str, float] | None = None,
        name: str | None = None,
        source: str | None = None,
    ):
        rx = reaction if isinstance(reaction, Reaction) else parse_reaction(reaction)
        rx.check_balance()
        n = -rx.electrons
        if n <= 0:
            raise InputError(
                "write the half-reaction as a reduction, with the electrons on the left",
                field="reaction",
                value=str(reaction),
            )
        self.reaction = rx
        self.n = int(n) if n.denominator == 1 else float(n)
        self.E0 = float(_checks.finite_array(E0, "E0"))
        self.dE0dT = float(_checks.finite_array(dE0dT, "dE0dT"))
        self.d2E0dT2 = float(_checks.finite_array(d2E0dT2, "d2E0dT2"))
        self.name = name or str(rx)
        self.source = source
        keep = [i for i, s in enumerate(rx.species) if not s.is_electron]
        self._species = tuple(rx.species[i] for i in keep)
        self._nu = np.array([float(rx.nu[i]) for i in keep])
        self.fixed = {}
        for k, v in (fixed or {}).items():
            key = parse_species(k).name
            if key not in self.species:
                raise InputError("not a species of this half-reaction", field="fixed", value=k)
            self.fixed[key] = float(_checks.finite_array(v, f"fixed[{k!r}]", positive=True))

    # ------------------------------------------------------------ views
    @property
    def species(self) -> tuple[str, ...]:
        """Species other than the electron."""
        return tuple(s.name for s in self._species)

    @property
    def nu(self) -> np.ndarray:
        """Stoichiometric numbers of :attr:`species` (products positive)."""
        return self._nu.copy()

    @property
    def determinands(self) -> tuple[str, ...]:
        """Dissolved species whose activity the potential depends on (not water)."""
        return tuple(
            s.name for s in self._species if s.phase == "aq" and s.formula != "H2O" and s.name not in self.fixed
        )

    @property
    def responds_to(self) -> tuple[str, ...]:
        """The same as :attr:`determinands` (the electrode protocol's name)."""
        return self.determinands

    @property
    def electrode_constant(self) -> float:
        """E° at 298.15 K, V."""
        return self.E0

    def __repr__(self) -> str:
        return f"HalfReaction({str(self.reaction)!r}, E0={self.E0!r})"

    # ------------------------------------------------------------ tables
    @classmethod
    def from_table(cls, couple: str) -> HalfReaction:
        """The couple ``couple`` from ``models/standard_potentials.toml``.

        Examples
        --------
        >>> HalfReaction.from_table("Cu2+/Cu")
        HalfReaction('Cu^2+ + 2 e- = Cu(s)', E0=0.3419)
        """
        return standard_couple(couple)

    # ------------------------------------------------------------ physics
    def standard_potential(self, T: ArrayLike = T_REF) -> Any:
        """E°(T) from E°(298.15 K) and the temperature coefficients, V."""
        return standard_potential_at(self.E0, self.dE0dT, self.d2E0dT2, T)

    def log10_activities(
        self,
        sol: Solution,
        gamma: Any,
        *,
        pressures: Mapping[str, Any] | None = None,
        activities: Mapping[str, Any] | None = None,
    ) -> tuple[dict[str, Any], tuple[str, ...]]:
        """log10 a of every species in :attr:`species` (0.0 for pure phases), and notes.

        ``gamma`` is the model's :class:`~activity.coefficients.CoefficientResult` for
        ``sol``. ``pressures`` gives gas partial pressures in Pa; ``activities``
        overrides the activity of any species.
        """
        over = {parse_species(k).name: v for k, v in (activities or {}).items()}
        press = {parse_species(k).name: v for k, v in (pressures or {}).items()}
        notes: list[str] = []
        out: dict[str, Any] = {}
        for sp in self._species:
            name = sp.name
            out[name] = 0.0
            if name in over:
                out[name] = np.log10(_checks.finite_array(over[name], f"activities[{name!r}]", positive=True))
            elif name in self.fixed:
                out[name] = np.log10(self.fixed[name])
            elif sp.phase in ("s", "l") and sp.formula != "H2O":
                continue  # pure phase, a = 1
            elif sp.phase == "g":
                if name in press:
                    p = _checks.finite_array(press[name], f"pressures[{name!r}]", positive=True)
                    out[name] = np.log10(p / P_STANDARD)
                else:
                    notes.append(f"{name}: no partial pressure given; taken at the standard 1 bar")
            elif sp.formula == "H2O":
                if gamma.water_activity is None:
                    notes.append(f"water activity taken as 1: model {gamma.model} defines no osmotic coefficient")
                else:
                    out[name] = np.log10(gamma.water_activity)
            else:
                if name not in sol.species:
                    raise InputError(
                        f"{name} takes part in {self.name} but is not in the solution; add it or pass activities=",
                        field="species",
                        value=name,
                    )
                j = sol.species.index(name)
                m = sol.m[j]
                if not np.all(m > 0):
                    raise InputError(
                        f"{name} has zero molality in some row; its potential is undefined",
                        field="species",
                        value=name,
                    )
                la = np.log(m)  # ln is about twice as fast as log10
                la *= 1.0 / LN10
                la += gamma.log10_gamma[j]
                out[name] = la
        return out, tuple(notes)

    def _from_log10_a(self, log10_a: Mapping[str, Any], T: np.ndarray, E0: ArrayLike) -> Any:
        coef = -(R * LN10 / (self.n * F)) * T
        E: ArrayLike = None
        for nu, name in zip(self._nu, self.species):
            la = log10_a[name]
            if np.ndim(la) == 0 and la == 0.0:
                continue
            term = la * (nu * coef)
            E = term if E is None else E + term
        E0 = np.asarray(E0)
        if E is None:
            return E0
        if isinstance(E, np.ndarray) and E.shape == np.broadcast_shapes(E.shape, E0.shape):
            return np.add(E, E0, out=E)
        return E + E0

    def evaluate(
        self,
        sol: Solution,
        model: ModelLike = "davies",
        *,
        pressures: Mapping[str, Any] | None = None,
        activities: Mapping[str, Any] | None = None,
        warn: bool = True,
        low_pressure: bool = False,
    ) -> ElectrodeResult:
        """Potential vs SHE at the solution's temperature, with everything used.

        Parameters
        ----------
        sol : Solution
            The solution the electrode dips into (one or a batch).
        model : str or ActivityModel, default 'davies'
        pressures : Mapping[str, array_like], optional
            Partial pressures of gases in Pa (standard state 1 bar).
        activities : Mapping[str, array_like], optional
            Activities that override the model for named species.
        warn : bool, default True
            Warn (:class:`~activity.errors.ValidityWarning`) about the result's ``alerts``.
        low_pressure : bool, default False
            Allow gas pressures below 100 Pa (refused otherwise: ``1`` meaning 1 bar is the
            usual slip).

        Returns
        -------
        ElectrodeResult
        """
        if not isinstance(sol, Solution):
            raise InputError("expected an activity.Solution", field="solution", value=type(sol).__name__)
        check_pressures(pressures, low_pressure)
        g = resolve_model(model).activity_coefficients(sol, warn=False)
        res = self.evaluate_in(sol, g, pressures=pressures, activities=activities)
        if warn:
            warn_alerts(res.alerts)
        return res

    def evaluate_in(
        self,
        sol: Solution,
        g: Any,
        *,
        pressures: Mapping[str, Any] | None = None,
        activities: Mapping[str, Any] | None = None,
    ) -> ElectrodeResult:
        """:meth:`evaluate` with the model's result ``g`` for ``sol`` already computed."""
        log10_a, notes = self.log10_activities(sol, g, pressures=pressures, activities=activities)
        T = sol.T_compact
        E0 = self.standard_potential(T)
        E = self._from_log10_a(log10_a, T, E0)
        if (self.dE0dT == 0 and self.d2E0dT2 == 0) and np.any(T != T_REF) and self.E0 != 0.0:
            notes = notes + (f"{self.name}: no temperature coefficient of E°; the 25 °C value is used",)
        lg = {n: _checks.scalar_or_array(np.broadcast_to(v, sol.shape)) for n, v in log10_a.items()}
        return ElectrodeResult(
            _checks.scalar_or_array(np.broadcast_to(E, sol.shape)),
            E0,
            lg,
            _checks.scalar_or_array(T),
            g.model,
            tuple(g.notes) + notes,
            g.in_range,
            g.alerts,
        )

    def potential(self, sol: Solution, model: ModelLike = "davies", **kw: Any) -> Any:
        """Activity-corrected potential in V vs SHE (shorthand for ``evaluate(...).potential``)."""
        return self.evaluate(sol, model, **kw).potential


# ---------------------------------------------------------------- the table
def _couple_key(name: str) -> str:
    parts = []
    for part in str(name).strip().split("/"):
        try:
            parts.append(parse_species(part).name)
        except InputError:
            parts.append(part.strip().lower())
    return "/".join(parts)


def _table() -> dict[str, tuple[str, Mapping[str, Any]]]:
    couples = data.load("standard_potentials")["couples"]
    return {_couple_key(k): (k, v) for k, v in couples.items()}


def available_couples() -> tuple[str, ...]:
    """Names of the tabulated couples.

    Examples
    --------
    >>> "AgCl/Ag" in available_couples()
    True
    """
    return tuple(data.load("standard_potentials")["couples"])


def standard_couple(name: str) -> HalfReaction:
    """A :class:`HalfReaction` for a tabulated couple, with its sources.

    Parameters
    ----------
    name : str
        E.g. ``'AgCl/Ag'``, ``'Cu2+/Cu'``, ``'Fe^3+/Fe^2+'``, ``'quinhydrone'``.

    Examples
    --------
    >>> hr = standard_couple("Fe3+/Fe2+")
    >>> hr.E0, hr.dE0dT
    (0.771, 0.001175)
    """
    table = _table()
    key = _couple_key(name)
    if key not in table:
        raise InputError(f"no such couple; tabulated: {', '.join(available_couples())}", field="couple", value=name)
    label, entry = table[key]
    source = entry.get("source", "")
    if "dE0dT_source" in entry:
        source += f"; temperature coefficients: {entry['dE0dT_source']}"
    if "note" in entry:
        source += f" ({entry['note']})"
    return HalfReaction(
        entry["reaction"],
        entry["E0"],
        dE0dT=entry.get("dE0dT", 0.0),
        d2E0dT2=entry.get("d2E0dT2", 0.0),
        fixed=entry.get("fixed"),
        name=label,
        source=source,
    )
