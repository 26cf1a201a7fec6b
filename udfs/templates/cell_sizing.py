"""The cell-sizing workbook: Inputs, Electrodes, Bill of materials,
Procurement, What-if and Notes (plus a hidden Lists sheet).

It is the spreadsheet route to the numbers of :mod:`udfs.core.sizing` and
:mod:`udfs.core.procurement`: the same equations (``docs/sizing-model.md``) in
native formulas, with catalogue values read through ``CW_`` functions. The
Inputs sheet is written from the input table
(:data:`udfs.core.sizing_table.CELL_SIZING`): every input's cell, defined name,
unit, hint, data validation and check cell come from its one declaration.
Each material input has a cell beside it with the catalogue's own name
(``CW_MATERIAL_NAME``, defined name ``mat_...``); every look-up reads that cell,
so an alias such as LFP works everywhere.

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
from ..core.inputs import Input
from ..core.sizing import CellSpec
from ..core.sizing_table import CELL_SIZING, COMPONENTS
from ..core.sizing_values import spec_values
from ..core.validate import Names
from .input_rules import check_formula, excel_test, must
from .layout import Columns, Ref, SheetWriter, add_name, finish_sheet, style, validate
from .notes import CAUTION, legend, write_notes
from .sizing_lists import write_lists
from .sizing_order import build_procurement, build_whatif
from .sizing_sheets import build_bom, build_electrodes, resolved_name
from .workbook_inputs import set_inputs

__all__ = ["build_cell_sizing", "build_demo", "fill_demo", "fill_spec"]

CHECK = "F"  # the column of the check cells on the Inputs sheet
_SCENARIO = "Scenario"
_PRICES = CELL_SIZING.get(COMPONENTS[0].price).section


def _resolve_formula(inp: Input) -> str:
    assert isinstance(inp.domain, Names)
    call = f'CW_MATERIAL_NAME({inp.name},"{inp.domain.roles[0]}")'
    return f'=IF(ISBLANK({inp.name}),"",{call})' if inp.optional else f"={call}"


def _input_row(w: SheetWriter, inp: Input, checks: list[Ref]) -> None:
    """One input, the catalogue name it resolves to (material inputs) and its check."""
    ref = w.input(inp)
    resolved = None
    if isinstance(inp.domain, Names):
        cell = w.ws[ref.at("D").plain]
        style(cell, "lookup").value = _resolve_formula(inp)
        resolved = resolved_name(inp.name)
        add_name(w.wb, resolved.name, w.ws, ref.at("D").local)
    check = ref.at(CHECK)
    style(w.ws[check.plain], "calc").value = check_formula(
        inp, inp.name, None if resolved is None else str(resolved)
    )
    checks.append(check)


def _price_rows(w: SheetWriter, checks: list[Ref]) -> None:
    """Price and unit per component (two inputs of the table on one row); the
    label and the hint show the component's material and its demo price."""
    ws = w.ws
    w.band(["Component and material", "Your price", "Unit", "Blank price: demo price list",
            "Check"])
    for comp in COMPONENTS:
        row = w.row
        material = resolved_name(comp.material)
        style(ws[f"B{row}"], "text").value = (
            f'="{comp.label}: "&IF({material}="","(none)",{material})'
        )
        price, unit = CELL_SIZING.get(comp.price), CELL_SIZING.get(comp.price_unit)
        for inp, col in ((price, "C"), (unit, "D")):
            style(ws[f"{col}{row}"], "input", inp.fmt)
            validate(ws, inp, f"{col}{row}")
            add_name(w.wb, inp.name, ws, f"${col}${row}")
        demo = f"MATCH({material},list_material,0)"
        style(ws[f"E{row}"], "hint").value = (
            f'=IF({material}="","",IFERROR("demo "&TEXT(INDEX(list_demo_price,{demo}),'
            f'"0.00")&" "&INDEX(list_demo_unit,{demo})&" (invented)","no demo price: give one"))'
        )
        style(ws[f"{CHECK}{row}"], "calc").value = (
            f'=IF(NOT({excel_test(price, price.name)}),"price {must(price)}",'
            f'IF(NOT({excel_test(unit, unit.name)}),"unit {must(unit)}","ok"))'
        )
        checks.append(Ref(ws.title, CHECK, row))
        w.row += 1


def _binder_check(side: str) -> str:
    share, second = f"in_{side}_binder2_share", f"in_{side}_binder2"
    first2, second2 = resolved_name(f"in_{side}_binder"), resolved_name(second)
    return (
        f'=IF({share}=0,"ok",IF(ISBLANK({second}),"name the second binder or set its share '
        f'to 0",IF({second2}={first2},"the second binder repeats the first","ok")))'
    )


def _checks(w: SheetWriter, input_checks: list[Ref]) -> list[Ref]:
    """The Checks block: every input in its range, then the rules that join inputs."""
    in_range = ",".join(f'{c.local}="ok"' for c in input_checks)
    rows = (
        ("Inputs within their allowed ranges",
         f'=IF(IFERROR(AND({in_range}),FALSE),"ok",'
         '"an input is out of range: see the Check column")'),
        ("Cathode coating fractions",
         '=IF(in_cathode_active+in_cathode_binder_fraction<=1+1E-12,"ok",'
         '"active + binder fractions exceed 100 %")'),
        ("Anode coating fractions",
         '=IF(in_anode_active+in_anode_binder_fraction<=1+1E-12,"ok",'
         '"active + binder fractions exceed 100 %")'),
        ("Cathode binders", _binder_check("cathode")),
        ("Anode binders", _binder_check("anode")),
        ("Order",
         '=IF(in_order_basis="cells",IF(in_order_size=ROUND(in_order_size,0),"ok",'
         '"give a whole number of cells"),"ok")'),
        ("Nominal voltage",
         '=IF(ISNUMBER(out_voltage_V),"ok","cannot be found: the materials use different '
         'voltage references or give no positive difference; type a nominal voltage")'),
        ("Prices",
         '=IF(ISNUMBER(out_cost_per_cell_USD),"ok","a price is missing: a price typed without '
         'its unit, or a material without a demo price")'),
        ("Results",
         '=IF(AND(ISNUMBER(out_cost_per_kWh_USD),ISNUMBER(out_Wh_kg),ISNUMBER(out_order_cells)),'
         '"ok","a result is an error value: check the inputs above")'),
    )
    return [w.value(label, formula, "", "") for label, formula in rows]


def _build_inputs(wb: Workbook) -> Worksheet:
    ws = wb.active
    ws.title = "Inputs"
    w = SheetWriter(wb, ws, Columns(label="B", value="C", unit="D", note="E"),
                    {"A": 2.5, "B": 44.0, "C": 22.0, "D": 20.0, "E": 62.0, CHECK: 30.0})
    w.title(
        "Cell sizing: inputs",
        "A stacked-electrode cell from its materials and design numbers. Work down this sheet, "
        "then read Electrodes, Bill of materials, Procurement and What-if.",
    )
    w.caution(CAUTION, span=5, height=32.0)
    legend(w)
    w.skip()
    w.input(CELL_SIZING.get("in_scenario"))
    ws.merge_cells(f"C{w.row - 1}:E{w.row - 1}")
    summary_row = w.row
    w.row += 1
    input_checks: list[Ref] = []
    for section, inputs in CELL_SIZING.sections():
        if section == _SCENARIO:
            continue
        w.section(section)
        style(ws[f"{CHECK}{w.row - 1}"], "unit").value = "Check"
        if section == _PRICES:
            _price_rows(w, input_checks)
            continue
        for inp in inputs:
            _input_row(w, inp, input_checks)
    w.section("Checks")
    checks = _checks(w, input_checks)
    all_ok = ",".join(f'{c.local}="ok"' for c in checks)
    ws[f"B{summary_row}"] = "Input checks"
    style(ws[f"B{summary_row}"], "text")
    style(ws[f"C{summary_row}"], "result").value = (
        f'=IF(IFERROR(AND({all_ok}),FALSE),"all checks pass",'
        '"a check fails: see Checks at the bottom")'
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
        "Names: each material input accepts the catalogue's names and aliases (LFP, NCM811); "
        "the cell beside it shows the catalogue's own name (CW_MATERIAL_NAME), and every "
        "look-up reads that cell.",
        "The same equations run in Python (udfs.core.sizing and udfs.core.procurement, see "
        "docs/sizing-model.md); a test proves the two routes agree to 1 part in 1e9.",
        "What-if: each grid is one array formula of CW_CELL_DESIGN, which runs the Python "
        "sizing model on the inputs listed below the grids with the loading and the N/P "
        "varied; a check row compares it with the Bill of materials at the current inputs.",
    ]
    live = [
        ("Cathode practical capacity", '=CW_SOURCE(mat_cathode,"practical_capacity")'),
        ("Cathode average voltage", '=CW_SOURCE(mat_cathode,"average_voltage")'),
        ("Cathode density", '=CW_SOURCE(mat_cathode,"density")'),
        ("Anode practical capacity", '=CW_SOURCE(mat_anode,"practical_capacity")'),
        ("Anode density", '=CW_SOURCE(mat_anode,"density")'),
        ("Separator thickness", '=CW_SOURCE(mat_separator,"thickness")'),
        ("Electrolyte density", '=CW_SOURCE(mat_electrolyte,"density")'),
        ("Cathode foil density", '=CW_SOURCE(mat_cathode_foil,"density")'),
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
    _build_inputs(wb)
    cells = build_electrodes(wb)
    bom = build_bom(wb, cells)
    build_procurement(wb, bom)
    build_whatif(wb)
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
    >>> from udfs.templates.workbook_inputs import input_values
    >>> input_values(wb)["in_cathode"], input_values(wb)["in_loading_basis"]
    ('LiFePO4', 'loading')
    """
    if not isinstance(wb, Workbook) or "in_cathode" not in wb.defined_names:
        raise InputError("workbook", None, detail="not a cell-sizing workbook (no in_cathode)")
    values = spec_values(spec, order_cells=order_cells, order_MWh=order_MWh)
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
