"""Figures of the ISE workflow: the calibration curve with its residuals, and the Gran plot.

matplotlib is imported lazily through :func:`activity.workflows.plotting.pyplot`; the
functions return a figure for :func:`~activity.workflows.plotting.save_figure` (PNG, SVG,
PDF) or :meth:`~activity.workflows.record.Record.figure`. Potentials are drawn in mV.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np

__all__ = ["calibration_figure", "gran_figure"]


#: Sizes of the calibration figure: on screen or in a file, and for the printed record (a
#: figure drawn near the 80 mm it prints at, so its text prints at about 5.5–7 pt).
_SIZES = {
    False: {
        "figsize": (7.2, 3.9),
        "ms": 6,
        "ms_r": 5,
        "legend": 7.5,
        "note": 8,
        "title": 10,
        "small": 7,
        "label": None,
        "ticks": None,
        "lw": 1.6,
    },
    True: {
        "figsize": (3.2, 2.55),
        "ms": 3.4,
        "ms_r": 2.8,
        "legend": 6.2,
        "note": 6.5,
        "title": 7.8,
        "small": 6.0,
        "label": 7.2,
        "ticks": 6.8,
        "lw": 1.1,
    },
}


def calibration_figure(
    cal: Any,
    unknowns: Any = None,
    unknown_labels: Sequence[str] | None = None,
    unknown_emf: Any = None,
    *,
    compact: bool = False,
) -> Any:
    """E vs lg aᵢ with the fitted curve, the extrapolated line, the detection limit and the
    linear range marked, and a residual panel below.

    Parameters
    ----------
    cal : ISECalibration
    unknowns : ReadResult or UnknownResult-like with ``activity``, optional
        Samples to mark on the curve (needs ``unknown_emf``).
    unknown_labels : sequence of str, optional
    unknown_emf : array_like, optional
        The samples' readings, V.
    compact : bool, default False
        Drawn at the size it prints in the one-page record (about 95 × 80 mm, small text).
    """
    from ..plotting import pyplot

    plt = pyplot()
    z = _SIZES[bool(compact)]
    fig, (ax, axr) = plt.subplots(
        2, 1, figsize=z["figsize"], sharex=True, gridspec_kw={"height_ratios": [3, 1], "hspace": 0.08}
    )
    std = cal.standards
    lg_a = np.asarray(std["lg_activity"], float)
    E = np.asarray(std["emf"], float) * 1000
    lo = (
        min(
            lg_a.min(),
            np.log10(cal.detection_limit_activity) if np.isfinite(cal.detection_limit_activity) else lg_a.min(),
        )
        - 1.0
    )
    hi = lg_a.max() + 0.5
    x = np.linspace(lo, hi, 400)
    interference = cal.interference_at_limit
    ax.plot(
        x,
        np.asarray(cal.emf_from_activity(10.0**x, interference)) * 1000,
        color="#1f4e79",
        lw=z["lw"],
        label="fit (Nikolsky–Eisenman)",
    )
    ax.plot(
        x,
        (cal.E0 + cal.slope * x) * 1000,
        color="#7f7f7f",
        lw=1.0,
        ls="--",
        label=f"linear response, {1000 * cal.slope:.2f} mV/decade ({cal.slope_percent:.1f} %)",
    )
    if cal.a0 + interference > 0:
        plateau = (cal.E0 + cal.slope * np.log10(cal.a0 + interference)) * 1000
        ax.axhline(plateau, color="#7f7f7f", lw=0.8, ls=":")
    ax.plot(lg_a, E, "o", color="#c55a11", ms=z["ms"], label="standards", zorder=3)
    lr = np.log10(cal.linear_range)
    ax.axvspan(
        lr[0],
        lr[1],
        color="#9dc3e6",
        alpha=0.25,
        lw=0,
        label=f"linear range (within {1000 * cal.linear_deviation:g} mV)",
    )
    axr.axvspan(lr[0], lr[1], color="#9dc3e6", alpha=0.25, lw=0)
    if np.isfinite(cal.detection_limit_activity):
        lg_dl = np.log10(cal.detection_limit_activity)
        for a_ in (ax, axr):
            a_.axvline(lg_dl, color="#a11d1d", lw=1.0, ls="-.")
        ax.annotate(
            f"detection limit\na = {cal.detection_limit_activity:.2g}",
            (lg_dl, ax.get_ylim()[0]),
            xytext=(4, 8),
            textcoords="offset points",
            color="#a11d1d",
            fontsize=z["note"],
        )
    if unknowns is not None and unknown_emf is not None:
        ua = np.atleast_1d(np.asarray(unknowns.activity, float))
        ue = np.atleast_1d(np.asarray(unknown_emf, float)) * 1000
        ok = np.isfinite(ua) & (ua > 0)
        ax.plot(
            np.log10(ua[ok]),
            np.broadcast_to(ue, ua.shape)[ok],
            "D",
            color="#548235",
            ms=z["ms"],
            mfc="white",
            mew=1.5,
            label="samples",
            zorder=4,
        )
        for lab, xa, ye in zip(
            np.asarray(list(unknown_labels or []), dtype=object)[ok] if unknown_labels else [],
            np.log10(ua[ok]),
            np.broadcast_to(ue, ua.shape)[ok],
        ):
            ax.annotate(
                str(lab), (xa, ye), xytext=(5, -10), textcoords="offset points", fontsize=z["note"], color="#548235"
            )
    ax.set_ylabel("E / mV", fontsize=z["label"])
    ax.set_title(f"{_pretty(cal.ion)} electrode calibration ({cal.model} activities)", fontsize=z["title"])
    ax.legend(fontsize=z["legend"], loc="upper left", frameon=False)
    ax.grid(alpha=0.3)
    res = np.asarray(std["residual"], float) * 1000
    axr.axhline(0, color="#7f7f7f", lw=0.8)
    axr.plot(lg_a, res, "o", color="#c55a11", ms=z["ms_r"])
    for sign in (-1, 1):
        axr.axhline(sign * 1000 * cal.residual_sd, color="#c55a11", lw=0.8, ls=":")
    lim = 1.35 * max(np.max(np.abs(res)) if res.size else 0.0, 1000 * cal.residual_sd, 0.05)
    axr.set_ylim(-lim, lim)
    axr.text(
        0.99,
        0.04,
        f"dotted: ± residual SD ({1000 * cal.residual_sd:.2g} mV)",
        transform=axr.transAxes,
        ha="right",
        va="bottom",
        fontsize=z["small"],
        color="#c55a11",
    )
    axr.set_ylabel("residual / mV", fontsize=z["label"])
    axr.set_xlabel(f"lg a({_pretty(cal.ion)})", fontsize=z["label"])
    axr.grid(alpha=0.3)
    if z["ticks"]:
        for a_ in (ax, axr):
            a_.tick_params(labelsize=z["ticks"], length=2.5, pad=2)
    ax.set_xlim(lo, hi)
    if compact:
        fig.subplots_adjust(left=0.15, right=0.98, top=0.93, bottom=0.12)
    return fig


def _pretty(name: str) -> str:
    """'Ca^2+' → 'Ca²⁺' for labels."""
    sup = str.maketrans("0123456789+-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁺⁻")
    if "^" in name:
        base, charge = name.split("^", 1)
        return base + charge.translate(sup)
    if name and name[-1] in "+-":
        return name[:-1] + name[-1].translate(sup)
    return name


def gran_figure(result: Any, *, V_sample: float | None = None) -> Any:
    """The Gran plot of a multiple known addition: G against added volume, with the
    regression line extended to its volume intercept −cₓVₓ/cₛ."""
    from ..plotting import pyplot

    plt = pyplot()
    g = result.gran
    v = np.asarray(g["volume"], float) * 1000  # mL
    G = np.asarray(g["G"], float)
    fig, ax = plt.subplots(figsize=(6.0, 4.0))
    v_e = -g["intercept"] / g["gradient"] * 1000
    x = np.linspace(min(v_e, 0) * 1.1, v.max() * 1.05, 50)
    ax.plot(x, g["intercept"] + g["gradient"] * x / 1000, color="#1f4e79", lw=1.2, label="regression")
    ax.plot(v, G, "o", color="#c55a11", label="additions")
    ax.axhline(0, color="#7f7f7f", lw=0.8)
    ax.plot(
        [v_e],
        [0],
        "x",
        color="#a11d1d",
        ms=9,
        mew=2,
        label=f"intercept {v_e:.3g} mL → cₓ = {result.gran_concentration:.3g} mol/L",
    )
    ax.set_xlabel("added standard / mL")
    ax.set_ylabel("G = (Vₓ + v)·10^((E − E₁)/S) / γ  [L]")
    ax.set_title("Gran plot of the known additions", fontsize=10)
    ax.legend(fontsize=8, frameon=False)
    ax.grid(alpha=0.3)
    return fig
