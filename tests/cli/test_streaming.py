"""Tables streamed in chunks: the same output as the whole table, whole-or-nothing files,
progress bars only on a terminal, and ``--quiet`` on every command."""

import json
import os
import subprocess
import sys

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from activity.cli.main import build_parser, main
from activity.io import tables

ISE = ["invert", "--ise", "Ca2+", "--e0", "52.1 mV", "--against", "silver-chloride:3 mol/L", "--counter-ion", "Cl-"]


def _solution_table(path, n=230, seed=3, basis="mol/kg"):
    """A batch of our own (invented compositions): labels with commas and quotes, a blank line,
    temperatures per row, some rows above the Davies and Debye–Hückel limits (so that notes
    count rows in some chunks only) and a few rows out of charge balance (a warning)."""
    rng = np.random.default_rng(seed)
    lines = [f"label,Na+ [{basis}],Ca2+ [{basis}],Cl- [{basis}],temperature [°C]"]
    for k in range(n):
        na = rng.uniform(1e-4, 0.05) if k % 37 else rng.uniform(0.4, 1.2)
        ca = rng.uniform(1e-5, 0.01)
        cl = na + 2 * ca if k % 53 else (na + 2 * ca) * 1.3
        label = ["s", f'"a, {k}"', f'"say ""{k}"""', ""][k % 4] + (str(k) if k % 4 == 0 else "")
        lines.append(f"{label},{na!r},{ca!r},{cl!r},{rng.uniform(5, 45):.2f}")
        if k == 100:
            lines.append("")
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _run(argv, capsys, chunk_rows, monkeypatch):
    from activity.cli import batch

    monkeypatch.setattr(tables, "CHUNK_ROWS", chunk_rows)
    monkeypatch.setattr(batch, "_WRITE_ROWS", 5 if chunk_rows < 1000 else 1 << 14)  # pieces within a chunk
    code = main(argv)
    out, err = capsys.readouterr()
    return code, out, err


@pytest.mark.parametrize("form", [[], ["--csv"], ["--json"]])
@pytest.mark.parametrize("model", ["davies", "all"])
def test_solution_table_chunked_equals_whole(tmp_path, capsys, monkeypatch, form, model):
    path = _solution_table(tmp_path / "batch.csv")
    argv = ["solution", "--table", str(path), "-m", model, *form]
    whole = _run(argv, capsys, 10**6, monkeypatch)
    chunked = _run(argv, capsys, 17, monkeypatch)  # 230 rows: 14 chunks, the last one short
    assert whole[0] == chunked[0] == 0
    assert chunked[1] == whole[1]
    assert chunked[2] == whole[2]  # the merged warnings (charge balance) read as for the whole table
    assert "in 5 of 230 row(s)" in whole[2]  # rows 0, 53, 106, 159, 212 are out of balance
    # written to a file: the same text, less the blank line print() adds after a CSV
    out = tmp_path / "out.txt"
    assert _run(argv + ["-o", str(out)], capsys, 17, monkeypatch)[0] == 0
    text = out.read_text(encoding="utf-8")
    assert text == (whole[1][:-1] if form == ["--csv"] else whole[1])


@pytest.mark.parametrize("form", ["table", "csv", "json"])
@pytest.mark.parametrize("to_file", [False, True])
def test_solution_table_equals_the_whole_table_renderer(tmp_path, capsys, monkeypatch, form, to_file):
    """The chunked command against the renderer that takes the whole table at once
    (``render.table_report``, the code path before streaming), per-litre amounts included."""
    from activity.cli.common import emit
    from activity.cli.render import table_report
    from activity.errors import call_with_notes
    from activity.io.tables import read_table, solution_from_table

    path = _solution_table(tmp_path / "perL.csv", n=120, seed=5, basis="mol/L")
    flag = {"table": [], "csv": ["--csv"], "json": ["--json"]}[form]
    new = ["-o", str(tmp_path / "new.txt")] if to_file else []
    code, out, _ = _run(["solution", "--table", str(path), "-m", "all", *flag, *new], capsys, 11, monkeypatch)
    assert code == 0
    tbl = read_table(path)
    sol, _ = call_with_notes(solution_from_table, tbl)
    old = ["-o", str(tmp_path / "old.txt")] if to_file else []
    args = build_parser().parse_args(["solution", "--table", str(path), *flag, *old])
    emit(args, table_report(sol, tbl.labels, "all", form=form))
    if to_file:
        assert (tmp_path / "new.txt").read_bytes() == (tmp_path / "old.txt").read_bytes()
    else:
        assert out == capsys.readouterr().out


def test_conditions_given_for_every_row_are_said_once(tmp_path, capsys, monkeypatch):
    """-t and -p with a table apply to every row and say so once, with the whole count."""
    path = tmp_path / "noT.csv"
    path.write_text("K+ [mmol/kg],Cl- [mmol/kg]\n" + "".join(f"{k},{k}\n" for k in range(1, 40)), encoding="utf-8")
    argv = ["solution", "--table", str(path), "-t", "37 °C", "-p", "2 bar", "--csv"]
    whole = _run(argv, capsys, 10**6, monkeypatch)
    chunked = _run(argv, capsys, 6, monkeypatch)
    assert whole == chunked
    assert "warning: temperature 37 °C applied to every row of 39" in chunked[2]
    assert chunked[2].count("applied to every row") == 2  # temperature and pressure, once each


@pytest.mark.parametrize("form", [[], ["--csv"], ["--json"]])
def test_invert_table_chunked_equals_whole(tmp_path, capsys, monkeypatch, form):
    rng = np.random.default_rng(7)
    lines = ["label,reading [mV],K+ [mol/L],Cl- [mol/L],temperature [°C]"]
    for k in range(150):
        k_ = rng.uniform(0.01, 0.1) if k % 29 else rng.uniform(0.6, 0.9)  # some rows beyond Davies
        lines.append(f"r{k},{rng.uniform(-290, -230):.2f},{k_!r},{k_!r},{rng.uniform(15, 35):.1f}")
    path = tmp_path / "readings.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    argv = ISE + ["--table", str(path), *form]
    whole = _run(argv, capsys, 10**6, monkeypatch)
    chunked = _run(argv, capsys, 13, monkeypatch)
    assert whole[0] == chunked[0] == 0
    assert chunked[1] == whole[1] and chunked[2] == whole[2]
    if form == ["--json"]:
        doc = json.loads(chunked[1])
        assert len(doc["rows"]) == 150 and doc["species"] == "Ca^2+"
        assert any("of 150 row(s)" in n for n in doc["notes"])


@pytest.mark.parametrize("form", [[], ["--csv"], ["--json"]])
@pytest.mark.parametrize("to_file", [False, True])
def test_invert_table_equals_the_whole_table_renderer(tmp_path, capsys, monkeypatch, form, to_file):
    """Chunked, against the renderer that takes the whole batch (the code path before
    streaming), on standard output and written to a file."""
    from activity.cli.common import emit
    from activity.cli.electrode import _render_table
    from activity.io.tables import read_table, solution_from_table
    from activity.nernst import Cell, IonSelectiveElectrode, molality_from_emf
    from activity.nernst.electrodes import silver_chloride_electrode

    path = tmp_path / "readings.csv"
    rows = [f"r{k},{-290 + 0.4 * k:.1f},0.1,0.1" for k in range(60)]
    path.write_text("label,reading [mV],K+ [mol/L],Cl- [mol/L]\n" + "\n".join(rows) + "\n", encoding="utf-8")
    out = ["-o", str(tmp_path / "new.txt")] if to_file else []
    code, text, _ = _run(ISE + ["--table", str(path), *form, *out], capsys, 7, monkeypatch)
    assert code == 0
    tbl = read_table(path)
    matrix = solution_from_table(tbl)
    cell = Cell(left=silver_chloride_electrode(3.0, basis="mol/L"), right=IonSelectiveElectrode("Ca2+", 0.0521))
    reading = tbl.extra["reading"][1] * 1e-3
    res = molality_from_emf(cell, reading, matrix, "davies", species="Ca^2+", counter_ion="Cl-")
    ref_out = ["-o", str(tmp_path / "old.txt")] if to_file else []
    args = build_parser().parse_args(["invert", "--table", str(path), *form, *ref_out])
    emit(args, _render_table(args, tbl.labels, reading, res, matrix.T))
    if to_file:
        assert (tmp_path / "new.txt").read_bytes() == (tmp_path / "old.txt").read_bytes()
    else:
        assert text == capsys.readouterr().out


@pytest.mark.parametrize("existing", [False, True])
def test_bad_cell_in_a_late_chunk_leaves_no_output(tmp_path, capsys, monkeypatch, existing):
    path = _solution_table(tmp_path / "late.csv", n=300)
    lines = path.read_text(encoding="utf-8").splitlines()
    cells = lines[280].split(",")  # data row 280 of the file is row 281 (the header is row 1) ...
    cells[-2] = "0.0x1"
    lines[280] = ",".join(cells)
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    out = tmp_path / "result.csv"
    if existing:
        out.write_text("the previous result\n", encoding="utf-8")
    code, stdout, err = _run(["solution", "--table", str(path), "--csv", "-o", str(out)], capsys, 20, monkeypatch)
    assert code == 2
    # ... less the blank line after row 101, which is skipped and not counted: row 280
    assert "late.csv: row 280, column 'Cl- [mol/kg]' = '0.0x1': not a number" in err
    assert len(err.strip().splitlines()) == 1 and stdout == ""
    assert sorted(os.listdir(tmp_path)) == sorted(["late.csv"] + (["result.csv"] if existing else []))
    if existing:
        assert out.read_text(encoding="utf-8") == "the previous result\n"
    # to standard output: nothing printed either (the output is spooled until the end)
    code, stdout, err = _run(["solution", "--table", str(path), "--csv"], capsys, 20, monkeypatch)
    assert code == 2 and stdout == ""


def test_late_unicode_error_leaves_no_output(tmp_path, capsys, monkeypatch):
    path = tmp_path / "late.csv"
    body = "".join(f"{k},0.01,0.01\n" for k in range(200)).encode()
    path.write_bytes(b"label,K+ [mol/kg],Cl- [mol/kg]\n" + body + b"\xff\xfe,1,1\n")
    out = tmp_path / "r.json"
    code, _, err = _run(["solution", "--table", str(path), "--json", "-o", str(out)], capsys, 50, monkeypatch)
    assert code == 2 and "not a UTF-8 text file" in err
    assert sorted(os.listdir(tmp_path)) == ["late.csv"]


# --------------------------------------------------------------------------- progress and --quiet
def _big(tmp_path, n=3000):
    path = tmp_path / "big.csv"
    path.write_text("K+ [mmol/kg],Cl- [mmol/kg]\n" + "1,1\n" * n, encoding="utf-8")
    return path


def test_nothing_on_stderr_when_not_a_terminal(tmp_path):
    path = _big(tmp_path)
    for extra in ([], ["--quiet"]):
        proc = subprocess.run(
            [sys.executable, "-m", "activity.cli", *extra, "solution", "--table", str(path), "--csv"],
            capture_output=True,
            text=True,
            timeout=120,
        )
        assert proc.returncode == 0 and proc.stderr == ""
        assert proc.stdout.count("\n") == 3000 + 2  # header, rows, and print()'s blank line


def _stderr_on_a_terminal(argv):
    """Run the command with standard error on a pseudo-terminal; return what it showed there."""
    import fcntl
    import pty
    import struct
    import termios

    master, slave = pty.openpty()
    fcntl.ioctl(slave, termios.TIOCSWINSZ, struct.pack("HHHH", 24, 100, 0, 0))  # a 100-column terminal
    code = "import activity.io.tables as t; t.CHUNK_ROWS = 500; from activity.cli.main import main; main()"
    proc = subprocess.Popen(
        [sys.executable, "-c", code, *argv], stdout=subprocess.DEVNULL, stderr=slave, stdin=subprocess.DEVNULL
    )
    os.close(slave)
    chunks = []
    while True:
        try:
            data = os.read(master, 4096)
        except OSError:  # the terminal closed (Linux raises EIO)
            break
        if not data:
            break
        chunks.append(data)
    proc.wait(timeout=120)
    os.close(master)
    return proc.returncode, b"".join(chunks).decode("utf-8", "replace")


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="pseudo-terminals as on Linux")
def test_progress_bar_on_a_terminal_and_quiet_silences_it(tmp_path):
    path = _big(tmp_path)
    code, shown = _stderr_on_a_terminal(["solution", "--table", str(path), "--csv"])
    assert code == 0 and "big.csv" in shown and "row" in shown  # tqdm's bar: name, count, unit
    code, shown = _stderr_on_a_terminal(["--quiet", "solution", "--table", str(path), "--csv"])
    assert code == 0 and shown == ""
    code, shown = _stderr_on_a_terminal(["solution", "--table", str(path), "--csv", "--quiet"])
    assert code == 0 and shown == ""


def test_quiet_is_accepted_by_every_command():
    parser = build_parser()
    sub = next(a for a in parser._actions if a.dest == "command")
    assert len(sub.choices) >= 10
    for name, command in sub.choices.items():
        assert "--quiet" in command._option_string_actions and "-q" in command._option_string_actions, name
    assert parser.parse_args(["--quiet", "models"]).quiet is True
    assert parser.parse_args(["models", "-q"]).quiet is True
    assert parser.parse_args(["models"]).quiet is False


@pytest.mark.parametrize("where", ["before", "after"])
def test_quiet_runs_in_every_command_group(where, capsys):
    """One real command of each group, with --quiet before or after the command."""
    commands = [
        ["solution", "Na+=0.1 mol/kg", "Cl-=0.1 mol/kg"],
        ["ph-buffers", "-t", "25 °C"],
        ["speciate", "Ca2+=1 mmol/kg", "Cl-=2 mmol/kg"],
        ["reference", "silver-chloride"],
        ["models"],
    ]
    for argv in commands:
        full = ["--quiet", *argv] if where == "before" else [*argv, "--quiet"]
        assert main(full) == 0, argv
        capsys.readouterr()


@settings(deadline=None, max_examples=50)
@given(st.lists(st.text(alphabet='ab ,"\n\r\t\u2028é', min_size=1, max_size=6), min_size=1, max_size=8))
def test_label_cells_are_quoted_as_csv_writer_quotes_them(labels):
    import csv
    import io

    from activity.cli.batch import _csv_cells

    buf = io.StringIO()
    csv.writer(buf, lineterminator="\n").writerows([[lab, "x"] for lab in labels])
    assert "".join(f"{c},x\n" for c in _csv_cells(labels)) == buf.getvalue()


def test_command_table_matches_the_groups():
    """main.COMMANDS (which group to import for a command) is what the groups declare."""
    import argparse
    import importlib

    entry = importlib.import_module("activity.cli.main")
    declared = {}
    for group in entry.GROUPS:
        sub = argparse.ArgumentParser().add_subparsers()
        importlib.import_module(f"activity.cli.{group}").register(sub)
        declared.update(dict.fromkeys(sub.choices, group))
    assert declared == entry.COMMANDS


def test_one_command_imports_only_its_group():
    """What start-up leaves out: the other command groups, and the scan of installed packages for
    model entry points (importlib.metadata) when the model named is a registered one."""
    code = (
        "import sys; from activity.cli.main import main; main(['solution', 'Na+=0.1 mol/kg', 'Cl-=0.1 mol/kg']); "
        "print(sorted(m for m in sys.modules if m.startswith(('activity.cli.', 'importlib.metadata'))), "
        "file=sys.stderr)"
    )
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    loaded = set(json.loads(proc.stderr.strip().splitlines()[-1].replace("'", '"')))
    assert "activity.cli.solution" in loaded
    assert not {"activity.cli.electrode", "activity.cli.ise", "activity.cli.ph", "activity.cli.speciate"} & loaded
    assert "importlib.metadata" not in loaded


def test_entry_points_still_found_for_other_names(monkeypatch):
    """get_model scans entry points only for a name not registered, so a plug-in still loads."""
    import activity.coefficients as reg
    from activity.coefficients.davies import DaviesModel

    class EP:  # the part of importlib.metadata.EntryPoint that the registry uses
        name = "plugin-davies"

        def load(self):
            return DaviesModel

    monkeypatch.setattr(reg, "_entry_points_loaded", False)
    monkeypatch.setattr(reg, "_REGISTRY", dict(reg._BUILTIN))
    monkeypatch.setattr("importlib.metadata.entry_points", lambda group: [EP()])
    assert reg.get_model("davies").name == "davies" and reg._entry_points_loaded is False
    assert isinstance(reg.get_model("plugin-davies"), DaviesModel) and reg._entry_points_loaded is True


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="pseudo-terminals as on Linux")
def test_monte_carlo_bar_on_a_terminal_and_quiet_silences_it():
    argv = ISE + ["--reading", "-255.3 mV", "K+=0.1 mol/L", "Cl-=0.1 mol/L", "--u-reading", "0.3 mV"]
    argv += ["--method", "monte-carlo", "--trials", "20000", "--seed", "1"]
    code, shown = _stderr_on_a_terminal(argv)
    assert code == 0 and "Monte Carlo" in shown and "trial" in shown
    code, shown = _stderr_on_a_terminal(["-q", *argv])
    assert code == 0 and shown == ""
