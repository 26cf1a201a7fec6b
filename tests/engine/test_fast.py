"""The lean evaluator (udfs.engine.fast) gives exactly the full engine's results.

Every expected value here is the full `formulas` engine's own result for the
same workbook and inputs (CELLWRIGHT_FAST off), never typed in; the inputs are
demo data. Equality is exact, value and type.
"""

from __future__ import annotations

import io
from pathlib import Path
from typing import Any

import numpy as np
import openpyxl
import pytest
import schedula as sh
from formulas.functions import get_functions
from formulas.functions.operators import OPERATORS
from formulas.tokens.operand import Error
from openpyxl.workbook.defined_name import DefinedName
from openpyxl.worksheet.formula import ArrayFormula

from udfs.engine import fast as fast_mod
from udfs.engine import model as model_mod
from udfs.engine.fast import FastPlan, relative_key
from udfs.engine.functions import ensure_registered
from udfs.engine.model import WorkbookModel
from udfs.engine.scalar_ops import shortcut_for

TEMPLATES = sorted((Path(__file__).resolve().parents[2] / "workbook_templates").glob("*.xlsx"))
ROWS = 40


def _bytes(wb: openpyxl.Workbook) -> bytes:
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def mixed_book() -> bytes:
    """Native and CW_ functions, arrays, errors, IFERROR, cross-sheet refs, names, blanks."""
    wb = openpyxl.Workbook()
    inp = wb.active
    inp.title = "In puts"  # a quoted sheet name
    for r, v in enumerate([2.5, 4.0, "LiFePO4", None, 7.0, True, "empty", "3", 0.0], start=1):
        if v is not None:
            inp.cell(r, 1, v)
    calc = wb.create_sheet("Calc")
    for r in range(1, ROWS + 1):  # filled-down columns: one parse each, rebound per row
        calc[f"A{r}"] = f"='In puts'!$A$1*{r}/10+'In puts'!$A$2"
        calc[f"B{r}"] = f"=CW_CAPACITY(A{r},160)"
        calc[f"C{r}"] = f"=IF(B{r}>0.5,ROUNDUP(B{r}/'In puts'!$A$2,0),MAX(B{r},0.25))"
        calc[f"D{r}"] = f"=IFERROR(1/(A{r}-'In puts'!$A$1*{r % 3}),\"div\")"
        calc[f"E{r}"] = f"=A{r}+A$1-$A{r}+IF(ISBLANK('In puts'!$A$4),B{r},-B{r})"
    other = wb.create_sheet("Summary")
    rows = [
        f"=SUM(Calc!C1:C{ROWS})+SUMPRODUCT(Calc!A1:A{ROWS},Calc!B1:B{ROWS})",
        f"=INDEX(Calc!A1:A{ROWS},MATCH(MAX(Calc!C1:C{ROWS}),Calc!C1:C{ROWS},0))",
        "=ISBLANK(INDEX('In puts'!A1:A9,4))",  # a reference to an empty cell stays empty
        "=CW_MOLAR_MASS('In puts'!A3)*k",
        "=CW_CAPACITY('In puts'!A2,-1)",  # an error from our function
        "=IFERROR(CW_CAPACITY('In puts'!A2,-1),\"bad\")",
        "='In puts'!A3&\" x\"&'In puts'!A1&'In puts'!A4",
        "=AND('In puts'!A1>0,OR('In puts'!A2<0,'In puts'!A5>6))",
        "=COUNT('In puts'!A1:A9)+COUNTA('In puts'!A1:A9)+SUM(a_range)",
        "='In puts'!A7&'In puts'!A8+1",
        "='In puts'!A6+'In puts'!A7",  # TRUE + text "empty": #VALUE!
        "=1/'In puts'!A9",
        "=NA()",
        "=AVERAGE(Calc!D1:D10)",
        "=ROUND(-'In puts'!A1^2+2^-1,3)&\"\"",
        '=TEXT(k,"0.00")',
        "=B1+D1",  # reads the array formula's cells
        "={1,2;3,4}",
    ]
    for i, text in enumerate(rows, start=1):
        other[f"A{i}"] = text
    other["B1"] = ArrayFormula("B1:E1", "=CW_SERIES_PARALLEL(48,5000,3.65,'In puts'!A2*10)")
    other["B3"] = ArrayFormula("B3:C4", "=Calc!A1:B2*2")
    wb.defined_names["k"] = DefinedName("k", attr_text="'In puts'!$A$1")
    wb.defined_names["a_range"] = DefinedName("a_range", attr_text="'In puts'!$A$1:$A$5")
    wb.defined_names["total"] = DefinedName("total", attr_text="Summary!$A$1")
    return _bytes(wb)


def _models(data: bytes, monkeypatch: pytest.MonkeyPatch) -> tuple[WorkbookModel, WorkbookModel]:
    monkeypatch.setattr(model_mod, "FAST", True)
    fast = WorkbookModel(data, "fast.xlsx")
    monkeypatch.setattr(model_mod, "FAST", False)
    full = WorkbookModel(data, "full.xlsx")
    monkeypatch.setattr(model_mod, "FAST", True)
    return fast, full


def _same(a: dict[Any, Any], b: dict[Any, Any]) -> None:
    assert a.keys() == b.keys()
    for k in a:
        assert (type(a[k]), a[k]) == (type(b[k]), b[k]), k


OVERRIDES = [
    {"'In puts'!A1": 5.0},
    {"'In puts'!A1": 1.0, "'In puts'!A4": 3.0},  # an empty cell inside ranges
    {"k": 0.5, "'In puts'!A3": "NaCl"},
    {"'In puts'!A2": "text"},
    {"'In puts'!A1": 0.1 + 0.2},  # more than 15 decimals into a value cell
    {"'In puts'!A4": 0.1 + 0.2},  # ... into an empty cell: the engine rounds it
    {"'In puts'!Z9": 2.0},  # an empty cell nothing reads
]


def test_mixed_workbook_runs_fast_and_equals_the_engine(monkeypatch):
    fast, full = _models(mixed_book(), monkeypatch)
    assert fast.fast and not full.fast
    _same(fast.evaluate().values, full.evaluate().values)
    for ov in OVERRIDES:
        for _ in range(2):  # first and repeated evaluation with the same input cells
            _same(fast.evaluate(ov).values, full.evaluate(ov).values)
    assert [str(d) for d in fast.evaluate().errors()] == [str(d) for d in full.evaluate().errors()]


def test_filled_columns_are_parsed_once_per_relative_formula():
    ensure_registered()
    plan = FastPlan(model_mod.load_workbook(io.BytesIO(mixed_book())))
    column = [u for u in plan.units if u.sheet == "CALC"]
    assert len(column) == 5 * ROWS
    # five filled columns; column D has rows whose two numbers are equal (one node, so
    # those rows cannot take other numbers) and column E's first row has A1, A$1 and $A1
    # (one node there, three references below): at most two parses in each
    assert len({id(u.template) for u in column}) <= 7


def test_relative_key_tells_moved_copies_from_different_formulas():
    assert relative_key("=A1*2", 1, 2)[0] == relative_key("=A5*3", 5, 2)[0]
    assert relative_key("=A1*2", 1, 2)[0] != relative_key("=A1*2", 5, 2)[0]  # absolute row
    assert relative_key("=$A$1", 1, 2)[0] == relative_key("=$A$1", 9, 9)[0]
    assert relative_key('="A1"&A1', 1, 1)[0] == '="A1"&R[0]C[0]'  # text is not a reference
    assert relative_key("='v1.2'!B2+LOG10(C3)", 2, 2)[0] == "='v1.2'!R[0]C[0]+LOG10(R[1]C[1])"


def test_scenario_function_equals_full_evaluations(monkeypatch):
    fast, full = _models(mixed_book(), monkeypatch)
    targets = ["k", "'In puts'!A2"]
    outputs = ["total", "Summary!A2", "Summary!C1", "'In puts'!A2", "'In puts'!A3"]
    run = fast.scenario_function(targets, outputs)
    for values in [(1.0, 2.0), (3.5, 0.25), (0.0, 4.0), (2.5, 4.0)]:
        ev = full.evaluate(dict(zip(targets, values, strict=True)))
        expected = [ev.value(o) for o in outputs]
        got = run(*values)
        assert [(type(v), v) for v in got] == [(type(v), v) for v in expected]


@pytest.mark.parametrize("path", TEMPLATES, ids=lambda p: p.stem)
def test_templates_run_fast_and_equal_the_engine(path, monkeypatch):
    fast, full = _models(path.read_bytes(), monkeypatch)
    assert fast.fast
    _same(fast.evaluate().values, full.evaluate().values)
    inputs = [n for n, ref in fast.named_cells.items() if not fast.is_formula(ref)]
    numeric = [n for n in inputs if isinstance(fast.evaluate().value(n), float)][:3]
    assert numeric
    ov = {n: fast.evaluate().value(n) * 1.1 for n in numeric}  # type: ignore[operator]
    _same(fast.evaluate(ov).values, full.evaluate(ov).values)


def test_unsupported_workbooks_use_the_full_engine():
    wb = openpyxl.Workbook()
    ws = wb.active
    ws["A1"] = "=A2+1"
    ws["A2"] = "=A1+1"  # circular
    assert not WorkbookModel(_bytes(wb), "c.xlsx").fast
    wb = openpyxl.Workbook()
    wb.active["A1"] = "=NOT_A_FUNCTION(1)"
    model = WorkbookModel(_bytes(wb), "u.xlsx")
    assert not model.fast
    assert "unsupported function NOT_A_FUNCTION" in str(model.evaluate().errors()[0])


def test_a_failing_run_falls_back_to_the_full_engine(monkeypatch):
    fast, full = _models(mixed_book(), monkeypatch)
    fast.evaluate()

    def boom(self, unit, cells):
        raise fast_mod.FastRunError("test")

    monkeypatch.setattr(FastPlan, "_run", boom)
    ev = fast.evaluate({"k": 3.0})
    assert not fast.fast
    _same(ev.values, full.evaluate({"k": 3.0}).values)


ELEMENTS = [0, 1.5, -2.0, 3, "4", "text", "", True, False, sh.EMPTY, 1e308]
ELEMENTS += [Error.errors["#DIV/0!"], Error.errors["#N/A"]]
# not 1e308 as a second argument: ROUND(x, 1e308) computes 10**int(1e308) in the engine
SECOND = [e for e in ELEMENTS if not (isinstance(e, float) and abs(e) > 1e300)][::2]
FUNCTIONS = {name: OPERATORS[name] for name in ("+", "-", "*", "/", "^", "=", "<", ">=", "<>")}
FUNCTIONS.update({name: get_functions()[name] for name in ("ROUND", "ROUNDUP", "MOD", "POWER")})
FUNCTIONS["IF"] = get_functions()["IF"]["function"]
FUNCTIONS["IFERROR"] = get_functions()["IFERROR"]["function"]


def _shape_of(value: Any) -> tuple[Any, ...]:
    arr = np.asarray(value, dtype=object)
    return (type(value).__name__, arr.shape, [(type(v), repr(v)) for v in arr.ravel()])


@pytest.mark.parametrize("name", sorted(FUNCTIONS))
def test_one_cell_shortcut_equals_the_engine_function(name):
    func = FUNCTIONS[name]
    shortcut = shortcut_for(func)
    assert shortcut is not None
    n = 3 if name == "IF" else 2
    with np.errstate(all="ignore"):
        for x in ELEMENTS:
            for y in SECOND:
                for args in ([x, y, 1.0][:n], [np.array([[x]], object), y, 2.0][:n]):
                    assert _shape_of(shortcut(func, list(args))) == _shape_of(func(*args)), args


def test_shortcut_leaves_other_functions_and_shapes_to_the_engine():
    assert shortcut_for(get_functions()["SUM"]) is None
    assert shortcut_for(OPERATORS["&"]) is None  # its own empty-cell rule
    plus = OPERATORS["+"]
    wide = np.array([[1.0, 2.0]], object)
    assert np.asarray(shortcut_for(plus)(plus, [wide, 1.0])).tolist() == [[2.0, 3.0]]  # type: ignore[misc]
