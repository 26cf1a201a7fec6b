"""The cell-sizing workbook: Inputs, Electrodes, Bill of materials,
Procurement, What-if and Notes (plus a hidden Lists sheet).

It is the spreadsheet route to the numbers of :mod:`udfs.core.sizing` and
:mod:`udfs.core.procurement`: the same equations (``docs/sizing-model.md``) in
native formulas, with catalogue values read through ``CW_`` functions.

>>> wb = build_cell_sizing()
>>> wb.sheetnames
['Inputs', 'Electrodes', 'Bill of materials', 'Procurement', 'What-if', 'Notes', 'Lists']
>>> wb.active.title
'Inputs'
"""

from __future__ import annotations

from openpyxl import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from ..core.errors import InputError
from ..core.sizing import CellSpec
from .layout import (
    Choice,
    Columns,
    Field,
    Number,
    SheetWriter,
    add_name,
    finish_sheet,
    style,
    validation,
)
from .notes import CAUTION, legend, write_notes
from .sizing_inputs import (
    COMPONENTS,
    ORDER_FIELDS,
    PRICE_UNITS,
    chemistry_fields,
    design_fields,
    footprint_fields,
    inactive_fields,
    set_inputs,
    spec_inputs,
    yield_fields,
)
from .sizing_lists import write_lists
from .sizing_order import build_procurement, build_whatif
from .sizing_sheets import build_bom, build_electrodes

__all__ = ["build_cell_sizing", "build_demo", "fill_demo", "fill_spec"]

_CHECKS = (
    ("Cathode coating fractions",
     '=IF(in_cathode_active+in_cathode_binder_fraction<=1+1E-12,"ok",'
     '"active + binder fractions exceed 100 %")'),
    ("Anode coating fractions",
     '=IF(in_anode_active+in_anode_binder_fraction<=1+1E-12,"ok",'
     '"active + binder fractions exceed 100 %")'),
    ("Cathode binders",
     '=IF(in_cathode_binder2_share=0,"ok",IF(ISBLANK(in_cathode_binder2),'
     '"name the second binder or set its share to 0",IF(in_cathode_binder2=in_cathode_binder,'
     '"the second binder repeats the first","ok")))'),
    ("Anode binders",
     '=IF(in_anode_binder2_share=0,"ok",IF(ISBLANK(in_anode_binder2),'
     '"name the second binder or set its share to 0",IF(in_anode_binder2=in_anode_binder,'
     '"the second binder repeats the first","ok")))'),
    ("Nominal voltage",
     '=IF(ISNUMBER(out_voltage_V),"ok","cannot be found: the materials use different voltage '
     'references or give no positive difference; type a nominal voltage")'),
    ("Prices",
     '=IF(ISNUMBER(out_cost_per_cell_USD),"ok","a price is missing: a price typed without its '
     'unit, or a material without a demo price")'),
    ("Results",
     '=IF(AND(ISNUMBER(out_cost_per_kWh_USD),ISNUMBER(out_Wh_kg),ISNUMBER(out_order_cells)),'
     '"ok","a result is an error value: check the inputs above")'),
)


def _price_rows(w: SheetWriter) -> None:
    """Price override and unit per component; the hint shows the demo price."""
    ws = w.ws
    w.band(["Component and material", "Your price", "Unit", "Blank price: demo price list"])
    for comp in COMPONENTS:
        row = w.row
        material = comp.material
        label = f'="{comp.label}: "&IF(ISBLANK({material}),"(none)",{material})'
        style(ws[f"B{row}"], "text").value = label
        price_cell = ws[f"C{row}"]
        style(price_cell, "input", "#,##0.00")
        units = PRICE_UNITS if comp.sheet else PRICE_UNITS[:1]
        unit_cell = ws[f"D{row}"]
        style(unit_cell, "input")
        validation(ws, f"C{row}", Number(lo=0, blank_ok=True), f"Price: {comp.label.lower()}",
                   "Blank: the demo price list (invented). Give the unit beside it.")
        validation(ws, f"D{row}", Choice(units, blank_ok=True), "Price unit",
                   "USD/kg" + (", or USD/m^2 for the sheet area." if comp.sheet else "."))
        add_name(w.wb, f"in_price_{comp.key}", ws, f"$C${row}")
        add_name(w.wb, f"in_price_unit_{comp.key}", ws, f"$D${row}")
        demo = f"MATCH({material},list_material,0)"
        style(ws[f"E{row}"], "hint").value = (
            f'=IF(ISBLANK({material}),"",IFERROR("demo "&TEXT(INDEX(list_demo_price,{demo}),'
            f'"0.00")&" "&INDEX(list_demo_unit,{demo})&" (invented)","no demo price: give one"))'
        )
        w.row += 1


def _build_inputs(wb: Workbook) -> Worksheet:
    ws = wb.active
    ws.title = "Inputs"
    w = SheetWriter(wb, ws, Columns(label="B", value="C", unit="D", note="E"),
                    {"A": 2.5, "B": 44.0, "C": 22.0, "D": 16.0, "E": 66.0})
    w.title(
        "Cell sizing: inputs",
        "A stacked-electrode cell from its materials and design numbers. Work down this sheet, "
        "then read Electrodes, Bill of materials, Procurement and What-if.",
    )
    w.caution(CAUTION, height=32.0)
    legend(w)
    w.skip()
    w.input(Field("in_scenario", "Scenario (printed on the Bill of materials)",
                  "Untitled scenario", "", "", None))
    ws.merge_cells(f"C{w.row - 1}:E{w.row - 1}")
    summary_row = w.row
    w.row += 1
    sections: list[tuple[str, list[Field]]] = [
        ("Chemistry and target", chemistry_fields()),
        ("Electrode design", design_fields()),
        ("Inactive components", inactive_fields()),
        ("Footprint and housing volume", footprint_fields()),
        ("Electrode scrap and cell yield", yield_fields()),
    ]
    for title, fields in sections:
        w.section(title)
        for f in fields:
            w.input(f)
    w.section("Prices (USD; blank uses the demo price list, invented demo data)")
    _price_rows(w)
    w.section("Order (for the Procurement sheet)")
    for f in ORDER_FIELDS:
        w.input(f)
    w.section("Checks")
    checks = []
    for label, formula in _CHECKS:
        checks.append(w.value(label, formula, "", ""))
    all_ok = ",".join(f'{c}="ok"' for c in checks)
    ws[f"B{summary_row}"] = "Input checks"
    style(ws[f"B{summary_row}"], "text")
    style(ws[f"C{summary_row}"], "result").value = (
        f'=IF(AND({all_ok}),"all checks pass","a check fails: see Checks at the bottom")'
    )
    add_name(wb, "out_checks", ws, f"$C${summary_row}")
    finish_sheet(ws, first_cell="C6", freeze="A6")
    ws.print_title_rows = "1:2"
    return ws


def _notes(wb: Workbook) -> None:
    method = [
        "Route: one stacked cell (n double-sided cathode sheets, n + 1 anode sheets, 2n "
        "separator layers). The cathode areal capacity = loading x active fraction x mAh/g / "
        "1000; the usable share is 1 - first-cycle loss; the anode carries N/P times the cathode "
        "areal capacity.",
        "n = the target Ah over the usable capacity of one double-sided sheet, rounded up. "
        "Capacity = coated cathode area x usable areal capacity; energy = capacity x nominal "
        "voltage.",
        "Masses: coatings = loading x fraction x coated area; foils, separator = area x "
        "thickness x density (x (1 - porosity) for the separator); electrolyte = fill x pore "
        "volume x density; tabs and housing as given.",
        "Costs per good cell: electrode materials (coatings and foils) / (1 - scrap), all / "
        "yield. Procurement: kg to buy = cells x g per cell / 1000 with the same factors; "
        "metals = kg x element mass fraction; lithium also as LCE.",
        "The same equations run in Python (udfs.core.sizing and udfs.core.procurement, see "
        "docs/sizing-model.md); a test proves the two routes agree to 1 part in 1e9.",
        "What-if: each grid is one array formula. The model's arithmetic is linear in the "
        "loading and N/P once the sheet count is known, so the grid combines a few "
        "coefficients (listed below the grids, each a native formula) with the helper rows of "
        "sheet counts and energies.",
    ]
    live = [
        ("Cathode practical capacity", '=CW_SOURCE(in_cathode,"practical_capacity")'),
        ("Cathode average voltage", '=CW_SOURCE(in_cathode,"average_voltage")'),
        ("Cathode density", '=CW_SOURCE(in_cathode,"density")'),
        ("Anode practical capacity", '=CW_SOURCE(in_anode,"practical_capacity")'),
        ("Anode density", '=CW_SOURCE(in_anode,"density")'),
        ("Separator thickness", '=CW_SOURCE(in_separator,"thickness")'),
        ("Electrolyte density", '=CW_SOURCE(in_electrolyte,"density")'),
        ("Cathode foil density", '=CW_SOURCE(in_cathode_foil,"density")'),
    ]
    cautions = [
        "Catalogue capacities are typical practical values at an unstated rate and "
        "temperature; check them against your supplier's data sheets.",
        "Prices in the demo list are invented. Replace them with quotations before any "
        "decision. Costs are materials only: no energy, labour, equipment or overheads.",
        "The model has no jelly rolls, no electrolyte in the free volume of the housing, no "
        "tapes, welds or insulation, and no ageing.",
    ]
    write_notes(wb, "Notes: method, sources and cautions", method, cautions, live)


def build_cell_sizing() -> Workbook:
    """The cell-sizing template as a new openpyxl workbook."""
    wb = Workbook()
    refs: dict[str, str] = {}
    _build_inputs(wb)
    build_electrodes(wb, refs)
    build_bom(wb, refs)
    build_procurement(wb, refs)
    build_whatif(wb, refs)
    _notes(wb)
    write_lists(wb)
    wb.active = 0
    for ws in wb.worksheets:
        ws.sheet_view.tabSelected = ws.title == "Inputs"
    return wb


def fill_spec(
    wb: Workbook,
    spec: CellSpec,
    scenario: str | None = None,
    order_cells: float | None = None,
    order_MWh: float | None = None,
) -> Workbook:
    """Write ``spec`` (one scenario, scalar numbers) into the inputs of a
    cell-sizing workbook built by :func:`build_cell_sizing`; return ``wb``.

    >>> from udfs.core.sizing import CellSpec
    >>> wb = fill_spec(build_cell_sizing(), CellSpec("LFP", "graphite",
    ...                target_capacity_Ah=20.0, cathode_loading_mg_cm2=25.0))
    >>> from udfs.templates.sizing_inputs import input_values
    >>> input_values(wb)["in_cathode"], input_values(wb)["in_loading_basis"]
    ('LiFePO4', 'loading')
    """
    if not isinstance(wb, Workbook) or "in_cathode" not in wb.defined_names:
        raise InputError("workbook", None, detail="not a cell-sizing workbook (no in_cathode)")
    values = spec_inputs(spec, order_cells=order_cells, order_MWh=order_MWh)
    if scenario is not None:
        values["in_scenario"] = scenario
    set_inputs(wb, values)
    return wb


def fill_demo(wb: Workbook) -> Workbook:
    """Fill a cell-sizing workbook with the demo scenario (``udfs.app.demo.demo_spec``,
    invented company, product and prices: demo data); return ``wb``."""
    from .demo_scenario import DEMO_COMPANY, DEMO_LABEL, DEMO_PRODUCT, demo_spec

    return fill_spec(wb, demo_spec(), scenario=f"{DEMO_COMPANY}: {DEMO_PRODUCT} - {DEMO_LABEL}")


def build_demo() -> Workbook:
    """A new cell-sizing workbook filled with the demo scenario (demo data).

    >>> build_demo().defined_names["in_scenario"] is not None
    True
    """
    return fill_demo(build_cell_sizing())
