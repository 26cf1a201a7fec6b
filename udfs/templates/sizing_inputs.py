"""The Inputs sheet of the cell-sizing workbook: one row per input of
:data:`udfs.core.sizing_table.CELL_SIZING`, and beside each input what the
model makes of it.

Columns: B label, C the input (green), D unit (for a material: the catalogue's
own name, ``mat_...``), E hint, F check (``ok`` or what the input allows), G
**in use**: the value the model uses (``use_...``): your input, else the
catalogue's value, the chemistry's recipe or the format's preset, read with
``CW_MATERIAL`` and ``CW_FORMAT_PRESET``; or ``not used: ...`` where the chosen
format, sizing mode or pack structure does not read the input (the row is then
greyed by conditional formatting). H (hidden) repeats a refused input's name
and reason for the error check ``err_inputs``.

Which dimensions a format reads in a mode is not written here: it is derived
from :func:`udfs.core.cell_formats.used_fields` and ``computed_fields``, the
same functions the core sizes with.

>>> applies_formula("cell_diameter_mm")
'in_format="cylindrical"'
>>> applies_formula("cell_thickness_mm")
'OR(AND(in_format="pouch",in_sizing_mode="envelope"),AND(in_format="prismatic",in_sizing_mode="envelope"))'
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

from openpyxl.formatting.rule import FormulaRule
from openpyxl.styles import Font, PatternFill
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from ..core.cell_formats import (
    CORE_TYPES,
    FORMATS,
    GEOMETRY_FIELDS,
    MODES,
    computed_fields,
    used_fields,
)
from ..core.inputs import Input
from ..core.sizing import HOUSINGS
from ..core.sizing_table import CELL_SIZING, COMPONENTS, PACK_LINES, Component
from ..core.validate import FreeText, Names
from .input_rules import check_formula, excel_test, must
from .layout import Columns, Ref, SheetWriter, add_name, style, validate
from .notes import CAUTION, legend
from .sizing_sheets import resolved_name

__all__ = [
    "CHECK",
    "GREY",
    "IN_USE",
    "InputsSheet",
    "applies_formula",
    "build_inputs",
    "in_use_name",
    "lit",
]

CHECK = "F"  # the check cell of each input row
IN_USE = "G"  # the value in use (use_...)
PROBLEM = "H"  # hidden: "name: reason; " of a refused input, for err_inputs
#: What a not-used row's In use cell starts with (the conditional formatting greys it).
NOT_USED = "not used"
GREY = "8A969B"
_SCENARIO = "Scenario"
_PRICES = CELL_SIZING.get(COMPONENTS[0].price).section

#: Electrolytes and anode tabs the core picks when they are blank (udfs.core.sizing).
SODIUM_ELECTROLYTE = "NaPF6 1M in EC:DMC"
LITHIUM_ELECTROLYTE = "LiPF6 1M in EC:DMC"
SODIUM_REFERENCE = "Na/Na+"


def lit(text: str) -> str:
    """``text`` as a formula's text literal.

    >>> print(lit('a "b" c'))
    "a ""b"" c"
    """
    return '"' + text.replace('"', '""') + '"'


def in_use_name(input_name: str) -> str:
    """The defined name of the cell that holds the value in use of an input.

    >>> in_use_name("in_cathode_first_charge")
    'use_cathode_first_charge'
    """
    return "use_" + input_name.removeprefix("in_")


# --------------------------------------------------------------------------- which inputs apply


def _combos() -> list[tuple[str, str, str]]:
    out = []
    for fmt in FORMATS:
        for mode in MODES:
            for core in CORE_TYPES if fmt == "prismatic" else (CORE_TYPES[0],):
                out.append((fmt, mode, core))
    return out


def _used(name: str, fmt: str, mode: str, core: str) -> bool:
    return name in used_fields(fmt, mode, core) or (name == "cores" and fmt == "prismatic")


def _or(terms: list[str]) -> str:
    return terms[0] if len(terms) == 1 else "OR(" + ",".join(terms) + ")"


def _and(terms: list[str]) -> str:
    return terms[0] if len(terms) == 1 else "AND(" + ",".join(terms) + ")"


def _condition(pred: Callable[[str, str, str], bool]) -> str:
    """A native boolean: TRUE for the (format, mode, prismatic core) where ``pred`` holds."""
    terms: list[str] = []
    for fmt in FORMATS:
        cores = CORE_TYPES if fmt == "prismatic" else (CORE_TYPES[0],)
        hits = [(m, c) for m in MODES for c in cores if pred(fmt, m, c)]
        if not hits:
            continue
        f = f'in_format="{fmt}"'
        modes = sorted({m for m, _ in hits}, key=MODES.index)
        kinds = sorted({c for _, c in hits}, key=CORE_TYPES.index)
        if len(hits) == len(modes) * len(kinds):  # a product of modes and cores
            parts = [f]
            if len(modes) < len(MODES):
                parts.append(_or([f'in_sizing_mode="{m}"' for m in modes]))
            if len(kinds) < len(cores):
                parts.append(_or([f'in_prismatic_core="{c}"' for c in kinds]))
            terms.append(_and(parts))
        else:
            terms.extend(_and([f, f'in_sizing_mode="{m}"', f'in_prismatic_core="{c}"'])
                         for m, c in hits)
    return _or(terms) if terms else "FALSE"


def applies_formula(geometry_field: str) -> str:
    """Where the format and mode read a dimension (``udfs.core.cell_formats.used_fields``)."""
    return _condition(lambda f, m, c: _used(geometry_field, f, m, c))


def computed_formula(geometry_field: str) -> str:
    """Where the mode computes a dimension (``computed_fields``): it must be left blank."""
    return _condition(lambda f, m, c: geometry_field in computed_fields(f, m))


@dataclass(frozen=True)
class _Row:
    """What the builder writes beside one input: the In use formula (None:
    nothing to show), the condition under which the input is read (None:
    always), the note when it is not, and a misuse test (given where the core
    refuses it) with its message formula."""

    in_use: str | None = None
    applies: str | None = None
    not_used: str = ""
    misuse: str | None = None
    misuse_text: str = ""
    catalogue: bool = False  # an error here means the catalogue lacks a value the model needs


def _preset(fld: str) -> str:
    call = f'CW_FORMAT_PRESET("{fld}",in_format,in_cylinder_class)'
    if fld == "wall_mm":  # a pouch's wall is its laminate's catalogue thickness
        housing = in_use_name("in_housing")
        return f'IF(in_format="pouch",CW_MATERIAL({housing},"thickness")/1000,{call})'
    return call


def _geometry_row(inp: Input) -> _Row:
    fld = inp.field
    assert fld is not None
    used = applies_formula(fld)
    computed = computed_formula(fld)
    in_use = f"IF(ISBLANK({inp.name}),{_preset(fld)},{inp.name})"
    note = (f'IF({computed},"{NOT_USED}: the "&in_sizing_mode&" mode computes it (Format sheet)",'
            f'"{NOT_USED} by a "&in_format&" cell in "&in_sizing_mode&" mode")')
    misuse_text = (f'IF({computed},"leave blank: the "&in_sizing_mode&" mode computes it for a "'
                   f'&in_format&" cell","leave blank: a "&in_format&" cell in "&in_sizing_mode'
                   f'&" mode does not use it")')
    if fld.startswith("tab_") and fld != "tab_lane_mm":  # unread when the tab mass is given
        note = f'IF(ISBLANK(in_tab_mass),{note},"{NOT_USED}: the tab mass is given")'
        return _Row(in_use, f"AND({used},ISBLANK(in_tab_mass))", note, f"NOT({used})",
                    misuse_text, True)
    return _Row(in_use, used, note, f"NOT({used})", misuse_text, True)


def _recipe(side: str, prop: str, name: str) -> _Row:
    return _Row(f'IF(ISBLANK({name}),CW_MATERIAL(mat_{side},"electrode_{prop}"),{name})',
                catalogue=True)


def _has_first_charge(side: str) -> str:
    """The catalogue has first-charge data (a cycling record) for the material."""
    return f'ISNUMBER(IFERROR(CW_MATERIAL(mat_{side},"first_charge_capacity"),""))'


def _window(bound: str) -> str:
    """The couple's window: cathode min - anode max, or cathode max - anode min."""
    c, a = ("voltage_min", "voltage_max") if bound == "min" else ("voltage_max", "voltage_min")
    same = ('IFERROR(CW_MATERIAL(mat_cathode,"voltage_reference"),"c")='
            'IFERROR(CW_MATERIAL(mat_anode,"voltage_reference"),"a")')
    return (f'IF(AND({_has_first_charge("cathode")},{_has_first_charge("anode")},{same}),'
            f'CW_MATERIAL(mat_cathode,"{c}")-CW_MATERIAL(mat_anode,"{a}"),'
            '"none: the catalogue has no window for this couple")')


def _rows() -> dict[str, _Row]:
    """The In use formula and applicability of every input that has one."""
    rows: dict[str, _Row] = {}
    for side in ("cathode", "anode"):
        rows[f"in_{side}_first_charge"] = _Row(
            f"IF(ISBLANK(in_{side}_first_charge),IF({_has_first_charge(side)},"
            f'CW_MATERIAL(mat_{side},"first_charge_capacity"),'
            f'CW_MATERIAL(mat_{side},"practical_capacity")),in_{side}_first_charge)',
            catalogue=True)
        rows[f"in_{side}_fce"] = _Row(
            f"IF(ISBLANK(in_{side}_fce),IF({_has_first_charge(side)},"
            f'CW_MATERIAL(mat_{side},"first_cycle_efficiency"),1),in_{side}_fce)', catalogue=True)
        rows[f"in_{side}_active"] = _recipe(side, "active_fraction", f"in_{side}_active")
        rows[f"in_{side}_binder_fraction"] = _recipe(side, "binder_fraction",
                                                     f"in_{side}_binder_fraction")
        rows[f"in_{side}_porosity"] = _recipe(side, "porosity", f"in_{side}_porosity")
        rows[f"in_{side}_binder"] = _Row(
            f'IF(ISBLANK(in_{side}_binder),CW_MATERIAL(mat_{side},"electrode_binder"),'
            f"mat_{side}_binder)", catalogue=True)
        for extra in (f"in_{side}_binder2", f"in_{side}_binder2_share"):
            rows[extra] = _Row(None, f"NOT(ISBLANK(in_{side}_binder))",
                               f'"{NOT_USED}: the recipe\'s binders (main binder blank)"')
        rows[f"in_{side}_carbon"] = _Row(
            f'IF(ISBLANK(in_{side}_carbon),CW_MATERIAL(mat_{side},"electrode_carbon"),'
            f"mat_{side}_carbon)", catalogue=True)
        rows[f"in_{side}_foil"] = _Row(
            f'IF(ISBLANK(in_{side}_foil),CW_MATERIAL(mat_{side},"electrode_foil"),mat_{side}_foil)',
            catalogue=True)
        rows[f"in_{side}_foil_um"] = _Row(
            f'IF(ISBLANK(in_{side}_foil_um),CW_MATERIAL({in_use_name(f"in_{side}_foil")},'
            f'"thickness"),in_{side}_foil_um)', catalogue=True)
        for what in ("loading", "thickness"):
            for end in ("min", "max"):
                name = f"in_rule_{side}_{what}_{end}"
                rows[name] = _Row(
                    f'IF(ISBLANK({name}),IFERROR(CW_MATERIAL(mat_{side},"electrode_{what}_{end}"),'
                    f'"none: no usual range in the catalogue"),{name})')
    rows["in_voltage"] = _Row(
        'IF(ISBLANK(in_voltage),IF(CW_MATERIAL(mat_cathode,"voltage_reference")='
        'CW_MATERIAL(mat_anode,"voltage_reference"),IF(CW_MATERIAL(mat_cathode,"average_voltage")'
        '-CW_MATERIAL(mat_anode,"average_voltage")>0,CW_MATERIAL(mat_cathode,"average_voltage")'
        '-CW_MATERIAL(mat_anode,"average_voltage"),NA()),NA()),in_voltage)')
    rows["in_voltage_min"] = _Row(f"IF(ISBLANK(in_voltage_min),{_window('min')},in_voltage_min)")
    rows["in_voltage_max"] = _Row(f"IF(ISBLANK(in_voltage_max),{_window('max')},in_voltage_max)")
    target = 'in_sizing_mode="target"'
    envelope = f'"{NOT_USED}: the envelope mode sizes from the outer dimensions"'
    rows["in_target_basis"] = _Row(None, target, envelope)
    rows["in_target"] = _Row(None, target, envelope)
    rows["in_separator_um"] = _Row(
        'IF(ISBLANK(in_separator_um),CW_MATERIAL(mat_separator,"thickness"),in_separator_um)',
        catalogue=True)
    rows["in_separator_porosity"] = _Row(
        'IF(ISBLANK(in_separator_porosity),CW_MATERIAL(mat_separator,"porosity"),'
        "in_separator_porosity)", catalogue=True)
    sodium = (f'AND({_has_first_charge("cathode")},IFERROR(CW_MATERIAL(mat_cathode,'
              f'"voltage_reference"),"")="{SODIUM_REFERENCE}")')
    rows["in_electrolyte"] = _Row(
        f'IF(ISBLANK(in_electrolyte),IF({sodium},"{SODIUM_ELECTROLYTE}","{LITHIUM_ELECTROLYTE}"),'
        "mat_electrolyte)")
    rows["in_anode_tab"] = _Row(
        f'IF(ISBLANK(in_anode_tab),IF({in_use_name("in_anode_foil")}="copper foil","nickel tab",'
        '"aluminium tab"),mat_anode_tab)')
    by_format = lit(HOUSINGS[FORMATS[-1]])
    for fmt in reversed(FORMATS[:-1]):
        by_format = f'IF(in_format="{fmt}",{lit(HOUSINGS[fmt])},{by_format})'
    rows["in_housing"] = _Row(f"IF(ISBLANK(in_housing),{by_format},mat_housing)")
    rows["in_tab_mass"] = _Row('IF(ISBLANK(in_tab_mass),"blank: from the tab size",in_tab_mass)')
    rows["in_housing_mass"] = _Row(
        'IF(ISBLANK(in_housing_mass),"blank: from the housing size",in_housing_mass)')
    for fld in (*GEOMETRY_FIELDS, "cores"):
        rows[CELL_SIZING.get(fld).name] = _geometry_row(CELL_SIZING.get(fld))
    rows["in_cylinder_class"] = _Row(None, 'in_format="cylindrical"',
                                     f'"{NOT_USED}: cylinders only"')
    rows["in_prismatic_core"] = _Row(None, 'in_format="prismatic"',
                                     f'"{NOT_USED}: prismatic cans only"')
    fractions = 'in_pack_structure="fractions"'
    for name in ("in_pack_mass_fraction", "in_pack_volume_fraction", "in_pack_cost_fraction"):
        rows[name] = _Row(None, fractions, f'"{NOT_USED}: the pack is given by components"')
    components = 'in_pack_structure="components"'
    names = ["in_pack_cells_per_module"]
    for line in PACK_LINES:
        names += [f"in_pack_{line.key}_{x}" for x in ("mass", "volume", "cost")]
    for name in names:
        rows[name] = _Row(None, components, f'"{NOT_USED}: the pack is given by fractions"')
    unknown = set(rows) - set(CELL_SIZING.names)
    assert not unknown, unknown
    return rows


ROWS = _rows()


# --------------------------------------------------------------------------- the sheet


@dataclass
class InputsSheet:
    """The Inputs sheet being built: its writer (the Checks block is appended
    after the other sheets exist), the check cells and the In use cells whose
    errors mean the catalogue lacks a value."""

    writer: SheetWriter
    checks: list[Ref] = field(default_factory=list)
    problems: list[Ref] = field(default_factory=list)
    catalogue: list[tuple[str, Ref]] = field(default_factory=list)
    price_rows: list[tuple[int, Component]] = field(default_factory=list)
    summary_row: int = 0

    @property
    def ws(self) -> Worksheet:
        return self.writer.ws


def _resolve_formula(inp: Input) -> str:
    assert isinstance(inp.domain, Names)
    call = f'CW_MATERIAL_NAME({inp.name},"{inp.domain.roles[0]}")'
    return f'=IF(ISBLANK({inp.name}),"",{call})' if inp.optional else f"={call}"


def _check(inp: Input, resolved: str | None, row: _Row | None) -> str:
    base = check_formula(inp, inp.name, resolved)
    if row is None or row.misuse is None:
        return base
    return (f'=IF(NOT({excel_test(inp, inp.name, resolved)}),"{must(inp)}",'
            f'IF(AND(NOT(ISBLANK({inp.name})),{row.misuse}),{row.misuse_text},"ok"))')


def _in_use_cell(s: InputsSheet, inp: Input, r: int) -> None:
    row = ROWS.get(inp.name)
    if row is None:
        return
    value = row.in_use if row.in_use is not None else '""'
    formula = value if row.applies is None else f"IF({row.applies},{value},{row.not_used})"
    cell = s.ws[f"{IN_USE}{r}"]
    style(cell, "lookup" if row.in_use is not None else "hint", inp.fmt).value = "=" + formula
    if row.in_use is not None:
        add_name(s.writer.wb, in_use_name(inp.name), s.ws, f"${IN_USE}${r}")
        if row.catalogue:
            s.catalogue.append((inp.name, Ref(s.ws.title, IN_USE, r)))


def _problem(s: InputsSheet, name: str, r: int) -> None:
    cell = s.ws[f"{PROBLEM}{r}"]
    style(cell, "hint").value = f'=IF({CHECK}{r}="ok","",{lit(name + ": ")}&{CHECK}{r}&"; ")'
    s.problems.append(Ref(s.ws.title, PROBLEM, r))


def _input_row(s: InputsSheet, inp: Input) -> None:
    """One input, the catalogue name it resolves to (material inputs), its
    check, its value in use and whether it applies."""
    w = s.writer
    ref = w.input(inp)
    resolved = None
    if isinstance(inp.domain, Names):
        style(w.ws[ref.at("D").plain], "lookup").value = _resolve_formula(inp)
        resolved = resolved_name(inp.name)
        add_name(w.wb, resolved.name, w.ws, ref.at("D").local)
    style(w.ws[ref.at(CHECK).plain], "calc").value = _check(
        inp, None if resolved is None else str(resolved), ROWS.get(inp.name))
    s.checks.append(ref.at(CHECK))
    _problem(s, inp.name, ref.row)
    _in_use_cell(s, inp, ref.row)


def _price_rows(s: InputsSheet) -> None:
    """Price and unit per component (two inputs of the table on one row); the
    label shows the component and its material in use, the hint its demo price."""
    w, ws = s.writer, s.ws
    w.band(["Component and material", "Your price", "Unit", "Blank price: demo price list",
            "Check", "Material in use"])
    for comp in COMPONENTS:
        row = w.row
        style(ws[f"B{row}"], "text").value = comp.label
        price, unit = CELL_SIZING.get(comp.price), CELL_SIZING.get(comp.price_unit)
        for inp, col in ((price, "C"), (unit, "D")):
            style(ws[f"{col}{row}"], "input", inp.fmt)
            validate(ws, inp, f"{col}{row}")
            add_name(w.wb, inp.name, ws, f"${col}${row}")
        material = f"{IN_USE}{row}"
        style(ws[material], "lookup")  # the Bill of materials' row, once that sheet exists
        s.price_rows.append((row, comp))
        demo = f"MATCH({material},list_material,0)"
        style(ws[f"E{row}"], "hint").value = (
            f'=IF({material}="(none)","",IFERROR("demo "&INDEX(list_demo_price,{demo})&" "'
            f'&INDEX(list_demo_unit,{demo})&" (invented)","no demo price: give one"))'
        )
        style(ws[f"{CHECK}{row}"], "calc").value = (
            f'=IF(NOT({excel_test(price, price.name)}),"price {must(price)}",'
            f'IF(NOT({excel_test(unit, unit.name)}),"unit {must(unit)}","ok"))'
        )
        s.checks.append(Ref(ws.title, CHECK, row))
        _problem(s, f"{price.name} / {unit.name}", row)
        w.row += 1


def _grey_rows(ws: Worksheet, first: int, last: int) -> None:
    """Grey a row whose In use cell says the input is not used."""
    fill = PatternFill("solid", start_color="EEF0F1", end_color="EEF0F1")
    rule = FormulaRule(formula=[f'LEFT(${IN_USE}{first},{len(NOT_USED)})="{NOT_USED}"'],
                       font=Font(color=GREY, italic=True), fill=fill)
    ws.conditional_formatting.add(f"B{first}:{IN_USE}{last}", rule)


def build_inputs(wb: Workbook) -> InputsSheet:
    """The input rows (the Checks block follows once the other sheets exist)."""
    ws = wb.active
    ws.title = "Inputs"
    w = SheetWriter(wb, ws, Columns(label="B", value="C", unit="D", note="E"),
                    {"A": 2.5, "B": 44.0, "C": 22.0, "D": 20.0, "E": 62.0, CHECK: 30.0,
                     IN_USE: 30.0, PROBLEM: 4.0})
    ws.column_dimensions[PROBLEM].hidden = True
    w.title(
        "Cell sizing: inputs",
        "A pouch, cylindrical or prismatic cell from its materials and design numbers, and a "
        "pack of it. Work down this sheet; column G shows the value in use (yours, else the "
        "catalogue's, the recipe's or the preset); greyed rows are not used by the chosen "
        "format, mode or pack structure.",
    )
    w.caution(CAUTION, span=6, height=32.0)
    legend(w)
    w.skip()
    s = InputsSheet(w)
    w.input(CELL_SIZING.get("in_scenario"))
    ws.merge_cells(f"C{w.row - 1}:E{w.row - 1}")
    s.summary_row = w.row
    w.row += 1
    first = w.row
    for section, inputs in CELL_SIZING.sections():
        if section == _SCENARIO:
            continue
        w.section(section)
        style(ws[f"{CHECK}{w.row - 1}"], "unit").value = "Check"
        style(ws[f"{IN_USE}{w.row - 1}"], "unit").value = "In use"
        if section == _PRICES:
            _price_rows(s)
            continue
        for inp in inputs:
            if isinstance(inp.domain, FreeText):
                w.input(inp)
                continue
            _input_row(s, inp)
    _grey_rows(ws, first, w.row - 1)
    return s
