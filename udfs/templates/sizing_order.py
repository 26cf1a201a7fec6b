"""The Procurement and What-if sheets of the cell-sizing workbook.

Procurement repeats ``udfs.core.procurement.order_materials`` in native
formulas (element mass fractions through ``CW_MASS_FRACTION``, lithium as LCE
through ``CW_LCE``). What-if fills two grids, each from a single array formula
of ``CW_CELL_DESIGN``: the Python sizing model itself, run on the inputs listed
below the grids with a row of cathode loadings against a column of N/P ratios.
"""

from __future__ import annotations

import dataclasses

from openpyxl.chart import Reference
from openpyxl.styles import Border, Side
from openpyxl.utils import get_column_letter
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.formula import ArrayFormula
from openpyxl.worksheet.worksheet import Worksheet

from ..core.inputs import Input
from ..core.sizing_table import CELL_SIZING, COMPONENTS
from ..core.sizing_values import SPEC_INPUTS
from .input_rules import unit_formula
from .layout import (
    PALETTE,
    Columns,
    Name,
    SheetWriter,
    add_colour_scale,
    add_name,
    bar_chart,
    finish_sheet,
    heading,
    style,
    validate,
)
from .notes import CAUTION
from .sizing_lists import ELEMENTS
from .sizing_sheets import BOM_COLUMNS, Bom, ceil_formula

__all__ = ["GRIDS", "LOADING_AXIS", "NP_AXIS", "build_procurement", "build_whatif"]

#: Default what-if axes: cathode loading (mg/cm2 per side) across, N/P ratio down.
LOADING_AXIS: tuple[float, ...] = (12.0, 14.0, 16.0, 18.0, 20.0, 22.0, 24.0, 26.0, 28.0)
NP_AXIS: tuple[float, ...] = (1.02, 1.06, 1.10, 1.14, 1.18, 1.22, 1.26, 1.30)
#: The fields the axes vary (CellSpec fields, see udfs.core.sizing_table).
ACROSS, DOWN = "cathode_loading_mg_cm2", "np_ratio"
#: The grids: title, defined name, CW_CELL_DESIGN output, number format.
GRIDS: tuple[tuple[str, str, str, str], ...] = (
    ("Cost per kWh (USD/kWh)", "wi_cost_per_kWh", "cost_per_kWh_USD", "#,##0.0"),
    ("Specific energy (Wh/kg)", "wi_Wh_kg", "specific_energy_Wh_kg", "0.0"),
)

OUT_ENERGY = Name("out_energy_Wh")
OUT_COST_PER_CELL = Name("out_cost_per_cell_USD")


def build_procurement(wb: Workbook, bom: Bom) -> Worksheet:
    """Order -> cells -> materials to buy (kg, t, m2) -> contained metals and LCE."""
    ws = wb.create_sheet("Procurement")
    w = SheetWriter(
        wb, ws, Columns(label="B", value="C", unit="D", note="E"),
        {"A": 2.5, "B": 28.0, "C": 24.0, "D": 18.0, "E": 12.0, "F": 12.0, "G": 11.0,
         "H": 13.0, "I": 12.0, "J": 10.0, "K": 10.0},
    )
    w.title(
        "Procurement",
        "Materials to buy for an order of good cells, with electrode scrap and cell yield, "
        "and the metals they contain. The order is set on the Inputs sheet.",
    )
    w.caution(CAUTION, span=9, height=30.0)
    w.section("Order")
    w.value("Order given as", "=in_order_basis", "", "Inputs")
    w.value("Order size", "=in_order_size", unit_formula(CELL_SIZING.get("in_order_size")),
            "Inputs", number_format="#,##0.0")
    x = f"in_order_size*1000000/{OUT_ENERGY}"
    cells = w.value(
        "Good cells to deliver",
        f'=IF(in_order_basis="cells",IF(in_order_size=ROUND(in_order_size,0),in_order_size,NA()),'
        f"{ceil_formula(x)})",
        "cells", "MWh x 1e6 / cell Wh, rounded up; or the number of cells ordered",
        "result", "#,##0", name="out_order_cells",
    )
    w.value("Cells to build", f"={cells}/in_yield", "cells", "good cells / cell yield",
            number_format="#,##0.0")
    mwh = w.value("Energy delivered", f"={cells}*{OUT_ENERGY}/1000000", "MWh",
                  "cells x cell Wh / 1e6", "result", "#,##0.000", name="out_order_MWh")
    w.value("Materials cost of the order", f"={cells}*{OUT_COST_PER_CELL}", "USD",
            "cells x cost per good cell", "result", "#,##0", name="out_materials_cost_USD")

    # ---- materials to buy
    w.section("Materials to buy")
    w.band(["Component", "Material", "Mass per cell", "Scrap applies", "To buy", "To buy",
            "Sheet area to buy", "Cost"])
    for k, unit in enumerate(("", "", "g", "", "kg", "t", "m2", "USD")):
        style(ws.cell(w.row, 2 + k, unit), "unit")
    w.row += 1
    first = w.row
    col = BOM_COLUMNS
    for i, comp in enumerate(COMPONENTS):
        row = first + i
        style(ws[f"B{row}"], "text").value = comp.label
        style(ws[f"C{row}"], "calc").value = f"={bom.cell(comp, col['material'])}"
        style(ws[f"D{row}"], "calc", "#,##0.00").value = f"={bom.cell(comp, col['mass'])}"
        style(ws[f"E{row}"], "calc").value = f"={bom.cell(comp, col['scrap'])}"
        factor = f'({cells}/in_yield/IF(E{row}="yes",1-in_scrap,1))'
        style(ws[f"F{row}"], "calc", "#,##0.0").value = f"=D{row}/1000*{factor}"
        style(ws[f"G{row}"], "calc", "#,##0.000").value = f"=F{row}/1000"
        style(ws[f"H{row}"], "calc", "#,##0")
        if comp.sheet or comp.key == "housing":  # foils, separator; a pouch's laminate
            area = bom.cell(comp, col["area"])
            ws[f"H{row}"] = f'=IF({area}="","",{area}*{factor})'
        style(ws[f"I{row}"], "calc", "#,##0").value = f"={cells}*{bom.cell(comp, col['cost'])}"
    last = first + len(COMPONENTS) - 1
    total = last + 1
    style(ws[f"B{total}"], "result").value = "Total"
    for c, fmt in (("F", "#,##0.0"), ("G", "#,##0.000"), ("I", "#,##0")):
        style(ws[f"{c}{total}"], "result", fmt).value = f"=SUM({c}{first}:{c}{last})"
    w.row = total + 1

    # ---- element mass fractions
    w.section("Element mass fractions of each component")
    w.band(["Component", "Material", "Formula", *ELEMENTS])
    for k in range(3 + len(ELEMENTS)):
        style(ws.cell(w.row, 2 + k, "" if k < 3 else "g/g"), "unit")
    w.row += 1
    f_first = w.row
    header_row = f_first - 2
    for i, comp in enumerate(COMPONENTS):
        row = f_first + i
        style(ws[f"B{row}"], "text").value = comp.label
        style(ws[f"C{row}"], "calc").value = f"=C{first + i}"
        style(ws[f"D{row}"], "lookup").value = (
            f'=IF(C{row}="(none)","(none)",IF(INDEX(list_has_formula,MATCH(C{row},'
            f'list_material,0))="yes",CW_MATERIAL(C{row},"formula"),"(none)"))'
        )
        for j, _el in enumerate(ELEMENTS):
            c = get_column_letter(5 + j)
            style(ws[f"{c}{row}"], "lookup", "0.0000").value = (
                f'=IF(C{row}="(none)",0,IF($D{row}<>"(none)",CW_MASS_FRACTION($D{row},'
                f"{c}${header_row}),INDEX(list_fractions,MATCH($C{row},list_material,0),"
                f"{j + 1})))"
            )
    f_last = f_first + len(COMPONENTS) - 1
    w.row = f_last + 1
    w.text("Materials with a formula: CW_MASS_FRACTION of the catalogue formula. Foils, tabs "
           "and aluminium cans count as the pure metal; the electrolyte by its salt. Materials "
           "of varying make-up (CMC, SBR, pouch laminate, plated steel) add nothing.",
           kind="hint", span=9)

    # ---- contained metals
    w.section("Contained metals in the materials to buy")
    w.band(["Element", "Mass", "Mass", "How it is found"])
    style(ws[f"C{w.row}"], "unit").value = "kg"
    style(ws[f"D{w.row}"], "unit").value = "t"
    w.row += 1
    m_first = w.row
    for j, el in enumerate(ELEMENTS):
        c = get_column_letter(5 + j)
        row = w.row
        style(ws[f"B{row}"], "text").value = el
        style(ws[f"C{row}"], "result", "#,##0.0").value = (
            f"=SUMPRODUCT(F{first}:F{last},{c}{f_first}:{c}{f_last})"
        )
        style(ws[f"D{row}"], "calc", "#,##0.000").value = f"=C{row}/1000"
        style(ws[f"E{row}"], "hint").value = "kg to buy x fraction"
        add_name(wb, f"out_{el}_kg", ws, f"$C${row}")
        w.row += 1
    li_row = m_first
    row = w.row
    style(ws[f"B{row}"], "text").value = "LCE"
    style(ws[f"C{row}"], "result", "#,##0.0").value = f"=CW_LCE(C{li_row})"
    style(ws[f"D{row}"], "calc", "#,##0.000").value = f"=C{row}/1000"
    style(ws[f"E{row}"], "hint").value = "Li as Li2CO3, CW_LCE"
    add_name(wb, "out_LCE_kg", ws, f"$C${row}")
    w.row += 1
    style(ws[f"B{w.row}"], "text").value = "LCE per kWh delivered"
    style(ws[f"C{w.row}"], "calc", "0.000").value = f"=C{row}/({mwh}*1000)"
    style(ws[f"D{w.row}"], "unit").value = "kg/kWh"
    w.row += 2

    heading(ws[f"G{m_first - 2}"], "Contained metals in the order, t")
    chart = bar_chart(
        False,
        Reference(ws, min_col=4, min_row=m_first, max_row=row),
        Reference(ws, min_col=2, min_row=m_first, max_row=row),
        "t", "#,##0", PALETTE["input_edge"], (7.5, 13.5),
    )
    ws.add_chart(chart, f"G{m_first - 1}")
    finish_sheet(ws, landscape=True, freeze="C4")
    return ws


# --------------------------------------------------------------------------- what-if


def _axis(name: str, field: str, label: str, hint: str) -> Input:
    """An axis of the grids: the input table's declaration of ``field`` (its
    domain) under the axis's own name and label, for its data validation."""
    inp = CELL_SIZING.get(field)
    return dataclasses.replace(inp, name=name, label=label, hint=hint, optional=False,
                               domain=CELL_SIZING.domain(field), chooser=None, choices=())


def _section_title(ws: Worksheet, row: int, text: str) -> None:
    cell = heading(ws[f"B{row}"], text)
    cell.border = Border(bottom=Side(style="medium", color=PALETTE["section_ink"]))


def build_whatif(wb: Workbook) -> Worksheet:
    """Cost per kWh and Wh/kg over cathode loading (across) and N/P ratio (down),
    each grid one array formula of ``CW_CELL_DESIGN`` over the model's inputs."""
    ws = wb.create_sheet("What-if")
    k, m = len(LOADING_AXIS), len(NP_AXIS)
    widths = {"A": 2.5, "B": 46.0, "C": 14.0}
    for j in range(1, k):
        widths[get_column_letter(3 + j)] = 10.0
    w = SheetWriter(wb, ws, Columns(label="B", value="C", unit="D", note="E"), widths)
    last_col = get_column_letter(2 + k)
    w.title(
        "What-if: cathode loading against N/P ratio (first-charge basis)",
        "Each grid is ONE array formula: CW_CELL_DESIGN runs the sizing model on the inputs "
        "listed below, with the row of loadings against the column of N/P ratios (first-charge "
        "basis). Edit the green axis values.",
    )
    w.caution(CAUTION, span=k + 1, height=30.0)
    w.skip()

    # ---- the loading axis
    axis = w.row
    style(ws[f"B{axis}"], "band").value = "Cathode loading, mg/cm2 per side"
    for j, value in enumerate(LOADING_AXIS):
        style(ws.cell(axis, 3 + j, value), "input", "0.0")
    loads = f"$C${axis}:${last_col}${axis}"
    validate(ws, _axis("wi_loading", ACROSS, "Cathode loading (what-if axis)",
                       "Coating mass per area per side, mg/cm2."), loads.replace("$", ""))
    add_name(wb, "wi_loading", ws, loads)

    # ---- rows of the grids, the N/P axis down the first grid
    heads = [axis + 3 + g * (m + 3) for g in range(len(GRIDS))]
    np_first, np_last = heads[0] + 1, heads[0] + m
    nps = f"$B${np_first}:$B${np_last}"
    inputs_first = heads[-1] + m + 6
    inputs_last = inputs_first + len(SPEC_INPUTS) - 1
    inputs = f"$B${inputs_first}:$C${inputs_last}"
    for (title, name, output, fmt), head in zip(GRIDS, heads, strict=True):
        _section_title(ws, head - 1, title)
        style(ws[f"B{head}"], "band").value = "N/P (first-charge basis)  /  loading"
        for j in range(k):
            c = get_column_letter(3 + j)
            style(ws[f"{c}{head}"], "band", "0.0").value = f"={c}{axis}"
        for i, value in enumerate(NP_AXIS):
            cell = ws[f"B{head + 1 + i}"]
            if head == heads[0]:
                style(cell, "input", "0.00").value = value
            else:
                style(cell, "calc", "0.00").value = f"=B{np_first + i}"
            for j in range(k):
                style(ws.cell(head + 1 + i, 3 + j), "calc", fmt)
        area = f"C{head + 1}:{last_col}{head + m}"
        ws[f"C{head + 1}"] = ArrayFormula(
            area, f'=CW_CELL_DESIGN("{output}",{inputs},"{ACROSS}",{loads},"{DOWN}",{nps})'
        )
        add_colour_scale(ws, area, high_is_good=name == "wi_Wh_kg")
        add_name(wb, name, ws, f"$C${head + 1}:${last_col}${head + m}")
    validate(ws, _axis("wi_np_ratio", DOWN, "N/P ratio, first-charge basis (what-if axis)",
                       "Anode over cathode first-charge areal capacity."), nps.replace("$", ""))
    add_name(wb, "wi_np_ratio", ws, nps)

    # ---- the two routes at the current inputs
    w.row = heads[-1] + m + 1
    w.section("Check: the grids' model at the current inputs")
    check = w.value(
        "Cost per kWh from CW_CELL_DESIGN",
        f'=CW_CELL_DESIGN("cost_per_kWh_USD",{inputs})', "USD/kWh",
        "the Python model on the inputs below", "lookup", "#,##0.000",
    )
    w.value("Relative difference from the Bill of materials",
            f"=ABS({check.local}/out_cost_per_kWh_USD-1)", "",
            "below 1E-9 when the two routes agree", number_format="0.0E+00")

    # ---- the inputs the grids are computed from
    w.row = inputs_first - 2
    w.section("Inputs of the grids (from the Inputs sheet)")
    w.row = inputs_first
    for name in SPEC_INPUTS:
        inp = CELL_SIZING.get(name)
        style(ws[f"B{w.row}"], "text").value = name
        style(ws[f"C{w.row}"], "calc", inp.fmt).value = f'=IF(ISBLANK({name}),"",{name})'
        style(ws[f"D{w.row}"], "hint").value = inp.label
        w.row += 1
    assert w.row == inputs_last + 1
    add_name(wb, "wi_inputs", ws, inputs)
    finish_sheet(ws, landscape=True)
    return ws
