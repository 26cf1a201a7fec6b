"""Spreadsheet functions for units, constants and chemical formulas.

>>> CW_CONVERT(1, "Ah", "C")
3600.0
>>> round(CW_MOLAR_MASS("LiFePO4"), 3)
157.755
"""

from __future__ import annotations

from typing import Any

from ..core.capacity import theoretical_capacity
from ..core.constants import constant, constant_names
from ..core.errors import NotFoundError
from ..core.formula import mass_fraction
from ..core.units import dimension_of
from ..core.validate import ELECTRONS
from .declare import Num, Section, Text, sheet_function
from .resolve import formula_text, molar_mass_of, to_unit, unit_factor

__all__ = [
    "CW_CONSTANT",
    "CW_CONVERT",
    "CW_MASS_FRACTION",
    "CW_MOLAR_MASS",
    "CW_THEORETICAL_CAPACITY",
]

FORMULA_DOC = "chemical formula (LiNi0.8Mn0.1Co0.1O2) or catalogue material name (LFP)"
ELECTRONS_DOC = "electrons transferred, n"


@sheet_function(
    "CW_CONVERT",
    'Converts value from from_unit to to_unit (pint syntax: "mAh/g", "kWh", "mg/cm^2", '
    '"degC"); units of different dimension are an error.',
    [
        Num("value", "the number to convert, in from_unit"),
        Text("from_unit", 'unit of value, e.g. "Ah"'),
        Text("to_unit", 'unit wanted, e.g. "C"'),
    ],
    section=Section.FORMULA_UNITS,
    returns="to_unit",
    example=(1, "Ah", "C"),
)
def CW_CONVERT(value: Any, from_unit: str, to_unit: str) -> Any:
    dimension_of(from_unit, "from_unit")  # an unknown from_unit is reported by its name
    scale, offset = unit_factor(from_unit, to_unit, "to_unit", False)
    return value * scale + offset


@sheet_function(
    "CW_CONSTANT",
    "Value of a physical constant (CODATA 2018): F, R, NA, e, k, T0, T25, NERNST_SLOPE, PKW; "
    "in its SI unit or in unit if given.",
    [
        Text("symbol", 'name of the constant, e.g. "F"'),
        Text("unit", 'unit wanted, e.g. "C/mol" (empty: SI unit)', default=""),
    ],
    section=Section.FORMULA_UNITS,
    returns="SI unit or unit",
    example=("F",),
)
def CW_CONSTANT(symbol: str, unit: str) -> Any:
    try:
        value, si_unit, _ = constant(symbol)
    except NotFoundError as exc:
        raise NotFoundError(
            "symbol", symbol, "constant", exc.suggestions or constant_names()
        ) from None
    return to_unit(value, si_unit, unit, "unit") if unit else value


@sheet_function(
    "CW_MOLAR_MASS",
    "Molar mass (g/mol) of a chemical formula or catalogue material, IUPAC 2021 atomic weights.",
    [Text("formula", FORMULA_DOC)],
    section=Section.FORMULA_UNITS,
    returns="g/mol",
    example=("LiFePO4",),
)
def CW_MOLAR_MASS(formula: str) -> float:
    return molar_mass_of(formula, "formula")


@sheet_function(
    "CW_MASS_FRACTION",
    "Mass fraction (0..1) of an element in a formula or catalogue material; 0 if absent.",
    [Text("formula", FORMULA_DOC), Text("element", 'element symbol, e.g. "Ni"')],
    section=Section.FORMULA_UNITS,
    returns="fraction",
    example=("LiNi0.8Mn0.1Co0.1O2", "Ni"),
)
def CW_MASS_FRACTION(formula: str, element: str) -> float:
    return mass_fraction(formula_text(formula, "formula"), element, "formula")


@sheet_function(
    "CW_THEORETICAL_CAPACITY",
    "Theoretical specific capacity n F / M of a formula or catalogue material, in mAh/g or in "
    "unit.",
    [
        Text("formula", FORMULA_DOC),
        Num("electrons", ELECTRONS_DOC, ELECTRONS),
        Text("unit", 'unit wanted, e.g. "Ah/kg"', default="mAh/g"),
    ],
    section=Section.FORMULA_UNITS,
    returns="mAh/g or unit",
    example=("LiFePO4", 1),
)
def CW_THEORETICAL_CAPACITY(formula: str, electrons: Any, unit: str) -> Any:
    q = theoretical_capacity(molar_mass_of(formula, "formula"), electrons)
    return to_unit(q, "mAh/g", unit, "unit")
