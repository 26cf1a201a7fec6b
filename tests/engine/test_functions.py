"""Our spreadsheet functions inside the `formulas` engine: values across the seam, messages."""

from __future__ import annotations

import numpy as np
import pytest
import schedula as sh
from formulas.functions import Array, get_functions
from formulas.ranges import Ranges
from formulas.tokens.operand import Error

from udfs.engine.functions import (
    Messages,
    SheetFunction,
    ensure_registered,
    register,
    registered_names,
    to_cell,
    to_engine,
)
from udfs.sheet.error_values import SheetError
from udfs.sheet.registry import FUNCTIONS


def test_engine_values_become_plain_cell_values():
    assert to_cell(sh.EMPTY) is None
    assert to_cell(np.float64(2.5)) == 2.5 and type(to_cell(np.float64(2.5))) is float
    assert to_cell(np.bool_(True)) is True
    assert to_cell(np.int64(3)) == 3.0 and type(to_cell(np.int64(3))) is float  # Excel: doubles
    err = to_cell(Error.errors["#NUM!"])
    assert isinstance(err, SheetError) and err.code == "#NUM!"
    assert to_cell("LiFePO4") == "LiFePO4"


def test_sheet_errors_become_the_engines_own_error_values():
    # identity matters: the engine's ISERR/ISNA compare with `is`
    for code in ("#NUM!", "#VALUE!", "#N/A", "#DIV/0!", "#REF!", "#NAME?", "#NULL!"):
        assert to_engine(SheetError(code, "why")) is Error.errors[code]


def test_non_finite_results_become_num_errors():
    assert to_engine(float("nan")) is Error.errors["#NUM!"]
    assert to_engine(float("inf")) is Error.errors["#NUM!"]
    assert to_engine(np.float64(-np.inf)) is Error.errors["#NUM!"]


def test_error_arguments_reach_the_function_as_in_excel():
    calls = []

    def spy(*args):
        calls.append(args)
        return 1.0

    f = SheetFunction("CW_TEST_SPY", spy)
    assert f(Error.errors["#DIV/0!"], 2.0) == 1.0
    (args,) = calls
    assert isinstance(args[0], SheetError) and args[0].code == "#DIV/0!" and args[1] == 2.0


@pytest.mark.parametrize(
    "cells",
    [
        (None, SheetError("#DIV/0!")),  # an empty required argument left of an error
        (SheetError("#N/A"), None),
        ("abc", SheetError("#N/A")),
        (SheetError("#REF!"), -1.0),
        (-1.0, SheetError("#REF!")),
    ],
)
def test_the_leftmost_bad_argument_wins_as_with_the_add_in(cells):
    """The engine gives the error the add-in gives in Excel for the same cells."""
    sheet = FUNCTIONS["CW_CAPACITY"]
    in_excel = sheet(*cells)
    engine_values = [
        sh.EMPTY if c is None else Error.errors[c.code] if isinstance(c, SheetError) else c
        for c in cells
    ]
    got = SheetFunction("CW_CAPACITY", sheet)(*engine_values)
    assert isinstance(in_excel, SheetError)
    assert got is Error.errors[in_excel.code]


def test_ranges_arrive_as_2d_lists_with_none_for_empty_and_errors_as_elements():
    seen = []

    def grab(x):
        seen.append(x)
        return 0.0

    f = SheetFunction("CW_TEST_GRAB", grab)
    rng = Ranges().push("A1:B2", np.array([[1, sh.EMPTY], [Error.errors["#N/A"], "t"]], object))
    assert f(rng) == 0.0
    (value,) = seen
    assert value[0] == [1.0, None]
    assert isinstance(value[1][0], SheetError) and value[1][0].code == "#N/A"
    assert value[1][1] == "t"


def test_one_cell_range_and_computed_scalars_arrive_as_scalars():
    seen = []

    def grab(x):
        seen.append(x)
        return 1.0

    f = SheetFunction("CW_TEST_GRAB1", grab)
    f(Ranges().push("A1", np.array([[np.float64(4.0)]], object)))
    f(np.asarray(5.0, dtype=object).view(Array))
    assert seen == [4.0, 5.0]
    assert all(type(v) is float for v in seen)


def test_exceptions_never_escape_and_their_message_goes_to_the_cell_being_computed():
    def broken(x):
        raise ZeroDivisionError("boom")

    f = SheetFunction("CW_TEST_BROKEN", broken)
    with Messages.collect() as box:
        assert f(1.0) is Error.errors["#VALUE!"]
    assert box.items == [(None, "CW_TEST_BROKEN: #VALUE! internal error ZeroDivisionError: boom")]


def test_messages_are_collected_per_call_never_shared():
    f = SheetFunction("CW_TEST_MSG", lambda x: SheetError("#NUM!", f"x must be > 0 (got {x})"))
    with Messages.collect() as first:
        f(-1.0)
    with Messages.collect() as second:
        f(-2.0)
    f(-3.0)  # outside any collector: nothing is kept anywhere
    assert first.items == [(None, "CW_TEST_MSG: #NUM! x must be > 0 (got -1.0)")]
    assert second.items == [(None, "CW_TEST_MSG: #NUM! x must be > 0 (got -2.0)")]


def test_array_results_say_which_element_a_message_belongs_to():
    def double(x):
        bad = SheetError("#NUM!", "x < 0 (-1.0)")
        return [[v * 2 if v >= 0 else bad] for row in x for v in row]

    f = SheetFunction("CW_TEST_COL", double)
    with Messages.collect() as box:
        out = f(np.array([[1.0], [-1.0], [2.0]], dtype=object))
    assert out.shape == (3, 1) and out[1, 0] is Error.errors["#NUM!"]
    assert box.items == [(1, "CW_TEST_COL: #NUM! x < 0 (-1.0)")]


def test_two_d_results_become_engine_arrays():
    f = SheetFunction("CW_TEST_GRID", lambda: [[1.0, SheetError("#N/A")], [3, "x"]])
    out = f()
    assert isinstance(out, Array) and out.shape == (2, 2)
    assert out[0, 1] is Error.errors["#N/A"]
    assert SheetFunction("CW_TEST_ONE", lambda: [[7.0]])() == 7.0
    assert SheetFunction("CW_TEST_ROW", lambda: [1.0, 2.0])().shape == (1, 2)


def test_unsupported_results_are_value_errors():
    assert SheetFunction("CW_TEST_DICT", lambda: {"a": 1})() is Error.errors["#VALUE!"]
    assert SheetFunction("CW_TEST_3D", lambda: [[[1]]])() is Error.errors["#VALUE!"]
    assert SheetFunction("CW_TEST_NONE", lambda: None)() is sh.EMPTY


def test_register_adds_the_name_and_the_excel_udf_alias_once():
    def f(x):
        return x

    gen0 = register({"cw_test_alias": f})
    table = get_functions()
    assert isinstance(table["CW_TEST_ALIAS"], SheetFunction)
    assert table["_XLUDF.CW_TEST_ALIAS"] is table["CW_TEST_ALIAS"]
    assert register({"CW_TEST_ALIAS": f}) == gen0  # unchanged: same generation
    assert register({"CW_TEST_ALIAS": lambda x: x}) == gen0 + 1


def test_the_real_registry_is_registered():
    ensure_registered()
    table = get_functions()
    assert set(FUNCTIONS) <= set(registered_names())
    for name in FUNCTIONS:
        assert table[name].func is FUNCTIONS[name]
    # the engine's callable returns what a direct call returns
    assert table["CW_MOLAR_MASS"]("H2O") == FUNCTIONS["CW_MOLAR_MASS"]("H2O")
