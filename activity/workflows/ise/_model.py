"""The Nikolsky–Eisenman response with a low-activity term, vectorised (internal).

E = E0 + k·s(T)·lg(aᵢ + Σⱼ Kᵢⱼ·aⱼ^(zᵢ/zⱼ) + a₀), s(T) = RT ln10/(zᵢF) the Nernst slope of the
primary ion at T and k the fraction of it (so a slope fitted at several temperatures is one
number). Everything broadcasts; no Python loop over rows.

Also here: activities of the primary ion and the interferents of a :class:`Solution` batch
under an activity model, and mol/kg ↔ mol/L with the same density model as
:meth:`activity.Solution.from_molarity`.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ...constants import LN10, F, R
from ...errors import InputError
from ...solution import Solution
from ...species import parse_species

__all__ = ["IonTerms", "check_ion", "finite", "ion_terms", "molarity_factor", "nernst_slope_z", "response"]


def finite(value: Any, field: str, *, positive: bool = False) -> NDArray[np.float64]:
    """A float array with every entry finite (and positive if asked); InputError names the field."""
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError("not a number", field=field, value=value) from None
    bad = ~np.isfinite(arr)
    if np.any(bad):
        where = np.flatnonzero(np.ravel(bad))[:5].tolist()
        raise InputError(f"missing or not finite at position(s) {where}", field=field, value=None)
    if positive and np.any(arr <= 0):
        raise InputError("must be positive", field=field, value=float(np.ravel(arr)[np.ravel(arr <= 0)][0]))
    return arr


def check_ion(ion: str, field: str = "ion") -> tuple[str, int]:
    """Canonical name and charge of an ion (InputError for a neutral species)."""
    sp = parse_species(ion)
    if not sp.is_ion:
        raise InputError("the primary species of an ion-selective electrode must be an ion", field=field, value=ion)
    return sp.name, int(sp.charge)


def nernst_slope_z(T: ArrayLike, z: int) -> NDArray[np.float64]:
    """RT ln10/(zF), V per decade (sign of z kept)."""
    return R * np.asarray(T, float) * LN10 / (z * F)


def response(E0: ArrayLike, k: ArrayLike, s: ArrayLike, total: ArrayLike) -> NDArray[np.float64]:
    """E0 + k·s·lg(total)."""
    return np.asarray(E0) + np.asarray(k) * np.asarray(s) * np.log10(total)


@dataclass(frozen=True)
class IonTerms:
    """Activities that enter the response, for a batch of solutions.

    Attributes
    ----------
    a_primary : ndarray
        aᵢ, batch shape.
    gamma_primary : ndarray
        γᵢ.
    interferents : dict
        name → (aⱼ array, exponent zᵢ/zⱼ); only ions present in the solutions.
    model : str
    notes : tuple of str
    in_range : ndarray of bool
    """

    a_primary: NDArray[np.float64]
    gamma_primary: NDArray[np.float64]
    interferents: dict
    model: str
    notes: tuple
    in_range: Any

    def interference(self, K: Mapping[str, ArrayLike]) -> NDArray[np.float64]:
        """Σⱼ Kᵢⱼ·aⱼ^(zᵢ/zⱼ) (zero for an interferent absent from the solutions)."""
        out = np.zeros(np.shape(self.a_primary))
        for name, kj in K.items():
            if name in self.interferents:
                a, r = self.interferents[name]
                out = out + np.asarray(kj) * (a if r == 1 else a**r)
        return out


def ion_terms(
    sol: Solution, ion: str, z: int, interferents: Any, model: Any, speciation: Mapping[str, Any] | None = None
) -> IonTerms:
    """γ and activities of the primary ion and the interferents of ``sol`` under ``model``.

    The primary ion may be absent (a sample matrix): then aᵢ = 0 and γᵢ is that of an ion
    at trace level in the matrix. With ``speciation`` (keyword arguments of
    :func:`activity.speciate`) the activities are those of the free ions after speciation,
    and ``gamma_primary`` is the free activity over the total molality (the fraction bound
    in complexes and ion pairs included).
    """
    from ...coefficients import get_model

    mod = get_model(model) if isinstance(model, str) else model
    probe = sol if ion in sol.species else sol.replace({ion: 0.0})
    extra: tuple = ()
    if speciation is not None:
        from ...nernst.electrodes import free_solution

        free, extra = free_solution(probe, mod, speciation)
    else:
        free = probe
    g = mod.activity_coefficients(free)
    lg = g.log10_gamma
    i = free.index(ion)
    gamma = 10.0 ** lg[i]
    a_i = free.m[i] * gamma
    if speciation is not None:
        total = np.asarray(probe.m[probe.index(ion)], float)
        with np.errstate(divide="ignore", invalid="ignore"):
            gamma = np.where(total > 0, a_i / np.where(total > 0, total, 1.0), gamma)
    acts = {}
    for name in interferents:
        if name in free.species:
            k = free.index(name)
            zj = int(free.charges[k])
            acts[name] = (free.m[k] * 10.0 ** lg[k], z / zj)
    return IonTerms(a_i, gamma, acts, g.model, tuple(g.notes) + tuple(extra), g.in_range)


def molarity_factor(sol: Solution) -> tuple[NDArray[np.float64], tuple]:
    """c/m: mol/L of solution per mol/kg of water, batch shape, and notes.

    The inverse of the density model of :meth:`Solution.from_molarity`: pure water at T
    (Kell 1975) plus the ions' partial molar volumes at infinite dilution
    (``models/species.toml``), so c = m·ρw/(1 + ρw·Σ mⱼVⱼ). A species without a tabulated
    volume is left out of the sum (noted).
    """
    from ... import data
    from ...water import density as water_density

    volumes = data.load("species")["partial_molar_volume"]["values"]
    rho_w = np.asarray(water_density(sol.T_compact), float) / 1000.0  # kg/L
    vsum = np.zeros(sol.shape)
    missing = []
    for k, name in enumerate(sol.species):
        if name in volumes:
            vsum = vsum + sol.m[k] * volumes[name] / 1000.0  # L per kg of water
        else:
            missing.append(name)
    notes = (f"mol/L: no partial molar volume for {', '.join(missing)} (left out of the density)",) if missing else ()
    return np.broadcast_to(rho_w / (1.0 + rho_w * vsum), sol.shape), notes
