"""Worked examples from published sources for the ISE workflow (source beside each value).

Status of each value as in /work/shared/reference-data/published-values.toml: "read" when
the source was read, "from memory" when recalled (then the check also rests on the closed
form computed here, which does not depend on the memory).
"""

import warnings

import numpy as np
import pytest

from activity import Solution
from activity.errors import ActivityWarning
from activity.workflows.ise import calibrate_ise
from activity.workflows.ise._model import ion_terms, nernst_slope_z
from activity.workflows.ise.addition import known_addition_closed_form, single_addition


def test_one_point_standard_addition_calcium_in_sea_water():
    # Harvey, D. "Analytical Chemistry 2.1" (2016), ch. 11 (potentiometric methods), worked example of
    # a one-point standard addition with a Ca²⁺ ISE — values FROM MEMORY (not read; the search index
    # holds no copy): 10.00 mL of sea water diluted to 100.0 mL; 50.00 mL of it reads −0.05290 V;
    # after 1.00 mL of 5.00×10⁻² M Ca²⁺ it reads −0.04417 V; Nernstian slope 0.05916/2 V at 25 °C;
    # answer about 9.9×10⁻⁴ M in the diluted sample, 9.9×10⁻³ M in the sea water (from memory: the last
    # digit of the printed answer is not remembered reliably, so only two figures are checked).
    E1, E2 = -0.05290, -0.04417
    Vx, Vs, cs = 0.05000, 0.00100, 5.00e-2
    S = 0.05916 / 2
    r = single_addition(E1, E2, Vx, Vs, cs, "Ca^2+", slope=S)
    # the closed form cₓ = cₛVₛ/(Vₓ+Vₛ)/(10^(ΔE/S) − Vₓ/(Vₓ+Vₛ)) written out here
    ratio = 10 ** ((E2 - E1) / S)
    closed = cs * Vs / (Vx + Vs) / (ratio - Vx / (Vx + Vs))
    assert r.concentration == pytest.approx(closed, rel=1e-12)
    assert known_addition_closed_form(E2 - E1, S, Vx, Vs, cs) == pytest.approx(closed, rel=1e-12)
    # two significant figures of the recalled answer: ±0.5 in the second digit
    assert 10 * r.concentration == pytest.approx(9.9e-3, abs=0.05e-3)
    # and it lands on the calcium of sea water, 0.0103 mol/kg (DOE 1994, published-values.toml group 7,
    # status "read (secondary quotation)"): within 5 %, the example being built on real sea water
    assert 10 * r.concentration == pytest.approx(0.0103, rel=0.05)


@pytest.mark.parametrize("z, ion, counter", [(1, "K+", "Cl-"), (2, "Ca^2+", "Cl-")])
def test_detection_limit_lies_18_over_z_mV_off_the_line(z, ion, counter):
    # IUPAC practical definition of the detection limit (1976/1994): the activity where the response
    # departs from the extrapolated linear part by 18/z mV at 25 °C, i.e. (RT ln 10/zF)·lg 2 —
    # published-values.toml group 5a, status "from memory (NOT READ)". On the Nikolsky model with a
    # low-activity term the IUPAC intersection a_DL = a0 gives exactly S·lg 2 there; noise-free data.
    c = np.logspace(-7, -2, 8)
    std = Solution({ion: c, "K+" if ion != "K+" else "Na+": 0.1, counter: z * c + 0.1})
    t = ion_terms(std, ion, z, [], "davies")
    a0 = 3e-7
    S = nernst_slope_z(298.15, z)
    E = 0.1 + S * np.log10(t.a_primary + a0)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ActivityWarning)
        cal = calibrate_ise(std, E, ion, slope="nernstian")
    a_dl = cal.detection_limit_activity
    assert a_dl == pytest.approx(a0, rel=1e-6)
    departure = cal.emf_from_activity(a_dl) - (cal.E0 + cal.slope * np.log10(a_dl))
    assert 1000 * departure == pytest.approx(18.0 / z, rel=0.02)  # 17.8/z mV: "18/z" is rounded
