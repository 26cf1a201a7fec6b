"""Our spreadsheet functions inside the `formulas` engine, and values across the seam.

The ``formulas`` package documents its function table (``get_functions()``) as
the place to add functions. Every ``CW_`` function of ``udfs.sheet.registry``
is added there under its spreadsheet name (and ``_XLUDF.`` + name, the prefix
Excel writes for add-in functions it did not know when saving), wrapped in
:class:`SheetFunction`:

* engine inputs become plain cell values: a one-cell range or a scalar becomes
  a scalar, a larger range a 2-D list; an empty cell ``None``; numpy scalars
  Python numbers; an engine error value a :class:`SheetError` (the function
  decides what an error argument means: the leftmost bad argument wins, as
  with the add-in);
* results come back as engine values: a :class:`SheetError` becomes the
  engine's error value of the same code (so IFERROR and propagation work),
  a non-finite number ``#NUM!``, a 2-D list an engine array;
* each error's message is handed to the :class:`Messages` collector the
  evaluator opens around the cell (or block of cells) it computes, so every
  cell gets its own message; an exception escaping a sheet function becomes
  ``#VALUE!`` with its type in the message.

Our deliberate changes to Excel's own functions live in
:mod:`udfs.engine.deviations`, registered from :func:`ensure_registered` too.

>>> f = SheetFunction("CW_HALF", lambda x: (np.asarray(x) / 2).tolist())
>>> f(3.0), to_cell(f(np.array([[2.0, 4.0]], dtype=object))[0, 1])
(1.5, 2.0)
"""

from __future__ import annotations

import contextlib
import contextvars
import math
from collections.abc import Callable, Iterator, Mapping
from typing import Any

import numpy as np
import schedula as sh
from formulas.functions import Array, get_functions
from formulas.ranges import Ranges
from formulas.tokens.operand import Error, XlError

from udfs.sheet.error_values import CODES, CellValue, SheetError

from . import deviations

__all__ = [
    "Messages",
    "SheetFunction",
    "ensure_registered",
    "error_value",
    "register",
    "registered_names",
    "to_cell",
    "to_engine",
]

_CURRENT: contextvars.ContextVar[Messages | None] = contextvars.ContextVar(
    "cellwright_messages", default=None
)
_registered: dict[str, Callable[..., Any]] = {}
_generation = 0


class Messages:
    """Error messages of one evaluation step: (flat element index or None, message).

    >>> with Messages.collect() as box:
    ...     _ = to_engine(SheetError("#NUM!", "mass_g must be >= 0 (got -1)"), "CW_X")
    >>> box.items
    [(None, 'CW_X: #NUM! mass_g must be >= 0 (got -1)')]
    """

    def __init__(self) -> None:
        self.items: list[tuple[int | None, str]] = []

    @classmethod
    @contextlib.contextmanager
    def collect(cls) -> Iterator[Messages]:
        box = cls()
        token = _CURRENT.set(box)
        try:
            yield box
        finally:
            _CURRENT.reset(token)


def _say(name: str, message: str, index: int | None = None) -> None:
    box = _CURRENT.get()
    if box is not None:
        box.items.append((index, f"{name}: {message}" if name else message))


def error_value(code: str) -> XlError:
    """The engine's error value for ``code`` (#VALUE! for codes it does not know)."""
    return Error.errors.get(code, Error.errors["#VALUE!"])


def to_cell(value: Any) -> CellValue:
    """One engine value as a plain cell value (errors as SheetError)."""
    t = type(value)
    if t is float or t is str or t is bool:
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
    if isinstance(value, int):
        return float(value)
    if isinstance(value, (float, str)):
        return value
    if isinstance(value, Ranges):
        value = value.value
    if isinstance(value, np.ndarray):
        return value if value.size != 1 else to_cell(value.reshape(-1)[0])  # type: ignore[return-value]
    return SheetError("#VALUE!", f"unsupported engine value {type(value).__name__}")


def _argument(arg: Any) -> CellValue | list[list[CellValue]]:
    """An engine argument as a scalar or a 2-D list of cell values."""
    if isinstance(arg, Ranges):
        arg = arg.value
    if isinstance(arg, np.ndarray):
        grid = arg.reshape(1, -1) if arg.ndim < 2 else arg
        if grid.shape == (1, 1):
            return to_cell(grid[0, 0])
        return [[to_cell(v) for v in row] for row in grid.tolist()]
    return to_cell(arg)


def to_engine(result: Any, name: str = "", index: int | None = None) -> Any:
    """A sheet function's result as an engine value (scalar or 2-D Array)."""
    if type(result) is float and result - result == 0.0:  # finite
        return result
    if isinstance(result, SheetError):
        _say(name, str(result), index)
        return error_value(result.code)
    if result is None:
        return sh.EMPTY
    if isinstance(result, (bool, np.bool_)):
        return bool(result)
    if isinstance(result, np.generic):
        result = result.item()
    if isinstance(result, (int, str)):
        return result
    if isinstance(result, float):
        if math.isfinite(result):
            return result
        _say(name, f"#NUM! the result is {result} (not a finite number)", index)
        return error_value("#NUM!")
    if isinstance(result, (list, tuple, np.ndarray)):
        return _array(result, name)
    _say(name, f"#VALUE! returned an unsupported {type(result).__name__}", index)
    return error_value("#VALUE!")


def _array(result: Any, name: str) -> Any:
    rows = result if isinstance(result, np.ndarray) else np.asarray(result, dtype=object)
    if rows.ndim == 1:
        rows = rows.reshape(1, -1)
    if rows.ndim != 2 or rows.size == 0 or (rows.dtype != object and rows.dtype.kind not in "fiub"):
        _say(name, f"#VALUE! returned an array of shape {rows.shape}; 2-D expected")
        return error_value("#VALUE!")
    out = np.empty(rows.shape, dtype=object)
    for i, v in enumerate(rows.reshape(-1).tolist()):
        if isinstance(v, (list, tuple, np.ndarray)):
            _say(name, "#VALUE! returned nested arrays")
            return error_value("#VALUE!")
        out.flat[i] = to_engine(v, name, i)
    if out.shape == (1, 1):
        return out[0, 0]
    return out.view(Array)


class SheetFunction:
    """The engine-facing callable of one sheet function."""

    def __init__(self, name: str, func: Callable[..., Any]):
        self.name = name.upper()
        self.func = func
        self.__name__ = self.name
        self.__doc__ = getattr(func, "__doc__", None)

    def __repr__(self) -> str:
        return f"SheetFunction({self.name})"

    def __call__(self, *args: Any) -> Any:
        values = [_argument(a) for a in args]
        try:
            result = self.func(*values)
        except Exception as exc:  # a sheet function must not raise; never let it escape
            _say(self.name, f"#VALUE! internal error {type(exc).__name__}: {exc}")
            return error_value("#VALUE!")
        return to_engine(result, self.name)


def _sheet_functions() -> Mapping[str, Callable[..., Any]]:
    from udfs.sheet import registry

    return registry.FUNCTIONS


def register(functions: Mapping[str, Callable[..., Any]]) -> int:
    """Register sheet functions (name -> callable on plain cell values) in the engine's
    table, with our deviations; returns a generation number that changes with every
    change (models planned earlier are then planned again)."""
    global _generation
    table = get_functions()
    changed = deviations.install(table)
    for name, func in functions.items():
        key = name.upper()
        if _registered.get(key) is func:
            continue
        wrapped = SheetFunction(key, func)
        table[key] = wrapped
        table["_XLUDF." + key] = wrapped
        _registered[key] = func
        changed = True
    if changed:
        _generation += 1
    return _generation


def ensure_registered() -> int:
    """Register the spreadsheet functions of ``udfs.sheet`` (cheap when nothing changed)."""
    return register(_sheet_functions())


def registered_names() -> list[str]:
    """Names of our registered sheet functions, sorted."""
    ensure_registered()
    return sorted(_registered)
