"""One pint registry for the whole package; unit strings are parsed once and
cached as a linear map ``value * scale + offset``, so hot loops never touch pint.

>>> convert(1.0, "Ah", "C")
3600.0
>>> convert(25.0, "degC", "K")
298.15
>>> conversion("mAh/g", "Ah/kg")
(1.0, 0.0)

Unit text is checked by :func:`check_unit_text` before pint sees it (pint
evaluates powers of numbers in unit text, so ``"9**9**9"`` would never return):
at most :data:`MAX_UNIT_TEXT` characters of names, ``*``, ``/``, ``^`` or ``**``
with a small exponent, parentheses and plain numbers as factors (``"1/h"``).

>>> convert(1.0, "9**9**9", "C")
Traceback (most recent call last):
...
udfs.core.errors.UnitError: unit: '9**9**9' is not a unit: a number cannot be raised to a power
"""

from __future__ import annotations

import difflib
import math
import re
from fractions import Fraction
from functools import cache, lru_cache
from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .errors import UnitError, show_value

if TYPE_CHECKING:  # pint is imported on first use: a calculation without units never pays for it
    import pint

__all__ = ["MAX_UNIT_TEXT", "check_unit_text", "conversion", "convert", "dimension_of", "registry"]

# Everyday spellings of the trade that pint does not know by itself.
_ALIASES = {
    "wt%": "percent",
    "°c": "degC",
    "°C": "degC",
    "degc": "degC",
    "c°": "degC",
    "°f": "degF",
    "°F": "degF",
    "ohm": "ohm",
    "cm2": "cm**2",
    "m2": "m**2",
    "dm2": "dm**2",
    "mm2": "mm**2",
    "cm3": "cm**3",
    "m3": "m**3",
    "dm3": "dm**3",
    "µm": "um",
    "μm": "um",
}

_KNOWN = (
    "A",
    "mA",
    "kA",
    "V",
    "mV",
    "W",
    "kW",
    "MW",
    "Wh",
    "kWh",
    "MWh",
    "GWh",
    "Ah",
    "mAh",
    "C",
    "J",
    "kJ",
    "MJ",
    "g",
    "mg",
    "kg",
    "t",
    "lb",
    "s",
    "min",
    "h",
    "day",
    "K",
    "degC",
    "degF",
    "mol",
    "mmol",
    "mol/L",
    "mAh/g",
    "Ah/kg",
    "Wh/kg",
    "Wh/L",
    "kWh/kg",
    "g/Ah",
    "mg/cm^2",
    "mAh/cm^2",
    "A/dm^2",
    "A/cm^2",
    "A/m^2",
    "um",
    "mm",
    "cm",
    "m",
    "g/cm^3",
    "kg/m^3",
    "L",
    "mL",
    "bar",
    "atm",
    "Pa",
    "kPa",
    "percent",
    "kJ/mol",
    "J/mol/K",
    "C/mol",
)


_RANGE = "the conversion factor is outside the range of a floating-point number"

# ------------------------------------------------------------------ the grammar of unit text

#: The longest unit text accepted (real ones are under 30 characters).
MAX_UNIT_TEXT = 100
#: The largest exponent, and the largest numerator and denominator of a fractional one.
MAX_EXPONENT = 12
#: The deepest nesting of parentheses.
MAX_DEPTH = 4

_TOKENS = re.compile(
    r"""
    (?P<space>[ \t]+)
  | (?P<number>(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]{1,3})?)
  | (?P<name>(?:[^\W\d]|[°%µ])[\w°%µ⁻]*)
  | (?P<op>\*\*|[*/^()·⋅+-])
    """,
    re.VERBOSE,
)
_MULTIPLY = ("*", "/", "·", "⋅")
_POWER = ("^", "**")


class _Grammar:
    """A recursive-descent reader of unit text that only checks it (pint parses
    it afterwards). ``product := power ((* | / | ·) power | power)*``,
    ``power := atom [(^ | **) exponent]``, ``atom := name | number | ( product )``,
    ``exponent := [-|+]number | ([-|+]integer[/integer])``. A number may be a
    factor (``1/h``) but never raised to a power, directly or inside
    parentheses; exponents are at most MAX_EXPONENT; powers do not chain."""

    def __init__(self, text: str):
        self.tokens: list[tuple[str, str]] = []
        pos = 0
        while pos < len(text):
            m = _TOKENS.match(text, pos)
            if m is None:
                raise ValueError(f"the character {text[pos]!r} has no place in a unit")
            kind = m.lastgroup or ""
            if kind != "space":
                self.tokens.append((kind, m.group()))
            pos = m.end()
        self.pos = 0

    def peek(self) -> tuple[str, str]:
        return self.tokens[self.pos] if self.pos < len(self.tokens) else ("end", "")

    def take(self) -> tuple[str, str]:
        token = self.peek()
        self.pos += 1
        return token

    def check(self) -> None:
        if not self.tokens:
            raise ValueError("it is empty")
        self.product(0)
        kind, value = self.peek()
        if kind != "end":
            raise ValueError(f"{value!r} is out of place")

    def product(self, depth: int) -> bool:
        """Reads a product; True if it holds a number."""
        has_number = self.power(depth)
        while True:
            kind, value = self.peek()
            if kind == "op" and value in _MULTIPLY:
                self.take()
            elif not (kind in ("name", "number") or value == "("):
                return has_number
            has_number = self.power(depth) or has_number

    def power(self, depth: int) -> bool:
        has_number = self.atom(depth)
        kind, value = self.peek()
        if kind == "op" and value in _POWER:
            self.take()
            if has_number:
                raise ValueError("a number cannot be raised to a power")
            self.exponent()
            if self.peek()[1] in _POWER:
                raise ValueError("powers of powers need parentheses, e.g. (m^2)^3")
        return has_number

    def atom(self, depth: int) -> bool:
        kind, value = self.take()
        if kind == "name":
            return False
        if kind == "number":
            return True
        if value == "(":
            if depth >= MAX_DEPTH:
                raise ValueError(f"parentheses nest deeper than {MAX_DEPTH}")
            has_number = self.product(depth + 1)
            if self.take()[1] != ")":
                raise ValueError("a parenthesis is not closed")
            return has_number
        if kind == "end":
            raise ValueError("it ends where a unit name is expected")
        raise ValueError(f"{value!r} is out of place")

    def exponent(self) -> None:
        kind, value = self.take()
        if value == "(":
            sign = self.sign()
            number = Fraction(self.integer())
            if self.peek()[1] == "/":
                self.take()
                denominator = self.integer()
                if denominator == 0:
                    raise ValueError("an exponent divides by zero")
                number /= denominator
            if self.take()[1] != ")":
                raise ValueError("a parenthesis is not closed")
            self.limit(sign * number)
            return
        self.pos -= 1
        sign = self.sign()
        kind, value = self.take()
        if kind == "end":
            raise ValueError("it ends where an exponent is expected")
        if kind != "number" or "e" in value.lower() or value.endswith("."):
            raise ValueError(f"the exponent {value!r} is not a small number")
        self.limit(sign * Fraction(value))

    def sign(self) -> int:
        if self.peek()[1] in ("-", "+"):
            return -1 if self.take()[1] == "-" else 1
        return 1

    def integer(self) -> int:
        kind, value = self.take()
        if kind != "number" or not value.isdigit():
            raise ValueError(f"the exponent {value!r} is not a small whole number")
        number = int(value) if len(value) <= 3 else MAX_EXPONENT + 1
        self.limit(Fraction(number))
        return number

    @staticmethod
    def limit(value: Fraction) -> None:
        if abs(value) > MAX_EXPONENT or value.denominator > MAX_EXPONENT:
            raise ValueError(f"an exponent is larger than {MAX_EXPONENT} or too finely divided")


def check_unit_text(text: str, argument: str = "unit") -> None:
    """Refuse unit text that is no unit before pint evaluates it (in time
    proportional to its length, and at most MAX_UNIT_TEXT characters of it).

    >>> check_unit_text("J/(mol*K)"), check_unit_text("mg/cm^2"), check_unit_text("1/h")
    (None, None, None)
    >>> check_unit_text("2**2**40")
    Traceback (most recent call last):
    ...
    udfs.core.errors.UnitError: unit: '2**2**40' is not a unit: a number cannot be raised to a power
    """
    if len(text) > MAX_UNIT_TEXT:
        raise UnitError(
            argument,
            text,
            detail=f"unit text of {len(text)} characters is too long (at most {MAX_UNIT_TEXT})",
        )
    try:
        _Grammar(text).check()
    except ValueError as exc:
        raise UnitError(
            argument, text, detail=f"{show_value(text, 40)} is not a unit: {exc}"
        ) from None


@cache
def registry() -> pint.UnitRegistry:
    """The package's single unit registry (imported and built on first use)."""
    import pint

    reg: pint.UnitRegistry = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    reg.define("tonne_metric = 1000 * kilogram = t")
    return reg


def _parse(text: str, argument: str) -> pint.Unit:
    if not isinstance(text, str) or not text.strip():
        raise UnitError(argument, text, "a unit such as 'Ah', 'mAh/g' or 'kWh'")
    cleaned = text.strip()
    cleaned = _ALIASES.get(cleaned, _ALIASES.get(cleaned.lower(), cleaned))
    check_unit_text(cleaned, argument)  # before pint evaluates anything in it
    reg = registry()
    try:
        unit = reg.parse_units(cleaned.replace("^", "**"))
    except Exception as exc:  # pint raises several unrelated types
        close = difflib.get_close_matches(cleaned, _KNOWN, n=3, cutoff=0.5)
        hint = f"; did you mean {', '.join(repr(c) for c in close)}?" if close else ""
        raise UnitError(argument, text, detail=f"unknown unit {text!r}{hint}") from exc
    return unit


@lru_cache(maxsize=1024)
def conversion(from_unit: str, to_unit: str, argument: str = "unit") -> tuple[float, float]:
    """``(scale, offset)`` with ``to = from * scale + offset``; cached per pair."""
    src = _parse(from_unit, argument)
    dst = _parse(to_unit, argument)
    reg = registry()
    from pint import DimensionalityError  # imported by registry() already

    try:
        zero = reg.Quantity(0.0, src).to(dst).magnitude
        one = reg.Quantity(1.0, src).to(dst).magnitude
    except DimensionalityError as exc:
        raise UnitError(
            argument,
            from_unit,
            detail=(
                f"unit {from_unit!r} [{reg.get_dimensionality(src)}] cannot be converted "
                f"to {to_unit!r} [{reg.get_dimensionality(dst)}]"
            ),
        ) from exc
    except ArithmeticError as exc:  # e.g. 'percent**1e9': the factor overflows a float
        raise UnitError(
            argument, from_unit, detail=f"converting {from_unit!r} to {to_unit!r}: {_RANGE}"
        ) from exc
    scale, offset = float(one - zero), float(zero)
    if not (math.isfinite(scale) and math.isfinite(offset)) or scale == 0.0:
        raise UnitError(
            argument, from_unit, detail=f"converting {from_unit!r} to {to_unit!r}: {_RANGE}"
        )
    return scale, offset


def convert(
    value: ArrayLike, from_unit: str, to_unit: str, argument: str = "unit"
) -> NDArray[np.float64] | float:
    """Convert numbers (or arrays) between two unit strings."""
    scale, offset = conversion(from_unit, to_unit, argument)
    arr = np.asarray(value, dtype=float) * scale + offset
    return float(arr) if arr.ndim == 0 else arr


@lru_cache(maxsize=256)
def dimension_of(unit: str, argument: str = "unit") -> str:
    """The dimensionality of a unit string, e.g. ``'[current] * [time]'``."""
    return str(registry().get_dimensionality(_parse(unit, argument)))
