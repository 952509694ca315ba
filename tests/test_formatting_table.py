"""Plain-text tables: alignment by column and how a too-wide table is narrowed."""

from __future__ import annotations

from activity.formatting import table


def test_a_column_of_numbers_is_right_aligned_and_a_mixed_one_left_aligned():
    text = table(["q", "value"], [["a", 1.5], ["b", "2.5 ± 0.1"], ["c", 10.25]])
    rows = text.splitlines()[2:]
    # "2.5 ± 0.1" makes the column text: every cell starts at the column's left edge
    assert [r.index(r.split()[1]) for r in rows] == [3, 3, 3]
    text = table(["q", "value"], [["a", 1.5], ["b", "—"], ["c", 10.25]])
    rows = text.splitlines()[2:]
    assert [len(r) for r in rows] == [len(rows[0])] * 3  # numbers (and a blank) flush right


def test_a_wide_table_shares_the_narrowing_between_text_columns():
    long_a = "word " * 12  # 60 characters
    long_b = "text " * 6  # 30 characters
    text = table(["k", "a", "b"], [["x", long_a.strip(), long_b.strip()]], width=60)
    lines = text.splitlines()
    assert max(len(line) for line in lines) <= 60
    widths = [len(c) for c in lines[1].split("  ")]
    # both text columns narrowed to about the same width, not one squeezed to its floor
    assert abs(widths[1] - widths[2]) <= 1 and widths[1] > 12
