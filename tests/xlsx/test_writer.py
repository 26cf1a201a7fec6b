"""Results written into a copy of the package: a live model (formulas kept, values cached)
or a labelled values-only copy that calc restores; nothing else touched."""

from __future__ import annotations

import hashlib
import re
import zipfile

import openpyxl
import pytest
from openpyxl.chart import BarChart, Reference
from openpyxl.worksheet.formula import ArrayFormula

from udfs.app.calc import calculate_file
from udfs.engine.functions import register
from udfs.sheet.error_values import SheetError
from udfs.xlsx.file_errors import WorkbookError
from udfs.xlsx.values_copy import ABOUT_SHEET, FORMULAS_SHEET, MARKER
from udfs.xlsx.writer import CALC_ID, Edit, patch_sheet


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


@pytest.mark.parametrize("mode", ["live", "values"])
def test_values_are_visible_and_the_input_is_untouched(tmp_path, mode):
    src = _book(tmp_path)
    before = _digest(src)
    out = tmp_path / f"out-{mode}.xlsx"
    calculate_file(src, out, {"S!A1": "4"}, mode=mode)
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
    assert kept == {ref: mode == "live" for ref in ("A2", "A3", "A6")}


def test_parts_other_than_sheets_and_workbook_are_byte_identical(tmp_path):
    src = _book(tmp_path)
    out = tmp_path / "out.xlsx"
    calculate_file(src, out)
    a, b = zipfile.ZipFile(src), zipfile.ZipFile(out)
    assert a.namelist() == b.namelist()
    changed = {n for n in a.namelist() if a.read(n) != b.read(n)}
    assert changed <= {"xl/worksheets/sheet1.xml", "xl/workbook.xml"}
    assert any(n.startswith("xl/charts/") for n in b.namelist())


def test_no_full_recalculation_on_load_and_a_current_engine_id(tmp_path):
    src = _book(tmp_path, chart=False)
    assert b"fullCalcOnLoad" in zipfile.ZipFile(src).read("xl/workbook.xml")
    out = tmp_path / "out.xlsx"
    calculate_file(src, out)
    wb_xml = zipfile.ZipFile(out).read("xl/workbook.xml")
    assert b"fullCalcOnLoad" not in wb_xml
    assert f'calcId="{CALC_ID}"'.encode() in wb_xml


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


@pytest.mark.parametrize(("mode", "kept"), [("live", True), ("values", False)])
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
    out = patch_sheet(xml, {(2, 1): Edit(8.5), (2, 2): Edit("a<b"), (4, 1): Edit(True)})
    assert '<x:c r="A2" s="3"><x:f>B2*2</x:f><x:v>8.5</x:v></x:c>' in out
    assert '<x:c t="inlineStr" r="B2"><x:is><x:t xml:space="preserve">a&lt;b</x:t>' in out
    assert out.index('<x:row r="2"') < out.index('<x:row r="4"') < out.index('<x:row r="5"')
    assert 'spans="1:2"' not in out  # a changed row loses its optional span hint
    assert '<x:row r="5"><x:c r="C5"><x:v>1</x:v></x:c></x:row>' in out  # untouched row


@pytest.mark.parametrize("mode", ["live", "values"])
def test_cells_not_evaluated_keep_their_formula_and_cached_value(tmp_path, mode):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws["A1"] = "=A2+1"
    ws["A2"] = "=A1+1"
    ws["A3"] = 7
    ws["A4"] = "=A3*2"
    path = tmp_path / "c.xlsx"
    wb.save(path)
    out = tmp_path / "o.xlsx"
    report = calculate_file(path, out, mode=mode)
    assert any(d.kind == "circular" for d in report.evaluation.diagnostics)
    sheet = openpyxl.load_workbook(out)["Sheet"]
    assert (sheet["A1"].value, sheet["A2"].value) == ("=A2+1", "=A1+1")
    assert openpyxl.load_workbook(out, data_only=True)["Sheet"]["A4"].value == 14


def _filled_down_with_a_cycle(tmp_path):
    """A shared (filled-down) formula whose last cell is on a cycle, as Excel writes it."""
    wb = openpyxl.Workbook()
    ws = wb.active
    for r in range(1, 5):
        ws[f"A{r}"] = r
    ws["B1"] = "=A1*2"
    ws["C4"] = "=B4+1"
    path = tmp_path / "plain.xlsx"
    wb.save(path)
    shared = (
        '<c r="B1"><f t="shared" ref="B1:B4" si="0">A1*2+C1</f><v>0</v></c>'
    )
    zin = zipfile.ZipFile(path)
    sheet = zin.read("xl/worksheets/sheet1.xml").decode()
    sheet = re.sub(r'<c r="B1"><f>A1\*2</f><v ?/?>(?:</v>)?</c>', shared, sheet)
    for r in (2, 3, 4):
        sheet = sheet.replace(
            f'<c r="A{r}" t="n"><v>{r}</v></c>',
            f'<c r="A{r}" t="n"><v>{r}</v></c><c r="B{r}"><f t="shared" si="0"/><v>0</v></c>',
        )
    assert sheet.count('si="0"') == 4, sheet
    dst = tmp_path / "shared.xlsx"
    with zipfile.ZipFile(dst, "w") as zout:
        for name in zin.namelist():
            zout.writestr(name, sheet if name == "xl/worksheets/sheet1.xml" else zin.read(name))
    return dst


def test_a_filled_down_formula_with_a_kept_cell_stays_valid_in_a_values_copy(tmp_path):
    src = _filled_down_with_a_cycle(tmp_path)  # B4 = A4*2+C4 and C4 = B4+1: a cycle
    out = tmp_path / "v.xlsx"
    calculate_file(src, out, mode="values")
    sheet = openpyxl.load_workbook(out)["Sheet"]
    # B1:B3 became values; B4 (on the cycle) keeps its own formula text, not a dangling reference
    assert sheet["B4"].value == "=A4*2+C4" and sheet["C4"].value == "=B4+1"
    assert [sheet[f"B{r}"].value for r in (1, 2, 3)] == [2, 4, 6]


def test_values_only_copy_is_labelled_and_calc_restores_its_formulas(tmp_path):
    src = _book(tmp_path, chart=False)
    copy = tmp_path / "copy.xlsx"
    calculate_file(src, copy, {"S!A1": "4"}, mode="values")
    wb = openpyxl.load_workbook(copy)
    assert wb.sheetnames[0] == ABOUT_SHEET and wb[FORMULAS_SHEET].sheet_state == "hidden"
    assert MARKER in wb.defined_names
    about = wb[ABOUT_SHEET]
    listed = {about.cell(r, 2).value: about.cell(r, 3).value for r in range(9, about.max_row + 1)}
    assert listed["S!A1"] == 4 and listed["S!B9"] == "word"  # the inputs formulas read
    assert str(about["B5"].value).startswith("=IF(SUMPRODUCT(")  # the live staleness check
    shown = openpyxl.load_workbook(copy, data_only=True)
    assert shown[ABOUT_SHEET]["B5"].value.startswith("Inputs unchanged")
    assert shown["S"]["A2"].value == _triple(4.0) and wb["S"]["A2"].value == _triple(4.0)
    # calc on the copy evaluates the model, not the frozen numbers
    again = tmp_path / "again.xlsx"
    report = calculate_file(copy, again, {"S!A1": "5"})
    assert report.model.restored_from_values
    back = openpyxl.load_workbook(again)
    assert back.sheetnames == ["S"] and MARKER not in back.defined_names
    assert back["S"]["A2"].value == "=CW_TEST_TRIPLE(A1)" and back["S"]["A3"].value == "=A2+1"
    values = openpyxl.load_workbook(again, data_only=True)["S"]
    assert values["A2"].value == _triple(5.0) and values["A3"].value == _triple(5.0) + 1


def test_a_sheet_without_its_cell_table_is_refused_and_no_file_is_left(tmp_path):
    # sheets are patched as the package is written (streamed): a damaged one still ends
    # the write with one reason, and the atomic writer leaves nothing behind
    import io

    from udfs.xlsx.files import atomic_writer
    from udfs.xlsx.package import Package
    from udfs.xlsx.refs import CellRef
    from udfs.xlsx.writer import write_live

    wb = openpyxl.Workbook()
    wb.active.title = "S"
    wb.active["A1"] = 1.0
    buf = io.BytesIO()
    wb.save(buf)
    damaged = io.BytesIO()
    with zipfile.ZipFile(buf) as src, zipfile.ZipFile(damaged, "w") as dst:
        for info in src.infolist():
            data = src.read(info)
            if info.filename == "xl/worksheets/sheet1.xml":
                data = re.sub(rb"<sheetData>.*</sheetData>|<sheetData/>", b"", data)
            dst.writestr(info, data)
    pkg = Package(damaged.getvalue(), "damaged.xlsx")
    pkg.read_structure(100)
    out = tmp_path / "out.xlsx"
    with pytest.raises(WorkbookError, match="no sheetData"), atomic_writer(out, False, ()) as fh:
        write_live(pkg, {CellRef("S", 1, 1): Edit(2.0)}, fh)
    assert list(tmp_path.iterdir()) == []
