"""Our deliberate changes to Excel's functions in the engine (udfs/engine/deviations.py),
checked through a workbook, stacked and cell by cell."""

from __future__ import annotations

import io

import openpyxl

from udfs.engine.model import WorkbookModel

# Worked examples of Microsoft Support's pages for the ROUND, ROUNDUP and ROUNDDOWN
# functions (from memory). Several are decimal ties that binary rounding gets wrong:
# 2.15 is stored as 2.1499999999999999, -1.475 as -1.4750000000000001.
EXAMPLES = [
    ("ROUND(2.15, 1)", 2.2),
    ("ROUND(2.149, 1)", 2.1),
    ("ROUND(-1.475, 2)", -1.48),
    ("ROUND(21.5, -1)", 20.0),
    ("ROUND(626.3, -3)", 1000.0),
    ("ROUND(1.98, -1)", 0.0),
    ("ROUND(-50.55, -2)", -100.0),
    ("ROUNDUP(3.2, 0)", 4.0),
    ("ROUNDUP(76.9, 0)", 77.0),
    ("ROUNDUP(3.14159, 3)", 3.142),
    ("ROUNDUP(-3.14159, 1)", -3.2),
    ("ROUNDUP(31415.92654, -2)", 31500.0),
    ("ROUNDDOWN(3.2, 0)", 3.0),
    ("ROUNDDOWN(76.9, 0)", 76.0),
    ("ROUNDDOWN(3.14159, 3)", 3.141),
    ("ROUNDDOWN(-3.14159, 1)", -3.1),
    ("ROUNDDOWN(31415.92654, -2)", 31400.0),
    # Excel holds 15 significant digits: 0.1*3 is 0.3 there (common practice)
    ("ROUNDUP(0.1*3, 1)", 0.3),
    ("ROUND(1.005, 2)", 1.01),
]


def test_rounding_is_excels_decimal_rounding() -> None:
    wb = openpyxl.Workbook()
    ws = wb.active
    for r, (formula, _want) in enumerate(EXAMPLES, start=1):
        ws[f"A{r}"] = f"={formula}"
    # a filled-down block: evaluated in one stacked call
    ties = [1.005, 2.675, 0.285, -1.475, 8.345]
    for r, x in enumerate(ties, start=1):
        ws[f"B{r}"] = x
        ws[f"C{r}"] = f"=ROUND(B{r},2)"
    buf = io.BytesIO()
    wb.save(buf)
    values = WorkbookModel(buf.getvalue(), "round.xlsx").evaluate()
    for r, (formula, want) in enumerate(EXAMPLES, start=1):
        assert values.value(f"Sheet!A{r}") == want, formula
    got = [values.value(f"Sheet!C{r}") for r in range(1, len(ties) + 1)]
    assert got == [1.01, 2.68, 0.29, -1.48, 8.35]


def test_rounding_refuses_huge_digits_and_bad_numbers() -> None:
    wb = openpyxl.Workbook()
    ws = wb.active
    ws["A1"] = "=ROUND(2.5, 1E+300)"
    ws["A2"] = '=ROUND("x", 1)'
    ws["A3"] = "=ROUND(2.5, -1001)"
    buf = io.BytesIO()
    wb.save(buf)
    values = WorkbookModel(buf.getvalue(), "round.xlsx").evaluate()
    assert [str(values.value(f"Sheet!A{r}")) for r in (1, 2, 3)] == ["#NUM!", "#VALUE!", "#NUM!"]
