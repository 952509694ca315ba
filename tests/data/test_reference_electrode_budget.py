"""Where the computed Ag/AgCl reference potentials differ from published values, part by part.

Published values (models/reference_electrodes.toml, with source and status per value; PV =
entry of ../shared/reference-data/published-values.toml): Ag/AgCl 0.1 mol/L 0.2881 V
(Rodgers, PV 503, read, secondary) or 0.2895 V (Hindawi 2010, PV 513, read); 1 mol/L 0.2360 V
(PV 512, read); 3 mol/L 0.210 V (PV 504) and 3.5 mol/L 0.205 V (PV 505, "includes liquid
junction"), read, secondary; saturated 0.197 V (PV 506/511, read). Calomel, same compilations,
without junction: 0.3337, 0.2801, 0.2412 V (PV 495, 497, 500); with junction 0.336, 0.283,
0.244 V (PV 496, 498, 501); 3.5 mol/L with junction 0.250 V (PV 499).

The parts examined (numbers at 25 °C, asserted below with the bounds stated):

1. Excess volume ignored by Solution.from_molarity: with φV(KCl) = V° + S_v √c, S_v =
   1.868 cm³ L^½ mol^-3/2 (Debye–Hückel limiting slope for 1:1 volumes at 25 °C, from
   memory; the limiting slope underestimates φV at these concentrations, so this is a lower
   bound), the molality of 3 mol/L KCl is 1.1 % higher and E 0.28 mV lower (3.5 mol/L:
   0.38 mV lower). It widens the gap rather than closing it.
2. KCl solubility (saturated only): dE/dm_sat = −6.1 mV per mol/kg; 4.81 mol/kg is from
   memory and no other value could be read, so ±0.02 mol/kg is ±0.12 mV.
3. E°(AgCl/Ag): the file's 0.22233 V is 0.01 mV below Bates & Bower (1954) Table 1, 0.22234 V
   (read, 1 atm H2 scale; standard deviation 0.01 mV). On the 1 bar scale the same E° is
   0.22217 V (−0.17 mV; activity.electrochem.atm_to_bar_shift), which is what most "~0.2 mV"
   differences between published E° values amount to.
4. Practical vs thermodynamic: in one compilation the values with a liquid junction lie
   2.0–2.9 mV above those without (calomel 0.1 M, 1 M, saturated; Ag/AgCl saturated). The
   3.5 mol/L value 0.205 V is marked as including the junction.
5. What the comparison with calomel shows: the computed calomel electrode, on the same KCl
   activity, agrees with the junction-free values to 0.3 mV at 0.1, 1 mol/L and saturation.
   Every part of the chloride-activity chain (Pitzer γ±, molarity → molality, solubility) is
   common to both electrodes, so the remaining Ag/AgCl gap of 1.4 mV at 1 mol/L and at
   saturation is in the Ag/AgCl values: the Hindawi series (0.2895, 0.2360, 0.1970 V) implies
   E°(AgCl/Ag) ≈ 0.2237 V, 1.4 mV above Bates & Bower, and differs by the same 1.4 mV from
   the Rodgers value at 0.1 mol/L (0.2881 V), which the engine reproduces to 0.1 mV.
"""

import warnings

import numpy as np
import pytest

from activity.constants import T_REF
from activity.nernst.electrodes import (
    calomel_electrode,
    common_practice_potential,
    silver_chloride_electrode,
)
from activity.nernst.equations import atm_to_bar_shift
from activity.nernst.half_reaction import standard_couple
from activity.water import density


@pytest.fixture(autouse=True)
def _quiet():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        yield


def E(make, filling, **kw):
    return float(make(filling, **kw).potential(T_REF))


def E_ag(m):
    """Ag/AgCl in KCl of molality m (mol/kg)."""
    return E(silver_chloride_electrode, m, basis="mol/kg")


def practice(kind, filling):
    return common_practice_potential(kind, filling)[0]


V0_KCL = 9.02 + 17.83  # cm³/mol, models/species.toml (Millero 1972, from memory)
S_V = 1.868  # cm³ L^½ mol^-3/2, Debye–Hückel limiting slope for volumes, 1:1, 25 °C (from memory)


def molality(c, phi_v):
    rho_w = float(density(T_REF)) / 1000.0  # kg/L
    return c / (rho_w * (1.0 - c * phi_v / 1000.0))


@pytest.mark.parametrize("c, shift_mV", [(3.0, -0.28), (3.5, -0.38)])
def test_excess_volume_part(c, shift_mV):
    m_model = molality(c, V0_KCL)
    # the library's conversion is exactly the infinite-dilution volume model
    assert E_ag(m_model) == pytest.approx(E(silver_chloride_electrode, c), abs=1e-9)
    m_excess = molality(c, V0_KCL + S_V * np.sqrt(c))
    d = E_ag(m_excess) - E_ag(m_model)
    assert d * 1e3 == pytest.approx(shift_mV, abs=0.01)
    assert d < 0  # more molality, more chloride, lower potential: the gap widens


def test_solubility_part():
    m = 4.81
    dEdm = (E_ag(m + 0.01) - E_ag(m - 0.01)) / 0.02
    assert dEdm * 1e3 == pytest.approx(-6.1, abs=0.1)
    assert E(silver_chloride_electrode, "saturated") == pytest.approx(E_ag(m), abs=1e-12)


def test_standard_potential_part():
    e0 = standard_couple("AgCl/Ag").E0
    assert abs(e0 - 0.22234) <= 0.01e-3 + 1e-12  # Bates & Bower 1954, Table 1 (read), σ = 0.01 mV
    assert atm_to_bar_shift(0.5, 1) * 1e3 == pytest.approx(0.169, abs=0.001)
    # (the AgCl couple has no gas; the shift is that of ½ H2 in the reference hydrogen electrode)


@pytest.mark.parametrize(
    "kind, filling, no_lj, with_lj",
    [
        ("calomel", "saturated", 0.2412, 0.244),
        ("calomel", 1.0, 0.2801, 0.283),
        ("calomel", 0.1, 0.3337, 0.336),
        ("silver-chloride", "saturated", 0.197, 0.199),
    ],
)
def test_practical_convention_part(kind, filling, no_lj, with_lj):
    # Rodgers compilation (PV 495-507, read, secondary): junction-inclusive minus junction-free
    assert 2.0e-3 - 1e-9 <= with_lj - no_lj <= 2.9e-3 + 1e-9


@pytest.mark.parametrize("filling, value", [(0.1, 0.3337), (1.0, 0.2801), ("saturated", 0.2412)])
def test_calomel_reproduces_junction_free_values(filling, value):
    # Rodgers, without junction (PV 495, 497, 500; read, secondary). 0.3 mV: E°(Hg2Cl2/Hg) is
    # from memory (Bard, Parsons & Jordan 1985) and the tables give 4 digits.
    assert abs(E(calomel_electrode, filling) - value) < 0.3e-3


def test_silver_chloride_dilute_value():
    # 0.1 mol/L: within 0.1 mV of Rodgers 0.2881 V; 1.3 mV below Hindawi 0.2895 V (both read)
    e = E(silver_chloride_electrode, 0.1)
    assert abs(e - 0.2881) < 0.1e-3
    assert 1.2e-3 < 0.2895 - e < 1.5e-3


@pytest.mark.parametrize("filling, gap_mV", [(1.0, 1.4), ("saturated", 1.4), (3.0, 3.7), (3.5, 3.3)])
def test_remaining_gaps_as_found(filling, gap_mV):
    # The gaps reported in issue 14 (published minus computed), kept visible: ±0.15 mV.
    gap = practice("silver-chloride", filling) - E(silver_chloride_electrode, filling)
    assert gap * 1e3 == pytest.approx(gap_mV, abs=0.15)


def test_the_same_offset_appears_in_one_compilation():
    # Hindawi 2010 Ag/AgCl at 0.1, 1 mol/L and saturation (read) minus the computed values:
    # a constant offset (1.3–1.4 mV, spread < 0.15 mV), i.e. a different E°, not a trend in
    # concentration that a filling-solution error would produce.
    hindawi = [(0.1, 0.2895), (1.0, 0.2360), ("saturated", 0.1970)]
    off = [v - E(silver_chloride_electrode, f) for f, v in hindawi]
    assert np.ptp(off) < 0.15e-3
    assert 1.2e-3 < np.mean(off) < 1.5e-3
