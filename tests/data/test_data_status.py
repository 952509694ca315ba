"""Every entry of the four data files carries a source and a status from a closed vocabulary.

Files: models/equilibria.toml, pitzer.toml, standard_potentials.toml, ph_buffers.toml.
A status (the ``note`` of equilibria, Pitzer and standard-potential entries; the ``status``
of pH-buffer rows and tables) must begin with one of the words of ``VOCABULARY``:

* ``read``: seen in the primary publication or its abstract;
* ``read (secondary…)``: seen in a compilation or copy quoting the primary;
* ``computed``: computed from read (or independently checked) terms;
* ``common practice``: a fact of the trade without a single source;
* ``definition``: true by convention (the hydrogen scale);
* ``from memory``: recalled, not read (``corroborated`` may follow where a coarser read
  value agrees).

The counts per file and status are printed in the README ("Data and sources") and pinned in
``test_readme_counts_match_the_files``. The last tests check that the pH (Harned cell) path
and the electrode path read one Bates & Bower (1954) E°(AgCl/Ag) table.
"""

from __future__ import annotations

import collections
import re
from collections.abc import Iterator, Mapping
from pathlib import Path
from typing import Any

import numpy as np
import pytest

from activity import data
from activity.nernst.half_reaction import standard_couple
from activity.workflows.ph.harned import silver_chloride_e0, silver_chloride_e0_table

VOCABULARY = ("read (secondary", "read", "computed", "common practice", "definition", "from memory")
_WORDS = "|".join(re.escape(w) for w in VOCABULARY[1:])
_STATUS = re.compile(rf"^(?:(read \(secondary)[^)]*\)|({_WORDS}))(?=$|[ ;:,(])")
FILES = ("equilibria", "pitzer", "standard_potentials", "ph_buffers")
README = Path(__file__).resolve().parents[2] / "README.md"


def status_word(text: Any) -> str | None:
    """The vocabulary word a status begins with, or None (missing, empty or unknown)."""
    if not isinstance(text, str):
        return None
    m = _STATUS.match(text.strip())
    if m is None:
        return None
    return "read (secondary)" if m.group(1) else m.group(2)


def entries(name: str, doc: Mapping[str, Any]) -> Iterator[tuple[str, Any, Any]]:
    """(where, source, status) of every entry of one data file; pH rows one per value."""
    if name == "equilibria":
        w = doc["water_ionisation"]
        yield "water_ionisation", w.get("source"), w.get("note")
        for sec in ("species", "gas"):
            for key, e in doc[sec].items():
                yield f"{sec}.{key}", e.get("source"), e.get("note")
    elif name == "pitzer":
        for sec in ("salt", "mixing", "neutral"):
            for key, e in doc[sec].items():
                yield f"{sec}.{key}", e.get("source"), e.get("note")
    elif name == "standard_potentials":
        for key, e in doc["couples"].items():
            yield f"couples.{key}", e.get("source"), e.get("note")
            if "E0_table" in e:
                t = e["E0_table"]
                yield f"couples.{key}.E0_table", t.get("source"), t.get("status")
    elif name == "ph_buffers":
        for key, b in doc["buffers"].items():
            st = b.get("status")
            values = b.get("pH", ())
            per_value = list(st) if isinstance(st, (list, tuple)) else [st] * len(values)
            if len(per_value) != len(values):
                yield f"buffers.{key}.status", b.get("source"), None
            for t, s in zip(b.get("temperature", ()), per_value):
                yield f"buffers.{key}[{t}]", b.get("source"), s
            for eq, e in b.get("equations", {}).items():
                yield f"buffers.{key}.equations.{eq}", e.get("source"), e.get("status")
        j = doc["junction_conductivities"]
        yield "junction_conductivities", j.get("source"), j.get("status")
    else:  # pragma: no cover - guarded by FILES
        raise KeyError(name)


def problems(name: str, doc: Mapping[str, Any]) -> list[str]:
    """Entries without a source (with a year) or without a status of the vocabulary."""
    bad = []
    for where, source, status in entries(name, doc):
        if not isinstance(source, str) or not re.search(r"\b(1[89]\d\d|20\d\d)\b", source):
            bad.append(f"{where}: source {source!r}")
        if status_word(status) is None:
            bad.append(f"{where}: status {status!r}")
    return bad


def counts(name: str, doc: Mapping[str, Any]) -> dict[str, int]:
    c = collections.Counter(status_word(s) for _, _, s in entries(name, doc))
    return dict(c)


@pytest.mark.parametrize("name", FILES)
def test_every_entry_has_a_source_and_a_status_of_the_vocabulary(name):
    assert problems(name, data.load(name)) == []


@pytest.mark.parametrize(
    "status, word",
    [
        ("read", "read"),
        ("read (abstract of the primary paper)", "read"),
        ("read (secondary)", "read (secondary)"),
        ("read (secondary; E0 and dE0dT)", "read (secondary)"),
        ("from memory; corroborated by 1.99", "from memory"),
        ("computed from the IAPWS formulation", "computed"),
        ("definition (IUPAC convention)", "definition"),
        ("common practice", "common practice"),
        ("", None),
        ("recalled", None),
        ("readable", None),
        ("memory", None),
        (None, None),
        (0.5, None),
    ],
)
def test_status_vocabulary_is_closed(status, word):
    assert status_word(status) == word


def test_the_check_fails_on_an_entry_without_source_or_status():
    # An entry of our own, built to be wrong: the check must name both faults.
    doc = {"salt": {"Na+ Cl-": {"beta0": 0.1}}, "mixing": {}, "neutral": {}}
    assert problems("pitzer", doc) == ["salt.Na+ Cl-: source None", "salt.Na+ Cl-: status None"]
    doc = {"couples": {"X/Y": {"source": "Somebody 1999, Table 2", "note": "recalled"}}}
    assert problems("standard_potentials", doc) == ["couples.X/Y: status 'recalled'"]
    doc = {
        "buffers": {
            "b": {"temperature": [20.0, 25.0], "pH": [4.0, 4.0], "status": ["read"], "source": "A 2000"}
        },
        "junction_conductivities": {"source": "B 2001", "status": "from memory"},
    }
    assert problems("ph_buffers", doc) == ["buffers.b.status: status None"]  # 2 values, 1 status


def _readme_table() -> dict[str, dict[str, int]]:
    text = README.read_text(encoding="utf-8")
    block = text.split("<!-- status counts -->", 2)[1]
    out: dict[str, dict[str, int]] = {}
    header: list[str] = []
    for line in block.strip().splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if not header:
            header = cells
            continue
        if set(line.replace("|", "").strip()) <= {"-", ":", " "}:
            continue
        row = {h: int(v) for h, v in zip(header[1:], cells[1:]) if v not in ("", "0", "—")}
        out[cells[0].strip("`").removeprefix("models/").removesuffix(".toml")] = row
    return out


def test_readme_counts_match_the_files():
    table = _readme_table()
    assert set(table) == set(FILES)
    for name in FILES:
        got = {k: v for k, v in counts(name, data.load(name)).items()}
        assert table[name] == got, name


# ------------------------------------------------------------------ one E°(AgCl/Ag) table


def test_ph_and_electrode_paths_read_one_silver_chloride_table():
    couple = data.load("standard_potentials")["couples"]["AgCl/Ag"]
    tab = silver_chloride_e0_table()
    assert tab is couple["E0_table"]  # the Harned code reads the electrode file's table
    assert "silver_chloride_E0" not in data.load("ph_buffers")  # no second copy
    i25 = list(tab["temperature"]).index(25.0)
    # E0 of the couple is the table's 25 °C entry, 0.22234 V (Bates & Bower 1954, Table 1, read)
    assert couple["E0"] == tab["E0"][i25] == 0.22234


def test_ph_and_electrode_paths_give_identical_e0_at_25c():
    hr = standard_couple("AgCl/Ag")
    assert silver_chloride_e0(298.15).value == hr.standard_potential(298.15) == hr.E0


def test_electrode_path_follows_the_same_table_at_0_to_50c():
    # The electrode path uses E°(25 °C) and two derivatives fitted to the same table; over
    # 0-50 °C it stays within 0.085 mV of the table values the pH path interpolates (the fit
    # residual is 0.081 mV at 20 °C, stated as 0.08 mV in standard_potentials.toml; Bates &
    # Bower's own standard deviation is 0.01-0.02 mV).
    tab = silver_chloride_e0_table()
    t = np.asarray(tab["temperature"], float)
    t = t[t <= 50.0]
    T = t + 273.15
    hr = standard_couple("AgCl/Ag")
    ph_path = np.asarray(silver_chloride_e0(T).value)
    electrode_path = np.asarray(hr.standard_potential(T))
    np.testing.assert_array_equal(ph_path, np.asarray(tab["E0"][: t.size]))
    assert np.max(np.abs(electrode_path - ph_path)) <= 0.085e-3
