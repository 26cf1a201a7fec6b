"""Headless workbook evaluation: our spreadsheet functions and Excel's, without Excel.

>>> from udfs.engine import load_model
>>> callable(load_model)
True
"""

from __future__ import annotations

from .model import Diagnostic, Evaluation, WorkbookModel, clear_cache, load_model

__all__ = ["Diagnostic", "Evaluation", "WorkbookModel", "clear_cache", "load_model"]
