"""The conformance suite every activity model passes, as an importable function.

:func:`check_model` runs the laws any activity-coefficient model must obey on compositions of
NaCl, KCl, CaCl2, Na2SO4 and MgSO4 inside the model's declared validity. The project's own
tests call it for every registered model; a package that plugs in a model through the
``activity.models`` entry-point group calls it in its own CI::

    from activity.coefficients.testing import check_model
    check_model(MyModel())

Every check raises :class:`ConformanceError` (an ``AssertionError``) naming the model, the
check and what was seen. Compositions are drawn from a seeded generator, so a failure
reproduces.

The laws:

* the model declares its validity (ionic strength, temperature range, what it covers);
* its result is a mapping over the solution's species with notes as text;
* the Debye–Hückel limiting law as I → 0: log10 γᵢ → −A zᵢ² √I (Debye & Hückel 1923), and
  γ = 1 for the ideal model;
* a batch equals row-by-row evaluation, and the species' order does not matter;
* results are finite on the declared domain;
* Gibbs–Duhem for a single salt where the model defines φ:
  ln γ± = (φ − 1) + ∫₀ᵐ (φ − 1)/m′ dm′ (Robinson & Stokes 1959, ch. 2);
* ln a_w = −φ M_w Σm, the definition of the molal osmotic coefficient;
* the constructor only stores parameters (``type(model)(**model.params)`` is equal).
"""

from __future__ import annotations

import warnings
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from ..constants import M_WATER
from ..errors import ActivityWarning, ModelError
from ..solution import Solution
from ..water import debye_huckel_A
from .activities import mean_activity_coefficient
from .base import ActivityModel, Validity

__all__ = ["check_model", "ConformanceError", "ConformanceReport", "SALTS"]

#: Salts the suite composes its solutions from (ions every built-in model covers).
SALTS: dict[str, dict[str, int]] = {
    "NaCl": {"Na+": 1, "Cl-": 1},
    "KCl": {"K+": 1, "Cl-": 1},
    "CaCl2": {"Ca^2+": 1, "Cl-": 2},
    "Na2SO4": {"Na+": 2, "SO4^2-": 1},
    "MgSO4": {"Mg^2+": 1, "SO4^2-": 1},
}


class ConformanceError(AssertionError):
    """A model broke one of the laws of :func:`check_model`."""


@dataclass(frozen=True)
class ConformanceReport:
    """What :func:`check_model` ran: the model's name and the checks passed (or skipped)."""

    model: str
    passed: tuple[str, ...]
    skipped: tuple[str, ...]


def _compose(parts: list[tuple[str, float]]) -> dict[str, float]:
    comp: dict[str, float] = {}
    for salt, m in parts:
        for ion, nu in SALTS[salt].items():
            comp[ion] = comp.get(ion, 0.0) + nu * m
    return comp


def _max_I(model: ActivityModel) -> float:
    return min(model.validity.max_ionic_strength, 3.0)


def _quiet(func: Callable, *args):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        return func(*args)


class _Checker:
    def __init__(self, model: ActivityModel, examples: int, seed: int):
        self.model, self.examples, self.rng = model, examples, np.random.default_rng(seed)

    def fail(self, check: str, detail: str) -> None:
        raise ConformanceError(f"{self.model.name}: {check}: {detail}")

    def random_composition(self, max_parts: int = 3, top: float = 1.0) -> dict[str, float]:
        n = int(self.rng.integers(1, max_parts + 1))
        salts = self.rng.choice(list(SALTS), size=n)
        comp = _compose([(s, float(m)) for s, m in zip(salts, self.rng.uniform(1e-6, top, n))])
        scale = min(1.0, _max_I(self.model) / Solution(comp).ionic_strength)
        return {k: v * scale for k, v in comp.items()}

    # ------------------------------------------------------------ the laws
    def declared_validity(self) -> None:
        v = self.model.validity
        if not isinstance(v, Validity) or not v.max_ionic_strength > 0 or not v.T_min < v.T_max:
            self.fail("declared validity", f"needs a Validity with I > 0 and T_min < T_max, got {v!r}")
        if not isinstance(v.describe(), str):
            self.fail("declared validity", "describe() must return text")

    def result_is_a_mapping(self) -> None:
        sol = Solution(_compose([("NaCl", 1e-5), ("CaCl2", 1e-6)]))
        res = self.model.activity_coefficients(sol)
        if list(res) != list(sol.species) or res.log10_gamma.shape != (len(sol.species),):
            self.fail(
                "result",
                f"expected a mapping over {sol.species} with log10_gamma of shape "
                f"({len(sol.species)},), got {list(res)} and {res.log10_gamma.shape}",
            )
        if not all(isinstance(n, str) for n in res.notes):
            self.fail("result", "notes must be text")

    def limiting_law(self) -> None:
        T = 310.15
        A = debye_huckel_A(T)
        for salt in SALTS:
            sol = Solution(_compose([(salt, 1e-7)]), T=T)
            lg = self.model.log10_gamma(sol)
            limit = -A * sol.charges**2 * np.sqrt(sol.ionic_strength)
            ideal = self.model.name == "ideal"
            ok = np.all(lg == 0) if ideal else np.allclose(lg, limit, rtol=2e-3, atol=0)
            if not ok:
                self.fail(
                    "limiting law as I → 0",
                    f"{salt} at 1e-7 mol/kg: log10 γ = {lg.tolist()}, expected {'0' if ideal else limit.tolist()}",
                )

    def batch_equals_rows(self) -> None:
        for _ in range(self.examples):
            comp = self.random_composition()
            n = int(self.rng.integers(2, 7))
            T = float(self.rng.uniform(max(278.15, self.model.validity.T_min), min(348.15, self.model.validity.T_max)))
            batch = Solution({k: v * np.linspace(0.2, 1.0, n) for k, v in comp.items()}, T=T)
            lg = _quiet(self.model.log10_gamma, batch)
            rows = np.stack([_quiet(self.model.log10_gamma, r) for r in batch.rows()], axis=-1)
            if lg.shape != (len(comp), n) or not np.allclose(lg, rows, rtol=1e-12, atol=1e-14):
                self.fail(
                    "batch equals row by row",
                    f"{comp} at {T} K differs by {float(np.max(np.abs(lg - rows))):.3g} in log10 γ",
                )

    def order_invariance(self) -> None:
        for _ in range(self.examples):
            comp = self.random_composition(max_parts=4, top=0.5)
            names = list(comp)
            self.rng.shuffle(names)
            ga = _quiet(self.model.activity_coefficients, Solution(comp))
            gb = _quiet(self.model.activity_coefficients, Solution({k: comp[k] for k in names}))
            for k in comp:
                if not np.isclose(ga[k], gb[k], rtol=1e-12, atol=0):
                    self.fail("species order", f"γ({k}) {ga[k]!r} becomes {gb[k]!r} when the species are reordered")

    def finite_on_domain(self) -> None:
        v = self.model.validity
        for _ in range(self.examples):
            comp = self.random_composition(max_parts=4)
            T = float(self.rng.uniform(max(v.T_min, 273.15), min(v.T_max, 423.15)))
            res = _quiet(self.model.activity_coefficients, Solution(comp, T=T))
            phi = res.osmotic_coefficient
            if not np.all(np.isfinite(res.log10_gamma)) or (phi is not None and not (np.isfinite(phi) and phi > 0)):
                self.fail(
                    "finite on the declared domain",
                    f"{comp} at {T:.2f} K gives log10 γ {res.log10_gamma.tolist()}, φ {phi}",
                )

    def gibbs_duhem(self) -> bool:
        from scipy.integrate import quad

        try:
            self.model.osmotic_coefficient(Solution(_compose([("NaCl", 0.01)])))
        except ModelError:
            return False
        for salt in ("NaCl", "CaCl2", "Na2SO4"):
            cation, anion = list(SALTS[salt])
            m = 0.9 * min(1.0, _max_I(self.model) / Solution(_compose([(salt, 1.0)])).ionic_strength)

            def integrand(x: float, salt: str = salt) -> float:
                return (_quiet(self.model.osmotic_coefficient, Solution(_compose([(salt, x)]))) - 1.0) / x

            integral, _ = quad(integrand, 0.0, m, epsabs=1e-12, epsrel=1e-10, limit=200)
            sol = Solution(_compose([(salt, m)]))
            phi = _quiet(self.model.osmotic_coefficient, sol)
            ln_gpm = float(np.log(_quiet(mean_activity_coefficient, sol, cation, anion, self.model)))
            if abs(ln_gpm - (phi - 1.0 + integral)) > 1e-5:
                self.fail(
                    "Gibbs–Duhem", f"{salt} at {m:.4g} mol/kg: ln γ± = {ln_gpm:.8f}, from φ {phi - 1.0 + integral:.8f}"
                )
        return True

    def water_activity(self) -> bool:
        sol = Solution(_compose([("NaCl", 0.05)]))
        try:
            phi = self.model.osmotic_coefficient(sol)
        except ModelError:
            return False
        expected = -phi * M_WATER * 0.1  # Σm = 0.1 mol/kg
        if not np.isclose(np.log(self.model.water_activity(sol)), expected, rtol=1e-12, atol=0):
            self.fail("water activity", "ln a_w differs from −φ M_w Σm")
        return True

    def constructor_stores(self) -> None:
        clone = type(self.model)(**self.model.params)
        if clone.params != self.model.params:
            self.fail("constructor", "type(model)(**model.params) does not reproduce the parameters")


def check_model(model: ActivityModel, *, examples: int = 20, seed: int = 0) -> ConformanceReport:
    """Run the conformance suite on ``model``; raise :class:`ConformanceError` at the first law
    it breaks.

    Parameters
    ----------
    model : ActivityModel
        A constructed model (ours or a plug-in's).
    examples : int, default 20
        Random compositions per sampled law.
    seed : int, default 0
        Seed of the composition generator.

    Returns
    -------
    ConformanceReport

    Examples
    --------
    >>> from activity.coefficients import get_model
    >>> report = check_model(get_model("davies"), examples=3)
    >>> report.model, len(report.passed), report.skipped
    ('davies', 9, ())
    """
    if not isinstance(model, ActivityModel):
        raise ConformanceError(f"{model!r} is not an ActivityModel")
    c = _Checker(model, examples, seed)
    passed, skipped = [], []
    for name, law in [
        ("declared validity", c.declared_validity),
        ("result is a mapping", c.result_is_a_mapping),
        ("limiting law", c.limiting_law),
        ("batch equals rows", c.batch_equals_rows),
        ("species order", c.order_invariance),
        ("finite on the domain", c.finite_on_domain),
        ("Gibbs–Duhem", c.gibbs_duhem),
        ("water activity", c.water_activity),
        ("constructor stores parameters", c.constructor_stores),
    ]:
        ran = law()
        (skipped if ran is False else passed).append(name)
    return ConformanceReport(model.name, tuple(passed), tuple(skipped))
