"""The Pack sheet of the cell-sizing workbook: :func:`udfs.core.pack.size_pack`
in native formulas.

Cells in series from the pack's voltage window and the cell's voltage limits
(the most whose upper limits stay within the pack's highest voltage, provided
their lower limits stay above its lowest), parallel strings from the energy
wanted, then the structure: cell-to-pack mass, volume and cost fractions, or
explicit component lines counted per cell, per module or per pack
(:data:`udfs.core.sizing_table.PACK_LINES`). Pack Wh/kg, Wh/L and cost per
kWh follow. Above 60 V DC (:data:`udfs.core.pack.HIGH_VOLTAGE_DC_V`, a native
test so that it needs no add-in; ``CW_PACK_HIGH_VOLTAGE`` beside it agrees) the
sheet shows the caution of :data:`udfs.core.pack.HIGH_VOLTAGE_CAUTION`.

>>> PACK_NAMES["out_pack_series"]
'series'
"""

from __future__ import annotations

from openpyxl.formatting.rule import FormulaRule
from openpyxl.styles import Alignment, Font, PatternFill
from openpyxl.workbook.workbook import Workbook

from ..core.pack import HIGH_VOLTAGE_CAUTION, HIGH_VOLTAGE_DC_V
from ..core.sizing_table import PACK_LINES
from .layout import PALETTE, Columns, Ref, SheetWriter, add_name, finish_sheet, style
from .notes import CAUTION
from .sizing_inputs import lit
from .sizing_sheets import CellCells, ElectrodeCells, ceil_formula, floor_formula

__all__ = ["PACK_NAMES", "build_pack"]

#: Defined name on the Pack sheet -> the udfs.core.pack.PackDesign number it equals.
PACK_NAMES: dict[str, str] = {
    "out_pack_series": "series",
    "out_pack_parallel": "parallel",
    "out_pack_cells": "cells",
    "out_pack_modules": "modules",
    "out_pack_voltage_nominal_V": "pack_voltage_nominal_V",
    "out_pack_voltage_min_V": "pack_voltage_min_V",
    "out_pack_voltage_max_V": "pack_voltage_max_V",
    "out_pack_capacity_Ah": "pack_capacity_Ah",
    "out_pack_energy_kWh": "pack_energy_kWh",
    "out_pack_cells_mass_kg": "cells_mass_kg",
    "out_pack_mass_kg": "pack_mass_kg",
    "out_pack_cells_volume_L": "cells_volume_L",
    "out_pack_volume_L": "pack_volume_L",
    "out_pack_cells_cost_USD": "cells_cost_USD",
    "out_pack_cost_USD": "pack_cost_USD",
    "out_pack_Wh_kg": "pack_specific_energy_Wh_kg",
    "out_pack_Wh_L": "pack_energy_density_Wh_L",
    "out_pack_cost_per_kWh_USD": "pack_cost_per_kWh_USD",
    "out_pack_above_60V_DC": "above_60V_DC",
}
FRACTIONS = 'in_pack_structure="fractions"'


def _value(w: SheetWriter, label: str, formula: str, unit: str, note: str, name: str,
           kind: str = "calc", fmt: str | None = None) -> Ref:
    return w.value(label, formula, unit, note, kind, fmt,  # type: ignore[arg-type]
                   name if name in PACK_NAMES else None)


def build_pack(wb: Workbook, e: ElectrodeCells, cell: CellCells) -> Ref:
    """The Pack sheet; returns its fit check cell ("ok" or why no pack can be built)."""
    ws = wb.create_sheet("Pack")
    w = SheetWriter(wb, ws, Columns(label="B", value="C", unit="D", note="E"),
                    {"A": 2.5, "B": 40.0, "C": 16.0, "D": 14.0, "E": 16.0, "F": 16.0,
                     "G": 16.0, "H": 40.0})
    w.title(
        "Pack: cells in series and parallel, structure, pack figures",
        "From the cell on the other sheets and the Pack inputs on the Inputs sheet. The structure "
        "is cell-to-pack fractions or explicit component lines (in_pack_structure).",
    )
    w.caution(CAUTION, span=7, height=30.0)
    hv = w.row
    ws.merge_cells(f"B{hv}:H{hv}")
    cell_hv = ws[f"B{hv}"]
    cell_hv.value = f'=IF(out_pack_above_60V_DC=1,{lit(HIGH_VOLTAGE_CAUTION)},"")'
    add_name(wb, "pack_caution", ws, f"$B${hv}")
    cell_hv.font = Font(color=PALETTE["caution_ink"], bold=True, size=11)
    cell_hv.alignment = Alignment(vertical="top", wrap_text=True)
    ws.row_dimensions[hv].height = 48.0
    coral = PatternFill("solid", start_color=PALETTE["caution_fill"],
                        end_color=PALETTE["caution_fill"])
    ws.conditional_formatting.add(f"B{hv}:H{hv}",
                                  FormulaRule(formula=[f'LEN($B${hv})>0'], fill=coral))
    w.row += 1

    # ---- series and parallel
    w.section("Cells in series and in parallel")
    v = _value(w, "Cell nominal voltage", f"={e.V}", "V", "Electrodes", "", "calc", "0.000")
    vmin = _value(w, "Cell voltage, lower limit", f"={e.V_min}", "V", "Electrodes (In use)", "",
                  "calc", "0.000")
    vmax = _value(w, "Cell voltage, upper limit", f"={e.V_max}", "V", "Electrodes (In use)", "",
                  "calc", "0.000")
    ah = _value(w, "Cell capacity", f"={cell.capacity}", "Ah", "Format", "", "calc", "0.000")
    x = _value(w, "Series cells, unrounded", f"=in_pack_voltage_max/{vmax}", "cells",
               "pack's highest voltage / cell's upper limit", "", "calc", "0.000")
    s = _value(w, "Cells in series, s", f"={floor_formula(str(x))}", "cells",
               "rounded down (within 1e-9 of a whole number counts as it)", "out_pack_series",
               "result", "0")
    w.value("The same from CW_PACK_SERIES",
            f"=CW_PACK_SERIES(in_pack_voltage_min,in_pack_voltage_max,{vmin},{vmax})", "cells",
            "the core's series count (a check of the line above)", "lookup", "0")
    wh = _value(w, "Cell energy", f"={v}*{ah}", "Wh", "nominal voltage x capacity", "", "calc",
                "0.00")
    y = _value(w, "Parallel strings, unrounded", f"=in_pack_energy*1000/({s}*{wh})", "strings",
               "energy wanted x 1000 / (s x cell Wh)", "", "calc", "0.000")
    p = _value(w, "Parallel strings, p", f"=MAX(1,{ceil_formula(str(y))})", "strings",
               "rounded up: the pack meets or exceeds the energy wanted", "out_pack_parallel",
               "result", "0")
    cells = _value(w, "Cells", f"={s}*{p}", "cells", "s x p", "out_pack_cells", "result",
                   "#,##0")
    modules = _value(w, "Modules", f"={ceil_formula(f'{cells}/in_pack_cells_per_module')}",
                     "modules", "cells / cells per module, rounded up", "out_pack_modules",
                     "calc", "0")
    _value(w, "Pack nominal voltage", f"={s}*{v}", "V", "s x cell nominal",
           "out_pack_voltage_nominal_V", "calc", "0.0")
    low = _value(w, "Pack lowest voltage", f"={s}*{vmin}", "V", "s x cell lower limit",
                 "out_pack_voltage_min_V", "calc", "0.0")
    high = _value(w, "Pack highest voltage", f"={s}*{vmax}", "V", "s x cell upper limit",
                  "out_pack_voltage_max_V", "result", "0.0")
    _value(w, f"Above {HIGH_VOLTAGE_DC_V:g} V DC", f"=IF({high}>{HIGH_VOLTAGE_DC_V:g},1,0)",
                  "1 = yes", "highest voltage above the limit (udfs.core.pack): the caution at "
                  "the top applies; native, so it works without the add-in",
                  "out_pack_above_60V_DC", "result", "0")
    w.value("The same from CW_PACK_HIGH_VOLTAGE", f"=CW_PACK_HIGH_VOLTAGE({high})", "1 = yes",
            "the core's flag (a check of the line above)", "lookup", "0")
    _value(w, "Pack capacity", f"={p}*{ah}", "Ah", "p x cell capacity", "out_pack_capacity_Ah",
           "calc", "#,##0.0")
    energy = _value(w, "Pack energy", f"={cells}*{wh}/1000", "kWh", "cells x cell Wh / 1000",
                    "out_pack_energy_kWh", "result", "#,##0.00")
    fit = w.value(
        "Fits?",
        f'=IF(NOT(AND(ISNUMBER({vmin}),ISNUMBER({vmax}))),"the cell has no voltage limits (the '
        'catalogue has no window for this couple): give in_voltage_min and in_voltage_max",'
        f'IF({vmin}>={vmax},"the cell\'s lower voltage limit "&ROUND({vmin},3)&" V must be '
        f'< its upper limit "&ROUND({vmax},3)&" V",'
        'IF(in_pack_voltage_min>=in_pack_voltage_max,"in_pack_voltage_min must be < '
        'in_pack_voltage_max",'
        f'IF({s}<1,"in_pack_voltage_max "&ROUND(in_pack_voltage_max,3)&" V must be >= one '
        f'cell\'s upper limit ("&ROUND({vmax},3)&" V)",'
        f'IF({low}<in_pack_voltage_min*(1-1E-12),"no whole number of cells in series fits the '
        f'window "&ROUND(in_pack_voltage_min,3)&"-"&ROUND(in_pack_voltage_max,3)&" V: "'
        f'&{s}&" cells of "&ROUND({vmin},3)&"-"&ROUND({vmax},3)&" V go down to "'
        f'&ROUND({low},3)&" V; widen the window or give the cell\'s voltage limits","ok")))))',
        "", "errors: err_pack", "calc")

    # ---- structure
    w.section("Structure")
    cells_mass = _value(w, "Cells' mass", f"={cells}*out_cell_mass_g/1000", "kg",
                        "cells x cell mass", "out_pack_cells_mass_kg", "calc", "#,##0.0")
    cells_cost = _value(w, "Cells' cost", f"={cells}*out_cost_per_cell_USD", "USD",
                        "cells x cost per good cell (materials)", "out_pack_cells_cost_USD",
                        "calc", "#,##0")
    cells_vol = _value(
        w, "Cells' volume",
        f"=IF({FRACTIONS},{cells}*{cell.geo['cell_volume_cm3']}/1000,"
        f"{cells}*{cell.geo['box_volume_cm3']}/1000)", "L",
        "fractions: cells x cell volume; components: cells x bounding box",
        "out_pack_cells_volume_L", "calc", "#,##0.0")

    # fractions
    w.skip()
    w.band(["Cell-to-pack fractions", "Value", "Unit", "How it is found"])
    frac_m = w.value("Pack mass (fractions)",
                     f'=IF({FRACTIONS},{cells_mass}/in_pack_mass_fraction,"")', "kg",
                     "cells' mass / mass fraction", number_format="#,##0.0")
    frac_v = w.value("Pack volume (fractions)",
                     f'=IF({FRACTIONS},{cells_vol}/in_pack_volume_fraction,"")', "L",
                     "cells' volume / volume fraction", number_format="#,##0.0")
    frac_c = w.value("Pack cost (fractions)",
                     f'=IF({FRACTIONS},{cells_cost}/in_pack_cost_fraction,"")', "USD",
                     "cells' cost / cost fraction", number_format="#,##0")

    # components
    w.skip()
    w.band(["Component line", "Counted per", "Count", "Mass", "Volume", "Cost", "Inputs"])
    for k, unit in enumerate(("", "", "", "kg", "L", "USD", "")):
        style(ws.cell(w.row, 2 + k, unit), "unit")
    w.row += 1
    count = {"cell": str(cells), "module": str(modules), "pack": "1"}
    first = w.row
    comp = 'in_pack_structure="components"'
    for line in PACK_LINES:
        r = w.row
        m_in, v_in, c_in = (f"in_pack_{line.key}_{x}" for x in ("mass", "volume", "cost"))
        style(ws[f"B{r}"], "text").value = line.label
        style(ws[f"C{r}"], "text").value = line.per
        style(ws[f"D{r}"], "calc", "#,##0").value = f'=IF({comp},{count[line.per]},"")'
        m = f"D{r}*{m_in}" + ("/1000" if line.mass_unit == "g" else "")
        vol = f"D{r}*{v_in}" + ("/1000" if line.volume_unit == "cm3" else "")
        style(ws[f"E{r}"], "calc", "#,##0.00").value = f'=IF({comp},{m},"")'
        style(ws[f"F{r}"], "calc", "#,##0.00").value = f'=IF({comp},{vol},"")'
        style(ws[f"G{r}"], "calc", "#,##0").value = f'=IF({comp},D{r}*{c_in},"")'
        style(ws[f"H{r}"], "hint").value = (
            f"{m_in} ({line.mass_unit}), {v_in} ({line.volume_unit}), {c_in} (USD)")
        w.row += 1
    last = w.row - 1

    def added(base: Ref, col: str) -> str:
        return "+".join([str(base), *(f"{col}{r}" for r in range(first, last + 1))])

    comp_m = w.value("Pack mass (components)", f'=IF({comp},{added(cells_mass, "E")},"")', "kg",
                     "cells' mass + the lines", number_format="#,##0.0")
    comp_v = w.value("Pack volume (components)", f'=IF({comp},{added(cells_vol, "F")},"")', "L",
                     "cells' bounding boxes + the lines", number_format="#,##0.0")
    comp_c = w.value("Pack cost (components)", f'=IF({comp},{added(cells_cost, "G")},"")', "USD",
                     "cells' cost + the lines", number_format="#,##0")

    # ---- the pack
    w.section("The pack")
    mass = _value(w, "Pack mass", f"=IF({FRACTIONS},{frac_m},{comp_m})", "kg",
                  "by the structure in use", "out_pack_mass_kg", "result", "#,##0.0")
    volume = _value(w, "Pack volume", f"=IF({FRACTIONS},{frac_v},{comp_v})", "L",
                    "by the structure in use", "out_pack_volume_L", "result", "#,##0.0")
    cost = _value(w, "Pack cost", f"=IF({FRACTIONS},{frac_c},{comp_c})", "USD",
                  "by the structure in use", "out_pack_cost_USD", "result", "#,##0")
    _value(w, "Pack specific energy", f"={energy}*1000/{mass}", "Wh/kg", "energy / mass",
           "out_pack_Wh_kg", "result", "0.0")
    _value(w, "Pack energy density", f"={energy}*1000/{volume}", "Wh/L", "energy / volume",
           "out_pack_Wh_L", "result", "0.0")
    _value(w, "Pack cost per kWh", f"={cost}/{energy}", "USD/kWh", "cost / energy",
           "out_pack_cost_per_kWh_USD", "result", "0.0")
    w.text("Cell costs are the Bill of materials' (materials only); the structure's masses, "
           "volumes and costs are inputs (from memory; costs invented demo data).", kind="hint",
           span=6)
    finish_sheet(ws, freeze="C4")
    return fit
