"""Metal-ion buffers: round trip, an independent closed-form check, batches."""

import numpy as np
import pytest

from activity.errors import InputError
from activity.speciation import free_metal, metal_buffer
from activity.speciation.network import default_network

EDTA = {"C10H14N2O8^2-": 0.01, "K+": 0.02}  # 10 mmol/kg K2H2EDTA
KCL = {"K+": 0.1, "Cl-": 0.1}  # background, 0.1 mol/kg KCl


def test_pca8_in_edta_at_ph7_round_trip():
    buf = metal_buffer("Ca^2+", EDTA, 8.0, ph=7.0, background=KCL)
    assert buf.p_metal == pytest.approx(8.0, abs=1e-9)
    assert 0 < buf.metal_total < 0.01  # less calcium than chelator: a buffer, not a titration past the end
    recipe = {**EDTA, "K+": 0.12, "Cl-": 0.1, "Ca^2+": buf.metal_total}
    back = free_metal("Ca^2+", recipe, ph=7.0)
    assert back.p_metal == pytest.approx(8.0, abs=1e-8)


def test_total_metal_against_closed_form_with_ideal_activities():
    """With γ = 1 and fixed pH the total follows in closed form from the data's constants
    (an independent evaluation of the same mass-action laws):
    Y_free = Y_T / (1 + Σ β_HiY h^i + β_CaY c + β_CaHY c h),
    Ca_T = c (1 + β_CaOH Kw/h) + Y_free (β_CaY c + β_CaHY c h)."""
    net = default_network()
    lb = dict(zip(net.products, net.lg_beta(298.15)))
    c, h, y_t = 10**-8.0, 10**-7.0, 0.01
    denom = 1.0 + sum(
        10 ** lb[s] * h**i
        for i, s in enumerate(["C10H13N2O8^3-", "C10H14N2O8^2-", "C10H15N2O8-", "C10H16N2O8"], start=1)
    )
    denom += 10 ** lb["CaC10H12N2O8^2-"] * c + 10 ** lb["CaC10H13N2O8-"] * c * h
    y_free = y_t / denom
    ca_t = (
        c + 10 ** lb["CaOH+"] * c / h + y_free * (10 ** lb["CaC10H12N2O8^2-"] * c + 10 ** lb["CaC10H13N2O8-"] * c * h)
    )
    buf = metal_buffer("Ca^2+", EDTA, 8.0, ph=7.0, background=KCL, model="ideal")
    assert buf.metal_total == pytest.approx(ca_t, rel=1e-9)


def test_batch_of_targets():
    p = np.array([6.0, 7.0, 8.0, 9.0])
    buf = metal_buffer("Ca^2+", EDTA, p, ph=7.0, background=KCL)
    assert np.allclose(buf.p_metal, p, atol=1e-9)
    assert np.all(np.diff(buf.metal_total) < 0)  # lower free calcium needs less total calcium


def test_magnesium_in_nta():
    buf = metal_buffer("Mg^2+", {"C6H6NO6^3-": 0.005, "Na+": 0.015}, 5.0, ph=8.0, background=KCL)
    assert buf.p_metal == pytest.approx(5.0, abs=1e-9)
    assert buf.free_molality < buf.metal_total < 0.005


def test_bad_buffer_input():
    with pytest.raises(InputError) as exc:
        metal_buffer("Cl-", EDTA, 8.0, ph=7.0)
    assert exc.value.field == "metal"
    with pytest.raises(InputError) as exc:
        metal_buffer("Ca^2+", {**EDTA, "Ca^2+": 0.001}, 8.0, ph=7.0)
    assert exc.value.field == "chelator"
    with pytest.raises(InputError) as exc:
        free_metal("Mg^2+", {**EDTA, "Ca^2+": 0.001}, ph=7.0)
    assert exc.value.field == "metal"
