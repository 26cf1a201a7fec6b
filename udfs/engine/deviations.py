"""Our deliberate changes to Excel's own functions in the `formulas` engine: one place.

Registered through the engine's documented function table, like our ``CW_``
functions, and nowhere else:

* **ROUND, ROUNDUP, ROUNDDOWN** round as Excel does: the number as Excel holds it
  (15 significant digits) in decimal, ties away from zero, so ``ROUND(1.005, 2)``
  is 1.01 and ``ROUNDUP(0.1*3, 1)`` is 0.3 (the package rounds the binary value:
  1.0 and 0.4); a digits argument beyond +-1000 is ``#NUM!`` (the package computes
  ``10**digits`` and would hang on ``ROUND(x, 1E+300)``).
* **OFFSET** and **INDIRECT**, which the package does not provide, read the
  cells they point at through the evaluator that is computing the workbook
  (:func:`reading`); INDIRECT takes A1-style text (a cell, a range, a sheet-
  qualified reference or a defined name). Without that evaluator (the plain
  ``formulas`` model) they give ``#REF!``.

>>> from formulas.functions import get_functions
>>> _ = install(get_functions())
>>> str(get_functions()["ROUND"](2.5, 2000))
'#NUM!'
>>> float(get_functions()["ROUND"](1.005, 2)), float(get_functions()["ROUNDUP"](0.1 * 3, 1))
(1.01, 0.3)
"""

from __future__ import annotations

import contextlib
import contextvars
import decimal
import math
from collections.abc import Callable, Iterator, MutableMapping
from typing import Any, Protocol

import numpy as np
from formulas.functions import wrap_ufunc
from formulas.ranges import Ranges
from formulas.tokens.operand import Error

__all__ = ["MAX_ROUND_DIGITS", "REFERENCE_FUNCTIONS", "Resolver", "install", "reading"]

#: ROUND and its kin refuse more digits than this (#NUM!).
MAX_ROUND_DIGITS = 1000
#: Functions that read their arguments as references (address and size), not only values.
#: INDEX is not among them: the package gives the same value from the cells' values, 25
#: times faster; a formula that uses INDEX's result as a reference (``A1:INDEX(...)``,
#: ``ROW(INDEX(...))``) passes references anyway, for the range operator or ROW.
REFERENCE_FUNCTIONS = frozenset(
    {"OFFSET", "INDIRECT", "ROW", "COLUMN", "ROWS", "COLUMNS", "ISREF", "AREAS", "CELL"}
)
#: Functions that read cells no reference in the formula names (always recomputed).
DYNAMIC_FUNCTIONS = frozenset({"OFFSET", "INDIRECT"})


class Resolver(Protocol):
    """What OFFSET and INDIRECT need from the evaluator."""

    def area(self, sheet: str, r1: int, c1: int, r2: int, c2: int) -> Ranges | None: ...

    def parse(self, text: str) -> tuple[str, int, int, int, int] | None: ...


_READER: contextvars.ContextVar[Resolver | None] = contextvars.ContextVar(
    "cellwright_reader", default=None
)
_REF = Error.errors["#REF!"]
_VALUE = Error.errors["#VALUE!"]


@contextlib.contextmanager
def reading(resolver: Resolver) -> Iterator[None]:
    """OFFSET and INDIRECT read cells through ``resolver`` inside this block."""
    token = _READER.set(resolver)
    try:
        yield
    finally:
        _READER.reset(token)


#: Enough digits for any double at any allowed number of decimals.
_ROUNDING = decimal.Context(prec=MAX_ROUND_DIGITS + 400, Emax=999_999, Emin=-999_999)


def _excel_round(mode: str) -> Callable[..., Any]:
    """ROUND (``ROUND_HALF_UP``), ROUNDUP (``ROUND_UP``) or ROUNDDOWN (``ROUND_DOWN``)
    of the decimal number Excel holds (15 significant digits); away from or toward zero."""

    def element(x: Any, digits: Any) -> Any:
        if not abs(float(digits)) <= MAX_ROUND_DIGITS:
            return Error.errors["#NUM!"]
        value = float(x)
        if not math.isfinite(value):
            return Error.errors["#NUM!"]
        held = decimal.Decimal(f"{value:.15g}")
        step = decimal.Decimal(1).scaleb(-math.trunc(float(digits)))
        return float(held.quantize(step, rounding=mode, context=_ROUNDING))

    return wrap_ufunc(element)


def _scalar(value: Any) -> Any:
    if isinstance(value, Ranges):
        value = value.value
    if isinstance(value, np.ndarray):
        if value.size != 1:
            return None
        value = value.reshape(-1)[0]
    return value


def _whole(value: Any, default: int | None) -> int | None:
    """A whole number argument (truncated like Excel), ``default`` when omitted."""
    v = _scalar(value)
    if v is None and default is not None:
        return default
    if isinstance(v, bool) or not isinstance(v, (int, float, np.number)):
        return None
    if not math.isfinite(float(v)):
        return None
    return math.trunc(float(v))


def offset(reference: Any, rows: Any, cols: Any, height: Any = None, width: Any = None) -> Any:
    """OFFSET(reference, rows, cols, [height], [width]) on a plain reference."""
    resolver = _READER.get()
    if resolver is None or not isinstance(reference, Ranges) or len(reference.ranges) != 1:
        return _REF
    rng = reference.ranges[0]
    r1, c1, r2, c2 = int(rng["r1"]), int(rng["n1"]), int(rng["r2"]), int(rng["n2"])
    dr, dc = _whole(rows, None), _whole(cols, None)
    h = _whole(height, r2 - r1 + 1)
    w = _whole(width, c2 - c1 + 1)
    if dr is None or dc is None or h is None or w is None:
        return _VALUE
    if h < 1 or w < 1:
        return _REF
    top, left = r1 + dr, c1 + dc
    got = resolver.area(str(rng["sheet"]), top, left, top + h - 1, left + w - 1)
    return _REF if got is None else got


def indirect(ref_text: Any, a1: Any = True) -> Any:
    """INDIRECT(ref_text, [a1]) for A1-style text."""
    resolver = _READER.get()
    text, style = _scalar(ref_text), _scalar(a1)
    if resolver is None or not isinstance(text, str):
        return _REF
    if style is False or style == 0:
        return _REF  # R1C1-style text is not read
    found = resolver.parse(text)
    if found is None:
        return _REF
    got = resolver.area(*found)
    return _REF if got is None else got


def install(table: MutableMapping[str, Any]) -> bool:
    """Put the deviations in the engine's function ``table``; True if anything changed."""
    wanted: dict[str, Any] = {"OFFSET": offset, "INDIRECT": indirect}
    for name, mode in (
        ("ROUND", decimal.ROUND_HALF_UP),
        ("ROUNDDOWN", decimal.ROUND_DOWN),
        ("ROUNDUP", decimal.ROUND_UP),
    ):
        current = table.get(name)
        if getattr(current, "cellwright_rounding", False):
            wanted[name] = current
            continue
        rounding = _excel_round(mode)
        rounding.cellwright_rounding = True  # type: ignore[attr-defined]
        wanted[name] = rounding
    changed = False
    for name, func in wanted.items():
        if table.get(name) is not func:
            table[name] = func
            changed = True
    return changed
