"""Filled-down formulas evaluated together: one pass per step over a column of cells.

A column of formulas filled down (``=A2*$B$1``, ``=A3*$B$1``, ...) shares one
:class:`udfs.engine.chain.Chain`. When such cells do not depend on one another
(:func:`schedule` groups them by template and by depth in the dependency graph)
a :class:`Batch` evaluates each step once for the whole column:

* ``+ - * /`` and comparisons of numbers (``float``, or ``int`` that a float holds
  exactly) with numpy, which computes each element exactly as Python's float
  operations do; an element whose result is not finite, or a division by zero,
  is left to :func:`udfs.engine.chain.step_value`;
* our ``CW_`` functions of one number or text per element with one call over
  the column -- the spreadsheet functions broadcast, and a range gives, element
  by element, what single cells give (``tests/test_sheet_fuzz.py``);
* a step whose arguments are the same for every cell (absolute references,
  constants) once;
* every other step element by element with :func:`udfs.engine.chain.step_value`.

A cell that the chain would hand back (text into arithmetic, a function that
raises, ...) is returned to the caller, which evaluates it on its own the usual
way. Tests compare batches with cell-by-cell evaluation on edge values.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from typing import Any

import numpy as np
import schedula as sh

from udfs.sheet.adapter import Kind

from .chain import ARITH, COMPARE, NEGATE, PERCENT, SHEET, Chain, divide, step_value
from .functions import from_engine, to_engine

__all__ = ["MIN_BATCH", "Batch", "schedule"]

MIN_BATCH = 8  # fewer cells of one template at one depth are evaluated one by one
_EXACT_INT = 2**53  # ints up to this size convert to float exactly
_EMPTY = sh.EMPTY
_ELEMENTWISE_KINDS = (Kind.NUMBER, Kind.VALUE)


def _floats(values: Sequence[Any]) -> np.ndarray | None:
    """``values`` as a float array when each is a float or an exactly convertible int."""
    for v in values:
        t = type(v)
        if t is float:
            continue
        if t is int and -_EXACT_INT <= v <= _EXACT_INT:
            continue
        return None
    return np.array(values, dtype=float)


class Batch:
    """Cells of one chain template at one depth, evaluated together (see module doc)."""

    __slots__ = ("chain", "consts", "refs", "units")

    def __init__(self, chain: Chain, units: Sequence[Any]):
        self.chain = chain
        self.units = list(units)
        self.consts: dict[int, tuple[list[Any], bool]] = {}
        for slot in chain.const_slots:
            column = [u.consts[slot] for u in self.units]
            first = column[0]
            self.consts[slot] = (column, all(v is first for v in column))
        self.refs: list[tuple[int, list[Any], bool]] = []
        for j, bound in enumerate(self.units[0].refs):
            keys = [u.refs[j].key for u in self.units]
            self.refs.append((bound.slot, keys, all(k == keys[0] for k in keys)))

    def run(self, cells: Mapping[Any, Any], store: Callable[[Any, Any], None]) -> list[Any]:
        """Evaluate; ``store(unit, value)`` each result; return the cells to evaluate alone
        (all of them if anything unforeseen goes wrong: the usual way then decides)."""
        try:
            return self._run(cells, store)
        except Exception:
            return list(self.units)

    def _run(self, cells: Mapping[Any, Any], store: Callable[[Any, Any], None]) -> list[Any]:
        n = len(self.units)
        vals: dict[int, list[Any]] = {}
        same: dict[int, bool] = {}
        for slot, (column, uniform) in self.consts.items():
            vals[slot], same[slot] = column, uniform
        get = cells.get
        for slot, keys, uniform in self.refs:
            if uniform:
                got = get(keys[0])
                vals[slot] = [_EMPTY if got is None else got[0, 0]] * n
            else:
                vals[slot] = [_EMPTY if (g := get(k)) is None else g[0, 0] for k in keys]
            same[slot] = uniform
        dead: set[int] = set()
        for step in self.chain.steps:
            out, ins = step[0], step[1]
            columns = [vals[i] for i in ins]
            if all(same[i] for i in ins):
                try:
                    value = step_value(step, [c[0] for c in columns])
                except Exception:  # the chain hands this formula back for every cell
                    return list(self.units)
                vals[out], same[out] = [value] * n, True
                continue
            vals[out], same[out] = _step(step, columns, [same[i] for i in ins], n, dead), False
        root = vals[self.chain.steps[-1][0]]
        box = self.chain.box
        for i, unit in enumerate(self.units):
            if i not in dead:
                store(unit, box(root[i]))
        return [self.units[i] for i in sorted(dead)]


def _each(
    step: Any, columns: list[list[Any]], indices: list[int], out: list[Any], dead: set[int]
) -> list[Any]:
    """``out[i]`` for each i of ``indices`` by the chain's own step; a cell the chain
    hands back joins ``dead``."""
    for i in indices:
        try:
            out[i] = step_value(step, [c[i] for c in columns])
        except Exception:
            dead.add(i)
    return out


def _one_by_one(step: Any, columns: list[list[Any]], n: int, dead: set[int]) -> list[Any]:
    return _each(step, columns, [i for i in range(n) if i not in dead], [None] * n, dead)


def _step(
    step: Any, columns: list[list[Any]], same: list[bool], n: int, dead: set[int]
) -> list[Any]:
    mode, fn = step[2], step[3]
    if mode == SHEET:
        return _sheet_step(step, columns, same, n, dead)
    if mode not in (ARITH, COMPARE, NEGATE, PERCENT):
        return _one_by_one(step, columns, n, dead)
    maybe = [_floats(c) for c in columns]
    arrays = [a for a in maybe if a is not None]
    if len(arrays) != len(maybe):
        return _one_by_one(step, columns, n, dead)
    with np.errstate(all="ignore"):
        if mode == NEGATE:
            result = -arrays[0]
        elif mode == PERCENT:
            result = arrays[0] / 100.0
        else:
            result = fn(arrays[0], arrays[1])
    out: list[Any] = result.tolist()
    if mode == COMPARE:
        return out
    ok = np.isfinite(result)
    if fn is divide:
        ok &= arrays[1] != 0
    # #NUM!, #DIV/0!: the element function decides
    return _each(step, columns, np.flatnonzero(~ok).tolist(), out, dead)


def _sheet_step(
    step: Any, columns: list[list[Any]], same: list[bool], n: int, dead: set[int]
) -> list[Any]:
    adapter = step[3]
    plan = getattr(adapter.func, "__cellwright_plan__", None)
    alive = [i for i in range(n) if i not in dead]
    if plan is None or plan.kind not in _ELEMENTWISE_KINDS or len(alive) < 2:
        return _one_by_one(step, columns, n, dead)
    args: list[Any] = []
    for column, uniform in zip(columns, same, strict=True):
        if uniform:
            args.append(from_engine(column[0]))
        else:
            args.append([[from_engine(column[i])] for i in alive])
    try:
        result = adapter.func(*args)
    except Exception:
        result = None
    if not (
        isinstance(result, list)
        and len(result) == len(alive)
        and all(isinstance(r, list) and len(r) == 1 for r in result)
    ):
        return _one_by_one(step, columns, n, dead)  # e.g. one error for the whole range
    out: list[Any] = [None] * n
    for i, row in zip(alive, result, strict=True):
        value = to_engine(row[0], adapter.name)
        if isinstance(value, np.ndarray):
            dead.add(i)
        else:
            out[i] = value
    return out


def schedule(
    units: Sequence[Any], depth: Mapping[int, int], chained: Callable[[Any], bool]
) -> list[Any]:
    """``units`` (in a valid order) regrouped: depth by depth, each template's chained
    cells as one :class:`Batch` when there are at least :data:`MIN_BATCH` of them."""
    by_depth: dict[int, list[Any]] = {}
    for unit in units:
        by_depth.setdefault(depth[unit.order], []).append(unit)
    out: list[Any] = []
    for level in sorted(by_depth):
        groups: dict[int, list[Any]] = {}
        singles: list[Any] = []
        for unit in by_depth[level]:
            if chained(unit):
                groups.setdefault(id(unit.template), []).append(unit)
            else:
                singles.append(unit)
        for group in groups.values():
            if len(group) >= MIN_BATCH:
                out.append(Batch(group[0].template.chain, group))
            else:
                singles.extend(group)
        out.extend(sorted(singles, key=lambda u: u.order))
    return out
