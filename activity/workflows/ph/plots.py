"""Figure of a pH-meter calibration: E against pH(S) with the fitted line, and the residuals.

matplotlib is imported lazily through :mod:`activity.workflows.plotting`.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from activity.constants import ZERO_CELSIUS

__all__ = ["calibration_figure"]


def calibration_figure(validation: Any, *, title: str | None = None) -> Any:
    """E vs pH(S) with the fit (top) and pH residuals with U(pH(S)) bars (bottom).

    Parameters
    ----------
    validation : MeterValidation or PhCalibration
        Check buffers and samples are drawn when a validation is given.

    Returns
    -------
    matplotlib.figure.Figure
    """
    from activity.workflows.plotting import pyplot

    plt = pyplot()
    cal = getattr(validation, "calibration", validation)
    checks = getattr(validation, "checks", ())
    samples = getattr(validation, "samples", None)
    fig, (ax, axr) = plt.subplots(
        2, 1, figsize=(6.4, 5.6), sharex=True, gridspec_kw={"height_ratios": [2.3, 1.0], "hspace": 0.08}
    )
    pts = [cal.pH_standards] + [np.array([c.pH_S for c in checks])]
    if samples is not None:
        pts.append(np.atleast_1d(samples.pH))
    allp = np.concatenate(pts)
    lo, hi = float(allp.min()) - 0.5, float(allp.max()) + 0.5
    grid = np.linspace(lo, hi, 50)
    ax.axvspan(*cal.pH_range, color="0.90", zorder=0, label="calibrated range")
    ax.plot(
        grid,
        cal.potential(grid) * 1000,
        "-",
        color="C0",
        lw=1.2,
        label=f"fit: {cal.slope * 1000:.2f} mV/pH ({cal.slope_percent:.1f} %)",
    )
    ax.errorbar(
        cal.pH_standards,
        cal.emf * 1000,
        yerr=2 * cal.u_emf * 1000,
        fmt="o",
        color="C0",
        ms=6,
        capsize=2,
        label="calibration buffers",
    )
    for name, x, y in zip(cal.standards, cal.pH_standards, cal.emf):
        ax.annotate(name, (x, y * 1000), textcoords="offset points", xytext=(6, 6), fontsize=8, color="0.25")
    if checks:
        ax.plot(
            [c.pH_S for c in checks],
            [c.emf * 1000 for c in checks],
            "s",
            mfc="none",
            color="C2",
            ms=7,
            label="check buffers",
        )
    if samples is not None:
        sp = np.atleast_1d(samples.pH)
        ax.plot(sp, cal.potential(sp) * 1000, "^", color="C3", ms=6, label="samples")
    ax.set_ylabel("E / mV")
    ax.grid(True, lw=0.3, alpha=0.6)
    ax.legend(fontsize=8, loc="upper right", framealpha=0.9)
    t = cal.T - ZERO_CELSIUS
    ax.set_title(title or f"pH cell calibration at {t:.1f} °C ({cal.method})", fontsize=10)
    axr.axhline(0.0, color="0.4", lw=0.8)
    axr.errorbar(
        cal.pH_standards,
        cal.residuals,
        yerr=2 * cal.u_pH_standards,
        fmt="o",
        color="C0",
        ms=5,
        capsize=2,
        label="pH(S) − pH(fit), ±U(pH(S))",
    )
    if checks:
        axr.errorbar(
            [c.pH_S for c in checks],
            [-c.difference for c in checks],
            yerr=[c.U_pH for c in checks],
            fmt="s",
            mfc="none",
            color="C2",
            ms=6,
            capsize=2,
            label="check: pH(S) − pH(meter), ±U",
        )
    axr.set_xlabel("pH(S)")
    axr.set_ylabel("residual / pH")
    axr.set_xlim(lo, hi)
    span = max(
        0.01,
        float(
            np.max(
                np.abs(
                    np.concatenate(
                        [cal.residuals, 2 * cal.u_pH_standards] + [[abs(c.difference) + c.U_pH for c in checks]]
                    )
                )
            )
        ),
    )
    axr.set_ylim(-1.3 * span, 1.3 * span)
    axr.grid(True, lw=0.3, alpha=0.6)
    axr.legend(fontsize=7, loc="lower left", framealpha=0.9)
    return fig
