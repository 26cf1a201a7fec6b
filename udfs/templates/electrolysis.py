"""The electrolysis workbook: a plating line, an electrowinning tank house and
a water electrolyser side by side. Faraday's law through ``CW_`` functions
(mass per hour, time to a target, energy per kg); scaling, power and cost in
native formulas. Electricity prices are invented demo data.

>>> wb = build_electrolysis()
>>> wb.sheetnames
['Electrolysis', 'Notes']
"""

from __future__ import annotations

from collections.abc import Callable

from openpyxl import Workbook
from openpyxl.cell.cell import Cell
from openpyxl.styles import Alignment

from ..core.input_tables import ELECTROLYSIS, ELECTROLYSIS_PLANTS
from ..core.inputs import Input
from .layout import (
    Columns,
    Kind,
    Ref,
    SheetWriter,
    add_name,
    finish_sheet,
    style,
    validate,
)
from .notes import CAUTION, legend, write_notes

__all__ = ["PROCESSES", "build_electrolysis"]

#: The three columns: key, title (declared with the inputs, udfs.core.input_tables).
PROCESSES = ELECTROLYSIS_PLANTS
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


def _rows() -> list[tuple[str, list[Input | None]]]:
    """The input rows: (row key, the input of each plant or None), in table order."""
    rows: dict[str, list[Input | None]] = {}
    for inp in ELECTROLYSIS:
        plant, key = inp.name.removeprefix("in_").split("_", 1)
        column = [p for p, _ in PROCESSES].index(plant)
        rows.setdefault(key, [None] * len(PROCESSES))[column] = inp
    return list(rows.items())


class Plant:
    """The cells of one plant's column: its inputs (one attribute per input row of
    :data:`udfs.core.input_tables.ELECTROLYSIS`) and its results, set as the rows
    are written."""

    product: Ref
    electrons: Ref
    current: Ref
    cells: Ref
    efficiency: Ref
    voltage: Ref
    hours: Ref
    price: Ref
    area: Ref
    density: Ref
    thickness: Ref
    target: Ref
    molar: Ref
    per_cell: Ref
    kg_h: Ref
    density_A: Ref
    mass_needed: Ref
    time: Ref
    kwh_kg: Ref
    power: Ref
    mwh_year: Ref

    def __init__(self, key: str) -> None:
        self.key = key


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
    plants = [Plant(key) for key, _ in PROCESSES]
    first_input: Ref | None = None
    for key, inputs in _rows():
        here = w.row
        first = next(inp for inp in inputs if inp is not None)
        style(ws[f"B{here}"], "text").value = first.label
        for plant, inp, col in zip(plants, inputs, _COLS, strict=True):
            ref = Ref(ws.title, col, here)
            first_input = first_input or ref
            setattr(plant, key, ref)  # the declared attribute of this input row
            if inp is None:
                _dash(ws[ref.plain])
                continue
            style(ws[ref.plain], "input", inp.fmt).value = inp.default
            if inp.is_number:
                validate(ws, inp, ref.plain)
            add_name(wb, inp.name, ws, ref.local)
        style(ws[f"F{here}"], "unit").value = first.unit
        style(ws[f"G{here}"], "hint").value = first.hint
        w.row += 1

    def row(key: str, label: str, formula: Callable[[Plant], str | None], unit: str,
            hint: str, kind: Kind = "calc", fmt: str | None = None) -> None:
        """One result row: ``formula`` of each plant (None: the row does not apply)."""
        r = w.row
        style(ws[f"B{r}"], "text").value = label
        for plant, col in zip(plants, _COLS, strict=True):
            ref = Ref(ws.title, col, r)
            text = formula(plant)
            if text is None:
                _dash(ws[ref.plain])
                continue
            setattr(plant, key, ref)  # the declared attribute of this result row
            style(ws[ref.plain], kind, fmt).value = text
            if kind == "result":
                add_name(wb, f"out_{plant.key}_{key}", ws, ref.local)
        style(ws[f"F{r}"], "unit").value = unit
        style(ws[f"G{r}"], "hint").value = hint
        w.row += 1

    def only(*keys: str) -> Callable[[Callable[[Plant], str]], Callable[[Plant], str | None]]:
        def wrap(f: Callable[[Plant], str]) -> Callable[[Plant], str | None]:
            return lambda p: f(p) if p.key in keys else None
        return wrap

    plating = only("plating")
    w.section("Results")
    w.band(["", *(title for _, title in PROCESSES), "Unit", "How it is found"])
    row("molar", "Molar mass of the product", lambda p: f"=CW_MOLAR_MASS({p.product})",
        "g/mol", "CW_MOLAR_MASS, IUPAC 2021 atomic weights", "lookup", "0.000")
    row("per_cell", "Product per cell per hour",
        lambda p: f"=CW_CHARGE_TO_MASS({p.current}*1,{p.product},{p.electrons},{p.efficiency})",
        "g/h", "Faraday: I x 1 h x efficiency x M / (n F), CW_CHARGE_TO_MASS", "lookup",
        "#,##0.0")
    row("kg_h", "Product of the line per hour", lambda p: f"={p.per_cell}*{p.cells}/1000",
        "kg/h", "per cell x cells / 1000", "result", "#,##0.000")
    row("t_year", "Product per year", lambda p: f"={p.kg_h}*{p.hours}/1000",
        "t/year", "kg/h x hours / 1000", fmt="#,##0.0")
    row("density_A", "Current density", plating(lambda p: f"={p.current}/{p.area}"),
        "A/dm2", "current / plated area", fmt="0.00")
    row("mass_needed", "Deposit mass for the target",
        plating(lambda p: f"={p.thickness}*0.0001*{p.area}*100*{p.density}"),
        "g", "thickness (um) x 1e-4 x area (dm2) x 100 x density", fmt="#,##0.0")
    row("time", "Time to reach the target",
        lambda p: (
            f"=CW_DEPOSITION_TIME({p.mass_needed},{p.current},{p.product},{p.electrons},"
            f"{p.efficiency})" if p.key == "plating" else
            f"=CW_DEPOSITION_TIME({p.target}*1000,{p.current}*{p.cells},{p.product},"
            f"{p.electrons},{p.efficiency})"
        ),
        "h", "Faraday: m n F / (M I efficiency), CW_DEPOSITION_TIME", "result", "#,##0.00")
    row("check_thickness", "Check: thickness after that time",
        plating(lambda p: f"=CW_PLATING_THICKNESS({p.density_A},{p.time},{p.product},"
                          f"{p.electrons},{p.density},{p.efficiency})"),
        "um", "CW_PLATING_THICKNESS; equals the target", "lookup", "0.00")
    row("kwh_kg", "Electrical energy per kg",
        lambda p: f'=CW_ENERGY_PER_MASS({p.voltage},{p.product},{p.electrons},{p.efficiency},'
                  '"kWh/kg")',
        "kWh/kg", "V x n F / (M x efficiency), CW_ENERGY_PER_MASS", "result", "#,##0.00")
    row("power", "DC power of the line", lambda p: f"={p.current}*{p.voltage}*{p.cells}/1000",
        "kW", "I x V x cells / 1000", fmt="#,##0.0")
    row("mwh_year", "Electricity per year", lambda p: f"={p.power}*{p.hours}/1000",
        "MWh/year", "kW x hours / 1000", fmt="#,##0.0")
    row("cost_kg", "Electricity cost per kg", lambda p: f"={p.kwh_kg}*{p.price}",
        "USD/kg", "kWh/kg x price (DC side; rectifier losses not included)", "result", "0.000")
    row("cost_year", "Electricity cost per year", lambda p: f"={p.mwh_year}*1000*{p.price}",
        "USD/year", "MWh x 1000 x price", fmt="#,##0")
    row("nm3_h", "Hydrogen volume per hour",
        only("water")(lambda p: f'={p.kg_h}*1000/{p.molar}*CW_CONSTANT("R")*273.15/101325'),
        "Nm3/h", "ideal gas at 0 degC and 101.325 kPa", fmt="#,##0.0")
    w.section("Hazards")
    for line in HAZARDS:
        w.caution(line, span=6, height=32.0)
    assert first_input is not None
    finish_sheet(ws, landscape=True, first_cell=first_input.plain, freeze=first_input.plain)
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
