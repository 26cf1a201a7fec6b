"""Every input cell of every template carries the data validation its one
declaration (udfs.core.input_tables) derives, and that validation allows what
the core's check allows.

The sample values are the domains' own bounds (and one past them), not
reference values.
"""

from __future__ import annotations

import math
from typing import Any

import pytest
from openpyxl import Workbook
from openpyxl.worksheet.datavalidation import DataValidation

from udfs.core.input_tables import TABLES
from udfs.core.inputs import Input, InputTable
from udfs.core.validate import Domain, FreeText, Names, Options
from udfs.templates import TEMPLATES
from udfs.templates.input_rules import data_validation, excel_test, list_name, unit_formula


@pytest.fixture(scope="module")
def books() -> dict[str, Workbook]:
    return {name: build() for name, build in TEMPLATES.items()}


def _cell_of(wb: Workbook, name: str) -> tuple[str, str]:
    sheet, ref = next(iter(wb.defined_names[name].destinations))
    return sheet, ref.replace("$", "")


def _validation_of(wb: Workbook, sheet: str, cell: str) -> DataValidation | None:
    hits = [dv for dv in wb[sheet].data_validations.dataValidation if cell in dv.sqref]
    assert len(hits) <= 1, (sheet, cell)
    return hits[0] if hits else None


def _samples(inp: Input) -> list[Any]:
    d = inp.domain
    out: list[Any] = [inp.default]
    if isinstance(d, Domain):
        for bound in (d.lower, d.upper):
            if bound is not None:
                out += [bound - 1.0, float(bound), bound + 1e-9, bound - 1e-9, bound + 1.0]
        out += [0.0, 2.5, -7.0, 1e6, "abc"]  # text in a number's cell: the wrong type
    elif isinstance(d, Options):
        out += [*d.choices, "sideways", 3.0]
    return out


def _excel_allows(dv: DataValidation, value: Any) -> bool:
    """What Excel's rule of type decimal, whole or list (literal) allows."""
    if value is None:
        return bool(dv.allow_blank)
    if dv.type == "list":
        return value in dv.formula1.strip('"').split(",")
    if not isinstance(value, float) or (dv.type == "whole" and value != round(value)):
        return False
    a = float(dv.formula1)
    b = float(dv.formula2) if dv.formula2 is not None else math.nan
    return {
        "between": a <= value <= b,
        "greaterThan": value > a,
        "greaterThanOrEqual": value >= a,
        "lessThan": value < a,
        "lessThanOrEqual": value <= a,
    }[dv.operator]


@pytest.mark.parametrize("table", TABLES, ids=[t.key for t in TABLES])
def test_each_input_cell_has_the_rule_its_declaration_derives(
    books: dict[str, Workbook], table: InputTable
) -> None:
    wb = books[table.key]
    for inp in table:
        assert inp.name in wb.defined_names, inp.name
        sheet, cell = _cell_of(wb, inp.name)
        dv = _validation_of(wb, sheet, cell)
        if isinstance(inp.domain, FreeText):
            assert dv is None, inp.name
            continue
        assert dv is not None, inp.name
        want = data_validation(inp, cell)
        got = (dv.type, dv.operator, dv.formula1, dv.formula2, bool(dv.allow_blank), dv.error,
               dv.errorStyle or "stop")
        assert got == (want.type, want.operator, want.formula1, want.formula2,
                       bool(want.allow_blank), want.error, want.errorStyle), inp.name
        assert inp.name in dv.error and inp.domain.allowed in dv.error  # names input and range
        if isinstance(inp.domain, Names):
            assert dv.formula1 == list_name(inp.domain) and dv.formula1 in wb.defined_names
            assert dv.errorStyle == "warning"  # an alias in another spelling is asked, not refused
        elif dv.type == "custom":  # the same test as the check cells (the engine runs those)
            assert dv.formula1 in excel_test(inp, cell)
        else:
            for value in _samples(inp):
                allowed = table.reason(inp.name, value) is None
                assert _excel_allows(dv, value) is allowed, (inp.name, value)


def test_the_workbook_writes_every_default_and_unit(books: dict[str, Workbook]) -> None:
    for table in TABLES:
        wb = books[table.key]
        for inp in table:
            sheet, cell = _cell_of(wb, inp.name)
            assert wb[sheet][cell].value == inp.default, inp.name


def test_a_unit_picked_by_another_input_is_a_formula(books: dict[str, Workbook]) -> None:
    from udfs.core.sizing_table import CELL_SIZING

    wb = books["cell_sizing"]
    for name in ("in_target", "in_loading", "in_order_size"):
        inp = CELL_SIZING.get(name)
        sheet, cell = _cell_of(wb, name)
        row = int(cell[1:])
        assert wb[sheet][f"D{row}"].value == unit_formula(inp)
        assert all(f'"{c.unit}"' in unit_formula(inp) for c in inp.choices)
