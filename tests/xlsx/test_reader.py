"""The reader's shortcuts read exactly what its plain rules read: cells placed by the
open row's number, range lists checked by one pattern, names as expat writes them, and
the garbage collector paused only while a workbook is read.
"""

from __future__ import annotations

import gc

import pytest
from hypothesis import assume, given
from hypothesis import strategies as st
from test_hostile import MAIN, package, sheet_xml

from udfs.xlsx.file_errors import WorkbookError
from udfs.xlsx.guard import DEFAULT_LIMITS
from udfs.xlsx.package import Package
from udfs.xlsx.reader import (
    _RANGE,
    SheetData,
    _coord,
    _corner,
    _Reading,
    _SheetReader,
    read_workbook,
)

# column letters, row digits: plain, with "$", too many, not ASCII ("\u0661" is a digit)
_LETTERS = st.sampled_from(["A", "b", "AB", "$A", "A$", "$", "", "ABCD", "\u00c4"])
_DIGITS = st.one_of(
    st.text(alphabet="0123456789\u0661", max_size=9), st.sampled_from(["007", "12345678"])
)


def _reader() -> _SheetReader:
    book = _Reading(Package(package(), "t.xlsx"), DEFAULT_LIMITS)
    return _SheetReader(book, SheetData("S", 0, "xl/worksheets/sheet1.xml"))


@given(st.data())
def test_a_cell_is_placed_where_its_coordinate_says(data):
    reader = _reader()
    assert reader._place("A1") == (1, 1) and reader._place("b9") == (9, 2)  # letters met
    for _ in range(data.draw(st.integers(1, 3))):
        row_r = data.draw(st.one_of(st.none(), _DIGITS))
        reader._start("row", {} if row_r is None else {"r": row_r})
        for _ in range(data.draw(st.integers(0, 6))):
            digits = data.draw(st.one_of(st.just(row_r or ""), _DIGITS))
            ref = data.draw(_LETTERS) + digits + data.draw(st.sampled_from(["", "", "\n", "$"]))
            expected = _coord(ref) or (max(reader.row, 1), reader.col + 1)
            assert reader._place(ref) == expected, (row_r, ref)


_PIECES = st.sampled_from(["A", "b", "ABCD", "$", "0", "9", "12345678", ":", "\u0661", "\n"])


@given(st.lists(_PIECES, min_size=1, max_size=6).map("".join))
def test_a_listed_range_passes_the_check_exactly_when_it_can_be_measured(piece):
    assume(not any(ch.isspace() for ch in piece))  # a range list is split at whitespace
    try:
        _corner(piece, "conditionalFormatting", "t.xlsx")
    except WorkbookError:
        measured = False
    else:
        measured = True
    assert (_RANGE.fullmatch(piece) is not None) is measured


def test_scan_hands_local_names_or_names_as_written():
    pkg = Package(
        package(sheet=f'<x:worksheet xmlns:x="{MAIN}"><x:sheetData/></x:worksheet>'), "p.xlsx"
    )
    seen: dict[bool, list[str]] = {True: [], False: []}
    for local in (True, False):
        pkg.scan(
            "xl/worksheets/sheet1.xml",
            lambda name, _attrs, names=seen[local]: names.append(name),
            lambda name, names=seen[local]: names.append("/" + name),
            lambda _text: None,
            local_names=local,
        )
    assert seen[True] == ["worksheet", "sheetData", "/sheetData", "/worksheet"]
    assert seen[False] == ["x:worksheet", "x:sheetData", "/x:sheetData", "/x:worksheet"]


@pytest.mark.parametrize("enabled", [True, False])
def test_reading_leaves_the_garbage_collector_as_it_was(enabled):
    damaged = package(sheet=sheet_xml('<row r="1"><c r="A1"><v>one</v></c></row>'))
    was = gc.isenabled()
    try:
        gc.enable() if enabled else gc.disable()
        assert read_workbook(package(), "ok.xlsx").sheets[0].values == {(1, 1): 1.0}
        assert gc.isenabled() is enabled
        with pytest.raises(WorkbookError, match="damaged: number 'one'"):
            read_workbook(damaged, "bad.xlsx")
        assert gc.isenabled() is enabled
    finally:
        gc.enable() if was else gc.disable()


def test_a_negative_shared_string_index_is_damage_not_the_last_string():
    strings = (
        f'<sst xmlns="{MAIN}" count="2" uniqueCount="2"><si><t>a</t></si><si><t>z</t></si></sst>'
    )
    for index in ("-1", "\u0661", " 1x"):
        cells = f'<row r="1"><c r="A1" t="s"><v>{index}</v></c></row>'
        with pytest.raises(WorkbookError, match=r"shared string .* does not exist"):
            read_workbook(package(sheet=sheet_xml(cells), strings=strings), "s.xlsx")
    cells = '<row r="1"><c r="A1" t="s"><v>1</v></c></row>'
    book = read_workbook(package(sheet=sheet_xml(cells), strings=strings), "s.xlsx")
    assert book.sheets[0].values == {(1, 1): "z"}


def test_a_row_number_that_is_not_ascii_digits_follows_the_row_before():
    # "\u00b2" (superscript two) counts as a digit for str.isdigit but is no row number
    cells = (
        '<row r="4"><c><v>1</v></c></row>'
        '<row r="\u00b2"><c><v>2</v></c></row>'
    )
    book = read_workbook(package(sheet=sheet_xml(cells)), "r.xlsx")
    assert book.sheets[0].values == {(4, 1): 1.0, (5, 1): 2.0}
