"""Chunked reading of tables and the pieces that write a batch chunk by chunk."""

import csv
import io

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from activity.errors import InputError
from activity.formatting import table, to_json
from activity.io.streaming import NoteMerger, SpooledTable, json_document
from activity.io.tables import _columns, _parse_rows_slowly, concat_tables, iter_table, read_table

number = st.one_of(
    st.floats(0, 1e3, allow_nan=False).map(repr),
    st.integers(0, 10**6).map(str),
    st.sampled_from(["1e-3", " 2.5 ", "+.5", "0", "7."]),
)
label = st.text(alphabet="ab ,\"'x1é", max_size=6)


def _write(path, rows, with_label, newline="\n"):
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator=newline)
    w.writerow((["label"] if with_label else []) + ["K+ [mmol/kg]", "Cl- [mmol/kg]"])
    for r in rows:
        w.writerow(r if r is not None else [])  # None: a blank line
    path.write_bytes(buf.getvalue().encode("utf-8"))


@settings(deadline=None, max_examples=40)
@given(
    rows=st.lists(st.one_of(st.none(), st.tuples(label, number, number)), min_size=1, max_size=30),
    with_label=st.booleans(),
    chunk=st.integers(1, 12),
    newline=st.sampled_from(["\n", "\r\n"]),
)
def test_chunks_join_to_the_row_by_row_parse(tmp_path_factory, rows, with_label, chunk, newline):
    """Law: for any chunk size the chunks, joined, are the row-by-row parse of the whole file
    (labels, row numbers and values), or both raise the same error."""
    path = tmp_path_factory.mktemp("t") / "t.csv"
    body = [None if r is None else (list(r) if with_label else list(r[1:])) for r in rows]
    _write(path, body, with_label, newline)
    with path.open(newline="", encoding="utf-8") as fh:
        all_rows = [r for r in csv.reader(fh) if any(c.strip() for c in r)]
    try:
        if len(all_rows) < 2:
            raise InputError("needs a header row and at least one data row", field="table", value=str(path))
        cols = _columns(path, all_rows[0])
        labels, values = _parse_rows_slowly(path, cols, all_rows[1:], 2)
        expected = (tuple(labels), values)
    except InputError as exc:
        expected = str(exc)
    try:
        chunks = list(iter_table(path, chunk_rows=chunk))
        got = concat_tables(chunks)
        got = (got.labels, {"K+": got.species["K+"][1], "Cl-": got.species["Cl-"][1]})
        assert all(len(c.labels) <= chunk for c in chunks)
    except InputError as exc:
        got = str(exc)
    if isinstance(expected, str):
        assert got == expected
    else:
        assert got[0] == expected[0]
        for k in ("K+", "Cl-"):
            np.testing.assert_array_equal(got[1][k], expected[1][k])  # the same floats, bit for bit


def test_read_table_is_the_chunks_joined(tmp_path):
    path = tmp_path / "t.csv"
    path.write_text("label,K+ [mmol/kg],Cl- [mmol/kg]\n" + "".join(f"r{k},{k},{k}\n" for k in range(25)), "utf-8")
    whole = read_table(path)
    joined = concat_tables(list(iter_table(path, chunk_rows=4)))
    assert whole.labels == joined.labels == tuple(f"r{k}" for k in range(25))
    np.testing.assert_array_equal(whole.species["K+"][1], joined.species["K+"][1])


@pytest.mark.parametrize("bad", [0, -3, 2.5, True, "10"])
def test_chunk_rows_must_be_a_positive_whole_number(tmp_path, bad):
    path = tmp_path / "t.csv"
    path.write_text("K+ [mmol/kg]\n1\n", "utf-8")
    with pytest.raises(InputError, match="chunk_rows"):
        list(iter_table(path, chunk_rows=bad))


cell = st.one_of(
    st.floats(-1e9, 1e9, allow_nan=False),
    st.floats(allow_nan=True, allow_infinity=True),
    st.text(alphabet="ab c-.,1", max_size=30),
    st.none(),
    st.booleans(),
)


@settings(deadline=None, max_examples=50)
@given(
    rows=st.lists(st.lists(cell, min_size=3, max_size=3), min_size=1, max_size=15),
    cut=st.integers(0, 15),
    width=st.sampled_from([100, 30, None]),
)
def test_spooled_table_is_the_table(rows, cut, width):
    """Law: rows given in two chunks give the text of formatting.table on all rows at once
    (widths, alignment and wrapping included)."""
    headers = ["name", "value", "a longer header"]
    t = SpooledTable(headers, title="a title that may wrap when the width is small", width=width, digits=4)
    t.add(rows[:cut])
    t.add(rows[cut:])
    expected = table(headers, rows, title="a title that may wrap when the width is small", width=width, digits=4)
    assert "\n".join(t.lines()) == expected


@settings(deadline=None, max_examples=30)
@given(
    head=st.dictionaries(st.text(max_size=4), st.one_of(st.text(max_size=4), st.floats(), st.lists(st.integers()))),
    rows=st.lists(st.dictionaries(st.text(max_size=3), st.one_of(st.floats(), st.none(), st.text(max_size=3)))),
    tail=st.lists(st.one_of(st.text(max_size=5), st.floats()), max_size=3),
)
def test_json_document_is_to_json(head, rows, tail):
    head = {k: v for k, v in head.items() if k not in ("rows", "notes")}
    buf = io.StringIO()
    json_document(buf, head, "rows", iter(rows), lambda: [("notes", tail)])
    assert buf.getvalue() == to_json({**head, "rows": rows, "notes": tail})


def test_note_merger_counts_rows_and_keeps_the_largest():
    # two chunks of a batch of 25 rows, as activity.coefficients.base words its note
    a = "davies: ionic strength above 0.5 mol/kg (up to 0.8123) in 2 of 10 row(s): outside the model's validity"
    b = "davies: ionic strength above 0.5 mol/kg (up to 1.204) in 3 of 15 row(s): outside the model's validity"
    m = NoteMerger()
    m.add([a, "a note without numbers"])
    m.add([b, "a note without numbers", "temperature 37 °C applied to every row of 15"])
    assert m.result(25) == [
        "davies: ionic strength above 0.5 mol/kg (up to 1.204) in 5 of 25 row(s): outside the model's validity",
        "a note without numbers",
        "temperature 37 °C applied to every row of 25",
    ]


def test_note_merger_equals_the_whole_batch_note():
    """The merged note of chunks is the note the model writes for the whole batch."""
    from activity import Solution, get_model

    rng = np.random.default_rng(2)
    m = np.where(rng.random(500) < 0.05, rng.uniform(0.6, 2.0, 500), rng.uniform(0.001, 0.1, 500))
    model = get_model("davies")
    whole = model.activity_coefficients(Solution({"Na+": m, "Cl-": m}), warn=False).notes
    merger = NoteMerger()
    for start in range(0, 500, 64):
        part = m[start : start + 64]
        merger.add(model.activity_coefficients(Solution({"Na+": part, "Cl-": part}), warn=False).notes)
    assert merger.result(500) == list(whole) and "of 500 row(s)" in whole[0]


def test_temperature_column_in_kelvin(tmp_path):
    """A 'temperature [K]' column was refused ('0 K is below the range'): it is read as is."""
    from activity.io.tables import solution_from_table

    k = tmp_path / "k.csv"
    k.write_text("K+ [mol/kg],Cl- [mol/kg],temperature [K]\n0.1,0.1,310.15\n0.1,0.1,298.15\n", "utf-8")
    c = tmp_path / "c.csv"
    c.write_text("K+ [mol/kg],Cl- [mol/kg],temperature [°C]\n0.1,0.1,37\n0.1,0.1,25\n", "utf-8")
    T_k = solution_from_table(read_table(k)).T
    T_c = solution_from_table(read_table(c)).T
    np.testing.assert_allclose(T_k, [310.15, 298.15], rtol=0, atol=0)
    np.testing.assert_allclose(T_k, T_c, rtol=1e-13)  # 1 °C is 1 K (the °C column goes through its offset)


def test_first_quote_in_a_late_chunk(tmp_path):
    """Plain lines are split at commas until the first quote; from there the csv module reads
    (a quoted label with a comma and a line break, in the 8th chunk of 7 rows)."""
    path = tmp_path / "q.csv"
    rows = [f"p{k},{k},{k}" for k in range(50)] + ['"q, with\nbreak",1,2', "after,3,4", ",,", "last,5,6"]
    path.write_text("label,K+ [mmol/kg],Cl- [mmol/kg]\r\n" + "\r\n".join(rows) + "\r\n", encoding="utf-8")
    t = concat_tables(list(iter_table(path, chunk_rows=7)))
    assert t.labels[-4:] == ("p49", "q, with\nbreak", "after", "last")
    np.testing.assert_array_equal(t.species["Cl-"][1][-3:], [2.0, 4.0, 6.0])
    assert len(t.labels) == 53  # the blank row ',,' is skipped
