"""Every salt with Pitzer parameters against published tables of γ± and φ at 25 °C.

Each check value carries its source and its status, in the words of
``../shared/reference-data/published-values.toml`` (PV below, with its entry numbers):

* ``read``: seen in the published table. Kaye & Laby (NPL online v1.0), §3.9.6, γ± of 1:1
  electrolytes to 0.6 mol/kg, stated accuracy ±0.002 (PV 136–197); CRC Handbook of Chemistry
  and Physics, 92nd ed., p. 5-106, "Mean activity coefficients of electrolytes as a function
  of concentration" (from Hamer & Wu 1972, Staples 1977–81, Goldberg et al. 1978–81), read
  for this work in the copies at paperzz.com/doc/8778636 (one column per salt) and
  is.muni.cz (…/C4020/um/pom/Mean_Activity_Coefficients.txt, one row per molality); PV 226–269
  hold part of the same table.
* ``from memory``: recalled, not verified (PV 199–225, 270–290). They are the only values
  above 0.6 mol/kg for the 1:1 salts and the only ones for MgCl2, the sulfates and φ; a
  failure against them does not say which side is wrong.

Tolerances per charge type (the targets of issue 14, not tuned to the model): 0.5 % for 1:1,
2 % for 2:1 and 1:2, 3 % for 2:2, relative in γ± (and φ). They exceed the stated accuracy of
the read tables (±0.002 in γ±, 0.2–0.5 % for 1:1 salts at γ± 0.4–0.9; CRC gives 3 digits).
Points outside them are expected failures (``xfail(strict=True)``) whose reason gives the
deviation found, so that they stay visible and a change that fixes them is noticed.
"""

import warnings

import pytest

import activity as act
from activity import Solution
from activity.coefficients.pitzer._params import load_parameters

MODEL = act.get_model("pitzer")
TOL = {"1:1": 0.005, "2:1": 0.02, "1:2": 0.02, "2:2": 0.03}

KL = "Kaye & Laby, NPL §3.9.6 (PV 136-197)"
CRC = "CRC Handbook 92nd ed., p. 5-106"
HW = "Hamer & Wu 1972 / Robinson & Stokes 1959 (PV 199-225)"
RS = "Robinson & Stokes 1959, App. 8.10 (PV 270-290)"

# salt label → (cation, anion, ν+, ν−, charge type)
SALTS = {
    "HCl": ("H+", "Cl-", 1, 1, "1:1"),
    "LiCl": ("Li+", "Cl-", 1, 1, "1:1"),
    "NaCl": ("Na+", "Cl-", 1, 1, "1:1"),
    "KCl": ("K+", "Cl-", 1, 1, "1:1"),
    "CsCl": ("Cs+", "Cl-", 1, 1, "1:1"),
    "LiNO3": ("Li+", "NO3-", 1, 1, "1:1"),
    "NaNO3": ("Na+", "NO3-", 1, 1, "1:1"),
    "KNO3": ("K+", "NO3-", 1, 1, "1:1"),
    "AgNO3": ("Ag+", "NO3-", 1, 1, "1:1"),
    "CaCl2": ("Ca^2+", "Cl-", 1, 2, "2:1"),
    "BaCl2": ("Ba^2+", "Cl-", 1, 2, "2:1"),
    "CaBr2": ("Ca^2+", "Br-", 1, 2, "2:1"),
    "BaBr2": ("Ba^2+", "Br-", 1, 2, "2:1"),
    "MgCl2": ("Mg^2+", "Cl-", 1, 2, "2:1"),
    "Cd(NO3)2": ("Cd^2+", "NO3-", 1, 2, "2:1"),
    "Na2SO4": ("Na+", "SO4^2-", 2, 1, "1:2"),
    "K2SO4": ("K+", "SO4^2-", 2, 1, "1:2"),
    "MgSO4": ("Mg^2+", "SO4^2-", 1, 1, "2:2"),
    "CuSO4": ("Cu^2+", "SO4^2-", 1, 1, "2:2"),
}

KL_M = (0.01, 0.02, 0.05, 0.1, 0.2, 0.4, 0.6)
KL_G = {
    "HCl": (0.904, 0.875, 0.830, 0.796, 0.767, 0.755, 0.763),
    "LiCl": (0.903, 0.873, 0.825, 0.790, 0.757, 0.740, 0.743),
    "NaCl": (0.902, 0.870, 0.820, 0.778, 0.735, 0.693, 0.673),
    "KCl": (0.901, 0.868, 0.816, 0.770, 0.718, 0.666, 0.637),
    "CsCl": (0.899, 0.865, 0.807, 0.756, 0.694, 0.628, 0.589),
    "LiNO3": (0.903, 0.872, 0.825, 0.788, 0.752, 0.728, 0.727),
    "NaNO3": (0.900, 0.866, 0.811, 0.762, 0.703, 0.638, 0.599),
    "KNO3": (0.897, 0.861, 0.799, 0.739, 0.663, 0.576),  # no 0.6 mol/kg value in the table
}

CRC_M = (0.001, 0.002, 0.005, 0.010, 0.020, 0.050, 0.100, 0.200, 0.500, 1.000, 2.000, 5.000)
CRC_G = {  # the first n molalities of CRC_M; the table stops where the salt's data stop
    "AgNO3": (0.964, 0.950, 0.924, 0.896, 0.859, 0.794, 0.732, 0.656, 0.536, 0.430, 0.316, 0.181),
    "BaBr2": (0.881, 0.850, 0.785, 0.727, 0.661, 0.573, 0.517, 0.463, 0.435, 0.470, 0.654),
    "BaCl2": (0.887, 0.849, 0.782, 0.721, 0.653, 0.559, 0.492, 0.436, 0.391, 0.393),
    "CaBr2": (0.890, 0.853, 0.791, 0.735, 0.674, 0.594, 0.540, 0.502, 0.500, 0.604, 1.125),
    "CaCl2": (0.888, 0.851, 0.787, 0.727, 0.664, 0.577, 0.517, 0.469, 0.444, 0.495, 0.784),
    "Cd(NO3)2": (0.888, 0.851, 0.787, 0.728, 0.664, 0.576, 0.515, 0.465, 0.428, 0.437, 0.517),
    "CsCl": (0.965, 0.951, 0.925, 0.898, 0.864, 0.805, 0.751, 0.691, 0.607, 0.546, 0.496, 0.474),
}
# In the row-per-molality copy the 2 mol/kg row of CaBr2 and CaCl2 has blanks for the salts
# without a value; their columns are inferred (PV 236 says the same of CaCl2).
CRC_INFERRED = {("CaBr2", 2.0), ("CaCl2", 2.0)}

MEM_G = {  # from memory, (m, γ±)
    "NaCl": ((0.5, 0.681), (1.0, 0.657), (2.0, 0.668), (3.0, 0.714), (4.0, 0.783), (5.0, 0.874), (6.0, 0.986)),
    "KCl": ((0.5, 0.649), (1.0, 0.604), (2.0, 0.573), (3.0, 0.569), (4.0, 0.577)),
    "HCl": ((0.5, 0.757), (1.0, 0.809), (2.0, 1.009), (3.0, 1.316), (4.0, 1.762), (5.0, 2.38), (6.0, 3.22)),
    "MgCl2": ((0.1, 0.529), (0.5, 0.481), (1.0, 0.570), (2.0, 1.053)),
    "Na2SO4": ((0.1, 0.445), (0.5, 0.268), (1.0, 0.204), (2.0, 0.154)),
    "K2SO4": ((0.1, 0.441), (0.5, 0.262)),
    "MgSO4": ((0.1, 0.150), (0.5, 0.0675), (1.0, 0.0485), (2.0, 0.0417)),
    "CuSO4": ((0.1, 0.150), (0.5, 0.062), (1.0, 0.0423)),
}
MEM_PHI = {
    "NaCl": (
        (0.1, 0.932),
        (0.5, 0.921),
        (1.0, 0.936),
        (2.0, 0.983),
        (3.0, 1.045),
        (4.0, 1.116),
        (5.0, 1.192),
        (6.0, 1.271),
    )
}

# (salt, quantity, m, source) → the deviation found (model/table − 1), kept visible.
KNOWN = {
    ("NaNO3", "gamma", 0.1, KL): "-0.51 % (NaNO3 at 0.1 mol/kg against 0.762 ± 0.002)",
    ("KNO3", "gamma", 0.1, KL): "-0.75 % (KNO3 at 0.1 mol/kg against 0.739 ± 0.002)",
    ("KNO3", "gamma", 0.2, KL): "-0.58 % (KNO3 at 0.2 mol/kg against 0.663 ± 0.002)",
    ("KNO3", "gamma", 0.4, KL): "-0.67 % (KNO3 at 0.4 mol/kg against 0.576 ± 0.002)",
    ("CsCl", "gamma", 0.1, KL): "-0.72 %: Kaye & Laby 0.756 and CRC 0.751 (both read) differ by 0.7 % here; "
    "the model agrees with CRC to 0.06 %",
    ("CsCl", "gamma", 0.2, KL): "-0.60 %: Kaye & Laby 0.694 against CRC 0.691 (both read); model within 0.2 % of CRC",
    ("HCl", "gamma", 6.0, HW): "+2.0 % at 6 mol/kg against the recalled 3.22; 5 mol/kg agrees to 0.5 %",
    ("BaCl2", "gamma", 0.1, CRC): "+2.75 %: the CRC values (Goldberg & Nuttall 1978) lie below the older "
    "tables Pitzer & Mayorga fitted (Robinson & Stokes 0.500 at 0.1 mol/kg, from memory)",
    ("BaCl2", "gamma", 0.2, CRC): "+3.39 % against the CRC value 0.436",
    ("BaCl2", "gamma", 0.5, CRC): "+2.78 % against the CRC value 0.391",
    ("BaCl2", "gamma", 1.0, CRC): "+2.10 % against the CRC value 0.393",
    ("CaBr2", "gamma", 0.1, CRC): "-2.06 % against the CRC value 0.540",
    ("CaBr2", "gamma", 0.2, CRC): "-2.35 % against the CRC value 0.502",
    ("CaBr2", "gamma", 0.5, CRC): "-2.30 % against the CRC value 0.500",
    ("CaCl2", "gamma", 2.0, CRC): "+2.38 % against the CRC value 0.784 (column inferred); the recalled "
    "Robinson & Stokes 0.792 is within 1.4 %",
    ("Na2SO4", "gamma", 0.1, RS): "+2.1 % against the recalled 0.445 (another recollection gives 0.452, "
    "which would agree to 0.5 %)",
    ("MgSO4", "gamma", 0.1, RS): "+10.7 %: recalled Pitzer & Mayorga 1974 parameters against the recalled "
    "table; one of the two recollections is wrong and neither can be read here",
    ("MgSO4", "gamma", 0.5, RS): "+12.6 % (same cause as at 0.1 mol/kg)",
    ("MgSO4", "gamma", 1.0, RS): "+12.8 % (same cause as at 0.1 mol/kg)",
    ("MgSO4", "gamma", 2.0, RS): "+11.6 % (same cause as at 0.1 mol/kg)",
}


def _rows():
    rows = []
    for salt, g in KL_G.items():
        rows += [(salt, "gamma", m, ref, KL, "read") for m, ref in zip(KL_M, g)]
    for salt, g in CRC_G.items():
        for m, ref in zip(CRC_M, g):
            status = "read (column inferred)" if (salt, m) in CRC_INFERRED else "read"
            rows.append((salt, "gamma", m, ref, CRC, status))
    for salt, pts in MEM_G.items():
        src = RS if SALTS[salt][4] != "1:1" else HW
        rows += [(salt, "gamma", m, ref, src, "from memory") for m, ref in pts]
    for salt, pts in MEM_PHI.items():
        rows += [(salt, "phi", m, ref, HW, "from memory") for m, ref in pts]
    return rows


def _declared_max(salt):
    c, a = SALTS[salt][:2]
    return load_parameters("pitzer")["salt", c, a].max_molality


ALL_ROWS = _rows()
# Points above an entry's declared molality range are not promised; they are kept to show
# why the range was narrowed (test_narrowed_ranges_fail_beyond_their_limit).
ROWS = [r for r in ALL_ROWS if r[2] <= _declared_max(r[0]) + 1e-12]
BEYOND = [r for r in ALL_ROWS if r[2] > _declared_max(r[0]) + 1e-12]


def model_values(salt, m):
    c, a, nc, na, _ = SALTS[salt]
    sol = Solution({c: nc * m, a: na * m})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", act.ValidityWarning)
        return act.mean_activity_coefficient(sol, c, a, MODEL), MODEL.osmotic_coefficient(sol)


def _param(row):
    salt, qty, m, _ref, src, status = row
    key = (salt, qty, m, src)
    marks = [pytest.mark.xfail(strict=True, reason=KNOWN[key])] if key in KNOWN else []
    return pytest.param(*row, marks=marks, id=f"{salt}-{qty}-{m:g}-{status.split()[0]}-{src.split(',')[0]}")


@pytest.mark.parametrize("salt, qty, m, ref, source, status", [_param(r) for r in ROWS])
def test_against_table(salt, qty, m, ref, source, status):
    g, phi = model_values(salt, m)
    value = g if qty == "gamma" else phi
    tol = TOL[SALTS[salt][4]]
    dev = value / ref - 1.0
    assert abs(dev) <= tol, f"{salt} {qty} at {m} mol/kg: {100 * dev:+.2f} % ({source}, {status})"


def test_known_disagreements_are_all_used():
    keys = {(r[0], r[1], r[2], r[4]) for r in ROWS}
    assert set(KNOWN) <= keys


def test_narrowed_ranges_fail_beyond_their_limit():
    # AgNO3 is declared to 0.1 mol/kg although Pitzer & Mayorga (1973) fitted it to 6 mol/kg:
    # against the read CRC table it is −0.6 % at 0.2 and −1.0 % at 0.5–1 mol/kg. If a better
    # parameter set removes the disagreement, this test fails and the range can be widened.
    assert {r[0] for r in BEYOND} == {"AgNO3"}
    worst = max(abs(model_values(r[0], r[2])[0] / r[3] - 1.0) for r in BEYOND)
    assert worst > TOL["1:1"]


# Salt entries without a γ± table here, read or recalled, with the reason. Kept in step with
# models/pitzer.toml by the test below and listed in the README ("Data and sources").
NOT_CHECKED = {
    ("H+", "Br-"),
    ("H+", "NO3-"),
    ("Li+", "Br-"),
    ("Na+", "F-"),
    ("Na+", "Br-"),
    ("Na+", "OH-"),
    ("K+", "F-"),
    ("K+", "Br-"),
    ("K+", "OH-"),
    ("NH4+", "Cl-"),
    ("NH4+", "Br-"),
    ("NH4+", "NO3-"),
    ("H+", "HSO4-"),
    ("Na+", "HSO4-"),
    ("K+", "HSO4-"),
    ("Na+", "HCO3-"),
    ("K+", "HCO3-"),
    ("MgOH+", "Cl-"),
    ("Mg^2+", "Br-"),
    ("Mg^2+", "NO3-"),
    ("Ca^2+", "NO3-"),
    ("Sr^2+", "Cl-"),
    ("Sr^2+", "Br-"),
    ("Sr^2+", "NO3-"),
    ("Ba^2+", "NO3-"),
    ("Mg^2+", "HSO4-"),
    ("Ca^2+", "HSO4-"),
    ("Mg^2+", "HCO3-"),
    ("Ca^2+", "HCO3-"),
    ("Ca^2+", "OH-"),
    ("H+", "SO4^2-"),
    ("Li+", "SO4^2-"),
    ("NH4+", "SO4^2-"),
    ("Na+", "CO3^2-"),
    ("K+", "CO3^2-"),
    ("Ca^2+", "SO4^2-"),
}


def test_every_salt_entry_is_checked_or_listed():
    table = load_parameters("pitzer")
    salts = {k[1:] for k in table if k[0] == "salt"}
    checked = {SALTS[s][:2] for s in {r[0] for r in ROWS}}
    assert checked <= salts
    assert salts - checked == NOT_CHECKED
