"""Reactions as data: components, formed species, stoichiometry and lg K(T).

A :class:`Network` holds the *components* (basis species: totals are given for them) and
the *formed species*, each made from components by one formation reaction with an
equilibrium constant at I = 0. Reactions may be written stepwise in the data (HCO3⁻ from
CO3²⁻ and H⁺, CO2 from HCO3⁻ and H⁺); the network resolves every formed species to
components, so that

    lg m_s = lg β_s(T) + Σ_c ν_sc (lg m_c + lg γ_c) − lg γ_s,

with ν the stoichiometry matrix (formed species × components) and lg β_s(T) the sum of the
stepwise lg K(T) along the way. Water takes part with activity 1 (a note says so).

The shipped data are ``models/equilibria.toml`` (its header describes the layout); a
mapping in the same layout gives a network of one's own (:meth:`Network.from_mapping`).
"""

from __future__ import annotations

import functools
import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..constants import LN10, T_REF, ZERO_CELSIUS, R
from ..errors import InputError
from ..species import parse_species

__all__ = ["Gas", "Network", "Reaction", "default_network", "water_lg_kw"]

_TEMPERATURE_KINDS = ("vant_hoff", "analytic", "water", "constant")


@dataclass(frozen=True)
class Reaction:
    """The formation reaction of one species, as written in the data.

    Attributes
    ----------
    product : str
        The species formed.
    reactants : Mapping[str, float]
        Species → coefficient (negative for species released, e.g. H⁺ for OH⁻); may
        include ``"H2O"``.
    lg_k25 : float
        lg K at 25 °C and I = 0 (after the medium conversion, where one was needed).
    temperature : tuple
        ``("vant_hoff", ΔH° in J/mol)``, ``("analytic", (a, b, c, d, e))``,
        ``("water", None)`` or ``("constant", None)``.
    T_range : tuple of float
        (T_min, T_max) in kelvin where the constant holds.
    source, note : str
    medium : tuple or None
        ``(lg K(I), I)`` as published, when converted to I = 0.
    shift : float
        Added to lg K at every temperature: a change of units of the published constant
        (for a gas given per atm, −lg 1.01325 turns it into per bar).
    """

    product: str
    reactants: Mapping[str, float]
    lg_k25: float
    temperature: tuple
    T_range: tuple
    source: str
    note: str = ""
    medium: tuple | None = None
    shift: float = 0.0

    def lg_k(self, T: Any, water: Mapping[str, Any] | None = None) -> np.ndarray:
        """lg K of this step at temperature ``T`` (K); broadcasts over ``T``."""
        return self._lg_k_as_published(T, water) + self.shift

    def _lg_k_as_published(self, T: Any, water: Mapping[str, Any] | None) -> np.ndarray:
        T = np.asarray(T, dtype=float)
        kind, arg = self.temperature
        if kind == "constant":
            return np.full(T.shape, self.lg_k25)
        if kind == "vant_hoff":
            return self.lg_k25 - arg / (R * LN10) * (1.0 / T - 1.0 / T_REF)
        if kind == "analytic":
            a, b, c, d, e = arg
            return a + b * T + c / T + d * np.log10(T) + e / (T * T)
        if kind == "water":
            return -water_lg_kw(T, water, negate=True)
        raise AssertionError(kind)  # pragma: no cover - checked on load


#: Pressure units a gas's Henry constant may be published in, in bar (1 atm = 1.01325 bar exactly).
_PRESSURE_UNITS = {"bar": 1.0, "atm": 1.01325}


@dataclass(frozen=True)
class Gas:
    """A gas dissolving as one species (Henry's law, lg K in (mol/kg)/bar)."""

    name: str
    dissolves_as: str
    reaction: Reaction


def water_lg_kw(T: Any, coeffs: Mapping[str, Any] | None = None, *, negate: bool = False) -> np.ndarray:
    """lg Kw of water at 1 atm by the IAPWS formulation (Bandura & Lvov 2006).

    Parameters
    ----------
    T : array_like
        Temperature in kelvin (273.15–423.15 K; the density is Kell's (1975) at 1 atm).
    coeffs : Mapping, optional
        The ``[water_ionisation]`` table of ``models/equilibria.toml`` (default: that file).
    negate : bool
        Return pKw = −lg Kw instead.

    Examples
    --------
    >>> round(float(water_lg_kw(298.15, negate=True)), 3)
    13.995
    """
    from ..water import density

    if coeffs is None:
        coeffs = default_network().water
    T = np.asarray(T, dtype=float)
    rho = np.asarray(density(T)) / 1000.0  # g/cm³
    a0, a1, a2 = coeffs["alpha"]
    b0, b1, b2 = coeffs["beta"]
    n = coeffs["n"]
    q = rho * np.exp(a0 + a1 / T + a2 / (T * T) * rho ** (2.0 / 3.0))
    pkw_gas = sum(g / T**i for i, g in enumerate(coeffs["gamma"]))
    pkw = (
        -2.0 * n * (np.log10(1.0 + q) - q / (q + 1.0) * rho * (b0 + b1 / T + b2 * rho))
        + pkw_gas
        + 2.0 * np.log10(coeffs["molar_mass_water"])
    )
    return pkw if negate else -pkw


def _fail(origin: str, where: str, message: str, value: Any) -> InputError:
    return InputError(message, field=f"{origin}: {where}", value=value)


def _number(x: Any, origin: str, where: str) -> float:
    if isinstance(x, bool) or not isinstance(x, (int, float)) or not np.isfinite(x):
        raise _fail(origin, where, "must be a finite number", x)
    return float(x)


def _temperature(spec: Any, origin: str, where: str) -> tuple:
    if not isinstance(spec, Mapping) or len(spec) != 1 or next(iter(spec)) not in _TEMPERATURE_KINDS:
        raise _fail(origin, where, f"must be one of {{{' | '.join(k + ' = …' for k in _TEMPERATURE_KINDS)}}}", spec)
    kind, arg = next(iter(spec.items()))
    if kind == "vant_hoff":
        return ("vant_hoff", 1000.0 * _number(arg, origin, where + ".vant_hoff"))
    if kind == "analytic":
        if not isinstance(arg, (list, tuple)) or len(arg) != 5:
            raise _fail(origin, where + ".analytic", "must be [a, b, c, d, e]", arg)
        return ("analytic", tuple(_number(x, origin, where + ".analytic") for x in arg))
    if arg is not True:
        raise _fail(origin, f"{where}.{kind}", "must be true", arg)
    return (kind, None)


def _davies_shift(reactants: Mapping[str, float], product_charge: int, I: float, doc_about: Mapping) -> float:
    """lg K° − lg K(I) by the conversion stated in the data file's [about] table."""
    A = float(doc_about.get("medium_conversion_A", 0.5108))
    c = float(doc_about.get("medium_conversion_c", 0.3))
    s = np.sqrt(I)
    f = A * (s / (1.0 + s) - c * I)
    dz2 = sum(nu * parse_species(r).charge ** 2 for r, nu in reactants.items() if r != "H2O") - product_charge**2
    return f * dz2


def _reaction(name: str, body: Any, origin: str, about: Mapping, section: str) -> Reaction:
    where = f'[{section}."{name}"]'
    if not isinstance(body, Mapping):
        raise _fail(origin, where, "must be a table", body)
    allowed = {"made_of", "dissolves_as", "lg_k", "lg_k_medium", "temperature", "celsius", "source", "note"}
    if section == "gas":
        allowed.add("pressure_unit")
    for k in body:
        if k not in allowed:
            raise _fail(origin, f"{where}.{k}", f"unknown key (allowed: {', '.join(sorted(allowed))})", body[k])
    try:
        product = parse_species(name)
    except InputError as exc:
        raise _fail(origin, where, f"bad species name ({exc})", name) from None
    if section == "gas":
        target = body.get("dissolves_as")
        if not isinstance(target, str):
            raise _fail(origin, f"{where}.dissolves_as", "name the dissolved species", target)
        reactants = {name: 1.0}
        reactants_for_charge = {}
    else:
        made = body.get("made_of")
        if not isinstance(made, Mapping) or not made:
            raise _fail(origin, f"{where}.made_of", "give the reactants as {species = coefficient}", made)
        reactants = {}
        for r, nu in made.items():
            try:
                key = "H2O" if r == "H2O" else parse_species(r).name
            except InputError as exc:
                raise _fail(origin, f"{where}.made_of", f"bad species name ({exc})", r) from None
            reactants[key] = _number(nu, origin, f"{where}.made_of.{r}")
        charge = sum(nu * (0 if r == "H2O" else parse_species(r).charge) for r, nu in reactants.items())
        if abs(charge - product.charge) > 1e-12:
            raise _fail(
                origin,
                where,
                f"charge is not balanced (reactants {charge:g}, product {product.charge})",
                name,
            )
        reactants_for_charge = reactants
    medium = None
    if "lg_k" in body and "lg_k_medium" in body:
        raise _fail(origin, where, "give lg_k or lg_k_medium, not both", name)
    if "lg_k" in body:
        lg_k = _number(body["lg_k"], origin, f"{where}.lg_k")
    elif "lg_k_medium" in body:
        med = body["lg_k_medium"]
        if not isinstance(med, Mapping) or set(med) != {"value", "ionic_strength"}:
            raise _fail(origin, f"{where}.lg_k_medium", "must be {value = lg K, ionic_strength = I}", med)
        value = _number(med["value"], origin, f"{where}.lg_k_medium.value")
        I = _number(med["ionic_strength"], origin, f"{where}.lg_k_medium.ionic_strength")
        if not 0 < I <= 1:
            raise _fail(origin, f"{where}.lg_k_medium.ionic_strength", "must be in (0, 1] mol/kg", I)
        lg_k = value + _davies_shift(reactants_for_charge, product.charge, I, about)
        medium = (value, I)
    else:
        raise _fail(origin, f"{where}.lg_k", "give lg_k (I = 0) or lg_k_medium", None)
    temp = _temperature(body.get("temperature"), origin, f"{where}.temperature")
    rng = body.get("celsius")
    if not isinstance(rng, (list, tuple)) or len(rng) != 2:
        raise _fail(origin, f"{where}.celsius", "must be [min, max] in °C", rng)
    lo, hi = (_number(x, origin, f"{where}.celsius") for x in rng)
    if not lo <= hi:
        raise _fail(origin, f"{where}.celsius", "min must not exceed max", rng)
    source = body.get("source")
    if not isinstance(source, str) or not source.strip():
        raise _fail(origin, f"{where}.source", "every reaction needs a source (author, year, table)", source)
    note = body.get("note", "")
    if not isinstance(note, str):
        raise _fail(origin, f"{where}.note", "must be a string", note)
    shift = 0.0
    if section == "gas":
        unit = body.get("pressure_unit", "bar")
        if unit not in _PRESSURE_UNITS:
            raise _fail(origin, f"{where}.pressure_unit", f"must be one of {', '.join(_PRESSURE_UNITS)}", unit)
        shift = -math.log10(_PRESSURE_UNITS[unit])
    rx = Reaction(
        product.name, reactants, lg_k, temp, (lo + ZERO_CELSIUS, hi + ZERO_CELSIUS), source, note, medium, shift
    )
    published = float(rx._lg_k_as_published(T_REF, None)) if temp[0] == "analytic" else lg_k
    if abs(published - lg_k) > 0.02:
        raise _fail(origin, where, f"the analytic lg K(T) gives {published:.3f} at 25 °C, not lg_k", lg_k)
    return rx


@dataclass(frozen=True, eq=False)
class Network:
    """Components, formed species and their resolved stoichiometry.

    Attributes
    ----------
    components : tuple of str
        Basis species, ``H+`` first.
    products : tuple of str
        Formed species, in an order where each comes after those it is made from.
    nu : ndarray, shape ``(n_products, n_components)``
        Stoichiometry of each formed species in components.
    reactions : Mapping[str, Reaction]
        The formation reaction of each formed species, as written in the data.
    gases : Mapping[str, Gas]
    water : Mapping
        Coefficients of the water ionisation (``[water_ionisation]``).
    """

    components: tuple
    products: tuple
    nu: np.ndarray
    reactions: Mapping[str, Reaction]
    steps: np.ndarray  # (n_products, n_products): lg β = steps @ lg K_step
    gases: Mapping[str, Gas] = field(default_factory=dict)
    water: Mapping[str, Any] = field(default_factory=dict)
    origin: str = "<mapping>"

    # ---------------------------------------------------------- building
    @classmethod
    def from_mapping(cls, doc: Mapping[str, Any], origin: str = "<mapping>") -> Network:
        """Validate a parsed data document (layout of ``models/equilibria.toml``).

        Raises
        ------
        InputError
            For a malformed entry, a reaction using a species that is neither a component
            nor formed in the data, or a cycle; the message names the entry.

        Examples
        --------
        >>> doc = {"components": {"H+": "", "F-": ""},
        ...        "species": {"HF": {"made_of": {"F-": 1, "H+": 1}, "lg_k": 3.18,
        ...                           "temperature": {"constant": True}, "celsius": [0, 50],
        ...                           "source": "demo"}}}
        >>> Network.from_mapping(doc).products
        ('HF',)
        >>> bad = {"components": {"H+": ""}, "species": dict(doc["species"])}
        >>> Network.from_mapping(bad)  # doctest: +ELLIPSIS
        Traceback (most recent call last):
        ...
        activity.errors.InputError: <mapping>: [species."HF"].made_of = 'F-': neither a component nor ...
        """
        about = doc.get("about", {})
        comps_raw = doc.get("components")
        if not isinstance(comps_raw, Mapping) or not comps_raw:
            raise _fail(origin, "[components]", "give the basis species as a table", comps_raw)
        comps = []
        for c in comps_raw:
            try:
                comps.append(parse_species(c).name)
            except InputError as exc:
                raise _fail(origin, "[components]", f"bad species name ({exc})", c) from None
        if "H+" not in comps:
            comps.append("H+")
        comps = ["H+"] + [c for c in comps if c != "H+"]
        raw = doc.get("species", {})
        if not isinstance(raw, Mapping):
            raise _fail(origin, "[species]", "must be a table of species", raw)
        reactions = {}
        for name, body in raw.items():
            rx = _reaction(name, body, origin, about, "species")
            if rx.product in comps:
                raise _fail(origin, f'[species."{name}"]', "is a component; components are not formed", name)
            if rx.product in reactions:
                raise _fail(origin, f'[species."{name}"]', "the same species is formed twice", name)
            reactions[rx.product] = rx
        known = set(comps) | set(reactions) | {"H2O"}
        for rx in reactions.values():
            for r in rx.reactants:
                if r not in known:
                    raise _fail(
                        origin,
                        f'[species."{rx.product}"].made_of',
                        "neither a component nor a species formed in the data",
                        r,
                    )
        order = _order(reactions, set(comps), origin)
        idx = {c: i for i, c in enumerate(comps)}
        pidx = {p: i for i, p in enumerate(order)}
        nu = np.zeros((len(order), len(comps)))
        steps = np.zeros((len(order), len(order)))
        for p in order:
            i = pidx[p]
            steps[i, i] = 1.0
            for r, coef in reactions[p].reactants.items():
                if r == "H2O":
                    continue
                if r in idx:
                    nu[i, idx[r]] += coef
                else:
                    nu[i] += coef * nu[pidx[r]]
                    steps[i] += coef * steps[pidx[r]]
        gases = {}
        for name, body in doc.get("gas", {}).items():
            rx = _reaction(name, body, origin, about, "gas")
            target = parse_species(body["dissolves_as"]).name
            if target not in reactions and target not in comps:
                raise _fail(origin, f'[gas."{name}"].dissolves_as', "not a species of the data", target)
            gases[rx.product] = Gas(rx.product, target, rx)
        return cls(
            tuple(comps),
            tuple(order),
            nu,
            reactions,
            steps,
            gases,
            dict(doc.get("water_ionisation", {})),
            origin,
        )

    # ---------------------------------------------------------- queries
    @property
    def species(self) -> tuple:
        """Components then formed species."""
        return self.components + self.products

    def stoichiometry(self, name: str) -> np.ndarray:
        """Components making up ``name`` (a component or a formed species)."""
        key = parse_species(name).name
        if key in self.components:
            out = np.zeros(len(self.components))
            out[self.components.index(key)] = 1.0
            return out
        if key in self.products:
            return self.nu[self.products.index(key)].copy()
        raise InputError(
            "not a species of the reaction data (models/equilibria.toml); pass inert=[...] to carry an ion "
            "that takes part in no reaction",
            field="solution",
            value=name,
        )

    def lg_beta(self, T: Any, products: Iterable[int] | None = None) -> np.ndarray:
        """lg β of the formed species from components at ``T``: shape ``(n,) + shape(T)``."""
        rows = list(range(len(self.products))) if products is None else list(products)
        T = np.asarray(T, dtype=float)
        used = np.flatnonzero(np.any(self.steps[rows] != 0, axis=0))
        k = (
            np.stack([self.reactions[self.products[j]].lg_k(T, self.water) for j in used])
            if len(used)
            else np.zeros((0,) + T.shape)
        )
        return np.tensordot(self.steps[np.ix_(rows, used)], k, axes=(1, 0))

    def lg_beta_25(self) -> np.ndarray:
        """lg β at 25 °C (from the stated lg K values, not the T functions)."""
        k = np.array([self.reactions[p].lg_k25 for p in self.products])
        return self.steps @ k

    def T_range(self, j: int) -> tuple[float, float]:
        """Temperature range (K) of formed species ``j``: the narrowest of its steps."""
        used = np.flatnonzero(self.steps[j] != 0)
        lo = max(self.reactions[self.products[u]].T_range[0] for u in used)
        hi = min(self.reactions[self.products[u]].T_range[1] for u in used)
        return lo, hi

    def without(self, *names: str) -> Network:
        """A network without the named formed species (and those made from them).

        Examples
        --------
        >>> net = default_network().without("NaCO3-")
        >>> "NaCO3-" in net.products, "HCO3-" in net.products
        (False, True)
        """
        drop = set()
        for n in names:
            key = parse_species(n).name
            if key not in self.products:
                raise InputError("not a formed species of this network", field="without", value=n)
            drop.add(key)
        keep = [j for j, p in enumerate(self.products) if not any(self.steps[j, self.products.index(d)] for d in drop)]
        return self._subset(keep)

    def _subset(self, keep: list[int]) -> Network:
        prods = tuple(self.products[j] for j in keep)
        return Network(
            self.components,
            prods,
            self.nu[keep],
            {p: self.reactions[p] for p in self.reactions},
            self.steps[np.ix_(keep, keep)] if _closed(self.steps, keep) else self._restep(keep),
            {g: v for g, v in self.gases.items() if v.dissolves_as in prods or v.dissolves_as in self.components},
            self.water,
            self.origin,
        )

    def _restep(self, keep):  # pragma: no cover - without() keeps step chains closed
        raise AssertionError("a kept species depends on a dropped one")


def _closed(steps: np.ndarray, keep: list[int]) -> bool:
    mask = np.zeros(steps.shape[0], dtype=bool)
    mask[keep] = True
    return not np.any(steps[np.ix_(keep, np.flatnonzero(~mask))])


def _order(reactions: Mapping[str, Reaction], comps: set, origin: str) -> list[str]:
    """Formed species ordered so that each follows the species it is made from."""
    order: list[str] = []
    state: dict[str, int] = {}

    def visit(p: str, chain: tuple) -> None:
        if state.get(p) == 2:
            return
        if state.get(p) == 1:
            cycle = " → ".join((*chain, p))
            raise _fail(origin, f'[species."{p}"]', "reactions form a cycle: " + cycle, p)
        state[p] = 1
        for r in reactions[p].reactants:
            if r in reactions:
                visit(r, chain + (p,))
        state[p] = 2
        order.append(p)

    for p in reactions:
        visit(p, ())
    return order


@functools.cache
def default_network() -> Network:
    """The network of ``models/equilibria.toml`` (loaded once)."""
    from .. import data

    return Network.from_mapping(data.load("equilibria"), "models/equilibria.toml")
