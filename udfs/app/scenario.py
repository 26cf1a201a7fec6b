"""Scenarios for the cost commands: a workbook's input values, the price book
a command uses, and the cost model of a set of input values.

* :func:`read_input_values` reads the input cells (defined names ``in_...``
  that hold no formula) of a workbook, through the engine's guarded reader,
  so any workbook with the cell-sizing inputs (the cell-sizing or the cost
  template, a user's copy) can start a core sweep, a comparison or a risk run;
* :func:`load_book` reads ``--prices FILE`` (a price-book CSV) or picks a
  shipped book by name;
* :func:`cost_model_for` is :func:`udfs.core.cost_table.cost_model_from_values`
  with the book chosen on the command line.

>>> sorted(demo_values())[:2]
['in_anode', 'in_anode_active']
"""

from __future__ import annotations

import os
from collections.abc import Mapping
from pathlib import Path
from typing import Any

from udfs.core.cell_cost import CostModel
from udfs.core.cost_table import DEFAULT_BOOK, cost_model_from_values
from udfs.core.input_tables import table_for
from udfs.core.inputs import InputTable
from udfs.core.price_books import PriceBook, price_book, read_price_book
from udfs.core.sizing_values import spec_values
from udfs.templates.demo_scenario import demo_spec
from udfs.xlsx.file_errors import WorkbookError
from udfs.xlsx.files import read_input
from udfs.xlsx.guard import DEFAULT_LIMITS, Limits

__all__ = [
    "MAX_PRICE_BOOK_BYTES",
    "cost_model_for",
    "demo_values",
    "input_table",
    "load_book",
    "read_input_values",
]

#: A price book larger than this is refused (a book is a few hundred rows).
MAX_PRICE_BOOK_BYTES = 4 * 2**20
StrPath = str | os.PathLike[str]


def demo_values() -> dict[str, Any]:
    """The demo cell's input values (demo data), as a workbook would hold them."""
    values = spec_values(demo_spec())
    return {k: v for k, v in values.items() if not k.startswith("in_price")}


def read_input_values(path: StrPath, limits: Limits = DEFAULT_LIMITS) -> dict[str, Any]:
    """The input cells of the workbook at ``path``: defined names ``in_...`` of
    single cells that hold a value, not a formula (the file is only read)."""
    from udfs.app.calc import open_model

    model = open_model(path, limits)
    out: dict[str, Any] = {}
    for name, ref in model.named_cells.items():
        if name.startswith("in_") and not model.is_formula(ref):
            out[name] = model.constant(ref)
    if not any(n in out for n in ("in_cathode", "in_anode")):
        raise WorkbookError(
            f"{Path(path).name} has no cell-sizing inputs (no in_cathode or in_anode defined "
            "name): give a cell-sizing or cost workbook"
        )
    return out


def input_table(names: Mapping[str, Any] | list[str]) -> InputTable | None:
    """The input table of a workbook with these defined names (one of
    :data:`udfs.core.input_tables.TABLES`, the cost workbook's included)."""
    return table_for(set(names))


def load_book(prices: StrPath | None = None, name: str | None = None) -> PriceBook:
    """The price book of a command: the CSV file ``prices`` (``--prices FILE``),
    else the shipped book ``name``, else the latest shipped demo book."""
    if prices is not None:
        data = read_input(prices, MAX_PRICE_BOOK_BYTES)
        try:
            text = data.decode("utf-8-sig")
        except UnicodeDecodeError:
            raise WorkbookError(f"{Path(prices).name}: a price book is UTF-8 CSV text") from None
        return read_price_book(text, Path(prices).stem)
    return price_book(name or DEFAULT_BOOK)


def cost_model_for(values: Mapping[str, Any], book: PriceBook | None = None) -> CostModel:
    """The cost model of input ``values`` (a cell-sizing or cost workbook's
    inputs); ``book`` replaces the workbook's own price book."""
    return cost_model_from_values(values, book)
