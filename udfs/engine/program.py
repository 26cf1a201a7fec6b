"""A formula structure parsed once by the `formulas` package and run as a list of steps.

The package's parser (``formulas.Parser().ast``) turns the text into a graph of
its own function objects (Excel's functions, our registered ``CW_`` functions).
:class:`Program` keeps that graph's function nodes in dependency order and
calls them with the values the evaluator gives for the placeholders: the same
functions on the same arguments as the package's compiled formula, without a
dispatcher per call (measured on the cell-sizing template: about 10 us per
step here against about 60 us through the compiled formula).

Operators on finite numbers (``+ - * /``, negation, comparisons), the equality
of texts and IF on TRUE/FALSE conditions are computed directly, a whole column in
one numpy call (:func:`_on_numbers`, :func:`_on_texts`, :func:`_on_choice`: what
the package computes, without its checks per element); anything else goes to the
package's function.

The same program runs a single cell or a whole block of cells at once when its
inputs are stacked in columns: that is exact when every step that sees a
stacked input works element by element (:meth:`Program.elementwise`; the
operators and the functions of :data:`ELEMENTWISE`, each proved so by
``tests/engine/test_program.py``).

>>> p = program("=_R0*_K0+1")
>>> p.inputs, float(p.run([2.0, 3.0]))
(('_K0', '_R0'), 7.0)
"""

from __future__ import annotations

import math
import operator
import re
from collections import OrderedDict
from collections.abc import Callable, Sequence
from typing import Any

import formulas
import numpy as np
import schedula as sh
from formulas.functions import Array
from formulas.ranges import Ranges

__all__ = ["ELEMENTWISE", "OPERATORS", "Program", "ProgramError", "program"]

#: Excel operators as the package names them that work element by element on stacked
#: columns (``^`` does not: one error element turns the package's whole result into it).
OPERATORS = frozenset(
    {"+", "-", "*", "/", "&", "=", "<>", "<", ">", "<=", ">=", "u-", "u+", "%"}
)
#: Functions of the package that work element by element on stacked single values.
ELEMENTWISE = frozenset(
    {
        "IF", "IFERROR", "IFNA", "NOT", "ABS", "SQRT", "EXP", "LN", "LOG10", "POWER", "MOD",
        "INT", "TRUNC", "SIGN", "ROUND", "ROUNDUP", "ROUNDDOWN", "ISERROR", "ISERR", "ISNA",
        "ISNUMBER", "ISTEXT", "ISBLANK", "ISLOGICAL", "LEN", "UPPER", "LOWER", "TRIM",
    }
)
_KNOWN_ATTRS = {"type", "inputs", "outputs", "function", "wait_inputs", "index", "solve_cycle",
                "extra_inputs"}
_SUFFIX = re.compile(r"<[0-9]+>$")
_PARSER = formulas.Parser()
_CACHE: OrderedDict[str, Program] = OrderedDict()
MAX_CACHED_PROGRAMS = 20_000


class ProgramError(Exception):
    """The package parsed the formula into something this runner does not reproduce."""


class Program:
    """One parsed formula structure: inputs (placeholder names) and steps."""

    def __init__(self, text: str):
        self.text = text
        try:
            _tokens, builder = _PARSER.ast(text)
        except Exception as exc:  # the package's parse errors have no common base class
            raise ProgramError(f"cannot parse {text!r}: {exc}") from None
        dsp = builder.dsp
        root = builder.get_node_id(builder[-1])
        pred = dsp.dmap.pred
        defaults = dsp.default_values
        slots: dict[Any, int] = {}
        template: list[Any] = []
        inputs: dict[str, int] = {}
        steps: list[tuple[int, Callable[..., Any], tuple[int, ...], str]] = []

        def leaf(node: Any) -> int:
            index = len(template)
            if node in defaults:
                template.append(defaults[node]["value"])
            else:
                template.append(sh.EMPTY)
                inputs[str(node)] = index
            return index

        def maker(node: Any) -> tuple[Any, dict[str, Any]] | None:
            makers = list(pred.get(node, ()))
            if node in defaults or not makers:
                return None
            if len(makers) != 1:
                raise ProgramError(f"{node!r} is computed {len(makers)} ways")
            attrs = dsp.nodes[makers[0]]
            extra = set(attrs) - _KNOWN_ATTRS
            if extra or len(attrs.get("outputs", ())) != 1:
                raise ProgramError(f"step {makers[0]!r} has {sorted(extra)}")
            return makers[0], attrs

        # depth-first, post-order, with an explicit stack: a formula of thousands of
        # operators is as deep as it is long, deeper than Python's recursion allows
        stack: list[tuple[Any, bool]] = [(root, False)]
        while stack:
            node, ready = stack.pop()
            if node in slots:
                continue
            made = maker(node)
            if made is None:
                slots[node] = leaf(node)
                continue
            fid, attrs = made
            # a call with no arguments waits on the dispatcher's START node only
            args = [i for i in attrs.get("inputs") or () if i != sh.START]
            if not ready:
                stack.append((node, True))
                stack.extend((i, False) for i in reversed(args) if i not in slots)
                continue
            index = len(template)
            template.append(None)
            steps.append((index, attrs["function"], tuple(slots[i] for i in args),
                          _SUFFIX.sub("", str(fid))))
            slots[node] = index

        self.root = slots[root]
        self._template = template
        self.inputs = tuple(sorted(inputs))
        self._input_slots = [inputs[n] for n in self.inputs]
        self._steps = steps
        self.functions = frozenset(s[3] for s in steps)

    def run(self, values: Sequence[Any]) -> Any:
        """The formula's value for ``values`` (one per name of :attr:`inputs`)."""
        regs = list(self._template)
        for index, value in zip(self._input_slots, values, strict=True):
            regs[index] = value
        for out, func, ins, name in self._steps:
            args = [regs[i] for i in ins]
            op = _ON_NUMBERS.get(name)
            if op is not None:
                got = _on_numbers(op, args)
                if got is None and name in _TEXT_EQUALITY:
                    got = _on_texts(op, args)
            else:
                got = _on_choice(args) if name == "IF" else None
            regs[out] = func(*args) if got is None else got
        result = regs[self.root]
        return result.value if isinstance(result, Ranges) else result

    def elementwise(self, varying: set[str], extra: Callable[[str], bool]) -> bool:
        """True when every step reached by a ``varying`` input works element by element
        (operators, :data:`ELEMENTWISE`, or functions ``extra`` accepts)."""
        moving = {self._input_slots[i] for i, n in enumerate(self.inputs) if n in varying}
        for out, _func, ins, name in self._steps:
            if not moving.intersection(ins):
                continue
            if name not in OPERATORS and name not in ELEMENTWISE and not extra(name):
                return False
            moving.add(out)
        return True


#: Operators run directly on numbers (:func:`_on_numbers`): the package computes them
#: with Python's own operations on the two values once its checks pass.
_ON_NUMBERS: dict[str, Callable[..., Any]] = {
    "+": operator.add, "-": operator.sub, "*": operator.mul, "/": operator.truediv,
    "u-": operator.neg, "=": operator.eq, "<>": operator.ne, "<": operator.lt,
    ">": operator.gt, "<=": operator.le, ">=": operator.ge,
}
_EXACT_INT = 2**53  # integers up to this convert to float exactly


def _on_numbers(op: Callable[..., Any], args: list[Any]) -> Any:
    """``op`` on finite numbers, as the package's operator gives it, or None for anything
    else (the package's operator then runs: text, booleans, empty cells, errors, ranges,
    division by zero, results that are not finite, columns of different shapes).

    The package checks each element's type and errors, calls Python's own ``x + y``
    (``x > y``, ...) and turns a result that is not finite into #NUM!
    (``formulas.functions.operators``); on finite floats numpy's IEEE operations give the
    same numbers, so a column is computed in one call. The result is what the package
    returns: an object ``Array`` of Python floats or booleans, of the same shape.
    Measured on the 15,000-cell filled-down benchmark workbook (5 columns of 3,000
    cells; benchmarks/bench_engine.py): warm re-evaluation after one input change
    125 -> 53 ms; the sweep of the cell-sizing template (single cells) 69 -> 73
    scenarios/s. ``tests/engine/test_program.py`` compares it with the package's own
    compiled formula on every kind of value, exactly (value, type, shape, sign of zero).

    >>> _on_numbers(operator.add, [2.0, 3]).item(), _on_numbers(operator.truediv, [1.0, 0.0])
    (5.0, None)
    """
    plain: list[Any] = []
    shape: tuple[int, ...] | None = None
    for a in args:
        t = type(a)
        if t is float:
            plain.append(a)
        elif t is int and -_EXACT_INT <= a <= _EXACT_INT:
            plain.append(float(a))  # as the package reads an integer
        elif isinstance(a, np.ndarray) and a.dtype == object:
            if a.ndim == 0:
                v = a[()]
                if type(v) is float:
                    plain.append(v)
                elif type(v) is int and -_EXACT_INT <= v <= _EXACT_INT:
                    plain.append(float(v))
                else:
                    return None
            elif (shape is None or a.shape == shape) and all(type(v) is float for v in a.flat):
                shape = a.shape
                plain.append(a.astype(float))
            else:
                return None
        else:
            return None
    if shape is None:  # single values: Python's own operation, as the package does it
        if not all(math.isfinite(x) for x in plain):
            return None
        try:
            r = op(*plain)
        except ArithmeticError:
            return None
        if type(r) is float and not math.isfinite(r):
            return None
        return np.asarray(r, dtype=object).view(Array)
    if not all(np.isfinite(x).all() for x in plain):
        return None
    with np.errstate(all="ignore"):
        r = op(*plain)
    if r.dtype != bool and not np.isfinite(r).all():
        return None
    return r.astype(object).view(Array)


_TEXT_EQUALITY = frozenset({"=", "<>"})


def _on_texts(op: Callable[..., Any], args: list[Any]) -> Any:
    """``=`` or ``<>`` of texts, compared as the package compares two texts (both
    upper-cased: Excel's comparison ignores case), or None for anything else.

    About 300 of the cell-sizing template's steps compare a text input with a name
    ("cylindrical", "graphite"); measured there: warm re-evaluation after one input change
    45 -> 39 ms, its sweep 73 -> 87 scenarios/s.

    >>> _on_texts(operator.eq, ["Stack", "STACK"]).item(), _on_texts(operator.eq, ["1", 1.0])
    (True, None)
    """
    upper: list[Any] = []
    shape: tuple[int, ...] | None = None
    for a in args:
        if isinstance(a, np.ndarray) and a.dtype == object and a.ndim == 0:
            a = a[()]
        if type(a) is str:
            upper.append(a.upper())
        elif (
            isinstance(a, np.ndarray)
            and a.dtype == object
            and (shape is None or a.shape == shape)
            and all(type(v) is str for v in a.flat)
        ):
            shape = a.shape
            column = np.empty(a.shape, dtype=object)
            column.flat[:] = [v.upper() for v in a.flat]
            upper.append(column)
        else:
            return None
    if shape is None:
        return np.asarray(op(*upper), dtype=object).view(Array)
    # compared pair by pair in Python: numpy would turn a single text into a
    # fixed-width string first, which drops trailing NUL characters
    size = int(np.prod(shape))
    columns = [list(u.flat) if isinstance(u, np.ndarray) else [u] * size for u in upper]
    out = np.empty(shape, dtype=object)
    out.flat[:] = [op(*pair) for pair in zip(*columns, strict=True)]
    return out.view(Array)


def _on_choice(args: list[Any]) -> Any:
    """``IF(condition, x, y)`` when every condition is TRUE or FALSE, as the package
    chooses (``x if condition else y`` element by element, ``y`` FALSE when left out),
    or None for anything else (a condition that is a number, text, empty or an error;
    an empty ``x`` or ``y``, which the package reads as 0; columns of different shapes).

    Measured: warm re-evaluation of the 15,000-cell filled-down benchmark workbook (an IF
    over 3,000 cells) 49.5 -> 41.7 ms; the sweep of the cell-sizing template (115 IFs a
    scenario) 89 -> 102 scenarios/s.

    >>> _on_choice([True, "yes", 2.0]).item(), _on_choice([1.0, "yes", 2.0])
    ('yes', None)
    """
    if len(args) == 2:
        args = [*args, False]
    if len(args) != 3:
        return None
    values: list[Any] = []
    shape: tuple[int, ...] | None = None
    for a in args:
        if isinstance(a, np.ndarray) and a.dtype == object and a.ndim == 0:
            a = a[()]
        if isinstance(a, np.ndarray):
            if a.dtype != object or (shape is not None and a.shape != shape):
                return None
            if any(v is sh.EMPTY for v in a.flat):
                return None
            shape = a.shape
        elif a is sh.EMPTY or not isinstance(a, (float, int, str)):  # ranges, lists, ...
            return None
        values.append(a)
    cond, x, y = values
    if shape is None:
        if type(cond) is not bool:
            return None
        chosen = x if cond else y
        out = np.empty((), dtype=object)
        out[()] = chosen
        return out.view(Array)
    if isinstance(cond, np.ndarray):
        if not all(type(v) is bool for v in cond.flat):
            return None
    elif type(cond) is not bool:
        return None
    picked = np.where(
        np.asarray(cond, dtype=bool),
        np.broadcast_to(np.asarray(x, dtype=object), shape),
        np.broadcast_to(np.asarray(y, dtype=object), shape),
    )
    return picked.astype(object).view(Array)


def program(text: str) -> Program:
    """The program of a structure text, parsed once per process (bounded cache)."""
    found = _CACHE.get(text)
    if found is not None:
        _CACHE.move_to_end(text)
        return found
    made = Program(text)
    _CACHE[text] = made
    while len(_CACHE) > MAX_CACHED_PROGRAMS:
        _CACHE.popitem(last=False)
    return made
