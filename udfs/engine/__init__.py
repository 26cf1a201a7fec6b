"""Headless workbook evaluation with the `formulas` engine and our spreadsheet functions.

The public API (imported lazily, so ``import udfs.engine.refs`` stays light):

* :func:`load_model` / :class:`WorkbookModel` -- compile a workbook once (cached
  by content hash), :meth:`WorkbookModel.evaluate` it with new inputs many times;
* :func:`calculate_file` -- read, evaluate and write a new workbook in one call;
* :func:`inspect_package` and :class:`Limits` -- the hostile-file checks;
* :func:`write_bytes_atomic` / :func:`atomic_writer` -- safe output files;
* :func:`sweep_workbook`, :func:`sweep_core`, :func:`write_table` -- what-if sweeps.

>>> from udfs.engine import calculate_file, load_model
>>> callable(calculate_file) and callable(load_model)
True
"""

from __future__ import annotations

import importlib
from typing import Any

__all__ = [
    "CAUTION",
    "EngineError",
    "Evaluation",
    "FileSafetyError",
    "HostileFileError",
    "Limits",
    "WorkbookError",
    "WorkbookModel",
    "atomic_writer",
    "calculate_file",
    "inspect_package",
    "load_model",
    "sweep_core",
    "sweep_workbook",
    "write_bytes_atomic",
    "write_table",
]

_WHERE = {
    "CAUTION": "caution",
    "calculate_file": "calc",
    "EngineError": "errors",
    "FileSafetyError": "errors",
    "HostileFileError": "errors",
    "WorkbookError": "errors",
    "Evaluation": "model",
    "WorkbookModel": "model",
    "load_model": "model",
    "Limits": "guard",
    "inspect_package": "guard",
    "atomic_writer": "files",
    "write_bytes_atomic": "files",
    "sweep_core": "sweep",
    "sweep_workbook": "sweep",
    "write_table": "sweep",
}


def __getattr__(name: str) -> Any:
    module = _WHERE.get(name)
    if module is None:
        raise AttributeError(f"module 'udfs.engine' has no attribute {name!r}")
    return getattr(importlib.import_module(f"udfs.engine.{module}"), name)
