"""The input table of every model, and which one a workbook uses.

:data:`TABLES` holds the cell-sizing table (:mod:`udfs.core.sizing_table`) and
the tables of the potentials and electrolysis workbooks, declared here. A
workbook is matched to its table by the defined names it carries
(:func:`table_for`), so ``--set``/``--vary`` values can be checked before
anything is computed (:func:`check_input`).

>>> table_for([*POTENTIALS.names, "out_ocv_V", "list_couple"]).key
'potentials'
>>> table_for(["in_mass", "out_total"]) is None
True
>>> check_input(CELL_SIZING.names, "in_np_ratio", -1)
Traceback (most recent call last):
...
udfs.core.errors.DomainError: in_np_ratio (N/P ratio, first-charge basis) must be > 0 (got -1)
>>> check_input(CELL_SIZING.names, "in_cathode", "LFP")
'LiFePO4'
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

from .cost_table import COST
from .inputs import Input, InputTable
from .sizing_table import CELL_SIZING
from .validate import CELSIUS, FRACTION_OPEN, NONNEGATIVE, POSITIVE, Domain, FreeText, Names

__all__ = [
    "CELL_SIZING",
    "COST",
    "ELECTROLYSIS",
    "ELECTROLYSIS_PLANTS",
    "POTENTIALS",
    "SPECIES_ROWS",
    "TABLES",
    "check_input",
    "table_for",
]

# --------------------------------------------------------------------------- potentials

#: Species rows per electrode (name and activity).
SPECIES_ROWS = 4
_ELECTRODES = (("Cu2+/Cu", (("Cu2+", 0.01),)), ("Zn2+/Zn", (("Zn2+", 1.0),)))


def _potential_inputs() -> list[Input]:
    out = [Input("in_temp_C", "Temperature", "degC",
                 "Both electrodes; E0 shifts by its dE0/dT where the catalogue has one.",
                 "Conditions", CELSIUS, 25.0, "common practice (standard 25 degC)", fmt="0.0")]
    for e, (couple, _) in enumerate(_ELECTRODES, start=1):
        out.append(Input(f"in_couple_{e}", "Couple", "id",
                         "Pick a couple of the catalogue (oxidised/reduced form).", "Electrodes",
                         Names(kind="couple"), couple, "template starting value (CRC-ECS)"))
    for k in range(1, SPECIES_ROWS + 1):
        for e, (_, species) in enumerate(_ELECTRODES, start=1):
            name, activity = species[k - 1] if k <= len(species) else (None, None)
            first = k == 1
            out.append(Input(
                f"in_species{k}_{e}", f"Species {k}", "name",
                "A species of the half-reaction, or pH; blank rows are skipped." if first
                else "Optional.",
                "Electrodes", FreeText(), name, "template starting value", optional=True))
            out.append(Input(
                f"in_activity{k}_{e}", f"Activity of species {k}", "mol/L, bar, pH",
                "Dissolved: mol/L; gases: bar; 'pH' takes the pH. Pure solids: leave out."
                if first else "Optional.",
                "Electrodes", POSITIVE, activity, "template starting value", optional=True,
                fmt="General" if first else "0.000E+00"))
    return out


#: The potentials workbook: temperature, two couples, their species and activities.
POTENTIALS = InputTable("potentials", "potentials workbook", _potential_inputs())

# --------------------------------------------------------------------------- electrolysis

#: The plants of the electrolysis workbook, side by side: (key, title).
ELECTROLYSIS_PLANTS: tuple[tuple[str, str], ...] = (
    ("plating", "Plating line"),
    ("winning", "Electrowinning tank house"),
    ("water", "Water electrolyser"),
)

#: (key, label, unit, hint, domain, number format, value per plant: None where the row
#: does not apply). Values are the template's starting values (demo data where noted).
_ELECTROLYSIS_ROWS: tuple[tuple[str, str, str, str, Domain | FreeText, str | None,
                                tuple[float | str | None, ...]], ...] = (
    ("product", "Product (formula)", "formula",
     "What is deposited or produced: a formula such as Ni, Cu, Zn or H2.", FreeText(), None,
     ("Ni", "Cu", "H2")),
    ("electrons", "Electrons per formula unit", "",
     "n of the electrode reaction: 2 for Ni2+ -> Ni, Cu2+ -> Cu and 2H+ -> H2.", POSITIVE, "0",
     (2.0, 2.0, 2.0)),
    ("current", "Current through each cell", "A", "The rectifier current.", POSITIVE, "#,##0",
     (150.0, 25000.0, 5000.0)),
    ("cells", "Cells in series on the rectifier", "cells",
     "Tanks or stack cells carrying the same current.", Domain(lower=1, integer=True), "#,##0",
     (1.0, 48.0, 100.0)),
    ("efficiency", "Current efficiency", "of current",
     "Share of the charge that makes the product (Faradaic efficiency).", FRACTION_OPEN, "0.0%",
     (0.95, 0.92, 0.98)),
    ("voltage", "Cell voltage", "V", "Voltage across one cell, busbar losses included.",
     POSITIVE, "0.00", (4.0, 2.0, 1.9)),
    ("hours", "Operating hours per year", "h/year", "Hours at this current per year.",
     Domain(lower=0, upper=8784), "#,##0", (4000.0, 8000.0, 8000.0)),
    ("price", "Electricity price", "USD/kWh", "Demo data (invented): replace with your tariff.",
     NONNEGATIVE, "0.000", (0.09, 0.06, 0.05)),
    ("area", "Plated area per load", "dm2", "Surface area of the parts in the tank.", POSITIVE,
     "#,##0.0", (50.0, None, None)),
    ("density", "Deposit density", "g/cm3", "Ni 8.90, Cu 8.96, Zn 7.14 (from memory, CRC-HCP).",
     POSITIVE, "0.00", (8.90, None, None)),
    ("thickness", "Target thickness", "um", "Average deposit thickness wanted.", POSITIVE, "0.0",
     (20.0, None, None)),
    ("target", "Target mass, whole line", "kg",
     "Electrowinning: one cathode harvest of all cells; electrolyser: hydrogen wanted.",
     POSITIVE, "#,##0", (None, 144000.0, 100.0)),
)


def _electrolysis_inputs() -> list[Input]:
    out = []
    for key, label, unit, hint, domain, fmt, values in _ELECTROLYSIS_ROWS:
        for (plant, title), value in zip(ELECTROLYSIS_PLANTS, values, strict=True):
            if value is None:
                continue
            source = "demo data (invented)" if key == "price" else "template starting value"
            out.append(Input(f"in_{plant}_{key}", label, unit, hint, title, domain, value,
                             source, fmt=fmt))
    return out


#: The electrolysis workbook: one column of inputs per plant.
ELECTROLYSIS = InputTable("electrolysis", "electrolysis workbook", _electrolysis_inputs())

# --------------------------------------------------------------------------- registry

TABLES: tuple[InputTable, ...] = (CELL_SIZING, POTENTIALS, ELECTROLYSIS, COST)


def table_for(names: Iterable[str]) -> InputTable | None:
    """The table of the workbook whose defined names are ``names``: the table
    with the largest share of its inputs defined there, if that share is at
    least a half (a copy whose user removed a few names still matches); None
    for a workbook of no known model."""
    defined = set(names)
    best: tuple[float, int, InputTable] | None = None
    for table in TABLES:
        share = sum(n in defined for n in table.names) / len(table)
        if share >= 0.5 and (best is None or (share, len(table)) > best[:2]):
            best = (share, len(table), table)
    return None if best is None else best[2]


def check_input(names: Iterable[str], key: str, value: Any) -> Any:
    """``value`` for the input ``key`` of the workbook whose defined names are
    ``names``, checked by that workbook's table (see
    :meth:`~udfs.core.inputs.InputTable.check`: the value the cell should hold,
    or an error whose message is one line naming the input, the value and the
    allowed range). A workbook of no known model, or a ``key`` that is not an
    input of its table, has nothing to check against: ``value`` comes back as
    given (the caller decides what that means)."""
    table = table_for(names)
    if table is None or key not in table:
        return value
    return table.check(key, value)
