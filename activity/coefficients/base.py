"""The contract every activity-coefficient model fulfils, and its result object.

A model is constructed with parameters only (nothing is computed in ``__init__``). It is
bound once to a species set — precomputing index and parameter arrays — and the binding
is cached on the instance, so evaluating many batches of the same species set is cheap.
Model authors implement public hooks: :meth:`ActivityModel.prepare` (what depends only on
the species set), :meth:`ActivityModel.compute_log10_gamma`, and
:meth:`ActivityModel.compute_osmotic` where the model defines an osmotic coefficient;
optionally :meth:`ActivityModel.compute` (γ and φ from one pass),
:meth:`ActivityModel.binding_notes` and :meth:`ActivityModel.check_range`. A model passes
:func:`activity.coefficients.testing.check_model` before it is registered. (Plug-ins written
against the earlier underscore hooks ``_bind``, ``_log10_gamma``, ``_osmotic`` keep working.)
"""

from __future__ import annotations

import functools
import warnings
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field
from typing import Any, ClassVar

import numpy as np
from numpy.typing import ArrayLike

from .._checks import scalar_or_array
from ..constants import LN10, M_WATER, ZERO_CELSIUS
from ..errors import ModelError, ValidityWarning
from ..solution import Solution

__all__ = ["Validity", "CoefficientResult", "ActivityModel", "ModelLike"]


def _water_activity(phi: ArrayLike, total_molality: Any) -> Any:
    """ln a_w = −φ M_w Σm (definition of the molal osmotic coefficient)."""
    return scalar_or_array(np.exp(-np.asarray(phi) * M_WATER * np.asarray(total_molality)))


def _exp10(lg: Any) -> Any:
    """10**lg as exp(ln10 · lg), in place in the product: about half the time of the power
    function, within a few units of 1e-16 relative of it for |lg| of order one (the rounding
    of ln10 · lg, |lg| ln10 · 1.1e-16, plus that of exp)."""
    x = np.multiply(lg, LN10)
    return np.exp(x, out=x) if isinstance(x, np.ndarray) else np.exp(x)


@dataclass(frozen=True)
class Validity:
    """Where a model holds.

    Attributes
    ----------
    max_ionic_strength : float
        Above this ionic strength (mol/kg) results are flagged and a
        :class:`~activity.errors.ValidityWarning` is issued.
    T_min, T_max : float
        Temperature range (K) within which the model is validated; outside it results
        are flagged and warned about. (Outside 273.15–423.15 K nothing is computed.)
    species : str
        Which species the model covers, in words.
    basis : str
        Where the limits come from.
    """

    max_ionic_strength: float
    T_min: float = ZERO_CELSIUS
    T_max: float = ZERO_CELSIUS + 150.0
    species: str = "all ions"
    basis: str = "common practice"

    def describe(self) -> str:
        """One line: ionic-strength limit, temperature range, species coverage."""
        i = "no limit" if not np.isfinite(self.max_ionic_strength) else f"I ≤ {self.max_ionic_strength:g} mol/kg"
        t = f"{self.T_min - ZERO_CELSIUS:g}–{self.T_max - ZERO_CELSIUS:g} °C"
        return f"{i}; {t}; {self.species} ({self.basis})"


@dataclass(frozen=True, eq=False)
class CoefficientResult(Mapping):
    """Activity coefficients of every species in a solution (a read-only mapping).

    ``result[name]`` is γ (float, or an array for a batch). Attributes give the rest.

    Attributes
    ----------
    species : tuple of str
    log10_gamma : ndarray, shape ``(n_species,) + batch shape``
    ionic_strength : float or ndarray
    model : str
    in_range : bool or ndarray of bool
        Whether each row lies inside the model's declared validity.
    notes : tuple of str
        Everything the caller should know: validity excursions, fallbacks, missing
        parameters.
    alerts : tuple of str
        The notes that call for a :class:`~activity.errors.ValidityWarning` (excursions
        outside the declared validity); the public entry point that returns a result built
        on this one warns them once.
    missing : tuple of str
        Interactions or parameters absent from the parameter set.
    osmotic_coefficient, water_activity : float, ndarray or None
        Where the model defines them (computed on first access, so that callers who only
        need γ do not pay for them).
    """

    species: tuple
    log10_gamma: np.ndarray
    ionic_strength: Any
    model: str
    in_range: Any = True
    notes: tuple = ()
    missing: tuple = ()
    alerts: tuple = ()
    _phi: Any = field(default=None, repr=False)  # value, or a callable computing it
    _total_molality: Any = field(default=None, repr=False)
    _index: dict = field(default_factory=dict, repr=False)
    _cache: dict = field(default_factory=dict, repr=False)

    def __post_init__(self):
        self._index.update({n: i for i, n in enumerate(self.species)})

    @property
    def osmotic_coefficient(self) -> Any:
        """Molal osmotic coefficient φ, or None where the model does not define it."""
        if "phi" not in self._cache:
            phi = self._phi() if callable(self._phi) else self._phi
            self._cache["phi"] = None if phi is None else scalar_or_array(np.asarray(phi, dtype=float))
        return self._cache["phi"]

    @property
    def water_activity(self) -> Any:
        """Activity of water exp(−φ M_w Σm), or None where φ is undefined."""
        phi = self.osmotic_coefficient
        return None if phi is None else _water_activity(phi, self._total_molality)

    def __getitem__(self, name: str) -> Any:
        from ..species import parse_species

        key = name if name in self._index else parse_species(name).name
        if key not in self._index:
            raise KeyError(name)
        return scalar_or_array(_exp10(self.log10_gamma[self._index[key]]))

    def __iter__(self) -> Iterator[str]:
        return iter(self.species)

    def __len__(self) -> int:
        return len(self.species)

    @property
    def gamma(self) -> np.ndarray:
        """All activity coefficients as an array shaped like :attr:`log10_gamma`."""
        return _exp10(self.log10_gamma)

    def __repr__(self) -> str:
        body = ", ".join(
            f"{n!r}: {v:.6g}" if np.ndim(v) == 0 else f"{n!r}: <array {np.shape(v)}>" for n, v in self.items()
        )
        return f"CoefficientResult(model={self.model!r}, {{{body}}})"


class ActivityModel:
    """Base class of activity-coefficient models.

    Subclasses set :attr:`name` and :attr:`validity` and implement ``prepare`` and
    ``compute_log10_gamma`` (and ``compute_osmotic`` where defined).
    """

    name: ClassVar[str] = "abstract"
    validity: Validity = Validity(np.inf)

    def __init__(self, **params: Any):
        self.params = dict(params)
        self._bindings: dict[tuple, Any] = {}

    def __repr__(self) -> str:
        args = ", ".join(f"{k}={v!r}" for k, v in self.params.items())
        return f"{type(self).__name__}({args})"

    # ------------------------------------------------------------ hooks (for model authors)
    def prepare(self, species: tuple[str, ...], charges: np.ndarray) -> Any:
        """Precompute what depends only on the species set: index arrays, parameter vectors.

        Called once per species tuple (the result is cached by :meth:`bind`) and passed to
        the other hooks as ``bound``. Missing parameters raise :class:`InputError` naming
        the species, or are recorded through :meth:`binding_notes`.
        """
        legacy = getattr(self, "_bind", None)
        return legacy(species, charges) if legacy is not None else None

    def compute_log10_gamma(self, sol: Solution, bound: Any, I: np.ndarray) -> np.ndarray:
        """log10 γ of every species of ``sol``, shape ``(n_species,) + sol.shape`` (required)."""
        legacy = getattr(self, "_log10_gamma", None)
        if legacy is None:
            raise NotImplementedError(f"{type(self).__name__} implements no compute_log10_gamma")
        return legacy(sol, bound, I)

    def compute_osmotic(self, sol: Solution, bound: Any, I: np.ndarray) -> np.ndarray | None:
        """The molal osmotic coefficient φ, or None where the model does not define it."""
        legacy = getattr(self, "_osmotic", None)
        return legacy(sol, bound, I) if legacy is not None else None

    def compute(self, sol: Solution, bound: Any, I: np.ndarray) -> tuple[np.ndarray, Any]:
        """(log10 γ, φ); φ may be a callable computed on first access. Override when both
        come cheaply from one pass."""
        return self.compute_log10_gamma(sol, bound, I), functools.partial(self.compute_osmotic, sol, bound, I)

    def binding_notes(self, bound: Any) -> tuple[tuple[str, ...], tuple[str, ...]]:
        """(notes, missing) that follow from the binding alone, e.g. absent parameters."""
        return (), ()

    # ------------------------------------------------------------ public
    def bind(self, species: tuple[str, ...], charges: np.ndarray) -> Any:
        """Return the (cached) binding of this model to a species set."""
        key = tuple(species)
        b = self._bindings.get(key)
        if b is None:
            b = self.prepare(key, np.asarray(charges))
            self._bindings[key] = b
        return b

    def check_range(self, sol: Solution, I: np.ndarray) -> tuple[Any, tuple[str, ...]]:
        """(in-range flag per row, notes) against :attr:`validity`; extend to add checks."""
        v = self.validity
        notes = []
        ok = np.ones(np.shape(I), dtype=bool)
        # each elementwise mask is formed only when a reduction says some row fails (for
        # finite values the same decision; NaN compares False either way)
        if np.isfinite(v.max_ionic_strength) and np.size(I) and np.max(I) > v.max_ionic_strength:
            high = I > v.max_ionic_strength
            if np.any(high):
                ok &= ~high
                notes.append(
                    f"{self.name}: ionic strength above {v.max_ionic_strength:g} mol/kg "
                    f"(up to {float(np.max(I)):.4g}) in {int(np.count_nonzero(high))} of {sol.size} row(s): "
                    "outside the model's validity"
                )
        T = sol.T_compact
        if np.size(T) and (np.min(T) < v.T_min or np.max(T) > v.T_max):
            t_bad = (T < v.T_min) | (T > v.T_max)
            ok &= ~np.broadcast_to(t_bad, ok.shape)
            notes.append(
                f"{self.name}: temperature outside {v.T_min - ZERO_CELSIUS:g}–{v.T_max - ZERO_CELSIUS:g} °C, "
                "the range the model is validated for"
            )
        return ok, tuple(notes)

    def activity_coefficients(self, sol: Solution, *, warn: bool = True) -> CoefficientResult:
        """Activity coefficients (molal scale) of every species in ``sol``.

        Returns a :class:`CoefficientResult` whose ``notes`` record every excursion. With
        ``warn=True`` (the default) rows outside the model's validity also raise a
        :class:`~activity.errors.ValidityWarning`; code that passes the result on (and
        warns once at its own entry point) asks with ``warn=False``.
        """
        if not isinstance(sol, Solution):
            from ..errors import InputError

            raise InputError("expected an activity.Solution", field="solution", value=type(sol).__name__)
        bound = self.bind(sol.species, sol.charges)
        I = np.asarray(sol.ionic_strength, dtype=float)
        lg, phi = self.compute(sol, bound, I)
        in_range, notes, missing, alerts = self._range_record(sol, bound, I)
        if warn:
            for note in alerts:
                warnings.warn(note, ValidityWarning, stacklevel=2)
        return CoefficientResult(
            species=sol.species,
            log10_gamma=lg,
            ionic_strength=scalar_or_array(I),
            model=self.name,
            in_range=in_range,
            notes=notes,
            missing=missing,
            alerts=alerts,
            _phi=phi,
            _total_molality=sol.total_molality,
        )

    def _range_record(self, sol: Solution, bound: Any, I: np.ndarray) -> tuple[Any, tuple, tuple, tuple]:
        """(in_range, notes, missing, alerts) of a result for ``sol``: the validity checks
        (:meth:`check_range`) and the binding's notes, as :meth:`activity_coefficients` records
        them (internal; also used by callers that evaluate a few species' rows alone)."""
        ok, notes = self.check_range(sol, I)
        bnotes, missing = self.binding_notes(bound)
        return (bool(ok) if ok.ndim == 0 else ok), notes + bnotes, missing, notes

    def log10_gamma(self, sol: Solution) -> np.ndarray:
        """log10 γ of every species, shape ``(n_species,) + sol.shape`` (no validity checks)."""
        bound = self.bind(sol.species, sol.charges)
        return self.compute_log10_gamma(sol, bound, np.asarray(sol.ionic_strength, dtype=float))

    def ln_gamma(self, sol: Solution) -> np.ndarray:
        """Natural-log activity coefficients, shape ``(n_species,) + sol.shape``."""
        return LN10 * self.log10_gamma(sol)

    def osmotic_coefficient(self, sol: Solution) -> Any:
        """Molal osmotic coefficient φ; :class:`~activity.errors.ModelError` if undefined."""
        bound = self.bind(sol.species, sol.charges)
        phi = self.compute_osmotic(sol, bound, np.asarray(sol.ionic_strength, dtype=float))
        if phi is None:
            raise ModelError(f"model {self.name!r} does not define an osmotic coefficient")
        return scalar_or_array(phi)

    def water_activity(self, sol: Solution) -> Any:
        """Activity of water, ``exp(−φ M_w Σm)``; ModelError where φ is undefined."""
        return _water_activity(self.osmotic_coefficient(sol), sol.total_molality)


#: A model object or the registered name of one (resolved once, at the entry point).
ModelLike = str | ActivityModel
