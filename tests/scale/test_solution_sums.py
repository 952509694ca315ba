"""Solution's one-pass checks and species sums give what the per-species code gave."""

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from activity.errors import ElectroneutralityWarning, InputError
from activity.solution import Solution

Z = {"Na+": 1, "Ca^2+": 2, "Cl-": -1, "SO4^2-": -2, "CO2": 0}


def _reference_sums(m, z):
    """Σ z m, ½ Σ|z| m, ½ Σ z² m, Σ m, row by row in plain Python (the definitions)."""
    out = np.zeros((4, m.shape[1]))
    for r in range(m.shape[1]):
        out[0, r] = sum(zi * mi for zi, mi in zip(z, m[:, r]))
        out[1, r] = 0.5 * sum(abs(zi) * mi for zi, mi in zip(z, m[:, r]))
        out[2, r] = 0.5 * sum(zi * zi * mi for zi, mi in zip(z, m[:, r]))
        out[3, r] = sum(m[:, r])
    return out


@settings(deadline=None, max_examples=30)
@given(st.integers(1, 20_000), st.integers(0, 2**32 - 1))
def test_sums_equal_the_definitions(n, seed):
    rng = np.random.default_rng(seed)
    comp = {s: rng.uniform(0, 2.0, n) for s in Z}
    sol = Solution(comp, neutrality="ignore")
    z = [Z[s] for s in sol.species]
    ref = _reference_sums(np.stack([comp[s] for s in Z]), z) if n < 300 else None
    got = np.stack([sol.charge_balance, sol._sums()[1], sol.ionic_strength, sol.total_molality])
    if ref is not None:
        # summation order differs from the row-by-row sums: a few ulp of the largest term
        np.testing.assert_allclose(got, ref, rtol=1e-13, atol=1e-13)
    # the ionic strength as the old code formed it (one matrix-vector product)
    old_I = (0.5 * np.array(z, float) ** 2) @ sol.m
    np.testing.assert_allclose(sol.ionic_strength, old_I, rtol=1e-13)


def test_sums_of_a_single_solution_are_floats():
    sol = Solution({"Ca^2+": 0.01, "Cl-": 0.02})
    assert sol.ionic_strength == pytest.approx(0.03, rel=1e-15)  # ½(4·0.01 + 0.02), the definition
    assert sol.total_molality == pytest.approx(0.03, rel=1e-15)
    assert isinstance(sol.ionic_strength, float)


@pytest.mark.parametrize(
    "value, message",
    [(np.array([0.1, np.nan]), "finite"), (np.array([0.1, -0.2]), "negative"), (np.array([np.inf, 0.1]), "finite")],
)
def test_bad_molality_is_named_as_before(value, message):
    with pytest.raises(InputError, match=message) as info:
        Solution({"Na+": np.array([0.1, 0.1]), "Cl-": value})
    assert info.value.field == "composition['Cl-']"


def test_not_a_number_is_refused():
    with pytest.raises(InputError, match="not a number") as info:
        Solution({"Na+": "lots", "Cl-": 0.1})
    assert info.value.field == "composition['Na+']"


def test_empty_batch_is_still_checked():
    sol = Solution({"Na+": np.zeros(0), "Cl-": np.zeros(0)})
    assert sol.shape == (0,)


def test_neutrality_decisions_match_the_relative_rule():
    # rows with relative imbalance |Σzm| / (½Σ|z|m) of 0, 5e-4, 2e-3 against tol 1e-3
    na = np.array([0.1, 0.1, 0.1])
    cl = na * np.array([1.0, 1 - 5e-4, 1 - 2e-3]) / np.array([1.0, 1 - 2.5e-4, 1 - 1e-3])
    rel = np.abs(na - cl) / (0.5 * (na + cl))
    assert list(rel > 1e-3) == [False, False, True]
    with pytest.warns(ElectroneutralityWarning, match="in 1 of 3 row"):
        Solution({"Na+": na, "Cl-": cl})
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        Solution({"Na+": na[:2], "Cl-": cl[:2]})
    with pytest.raises(InputError):
        Solution({"Na+": na, "Cl-": cl}, neutrality="raise")


def test_solution_of_neutral_species_only_passes():
    assert Solution({"CO2": [0.0, 0.1]}).ionic_strength.tolist() == [0.0, 0.0]


def test_adopted_arrays_are_read_only_and_not_copied():
    m = np.array([[0.1, 0.2], [0.1, 0.2]])
    sol = Solution._adopt(("Na+", "Cl-"), np.array([1, -1]), m, np.asarray(298.15), np.asarray(101325.0))
    assert sol.m is m and not m.flags.writeable
    np.testing.assert_allclose(sol.ionic_strength, [0.1, 0.2], rtol=1e-15)


@settings(deadline=None, max_examples=30)
@given(st.integers(1, 300_000), st.integers(1, 12), st.integers(0, 2**32 - 1))
def test_sums_equal_the_blas_product_they_replace(n, n_species, seed):
    """From 32 768 to 2·10⁵ rows and up to 8 species the sums come from einsum; the BLAS product they
    replaced is kept here as the reference (1e-13 relative: summation order only)."""
    rng = np.random.default_rng(seed)
    names = ["Na+", "K+", "Ca^2+", "Mg^2+", "Cl-", "SO4^2-", "Br-", "NO3-", "Li+", "F-", "Sr^2+", "HCO3-"]
    comp = {s: rng.uniform(0, 2.0, n) for s in names[:n_species]}
    sol = Solution(comp, neutrality="ignore")
    z = sol.charges.astype(float)
    w = np.stack([z, 0.5 * np.abs(z), 0.5 * z * z, np.ones_like(z)])
    old = w @ sol.m.reshape(n_species, -1)  # the kernel before
    scale = np.abs(w) @ sol.m.reshape(n_species, -1)  # Σ|w m|: cancellation in Σ z m is not an error
    np.testing.assert_array_less(np.abs(sol._sums().reshape(4, -1) - old), 1e-13 * scale + 1e-300)


@pytest.mark.parametrize("n", [1, 32_767, 32_768, 150_000, 200_001])
def test_sums_at_the_edges_of_the_einsum_window(n):
    rng = np.random.default_rng(n)
    comp = {s: rng.uniform(0, 2.0, n) for s in Z}
    sol = Solution(comp, neutrality="ignore")
    z = sol.charges.astype(float)
    w = np.stack([z, 0.5 * np.abs(z), 0.5 * z * z, np.ones_like(z)])
    old = w @ sol.m.reshape(len(z), -1)  # the kernel before, as the reference
    scale = np.abs(w) @ sol.m.reshape(len(z), -1)
    np.testing.assert_array_less(np.abs(sol._sums().reshape(4, -1) - old), 1e-13 * scale + 1e-300)
