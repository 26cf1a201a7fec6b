"""Spreadsheet functions of the cell-sizing model: a material's name resolved
once to the catalogue's own name; the whole sizing model
(:func:`udfs.core.sizing.design_cell`) and the pack
(:func:`udfs.core.pack.size_pack`) broadcast over one or two varied inputs,
so a what-if grid is one formula over the model itself; the design rules of a
scenario (:mod:`udfs.core.design_rules`); and the pieces a workbook builds the
formats and the pack from: presets, the wound roll, the series count and the
high-voltage caution.

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

import dataclasses
from collections.abc import Mapping
from typing import Any

import numpy as np

from ..core import catalogue
from ..core.cell_formats import CORE_TYPES, CYLINDER_CLASSES, FORMATS, PRESETS, preset_key
from ..core.design_rules import review_design
from ..core.errors import DomainError, InputError
from ..core.names import lookup
from ..core.pack import (
    HIGH_VOLTAGE_DC_V,
    PACK_OUTPUTS,
    PackSpec,
    series_count,
    size_pack,
)
from ..core.sizing import DESIGN_OUTPUTS, FORMAT_OUTPUTS, CellSpec, applies, design_cell
from ..core.sizing_table import CELL_SIZING
from ..core.sizing_values import PACK_INPUTS, field_of, pack_from_values, spec_from_values, vary
from ..core.spiral import wound_length, wound_thickness
from ..core.validate import ANY, NONNEGATIVE, POSITIVE, Names, Options
from .declare import Kind, Num, Section, Table, Text, sheet_function

__all__ = [
    "CW_CELL_CHECKS",
    "CW_CELL_DESIGN",
    "CW_FORMAT_PRESET",
    "CW_MATERIAL_NAME",
    "CW_PACK_DESIGN",
    "CW_PACK_HIGH_VOLTAGE",
    "CW_PACK_SERIES",
    "CW_WOUND_LENGTH",
    "CW_WOUND_THICKNESS",
    "DESIGN_OUTPUTS",
    "PACK_OUTPUTS",
]

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


def _varied_args(examples: str) -> list[Text | Num]:
    """The two optional (input, values) pairs of the design functions."""
    return [
        Text("input_1", f"input varied, e.g. {examples}", default=""),
        Num("values_1", "its values (a row or a column); needs input_1", ANY, default=0.0),
        Text("input_2", "second input varied", default=""),
        Num("values_2", "its values; needs input_2", ANY, default=0.0),
    ]


@sheet_function(
    "CW_CELL_DESIGN",
    "One number of the sized cell (output, e.g. cost_per_kWh_USD) from the cell-sizing "
    "inputs, with up to two inputs varied over ranges (a row against a column fills a grid).",
    [
        Text("output", 'e.g. "cost_per_kWh_USD", "specific_energy_Wh_kg", "capacity_Ah"'),
        Table("inputs", "two columns: input names (in_...) and their values"),
        *_varied_args('"in_np_ratio" or "cathode_loading_mg_cm2"'),
    ],
    section=Section.SIZING,
    returns="the output's unit",
    example=("capacity_Ah", [["in_cathode", "NMC811"], ["in_anode", "graphite"]]),
)
def CW_CELL_DESIGN(
    output: str, inputs: Any, input_1: str, values_1: Any, input_2: str, values_2: Any
) -> Any:
    name = lookup(output, DESIGN_OUTPUTS, "output of the cell sizing", "output")
    spec, _ = _varied(inputs, input_1, values_1, input_2, values_2)
    _applies(name, spec)
    return getattr(design_cell(spec), name)


def _table(inputs: Any) -> Mapping[str, Any]:
    if not isinstance(inputs, Mapping):
        raise InputError("inputs", inputs, "a two-column range of input names and values")
    return inputs


def _varied(inputs: Any, input_1: str, values_1: Any, input_2: str, values_2: Any
            ) -> tuple[CellSpec, PackSpec]:
    """The cell and pack the inputs describe, with up to two numeric inputs
    (of the cell or of the pack) varied over ranges."""
    table = _table(inputs)
    spec = spec_from_values(table)
    pack = pack_from_values(table)
    varied: list[str] = []
    for key, values, arg in ((input_1, values_1, "input_1"), (input_2, values_2, "input_2")):
        if not key:  # values without an input: refused (0, the default, means "not given")
            if np.ndim(values) or float(values) != 0.0:
                raise InputError(arg, detail=f"name the input that values_{arg[-1]} varies")
            continue
        pack_field = _pack_field(key)
        field = pack_field or field_of(key, table)
        if field in varied:
            raise InputError(arg, key, detail=f"{key} varies the same input as input_1")
        varied.append(field)
        if pack_field:
            checked = CELL_SIZING.check(pack_field, values)
            pack = dataclasses.replace(pack, **{pack_field: checked})
        else:
            spec = vary(spec, field, values)
    return spec, pack


def _pack_field(key: str) -> str | None:
    """The PackSpec field a numeric pack input (defined name or field) sets, or None."""
    if key not in CELL_SIZING:
        return None
    inp = CELL_SIZING.get(key)
    if inp.name in PACK_INPUTS and inp.is_number:
        return inp.field
    return None


def _applies(name: str, spec: CellSpec) -> None:
    """Refuse an output that means nothing for the spec's format or mode."""
    fmt, core = spec.cell_format, spec.prismatic_core
    if isinstance(fmt, str) and isinstance(core, str) and name in FORMAT_OUTPUTS:
        canonical = Options(FORMATS).check("in_format", fmt)
        core = Options(CORE_TYPES).check("in_prismatic_core", core)
        if not applies(name, canonical, core):
            kind = f"{canonical} ({core})" if canonical == "prismatic" else canonical
            raise InputError("output", name, detail=f"{name} does not apply to a {kind} cell "
                             f"(only to {', '.join(FORMAT_OUTPUTS[name])} cells)")
    if name == "target_capacity_Ah" and isinstance(spec.sizing_mode, str) and \
            spec.sizing_mode.strip().lower() == "envelope":
        raise InputError("output", name, detail="the envelope mode has no target; ask for "
                         "capacity_Ah")


@sheet_function(
    "CW_CELL_CHECKS",
    "The design rules of the cell the inputs describe: spills one line per error or warning "
    '(N/P on the first-charge basis, electrolyte, porosity, loading, thickness, voltage), or '
    '"all checks pass".',
    [Table("inputs", "two columns: input names (in_...) and their values")],
    section=Section.SIZING,
    kind=Kind.COLUMN,
    returns="text",
    example=([["in_cathode", "NMC811"], ["in_anode", "graphite"]],),
)
def CW_CELL_CHECKS(inputs: Any) -> Any:
    return review_design(spec_from_values(_table(inputs))).summary()


_PRESET_FIELDS = tuple(dict.fromkeys(k for p in PRESETS.values() for k in p))


@sheet_function(
    "CW_FORMAT_PRESET",
    "A preset dimension of a format (mm; cores: a count), e.g. the can wall of the 21 mm "
    "cylinder class; common practice or from memory, never a product's drawing.",
    [
        Text("dimension", 'e.g. "wall_mm", "cell_diameter_mm", "headspace_mm", "core_mm"'),
        Text("cell_format", "pouch, cylindrical or prismatic"),
        Text("cylinder_class", "18 mm, 21 mm or 46 mm (cylinders)", default="21 mm"),
    ],
    section=Section.SIZING,
    returns="mm",
    example=("wall_mm", "cylindrical", "18 mm"),
)
def CW_FORMAT_PRESET(dimension: str, cell_format: str, cylinder_class: str) -> Any:
    fmt = Options(FORMATS).check("cell_format", cell_format)
    cls = Options(CYLINDER_CLASSES).check("cylinder_class", cylinder_class)
    key = preset_key(fmt, cls)
    prop = lookup(dimension, _PRESET_FIELDS, "preset dimension", "dimension")
    if prop not in PRESETS[key]:
        raise InputError("dimension", dimension,
                         detail=f"a {key} cell has no preset {prop} "
                         f"(it has {', '.join(PRESETS[key])})")
    return PRESETS[key][prop].value


def _roll_checks(thickness: Any, core_mm: Any, width_mm: Any) -> None:
    bad = np.asarray(thickness) <= np.asarray(core_mm)
    if np.any(bad):
        raise DomainError("core_mm", float(np.broadcast_to(core_mm, bad.shape)[bad].flat[0]),
                          "< the roll's thickness")
    narrow = (np.asarray(width_mm) > 0) & (np.asarray(width_mm) < np.asarray(thickness))
    if np.any(narrow):
        raise DomainError("width_mm", float(np.broadcast_to(width_mm, narrow.shape)[narrow]
                                            .flat[0]),
                          ">= the roll's thickness (a flat roll), or 0 for a round roll")


#: the roll arguments CW_WOUND_LENGTH and CW_WOUND_THICKNESS share
_ROLL_ARGS = (
    Num("core_mm", "core hole diameter or flat mandrel thickness, mm", NONNEGATIVE),
    Num("pitch_um", "repeat unit: cathode + anode + 2 separators, um", POSITIVE),
    Num("width_mm", "flat roll's outer width, mm (0: a round roll)", NONNEGATIVE,
        default=0.0),
)


@sheet_function(
    "CW_WOUND_LENGTH",
    "Strip length (mm) a wound roll holds: an Archimedean spiral of the repeat unit from the "
    "core to the roll's thickness (a round roll's diameter), racetrack-shaped if width_mm > 0.",
    [
        Num("thickness_mm", "roll thickness, or a round roll's diameter, mm", POSITIVE),
        *_ROLL_ARGS,
    ],
    section=Section.SIZING,
    returns="mm",
    example=(17.8, 2.0, 345.0),
)
def CW_WOUND_LENGTH(thickness_mm: Any, core_mm: Any, pitch_um: Any, width_mm: Any) -> Any:
    _roll_checks(thickness_mm, core_mm, width_mm)
    flat = np.asarray(width_mm) > 0
    round_ = wound_length(thickness_mm, core_mm, pitch_um)
    if not np.any(flat):
        return round_
    return np.where(flat, wound_length(thickness_mm, core_mm, pitch_um,
                                       np.where(flat, width_mm, thickness_mm)), round_)


@sheet_function(
    "CW_WOUND_THICKNESS",
    "Roll thickness (mm; a round roll's diameter) that holds a strip length: the inverse of "
    "CW_WOUND_LENGTH.",
    [
        Num("length_mm", "strip length of the repeat unit, mm", POSITIVE),
        *_ROLL_ARGS,
    ],
    section=Section.SIZING,
    returns="mm",
    example=(716.2, 2.0, 345.0),
)
def CW_WOUND_THICKNESS(length_mm: Any, core_mm: Any, pitch_um: Any, width_mm: Any) -> Any:
    flat = np.asarray(width_mm) > 0
    out = wound_thickness(length_mm, core_mm, pitch_um)
    if np.any(flat):
        w = np.where(flat, width_mm, np.inf)
        out = np.where(flat, wound_thickness(length_mm, core_mm, pitch_um, w), out)
    bad = ~np.isfinite(out)
    if np.any(bad):
        raise DomainError("length_mm", float(np.broadcast_to(length_mm, bad.shape)[bad].flat[0]),
                          detail="does not fit a flat roll of this width (give a wider roll)")
    return out


@sheet_function(
    "CW_PACK_SERIES",
    "Cells in series: the most whose upper limits stay within the pack's highest voltage, "
    "provided their lower limits stay above its lowest.",
    [
        Num("pack_V_min", "lowest pack voltage the load accepts, V", POSITIVE),
        Num("pack_V_max", "highest pack voltage the load accepts, V", POSITIVE),
        Num("cell_V_min", "cell's lower voltage limit, V", POSITIVE),
        Num("cell_V_max", "cell's upper voltage limit, V", POSITIVE),
    ],
    section=Section.SIZING,
    returns="cells",
    example=(200, 450, 2.5, 4.2),
)
def CW_PACK_SERIES(pack_V_min: Any, pack_V_max: Any, cell_V_min: Any, cell_V_max: Any) -> Any:
    return series_count(pack_V_min, pack_V_max, cell_V_min, cell_V_max)


@sheet_function(
    "CW_PACK_DESIGN",
    "One number of the pack (output, e.g. pack_specific_energy_Wh_kg) of the cell the inputs "
    "describe, with up to two inputs of the cell or the pack varied over ranges.",
    [
        Text("output", 'e.g. "series", "pack_energy_kWh", "pack_cost_per_kWh_USD"'),
        Table("inputs", "two columns: input names (in_..., in_pack_...) and their values"),
        *_varied_args('"in_pack_energy" or "in_np_ratio"'),
    ],
    section=Section.SIZING,
    returns="the output's unit",
    example=("series", [["in_cathode", "NMC811"], ["in_anode", "graphite"]]),
)
def CW_PACK_DESIGN(
    output: str, inputs: Any, input_1: str, values_1: Any, input_2: str, values_2: Any
) -> Any:
    name = lookup(output, PACK_OUTPUTS, "output of the pack", "output")
    spec, pack = _varied(inputs, input_1, values_1, input_2, values_2)
    return getattr(size_pack(design_cell(spec), pack), name)


@sheet_function(
    "CW_PACK_HIGH_VOLTAGE",
    "1 where the pack's highest voltage exceeds 60 V DC (hazardous voltage: show the caution "
    "and follow the standards for such batteries), else 0.",
    [Num("pack_V_max", "highest pack voltage, V", POSITIVE)],
    section=Section.SIZING,
    returns="1 or 0",
    example=(400,),
)
def CW_PACK_HIGH_VOLTAGE(pack_V_max: Any) -> Any:
    return np.where(np.asarray(pack_V_max) > HIGH_VOLTAGE_DC_V, 1.0, 0.0)
