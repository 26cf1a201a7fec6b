"""Spreadsheet functions for procurement: lithium carbonate equivalent and
contained metals.

>>> round(CW_LCE(1), 3)
5.323
"""

from __future__ import annotations

from typing import Any

from ..core import procurement
from ..core.validate import FRACTION_OPEN, NONNEGATIVE
from .declare import Num, Section, Text, sheet_function
from .formula_units import FORMULA_DOC
from .resolve import formula_text

__all__ = ["CW_LCE", "CW_METAL_CONTENT"]


@sheet_function(
    "CW_LCE",
    "Lithium carbonate equivalent of a lithium mass: M(Li2CO3) / (2 M(Li)) = 5.323 times it, "
    "same mass unit out as in.",
    [Num("lithium_mass", "mass of lithium, any mass unit", NONNEGATIVE)],
    section=Section.PROCUREMENT,
    returns="same mass unit",
    example=(1,),
)
def CW_LCE(lithium_mass: Any) -> Any:
    return procurement.lce(lithium_mass)


@sheet_function(
    "CW_METAL_CONTENT",
    "Mass of an element contained in the material to buy: material_mass / yield x mass "
    "fraction, same mass unit out as in.",
    [
        Text("formula", FORMULA_DOC),
        Text("element", 'element symbol, e.g. "Co"'),
        Num("material_mass", "mass of good material needed, any mass unit", NONNEGATIVE),
        Num("yield_fraction", "process yield, fraction", FRACTION_OPEN, default=1.0),
    ],
    section=Section.PROCUREMENT,
    returns="same mass unit",
    example=("LiCoO2", "Co", 1000),
)
def CW_METAL_CONTENT(formula: str, element: str, material_mass: Any, yield_fraction: Any) -> Any:
    return procurement.metal_content(
        formula_text(formula, "formula"), element, material_mass, yield_fraction
    )
