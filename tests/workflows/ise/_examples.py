"""Shared by the ISE tests: the `calibrate` arguments for the files `ise-examples` writes."""

from __future__ import annotations

from pathlib import Path


def calibrate_args(ex: Path) -> list[str]:
    """`calibrate` with the standards, method, samples, addition and selectivity examples."""
    return [
        "calibrate",
        str(ex / "standards.csv"),
        "--method",
        str(ex / "method.toml"),
        "--samples",
        str(ex / "samples.csv"),
        "--addition",
        str(ex / "addition.toml"),
        "--selectivity",
        str(ex / "selectivity.toml"),
    ]
