"""The cell-sizing workbook: Inputs, Electrodes, Format, Bill of materials,
Pack, Procurement, What-if and Notes (plus a hidden Lists sheet).

It is the spreadsheet route to the numbers of :mod:`udfs.core.sizing`,
:mod:`udfs.core.pack` and :mod:`udfs.core.procurement`: the same equations
(``docs/sizing-model.md``) in native formulas, with catalogue values read
through ``CW_`` functions. The Inputs sheet is written from the input table
(:data:`udfs.core.sizing_table.CELL_SIZING`): every input's cell, defined name,
unit, hint, data validation and check cell come from its one declaration.
Each material input has a cell beside it with the catalogue's own name
(``CW_MATERIAL_NAME``, defined name ``mat_...``), and each input the value in
use (``use_...``); every look-up reads those cells, so an alias such as LFP
works everywhere. The design rules are cells named ``err_...`` and
``warn_...`` (:mod:`udfs.templates.sizing_checks`).

>>> wb = build_cell_sizing()
>>> wb.sheetnames
['Inputs', 'Electrodes', 'Format', 'Bill of materials', 'Pack', 'Procurement', 'What-if', \
'Notes', 'Lists']
>>> wb.active.title
'Inputs'
"""

from __future__ import annotations

from openpyxl import Workbook

from ..core.errors import InputError
from ..core.sizing import CellSpec
from ..core.sizing_values import spec_values
from .layout import finish_sheet
from .notes import write_notes
from .sizing_checks import write_checks
from .sizing_format import build_format
from .sizing_inputs import build_inputs
from .sizing_lists import write_lists
from .sizing_order import build_procurement, build_whatif
from .sizing_pack import build_pack
from .sizing_sheets import build_bom, build_electrodes
from .workbook_inputs import set_inputs

__all__ = ["build_cell_sizing", "build_demo", "fill_demo", "fill_spec"]

def _source(args: str) -> str:
    """A live CW_SOURCE look-up; a value the catalogue lacks is the user's input."""
    return f'=IFERROR(CW_SOURCE({args}),"not in the catalogue: your input")'


def _notes(wb: Workbook) -> None:
    method = [
        "Capacity basis: each electrode's first-charge specific capacity and first-cycle "
        "efficiency (catalogue, or yours). The cathode's first-charge areal capacity = loading x "
        "active fraction x mAh/g / 1000; the anode carries N/P (first-charge basis) times it. "
        "The reversible capacity per unit area is the lower of the cathode's own limit "
        "(first charge x its efficiency) and the lithium left after the anode's first-cycle "
        "loss, min(cathode, anode) - anode x (1 - its efficiency): below N/P 1 the anode "
        "limits it. No loss is taken twice.",
        "Nominal voltage: cathode minus anode average discharge voltage (same reference); the "
        "cell's limits: the couple's window, cathode min - anode max to cathode max - anode min.",
        "Formats (Format sheet): stacked pouch, wound cylinder (18, 21, 46 mm classes), "
        "prismatic can with flat wound rolls or stacks. Target mode: the target and the free "
        "dimensions give the last one; envelope mode: the outer size gives the capacity. Blank "
        "dimensions take the class preset (CW_FORMAT_PRESET); a wound roll's strip length is the "
        "Archimedean spiral from the core to the can.",
        "Masses: coatings = loading x fraction x coated area; foils, separator = area x "
        "thickness x density (x (1 - porosity) for the separator); electrolyte = fill x pore "
        "volume x density; tabs and housing from their size and material (or as given).",
        "Costs per good cell: electrode materials (coatings and foils) / (1 - scrap), all / "
        "yield. Prices: CW_PRICE parses each unit and currency and turns it into USD/kg. "
        "Procurement: kg to buy = cells x g per cell / 1000 with the same factors; metals = kg x "
        "element mass fraction; lithium also as LCE.",
        "Pack: cells in series = the most whose upper limits stay within the pack's highest "
        "voltage (their lower limits must stay above its lowest); parallel strings from the "
        "energy wanted; structure by cell-to-pack fractions or component lines.",
        "Checks: errors (the model cannot compute) and warnings (design rules with their "
        "bounds and sources), one named cell each (err_..., warn_...); 'all checks pass' only "
        "when none fires.",
        "Names: each material input accepts the catalogue's names and aliases (LFP, NCM811); "
        "the cell beside it shows the catalogue's own name (CW_MATERIAL_NAME), and every "
        "look-up reads that cell.",
        "The same equations run in Python (udfs.core.sizing, udfs.core.pack, "
        "udfs.core.procurement; docs/sizing-model.md); a test proves the two routes agree to 1 "
        "part in 1e9 for every format and mode.",
        "Without the add-in: every cell shows the value cached when the file was computed; "
        "native formulas (checks, geometry, masses, costs) recalculate, but everything that "
        "depends on a CW_ look-up (catalogue values, prices, the what-if grids) keeps its cached "
        "value or shows #NAME? after a change. With the add-in (xlwings, UDF Modules = udfs) the "
        "whole workbook recalculates live; see docs/templates.md.",
    ]
    live = [
        ("Cathode first-charge capacity",
         _source('mat_cathode,"first_charge_capacity"')),
        ("Cathode first-cycle efficiency",
         _source('mat_cathode,"first_cycle_efficiency"')),
        ("Cathode average voltage", _source('mat_cathode,"average_voltage"')),
        ("Cathode density", _source('mat_cathode,"density"')),
        ("Cathode recipe (porosity)", _source('mat_cathode,"electrode_porosity"')),
        ("Anode first-charge capacity", _source('mat_anode,"first_charge_capacity"')),
        ("Anode first-cycle efficiency", _source('mat_anode,"first_cycle_efficiency"')),
        ("Anode density", _source('mat_anode,"density"')),
        ("Separator thickness", _source('mat_separator,"thickness"')),
        ("Electrolyte density", _source('use_electrolyte,"density"')),
        ("Housing density", _source('use_housing,"density"')),
    ]
    cautions = [
        "Catalogue capacities are typical values at an unstated rate and temperature; check "
        "them against your supplier's data sheets.",
        "Prices in the demo list and the exchange rates are invented. Replace them with "
        "quotations before any decision. Costs are materials only: no energy, labour, equipment "
        "or overheads.",
        "Format presets are generic classes (common practice or from memory), never a "
        "product's drawing. The model has no insulation films, tapes, welds, free electrolyte "
        "outside the pores, and no ageing.",
        "Packs above 60 V DC can kill: the Pack sheet shows the caution when it applies; such "
        "packs are designed, built and serviced under the standards for hazardous-voltage "
        "batteries, by qualified engineers.",
    ]
    write_notes(wb, "Notes: method, sources and cautions", method, cautions, live)


def build_cell_sizing() -> Workbook:
    """The cell-sizing template as a new openpyxl workbook."""
    wb = Workbook()
    inputs = build_inputs(wb)
    electrodes = build_electrodes(wb)
    cell = build_format(wb, electrodes)
    bom = build_bom(wb, electrodes, cell)
    pack_fit = build_pack(wb, electrodes, cell)
    build_procurement(wb, bom)
    build_whatif(wb)
    _notes(wb)
    write_lists(wb)
    write_checks(inputs, electrodes, bom.problems, cell.fits, pack_fit)
    for row, comp in inputs.price_rows:  # the material in use beside each price
        inputs.ws[f"G{row}"].value = f"={bom.cell(comp, 'C')}"
    finish_sheet(inputs.ws, first_cell="C6", freeze="A6")
    inputs.ws.print_title_rows = "1:2"
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
