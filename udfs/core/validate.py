"""Domains of inputs, declared once and read by everything that checks a value.

A :class:`Domain` is a declaration of the numbers an input accepts: a lower and
an upper bound, each open or closed (or absent), whole numbers only or not,
zero excluded or not. Its description for messages (``allowed``) and its test
are derived from those fields, so the core's check, the sheet layer's
element-wise masks, a workbook's data validation and its check formulas, and
the check of a ``--set`` value all say and test the same thing. Text inputs
have their own declarations: :class:`Names` (names of the catalogue, aliases
resolved to the canonical name), :class:`Options` (a few fixed words) and
:class:`FreeText`.

>>> POSITIVE.ok(np.array([1.0, -1.0, np.nan])).tolist()
[True, False, False]
>>> Domain(lower=0, upper=1, lower_open=True).allowed
'> 0 and <= 1'
>>> check("mass", -2.0, POSITIVE)
Traceback (most recent call last):
...
udfs.core.errors.DomainError: mass must be > 0 (got -2)
>>> Names(("cathode",)).check("cathode", "LFP")
'LiFePO4'
>>> FRACTION_OPEN.reason("in_fill", -0.2)
'in_fill must be > 0 and <= 1 (got -0.2)'
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from . import catalogue
from .errors import CellwrightError, DomainError, InputError, NotFoundError
from .names import closest, normalise

__all__ = [
    "ANY",
    "CELSIUS",
    "ELECTRONS",
    "FRACTION",
    "FRACTION_OPEN",
    "NONNEGATIVE",
    "NONZERO_INTEGER",
    "POSITIVE",
    "POSITIVE_INTEGER",
    "UNIT_INTERVAL_HALF_OPEN",
    "Domain",
    "FreeText",
    "InputDomain",
    "Names",
    "Options",
    "Reasons",
    "check",
    "integer_or_positive",
    "is_blank",
]

FloatArray = NDArray[np.float64]


def _num(x: float) -> str:
    return f"{x:g}"


def is_blank(value: object) -> bool:
    """An empty cell: ``None`` or text of spaces only.

    >>> is_blank(None), is_blank("  "), is_blank(0.0)
    (True, True, False)
    """
    return value is None or (isinstance(value, str) and not value.strip())


class Reasons:
    """``reason(name, value)`` for anything with ``check(name, value)``: None if the
    value is allowed, else the one-line reason the check gives."""

    def check(self, name: str, value: Any) -> Any:
        raise NotImplementedError

    def reason(self, name: str, value: Any) -> str | None:
        """None if ``value`` is allowed, else the one-line reason.

        >>> POSITIVE.reason("in_np_ratio", -1.0)
        'in_np_ratio must be > 0 (got -1)'
        >>> POSITIVE.reason("in_np_ratio", 1.1) is None
        True
        """
        try:
            self.check(name, value)
        except CellwrightError as exc:
            return str(exc)
        return None



@dataclass(frozen=True)
class Domain(Reasons):
    """A set of allowed finite numbers: bounds with open or closed ends, whole
    numbers only (``integer``), zero excluded (``nonzero``), and a ``note``
    appended to the description (a unit or a reminder)."""

    lower: float | None = None
    upper: float | None = None
    lower_open: bool = False
    upper_open: bool = False
    integer: bool = False
    nonzero: bool = False
    note: str = ""

    # ------------------------------------------------------------------ description

    @property
    def bounds(self) -> str:
        """The bounds as text: ``'> 0 and <= 1'`` (empty when there are none)."""
        parts = []
        if self.lower is not None:
            parts.append(f"{'>' if self.lower_open else '>='} {_num(self.lower)}")
        if self.upper is not None:
            parts.append(f"{'<' if self.upper_open else '<='} {_num(self.upper)}")
        return " and ".join(parts)

    @property
    def allowed(self) -> str:
        """What messages say is allowed, e.g. ``'> 0 and <= 1'``, ``'a whole number > 0'``."""
        bounds = self.bounds
        if self.integer:
            text = "a non-zero whole number" if self.nonzero else "a whole number"
            text = f"{text} {bounds}" if bounds else text
        elif self.nonzero:
            text = f"non-zero and {bounds}" if bounds else "a non-zero number"
        else:
            text = bounds or "a finite number"
        return f"{text} {self.note}" if self.note else text

    @property
    def expected(self) -> str:
        """What a message says when the value is not a number at all."""
        if self.integer or not (self.bounds or self.nonzero):
            return self.allowed
        return f"a number {self.allowed}"

    # ------------------------------------------------------------------ tests

    def test(self, a: Any) -> Any:
        """Element-wise test of the bounds, wholeness and zero (finiteness is
        :meth:`ok`'s job); works on a float or an array."""
        ok: Any = a == a  # True for numbers (NaN is caught by ok() and contains())
        if self.lower is not None:
            ok = ok & ((a > self.lower) if self.lower_open else (a >= self.lower))
        if self.upper is not None:
            ok = ok & ((a < self.upper) if self.upper_open else (a <= self.upper))
        if self.nonzero:
            ok = ok & (a != 0)
        if self.integer:
            ok = ok & (np.round(a) == a)
        return ok

    def ok(self, values: FloatArray) -> NDArray[np.bool_]:
        """Element-wise: finite and inside the domain."""
        with np.errstate(invalid="ignore"):
            return np.isfinite(values) & self.test(values)

    def contains(self, x: float) -> bool:
        """One plain number inside the domain (finite)."""
        return math.isfinite(x) and bool(self.test(x))

    # ------------------------------------------------------------------ checks

    def check(self, name: str, value: Any) -> Any:
        """``value`` as a float (or float array) inside the domain, else an error
        naming ``name``; see :func:`check`."""
        return check(name, value, self)


ANY = Domain()
POSITIVE = Domain(lower=0, lower_open=True)
NONNEGATIVE = Domain(lower=0)
FRACTION = Domain(lower=0, upper=1)
FRACTION_OPEN = Domain(lower=0, upper=1, lower_open=True)
UNIT_INTERVAL_HALF_OPEN = Domain(lower=0, upper=1, upper_open=True)
CELSIUS = Domain(lower=-273.15, lower_open=True, note="(degC)")
ELECTRONS = Domain(lower=0, lower_open=True, note="(electrons per formula unit)")
NONZERO_INTEGER = Domain(integer=True, nonzero=True)
POSITIVE_INTEGER = Domain(lower=0, lower_open=True, integer=True)


def integer_or_positive(allowed: str = POSITIVE_INTEGER.allowed) -> Domain:
    """The domain of positive whole numbers (series counts, cells ordered).

    Its description is derived (``'a whole number > 0'``); ``allowed`` is kept
    for callers that spell it out and must equal it.
    """
    if allowed != POSITIVE_INTEGER.allowed:
        raise ValueError(f"the description is derived: {POSITIVE_INTEGER.allowed!r}")
    return POSITIVE_INTEGER


def check(name: str, value: ArrayLike, domain: Domain) -> FloatArray:
    """Return ``value`` as a float array; raise :class:`DomainError` naming
    ``name`` and the first bad element if any element is outside ``domain``,
    or :class:`InputError` if it is not numbers at all (text, booleans, empty).

    >>> check("n", "2", POSITIVE)
    Traceback (most recent call last):
    ...
    udfs.core.errors.InputError: n must be a number > 0 (got '2')
    """
    if type(value) is float or type(value) is int:  # fast path for one cell
        x = float(value)
        if math.isfinite(x) and bool(domain.test(x)):
            return np.float64(x)  # type: ignore[return-value,unused-ignore]
        raise DomainError(name, x, domain.allowed)
    try:
        arr = np.asarray(value)
    except (TypeError, ValueError):
        arr = np.asarray(None)
    if arr.dtype.kind not in "iuf":
        raise InputError(name, value, domain.expected)
    arr = arr.astype(float, copy=False)
    ok = domain.ok(arr)
    if not ok.all():
        bad = arr[~ok].flat[0] if arr.ndim else arr.item()
        raise DomainError(name, float(bad), domain.allowed)
    return arr


# --------------------------------------------------------------------------- text inputs


@dataclass(frozen=True)
class Names(Reasons):
    """Names of the catalogue: materials of one of ``roles`` (a role such as
    ``cathode`` or a category such as ``foil``), or couples (``kind='couple'``).
    A name or an alias in any case is accepted and resolved to the catalogue's
    own name.

    >>> Names(("foil",)).check("separator", "copper foil")
    'copper foil'
    >>> Names(("anode",)).reason("in_anode", "graphyte")
    "in_anode: unknown anode material 'graphyte'; did you mean 'graphite'?"
    """

    roles: tuple[str, ...] = ()
    kind: str = "material"

    @property
    def what(self) -> str:
        if self.kind == "couple":
            return "couple"
        return f"{' or '.join(r.replace('_', ' ') for r in self.roles)} material"

    @property
    def allowed(self) -> str:
        return f"the name of a {self.what} of the catalogue (its name or an alias)"

    @property
    def expected(self) -> str:
        return f"the name of a {self.what} (text)"

    def names(self) -> list[str]:
        """The canonical names allowed, in catalogue order."""
        if self.kind == "couple":
            return catalogue.couple_ids()
        return [n for r in self.roles for n in catalogue.material_names(r)]

    def check(self, name: str, value: Any) -> str:
        """The catalogue's own name for ``value``, else an error naming ``name``."""
        if not isinstance(value, str) or not value.strip():
            raise InputError(name, value, self.expected)
        if self.kind == "couple":
            return catalogue.couple(value, name).id
        try:
            m = catalogue.material(value, name)
        except NotFoundError:
            known = [a for n in self.names() for a in (n, *catalogue.material(n).aliases)]
            raise NotFoundError(name, value, self.what, closest(value, known)) from None
        if m.role not in self.roles:
            examples = self.names()[:8]
            a = "an" if m.role[:1] in "aeiou" else "a"
            raise InputError(
                name,
                value,
                detail=(
                    f"{m.name!r} is {a} {m.role.replace('_', ' ')} material; expected a "
                    f"{self.what} such as {', '.join(repr(x) for x in examples)}"
                ),
            )
        return m.name


@dataclass(frozen=True)
class Options(Reasons):
    """One of a few fixed words, matched without regard to case or spaces.

    >>> Options(("capacity", "energy")).check("in_target_basis", " Energy")
    'energy'
    """

    choices: tuple[str, ...]

    @property
    def allowed(self) -> str:
        return "one of " + ", ".join(repr(c) for c in self.choices)

    @property
    def expected(self) -> str:
        return self.allowed

    def check(self, name: str, value: Any) -> str:
        if not isinstance(value, str) or not value.strip():
            raise InputError(name, value, self.expected)
        key = normalise(value)
        for c in self.choices:
            if normalise(c) == key:
                return c
        raise InputError(name, value, self.allowed)


@dataclass(frozen=True)
class FreeText(Reasons):
    """Any text (a title, a species name checked later by the chemistry)."""

    @property
    def allowed(self) -> str:
        return "text"

    @property
    def expected(self) -> str:
        return "text"

    def check(self, name: str, value: Any) -> str:
        if not isinstance(value, str):
            raise InputError(name, value, self.expected)
        return value.strip()


#: What an input may declare as its domain.
InputDomain = Domain | Names | Options | FreeText
