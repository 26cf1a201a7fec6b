"""``cellwright compare``: designs side by side, every key figure and the bill
of materials in columns, with the differences from the first design.

A design is a set of input values: a workbook's inputs (any cell-sizing or
cost workbook, read only), or the first design's inputs with some changed
(``--case "LFP cell: in_cathode=LFP; in_np_ratio=1.15"``). Each one is sized
and costed by the core (:func:`udfs.core.cost_table.design_and_model`) with the
same price book: ``--prices FILE``, else the first workbook's own book (a cost
workbook), else the latest shipped demo book.

>>> c = compare([Design("A", demo_values()), parse_case("B: in_np_ratio=1.2", demo_values())])
>>> row = c.table.columns["unit"].index("in_np_ratio")   # inputs that differ come first
>>> c.table.columns["A"][row], c.table.columns["B"][row], round(c.table.columns["B - A"][row], 9)
(1.1, 1.2, 0.1)
"""

from __future__ import annotations

import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from udfs.core.cell_cost import CostModel
from udfs.core.conversion_cost import COST_CAUTION
from udfs.core.cost_table import COST, design_and_model
from udfs.core.errors import CellwrightError
from udfs.core.price_books import PriceBook
from udfs.core.sizing import CellDesign
from udfs.core.sizing_table import CELL_SIZING
from udfs.xlsx.file_errors import ReferenceSyntaxError
from udfs.xlsx.refs import parse_value

from .safe_text import check_argument
from .scenario import demo_values, load_book, read_input_values
from .tables import SweepTable

__all__ = ["MAX_DESIGNS", "Comparison", "Design", "compare", "compare_files", "parse_case"]

MAX_DESIGNS = 12
StrPath = str | os.PathLike[str]

#: Key figures of the sized cell: (CellDesign attribute, label, unit).
FIGURES: tuple[tuple[str, str, str], ...] = (
    ("nominal_voltage_V", "Nominal voltage", "V"),
    ("capacity_Ah", "Capacity", "Ah"),
    ("energy_Wh", "Energy", "Wh"),
    ("cell_mass_g", "Cell mass", "g"),
    ("cell_volume_cm3", "Cell volume", "cm3"),
    ("specific_energy_Wh_kg", "Specific energy", "Wh/kg"),
    ("energy_density_Wh_L", "Energy density", "Wh/L"),
    ("cathode_sheets", "Cathode sheets", "sheets"),
    ("cathode_loading_mg_cm2", "Cathode loading", "mg/cm2"),
    ("cathode_coating_thickness_um", "Cathode coating thickness", "um"),
    ("anode_coating_thickness_um", "Anode coating thickness", "um"),
    ("stack_thickness_um", "Stack thickness", "um"),
)
#: The cost model's outputs shown: (output, label, unit).
COSTS: tuple[tuple[str, str, str], ...] = (
    ("full_USD_kWh", "Full cost per kWh", "USD/kWh"),
    ("full_USD_cell", "Full cost per cell", "USD/cell"),
    ("full_USD_Ah", "Full cost per Ah", "USD/Ah"),
    ("materials_USD_kWh", "Materials with scrap and credit", "USD/kWh"),
    ("conversion_USD_kWh", "Conversion", "USD/kWh"),
    ("materials_in_cells_USD_kWh", "Waterfall: materials in cells", "USD/kWh"),
    ("scrap_USD_kWh", "Waterfall: scrap", "USD/kWh"),
    ("scrap_credit_USD_kWh", "Waterfall: scrap credit", "USD/kWh"),
    ("depreciation_USD_kWh", "Waterfall: depreciation", "USD/kWh"),
    ("labour_USD_kWh", "Waterfall: labour", "USD/kWh"),
    ("energy_USD_kWh", "Waterfall: energy", "USD/kWh"),
    ("overhead_USD_kWh", "Waterfall: overhead", "USD/kWh"),
    ("margin_USD_kWh", "Waterfall: margin", "USD/kWh"),
)


@dataclass(frozen=True)
class Design:
    """One design: a label and its input values (defined name -> value)."""

    label: str
    values: Mapping[str, Any]


def parse_case(text: str, base: Mapping[str, Any]) -> Design:
    """``"LABEL: in_x=V; in_y=W"``: the inputs ``base`` with some changed (values
    typed as in ``--set``: numbers as numbers, text as text).

    >>> parse_case("thin: in_np_ratio=1.05; in_cathode=LFP", {}).values
    {'in_np_ratio': 1.05, 'in_cathode': 'LFP'}
    """
    label, sep, rest = check_argument(text, "--case").partition(":")
    if not sep or not label.strip():
        raise ReferenceSyntaxError(f"--case {text!r}: write LABEL: in_x=VALUE; in_y=VALUE")
    values = dict(base)
    for part in rest.split(";"):
        if not part.strip():
            continue
        name, eq, value = part.partition("=")
        name = name.strip()
        if not eq or not name:
            raise ReferenceSyntaxError(f"--case {label.strip()}: {part.strip()!r} is not "
                                       "NAME=VALUE")
        known = name in CELL_SIZING.names or name in COST.names
        if not known:
            table = COST if name.startswith(("in_index", "in_payable", "in_contract")) else (
                CELL_SIZING)
            try:
                table.get(name)
            except CellwrightError as exc:
                raise ReferenceSyntaxError(f"--case {label.strip()}: {exc}") from None
        values[name] = parse_value(value)
    return Design(label.strip(), values)


@dataclass(frozen=True)
class Comparison:
    """The designs, their sized cells and cost models, and the table."""

    designs: tuple[Design, ...]
    cells: tuple[CellDesign, ...]
    models: tuple[CostModel, ...]
    table: SweepTable

    def lines(self) -> list[str]:
        """The table as text: figure, unit, one column per design, differences."""
        t = self.table
        labels = [d.label for d in self.designs]
        diffs = [c for c in t.outputs if c not in labels]
        head = ["", "unit", *labels, *diffs]
        rows = [head]
        for i in range(t.rows):
            cells = [t.columns["figure"][i], t.columns["unit"][i]]
            for c in (*labels, *diffs):
                x = t.columns[c][i]
                cells.append(f"{x:,.4g}" if isinstance(x, float) else str(x))
            rows.append(cells)
        widths = [max(len(r[k]) for r in rows) for k in range(len(head))]
        out = [f"Designs compared: {', '.join(labels)}; {t.source}"]
        for r in rows:
            out.append("  ".join(c.rjust(w) if k > 1 else c.ljust(w)
                                 for k, (c, w) in enumerate(zip(r, widths, strict=True))))
        out.append(COST_CAUTION)
        return out


def _bom_rows(design: CellDesign) -> dict[str, tuple[str, float]]:
    """Bill-of-materials lines by role ("cathode active", "anode binder #2"):
    (material, g per cell)."""
    out: dict[str, tuple[str, float]] = {}
    for name, mass in design.components.items():
        role = name.split(" (", 1)[0]
        key, k = role, 1
        while key in out:
            k += 1
            key = f"{role} #{k}"
        out[key] = (design.component_materials[name], float(mass))
    return out


def _display(x: Any) -> Any:
    return float(x) if isinstance(x, (int, float)) and not isinstance(x, bool) else (
        "" if x is None else str(x))


def compare(designs: Sequence[Design], book: PriceBook | None = None, source: str = ""
            ) -> Comparison:
    """Size and cost every design (see the module docstring)."""
    if not 2 <= len(designs) <= MAX_DESIGNS:
        raise ReferenceSyntaxError(f"compare {len(designs)} designs: give 2 to {MAX_DESIGNS} "
                                   "(workbooks and --case)")
    labels = [d.label for d in designs]
    if len(set(labels)) != len(labels):
        raise ReferenceSyntaxError(f"two designs are labelled {labels[0]!r}: label each case")
    cells: list[CellDesign] = []
    models: list[CostModel] = []
    for d in designs:
        try:
            cell, model = design_and_model(d.values, book)
        except CellwrightError as exc:
            raise ReferenceSyntaxError(f"design {d.label}: {exc}") from None
        cells.append(cell)
        models.append(model)
    rows: list[tuple[str, str, list[Any]]] = []
    names = [n for n in (*CELL_SIZING.names, *COST.names) if not n.startswith("in_risk")]
    for name in dict.fromkeys(names):
        vals = [_display(d.values.get(name)) for d in designs]
        if len({repr(v) for v in vals}) > 1:
            label = (CELL_SIZING if name in CELL_SIZING.names else COST).get(name).label
            rows.append((f"{label} (input)", name, vals))
    for attr, label, unit in FIGURES:
        rows.append((label, unit, [float(getattr(c, attr)) for c in cells]))
    outs = [m(m.base()) for m in models]
    for key, label, unit in COSTS:
        rows.append((label, unit, [float(o[key]) for o in outs]))
    boms = [_bom_rows(c) for c in cells]
    roles = list(dict.fromkeys(r for b in boms for r in b))
    for role in roles:
        rows.append((f"Material: {role}", "", [b.get(role, ("(none)", 0.0))[0] for b in boms]))
        rows.append((f"Mass: {role}", "g/cell", [b.get(role, ("", 0.0))[1] for b in boms]))
    columns: dict[str, Any] = {"figure": [r[0] for r in rows], "unit": [r[1] for r in rows]}
    for j, d in enumerate(designs):
        columns[d.label] = [r[2][j] for r in rows]
    diffs = []
    for d in designs[1:]:
        col = f"{d.label} - {designs[0].label}"
        diffs.append(col)
        out: list[Any] = []
        for r in rows:
            a, b = r[2][0], r[2][labels.index(d.label)]
            if isinstance(a, float) and isinstance(b, float):
                out.append(b - a)
            else:
                out.append("same" if a == b else "differs")
        columns[col] = out
    books = sorted({m.book_label for m in models})
    table = SweepTable(
        ["figure", "unit"], [*labels, *diffs], columns,
        f"{source or 'designs'}; price book {', '.join(books)}", len(rows),
        [COST_CAUTION], {k: k for k in labels}, {}, [], "comparison",
    )
    return Comparison(tuple(designs), tuple(cells), tuple(models), table)


def compare_files(workbooks: Sequence[StrPath], cases: Sequence[str] = (),
                  prices: StrPath | None = None) -> Comparison:
    """Compare workbooks (each one design) and cases (the first workbook's
    inputs, or the demo cell's, with some changed)."""
    designs: list[Design] = []
    for path in workbooks:
        designs.append(Design(Path(path).stem, read_input_values(path)))
    base = dict(designs[0].values) if designs else demo_values()
    if not workbooks and cases:
        designs.append(Design("demo", base))
    for text in cases:
        designs.append(parse_case(text, base))
    book = load_book(prices) if prices is not None else None
    what = ", ".join(os.fspath(p) for p in workbooks) or "the demo cell"
    return compare(designs, book, f"inputs of {what}")
