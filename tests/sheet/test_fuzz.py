"""Property-based fuzzing of every spreadsheet function with arbitrary cell
values: no exception escapes, and every output element is a finite number, a
text (only where the function returns text) or an error value.

Example counts come from the hypothesis profile (tests/conftest.py):
``HYPOTHESIS_PROFILE=long`` for a longer local run.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from udfs.sheet.declare import Kind, Plan
from udfs.sheet.error_values import SheetError
from udfs.sheet.registry import CATALOGUE_ORDER, FUNCTIONS, PLANS

# numpy warns when a single-cell computation overflows or divides by zero (the fast
# path skips numpy's errstate to stay cheap); the adapter turns the inf/nan into #NUM!
# (checked below), so these warnings are expected noise here.
pytestmark = [
    pytest.mark.filterwarnings("ignore:overflow encountered:RuntimeWarning"),
    pytest.mark.filterwarnings("ignore:divide by zero encountered:RuntimeWarning"),
    pytest.mark.filterwarnings("ignore:invalid value encountered:RuntimeWarning"),
]

TEXTS = (
    "Cu",
    "LiFePO4",
    "LFP",
    "graphite",
    "Cu2+/Cu",
    "Zn2+/Zn",
    "O2/H2O",
    "mAh",
    "Ah",
    "C",
    "kWh/t",
    "dG",
    "equation",
    "density",
    "formula",
    "anode",
    "Co",
    "Ni",
    "Cu2+=0.1; pH=3",
    "pH=7",
    "#N/A",
    "#NUM! x must be > 0",
    "#DIV/0!",
    "",
    "   ",
    " 1.5 ",
    "nan",
    "-inf",
    "1e400",
    "TRUE",
    "Li(OH",
    "Cu3+/Cu",
    "=",
    ";",
    "Cu2+=",
    "x" * 300,
)

scalar_cells = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(),
    st.floats(allow_nan=True, allow_infinity=True),
    st.floats(min_value=-1e3, max_value=1e3),
    st.sampled_from([0.0, -0.0, 1.0, 1e-300, 5e-324, 1e300, 1.7976931348623157e308, -1.0, 0.5]),
    st.sampled_from(TEXTS),
    st.text(max_size=12),
    st.just(SheetError("#REF!", "from another cell")),
)

cells = st.recursive(
    scalar_cells,
    lambda children: st.one_of(
        st.lists(children, max_size=4),
        st.lists(st.lists(scalar_cells, min_size=1, max_size=3), min_size=1, max_size=3),
    ),
    max_leaves=10,
)


def _plausible(plan: Plan, i: int) -> st.SearchStrategy[Any]:
    """Mostly sensible values for argument i (so the compute paths run), with
    arbitrary cells mixed in."""
    example = plan.example or ()
    a = plan.args[i]
    if a.is_number:
        good: st.SearchStrategy[Any] = st.one_of(
            st.floats(min_value=0.01, max_value=100.0),
            st.lists(
                st.lists(st.floats(min_value=0.01, max_value=100.0), min_size=1, max_size=3),
                min_size=1,
                max_size=3,
            ),
            st.sampled_from([1.0, 2.0, 0.5]),
        )
    else:
        value = example[i] if i < len(example) else (a.default if a.optional else "x")
        good = st.one_of(st.just(value), st.just([[value], [value]]), st.sampled_from(TEXTS))
    return st.one_of(good, good, cells)


def _check_cell(x: Any, plan: Plan) -> None:
    if isinstance(x, SheetError):
        assert x.code in ("#NULL!", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#N/A")
        assert "Traceback" not in x
        return
    if isinstance(x, str):
        assert plan.kind in (Kind.VALUE, Kind.COLUMN), f"{plan.name} returned text {x!r}"
        assert not x.startswith("#"), f"{plan.name}: error text without its code type: {x!r}"
        return
    assert type(x) is float, f"{plan.name} returned {type(x).__name__}: {x!r}"
    assert math.isfinite(x), f"{plan.name} returned {x!r}"


def _check_output(out: Any, plan: Plan) -> None:
    if isinstance(out, list):
        assert out and all(isinstance(r, list) and r for r in out), out
        width = len(out[0])
        assert all(len(r) == width for r in out), "ragged output"
        for row in out:
            for x in row:
                _check_cell(x, plan)
    else:
        _check_cell(out, plan)


@pytest.mark.parametrize("name", CATALOGUE_ORDER)
@given(data=st.data())
def test_fuzz_arbitrary_cells(name: str, data: st.DataObject) -> None:
    plan = PLANS[name]
    args = data.draw(st.lists(cells, min_size=0, max_size=plan.n_args + 1), label="args")
    _check_output(FUNCTIONS[name](*args), plan)


@pytest.mark.parametrize("name", CATALOGUE_ORDER)
@given(data=st.data())
def test_fuzz_plausible_cells(name: str, data: st.DataObject) -> None:
    plan = PLANS[name]
    n = data.draw(st.integers(min_value=plan.n_required, max_value=plan.n_args), label="n")
    args = [data.draw(_plausible(plan, i), label=plan.args[i].name) for i in range(n)]
    _check_output(FUNCTIONS[name](*args), plan)


@given(
    st.lists(
        st.lists(st.floats(allow_nan=True, allow_infinity=True), min_size=1, max_size=4),
        min_size=1,
        max_size=4,
    ).filter(lambda rows: len({len(r) for r in rows}) == 1)
)
def test_fuzz_ranges_match_scalar_calls(rows: list[list[float]]) -> None:
    """Element by element, a range call equals the scalar calls."""
    nernst = FUNCTIONS["CW_NERNST"]
    out = nernst(0.34, 2, rows, 1)
    grid = out if isinstance(out, list) else [[out]]
    for i, row in enumerate(rows):
        for j, x in enumerate(row):
            assert grid[i][j] == nernst(0.34, 2, x, 1)


@given(st.lists(cells, max_size=3), st.sampled_from([np.float64, object]))
def test_fuzz_numpy_inputs(values: list[Any], dtype: Any) -> None:
    try:
        arr = (
            np.array([[1.0, 2.0]], dtype=dtype)
            if dtype is np.float64
            else np.array([values or [None]], dtype=object)
        )
    except (ValueError, TypeError):
        return
    _check_output(FUNCTIONS["CW_CHARGE_TO_MASS"](arr, "Cu", 2), PLANS["CW_CHARGE_TO_MASS"])


ELEMENTWISE = [n for n in CATALOGUE_ORDER if PLANS[n].kind in (Kind.NUMBER, Kind.VALUE)]


def _example_args(plan: Plan) -> list[Any]:
    example = list(plan.example or ())
    return [
        example[i] if i < len(example) else (a.default if a.optional else 1.0)
        for i, a in enumerate(plan.args)
    ]


def _same_cell(a: Any, b: Any) -> bool:
    if isinstance(a, SheetError) or isinstance(b, SheetError):
        return isinstance(a, SheetError) and isinstance(b, SheetError) and a.code == b.code
    return type(a) is type(b) and a == b


@pytest.mark.parametrize("name", ELEMENTWISE)
@given(data=st.data())
def test_fuzz_every_range_equals_its_cells(name: str, data: st.DataObject) -> None:
    """A column of values in one argument gives, element by element, exactly what
    the same formula filled down one cell at a time gives (as Excel computes it)."""
    plan = PLANS[name]
    func = FUNCTIONS[name]
    args = _example_args(plan)
    if not args:
        return
    i = data.draw(st.integers(0, len(args) - 1), label="argument")
    column = data.draw(
        st.lists(st.one_of(_plausible(plan, i), scalar_cells), min_size=2, max_size=5).filter(
            lambda xs: all(not isinstance(x, list) for x in xs)
        ),
        label="column",
    )
    out = func(*args[:i], [[x] for x in column], *args[i + 1 :])
    singles = [func(*args[:i], x, *args[i + 1 :]) for x in column]
    if not isinstance(out, list):  # one error for the whole range (e.g. its shape)
        assert isinstance(out, SheetError), out
        return
    assert [len(r) for r in out] == [1] * len(column), out
    for row, single in zip(out, singles, strict=True):
        assert _same_cell(row[0], single), (name, i, column, row[0], single)
