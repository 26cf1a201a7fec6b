"""The SUM, SUMPRODUCT, AVERAGE, MAX and MIN shortcuts (udfs.engine.aggregates) equal the engine.

Every expected value is the `formulas` package's own function on the same
arguments; equality is exact (type and repr). The arguments are random
columns, rows and grids of numbers (int and float, signed zeros, subnormal and
huge values) with, sometimes, an element the shortcut must leave to the engine
(text, logical, empty cell, error).
"""

from __future__ import annotations

from typing import Any

import numpy as np
import pytest
import schedula as sh
from formulas.functions import get_functions
from formulas.tokens.operand import Error
from hypothesis import given, settings
from hypothesis import strategies as st

import udfs.engine.functions  # noqa: F401  (the engine's function table as the engine uses it)
from udfs.engine.aggregates import aggregate_for

NAMES = ["SUM", "SUMPRODUCT", "AVERAGE", "MAX", "MIN"]

numbers = st.one_of(
    st.floats(allow_nan=False, allow_infinity=False),
    st.integers(-(10**6), 10**6),
    st.sampled_from([0.0, -0.0, 5e-324, 1e308, -1e308, 0.1, 2**53, 2**53 + 1]),
)
others = st.sampled_from([True, False, "text", "2.5", sh.EMPTY, Error.errors["#N/A"]])


@st.composite
def grids(draw: Any, shape: tuple[int, int] | None = None) -> np.ndarray:
    rows, cols = shape or (draw(st.integers(1, 12)), draw(st.integers(1, 3)))
    elems = draw(st.lists(numbers, min_size=rows * cols, max_size=rows * cols))
    if draw(st.integers(0, 4)) == 0:  # now and then, one element the engine must handle
        elems[draw(st.integers(0, len(elems) - 1))] = draw(others)
    arr = np.empty(rows * cols, object)
    arr[:] = elems
    return arr.reshape(rows, cols)


def _same(name: str, args: list[Any]) -> None:
    func = get_functions()[name]
    shortcut = aggregate_for(func)
    assert shortcut is not None
    with np.errstate(all="ignore"):
        want, got = func(*args), shortcut(func, list(args))
    assert (type(got), repr(got)) == (type(want), repr(want)), (name, args)


@pytest.mark.parametrize("name", NAMES)
@settings(deadline=None)  # examples: the hypothesis profile (tests/conftest.py)
@given(data=st.data())
def test_shortcut_equals_the_engine_function(name, data):
    first = data.draw(grids())
    args: list[Any] = [first]
    if name == "SUMPRODUCT":
        same = data.draw(st.booleans())
        args.append(data.draw(grids(first.shape if same else None)))
    elif data.draw(st.booleans()):
        args.append(data.draw(st.one_of(numbers, grids())))
    _same(name, args)


def test_the_shortcuts_are_taken_for_numbers_and_refused_otherwise(monkeypatch):
    func = get_functions()["SUM"]
    calls: list[int] = []
    spy = lambda *a: calls.append(1) or func(*a)  # noqa: E731
    col = np.array([[1.5], [2], [3.25]], object)
    assert aggregate_for(func)(spy, [col]) == func(col) and calls == []  # type: ignore[misc]
    col[1, 0] = "2"
    assert aggregate_for(func)(spy, [col]) == func(col) and calls == [1]  # type: ignore[misc]
    assert aggregate_for(get_functions()["COUNT"]) is None


def _column(*values: Any) -> np.ndarray:
    arr = np.empty((len(values), 1), object)
    arr[:, 0] = values
    return arr


TRICKY = [
    # numpy's pairwise summation differs from a running sum past 8 elements
    ("SUM", [_column(1.0, *[1e-16] * 15)]),
    ("AVERAGE", [_column(1.0, *[1e-16] * 15)]),
    ("SUMPRODUCT", [_column(1.0, *[1e-16] * 15), _column(*[1.0] * 16)]),
    # equal values of two types, signed zeros: the first one found is kept
    ("MAX", [_column(2, 2.0)]),
    ("MAX", [_column(2.0, 2)]),
    ("MIN", [_column(0.0, -0.0)]),
    ("MIN", [_column(-0.0, 0.0), 0]),
    ("SUM", [_column(2**53, 1, 1)]),
]


@pytest.mark.parametrize(("name", "args"), TRICKY, ids=lambda x: x if isinstance(x, str) else "")
def test_summation_order_and_ties_equal_the_engine(name, args):
    _same(name, args)


def test_a_number_too_large_for_a_float_gets_the_engines_answer():
    _same("SUM", [_column(1.5, 10**400)])
    _same("SUMPRODUCT", [_column(1.5, 10**400), _column(2.0, 1.0)])
