"""Bad inputs of every spreadsheet function with the error each must give.

One row per case: the function, its cell arguments, the expected error code and
a fragment of the message (which must name the argument and what is allowed).
Kept as data so that docs/bad-inputs.md can be generated from it
(``python tests/bad_input_catalogue.py``); tests/test_sheet_bad_inputs.py checks
every row of BAD_INPUTS.

Further tables (same idea, checked elsewhere):

* RANGE_BAD_INPUTS: ranges whose output spills; one element is bad and gets its
  own error, every other element is a number (tests/test_bad_input_catalogue.py);
* CLI_BAD_INPUTS: ``cellwright`` command lines with the exit code and the
  one-line reason (tests/test_cli.py).
"""

from __future__ import annotations

from datetime import datetime
from decimal import Decimal
from typing import Any, NamedTuple

import numpy as np

from udfs.sheet.error_values import SheetError


class BadInput(NamedTuple):
    function: str
    args: tuple[Any, ...]
    code: str
    fragment: str
    why: str
    shown: str = ""  # how docs/bad-inputs.md shows the arguments ("" = their repr)


class Huge(list[list[float]]):
    """A large range (a list of rows) that shows itself briefly in messages and docs."""

    def __repr__(self) -> str:
        return f"<{len(self)}x{len(self[0])} range>"


def huge(rows: int, cols: int, value: float = 1.0) -> Huge:
    """A ``rows`` x ``cols`` range of ``value``."""
    return Huge([value] * cols for _ in range(rows))


B = BadInput

#: COM's integer form of an error value: 0x800A0000 (signed) plus its CVErr number.
#: CVErr numbers: Microsoft's XlCVError reference page (the classic seven, #SPILL!) and
#: the XlCVError members of Excel's type library (the other newer ones); 2051 stands for
#: an error value without a number here (such as #BUSY!). See tests/sheet/test_incoming_errors.py.
COM_ERROR_BASE = -2146828288
_COM_ERRORS = (
    (2000, "#NULL!", "#NULL!", "CW_NERNST"),
    (2007, "#DIV/0!", "#DIV/0!", "CW_GIBBS"),
    (2015, "#VALUE!", "#VALUE!", "CW_CAPACITY"),
    (2023, "#REF!", "#REF!", "CW_ENERGY"),
    (2029, "#NAME?", "#NAME?", "CW_LCE"),
    (2036, "#NUM!", "#NUM!", "CW_NP_RATIO"),
    (2042, "#N/A", "#N/A", "CW_ELECTRODE_AREA"),
    (2043, "#GETTING_DATA", "#N/A", "CW_NERNST"),
    (2045, "#SPILL!", "#N/A", "CW_NERNST"),
    (2046, "#CONNECT!", "#N/A", "CW_GIBBS"),
    (2047, "#BLOCKED!", "#N/A", "CW_CAPACITY"),
    (2048, "#UNKNOWN!", "#N/A", "CW_ENERGY"),
    (2049, "#FIELD!", "#N/A", "CW_LCE"),
    (2050, "#CALC!", "#N/A", "CW_NP_RATIO"),
    (2051, "#N/A Excel error value number 2051", "#N/A", "CW_ELECTRODE_AREA"),
)
_TYPICAL = {  # the other arguments (each function's worked example)
    "CW_NERNST": (2, 0.1, 1),
    "CW_GIBBS": (2,),
    "CW_CAPACITY": (160,),
    "CW_ENERGY": (3.2,),
    "CW_LCE": (),
    "CW_NP_RATIO": (3.0,),
    "CW_ELECTRODE_AREA": (3.0,),
}
COM_ERROR_INPUTS: tuple[BadInput, ...] = tuple(
    BadInput(
        function,
        (COM_ERROR_BASE + number, *_TYPICAL[function]),
        code,
        shown,
        f"error value {shown.split()[0]} as the add-in passes it (CVErr {number})",
        shown="("
        + ", ".join([f"{COM_ERROR_BASE + number} = CVErr {number}"])
        + "".join(f", {x:g}" for x in _TYPICAL[function])
        + ")",
    )
    for number, shown, code, function in _COM_ERRORS
)

BAD_INPUTS: tuple[BadInput, ...] = (
    # formula and units
    B(
        "CW_CONVERT",
        (1, "Ah", "kg"),
        "#VALUE!",
        "to_unit: 'kg' is [mass]",
        "units of different dimension",
    ),
    B(
        "CW_CONVERT",
        (1, "Ahh", "C"),
        "#VALUE!",
        "from_unit: unknown unit 'Ahh'; did you mean 'Ah'",
        "unknown unit",
    ),
    B(
        "CW_CONVERT",
        ("abc", "Ah", "C"),
        "#VALUE!",
        "value must be a number (got text 'abc')",
        "text for a number",
    ),
    B(
        "CW_CONSTANT",
        ("Faraday",),
        "#N/A",
        "symbol: unknown constant 'Faraday'; did you mean 'F'",
        "unknown constant",
    ),
    B("CW_CONSTANT", ("F", "kg"), "#VALUE!", "unit: 'kg' is [mass]", "unit of the wrong dimension"),
    B("CW_MOLAR_MASS", ("Xx2O",), "#VALUE!", "formula: unknown element 'Xx'", "unknown element"),
    B("CW_MOLAR_MASS", (12,), "#VALUE!", "formula must be text", "number for a formula"),
    B(
        "CW_MOLAR_MASS",
        ("Li(OH",),
        "#N/A",
        "is not a formula (missing closing bracket",
        "broken formula",
    ),
    B(
        "CW_MASS_FRACTION",
        ("LiCoO2", "Qq"),
        "#N/A",
        "element: unknown element 'Qq'",
        "unknown element",
    ),
    B("CW_MASS_FRACTION", ("", "Co"), "#VALUE!", "formula is empty", "empty required text"),
    B(
        "CW_THEORETICAL_CAPACITY",
        ("LiFePO4", 0),
        "#NUM!",
        "electrons must be > 0",
        "zero electrons",
    ),
    B(
        "CW_THEORETICAL_CAPACITY",
        ("LiFePO4", 1, "Wh"),
        "#VALUE!",
        "unit: 'Wh' is",
        "unit of the wrong dimension",
    ),
    B(
        "CW_THEORETICAL_CAPACITY",
        ("grafite", 1),
        "#N/A",
        "did you mean 'graphite'",
        "misspelt material",
    ),
    # Faraday's law
    B(
        "CW_CHARGE_TO_MASS",
        (-1, "Cu", 2),
        "#NUM!",
        "charge must be >= 0 (got -1)",
        "negative charge",
    ),
    B(
        "CW_CHARGE_TO_MASS",
        (1, "Cu", 2, 1.5),
        "#NUM!",
        "efficiency must be > 0 and <= 1 (got 1.5)",
        "efficiency above 1",
    ),
    B(
        "CW_CHARGE_TO_MASS",
        (1, "Cu", 2, 1, "g"),
        "#VALUE!",
        "charge_unit: 'g' is [mass]",
        "charge unit of the wrong dimension",
    ),
    B("CW_MASS_TO_CHARGE", (1, "Cu", -2), "#NUM!", "electrons must be > 0", "negative electrons"),
    B(
        "CW_MASS_TO_CHARGE",
        (1, "Cu", 2, 1, "kWh"),
        "#VALUE!",
        "unit: 'kWh' is",
        "unit of the wrong dimension",
    ),
    B(
        "CW_DEPOSITION_TIME",
        (1, 0, "Cu", 2),
        "#NUM!",
        "current_A must be > 0 (got 0)",
        "zero current",
    ),
    B(
        "CW_DEPOSITION_TIME",
        (None, 1, "Cu", 2),
        "#VALUE!",
        "mass_g is empty; a number is required",
        "empty required number",
    ),
    B(
        "CW_ENERGY_PER_MASS",
        (-2, "Cu", 2),
        "#NUM!",
        "voltage must be >= 0 (got -2)",
        "negative voltage",
    ),
    B(
        "CW_ENERGY_PER_MASS",
        (2, "Cu", 2, 0),
        "#NUM!",
        "efficiency must be > 0 and <= 1 (got 0)",
        "zero efficiency",
    ),
    B(
        "CW_PLATING_THICKNESS",
        (1, 1, "Ni", 2, 0),
        "#NUM!",
        "density_g_cm3 must be > 0 (got 0)",
        "zero density",
    ),
    B(
        "CW_PLATING_THICKNESS",
        (1, -1, "Ni", 2, 8.9),
        "#NUM!",
        "time_h must be >= 0 (got -1)",
        "negative time",
    ),
    # potentials
    B(
        "CW_E0",
        ("Cu3+/Cu",),
        "#N/A",
        "couple: unknown couple 'Cu3+/Cu'; did you mean",
        "unknown couple",
    ),
    B(
        "CW_E0",
        ("Cu2+/Cu", -300),
        "#NUM!",
        "temp_C must be > -273.15 (degC) (got -300)",
        "below absolute zero",
    ),
    B(
        "CW_NERNST",
        (0.34, 2, -0.1, 1),
        "#NUM!",
        "ox_activity must be > 0 (got -0.1)",
        "negative activity",
    ),
    B("CW_NERNST", (0.34, 0, 0.1, 1), "#NUM!", "electrons must be > 0", "zero electrons"),
    B(
        "CW_NERNST",
        (0.34, 2, 0.1, 1, -274),
        "#NUM!",
        "temp_C must be > -273.15",
        "below absolute zero",
    ),
    B(
        "CW_POTENTIAL",
        ("Cu2+/Cu", "Cu2+=-0.1"),
        "#NUM!",
        "activities Cu2+ must be > 0",
        "negative activity in text",
    ),
    B(
        "CW_POTENTIAL",
        ("Cu2+/Cu", "Zn2+=0.1"),
        "#N/A",
        "activities: unknown species",
        "species not in the couple",
    ),
    B(
        "CW_POTENTIAL",
        ("Cu2+/Cu", "Cu2+:0.1"),
        "#VALUE!",
        "each entry must look like 'species=value'",
        "bad activities text",
    ),
    B(
        "CW_HALF_REACTION",
        ("Cu/Cu2+",),
        "#N/A",
        "couple: unknown couple 'Cu/Cu2+'",
        "reversed couple id",
    ),
    B("CW_HALF_REACTION", (True,), "#VALUE!", "couple must be text, not TRUE", "boolean for text"),
    B(
        "CW_COUPLES",
        ("x",),
        "#VALUE!",
        "CW_COUPLES takes at most 0 arguments, got 1",
        "argument to a function without any",
    ),
    B("CW_COUPLES", ("x", 1), "#VALUE!", "takes at most 0 arguments, got 2", "two arguments"),
    B(
        "CW_OCV",
        ("Cu2+/Cu", "Zn/Zn2+"),
        "#N/A",
        "anode_couple: unknown couple 'Zn/Zn2+'",
        "unknown anode couple",
    ),
    B(
        "CW_OCV",
        ("Cu2+/Cu", "Zn2+/Zn", "", "Zn2+=0"),
        "#NUM!",
        "anode_activities Zn2+ must be > 0",
        "zero activity",
    ),
    B(
        "CW_OCV",
        ("Cu2+/Cu", "Zn2+/Zn", "Cu=1"),
        "#VALUE!",
        "cathode_activities: Cu(s) is a pure phase",
        "activity of a solid",
    ),
    B(
        "CW_MEMBRANE_POTENTIAL",
        (0.14, 0.005, 0),
        "#NUM!",
        "charge must be a non-zero whole number (got 0)",
        "zero charge",
    ),
    B(
        "CW_MEMBRANE_POTENTIAL",
        (0.14, 0.005, 1.5),
        "#NUM!",
        "charge must be a non-zero whole number (got 1.5)",
        "fractional charge",
    ),
    B(
        "CW_MEMBRANE_POTENTIAL",
        (0, 0.005, 1),
        "#NUM!",
        "c_inside must be > 0 (got 0)",
        "zero concentration",
    ),
    # cell thermodynamics
    B("CW_GIBBS", (1.1, 0), "#NUM!", "electrons must be > 0", "zero electrons"),
    B(
        "CW_GIBBS",
        ("x", 2),
        "#VALUE!",
        "emf_V must be a number (got text 'x')",
        "text for a number",
    ),
    B(
        "CW_REACTION_THERMO",
        ("Cu2+/Cu", "Zn2+/Zn", "dX"),
        "#N/A",
        "quantity: unknown quantity 'dX'; did you mean",
        "unknown quantity",
    ),
    B(
        "CW_REACTION_THERMO",
        ("Cu2+/Cu", "Zz2+/Zn", "dG"),
        "#N/A",
        "anode_couple: unknown couple 'Zz2+/Zn'",
        "unknown couple",
    ),
    B(
        "CW_HEAT_RATE",
        (10, -3.7, 3.6, -0.1),
        "#NUM!",
        "ocv_V must be >= 0 (got -3.7)",
        "negative OCV",
    ),
    B(
        "CW_HEAT_RATE",
        (10, 3.7, 3.6, -0.1, -300),
        "#NUM!",
        "temp_C must be > -273.15",
        "below absolute zero",
    ),
    # materials and capacity
    B(
        "CW_MATERIAL",
        ("LFP", "colour"),
        "#N/A",
        "property_name: unknown property of LiFePO4 'colour'",
        "unknown property",
    ),
    B(
        "CW_MATERIAL",
        ("unobtainium", "density"),
        "#N/A",
        "material: unknown material 'unobtainium'",
        "unknown material",
    ),
    B(
        "CW_MATERIALS",
        ("cathodes",),
        "#N/A",
        "role: unknown role or category 'cathodes'; did you mean 'cathode'",
        "misspelt role",
    ),
    B("CW_MATERIALS", (5,), "#VALUE!", "role must be text", "number for a role"),
    B(
        "CW_MATERIAL_NAME",
        ("LiFePO5", "cathode"),
        "#N/A",
        "material: unknown cathode material 'LiFePO5'; did you mean 'LiFePO4'",
        "unknown material",
    ),
    B(
        "CW_MATERIAL_NAME",
        ("graphite", "cathode"),
        "#VALUE!",
        "material: 'graphite' is an anode material; expected a cathode material",
        "material of another role",
    ),
    B(
        "CW_MATERIAL_NAME",
        ("LFP", "cathodes"),
        "#N/A",
        "role: unknown role or category 'cathodes'; did you mean 'cathode'",
        "misspelt role",
    ),
    B("CW_MATERIAL_NAME", (3, "anode"), "#VALUE!", "material must be text", "number for a name"),
    B(
        "CW_SOURCE",
        ("nothing here",),
        "#N/A",
        "id: unknown couple, material or species 'nothing here'",
        "unknown id",
    ),
    B(
        "CW_SOURCE",
        ("LFP", "colour"),
        "#N/A",
        "property_name: unknown property of LiFePO4 'colour'",
        "unknown property",
    ),
    B("CW_CAPACITY", (-1, 160), "#NUM!", "mass_g must be >= 0 (got -1)", "negative mass"),
    B(
        "CW_CAPACITY",
        (1, "lots"),
        "#VALUE!",
        "specific_capacity_mAh_g must be a number (got text 'lots')",
        "text for a number",
    ),
    B("CW_ENERGY", (1, -3), "#NUM!", "voltage_V must be >= 0 (got -3)", "negative voltage"),
    B("CW_ENERGY", (float("nan"), 3), "#NUM!", "capacity_Ah must be >= 0 (got nan)", "NaN"),
    B(
        "CW_COUPLE_SPECIFIC_ENERGY",
        ("LFP", "graphite", "ideal"),
        "#VALUE!",
        "basis must be 'theoretical' or 'practical'",
        "unknown basis",
    ),
    B(
        "CW_COUPLE_SPECIFIC_ENERGY",
        ("graphite", "LFP"),
        "#VALUE!",
        "anode_material: gives no positive voltage",
        "electrodes swapped",
    ),
    B(
        "CW_COUPLE_SPECIFIC_ENERGY",
        ("LFP", "copper foil"),
        "#VALUE!",
        "anode_material must be an active material",
        "inactive material",
    ),
    B(
        "CW_SERIES_PARALLEL",
        (0, 5000, 3.65, 50),
        "#NUM!",
        "target_V must be > 0 (got 0)",
        "zero target voltage",
    ),
    B(
        "CW_SERIES_PARALLEL",
        (48, 5000, -3.65, 50),
        "#NUM!",
        "cell_V must be > 0 (got -3.65)",
        "negative cell voltage",
    ),
    # electrode and cell sizing
    B(
        "CW_AREAL_CAPACITY",
        (20, 1.5, 160),
        "#NUM!",
        "active_fraction must be > 0 and <= 1 (got 1.5)",
        "fraction above 1",
    ),
    B(
        "CW_AREAL_CAPACITY",
        (-20, 0.9, 160),
        "#NUM!",
        "loading_mg_cm2 must be >= 0 (got -20)",
        "negative loading",
    ),
    B(
        "CW_COATING_THICKNESS",
        (20, 4, 1),
        "#NUM!",
        "porosity must be >= 0 and < 1 (got 1)",
        "porosity of 1",
    ),
    B(
        "CW_COATING_THICKNESS",
        (20, 0, 0.3),
        "#NUM!",
        "solids_density_g_cm3 must be > 0 (got 0)",
        "zero density",
    ),
    B(
        "CW_ELECTRODE_AREA",
        (5, 0),
        "#NUM!",
        "areal_capacity_mAh_cm2 must be > 0 (got 0)",
        "zero areal capacity",
    ),
    B(
        "CW_ELECTRODE_AREA",
        (-5, 3),
        "#NUM!",
        "capacity_Ah must be >= 0 (got -5)",
        "negative capacity",
    ),
    B(
        "CW_NP_RATIO",
        (3.3, 0),
        "#NUM!",
        "cathode_areal_capacity must be > 0 (got 0)",
        "zero cathode capacity",
    ),
    B(
        "CW_NP_RATIO",
        (-1, 3),
        "#NUM!",
        "anode_areal_capacity must be >= 0 (got -1)",
        "negative anode capacity",
    ),
    B(
        "CW_CELL_DESIGN",
        ("capacity_Ah", [["in_cathode", "NMC811"], ["in_np_ratio", -1]]),
        "#NUM!",
        "in_np_ratio (N/P ratio) must be > 0 (got -1)",
        "input out of its range",
        '"capacity_Ah", {in_cathode: NMC811; in_np_ratio: -1}',
    ),
    B(
        "CW_CELL_DESIGN",
        ("capacity", [["in_cathode", "NMC811"]]),
        "#N/A",
        "output: unknown output of the cell sizing 'capacity'; did you mean 'capacity_Ah'",
        "unknown output",
        '"capacity", {in_cathode: NMC811}',
    ),
    B(
        "CW_CELL_DESIGN",
        ("capacity_Ah", [["in_cathode", "LiFePO5"]]),
        "#N/A",
        "in_cathode (Cathode active material): unknown cathode material 'LiFePO5'",
        "unknown material",
        '"capacity_Ah", {in_cathode: LiFePO5}',
    ),
    B(
        "CW_CELL_DESIGN",
        ("capacity_Ah", [["in_np_ration", 1.1]]),
        "#N/A",
        "inputs: unknown input of the cell-sizing model 'in_np_ration'",
        "unknown input name",
        '"capacity_Ah", {in_np_ration: 1.1}',
    ),
    B(
        "CW_CELL_DESIGN",
        ("capacity_Ah", "in_cathode"),
        "#VALUE!",
        "inputs must be a two-column range of input names and values",
        "one cell for the inputs",
    ),
    B(
        "CW_CELL_DESIGN",
        ("capacity_Ah", [["in_cathode", "NMC811"]], "in_cathode", 2.0),
        "#VALUE!",
        "input: in_cathode is not a numeric input of the cell sizing that can vary",
        "a name varied",
        '"capacity_Ah", {in_cathode: NMC811}, "in_cathode", 2',
    ),
    B(
        "CW_CELL_DESIGN",
        ("capacity_Ah", [["in_cathode", "NMC811"]], "", 2.0),
        "#VALUE!",
        "input_1: name the input that values_1 varies",
        "values without their input",
        '"capacity_Ah", {in_cathode: NMC811}, "", 2',
    ),
    # procurement
    B("CW_LCE", (-1,), "#NUM!", "lithium_mass must be >= 0 (got -1)", "negative mass"),
    B(
        "CW_LCE",
        (True,),
        "#VALUE!",
        "lithium_mass must be a number, not TRUE",
        "boolean for a number",
    ),
    B(
        "CW_METAL_CONTENT",
        ("LiCoO2", "Xy", 1000),
        "#N/A",
        "element: unknown element 'Xy'",
        "unknown element",
    ),
    B(
        "CW_METAL_CONTENT",
        ("LiCoO2", "Co", 1000, 0),
        "#NUM!",
        "yield_fraction must be > 0 and <= 1 (got 0)",
        "zero yield",
    ),
    B(
        "CW_METAL_CONTENT",
        ("LiCoO2", "Co", -1),
        "#NUM!",
        "material_mass must be >= 0 (got -1)",
        "negative mass",
    ),
    # ---- added by the reliability campaign (issue 6): one row per kind of bad input
    B("CW_CONVERT", (1, "m", "s"), "#VALUE!", "to_unit: 's' is [time]", "length to time"),
    B(
        "CW_CONVERT",
        (1, "Ah", "C**"),
        "#VALUE!",
        "to_unit: 'C**' is not a unit: it ends where an exponent is expected",
        "malformed unit",
    ),
    B(
        "CW_CONVERT",
        (1, "((km^12)^12)^3", "((m^12)^12)^3"),
        "#VALUE!",
        "the conversion factor is outside the range of a floating-point number",
        "unit whose factor overflows",
    ),
    B("CW_CONVERT", (float("inf"), "Ah", "C"), "#NUM!", "value must be a finite", "infinity"),
    B("CW_CONSTANT", (None,), "#VALUE!", "symbol is empty", "empty cell"),
    B("CW_MOLAR_MASS", (None,), "#VALUE!", "formula is empty; text is required", "empty cell"),
    B("CW_MOLAR_MASS", (True,), "#VALUE!", "formula must be text, not TRUE", "boolean"),
    B(
        "CW_MOLAR_MASS",
        ("H" * 300,),
        "#VALUE!",
        "formula longer than 200 characters",
        "formula of 300 characters",
        shown="('HHH...H' (300 characters),)",
    ),
    B("CW_MOLAR_MASS", ("#DIV/0!",), "#DIV/0!", "#DIV/0!", "error value from another cell"),
    B("CW_MASS_FRACTION", ("LiCoO2", None), "#VALUE!", "element is empty", "empty element"),
    B(
        "CW_THEORETICAL_CAPACITY",
        ("LiFePO4", True),
        "#VALUE!",
        "electrons must be a number, not TRUE",
        "boolean electrons",
    ),
    B(
        "CW_THEORETICAL_CAPACITY",
        ("LiFePO4", float("nan")),
        "#NUM!",
        "electrons must be > 0 (electrons per formula unit) (got nan)",
        "NaN electrons",
    ),
    B(
        "CW_CHARGE_TO_MASS",
        (1, "Cu", 2, 1, "Ahh"),
        "#VALUE!",
        "charge_unit: unknown unit 'Ahh'; did you mean 'Ah'",
        "unknown unit",
    ),
    B(
        "CW_CHARGE_TO_MASS",
        (SheetError("#REF!", "deleted cell"), "Cu", 2),
        "#REF!",
        "#REF! deleted cell",
        "error value passed on",
    ),
    B("CW_MASS_TO_CHARGE", (1, "Unobtanium", 2), "#VALUE!", "unknown element", "unknown formula"),
    B(
        "CW_DEPOSITION_TIME",
        (1, 1, "Cu", "two"),
        "#VALUE!",
        "electrons must be a number (got text 'two')",
        "text electrons",
    ),
    B(
        "CW_ENERGY_PER_MASS",
        (2, "Cu", 2, 1, "kWh/m"),
        "#VALUE!",
        "unit: 'kWh/m' is",
        "energy per length",
    ),
    B(
        "CW_PLATING_THICKNESS",
        (float("-inf"), 1, "Ni", 2, 8.9),
        "#NUM!",
        "current_density_A_dm2 must be >= 0 (got -inf)",
        "minus infinity",
    ),
    B(
        "CW_E0",
        ("Cu2+/Cu", -273.15),
        "#NUM!",
        "temp_C must be > -273.15 (degC) (got -273.15)",
        "at absolute zero",
    ),
    B("CW_E0", ("",), "#VALUE!", "couple is empty; text is required", "empty couple"),
    B(
        "CW_NERNST",
        (0.34, 2, 0.1, 0),
        "#NUM!",
        "red_activity must be > 0 (got 0)",
        "activity of zero",
    ),
    B("CW_NERNST", (0.34,), "#VALUE!", "CW_NERNST needs electrons, ox_activity", "too few"),
    B(
        "CW_NERNST",
        (0.34, 2, [[0.1, 0.2, 0.3]], [[1.0, 1.0]]),
        "#VALUE!",
        "ranges cannot be combined: ox_activity is 1x3 but red_activity is 1x2",
        "ranges that cannot broadcast",
    ),
    B(
        "CW_POTENTIAL",
        ("Cu2+/Cu", "Cu2+=0"),
        "#NUM!",
        "activities Cu2+ must be > 0 (mol/L, or bar for a gas) (got 0)",
        "activity of zero in text",
    ),
    B(
        "CW_POTENTIAL",
        ("Cu2+/Cu", "Cu2+=nan"),
        "#NUM!",
        "activities Cu2+ must be > 0 (mol/L, or bar for a gas) (got nan)",
        "NaN activity in text",
    ),
    B(
        "CW_POTENTIAL",
        ("Cu2+/Cu", "Cu2+=abc"),
        "#VALUE!",
        "'abc' is not a number at position 6",
        "text activity value",
    ),
    B(
        "CW_POTENTIAL",
        ("Cu2+/Cu", "Cu2+=0.1=2"),
        "#VALUE!",
        "each entry must look like 'species=value' at position 1",
        "two '=' in one entry",
    ),
    B(
        "CW_POTENTIAL",
        ("Cu2+/Cu", "Cu2+=0.1; Cu2+=0.2"),
        "#VALUE!",
        "'Cu2+' given twice",
        "species given twice",
    ),
    B(
        "CW_POTENTIAL",
        ("Cu2+/Cu", "pH=7"),
        "#VALUE!",
        "pH given but 'Cu2+(aq) + 2e- = Cu(s)' has no H+ or OH-",
        "pH for a couple without H+",
    ),
    B(
        "CW_POTENTIAL",
        ("Cu2+/Cu", [["Cu2+", 0.0]]),
        "#NUM!",
        "activities Cu2+ must be > 0",
        "activity table with zero",
    ),
    B(
        "CW_POTENTIAL",
        ("Cu2+/Cu", [["Cu2+", None], ["x", 1.0]]),
        "#VALUE!",
        "row 1: the value of 'Cu2+' is empty",
        "activity table with an empty value",
    ),
    B("CW_HALF_REACTION", ("",), "#VALUE!", "couple is empty", "empty couple"),
    B(
        "CW_OCV",
        ("Cu2+/Cu", "Zn2+/Zn", "Cu2+=1e-400"),
        "#NUM!",
        "cathode_activities Cu2+ must be > 0 (mol/L, or bar for a gas) (got 0)",
        "activity that underflows to zero",
    ),
    B(
        "CW_MEMBRANE_POTENTIAL",
        (0.14, 0.005, 1, -273.15),
        "#NUM!",
        "temp_C must be > -273.15 (degC) (got -273.15)",
        "at absolute zero",
    ),
    B(
        "CW_GIBBS",
        (float("inf"), 2),
        "#NUM!",
        "emf_V must be a finite number (got inf)",
        "infinite emf",
    ),
    B(
        "CW_REACTION_THERMO",
        ("Cu2+/Cu", "Zn2+/Zn", None),
        "#VALUE!",
        "quantity is empty",
        "empty quantity",
    ),
    B(
        "CW_HEAT_RATE",
        (10, 3.7, 3.6, float("nan")),
        "#NUM!",
        "docv_dT_mV_K must be a finite number (got nan)",
        "NaN coefficient",
    ),
    B("CW_MATERIAL", ("LFP", None), "#VALUE!", "property_name is empty", "empty property"),
    B(
        "CW_MATERIAL",
        ("LFP", "density", "x"),
        "#VALUE!",
        "CW_MATERIAL takes at most 2 arguments, got 3",
        "too many arguments",
    ),
    B("CW_MATERIALS", (True,), "#VALUE!", "role must be text, not TRUE", "boolean role"),
    B("CW_SOURCE", (None,), "#VALUE!", "id is empty", "empty id"),
    B("CW_CAPACITY", (float("inf"), 160), "#NUM!", "mass_g must be >= 0 (got inf)", "infinity"),
    B("CW_CAPACITY", ("#DIV/0!", 160), "#DIV/0!", "#DIV/0!", "error value from another cell"),
    B(
        "CW_CAPACITY",
        ([[1, 2, 3]], [[1, 2]]),
        "#VALUE!",
        "ranges cannot be combined: mass_g is 1x3 but specific_capacity_mAh_g is 1x2",
        "ranges that cannot broadcast",
    ),
    B(
        "CW_CAPACITY",
        (huge(1000, 1000), [[160.0] * 999]),
        "#VALUE!",
        "mass_g is 1000x1000 but specific_capacity_mAh_g is 1x999",
        "huge ranges that cannot broadcast",
    ),
    B(
        "CW_ENERGY",
        (1e308, 10),
        "#NUM!",
        "the result is not a finite number; check the size of the inputs",
        "result overflows",
    ),
    B(
        "CW_COUPLE_SPECIFIC_ENERGY",
        ("LFP", None),
        "#VALUE!",
        "anode_material is empty",
        "empty anode",
    ),
    B(
        "CW_SERIES_PARALLEL",
        (48, 5000, 3.65, [[50, 60]]),
        "#VALUE!",
        "CW_SERIES_PARALLEL spills 4 columns per row: give single cells or columns (got 1x2)",
        "row range for a record function",
    ),
    B(
        "CW_AREAL_CAPACITY",
        (20, 0.9, "160 mAh/g"),
        "#VALUE!",
        "specific_capacity_mAh_g must be a number (got text '160 mAh/g')",
        "number with its unit typed in",
    ),
    B(
        "CW_COATING_THICKNESS",
        (20, 4, -0.1),
        "#NUM!",
        "porosity must be >= 0 and < 1 (got -0.1)",
        "negative porosity",
    ),
    B(
        "CW_ELECTRODE_AREA",
        ([[1, 1, 1], [1, 1, 1]], [[1, 1], [1, 1], [1, 1]]),
        "#VALUE!",
        "capacity_Ah is 2x3 but areal_capacity_mAh_cm2 is 3x2",
        "transposed ranges",
    ),
    B("CW_NP_RATIO", ("", 3), "#VALUE!", "anode_areal_capacity is empty", "empty cell"),
    B("CW_LCE", ("1,5",), "#VALUE!", "lithium_mass must be a number (got text '1,5')", "comma"),
    B(
        "CW_METAL_CONTENT",
        ("LiCoO2", "Co", 1000, 1.2),
        "#NUM!",
        "yield_fraction must be > 0 and <= 1 (got 1.2)",
        "yield above 1",
    ),
    # ---- issue 11 item 5: error values from other cells, as the Windows add-in passes
    # the newer ones (COM's integer), and as text (a runtime that passes their text)
    *COM_ERROR_INPUTS,
    B("CW_NERNST", ("#SPILL!", 2, 0.1, 1), "#N/A", "#SPILL!", "newer error value as text"),
    B("CW_MOLAR_MASS", ("#CALC!",), "#N/A", "#CALC!", "newer error value as text"),
    B(
        "CW_GIBBS",
        ("#BUSY! from another cell", 2),
        "#N/A",
        "#BUSY! from another cell",
        "newer error value with our message",
    ),
    # ---- issue 14 item 9: Python callers (a number is a real number: int, float,
    # Fraction, Decimal, numpy integers and floats; every other type is #VALUE!)
    B(
        "CW_NERNST",
        (0.34, 2, 0.1, np.datetime64("2024-01-02")),
        "#VALUE!",
        "red_activity must be a number, not a date or time (got numpy.datetime64)",
        "numpy datetime64",
    ),
    B(
        "CW_NERNST",
        (0.34, 2, 0.1, np.timedelta64(2, "s")),
        "#VALUE!",
        "red_activity must be a number, not a date or time (got numpy.timedelta64)",
        "numpy timedelta64",
    ),
    B(
        "CW_CAPACITY",
        (datetime(2024, 1, 2), 160),
        "#VALUE!",
        "mass_g must be a number, not a date or time (got datetime)",
        "Python datetime",
    ),
    B(
        "CW_CAPACITY",
        (100, 160 + 0j),
        "#VALUE!",
        "specific_capacity_mAh_g must be a real number (got complex (160+0j))",
        "complex number",
    ),
    B(
        "CW_ENERGY",
        (np.complex128(50 + 1j), 3.2),
        "#VALUE!",
        "capacity_Ah must be a real number (got complex",
        "numpy complex128",
    ),
    B("CW_LCE", (b"1",), "#VALUE!", "lithium_mass must be a number (got bytes)", "bytes"),
    B(
        "CW_MOLAR_MASS",
        (b"LiFePO4",),
        "#VALUE!",
        "formula must be text (chemical formula",
        "bytes for a formula",
    ),
    B(
        "CW_GIBBS",
        (Decimal("1e400"), 2),
        "#NUM!",
        "emf_V must be a finite number (got inf)",
        "Decimal too large",
    ),
    # ---- issue 14 item 3: unit text that pint would evaluate for ever or for minutes
    B(
        "CW_CONVERT",
        (1, "9**9**9", "C"),
        "#VALUE!",
        "from_unit: '9**9**9' is not a unit: a number cannot be raised to a power",
        "unit text with a power tower (never returned)",
    ),
    B(
        "CW_CONVERT",
        (1, "C", "2**2**40"),
        "#VALUE!",
        "to_unit: '2**2**40' is not a unit: a number cannot be raised to a power",
        "unit text with a huge power (ate memory)",
    ),
    B(
        "CW_CONVERT",
        (1, "x" * 100_000, "C"),
        "#VALUE!",
        "from_unit: unit text of 100000 characters is too long (at most 100)",
        "long unknown unit (quadratic parse)",
        shown="(1, <100,000 characters 'xxx...'>, 'C')",
    ),
    B(
        "CW_CONVERT",
        (1, "m^2^3", "m"),
        "#VALUE!",
        "powers of powers need parentheses",
        "unit text with chained powers",
    ),
    B(
        "CW_THEORETICAL_CAPACITY",
        ("LiFePO4", 1, "mAh/g^99"),
        "#VALUE!",
        "unit: 'mAh/g^99' is not a unit: an exponent is larger than 12",
        "unit with a large exponent",
    ),
    B(
        "CW_CHARGE_TO_MASS",
        (1, "Cu", 2, 1, "A*((((((h))))))"),
        "#VALUE!",
        "parentheses nest deeper than 4",
        "unit nested too deep",
    ),
    B(
        "CW_CONSTANT",
        ("F", "C/mol; rm -rf"),
        "#VALUE!",
        "the character ';' has no place in a unit",
        "unit text with other characters",
    ),
)


class RangeBadInput(NamedTuple):
    """A range call with one bad element: that element gets the error, every
    other element of the spilled result is a finite number."""

    function: str
    args: tuple[Any, ...]
    cell: tuple[int, int]  # (row, column) of the bad element in the result, 0-based
    code: str
    fragment: str
    why: str
    shown: str = ""


def _with(grid: Huge, row: int, col: int, value: Any) -> Huge:
    grid[row][col] = value
    return grid


R = RangeBadInput

RANGE_BAD_INPUTS: tuple[RangeBadInput, ...] = (
    R(
        "CW_CAPACITY",
        (_with(huge(1000, 1000), 500, 500, "x"), 160),
        (500, 500),
        "#VALUE!",
        "mass_g must be a number (got text 'x')",
        "huge range with one text cell",
        shown="(<1000x1000 range, [500][500] = 'x'>, 160)",
    ),
    R(
        "CW_NERNST",
        (0.34, 2, [[0.1], [0.0], [0.01]], 1),
        (1, 0),
        "#NUM!",
        "ox_activity must be > 0 (got 0)",
        "column with an activity of zero",
    ),
    R(
        "CW_LCE",
        ([[1.0, True, 3.0]],),
        (0, 1),
        "#VALUE!",
        "lithium_mass must be a number, not TRUE",
        "row with a boolean",
    ),
    R(
        "CW_CHARGE_TO_MASS",
        ([[1.0, None, 2.0]], "Cu", 2),
        (0, 1),
        "#VALUE!",
        "charge is empty; a number is required",
        "row with an empty cell",
    ),
    R(
        "CW_E0",
        ([["Cu2+/Cu"], ["Cu9+/Cu"], ["Zn2+/Zn"]],),
        (1, 0),
        "#N/A",
        "couple: unknown couple 'Cu9+/Cu'",
        "column of couples with an unknown one",
    ),
    R(
        "CW_MOLAR_MASS",
        ([["LiFePO4", "#N/A", "H2O"]],),
        (0, 1),
        "#N/A",
        "#N/A",
        "error value inside a range",
    ),
    R(
        "CW_E0",
        ("Zn2+/Zn", [[25.0, -300.0, 80.0]]),
        (0, 1),
        "#NUM!",
        "temp_C must be > -273.15 (degC) (got -300)",
        "temperature row below absolute zero",
    ),
    R(
        "CW_SERIES_PARALLEL",
        (48, 5000, 3.65, [[50.0], [float("nan")]]),
        (1, 0),
        "#NUM!",
        "cell_Ah must be > 0 (got nan)",
        "column with NaN",
    ),
    R(
        "CW_NERNST",
        (0.34, 2, [[0.1], [COM_ERROR_BASE + 2045], [1.0]], 1),
        (1, 0),
        "#N/A",
        "#SPILL!",
        "column with an error value as the add-in passes it",
        shown="(0.34, 2, [[0.1], [-2146826243 = CVErr 2045 (#SPILL!)], [1]], 1)",
    ),
    R(
        "CW_NERNST",
        (0.34, 2, [[0.1, np.datetime64("2024-01-02"), 1.0]], 1),
        (0, 1),
        "#VALUE!",
        "ox_activity must be a number, not a date or time (got numpy.datetime64)",
        "row with a numpy datetime64",
    ),
    R(
        "CW_CAPACITY",
        (np.array([[100.0], [np.timedelta64(2, "s")], [50.0]], dtype=object), 160),
        (1, 0),
        "#VALUE!",
        "mass_g must be a number, not a date or time (got numpy.timedelta64)",
        "numpy object column with a timedelta64",
        shown="(numpy object array [[100], [np.timedelta64(2,'s')], [50]], 160)",
    ),
    R(
        "CW_ENERGY",
        ([[50.0, 50.0 + 2j, 20.0]], 3.2),
        (0, 1),
        "#VALUE!",
        "capacity_Ah must be a real number (got complex",
        "row with a complex number",
    ),
)


class CliBadInput(NamedTuple):
    """A ``cellwright`` command line that must fail with ``exit_code`` and a
    one-line reason containing ``fragment``.

    Placeholders in ``argv``: ``{book}`` a small valid workbook, ``{out}`` a
    fresh output path stem (add the suffix), ``{tmp}`` the scratch directory.
    ``prepare`` names a set-up step of tests/bad_input_catalogue.py.
    """

    command: str
    argv: tuple[str, ...]
    exit_code: int
    fragment: str
    why: str
    prepare: str = ""


C = CliBadInput

CLI_BAD_INPUTS: tuple[CliBadInput, ...] = (
    C("calc", ("calc", "{tmp}/gone.xlsx", "-o", "{out}.xlsx"), 1, "no such file", "input vanished"),
    C(
        "calc",
        ("calc", "{tmp}/dir.xlsx", "-o", "{out}.xlsx"),
        1,
        "is a directory",
        "input is dir",
        "dir",
    ),
    C(
        "calc",
        ("calc", "{tmp}/text.xlsx", "-o", "{out}.xlsx"),
        1,
        "not an .xlsx workbook",
        "text file",
        "text",
    ),
    C(
        "calc",
        ("calc", "{tmp}/empty.xlsx", "-o", "{out}.xlsx"),
        1,
        "not a zip archive",
        "empty file",
        "empty",
    ),
    C(
        "calc",
        ("calc", "{book}", "-o", "{out}.xlsx"),
        1,
        "already exists; add --force",
        "output exists",
        "exists",
    ),
    C(
        "calc",
        ("calc", "{book}", "-o", "{tmp}/nodir/o.xlsx"),
        1,
        "does not exist",
        "output directory missing",
    ),
    C(
        "calc",
        ("calc", "{book}", "-o", "{book}", "--force"),
        1,
        "is the input file",
        "output is the input",
    ),
    C("calc", ("calc", "{book}", "-o", "{out}.csv"), 1, "must end in .xlsx", "wrong output suffix"),
    C("calc", ("calc", "{book}"), 2, "-o/--output", "no output"),
    C(
        "calc",
        ("calc", "{book}", "-o", "{out}.xlsx", "--keep-formulas"),
        2,
        "unrecognized arguments: --keep-formulas",
        "a removed option (outputs keep every formula now)",
    ),
    C(
        "calc",
        ("calc", "{book}", "-o", "{out}.xlsx", "--set", "Inputs!B4"),
        1,
        "write CELL=VALUE",
        "--set without '='",
    ),
    C(
        "calc",
        ("calc", "{book}", "-o", "{out}.xlsx", "--set", "Inputs!B4="),
        1,
        "empty value",
        "--set empty value",
    ),
    C(
        "calc",
        ("calc", "{book}", "-o", "{out}.xlsx", "--set", "Inputs!B4=nan"),
        1,
        "cannot hold NaN",
        "--set NaN",
    ),
    C(
        "calc",
        ("calc", "{book}", "-o", "{out}.xlsx", "--set", "Inputs!B4=-inf"),
        1,
        "cannot hold NaN or infinity",
        "--set infinity",
    ),
    C(
        "calc",
        ("calc", "{book}", "-o", "{out}.xlsx", "--set", "Nope!B4=1"),
        1,
        "unknown sheet 'Nope'",
        "--set unknown sheet",
    ),
    C(
        "calc",
        ("calc", "{book}", "-o", "{out}.xlsx", "--set", "Calc!A1=1"),
        1,
        "holds a formula",
        "--set a formula cell",
    ),
    C(
        "calc",
        ("calc", "{book}", "-o", "{out}.xlsx", "--set", "nosuchname=1"),
        1,
        "neither a cell",
        "--set unknown name",
    ),
    C(
        "calc",
        ("calc", "{book}", "-o", "{out}.xlsx", "--set", "B4=1"),
        1,
        "say which sheet",
        "--set without sheet",
    ),
    C(
        "calc",
        ("calc", "{book}", "-o", "{out}.xlsx", "--set", "Inputs!A9999999=1"),
        1,
        "neither a cell",
        "--set outside the sheet",
    ),
    C(
        "calc",
        ("calc", "{book}", "-o", "{out}.xlsx", "--set", "load=1", "--set", "LOAD=2"),
        1,
        "given twice",
        "--set the same cell twice",
    ),
    C(
        "template",
        ("template", "no-such-template", "-o", "{out}.xlsx"),
        1,
        "no-such-template",
        "unknown template",
    ),
    C("template", ("template", "cell_sizing"), 2, "-o PATH is required", "no output"),
    C(
        "template",
        ("template", "cell_sizing", "-o", "{out}.txt"),
        1,
        "written as .xlsx",
        "wrong suffix",
    ),
    C(
        "template",
        ("template", "cell_sizing", "-o", "{out}.xlsx"),
        1,
        "already exists; add --force",
        "output exists",
        "exists",
    ),
    C(
        "template",
        ("template", "cell_sizing", "-o", "{tmp}/nodir/t.xlsx"),
        1,
        "does not exist",
        "output directory missing",
    ),
    C(
        "demo",
        ("demo", "-o", "{out}.xlsx"),
        1,
        "already exists; add --force",
        "output exists",
        "exists",
    ),
    C(
        "demo",
        ("demo", "-o", "{tmp}/nodir/d.xlsx"),
        1,
        "does not exist",
        "output directory missing",
    ),
    C(
        "sweep",
        ("sweep", "{book}", "--vary", "load=1:2", "--out", "{out}.csv"),
        1,
        "start:stop:step",
        "range without step",
    ),
    C(
        "sweep",
        ("sweep", "{book}", "--vary", "load=1:5:0", "--out", "{out}.csv"),
        1,
        "must not be 0",
        "zero step",
    ),
    C(
        "sweep",
        ("sweep", "{book}", "--vary", "load=10:1:1", "--out", "{out}.csv"),
        1,
        "never goes from 10 to 1",
        "step away from stop",
    ),
    C(
        "sweep",
        ("sweep", "{book}", "--vary", "load=a:b:c", "--out", "{out}.csv"),
        1,
        "'a' is not a number",
        "text range",
    ),
    C(
        "sweep",
        ("sweep", "{book}", "--vary", "load=nan", "--out", "{out}.csv"),
        1,
        "is not a finite number",
        "NaN value",
    ),
    C(
        "sweep",
        ("sweep", "{book}", "--vary", "=1", "--out", "{out}.csv"),
        1,
        "write TARGET=start:stop:step",
        "no target",
    ),
    C(
        "sweep",
        ("sweep", "{book}", "--vary", "load=1:1e9:1", "--out", "{out}.csv"),
        1,
        "values on one axis (limit 100,000)",
        "huge axis",
    ),
    C(
        "sweep",
        (
            "sweep",
            "{book}",
            "--vary",
            "load=1:100:1",
            "--vary",
            "Inputs!B5=1:200:1",
            "--out",
            "{out}.csv",
        ),
        1,
        "20,000 scenarios (limit 10,000)",
        "too many scenarios",
    ),
    C(
        "sweep",
        ("sweep", "{book}", "--vary", "load=1,2", "--vary", "LOAD=3", "--out", "{out}.csv"),
        1,
        "given twice",
        "same target twice",
    ),
    C(
        "sweep",
        ("sweep", "{book}", "--out", "{out}.csv"),
        1,
        "at least one --vary",
        "nothing varied",
    ),
    C(
        "sweep",
        ("sweep", "{book}", "--vary", "product=1,2", "--out", "{out}.csv"),
        1,
        "holds a formula",
        "varies a formula cell",
    ),
    C(
        "sweep",
        ("sweep", "{book}", "--vary", "nosuch=1,2", "--out", "{out}.csv"),
        1,
        "neither a cell",
        "unknown target",
    ),
    C(
        "sweep",
        ("sweep", "{book}", "--vary", "load=1,2", "--output", "Nope!A1", "--out", "{out}.csv"),
        1,
        "unknown sheet 'Nope'",
        "unknown output sheet",
    ),
    C(
        "sweep",
        ("sweep", "{book}", "--vary", "load=1,2", "--out", "{out}.txt"),
        1,
        ".csv or .xlsx",
        "wrong suffix",
    ),
    C(
        "sweep",
        ("sweep", "{book}", "--vary", "load=1,2", "--out", "{book}", "--force"),
        1,
        "is the input file",
        "output is the input",
    ),
    C(
        "sweep",
        ("sweep", "{tmp}/gone.xlsx", "--vary", "load=1,2", "--out", "{out}.csv"),
        1,
        "no such file",
        "input vanished",
    ),
    C(
        "sweep",
        ("sweep", "--vary", "load=1,2", "--out", "{out}.csv"),
        1,
        "give the workbook",
        "no workbook",
    ),
    C(
        "sweep",
        ("sweep", "--model", "core", "--vary", "bogus=1,2", "--out", "{out}.csv"),
        1,
        "CellSpec field",
        "unknown core field",
    ),
    C(
        "sweep",
        ("sweep", "--model", "core", "--vary", "cathode_loading_mg_cm2=0", "--out", "{out}.csv"),
        1,
        "cathode_loading_mg_cm2 must be > 0 (got 0)",
        "zero loading",
    ),
    C(
        "sweep",
        ("sweep", "--model", "core", "--vary", "cathode_porosity=1", "--out", "{out}.csv"),
        1,
        "cathode_porosity must be >= 0 and < 1 (got 1)",
        "porosity of 1",
    ),
    C(
        "sweep",
        ("sweep", "{book}", "--model", "core", "--vary", "np_ratio=1,2", "--out", "{out}.csv"),
        1,
        "no workbook",
        "workbook with --model core",
    ),
    C("functions", ("functions", "extra"), 2, "unrecognized arguments: extra", "stray argument"),
    C("(none)", ("frobnicate",), 2, "invalid choice", "unknown command"),
)
