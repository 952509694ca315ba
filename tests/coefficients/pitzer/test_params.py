"""Pitzer parameter files, overrides, coverage reporting and validity checks."""

import warnings

import numpy as np
import pytest

import activity as act
from activity import Solution
from activity.coefficients.pitzer import PitzerModel, load_parameters
from activity.species import parse_species

NACL = Solution({"Na+": 1.0, "Cl-": 1.0})


def test_registry_builds_the_model_with_shipped_parameters():
    model = act.get_model("pitzer")
    assert isinstance(model, act.PitzerModel)
    assert model.activity_coefficients(NACL).missing == ()


def test_every_shipped_entry_has_a_source_and_canonical_names():
    table = load_parameters("pitzer")
    assert len(table) > 100
    for key, e in table.items():
        assert e.source.strip(), key
        assert e.note in ("", "from memory"), key
        for name in key[1:]:
            assert parse_species(name).name == name
        assert e.T_range[0] <= 298.15 <= e.T_range[1]


def test_required_coverage():
    # the list of ions; pairs whose published values were not recalled are absent on
    # purpose and must stay absent rather than be invented (they are reported as missing)
    table = load_parameters("pitzer")
    for c in ("H+", "Li+", "Na+", "K+", "NH4+", "Mg^2+", "Ca^2+", "Sr^2+", "Ba^2+"):
        for a in ("Cl-", "Br-", "NO3-"):
            assert ("salt", c, a) in table, (c, a)
    seawater = [("Na+", a) for a in ("SO4^2-", "OH-", "HSO4-", "HCO3-", "CO3^2-", "F-")]
    seawater += [("K+", a) for a in ("SO4^2-", "OH-", "HSO4-", "HCO3-", "CO3^2-", "F-")]
    seawater += [(c, a) for c in ("Mg^2+", "Ca^2+") for a in ("SO4^2-", "HSO4-", "HCO3-")]
    seawater += [("H+", "SO4^2-"), ("H+", "HSO4-"), ("Ca^2+", "OH-")]
    for c, a in seawater:
        assert ("salt", c, a) in table, (c, a)
    for gap in [("Mg^2+", "CO3^2-"), ("Ca^2+", "CO3^2-"), ("Sr^2+", "SO4^2-"), ("Mg^2+", "OH-"), ("Ca^2+", "F-")]:
        assert ("salt", *gap) not in table


def write(tmp_path, text, name="extra.toml"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def test_extra_file_overrides_an_entry(tmp_path):
    p = write(
        tmp_path,
        '[salt."Cl- Na+"]\nbeta0 = 0.2\nbeta1 = 0.2664\ncphi = 0.00127\nmax_molality = 6.0\n'
        'celsius = [0, 50]\nsource = "test"\n',
    )
    base = act.get_model("pitzer").activity_coefficients(NACL)["Na+"]
    for model in (act.get_model("pitzer", parameters=str(p)), PitzerModel(extra=[p])):
        g = model.activity_coefficients(NACL)["Na+"]
        # Δ ln γ(Na+) = 2 m Δβ0 = 2 × 1 × 0.1235
        assert np.log(g / base) == pytest.approx(2 * (0.2 - 0.0765), rel=1e-9)


def test_mapping_overlay_and_empty_base():
    only = {
        "salt": {
            "Na+ Cl-": {
                "beta0": 0.0765,
                "beta1": 0.2664,
                "cphi": 0.00127,
                "max_molality": 6.0,
                "celsius": [0, 50],
                "source": "Pitzer & Mayorga 1973, Table I",
                "note": "from memory",
            }
        }
    }
    model = PitzerModel(only, base=None)
    g = model.activity_coefficients(NACL)
    ref = PitzerModel().activity_coefficients(NACL)
    assert g["Na+"] == pytest.approx(ref["Na+"], rel=1e-12)
    with pytest.warns(act.CoverageWarning, match="K\\+ Cl-"):
        res = model.activity_coefficients(Solution({"K+": 0.1, "Cl-": 0.1}))
    assert res.missing == ("K+ Cl-",)


def test_temperature_forms_agree():
    slope = {
        "salt": {
            "Na+ Cl-": {
                "beta0": {"at25": 0.0765, "slope": 7.159e-4},
                "max_molality": 6.0,
                "celsius": [0, 50],
                "source": "s",
            }
        }
    }
    terms = {
        "salt": {
            "Na+ Cl-": {
                "beta0": {"terms": [0.0765, 0.0, 0.0, 7.159e-4]},
                "max_molality": 6.0,
                "celsius": [0, 50],
                "source": "s",
            }
        }
    }
    a, b = load_parameters(slope)["salt", "Na+", "Cl-"], load_parameters(terms)["salt", "Na+", "Cl-"]
    T = np.array([273.15, 298.15, 323.15])
    assert np.allclose(a.value("beta0", T), b.value("beta0", T))
    assert a.value("beta0", 323.15) == pytest.approx(0.0765 + 25 * 7.159e-4)
    # the full form: a2 (1/T − 1/Tr) + a3 ln(T/Tr)
    full = {
        "salt": {
            "Na+ Cl-": {"beta0": {"terms": [0.1, -10.0, 0.5]}, "max_molality": 1.0, "celsius": [0, 50], "source": "s"}
        }
    }
    e = load_parameters(full)["salt", "Na+", "Cl-"]
    assert e.value("beta0", 310.0) == pytest.approx(0.1 - 10 * (1 / 310 - 1 / 298.15) + 0.5 * np.log(310 / 298.15))


@pytest.mark.parametrize(
    "text, where",
    [
        (
            '[salt."Na+ Cl-"]\nbeta0 = "big"\nmax_molality = 1\ncelsius = [0, 50]\nsource = "s"\n',
            '[salt."Na+ Cl-"].beta0',
        ),
        ('[salt."Na+ Cl-"]\nbeta0 = 0.1\nmax_molality = 1\ncelsius = [0, 50]\n', '[salt."Na+ Cl-"].source'),
        ('[salt."Na+ K+"]\nbeta0 = 0.1\nmax_molality = 1\ncelsius = [0, 50]\nsource = "s"\n', '[salt."Na+ K+"]'),
        (
            '[salt."Na+ Cl-"]\nbeta9 = 0.1\nmax_molality = 1\ncelsius = [0, 50]\nsource = "s"\n',
            '[salt."Na+ Cl-"].beta9',
        ),
        ('[mixing."Na+ SO42-"]\ntheta = 0.1\ncelsius = [0, 50]\nsource = "s"\n', '[mixing."Na+ SO42-"]'),
        (
            '[mixing."Na+ K+"]\ntheta = { at25 = 0.1, slop = 1 }\ncelsius = [0, 50]\nsource = "s"\n',
            '[mixing."Na+ K+"].theta',
        ),
        ('[salt."Na+ Cl-"]\nbeta0 = 0.1\ncelsius = [0, 50]\nsource = "s"\n', '[salt."Na+ Cl-"].max_molality'),
        ('[salts."Na+ Cl-"]\nbeta0 = 0.1\n', "[salts]"),
        ('[salt."Na+ Cl-"\nbeta0 = 0.1\n', "parameter file"),
    ],
)
def test_malformed_files_name_the_file_and_key(tmp_path, text, where):
    p = write(tmp_path, text)
    with pytest.raises(act.InputError) as err:
        PitzerModel(extra=p).activity_coefficients(NACL)
    msg = str(err.value)
    assert str(p) in msg and where in msg


def test_missing_file_is_an_input_error(tmp_path):
    with pytest.raises(act.InputError, match="not found"):
        load_parameters(tmp_path / "nope.toml")


def test_missing_pairs_are_listed_and_warned_once_per_species_set():
    model = PitzerModel()
    sol = Solution({"Sr^2+": 0.01, "Na+": 0.1, "SO4^2-": 0.06})
    with pytest.warns(act.CoverageWarning, match="Sr\\^2\\+ SO4\\^2-"):
        res = model.activity_coefficients(sol)
    assert res.missing == ("Sr^2+ SO4^2-",)
    assert any("Sr^2+ SO4^2-" in n for n in res.notes)
    with warnings.catch_warnings():
        warnings.simplefilter("error", act.CoverageWarning)
        again = model.activity_coefficients(Solution({"Sr^2+": 0.02, "Na+": 0.1, "SO4^2-": 0.07}))
    assert again.missing == res.missing


def test_missing_pair_leaves_only_the_debye_huckel_term():
    sol = Solution({"Sr^2+": 1e-3, "SO4^2-": 1e-3})
    with pytest.warns(act.CoverageWarning):
        lg = PitzerModel().log10_gamma(sol)
    I = sol.ionic_strength
    s = np.sqrt(I)
    f = -act.debye_huckel_Aphi(298.15) * (s / (1 + 1.2 * s) + 2 / 1.2 * np.log(1 + 1.2 * s))
    assert np.allclose(lg, 4 * f / np.log(10), rtol=1e-12)


def test_beyond_fitted_molality_warns_and_flags_rows():
    m = np.array([1.0, 7.0])
    with pytest.warns(act.ValidityWarning, match="Na\\+ Cl-") as seen:
        res = PitzerModel().activity_coefficients(Solution({"Na+": m, "Cl-": m}))
    assert list(res.in_range) == [True, False]
    assert any("Na+ Cl-" in n and "1 of 2" in n for n in res.notes)
    # each warning repeats a recorded note word for word (reports merge the two without duplicates)
    assert {str(w.message) for w in seen if issubclass(w.category, act.ValidityWarning)} <= set(res.notes)


def test_outside_pair_temperature_warns():
    sol = Solution({"Mg^2+": 0.1, "Cl-": 0.2}, T=np.array([298.15, 318.15]))
    with pytest.warns(act.ValidityWarning, match="15–35 °C"):
        res = PitzerModel().activity_coefficients(sol)
    assert list(res.in_range) == [True, False]


def test_inside_every_range_no_warning():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        res = PitzerModel().activity_coefficients(Solution({"K+": 0.5, "Na+": 0.5, "Cl-": 1.0}, T=303.15))
    assert res.in_range is True and res.notes == ()
    # ln a_w = −φ M_w Σm (definition of φ), M_w = 18.015 g/mol (IUPAC atomic weights), Σm = 2 mol/kg
    assert np.log(res.water_activity) == pytest.approx(-res.osmotic_coefficient * 0.018015 * 2.0, rel=1e-12)


def test_edge_species_sets_and_batch_shapes():
    model = PitzerModel()
    with pytest.warns(act.CoverageWarning, match="CO2"):
        only_neutral = model.activity_coefficients(Solution({"CO2": 0.01}))
    assert only_neutral["CO2"] == 1.0 and only_neutral.missing == ("CO2 (no λ)",)
    m = np.full((2, 3), 0.5)
    sol = Solution({"Na+": m, "Cl-": 0.5, "Mg^2+": 0.1, "SO4^2-": 0.1}, T=np.array([[290.0], [300.0]]))
    res = model.activity_coefficients(sol)
    assert res.log10_gamma.shape == (4, 2, 3) and res.osmotic_coefficient.shape == (2, 3)
    assert np.allclose(
        res.log10_gamma[:, 0, 0],
        model.log10_gamma(Solution({"Na+": 0.5, "Cl-": 0.5, "Mg^2+": 0.1, "SO4^2-": 0.1}, T=290.0)),
    )
