"""The cost workbook: Inputs (price book, metal indexes, cathode contract,
plant), Design (one cell), Cost (the priced bill of materials and the
waterfall to the full cost per kWh), Risk (ranges, percentiles, histogram,
tornado), Compare (three designs side by side), Notes, and the hidden Lists.

The cell's bill of materials comes from the core through ``CW_CELL_BOM`` and
its energy and capacity through ``CW_CELL_DESIGN`` (the Python sizing model:
the workbook holds no copy of it). Prices come from the chosen price book
through ``CW_PRICE_BOOK`` (fixed prices and conversion fees, index
coefficients), the metal indexes and the contract's payables through their
inputs; everything from there on is native arithmetic a reviewer can follow:
unit prices, cost per kWh of each line, the plant's waterfall
(:mod:`udfs.core.conversion_cost`, the same equations), the sensitivities, the
Monte Carlo rows (samples from ``CW_RANGE_SAMPLE``, the core's own draws) and
the tornado. Every input comes from one table, :data:`udfs.core.cost_table.COST`.

>>> wb = build_cost_model()
>>> wb.sheetnames
['Inputs', 'Design', 'Cost', 'Risk', 'Compare', 'Notes', 'Lists']
"""

from __future__ import annotations

import dataclasses
from collections.abc import Sequence
from dataclasses import dataclass

from openpyxl import Workbook
from openpyxl.chart import BarChart, Reference
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.formula import ArrayFormula
from openpyxl.worksheet.worksheet import Worksheet

from ..core.conversion_cost import COST_CAUTION, PLANT
from ..core.cost_table import (
    CONTRACT_INDEXES,
    COST,
    DESIGN_INPUTS,
    RISK_INPUTS,
    index_key,
)
from ..core.inputs import Input
from ..core.metal_index import INDEXES
from ..core.sizing_table import CELL_SIZING, COMPONENTS
from ..core.validate import Names
from .input_rules import check_formula, excel_test, must
from .layout import (
    PALETTE,
    Columns,
    Ref,
    SheetWriter,
    add_name,
    axis_text,
    bar_chart,
    finish_sheet,
    heading,
    style,
    validate,
)
from .notes import CAUTION, legend, write_notes
from .sizing_lists import write_lists
from .sizing_sheets import resolved_name

__all__ = ["BOM_ROWS", "RISK_SAMPLES", "build_cost_model"]

#: Rows of a priced bill of materials (CW_CELL_BOM spills this many).
BOM_ROWS = len(COMPONENTS)
#: Monte Carlo samples on the Risk sheet (the command line runs millions).
RISK_SAMPLES = 1000
#: Bins of the Risk sheet's histogram.
HISTOGRAM_BINS = 20
CHECK = "F"
INDEX_NAMES = tuple(ix.name for ix in INDEXES)
_BOOK = "in_price_book"
_WATERFALL = ("materials in cells", "scrap", "scrap credit", "depreciation", "labour", "energy",
              "overhead", "margin")
_BOOK_NOTE = '="price book "&out_book_label'


def _col(k: int) -> str:
    return get_column_letter(k)


def _checks_ok(refs: Sequence[Ref]) -> str:
    """A native test: every check cell says ok."""
    tests = ",".join(f'{r}="ok"' for r in refs)
    return f"IFERROR(AND({tests}),FALSE)"


# --------------------------------------------------------------------------- inputs


def _input_at(wb: Workbook, ws: Worksheet, inp: Input, col: str, row: int,
              value: float | str | None = None) -> Ref:
    """One input cell written from its declaration (value, style, validation, name)."""
    cell = ws[f"{col}{row}"]
    cell.value = inp.default if value is None else value
    style(cell, "input", inp.fmt)
    validate(ws, inp, f"{col}{row}")
    add_name(wb, inp.name, ws, f"${col}${row}")
    return Ref(ws.title, col, row)


def _unpriced(index_use: dict[str, Ref], name: str) -> str:
    """A native test: index ``name`` has no price (not given, not in the book)."""
    ref = index_use[name]
    return f'AND(ISBLANK({ref.at("C").local}),{ref.at("E").local}="")'


def _check_at(ws: Worksheet, inp: Input, ref: Ref, resolved: str | None = None) -> Ref:
    cell = ws[f"{CHECK}{ref.row}"]
    style(cell, "calc").value = check_formula(inp, inp.name, resolved)
    return Ref(ws.title, CHECK, ref.row)


@dataclass
class _Inputs:
    """Cells of the Inputs sheet the other sheets read."""

    index_use: dict[str, Ref]
    contract_coef: dict[str, Ref]
    contract_fee: Ref
    contract_on: Ref
    checks: list[Ref]


def _build_inputs(wb: Workbook) -> _Inputs:
    ws = wb.active
    ws.title = "Inputs"
    w = SheetWriter(wb, ws, Columns(label="B", value="C", unit="D", note="E"),
                    {"A": 2.5, "B": 40.0, "C": 16.0, "D": 16.0, "E": 16.0, CHECK: 30.0,
                     "G": 16.0, "H": 44.0})
    w.title("Cell cost: inputs",
            "Pick a price book, adjust the metal indexes and the cathode contract, describe the "
            "plant; the cell itself is on Design. Then read Cost, Risk and Compare.")
    w.caution(COST_CAUTION, span=6, height=30.0)
    legend(w)
    summary = w.row
    w.row += 1
    checks: list[Ref] = []

    # ---- the price book
    w.section("Price book")
    style(ws[f"{CHECK}{w.row - 1}"], "unit").value = "Check"
    book = COST.get(_BOOK)
    ref = w.input(book)
    book_row = ref.row
    ws[f"E{ref.row}"] = None
    ws.merge_cells(f"C{ref.row}:D{ref.row}")
    checks.append(_check_at(ws, book, ref))
    style(ws[f"H{ref.row}"], "hint").value = book.hint
    w.value("Price book in use (name and latest date)",
            f'=CW_PRICE_BOOK_INFO({_BOOK},"label")', "", kind="lookup", name="out_book_label")
    w.value("Date of the price book", f'=CW_PRICE_BOOK_INFO({_BOOK},"date")', "",
            kind="lookup", name="out_book_date")

    # ---- metal indexes
    w.section("Metal indexes (USD per t of the index's product)")
    w.band(["Index", "Your value", "Unit", "Price book", "Check", "In use", "Note"])
    index_use: dict[str, Ref] = {}
    for ix in INDEXES:
        inp = COST.get(f"in_index_{index_key(ix.name)}")
        row = w.row
        style(ws[f"B{row}"], "text").value = inp.label
        ref = _input_at(wb, ws, inp, "C", row)
        style(ws[f"D{row}"], "unit").value = inp.unit
        style(ws[f"E{row}"], "lookup", "#,##0").value = (
            f'=IFERROR(CW_PRICE_BOOK({_BOOK},"index:{ix.name}"),"")')
        checks.append(_check_at(ws, inp, ref))
        style(ws[f"G{row}"], "calc", "#,##0").value = (
            f"=IF(ISNUMBER(C{row}),C{row},IF(ISNUMBER(E{row}),E{row},0))")
        style(ws[f"H{row}"], "hint").value = (
            f'=IF(AND(ISBLANK(C{row}),NOT(ISNUMBER(E{row}))),"not in this price book: 0 unless '
            f'given","{ix.note}")')
        index_use[ix.name] = Ref(ws.title, "G", row)
        w.row += 1
    add_name(wb, "cost_index_use", ws,
             f"$G${index_use[INDEX_NAMES[0]].row}:$G${index_use[INDEX_NAMES[-1]].row}")

    # ---- the cathode contract
    w.section("Cathode contract (blank: the price book's terms)")
    w.band(["Term", "Your value", "Unit", "Price book", "Check", "In use", "t of index per t"])
    material = COST.get("in_contract_material")
    row = w.row
    style(ws[f"B{row}"], "text").value = material.label
    mref = _input_at(wb, ws, material, "C", row)
    assert isinstance(material.domain, Names)
    mat = resolved_name(material.name)
    style(ws[f"D{row}"], "lookup").value = (
        f'=CW_MATERIAL_NAME({material.name},"{material.domain.roles[0]}")')
    add_name(wb, mat.name, ws, f"$D${row}")
    style(ws[f"E{row}"], "lookup").value = (
        f'=IFERROR(CW_PRICE_BOOK({_BOOK},{mat},"kind"),"not in this price book")')
    checks.append(_check_at(ws, material, mref, str(mat)))
    style(ws[f"G{row}"], "calc").value = f'=AND(NOT(ISERROR({mat})),E{row}="indexed")'
    contract_on = Ref(ws.title, "G", row)
    add_name(wb, "contract_on", ws, f"$G${row}")
    style(ws[f"H{row}"], "hint").value = (
        f'=IF(G{row},"terms apply wherever a design uses "&{mat},'
        f'"not indexed in this price book: the terms below are not used")')
    w.row += 1
    fee = COST.get("in_contract_fee")
    row = w.row
    style(ws[f"B{row}"], "text").value = fee.label
    fref = _input_at(wb, ws, fee, "C", row)
    style(ws[f"D{row}"], "unit").value = fee.unit
    style(ws[f"E{row}"], "lookup", "#,##0.00").value = (
        f'=IFERROR(CW_PRICE_BOOK({_BOOK},{mat},"base"),"")')
    checks.append(_check_at(ws, fee, fref))
    style(ws[f"G{row}"], "calc", "#,##0.00").value = (
        f"=IF(ISNUMBER(C{row}),C{row},IF(ISNUMBER(E{row}),E{row},0))")
    contract_fee = Ref(ws.title, "G", row)
    w.row += 1
    contract_coef: dict[str, Ref] = {}
    payable_use: dict[str, Ref] = {}
    for name in CONTRACT_INDEXES:
        inp = COST.get(f"in_payable_{index_key(name)}")
        row = w.row
        style(ws[f"B{row}"], "text").value = inp.label
        pref = _input_at(wb, ws, inp, "C", row)
        style(ws[f"D{row}"], "unit").value = inp.unit
        style(ws[f"E{row}"], "lookup", "0.0%").value = (
            f'=IFERROR(CW_PRICE_BOOK({_BOOK},{mat},"payable","{name}"),"")')
        checks.append(_check_at(ws, inp, pref))
        style(ws[f"G{row}"], "calc", "0.0%").value = (
            f"=IF(ISNUMBER(C{row}),C{row},IF(ISNUMBER(E{row}),E{row},0))")
        style(ws[f"H{row}"], "calc", "0.0000").value = (
            f'=IF(ISERROR({mat}),0,CW_INDEX_COEFFICIENT({mat},"{name}",G{row}))')
        payable_use[name] = Ref(ws.title, "G", row)
        contract_coef[name] = Ref(ws.title, "H", row)
        w.row += 1
    row = w.row
    style(ws[f"B{row}"], "text").value = "Every index the contract pays for has a price"
    unpriced = ",".join(
        f"AND({payable_use[n]}>0,{_unpriced(index_use, n)})" for n in CONTRACT_INDEXES)
    style(ws[f"{CHECK}{row}"], "calc").value = (
        f'=IF(AND({contract_on},OR({unpriced})),"a payable is given for an index that has no '
        'price: give the index on the rows above","ok")')
    checks.append(Ref(ws.title, CHECK, row))
    w.row += 1
    li_c, li_h = payable_use["lithium carbonate"], payable_use["lithium hydroxide"]
    row = w.row
    style(ws[f"B{row}"], "text").value = "Lithium paid against one index"
    style(ws[f"{CHECK}{row}"], "calc").value = (
        f'=IF(AND({li_c}>0,{li_h}>0),"lithium is paid against both lithium indexes: give one '
        'a payable of 0","ok")')
    checks.append(Ref(ws.title, CHECK, row))
    w.row += 1

    # ---- the plant
    w.section(PLANT.sections()[0][0])
    style(ws[f"{CHECK}{w.row - 1}"], "unit").value = "Check"
    for inp in PLANT:
        ref = w.input(inp)
        checks.append(_check_at(ws, inp, ref))

    style(ws[f"B{summary}"], "text").value = "Input checks (this sheet and Design)"
    style(ws[f"C{summary}"], "result").value = (
        '=IF(AND(inputs_ok,design_ok),"all checks pass","a check fails: see the Check columns")')
    ws.merge_cells(f"C{summary}:E{summary}")
    add_name(wb, "out_checks", ws, f"$C${summary}")
    style(ws[f"{CHECK}{summary}"], "calc").value = f"={_checks_ok(checks)}"
    add_name(wb, "inputs_ok", ws, f"${CHECK}${summary}")
    finish_sheet(ws, landscape=True, first_cell=f"C{book_row}", freeze="A5")
    return _Inputs(index_use, contract_coef, contract_fee, contract_on, checks)


# --------------------------------------------------------------------------- design


def _design_input_row(w: SheetWriter, inp: Input, checks: list[Ref]) -> None:
    ref = w.input(inp)
    resolved = None
    if isinstance(inp.domain, Names):
        name = resolved_name(inp.name)
        call = f'CW_MATERIAL_NAME({inp.name},"{inp.domain.roles[0]}")'
        formula = f'=IF(ISBLANK({inp.name}),"",{call})' if inp.optional else f"={call}"
        style(w.ws[ref.at("D").plain], "lookup").value = formula
        add_name(w.wb, name.name, w.ws, ref.at("D").local)
        resolved = str(name)
    checks.append(_check_at(w.ws, inp, ref, resolved))


def _input_table(ws: Worksheet, first: int, name_col: str, value_col: str,
                 values: dict[str, str]) -> str:
    """A two-column range (input names, values) that CW_ functions read."""
    row = first
    for name in DESIGN_INPUTS:
        style(ws[f"{name_col}{row}"], "text").value = name
        style(ws[f"{value_col}{row}"], "calc", CELL_SIZING.get(name).fmt).value = values[name]
        row += 1
    return f"${name_col}${first}:${value_col}${row - 1}"


def _build_design(wb: Workbook) -> str:
    ws = wb.create_sheet("Design")
    w = SheetWriter(wb, ws, Columns(label="B", value="C", unit="D", note="E"),
                    {"A": 2.5, "B": 44.0, "C": 20.0, "D": 20.0, "E": 60.0, CHECK: 28.0})
    w.title("Design: the cell to cost",
            "The cell-sizing inputs of one cell (the same inputs as the cell-sizing workbook, "
            "prices left out: the price book prices this workbook). The core sizes it through "
            "CW_CELL_BOM and CW_CELL_DESIGN.")
    w.caution(CAUTION, span=5, height=32.0)
    checks: list[Ref] = []
    for section, inputs in COST.sections():
        mine = [i for i in inputs if i.name in DESIGN_INPUTS]
        if not mine:
            continue
        w.section(section)
        style(ws[f"{CHECK}{w.row - 1}"], "unit").value = "Check"
        for inp in mine:
            _design_input_row(w, inp, checks)
    w.section("Checks")
    fractions = w.value(
        "Coating fractions",
        '=IF(AND(in_cathode_active+in_cathode_binder_fraction<=1+1E-12,'
        'in_anode_active+in_anode_binder_fraction<=1+1E-12),"ok",'
        '"active + binder fractions exceed 100 %")', "")
    ws.move_range(f"C{fractions.row}", cols=3)
    checks.append(Ref(ws.title, CHECK, fractions.row))
    ok = w.value("All design inputs", "", "")
    style(ws[f"C{ok.row}"], "calc").value = (
        f'=IF({CHECK}{ok.row},"ok","a check fails: see the Check column")')
    style(ws[f"{CHECK}{ok.row}"], "calc").value = f"={_checks_ok(checks)}"
    add_name(wb, "design_ok", ws, f"${CHECK}${ok.row}")
    w.row += 1
    w.section("Inputs of the CW_ functions (from the cells above)")
    table = _input_table(ws, w.row, "B", "C",
                         {n: f'=IF(ISBLANK({n}),"",{n})' for n in DESIGN_INPUTS})
    add_name(wb, "design_inputs", ws, table)
    finish_sheet(ws, first_cell="C5", freeze="A4")
    return "design_inputs"


# --------------------------------------------------------------------------- priced lines


@dataclass
class _Lines:
    """Cells of one priced bill of materials."""

    first: int
    last: int
    energy: Ref
    capacity: Ref
    electrode_sum: Ref
    other_sum: Ref
    usd_col: str
    kg_kwh_col: str
    qty_kwh_col: str
    electrode_col: str
    grid: dict[str, str]  # index name -> column of its coefficients


_LINE_HEADS = ("Component", "Material", "Electrode part", "Price basis", "Quantity per cell",
               "Quantity per kWh", "Fixed price or fee, USD per unit", "Unit price, USD per unit",
               "USD per kWh (in the cells)", "kg per kWh", "kg per cell", "m2 per cell",
               "L per cell", "pieces per cell")


def _priced_lines(wb: Workbook, ws: Worksheet, top: int, inputs: str, ins: _Inputs,
                  prefix: str) -> _Lines:
    """The bill of materials of the design whose inputs are the range ``inputs``,
    priced from the book: one row per line, the index coefficients on the right.

    Columns: B component, C material, D electrode (1/0), E price basis, F quantity
    per cell on that basis, G per kWh, H fixed price or fee, I unit price, J USD/kWh,
    K kg per kWh, L..O the core's kg, m2, L and pieces per cell, Q.. one column per
    index (t of the index's product per t of material)."""
    first, last = top + 3, top + 2 + BOM_ROWS
    rows = range(first, last + 1)
    style(ws[f"B{top}"], "text").value = "Energy per cell"
    energy = Ref(ws.title, "C", top)
    style(ws[f"C{top}"], "lookup", "#,##0.00").value = f'=CW_CELL_DESIGN("energy_Wh",{inputs})'
    style(ws[f"D{top}"], "unit").value = "Wh"
    style(ws[f"E{top}"], "text").value = "Capacity per cell"
    capacity = Ref(ws.title, "F", top)
    style(ws[f"F{top}"], "lookup", "#,##0.00").value = (
        f'=CW_CELL_DESIGN("capacity_Ah",{inputs})')
    style(ws[f"G{top}"], "unit").value = "Ah"
    # index names and values in use above the coefficient grid
    grid: dict[str, str] = {}
    for k, name in enumerate(INDEX_NAMES):
        c = _col(17 + k)
        grid[name] = c
        style(ws[f"{c}{top}"], "calc", "#,##0").value = f"={ins.index_use[name]}"
        style(ws[f"{c}{top + 1}"], "unit").value = "USD/t in use"
    heads = [*_LINE_HEADS, "", *INDEX_NAMES]
    for k, text in enumerate(heads):
        if text:
            style(ws.cell(top + 2, 2 + k, text), "band")
    ws.row_dimensions[top + 2].height = 45.0
    # the core's bill of materials: one array formula per column
    for col, field in (("B", "component"), ("C", "material"), ("D", "electrode"), ("L", "kg"),
                       ("M", "m2"), ("N", "L"), ("O", "pieces")):
        for r in rows:
            style(ws[f"{col}{r}"], "lookup", "0.000000" if col in "LMNO" else None)
        ws[f"{col}{first}"] = ArrayFormula(f"{col}{first}:{col}{last}",
                                           f'=CW_CELL_BOM({inputs},"{field}")')
    wh = str(energy)
    for r in rows:
        blank = f'$C{r}=""'
        style(ws[f"E{r}"], "lookup").value = (
            f'=IF({blank},"",CW_PRICE_BOOK({_BOOK},$C{r},"basis"))')
        style(ws[f"F{r}"], "calc", "0.000000").value = (
            f'=IF({blank},0,IF(E{r}="mass",L{r},IF(E{r}="area",M{r},'
            f'IF(E{r}="volume",N{r},O{r}))))')
        style(ws[f"G{r}"], "calc", "0.0000").value = f"=F{r}*1000/{wh}"
        contract = f"AND(contract_on,$C{r}=mat_contract_material)"
        style(ws[f"H{r}"], "lookup", "#,##0.000").value = (
            f'=IF({blank},0,IF({contract},{ins.contract_fee},'
            f'CW_PRICE_BOOK({_BOOK},$C{r},"base")))')
        first_c, last_c = grid[INDEX_NAMES[0]], grid[INDEX_NAMES[-1]]
        style(ws[f"I{r}"], "calc", "#,##0.000").value = (
            f"=H{r}+SUMPRODUCT({first_c}{r}:{last_c}{r},${first_c}${top}:${last_c}${top})/1000")
        style(ws[f"J{r}"], "calc", "#,##0.000").value = f"=G{r}*I{r}"
        style(ws[f"K{r}"], "calc", "0.0000").value = f"=L{r}*1000/{wh}"
        for name, c in grid.items():
            book_coef = f'CW_PRICE_BOOK({_BOOK},$C{r},"coefficient",{c}${top + 2})'
            mine = ins.contract_coef.get(name)
            if mine is not None:  # the contract's terms where a line holds its material
                book_coef = f"IF({contract},{mine},{book_coef})"
            style(ws[f"{c}{r}"], "lookup", "0.0000").value = f"=IF({blank},0,{book_coef})"
    sums = last + 1
    style(ws[f"B{sums}"], "text").value = "Electrode parts (coatings and foils)"
    electrode_sum = Ref(ws.title, "J", sums)
    style(ws[f"J{sums}"], "calc", "#,##0.000").value = (
        f"=SUMPRODUCT(J{first}:J{last},D{first}:D{last})")
    style(ws[f"B{sums + 1}"], "text").value = "Other parts"
    other_sum = Ref(ws.title, "J", sums + 1)
    style(ws[f"J{sums + 1}"], "calc", "#,##0.000").value = (
        f"=SUM(J{first}:J{last})-J{sums}")
    add_name(wb, f"{prefix}_line_usd_kwh", ws, f"$J${first}:$J${last}")
    return _Lines(first, last, energy, capacity, electrode_sum, other_sum, "J", "K", "G", "D",
                  grid)


# --------------------------------------------------------------------------- the plant


@dataclass(frozen=True)
class _PlantTerms:
    """Where the plant inputs a Risk row varies come from (a cell, or the input's
    defined name); the fields are the plant's own field names."""

    electrode_yield: str = "in_electrode_yield"
    formation_yield: str = "in_formation_yield"
    energy_price_USD_per_kWh: str = "in_energy_price_USD_per_kWh"
    capex_USD_per_GWh: str = "in_capex_USD_per_GWh"
    labour_cost_USD_per_year: str = "in_labour_cost_USD_per_year"


_TERMS = frozenset(f.name for f in dataclasses.fields(_PlantTerms))


def _factors(t: _PlantTerms) -> tuple[str, str, str]:
    """(k_form, k_asm, k_el) of the plant model, as formulas."""
    k_form = f"(1/{t.formation_yield})"
    k_asm = f"({k_form}/in_assembly_yield)"
    k_el = f"({k_asm}/{t.electrode_yield})"
    return k_form, k_asm, k_el


def _plant_lines(E: str, C: str, t: _PlantTerms = _PlantTerms()) -> dict[str, str]:
    """The waterfall lines of :mod:`udfs.core.conversion_cost` as native
    formulas (without the ``=``), from the electrode parts ``E`` and the other
    parts ``C`` (USD/kWh in the cells). ``margin`` and the total refer to the
    lines by name: :func:`_write_plant` puts them in cells first."""
    k_form, k_asm, k_el = _factors(t)
    return {
        "materials in cells": f"{E}+{C}",
        "scrap": f"{E}*{k_el}+{C}*{k_asm}-({E}+{C})",
        "scrap credit": "-in_scrap_credit*{scrap}",
        "depreciation": f"{t.capex_USD_per_GWh}/(in_depreciation_years*1000000)",
        "labour": f"in_labour_headcount*{t.labour_cost_USD_per_year}"
                  "/(in_annual_output_GWh*1000000)",
        "energy": f"{t.energy_price_USD_per_kWh}*(in_energy_electrode_kWh_per_kWh*{k_el}"
                  f"+in_energy_dry_room_kWh_per_kWh*{k_asm}"
                  f"+in_energy_formation_kWh_per_kWh*{k_form})",
        "overhead": "in_overhead_fraction*({depreciation}+{labour}+{energy})",
        "margin": "in_margin_fraction*({materials in cells}+{scrap}+{scrap credit}"
                  "+{depreciation}+{labour}+{energy}+{overhead})",
    }


def _write_plant(ws: Worksheet, col: str, first: int, E: str, C: str,
                 t: _PlantTerms = _PlantTerms(), fmt: str = "#,##0.00") -> dict[str, Ref]:
    """The waterfall lines in ``col`` from row ``first`` down, then the full cost."""
    refs: dict[str, Ref] = {}
    for k, (line, formula) in enumerate(_plant_lines(E, C, t).items()):
        ref = Ref(ws.title, col, first + k)
        text = formula
        for name, r in refs.items():
            text = text.replace("{" + name + "}", r.local)
        style(ws[ref.plain], "calc", fmt).value = "=" + text
        refs[line] = ref
    full = Ref(ws.title, col, first + len(refs))
    style(ws[full.plain], "result", fmt).value = (
        f"=SUM({refs[_WATERFALL[0]].local}:{refs[_WATERFALL[-1]].local})")
    refs["full"] = full
    return refs


# --------------------------------------------------------------------------- cost sheet


@dataclass
class _Cost:
    lines: _Lines
    plant: dict[str, Ref]
    factor_electrode: Ref
    factor_other: Ref


def _waterfall_chart(ws: Worksheet, first: int, last: int, anchor: str) -> None:
    chart = BarChart()
    chart.type = "col"
    chart.grouping = "stacked"
    chart.overlap = 100
    chart.gapWidth = 50
    chart.legend = None
    data = Reference(ws, min_col=8, max_col=10, min_row=first - 1, max_row=last)
    chart.add_data(data, titles_from_data=True)
    chart.set_categories(Reference(ws, min_col=2, min_row=first, max_row=last))
    chart.series[0].graphicalProperties.noFill = True
    chart.series[0].graphicalProperties.line.noFill = True
    for s, colour in ((chart.series[1], PALETTE["grid_high"]),
                      (chart.series[2], PALETTE["input_edge"])):
        s.graphicalProperties.solidFill = colour
        s.graphicalProperties.line.solidFill = colour
    chart.y_axis.title = "USD per kWh of good cells"
    chart.y_axis.numFmt = "#,##0"
    chart.x_axis.delete = False
    chart.y_axis.delete = False
    for axis in (chart.x_axis, chart.y_axis):
        axis.txPr = axis_text(900)
    chart.height, chart.width = 9.0, 17.0
    ws.add_chart(chart, anchor)


def _build_cost(wb: Workbook, ins: _Inputs, inputs: str) -> _Cost:
    ws = wb.create_sheet("Cost")
    widths = {"A": 2.5, "B": 34.0, "C": 22.0, "D": 12.0, "E": 12.0, "F": 14.0, "G": 13.0,
              "H": 15.0, "I": 15.0, "J": 15.0, "K": 12.0}
    for k in range(len(INDEX_NAMES) + 5):
        widths.setdefault(_col(12 + k), 11.0)
    w = SheetWriter(wb, ws, Columns(label="B", value="C", unit="D", note="E"), widths)
    w.title("Cost: from the bill of materials to the full cost per kWh",
            "Materials at the price book's prices (indexes and contract as on Inputs), then the "
            "plant: scrap, scrap credit, depreciation, labour, energy, overhead, margin.")
    w.caution(COST_CAUTION, span=9, height=30.0)
    w.value("Price book", "=out_book_label", "", kind="lookup")

    # ---- key results (filled in below, once the lines exist)
    w.section("Key results")
    key_first = w.row
    w.row += 9

    # ---- the waterfall
    w.section("Waterfall, USD per kWh of good cells")
    w.band(["Line", "USD/kWh", "", "How it is found", "", "", "base", "adds", "takes off"])
    wf_first = w.row
    w.row += len(_WATERFALL) + 1

    # ---- the priced lines
    w.section("Bill of materials, priced (net quantities per cell and per kWh)")
    lines = _priced_lines(wb, ws, w.row, inputs, ins, "cost")
    w.row = lines.last + 3

    # factors of the sensitivities
    _, k_asm, k_el = _factors(_PlantTerms())
    fe = w.value("Materials factor, electrode parts",
                 f"={k_el}-in_scrap_credit*({k_el}-1)", "x",
                 "scrap through every step, less the credit", number_format="0.0000")
    fo = w.value("Materials factor, other parts", f"={k_asm}-in_scrap_credit*({k_asm}-1)", "x",
                 "scrap through assembly and formation, less the credit",
                 number_format="0.0000")

    # waterfall rows (now that the sums exist)
    plant = _write_plant(ws, "C", wf_first, str(lines.electrode_sum), str(lines.other_sum))
    notes = {
        "materials in cells": "purchase value of the bill of materials in good cells",
        "scrap": "material scrapped in electrode making, assembly and formation",
        "scrap credit": "share of the scrapped value recovered",
        "depreciation": "capital per annual GWh / (years x 1,000,000)",
        "labour": "headcount x cost per person / (annual GWh x 1,000,000)",
        "energy": "energy price x kWh per kWh of cells, per step",
        "overhead": "share of depreciation + labour + energy",
        "margin": "share of all lines above",
    }
    for k, line in enumerate(_WATERFALL):
        r = wf_first + k
        style(ws[f"B{r}"], "text").value = line[0].upper() + line[1:]
        style(ws[f"E{r}"], "hint").value = notes[line]
        prev = f"SUM($C${wf_first}:C{r - 1})" if k else "0"
        style(ws[f"H{r}"], "calc", "#,##0.00").value = f"=MIN({prev},{prev}+C{r})"
        style(ws[f"I{r}"], "calc", "#,##0.00").value = f"=MAX(C{r},0)"
        style(ws[f"J{r}"], "calc", "#,##0.00").value = f"=MAX(-C{r},0)"
    total = wf_first + len(_WATERFALL)
    style(ws[f"B{total}"], "text").value = "Full cost"
    style(ws[f"E{total}"], "hint").value = _BOOK_NOTE
    style(ws[f"H{total}"], "calc", "#,##0.00").value = 0
    style(ws[f"I{total}"], "calc", "#,##0.00").value = f"=C{total}"
    style(ws[f"J{total}"], "calc", "#,##0.00").value = 0
    _waterfall_chart(ws, wf_first, total, f"L{wf_first - 2}")

    # key results
    w.row = key_first
    rows = (
        ("Full cost per kWh of good cells", f"={plant['full'].local}", "USD/kWh",
         "out_full_USD_kWh", "result", "#,##0.00"),
        ("Full cost per cell", f"={plant['full'].local}*{lines.energy.local}/1000", "USD/cell",
         "out_full_USD_cell", "result", "#,##0.00"),
        ("Full cost per Ah", f"=C{key_first + 1}/{lines.capacity.local}", "USD/Ah",
         "out_full_USD_Ah", "result", "#,##0.000"),
        ("Materials (in cells, scrap, credit)",
         f"=SUM({plant['materials in cells'].local}:{plant['scrap credit'].local})", "USD/kWh",
         "out_materials_USD_kWh", "calc", "#,##0.00"),
        ("Conversion (depreciation, labour, energy, overhead)",
         f"=SUM({plant['depreciation'].local}:{plant['overhead'].local})", "USD/kWh",
         "out_conversion_USD_kWh", "calc", "#,##0.00"),
        ("Energy per cell", f"={lines.energy.local}", "Wh", "out_energy_Wh", "lookup",
         "#,##0.00"),
        ("Capacity per cell", f"={lines.capacity.local}", "Ah", "out_capacity_Ah", "lookup",
         "#,##0.00"),
        ("Good cells per year", f"=in_annual_output_GWh*1000000000/{lines.energy.local}",
         "cells/yr", "out_cells_per_year", "calc", "#,##0"),
    )
    for label, formula, unit, name, kind, fmt in rows:
        note = _BOOK_NOTE if "USD" in unit else ""
        w.value(label, formula, unit, note, kind, fmt, name)  # type: ignore[arg-type]

    # ---- sensitivities to the indexes
    w.row = fo.row + 2
    w.section("Sensitivity to each index: USD per kWh for a rise of 1,000 USD/t")
    w.band(["Index", "USD/kWh per 1,000 USD/t", "", "Note"])
    sens_first = w.row
    for name, c in lines.grid.items():
        r = w.row
        style(ws[f"B{r}"], "text").value = name
        style(ws[f"C{r}"], "calc", "0.000").value = (
            f"=(SUMPRODUCT(K{lines.first}:K{lines.last},{c}{lines.first}:{c}{lines.last},"
            f"D{lines.first}:D{lines.last})*{fe.local}+(SUMPRODUCT(K{lines.first}:K{lines.last},"
            f"{c}{lines.first}:{c}{lines.last})-SUMPRODUCT(K{lines.first}:K{lines.last},"
            f"{c}{lines.first}:{c}{lines.last},D{lines.first}:D{lines.last}))*{fo.local})"
            f"*(1+in_margin_fraction)")
        style(ws[f"E{r}"], "hint").value = _BOOK_NOTE
        w.row += 1
    add_name(wb, "cost_sensitivity", ws, f"$C${sens_first}:$C${w.row - 1}")
    finish_sheet(ws, landscape=True)
    return _Cost(lines, plant, fe, fo)


# --------------------------------------------------------------------------- risk


def _risk_key(name: str) -> str:
    return name.split(":", 1)[-1].replace(" ", "_")


def _row_full(E: str, C: str, t: _PlantTerms) -> str:
    """The full cost per kWh of one scenario row, one formula: the waterfall of
    :func:`_plant_lines` summed (materials + scrap less the credit, conversion
    with its overhead, all with the margin)."""
    k_form, k_asm, k_el = _factors(t)
    scrap = f"({E}*{k_el}+{C}*{k_asm}-({E}+{C}))"
    conversion = (f"({t.capex_USD_per_GWh}/(in_depreciation_years*1000000)"
                  f"+in_labour_headcount*{t.labour_cost_USD_per_year}"
                  f"/(in_annual_output_GWh*1000000)"
                  f"+{t.energy_price_USD_per_kWh}*(in_energy_electrode_kWh_per_kWh*{k_el}"
                  f"+in_energy_dry_room_kWh_per_kWh*{k_asm}"
                  f"+in_energy_formation_kWh_per_kWh*{k_form}))")
    return (f"({E}+{C}+{scrap}-in_scrap_credit*{scrap}+{conversion}"
            f"+in_overhead_fraction*{conversion})*(1+in_margin_fraction)")


@dataclass
class _RiskRows:
    """The scenario table: one column per uncertain input, then E, C, full."""

    value_cols: dict[str, str]
    calc: dict[str, str]
    use: dict[str, str]
    E0: str
    C0: str
    aE: dict[str, str]
    aC: dict[str, str]

    def write(self, ws: Worksheet, r: int, values: dict[str, str] | None = None) -> None:
        """Row ``r``: the given values (formulas) of the inputs, or none (an
        array formula fills them), and the three cost columns."""
        for name, c in self.value_cols.items():
            cell = style(ws[f"{c}{r}"], "calc", "#,##0.00##")
            if values is not None:
                cell.value = values[name]
        cell_of = {name: f"{c}{r}" for name, c in self.value_cols.items()}
        dE = "".join(f"+{self.aE[n]}*({cell_of[n]}-{self.use[n]})" for n in self.aE)
        dC = "".join(f"+{self.aC[n]}*({cell_of[n]}-{self.use[n]})" for n in self.aC)
        E, C, full = (f"{self.calc[k]}{r}" for k in ("E", "C", "full"))
        style(ws[E], "calc", "#,##0.000").value = f"={self.E0}{dE}"
        style(ws[C], "calc", "#,##0.000").value = f"={self.C0}{dC}"
        terms = _PlantTerms(**{n: cell_of[n] for n in self.value_cols if n in _TERMS})
        style(ws[full], "calc", "#,##0.000").value = "=" + _row_full(E, C, terms)


def _range_check(key: str, r: int, domain_inp: Input) -> str:
    """``ok``, or what is wrong with the range on row ``r`` (its inputs, or a low or
    high value outside what the varied input allows)."""
    low = COST.get(f"in_risk_low_{key}")
    high = COST.get(f"in_risk_high_{key}")
    dist = COST.get(f"in_risk_dist_{key}")
    strict = dataclasses.replace(domain_inp, optional=False)
    leaves = must(strict).replace("must be ", "")
    return (f'=IF(NOT({excel_test(low, f"E{r}")}),"low {must(low)}",'
            f'IF(NOT({excel_test(high, f"F{r}")}),"high {must(high)}",'
            f'IF(NOT({excel_test(dist, f"G{r}")}),"distribution {must(dist)}",'
            f'IF(AND({excel_test(strict, f"H{r}")},{excel_test(strict, f"I{r}")}),"ok",'
            f'"the range leaves {leaves}"))))')


def _build_risk(wb: Workbook, ins: _Inputs, cost: _Cost, n_samples: int) -> None:
    ws = wb.create_sheet("Risk")
    k = len(RISK_INPUTS)
    widths = {"A": 6.0, "B": 30.0, "C": 16.0, "D": 14.0, "E": 14.0, "F": 14.0, "G": 14.0,
              "H": 14.0, "I": 14.0, "J": 4.0, "K": 30.0, "L": 26.0}
    w = SheetWriter(wb, ws, Columns(label="B", value="C", unit="D", note="E"), widths)
    w.title("Risk: ranges, percentiles, histogram and tornado",
            f"Each uncertain input varies from low to high around its value in use; "
            f"{n_samples:,} seeded samples (CW_RANGE_SAMPLE: the core's own draws for the "
            "same seed and input) run through the equations of the Cost sheet.")
    w.caution(COST_CAUTION, span=8, height=30.0)
    w.value("Price book", "=out_book_label", "", kind="lookup")
    w.section("Ranges")
    seed = COST.get("in_risk_seed")
    sref = w.input(seed)
    checks = [Ref(ws.title, "K", sref.row)]
    style(ws[f"K{sref.row}"], "calc").value = check_formula(seed, seed.name)
    w.band(["Input", "In use", "Unit", "Low (change)", "High (change)", "Distribution", "Low",
            "High", "", "Check", "Model input"])
    lines = cost.lines
    rows: dict[str, int] = {}
    use: dict[str, str] = {}
    for name, source in RISK_INPUTS:
        r = w.row
        rows[name] = r
        key = _risk_key(name)
        domain_inp = COST.get(source)
        style(ws[f"B{r}"], "text").value = name.split(":", 1)[-1].replace("_", " ")
        style(ws[f"C{r}"], "calc", "#,##0.00##").value = (
            f"={ins.index_use[name[len('index:'):]]}"
            if name.startswith("index:") else f"={source}")
        style(ws[f"D{r}"], "unit").value = domain_inp.unit
        for col, prefix in (("E", "low"), ("F", "high"), ("G", "dist")):
            _input_at(wb, ws, COST.get(f"in_risk_{prefix}_{key}"), col, r)
        style(ws[f"H{r}"], "calc", "#,##0.00##").value = f"=C{r}*(1+E{r})"
        style(ws[f"I{r}"], "calc", "#,##0.00##").value = f"=C{r}*(1+F{r})"
        style(ws[f"K{r}"], "calc").value = _range_check(key, r, domain_inp)
        style(ws[f"L{r}"], "hint").value = name
        checks.append(Ref(ws.title, "K", r))
        use[name] = f"$C${r}"
        w.row += 1
    ok = w.value("All ranges", f'=IF({_checks_ok(checks)},"ok","a range is not allowed: '
                 'see Check")', "")
    add_name(wb, "risk_ok", ws, f"$K${ok.row}")
    style(ws[f"K{ok.row}"], "calc").value = f"={_checks_ok(checks)}"

    # ---- how the parts move with each index (from the Cost sheet)
    w.section("Materials per index (from the Cost sheet), USD/kWh per USD/t")
    w.band(["Index", "Electrode parts", "Other parts"])
    aE: dict[str, str] = {}
    aC: dict[str, str] = {}
    f_, l_ = lines.first, lines.last

    def column(c: str) -> str:
        return f"'Cost'!${c}${f_}:${c}${l_}"

    for name, _ in RISK_INPUTS:
        if not name.startswith("index:"):
            continue
        r = w.row
        grid = column(lines.grid[name[len("index:"):]])
        qty, elec = column(lines.qty_kwh_col), column(lines.electrode_col)
        style(ws[f"B{r}"], "text").value = name
        style(ws[f"C{r}"], "calc", "0.000000").value = f"=SUMPRODUCT({qty},{grid},{elec})/1000"
        style(ws[f"D{r}"], "calc", "0.000000").value = f"=SUMPRODUCT({qty},{grid})/1000-C{r}"
        aE[name], aC[name] = f"$C${r}", f"$D${r}"
        w.row += 1

    # ---- places of the results
    w.section("Full cost per kWh: percentiles of the samples")
    res_first = w.row
    w.row += 6
    w.section("Tornado: each input alone from low to high, the others at their value in use")
    torn_head = w.row
    w.row += k + 3
    w.section("Histogram of the full cost per kWh")
    hist_head = w.row
    w.row += HISTOGRAM_BINS + 3

    # ---- the scenario table: the tornado's rows, then the samples
    value_cols = {name: _col(3 + j) for j, (name, _) in enumerate(RISK_INPUTS)}
    calc = {key: _col(3 + k + j) for j, key in enumerate(("E", "C", "full"))}
    table = _RiskRows(value_cols, calc, use, f"'Cost'!{lines.electrode_sum.local}",
                      f"'Cost'!{lines.other_sum.local}", aE, aC)
    w.section("Scenarios: the tornado's rows, then the Monte Carlo samples")
    head = w.row
    style(ws[f"A{head}"], "band").value = "#"
    style(ws[f"B{head}"], "band").value = "Scenario"
    for name, c in value_cols.items():
        style(ws[f"{c}{head}"], "band").value = name
    for key, c in calc.items():
        style(ws[f"{c}{head}"], "band").value = {
            "E": "electrode parts, USD/kWh", "C": "other parts, USD/kWh",
            "full": "full cost, USD/kWh"}[key]
    ws.row_dimensions[head].height = 45.0
    for c in [*value_cols.values(), *calc.values()]:
        ws.column_dimensions[c].width = 14.0
    base = head + 1
    style(ws[f"B{base}"], "text").value = "all at the value in use"
    table.write(ws, base, {n: f"={use[n]}" for n in value_cols})
    swing: dict[str, tuple[int, int]] = {}
    r = base + 1
    for name in value_cols:
        rr = rows[name]
        for row, end, col in ((r, "low", "H"), (r + 1, "high", "I")):
            style(ws[f"B{row}"], "text").value = f"{name} {end}"
            table.write(ws, row, {n: f"=${col}${rr}" if n == name else f"={use[n]}"
                                  for n in value_cols})
        swing[name] = (r, r + 1)
        r += 2
    s_first, s_last = r, r + n_samples - 1
    for i in range(n_samples):
        ws[f"A{s_first + i}"] = i + 1
        table.write(ws, s_first + i)
    for name, c in value_cols.items():
        rr = rows[name]
        ws[f"{c}{s_first}"] = ArrayFormula(
            f"{c}{s_first}:{c}{s_last}",
            f"=CW_RANGE_SAMPLE($H${rr},$C${rr},$I${rr},in_risk_seed,A{s_first}:A{s_last},"
            f"$L${rr},$G${rr})")
    fc = calc["full"]
    samples = f"${fc}${s_first}:${fc}${s_last}"
    add_name(wb, "risk_samples", ws, samples)

    # ---- percentiles
    w.row = res_first
    for label, formula, name, kind in (
        ("P10 (one in ten below)", f"PERCENTILE({samples},0.1)", "out_risk_p10", "result"),
        ("P50 (the median)", f"PERCENTILE({samples},0.5)", "out_risk_p50", "result"),
        ("P90 (one in ten above)", f"PERCENTILE({samples},0.9)", "out_risk_p90", "result"),
        ("Mean", f"AVERAGE({samples})", "out_risk_mean", "calc"),
        ("Lowest sample", f"MIN({samples})", "out_risk_min", "calc"),
        ("Highest sample", f"MAX({samples})", "out_risk_max", "calc"),
    ):
        w.value(label, f"=IF(risk_ok,{formula},NA())", "USD/kWh", _BOOK_NOTE,
                kind, "#,##0.00", name)  # type: ignore[arg-type]

    # ---- the tornado, ranked by swing
    r0 = torn_head
    for j, text in enumerate(("Input (ranked)", "Low: change of cost", "High: change of cost",
                              "Swing")):
        style(ws.cell(r0, 2 + j, text), "band")
    for j, text in enumerate(("Input", "Cost at low", "Cost at high", "Swing", "Rank")):
        style(ws.cell(r0, 13 + j, text), "band")
    base_cost = f"${fc}${base}"
    for j, name in enumerate(value_cols):
        rr = r0 + 1 + j
        lo_r, hi_r = swing[name]
        style(ws[f"M{rr}"], "text").value = name
        style(ws[f"N{rr}"], "calc", "#,##0.000").value = f"={fc}{lo_r}"
        style(ws[f"O{rr}"], "calc", "#,##0.000").value = f"={fc}{hi_r}"
        style(ws[f"P{rr}"], "calc", "#,##0.000").value = f"=ABS(O{rr}-N{rr})"
        ties = f"+COUNTIF($P${r0 + 1}:P{rr - 1},P{rr})" if j else ""
        style(ws[f"Q{rr}"], "calc", "0").value = f"=RANK(P{rr},$P${r0 + 1}:$P${r0 + k}){ties}"
    for j in range(k):
        rr = r0 + 1 + j
        match = f"MATCH({j + 1},$Q${r0 + 1}:$Q${r0 + k},0)"
        style(ws[f"B{rr}"], "text").value = f"=INDEX($M${r0 + 1}:$M${r0 + k},{match})"
        style(ws[f"C{rr}"], "calc", "#,##0.00").value = (
            f"=IF(risk_ok,INDEX($N${r0 + 1}:$N${r0 + k},{match})-{base_cost},NA())")
        style(ws[f"D{rr}"], "calc", "#,##0.00").value = (
            f"=IF(risk_ok,INDEX($O${r0 + 1}:$O${r0 + k},{match})-{base_cost},NA())")
        style(ws[f"E{rr}"], "calc", "#,##0.00").value = f"=ABS(D{rr}-C{rr})"
    add_name(wb, "risk_tornado", ws, f"$B${r0 + 1}:$E${r0 + k}")
    style(ws[f"B{r0 + k + 1}"], "hint").value = (
        f'="Every input at its value in use: "&TEXT({base_cost},"#,##0.00")&" USD/kWh; price '
        'book "&out_book_label')
    tornado = BarChart()
    tornado.type = "bar"
    tornado.grouping = "clustered"
    tornado.overlap = 100
    tornado.gapWidth = 40
    tornado.add_data(Reference(ws, min_col=3, max_col=4, min_row=r0, max_row=r0 + k),
                     titles_from_data=True)
    tornado.set_categories(Reference(ws, min_col=2, min_row=r0 + 1, max_row=r0 + k))
    tornado.x_axis.scaling.orientation = "maxMin"  # the largest swing on top
    tornado.y_axis.title = "change of the full cost, USD/kWh"
    tornado.y_axis.numFmt = "#,##0.0"
    tornado.x_axis.delete = False
    tornado.y_axis.delete = False
    for series, colour in ((tornado.series[0], PALETTE["input_edge"]),
                           (tornado.series[1], PALETTE["grid_high"])):
        series.graphicalProperties.solidFill = colour
        series.graphicalProperties.line.solidFill = colour
    for axis in (tornado.x_axis, tornado.y_axis):
        axis.txPr = axis_text(900)
    tornado.height, tornado.width = 8.5, 15.0
    heading(ws[f"G{r0 - 1}"], "Tornado: the largest swing on top")
    ws.add_chart(tornado, f"G{r0}")

    # ---- the histogram
    h0 = hist_head
    for j, text in enumerate(("From", "To", "Samples", "Middle")):
        style(ws.cell(h0, 2 + j, text), "band")
    low, high = f"MIN({samples})", f"MAX({samples})"
    step = f"({high}-{low})/{HISTOGRAM_BINS}"
    for j in range(HISTOGRAM_BINS):
        rr = h0 + 1 + j
        last = j == HISTOGRAM_BINS - 1
        style(ws[f"B{rr}"], "calc", "#,##0.00").value = f"=IF(risk_ok,{low}+{j}*{step},NA())"
        style(ws[f"C{rr}"], "calc", "#,##0.00").value = (
            f"=IF(risk_ok,{high},NA())" if last else f"=IF(risk_ok,{low}+{j + 1}*{step},NA())")
        upper = '"<="' if last else '"<"'
        style(ws[f"D{rr}"], "calc", "0").value = (
            f'=COUNTIFS({samples},">="&B{rr},{samples},{upper}&C{rr})')
        style(ws[f"E{rr}"], "calc", "#,##0.0").value = f"=(B{rr}+C{rr})/2"
    total = h0 + HISTOGRAM_BINS + 1
    style(ws[f"B{total}"], "text").value = "All samples"
    style(ws[f"D{total}"], "calc", "0").value = f"=SUM(D{h0 + 1}:D{total - 1})"
    hist = bar_chart(False, Reference(ws, min_col=4, min_row=h0 + 1, max_row=total - 1),
                     Reference(ws, min_col=5, min_row=h0 + 1, max_row=total - 1),
                     "samples", "0", PALETTE["lookup_ink"], (8.0, 15.0))
    hist.gapWidth = 5
    hist.x_axis.title = "full cost, USD/kWh (middle of the bin)"
    heading(ws[f"G{h0 - 1}"], f"Histogram of the {n_samples:,} samples")
    ws.add_chart(hist, f"G{h0}")
    finish_sheet(ws, landscape=True)


# --------------------------------------------------------------------------- compare


_KEY_FIGURES = (
    ("Capacity", "capacity_Ah", "Ah", "#,##0.00"),
    ("Energy", "energy_Wh", "Wh", "#,##0.0"),
    ("Cell mass", "cell_mass_g", "g", "#,##0.0"),
    ("Specific energy", "specific_energy_Wh_kg", "Wh/kg", "#,##0.0"),
    ("Energy density", "energy_density_Wh_L", "Wh/L", "#,##0.0"),
)
_DESIGNS = ("A", "B", "C")


def _build_compare(wb: Workbook, ins: _Inputs, cost: _Cost) -> None:
    ws = wb.create_sheet("Compare")
    widths = {"A": 2.5, "B": 34.0, "C": 18.0, "D": 18.0, "E": 18.0, "F": 14.0, "G": 14.0,
              "H": 10.0, "I": 18.0, "J": 10.0, "K": 18.0}
    for k in range(len(INDEX_NAMES) + 8):
        widths.setdefault(_col(12 + k), 11.0)
    w = SheetWriter(wb, ws, Columns(label="B", value="C", unit="D", note="E"), widths)
    w.title("Compare: three designs side by side",
            "Design A is the Design sheet. Type into the green cells of B and C only what "
            "differs (blank: as A). Key figures, the bill of materials and the cost in columns, "
            "with the differences from A.")
    w.caution(COST_CAUTION, span=6, height=30.0)
    w.value("Price book", "=out_book_label", "", kind="lookup")
    w.section("Key figures")
    key_head = w.row
    w.band(["Figure", "Design A", "Design B", "Design C", "B - A", "C - A", "Unit"])
    key_first = w.row
    w.row += len(_KEY_FIGURES) + 6
    w.section("Bill of materials: kg per cell and USD per kWh")
    bom_head = w.row
    w.band(["Line (design A's component)", "kg: A", "kg: B", "kg: C", "kg: B - A", "kg: C - A",
            "", "USD/kWh: A", "", "USD/kWh: B", "", "USD/kWh: C"])
    w.row += BOM_ROWS + 2

    # ---- inputs of B and C
    w.section("Inputs: design A (from Design), B and C (blank: as A)")
    w.band(["Input", "Design A", "Design B", "Design C", "", "B in use", "", "C in use"])
    first = w.row
    for k, name in enumerate(DESIGN_INPUTS):
        r = first + k
        inp = CELL_SIZING.get(name)
        style(ws[f"B{r}"], "text").value = name
        style(ws[f"C{r}"], "calc", inp.fmt).value = f'=IF(ISBLANK({name}),"",{name})'
        blankable = dataclasses.replace(inp, optional=True)
        for col in ("D", "E"):
            style(ws[f"{col}{r}"], "input", inp.fmt)
            validate(ws, blankable, f"{col}{r}")
        style(ws[f"F{r}"], "unit").value = f"=B{r}"
        style(ws[f"G{r}"], "calc", inp.fmt).value = f'=IF(ISBLANK(D{r}),C{r},D{r})'
        style(ws[f"H{r}"], "unit").value = f"=B{r}"
        style(ws[f"I{r}"], "calc", inp.fmt).value = f'=IF(ISBLANK(E{r}),C{r},E{r})'
        style(ws[f"J{r}"], "hint").value = inp.label
    last = first + len(DESIGN_INPUTS) - 1
    tables = {"A": "design_inputs", "B": f"$F${first}:$G${last}", "C": f"$H${first}:$I${last}"}
    add_name(wb, "compare_b_inputs", ws, tables["B"])
    add_name(wb, "compare_c_inputs", ws, tables["C"])
    w.row = last + 2

    # ---- priced lines and plant of B and C
    blocks: dict[str, _Lines] = {"A": cost.lines}
    totals: dict[str, dict[str, str]] = {
        "A": {"E": f"'Cost'!{cost.lines.electrode_sum.local}",
              "C": f"'Cost'!{cost.lines.other_sum.local}",
              "full": "out_full_USD_kWh"}}
    for d in ("B", "C"):
        w.section(f"Design {d}: bill of materials, priced")
        lines = _priced_lines(wb, ws, w.row, tables[d], ins, f"compare_{d.lower()}")
        blocks[d] = lines
        w.row = lines.last + 3
        style(ws[f"B{w.row}"], "text").value = f"Design {d}: waterfall, USD/kWh"
        w.row += 1
        plant = _write_plant(ws, "C", w.row, str(lines.electrode_sum), str(lines.other_sum))
        for j, line in enumerate(_WATERFALL):
            style(ws[f"B{w.row + j}"], "text").value = line
        style(ws[f"B{w.row + len(_WATERFALL)}"], "text").value = "Full cost"
        totals[d] = {"E": str(lines.electrode_sum), "C": str(lines.other_sum),
                     "full": str(plant["full"])}
        totals[d]["materials"] = (
            f"SUM({plant['materials in cells'].local}:{plant['scrap credit'].local})")
        totals[d]["conversion"] = f"SUM({plant['depreciation'].local}:{plant['overhead'].local})"
        w.row += len(_WATERFALL) + 3
    totals["A"]["materials"] = "out_materials_USD_kWh"
    totals["A"]["conversion"] = "out_conversion_USD_kWh"

    # ---- key figures
    r = key_first
    for label, output, unit, fmt in _KEY_FIGURES:
        style(ws[f"B{r}"], "text").value = label
        for j, d in enumerate(_DESIGNS):
            style(ws.cell(r, 3 + j), "lookup", fmt).value = (
                f'=CW_CELL_DESIGN("{output}",{tables[d]})')
        style(ws[f"F{r}"], "calc", fmt).value = f"=D{r}-C{r}"
        style(ws[f"G{r}"], "calc", fmt).value = f"=E{r}-C{r}"
        style(ws[f"H{r}"], "unit").value = unit
        r += 1
    cost_rows = (
        ("Materials (in cells, scrap, credit)", "materials", "USD/kWh", "#,##0.00"),
        ("Conversion", "conversion", "USD/kWh", "#,##0.00"),
        ("Full cost per kWh", "full", "USD/kWh", "#,##0.00"),
    )
    full_row = 0
    for label, key, unit, fmt in cost_rows:
        style(ws[f"B{r}"], "text").value = label
        for j, d in enumerate(_DESIGNS):
            kind = "result" if key == "full" else "calc"
            style(ws.cell(r, 3 + j), kind, fmt).value = f"={totals[d][key]}"  # type: ignore[arg-type]
        style(ws[f"F{r}"], "calc", fmt).value = f"=D{r}-C{r}"
        style(ws[f"G{r}"], "calc", fmt).value = f"=E{r}-C{r}"
        style(ws[f"H{r}"], "unit").value = unit
        style(ws[f"I{r}"], "hint").value = _BOOK_NOTE
        if key == "full":
            full_row = r
        r += 1
    energy_row = key_first + 1
    capacity_row = key_first
    for label, formula, unit, fmt in (
        ("Full cost per cell", "{c}{full}*{c}{energy}/1000", "USD/cell", "#,##0.00"),
        ("Full cost per Ah", "{c}{full}*{c}{energy}/1000/{c}{capacity}", "USD/Ah", "#,##0.000"),
    ):
        style(ws[f"B{r}"], "text").value = label
        for j in range(3):
            c = _col(3 + j)
            style(ws.cell(r, 3 + j), "result", fmt).value = "=" + formula.format(
                c=c, full=full_row, energy=energy_row, capacity=capacity_row)
        style(ws[f"F{r}"], "calc", fmt).value = f"=D{r}-C{r}"
        style(ws[f"G{r}"], "calc", fmt).value = f"=E{r}-C{r}"
        style(ws[f"H{r}"], "unit").value = unit
        style(ws[f"I{r}"], "hint").value = _BOOK_NOTE
        r += 1
    add_name(wb, "compare_full_USD_kWh", ws, f"$C${full_row}:$E${full_row}")
    del key_head

    # ---- bill of materials side by side
    for i in range(BOM_ROWS):
        rr = bom_head + 1 + i
        a = blocks["A"]
        style(ws[f"B{rr}"], "text").value = f"='Cost'!B{a.first + i}"
        for j, d in enumerate(_DESIGNS):
            lines = blocks[d]
            sheet = "'Cost'!" if d == "A" else ""
            style(ws.cell(rr, 3 + j), "calc", "0.0000").value = f"={sheet}L{lines.first + i}"
            style(ws.cell(rr, 9 + 2 * j), "calc", "#,##0.000").value = (
                f"={sheet}J{lines.first + i}")
        style(ws[f"F{rr}"], "calc", "0.0000").value = f"=D{rr}-C{rr}"
        style(ws[f"G{rr}"], "calc", "0.0000").value = f"=E{rr}-C{rr}"
    finish_sheet(ws, landscape=True, freeze="C4")


# --------------------------------------------------------------------------- notes


def _notes(wb: Workbook) -> None:
    method = [
        "The cell: the cell-sizing inputs on Design go to the core's sizing model "
        "(udfs.core.sizing) through CW_CELL_BOM (the bill of materials, net per cell) and "
        "CW_CELL_DESIGN (energy, capacity, mass); this workbook holds no copy of that model.",
        "Prices: each line is priced on its own basis (kg, m2, L or piece) from the price book "
        "(CW_PRICE_BOOK, converted to USD at the exchange rate of the row's date). A "
        "metal-indexed material costs its fee plus, per index, coefficient x index / 1000; "
        "coefficient = metal mass fraction / its fraction in the index's product x payable "
        "(CW_INDEX_COEFFICIENT).",
        "The plant (structure of KWADE2018 and LIU2021; energy per kWh by step as in DEGEN2023; "
        "material share of cost as in SCHMUCH2018; parameter values invented demo data): per "
        "kWh of good cells, scrap = E/(ye ya yf) + C/(ya yf) - (E + C); credit = - share x "
        "scrap; depreciation = capital per annual GWh / (years x 1e6); labour = headcount x "
        "cost / (GWh x 1e6); energy = price x (e_el/(ye ya yf) + e_dry/(ya yf) + e_form/yf); "
        "overhead and margin as shares. The lines sum to the full cost.",
        "Risk: each range's samples are CW_RANGE_SAMPLE draws, the very values the core's "
        "Monte Carlo (udfs.core.risk, cellwright risk) draws for the same seed and input name; "
        "each sample's cost uses the equations of the Cost sheet (the materials are linear in "
        "each index, so their change is the index's change times its coefficient). The "
        "tornado swings one input at a time from low to high, the others at the value in use.",
        "The same computation runs in Python (udfs.core.cell_cost); a test evaluates this "
        "workbook headlessly and requires the two routes to agree to 1 part in 1e9.",
    ]
    cautions = [
        COST_CAUTION,
        "Price books, exchange rates, the contract terms and the plant's numbers shipped here "
        "are invented demo data. Replace them with your own before any decision.",
        "The plant model is a simplified structure: no ramp-up, no inventory, no freight, duty "
        "or warranty, no cost of capital beyond straight-line depreciation.",
    ]
    live = [
        ("Price book in use", "=out_book_label"),
        ("Regions of the price book", f'=CW_PRICE_BOOK_INFO({_BOOK},"regions")'),
        ("Source of the cathode's price", f'=IFERROR(CW_PRICE_BOOK({_BOOK},mat_cathode,'
                                          '"source"),"not in this price book")'),
        ("Cathode practical capacity", '=CW_SOURCE(mat_cathode,"practical_capacity")'),
        ("Anode practical capacity", '=CW_SOURCE(mat_anode,"practical_capacity")'),
    ]
    write_notes(wb, "Notes: method, sources and cautions", method, cautions, live)


def build_cost_model(n_samples: int = RISK_SAMPLES) -> Workbook:
    """The cost template as a new openpyxl workbook, with ``n_samples`` Monte Carlo rows
    on the Risk sheet (the shipped template has RISK_SAMPLES; fewer give the same
    formulas on fewer rows)."""
    wb = Workbook()
    ins = _build_inputs(wb)
    inputs = _build_design(wb)
    cost = _build_cost(wb, ins, inputs)
    _build_risk(wb, ins, cost, n_samples)
    _build_compare(wb, ins, cost)
    _notes(wb)
    write_lists(wb)
    wb.active = 0
    for ws in wb.worksheets:
        ws.sheet_view.tabSelected = ws.title == "Inputs"
    return wb
