"""Temperature dependence against temperature-dependent published data.

PV = entry of ../shared/reference-data/published-values.toml, with its status.
"""

import warnings

import numpy as np
import pytest

from activity.coefficients.pitzer._params import load_parameters
from activity.constants import ZERO_CELSIUS
from activity.nernst.electrodes import calomel_electrode, silver_chloride_electrode
from activity.nernst.half_reaction import standard_couple
from activity.water import debye_huckel_A

# Bates & Bower (1954), J. Res. NBS 53, 283, Table 1: E°(AgCl/Ag), molality scale, 1 atm H2,
# V (read, PV 475-485; standard deviation 0.02 mV at 0 °C, 0.01 mV at 25 °C, PV 493).
BB_T = np.array([0.0, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0, 45.0, 50.0])
BB_E = np.array([0.23665, 0.23413, 0.23142, 0.22857, 0.22557, 0.22234, 0.21904, 0.21566, 0.21208, 0.20835, 0.20449])


def test_silver_chloride_standard_potential_0_to_50_C():
    # The file's E°, dE°/dT and d²E°/dT² (quadratic about 25 °C) against the read table:
    # 0.2 mV. It is 0.165 mV at 50 °C; a quadratic fitted to the read values themselves
    # (E° 0.22234, dE°/dT −6.442e-4 V/K, d²E°/dT² −5.76e-6 V/K²) would be within 0.08 mV.
    E = standard_couple("AgCl/Ag").standard_potential(BB_T + ZERO_CELSIUS)
    assert np.max(np.abs(E - BB_E)) < 0.2e-3


def test_silver_chloride_temperature_coefficient():
    # dE°/dT at 25 °C against the slope of a quadratic fitted to the read values 0–50 °C
    # (−6.442e-4 V/K): within 3e-6 V/K (0.5 %), the spread between quadratic and cubic fits.
    hr = standard_couple("AgCl/Ag")
    slope = np.polyder(np.polyfit(BB_T - 25.0, BB_E, 2))[-1]
    assert slope == pytest.approx(-6.442e-4, abs=0.5e-6)
    assert hr.dE0dT == pytest.approx(slope, abs=3e-6)


# Debye–Hückel A, textbook appendix "Debye–Hückel equation and Kielland table" (read, PV 291-
# 311; the unit is not stated there, probably mol/L).
DH_T = np.array([0.0, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0, 50.0, 60.0])
DH_A = np.array([0.4883, 0.4921, 0.4960, 0.5000, 0.5042, 0.5085, 0.5130, 0.5175, 0.5221, 0.5319, 0.5425])


def test_debye_huckel_A_against_table():
    # 0.7 %: the table's scale and constants are not stated; the molal A here lies 0.3–0.6 %
    # above it at every temperature.
    A = debye_huckel_A(DH_T + ZERO_CELSIUS)
    assert np.max(np.abs(A / DH_A - 1.0)) < 0.007


def test_debye_huckel_A_temperature_derivative():
    # dA/dT over 0–50 °C from linear fits: within 3 % of the table's (8.7e-4 per K). This is
    # the temperature dependence that every model here shares at low ionic strength.
    sel = DH_T <= 50.0
    ours = np.polyfit(DH_T[sel], debye_huckel_A(DH_T[sel] + ZERO_CELSIUS), 1)[0]
    theirs = np.polyfit(DH_T[sel], DH_A[sel], 1)[0]
    assert ours == pytest.approx(theirs, rel=0.03)


# Reference electrodes at 15–35 °C, glossary table (PV 517-541: "read (unattributed
# secondary)"; the values presumably include a liquid junction, which shifts them by a few
# mV but much less their slope).
GLOSSARY = [
    (silver_chloride_electrode, 3.5, [0.212, 0.208, 0.205, 0.201, 0.197]),
    (silver_chloride_electrode, "saturated", [0.209, 0.204, 0.199, 0.194, 0.189]),
    (calomel_electrode, "saturated", [0.2511, 0.2479, 0.2444, 0.2411, 0.2376]),
    (calomel_electrode, 3.5, [0.254, 0.252, 0.250, 0.248, 0.246]),
    (calomel_electrode, 0.1, [0.3362, 0.3359, 0.3356, 0.3351, 0.3344]),
]


@pytest.mark.parametrize("make, filling, values", GLOSSARY)
def test_reference_electrode_temperature_slopes(make, filling, values):
    # These slopes test E°(T) together with the KCl temperature derivatives (Silvester &
    # Pitzer 1977, from memory) and, for saturated fillings, the solubility table. Bound
    # 0.06 mV/K: the table's 1 mV rounding alone gives about ±0.02 mV/K (1σ) over 20 K, and
    # the junction's own temperature coefficient is unknown. Found: the model is 0.04–0.05
    # mV/K steeper for every electrode.
    T = np.array([15.0, 20.0, 25.0, 30.0, 35.0]) + ZERO_CELSIUS
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        E = make(filling).potential(T)
    ours = np.polyfit(T, E, 1)[0]
    theirs = np.polyfit(T, np.array(values), 1)[0]
    assert abs(ours - theirs) < 0.06e-3


def test_declared_temperature_ranges_follow_the_source():
    # Entries without temperature terms are declared for 15–35 °C, entries with first
    # derivatives only for at most 0–50 °C (models/pitzer.toml header); no entry claims more.
    for key, e in load_parameters("pitzer").items():
        lo, hi = (t - ZERO_CELSIUS for t in e.T_range)
        has_t = any(any(abs(c) > 0 for c in coeffs[1:]) for coeffs in e.coeffs.values())
        if has_t:
            assert lo >= -1e-9 and hi <= 50 + 1e-9, key
        else:
            assert lo >= 15 - 1e-9 and hi <= 35 + 1e-9, key
