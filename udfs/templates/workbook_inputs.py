"""Reading and writing the input cells of a template workbook by defined name.

>>> from udfs.templates import build_cell_sizing
>>> wb = build_cell_sizing()
>>> set_inputs(wb, {"in_np_ratio": 1.2})
>>> input_values(wb)["in_np_ratio"]
1.2
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from openpyxl.workbook.workbook import Workbook

from ..core.errors import InputError

__all__ = ["input_values", "set_inputs"]


def set_inputs(wb: Workbook, values: Mapping[str, float | str | None]) -> None:
    """Write ``values`` (defined name -> value) into the input cells of ``wb``.

    Only unlocked single-cell inputs may be written; anything else is refused.
    """
    for name, value in values.items():
        if name not in wb.defined_names:
            raise InputError("values", name, detail=f"{name!r} is not an input of this workbook")
        destinations = list(wb.defined_names[name].destinations)
        if len(destinations) != 1 or ":" in destinations[0][1]:
            raise InputError("values", name, detail=f"{name!r} is not a single cell")
        sheet, ref = destinations[0]
        cell = wb[sheet][ref.replace("$", "")]
        if cell.protection.locked:
            raise InputError("values", name, detail=f"{name!r} is a computed cell, not an input")
        cell.value = value


def input_values(wb: Workbook) -> dict[str, Any]:
    """The current input values of ``wb`` (defined names starting ``in_``)."""
    out: dict[str, Any] = {}
    for name, dn in wb.defined_names.items():
        if name.startswith("in_"):
            sheet, ref = next(iter(dn.destinations))
            out[name] = wb[sheet][ref.replace("$", "")].value
    return out
