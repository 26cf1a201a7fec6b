"""The Electrodes and Bill of materials sheets of the cell-sizing workbook.

Every step of ``docs/sizing-model.md`` is one native formula on these sheets;
catalogue values (capacities, voltages, densities, thicknesses) come from
``CW_MATERIAL``. ``refs`` collects the absolute address of each intermediate
value (``'Electrodes'!$C$9``) for the sheets built after these.
"""

from __future__ import annotations

from openpyxl.chart import Reference
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from .layout import (
    PALETTE,
    Columns,
    Kind,
    SheetWriter,
    add_name,
    bar_chart,
    finish_sheet,
    heading,
    quote,
    style,
)
from .notes import CAUTION
from .sizing_inputs import COMPONENTS

__all__ = ["build_bom", "build_electrodes", "ceil_formula"]

PCT = "0.0%"


def ceil_formula(x: str) -> str:
    """Whole-number ceiling that forgives float noise, as the core's ``ceil_count``:
    a value within 1e-9 (relative) of a whole number counts as that number.

    >>> ceil_formula("A1")
    'IF(ABS(A1-ROUND(A1,0))<=1E-9*MAX(ABS(A1),1),ROUND(A1,0),ROUNDUP(A1,0))'
    """
    return f"IF(ABS({x}-ROUND({x},0))<=1E-9*MAX(ABS({x}),1),ROUND({x},0),ROUNDUP({x},0))"


class _Pairs:
    """Rows of a two-column (cathode, anode) table on the Electrodes sheet."""

    def __init__(self, w: SheetWriter, refs: dict[str, str]) -> None:
        self.w, self.refs = w, refs

    def row(
        self,
        key: str,
        label: str,
        cathode: str | None,
        anode: str | None,
        unit: str,
        note: str,
        kind: Kind = "calc",
        fmt: str | None = None,
    ) -> None:
        ws, r = self.w.ws, self.w.row
        style(ws[f"B{r}"], "text").value = label
        for col, formula, side in (("C", cathode, "c"), ("D", anode, "a")):
            cell = ws[f"{col}{r}"]
            if formula is None:
                continue
            style(cell, kind, fmt).value = formula
            self.refs[f"{side}.{key}"] = f"{quote(ws.title)}!${col}${r}"
        style(ws[f"E{r}"], "unit").value = unit
        style(ws[f"F{r}"], "hint").value = note
        self.w.row += 1


def yours_or_catalogue(given: str, material: str, prop: str) -> str:
    """Formula: the user's value when the input cell is filled, else the catalogue's.

    >>> yours_or_catalogue("in_separator_um", "in_separator", "thickness")
    '=IF(ISBLANK(in_separator_um),CW_MATERIAL(in_separator,"thickness"),in_separator_um)'
    """
    return f'=IF(ISBLANK({given}),CW_MATERIAL({material},"{prop}"),{given})'


def build_electrodes(wb: Workbook, refs: dict[str, str]) -> Worksheet:
    """Coatings, sheets and the cell's layer count, capacity, energy and volume."""
    ws = wb.create_sheet("Electrodes")
    w = SheetWriter(wb, ws, Columns(label="B", value="C", unit="E", note="F"),
                    {"A": 2.5, "B": 36.0, "C": 20.0, "D": 20.0, "E": 11.0, "F": 62.0})
    w.title(
        "Electrodes and cell",
        "Coatings, sheet count, capacity, energy and volume from the Inputs sheet. "
        "Lavender cells read the catalogue through CW_ functions; white cells are plain "
        "arithmetic.",
    )
    p = _Pairs(w, refs)
    w.skip()
    w.band(["Quantity", "Cathode", "Anode", "Unit", "How it is found"])
    first_row = w.row

    def r(key: str) -> str:
        return refs[key]

    # The sheet count n is found in the cell block below the pairs, so the pair rows
    # that use it hold this marker until n has an address (a forward reference).
    n_row_placeholder = "#N#"

    p.row("mat", "Active material", "=in_cathode", "=in_anode", "name", "Inputs")
    p.row("formula", "Formula", '=CW_MATERIAL(in_cathode,"formula")',
          '=CW_MATERIAL(in_anode,"formula")', "", "catalogue", "lookup")
    p.row("q", "Specific capacity used",
          yours_or_catalogue("in_cathode_mAh_g", "in_cathode", "practical_capacity"),
          yours_or_catalogue("in_anode_mAh_g", "in_anode", "practical_capacity"),
          "mAh/g", "your input, else the catalogue's practical capacity", "lookup", "0.0")
    p.row("v", "Average voltage", '=CW_MATERIAL(in_cathode,"average_voltage")',
          '=CW_MATERIAL(in_anode,"average_voltage")', "V", "catalogue", "lookup", "0.000")
    p.row("vref", "Voltage reference", '=CW_MATERIAL(in_cathode,"voltage_reference")',
          '=CW_MATERIAL(in_anode,"voltage_reference")', "", "catalogue", "lookup")
    p.row("rho", "Density of the active material", '=CW_MATERIAL(in_cathode,"density")',
          '=CW_MATERIAL(in_anode,"density")', "g/cm3", "catalogue", "lookup", "0.00")
    p.row("f", "Active fraction", "=in_cathode_active", "=in_anode_active", "of coating",
          "Inputs", fmt=PCT)
    p.row("b", "Binder fraction", "=in_cathode_binder_fraction", "=in_anode_binder_fraction",
          "of coating", "Inputs", fmt=PCT)
    p.row("k", "Conductive carbon fraction",
          f"=IF({r('c.f')}+{r('c.b')}-1>1E-12,NA(),MAX(1-{r('c.f')}-{r('c.b')},0))",
          f"=IF({r('a.f')}+{r('a.b')}-1>1E-12,NA(),MAX(1-{r('a.f')}-{r('a.b')},0))",
          "of coating", "1 - active - binder; #N/A if negative", fmt=PCT)
    p.row("b1", "Binder", "=in_cathode_binder", "=in_anode_binder", "name", "Inputs")
    p.row("b1s", "Share of the binder fraction", "=1-in_cathode_binder2_share",
          "=1-in_anode_binder2_share", "of binder", "1 - share of the second binder", fmt=PCT)
    p.row("rho_b1", "Binder density", '=CW_MATERIAL(in_cathode_binder,"density")',
          '=CW_MATERIAL(in_anode_binder,"density")', "g/cm3", "catalogue", "lookup", "0.00")
    p.row("b2", "Second binder", '=IF(in_cathode_binder2_share=0,"(none)",in_cathode_binder2)',
          '=IF(in_anode_binder2_share=0,"(none)",in_anode_binder2)', "name",
          "Inputs; (none) when its share is 0")
    p.row("b2s", "Share of the binder fraction", "=in_cathode_binder2_share",
          "=in_anode_binder2_share", "of binder", "Inputs", fmt=PCT)
    p.row("rho_b2", "Second binder density",
          '=IF(in_cathode_binder2_share=0,"",CW_MATERIAL(in_cathode_binder2,"density"))',
          '=IF(in_anode_binder2_share=0,"",CW_MATERIAL(in_anode_binder2,"density"))',
          "g/cm3", "catalogue", "lookup", "0.00")
    p.row("carbon", "Conductive carbon", "=in_cathode_carbon", "=in_anode_carbon", "name",
          "Inputs")
    p.row("rho_k", "Carbon density", '=CW_MATERIAL(in_cathode_carbon,"density")',
          '=CW_MATERIAL(in_anode_carbon,"density")', "g/cm3", "catalogue", "lookup", "0.00")

    def solids(s: str) -> str:
        return (
            f"=1/({r(s + '.f')}/{r(s + '.rho')}+{r(s + '.b')}*{r(s + '.b1s')}/{r(s + '.rho_b1')}"
            f"+IF({r(s + '.b2s')}=0,0,{r(s + '.b')}*{r(s + '.b2s')}/{r(s + '.rho_b2')})"
            f"+{r(s + '.k')}/{r(s + '.rho_k')})"
        )

    p.row("rho_solid", "Density of the dry coating solids", solids("c"), solids("a"), "g/cm3",
          "1 / sum(mass fraction / density)", fmt="0.000")
    p.row("eps", "Coating porosity", "=in_cathode_porosity", "=in_anode_porosity",
          "of volume", "Inputs", fmt=PCT)
    p.row("rho_coat", "Coating density", f"={r('c.rho_solid')}*(1-{r('c.eps')})",
          f"={r('a.rho_solid')}*(1-{r('a.eps')})", "g/cm3", "solids density x (1 - porosity)",
          fmt="0.000")
    p.row("qa", "Areal capacity per side",
          f'=IF(in_loading_basis="areal capacity",in_loading,in_loading*{r("c.f")}*{r("c.q")}'
          "/1000)",
          None,
          "mAh/cm2", "cathode: loading x active fraction x mAh/g / 1000; anode: N/P x cathode",
          fmt="0.000")
    # the anode cell needs the cathode cell's address, known only now
    ws[f"D{w.row - 1}"] = f"=in_np_ratio*{r('c.qa')}"
    style(ws[f"D{w.row - 1}"], "calc", "0.000")
    refs["a.qa"] = f"{quote(ws.title)}!$D${w.row - 1}"
    p.row("qu", "Usable areal capacity per side", f"={r('c.qa')}*(1-in_first_cycle_loss)",
          None, "mAh/cm2", "cathode areal capacity x (1 - first-cycle loss)", fmt="0.000")
    p.row("load", "Loading per side (whole coating)",
          f'=IF(in_loading_basis="areal capacity",{r("c.qa")}*1000/({r("c.f")}*{r("c.q")}),'
          "in_loading)",
          f"={r('a.qa')}*1000/({r('a.f')}*{r('a.q')})",
          "mg/cm2", "areal capacity x 1000 / (active fraction x mAh/g)", fmt="0.00")
    p.row("t", "Coating thickness per side", f"={r('c.load')}*10/{r('c.rho_coat')}",
          f"={r('a.load')}*10/{r('a.rho_coat')}", "um", "loading x 10 / coating density",
          fmt="0.0")
    p.row("foil", "Current collector foil", "=in_cathode_foil", "=in_anode_foil", "name",
          "Inputs")
    p.row("t_foil", "Foil thickness",
          yours_or_catalogue("in_cathode_foil_um", "in_cathode_foil", "thickness"),
          yours_or_catalogue("in_anode_foil_um", "in_anode_foil", "thickness"),
          "um", "your input, else the catalogue", "lookup", "0.0")
    p.row("rho_foil", "Foil density", '=CW_MATERIAL(in_cathode_foil,"density")',
          '=CW_MATERIAL(in_anode_foil,"density")', "g/cm3", "catalogue", "lookup", "0.00")
    p.row("w", "Sheet width", "=in_width", "=in_width+2*in_anode_overhang", "mm",
          "anode: cathode + 2 x overhang", fmt="0.0")
    p.row("h", "Sheet height", "=in_height", "=in_height+2*in_anode_overhang", "mm",
          "anode: cathode + 2 x overhang", fmt="0.0")
    p.row("fp", "Sheet footprint", f"={r('c.w')}*{r('c.h')}/100",
          f"={r('a.w')}*{r('a.h')}/100", "cm2", "width x height / 100", fmt="#,##0.0")
    p.row("sheets", "Sheets in the stack", f"={n_row_placeholder}", f"={n_row_placeholder}+1",
          "sheets", "n cathodes, n + 1 anodes (anodes outside)", fmt="0")
    p.row("area", "Coated area, both faces", f"=2*{n_row_placeholder}*{r('c.fp')}",
          f"=2*{n_row_placeholder}*{r('a.fp')}", "cm2",
          "2 n x footprint (outer anode faces bare)", fmt="#,##0")
    p.row("foil_area", "Foil area", f"={n_row_placeholder}*{r('c.fp')}",
          f"=({n_row_placeholder}+1)*{r('a.fp')}", "cm2", "sheets x footprint", fmt="#,##0")
    p.row("pore", "Pore volume of the coatings",
          f"={r('c.area')}*{r('c.t')}*1E-4*{r('c.eps')}",
          f"={r('a.area')}*{r('a.t')}*1E-4*{r('a.eps')}", "cm3",
          "coated area x thickness x porosity", fmt="0.00")
    last_pair_row = w.row - 1

    # ---- the cell
    w.skip()
    w.band(["Cell", "Value", "", "Unit", "How it is found"])

    def val(key: str, label: str, formula: str, unit: str, note: str, kind: Kind = "calc",
            fmt: str | None = None) -> str:
        ref = w.value(label, formula, unit, note, kind, fmt)
        refs[key] = f"{quote(ws.title)}!{ref}"
        return refs[key]

    val("V", "Nominal cell voltage",
        f"=IF(ISBLANK(in_voltage),IF({r('c.vref')}={r('a.vref')},"
        f"IF({r('c.v')}-{r('a.v')}>0,{r('c.v')}-{r('a.v')},NA()),NA()),in_voltage)",
        "V", "your input, else cathode - anode average voltage (same reference)", fmt="0.000")
    val("T", "Target capacity", '=IF(in_target_basis="energy",in_target/' + r("V")
        + ",in_target)", "Ah", "energy target / nominal voltage, or the capacity target",
        fmt="0.00")
    val("A_needed", "Cathode face area needed", f"={r('T')}*1000/{r('c.qu')}", "cm2",
        "target Ah x 1000 / usable areal capacity", fmt="#,##0")
    val("x", "Cathode sheets needed, unrounded", f"={r('A_needed')}/(2*{r('c.fp')})",
        "sheets", "area needed / (2 faces x footprint)", fmt="0.000")
    val("n", "Cathode sheets, n", f"=MAX(1,{ceil_formula(r('x'))})", "sheets",
        "rounded up (values within 1e-9 of a whole number count as that number)", fmt="0")
    val("sep", "Separator", "=in_separator", "name", "Inputs")
    val("t_sep", "Separator thickness",
        yours_or_catalogue("in_separator_um", "in_separator", "thickness"),
        "um", "your input, else the catalogue", "lookup", "0.0")
    val("eps_sep", "Separator porosity",
        yours_or_catalogue("in_separator_porosity", "in_separator", "porosity"),
        "of volume", "your input, else the catalogue", "lookup", PCT)
    val("rho_sep", "Density of the separator polymer", '=CW_MATERIAL(in_separator,"density")',
        "g/cm3", "catalogue (the solid, not the porous film)", "lookup", "0.00")
    val("fp_sep", "Separator footprint",
        "=(in_width+2*in_anode_overhang+2*in_separator_overhang)"
        "*(in_height+2*in_anode_overhang+2*in_separator_overhang)/100",
        "cm2", "anode sheet + 2 x separator overhang, each way", fmt="#,##0.0")
    val("layers", "Separator layers", f"=2*{r('n')}", "layers", "2 n", fmt="0")
    val("A_sep", "Separator area", f"=2*{r('n')}*{r('fp_sep')}", "cm2",
        "layers x footprint", fmt="#,##0")
    val("pore_sep", "Pore volume of the separator",
        f"={r('A_sep')}*{r('t_sep')}*1E-4*{r('eps_sep')}", "cm3",
        "area x thickness x porosity", fmt="0.00")
    val("pore", "Pore volume of the stack",
        f"={r('c.pore')}+{r('a.pore')}+{r('pore_sep')}", "cm3",
        "cathode + anode + separator pores", fmt="0.00")
    val("elyte", "Electrolyte", "=in_electrolyte", "name", "Inputs")
    val("rho_e", "Electrolyte density", '=CW_MATERIAL(in_electrolyte,"density")', "g/cm3",
        "catalogue", "lookup", "0.00")
    val("vol_e", "Electrolyte volume", f"=in_electrolyte_fill*{r('pore')}", "cm3",
        "fill x pore volume", fmt="0.00")
    val("cap", "Capacity", f"={r('c.area')}*{r('c.qu')}/1000", "Ah",
        "cathode coated area x usable areal capacity / 1000", "result", "0.00")
    val("energy", "Energy", f"={r('cap')}*{r('V')}", "Wh", "capacity x nominal voltage",
        "result", "0.0")
    val("stack_t", "Stack thickness",
        f"={r('n')}*({r('c.t_foil')}+2*{r('c.t')})+({r('n')}+1)*{r('a.t_foil')}"
        f"+2*{r('n')}*{r('a.t')}+2*{r('n')}*{r('t_sep')}",
        "um", "n (foil + 2 coatings) + (n + 1) foils + 2n anode coatings + 2n separators",
        fmt="#,##0")
    val("stack_vol", "Stack volume", f"={r('a.fp')}*{r('stack_t')}*1E-4", "cm3",
        "anode footprint x stack thickness", fmt="#,##0.0")
    val("cell_vol", "Cell volume", f"={r('stack_vol')}/in_volume_efficiency", "cm3",
        "stack volume / (stack volume / cell volume)", fmt="#,##0.0")

    # resolve the sheet-count placeholder now that n has an address
    n_ref = r("n")
    for row in ws.iter_rows(min_row=first_row, max_row=last_pair_row, min_col=3, max_col=4):
        for cell in row:
            if isinstance(cell.value, str) and n_row_placeholder in cell.value:
                cell.value = cell.value.replace(n_row_placeholder, n_ref)
    finish_sheet(ws, freeze="C5")
    return ws


# --------------------------------------------------------------------------- bill of materials


def _mass_formula(key: str, r: dict[str, str]) -> str:
    side = "c" if key.startswith("cathode") else "a"
    part = key.split("_", 1)[-1] if "_" in key else key

    def s(name: str) -> str:
        return r[f"{side}.{name}"]

    coating = {
        "active": s("f"),
        "binder": f"({s('b')}*{s('b1s')})",
        "binder2": f"({s('b')}*{s('b2s')})",
        "carbon": s("k"),
    }
    if part in coating:  # loading x mass fraction x coated area / 1000
        return f"={s('load')}*{coating[part]}*{s('area')}/1000"
    if part == "foil":
        return f"={s('foil_area')}*{s('t_foil')}*1E-4*{s('rho_foil')}"
    if key == "separator":
        return f"={r['A_sep']}*{r['t_sep']}*1E-4*{r['rho_sep']}*(1-{r['eps_sep']})"
    if key == "electrolyte":
        return f"=in_electrolyte_fill*{r['pore']}*{r['rho_e']}"
    if key in ("cathode_tab", "anode_tab"):
        return "=in_tab_mass"
    if key == "housing":
        return "=in_housing_mass"
    raise KeyError(key)


def _material_formula(key: str, material_input: str, r: dict[str, str]) -> str:
    if key == "cathode_binder2":
        return f"={r['c.b2']}"
    if key == "anode_binder2":
        return f"={r['a.b2']}"
    return f"={material_input}"


def _area_formula(key: str, r: dict[str, str]) -> str | None:
    return {
        "cathode_foil": f"={r['c.foil_area']}/10000",
        "anode_foil": f"={r['a.foil_area']}/10000",
        "separator": f"={r['A_sep']}/10000",
    }.get(key)


BOM_HEADERS = (
    "Component", "Material", "Mass per cell", "Share of mass", "Sheet area per cell",
    "Scrap applies", "Price", "Price unit", "Cost per good cell", "Share of cost",
)
BOM_UNITS = ("", "", "g", "of cell mass", "m2", "", "USD per unit", "", "USD", "of cost")


def build_bom(wb: Workbook, refs: dict[str, str]) -> Worksheet:
    """One row per component: mass, share, price, cost per good cell; key figures; chart."""
    ws = wb.create_sheet("Bill of materials")
    w = SheetWriter(
        wb, ws, Columns(label="B", value="C", unit="D", note="E"),
        {"A": 2.5, "B": 30.0, "C": 24.0, "D": 13.0, "E": 10.0, "F": 12.0, "G": 9.0,
         "H": 10.0, "I": 10.0, "J": 13.0, "K": 10.0},
    )
    w.title("Bill of materials")
    w.text('=IF(ISBLANK(in_scenario),"",in_scenario&"  |  ")&in_cathode&" / "&in_anode'
           '&" stacked cell"', kind="hint", span=10, height=30.0)
    w.caution(CAUTION, span=10, height=30.0)
    w.skip()
    w.band(list(BOM_HEADERS))
    for k, unit in enumerate(BOM_UNITS):
        style(ws.cell(w.row, 2 + k, unit), "unit")
    w.row += 1
    first = w.row
    last = first + len(COMPONENTS) - 1
    total = last + 1
    for i, comp in enumerate(COMPONENTS):
        row = first + i
        refs[f"bom.{comp.key}"] = str(row)
        style(ws[f"B{row}"], "text").value = comp.label
        style(ws[f"C{row}"], "calc").value = _material_formula(comp.key, comp.material, refs)
        style(ws[f"D{row}"], "calc", "#,##0.00").value = _mass_formula(comp.key, refs)
        style(ws[f"E{row}"], "calc", PCT).value = f"=D{row}/$D${total}"
        area = _area_formula(comp.key, refs)
        style(ws[f"F{row}"], "calc", "0.0000")
        if area:
            ws[f"F{row}"] = area
        style(ws[f"G{row}"], "text").value = "yes" if comp.electrode else "no"
        price_in, unit_in = f"in_price_{comp.key}", f"in_price_unit_{comp.key}"
        demo = f"INDEX(list_demo_price,MATCH(C{row},list_material,0))"
        style(ws[f"H{row}"], "calc", "#,##0.00").value = (
            f'=IF(C{row}="(none)",0,IF(ISBLANK({price_in}),IF(ISNUMBER({demo}),{demo},NA()),'
            f"{price_in}))"
        )
        style(ws[f"I{row}"], "calc").value = (
            f'=IF(C{row}="(none)","USD/kg",IF(ISBLANK({price_in}),'
            f"INDEX(list_demo_unit,MATCH(C{row},list_material,0)),"
            f"IF(ISBLANK({unit_in}),NA(),{unit_in})))"
        )
        style(ws[f"J{row}"], "calc", "#,##0.000").value = (
            f'=IF(I{row}="USD/m^2",IF(F{row}="",NA(),F{row}),D{row}/1000)'
            f'/IF(G{row}="yes",1-in_scrap,1)*H{row}/in_yield'
        )
        style(ws[f"K{row}"], "calc", PCT).value = f"=J{row}/$J${total}"
    style(ws[f"B{total}"], "result").value = "Total"
    style(ws[f"D{total}"], "result", "#,##0.00").value = f"=SUM(D{first}:D{last})"
    style(ws[f"E{total}"], "result", PCT).value = f"=SUM(E{first}:E{last})"
    style(ws[f"J{total}"], "result", "#,##0.000").value = f"=SUM(J{first}:J{last})"
    style(ws[f"K{total}"], "result", PCT).value = f"=SUM(K{first}:K{last})"
    refs["bom.first"], refs["bom.last"], refs["bom.total"] = str(first), str(last), str(total)
    add_name(wb, "out_cell_mass_g", ws, f"$D${total}")
    add_name(wb, "out_cost_per_cell_USD", ws, f"$J${total}")
    w.row = total + 2

    # ---- key figures
    w.section("Key figures")
    r = refs
    t = quote(ws.title)
    figures = (
        ("out_voltage_V", "Nominal voltage", f"={r['V']}", "V", "0.000"),
        ("out_capacity_Ah", "Capacity", f"={r['cap']}", "Ah", "0.00"),
        ("out_energy_Wh", "Energy", f"={r['energy']}", "Wh", "0.0"),
        ("out_cathode_sheets", "Cathode sheets (anodes: n + 1)", f"={r['n']}",
         "sheets", "0"),
        ("out_cell_volume_cm3", "Cell volume", f"={r['cell_vol']}", "cm3", "#,##0.0"),
        ("out_Wh_kg", "Specific energy", f"={r['energy']}/($D${total}/1000)", "Wh/kg", "0.0"),
        ("out_Wh_L", "Energy density", None, "Wh/L", "0.0"),
        ("out_cost_per_kWh_USD", "Cost per kWh", None, "USD/kWh", "0.0"),
    )
    for name, label, formula, unit, fmt in figures:
        if name == "out_Wh_L":
            formula = f"={r['energy']}/({r['cell_vol']}/1000)"
        if name == "out_cost_per_kWh_USD":
            formula = f"=$J${total}/({r['energy']}/1000)"
        assert formula is not None
        ref = w.value(label, formula, unit, kind="result", number_format=fmt, name=name)
        refs[name] = f"{t}!{ref}"
    refs["out_cell_mass_g"] = f"{t}!$D${total}"
    refs["out_cost_per_cell_USD"] = f"{t}!$J${total}"
    w.text("Costs are materials only, per good cell: electrode materials (coatings and foils) "
           "are divided by (1 - electrode scrap), every item by the cell yield. Prices without "
           "your input come from the demo price list (invented demo data).", kind="hint", span=4)

    # ---- chart: cost by component
    chart_row = total + 2
    heading(ws[f"F{chart_row}"], "Cost per good cell by component, USD")
    chart = bar_chart(
        True,
        Reference(ws, min_col=10, min_row=first, max_row=last),
        Reference(ws, min_col=2, min_row=first, max_row=last),
        "USD per good cell", "0.00", PALETTE["band_fill"], (11.5, 12.2),
    )
    ws.add_chart(chart, f"F{chart_row + 1}")
    finish_sheet(ws, landscape=True, freeze=f"C{first}")
    ws.print_area = f"A1:K{total + 27}"  # the table, key figures and the chart
    return ws
