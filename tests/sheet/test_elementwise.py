"""Functions declared element-wise over single cells: one call on stacked
columns equals the same formula filled down cell by cell.

The headless engine evaluates a filled-down block of such a function in one
call (``udfs.sheet.registry.elementwise``), so for every one of them the rows
of the typical-input tables -- each function's own worked example (also scaled
up and down) and every single-cell row of the bad-input table -- are stacked
into columns, and each element of the result must be exactly what the single
call gives: the same float, the same text, or the same error code and message.
"""

from __future__ import annotations

import random
import warnings
from typing import Any

import numpy as np
import pytest
from bad_inputs import BAD_INPUTS

from udfs.sheet.declare import Kind, Plan
from udfs.sheet.error_values import SheetError
from udfs.sheet.registry import CATALOGUE_ORDER, FUNCTIONS, PLANS, elementwise

ELEMENTWISE = [n for n in CATALOGUE_ORDER if elementwise(n)]
SCALES = (1.0, 0.5, 2.0, 3.0, 0.0)  # the example's numbers scaled (0 hits most lower bounds)
COLUMN_LENGTH = 67  # longer than any SIMD width numpy may use, and not a multiple of one


def _is_range(x: Any) -> bool:
    return isinstance(x, (list, tuple, np.ndarray))


def _rows(plan: Plan) -> list[tuple[Any, ...]]:
    """Typical argument rows: the example scaled, and the single-cell bad inputs."""
    rows: list[tuple[Any, ...]] = []
    example = plan.example or ()
    for s in SCALES:
        rows.append(
            tuple(
                x * s if a.is_number and isinstance(x, (int, float)) else x
                for a, x in zip(plan.args, example, strict=False)
            )
        )
    for row in BAD_INPUTS:
        if (
            row.function == plan.name
            and plan.n_required <= len(row.args) <= plan.n_args
            and not any(_is_range(x) for x in row.args)
        ):
            rows.append(row.args)
    return rows


def _single(name: str, args: tuple[Any, ...]) -> Any:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # overflow on the scalar fast path
        return FUNCTIONS[name](*args)


def _same(got: Any, want: Any) -> bool:
    if isinstance(want, SheetError):
        return isinstance(got, SheetError) and got.code == want.code and str(got) == str(want)
    return type(got) is type(want) and got == want


def _stacked(plan: Plan, rows: list[tuple[Any, ...]], form: str) -> list[Any]:
    """One argument per declared argument: a column of the rows' values (an
    omitted optional argument is an empty cell), or a single value where every
    row has the same one (form "mixed"); as lists or as numpy object arrays."""
    args: list[Any] = []
    for i in range(plan.n_args):
        column = [row[i] if i < len(row) else None for row in rows]
        if form == "mixed" and all(type(x) is type(column[0]) and x == column[0] for x in column):
            args.append(column[0])
        elif form == "numpy":
            arr = np.empty((len(column), 1), dtype=object)
            arr[:, 0] = column
            args.append(arr)
        else:
            args.append([[x] for x in column])
    return args


def test_elementwise_follows_the_declaration() -> None:
    for name, plan in PLANS.items():
        ranged = any(not a.per_element for a in plan.args)
        expected = plan.kind in (Kind.NUMBER, Kind.VALUE) and not ranged
        assert plan.elementwise is expected, name
        assert elementwise(name) is expected
    assert not elementwise("CW_POTENTIAL")  # activities may be a two-column table
    assert not elementwise("CW_SERIES_PARALLEL")  # a record per element
    assert not elementwise("CW_COUPLES")  # a spilled list
    assert elementwise("CW_NERNST") and elementwise("CW_MATERIAL")
    with pytest.raises(KeyError):
        elementwise("CW_NO_SUCH_FUNCTION")


@pytest.mark.parametrize("form", ["lists", "numpy", "mixed"])
@pytest.mark.parametrize("name", ELEMENTWISE)
def test_stacked_columns_equal_cell_by_cell(name: str, form: str) -> None:
    plan = PLANS[name]
    typical = _rows(plan)
    rng = random.Random(name)  # a fixed shuffle per function
    rows = [rng.choice(typical) for _ in range(COLUMN_LENGTH - len(typical))] + typical
    rng.shuffle(rows)
    singles = [_single(name, row) for row in rows]
    assert any(not isinstance(s, SheetError) for s in singles), "no value to compare"
    assert any(isinstance(s, SheetError) for s in singles), "no error to compare"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        out = FUNCTIONS[name](*_stacked(plan, rows, form))
    assert isinstance(out, list) and [len(r) for r in out] == [1] * len(rows), out
    mismatches = [
        (row, got[0], want)
        for row, got, want in zip(rows, out, singles, strict=True)
        if not _same(got[0], want)
    ]
    assert mismatches == []
