"""Every numeric entry of models/*.toml names its source and its status.

Status words are those of ../shared/reference-data/published-values.toml: "read",
"read (secondary …)", "computed from read equation", "from memory". A source names an
author (or issuing body) and a year, and a table, equation, chapter or appendix.
"""

import re

import pytest

from activity import data
from activity.coefficients.pitzer._params import load_parameters

YEAR = re.compile(r"\b(1[89]\d\d|20\d\d)\b")
WHERE = re.compile(r"(?i)\b(table|tables|eq\.|equation|chapter|ch\.|appendix|app\.|p\.|§|definition)")
STATUS = re.compile(r"^(read|from memory)\b")


def cited(source: str) -> bool:
    return bool(YEAR.search(source)) and bool(WHERE.search(source))


def test_pitzer_entries():
    for key, e in load_parameters("pitzer").items():
        assert cited(e.source), key
        assert STATUS.match(e.note), key


def test_standard_potentials():
    for name, c in data.load("standard_potentials")["couples"].items():
        if name == "H+/H2":
            assert "definition" in c["source"]
            continue
        assert cited(c["source"]), name
        assert STATUS.match(c["note"]), name


def test_reference_electrode_tables():
    doc = data.load("reference_electrodes")
    assert cited(doc["kcl_saturation"]["source"]) and STATUS.match(doc["kcl_saturation"]["note"])
    for v in doc["common_practice"]["values"]:
        assert YEAR.search(v["source"]) or "PV" in v["source"], v
        assert STATUS.match(v["status"]), v
        assert isinstance(v["junction"], bool), v


@pytest.mark.parametrize(
    "name, section",
    [
        ("species", "ion_size"),
        ("species", "truesdell_jones"),
        ("species", "partial_molar_volume"),
        ("ionic_conductivities", None),
        ("elements", "meta"),
    ],
)
def test_per_ion_tables(name, section):
    doc = data.load(name)
    sec = doc[section] if section else doc
    assert cited(sec["source"]), (name, section)
    assert STATUS.match(sec["note"]), (name, section)
