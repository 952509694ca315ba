"""Half-reaction parsing, balance checks and balancing."""

from fractions import Fraction

import pytest

from activity.errors import InputError
from activity.reactions import balance_half_reaction, parse_reaction


@pytest.mark.parametrize(
    "text, names, nu",
    [
        ("AgCl(s) + e- = Ag(s) + Cl-", ("AgCl(s)", "e-", "Ag(s)", "Cl-"), (-1, -1, 1, 1)),
        ("2 H+ + 2 e- = H2(g)", ("H+", "e-", "H2(g)"), (-2, -2, 1)),
        ("H+ + e- = 1/2 H2(g)", ("H+", "e-", "H2(g)"), (-1, -1, Fraction(1, 2))),
        ("0.5 O2(g) + 2 H+ + 2 e- -> H2O(l)", ("O2(g)", "H+", "e-", "H2O"), (Fraction(-1, 2), -2, -2, 1)),
        ("Hg2Cl2(s) + 2e- ⇌ 2Hg(l) + 2 Cl-", ("Hg2Cl2(s)", "e-", "Hg(l)", "Cl-"), (-1, -2, 2, 2)),
        ("Ca2+ + 2 e- = Ca(s)", ("Ca^2+", "e-", "Ca(s)"), (-1, -2, 1)),
    ],
)
def test_parse(text, names, nu):
    r = parse_reaction(text)
    assert r.names == names
    assert r.nu == tuple(Fraction(n) for n in nu)


def test_same_species_on_both_sides_nets_out():
    r = parse_reaction("O2(g) + 4 H+ + 4 e- + H2O = 3 H2O")
    assert dict(zip(r.names, r.nu))["H2O"] == 2


@pytest.mark.parametrize(
    "text, message",
    [
        ("AgCl(s) + e- = Ag(s)", "Cl: left side has 1 more"),
        ("Cu^2+ + e- = Cu(s)", "charge: left side totals \\+1, right side \\+0"),
        ("Fe^3+ + e- Fe^2+", "exactly one '='"),
        ("Fe^3+ + e- = Fe^2+ = Fe(s)", "exactly one '='"),
        ("Fe^3+ +  = Fe^2+", "cannot read|empty term|in term"),
        ("2/0 H+ = H2(g)", "coefficient"),
        ("SO42- + e- = X", "SO4\\^2-"),
        ("__import__('os') = 1", "in term"),
    ],
)
def test_refused_with_clear_message(text, message):
    with pytest.raises(InputError, match=message) as exc:
        parse_reaction(text)
    assert exc.value.field == "reaction"


def test_check_can_be_skipped():
    r = parse_reaction("AgCl(s) = Ag(s)", check=False)
    assert r.element_imbalance() == {"Cl": Fraction(-1)}


@pytest.mark.parametrize(
    "skeleton, medium, expected",
    [
        ("MnO4- = Mn^2+", "acid", "MnO4- + 8 H+ + 5 e- = Mn^2+ + 4 H2O"),
        ("Cr2O7^2- = Cr^3+", "acid", "Cr2O7^2- + 14 H+ + 6 e- = 2 Cr^3+ + 7 H2O"),
        ("O2(g) = H2O", "acid", "O2(g) + 4 H+ + 4 e- = 2 H2O"),
        ("O2(g) = OH-", "base", "O2(g) + 2 H2O + 4 e- = 4 OH-"),
        ("Fe^3+ = Fe^2+", "acid", "Fe^3+ + e- = Fe^2+"),
        ("AgCl(s) = Ag(s) + Cl-", "acid", "AgCl(s) + e- = Ag(s) + Cl-"),
        ("Zn(s) = Zn^2+", "acid", "Zn(s) = Zn^2+ + 2 e-"),
    ],
)
def test_balance(skeleton, medium, expected):
    r = balance_half_reaction(skeleton, medium)
    assert str(r) == expected
    r.check_balance()


def test_balance_refusals():
    with pytest.raises(InputError, match="medium"):
        balance_half_reaction("Fe^3+ = Fe^2+", "neutral")
    with pytest.raises(InputError, match="no way|cannot stay"):
        balance_half_reaction("Fe^3+ = Cu^2+")
    with pytest.raises(InputError, match="coefficients"):
        balance_half_reaction("2 Fe^3+ = Fe^2+")
