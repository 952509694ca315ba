"""Reactions as text: tokenize, check element and charge balance, balance half-reactions.

A reaction is written ``"AgCl(s) + e- = Ag(s) + Cl-"``: terms separated by ``" + "``
(a plus sign with space on both sides, so that ``Na+`` stays a name), sides separated
by ``=``, ``⇌``, ``<=>``, ``->`` or ``→``. A term may start with a coefficient —
``2 H+``, ``1/2 H2(g)``, ``0.5 O2(g)``, ``2H2O`` — read by a small tokenizer into an exact
:class:`fractions.Fraction`; nothing is ever evaluated. Stoichiometric numbers ν are
negative for reactants and positive for products.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from fractions import Fraction
from math import lcm

from .errors import InputError
from .species import Species, parse_species

__all__ = ["Reaction", "parse_reaction", "balance_half_reaction"]

_ARROW = re.compile(r"\s*(?:<=>|⇌|⇄|->|→|=)\s*")
_PLUS = re.compile(r"\s+\+\s+")
_COEFF = re.compile(r"^(\d+/\d+|\d*\.\d+|\d+)\s*(?=[A-Z(\[e])")


def _fmt_coeff(c: Fraction) -> str:
    if c == 1:
        return ""
    return f"{c.numerator} " if c.denominator == 1 else f"{c.numerator}/{c.denominator} "


def _signed(q: Fraction) -> str:
    return ("+" if q >= 0 else "-") + str(abs(q))


def _is_water(sp: Species) -> bool:
    return sp.formula == "H2O" and sp.charge == 0


@dataclass(frozen=True)
class Reaction:
    """A parsed reaction: species and exact stoichiometric numbers.

    Attributes
    ----------
    species : tuple of Species
        Each species once (water under the name ``'H2O'``).
    nu : tuple of Fraction
        Stoichiometric numbers, negative on the left, positive on the right.
    text : str
        The text as given.
    """

    species: tuple
    nu: tuple
    text: str = ""

    @property
    def names(self) -> tuple[str, ...]:
        """Canonical species names."""
        return tuple(s.name for s in self.species)

    @property
    def electrons(self) -> Fraction:
        """ν of the electron (negative when electrons are consumed, as in a reduction)."""
        return sum((n for s, n in zip(self.species, self.nu) if s.is_electron), Fraction(0))

    def element_imbalance(self) -> dict[str, Fraction]:
        """Element → Σ ν × count (products minus reactants), zeros omitted."""
        out: dict[str, Fraction] = {}
        for s, n in zip(self.species, self.nu):
            for el, c in s.elements.items():
                out[el] = out.get(el, Fraction(0)) + n * c
        return {el: v for el, v in out.items() if v != 0}

    def charge_imbalance(self) -> Fraction:
        """Σ ν z (products minus reactants)."""
        return sum((n * s.charge for s, n in zip(self.species, self.nu)), Fraction(0))

    def check_balance(self) -> Reaction:
        """Raise :class:`InputError` naming what is off; return ``self`` when balanced.

        Examples
        --------
        >>> parse_reaction("Fe^3+ + e- = Fe^2+").check_balance().electrons
        Fraction(-1, 1)
        >>> parse_reaction("AgCl(s) = Ag(s) + Cl-").check_balance()
        Traceback (most recent call last):
        ...
        activity.errors.InputError: reaction = 'AgCl(s) = Ag(s) + Cl-': not balanced: charge: ...
        """
        problems = []
        for el, v in self.element_imbalance().items():
            side = "right" if v > 0 else "left"
            problems.append(f"{el}: {side} side has {abs(v)} more")
        if self.charge_imbalance() != 0:
            left = sum((-n * s.charge for s, n in zip(self.species, self.nu) if n < 0), Fraction(0))
            right = sum((n * s.charge for s, n in zip(self.species, self.nu) if n > 0), Fraction(0))
            problems.append(f"charge: left side totals {_signed(left)}, right side {_signed(right)}")
        if problems:
            raise InputError("not balanced: " + "; ".join(problems), field="reaction", value=self.text or str(self))
        return self

    def __str__(self) -> str:
        left = [f"{_fmt_coeff(-n)}{s.name}" for s, n in zip(self.species, self.nu) if n < 0]
        right = [f"{_fmt_coeff(n)}{s.name}" for s, n in zip(self.species, self.nu) if n > 0]
        return " + ".join(left) + " = " + " + ".join(right)


def _parse_term(term: str, text: str) -> tuple[Fraction, Species]:
    t = term.strip()
    if not t:
        raise InputError("empty term (a stray '+'?)", field="reaction", value=text)
    coeff = Fraction(1)
    m = _COEFF.match(t)
    if m:
        try:
            coeff = Fraction(m.group(1))
        except (ValueError, ZeroDivisionError):
            raise InputError(f"cannot read the coefficient {m.group(1)!r}", field="reaction", value=text) from None
        t = t[m.end() :].strip()
        if coeff <= 0:
            raise InputError(f"coefficient must be positive in {term.strip()!r}", field="reaction", value=text)
    elif re.match(r"^[\d./]", t):
        raise InputError(f"cannot read the term {term.strip()!r}", field="reaction", value=text)
    try:
        sp = parse_species(t)
    except InputError as exc:
        raise InputError(f"in term {term.strip()!r}: {exc}", field="reaction", value=text) from None
    if _is_water(sp):
        sp = parse_species("H2O")
    return coeff, sp


def _side(part: str, text: str) -> list[tuple[Fraction, Species]]:
    if not part.strip():
        raise InputError("one side of the reaction is empty", field="reaction", value=text)
    return [_parse_term(t, text) for t in _PLUS.split(part.strip())]


def parse_reaction(text: str, *, check: bool = True) -> Reaction:
    """Parse a reaction written as text.

    Parameters
    ----------
    text : str
        E.g. ``"Hg2Cl2(s) + 2 e- = 2 Hg(l) + 2 Cl-"`` or ``"1/2 O2(g) + 2 H+ + 2 e- = H2O"``.
    check : bool, default True
        Check the element and charge balance.

    Returns
    -------
    Reaction

    Examples
    --------
    >>> r = parse_reaction("1/2 O2(g) + 2 H+ + 2 e- = H2O")
    >>> r.names, [str(n) for n in r.nu]
    (('O2(g)', 'H+', 'e-', 'H2O'), ['-1/2', '-2', '-2', '1'])
    >>> str(parse_reaction("Cu2+ + 2e- = Cu(s)"))
    'Cu^2+ + 2 e- = Cu(s)'
    """
    if not isinstance(text, str):
        raise InputError("a reaction must be text", field="reaction", value=text)
    parts = _ARROW.split(text.strip())
    if len(parts) != 2:
        raise InputError("write exactly one '=' between the two sides", field="reaction", value=text)
    left, right = _side(parts[0], text), _side(parts[1], text)
    names: list[str] = []
    species: list[Species] = []
    nu: list[Fraction] = []
    for sign, side in ((-1, left), (1, right)):
        for c, sp in side:
            if sp.name in names:
                nu[names.index(sp.name)] += sign * c
            else:
                names.append(sp.name)
                species.append(sp)
                nu.append(sign * c)
    keep = [i for i, n in enumerate(nu) if n != 0]
    if not keep:
        raise InputError("the two sides cancel completely", field="reaction", value=text)
    rx = Reaction(tuple(species[i] for i in keep), tuple(nu[i] for i in keep), text)
    return rx.check_balance() if check else rx


def _skeleton_species(text: str) -> tuple[list[Species], list[Species]]:
    parts = _ARROW.split(text.strip())
    if len(parts) != 2:
        raise InputError("write exactly one '=' between the two sides", field="skeleton", value=text)
    sides = []
    for part in parts:
        terms = _side(part, text)
        for c, _ in terms:
            if c != 1:
                raise InputError(
                    "a skeleton has no coefficients; they are found by balancing", field="skeleton", value=text
                )
        sides.append([sp for _, sp in terms])
    return sides[0], sides[1]


def balance_half_reaction(skeleton: str, medium: str = "acid") -> Reaction:
    """Balance a skeleton half-reaction, adding H2O, H+ (acid) or OH- (base) and e-.

    The coefficients are the exact one-dimensional nullspace of the element-and-charge
    matrix (sympy, imported here), scaled to the smallest integers.

    Parameters
    ----------
    skeleton : str
        The main species only, e.g. ``"MnO4- = Mn^2+"``.
    medium : {'acid', 'base'}
        Whether H+ or OH- supplies hydrogen.

    Returns
    -------
    Reaction
        Balanced, with electrons on whichever side they fall (left for a reduction).

    Examples
    --------
    >>> str(balance_half_reaction("MnO4- = Mn^2+"))
    'MnO4- + 8 H+ + 5 e- = Mn^2+ + 4 H2O'
    >>> str(balance_half_reaction("MnO4- = MnO2(s)", "base"))
    'MnO4- + 2 H2O + 3 e- = MnO2(s) + 4 OH-'
    """
    if medium not in ("acid", "base"):
        raise InputError("must be 'acid' or 'base'", field="medium", value=medium)
    left, right = _skeleton_species(skeleton)
    extra = [parse_species("H2O"), parse_species("H+" if medium == "acid" else "OH-"), parse_species("e-")]
    given = left + right
    names = [s.name for s in given]
    cols = given + [s for s in extra if s.name not in names]
    elements = sorted({el for s in cols for el in s.elements})

    import sympy  # exact linear algebra, only when balancing is asked for

    rows = [[s.elements.get(el, 0) for s in cols] for el in elements] + [[s.charge for s in cols]]
    null = sympy.Matrix(rows).nullspace()
    if len(null) != 1:
        why = "no way" if not null else "more than one independent way"
        raise InputError(f"there is {why} to balance these species", field="skeleton", value=skeleton)
    vec = [Fraction(int(sympy.fraction(v)[0]), int(sympy.fraction(v)[1])) for v in null[0]]
    if vec[0] > 0:
        vec = [-v for v in vec]
    scale = lcm(*(v.denominator for v in vec))
    vec = [v * scale for v in vec]
    for i, s in enumerate(given):
        want_negative = i < len(left)
        if vec[i] == 0 or (vec[i] < 0) != want_negative:
            raise InputError(
                f"{s.name} cannot stay on the side where it is written when balancing",
                field="skeleton",
                value=skeleton,
            )
    keep = [i for i, v in enumerate(vec) if v != 0]
    return Reaction(tuple(cols[i] for i in keep), tuple(vec[i] for i in keep), skeleton).check_balance()
