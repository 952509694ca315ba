"""Solution composition: species, molalities, temperature, pressure, ionic strength.

A :class:`Solution` is immutable. Amounts are molalities (mol/kg of water); a value may
be a scalar or an array, and all values, ``T`` and ``P`` broadcast to one batch shape, so
one object can hold a million compositions.
"""

from __future__ import annotations

import warnings
from collections.abc import Iterable, Mapping
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from . import _checks, data
from .constants import P_ATM, T_REF
from .errors import ElectroneutralityWarning, InputError
from .species import check_solute, parse_species, solute_key

__all__ = ["Solution"]

_NEUTRALITY = ("warn", "ignore", "raise")
#: Within these sizes the species sums use numpy's einsum loop rather than a BLAS product
#: (see Solution._sums; measured by benchmarks/bench_speed.py, rows inverse and monte-carlo).
_EINSUM_ROWS = (32_768, 200_000)
_EINSUM_SPECIES = 8


def _items(composition: Any) -> list[tuple[str, Any]]:
    if isinstance(composition, Mapping):
        items = list(composition.items())
    else:
        try:
            items = [tuple(p) for p in composition]
        except TypeError:
            raise InputError(
                "expected a mapping of species name to molality", field="composition", value=composition
            ) from None
    if not items:
        raise InputError("empty composition: give at least one species", field="composition", value={})
    seen: dict[str, Any] = {}
    for item in items:
        if len(item) != 2:
            raise InputError("expected (species, amount) pairs", field="composition", value=item)
        name = check_solute(item[0]).name  # refuses salts and bare elements read as neutral solutes
        if name in seen:
            raise InputError(
                f"species given twice (as {seen[name]!r} and {item[0]!r}, both {name!r}); give each once",
                field="composition",
                value=item[0],
            )
        seen[name] = item[0]
    return items


#: Plausible densities of aqueous solutions, kg/L: water itself is 0.917 at 150 °C, dilute
#: solutions are near 1, concentrated ammonia about 0.89, the densest brines of heavy salts
#: (e.g. ZnBr2, caesium formate) about 2.3–2.6 (common practice).
DENSITY_RANGE = (0.85, 3.0)


def _check_each(names: list[str], values: list[Any]) -> None:
    """Check every species' molalities, raising the InputError that names the first bad one."""
    for name, value in zip(names, values):
        _checks.finite_array(value, f"composition[{name!r}]", nonnegative=True)


class Solution:
    """An aqueous solution (or a batch of them) on the molal scale.

    Parameters
    ----------
    composition : Mapping[str, array_like]
        Species name → molality in mol/kg. Names are canonicalised (``'Ca2+'`` →
        ``'Ca^2+'``). Values broadcast with each other and with ``T`` and ``P``.
    T : array_like, default 298.15
        Temperature in kelvin (273.15–423.15 K).
    P : array_like, default 101325
        Pressure in pascal.
    neutrality : {'warn', 'ignore', 'raise'}, default 'warn'
        What to do when the charge balance is off by more than ``neutrality_tol``.
    neutrality_tol : float, default 1e-3
        Allowed ``|Σ z m| / (½ Σ |z| m)``.
    balance_with : str, optional
        Adjust this ion's molality so that the solution is electrically neutral (the ion
        is added if absent). Equivalent to calling :meth:`balance`.

    Examples
    --------
    >>> sol = Solution({"Na+": 0.1, "Cl-": 0.1})
    >>> sol.ionic_strength
    0.1
    >>> Solution({"Ca2+": 0.01, "Cl-": 0.02}).species
    ('Ca^2+', 'Cl-')
    >>> import numpy as np
    >>> Solution({"K+": np.array([0.001, 0.01]), "Cl-": np.array([0.001, 0.01])}).ionic_strength
    array([0.001, 0.01 ])
    """

    __slots__ = ("_species", "_charges", "_m", "_T", "_P", "_shape", "_cache")

    #: (cation, anion) pairs, both of charge magnitude ≥ 2, whose association is counted as
    #: a species of this solution (a speciated solution says so; see
    #: :class:`activity.speciation.result.SpeciatedSolution`). Models whose validity rests
    #: on explicit ion pairs do not flag those pairs. Empty for a plain composition.
    explicit_ion_pairs: frozenset = frozenset()

    def __init__(
        self,
        composition: Mapping[str, Any],
        T: ArrayLike = T_REF,
        P: ArrayLike = P_ATM,
        *,
        neutrality: str = "warn",
        neutrality_tol: float = 1e-3,
        balance_with: str | None = None,
    ):
        if neutrality not in _NEUTRALITY:
            raise InputError(f"must be one of {_NEUTRALITY}", field="neutrality", value=neutrality)
        names: list[str] = []
        values: list[np.ndarray] = []
        raw_values: list[Any] = []
        charges: list[int] = []
        for raw, value in _items(composition):
            sp = parse_species(raw)
            if sp.phase != "aq" or sp.formula == "H2O":
                raise InputError(
                    "only dissolved species belong in a composition (water is the solvent; "
                    "solids and gases enter reactions, not the solution)",
                    field="composition",
                    value=raw,
                )
            if sp.name in names:
                raise InputError(f"species given twice (as {sp.name!r})", field="composition", value=raw)
            names.append(sp.name)
            charges.append(sp.charge)
            try:
                values.append(np.asarray(value, dtype=float))  # checked below, all at once
            except (TypeError, ValueError):
                raise InputError("not a number", field=f"composition[{sp.name!r}]", value=value) from None
            raw_values.append(value)
        T_arr = _checks.temperature(T)
        P_arr = _checks.finite_array(P, "P", positive=True)
        try:
            shape = np.broadcast_shapes(*(v.shape for v in values), T_arr.shape, P_arr.shape)
        except ValueError:
            _check_each(names, raw_values)  # a bad value is named before a shape mismatch
            lengths = {n: v.shape for n, v in zip(names, values)}
            lengths.update(T=T_arr.shape, P=P_arr.shape)
            raise InputError(f"batch shapes do not broadcast: {lengths}", field="composition", value=None) from None
        m = np.empty((len(names),) + shape)
        for i, v in enumerate(values):
            m[i] = v
        # One pass over the stacked array instead of three per species: min is NaN when any
        # value is NaN, so "min ≥ 0 and max finite" holds exactly when every value is finite
        # and non-negative. Only when it fails are the species checked one by one, which
        # names the first offending species and value as before.
        lo = m.min() if m.size else 0.0
        if m.size == 0 or not (lo >= 0.0 and np.isfinite(m.max())):
            _check_each(names, raw_values)
        self._init(tuple(names), np.array(charges, dtype=int), m, T_arr, P_arr, shape)
        if balance_with is not None:
            balanced = self.balance(balance_with)
            self._init(balanced._species, balanced._charges, balanced._m, T_arr, P_arr, shape)
        else:
            self._cache["min"] = float(lo)  # the least molality, known from the check above
            if neutrality != "ignore":
                self._check_neutrality(neutrality, neutrality_tol)

    def _init(self, species, charges, m, T, P, shape) -> None:
        m.setflags(write=False)
        self._species = species
        self._charges = charges
        self._m = m
        self._T = T
        self._P = P
        self._shape = shape
        self._cache: dict[str, Any] = {}

    @classmethod
    def _from_arrays(cls, species, charges, m, T, P) -> Solution:
        """Build without re-validating (internal: arrays already checked)."""
        obj = cls.__new__(cls)
        shape = np.broadcast_shapes(m.shape[1:], np.shape(T), np.shape(P))
        if m.shape[1:] != shape:
            m = np.ascontiguousarray(np.broadcast_to(m, (m.shape[0],) + shape))
        obj._init(
            tuple(species),
            np.asarray(charges, dtype=int),
            np.array(m, dtype=float),
            np.asarray(T, float),
            np.asarray(P, float),
            shape,
        )
        return obj

    @classmethod
    def _adopt(cls, species: tuple, charges: np.ndarray, m: np.ndarray, T: np.ndarray, P: np.ndarray) -> Solution:
        """Wrap arrays that are already checked and owned by the caller (internal, no copy).

        ``m`` must be a float array of shape ``(len(species),) + shape`` that the caller
        will not change afterwards (it is made read-only), ``T`` and ``P`` float arrays
        broadcasting to ``shape``; nothing is validated. For inner loops such as the
        inverse's secant, which build a solution per step from a checked one.
        """
        obj = cls.__new__(cls)
        obj._init(species, charges, m, T, P, m.shape[1:])
        return obj

    def _known_positive(self) -> bool:
        """Whether every molality is known to be > 0 without a pass over them (the least
        molality was found by the checks at construction); False when unknown."""
        return self._cache.get("min", 0.0) > 0.0

    # ------------------------------------------------------------------ views
    @property
    def species(self) -> tuple[str, ...]:
        """Canonical species names, in the order given."""
        return self._species

    @property
    def charges(self) -> np.ndarray:
        """Charge numbers, shape ``(n_species,)``."""
        return self._charges.copy()

    @property
    def shape(self) -> tuple[int, ...]:
        """Batch shape (``()`` for a single solution)."""
        return self._shape

    @property
    def size(self) -> int:
        """Number of compositions in the batch (1 for a single solution)."""
        return int(np.prod(self._shape, dtype=int))

    @property
    def m(self) -> np.ndarray:
        """Molalities as a read-only array of shape ``(n_species,) + shape``, mol/kg."""
        return self._m

    @property
    def molalities(self) -> dict[str, Any]:
        """Species name → molality (float, or array for a batch)."""
        return {n: _checks.scalar_or_array(self._m[i]) for i, n in enumerate(self._species)}

    def molality(self, name: str, default: Any = None) -> Any:
        """Molality of one species, mol/kg.

        A species absent from the composition is an :class:`InputError` naming it (a
        misspelt name must not read as zero); pass ``default=0.0`` to get that value,
        broadcast to the batch shape, instead.
        """
        key = parse_species(name).name
        if key not in self._species:
            if default is None:
                raise InputError(
                    f"not in this solution (species: {', '.join(self._species)})", field="species", value=name
                )
            return _checks.scalar_or_array(np.broadcast_to(np.asarray(default, dtype=float), self._shape).copy())
        return _checks.scalar_or_array(self._m[self._species.index(key)])

    def index(self, name: str) -> int:
        """Position of a species in :attr:`species`; InputError if absent."""
        key = parse_species(name).name
        try:
            return self._species.index(key)
        except ValueError:
            raise InputError(
                f"not in this solution (species: {', '.join(self._species)})", field="species", value=name
            ) from None

    @property
    def T(self) -> Any:
        """Temperature in kelvin (float, or array broadcast to the batch shape)."""
        return self._full(self._T)

    @property
    def P(self) -> Any:
        """Pressure in pascal."""
        return self._full(self._P)

    @property
    def T_compact(self) -> np.ndarray:
        """Temperature as given (broadcastable to :attr:`shape`, not expanded)."""
        return self._T

    @property
    def P_compact(self) -> np.ndarray:
        """Pressure as given (broadcastable to :attr:`shape`, not expanded)."""
        return self._P

    def _full(self, arr: np.ndarray) -> Any:
        if self._shape == ():
            return float(arr)
        return np.broadcast_to(arr, self._shape)

    @property
    def ionic_strength(self) -> Any:
        """Ionic strength I = ½ Σ z² m in mol/kg."""
        return _checks.scalar_or_array(self._sums()[2])

    @property
    def total_molality(self) -> Any:
        """Σ m over all solute species, mol/kg."""
        return _checks.scalar_or_array(self._sums()[3])

    @property
    def charge_balance(self) -> Any:
        """Σ z m in mol/kg (0 for an electrically neutral solution)."""
        return _checks.scalar_or_array(self._sums()[0])

    def _sums(self) -> np.ndarray:
        """Σ z m, ½ Σ |z| m, ½ Σ z² m (= I) and Σ m, shape ``(4,) + shape``, formed once.

        One product of a 4 × n weight matrix with the molalities: the molalities are read
        once for all four sums (the neutrality check, the ionic
        strength and the total molality of every model call share them).
        """
        sums = self._cache.get("sums")
        if sums is None:
            z = self._charges.astype(float)
            w = np.stack([z, 0.5 * np.abs(z), 0.5 * z * z, np.ones_like(z)])
            flat = self._m.reshape(len(self._species), -1)
            if _EINSUM_ROWS[0] <= flat.shape[1] <= _EINSUM_ROWS[1] and flat.shape[0] <= _EINSUM_SPECIES:
                # numpy's own loop: from ~4·10⁴ rows the BLAS product wakes its threads, which
                # cost ~6 ms per call between other work on a shared 2-core machine (measured
                # in the inverse and Monte Carlo rows of bench_speed); below, BLAS is faster
                prod = np.einsum("ki,in->kn", w, flat)
            else:
                prod = w @ flat
            sums = self._cache["sums"] = prod.reshape((4,) + self._shape)
            sums.setflags(write=False)
        return sums

    # -------------------------------------------------------------- changes
    def _check_neutrality(self, mode: str, tol: float) -> None:
        sums = self._sums()
        # |Σ z m| > tol · ½ Σ |z| m is "relative imbalance above tol" without a division; rows
        # with no ions (scale 0) have no imbalance and pass. When the largest imbalance is
        # within tol times the least scale no row fails (tol ≥ 0, and rounding of a product
        # is monotonic): three reductions decide it, without elementwise temporaries.
        if sums[0].size and np.ndim(tol) == 0 and tol >= 0:
            worst = max(-float(sums[0].min()), float(sums[0].max()))
            if worst <= tol * float(sums[1].min()):
                return
        imbalance = np.abs(sums[0])
        scale = sums[1]
        bad = imbalance > tol * scale
        if np.any(bad):
            rel = np.divide(imbalance, scale, out=np.zeros_like(imbalance), where=scale > 0)
            worst = float(np.max(rel))
            n_bad = int(np.count_nonzero(bad))
            msg = (
                f"composition is not electrically neutral: relative charge imbalance up to "
                f"{worst:.3g} in {n_bad} of {self.size} row(s); use balance_with='<ion>' or "
                f"Solution.balance() to adjust a named ion"
            )
            if mode == "raise":
                raise InputError(msg, field="composition", value=None)
            warnings.warn(msg, ElectroneutralityWarning, stacklevel=3)

    def balance(self, ion: str) -> Solution:
        """Return a neutral copy, adjusting the molality of ``ion`` (added if absent).

        Examples
        --------
        >>> Solution({"Na+": 0.1, "Cl-": 0.05}, neutrality="ignore").balance("Cl-").molality("Cl-")
        0.1
        """
        sp = parse_species(ion)
        if sp.charge == 0:
            raise InputError("cannot balance charge with a neutral species", field="balance_with", value=ion)
        species, charges, m = self._species, self._charges, self._m
        if sp.name not in species:
            species = species + (sp.name,)
            charges = np.append(charges, sp.charge)
            m = np.concatenate([m, np.zeros((1,) + self._shape)])
        m = np.array(m)
        i = species.index(sp.name)
        excess = np.tensordot(charges.astype(float), m, axes=(0, 0))
        new = m[i] - excess / sp.charge
        if np.any(new < -1e-12 * np.maximum(np.max(m, axis=0), 1e-300)):
            rows = np.flatnonzero(np.ravel(new) < 0)
            raise InputError(
                f"balancing would make its molality negative (row(s) {rows[:5].tolist()}); "
                f"balance with an ion of the opposite charge",
                field="balance_with",
                value=ion,
            )
        m[i] = np.maximum(new, 0.0)
        return Solution._from_arrays(species, charges, m, self._T, self._P)

    def replace(
        self, composition: Mapping[str, Any] | None = None, *, T: ArrayLike = None, P: ArrayLike = None, **kw
    ) -> Solution:
        """Return a new solution with some molalities, ``T`` or ``P`` replaced.

        ``composition`` entries override or add species; other species are kept.
        """
        comp: dict[str, Any] = {solute_key(n): self._m[i] for i, n in enumerate(self._species)}
        if composition:
            for raw, value in composition.items():
                check_solute(raw)
                comp[solute_key(raw)] = value
        kw.setdefault("neutrality", "ignore")
        return Solution(comp, T=self._T if T is None else T, P=self._P if P is None else P, **kw)

    def __getitem__(self, index: Any) -> Solution:
        """Select rows of a batch: ``sol[3]``, ``sol[:10]``, ``sol[mask]``."""
        if self._shape == ():
            raise InputError("a single solution has no rows to select", field="index", value=index)
        idx = index if isinstance(index, tuple) else (index,)
        m = self._m[(slice(None),) + idx]
        T = np.broadcast_to(self._T, self._shape)[idx] if self._T.ndim else self._T
        P = np.broadcast_to(self._P, self._shape)[idx] if self._P.ndim else self._P
        return Solution._from_arrays(self._species, self._charges, np.array(m), np.array(T), np.array(P))

    def rows(self) -> Iterable[Solution]:
        """Iterate over the rows of a 1-D batch as single solutions (slow; for checks)."""
        for i in range(self.size):
            yield self[np.unravel_index(i, self._shape)] if self._shape else self

    def __repr__(self) -> str:
        if self._shape == ():
            comp = ", ".join(f"{n!r}: {float(self._m[i]):g}" for i, n in enumerate(self._species))
            return f"Solution({{{comp}}}, T={float(self._T):g})"
        return f"Solution(<batch of {self.size}>, species={self._species})"

    # ------------------------------------------------------------ builders
    @classmethod
    def from_molarity(
        cls,
        composition: Mapping[str, Any],
        T: ArrayLike = T_REF,
        P: ArrayLike = P_ATM,
        *,
        density: Any = None,
        **kw,
    ) -> Solution:
        """Build a solution from amount concentrations in mol/L.

        Parameters
        ----------
        composition : Mapping[str, array_like]
            Species → concentration in mol/L.
        T, P : array_like
            Temperature (K) and pressure (Pa).
        density : array_like, optional
            Solution density in kg/L (= g/cm³), between 0.5 and 3 kg/L; a value such as
            1000 (the kg/m³ habit) is refused with a hint. Without it the density is modelled as
            pure water at T (Kell 1975) plus the ions' partial molar volumes at infinite
            dilution at 25 °C (``models/species.toml``); this neglects the excess volume
            and is good to a few tenths of a percent in molality up to about 1 mol/L.

        Examples
        --------
        >>> sol = Solution.from_molarity({"Na+": 1.0, "Cl-": 1.0}, density=1.037)
        >>> round(sol.molality("Na+"), 4)
        1.0219
        """
        items = _items(composition)
        names = [parse_species(n).name for n, _ in items]
        c = [_checks.finite_array(v, f"composition[{n!r}]", nonnegative=True) for n, (_, v) in zip(names, items)]
        T_arr = _checks.temperature(T)
        if density is not None:
            rho = _checks.finite_array(density, "density", positive=True)  # kg/L
            lo, hi = DENSITY_RANGE
            if np.any(rho > hi):
                bad = float(np.max(rho))
                hint = (
                    f"; {bad:g} looks like kg/m³ — density is in kg/L (g/cm³): {bad:g} kg/m³ = {bad / 1000:g} kg/L"
                    if 500 <= bad <= 3000
                    else ""
                )
                raise InputError(
                    f"not a plausible density of an aqueous solution ({lo:g}–{hi:g} kg/L){hint}",
                    field="density",
                    value=bad,
                )
            if np.any(rho < lo):
                bad = float(np.min(rho))
                raise InputError(
                    f"not a plausible density of an aqueous solution ({lo:g}–{hi:g} kg/L, i.e. g/cm³)",
                    field="density",
                    value=bad,
                )
            solute = sum(ci * parse_species(n).molar_mass for n, ci in zip(names, c))
            water = rho - solute  # kg water per L
            if np.any(water <= 0):
                raise InputError("density too low for the stated solute mass", field="density", value=density)
            factor = 1.0 / water
        else:
            from .water import density as water_density

            volumes = data.load("species")["partial_molar_volume"]["values"]
            vsum = 0.0
            for n, ci in zip(names, c):
                if n not in volumes:
                    raise InputError(
                        "no partial molar volume in models/species.toml; pass density= (kg/L)",
                        field="species",
                        value=n,
                    )
                vsum = vsum + ci * volumes[n] / 1000.0  # L per L of solution
            if np.any(np.asarray(vsum) >= 1.0):
                raise InputError("concentrations too high for the density model", field="composition", value=None)
            rho_w = np.asarray(water_density(T_arr)) / 1000.0  # kg/L
            factor = 1.0 / (rho_w * (1.0 - vsum))  # L of solution per kg of water
        return cls({solute_key(n): ci * factor for n, ci in zip(names, c)}, T=T, P=P, **kw)
