"""HTML records and plot files: escaping, self-containment, whole-or-nothing writes."""

from __future__ import annotations

import pytest

from activity.errors import InputError
from activity.workflows.plotting import pyplot, save_figure
from activity.workflows.record import Record


def test_user_text_is_escaped():
    rec = Record("<script>alert(1)</script>", subtitle="a & b")
    rec.table(["name"], [["<b>x</b>"]])
    rec.notes(["<img src=x>"])
    html = rec.to_html(generated="t")
    assert "<script>" not in html and "&lt;script&gt;" in html
    assert "<img" not in html and "&lt;b&gt;x&lt;/b&gt;" in html
    assert "a &amp; b" in html


def test_verdict_words_and_numbers():
    rec = Record("r")
    rec.verdicts([("slope", True, "98 %"), ("drift", False, "2 mV/h"), ("LOD", None, "too few")])
    rec.table(["q", "v"], [["slope", 0.0291234567]], digits=4)
    html = rec.to_html(generated="t")
    assert html.count("verdict-pass") == 2  # the style rule and one cell
    assert ">FAIL<" in html and ">not judged<" in html
    assert '<td class="num">0.02912</td>' in html


def test_figure_is_inline_svg_and_files_written_by_suffix(tmp_path):
    plt = pyplot()
    fig, ax = plt.subplots()
    ax.plot([0, 1], [0, 1])
    rec = Record("r")
    rec.figure(fig, caption="line")
    html = rec.to_html(generated="t")
    assert "<svg" in html and "<?xml" not in html and 'src="http' not in html
    fig, ax = plt.subplots()
    ax.plot([0, 1], [1, 0])
    out = save_figure(fig, tmp_path / "p.png")
    assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    fig, _ = plt.subplots()
    with pytest.raises(InputError, match="plot"):
        save_figure(fig, tmp_path / "p.jpg")
    assert not (tmp_path / "p.jpg").exists()
