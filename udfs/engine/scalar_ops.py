"""The one-cell shortcut of the engine's element-wise functions (operators, IF, ROUND, ...).

Most of Excel's functions in the `formulas` package are built by its
``wrap_ufunc``: the arguments go through an ``args_parser``, then
``numpy.vectorize`` calls an inner ``safe_eval`` per element. With one-cell
arguments, ``numpy.vectorize`` costs 20-40 us per call for a single element.
:func:`shortcut_for` recognises such a function by its closures and returns a
shortcut that calls the *same* ``safe_eval`` on the one element and builds the
result array ``numpy.vectorize`` would have built: a (1, 1) engine ``Array``
when an argument is a (1, 1) array, a 0-d ``Array`` when all are scalars. It
handles only the two argument parsers whose element-wise effect is known (the
default one, which turns empty cells into 0, and the identity of the
comparison operators); every other case -- larger arrays, other parsers,
options such as ``excluded`` -- and any exception goes to the function itself.

>>> from formulas.functions.operators import OPERATORS
>>> plus = OPERATORS["+"]
>>> fast = shortcut_for(plus)
>>> one = np.array([[2.0]], dtype=object)
>>> fast(plus, [one, 3.0]).tolist(), plus(one, 3.0).tolist()
([[5.0]], [[5.0]])
>>> shortcut_for(len) is None
True
"""

from __future__ import annotations

import functools
from collections.abc import Callable
from typing import Any

import numpy as np
import schedula as sh
from formulas.errors import FoundError
from formulas.functions import (
    Array,
    Error,
    XlError,
    convert_nan,
    convert_noshp,
    get_error,
    wrap_ranges_func,
    wrap_ufunc,
)
from formulas.functions.operators import logic_wrap

__all__ = ["element_parts", "shortcut_for"]

Shortcut = Callable[[Callable[..., Any], list[Any]], Any]

_EMPTY = sh.EMPTY
_SAMPLE = wrap_ufunc(lambda x: x)
_DEFAULTS = dict(
    zip(
        ("input_parser", "check_error", "args_parser", "otype", "ranges", "return_func"),
        wrap_ufunc.__defaults__ or (),
        strict=False,
    )
)
_LOGIC_ARGS_PARSER = logic_wrap.keywords.get("args_parser")


def _cells(func: Any) -> dict[str, Any]:
    code = getattr(func, "__code__", None)
    closure = getattr(func, "__closure__", None)
    if code is None or closure is None:
        return {}
    return {n: c.cell_contents for n, c in zip(code.co_freevars, closure, strict=True)}


_OUTER = _SAMPLE.__code__  # wrap_ranges_func's wrapper
_MIDDLE = _cells(_SAMPLE)["func"].__code__  # wrap_func's wrapper
_INNER = _cells(_cells(_SAMPLE)["func"])["func"].__code__  # wrap_ufunc's wrapper
assert _OUTER is wrap_ranges_func(len).__code__


def _element_function(safe_eval: Callable[..., Any]) -> Callable[[list[Any]], Any]:
    """``safe_eval`` itself, or -- when it checks errors with the default ``get_error`` --
    the same steps without ``get_error``'s generic flattening of one-element arguments."""
    cells = _cells(safe_eval)
    if cells.get("check_error") is not get_error or "func" not in cells:
        return lambda elems: safe_eval(*elems)
    func, input_parser, check_nan = cells["func"], cells["input_parser"], cells["check_nan"]

    def evaluate(elems: list[Any]) -> Any:
        for v in elems:
            if isinstance(v, XlError):
                return v  # get_error: the first error value
            if not isinstance(v, str) and hasattr(v, "__iter__"):
                return safe_eval(*elems)  # nested values: get_error flattens them
        try:
            r = convert_noshp(func(*input_parser(*elems)))
            if check_nan and not isinstance(r, (XlError, str)):
                r = convert_nan(r)
        except FoundError as ex:
            r = ex.err
        except (ValueError, TypeError):
            r = Error.errors["#VALUE!"]
        return r

    return evaluate


def _make(safe_eval: Callable[..., Any], empty_to_zero: bool) -> Shortcut:
    element = _element_function(safe_eval)

    def shortcut(func: Callable[..., Any], args: list[Any]) -> Any:
        if len(args) >= 32:
            return func(*args)
        elems = []
        two_d = False
        for a in args:
            if isinstance(a, np.ndarray):
                shape = a.shape
                if shape == (1, 1):
                    two_d = True
                    v = a[0, 0]
                elif shape == ():
                    v = a[()]
                else:
                    return func(*args)
            elif isinstance(a, (list, tuple, dict)) or hasattr(a, "ranges"):
                return func(*args)
            else:
                v = a
            if empty_to_zero and v is _EMPTY:
                v = 0
            elems.append(v)
        try:
            r = element(elems)
        except Exception:
            return func(*args)
        if isinstance(r, (list, tuple, np.ndarray)):
            return func(*args)
        if two_d:
            out = np.empty((1, 1), object)
            out[0, 0] = r
            return out.view(Array)
        return np.asanyarray(r, dtype=object).view(Array)

    _PARTS[shortcut] = (element, empty_to_zero)
    return shortcut


#: shortcut -> (its element function of a list of values, whether empty cells become 0)
_PARTS: dict[Shortcut, tuple[Callable[[list[Any]], Any], bool]] = {}


def element_parts(shortcut: Shortcut) -> tuple[Callable[[list[Any]], Any], bool] | None:
    """The element function a shortcut calls and whether it turns empty cells into 0."""
    return _PARTS.get(shortcut)


@functools.cache
def _shortcut_cached(func: Any) -> Shortcut | None:
    if getattr(func, "__code__", None) is not _OUTER:
        return None
    middle = _cells(func).get("func")
    if getattr(middle, "__code__", None) is not _MIDDLE:
        return None
    inner = _cells(middle).get("func")
    if getattr(inner, "__code__", None) is not _INNER:
        return None
    cells = _cells(inner)
    if cells.get("otype") is not Array or cells.get("kw") != {"otypes": [object]}:
        return None
    if cells.get("return_func") is not _DEFAULTS["return_func"]:
        return None
    parser = cells.get("args_parser")
    if parser is _DEFAULTS["args_parser"]:
        return _make(cells["safe_eval"], True)
    if parser is _LOGIC_ARGS_PARSER and parser is not None:
        return _make(cells["safe_eval"], False)
    return None


def shortcut_for(func: Any) -> Shortcut | None:
    """The one-cell shortcut of an engine function, or None (see module doc)."""
    try:
        return _shortcut_cached(func)
    except TypeError:  # unhashable callable
        return None
