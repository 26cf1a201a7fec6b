"""The `cellwright` command as a user runs it: exit codes, one-line reasons, files.

A few checks run the real process (``python -m udfs.cli``); the many error
cases call ``main()`` in-process to keep the suite fast (same code path).
"""

from __future__ import annotations

import csv
import hashlib
import os
import subprocess
import sys

import openpyxl
import pytest
from bad_input_catalogue import build_book
from chart_parts import sheet_charts

from udfs.cli import main
from udfs.core.caution import CAUTION
from udfs.engine.functions import register
from udfs.sheet.error_values import SheetError


def _halve(x):
    return x / 2 if isinstance(x, (int, float)) else SheetError("#VALUE!", "x: a number")


register({"CW_TEST_HALVE": _halve})


def run(*args, cwd=None):
    """The real command in a subprocess: (exit code, stdout, stderr)."""
    env = dict(os.environ, PYTHONPATH=os.getcwd())
    p = subprocess.run(
        [sys.executable, "-m", "udfs.cli", *map(str, args)],
        capture_output=True,
        text=True,
        cwd=cwd,
        env=env,
        timeout=120,
    )
    return p.returncode, p.stdout, p.stderr


def call(capsys, *args):
    """main() in-process: (exit code, stdout, stderr)."""
    try:
        code = main([str(a) for a in args])
    except SystemExit as exc:  # argparse usage errors
        code = int(exc.code or 0)
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture
def book(tmp_path):
    # the same small workbook the bad-input catalogue runs its command lines on
    return build_book(tmp_path)


def _digest(path):
    return hashlib.sha256(path.read_bytes()).hexdigest()


# ------------------------------------------------------------------ real process


def test_help_of_every_command_runs_in_a_process():
    for args in ([], ["calc"], ["template"], ["demo"], ["sweep"], ["functions"]):
        code, out, err = run(*args, "--help")
        assert code == 0, (args, err)
        assert "usage: cellwright" in out and not err


def test_calc_in_a_process_writes_values_and_keeps_the_input(book, tmp_path):
    before = _digest(book)
    out = tmp_path / "out.xlsx"
    code, stdout, stderr = run("calc", book, "-o", out, "--set", "Inputs!B4=50")
    assert code == 0, stderr
    assert "Named outputs:" in stdout
    assert "product = 150" in stdout and "total   = 53" in stdout
    assert "load    = 50  (input, set)" in stdout
    assert CAUTION in stdout
    assert _digest(book) == before
    ws = openpyxl.load_workbook(out, data_only=True)["Calc"]
    assert (ws["A1"].value, ws["A2"].value) == (150, 53)


def test_errors_in_a_process_are_one_line_without_traceback(book, tmp_path):
    out = tmp_path / "out.xlsx"
    out.write_bytes(b"keep me")
    code, _, stderr = run("calc", book, "-o", out)
    assert code == 1
    assert (
        stderr.strip()
        == "cellwright calc: error: out.xlsx already exists; add --force to replace it"
    )
    assert out.read_bytes() == b"keep me"
    code, _, stderr = run("calc", tmp_path / "missing.xlsx", "-o", tmp_path / "x.xlsx")
    assert code == 1 and stderr.count("\n") == 1 and "no such file" in stderr
    code, _, stderr = run("calc", book)
    assert code == 2 and stderr.count("\n") == 1 and "-o/--output" in stderr


def test_sweep_in_a_process_shows_progress_with_eta(book, tmp_path):
    out = tmp_path / "sweep.csv"
    code, stdout, stderr = run(
        "sweep", book, "--vary", "load=10:50:10", "--vary", "Inputs!B5=1,2", "--out", out
    )
    assert code == 0, stderr
    assert "ETA" in stderr and "10/10 100%" in stderr
    assert "Traceback" not in stderr
    rows = list(csv.DictReader(out.open()))
    assert len(rows) == 10
    for r in rows:
        assert float(r["product"]) == float(r["load"]) * float(r["Inputs!B5"])
    assert CAUTION in stdout


# ------------------------------------------------------------------ in-process


def test_force_replaces_and_values_modes(capsys, book, tmp_path):
    out = tmp_path / "out.xlsx"
    assert call(capsys, "calc", book, "-o", out)[0] == 0
    code, _, err = call(capsys, "calc", book, "-o", out, "--values-only")
    assert code == 1 and "already exists" in err
    assert call(capsys, "calc", book, "-o", out, "--values-only", "--force")[0] == 0
    assert openpyxl.load_workbook(out)["Calc"]["A1"].value == 120
    assert call(capsys, "calc", book, "-o", out, "--force")[0] == 0  # the default: a live model
    assert openpyxl.load_workbook(out)["Calc"]["A3"].value.startswith("=CW_MOLAR_MASS")


@pytest.mark.parametrize(
    ("extra", "message"),
    [
        (["--set", "Inputs!B4"], "write CELL=VALUE"),
        (["--set", "Inputs!B4="], "empty value"),
        (["--set", "Nope!B4=1"], "unknown sheet 'Nope'"),
        (["--set", "Calc!A1=1"], "Calc!A1 holds a formula"),
        (["--set", "nosuchname=1"], "neither a cell"),
        (["--set", "Inputs!B4=nan"], "cannot hold NaN"),
        (["--set", "B4=1"], "say which sheet"),
    ],
)
def test_bad_set_is_refused_with_one_line(capsys, book, tmp_path, extra, message):
    code, _, err = call(capsys, "calc", book, "-o", tmp_path / "o.xlsx", *extra)
    assert code == 1
    assert err.count("\n") == 1 and message in err
    assert not (tmp_path / "o.xlsx").exists()


def test_set_typed_values_and_quoted_sheets(capsys, tmp_path):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "My sheet"
    ws["A1"] = "LiFePO4"
    ws["A2"] = "=CW_MOLAR_MASS(A1)"
    ws["B1"] = 1.0
    ws["B2"] = '=IF(B1,"yes","no")'
    src = tmp_path / "q.xlsx"
    wb.save(src)
    out = tmp_path / "q-out.xlsx"
    code, _, err = call(
        capsys, "calc", src, "-o", out, "--set", "'My sheet'!A1=H2O", "--set", "'My sheet'!B1=FALSE"
    )
    assert code == 0, err
    ws = openpyxl.load_workbook(out, data_only=True)["My sheet"]
    from udfs.sheet.registry import FUNCTIONS

    assert ws["A2"].value == pytest.approx(FUNCTIONS["CW_MOLAR_MASS"]("H2O"))
    assert ws["B2"].value == "no"


@pytest.mark.parametrize(
    ("make", "message"),
    [
        (lambda p: p.write_bytes(b"plain text, not a workbook"), "not an .xlsx workbook"),
        (lambda p: p.mkdir(), "is a directory"),
    ],
)
def test_bad_inputs(capsys, tmp_path, make, message):
    src = tmp_path / "bad.xlsx"
    make(src)
    code, _, err = call(capsys, "calc", src, "-o", tmp_path / "o.xlsx")
    assert code == 1 and message in err and err.count("\n") == 1


def test_output_problems(capsys, book, tmp_path):
    code, _, err = call(capsys, "calc", book, "-o", book, "--force")
    assert code == 1 and "is the input file" in err
    code, _, err = call(capsys, "calc", book, "-o", tmp_path / "no" / "o.xlsx")
    assert code == 1 and "does not exist" in err
    code, _, err = call(capsys, "calc", book, "-o", tmp_path / "o.csv")
    assert code == 1 and "must end in .xlsx" in err


def test_strict_turns_cell_errors_into_exit_1(capsys, tmp_path):
    wb = openpyxl.Workbook()
    wb.active["A1"] = '=CW_TEST_HALVE("x")'
    src = tmp_path / "e.xlsx"
    wb.save(src)
    code, _, err = call(capsys, "calc", src, "-o", tmp_path / "o.xlsx")
    assert code == 0 and "Sheet!A1: CW_TEST_HALVE: #VALUE! x: a number" in err
    code, _, _ = call(capsys, "calc", src, "-o", tmp_path / "o2.xlsx", "--strict")
    assert code == 1


def test_template_list_and_errors(capsys, tmp_path):
    from udfs.app.templates import available

    code, out, _ = call(capsys, "template", "--list")
    assert code == 0
    names = sorted(available())
    if names:
        assert out.strip() == "Templates: " + ", ".join(names)
    else:
        assert "No templates are available yet." in out
    code, _, err = call(capsys, "template", "no-such-template", "-o", tmp_path / "t.xlsx")
    assert code == 1 and err.count("\n") == 1
    code, _, err = call(capsys, "template")
    assert code == 2


def test_template_writes_and_refuses_to_overwrite(capsys, tmp_path):
    from udfs.app.templates import available

    names = sorted(available())
    out = tmp_path / "t.xlsx"
    code, stdout, err = call(capsys, "template", names[0], "-o", out)
    assert code == 0, err
    assert CAUTION in stdout
    openpyxl.load_workbook(out)
    code, _, err = call(capsys, "template", names[0], "-o", out)
    assert code == 1 and "already exists" in err
    code, _, err = call(capsys, "template", names[0], "-o", tmp_path / "t.txt")
    assert code == 1 and "written as .xlsx" in err


def test_demo_prints_the_bill_of_materials_with_caution(capsys, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    code, out, err = call(capsys, "demo")
    assert code == 0, err
    assert "Bill of materials (demo data" in out and "qualified engineers" in out
    assert (tmp_path / "cellwright-demo.xlsx").is_file()


def test_sweep_errors(capsys, book, tmp_path):
    out = tmp_path / "s.csv"
    cases = [
        (["sweep", book, "--vary", "load=1:2", "--out", out], "start:stop:step"),
        (["sweep", book, "--vary", "load=1:5:0", "--out", out], "must not be 0"),
        (["sweep", book, "--out", out], "at least one --vary"),
        (["sweep", "--vary", "load=1,2", "--out", out], "give the workbook"),
        # --model core with a workbook starts from its inputs: this one has no cell-sizing inputs
        (["sweep", book, "--model", "core", "--vary", "np_ratio=1,2", "--out", out], "in.xlsx"),
        (["sweep", "--model", "core", "--vary", "bogus=1,2", "--out", out], "CellSpec field"),
        (["sweep", book, "--vary", "product=1,2", "--out", out], "holds a formula"),
        (["sweep", book, "--vary", "load=1,2", "--out", tmp_path / "s.txt"], ".csv or .xlsx"),
    ]
    for args, message in cases:
        code, _, err = call(capsys, *args)
        assert code == 1, (args, err)
        assert message in err and err.strip().count("\n") == 0, (args, err)
    assert not out.exists()


def test_core_sweep_to_xlsx_has_table_and_chart(capsys, tmp_path):
    out = tmp_path / "core.xlsx"
    code, stdout, err = call(
        capsys,
        "sweep",
        "--model",
        "core",
        "--vary",
        "target_capacity_Ah=40:80:5",
        "--vary",
        "np_ratio=1.05:1.2:0.05",
        "--out",
        out,
    )
    assert code == 0, err
    assert "Swept 36 scenarios (9 x 4)" in stdout and CAUTION in stdout
    assert "36/36 100%" in err
    wb = openpyxl.load_workbook(out)
    assert wb["Sweep"].max_row == 37 and sheet_charts(out)["Sweep"]


def test_functions_reference(capsys):
    code, out, _ = call(capsys, "functions")
    assert code == 0 and "CW_MOLAR_MASS(" in out


def test_unknown_command_is_a_usage_error(capsys):
    code, _, err = call(capsys, "frobnicate")
    assert code == 2 and err.count("\n") == 1 and "invalid choice" in err


# ------------------------------------------------------------------ file safety matrix


def _writers(book, out):
    """Every command that writes a file, as argument lists."""
    from udfs.app.templates import available

    names = sorted(available())
    return {
        "calc": ["calc", book, "-o", out.with_suffix(".xlsx")],
        "sweep-csv": ["sweep", book, "--vary", "load=1,2", "--out", out.with_suffix(".csv")],
        "sweep-core-xlsx": [
            "sweep",
            "--model",
            "core",
            "--vary",
            "np_ratio=1.05,1.1",
            "--out",
            out.with_suffix(".xlsx"),
        ],
        "template": ["template", names[0], "-o", out.with_suffix(".xlsx")],
    }


@pytest.mark.parametrize("command", ["calc", "sweep-csv", "sweep-core-xlsx", "template"])
def test_every_writer_refuses_existing_and_missing_directories(capsys, book, tmp_path, command):
    args = _writers(book, tmp_path / "out")[command]
    target = args[-1]
    target.write_bytes(b"old")
    code, _, err = call(capsys, *args)
    assert code == 1 and "already exists; add --force" in err and err.count("\n") == 1
    assert target.read_bytes() == b"old"
    missing = [*args[:-1], tmp_path / "no-such-dir" / target.name]
    code, _, err = call(capsys, *missing)
    assert code == 1 and "does not exist" in err



# ------------------------------------------------------------------ bad-input table
# (tests/bad_inputs.py CLI_BAD_INPUTS; docs/bad-inputs.md lists the same rows)


def _cli_case_id(row):
    return f"{row.command}-{row.why}"


def _cli_cases():
    from bad_inputs import CLI_BAD_INPUTS

    return CLI_BAD_INPUTS


@pytest.mark.parametrize("row", _cli_cases(), ids=_cli_case_id)
def test_cli_bad_input_table(tmp_path, row):
    from bad_input_catalogue import cli_response, prepare_cli, run_cli

    argv = prepare_cli(row, tmp_path)
    before = {p.name: p.read_bytes() for p in tmp_path.iterdir() if p.is_file()}
    result = run_cli(argv)
    assert result.code == row.exit_code, result.stderr
    line = cli_response(result)
    assert row.fragment in line, result.stderr
    assert line.startswith("cellwright") and "Traceback" not in result.stderr
    assert "internal error" not in result.stderr
    # one line of reason (a progress bar may precede it on stderr)
    assert result.stderr.rstrip("\n").rsplit("\n", 1)[-1].strip() == line
    # nothing was written and nothing that existed changed (the input included)
    after = {p.name: p.read_bytes() for p in tmp_path.iterdir() if p.is_file()}
    assert after == before


# ------------------------------------------------------------------ file matrix, every writer
#
# CI runs as root, where chmod cannot make a directory read-only; the failures are
# therefore also simulated by making the operating-system calls fail as they would.


def _all_writers(book, out):
    """_writers plus demo (which writes the demo workbook)."""
    w = _writers(book, out)
    w["demo"] = ["demo", "-o", out.with_suffix(".xlsx")]
    return w


WRITERS = ["calc", "sweep-csv", "sweep-core-xlsx", "template", "demo"]


@pytest.fixture
def quick_demo(book, monkeypatch):
    """The demo command writing a small stand-in workbook: the same write path
    (write_evaluation, atomic writer) in a fraction of the time; the real demo
    workbook is written in test_every_writer_survives_a_full_disk[demo]."""
    from udfs.app import templates
    from udfs.engine.model import load_model

    def stand_in():
        model = load_model(book.read_bytes(), "stand-in.xlsx")
        return model, model.evaluate(), b""

    monkeypatch.setattr(templates, "demo_workbook", stand_in)


def _no_tmp_left(directory):
    return not [p for p in directory.iterdir() if p.name.endswith(".tmp")]


@pytest.mark.parametrize("command", ["demo"])
def test_demo_refuses_existing_and_missing_directories(capsys, book, tmp_path, command):
    args = _all_writers(book, tmp_path / "out")[command]
    target = args[-1]
    target.write_bytes(b"old")
    code, _, err = call(capsys, *args)
    assert code == 1 and "already exists; add --force" in err and err.count("\n") == 1
    assert target.read_bytes() == b"old"
    code, _, err = call(capsys, *args[:-1], tmp_path / "no-such-dir" / target.name)
    assert code == 1 and "does not exist" in err


@pytest.mark.parametrize("command", WRITERS)
def test_every_writer_refuses_a_read_only_directory(
    capsys, book, tmp_path, monkeypatch, command, quick_demo
):
    from udfs.xlsx import files

    args = _all_writers(book, tmp_path / "out")[command]
    before = _digest(book)
    monkeypatch.setattr(files.os, "access", lambda *a, **k: False)
    code, _, err = call(capsys, *args)
    assert code == 1 and "is not writable" in err and err.strip().count("\n") == 0, err
    assert not args[-1].exists() and _digest(book) == before


@pytest.mark.parametrize("command", WRITERS)
def test_every_writer_reports_a_directory_that_refuses_new_files(
    capsys, book, tmp_path, monkeypatch, command, quick_demo
):
    # the check passed, then creating the temporary file fails (as in a read-only directory)
    from udfs.xlsx import files

    def denied(*a, **k):
        raise PermissionError(13, "Permission denied")

    args = _all_writers(book, tmp_path / "out")[command]
    before = _digest(book)
    monkeypatch.setattr(files.tempfile, "mkstemp", denied)
    code, _, err = call(capsys, *args)
    assert code == 1, err
    assert "cannot create a file in" in err and "permission denied" in err
    assert not args[-1].exists() and _digest(book) == before


@pytest.mark.skipif(os.geteuid() == 0, reason="root may write into read-only directories")
@pytest.mark.parametrize("command", ["calc", "sweep-csv"])
def test_every_writer_refuses_a_really_read_only_directory(capsys, book, tmp_path, command):
    ro = tmp_path / "ro"
    ro.mkdir()
    args = _all_writers(book, ro / "out")[command]
    ro.chmod(0o500)
    try:
        code, _, err = call(capsys, *args)
    finally:
        ro.chmod(0o700)
    assert code == 1 and "not writable" in err


class _FullDisk:
    """A file object whose writes fail with ENOSPC after the first few bytes."""

    def __init__(self, fh):
        self._fh = fh

    def write(self, data):
        raise OSError(28, "No space left on device")

    def __getattr__(self, name):
        return getattr(self._fh, name)

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self._fh.close()
        return False


@pytest.mark.parametrize("command", WRITERS)
def test_every_writer_survives_a_failing_write(
    capsys, book, tmp_path, monkeypatch, command, quick_demo
):
    from udfs.xlsx import files

    args = _all_writers(book, tmp_path / "out")[command]
    target = args[-1]
    target.write_bytes(b"old")
    before = _digest(book)
    real_fdopen = files.os.fdopen
    monkeypatch.setattr(files.os, "fdopen", lambda fd, *a, **k: _FullDisk(real_fdopen(fd, *a, **k)))
    code, _, err = call(capsys, *args, "--force")
    assert code == 1 and "the disk is full; any existing file is unchanged" in err, err
    assert target.read_bytes() == b"old" and _no_tmp_left(tmp_path)
    assert _digest(book) == before


@pytest.mark.parametrize("command", WRITERS)
def test_every_writer_survives_a_full_disk(capsys, book, tmp_path, monkeypatch, command):
    """Every writer, the real demo workbook included (no stand-in here)."""
    from udfs.xlsx import files

    args = _all_writers(book, tmp_path / "out")[command]
    target = args[-1]
    target.write_bytes(b"old")

    def full(fd):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(files.os, "fsync", full)
    code, _, err = call(capsys, *args, "--force")
    assert code == 1 and "the disk is full; any existing file is unchanged" in err
    assert target.read_bytes() == b"old" and _no_tmp_left(tmp_path)


@pytest.mark.parametrize("command", WRITERS)
def test_every_writer_interrupted_keeps_the_old_file(
    capsys, book, tmp_path, monkeypatch, command, quick_demo
):
    # Ctrl-C at the worst moment: the new file is complete, the rename is next
    from udfs.xlsx import files

    args = _all_writers(book, tmp_path / "out")[command]
    target = args[-1]
    target.write_bytes(b"old")
    before = _digest(book)

    def interrupted(*a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr(files.os, "replace", interrupted)
    code, _, err = call(capsys, *args, "--force")
    assert code == 130 and "interrupted; no output was written" in err, err
    assert target.read_bytes() == b"old" and _no_tmp_left(tmp_path)
    assert _digest(book) == before


@pytest.mark.parametrize("command", ["calc", "sweep-csv"])
def test_locked_input_is_reported_and_untouched(capsys, book, tmp_path, monkeypatch, command):
    import builtins

    from udfs.xlsx import files

    args = _all_writers(book, tmp_path / "out")[command]
    before = _digest(book)
    real_open = builtins.open

    def locked(path, *a, **k):
        if os.fspath(path) == os.fspath(book):
            raise PermissionError(13, "Permission denied")  # e.g. locked by another program
        return real_open(path, *a, **k)

    monkeypatch.setattr(files, "open", locked, raising=False)
    code, _, err = call(capsys, *args)
    assert code == 1 and "cannot be read: permission denied" in err and err.count("\n") == 1
    assert not args[-1].exists() and _digest(book) == before


@pytest.mark.parametrize("command", ["calc", "sweep-csv"])
def test_input_vanishing_is_reported(capsys, book, tmp_path, command):
    args = _all_writers(book, tmp_path / "out")[command]
    book.unlink()
    code, _, err = call(capsys, *args)
    assert code == 1 and "no such file" in err and err.count("\n") == 1
    assert not args[-1].exists()


@pytest.mark.parametrize("command", ["calc", "sweep-csv"])
def test_input_bytes_never_change_on_success(capsys, book, tmp_path, command):
    args = _all_writers(book, tmp_path / "out")[command]
    before, stat_before = _digest(book), book.stat().st_mtime_ns
    code, _, err = call(capsys, *args)
    assert code == 0, err
    assert _digest(book) == before and book.stat().st_mtime_ns == stat_before
    assert args[-1].exists()


def test_core_sweep_marks_non_finite_results(capsys, tmp_path):
    out = tmp_path / "np.csv"
    code, _, err = call(
        capsys, "sweep", "--model", "core", "--vary", "np_ratio=1e308", "--out", out
    )
    assert code in (0, 1), err
    if code == 0:
        rows = list(csv.DictReader(out.open()))
        for value in rows[0].values():
            assert value.lower() not in ("inf", "-inf", "nan"), rows[0]


def test_vary_with_a_vanishing_step_is_refused(capsys, tmp_path):
    out = tmp_path / "s.csv"
    code, _, err = call(
        capsys, "sweep", "--model", "core", "--vary", "np_ratio=0:1:1e-310", "--out", out
    )
    assert code == 1 and "values on one axis" in err, err


def test_vary_with_an_underflowing_range_is_refused(capsys, tmp_path):
    out = tmp_path / "s.csv"
    code, _, err = call(
        capsys, "sweep", "--model", "core", "--vary", "np_ratio=4.7e-211:0:4.7e-211", "--out", out
    )
    assert code == 1 and "never goes from" in err, err
    assert not out.exists()


def test_demo_twice_in_one_folder_keeps_the_first_file(tmp_path, monkeypatch):
    # the README's first command may be run again: the second demo goes to a new
    # file and the first one is never overwritten (no --force given)
    monkeypatch.chdir(tmp_path)
    assert main(["demo"]) == 0
    first = (tmp_path / "cellwright-demo.xlsx").read_bytes()
    assert main(["demo"]) == 0
    assert (tmp_path / "cellwright-demo-2.xlsx").exists()
    assert (tmp_path / "cellwright-demo.xlsx").read_bytes() == first
