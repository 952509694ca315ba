"""Input files of the ISE workflow: the standards CSV, the method TOML, samples, additions,
selectivity series, and saved calibrations (JSON).

Every quantity carries its unit (``'reading [mV]'`` in a CSV header, ``"0.3 mV"`` in TOML);
activities are plain numbers. Errors name the file and the field. Reading a file writes
nothing; saving writes whole or not at all (:mod:`activity.io.files`).

The standards CSV (units in the headers; any amount unit of :mod:`activity.units`)::

    label,Ca2+ [mol/L],K+ [mol/L],Cl- [mol/L],temperature [°C],reading [mV]
    S1,1e-5,0.1,0.10002,25,-199.1

The method TOML (all keys but ``ion`` optional)::

    ion = "Ca^2+"
    model = "davies"
    slope = "free"                 # or "nernstian"
    detection_term = "auto"        # "auto", "fit" or an activity
    linear_deviation = "1 mV"
    counter_ion = "Cl-"            # added with the ion when samples are read
    speciation = false             # true: free-ion activities from activity.speciate (a
                                   # table instead: its options, e.g. {ph = 7.4})
    [interferents]                 # Kᵢⱼ as a number, or "fit"
    "Mg^2+" = 0.01
    [acceptance]
    slope_min_percent = 90
    slope_max_percent = 105
    max_residual_sd = "1 mV"
    max_detection_limit = 1e-5     # activity
    max_drift = "1 mV/h"
    [uncertainty]
    reading = "0.3 mV"
    temperature = "0.2 K"
    matrix = 0.01                  # relative
    method = "gum"                 # or "monte-carlo"
    trials = 100000
    [sample_matrix]                # when the samples CSV has no composition columns
    temperature = "25 °C"
    [sample_matrix.composition]
    "K+" = "0.1 mol/L"
    "Cl-" = "0.1 mol/L"
"""

from __future__ import annotations

import json
import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from ...errors import InputError
from ...solution import Solution

__all__ = [
    "Method",
    "load_calibration",
    "parse_rate",
    "parse_volume",
    "read_addition",
    "read_method",
    "read_samples_file",
    "read_selectivity",
    "read_standards",
    "save_calibration",
]

_METHOD_KEYS = (
    "ion",
    "model",
    "slope",
    "detection_term",
    "linear_deviation",
    "counter_ion",
    "speciation",
    "interferents",
    "acceptance",
    "uncertainty",
    "sample_matrix",
    "title",
    "subtitle",
    "background",
)
_UNC_KEYS = ("reading", "temperature", "matrix", "method", "trials", "seed", "model_choice")
_VOLUME = {"L": 1.0, "l": 1.0, "mL": 1e-3, "ml": 1e-3, "µL": 1e-6, "uL": 1e-6, "μL": 1e-6}
_NUMBER = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"


@dataclass(frozen=True)
class Method:
    """A parsed method file (SI inside: V, K, V/s)."""

    ion: str
    model: str = "davies"
    slope: str = "free"
    detection_term: Any = "auto"
    linear_deviation: float = 1e-3
    counter_ion: str | None = None
    interferents: dict = field(default_factory=dict)
    acceptance: dict = field(default_factory=dict)
    u_reading: float | None = None
    u_temperature: float = 0.0
    u_matrix: float = 0.0
    uncertainty_method: str = "gum"
    trials: int | None = None
    seed: int | None = None
    model_choice: bool = True
    sample_matrix: Mapping | None = None
    title: str | None = None
    subtitle: str | None = None
    speciation: dict | None = None  # keyword arguments of activity.speciate; None: no speciation


def _quantity(text: Any, table: dict, field: str, kind: str) -> float:
    if isinstance(text, bool) or not isinstance(text, str):
        raise InputError(f"give a {kind} with its unit, e.g. '1 {next(iter(table))}'", field=field, value=text)
    m = re.match(rf"^\s*({_NUMBER})\s*(\S.*?)\s*$", text)
    if not m or m.group(2).replace(" ", "") not in table:
        raise InputError(f"expected a {kind} with a unit ({', '.join(table)})", field=field, value=text)
    return float(m.group(1)) * table[m.group(2).replace(" ", "")]


def parse_volume(text: Any, field: str = "volume") -> float:
    """'50 mL' → 0.05 (litres)."""
    v = _quantity(text, _VOLUME, field, "volume")
    if v < 0:
        raise InputError("must not be negative", field=field, value=text)
    return v


def parse_rate(text: Any, field: str = "max_drift") -> float:
    """'1 mV/h' → V/s."""
    return _quantity(
        text, {"mV/h": 1e-3 / 3600, "mV/min": 1e-3 / 60, "V/s": 1.0, "µV/s": 1e-6, "uV/s": 1e-6}, field, "rate"
    )


def _potential(text: Any, field: str) -> float:
    from ...io.units import parse_potential

    return parse_potential(text, field=field)


def _duration(text: Any, field: str) -> float:
    return _quantity(text, {"s": 1.0, "min": 60.0, "h": 3600.0}, field, "duration")


def read_standards(path: str | Path) -> tuple[Solution, np.ndarray, tuple]:
    """The standards batch, their readings (V) and labels from a CSV file."""
    from ...io.tables import read_table, solution_from_table

    tbl = read_table(path)
    name = Path(path).name
    keys = [k for k in ("reading", "potential", "emf") if k in tbl.extra]
    if not keys:
        raise InputError("needs a reading column, e.g. 'reading [mV]'", field=f"{name}: reading column", value=None)
    unit, values = tbl.extra[keys[0]]
    scale = _potential(f"1 {unit}", f"{name}: column '{keys[0]} [{unit}]'")
    with_warn = solution_from_table(tbl, neutrality="ignore")
    return with_warn, np.asarray(values, float) * scale, tuple(tbl.labels)


def read_method(path: str | Path) -> Method:
    """Parse a method TOML file (see the module docstring)."""
    from ...data import load_file

    d = load_file(path)
    name = Path(path).name
    unknown = [k for k in d if k not in _METHOD_KEYS]
    if unknown:
        raise InputError(f"unknown key; allowed: {', '.join(_METHOD_KEYS)}", field=f"{name}", value=unknown[0])
    if "ion" not in d:
        raise InputError('the method names the primary ion: ion = "Ca^2+"', field=f"{name}: ion", value=None)
    acc = dict(d.get("acceptance", {}))
    for key in ("max_residual_sd",):
        if key in acc:
            acc[key] = _potential(acc[key], f"{name}: acceptance.{key}")
    if "max_drift" in acc:
        acc["max_drift"] = parse_rate(acc["max_drift"], f"{name}: acceptance.max_drift")
    unc = dict(d.get("uncertainty", {}))
    bad = [k for k in unc if k not in _UNC_KEYS]
    if bad:
        raise InputError(f"unknown key; allowed: {', '.join(_UNC_KEYS)}", field=f"{name}: uncertainty", value=bad[0])
    u_T = 0.0
    if "temperature" in unc:
        u_T = _quantity(
            unc["temperature"],
            {"K": 1.0, "°C": 1.0, "degC": 1.0},
            f"{name}: uncertainty.temperature",
            "temperature difference",
        )
    dt = d.get("detection_term", "auto")
    if not isinstance(dt, (str, int, float)) or isinstance(dt, bool):
        raise InputError("'auto', 'fit' or an activity", field=f"{name}: detection_term", value=dt)
    interferents = {}
    for k, v in dict(d.get("interferents", {})).items():
        if not (isinstance(v, str) or isinstance(v, (int, float)) and not isinstance(v, bool)):
            raise InputError(
                "a selectivity coefficient is a number or 'fit'", field=f"{name}: interferents.{k}", value=v
            )
        interferents[k] = v
    spec = d.get("speciation", False)
    if isinstance(spec, bool):
        spec = {} if spec else None
    elif isinstance(spec, Mapping):
        spec = dict(spec)
    else:
        raise InputError("true, false or a table of speciation options", field=f"{name}: speciation", value=spec)
    return Method(
        speciation=spec,
        ion=str(d["ion"]),
        model=str(d.get("model", "davies")),
        slope=str(d.get("slope", "free")),
        detection_term=dt,
        linear_deviation=_potential(d["linear_deviation"], f"{name}: linear_deviation")
        if "linear_deviation" in d
        else 1e-3,
        counter_ion=d.get("counter_ion"),
        interferents=interferents,
        acceptance=acc,
        u_reading=_potential(unc["reading"], f"{name}: uncertainty.reading") if "reading" in unc else None,
        u_temperature=u_T,
        u_matrix=float(unc.get("matrix", 0.0)),
        uncertainty_method=str(unc.get("method", "gum")),
        trials=int(unc["trials"]) if "trials" in unc else None,
        seed=unc.get("seed"),
        model_choice=bool(unc.get("model_choice", True)),
        sample_matrix=d.get("sample_matrix"),
        title=d.get("title"),
        subtitle=d.get("subtitle"),
    )


def read_samples_file(path: str | Path, method: Method | None = None) -> tuple[tuple, np.ndarray, Solution]:
    """Labels, readings (V) and the matrices of samples from a CSV (composition columns, or the
    method's ``[sample_matrix]`` when the CSV has none)."""
    from ...io.recipe import solution_from_recipe
    from ...io.tables import read_table, solution_from_table

    tbl = read_table(path)
    name = Path(path).name
    keys = [k for k in ("reading", "potential", "emf") if k in tbl.extra]
    if not keys:
        raise InputError("needs a reading column, e.g. 'reading [mV]'", field=f"{name}: reading column", value=None)
    unit, values = tbl.extra[keys[0]]
    E = np.asarray(values, float) * _potential(f"1 {unit}", f"{name}: column '{keys[0]} [{unit}]'")
    if tbl.species:
        matrix = solution_from_table(tbl, neutrality="ignore")
    else:
        if method is None or not method.sample_matrix:
            raise InputError(
                "no composition columns: give the sample matrix as columns or as [sample_matrix] in the method file",
                field=f"{name}: matrix",
                value=None,
            )
        one = solution_from_recipe(dict(method.sample_matrix), neutrality="ignore")
        T = one.T
        if "temperature" in tbl.conditions:
            from ...io.units import parse_temperature

            u, arr = tbl.conditions["temperature"]
            off = parse_temperature(f"0 {u}")
            T = arr * (parse_temperature(f"1 {u}") - off) + off
        matrix = Solution({k: np.full(E.shape, v) for k, v in one.molalities.items()}, T=T, neutrality="ignore")
    return tuple(tbl.labels), E, matrix


def _list(d: Mapping, key: str, name: str, convert: Any) -> np.ndarray:
    if key not in d:
        raise InputError("missing", field=f"{name}: {key}", value=None)
    v = d[key]
    items = list(v) if isinstance(v, (list, tuple)) else [v]
    return np.array([convert(x, f"{name}: {key}[{i}]") for i, x in enumerate(items)], float)


def _activity(x: Any, field: str) -> float:
    if isinstance(x, bool) or not isinstance(x, (int, float)) or not np.isfinite(x) or x <= 0:
        raise InputError("an activity is a positive number", field=field, value=x)
    return float(x)


def read_addition(path: str | Path) -> dict:
    """A known-addition file: sample_volume, standard_concentration, added_volume[], reading[],
    slope ('calibration', 'fit', 'nernstian'), optional [matrix] recipe and standard_in_matrix."""
    from ...data import load_file
    from ...io.recipe import solution_from_recipe
    from ...io.units import parse_amount

    d = load_file(path)
    name = Path(path).name
    allowed = (
        "sample_volume",
        "standard_concentration",
        "added_volume",
        "reading",
        "slope",
        "matrix",
        "standard_in_matrix",
        "counter_ion",
    )
    unknown = [k for k in d if k not in allowed]
    if unknown:
        raise InputError(f"unknown key; allowed: {', '.join(allowed)}", field=name, value=unknown[0])
    for k in ("sample_volume", "standard_concentration", "added_volume", "reading"):
        if k not in d:
            raise InputError("missing", field=f"{name}: {k}", value=None)
    amt = parse_amount(d["standard_concentration"], field=f"{name}: standard_concentration")
    if amt.basis != "L" or amt.mass:
        raise InputError(
            "give the standard in mol/L (or mmol/L)",
            field=f"{name}: standard_concentration",
            value=d["standard_concentration"],
        )
    out = {
        "V_sample": parse_volume(d["sample_volume"], f"{name}: sample_volume"),
        "c_standard": amt.value,
        "V_added": _list(d, "added_volume", name, parse_volume),
        "E": _list(d, "reading", name, _potential),
        "slope": str(d.get("slope", "calibration")),
        "standard_in_matrix": bool(d.get("standard_in_matrix", False)),
        "counter_ion": d.get("counter_ion"),
        "matrix": solution_from_recipe(dict(d["matrix"]), neutrality="ignore") if "matrix" in d else None,
    }
    if out["E"].size != out["V_added"].size:
        raise InputError(
            f"{out['E'].size} readings for {out['V_added'].size} volumes", field=f"{name}: reading", value=None
        )
    if out["slope"] not in ("calibration", "fit", "nernstian"):
        raise InputError("'calibration', 'fit' or 'nernstian'", field=f"{name}: slope", value=out["slope"])
    return out


def read_selectivity(path: str | Path) -> list[dict]:
    """Selectivity series from a TOML file with [[separate_solution]], [[fixed_interference]] and
    [[matched_potential]] tables (see :func:`activity.workflows.ise.examples.write_examples`)."""
    from ...data import load_file

    d = load_file(path)
    name = Path(path).name
    kinds = ("separate_solution", "fixed_interference", "matched_potential")
    unknown = [k for k in d if k not in kinds]
    if unknown:
        raise InputError(f"unknown table; allowed: {', '.join(kinds)}", field=name, value=unknown[0])
    out = []
    for kind in kinds:
        for i, t in enumerate(d.get(kind, [])):
            where = f"{name}: {kind}[{i}]"
            if "interferent" not in t:
                raise InputError("missing", field=f"{where}.interferent", value=None)
            item: dict[str, Any] = {"kind": kind, "interferent": str(t["interferent"])}
            if kind == "separate_solution":
                item.update(
                    a_primary=_list(t, "primary_activity", where, _activity),
                    a_interferent=_list(t, "interferent_activity", where, _activity),
                    E_primary=_list(t, "primary_reading", where, _potential),
                    E_interferent=_list(t, "interferent_reading", where, _potential),
                )
            elif kind == "fixed_interference":
                item.update(
                    a_interferent=_activity(t.get("interferent_activity"), f"{where}.interferent_activity"),
                    a_primary=_list(t, "primary_activity", where, _activity),
                    E=_list(t, "reading", where, _potential),
                )
            else:
                item.update(
                    a_reference=_activity(t.get("reference_activity"), f"{where}.reference_activity"),
                    delta_a_primary=_activity(t.get("primary_step"), f"{where}.primary_step"),
                    delta_E=_potential(t.get("primary_change"), f"{where}.primary_change"),
                    a_interferent_added=_list(t, "interferent_added", where, _activity),
                    delta_E_interferent=_list(t, "interferent_change", where, _potential),
                )
            out.append(item)
    if not out:
        raise InputError("no selectivity series in the file", field=name, value=None)
    return out


def save_calibration(cal: Any, path: str | Path) -> None:
    """Write a calibration as JSON (whole or not at all)."""
    from ...formatting import to_json
    from ...io.files import write_text

    write_text(path, to_json(cal.to_dict()) + "\n")


def load_calibration(path: str | Path) -> Any:
    """Read a calibration saved by :func:`save_calibration`."""
    from .calibration import ISECalibration

    p = Path(path)
    try:
        d = json.loads(p.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError("file not found", field="calibration", value=str(p)) from None
    except (json.JSONDecodeError, UnicodeDecodeError) as exc:
        raise InputError(f"not a JSON file ({exc})", field="calibration", value=str(p)) from None
    return ISECalibration.from_dict(d)


def duration(text: Any, field: str = "elapsed") -> float:
    """'90 min' → 5400 (s)."""
    v = _duration(text, field)
    if v <= 0:
        raise InputError("must be positive", field=field, value=text)
    return v
