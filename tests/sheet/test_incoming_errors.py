"""Every Excel error value reaching a function through the Windows add-in is
passed on as that error, never used as a number.

Driven through xlwings' own UDF call path (``XLPython.CallUDF`` -> ``call_udf``
-> xlwings' reading and cleaning of COM values), with the Windows-only modules
stubbed (tests/sheet/conftest.py). A cell's error value arrives from COM as an
integer: 0x800A0000 (signed, -2146828288) plus its CVErr number. xlwings
translates the classic seven to their text (``err_to_str``) and passes every
newer one on as the bare integer, which is what used to become a number.

CVErr numbers (check values): the classic seven and #SPILL! 2045 from
Microsoft's XlCVError reference page (learn.microsoft.com, Office VBA API,
excel.xlcverror); #GETTING_DATA 2043, #CONNECT! 2046, #BLOCKED! 2047,
#UNKNOWN! 2048, #FIELD! 2049, #CALC! 2050 from the XlCVError members of Excel's
type library as published in COM wrappers of it (not on Microsoft's page); the
integer form from xlwings' own table of the classic seven (xlwings 0.37.8,
xlwings/_xlwindows.py ``cell_errors``: #DIV/0! is -2146826281). 2051 stands
for an error value without a number here (such as #BUSY!).

Three call paths, one test per error kind and path, each over every argument
of every function (the other arguments at the function's worked example):

* ``value``: the error is the argument's value (an expression in the formula);
* ``cell``: a reference to one cell holding the error;
* ``range``: a two-cell column whose second cell holds the error (the first
  cell's result is checked against the same call without the error); for an
  argument read as one table (activities, a model's inputs), a two-column
  table whose value cell holds the error.
"""

from __future__ import annotations

from typing import Any

import pytest

from udfs.sheet.declare import Kind, Plan
from udfs.sheet.error_values import COM_ERROR_BASE
from udfs.sheet.registry import CATALOGUE_ORDER, PLANS

#: (CVErr number, the text the cell shows, the code a runtime with real error values gets)
KINDS: tuple[tuple[int, str, str], ...] = (
    (2000, "#NULL!", "#NULL!"),
    (2007, "#DIV/0!", "#DIV/0!"),
    (2015, "#VALUE!", "#VALUE!"),
    (2023, "#REF!", "#REF!"),
    (2029, "#NAME?", "#NAME?"),
    (2036, "#NUM!", "#NUM!"),
    (2042, "#N/A", "#N/A"),
    (2043, "#GETTING_DATA", "#N/A"),
    (2045, "#SPILL!", "#N/A"),
    (2046, "#CONNECT!", "#N/A"),
    (2047, "#BLOCKED!", "#N/A"),
    (2048, "#UNKNOWN!", "#N/A"),
    (2049, "#FIELD!", "#N/A"),
    (2050, "#CALC!", "#N/A"),
    (2051, "#N/A Excel error value number 2051", "#N/A"),
)
PATHS = ("value", "cell", "range")
MISSING = -2147352572  # COM's DISP_E_PARAMNOTFOUND: how VBA passes an omitted argument

FUNCTIONS_WITH_ARGS = [n for n in CATALOGUE_ORDER if PLANS[n].args]


def test_the_com_integers_are_the_published_ones() -> None:
    # xlwings' own table (xlwings/_xlwindows.py): #DIV/0! -2146826281, #N/A -2146826246
    assert COM_ERROR_BASE + 2007 == -2146826281
    assert COM_ERROR_BASE + 2042 == -2146826246
    assert COM_ERROR_BASE + 2045 == -2146826243  # #SPILL!, the value of the original report


def _typical(plan: Plan, i: int, path: str) -> Any:
    """Argument i at the function's worked example; omitted optional arguments
    as VBA passes them (missing), or as an empty cell inside a range."""
    example = plan.example or ()
    if i < len(example):
        return example[i]
    assert plan.args[i].optional, f"{plan.name}: the example lacks {plan.args[i].name}"
    return None if path == "range" else MISSING


def _args(plan: Plan, bad: int, value: Any) -> list[Any]:
    n = max(len(plan.example or ()), bad + 1)
    return [value if i == bad else _typical(plan, i, "value") for i in range(n)]


def _is_error(cell: Any, shown: str) -> bool:
    text = str(cell) if isinstance(cell, str) else ""
    return text == shown or text.startswith(shown + " ") or text.startswith(shown + " (")


def _error_passed(out: Any, shown: str, code: str) -> bool:
    if isinstance(out, list):  # a record spills its error across the row
        return all(_is_error(c, shown) for row in out for c in row)
    return _is_error(out, shown) and getattr(out, "code", code) == code


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize(("number", "shown", "code"), KINDS, ids=[str(k[0]) for k in KINDS])
def test_incoming_error_is_passed_on(
    xlwings_windows: Any, number: int, shown: str, code: str, path: str
) -> None:
    com_value = COM_ERROR_BASE + number
    failures = []
    checked = 0
    for name in FUNCTIONS_WITH_ARGS:
        plan = PLANS[name]
        for i, arg in enumerate(plan.args):
            if path == "range" and plan.kind is Kind.COLUMN:
                continue  # a spilled list takes single cells only
            if path == "value":
                out = xlwings_windows.call(name, *_args(plan, i, com_value))
                ok = _error_passed(out, shown, code)
            elif path == "cell":
                out = xlwings_windows.call(name, *_args(plan, i, xlwings_windows.cell(com_value)))
                ok = _error_passed(out, shown, code)
            elif not arg.per_element:  # a two-column table (activities, inputs) holding it
                table = xlwings_windows.cell((("x", com_value),))
                out = xlwings_windows.call(name, *_args(plan, i, table))
                ok = _error_passed(out, shown, code)
            else:
                good = _typical(plan, i, "range")
                column = xlwings_windows.cell(((good,), (com_value,)))
                out = xlwings_windows.call(name, *_args(plan, i, column))
                alone = xlwings_windows.call(name, *_args(plan, i, xlwings_windows.cell(good)))
                first = out[0] if isinstance(out, list) and len(out) == 2 else None
                ok = (
                    first is not None
                    and (first == [alone] or first == alone)  # a record's row is a list
                    and _error_passed([out[1]], shown, code)
                )
            checked += 1
            if not ok:
                failures.append((name, arg.name, out))
    assert checked > 60
    assert failures == []
