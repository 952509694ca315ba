"""The calibration record prints on one A4 page (checked with headless Chromium when present)."""

import re
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from activity.cli import main
from activity.workflows.ise.demo import run_ise_demo
from activity.workflows.ise.report import _budget_matrix

sys.path.insert(0, str(Path(__file__).parent))
from _examples import calibrate_args  # noqa: E402


def _pdf_pages(html_path, pdf_path):
    browser = shutil.which("chromium") or shutil.which("chromium-browser")
    if browser is None:
        pytest.skip("no headless Chromium on this machine")
    subprocess.run(
        [
            browser,
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            f"--print-to-pdf={pdf_path}",
            "--no-pdf-header-footer",
            html_path.as_uri(),
        ],
        check=True,
        capture_output=True,
        timeout=120,
    )
    return len(re.findall(rb"/Type\s*/Page[^s]", pdf_path.read_bytes()))


def test_record_has_the_print_layout(tmp_path):
    rec = tmp_path / "demo.html"
    assert main(["demo", "--record", str(rec)]) == 0
    html = rec.read_text()
    assert "@page { size: A4" in html and '<div class="ise-top">' in html
    assert html.count("<svg") >= 1 and "† threshold: common practice default" in html


def test_budget_condensed_for_print():
    s = run_ise_demo().samples
    head, full = _budget_matrix(s)
    head_c, short = _budget_matrix(s, condense=0.5)  # every input below 50 % in some sample is folded
    assert len(short) < len(full) and short[-1][0].endswith("each below 50 %")
    # the folded row carries the summed shares: all rows still add up to 100 % per sample
    for col in range(1, len(head_c)):
        total = sum(float(re.search(r"\(([-\d.]+) %\)", r[col]).group(1)) for r in short)
        assert total == pytest.approx(100.0, abs=0.3)  # each share printed to 0.1 %


@pytest.mark.parametrize("extras", ["none", "addition+selectivity", "addition+selectivity+drift"])
def test_record_prints_on_one_a4_page(tmp_path, extras, capsys):
    rec = tmp_path / "r.html"
    if extras == "none":
        args = ["demo", "--record", str(rec)]
    else:
        assert main(["ise-examples", str(tmp_path / "ex")]) == 0
        ex = tmp_path / "ex"
        args = calibrate_args(ex) + ["--record", str(rec)]
        if extras.endswith("drift"):
            args += ["--bracket", str(ex / "standards.csv"), "--elapsed", "90 min"]
    assert main(args) == 0
    capsys.readouterr()
    assert _pdf_pages(rec, tmp_path / "r.pdf") == 1
