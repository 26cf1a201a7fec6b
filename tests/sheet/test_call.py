"""Calling a declared function (udfs.sheet.call): coercion, defaults,
broadcasting, per-element errors, error propagation, output shapes, and that no
exception escapes."""

from __future__ import annotations

import logging
import math
import pickle

import numpy as np
import pytest

from udfs.core.errors import DomainError
from udfs.core.validate import POSITIVE
from udfs.sheet.declare import PLANS, Kind, Num, Section, Text, sheet_function
from udfs.sheet.error_values import SheetError
from udfs.sheet.registry import FUNCTIONS

F = FUNCTIONS
NERNST = F["CW_NERNST"]


def is_error(x: object, code: str | None = None) -> bool:
    return isinstance(x, SheetError) and (code is None or x.code == code)


# ----------------------------------------------------------------- broadcasting


def test_row_against_column_fills_a_grid_equal_to_scalar_calls() -> None:
    e0 = [[0.34, 0.5, -0.76]]  # 1x3 row
    ox = [[0.1], [0.01], [1.0], [2.5]]  # 4x1 column
    grid = NERNST(e0, 2, ox, 1)
    assert len(grid) == 4 and all(len(r) == 3 for r in grid)
    for i in range(4):
        for j in range(3):
            assert grid[i][j] == NERNST(e0[0][j], 2, ox[i][0], 1)


def test_text_range_against_number_range() -> None:
    formulas = [["LiFePO4", "LiCoO2", "graphite"]]
    electrons = [[1], [0.5]]
    grid = F["CW_THEORETICAL_CAPACITY"](formulas, electrons)
    assert [len(r) for r in grid] == [3, 3]
    for i in range(2):
        for j in range(3):
            assert grid[i][j] == F["CW_THEORETICAL_CAPACITY"](formulas[0][j], electrons[i][0])


def test_incompatible_shapes_give_one_error_naming_both() -> None:
    out = NERNST([[0.34, 0.5, 0.6], [1, 2, 3]], 2, [[0.1, 0.2], [0.3, 0.4], [0.5, 0.6]], 1)
    assert is_error(out, "#VALUE!")
    assert "e0 is 2x3" in out and "ox_activity is 3x2" in out


def test_one_dimensional_list_is_a_row() -> None:
    assert NERNST(0.34, 2, [0.1, 1.0], 1) == NERNST(0.34, 2, [[0.1, 1.0]], 1)


def test_numpy_arrays_are_ranges() -> None:
    arr = np.array([[0.1, 1.0]])
    assert NERNST(0.34, 2, arr, 1) == NERNST(0.34, 2, [[0.1, 1.0]], 1)
    obj = np.array([[0.1, None]], dtype=object)
    out = NERNST(0.34, 2, 1.0, 1, obj)  # empty optional element -> default 25 degC
    assert out[0][1] == NERNST(0.34, 2, 1.0, 1)


# ----------------------------------------------------------------- coercion


def test_single_cell_as_range_gives_a_scalar() -> None:
    assert NERNST([[0.34]], [[2]], [[0.1]], [[1]]) == NERNST(0.34, 2, 0.1, 1)
    assert F["CW_MOLAR_MASS"]([["LiFePO4"]]) == F["CW_MOLAR_MASS"]("LiFePO4")


def test_numeric_text_counts_as_its_number() -> None:
    assert NERNST("0.34", " 2 ", "0.1", "1") == NERNST(0.34, 2, 0.1, 1)
    assert NERNST([["0.34", 0.34]], 2, 0.1, 1) == [[NERNST(0.34, 2, 0.1, 1)] * 2]


def test_booleans_are_refused_element_by_element() -> None:
    out = NERNST(0.34, 2, [[0.1, True, 1.0, False, 0.0]], 1)
    assert is_error(out[0][1], "#VALUE!") and "not TRUE" in out[0][1]
    assert is_error(out[0][3], "#VALUE!") and "not FALSE" in out[0][3]
    assert out[0][0] == NERNST(0.34, 2, 0.1, 1)
    assert out[0][2] == NERNST(0.34, 2, 1.0, 1)
    assert is_error(out[0][4], "#NUM!")  # 0.0 is a number, outside the domain
    assert is_error(NERNST(True, 2, 0.1, 1), "#VALUE!")


def test_empty_cells_take_defaults_or_fail() -> None:
    base = NERNST(0.34, 2, 0.1, 1)
    assert NERNST(0.34, 2, 0.1, 1, None) == base
    assert NERNST(0.34, 2, 0.1, 1, "") == base
    assert NERNST(0.34, 2, 0.1, 1, [[None]]) == base
    out = NERNST(0.34, 2, None, 1)
    assert is_error(out, "#VALUE!") and "ox_activity is empty" in out
    assert F["CW_THEORETICAL_CAPACITY"]("LiFePO4", 1, None) == F["CW_THEORETICAL_CAPACITY"](
        "LiFePO4", 1
    )


def test_argument_count() -> None:
    out = NERNST(0.34, 2)
    assert is_error(out, "#VALUE!") and "needs ox_activity, red_activity" in out
    out = NERNST(0.34, 2, 0.1, 1, 25, 7)
    assert is_error(out, "#VALUE!") and "at most 5 arguments" in out


def test_ragged_and_deep_ranges_are_errors() -> None:
    assert "rectangular" in NERNST(0.34, 2, [[0.1, 0.2], [0.3]], 1)
    assert "2-D" in NERNST(0.34, 2, [[[0.1]]], 1)
    assert "empty range" in NERNST(0.34, 2, [], 1)


def test_huge_ints_and_odd_objects() -> None:
    assert is_error(NERNST(0.34, 2, 10**400, 1), "#NUM!")
    assert is_error(NERNST(0.34, 2, object(), 1), "#VALUE!")
    assert is_error(NERNST(0.34, 2, 0.1, 1, float("inf")), "#NUM!")


# ----------------------------------------------------------------- errors


def test_bad_elements_only_are_errors() -> None:
    out = NERNST(0.34, 2, [[0.1, -1.0, 1.0]], 1)
    assert out[0][0] == NERNST(0.34, 2, 0.1, 1)
    assert out[0][1] == "#NUM! ox_activity must be > 0 (got -1)"
    assert out[0][2] == NERNST(0.34, 2, 1.0, 1)


def test_incoming_errors_propagate() -> None:
    assert NERNST("#N/A", 2, 0.1, 1).code == "#N/A"
    assert NERNST(SheetError("#DIV/0!"), 2, 0.1, 1).code == "#DIV/0!"
    mine = "#NUM! mass_g must be > 0 (got -1)"  # our own error text from another cell
    passed = NERNST(0.34, 2, mine, 1)
    assert passed.code == "#NUM!" and passed == mine
    out = F["CW_MOLAR_MASS"]([["LiFePO4", "#REF!"]])
    assert out[0][1].code == "#REF!"


def test_newer_errors_keep_their_code_text() -> None:
    # text forms (xlwings Server, or our own error text from another cell)
    for code in ("#SPILL!", "#CALC!", "#GETTING_DATA", "#BUSY!", "#FIELD!"):
        out = NERNST(code, 2, 0.1, 1)
        assert out == code and out.shown == code and out.code == "#N/A"
        assert F["CW_MOLAR_MASS"](code) == code
    mine = SheetError("#SPILL!", "passed on")
    assert NERNST(0.34, 2, str(mine), 1) == "#SPILL! passed on"
    out = NERNST(0.34, 2, [[0.1, "#CALC!"]], 1)
    assert out[0][1] == "#CALC!" and out[0][1].code == "#N/A"


def test_error_values_survive_pickling() -> None:  # engines may pass values between processes
    for err in (SheetError("#SPILL!", "from e0"), SheetError("#NUM!", "x must be > 0")):
        back = pickle.loads(pickle.dumps(err))
        assert (back, back.code, back.shown, back.message) == (
            err,
            err.code,
            err.shown,
            err.message,
        )


def test_error_values_as_com_integers() -> None:
    # COM's form of #SPILL! (CVErr 2045, Microsoft's XlCVError page): never a number
    spill = -2146826243
    for call in (
        lambda: NERNST(spill, 2, 0.1, 1),  # the scalar fast path
        lambda: NERNST([[spill]], 2, 0.1, 1),  # a single cell as xlwings passes it
        lambda: NERNST(np.int64(spill), 2, 0.1, 1),
        lambda: F["CW_MOLAR_MASS"](spill),  # a text argument
        lambda: F["CW_GIBBS"](spill, 2),
    ):
        out = call()
        assert isinstance(out, SheetError) and out.shown == "#SPILL!", out
    grid = NERNST(0.34, 2, [[0.1, spill], [1.0, -2146826281]], 1)
    assert grid[0][1] == "#SPILL!" and grid[1][1].code == "#DIV/0!"
    assert grid[0][0] == NERNST(0.34, 2, 0.1, 1)
    arr = NERNST(0.34, 2, np.array([[1, spill]]), 1)  # an integer array
    assert arr[0][1] == "#SPILL!" and arr[0][0] == NERNST(0.34, 2, 1, 1)
    floats = NERNST(0.34, 2, np.array([[0.1, spill]]), 1)  # a float array holds numbers
    assert "ox_activity must be > 0" in floats[0][1]
    # a float with the same value is a number (Excel passes numbers as floats)
    assert "ox_activity must be > 0" in NERNST(0.34, 2, float(spill), 1)
    assert F["CW_CONVERT"](float(spill), "g", "kg") == pytest.approx(spill / 1000, rel=1e-12)


def test_leftmost_error_wins() -> None:
    out = NERNST("#N/A", 0, -1, 1)
    assert out.code == "#N/A"
    out = NERNST(0.34, 0, -1, 1)
    assert "electrons" in out


def test_headless_engine_tokens() -> None:
    import schedula
    from formulas.tokens import operand

    base = NERNST(0.34, 2, 0.1, 1)
    assert NERNST(0.34, 2, 0.1, 1, schedula.EMPTY) == base
    assert NERNST(0.34, 2, operand.XlError("#N/A"), 1).code == "#N/A"
    arr = np.array([[0.1, schedula.EMPTY]], dtype=object)
    out = NERNST(0.34, 2, arr, 1)
    assert out[0][0] == base and "ox_activity is empty" in out[0][1]


def test_results_are_never_nan_or_inf() -> None:
    out = F["CW_CONVERT"](1e308, "kWh", "J")
    assert is_error(out, "#NUM!") and "not a finite number" in out
    out = F["CW_CONVERT"]([[1.0, 1e308]], "kWh", "J")
    assert out[0][0] == 3.6e6 and is_error(out[0][1], "#NUM!")


def test_unknown_names_list_the_closest() -> None:
    out = F["CW_E0"]("Cu2+/Cx")
    assert is_error(out, "#N/A") and "did you mean 'Cu2+/Cu'" in out
    out = F["CW_THEORETICAL_CAPACITY"]("grafite", 1)
    assert is_error(out, "#N/A") and "'graphite'" in out


def test_lenient_text() -> None:
    assert F["CW_E0"](" cu2+/cu ") == F["CW_E0"]("Cu2+/Cu")
    assert F["CW_REACTION_THERMO"]("Cu2+/Cu", "Zn2+/Zn", " DG ") == F["CW_REACTION_THERMO"](
        "Cu2+/Cu", "Zn2+/Zn", "dG"
    )
    assert F["CW_MATERIALS"](" Anode ") == F["CW_MATERIALS"]("anode")


def test_text_ranges_broadcast_with_per_element_errors() -> None:
    out = F["CW_MOLAR_MASS"]([["LiFePO4"], ["graphite"], ["Xx"]])
    assert out[0][0] == F["CW_MOLAR_MASS"]("LiFePO4")
    assert out[1][0] == F["CW_MOLAR_MASS"]("C6")
    assert is_error(out[2][0], "#VALUE!")
    out = F["CW_POTENTIAL"]("Cu2+/Cu", [["Cu2+=0.1"], ["Cu2+=1"], ["Cu2+=-1"]])
    assert out[0][0] == F["CW_POTENTIAL"]("Cu2+/Cu", "Cu2+=0.1")
    assert is_error(out[2][0], "#NUM!")


def test_activities_table_errors() -> None:
    out = F["CW_POTENTIAL"]("Cu2+/Cu", [["Cu2+", None]])
    assert is_error(out, "#VALUE!") and "empty" in out
    out = F["CW_POTENTIAL"]("Cu2+/Cu", [["Cu2+", "#N/A"]])
    assert out.code == "#N/A"


def test_record_and_column_shapes() -> None:
    out = F["CW_SERIES_PARALLEL"]([[48], [0], [24]], 5000, 3.65, 50)
    assert len(out) == 3 and all(len(r) == 4 for r in out)
    assert out[0] == [14.0, 2.0, 28.0, 5110.0]
    assert all(is_error(x, "#NUM!") for x in out[1])
    assert out[2] == F["CW_SERIES_PARALLEL"](24, 5000, 3.65, 50)[0]
    row = F["CW_SERIES_PARALLEL"]([[48, 24]], 5000, 3.65, 50)
    assert is_error(row, "#VALUE!") and "columns" in row
    assert is_error(F["CW_MATERIALS"]([["anode", "cathode"]]), "#VALUE!")


# ----------------------------------------------------------------- the adapter's own machinery


def test_core_errors_after_masking_are_localised() -> None:
    def picky(x: object) -> object:  # a core that refuses values the sheet domain allows
        arr = np.asarray(x, dtype=float)
        if (arr > 10).any():
            raise DomainError("x", float(arr[arr > 10].flat[0]), "<= 10")
        return arr * 2

    fn = sheet_function(
        "CW_TEST_PICKY",
        "Twice x.",
        [Num("x", "a number", POSITIVE)],
        section=Section.CAPACITY,
        register=False,
    )(picky)
    out = fn([[1.0, 20.0, 3.0, -1.0]])
    assert out[0][0] == 2.0 and out[0][2] == 6.0
    assert out[0][1] == "#NUM! x must be <= 10 (got 20)"
    assert out[0][3] == "#NUM! x must be > 0 (got -1)"
    assert fn(20.0) == "#NUM! x must be <= 10 (got 20)"


def test_internal_errors_become_a_value_error_and_are_logged(
    caplog: pytest.LogCaptureFixture,
) -> None:
    def broken(x: object) -> object:
        return 1 / 0

    fn = sheet_function(
        "CW_TEST_BROKEN",
        "Nothing.",
        [Num("x", "a number")],
        section=Section.CAPACITY,
        register=False,
    )(broken)
    with caplog.at_level(logging.ERROR, logger="udfs.sheet"):
        out = fn(1.0)
        out_range = fn([[1.0, 2.0]])
    assert out == "#VALUE! internal error in CW_TEST_BROKEN: ZeroDivisionError"
    assert out_range == out
    assert "CW_TEST_BROKEN" in caplog.text and "ZeroDivisionError" in caplog.text


def test_fast_and_general_paths_agree() -> None:
    for name, plan in PLANS.items():
        if plan.example is None or plan.kind is Kind.COLUMN:
            continue
        fast = F[name](*plan.example)
        general = F[name](*[a if isinstance(a, list) else [[a]] for a in plan.example])
        assert fast == general, name


def test_declarations_are_checked() -> None:
    with pytest.raises(ValueError):
        sheet_function("NOT_CW", "x", [], section=Section.CAPACITY, register=False)(lambda: 1.0)
    with pytest.raises(ValueError):
        sheet_function("CW_X", "x" * 256, [], section=Section.CAPACITY, register=False)(lambda: 1.0)
    with pytest.raises(ValueError):
        sheet_function(
            "CW_X",
            "x",
            [Text("a", "a", default=""), Text("b", "b")],
            section=Section.CAPACITY,
            register=False,
        )(lambda a, b: 1.0)
    with pytest.raises(ValueError):
        Num("x", "x", POSITIVE, default=-1)


def test_outputs_are_plain_python_values() -> None:
    out = NERNST(0.34, 2, [[0.1, 1.0]], 1)
    assert type(out) is list and type(out[0]) is list and type(out[0][0]) is float
    assert type(NERNST(0.34, 2, 0.1, 1)) is float
    assert math.isfinite(NERNST(0.34, 2, 0.1, 1))
