"""The compiled workbook model: native functions, our functions, overrides, cache, diagnostics.

Expected values are computed by direct Python calls beside each check (the
arithmetic itself is common practice), never typed in by hand.
"""

from __future__ import annotations

import io
import math
import statistics
from collections.abc import Callable
from typing import Any

import openpyxl
import pytest
from openpyxl.workbook.defined_name import DefinedName
from openpyxl.worksheet.formula import ArrayFormula

from udfs.engine import model as model_mod
from udfs.engine.functions import register
from udfs.engine.model import load_model
from udfs.sheet.error_values import SheetError
from udfs.xlsx.file_errors import WorkbookError
from udfs.xlsx.refs import CellRef


def code(value: object) -> str:
    """The code of an error value (fails if ``value`` is not one)."""
    assert isinstance(value, SheetError), value
    return value.code


def _double(x):
    if isinstance(x, SheetError):
        return x
    if not isinstance(x, (int, float)) or isinstance(x, bool):
        return SheetError("#VALUE!", f"x must be a number (got {x!r})")
    if x < 0:
        return SheetError("#NUM!", f"x must be >= 0 (got {x:g})")
    return 2.0 * x


def _row_sum(rng):
    rows = rng if isinstance(rng, list) else [[rng]]
    return sum(v for row in rows for v in row if isinstance(v, (int, float)))


def _grid(n, m):
    return [[10.0 * i + j for j in range(int(m))] for i in range(int(n))]


FAKE: dict[str, Callable[..., Any]] = {
    "CW_TEST_DOUBLE": _double,
    "CW_TEST_ROWSUM": _row_sum,
    "CW_TEST_GRID": _grid,
}
register(FAKE)


def _bytes(wb: openpyxl.Workbook) -> bytes:
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def _name(wb, name, ref):
    wb.defined_names[name] = DefinedName(name, attr_text=ref)


@pytest.fixture
def native_book():
    """Excel's own functions as the templates use them."""
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Data"
    values = [3.0, 7.5, 1.25, 9.0, 4.0]
    for i, v in enumerate(values, start=1):
        ws.cell(i, 1, v)
        ws.cell(i, 2, i * 2.0)
        ws.cell(i, 3, f"item{i}")
    f = wb.create_sheet("F")
    formulas = {
        "A1": "=SUM(Data!A1:A5)",
        "A2": "=SUMPRODUCT(Data!A1:A5,Data!B1:B5)",
        "A3": '=IF(Data!A1>2,"big","small")',
        "A4": '=IFERROR(1/0,"fallback")',
        "A5": "=ROUNDUP(Data!A2/4,0)",
        "A6": "=ROUNDDOWN(Data!A2/4,0)",
        "A7": "=ROUND(Data!A3*3.14159,2)",
        "A8": "=CEILING(Data!A2,2)",
        "A9": "=INDEX(Data!A1:A5,MATCH(9,Data!A1:A5,0))",
        "A10": '=INDEX(Data!C1:C5,MATCH("item3",Data!C1:C5,0))',
        "A11": "=MIN(Data!A1:A5)",
        "A12": "=MAX(Data!A1:A5)",
        "A13": "=AND(Data!A1>1,Data!A2>1)",
        "A14": "=OR(Data!A1>100,Data!A3>100)",
        "A15": "=AVERAGE(Data!A1:A5)",
        "A16": "=ABS(-Data!A2)+SQRT(Data!A4)",
        "A17": "=COUNT(Data!A1:C5)",
        "A18": '=Data!C1&"-"&Data!C2',
        "A19": "=VLOOKUP(4,Data!A1:B5,2,FALSE)",
        "A20": "=ISERROR(1/0)",
        "A21": "=MOD(17,5)+INT(7.9)",
        "A22": "=POWER(2,10)-EXP(0)",
        "A23": "=IFERROR(CEILING(Data!A3,0.5),0)",
    }
    for ref, text in formulas.items():
        f[ref] = text
    return _bytes(wb), values


def test_native_functions_used_by_templates(native_book):
    data, v = native_book
    ev = load_model(data, "native.xlsx").evaluate()
    b = [2.0, 4.0, 6.0, 8.0, 10.0]
    expect = {
        "A1": sum(v),
        "A2": sum(x * y for x, y in zip(v, b, strict=True)),
        "A3": "big" if v[0] > 2 else "small",
        "A4": "fallback",
        "A5": math.ceil(v[1] / 4),
        "A6": math.floor(v[1] / 4),
        "A7": round(v[2] * 3.14159, 2),
        "A8": 2 * math.ceil(v[1] / 2),
        "A9": 9.0,
        "A10": "item3",
        "A11": min(v),
        "A12": max(v),
        "A13": v[0] > 1 and v[1] > 1,
        "A14": v[0] > 100 or v[2] > 100,
        "A15": statistics.mean(v),
        "A16": abs(-v[1]) + math.sqrt(v[3]),
        "A17": 10,  # numbers in A1:C5: five in A, five in B, none in C (text)
        "A18": "item1-item2",
        "A19": 10.0,  # B of the row where A is 4 (row 5)
        "A20": True,
        "A21": 17 % 5 + math.floor(7.9),
        "A22": 2**10 - math.exp(0),
        "A23": 0.5 * math.ceil(v[2] / 0.5),
    }
    for ref, want in expect.items():
        got = ev.value(f"F!{ref}")
        if isinstance(want, float):
            assert got == pytest.approx(want, rel=1e-12), ref
        else:
            assert got == want, ref
    assert not ev.errors()


def _fake_book():
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "In"
    ws["A1"] = 2.0
    ws["A2"] = 3.0
    ws["A3"] = -1.0
    ws["B1"] = "text"
    c = wb.create_sheet("Calc")
    c["A1"] = "=CW_TEST_DOUBLE(In!A1)"
    c["A2"] = "=CW_TEST_DOUBLE(In!A1)+CW_TEST_DOUBLE(In!A2)"
    c["A3"] = "=CW_TEST_DOUBLE(In!A3)"
    c["A4"] = '=IFERROR(CW_TEST_DOUBLE(In!A3),"neg")'
    c["A5"] = "=ISERROR(CW_TEST_DOUBLE(In!B1))"
    c["A6"] = "=CW_TEST_DOUBLE(1/0)"
    c["A7"] = "=CW_TEST_ROWSUM(In!A1:A5)"
    c["A8"] = "=CW_TEST_GRID(2,3)"
    c["B1"] = ArrayFormula("B1:D2", "=CW_TEST_GRID(2,3)")
    c["A9"] = "=ROUNDUP(CW_TEST_DOUBLE(In!A2)/4,0)"
    _name(wb, "x_in", "In!$A$1")
    _name(wb, "doubled", "Calc!$A$1")
    _name(wb, "a_range", "In!$A$1:$A$3")
    return wb


def test_our_functions_evaluate_like_direct_calls_and_errors_propagate():
    ev = load_model(_bytes(_fake_book()), "fake.xlsx").evaluate()
    assert ev.value("Calc!A1") == _double(2.0)
    assert ev.value("Calc!A2") == _double(2.0) + _double(3.0)
    err = ev.value("Calc!A3")
    assert isinstance(err, SheetError) and err.code == _double(-1.0).code
    assert ev.value("Calc!A4") == "neg"  # IFERROR sees a real error value
    assert ev.value("Calc!A5") is True
    assert code(ev.value("Calc!A6")) == "#DIV/0!"  # propagated, not turned into #VALUE!
    assert ev.value("Calc!A7") == _row_sum([[2.0], [3.0], [-1.0], [None], [None]])
    assert ev.value("Calc!A8") == _grid(2, 3)[0][0]  # one cell shows the top-left value
    for r in range(2):
        for c in range(3):
            assert ev.value(CellRef("Calc", 1 + r, 2 + c)) == _grid(2, 3)[r][c]
    assert ev.value("Calc!A9") == math.ceil(_double(3.0) / 4)


def test_error_cells_are_reported_with_address_and_reason():
    ev = load_model(_bytes(_fake_book()), "fake.xlsx").evaluate()
    lines = [str(d) for d in ev.errors()]
    a3 = next(line for line in lines if line.startswith("Calc!A3:"))
    assert "#NUM!" in a3 and "x must be >= 0 (got -1)" in a3
    assert any(line.startswith("Calc!A6:") and "#DIV/0!" in line for line in lines)


def test_defined_names_of_single_cells_are_the_summary():
    ev = load_model(_bytes(_fake_book()), "fake.xlsx").evaluate()
    named = {n.name: n for n in ev.named()}
    assert set(named) == {"x_in", "doubled"}  # a_range refers to three cells
    assert named["x_in"].value == 2.0 and not named["x_in"].is_output
    assert named["doubled"].value == _double(2.0) and named["doubled"].is_output


def test_overrides_of_inputs_by_address_and_by_name():
    model = load_model(_bytes(_fake_book()), "fake.xlsx")
    ev = model.evaluate({"In!A1": 10.0})
    assert ev.value("Calc!A1") == _double(10.0)
    assert ev.value("doubled") == _double(10.0)
    assert ev.value("In!A1") == 10.0
    assert model.evaluate({"x_in": 4.0}).value("Calc!A2") == _double(4.0) + _double(3.0)
    # a range member and an empty cell inside a range reach the function
    ev = model.evaluate({"In!A4": 5.0})
    assert ev.value("Calc!A7") == _row_sum([[2.0], [3.0], [-1.0], [5.0], [None]])
    # an empty cell no formula refers to: compiled as a variant, then written out
    ev = model.evaluate({"In!Z9": 1.0, "In!A1": 1.5})
    assert ev.value("In!Z9") == 1.0 and ev.value("Calc!A1") == _double(1.5)


def test_warm_evaluations_agree_with_a_fresh_model():
    model = load_model(_bytes(_fake_book()), "fake.xlsx")
    for a, b in [(1.0, 2.0), (5.0, 0.5), (0.0, 7.0), (-3.0, 1.0)]:
        ev = model.evaluate({"In!A1": a, "In!A2": b})
        full = model_mod.WorkbookModel(model.data, "fresh.xlsx").evaluate({"In!A1": a, "In!A2": b})
        assert ev.values == full.values


def test_cache_by_content_hash():
    data = _bytes(_fake_book())
    m1 = load_model(data, "one.xlsx")
    m2 = load_model(bytes(data), "two.xlsx")
    assert m1 is m2 and m2.name == "two.xlsx"
    wb = _fake_book()
    wb["In"]["A1"] = 99.0
    assert load_model(_bytes(wb), "three.xlsx") is not m1
    register({"CW_TEST_DOUBLE": lambda x: _double(x)})  # a new registry generation
    try:
        assert load_model(data, "one.xlsx") is not m1
    finally:
        register({"CW_TEST_DOUBLE": _double})


def test_formula_keys_are_every_cell_a_formula_fills_once_in_order():
    # the keys are the plan's own (a sorted list searched by bisection, no second set):
    # each formula cell once, every cell of an array formula's range, nothing else
    model = load_model(_bytes(_fake_book()), "fake.xlsx")
    calc = model.sheet_names.index("Calc")
    expected = {(calc, r, 1) for r in range(1, 10)}
    expected |= {(calc, r, c) for r in (1, 2) for c in (2, 3, 4)}  # B1:D2
    assert model.formula_keys == sorted(expected)
    for ref, formula in [("Calc!A9", True), ("Calc!D2", True), ("Calc!E1", False),
                         ("Calc!A10", False), ("In!A1", False)]:
        assert model.is_formula(model.resolve(ref)) is formula, ref


@pytest.mark.parametrize(
    ("target", "message"),
    [
        ("Calc!A1", "holds a formula"),
        ("Calc!C2", "part of the array formula B1:D2"),
        ("Nope!A1", "unknown sheet 'Nope'"),
        ("A1", "say which sheet"),
        ("no_such_name", "neither a cell"),
        ("In!XFE1", "neither a cell"),
    ],
)
def test_bad_overrides_are_refused_with_a_reason(target, message):
    model = load_model(_bytes(_fake_book()), "fake.xlsx")
    with pytest.raises(WorkbookError, match=message.replace("(", r"\(")):
        model.evaluate({target: 1.0})


def test_override_values_must_be_cell_values():
    model = load_model(_bytes(_fake_book()), "fake.xlsx")
    with pytest.raises(WorkbookError, match="cannot hold nan"):
        model.evaluate({"In!A1": float("nan")})
    with pytest.raises(WorkbookError, match="number, TRUE/FALSE or text"):
        model.evaluate({"In!A1": [1, 2]})  # type: ignore[dict-item]


def test_circular_references_and_unsupported_functions_are_reported():
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "S"
    ws["A1"] = "=A2+1"
    ws["A2"] = "=A1+1"
    ws["A3"] = "=A2*2"
    ws["A4"] = "=B4"
    ws["B4"] = "=B4+1"
    ws["A5"] = "=NOT_A_FUNCTION(1)"
    ws["A6"] = '="NOPE(1) is text"'
    ws["A7"] = "=1+1"
    ev = load_model(_bytes(wb), "circ.xlsx").evaluate()
    text = "\n".join(str(d) for d in ev.errors())
    assert "S!A1: circular reference: S!A1 -> S!A2; not evaluated" in text
    assert "S!B4: circular reference: S!B4" in text
    assert "S!A3: computed from a cell that was not evaluated" in text
    assert "S!A5: unsupported function NOT_A_FUNCTION" in text
    assert "NOPE" not in text  # inside a string: not a call
    assert ev.value("S!A7") == 2
    assert "Traceback" not in text


def test_external_workbooks_are_never_opened(tmp_path):
    other = openpyxl.Workbook()
    other.active.title = "S"
    other.active["A1"] = 123.0
    other.save(tmp_path / "other.xlsx")
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "S"
    ws["A1"] = f"='{tmp_path}/[other.xlsx]S'!A1"
    ws["A2"] = "='[1]S'!A1"
    ws["A3"] = "=5"
    ev = load_model(_bytes(wb), "ext.xlsx").evaluate()
    assert ev.value("S!A1") != 123.0  # never read: kept as it was (no cached value here)
    kept = {d.ref.coordinate: d.message for d in ev.diagnostics if d.kind == "unsupported"}
    assert "external reference" in kept["A1"] and "external reference" in kept["A2"]
    assert ev.value("S!A3") == 5


def test_sheet_names_with_apostrophes_and_parentheses_work():
    wb = openpyxl.Workbook()
    wb.active.title = "It's"
    wb.active["A1"] = 3.0
    other = wb.create_sheet("Inputs (2)")
    other["A1"] = 7.0
    calc = wb.create_sheet("Calc")
    calc["A1"] = "='It''s'!A1*2"
    calc["A2"] = "='Inputs (2)'!A1*2"  # not a call of a function INPUTS
    ev = load_model(_bytes(wb), "apos.xlsx").evaluate()
    assert (ev.value("Calc!A1"), ev.value("Calc!A2")) == (6.0, 14.0)


def test_sheet_names_with_spaces_and_dots_work():
    wb = openpyxl.Workbook()
    wb.active.title = "Cell design"
    wb.active["A1"] = 4.0
    other = wb.create_sheet("v1.2")
    other["A1"] = "='Cell design'!A1*2"
    model = load_model(_bytes(wb), "names.xlsx")
    assert model.evaluate().value("'v1.2'!A1") == 8.0
    assert model.evaluate({"'Cell design'!A1": 5.0}).value("v1.2!A1") == 10.0


def test_nested_formula_at_excels_limit_evaluates():
    wb = openpyxl.Workbook()
    wb.active["A1"] = "=" + "ABS(" * 64 + "-2" + ")" * 64
    assert load_model(_bytes(wb), "deep.xlsx").evaluate().value("Sheet!A1") == 2
