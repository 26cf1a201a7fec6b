"""Declarations of what a spreadsheet function takes and gives: its arguments
(what each one accepts, its unit, its default, and the value that stands in for
a bad element during the one vectorised core call) and the :class:`Kind` of its
result. :mod:`udfs.sheet.declare` re-exports all of them.

>>> from udfs.core.validate import CELSIUS, POSITIVE
>>> Num("mass_g", "mass, g", POSITIVE).signature_text
'mass_g'
>>> Num("temp_C", "temperature, degC", CELSIUS, default=25).signature_text
'[temp_C=25]'
>>> Text("unit", "output unit", default="mAh/g").signature_text
'[unit="mAh/g"]'
"""

from __future__ import annotations

import enum
import math
from collections.abc import Callable

import numpy as np

from ..core.validate import ANY, Domain

__all__ = ["REQUIRED", "Activities", "Arg", "Kind", "Num", "Table", "Text"]


class Kind(enum.Enum):
    """What a function returns."""

    NUMBER = "number"  # one number per element
    VALUE = "value"  # one number or text per element
    COLUMN = "column"  # a list that spills down (no broadcasting)
    RECORD = "record"  # a fixed row of numbers per element, spilling to the right


class _Required:
    def __repr__(self) -> str:
        return "REQUIRED"


#: Marker of an argument without a default.
REQUIRED: object = _Required()

_SAFE_CANDIDATES = (1.0, 0.5, 25.0, 0.0, 2.0, -1.0)


def _safe_value(domain: Domain) -> float:
    """A value inside ``domain`` that stands in for bad elements."""
    for x in _SAFE_CANDIDATES:
        if bool(domain.ok(np.asarray(x))):
            return x
    raise ValueError(f"no stand-in value for domain {domain.allowed!r}")  # pragma: no cover


def _scalar_test(domain: Domain) -> Callable[[float], bool]:
    """A fast test of one Python float (no numpy on the scalar path)."""
    if domain is ANY:
        return math.isfinite
    test = domain.test
    return lambda x: math.isfinite(x) and bool(test(x))


class Arg:
    """Common part of every argument: its name (a VBA-safe identifier), the
    help text the function wizard shows (with the unit), and its default."""

    __slots__ = ("default", "doc", "name")
    is_number = False
    #: One scalar per element of a broadcast (False: the argument may be a whole
    #: range read as one value, such as a table).
    per_element = True

    def __init__(self, name: str, doc: str, default: object = REQUIRED):
        self.name = name
        self.doc = doc
        self.default = default

    @property
    def optional(self) -> bool:
        return self.default is not REQUIRED

    @property
    def signature_text(self) -> str:
        """``name`` or ``[name=default]`` as the reference shows it."""
        if not self.optional:
            return self.name
        d = self.default
        if isinstance(d, float):
            return f"[{self.name}={d:g}]"
        if d == "":
            return f"[{self.name}]"
        return f'[{self.name}="{d}"]'

    def __repr__(self) -> str:
        return f"{type(self).__name__}({self.name!r})"


class Num(Arg):
    """A number, or a range of numbers that broadcasts with the other numeric
    arguments; every element must lie in ``domain``."""

    __slots__ = ("domain", "safe", "scalar_ok")
    is_number = True

    def __init__(self, name: str, doc: str, domain: Domain = ANY, default: object = REQUIRED):
        if isinstance(default, int):
            default = float(default)
        super().__init__(name, doc, default)
        self.domain = domain
        self.safe = _safe_value(domain)
        self.scalar_ok = _scalar_test(domain)
        if self.optional and not (isinstance(default, float) and self.scalar_ok(default)):
            raise ValueError(f"default of {name} is outside its domain")


class Text(Arg):
    """Text: a formula, a name, a unit. A range of texts broadcasts element by
    element like a range of numbers. ``default=""`` means "optional, not given"."""

    __slots__ = ()


class Activities(Text):
    """Activities of species: text such as ``"Cu2+=0.1; pH=3"`` (a range of such
    texts broadcasts), or a two-column range of species names and values (read
    as one mapping, not broadcast)."""

    __slots__ = ()
    per_element = False


class Table(Arg):
    """A two-column range of names and values (numbers, texts or empty cells),
    read as one mapping name -> value and not broadcast: a model's inputs
    passed in one argument (see :func:`udfs.sheet.coerce.table_arg`)."""

    __slots__ = ()
    per_element = False
