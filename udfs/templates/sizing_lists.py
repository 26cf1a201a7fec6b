"""The hidden ``Lists`` sheet of the cell-sizing workbook: the catalogue's
material names and their aliases (static, written by the builder from
:mod:`udfs.core.catalogue`, one list per catalogue name input of
:data:`udfs.core.sizing_table.CELL_SIZING`) that feed the drop-downs, the demo
price list (invented demo data), and the element mass fractions of materials
that have no formula.

Values of materials with a formula are not stored here: the workbook reads
them live with ``CW_MATERIAL`` and ``CW_MASS_FRACTION``.

>>> ELEMENTS
('Li', 'Ni', 'Co', 'Mn', 'Fe', 'Al', 'Cu')
"""

from __future__ import annotations

from openpyxl.utils import get_column_letter
from openpyxl.workbook.workbook import Workbook
from openpyxl.worksheet.worksheet import Worksheet

from ..core import catalogue, procurement
from ..core.errors import NotFoundError
from ..core.sizing_table import CELL_SIZING
from ..core.validate import Names
from .input_rules import list_name
from .layout import add_name, style

__all__ = ["ELEMENTS", "demo_price", "list_entries", "name_lists", "write_lists"]

#: Elements reported on the Procurement sheet, in this order.
ELEMENTS: tuple[str, ...] = ("Li", "Ni", "Co", "Mn", "Fe", "Al", "Cu")

def name_lists() -> list[Names]:
    """The catalogue name domains of the cell-sizing inputs, one per drop-down
    list, in the order the inputs first use them."""
    out: list[Names] = []
    for inp in CELL_SIZING:
        if isinstance(inp.domain, Names) and inp.domain not in out:
            out.append(inp.domain)
    return out


def list_entries(names: Names) -> list[str]:
    """A drop-down list: the catalogue's names, then their aliases (LFP, NCM811)."""
    canonical = names.names()
    aliases = [a for n in canonical for a in catalogue.material(n).aliases]
    return [*canonical, *aliases]


def demo_price(name: str) -> tuple[float, str] | None:
    """The demo price (invented) of a material as the price list writes it:
    (value, unit). The workbook parses the unit with ``CW_PRICE``, as the core
    parses it, so nothing is converted here.

    >>> demo_price("PE separator")
    (0.55, 'USD/m^2')
    """
    try:
        fact = catalogue.price(name)
    except NotFoundError:
        return None
    return float(fact.value), fact.unit


def _composition_note(name: str) -> tuple[dict[str, float], str]:
    comp = procurement.composition(name)
    if comp is None:
        return {}, "make-up varies: adds nothing to the contained metals"
    if len(comp) == 1 and abs(next(iter(comp.values())) - 1.0) < 1e-12:
        return dict(comp), "taken as the pure metal (alloying and plating ignored)"
    return dict(comp), "salt share of the solution, from its molarity and density"


def write_lists(wb: Workbook) -> Worksheet:
    """Write the hidden Lists sheet and its defined names; return the sheet."""
    ws = wb.create_sheet("Lists")
    ws["A1"] = "Lists for the drop-downs and look-ups (written by the template builder)"
    lists = name_lists()
    for k, names in enumerate(lists):
        col = get_column_letter(1 + k)
        entries = list_entries(names)
        style(ws[f"{col}3"], "band").value = names.what
        for i, name in enumerate(entries):
            ws[f"{col}{4 + i}"] = name
        add_name(wb, list_name(names), ws, f"${col}$4:${col}${3 + len(entries)}")

    # the material table: one row per catalogue material
    first = len(lists) + 2
    headers = [
        "material", "kind", "has formula", "demo price", "demo price unit",
        *(f"{el} mass fraction" for el in ELEMENTS), "note",
    ]
    for k, h in enumerate(headers):
        style(ws.cell(3, first + k, h), "band")
    materials = catalogue.material_names()
    for i, name in enumerate(materials):
        row = 4 + i
        m = catalogue.material(name)
        ws.cell(row, first, name)
        ws.cell(row, first + 1, m.role)
        has_formula = "formula" in m.facts
        ws.cell(row, first + 2, "yes" if has_formula else "no")
        price = demo_price(name)
        ws.cell(row, first + 3, price[0] if price else "none")
        ws.cell(row, first + 4, price[1] if price else "none")
        if has_formula:
            note = "formula in the catalogue: fractions come from CW_MASS_FRACTION"
            fractions: dict[str, float] = {}
        else:
            fractions, note = _composition_note(name)
        for j, el in enumerate(ELEMENTS):
            ws.cell(row, first + 5 + j, None if has_formula else fractions.get(el, 0.0))
        ws.cell(row, first + 5 + len(ELEMENTS), note)
    last = 3 + len(materials)

    def column(offset: int) -> str:
        c = get_column_letter(first + offset)
        return f"${c}$4:${c}${last}"

    add_name(wb, "list_material", ws, column(0))
    add_name(wb, "list_has_formula", ws, column(2))
    add_name(wb, "list_demo_price", ws, column(3))
    add_name(wb, "list_demo_unit", ws, column(4))
    lo, hi = get_column_letter(first + 5), get_column_letter(first + 4 + len(ELEMENTS))
    add_name(wb, "list_fractions", ws, f"${lo}$4:${hi}${last}")
    for k in range(len(lists) + len(headers) + 1):
        ws.column_dimensions[get_column_letter(1 + k)].width = 20
    ws.sheet_state = "hidden"
    ws.protection.sheet = True
    return ws
