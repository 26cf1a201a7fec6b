"""Cell values in, arrays out: the coercion rules of every spreadsheet argument.

A cell value is a number, text, a boolean, an empty cell (``None`` or ``""``),
an error value (a :class:`SheetError`, text such as ``"#N/A"`` or ``"#SPILL!"``,
or an integer in COM's CVErr range, see :func:`~udfs.sheet.error_values.com_error`),
or a range (a 2-D list, a 1-D list taken as one row, or a numpy array). Rules:

* numbers must be finite and inside the argument's domain, else ``#NUM!``;
* numeric text (``"0.1"``) counts as its number, as in Excel's own arithmetic;
* booleans are refused with ``#VALUE!`` (TRUE is rarely meant as a mass of 1);
* empty cells take the argument's default, or give ``#VALUE!`` if it has none;
* an error value arriving from another cell is passed on as that error.

Python callers: a number is any real number, :class:`numbers.Real` (``int``,
``float``, :class:`fractions.Fraction`, numpy integers and floats of any width)
or :class:`decimal.Decimal`, converted to the nearest float (too large: ``#NUM!``).
Every other type is ``#VALUE!`` naming the argument and the type: complex
numbers (also with a zero imaginary part), dates, times and durations
(``datetime``, ``numpy.datetime64``, ``numpy.timedelta64``), bytes, booleans
(``bool``, ``numpy.bool_``) and anything else. Text is ``str`` (``numpy.str_``
included); bytes are not text. The same rule holds for a value alone and for
each element of a range, whatever the range's container (list, tuple, numpy
array of any dtype).

Problems of one element mark that element only (``bad``/``errors``); problems
of the whole argument (a ragged range) raise a :class:`CellwrightError`.

>>> from udfs.core.validate import POSITIVE
>>> c = number_arg([[1.0, -2.0]], Num("mass_g", "mass, g", POSITIVE))
>>> c.value.tolist(), c.bad.tolist(), str(c.errors[0, 1])
([[1.0, 1.0]], [[False, True]], '#NUM! mass_g must be > 0 (got -2)')
"""

from __future__ import annotations

import datetime as _dt
import numbers
from decimal import Decimal
from types import MappingProxyType
from typing import Any, NamedTuple

import numpy as np
from numpy.typing import NDArray

from ..core.errors import DomainError, InputError, ShapeError, show_value
from ..core.validate import ANY
from .args import Arg, Num
from .error_values import COM_ERROR_MAX, COM_ERROR_MIN, SheetError, com_error, incoming_error

__all__ = ["Coerced", "activities_arg", "number_arg", "show", "table_arg", "text_arg"]

_EMPTY = object()
_TRUE = np.ones((), dtype=bool)
_NUMERIC_KINDS = "fiu"
_TIME_TYPES = (_dt.date, _dt.time, _dt.timedelta, np.datetime64, np.timedelta64)
_BYTES_TYPES = (bytes, bytearray, memoryview)


class Coerced(NamedTuple):
    """One argument after coercion: ``value`` is a float or str (single cell)
    or an array (range); ``bad``/``errors`` mark the elements that are errors
    (``None`` when there are none)."""

    value: Any
    bad: NDArray[np.bool_] | None = None
    errors: NDArray[np.object_] | None = None

    @property
    def shape(self) -> tuple[int, ...]:
        v = self.value
        return v.shape if isinstance(v, np.ndarray) else ()


def show(x: object) -> str:
    """A cell value as a message shows it."""
    if isinstance(x, (bool, np.bool_)):
        return "TRUE" if x else "FALSE"
    return show_value(x, 40)


def type_name(x: object) -> str:
    """The type of a value as a message names it (``numpy.datetime64``, ``Decimal``)."""
    t = type(x)
    module = t.__module__
    if module in ("builtins", "decimal", "fractions", "datetime"):
        return t.__qualname__
    return f"{module.split('.')[0]}.{t.__qualname__}"


def _not_a_number(x: Any, arg: Arg) -> SheetError:
    """``#VALUE!`` for a value of a type that is not a number."""
    if isinstance(x, (bool, np.bool_)):
        return SheetError("#VALUE!", f"{arg.name} must be a number, not {show(x)}")
    if isinstance(x, _TIME_TYPES):
        return SheetError(
            "#VALUE!", f"{arg.name} must be a number, not a date or time (got {type_name(x)})"
        )
    if isinstance(x, (numbers.Complex, np.complexfloating)):
        return SheetError("#VALUE!", f"{arg.name} must be a real number (got complex {show(x)})")
    return SheetError("#VALUE!", f"{arg.name} must be a number (got {type_name(x)})")


def _integer_error(x: Any) -> SheetError | None:
    """The error value of an integer in COM's CVErr range (never of a float,
    a boolean or a numpy timedelta64, whose type is an integer type too)."""
    if isinstance(x, (int, np.integer)) and not isinstance(x, (bool, np.bool_, np.timedelta64)):
        return com_error(x)
    return None


def _is_number(x: Any) -> bool:
    """A real number of an accepted type (see the module docstring)."""
    return isinstance(x, (numbers.Real, Decimal)) and not isinstance(
        x,
        (bool, np.bool_, np.timedelta64),  # numpy's timedelta64 is an integer type
    )


def _is_empty_token(x: str) -> bool:
    """The headless engine's marker of an empty cell (a ``str`` subclass)."""
    return (
        type(x) is not str and type(x).__module__.startswith("schedula") and str.__eq__(x, "empty")
    )


def _error_for_scalar(err: SheetError, safe: Any) -> Coerced:
    return Coerced(safe, _TRUE, np.array(err, dtype=object))


def _empty_error(arg: Arg) -> SheetError:
    what = "a number" if arg.is_number else "text"
    return SheetError("#VALUE!", f"{arg.name} is empty; {what} is required ({arg.doc})")


# --------------------------------------------------------------------------- shapes


def _grid(value: Any, name: str) -> list[list[Any]]:
    """A range as a rectangular list of rows (1-D input is one row). The
    elements of a numpy array keep their numpy types (a datetime64 stays a
    date, where ``tolist()`` would give an integer)."""
    if isinstance(value, np.ndarray):
        if value.ndim > 2:
            raise ShapeError(name, detail=f"a range must be 2-D (got {value.ndim} dimensions)")
        if value.ndim == 0:
            rows = [[value[()]]]
        else:
            rows = [list(value)] if value.ndim == 1 else [list(row) for row in value]
    else:
        seq = list(value)
        if not seq:
            raise ShapeError(name, detail="is an empty range")
        nested = [isinstance(r, (list, tuple, np.ndarray)) for r in seq]
        if not any(nested):
            rows = [seq]
        elif all(nested):
            rows = [list(r) for r in seq]
        else:
            raise ShapeError(
                name, detail="a range must be rectangular (some rows are single values)"
            )
    if not rows:
        raise ShapeError(name, detail="is an empty range")
    width = len(rows[0])
    for r in rows:
        if len(r) != width:
            raise ShapeError(
                name, detail=f"a range must be rectangular (rows of {width} and {len(r)} cells)"
            )
        if any(isinstance(x, (list, tuple, np.ndarray)) for x in r):
            raise ShapeError(name, detail="a range must be 2-D (a cell holds a list)")
    if width == 0:
        raise ShapeError(name, detail="is an empty range")
    return rows


# --------------------------------------------------------------------------- numbers


def _number_element(x: Any, arg: Num) -> Any:
    """A float inside the domain, a SheetError, or _EMPTY (the one rule for a
    value alone and for each element of a range; see the module docstring)."""
    t = type(x)
    if t is float:
        v = x
    elif x is None:
        return _EMPTY
    elif isinstance(x, str):
        s = _read_text(x)
        if not _is_plain_text(s):
            return s  # an error value or _EMPTY
        try:
            v = float(s)  # numeric text counts as its number
        except ValueError:
            return SheetError("#VALUE!", f"{arg.name} must be a number (got text {show(x)})")
    elif not _is_number(x):
        return _not_a_number(x, arg)
    else:
        err = _integer_error(x)  # an error value the add-in passed as an integer
        if err is not None:
            return err
        try:
            v = float(x)
        except OverflowError:  # 10**400
            return SheetError(
                "#NUM!", f"{arg.name} must be {arg.domain.allowed} (got a number too large)"
            )
        except ValueError:  # Decimal("sNaN")
            return SheetError("#NUM!", f"{arg.name} must be {arg.domain.allowed} (got NaN)")
    if not arg.scalar_ok(v):
        return SheetError("#NUM!", str(DomainError(arg.name, v, arg.domain.allowed)))
    return v


def _number_or_default(x: Any, arg: Num) -> Any:
    v = _number_element(x, arg)
    if v is _EMPTY:
        return arg.default if arg.optional else _empty_error(arg)
    return v


def _has_bool(arr: NDArray[np.float64], value: Any) -> bool:
    """Whether a float conversion swallowed booleans (only 0.0/1.0 can be one)."""
    cand = np.flatnonzero((arr == 0.0) | (arr == 1.0))
    if cand.size == 0:
        return False
    if arr.ndim == 1:
        return any(isinstance(value[k], (bool, np.bool_)) for k in cand.tolist())
    width = arr.shape[1]
    for k in cand.tolist():
        i, j = divmod(k, width)
        if isinstance(value[i][j], (bool, np.bool_)):
            return True
    return False


def _in_com_error_range(arr: NDArray[np.float64]) -> bool:
    """Whether any element could be an error value passed as an integer."""
    return bool(((arr >= COM_ERROR_MIN) & (arr <= COM_ERROR_MAX)).any())


def _fast_float_range(value: Any) -> NDArray[np.float64] | None:
    """A 2-D float array if ``value`` is a clean numeric range, else None (then
    every element is read by :func:`_number_element`). Clean: a numpy array of
    integers or floats, or nested lists whose elements numpy reads as such
    without any boolean or integer in the CVErr range among them."""
    if isinstance(value, np.ndarray):
        kind = value.dtype.kind
        if kind not in _NUMERIC_KINDS or not 1 <= value.ndim <= 2 or value.size == 0:
            return None
        arr = value.astype(float)
        if kind != "f" and _in_com_error_range(arr):
            return None
    else:
        try:
            inferred = np.asarray(value)
        except (ValueError, TypeError, OverflowError):  # ragged, odd objects
            return None
        if (
            inferred.dtype.kind not in _NUMERIC_KINDS
            or not 1 <= inferred.ndim <= 2
            or inferred.size == 0
        ):
            return None
        arr = inferred.astype(float, copy=False)  # a new array already
        if _has_bool(arr, value) or _in_com_error_range(arr):
            return None
    return arr.reshape(1, -1) if arr.ndim == 1 else arr


def _mark_domain(arr: NDArray[np.float64], arg: Num, ok: NDArray[np.bool_]) -> Coerced:
    bad = ~ok
    errors = np.empty(arr.shape, dtype=object)
    for idx in zip(*np.nonzero(bad), strict=True):
        errors[idx] = SheetError(
            "#NUM!", str(DomainError(arg.name, float(arr[idx]), arg.domain.allowed))
        )
    arr[bad] = arg.safe
    return Coerced(arr, bad, errors)


def number_arg(value: Any, arg: Num) -> Coerced:
    """Coerce a numeric argument (a single cell or a range)."""
    if isinstance(value, (list, tuple, np.ndarray)):
        arr = _fast_float_range(value)
        if arr is not None:
            ok = arg.domain.ok(arr)
            if ok.all():
                return Coerced(arr)
            # None (an empty cell) also converts to NaN: such ranges go element-wise
            # below, so an empty cell takes its default or says it is empty
            if not np.isnan(arr[~ok]).any():
                return _mark_domain(arr, arg, ok)
        rows = _grid(value, arg.name)
        vals = np.empty((len(rows), len(rows[0])))
        errors = np.empty(vals.shape, dtype=object)
        bad = np.zeros(vals.shape, dtype=bool)
        for i, row in enumerate(rows):
            for j, x in enumerate(row):
                v = _number_or_default(x, arg)
                if type(v) is float:
                    vals[i, j] = v
                else:
                    vals[i, j] = arg.safe
                    bad[i, j] = True
                    errors[i, j] = v
        return Coerced(vals, bad, errors) if bad.any() else Coerced(vals)
    v = _number_or_default(value, arg)
    if type(v) is float:
        return Coerced(v)
    return _error_for_scalar(v, arg.safe)


# --------------------------------------------------------------------------- text


def _read_text(x: str) -> Any:
    """A cell's text: stripped text, an error value (ours or an incoming one), or _EMPTY."""
    if isinstance(x, SheetError):
        return x
    if _is_empty_token(x):
        return _EMPTY
    s = x.strip()
    if not s:
        return _EMPTY
    err = incoming_error(s)
    return s if err is None else err


def _is_plain_text(value: Any) -> bool:
    return isinstance(value, str) and not isinstance(value, SheetError)


def _text_element(x: Any, arg: Arg) -> Any:
    """Stripped text, a SheetError, or _EMPTY (the one rule for a value alone
    and for each element of a range)."""
    if isinstance(x, str):
        return _read_text(x)
    if x is None:
        return _EMPTY
    if isinstance(x, (bool, np.bool_)):
        return SheetError("#VALUE!", f"{arg.name} must be text, not {show(x)}")
    err = _integer_error(x)  # an error value the add-in passed as an integer
    if err is not None:
        return err
    if _is_number(x) or isinstance(x, (numbers.Complex, np.complexfloating)):
        return SheetError("#VALUE!", f"{arg.name} must be text ({arg.doc}); got {show(x)}")
    return SheetError("#VALUE!", f"{arg.name} must be text ({arg.doc}); got {type_name(x)}")


def _is_error_value(x: Any) -> bool:
    """An error value from another cell (text, ours, or COM's integer form)."""
    if isinstance(x, str):
        return isinstance(_read_text(x), SheetError)
    return _integer_error(x) is not None


def _text_or_default(x: Any, arg: Arg) -> Any:
    v = _text_element(x, arg)
    if v is _EMPTY:
        return arg.default if arg.optional else _empty_error(arg)
    return v


def text_arg(value: Any, arg: Arg) -> Coerced:
    """Coerce a text argument (a single cell or a range of texts)."""
    if isinstance(value, (list, tuple, np.ndarray)):
        rows = _grid(value, arg.name)
        vals = np.empty((len(rows), len(rows[0])), dtype=object)
        errors = np.empty(vals.shape, dtype=object)
        bad = np.zeros(vals.shape, dtype=bool)
        for i, row in enumerate(rows):
            for j, x in enumerate(row):
                v = _text_or_default(x, arg)
                if isinstance(v, SheetError):
                    vals[i, j] = ""
                    bad[i, j] = True
                    errors[i, j] = v
                else:
                    vals[i, j] = v
        if vals.size == 1:  # a single cell passed as a 1x1 range
            return (
                Coerced(vals.item(), bad.reshape(()), errors.reshape(()))
                if bad.any()
                else Coerced(vals.item())
            )
        return Coerced(vals, bad, errors) if bad.any() else Coerced(vals)
    v = _text_or_default(value, arg)
    if isinstance(v, SheetError):
        return _error_for_scalar(v, "")
    return Coerced(v)


def _is_table(rows: list[list[Any]]) -> bool:
    """A two-column range of species names (no '=') and values."""
    if len(rows[0]) != 2:
        return False
    names = [r[0] for r in rows]
    return any(isinstance(n, str) and n.strip() for n in names) and all(
        n is None or (isinstance(n, str) and "=" not in n and incoming_error(n.strip()) is None)
        for n in names
    )


def activities_arg(value: Any, arg: Arg) -> Coerced:
    """Activities as text (``"Cu2+=0.1; pH=3"``; a range of such texts
    broadcasts) or a two-column range of species and values, returned as the
    equivalent text so that both forms take one path."""
    if isinstance(value, (list, tuple, np.ndarray)):
        rows = _grid(value, arg.name)
        if _is_table(rows):
            parts = []
            for k, (name, x) in enumerate(rows, start=1):
                label = name.strip() if isinstance(name, str) else ""
                spec = Num(f"{arg.name} {label}".strip(), "", ANY)
                v = _number_element(x, spec)
                if not label:
                    if v is _EMPTY:
                        continue
                    raise InputError(arg.name, detail=f"row {k} has a value but no species name")
                if v is _EMPTY:
                    raise InputError(arg.name, detail=f"row {k}: the value of {label!r} is empty")
                if isinstance(v, SheetError):
                    return _error_for_scalar(v, "")
                parts.append(f"{label}={v!r}")
            return Coerced("; ".join(parts))
    return text_arg(value, arg)


def _table_value(x: Any, arg: Arg) -> Any:
    """One value of a table: a float, stripped text, None (empty), or a SheetError."""
    if x is None:
        return None
    if isinstance(x, str):
        v = _read_text(x)
        return None if v is _EMPTY else v
    if isinstance(x, (bool, np.bool_)):
        return SheetError("#VALUE!", f"{arg.name} must hold numbers or text, not {show(x)}")
    if _is_number(x):
        if isinstance(x, (int, np.integer)):
            err = com_error(int(x))  # an error value the add-in passed as an integer
            if err is not None:
                return err
        try:
            v = float(x)
        except (OverflowError, ValueError):
            return SheetError("#NUM!", f"{arg.name}: {show(x)} is not a finite number")
        return v
    return _not_a_number(x, arg)


def table_arg(value: Any, arg: Arg) -> Coerced:
    """A two-column range of names and values as one read-only mapping: numbers
    as floats, text stripped, empty cells as None; rows with neither a name nor
    a value are skipped. An error value in the range is the result (passed on);
    a value without a name, a name given twice or a range that is not two
    columns wide is ``#VALUE!``.

    >>> from udfs.sheet.args import Table
    >>> dict(table_arg([["in_a", 1], ["in_b", "LFP"], [None, None]], Table("t", "")).value)
    {'in_a': 1.0, 'in_b': 'LFP'}
    """
    if not isinstance(value, (list, tuple, np.ndarray)):
        if _is_error_value(value):  # an error value from another cell is passed on
            return _error_for_scalar(_text_element(value, arg), None)
        raise InputError(
            arg.name, detail="must be a two-column range of names and values (got a single cell)"
        )
    rows = _grid(value, arg.name)
    if len(rows) == 1 and len(rows[0]) == 1 and _is_error_value(rows[0][0]):
        return _error_for_scalar(_text_element(rows[0][0], arg), None)  # one cell: an error
    if len(rows[0]) != 2:
        raise ShapeError(
            arg.name,
            detail=f"must be a two-column range of names and values (got {len(rows[0])} columns)",
        )
    out: dict[str, Any] = {}
    for k, (name, x) in enumerate(rows, start=1):
        label = _text_element(name, arg)
        v = _table_value(x, arg)
        if isinstance(label, SheetError):
            return _error_for_scalar(label, None)
        if label is _EMPTY:
            if v is None:
                continue
            raise InputError(arg.name, detail=f"row {k} has a value but no name")
        if isinstance(v, SheetError):
            return _error_for_scalar(v, None)
        if label in out:
            raise InputError(arg.name, detail=f"row {k} repeats the name {label!r}")
        out[label] = v
    return Coerced(MappingProxyType(out))
