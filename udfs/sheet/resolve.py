"""Lenient readers of the spreadsheet's text arguments, shared by the
function modules: formulas given directly or by a material's name, unit
factors with errors that name the argument, activities text, property names.

>>> formula_text("graphite", "formula")
'C6'
>>> formula_text("LiFePO4", "formula")
'LiFePO4'
>>> unit_factor("mAh", "Ah", "charge_unit")
(0.001, 0.0)
"""

from __future__ import annotations

from collections.abc import Mapping
from functools import lru_cache

import numpy as np
from numpy.typing import ArrayLike

from ..core import catalogue
from ..core.errors import CellwrightError, NotFoundError, ParseError, UnitError
from ..core.formula import parse
from ..core.names import closest, normalise
from ..core.reactions import parse_activities
from ..core.units import conversion, dimension_of

__all__ = [
    "activities",
    "choose",
    "formula_text",
    "from_unit",
    "molar_mass_of",
    "relabel",
    "to_unit",
    "unit_factor",
]


@lru_cache(maxsize=2048)
def formula_text(text: str, argument: str) -> str:
    """A chemical formula given directly (``"LiFePO4"``) or through a catalogue
    material's name or alias (``"LFP"``, ``"graphite"``)."""
    try:
        parse(text, argument)
        return text
    except ParseError as formula_error:
        try:
            m = catalogue.material(text, argument)
        except NotFoundError as exc:
            if not exc.suggestions:
                raise formula_error from None
            reason = formula_error.detail.split(" at position")[0]
            hint = ", ".join(repr(s) for s in exc.suggestions)
            err = CellwrightError(
                argument,
                text,
                detail=(
                    f"{text!r} is not a formula ({reason} at position {formula_error.position + 1})"
                    f" nor a catalogue material; did you mean {hint}?"
                ),
            )
            err.code = NotFoundError.code
            raise err from None
    if "formula" not in m.facts:
        raise CellwrightError(
            argument, text, detail=f"the material {m.name!r} has no formula in the catalogue"
        )
    return m.get("formula")


def molar_mass_of(text: str, argument: str) -> float:
    """Molar mass (g/mol) of a formula or a catalogue material."""
    return parse(formula_text(text, argument), argument).mass


@lru_cache(maxsize=1024)
def unit_factor(
    src: str, dst: str, argument: str, user_unit_first: bool = True
) -> tuple[float, float]:
    """``(scale, offset)`` with ``dst = src * scale + offset``. Both units are
    checked (an unknown one is an error naming ``argument``), and a unit of the
    wrong dimension is an error naming ``argument`` and both dimensions; the
    user's unit is ``src`` if ``user_unit_first`` else ``dst``."""
    user, other = (src, dst) if user_unit_first else (dst, src)
    dim = dimension_of(user, argument)
    other_dim = dimension_of(other, argument)
    if dim != other_dim:
        raise UnitError(
            argument,
            user,
            detail=f"{user!r} is {dim}, which cannot be converted to or from {other!r} {other_dim}",
        )
    return conversion(src, dst, argument)


def from_unit(value: ArrayLike, unit: str, core_unit: str, argument: str) -> ArrayLike:
    """``value`` given in the user's ``unit``, expressed in ``core_unit``."""
    scale, offset = unit_factor(unit, core_unit, argument, True)
    if scale == 1.0 and offset == 0.0:
        return value
    return np.asarray(value) * scale + offset


def to_unit(value: ArrayLike, core_unit: str, unit: str, argument: str) -> ArrayLike:
    """``value`` in ``core_unit`` expressed in the user's ``unit``."""
    scale, offset = unit_factor(core_unit, unit, argument, False)
    if scale == 1.0 and offset == 0.0:
        return value
    return np.asarray(value) * scale + offset


def activities(text: str, argument: str) -> dict[str, float] | None:
    """Activities text (``"Cu2+=0.1; pH=3"``) as a mapping; empty -> None."""
    return parse_activities(text, argument) or None


def relabel(exc: CellwrightError, new: str) -> CellwrightError:
    """The same error naming the spreadsheet's argument instead of the core's."""
    head = exc.argument.split(" ", 1)
    argument = new if len(head) == 1 else f"{new} {head[1]}"
    out = CellwrightError(argument, exc.value, exc.allowed, exc.detail)
    out.code = exc.code
    return out


def choose(text: str, options: Mapping[str, str] | list[str], kind: str, argument: str) -> str:
    """One of ``options`` by a lenient match (case, spaces, ``_``, ``-``)."""
    names = list(options)
    key = normalise(text)
    hits = [n for n in names if normalise(n) == key]
    if len(hits) == 1:
        return hits[0]
    suggestions = hits or closest(text, names) or (names if len(names) <= 12 else [])
    raise NotFoundError(argument, text, kind, suggestions)
