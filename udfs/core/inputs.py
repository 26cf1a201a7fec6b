"""Input tables: every input of a model declared once.

An :class:`Input` is one input as a user meets it: its defined name in a
workbook (``in_...``), label, unit, one-line hint, section, default (with where
that number comes from) and domain (:mod:`udfs.core.validate`), plus the model
argument it sets (``field``). An :class:`InputTable` holds the inputs of one
model in the order a user works through them. The core model takes its
defaults and its checks from the table; the template builders take the input
cells, their defined names, data validation and check formulas from it; the
command layer checks ``--set``/``--vary`` values with :meth:`InputTable.check`.

>>> from udfs.core.validate import POSITIVE, Options
>>> t = InputTable("demo", "a demo model", (
...     Input("in_basis", "Given as", "", "capacity or energy", "Target",
...           Options(("capacity", "energy")), "capacity"),
...     Input("in_target", "Target", "Ah or Wh", "one cell", "Target", POSITIVE, 50.0,
...           chooser="in_basis", choices=(Choice("capacity", "capacity_Ah", "Ah"),
...                                        Choice("energy", "energy_Wh", "Wh"))),
... ))
>>> t.check("in_target", 60), t.get("energy_Wh").name
(60.0, 'in_target')
>>> t.reason("in_target", -1)
'in_target (Target) must be > 0 (got -1)'
"""

from __future__ import annotations

from collections.abc import Iterable, Iterator, Mapping
from dataclasses import dataclass
from types import MappingProxyType
from typing import Any

import numpy as np

from .errors import InputError, NotFoundError
from .names import closest
from .validate import Domain, InputDomain, Reasons, is_blank

__all__ = ["Choice", "Input", "InputTable", "read_typed"]


@dataclass(frozen=True)
class Choice:
    """One way to read an input whose meaning another input picks: when the
    chooser holds ``option``, the input sets ``field`` in ``unit`` (checked by
    ``domain`` if given, else by the input's own domain)."""

    option: str
    field: str
    unit: str
    domain: Domain | None = None


@dataclass(frozen=True)
class Input:
    """One input of a model (see the module docstring).

    ``default`` is the value a new workbook starts with and the model's default
    (None: blank, meaning what ``hint`` says); ``source`` says where that number
    comes from (a source key, "common practice", "from memory", "catalogue",
    "demo data"). ``optional`` inputs may be left blank. ``fmt`` is the number
    format of its cell. ``chooser``/``choices``: another input picks which model
    argument this one sets (a target given as capacity or as energy).
    """

    name: str
    label: str
    unit: str
    hint: str
    section: str
    domain: InputDomain
    default: float | str | None = None
    source: str = ""
    field: str | None = None
    optional: bool = False
    fmt: str | None = None
    chooser: str | None = None
    choices: tuple[Choice, ...] = ()

    @property
    def is_number(self) -> bool:
        return isinstance(self.domain, Domain)

    @property
    def fields(self) -> tuple[str, ...]:
        """The model arguments this input may set."""
        if self.field is not None:
            return (self.field,)
        return tuple(c.field for c in self.choices)

    def domain_of(self, field: str | None = None) -> InputDomain:
        """The domain that checks the input, or the model argument ``field``."""
        for c in self.choices:
            if c.field == field and c.domain is not None:
                return c.domain
        return self.domain

    @property
    def allowed(self) -> str:
        """What the input accepts, as messages and data validation say it."""
        text = self.domain.allowed
        return f"{text}, or blank" if self.optional else text

    def check(self, value: Any, argument: str | None = None, field: str | None = None) -> Any:
        """The value as the model takes it: a float (or float array) for a
        number, the canonical name or option for text, None for a blank
        optional input; else a :class:`CellwrightError` naming ``argument``
        (default: the defined name and label)."""
        who = argument or f"{self.name} ({self.label})"
        if self.optional and is_blank(value):
            return None
        out = self.domain_of(field).check(who, value)
        return float(out) if isinstance(out, (np.floating, np.ndarray)) and out.ndim == 0 else out


def read_typed(text: str, number: bool) -> Any:
    """A value typed as text (``--set name=TEXT``) as a cell would hold it:
    blank -> None; for a numeric input, text that reads as a number -> float.

    >>> read_typed("1.2", True), read_typed("LFP", False), read_typed(" ", True)
    (1.2, 'LFP', None)
    >>> read_typed("abc", True)
    'abc'
    """
    if is_blank(text):
        return None
    if number:
        try:
            return float(text)
        except ValueError:
            return text
    return text


class InputTable(Reasons):
    """The inputs of one model, in the order a user works through them."""

    def __init__(self, key: str, title: str, inputs: Iterable[Input]) -> None:
        self.key = key
        self.title = title
        self.inputs: tuple[Input, ...] = tuple(inputs)
        self._by_name: dict[str, Input] = {}
        self._by_field: dict[str, Input] = {}
        for inp in self.inputs:
            if not inp.name.startswith("in_") or inp.name in self._by_name:
                raise ValueError(f"{key}: bad or repeated input name {inp.name!r}")
            self._by_name[inp.name] = inp
            for f in inp.fields:
                if f in self._by_field:
                    raise ValueError(f"{key}: field {f!r} set by two inputs")
                self._by_field[f] = inp
        for inp in self.inputs:
            if inp.choices and inp.chooser not in self._by_name:
                raise ValueError(f"{key}: {inp.name} chosen by unknown input {inp.chooser!r}")

    def __iter__(self) -> Iterator[Input]:
        return iter(self.inputs)

    def __len__(self) -> int:
        return len(self.inputs)

    def __contains__(self, key: object) -> bool:
        return key in self._by_name or key in self._by_field

    def __repr__(self) -> str:
        return f"InputTable({self.key!r}, {len(self)} inputs)"

    @property
    def names(self) -> tuple[str, ...]:
        """Defined names of the inputs, in order."""
        return tuple(self._by_name)

    def sections(self) -> list[tuple[str, list[Input]]]:
        """(section, its inputs) in order of first appearance."""
        out: dict[str, list[Input]] = {}
        for inp in self.inputs:
            out.setdefault(inp.section, []).append(inp)
        return list(out.items())

    def get(self, key: str) -> Input:
        """The input with defined name or model argument ``key``."""
        hit = self._by_name.get(key) or self._by_field.get(key)
        if hit is None:
            raise NotFoundError(
                "input", key, f"input of the {self.title}",
                closest(key, [*self._by_name, *self._by_field]),
            )
        return hit

    def default(self, field: str) -> Any:
        """The default of the model argument ``field`` (for the model's signature)."""
        inp = self._by_field[field]
        return inp.default if inp.field == field else None

    def defaults(self) -> Mapping[str, Any]:
        """Field -> default of every input that sets one field directly."""
        return MappingProxyType(
            {inp.field: inp.default for inp in self.inputs if inp.field is not None}
        )

    def domain(self, field: str) -> InputDomain:
        """The domain of the model argument ``field``."""
        return self._by_field[field].domain_of(field)

    def check(self, key: str, value: Any) -> Any:
        """``value`` checked for the input with defined name or field ``key``:
        the value the model takes (float, float array, canonical text, None
        for a blank optional input), or a :class:`CellwrightError` whose message
        is one line naming the input, the value and what is allowed.

        A defined name is named with its label (``in_np_ratio (N/P ratio, first-charge basis) must
        be > 0 (got -1)``); a field as the core names it (``np_ratio must be >
        0 (got -1)``), so the two reasons match the core's word for word.
        """
        if not isinstance(key, str):
            raise InputError("input", key, "the defined name or field of an input (text)")
        inp = self.get(key)
        if key == inp.name:
            return inp.check(value)
        return inp.check(value, argument=key, field=key)

    def check_typed(self, key: str, text: str) -> Any:
        """:meth:`check` of a value typed as text (``--set key=TEXT``): numbers
        read as numbers where the input is numeric, blank as an empty cell."""
        return self.check(key, read_typed(text, self.get(key).is_number))
