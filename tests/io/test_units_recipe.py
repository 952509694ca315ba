"""Units at the edges and recipe files."""

import pytest

from activity import InputError
from activity.io.recipe import load_recipe, parse_pairs, solution_from_recipe
from activity.io.units import parse_amount, parse_density, parse_potential, parse_pressure, parse_temperature


@pytest.mark.parametrize(
    "text, value, basis",
    [
        ("0.1 mol/kg", 0.1, "kg"),
        ("2.5 mmol/kg", 2.5e-3, "kg"),
        ("10 µmol/L", 1e-5, "L"),
        ("1 M", 1.0, "L"),
        ("5 mM", 5e-3, "L"),
    ],
)
def test_amounts(text, value, basis):
    a = parse_amount(text)
    assert a.value == pytest.approx(value) and a.basis == basis and not a.mass


def test_mass_amounts_use_molar_mass():
    a = parse_amount("40.078 mg/L")
    assert a.mass
    assert a.moles(0.040078) == pytest.approx(1e-3)


@pytest.mark.parametrize("text", ["0.1", "0.1 furlongs", "-1 mol/kg", "abc", 0.1])
def test_bad_amounts(text):
    with pytest.raises(InputError):
        parse_amount(text)


def test_other_quantities():
    assert parse_temperature("25 °C") == pytest.approx(298.15)
    assert parse_temperature("298.15 K") == pytest.approx(298.15)
    assert parse_pressure("1 atm") == pytest.approx(101325.0)
    assert parse_pressure("1 bar") == pytest.approx(1e5)
    assert parse_potential("-12.5 mV") == pytest.approx(-0.0125)
    assert parse_density("1037 kg/m3") == pytest.approx(1.037)
    with pytest.raises(InputError):
        parse_temperature("25")
    with pytest.raises(InputError):
        parse_temperature("25 F")


def test_recipe_file(tmp_path):
    path = tmp_path / "std.toml"
    path.write_text(
        'label = "standard"\ntemperature = "20 °C"\n[composition]\n"Ca2+" = "1 mmol/L"\n"Cl-" = "2 mmol/L"\n',
        encoding="utf-8",
    )
    sol = solution_from_recipe(load_recipe(path))
    assert sol.T == pytest.approx(293.15)
    assert sol.species == ("Ca^2+", "Cl-")
    # m ≈ c / ρ_w with ρ_w(20 °C) = 0.9982 kg/L (Kell 1975 — from memory; common practice)
    assert sol.molality("Ca2+") == pytest.approx(1e-3 / 0.9982, rel=2e-4)


@pytest.mark.parametrize(
    "body, field",
    [
        ("[composition\n", "recipe"),  # a recipe names itself, not a "parameter file"
        ('colour = "blue"\n[composition]\n"Na+" = "1 mol/kg"\n"Cl-" = "1 mol/kg"\n', "recipe"),
        ('[composition]\n"Na+" = "1 mol/kg"\n"Cl-" = "1 mol/L"\n', "composition"),
        ('[composition]\n"Na+" = 1\n', "composition['Na+']"),
        ('temperature = "25"\n[composition]\n"Na+" = "1 mol/kg"\n', "temperature"),
        ('title = "x"\n', "recipe"),
    ],
)
def test_malformed_recipes(tmp_path, body, field):
    path = tmp_path / "bad.toml"
    path.write_text(body, encoding="utf-8")
    with pytest.raises(InputError) as err:
        solution_from_recipe(load_recipe(path))
    assert err.value.field == field


def test_pairs():
    assert parse_pairs(["K+=1 mmol/kg"]) == {"K+": "1 mmol/kg"}
    with pytest.raises(InputError):
        parse_pairs(["K+"])
