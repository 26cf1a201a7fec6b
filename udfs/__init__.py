"""cellwright: spreadsheet functions for electrochemical cell sizing and costing.

Every spreadsheet function (``CW_NERNST``, ``CW_MOLAR_MASS``, ...) is an
attribute of this package, so xlwings finds them with the setting
``UDF Modules = udfs``. They are loaded on first use, which keeps
``import udfs.core`` light (no sheet layer, no xlwings).

>>> import udfs
>>> round(udfs.CW_NERNST(0.34, 2, 0.1, 1), 4)
0.3104
"""

from __future__ import annotations

from collections.abc import Mapping

__all__: list[str] = []


def _functions() -> Mapping[str, object]:
    from .sheet.registry import FUNCTIONS

    return FUNCTIONS


def __getattr__(name: str) -> object:
    if name.startswith("CW_"):
        table = _functions()
        if name in table:
            globals().update(table)
            return table[name]
    raise AttributeError(f"module 'udfs' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted({*globals(), *_functions()})
