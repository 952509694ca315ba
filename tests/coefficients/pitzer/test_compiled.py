"""The compiled Pitzer kernel (numba, the extra ``fast``) against the numpy kernel, and the
rule that chooses between them.

Both kernels evaluate the same equations; only the summation order differs, so results
agree to rounding. The check values are the numpy kernel's own results (itself checked
against published data in test_reference.py): lg γ to 1e-12 absolute (γ to 1e-12 relative),
φ to 1e-12 relative, Gex/(wRT) to 1e-12 of its largest term.
"""

import subprocess
import sys
import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from activity import Solution
from activity.coefficients.pitzer import PitzerModel
from activity.coefficients.pitzer import _model as pitzer_model
from activity.errors import InputError

numba = pytest.importorskip("numba")

#: every species of the shipped set (so every interaction it holds can occur), and a neutral
SHIPPED = sorted({s for key in PitzerModel().table for s in key[1:]})
#: λ and ζ beyond the shipped set: invented numbers (test data only), so that every term of
#: the equations is exercised, with a temperature dependence (the T-per-row path)
EXTRA = {
    "neutral": {
        "CO2 Na+ Cl-": {"zeta": -0.0045, "celsius": [0, 50], "source": "invented for a test"},
        "CO2 CO2": {"lambda": {"terms": [0.02, 1.5, 0.01, 1e-4]}, "celsius": [0, 50], "source": "invented for a test"},
    }
}


def _both(model_kw: dict, sol: Solution) -> tuple[dict, dict]:
    out = []
    for kernel in ("numpy", "compiled"):
        model = PitzerModel(**model_kw, kernel=kernel)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            r = model.activity_coefficients(sol, warn=False)
            out.append({"lg": r.log10_gamma, "phi": r.osmotic_coefficient, "gex": model.excess_gibbs(sol)})
    return out[0], out[1]


def _assert_same(a: dict, b: dict) -> None:
    np.testing.assert_allclose(b["lg"], a["lg"], rtol=0, atol=1e-12 / np.log(10))
    np.testing.assert_allclose(b["phi"], a["phi"], rtol=1e-12, atol=0)
    scale = max(1.0, float(np.max(np.abs(a["gex"]))))
    np.testing.assert_allclose(b["gex"], a["gex"], rtol=1e-12, atol=1e-12 * scale)


@settings(deadline=None, max_examples=40)
@given(
    seed=st.integers(0, 2**32 - 1),
    n=st.integers(1, 700),
    k=st.integers(2, 14),
    t_rows=st.booleans(),
    extra=st.booleans(),
)
def test_compiled_equals_numpy_on_random_compositions(seed, n, k, t_rows, extra):
    rng = np.random.default_rng(seed)
    species = list(rng.choice(SHIPPED, size=min(k, len(SHIPPED)), replace=False))
    if not any(s.endswith("+") for s in species):
        species.append("Na+")
    if not any(s.endswith("-") for s in species):
        species.append("Cl-")
    if extra:
        species += [s for s in ("CO2", "Na+", "Cl-") if s not in species]
    comp = {s: rng.uniform(0, 1.0, n) * rng.choice([1e-13, 1e-6, 1e-3, 0.1, 1.0, 3.0]) for s in species}
    comp[species[0]][0] = 0.0  # an absent ion in a row
    if n > 2:
        for s in species:
            comp[s][1] = 0.0  # a row of pure water: I = 0
            comp[s][2] = 1e-14  # I below 1e-20 mol/kg is impossible here; J below its table
    T = rng.uniform(273.15, 323.15, n) if t_rows else float(rng.uniform(273.15, 323.15))
    sol = Solution(comp, T=T, neutrality="ignore")
    a, b = _both({"extra": EXTRA} if extra else {}, sol)
    _assert_same(a, b)


def test_compiled_equals_numpy_on_seawater_at_scale():
    # more rows than the auto threshold, T per row, the benchmark's composition
    rng = np.random.default_rng(11)
    base = {"Na+": 0.486, "K+": 0.0106, "Mg^2+": 0.0547, "Ca^2+": 0.0107, "Cl-": 0.566, "SO4^2-": 0.0293}
    k = rng.uniform(0.0, 3.0, 60_000)
    sol = Solution({s: v * k for s, v in base.items()}, T=rng.uniform(273.15, 323.15, k.size), neutrality="ignore")
    a, b = _both({}, sol)
    _assert_same(a, b)


def test_compiled_handles_a_2d_batch_and_an_empty_one():
    base = {"Na+": np.full((3, 4), 0.5), "Mg^2+": np.full((3, 4), 0.1), "Cl-": np.full((3, 4), 0.7)}
    sol = Solution(base)
    a, b = _both({}, sol)
    assert b["lg"].shape == (3, 3, 4) and b["phi"].shape == (3, 4)
    _assert_same(a, b)
    empty = Solution({"Na+": np.zeros(0), "Cl-": np.zeros(0)})
    r = PitzerModel(kernel="compiled").activity_coefficients(empty, warn=False)
    assert r.log10_gamma.shape == (2, 0)


# ---- the rule ------------------------------------------------------------------------------
@pytest.mark.parametrize("loaded", [False, True])
def test_auto_uses_the_compiled_kernel_for_large_batches_only(monkeypatch, loaded):
    monkeypatch.delenv(pitzer_model.KERNEL_ENV, raising=False)
    monkeypatch.setattr(pitzer_model, "_compiled_loaded", lambda: loaded)
    least = pitzer_model.COMPILED_MIN_ROWS_LOADED if loaded else pitzer_model.COMPILED_MIN_ROWS
    model = PitzerModel()
    assert model._compiled_for(least - 1) is None
    assert model._compiled_for(least) is not None
    assert PitzerModel(kernel="numpy")._compiled_for(10**7) is None
    assert PitzerModel(kernel="compiled")._compiled_for(1) is not None


def test_environment_variable_overrides_auto_only(monkeypatch):
    monkeypatch.setenv(pitzer_model.KERNEL_ENV, "numpy")
    assert PitzerModel()._compiled_for(10**7) is None
    assert PitzerModel(kernel="compiled")._compiled_for(10**7) is not None  # an explicit choice wins
    monkeypatch.setenv(pitzer_model.KERNEL_ENV, "compiled")
    assert PitzerModel()._compiled_for(1) is not None
    monkeypatch.setenv(pitzer_model.KERNEL_ENV, "fastest")
    with pytest.raises(InputError, match=pitzer_model.KERNEL_ENV):
        PitzerModel()._compiled_for(1)


def test_unknown_kernel_is_an_input_error_naming_the_field():
    sol = Solution({"Na+": 0.1, "Cl-": 0.1})
    with pytest.raises(InputError, match="kernel") as info:
        PitzerModel(kernel="gpu").activity_coefficients(sol)
    assert info.value.field == "kernel"


def test_without_numba_auto_falls_back_and_compiled_says_what_to_install(monkeypatch):
    monkeypatch.delenv(pitzer_model.KERNEL_ENV, raising=False)
    monkeypatch.setattr(pitzer_model, "_compiled_kernel", lambda: ImportError("No module named 'numba'"))
    assert PitzerModel()._compiled_for(10**7) is None
    with pytest.raises(InputError, match=r"activity\[fast\]"):
        PitzerModel(kernel="compiled")._compiled_for(1)


def test_loaded_means_the_module_is_imported():
    PitzerModel(kernel="compiled")._compiled_for(1)
    assert pitzer_model._compiled_loaded()


def test_import_and_small_calls_do_not_import_numba():
    code = (
        "import sys, activity as act; s = act.Solution({'Na+': 0.5, 'Mg^2+': 0.1, 'Cl-': 0.7});"
        "act.get_model('pitzer').activity_coefficients(s, warn=False);"
        "from activity.cli.main import main; print('numba' in sys.modules)"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"
