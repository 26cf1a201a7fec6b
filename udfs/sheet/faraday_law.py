"""Spreadsheet functions for Faraday's law: charge, mass, time, energy and
plated thickness.

>>> round(CW_CHARGE_TO_MASS(1, "Cu", 2), 4)
1.1855
"""

from __future__ import annotations

from typing import Any

from ..core import faraday
from ..core.validate import ELECTRONS, FRACTION_OPEN, NONNEGATIVE, POSITIVE
from .declare import Num, Section, Text, sheet_function
from .formula_units import ELECTRONS_DOC, FORMULA_DOC
from .resolve import from_unit, molar_mass_of, to_unit

__all__ = [
    "CW_CHARGE_TO_MASS",
    "CW_DEPOSITION_TIME",
    "CW_ENERGY_PER_MASS",
    "CW_MASS_TO_CHARGE",
    "CW_PLATING_THICKNESS",
]

EFFICIENCY = Num("efficiency", "current efficiency, fraction", FRACTION_OPEN, default=1.0)


def _formula() -> Text:
    return Text("formula", FORMULA_DOC + ", the species converted")


def _electrons() -> Num:
    return Num("electrons", ELECTRONS_DOC, ELECTRONS)


@sheet_function(
    "CW_CHARGE_TO_MASS",
    "Mass (g) converted by a charge (Faraday's law): Q x efficiency x M / (n F), charge in Ah "
    "unless "
    "charge_unit says otherwise.",
    [
        Num("charge", "charge passed, Ah (or charge_unit)", NONNEGATIVE),
        _formula(),
        _electrons(),
        EFFICIENCY,
        Text("charge_unit", 'unit of charge, e.g. "mAh" or "C"', default="Ah"),
    ],
    section=Section.FARADAY,
    returns="g",
    example=(1, "Cu", 2),
)
def CW_CHARGE_TO_MASS(
    charge: Any, formula: str, electrons: Any, efficiency: Any, charge_unit: str
) -> Any:
    q = from_unit(charge, charge_unit, "Ah", "charge_unit")
    return faraday.charge_to_mass(q, molar_mass_of(formula, "formula"), electrons, efficiency)


@sheet_function(
    "CW_MASS_TO_CHARGE",
    "Charge needed to convert a mass (Faraday's law): m n F / (M x efficiency), in Ah unless "
    "unit says "
    "otherwise.",
    [
        Num("mass_g", "mass converted, g", NONNEGATIVE),
        _formula(),
        _electrons(),
        EFFICIENCY,
        Text("unit", 'unit wanted, e.g. "mAh" or "C"', default="Ah"),
    ],
    section=Section.FARADAY,
    returns="Ah or unit",
    example=(1.1855, "Cu", 2),
)
def CW_MASS_TO_CHARGE(mass_g: Any, formula: str, electrons: Any, efficiency: Any, unit: str) -> Any:
    q = faraday.mass_to_charge(mass_g, molar_mass_of(formula, "formula"), electrons, efficiency)
    return to_unit(q, "Ah", unit, "unit")


@sheet_function(
    "CW_DEPOSITION_TIME",
    "Time (h) to deposit or convert a mass at a constant current (Faraday's law).",
    [
        Num("mass_g", "mass to deposit, g", NONNEGATIVE),
        Num("current_A", "constant current, A", POSITIVE),
        _formula(),
        _electrons(),
        EFFICIENCY,
    ],
    section=Section.FARADAY,
    returns="h",
    example=(10, 5, "Cu", 2),
)
def CW_DEPOSITION_TIME(
    mass_g: Any, current_A: Any, formula: str, electrons: Any, efficiency: Any
) -> Any:
    return faraday.deposition_time(
        mass_g, current_A, molar_mass_of(formula, "formula"), electrons, efficiency
    )


@sheet_function(
    "CW_ENERGY_PER_MASS",
    "Electrical energy per mass of product at a cell voltage, in kWh/kg unless unit says "
    "otherwise.",
    [
        Num("voltage", "cell voltage, V", NONNEGATIVE),
        _formula(),
        _electrons(),
        EFFICIENCY,
        Text("unit", 'unit wanted, e.g. "kWh/t" or "MJ/kg"', default="kWh/kg"),
    ],
    section=Section.FARADAY,
    returns="kWh/kg or unit",
    example=(2.0, "Cu", 2, 0.95),
)
def CW_ENERGY_PER_MASS(
    voltage: Any, formula: str, electrons: Any, efficiency: Any, unit: str
) -> Any:
    e = faraday.energy_per_mass(voltage, molar_mass_of(formula, "formula"), electrons, efficiency)
    return to_unit(e, "kWh/kg", unit, "unit")


@sheet_function(
    "CW_PLATING_THICKNESS",
    "Average plated thickness (micrometres) from current density (A/dm2), time (h) and the "
    "deposit's density.",
    [
        Num("current_density_A_dm2", "current density, A/dm2", NONNEGATIVE),
        Num("time_h", "plating time, h", NONNEGATIVE),
        _formula(),
        _electrons(),
        Num("density_g_cm3", "density of the deposit, g/cm3", POSITIVE),
        EFFICIENCY,
    ],
    section=Section.FARADAY,
    returns="um",
    example=(2, 0.5, "Ni", 2, 8.908, 0.95),
)
def CW_PLATING_THICKNESS(
    current_density_A_dm2: Any,
    time_h: Any,
    formula: str,
    electrons: Any,
    density_g_cm3: Any,
    efficiency: Any,
) -> Any:
    return faraday.plating_thickness(
        current_density_A_dm2,
        time_h,
        molar_mass_of(formula, "formula"),
        electrons,
        density_g_cm3,
        efficiency,
    )
