"""The constants written out in activity.constants equal scipy.constants (CODATA).

R, F, k, N_A and e are exact since the 2019 SI (CODATA 2018 and 2022 agree), so they must
be equal to the last bit. ε0 is a measured value: CODATA 2022 (8.8541878188e-12 F/m, what
scipy ≥ 1.15 carries) differs from CODATA 2018 (8.8541878128e-12) by 6.8e-10 relative, so
it is compared to 1e-9 relative, which passes with either edition but catches a typo.
"""

import subprocess
import sys

import pytest

import activity.constants as ac

sc = pytest.importorskip("scipy.constants")


def test_exact_constants_equal_scipy():
    assert ac.R == sc.R
    assert ac.F == sc.physical_constants["Faraday constant"][0]
    assert ac.K_B == sc.k
    assert ac.N_A == sc.N_A
    assert ac.E_CHARGE == sc.e


def test_vacuum_permittivity_matches_scipy():
    assert ac.EPSILON_0 == pytest.approx(sc.epsilon_0, rel=1e-9)


def test_importing_the_package_does_not_import_scipy_constants():
    code = "import sys, activity.constants, activity.solution; print('scipy.constants' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"
