"""Electrochemical thermodynamics: electrochemical potential, reaction Gibbs energy, E.

The functions here are the array-level primitives the rest of the Nernst layer is built
on (and that modelling codes may call directly). Everything is SI — J/mol, V, K, Pa — and
broadcasts with numpy rules: a leading species axis where a function sums over species,
then any batch shape.

* electrochemical potential of species i in a phase at inner potential φ:
  μ̃ᵢ = μᵢ° + RT ln aᵢ + zᵢFφ
* reaction Gibbs energy: ΔrG̃ = Σ νᵢ μ̃ᵢ (ν > 0 for products)
* a half-reaction written as a reduction, Ox + n e⁻ = Red, has
  E = −ΔrG/(nF) = E° − (RT/nF) Σ νᵢ ln aᵢ (the Nernst equation; electrons excluded)
"""

from __future__ import annotations

from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .. import _checks
from ..constants import LN10, P_ATM, P_STANDARD, T_REF, F, R
from ..errors import InputError

__all__ = [
    "nernst_slope",
    "electrochemical_potential",
    "reaction_gibbs",
    "potential_from_gibbs",
    "gibbs_from_potential",
    "equilibrium_galvani_potential",
    "nernst_potential",
    "standard_potential_at",
    "gas_activity",
    "atm_to_bar_shift",
]


def _temperature(T: ArrayLike) -> np.ndarray:
    return _checks.finite_array(T, "T", positive=True)


def _n_electrons(n: ArrayLike) -> np.ndarray:
    arr = _checks.finite_array(n, "n")
    if np.any(arr == 0):
        raise InputError("the number of electrons must not be zero", field="n", value=n)
    return arr


def nernst_slope(T: ArrayLike = T_REF, z: ArrayLike = 1) -> Any:
    """Nernst slope RT ln10 / (zF) in V per decade of activity.

    Parameters
    ----------
    T : array_like, default 298.15
        Temperature in kelvin.
    z : array_like, default 1
        Charge number (sign kept: an anion has a negative slope).

    Returns
    -------
    float or ndarray
        Broadcast of ``T`` and ``z``.

    Examples
    --------
    >>> round(nernst_slope(298.15) * 1000, 3)   # CODATA R and F via scipy.constants
    59.159
    >>> round(nernst_slope(310.15, z=2) * 1000, 3)
    30.77
    """
    Tz = _temperature(T)
    zz = _n_electrons(z)
    return _checks.scalar_or_array(R * Tz * LN10 / (zz * F))


def electrochemical_potential(
    mu0: ArrayLike, activity: ArrayLike, z: ArrayLike, phi: ArrayLike, T: ArrayLike = T_REF
) -> Any:
    """Electrochemical potential μ̃ = μ° + RT ln a + zFφ in J/mol.

    Parameters
    ----------
    mu0 : array_like
        Standard chemical potential μ° (J/mol).
    activity : array_like
        Activity (dimensionless, > 0).
    z : array_like
        Charge number (−1 for the electron).
    phi : array_like
        Inner (Galvani) potential of the phase holding the species, V.
    T : array_like
        Temperature in kelvin.

    Examples
    --------
    >>> electrochemical_potential(0.0, 1.0, 1, 0.1) == 0.1 * 96485.33212331001
    True
    """
    a = _checks.finite_array(activity, "activity", positive=True)
    return _checks.scalar_or_array(
        np.asarray(mu0, float) + R * _temperature(T) * np.log(a) + np.asarray(z, float) * F * np.asarray(phi, float)
    )


def reaction_gibbs(nu: ArrayLike, mu: ArrayLike) -> Any:
    """Reaction Gibbs energy Σ νᵢ μᵢ over the leading (species) axis.

    Parameters
    ----------
    nu : array_like, shape (k,)
        Stoichiometric numbers, positive for products, negative for reactants.
    mu : array_like, shape (k,) + batch
        Chemical or electrochemical potentials of the k species, J/mol.

    Examples
    --------
    >>> reaction_gibbs([-1, 1], [10.0, 4.0])
    -6.0
    """
    nu = np.asarray(nu, float)
    mu = np.asarray(mu, float)
    if mu.shape[:1] != nu.shape:
        raise InputError(f"mu needs a leading axis of length {nu.size}", field="mu", value=mu.shape)
    return _checks.scalar_or_array(np.tensordot(nu, mu, axes=(0, 0)))


def potential_from_gibbs(delta_G: ArrayLike, n: ArrayLike) -> Any:
    """E = −ΔrG/(nF) for a reduction consuming n electrons.

    Examples
    --------
    >>> round(potential_from_gibbs(-2 * 96485.33212 * 1.1, 2), 6)
    1.1
    """
    return _checks.scalar_or_array(-np.asarray(delta_G, float) / (_n_electrons(n) * F))


def gibbs_from_potential(E: ArrayLike, n: ArrayLike) -> Any:
    """ΔrG = −nFE in J/mol (the inverse of :func:`potential_from_gibbs`).

    Examples
    --------
    >>> round(gibbs_from_potential(0.22233, 1))
    -21452
    """
    return _checks.scalar_or_array(-_n_electrons(n) * F * np.asarray(E, float))


def equilibrium_galvani_potential(
    nu: ArrayLike, mu0: ArrayLike, activity: ArrayLike, z: ArrayLike, in_electrode: ArrayLike, T: ArrayLike = T_REF
) -> Any:
    """Inner-potential difference φ(electrode) − φ(solution) at which ΔrG̃ = 0.

    The species split between two phases: those with ``in_electrode`` true sit in the
    electronic conductor at φ_M, the rest in the solution at φ_S. Because ΔrG̃ is linear
    in the potentials and the reaction conserves charge,
    ΔrG̃ = ΔrG + F q_M (φ_M − φ_S) with q_M = Σ_{i∈M} νᵢ zᵢ, so equilibrium gives
    φ_M − φ_S = −ΔrG / (F q_M). For a reduction Ox + n e⁻ = Red, q_M = n and the
    result is the Nernst potential (on the scale set by the μ° values).

    Parameters
    ----------
    nu, z : array_like, shape (k,)
        Stoichiometric numbers and charge numbers.
    mu0 : array_like, shape (k,) or (k,) + batch
        Standard chemical potentials, J/mol.
    activity : array_like, shape (k,) + batch
        Activities (1 for pure phases and for the electron).
    in_electrode : array_like of bool, shape (k,)
        Which species belong to the electrode phase.
    T : array_like
        Temperature in kelvin.

    Examples
    --------
    >>> # Ag+ + e- = Ag(s) with μ° chosen so that E° = 0.7996 V
    >>> E = equilibrium_galvani_potential([-1, -1, 1], [0.7996 * 96485.33212331001, 0, 0],
    ...                                   [1.0, 1.0, 1.0], [1, -1, 0], [False, True, True])
    >>> round(E, 4)
    0.7996
    """
    nu = np.asarray(nu, float)
    z = np.asarray(z, float)
    mask = np.asarray(in_electrode, bool)
    if not (nu.shape == z.shape == mask.shape):
        raise InputError("nu, z and in_electrode need the same length", field="nu", value=nu.shape)
    if abs(float(nu @ z)) > 1e-9:
        raise InputError("the reaction does not conserve charge", field="nu", value=nu.tolist())
    q_m = float(np.sum(nu[mask] * z[mask]))
    if q_m == 0:
        raise InputError("no charge crosses the interface", field="in_electrode", value=mask.tolist())
    a = _checks.finite_array(activity, "activity", positive=True)
    mu0 = np.asarray(mu0, float)
    extra = (1,) * (a.ndim - 1)
    chem = mu0.reshape(mu0.shape + extra) if mu0.ndim == 1 else mu0
    dG = np.tensordot(nu, chem + R * _temperature(T) * np.log(a), axes=(0, 0))
    return _checks.scalar_or_array(-dG / (F * q_m))


def nernst_potential(E0: ArrayLike, nu: ArrayLike, activity: ArrayLike, n: ArrayLike, T: ArrayLike = T_REF) -> Any:
    """Nernst equation E = E° − (RT/nF) Σ νᵢ ln aᵢ (electrons left out of ν).

    Parameters
    ----------
    E0 : array_like
        Standard potential at T, V.
    nu : array_like, shape (k,)
        Stoichiometric numbers of the non-electron species (products positive).
    activity : array_like, shape (k,) + batch
        Activities.
    n : int
        Electrons consumed by the reduction.
    T : array_like
        Temperature in kelvin.

    Examples
    --------
    >>> # Ag+ + e- = Ag(s) at a(Ag+) = 0.01: E° − 2 × 59.16 mV
    >>> round(nernst_potential(0.7996, [-1, 1], [0.01, 1.0], 1), 4)
    0.6813
    """
    a = _checks.finite_array(activity, "activity", positive=True)
    q = np.tensordot(np.asarray(nu, float), np.log(a), axes=(0, 0))
    return _checks.scalar_or_array(np.asarray(E0, float) - R * _temperature(T) / (_n_electrons(n) * F) * q)


def standard_potential_at(
    E0: ArrayLike, dE0dT: ArrayLike = 0.0, d2E0dT2: ArrayLike = 0.0, T: ArrayLike = T_REF, T0: float = T_REF
) -> Any:
    """E°(T) = E°(T0) + (dE°/dT)(T − T0) + ½ (d²E°/dT²)(T − T0)².

    Examples
    --------
    >>> round(standard_potential_at(0.22233, -6.457e-4, -5.96e-6, 310.15), 5)
    0.21416
    """
    dT = _temperature(T) - T0
    return _checks.scalar_or_array(
        np.asarray(E0, float) + np.asarray(dE0dT, float) * dT + 0.5 * np.asarray(d2E0dT2, float) * dT**2
    )


def gas_activity(partial_pressure: ArrayLike, standard_pressure: float = P_STANDARD) -> Any:
    """Activity of an ideal gas, p / p° (fugacity coefficient 1), p° = 1 bar by default.

    Examples
    --------
    >>> gas_activity(101325.0)
    1.01325
    """
    p = _checks.finite_array(partial_pressure, "partial pressure", positive=True)
    return _checks.scalar_or_array(p / standard_pressure)


def atm_to_bar_shift(nu_gas: Any, n: ArrayLike, T: ArrayLike = T_REF) -> Any:
    """E°(1 bar) − E°(1 atm) for a reduction with net gas stoichiometry ``nu_gas``.

    Changing the standard pressure from 1 atm to 1 bar lowers each gas's standard
    chemical potential: μ°(bar) = μ°(atm) − RT ln(101325/100000), so
    E°(bar) = E°(atm) + (RT/nF) Σν_gas ln(101325/100000) (ν_gas > 0 for gaseous
    products). Tables quoted for 1 atm are converted by adding this shift.

    Examples
    --------
    >>> # 2 H+ + 2 e- = H2(g): +0.17 mV when quoted for 1 bar
    >>> round(atm_to_bar_shift(1, 2) * 1e3, 3)
    0.169
    """
    return _checks.scalar_or_array(
        R * _temperature(T) / (_n_electrons(n) * F) * np.asarray(nu_gas, float) * np.log(P_ATM / P_STANDARD)
    )
