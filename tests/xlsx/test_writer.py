"""Results written into a copy of the package: values visible, nothing else touched."""

from __future__ import annotations

import hashlib
import io
import zipfile

import openpyxl
import pytest
from openpyxl.chart import BarChart, Reference
from openpyxl.worksheet.formula import ArrayFormula

from udfs.app.calc import calculate_file
from udfs.engine.functions import register
from udfs.sheet.error_values import SheetError
from udfs.xlsx.file_errors import WorkbookError
from udfs.xlsx.writer import _patch_sheet


def _triple(x):
    return 3.0 * x if isinstance(x, (int, float)) else SheetError("#VALUE!", "x: a number")


def _label(x):
    return f"<{x}> & \x01 done"


def _pair(x):
    return [[x, 2 * x]]


register({"CW_TEST_TRIPLE": _triple, "CW_TEST_LABEL": _label, "CW_TEST_PAIR": _pair})


def _book(tmp_path, chart=True):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "S"
    ws["A1"] = 2.0
    ws["A2"] = "=CW_TEST_TRIPLE(A1)"
    ws["A3"] = "=A2+1"
    ws["A4"] = '=CW_TEST_LABEL("x")'
    ws["A5"] = "=CW_TEST_TRIPLE(B9)"
    ws["B9"] = "word"
    ws["A6"] = "=A1>1"
    ws["C1"] = ArrayFormula("C1:D1", "=CW_TEST_PAIR(A1)")
    ws["F20"] = ArrayFormula("F20:G20", "=CW_TEST_PAIR(A3)")  # row 20 exists only here
    if chart:
        chart_obj = BarChart()
        chart_obj.add_data(Reference(ws, min_col=1, min_row=1, max_row=3))
        ws.add_chart(chart_obj, "J2")
    path = tmp_path / "in.xlsx"
    wb.save(path)
    return path


def _digest(path):
    return hashlib.sha256(path.read_bytes()).hexdigest()


@pytest.mark.parametrize("mode", ["portable", "all", "none"])
def test_values_are_visible_and_the_input_is_untouched(tmp_path, mode):
    src = _book(tmp_path)
    before = _digest(src)
    out = tmp_path / f"out-{mode}.xlsx"
    calculate_file(src, out, {"S!A1": 4.0}, mode=mode)
    assert _digest(src) == before
    values = openpyxl.load_workbook(out, data_only=True)["S"]
    assert values["A1"].value == 4
    assert values["A2"].value == _triple(4.0)
    assert values["A3"].value == _triple(4.0) + 1
    # markup survives; a control character (illegal in XML) is stored as _x0001_
    assert values["A4"].value == _label("x").replace("\x01", "_x0001_")
    assert values["A5"].value == "#VALUE!"
    assert values["A6"].value is True
    assert [values["C1"].value, values["D1"].value] == _pair(4.0)[0]
    assert [values["F20"].value, values["G20"].value] == _pair(_triple(4.0) + 1)[0]
    formulas = openpyxl.load_workbook(out)["S"]
    kept = {ref: str(formulas[ref].value).startswith("=") for ref in ("A2", "A3", "A6")}
    if mode == "portable":
        assert kept == {"A2": False, "A3": True, "A6": True}
    elif mode == "all":
        assert kept == {"A2": True, "A3": True, "A6": True}
    else:
        assert kept == {"A2": False, "A3": False, "A6": False}


def test_parts_other_than_sheets_and_workbook_are_byte_identical(tmp_path):
    src = _book(tmp_path)
    out = tmp_path / "out.xlsx"
    calculate_file(src, out)
    a, b = zipfile.ZipFile(src), zipfile.ZipFile(out)
    assert a.namelist() == b.namelist()
    changed = {n for n in a.namelist() if a.read(n) != b.read(n)}
    assert changed <= {"xl/worksheets/sheet1.xml", "xl/workbook.xml"}
    assert any(n.startswith("xl/charts/") for n in b.namelist())


def test_full_calc_on_load_is_removed(tmp_path):
    src = _book(tmp_path, chart=False)
    assert b"fullCalcOnLoad" in zipfile.ZipFile(src).read("xl/workbook.xml")
    out = tmp_path / "out.xlsx"
    calculate_file(src, out, mode="all")
    assert b"fullCalcOnLoad" not in zipfile.ZipFile(out).read("xl/workbook.xml")


def _repack(src, dst, replace, extra):
    """Copy package ``src`` to ``dst``: in part p, ``replace[p] = (old, new)`` bytes;
    then add the ``extra`` parts."""
    zin = zipfile.ZipFile(src)
    with zipfile.ZipFile(dst, "w", zipfile.ZIP_DEFLATED) as zout:
        for name in zin.namelist():
            data = zin.read(name)
            if name in replace:
                data = data.replace(*replace[name])
            zout.writestr(name, data)
        for name, data in extra.items():
            zout.writestr(name, data)


def _with_calc_chain(src, dst):
    """Add a calcChain part (as Excel writes one) to an openpyxl-made package."""
    _repack(
        src,
        dst,
        {
            "[Content_Types].xml": (
                b"</Types>",
                b'<Override PartName="/xl/calcChain.xml" ContentType="application/'
                b'vnd.openxmlformats-officedocument.spreadsheetml.calcChain+xml"/></Types>',
            ),
            "xl/_rels/workbook.xml.rels": (
                b"</Relationships>",
                b'<Relationship Id="rId99" Type="http://schemas.openxmlformats.org/'
                b'officeDocument/2006/relationships/calcChain" Target="calcChain.xml"/>'
                b"</Relationships>",
            ),
        },
        {
            "xl/calcChain.xml": '<calcChain xmlns="http://schemas.openxmlformats.org/'
            'spreadsheetml/2006/main"><c r="A2" i="1"/><c r="A3"/></calcChain>',
        },
    )


@pytest.mark.parametrize(("mode", "kept"), [("all", True), ("portable", False), ("none", False)])
def test_calc_chain_goes_when_formulas_go(tmp_path, mode, kept):
    src = tmp_path / "chain.xlsx"
    _with_calc_chain(_book(tmp_path, chart=False), src)
    out = tmp_path / "out.xlsx"
    calculate_file(src, out, mode=mode)
    z = zipfile.ZipFile(out)
    assert ("xl/calcChain.xml" in z.namelist()) is kept
    assert (b"calcChain" in z.read("[Content_Types].xml")) is kept
    assert (b"calcChain" in z.read("xl/_rels/workbook.xml.rels")) is kept
    openpyxl.load_workbook(out)  # still a readable package


def test_macro_enabled_workbook_keeps_its_macros_unrun_and_needs_xlsm(tmp_path):
    plain = _book(tmp_path, chart=False)
    src = tmp_path / "macro.xlsm"
    vba = b"\x00fake-vba-project\x00"  # never executed; only copied
    main = b"application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"
    macro = b"application/vnd.ms-excel.sheet.macroEnabled.main+xml"
    _repack(plain, src, {"[Content_Types].xml": (main, macro)}, {"xl/vbaProject.bin": vba})
    with pytest.raises(WorkbookError, match=r"macro-enabled: name the output \.xlsm"):
        calculate_file(src, tmp_path / "out.xlsx")
    report = calculate_file(src, tmp_path / "out.xlsm")
    notes = [str(d) for d in report.evaluation.diagnostics if d.kind == "note"]
    assert any("never run" in n and "vbaProject.bin" in n for n in notes)
    assert zipfile.ZipFile(tmp_path / "out.xlsm").read("xl/vbaProject.bin") == vba


def test_patching_keeps_prefixes_and_inserts_rows_in_order():
    xml = (
        '<x:worksheet xmlns:x="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'
        '<x:sheetData><x:row r="2" spans="1:2"><x:c r="A2" s="3"><x:f>B2*2</x:f><x:v>0</x:v>'
        '</x:c></x:row><x:row r="5"><x:c r="C5"><x:v>1</x:v></x:c></x:row></x:sheetData>'
        "</x:worksheet>"
    )
    out = _patch_sheet(xml, {(2, 1): 8.5, (2, 2): "a<b", (4, 1): True}, {(2, 1)}, False)
    assert '<x:c r="A2" s="3"><x:f>B2*2</x:f><x:v>8.5</x:v></x:c>' in out
    assert '<x:c t="inlineStr" r="B2"><x:is><x:t xml:space="preserve">a&lt;b</x:t>' in out
    assert out.index('<x:row r="2"') < out.index('<x:row r="4"') < out.index('<x:row r="5"')
    assert 'spans="1:2"' not in out  # a changed row loses its optional span hint
    assert '<x:row r="5"><x:c r="C5"><x:v>1</x:v></x:c></x:row>' in out  # untouched row


def test_unsolved_cells_keep_their_formula_in_portable_mode(tmp_path):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws["A1"] = "=A2+1"
    ws["A2"] = "=A1+1"
    ws["A3"] = 7
    path = tmp_path / "c.xlsx"
    wb.save(path)
    out = tmp_path / "o.xlsx"
    report = calculate_file(path, out)
    assert any(d.kind == "circular" for d in report.evaluation.diagnostics)
    assert openpyxl.load_workbook(out)["Sheet"]["A1"].value == "=A2+1"
    data = io.BytesIO(out.read_bytes())
    assert zipfile.ZipFile(data).testzip() is None
