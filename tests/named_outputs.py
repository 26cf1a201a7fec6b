"""The ``out_`` names of a workbook with the values its cells hold.

>>> import openpyxl
>>> from openpyxl.workbook.defined_name import DefinedName
>>> wb = openpyxl.Workbook(); wb.active.title = "S"; wb.active["B2"] = 3.5
>>> wb.defined_names["out_x"] = DefinedName("out_x", attr_text="S!$B$2")
>>> out_values(wb)
{'out_x': 3.5}
"""

from __future__ import annotations

import openpyxl


def out_values(wb: openpyxl.Workbook) -> dict[str, object]:
    """Every defined name starting with ``out_`` -> the value of its cell."""
    got: dict[str, object] = {}
    for name, dn in wb.defined_names.items():
        if name.startswith("out_"):
            for title, coord in dn.destinations:
                got[name] = wb[title][coord.replace("$", "")].value
    return got
