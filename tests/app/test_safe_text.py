"""Text that leaves the program: shown escaped and bounded, written as data."""

from __future__ import annotations

import io
import unicodedata

import openpyxl
import pytest
from hypothesis import given
from hypothesis import strategies as st

from udfs.app.safe_text import (
    MAX_CELL_TEXT,
    check_argument,
    csv_cell,
    one_line,
    sheet_text,
    show,
    text_cell,
)
from udfs.xlsx.file_errors import ReferenceSyntaxError

_UNSAFE = ("Cc", "Cf", "Cs", "Zl", "Zp", "Co", "Cn")


def _unsafe(text: str) -> list[str]:
    return [ch for ch in text if unicodedata.category(ch) in _UNSAFE]


@pytest.mark.parametrize(
    ("text", "shown"),
    [
        ("FAIL\x1b[2K\rall checks pass", "FAIL\\x1b[2K\\rall checks pass"),
        ("tab\there\nnext", "tab\\there\\nnext"),
        ("del\x7f c1\x9b", "del\\x7f c1\\x9b"),
        ("abc\u202edcba", "abc\\u202edcba"),  # right-to-left override: shown, not obeyed
        ("zero\u200bwidth", "zero\\u200bwidth"),
        ("line\u2028sep", "line\\u2028sep"),
        ("bytes \udcff", "bytes \\udcff"),  # undecodable input: printable, encodable
        ("Größe µm ±5 % 电池", "Größe µm ±5 % 电池"),  # ordinary text unchanged
    ],
)
def test_show_escapes_what_would_act_on_the_terminal(text, shown):
    assert show(text) == shown


def test_show_and_one_line_are_bounded_and_say_so():
    assert show("x" * 1000, 50) == "x" * 50 + "... (cut; 1,000 characters in all)"
    message = "the formula =A1" + "%" * 8000 + " cannot be read"
    line = one_line(message, 120)
    assert len(line) <= 120 + len("... (cut; 8,030 characters in all)")
    assert line.endswith("... (cut; 8,030 characters in all)")
    # an escape sequence is never cut in half
    assert show("ab\x1b", 4) == "ab... (cut; 3 characters in all)"


def test_one_line_joins_lines():
    assert one_line("first\n  second\r\nthird\tfourth") == "first second third fourth"
    assert one_line("ends\x1b[0m") == "ends\\x1b[0m"


@given(st.text(max_size=3000), st.integers(min_value=1, max_value=500))
def test_shown_text_is_printable_bounded_and_encodable(text, limit):
    for out in (show(text, limit), one_line(text, limit)):
        assert _unsafe(out) == []
        assert len(out) <= limit + len(f"... (cut; {len(text):,} characters in all)")
        out.encode("utf-8")  # strict: no lone surrogate left
        out.encode("ascii", "backslashreplace")
    assert "\n" not in one_line(text, limit)


def test_check_argument_refuses_bytes_that_are_not_utf8():
    assert check_argument("Inputs!B4=Größe", "--set") == "Inputs!B4=Größe"
    with pytest.raises(ReferenceSyntaxError) as info:
        check_argument("Inputs!B4=\udcff\udcfe", "--set")
    assert str(info.value) == "--set 'Inputs!B4=\\udcff\\udcfe': not UTF-8 text"


@given(st.text(max_size=200))
def test_any_text_can_be_written_to_an_xlsx_cell_as_text(text):
    wb = openpyxl.Workbook(write_only=True)
    ws = wb.create_sheet("S")
    ws.append([text_cell(ws, text), text_cell(ws, "=" + text)])
    buf = io.BytesIO()
    wb.save(buf)
    back = openpyxl.load_workbook(buf)["S"]
    assert back["A1"].value in (sheet_text(text), None)  # openpyxl reads "" as empty
    assert back["B1"].data_type == "s" and back["B1"].value == sheet_text("=" + text)


def test_sheet_text_is_cut_at_excels_cell_limit():
    assert len(sheet_text("y" * 40_000)) == MAX_CELL_TEXT
    assert sheet_text("y" * 40_000).endswith("... (cut)")


def test_text_cell_leaves_numbers_and_marks_non_finite_ones():
    wb = openpyxl.Workbook(write_only=True)
    ws = wb.create_sheet("S")
    assert text_cell(ws, 1.5) == 1.5 and text_cell(ws, None) is None
    assert text_cell(ws, float("nan")).value == "#NUM!"


@given(st.text(max_size=50))
def test_csv_cell_never_leaves_a_formula_trigger_first(text):
    out = csv_cell(text)
    assert not out.startswith(("=", "+", "-", "@", "\t", "\r"))
    assert out in (text, "'" + text)
