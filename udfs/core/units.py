"""One pint registry for the whole package; unit strings are parsed once and
cached as a linear map ``value * scale + offset``, so hot loops never touch pint.

>>> convert(1.0, "Ah", "C")
3600.0
>>> convert(25.0, "degC", "K")
298.15
>>> conversion("mAh/g", "Ah/kg")
(1.0, 0.0)
"""

from __future__ import annotations

import difflib
import math
from functools import cache, lru_cache
from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .errors import UnitError

if TYPE_CHECKING:  # pint is imported on first use: a calculation without units never pays for it
    import pint

__all__ = ["conversion", "convert", "dimension_of", "registry"]

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
