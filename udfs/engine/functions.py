"""One adapter between the `formulas` engine and our spreadsheet functions.

Every function of ``udfs.sheet.registry.FUNCTIONS`` is registered in the
engine under its spreadsheet name, wrapped in :class:`SheetFunctionAdapter`:

* engine inputs become plain cell values: a one-cell range or a scalar becomes
  a scalar, a larger range a 2-D list; an empty cell becomes ``None``; numpy
  scalars become ``float``/``int``/``bool``; an engine error value becomes a
  :class:`~udfs.sheet.error_values.SheetError` with the same code. An error passed
  as a single value is propagated without calling the function, as
  spreadsheets do; inside a range it reaches the function as an element, so
  only that element's result is an error;
* the result comes back: a :class:`SheetError` becomes the engine's own error
  value of the same code (so IFERROR, ISERROR and propagation work); NaN and
  infinity become ``#NUM!``; a 2-D list becomes an engine array, which fills
  an array-formula range (and shows its top-left value in a one-cell formula);
* an exception escaping a sheet function (a bug: they should return errors)
  becomes ``#VALUE!``; its message is kept, like every error message, in
  :data:`MESSAGES` so the engine can report it beside the cell.

>>> from udfs.sheet.error_values import SheetError
>>> def half(x):
...     return x / 2 if isinstance(x, (int, float)) else SheetError("#VALUE!", "x: a number")
>>> f = SheetFunctionAdapter("CW_HALF", half)
>>> f(3.0), str(f("text"))
(1.5, '#VALUE!')
>>> SheetFunctionAdapter("CW_PAIR", lambda x: [[x, 2 * x]])(2.0).tolist()
[[2.0, 4.0]]
"""

from __future__ import annotations

import functools
import math
import threading
from collections import OrderedDict
from collections.abc import Callable, Mapping
from typing import Any

import numpy as np
import schedula as sh
from formulas.errors import RangeValueError
from formulas.functions import Array, get_functions
from formulas.ranges import Ranges
from formulas.tokens.operand import Error, XlError

from udfs.sheet.error_values import CODES, CellValue, SheetError

from . import lookup
from .deferred_scipy import import_statistics

import_statistics()  # before get_functions(): SciPy waits until a function needs it

__all__ = [
    "MESSAGES",
    "CellValue",
    "SheetFunctionAdapter",
    "ensure_registered",
    "from_engine",
    "generation",
    "messages_for",
    "register",
    "registered_names",
    "sheet_functions",
    "to_engine",
]

MAX_MESSAGES_PER_FUNCTION = 20

#: function name -> recent distinct error messages (most recent last), bounded.
MESSAGES: dict[str, OrderedDict[str, None]] = {}
_lock = threading.Lock()
_registered: dict[str, Callable[..., Any]] = {}
_generation = 0


def _remember(name: str, message: str) -> None:
    with _lock:
        box = MESSAGES.setdefault(name, OrderedDict())
        box.pop(message, None)
        box[message] = None
        while len(box) > MAX_MESSAGES_PER_FUNCTION:
            box.popitem(last=False)


def messages_for(name: str) -> list[str]:
    """Recent error messages of the function ``name`` (most recent last)."""
    with _lock:
        return list(MESSAGES.get(name.upper(), ()))


def from_engine(value: Any) -> CellValue:
    """One engine value as a plain cell value (errors as SheetError)."""
    if type(value) is float:
        return value
    if value is sh.EMPTY or value is None:
        return None
    if isinstance(value, XlError):
        code = str(value)
        return SheetError(code if code in CODES else "#VALUE!")
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, np.generic):
        value = value.item()
    if isinstance(value, (int, float, str)):
        return value
    if isinstance(value, np.ndarray) and value.size == 1:
        return from_engine(value.reshape(-1)[0])
    return SheetError("#VALUE!", f"unsupported engine value {type(value).__name__}")


def _argument(arg: Any) -> CellValue | list[list[CellValue]]:
    """An engine argument as a scalar or a 2-D list of cell values."""
    if isinstance(arg, Ranges):
        arg = arg.value  # raises RangeValueError while the engine compiles
    if isinstance(arg, np.ndarray):
        if arg.shape == (1, 1):
            return from_engine(arg[0, 0])
        if arg.ndim == 0:
            return from_engine(arg.item())
        grid = arg.reshape(1, -1) if arg.ndim == 1 else arg
        if grid.shape == (1, 1):
            return from_engine(grid[0, 0])
        return [[from_engine(v) for v in row] for row in grid.tolist()]
    return from_engine(arg)


def _error(code: str) -> XlError:
    return Error.errors.get(code, Error.errors["#VALUE!"])


def to_engine(result: Any, name: str = "") -> Any:
    """A sheet function's result as an engine value (scalar or 2-D Array)."""
    if type(result) is float and result - result == 0.0:  # finite
        return result
    if isinstance(result, SheetError):
        if name:
            _remember(name, str(result))
        return _error(result.code)
    if result is None:
        return sh.EMPTY
    if isinstance(result, (bool, np.bool_)):
        return bool(result)
    if isinstance(result, np.generic):
        result = result.item()
    if isinstance(result, int):
        return result
    if isinstance(result, float):
        if math.isfinite(result):
            return result
        if name:
            _remember(name, f"#NUM! result is {result} (not a finite number)")
        return _error("#NUM!")
    if isinstance(result, str):
        return result
    if isinstance(result, (list, tuple, np.ndarray)):
        return _array(result, name)
    if name:
        _remember(name, f"#VALUE! returned an unsupported {type(result).__name__}")
    return _error("#VALUE!")


def _array(result: Any, name: str) -> Any:
    rows = np.asarray(result, dtype=object) if not isinstance(result, np.ndarray) else result
    if rows.ndim == 1:
        rows = rows.reshape(1, -1)
    if rows.ndim != 2 or rows.size == 0:
        if name:
            _remember(name, f"#VALUE! returned an array of shape {rows.shape}; 2-D expected")
        return _error("#VALUE!")
    out = np.empty(rows.shape, dtype=object)
    for idx, v in np.ndenumerate(rows):
        if isinstance(v, (list, tuple, np.ndarray)):
            return _error("#VALUE!")
        out[idx] = to_engine(v, name)
    if out.shape == (1, 1):
        return out[0, 0]
    arr = out.view(Array)
    arr._collapse_value = out[0, 0]  # one-cell formula: show the top-left value
    return arr


class SheetFunctionAdapter:
    """The engine-facing callable of one sheet function (picklable by reference)."""

    def __init__(self, name: str, func: Callable[..., Any]):
        self.name = name.upper()
        self.func = func
        self.__name__ = self.name
        self.__doc__ = getattr(func, "__doc__", None)

    def __repr__(self) -> str:
        return f"SheetFunctionAdapter({self.name})"

    def __call__(self, *args: Any) -> Any:
        try:
            values = [_argument(a) for a in args]
        except RangeValueError:
            return sh.NONE  # the engine is still compiling: no value yet
        # error values from other cells go in as SheetError: the function decides, as
        # in Excel with the add-in (the leftmost bad argument, error or not, wins)
        try:
            result = self.func(*values)
        except Exception as exc:  # a sheet function must not raise; never let it escape
            _remember(self.name, f"#VALUE! {type(exc).__name__}: {exc}")
            return _error("#VALUE!")
        return to_engine(result, self.name)


def sheet_functions() -> dict[str, Callable[..., Any]]:
    """The registry of the spreadsheet functions (empty until udfs.sheet provides it)."""
    try:
        from udfs.sheet import registry
    except ImportError:
        return {}
    return dict(getattr(registry, "FUNCTIONS", {}))


#: Excel's ROUND family with a digits argument past this is refused as #NUM!; the
#: `formulas` package computes 10**digits and would hang on ROUND(x, 1E+300).
MAX_ROUND_DIGITS = 1000


def _bound_round_digits() -> None:
    """Replace ROUND, ROUNDUP and ROUNDDOWN by versions that refuse absurd digits
    (same results otherwise: the package's own element-wise function is called)."""
    from formulas.functions import math as xl_math
    from formulas.functions import wrap_ufunc

    def bounded(inner: Callable[..., Any]) -> Callable[..., Any]:
        def element(x: Any, d: Any) -> Any:
            if not abs(float(d)) <= MAX_ROUND_DIGITS:
                return Error.errors["#NUM!"]
            return inner(x, d)

        return wrap_ufunc(element)

    table = get_functions()
    for name, inner in (
        ("ROUND", xl_math.xround),
        ("ROUNDDOWN", functools.partial(xl_math.xround, func=math.floor)),
        ("ROUNDUP", functools.partial(xl_math.xround, func=math.ceil)),
    ):
        table[name] = bounded(inner)
        ROUNDING[table[name]] = inner


#: the installed ROUND, ROUNDDOWN and ROUNDUP -> their element function of (float, float)
ROUNDING: dict[Callable[..., Any], Callable[[float, float], Any]] = {}


_bound_round_digits()
lookup.install(get_functions())  # INDEX without a reference object per cell of its range


def register(functions: Mapping[str, Callable[..., Any]]) -> int:
    """Register ``functions`` in the engine under their (upper-case) names.

    Also under ``_XLUDF.NAME``, the prefix Excel writes for user-defined
    functions it did not know when saving. Returns the registry generation,
    which changes whenever a registration changes (compiled models depend on it).
    """
    global _generation
    table = get_functions()
    changed = False
    for name, func in functions.items():
        key = name.upper()
        if _registered.get(key) is func:
            continue
        adapter = SheetFunctionAdapter(key, func)
        table[key] = adapter
        table["_XLUDF." + key] = adapter
        _registered[key] = func
        changed = True
    if changed:
        _generation += 1
    return _generation


def ensure_registered() -> int:
    """Register the current ``udfs.sheet`` functions (cheap when nothing changed)."""
    return register(sheet_functions())


def generation() -> int:
    """The registry generation (see :func:`register`)."""
    return _generation


def registered_names() -> list[str]:
    """Names of the sheet functions registered so far, sorted."""
    return sorted(_registered)
