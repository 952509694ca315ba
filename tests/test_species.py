"""Species names, charges, element counts and molar masses."""

import pytest
from hypothesis import given
from hypothesis import strategies as st

from activity import InputError, parse_species
from activity.species import canonical_name, charge_of


@pytest.mark.parametrize(
    "text, canonical, z",
    [
        ("Na+", "Na+", 1),
        ("Ca^2+", "Ca^2+", 2),
        ("Ca2+", "Ca^2+", 2),
        ("Ca++", "Ca^2+", 2),
        ("Ca+2", "Ca^2+", 2),
        ("SO4^2-", "SO4^2-", -2),
        ("SO4--", "SO4^2-", -2),
        ("SO4-2", "SO4^2-", -2),
        ("NH4+", "NH4+", 1),
        ("H2PO4-", "H2PO4-", -1),
        ("HPO4^2-", "HPO4^2-", -2),
        ("Fe(CN)6^4-", "Fe(CN)6^4-", -4),
        ("Hg2^2+", "Hg2^2+", 2),
        ("AgCl(s)", "AgCl(s)", 0),
        ("AgCl(cr)", "AgCl(s)", 0),
        ("H2(g)", "H2(g)", 0),
        ("H2O", "H2O", 0),
        ("H2O(l)", "H2O", 0),
        ("CO2(aq)", "CO2", 0),
        ("e-", "e-", -1),
    ],
)
def test_canonical_names(text, canonical, z):
    sp = parse_species(text)
    assert sp.name == canonical
    assert sp.charge == z


@pytest.mark.parametrize(
    "text, suggestion", [("SO42-", "SO4^2-"), ("CO32-", "CO3^2-"), ("Cr2O72-", "Cr2O7^2-"), ("PO43-", "PO4^3-")]
)
def test_ambiguous_charge_suggests_caret_form(text, suggestion):
    with pytest.raises(InputError) as err:
        parse_species(text)
    assert suggestion in str(err.value)
    assert err.value.field == "species"


@pytest.mark.parametrize("text", ["", "Xx+", "Na+(s)", "(Na+", "Na)+", "na+", "3", 12])
def test_malformed_names_are_refused(text):
    with pytest.raises(InputError):
        parse_species(text)


def test_input_error_is_value_error():
    with pytest.raises(ValueError):
        parse_species("Qq")


@pytest.mark.parametrize(
    "text, grams_per_mol",
    [
        # IUPAC abridged standard atomic weights (Prohaska et al. 2022), sums by hand
        ("NaCl(s)", 22.990 + 35.45),
        ("H2O", 2 * 1.0080 + 15.999),
        ("CaCl2(s)", 40.078 + 2 * 35.45),
        ("SO4^2-", 32.06 + 4 * 15.999),
        ("Hg2Cl2(s)", 2 * 200.59 + 2 * 35.45),
        ("CuSO4·5H2O", 63.546 + 32.06 + 9 * 15.999 + 10 * 1.0080),
    ],
)
def test_molar_mass(text, grams_per_mol):
    assert parse_species(text).molar_mass == pytest.approx(grams_per_mol / 1000, rel=1e-9)


def test_element_counts_with_groups():
    assert dict(parse_species("Fe(CN)6^3-").elements) == {"Fe": 1, "C": 6, "N": 6}
    assert dict(parse_species("Ca3(PO4)2(s)").elements) == {"Ca": 3, "P": 2, "O": 8}


@given(
    st.sampled_from(["Na", "K", "Ca", "Mg", "SO4", "NO3", "Fe(CN)6", "Hg2"]),
    st.integers(1, 4),
    st.sampled_from(["+", "-"]),
)
def test_canonical_form_is_a_fixed_point(formula, n, sign):
    text = f"{formula}^{n}{sign}"
    c = canonical_name(text)
    assert canonical_name(c) == c
    assert charge_of(c) == (n if sign == "+" else -n)


def test_single_digit_after_one_element_is_a_charge():
    # Convention of this package (stated in activity.species): 'Hg2+' means Hg^2+;
    # the mercury(I) dimer must be written 'Hg2^2+'.
    assert parse_species("Hg2+").name == "Hg^2+"
    assert parse_species("Hg2^2+").elements["Hg"] == 2
