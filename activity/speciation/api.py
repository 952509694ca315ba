"""``speciate``: free species, activities and pH of what was dissolved.

The solution says what went in (any species of the reaction data: ``Ca^2+`` and
``SO4^2-``, ``K+`` and hydrogen phthalate ``C8H5O4-``, ``H2PO4-`` with ``HPO4^2-``...);
each is reduced to component totals through its stoichiometry (hydrogen phthalate counts
one phthalate and one H⁺). Then one closure per component fixes the system:

* every component except H⁺: its total (mass balance);
* H⁺: ``ph=`` (fixed pH), or charge balance (``balance="H+"``, the default without ``ph``),
  or — when the charge balance is put on another ion — the proton balance of the input;
* ``balance="<ion>"``: that ion's total is found from the charge balance instead;
* ``gases={"CO2(g)": p}``: the component the gas dissolves into (carbonate) is found from
  the partial pressure p (Pa) instead of its total (a system open to the gas);
* ``activities={"Ca^2+": a}``: that component's total is found from its fixed free activity.
"""

from __future__ import annotations

import warnings
from collections.abc import Callable, Iterable, Mapping
from typing import Any

import numpy as np

from .. import _checks
from ..coefficients import resolve_model
from ..constants import LN10, ZERO_CELSIUS
from ..errors import ConvergenceError, InputError, ValidityWarning, call_with_notes
from ..solution import Solution
from ..species import parse_species
from .network import Network, default_network
from .overlap import parameter_table, pitzer_skips
from .result import SpeciatedSolution, SpeciationResult
from .solver import System, solve_blocks

__all__ = ["free_activity", "speciate"]

_DEFAULT = "H+ unless ph is given"
P_STANDARD = 1e5  # Pa, standard pressure of the gas constants (1 bar)


def _as_solution(solution: Any) -> Solution:
    if isinstance(solution, Solution):
        return solution
    if isinstance(solution, Mapping):
        return Solution(solution, neutrality="ignore")
    raise InputError(
        "expected an activity.Solution or a mapping of species to molality",
        field="solution",
        value=type(solution).__name__,
    )


def _in_range(model_ok: Any, k_ok: np.ndarray, shape: tuple) -> Any:
    ok = np.broadcast_to(model_ok, shape).reshape(-1) & k_ok
    return bool(ok[0]) if shape == () else ok.reshape(shape)


def _broadcast(sol: Solution, closures: list) -> Solution:
    """Widen a solution to the batch shape of array-valued closures (pH, pressures, activities)."""
    shape = sol.shape
    for field, value in closures:
        if value is None:
            continue
        try:
            shape = np.broadcast_shapes(shape, np.shape(value))
        except ValueError:
            raise InputError(
                f"does not broadcast with the batch shape {shape}", field=field, value=np.shape(value)
            ) from None
    if shape == sol.shape:
        return sol
    m = sol.m[(slice(None),) + (None,) * (len(shape) - len(sol.shape))]
    m = np.broadcast_to(m, (len(sol.species), *shape))
    return Solution._from_arrays(sol.species, sol.charges, np.array(m), sol.T_compact, sol.P_compact)


def _network(network: Any) -> Network:
    if network is None:
        return default_network()
    if isinstance(network, Network):
        return network
    if isinstance(network, Mapping):
        return Network.from_mapping(network)
    raise InputError(
        "expected a Network or a mapping in the layout of models/equilibria.toml",
        field="network",
        value=type(network).__name__,
    )


def speciate(
    solution: Any,
    model: Any = "davies",
    *,
    ph: Any = None,
    balance: Any = _DEFAULT,
    gases: Mapping[str, Any] | None = None,
    activities: Mapping[str, Any] | None = None,
    network: Any = None,
    inert: Iterable[str] = (),
    exclude: Iterable[str] = (),
    tol: float = 1e-11,
    max_iter: int = 200,
    progress: Callable[[int], Any] | None = None,
) -> SpeciationResult:
    """Speciate a solution (or a batch): free molalities, activities, pH, ionic strength.

    Parameters
    ----------
    solution : Solution or Mapping
        What was dissolved, mol/kg (a mapping is read as a :class:`~activity.Solution`
        at 25 °C without the neutrality check). Any species of the reaction data may be
        given; they are reduced to component totals. T (and P) may vary per row.
    model : str or ActivityModel, default "davies"
        Activity model; γ is recomputed from the speciated ionic strength until
        self-consistent. With a Pitzer parameter set, the pairs the set accounts for are
        left out (see :mod:`activity.speciation.overlap`).
    ph : array_like, optional
        Fixed pH (−lg a(H⁺)), per row if an array.
    balance : str or None
        Ion whose total is found from the charge balance. Default ``"H+"`` without ``ph``
        and none with it; ``None`` for no charge balance (H⁺ then follows the proton
        balance of the input). ``balance="H+"`` together with ``ph`` is refused.
    gases : Mapping[str, array_like], optional
        Gas → partial pressure in Pa, e.g. ``{"CO2(g)": 42.0}`` (open to air): the
        component the gas dissolves into is found from it instead of from its total.
    activities : Mapping[str, array_like], optional
        Component → fixed activity (e.g. ``{"Ca^2+": 1e-8}`` for pCa 8): its total is
        found instead of given (the basis of :mod:`activity.speciation.metal_buffers`).
    network : Network or Mapping, optional
        Reaction data (default ``models/equilibria.toml``).
    inert : iterable of str
        Ions that take part in no reaction of the data, carried unchanged.
    exclude : iterable of str
        Formed species to leave out (and those made from them).
    tol : float
        Largest scaled residual of mass, charge and activity equations at convergence.
    max_iter : int
    progress : callable, optional
        Called with the number of rows finished as the solver works through a big batch
        (after each block of rows), e.g. the ``update`` of a progress bar such as
        :class:`activity.workflows.progress.Progress`; the counts sum to the number of rows.

    Returns
    -------
    SpeciationResult

    Raises
    ------
    InputError
        Unknown species, negative totals, conflicting closures; names the field.
    ConvergenceError
        If rows do not converge; ``.rows`` lists them (flat indices of the batch).

    Examples
    --------
    >>> r = speciate({"Ca^2+": 0.01, "SO4^2-": 0.01})
    >>> round(r.molality("CaSO4") / 0.01, 2)      # share of calcium paired
    0.28
    >>> round(r.ph, 2)
    7.05
    >>> r = speciate({"K+": 0.05, "C8H5O4-": 0.05})
    >>> round(r.ph, 2)
    4.01
    """
    sol = _as_solution(solution)
    mdl = resolve_model(model)
    net = _network(network)
    for name in exclude:
        net = net.without(name)
    sol = _broadcast(
        sol,
        [("ph", ph)]
        + [("gases", v) for v in (gases or {}).values()]
        + [("activities", v) for v in (activities or {}).values()],
    )
    shape = sol.shape
    N = sol.size
    inert_names = []
    for name in inert:
        key = parse_species(name).name
        if key in net.components or key in net.products:
            raise InputError("is a species of the reaction data, not inert", field="inert", value=name)
        inert_names.append(key)
    comps = list(net.components) + inert_names
    cidx = {c: i for i, c in enumerate(comps)}
    nc_all = len(comps)
    # ---- what was dissolved → component totals (rows first)
    by_component = np.zeros((nc_all, N))  # filled a component at a time, the same sums
    for i, name in enumerate(sol.species):
        if name in inert_names:
            st = np.zeros(nc_all)
            st[cidx[name]] = 1.0
        else:
            st = np.concatenate([net.stoichiometry(name), np.zeros(len(inert_names))])
        for c in np.flatnonzero(st):
            by_component[c] += sol.m[i].reshape(N) * st[c]
    totals_all = by_component.T
    # ---- closures
    notes: list[str] = []
    if ph is not None:
        ph_arr = _checks.finite_array(ph, "ph")
        if np.any((ph_arr < -2) | (ph_arr > 16)):
            raise InputError("must lie between −2 and 16", field="ph", value=float(ph_arr.ravel()[0]))
        try:
            ph_arr = np.broadcast_to(ph_arr, shape).reshape(N)
        except ValueError:
            raise InputError(
                f"does not broadcast with the batch shape {shape}", field="ph", value=np.shape(ph)
            ) from None
    if balance == _DEFAULT:
        balance = "H+" if ph is None else None
    elif balance is not None and ph is not None and parse_species(balance).name == "H+":
        raise InputError(
            "a fixed pH and charge balance on H+ over-determine H+; balance on another ion or pass balance=None",
            field="balance",
            value=balance,
        )
    bal = None
    if balance is not None:
        bsp = parse_species(balance)
        if bsp.charge == 0:
            raise InputError("charge balance needs an ion", field="balance", value=balance)
        if bsp.name not in cidx:
            raise InputError(
                f"not a component of the reaction data (components: {', '.join(comps)})",
                field="balance",
                value=balance,
            )
        bal = cidx[bsp.name]
    # component totals: negative ones are refused (H+ may be negative: a base was dissolved)
    neg = totals_all[:, 1:] < -1e-15  # necessary for the test below, and cheaper
    if np.any(neg):
        neg = totals_all[:, 1:] < -1e-15 * np.maximum(1.0, np.abs(totals_all[:, 1:]))
    if np.any(neg):
        r, c = np.argwhere(neg)[0]
        raise InputError(
            f"a negative total of {comps[c + 1]} results (row {int(r)})",
            field="solution",
            value=float(totals_all[r, c + 1]),
        )
    totals_all[:, 1:] = np.maximum(totals_all[:, 1:], 0.0)
    gas_cols: dict[int, tuple[str, int, np.ndarray]] = {}
    for gname, p in (gases or {}).items():
        gkey = parse_species(gname).name if "(g)" in str(gname) else parse_species(str(gname) + "(g)").name
        if gkey not in net.gases:
            raise InputError(
                f"no such gas in the reaction data (gases: {', '.join(net.gases) or 'none'})",
                field="gases",
                value=gname,
            )
        gas = net.gases[gkey]
        st = net.stoichiometry(gas.dissolves_as)
        cols = [j for j in np.flatnonzero(st) if net.components[j] != "H+"]
        if len(cols) != 1:
            raise InputError("the dissolved gas is not made of one component besides H+", field="gases", value=gname)
        col = int(cols[0])
        if col == bal:
            raise InputError(
                f"{comps[col]} would be fixed both by the gas and by the charge balance",
                field="gases",
                value=gname,
            )
        if col in gas_cols:
            raise InputError(f"two gases fix the same component {comps[col]}", field="gases", value=gname)
        p_arr = _checks.finite_array(p, f"gases[{gname!r}]", positive=True)
        gas_cols[col] = (
            gkey,
            net.products.index(gas.dissolves_as) if gas.dissolves_as in net.products else -1,
            np.broadcast_to(p_arr, shape).reshape(N),
        )
    fixed_cols: dict[int, np.ndarray] = {}
    for name, a in (activities or {}).items():
        key = parse_species(name).name
        if key == "H+":
            raise InputError("fix the activity of H+ with ph=", field="activities", value=name)
        if key not in cidx:
            raise InputError(
                f"not a component of the reaction data (components: {', '.join(comps)})",
                field="activities",
                value=name,
            )
        col = cidx[key]
        if col == bal or col in gas_cols:
            raise InputError(
                f"{key} would be fixed twice (activity and {'charge balance' if col == bal else 'a gas'})",
                field="activities",
                value=name,
            )
        a_arr = _checks.finite_array(a, f"activities[{name!r}]", positive=True)
        try:
            fixed_cols[col] = np.broadcast_to(a_arr, shape).reshape(N)
        except ValueError:
            raise InputError(
                f"does not broadcast with the batch shape {shape}", field="activities", value=name
            ) from None
    # ---- which components and species take part
    used = np.any(totals_all != 0, axis=0)
    used[0] = True
    if bal is not None:
        used[bal] = True
    for col in list(gas_cols) + list(fixed_cols):
        used[col] = True
    skipped: dict[str, str] = {}
    table = parameter_table(mdl)
    if table is not None:
        skipped = pitzer_skips(net, table)
    n_net = len(net.components)
    prods = []
    for j, p in enumerate(net.products):
        st = np.flatnonzero(net.nu[j])
        if all(used[k] for k in st) and p not in skipped:
            prods.append(j)
    comp_idx = np.flatnonzero(used)
    n = len(comp_idx)
    species = tuple(comps[k] for k in comp_idx) + tuple(net.products[j] for j in prods)
    nu = np.zeros((len(species), n))
    nu[:n] = np.eye(n)
    for r, j in enumerate(prods):
        nu[n + r] = [net.nu[j][k] if k < n_net else 0.0 for k in comp_idx]
    charges = np.array([parse_species(s).charge for s in species], dtype=int)
    system = System(species, charges, nu)
    pos = {int(k): i for i, k in enumerate(comp_idx)}
    # ---- ln β per row
    T_flat = (
        np.broadcast_to(sol.T_compact, shape).reshape(N) if np.ndim(sol.T_compact) else np.asarray(sol.T_compact, float)
    )
    P_flat = (
        np.broadcast_to(sol.P_compact, shape).reshape(N) if np.ndim(sol.P_compact) else np.asarray(sol.P_compact, float)
    )
    lnk_T = np.zeros((len(species), N))  # rows last, as the solver works; lnk is its (N, ns) view
    if prods:
        if np.ndim(T_flat) == 0:
            lnk_T[n:] = LN10 * net.lg_beta(T_flat, prods)[:, None]
        else:
            lnk_T[n:] = LN10 * net.lg_beta(T_flat, prods)
    lnk = lnk_T.T
    k_ok = np.ones(N, dtype=bool)  # rows where every constant used holds at the row's T
    for j in prods:
        lo, hi = net.T_range(j)
        outside = np.broadcast_to((T_flat < lo - 1e-9) | (T_flat > hi + 1e-9), (N,))
        if np.any(outside):
            k_ok &= ~outside
            msg = (
                f"lg K of {net.products[j]} holds at {lo - ZERO_CELSIUS:g}–{hi - ZERO_CELSIUS:g} °C; "
                f"used outside that range in {int(np.count_nonzero(outside))} of {N} row(s)"
            )
            notes.append(msg)
            warnings.warn(msg, ValidityWarning, stacklevel=2)
    # ---- closures per column
    totals = totals_all[:, comp_idx]
    mass_cols = np.ones(n, dtype=bool)
    act_cols: list[int] = []
    act_species: list[int] = []
    act_targets: list[np.ndarray] = []
    closure = []
    h = pos[0]
    if ph is not None:
        mass_cols[h] = False
        act_cols.append(h)
        act_species.append(h)
        act_targets.append(-LN10 * ph_arr)
        closure.append("fixed pH")
    charge_col = None
    if bal is not None:
        charge_col = pos[bal]
        mass_cols[charge_col] = False
        closure.append(f"charge balance on {comps[bal]}")
    if ph is None and bal != 0:
        closure.append("H+ from the proton balance of the input")
    for col, (gkey, _sp, p_arr) in gas_cols.items():
        c = pos[col]
        mass_cols[c] = False
        gas = net.gases[gkey]
        s_idx = species.index(gas.dissolves_as)
        act_cols.append(c)
        act_species.append(s_idx)
        act_targets.append(LN10 * gas.reaction.lg_k(T_flat) + np.log(p_arr / P_STANDARD))
        closure.append(f"{gkey} at fixed partial pressure")
    for col, a_arr in fixed_cols.items():
        c = pos[col]
        mass_cols[c] = False
        act_cols.append(c)
        act_species.append(c)
        act_targets.append(np.log(a_arr))
        closure.append(f"fixed activity of {comps[col]}")
    # ---- residual scales: the totals; for H+ and the charge row the gross amount put in
    gross_h = np.zeros(N)
    gross_z = np.zeros(N)
    for i, name in enumerate(sol.species):
        mi = sol.m[i].reshape(N)
        gross_z += abs(sol.charges[i]) * mi
        if name not in inert_names:
            gross_h += abs(net.stoichiometry(name)[0]) * mi
    scale = np.where(totals > 0, totals, 1.0)
    scale[:, h] = np.maximum(gross_h, 1e-7)
    if charge_col is not None:
        scale[:, charge_col] = np.maximum(gross_z, 1e-7)
    # ---- start
    u0 = np.log(np.maximum(totals, 1e-10))
    u0[:, h] = np.log(1e-7) if ph is None else -LN10 * ph_arr
    if ph is None and bal == 0:
        # charge balance on H+ takes up the net charge q of what was dissolved: start from
        # H+ ≈ −q (cations missing) or OH− ≈ q (anions missing) instead of pH 7, so that a
        # row far from neutral is not approached by many damped steps
        q_in = np.zeros(N)
        for i in range(len(sol.species)):
            q_in += sol.charges[i] * sol.m[i].reshape(N)
        u0[:, h] = np.where(q_in < -1e-7, np.log(np.maximum(-q_in, 1e-7)), u0[:, h])
        u0[:, h] = np.where(q_in > 1e-7, np.log(1e-14 / np.maximum(q_in, 1e-7)), u0[:, h])
    for c, sp_i, tgt in zip(act_cols, act_species, act_targets):
        if c != h and c != sp_i:  # a gas: the component value giving its target activity at the start H+
            u0[:, c] = (tgt - lnk[:, sp_i] - nu[sp_i, h] * u0[:, h]) / nu[sp_i, c]
        elif c == sp_i and c != h:
            u0[:, c] = tgt
    # columns that may be absent from a row (pinned there); H+ never is: its proton
    # balance may be 0 (pure water) or negative (a base was dissolved)
    pin_cols = mass_cols.copy()
    h_alone = not np.any(nu[n:, h])  # no formed species holds H+ (a network without acids)
    pin_cols[h] = h_alone
    out, caught = call_with_notes(
        solve_blocks,
        system,
        lnk,
        totals,
        scale,
        pin_cols,
        charge_col,
        act_cols,
        act_species,
        act_targets,
        mdl,
        T_flat,
        P_flat,
        u0,
        tol=tol,
        max_iter=max_iter,
        **({} if progress is None else {"progress": progress}),
    )
    notes.extend(caught)
    if not np.all(out.converged):
        rows = np.flatnonzero(~out.converged)
        raise ConvergenceError(
            f"speciation did not converge in {len(rows)} of {N} row(s) (rows {rows[:10].tolist()}"
            f"{'…' if len(rows) > 10 else ''}; "
            f"largest scaled residual {float(np.max(out.residual[rows])):.3g})",
            rows=rows,
        )
    m = getattr(out, "m", None)  # (N, ns), as the solver evaluated it
    m = np.exp(out.lnm) if m is None else m
    lna_h = (out.lnm[:, h] + out.lng[:, h]) / LN10
    lg = out.lng  # the solver's own array: turned into log10 γ in place
    lg /= LN10
    final_sol = SpeciatedSolution.of(
        species, charges, m.T.reshape((len(species),) + shape), sol.T_compact, sol.P_compact, nu
    )
    coeffs, more = call_with_notes(mdl.activity_coefficients, final_sol)
    notes.extend(n_ for n_ in more if n_ not in notes)
    notes.extend(n_ for n_ in coeffs.notes if n_ not in notes)
    if any("H2O" in net.reactions[net.products[j]].reactants for j in prods):
        notes.append("water takes part in reactions with activity 1")
    for p, why in skipped.items():
        if all(used[k] for k in np.flatnonzero(net.nu[net.products.index(p)])):
            notes.append(f"{p} not counted as a species: {why}")
    if bal is not None:
        given = totals_all[:, bal]
        found = m @ nu[:, pos[bal]]
        if np.any(found > given * (1 + 1e-9) + 1e-15) and comps[bal] != "H+":
            notes.append(f"charge balance added {comps[bal]} (up to {float(np.max(found - given)):.4g} mol/kg)")
    if charge_col is None:
        z = charges.astype(float)
        rel = np.abs(m @ z) / np.maximum(m @ np.abs(z), 1e-300)
        if np.any(rel > 1e-6):
            notes.append(
                f"no charge balance was imposed and the speciated solution carries a relative charge "
                f"imbalance up to {float(np.max(rel)):.3g}; pass balance='<ion>' to close it"
            )
    calc_totals = m @ nu  # (N, n)
    totals_out = {comps[k]: _checks.scalar_or_array(calc_totals[:, pos[int(k)]].reshape(shape)) for k in comp_idx}
    if h_alone and mass_cols[h]:
        lna_h = np.where(totals[:, h] > 0, lna_h, np.nan)
        if np.any(totals[:, h] <= 0):
            notes.append("no H+ in the system (no acid–base reactions, none given): pH is undefined (NaN)")
    I = 0.5 * (m @ (charges.astype(float) ** 2))
    return SpeciationResult(
        species=species,
        m=m.T.reshape((len(species),) + shape),
        log10_gamma=lg.T.reshape((len(species),) + shape),
        ionic_strength=_checks.scalar_or_array(I.reshape(shape)),
        ph=_checks.scalar_or_array(-lna_h.reshape(shape)),
        converged=bool(out.converged[0]) if shape == () else out.converged.reshape(shape),
        iterations=int(out.iterations[0]) if shape == () else out.iterations.reshape(shape),
        totals=totals_out,
        closure="; ".join(closure),
        model=mdl.name,
        in_range=_in_range(coeffs.in_range, k_ok, shape),
        notes=tuple(dict.fromkeys(notes)),
        skipped=skipped,
        T=sol.T,
        P=sol.P,
        charges=charges,
        components=tuple(comps[k] for k in comp_idx),
        stoichiometry=nu,
    )


def free_activity(solution: Any, ion: str, model: Any = "davies", **closures: Any) -> Any:
    """Free activity of one ion after speciation (batch-first): what an electrode answers to.

    A shortcut for ``speciate(solution, model, **closures).activity(ion)``, meant for the
    Nernst layer: an ion-selective electrode in a complexing matrix (sulfate, carbonate,
    citrate, a chelator) sees this activity, not γ times the total molality.

    Parameters
    ----------
    solution : Solution or Mapping
        What was dissolved (rows allowed).
    ion : str
        The ion whose free activity is wanted (a component or formed species).
    model : str or ActivityModel
    **closures
        ``ph``, ``balance``, ``gases``, ... as for :func:`speciate`.

    Returns
    -------
    float or ndarray
        Shaped like the batch.

    Examples
    --------
    >>> round(free_activity({"Ca^2+": 0.01, "SO4^2-": 0.01}, "Ca^2+"), 5)
    0.00378
    """
    return speciate(solution, model, **closures).activity(ion)
