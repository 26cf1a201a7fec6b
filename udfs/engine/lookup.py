"""INDEX on a reference without a reference object per cell of the range.

The `formulas` package's INDEX, given a reference such as ``A1:A300``, first
builds a one-cell reference object for every cell of the range (about 7 us
each) and then picks one: an ``INDEX(range, MATCH(...))`` over 300 rows costs
about 2 ms per evaluation. :func:`xindex` is the same function -- the same
argument rules, the same picking code (the package's ``_index``), the same
reference object for the picked cell -- with the per-cell objects made only
when picked. :func:`install` puts it in the engine's function table in place of
the package's; tests compare both on ranges, row and column numbers, arrays,
errors and out-of-range picks.

>>> import numpy as np
>>> grid = LazyCells(lambda r, c: (r, c), (3, 2))
>>> grid.shape, grid[2, 1]
((3, 2), (2, 1))
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import numpy as np
from formulas.functions import Array, parse_ranges, wrap_func, wrap_impure_func
from formulas.functions.look import _index
from formulas.ranges import Ranges
from formulas.tokens.operand import _index2col

__all__ = ["LazyCells", "install", "xindex"]


class LazyCells:
    """A read-only 2-D grid whose elements are made on first access (``grid[r, c]``)."""

    __slots__ = ("_made", "_make", "shape")

    def __init__(self, make: Callable[[int, int], Any], shape: tuple[int, int]):
        self._make = make
        self._made: dict[tuple[int, int], Any] = {}
        self.shape = shape

    def __getitem__(self, where: Any) -> Any:
        if not isinstance(where, tuple) or len(where) != 2:
            raise TypeError(f"LazyCells index {where!r}: (row, column) expected")
        r, c = (int(i) if isinstance(i, (int, np.integer)) else i for i in where)
        if not isinstance(r, int) or not isinstance(c, int):
            raise TypeError(f"LazyCells index {where!r}: integers expected")
        rows, cols = self.shape
        r, c = r + rows if r < 0 else r, c + cols if c < 0 else c  # as a numpy array does
        if not (0 <= r < rows and 0 <= c < cols):
            raise IndexError(f"index {where!r} out of a {rows}x{cols} grid")
        key = (r, c)
        if key not in self._made:
            self._made[key] = self._make(r, c)
        return self._made[key]


def _cells_of(array: Ranges, rng: dict[str, Any]) -> LazyCells:
    """The one-cell references of range ``rng`` of ``array``, as the package builds them."""
    base = array.ranges[0]
    sheet_id = base["sheet_id"]
    pattern = f"{sheet_id}!%s" if sheet_id else "%s"
    value = Ranges((rng,), array.values).value
    r1, r2, n1, n2 = int(rng["r1"]), int(rng["r2"]), int(rng["n1"]), int(rng["n2"])

    def make(i: int, j: int) -> Ranges:
        r, n = r1 + i, n1 + j
        c = _index2col(n)
        ref = f"{c}{r}"
        cell = {"r1": r, "r2": r, "c1": c, "c2": c, "n1": n, "n2": n}
        cell.update(ref=ref, name=pattern % ref, sheet_id=sheet_id)
        element = value[r - int(base["r1"]), n - int(base["n1"])]
        return Ranges(values=dict(array.values)).set_value(cell, element)

    return LazyCells(make, (r2 - r1 + 1, n2 - n1 + 1))


def xindex(array: Any, row_num: Any, col_num: Any = None, area_num: Any = 1) -> Any:
    """Excel's INDEX, as the `formulas` package computes it (see module doc)."""
    is_reference = isinstance(array, Ranges)
    if is_reference and array.is_set:
        arrays: list[Any] = [Ranges((rng,), array.values).value for rng in array.ranges]
    elif is_reference:
        arrays = [_cells_of(array, rng) for rng in array.ranges]
    else:
        arrays = [array]
    row_num, col_num, area_num = parse_ranges(row_num, col_num, area_num)[0]
    res = np.vectorize(_index, excluded={0}, otypes=[object])(
        arrays, row_num, col_num, area_num, is_reference, isinstance(row_num, np.ndarray)
    )
    if not res.shape or res.shape == (1, 1):
        res = res.reshape(1, 1)
        if isinstance(res[0, 0], np.ndarray):
            res = res[0, 0]
        elif isinstance(res[0, 0], Ranges):
            return res[0, 0]
    return res.view(Array)


def install(table: dict[str, Any]) -> None:
    """Put :func:`xindex` in the engine's function table (keeping the entry's other keys)."""
    entry = table.get("INDEX")
    if isinstance(entry, dict) and "function" in entry:
        table["INDEX"] = dict(entry, function=wrap_impure_func(wrap_func(xindex, ranges=True)))
