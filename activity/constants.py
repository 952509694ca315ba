"""Physical constants (SI values written out, CODATA) and reference states.

All quantities are SI: J, K, mol, C, V, Pa, kg. The values are written out rather than
read from :mod:`scipy.constants` because importing that module costs about 0.2 s at
start-up, which every command-line call would pay; a test checks that they equal
``scipy.constants``. Since the 2019 revision of the SI, h, e, k and N_A are exact by
definition, so R = N_A k and F = N_A e are exact too (CODATA 2018 and 2022 agree on them).
"""

from __future__ import annotations

import math

#: Avogadro constant, 1/mol (exact; SI 2019 definition, CODATA 2018/2022).
N_A: float = 6.02214076e23
#: Boltzmann constant, J/K (exact; SI 2019 definition, CODATA 2018/2022).
K_B: float = 1.380649e-23
#: Elementary charge, C (exact; SI 2019 definition, CODATA 2018/2022).
E_CHARGE: float = 1.602176634e-19
#: Molar gas constant R = N_A k, J/(mol K) (exact; CODATA 2018/2022: 8.314 462 618... ).
R: float = N_A * K_B
#: Faraday constant F = N_A e, C/mol (exact; CODATA 2018/2022: 96 485.332 12... ).
F: float = N_A * E_CHARGE
#: Vacuum electric permittivity, F/m (measured; CODATA 2022 recommended value
#: 8.854 187 8188(14)e-12, the value scipy ≥ 1.15 carries; CODATA 2018 gave 8.854 187 8128(13)e-12).
EPSILON_0: float = 8.8541878188e-12
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
