"""Formula structures: references resolved as Excel resolves them, parses shared."""

from __future__ import annotations

import io
import resource

import openpyxl
import pytest
from openpyxl.workbook.defined_name import DefinedName
from openpyxl.worksheet.table import Table

from udfs.engine.model import WorkbookModel
from udfs.engine.structure import Context, relative_text
from udfs.sheet.error_values import SheetError
from udfs.xlsx.package import DefinedName as Name
from udfs.xlsx.reader import SheetData
from udfs.xlsx.reader import Table as TableData


def _bytes(wb: openpyxl.Workbook) -> bytes:
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def _context(names=(), tables=()) -> Context:
    sheets = [
        SheetData("Calc", 0, "", max_row=9, max_col=4),
        SheetData("Inputs", 1, "", max_row=20),
    ]
    return Context(sheets, list(names), list(tables), lambda n: n != "NOPE")


def test_cells_filled_from_one_formula_share_their_relative_text():
    assert relative_text("=A1+$B$2*C$3", 1, 2) == relative_text("=A5+$B$2*C$3", 5, 2)
    assert relative_text("=A1+B1", 1, 3) != relative_text("=A1+B1", 2, 3)
    # quoted sheet names and strings are not references
    first = relative_text("='Sheet A1'!B1&\"C3\"", 1, 1)
    assert first != relative_text("='Sheet A2'!B2&\"C3\"", 2, 1)


def test_references_and_constants_become_placeholders():
    s = _context().structure("=Inputs!$B$2*C7+2.5-'Calc'!A1", 7, 4, 0)
    assert s.text == "=_R0*_R1+_K0-_R2"
    assert [(r.sheet, r.area.text()) for r in s.refs] == [(1, "$B$2"), (0, "C7"), (0, "A1")]
    assert s.consts == (("_K0", 2.5),)
    # the same shape elsewhere shares the parse key
    assert _context().structure("=Inputs!$B$3*D9+7-Calc!B2", 9, 5, 0).text == s.text


def test_whole_columns_and_rows_are_bounded_by_the_used_range():
    s = _context().structure("=SUM(Inputs!A:B)+SUM(2:2)", 1, 1, 0)
    (a, b) = (r.area for r in s.refs)
    assert (a.r1, a.r2, a.c1, a.c2) == (1, 20, 1, 2)
    assert (b.r1, b.r2, b.c1, b.c2) == (2, 2, 1, 4)


def test_names_local_to_the_sheet_win_over_global_ones():
    names = [
        Name("rate", "10"),
        Name("rate", "99", local_sheet=0),
        Name("span", "Inputs!$A$1:$A$3"),
    ]
    ctx = _context(names)
    assert ctx.structure("=rate*2", 1, 1, 0).consts[0] == ("_K0", 99)
    assert ctx.structure("=rate*2", 1, 1, 1).consts[0] == ("_K0", 10)
    span = ctx.structure("=SUM(span)", 1, 1, 0)
    assert span.text == "=SUM((_R0))" and span.refs[0].area.text() == "$A$1:$A$3"


def test_a_name_that_refers_to_itself_is_a_problem_not_a_loop():
    s = _context([Name("loop", "loop+1")]).structure("=loop", 1, 1, 0)
    assert s.problem is not None and "refers to itself" in s.problem


@pytest.mark.parametrize(
    ("formula", "problem"),
    [
        ("='[1]Prices'!B2*2", "external reference"),
        ("=Sheet1:Sheet3!A1", "3-D reference"),
        ("=NOPE(1)", "unsupported function NOPE"),
    ],
)
def test_what_cannot_be_evaluated_says_why(formula, problem):
    assert problem in (_context().structure(formula, 1, 1, 0).problem or "")


def test_structured_table_references():
    parts = TableData("Parts", "Calc", 1, 1, 5, 3, 1, 0, ("Name", "Qty", "Price"))
    ctx = _context(tables=[parts])
    area = lambda f, row=3: ctx.structure(f, row, 5, 0).refs[0].area.text()  # noqa: E731
    assert area("=SUM(Parts[Qty])") == "$B$2:$B$5"
    assert area("=Parts[[Qty]:[Price]]") == "$B$2:$C$5"
    assert area("=Parts[#All]") == "$A$1:$C$5"
    assert area("=Parts[[#Headers],[Price]]") == "$C$1"
    assert area("=Parts[@Qty]") == "$B3" and area("=[@Price]", 4) == "$C4"


def test_row_and_column_of_the_cell_itself():
    s = _context().structure("=ROW()+COLUMN()", 6, 3, 0)
    assert s.text == "=ROW(_R0)+COLUMN(_R1)" and s.references


# ---------------------------------------------------------------- whole workbooks


def test_excel_examples_of_names_sheets_and_whole_references():
    wb = openpyxl.Workbook()
    s = wb.active
    s.title = "S"
    for r in range(1, 6):
        s.cell(r, 1, r)
        s.cell(r, 2, 10 * r)
    t = wb.create_sheet("T")
    t.defined_names["rate"] = DefinedName("rate", attr_text="99")  # local to T only
    t["A1"] = "=rate*2"
    t["A2"] = "=SUM(S!1:1048576)"
    t["A3"] = "=VLOOKUP(3,S!A:XFD,2,FALSE)"
    t["A4"] = "=SUM(S!A:A)"
    masse, strasse = wb.create_sheet("Masse"), wb.create_sheet("Maße")
    masse["A1"], strasse["A1"] = 1, 2
    t["A5"] = "=Maße!A1*10+Masse!A1"
    ev = WorkbookModel(_bytes(wb), "x.xlsx").evaluate()
    assert ev.value("T!A1") == 198  # Excel: 198 (the local name), never #REF!
    assert ev.value("T!A2") == sum(range(1, 6)) + sum(10 * r for r in range(1, 6))
    assert ev.value("T!A3") == 30 and ev.value("T!A4") == 15
    assert ev.value("T!A5") == 21  # two sheets, not one


def test_a_whole_column_reference_never_expands_to_a_million_cells():
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "S"
    ws["A1"] = 4
    ws["B1"] = "=SUM(S!A:A)"
    data = _bytes(wb)
    before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    ev = WorkbookModel(data, "col.xlsx").evaluate()
    grown_mib = (resource.getrusage(resource.RUSAGE_SELF).ru_maxrss - before) / 1024
    assert ev.value("S!B1") == 4
    # a bound, not a speed target: 1,048,576 cells would be far more
    assert grown_mib < 50, grown_mib
    assert not isinstance(ev.value("S!B1"), SheetError)


def test_structured_references_in_a_workbook():
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Parts"
    ws.append(["Name", "Qty", "Price"])
    ws.append(["a", 2, 3.0])
    ws.append(["b", 5, 1.5])
    ws.add_table(Table(displayName="Parts", ref="A1:C3"))
    ws["E1"] = "=SUM(Parts[Qty])"
    ws["D2"] = "=Parts[@Qty]*Parts[@Price]"
    ws["D3"] = "=Parts[@Qty]*Parts[@Price]"
    ev = WorkbookModel(_bytes(wb), "t.xlsx").evaluate()
    assert (ev.value("Parts!E1"), ev.value("Parts!D2"), ev.value("Parts!D3")) == (7, 6, 7.5)


def test_offset_and_indirect_read_through_the_evaluator():
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "S"
    for r in range(1, 6):
        ws.cell(r, 1, r)
        ws.cell(r, 2, f"=A{r}*10")
    ws["D1"] = "=OFFSET(A1,2,1)"
    ws["D2"] = "=SUM(OFFSET(A1,0,0,3,1))"
    ws["D3"] = '=INDIRECT("B4")+1'
    ws["D4"] = "=INDIRECT(E1)"
    ws["E1"] = "A5"
    ws["D5"] = "=OFFSET(D4,1,0)"  # points at itself while it computes: #REF!, never a loop
    model = WorkbookModel(_bytes(wb), "o.xlsx")
    ev = model.evaluate()
    assert [ev.value(f"S!D{r}") for r in range(1, 5)] == [30, 6, 41, 5]
    assert isinstance(ev.value("S!D5"), SheetError)
    assert model.evaluate({"S!A3": 7}).value("S!D1") == 70  # recomputed when inputs change
