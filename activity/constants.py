"""Physical constants (CODATA, via :mod:`scipy.constants`) and reference states.

All quantities are SI: J, K, mol, C, V, Pa, kg.
"""

from __future__ import annotations

import math

from scipy import constants as _c

#: Molar gas constant, J/(mol K) (CODATA via scipy.constants).
R: float = _c.R
#: Faraday constant, C/mol (CODATA via scipy.constants).
F: float = _c.physical_constants["Faraday constant"][0]
#: Boltzmann constant, J/K.
K_B: float = _c.k
#: Avogadro constant, 1/mol.
N_A: float = _c.N_A
#: Elementary charge, C.
E_CHARGE: float = _c.e
#: Vacuum electric permittivity, F/m.
EPSILON_0: float = _c.epsilon_0
#: Natural logarithm of 10.
LN10: float = math.log(10.0)
#: 0 °C in kelvin.
ZERO_CELSIUS: float = 273.15
#: Reference temperature, 25 °C, in kelvin.
T_REF: float = 298.15
#: Standard atmosphere in pascal.
P_ATM: float = 101325.0
#: Standard-state pressure (1 bar) in pascal.
P_STANDARD: float = 1.0e5
#: Molar mass of water, kg/mol (IUPAC standard atomic weights: 2×1.008 + 15.999 g/mol).
M_WATER: float = 0.018015
#: Standard molality, mol/kg.
M_STANDARD: float = 1.0
