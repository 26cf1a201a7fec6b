"""Domains of numeric arguments, shared by the core (which raises) and the sheet
layer (which marks only the bad elements).

>>> POSITIVE.ok(np.array([1.0, -1.0, np.nan])).tolist()
[True, False, False]
>>> check("mass", -2.0, POSITIVE)
Traceback (most recent call last):
...
udfs.core.errors.DomainError: mass must be > 0 (got -2)
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .errors import DomainError, InputError

__all__ = [
    "ANY",
    "CELSIUS",
    "ELECTRONS",
    "FRACTION",
    "FRACTION_OPEN",
    "NONNEGATIVE",
    "NONZERO_INTEGER",
    "POSITIVE",
    "UNIT_INTERVAL_HALF_OPEN",
    "Domain",
    "check",
    "integer_or_positive",
]

FloatArray = NDArray[np.float64]


@dataclass(frozen=True)
class Domain:
    """A set of allowed finite values with its description for messages."""

    allowed: str
    test: Callable[[FloatArray], NDArray[np.bool_]]

    def ok(self, values: FloatArray) -> NDArray[np.bool_]:
        with np.errstate(invalid="ignore"):
            return np.isfinite(values) & self.test(values)


ANY = Domain("a finite number", lambda a: a == a)  # finiteness is checked in ok()
POSITIVE = Domain("> 0", lambda a: a > 0)
NONNEGATIVE = Domain(">= 0", lambda a: a >= 0)
FRACTION = Domain("between 0 and 1", lambda a: (a >= 0) & (a <= 1))
FRACTION_OPEN = Domain("> 0 and <= 1", lambda a: (a > 0) & (a <= 1))
UNIT_INTERVAL_HALF_OPEN = Domain(">= 0 and < 1", lambda a: (a >= 0) & (a < 1))
CELSIUS = Domain("> -273.15 (degC)", lambda a: a > -273.15)
ELECTRONS = Domain("> 0 (electrons per formula unit)", lambda a: a > 0)
NONZERO_INTEGER = Domain("a non-zero whole number", lambda a: (a != 0) & (np.round(a) == a))


def integer_or_positive(allowed: str) -> Domain:
    """A domain of positive whole numbers (series counts, charge numbers)."""
    return Domain(allowed, lambda a: (a > 0) & (np.round(a) == a))


def check(name: str, value: ArrayLike, domain: Domain) -> FloatArray:
    """Return ``value`` as a float array; raise :class:`DomainError` naming
    ``name`` and the first bad element if any element is outside ``domain``."""
    if type(value) is float or type(value) is int:  # fast path for one cell
        x = float(value)
        if math.isfinite(x) and bool(domain.test(x)):  # type: ignore[arg-type,unused-ignore]
            return np.float64(x)  # type: ignore[return-value,unused-ignore]
        raise DomainError(name, x, domain.allowed)
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError(name, value, f"a number {domain.allowed}") from None
    ok = domain.ok(arr)
    if not ok.all():
        bad = arr[~ok].flat[0] if arr.ndim else arr.item()
        raise DomainError(name, float(bad), domain.allowed)
    return arr
