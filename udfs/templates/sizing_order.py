"""The Procurement and What-if sheets of the cell-sizing workbook.

Procurement repeats ``udfs.core.procurement.order_materials`` in native
formulas (element mass fractions through ``CW_MASS_FRACTION``, lithium as LCE
through ``CW_LCE``). What-if fills two grids, each from a single array formula
that broadcasts a row of cathode loadings against a column of N/P ratios.
"""

from __future__ import annotations

from openpyxl.chart import Reference
from openpyxl.styles import Border, Side
from openpyxl.utils import get_column_letter
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.formula import ArrayFormula
from openpyxl.worksheet.worksheet import Worksheet

from .layout import (
    PALETTE,
    Columns,
    Number,
    SheetWriter,
    add_colour_scale,
    add_name,
    bar_chart,
    finish_sheet,
    heading,
    quote,
    style,
    validation,
)
from .notes import CAUTION
from .sizing_inputs import COMPONENTS
from .sizing_lists import ELEMENTS
from .sizing_sheets import ceil_formula

__all__ = ["LOADING_AXIS", "NP_AXIS", "build_procurement", "build_whatif"]

#: Default what-if axes: cathode loading (mg/cm2 per side) across, N/P ratio down.
LOADING_AXIS: tuple[float, ...] = (12.0, 14.0, 16.0, 18.0, 20.0, 22.0, 24.0, 26.0, 28.0)
NP_AXIS: tuple[float, ...] = (1.02, 1.06, 1.10, 1.14, 1.18, 1.22, 1.26, 1.30)


def build_procurement(wb: Workbook, refs: dict[str, str]) -> Worksheet:
    """Order -> cells -> materials to buy (kg, t, m2) -> contained metals and LCE."""
    ws = wb.create_sheet("Procurement")
    w = SheetWriter(
        wb, ws, Columns(label="B", value="C", unit="D", note="E"),
        {"A": 2.5, "B": 28.0, "C": 24.0, "D": 18.0, "E": 12.0, "F": 12.0, "G": 11.0,
         "H": 13.0, "I": 12.0, "J": 10.0, "K": 10.0},
    )
    t = quote(ws.title)
    bom = quote("Bill of materials")
    w.title(
        "Procurement",
        "Materials to buy for an order of good cells, with electrode scrap and cell yield, "
        "and the metals they contain. The order is set on the Inputs sheet.",
    )
    w.caution(CAUTION, span=9, height=30.0)
    w.section("Order")
    w.value("Order given as", "=in_order_basis", "", "Inputs")
    w.value("Order size", "=in_order_size", '=IF(in_order_basis="cells","cells","MWh")',
            "Inputs", number_format="#,##0.0")
    x = f"in_order_size*1000000/{refs['out_energy_Wh']}"
    cells = w.value(
        "Good cells to deliver",
        f'=IF(in_order_basis="cells",IF(in_order_size=ROUND(in_order_size,0),in_order_size,NA()),'
        f"{ceil_formula(x)})",
        "cells", "MWh x 1e6 / cell Wh, rounded up; or the number of cells ordered",
        "result", "#,##0", name="out_order_cells",
    )
    cells = f"{t}!{cells}"
    w.value("Cells to build", f"={cells}/in_yield", "cells", "good cells / cell yield",
            number_format="#,##0.0")
    mwh = w.value("Energy delivered", f"={cells}*{refs['out_energy_Wh']}/1000000", "MWh",
                  "cells x cell Wh / 1e6", "result", "#,##0.000", name="out_order_MWh")
    w.value("Materials cost of the order", f"={cells}*{refs['out_cost_per_cell_USD']}", "USD",
            "cells x cost per good cell", "result", "#,##0", name="out_materials_cost_USD")

    # ---- materials to buy
    w.section("Materials to buy")
    w.band(["Component", "Material", "Mass per cell", "Scrap applies", "To buy", "To buy",
            "Sheet area to buy", "Cost"])
    for k, unit in enumerate(("", "", "g", "", "kg", "t", "m2", "USD")):
        style(ws.cell(w.row, 2 + k, unit), "unit")
    w.row += 1
    first = w.row
    for i, comp in enumerate(COMPONENTS):
        row, b = first + i, refs[f"bom.{comp.key}"]
        style(ws[f"B{row}"], "text").value = comp.label
        style(ws[f"C{row}"], "calc").value = f"={bom}!C{b}"
        style(ws[f"D{row}"], "calc", "#,##0.00").value = f"={bom}!D{b}"
        style(ws[f"E{row}"], "calc").value = f"={bom}!G{b}"
        factor = f'({cells}/in_yield/IF(E{row}="yes",1-in_scrap,1))'
        style(ws[f"F{row}"], "calc", "#,##0.0").value = f"=D{row}/1000*{factor}"
        style(ws[f"G{row}"], "calc", "#,##0.000").value = f"=F{row}/1000"
        style(ws[f"H{row}"], "calc", "#,##0")
        if comp.sheet:
            ws[f"H{row}"] = f"={bom}!F{b}*{factor}"
        style(ws[f"I{row}"], "calc", "#,##0").value = f"={cells}*{bom}!J{b}"
    last = first + len(COMPONENTS) - 1
    total = last + 1
    style(ws[f"B{total}"], "result").value = "Total"
    for col, fmt in (("F", "#,##0.0"), ("G", "#,##0.000"), ("I", "#,##0")):
        style(ws[f"{col}{total}"], "result", fmt).value = f"=SUM({col}{first}:{col}{last})"
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
            col = get_column_letter(5 + j)
            style(ws[f"{col}{row}"], "lookup", "0.0000").value = (
                f'=IF(C{row}="(none)",0,IF($D{row}<>"(none)",CW_MASS_FRACTION($D{row},'
                f"{col}${header_row}),INDEX(list_fractions,MATCH($C{row},list_material,0),"
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
        col = get_column_letter(5 + j)
        row = w.row
        style(ws[f"B{row}"], "text").value = el
        style(ws[f"C{row}"], "result", "#,##0.0").value = (
            f"=SUMPRODUCT(F{first}:F{last},{col}{f_first}:{col}{f_last})"
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


def _coefficients(w: SheetWriter, refs: dict[str, str]) -> dict[str, str]:
    """Coefficients that do not depend on loading or N/P, each one native formula."""
    r = refs
    bom = quote("Bill of materials")
    t = quote(w.ws.title)
    out: dict[str, str] = {}

    def row(key: str) -> str:
        return r[f"bom.{key}"]

    def price(key: str) -> str:
        return f"{bom}!$H${row(key)}"

    def unit(key: str) -> str:
        return f"{bom}!$I${row(key)}"

    def cost(key: str) -> str:
        return f"{bom}!$J${row(key)}"

    def add(key: str, label: str, formula: str, unit_text: str, note: str,
            fmt: str = "0.000000") -> None:
        out[key] = f"{t}!{w.value(label, formula, unit_text, note, number_format=fmt)}"

    def per_kg(keys: tuple[str, ...]) -> str:
        """#N/A if any of the parts is priced per m2 (they have no area)."""
        return "OR(" + ",".join(f'{unit(k)}="USD/m^2"' for k in keys) + ")"

    s, y = "in_scrap", "in_yield"
    for side, name in (("c", "cathode"), ("a", "anode")):
        parts = (f"{name}_active", f"{name}_binder", f"{name}_binder2", f"{name}_carbon")
        fr = (f"{r[side + '.f']}", f"{r[side + '.b']}*{r[side + '.b1s']}",
              f"{r[side + '.b']}*{r[side + '.b2s']}", f"{r[side + '.k']}")
        add(f"P_{side}", f"Price of the dry {name} coating",
            f"=IF({per_kg(parts)},NA(),"
            + "+".join(f"{f}*{price(k)}" for f, k in zip(fr, parts, strict=True)) + ")",
            "USD/kg", "sum of mass fraction x price of active, binders and carbon", "0.000")
        add(f"S_{side}", f"Solids share of the {name} coating", "=" + "+".join(fr), "g/g",
            "active + binders + carbon (= 1)", "0.000000")
    add("ra", "Anode loading per (cathode loading x N/P)",
        f"={r['c.f']}*{r['c.q']}/({r['a.f']}*{r['a.q']})", "",
        "cathode active fraction x mAh/g / (anode active fraction x mAh/g)")
    e_kg = "in_electrolyte_fill*{rho}/1000*{price}/in_yield".format(
        rho=r["rho_e"], price=price("electrolyte"))
    add("ce", "Electrolyte cost per cm3 of pores",
        f'=IF({unit("electrolyte")}="USD/m^2",NA(),{e_kg})', "USD/cm3",
        "fill x density / 1000 x price / yield")
    add("me", "Electrolyte mass per cm3 of pores", f"=in_electrolyte_fill*{r['rho_e']}",
        "g/cm3", "fill x density")
    c_pore = f"2*{r['c.fp']}*1E-3*{r['c.eps']}/{r['c.rho_coat']}"
    a_pore = f"2*{r['a.fp']}*1E-3*{r['a.eps']}/{r['a.rho_coat']}"
    add("pc", "Cathode pore volume per sheet per mg/cm2", f"={c_pore}", "cm3",
        "2 x footprint x 1e-3 x porosity / coating density")
    add("pa", "Anode pore volume per sheet per mg/cm2", f"={a_pore}", "cm3",
        "2 x anode footprint x 1e-3 x porosity / coating density")

    def sheet_mass(side: str) -> str:
        return f"{r[side + '.fp']}*{r[side + '.t_foil']}*1E-4*{r[side + '.rho_foil']}"

    add("mfc", "Cathode foil mass per sheet", f"={sheet_mass('c')}", "g", "footprint x t x rho")
    add("mfa", "Anode foil mass per sheet", f"={sheet_mass('a')}", "g", "footprint x t x rho")
    add("msep", "Separator mass per layer",
        f"={r['fp_sep']}*{r['t_sep']}*1E-4*{r['rho_sep']}*(1-{r['eps_sep']})", "g",
        "footprint x t x rho x (1 - porosity)")
    add("psep", "Separator pore volume per layer",
        f"={r['fp_sep']}*{r['t_sep']}*1E-4*{r['eps_sep']}", "cm3", "footprint x t x porosity")

    def sheet_cost(key: str, area: str, mass: str, scrap: bool) -> str:
        div = f"/(1-{s})" if scrap else ""
        return f'=IF({unit(key)}="USD/m^2",{area}/10000,{mass}/1000){div}*{price(key)}/{y}'

    add("cfc", "Cathode foil cost per sheet",
        sheet_cost("cathode_foil", r["c.fp"], out["mfc"], True), "USD", "per kg or per m2")
    add("cfa", "Anode foil cost per sheet",
        sheet_cost("anode_foil", r["a.fp"], out["mfa"], True), "USD", "per kg or per m2")
    add("csep", "Separator cost per layer",
        sheet_cost("separator", r["fp_sep"], out["msep"], False), "USD", "per kg or per m2")
    # the four combined coefficients of the grid formulas
    add("kL", "Cost per cathode sheet per mg/cm2 of cathode loading",
        f"=2*{r['c.fp']}/1000000*{out['P_c']}/(1-{s})/{y}+{out['ce']}*{out['pc']}", "USD",
        "cathode coating + electrolyte in its pores")
    add("kRL", "Cost per cathode sheet per mg/cm2 per unit N/P",
        f"={out['ra']}*(2*{r['a.fp']}/1000000*{out['P_a']}/(1-{s})/{y}+{out['ce']}*{out['pa']})",
        "USD", "anode coating + electrolyte in its pores")
    add("k1", "Cost per cathode sheet, independent of loading",
        f"={out['cfc']}+{out['cfa']}+2*{out['csep']}+2*{out['ce']}*{out['psep']}", "USD",
        "foils, two separator layers and their electrolyte")
    add("k0", "Cost per cell, independent of sheets",
        f"={out['cfa']}+{cost('cathode_tab')}+{cost('anode_tab')}+{cost('housing')}", "USD",
        "the extra anode foil, tabs and housing")
    add("mL", "Mass per cathode sheet per mg/cm2 of cathode loading",
        f"=2*{r['c.fp']}/1000*{out['S_c']}+{out['me']}*{out['pc']}", "g",
        "cathode coating + electrolyte in its pores")
    add("mRL", "Mass per cathode sheet per mg/cm2 per unit N/P",
        f"={out['ra']}*(2*{r['a.fp']}/1000*{out['S_a']}+{out['me']}*{out['pa']})", "g",
        "anode coating + electrolyte in its pores")
    add("m1", "Mass per cathode sheet, independent of loading",
        f"={out['mfc']}+{out['mfa']}+2*{out['msep']}+2*{out['me']}*{out['psep']}", "g",
        "foils, two separator layers and their electrolyte")
    add("m0", "Mass per cell, independent of sheets",
        f"={out['mfa']}+2*in_tab_mass+in_housing_mass", "g",
        "the extra anode foil, tabs and housing")
    return out


def _section_title(ws: Worksheet, row: int, text: str) -> None:
    cell = heading(ws[f"B{row}"], text)
    cell.border = Border(bottom=Side(style="medium", color=PALETTE["section_ink"]))


def build_whatif(wb: Workbook, refs: dict[str, str]) -> Worksheet:
    """Cost per kWh and Wh/kg over cathode loading (across) and N/P ratio (down)."""
    ws = wb.create_sheet("What-if")
    k, m = len(LOADING_AXIS), len(NP_AXIS)
    widths = {"A": 2.5, "B": 46.0, "C": 14.0}
    for j in range(1, k):
        widths[get_column_letter(3 + j)] = 10.0
    w = SheetWriter(wb, ws, Columns(label="B", value="C", unit="D", note="E"), widths)
    r = refs
    last_col = get_column_letter(2 + k)
    w.title(
        "What-if: cathode loading against N/P ratio",
        "Each grid is ONE array formula that broadcasts the row of loadings against the column "
        "of N/P ratios; every other input stays as on the Inputs sheet. Edit the green axis "
        "values.",
    )
    w.caution(CAUTION, span=k + 1, height=30.0)
    w.skip()
    positive = Number(lo=0, lo_open=True)

    # ---- the loading axis and three helper rows that depend on the loading only
    axis = w.row
    style(ws[f"B{axis}"], "band").value = "Cathode loading, mg/cm2 per side"
    for j, value in enumerate(LOADING_AXIS):
        style(ws.cell(axis, 3 + j, value), "input", "0.0")
    validation(ws, f"C{axis}:{last_col}{axis}", positive, "Cathode loading",
               "Coating mass per area per side, mg/cm2 (> 0).")
    loads = f"$C${axis}:${last_col}${axis}"
    add_name(wb, "wi_loading", ws, loads)
    helper = (
        ("Cathode sheets needed, unrounded", "0.00"),
        ("Cathode sheets", "0"),
        ("Cell energy, Wh", "0.0"),
    )
    for i, (label, fmt) in enumerate(helper):
        style(ws[f"B{axis + 1 + i}"], "text").value = label
        for j in range(k):
            style(ws.cell(axis + 1 + i, 3 + j), "calc", fmt)
    xs, ns, es = (f"$C${axis + i}:${last_col}${axis + i}" for i in (1, 2, 3))
    qu = f"({loads}*{r['c.f']}*{r['c.q']}/1000*(1-in_first_cycle_loss))"
    ws[f"C{axis + 1}"] = ArrayFormula(xs.replace("$", ""), f"={r['T']}*1000/{qu}/(2*{r['c.fp']})")
    tol = f"IF(ABS({xs})>1,ABS({xs}),1)"
    ws[f"C{axis + 2}"] = ArrayFormula(
        ns.replace("$", ""),
        f"=IF({xs}<1,1,IF(ABS({xs}-ROUND({xs},0))<=1E-9*{tol},ROUND({xs},0),ROUNDUP({xs},0)))",
    )
    energy = f"=2*{ns}*{r['c.fp']}*{qu}/1000*{r['V']}"
    ws[f"C{axis + 3}"] = ArrayFormula(es.replace("$", ""), energy)

    # ---- rows of the two grids (written after the coefficients they use)
    grids = (
        ("Cost per kWh (USD/kWh)", "wi_cost_per_kWh", "#,##0.0"),
        ("Specific energy (Wh/kg)", "wi_Wh_kg", "0.0"),
    )
    heads = [axis + 6 + g * (m + 3) for g in range(len(grids))]
    np_first, np_last = heads[0] + 1, heads[0] + m
    nps = f"$B${np_first}:$B${np_last}"
    w.row = heads[-1] + m + 1

    # ---- coefficients
    w.section("Coefficients from the current inputs (native formulas)")
    w.band(["Coefficient", "Value", "Unit", "How it is found"])
    c = _coefficients(w, refs)
    w.skip()
    check = w.value(
        "Check: the grid formula at the current loading and N/P",
        f"=({r['n']}*({c['kL']}*{r['c.load']}+{c['kRL']}*in_np_ratio*{r['c.load']}"
        f"+{c['k1']})+{c['k0']})/({r['energy']}/1000)",
        "USD/kWh", "equals Cost per kWh on the Bill of materials sheet",
        number_format="#,##0.000",
    )
    w.value("Relative difference from the Bill of materials",
            f"=ABS({check}/out_cost_per_kWh_USD-1)", "", "below 1E-12 when the two routes agree",
            number_format="0.0E+00")

    formulas = (
        f"=({ns}*({c['kL']}*{loads}+{c['kRL']}*{nps}*{loads}+{c['k1']})+{c['k0']})/({es}/1000)",
        f"={es}/(({ns}*({c['mL']}*{loads}+{c['mRL']}*{nps}*{loads}+{c['m1']})+{c['m0']})/1000)",
    )
    for (title, name, fmt), head, formula in zip(grids, heads, formulas, strict=True):
        _section_title(ws, head - 1, title)
        style(ws[f"B{head}"], "band").value = "N/P ratio  /  loading"
        for j in range(k):
            col = get_column_letter(3 + j)
            style(ws[f"{col}{head}"], "band", "0.0").value = f"={col}{axis}"
        for i, value in enumerate(NP_AXIS):
            cell = ws[f"B{head + 1 + i}"]
            if head == heads[0]:
                style(cell, "input", "0.00").value = value
            else:
                style(cell, "calc", "0.00").value = f"=B{np_first + i}"
            for j in range(k):
                style(ws.cell(head + 1 + i, 3 + j), "calc", fmt)
        area = f"C{head + 1}:{last_col}{head + m}"
        ws[f"C{head + 1}"] = ArrayFormula(area, formula)
        add_colour_scale(ws, area, high_is_good=name == "wi_Wh_kg")
        add_name(wb, name, ws, f"$C${head + 1}:${last_col}${head + m}")
    validation(ws, nps.replace("$", ""), positive, "N/P ratio",
               "Anode over cathode areal capacity (> 0).")
    add_name(wb, "wi_np_ratio", ws, nps)

    finish_sheet(ws, landscape=True)
    return ws
