"""The electrolysis workbook: a plating line, an electrowinning tank house and
a water electrolyser side by side. Faraday's law through ``CW_`` functions
(mass per hour, time to a target, energy per kg); scaling, power and cost in
native formulas. Electricity prices are invented demo data.

>>> wb = build_electrolysis()
>>> wb.sheetnames
['Electrolysis', 'Notes']
"""

from __future__ import annotations

from dataclasses import dataclass

from openpyxl import Workbook
from openpyxl.cell.cell import Cell
from openpyxl.styles import Alignment

from .layout import (
    Columns,
    Kind,
    Number,
    SheetWriter,
    add_name,
    finish_sheet,
    style,
    validation,
)
from .notes import CAUTION, legend, write_notes

__all__ = ["PROCESSES", "build_electrolysis"]

#: The three columns: key, title.
PROCESSES: tuple[tuple[str, str], ...] = (
    ("plating", "Plating line"),
    ("winning", "Electrowinning tank house"),
    ("water", "Water electrolyser"),
)
_COLS = ("C", "D", "E")
NA = "-"  # shown where a row does not apply

HAZARDS = [
    "Hydrogen: water electrolysers, and the cathodes of many plating and electrowinning cells, "
    "release hydrogen, flammable in air from about 4 % to 75 % by volume. Ventilate, keep "
    "ignition sources away, detect gas, and classify hazardous areas to the applicable codes.",
    "Chlorine: electrolytes that contain chloride (chloride plating baths, brines, some "
    "electrowinning liquors) can release chlorine at the anode, a toxic gas. Detect it, "
    "extract and scrub it.",
    "Electrical: rectifiers and busbars carry thousands of amperes of direct current; stacks "
    "in series reach hundreds of volts. Arc flash, burns and shock are possible: isolate, "
    "lock out and earth before work, and follow the electrical codes.",
    "Also: acid mist above electrowinning cells, caustic (KOH) electrolyte in alkaline "
    "electrolysers, oxygen-enriched air near anodes, and hot electrolyte.",
]


@dataclass(frozen=True)
class _Row:
    key: str
    label: str
    unit: str
    hint: str
    values: tuple[float | str | None, float | str | None, float | str | None]
    check: Number | None = None
    fmt: str | None = None


_INPUTS: tuple[_Row, ...] = (
    _Row("product", "Product (formula)", "formula",
         "What is deposited or produced: a formula such as Ni, Cu, Zn or H2.",
         ("Ni", "Cu", "H2")),
    _Row("electrons", "Electrons per formula unit", "",
         "n of the electrode reaction: 2 for Ni2+ -> Ni, Cu2+ -> Cu and 2H+ -> H2.",
         (2.0, 2.0, 2.0), Number(lo=0, lo_open=True), "0"),
    _Row("current", "Current through each cell", "A", "The rectifier current.",
         (150.0, 25000.0, 5000.0), Number(lo=0, lo_open=True), "#,##0"),
    _Row("cells", "Cells in series on the rectifier", "cells",
         "Tanks or stack cells carrying the same current.",
         (1.0, 48.0, 100.0), Number(lo=1, whole=True), "#,##0"),
    _Row("efficiency", "Current efficiency", "of current",
         "Share of the charge that makes the product (Faradaic efficiency).",
         (0.95, 0.92, 0.98), Number(lo=0, hi=1, lo_open=True, percent=True), "0.0%"),
    _Row("voltage", "Cell voltage", "V", "Voltage across one cell, busbar losses included.",
         (4.0, 2.0, 1.9), Number(lo=0, lo_open=True), "0.00"),
    _Row("hours", "Operating hours per year", "h/year", "Hours at this current per year.",
         (4000.0, 8000.0, 8000.0), Number(lo=0, hi=8784), "#,##0"),
    _Row("price", "Electricity price", "USD/kWh",
         "Demo data (invented): replace with your tariff.",
         (0.09, 0.06, 0.05), Number(lo=0), "0.000"),
    _Row("area", "Plated area per load", "dm2", "Surface area of the parts in the tank.",
         (50.0, NA, NA), Number(lo=0, lo_open=True), "#,##0.0"),
    _Row("density", "Deposit density", "g/cm3",
         "Ni 8.90, Cu 8.96, Zn 7.14 (from memory, CRC-HCP).",
         (8.90, NA, NA), Number(lo=0, lo_open=True), "0.00"),
    _Row("thickness", "Target thickness", "um", "Average deposit thickness wanted.",
         (20.0, NA, NA), Number(lo=0, lo_open=True), "0.0"),
    _Row("target", "Target mass, whole line", "kg",
         "Electrowinning: one cathode harvest of all cells; electrolyser: hydrogen wanted.",
         (None, 144000.0, 100.0), Number(lo=0, lo_open=True), "#,##0"),
)


def _dash(cell: Cell) -> None:
    style(cell, "hint").value = NA
    cell.alignment = Alignment(horizontal="center")


def build_electrolysis() -> Workbook:
    """The electrolysis template as a new openpyxl workbook."""
    wb = Workbook()
    ws = wb.active
    ws.title = "Electrolysis"
    w = SheetWriter(
        wb, ws, Columns(label="B", value="C", unit="F", note="G"),
        {"A": 2.5, "B": 40.0, "C": 17.0, "D": 17.0, "E": 17.0, "F": 11.0, "G": 60.0},
    )
    w.title(
        "Electrolysis: plating, electrowinning, water electrolysis",
        "Faraday's law for three kinds of plant side by side. Green cells are inputs; a dash "
        "means the row does not apply to that plant.",
    )
    w.caution(CAUTION, span=6, height=32.0)
    legend(w)
    w.section("Inputs")
    w.band(["", *(title for _, title in PROCESSES), "Unit", "Hint"])
    ref: dict[str, tuple[str, str, str]] = {}
    for item in _INPUTS:
        here = w.row
        style(ws[f"B{here}"], "text").value = item.label
        refs = []
        for (key, _), col, value in zip(PROCESSES, _COLS, item.values, strict=True):
            cell = ws[f"{col}{here}"]
            refs.append(f"${col}${here}")
            if value == NA or (item.key == "target" and key == "plating"):
                _dash(cell)
                continue
            cell.value = value
            style(cell, "input", item.fmt)
            if item.check is not None:
                validation(ws, f"{col}{here}", item.check, item.label, item.hint)
            add_name(wb, f"in_{key}_{item.key}", ws, f"${col}${here}")
        style(ws[f"F{here}"], "unit").value = item.unit
        style(ws[f"G{here}"], "hint").value = item.hint
        ref[item.key] = (refs[0], refs[1], refs[2])
        w.row += 1

    def row(key: str, label: str, formulas: tuple[str | None, ...],
            unit: str, hint: str, kind: Kind = "calc", fmt: str | None = None) -> None:
        r = w.row
        style(ws[f"B{r}"], "text").value = label
        refs = []
        for (proc, _), col, formula in zip(PROCESSES, _COLS, formulas, strict=True):
            refs.append(f"${col}${r}")
            cell = ws[f"{col}{r}"]
            if formula is None:
                _dash(cell)
                continue
            style(cell, kind, fmt).value = formula
            if kind == "result":
                add_name(wb, f"out_{proc}_{key}", ws, f"${col}${r}")
        style(ws[f"F{r}"], "unit").value = unit
        style(ws[f"G{r}"], "hint").value = hint
        ref[key] = (refs[0], refs[1], refs[2])
        w.row += 1

    Three = tuple[str | None, str | None, str | None]

    def each(template: str, only: tuple[int, ...] = (0, 1, 2)) -> Three:
        def one(k: int) -> str | None:
            return template.format(**{key: r[k] for key, r in ref.items()}) if k in only else None

        return one(0), one(1), one(2)

    w.section("Results")
    w.band(["", *(title for _, title in PROCESSES), "Unit", "How it is found"])
    row("molar", "Molar mass of the product", each("=CW_MOLAR_MASS({product})"),
        "g/mol", "CW_MOLAR_MASS, IUPAC 2021 atomic weights", "lookup", "0.000")
    row("per_cell", "Product per cell per hour",
        each("=CW_CHARGE_TO_MASS({current}*1,{product},{electrons},{efficiency})"),
        "g/h", "Faraday: I x 1 h x efficiency x M / (n F), CW_CHARGE_TO_MASS", "lookup",
        "#,##0.0")
    row("kg_h", "Product of the line per hour", each("={per_cell}*{cells}/1000"),
        "kg/h", "per cell x cells / 1000", "result", "#,##0.000")
    row("t_year", "Product per year", each("={kg_h}*{hours}/1000"),
        "t/year", "kg/h x hours / 1000", fmt="#,##0.0")
    row("density_A", "Current density", each("={current}/{area}", (0,)),
        "A/dm2", "current / plated area", fmt="0.00")
    row("mass_needed", "Deposit mass for the target",
        each("={thickness}*0.0001*{area}*100*{density}", (0,)),
        "g", "thickness (um) x 1e-4 x area (dm2) x 100 x density", fmt="#,##0.0")
    row("time", "Time to reach the target",
        (
            each("=CW_DEPOSITION_TIME({mass_needed},{current},{product},{electrons},"
                 "{efficiency})", (0,))[0],
            *each("=CW_DEPOSITION_TIME({target}*1000,{current}*{cells},{product},{electrons},"
                  "{efficiency})", (1, 2))[1:],
        ),
        "h", "Faraday: m n F / (M I efficiency), CW_DEPOSITION_TIME", "result", "#,##0.00")
    row("check_thickness", "Check: thickness after that time",
        each("=CW_PLATING_THICKNESS({density_A},{time},{product},{electrons},{density},"
             "{efficiency})", (0,)),
        "um", "CW_PLATING_THICKNESS; equals the target", "lookup", "0.00")
    row("kwh_kg", "Electrical energy per kg",
        each('=CW_ENERGY_PER_MASS({voltage},{product},{electrons},{efficiency},"kWh/kg")'),
        "kWh/kg", "V x n F / (M x efficiency), CW_ENERGY_PER_MASS", "result", "#,##0.00")
    row("power", "DC power of the line", each("={current}*{voltage}*{cells}/1000"),
        "kW", "I x V x cells / 1000", fmt="#,##0.0")
    row("mwh_year", "Electricity per year", each("={power}*{hours}/1000"),
        "MWh/year", "kW x hours / 1000", fmt="#,##0.0")
    row("cost_kg", "Electricity cost per kg", each("={kwh_kg}*{price}"),
        "USD/kg", "kWh/kg x price (DC side; rectifier losses not included)", "result", "0.000")
    row("cost_year", "Electricity cost per year", each("={mwh_year}*1000*{price}"),
        "USD/year", "MWh x 1000 x price", fmt="#,##0")
    row("nm3_h", "Hydrogen volume per hour",
        each('={kg_h}*1000/{molar}*CW_CONSTANT("R")*273.15/101325', (2,)),
        "Nm3/h", "ideal gas at 0 degC and 101.325 kPa", fmt="#,##0.0")
    w.section("Hazards")
    for line in HAZARDS:
        w.caution(line, span=6, height=32.0)
    first_input = ref["product"][0].replace("$", "")
    finish_sheet(ws, landscape=True, first_cell=first_input, freeze=first_input)
    write_notes(
        wb,
        "Notes: method, sources and cautions",
        [
            "Faraday's law: mass = I t efficiency M / (n F); F = 96485.33212 C/mol (CODATA "
            "2018), M from IUPAC 2021 atomic weights.",
            "Energy per kg = V n F / (M efficiency): the DC energy at the cell; rectifier, "
            "pumping, heating and gas treatment come on top.",
            "Plating: deposit mass = thickness x area x density (an average: edges and "
            "recesses differ). The check row recomputes the thickness from current density "
            "and time.",
            "Electricity prices are invented demo data.",
        ],
        HAZARDS,
    )
    wb.active = 0
    return wb
