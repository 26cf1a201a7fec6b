"""One-cell formulas evaluated on plain values: no array per step, plain float arithmetic.

In :class:`udfs.engine.fast.FastPlan` every step of a formula returns the
engine's array: a (1, 1) object array per operator, comparison or function.
For a one-cell formula whose steps are all element-wise (operators, IF, ROUND
... -- the functions :func:`udfs.engine.scalar_ops.shortcut_for` knows), our
``CW_`` functions, and MAX or MIN, :func:`compile_chain` builds a :class:`Chain`
that keeps each step's single value as it is and builds the array only for the
formula's result, exactly as the step would have (:func:`step_value` is one
step). These shortcuts give the engine's own results without calling it:

* ``+ - * / %`` and unary minus on two numbers (``int`` or ``float``, not
  ``bool``) are computed as the engine computes them -- both converted with
  ``float`` -- when the result is finite and the divisor is not zero
  (otherwise the engine's function decides: #NUM!, #DIV/0!);
* ``= <> < <= > >=`` on two numbers compare them as numbers;
* IFERROR of a number is that number; IF with a number or TRUE/FALSE picks;
* ROUND, ROUNDUP and ROUNDDOWN of two numbers call the engine's own rounding of
  the two floats when the digits are in range and the result is finite;
* MAX and MIN of single numbers are Python's ``max`` and ``min`` of them in
  order, as the engine's own code does.

Any other value (text, an empty cell, an error) goes to the engine's own
element function. MAX or MIN of anything but numbers, a step that raises and a
step that returns an array make :meth:`Chain.run` return :data:`BAIL`, and the
caller evaluates the cell the usual way. Tests compare both ways on edge values.

>>> import operator
>>> step_value((0, (1, 2), ARITH, operator.add, None, True), [2.0, 3])
5.0
>>> step_value((0, (1, 2), MINMAX, max, None, False), [2.0, 7])
7
"""

from __future__ import annotations

import operator
from collections.abc import Callable, Mapping, Sequence
from typing import Any

import numpy as np
import schedula as sh
from formulas.functions import Array, XlError, get_functions
from formulas.functions.operators import OPERATORS

from .functions import MAX_ROUND_DIGITS, ROUNDING, SheetFunctionAdapter
from .scalar_ops import element_parts

__all__ = ["BAIL", "BailError", "Chain", "compile_chain", "step_value"]

BAIL: Any = object()  # evaluate this cell the usual way

_EMPTY = sh.EMPTY

# step modes
ELEMENT, ARITH, COMPARE, NEGATE, PERCENT, SHEET, MINMAX, IFERROR, IF, ROUND = range(10)


def divide(x: float, y: float) -> float:
    """``x / y``: a function of its own, so that a division step is recognised."""
    return x / y


_ARITH_OPS = {"+": operator.add, "-": operator.sub, "*": operator.mul, "/": divide}
_COMPARE_OPS = {
    "=": operator.eq,
    "<>": operator.ne,
    "<": operator.lt,
    "<=": operator.le,
    ">": operator.gt,
    ">=": operator.ge,
}
_CONST_TYPES = (float, int, bool, str, XlError)


def _native(func: Any) -> tuple[int, Callable[..., Any] | None]:
    for sign, op in _ARITH_OPS.items():
        if func is OPERATORS[sign]:
            return ARITH, op
    for sign, op in _COMPARE_OPS.items():
        if func is OPERATORS[sign]:
            return COMPARE, op
    if func is OPERATORS["U-"]:
        return NEGATE, None
    if func is OPERATORS["%"]:
        return PERCENT, None
    if func is _function("IFERROR"):
        return IFERROR, None
    if func is _function("IF"):
        return IF, None
    if func in ROUNDING:
        return ROUND, ROUNDING[func]
    return ELEMENT, None


def _function(name: str) -> Any:
    entry = get_functions()[name]
    return entry.get("function") if isinstance(entry, dict) else entry


def _minmax(func: Any) -> Callable[..., Any] | None:
    table = get_functions()
    if func is table["MAX"]:
        return max
    if func is table["MIN"]:
        return min
    return None


class BailError(Exception):
    """This value is not one the chain reproduces: evaluate the cell the usual way."""


Step = tuple[int, tuple[int, ...], int, Any, Any, bool]  # out, ins, mode, fn, element, empty->0


def step_value(step: Step, args: list[Any]) -> Any:
    """One step's value from its arguments' values, as the engine gives it; raises BailError."""
    _, _, mode, fn, element, empty_to_zero = step
    if mode in (ARITH, COMPARE):
        x, y = args
        tx, ty = type(x), type(y)
        if (tx is float or tx is int) and (ty is float or ty is int):
            if mode == COMPARE:
                return fn(x, y)
            if not (fn is divide and y == 0):
                r = fn(float(x), float(y))
                if r - r == 0.0:  # finite
                    return r
    elif mode in (NEGATE, PERCENT):
        x = args[0]
        tx = type(x)
        if tx is float or tx is int:
            return -float(x) if mode == NEGATE else float(x) / 100.0
    elif mode == IFERROR:
        x = args[0]
        tx = type(x)
        if tx is float or tx is int:  # not an error: the value itself
            return x
    elif mode == IF:
        cond = args[0]
        tc = type(cond)
        if tc is bool or tc is float or tc is int:  # not text, an error or empty
            r = args[1] if cond else (args[2] if len(args) > 2 else False)
            return 0 if r is _EMPTY else r
    elif mode == ROUND:
        x, d = args
        tx, td = type(x), type(d)
        if (tx is float or tx is int) and (td is float or td is int):
            d = float(d)
            if abs(d) <= MAX_ROUND_DIGITS:
                r = fn(float(x), d)
                if type(r) is float and r - r == 0.0:
                    return r
    elif mode == SHEET:
        r = fn(*args)
        if isinstance(r, np.ndarray) or r is sh.NONE:
            raise BailError
        return r
    elif mode == MINMAX:
        for v in args:
            tv = type(v)
            if tv is not float and tv is not int:
                raise BailError
        return fn(args) if args else 0
    if empty_to_zero:
        args = [0 if v is _EMPTY else v for v in args]
    r = element(args)
    if isinstance(r, (list, tuple, np.ndarray)):
        raise BailError
    return r


class Chain:
    """The steps of one formula template on plain values (see module doc)."""

    __slots__ = ("const_slots", "ref_slots", "root_two_d", "steps")

    def __init__(
        self,
        steps: list[Step],
        root_two_d: bool | None,
        const_slots: tuple[int, ...] = (),
        ref_slots: tuple[int, ...] = (),
    ):
        self.steps = steps
        self.root_two_d = root_two_d  # None: the root is a sheet function's or MAX's value
        self.const_slots = const_slots  # slots the steps read that hold constants
        self.ref_slots = ref_slots  # slots of one-cell references

    def run(self, consts: Sequence[Any], refs: Sequence[Any], cells: Mapping[Any, Any]) -> Any:
        """The formula's value as the usual evaluation gives it, or :data:`BAIL`."""
        try:
            vals = list(consts)
            for b in refs:
                got = cells.get(b.key)
                vals[b.slot] = _EMPTY if got is None else got[0, 0]
            for step in self.steps:
                vals[step[0]] = step_value(step, [vals[i] for i in step[1]])
            return self.box(vals[self.steps[-1][0]])
        except Exception:  # BailError, or e.g. float() of an int too large: the usual way decides
            return BAIL

    def box(self, value: Any) -> Any:
        """The root value as the engine returns it (a (1, 1) or 0-d array after an
        element-wise step, the plain value after a sheet function or MAX/MIN)."""
        if self.root_two_d is None:
            return value
        if self.root_two_d:
            box = np.empty((1, 1), object)
            box[0, 0] = value
            return box.view(Array)
        return np.asanyarray(value, dtype=object).view(Array)


def compile_chain(
    program: Sequence[tuple[int, Any, tuple[int, ...], Any]],
    root: int,
    consts: Sequence[Any],
    ref_slots: Mapping[int, bool],
) -> Chain | None:
    """A :class:`Chain` for a one-cell template, or None when a step is not covered.

    ``ref_slots`` maps each reference slot to True when it is a plain one-cell
    reference (any other reference makes the template uncovered).
    """
    if not program or program[-1][0] != root or not all(ref_slots.values()):
        return None
    two_d: dict[int, bool] = {}
    for slot in ref_slots:
        two_d[slot] = True
    for i, c in enumerate(consts):
        if i in ref_slots or c is None:
            continue
        if not (c is _EMPTY or isinstance(c, _CONST_TYPES)):
            return None
        two_d[i] = False
    steps: list[Step] = []
    two_d_steps: list[int] = []  # slots the steps write
    root_two_d: bool | None = None
    for out, func, ins, kind in program:
        if any(i not in two_d for i in ins):
            return None
        parts = element_parts(kind) if kind is not None else None
        if parts is not None:
            if len(ins) >= 32:
                return None
            element, empty_to_zero = parts
            mode, op = _native(func)
            arity = {ARITH: 2, COMPARE: 2, NEGATE: 1, PERCENT: 1, IFERROR: 2, ROUND: 2}.get(
                mode, len(ins)
            )
            if mode == IF and len(ins) not in (2, 3):
                arity = -1
            if arity != len(ins):
                mode, op = ELEMENT, None
            steps.append((out, ins, mode, op, element, empty_to_zero))
            two_d_steps.append(out)
            two_d[out] = any(two_d[i] for i in ins)
            root_two_d = two_d[out]
        elif isinstance(func, SheetFunctionAdapter):
            steps.append((out, ins, SHEET, func, None, False))
            two_d_steps.append(out)
            two_d[out] = False
            root_two_d = None
        else:
            pick = _minmax(func)
            if pick is None:
                return None
            steps.append((out, ins, MINMAX, pick, None, False))
            two_d_steps.append(out)
            two_d[out] = False
            root_two_d = None
    consts_read = tuple(sorted({i for step in steps for i in step[1]} - set(two_d_steps)))
    return Chain(
        steps,
        root_two_d,
        tuple(i for i in consts_read if i not in ref_slots),
        tuple(sorted(ref_slots)),
    )
