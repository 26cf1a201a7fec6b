"""Sheet XML patched in place: spellings other writers use come out right (rows and cells
without their address or with it not first, extLst, spans, whitespace around "=", cells
out of order or twice), and values are written as Excel writes them.

The expected XML is worked out by hand from the rules in udfs/xlsx/writer.py."""

from __future__ import annotations

import pytest

from udfs.sheet.error_values import SheetError
from udfs.xlsx.writer import Edit, patch_sheet


def _sheet(rows: str) -> str:
    return f'<worksheet xmlns="m"><sheetData>{rows}</sheetData></worksheet>'


def test_rows_and_cells_without_their_address_or_with_it_not_first():
    xml = _sheet(
        '<row r="1"><c r="A1"><v>1</v></c><c><v>2</v></c><c s="4" r=\'D1\'><v>3</v></c></row>'
        '<row><c r="A2"/></row>'  # row 2: follows row 1
        '<row spans="1:3" r="7"><c r="C7"><v>5</v></c></row>'
    )
    edits = {(1, 2): Edit(9.0), (1, 4): Edit(8.0), (2, 1): Edit(True), (7, 3): Edit(2.5)}
    assert patch_sheet(xml, edits) == _sheet(
        '<row r="1"><c r="A1"><v>1</v></c><c><v>9</v></c><c s="4" r=\'D1\'><v>8</v></c></row>'
        '<row><c t="b" r="A2"><v>1</v></c></row>'
        '<row r="7"><c r="C7"><v>2.5</v></c></row>'  # a changed row loses its span hint
    )


def test_extlst_stays_after_the_value_and_a_new_formula_keeps_the_cached_value():
    xml = _sheet(
        '<row r="1"><c r="A1"><f>1+1</f><v>0</v><extLst><ext uri="u"><x/></ext></extLst></c>'
        '<c r="B1"><v>4</v><extLst><ext uri="w"/></extLst></c></row>'
    )
    out = patch_sheet(xml, {(1, 1): Edit(2.0), (1, 2): Edit(formula="=A1*3")})
    assert out == _sheet(
        '<row r="1"><c r="A1"><f>1+1</f><v>2</v><extLst><ext uri="u"><x/></ext></extLst></c>'
        '<c r="B1"><f>A1*3</f><v>4</v><extLst><ext uri="w"/></extLst></c></row>'
    )


def test_cells_come_out_in_column_order_the_last_of_two_in_one_column_kept():
    xml = _sheet(
        '<row r="3"><c r="C3"><v>3</v></c><c r="A3" s="1"><v>1</v></c>'
        '<c r="A3" s="2"><v>9</v></c></row>'
    )
    out = patch_sheet(xml, {(3, 2): Edit(2.0), (3, 1): Edit(7.0)})
    assert out == _sheet(
        '<row r="3"><c r="A3" s="2"><v>7</v></c><c r="B3"><v>2</v></c><c r="C3"><v>3</v></c></row>'
    )


def test_a_type_written_with_whitespace_before_the_equals_sign_is_replaced_not_doubled():
    # a stale t="s" would make the new number read as a shared-string index; two t
    # attributes would make the sheet unreadable
    xml = _sheet(
        '<row r="1"><c r="A1" t\n="s"><v>0</v></c>'
        "<c r=\"B1\" t\t='e'><f>1/0</f><v>#DIV/0!</v></c></row>"
    )
    out = patch_sheet(xml, {(1, 1): Edit(1.5), (1, 2): Edit("ok")})
    assert out == _sheet(
        '<row r="1"><c r="A1"><v>1.5</v></c><c t="str" r="B1"><f>1/0</f><v>ok</v></c></row>'
    )


def test_a_removed_formula_leaves_its_text_result_as_a_plain_string():
    xml = _sheet('<row r="1"><c r="A1" t="str" cm="1"><f>"a"&amp;"b"</f><v>ab</v></c></row>')
    out = patch_sheet(xml, {(1, 1): Edit(formula="")})
    assert out == _sheet(
        '<row r="1"><c t="inlineStr" r="A1"><is><t xml:space="preserve">ab</t></is></c></row>'
    )


@pytest.mark.parametrize(
    ("value", "cell"),
    [
        (2.0, '<c r="A1"><v>2</v></c>'),  # whole numbers without ".0", as Excel writes them
        (0.1, '<c r="A1"><v>0.1</v></c>'),
        (1e17, '<c r="A1"><v>1e+17</v></c>'),
        (7, '<c r="A1"><v>7</v></c>'),
        (float("inf"), '<c t="e" r="A1"><v>#NUM!</v></c>'),
        (float("nan"), '<c t="e" r="A1"><v>#NUM!</v></c>'),
        (SheetError("#DIV/0!"), '<c t="e" r="A1"><v>#DIV/0!</v></c>'),
        (None, '<c r="A1"/>'),
    ],
)
def test_values_in_a_new_cell_of_an_empty_sheet(value, cell):
    xml = '<worksheet xmlns="m"><sheetData/></worksheet>'
    assert patch_sheet(xml, {(1, 1): Edit(value)}) == _sheet(f'<row r="1">{cell}</row>')


def test_a_self_closing_row_gets_its_new_cell_with_the_sheets_prefix():
    xml = (
        '<x:worksheet xmlns:x="m"><x:sheetData><x:row r="3"/><x:row r="4"><x:c r="A4"><x:v>1'
        "</x:v></x:c></x:row></x:sheetData></x:worksheet>"
    )
    out = patch_sheet(xml, {(3, 2): Edit(1.0)})
    assert '<x:row r="3"><x:c r="B3"><x:v>1</x:v></x:c></x:row><x:row r="4">' in out
