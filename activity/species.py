"""Species names: parse, canonicalise, charge, element counts and molar mass.

Canonical names follow the mhchem convention: ``Na+``, ``Ca^2+``, ``SO4^2-``, ``H2O``,
``AgCl(s)``, ``H2(g)``. Input may also say ``Ca2+``, ``Ca++`` or ``Ca+2``. A name such as
``SO42-`` is ambiguous (``SO4^2-`` or ``SO42^-``?) and is refused with a suggestion.
The parser is a small hand-written tokenizer; user text is never evaluated.
"""

from __future__ import annotations

import functools
import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

from . import data
from .errors import InputError

__all__ = ["Species", "parse_species", "canonical_name", "charge_of", "molar_mass", "check_solute", "solute_key"]

_PHASES = {"s": "s", "cr": "s", "l": "l", "g": "g", "aq": "aq"}
_PHASE_RE = re.compile(r"\((s|cr|l|g|aq)\)$")
_ELEMENT_RE = re.compile(r"[A-Z][a-z]?")
_ELECTRON_MOLAR_MASS = 5.48579909e-7  # kg/mol, CODATA electron mass × N_A (common practice)


@dataclass(frozen=True)
class Species:
    """A parsed chemical species.

    Attributes
    ----------
    name : str
        Canonical name, e.g. ``'SO4^2-'`` or ``'AgCl(s)'``.
    formula : str
        Formula without charge or phase, e.g. ``'SO4'``.
    charge : int
        Charge number z.
    phase : str
        ``'aq'`` (default), ``'s'``, ``'l'``, ``'g'``, or ``'e'`` for the electron.
    elements : Mapping[str, int]
        Element counts.
    molar_mass : float
        Molar mass in kg/mol (IUPAC standard atomic weights).
    """

    name: str
    formula: str
    charge: int
    phase: str
    elements: Mapping[str, int] = field(compare=False)
    molar_mass: float = field(compare=False)

    @property
    def is_ion(self) -> bool:
        return self.charge != 0 and self.phase == "aq"

    @property
    def is_electron(self) -> bool:
        return self.phase == "e"


def _charge_text(z: int, formula: str = "") -> str:
    if z == 0:
        return ""
    sign = "+" if z > 0 else "-"
    if abs(z) > 1:
        return f"^{abs(z)}{sign}"
    d = re.search(r"(\d+)$", formula)
    if d and (len(d.group(1)) > 1 or re.fullmatch(r"[A-Z][a-z]?", formula[: d.start()])):
        return "^" + sign  # 'Hg2^+': a bare 'Hg2+' would read as Hg^2+
    return sign


# Unicode spellings, as printed in reports and typeset texts: 'Ca²⁺', 'H₂PO₄⁻', 'SO₄²⁻', 'Cl−'.
_SUBSCRIPTS = str.maketrans("₀₁₂₃₄₅₆₇₈₉", "0123456789")
_SUPER_DIGITS = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹", "0123456789")
_SUPER_CHARGE = re.compile(r"([⁰¹²³⁴⁵⁶⁷⁸⁹]*)([⁺⁻]+)$")
_MINUS_SIGNS = str.maketrans({"−": "-", "–": "-", "‐": "-", "＋": "+"})

# Elements whose only aqueous ion in ordinary chemistry has this charge number: a digit
# between such a symbol and its sign ('Na2+', 'Cl2-') is more likely a typo than the ion
# the digit implies, so it is refused unless written with a caret ('Na^2+'). Common practice.
_USUAL_CHARGE = {
    **dict.fromkeys(("H", "Li", "Na", "K", "Rb", "Cs", "Ag"), 1),
    **dict.fromkeys(("Be", "Mg", "Ca", "Sr", "Ba", "Zn", "Cd"), 2),
    **dict.fromkeys(("Al", "Sc", "Ga", "La"), 3),
    **dict.fromkeys(("F", "Cl", "Br", "I"), -1),
}


def _normalise(text: str, original: str) -> str:
    """Plain-ASCII spelling of a name typed with Unicode sub/superscripts or minus signs."""
    text = text.translate(_MINUS_SIGNS).translate(_SUBSCRIPTS)
    m = _SUPER_CHARGE.search(text)
    if m:
        digits = m.group(1).translate(_SUPER_DIGITS)
        signs = m.group(2).replace("⁺", "+").replace("⁻", "-")
        if digits and len(signs) > 1:
            raise InputError(
                "write the charge as one number and one sign, e.g. 'Ca²⁺'", field="species", value=original
            )
        text = text[: m.start()] + (f"^{digits}{signs}" if digits else signs)
    if re.search(r"[⁰¹²³⁴⁵⁶⁷⁸⁹⁺⁻]", text):
        raise InputError("superscripts belong only in the charge, at the end", field="species", value=original)
    return text


def _parse_charge(text: str, original: str) -> tuple[str, int]:
    """Split ``text`` into (formula, charge)."""
    m = re.fullmatch(r"(.*?)\^(\d*)([+-])", text)
    if m:
        n = int(m.group(2) or 1)
        return m.group(1), n if m.group(3) == "+" else -n
    m = re.fullmatch(r"(.*?[A-Za-z0-9\)\]])([+-])(\d+)", text)
    if m:
        n = int(m.group(3))
        return m.group(1), n if m.group(2) == "+" else -n
    m = re.fullmatch(r"(.*?)(\++|-+)", text)
    if not m:
        return text, 0
    formula, signs = m.group(1), m.group(2)
    sign = 1 if signs[0] == "+" else -1
    if len(signs) > 1:
        return formula, sign * len(signs)
    d = re.search(r"(\d+)$", formula)
    if d is None:
        return formula, sign
    digits = d.group(1)
    base = formula[: -len(digits)]
    if re.fullmatch(r"[A-Z][a-z]?", base) and len(digits) == 1:
        usual = _USUAL_CHARGE.get(base)
        if usual is not None and usual != sign * int(digits):
            plain = (
                f"{base}{'+' if usual > 0 else '-'}"
                if abs(usual) == 1
                else f"{base}^{abs(usual)}{'+' if usual > 0 else '-'}"
            )
            raise InputError(
                f"{base} forms {plain!r} in water; write {plain!r}, or '{base}^{digits}{signs}' if you mean that ion",
                field="species",
                value=original,
            )
        return base, sign * int(digits)  # Ca2+ → Ca^2+
    if len(digits) == 1:
        return formula, sign  # NH4+, NO3-, H2PO4-
    suggestion = f"{formula[:-1]}^{digits[-1]}{signs}"
    raise InputError(
        f"ambiguous charge; write {suggestion!r} (or '{formula}^{signs}' if the count is {digits})",
        field="species",
        value=original,
    )


def _parse_formula(formula: str, original: str) -> dict[str, int]:
    """Count elements in a formula with (nested) groups and hydrate dots."""
    weights = data.load("elements")["weights"]
    total: dict[str, int] = {}
    for part in re.split(r"[·.*]", formula):
        m = re.match(r"(\d*)(.*)", part)
        mult = int(m.group(1)) if m.group(1) else 1
        counts = _parse_group(m.group(2), original, weights)
        for el, n in counts.items():
            total[el] = total.get(el, 0) + mult * n
    return total


def _parse_group(text: str, original: str, weights: Mapping[str, float]) -> dict[str, int]:
    stack: list[dict[str, int]] = [{}]
    i = 0
    while i < len(text):
        ch = text[i]
        if ch in "([":
            stack.append({})
            i += 1
            continue
        if ch in ")]":
            if len(stack) == 1:
                raise InputError("unbalanced parenthesis", field="species", value=original)
            group = stack.pop()
            i += 1
            j = i
            while j < len(text) and text[j].isdigit():
                j += 1
            n = int(text[i:j]) if j > i else 1
            i = j
            for el, c in group.items():
                stack[-1][el] = stack[-1].get(el, 0) + c * n
            continue
        m = _ELEMENT_RE.match(text, i)
        if not m:
            raise InputError(f"cannot read {text[i:]!r} as a chemical formula", field="species", value=original)
        el = m.group(0)
        if el not in weights:
            # Try a one-letter element when the two-letter reading is unknown (e.g. 'Co' vs 'CO').
            raise InputError(f"unknown element {el!r}", field="species", value=original)
        i = m.end()
        j = i
        while j < len(text) and text[j].isdigit():
            j += 1
        n = int(text[i:j]) if j > i else 1
        i = j
        stack[-1][el] = stack[-1].get(el, 0) + n
    if len(stack) != 1:
        raise InputError("unbalanced parenthesis", field="species", value=original)
    return stack[0]


def parse_species(name: str) -> Species:
    """Parse a species name into a :class:`Species`.

    Parameters
    ----------
    name : str
        A name such as ``'Ca^2+'``, ``'Ca2+'``, ``'Ca++'``, ``'Ca+2'``, ``'SO4^2-'``,
        ``'AgCl(s)'`` or ``'e-'``.

    Returns
    -------
    Species

    Raises
    ------
    InputError
        For malformed, unknown or ambiguous names.

    Examples
    --------
    >>> parse_species("Ca2+").name
    'Ca^2+'
    >>> parse_species("Hg2Cl2(s)").molar_mass
    0.47208
    >>> parse_species("SO42-")
    Traceback (most recent call last):
    ...
    activity.errors.InputError: species = 'SO42-': ambiguous charge; write 'SO4^2-' (or 'SO42^-' if the count is 42)
    """
    if not isinstance(name, str):
        raise InputError("a species name must be a string", field="species", value=name)
    return _parse_species(name)


@functools.lru_cache(maxsize=4096)
def _parse_species(name: str) -> Species:
    text = _normalise(name.strip().replace(" ", ""), name)
    if not text:
        raise InputError("empty species name", field="species", value=name)
    if text in ("e-", "e^-", "e"):
        return Species("e-", "e", -1, "e", MappingProxyType({}), _ELECTRON_MOLAR_MASS)
    if text[0].isdigit():
        raise InputError(
            "a species name starts with its formula; a leading number is a coefficient", field="species", value=name
        )
    phase = "aq"
    m = _PHASE_RE.search(text)
    if m:
        phase = _PHASES[m.group(1)]
        text = text[: m.start()]
    formula, z = _parse_charge(text, name)
    if not formula:
        raise InputError("no formula before the charge", field="species", value=name)
    elements = _parse_formula(formula, name)
    if not elements:
        raise InputError("no elements in the formula", field="species", value=name)
    if z != 0 and phase != "aq":
        raise InputError(f"a charged species cannot be in phase {phase!r}", field="species", value=name)
    weights = data.load("elements")["weights"]
    mass = sum(weights[el] * n for el, n in elements.items()) / 1000.0
    canonical = formula + _charge_text(z, formula)
    if formula == "H2O" and phase == "l":
        phase_suffix = ""
    else:
        phase_suffix = "" if phase == "aq" else f"({phase})"
    return Species(canonical + phase_suffix, formula, z, phase, MappingProxyType(elements), round(mass, 8))


def canonical_name(name: str) -> str:
    """Canonical form of a species name, e.g. ``'Ca++'`` → ``'Ca^2+'``."""
    return parse_species(name).name


def charge_of(name: str) -> int:
    """Charge number of a species."""
    return parse_species(name).charge


def molar_mass(name: str) -> float:
    """Molar mass in kg/mol."""
    return parse_species(name).molar_mass


# ------------------------------------------------------------------ solutes
_NONMETALS = frozenset("H He B C N O F Ne Si P S Cl Ar As Se Br Kr Te I Xe Rn At".split())
_STRONG_ACIDS = {"HCl": "Cl-", "HBr": "Br-", "HI": "I-", "HNO3": "NO3-", "HClO4": "ClO4-", "H2SO4": "SO4^2-"}
_ANIONS = {
    "F": -1,
    "Cl": -1,
    "Br": -1,
    "I": -1,
    "OH": -1,
    "NO3": -1,
    "NO2": -1,
    "ClO4": -1,
    "HCO3": -1,
    "H2PO4": -1,
    "HSO4": -1,
    "SO4": -2,
    "CO3": -2,
    "HPO4": -2,
    "S2O3": -2,
    "PO4": -3,
}  # common practice


def _salt_ions(formula: str) -> list[tuple[str, int]] | None:
    """``'Na2SO4'`` → ``[('Na+', 2), ('SO4^2-', 1)]``; None when the formula is not read as a salt."""
    m = re.fullmatch(r"([A-Z][a-z]?)(\d*)(?:\(([A-Za-z0-9]+)\)(\d+)|([A-Z][a-z]?)(\d*)|([A-Za-z0-9]+))", formula)
    if not m:
        return None
    metal, n_metal = m.group(1), int(m.group(2) or 1)
    if m.group(3):
        anion, n_anion = m.group(3), int(m.group(4))
    elif m.group(5):
        anion, n_anion = m.group(5), int(m.group(6) or 1)
    else:
        anion, n_anion = m.group(7), 1
    z_m, z_a = _USUAL_CHARGE.get(metal), _ANIONS.get(anion)
    if metal in _NONMETALS or z_m is None or z_a is None or z_m * n_metal + z_a * n_anion != 0:
        return None
    return [(metal + _charge_text(z_m, metal), n_metal), (anion + _charge_text(z_a, anion), n_anion)]


def solute_key(name: str) -> str:
    """The name under which a checked solute is passed on: canonical, with ``'(aq)'`` kept for a
    neutral species, so that passing it on does not read it as a slip again (``'CaSO4(aq)'``)."""
    sp = parse_species(name)
    try:
        return check_solute(sp.name, sp).name
    except InputError:  # a neutral formula that reads like a slip, given on purpose with '(aq)'
        return sp.name + "(aq)"


def check_solute(raw: str, sp: Species | None = None) -> Species:
    """Parse ``raw`` as a dissolved species, refusing names that stand for something else.

    A salt (``'NaCl'``, ``'CaCl2'``), a strong acid (``'HCl'``) or a bare element (``'Ca'``)
    given as a species would be read as a neutral solute with γ = 1 and no charge — almost
    always a slip for its ions. Such names are refused with the ions to give instead; write
    ``'(aq)'`` after a name (``'CaSO4(aq)'``) to mean a neutral species on purpose.

    Examples
    --------
    >>> check_solute("Ca2+").name
    'Ca^2+'
    >>> check_solute("CaCl2")
    Traceback (most recent call last):
    ...
    activity.errors.InputError: species = 'CaCl2': read as an uncharged solute (no charge, γ = 1); a salt: give its \
ions, 'Ca^2+' and 'Cl-' in the ratio 1:2, or write 'CaCl2(aq)' for a neutral species on purpose
    """
    sp = parse_species(raw) if sp is None else sp
    if sp.charge != 0 or sp.phase != "aq" or str(raw).strip().endswith("(aq)"):
        return sp
    hint = None
    if sp.formula in _STRONG_ACIDS:
        hint = f"a strong acid is dissociated: give 'H+' and {_STRONG_ACIDS[sp.formula]!r}"
    elif len(sp.elements) == 1 and sum(sp.elements.values()) == 1 and sp.formula not in ("He", "Ne", "Ar", "Kr", "Xe"):
        usual = _USUAL_CHARGE.get(sp.formula)
        ion = sp.formula + _charge_text(usual, sp.formula) if usual else None
        hint = "a bare element: give the ion" + (f", e.g. {ion!r}" if ion else " with its charge")
    elif any(el not in _NONMETALS for el in sp.elements):
        ions = _salt_ions(sp.formula)
        if ions:
            (cat, nc), (an, na) = ions
            ratio = "" if (nc, na) == (1, 1) else f" in the ratio {nc}:{na}"
            hint = f"a salt: give its ions, {cat!r} and {an!r}{ratio}"
        else:
            hint = "a metal compound: give its ions with their charges"
    if hint is None:
        return sp
    raise InputError(
        f"read as an uncharged solute (no charge, γ = 1); {hint}, or write '{sp.formula}(aq)' for a neutral "
        "species on purpose",
        field="species",
        value=raw,
    )
