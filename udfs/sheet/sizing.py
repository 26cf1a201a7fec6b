"""Spreadsheet functions of the cell-sizing model: a material's name resolved
once to the catalogue's own name, and the whole sizing model
(:func:`udfs.core.sizing.design_cell`) broadcast over one or two varied inputs,
so a what-if grid is one formula over the model itself.

>>> CW_MATERIAL_NAME("LFP", "cathode")
'LiFePO4'
>>> CW_MATERIAL_NAME("graphite", "cathode")[:61]
"#VALUE! material: 'graphite' is an anode material; expected a"
>>> inputs = [["in_cathode", "LFP"], ["in_anode", "graphite"], ["in_np_ratio", 1.1]]
>>> CW_CELL_DESIGN("target_capacity_Ah", inputs, "in_target", [[40, 60]])
[[40.0, 60.0]]
>>> grid = CW_CELL_DESIGN("capacity_Ah", inputs, "in_target", [[40, 60]], "in_np_ratio",
...                       [[1.1], [1.2]])
>>> [[x >= t for x, t in zip(row, (40, 60))] for row in grid]
[[True, True], [True, True]]
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import fields
from typing import Any

import numpy as np

from ..core import catalogue
from ..core.errors import InputError
from ..core.names import lookup
from ..core.sizing import CellDesign, design_cell
from ..core.sizing_values import field_of, spec_from_values, vary
from ..core.validate import ANY, Names
from .declare import Kind, Num, Section, Table, Text, sheet_function

__all__ = ["CW_CELL_DESIGN", "CW_MATERIAL_NAME", "DESIGN_OUTPUTS"]

#: The numbers of a sized cell that CW_CELL_DESIGN can return (CellDesign's arrays).
DESIGN_OUTPUTS: tuple[str, ...] = tuple(
    f.name for f in fields(CellDesign) if str(f.type) == "Array"
)

_KINDS = (*catalogue.ROLES, *catalogue.INACTIVE_CATEGORIES)


@sheet_function(
    "CW_MATERIAL_NAME",
    "The catalogue's own name of a material given by its name or an alias (LFP -> LiFePO4); "
    "with a role or category, an error unless the material is one.",
    [
        Text("material", 'material name or alias, e.g. "LFP", "NCM811", "pvdf"'),
        Text("role", "cathode, anode, binder, foil, separator, ... (empty: any)", default=""),
    ],
    section=Section.CAPACITY,
    kind=Kind.VALUE,
    returns="text",
    example=("LFP", "cathode"),
)
def CW_MATERIAL_NAME(material: str, role: str) -> str:
    if not role:
        return catalogue.material(material, "material").name
    kind = lookup(role, _KINDS, "role or category", "role")
    return Names((kind,)).check("material", material)


@sheet_function(
    "CW_CELL_DESIGN",
    "One number of the sized cell (output, e.g. cost_per_kWh_USD) from the cell-sizing "
    "inputs, with up to two inputs varied over ranges (a row against a column fills a grid).",
    [
        Text("output", 'e.g. "cost_per_kWh_USD", "specific_energy_Wh_kg", "capacity_Ah"'),
        Table("inputs", "two columns: input names (in_...) and their values"),
        Text("input_1", 'input varied, e.g. "in_np_ratio" or "cathode_loading_mg_cm2"', default=""),
        Num("values_1", "its values (a row or a column); needs input_1", ANY, default=0.0),
        Text("input_2", "second input varied", default=""),
        Num("values_2", "its values; needs input_2", ANY, default=0.0),
    ],
    section=Section.SIZING,
    returns="the output's unit",
    example=("capacity_Ah", [["in_cathode", "NMC811"], ["in_anode", "graphite"]]),
)
def CW_CELL_DESIGN(
    output: str, inputs: Any, input_1: str, values_1: Any, input_2: str, values_2: Any
) -> Any:
    name = lookup(output, DESIGN_OUTPUTS, "output of the cell sizing", "output")
    if not isinstance(inputs, Mapping):
        raise InputError("inputs", inputs, "a two-column range of input names and values")
    spec = spec_from_values(inputs)
    varied: list[str] = []
    for key, values, arg in ((input_1, values_1, "input_1"), (input_2, values_2, "input_2")):
        if not key:  # values without an input: refused (0, the default, means "not given")
            if np.ndim(values) or float(values) != 0.0:
                raise InputError(arg, detail=f"name the input that values_{arg[-1]} varies")
            continue
        field = field_of(key, inputs)
        if field in varied:
            raise InputError(arg, key, detail=f"{key} varies the same input as input_1")
        varied.append(field)
        spec = vary(spec, field, values)
    return getattr(design_cell(spec), name)
