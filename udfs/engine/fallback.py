"""The plain ``formulas.ExcelModel``: what runs a workbook the plan declines.

The package's own model, through its public API only (``loads``, ``finish``,
``calculate``) on a private copy of the file in a temporary folder of its own
(nothing else is there, so external links find nothing). Inputs are set by
writing them into that copy, so any cell can be set; each distinct set of
inputs compiles the model once (a handful are kept).

>>> import io, openpyxl
>>> wb = openpyxl.Workbook(); ws = wb.active; ws.title = "Calc"
>>> ws["A1"] = 2; ws["A2"] = "=A1*21"
>>> buf = io.BytesIO(); wb.save(buf)
>>> values = calculate_whole(buf.getvalue(), ["Calc"], iterate=False)
>>> values[(0, 2, 1)]
42.0
"""

from __future__ import annotations

import contextlib
import io
import logging
import os
import re
import tempfile
import warnings
from collections.abc import Iterator, Sequence
from typing import Any

import formulas
import numpy as np
from formulas.ranges import Ranges

from udfs.xlsx.file_errors import WorkbookError
from udfs.xlsx.refs import col_index

from .evaluator import _settle

__all__ = ["calculate_whole"]

FILE = "BOOK.xlsx"
_KEY = re.compile(
    r"^'\[(?P<book>[^\]]+)\](?P<sheet>(?:[^']|'')+)'!\$?(?P<c1>[A-Z]+)\$?(?P<r1>[0-9]+)"
    r"(?::\$?(?P<c2>[A-Z]+)\$?(?P<r2>[0-9]+))?$"
)


@contextlib.contextmanager
def _quiet() -> Iterator[None]:
    """The package's own log lines, warnings and progress bar stay out of our output."""
    loggers = [logging.getLogger(n) for n in ("formulas", "schedula", "openpyxl")]
    levels = [lg.level for lg in loggers]
    for lg in loggers:
        lg.setLevel(logging.CRITICAL + 1)
    try:
        with (
            warnings.catch_warnings(),
            np.errstate(all="ignore"),
            contextlib.redirect_stderr(io.StringIO()),
        ):
            warnings.simplefilter("ignore")
            yield
    finally:
        for lg, level in zip(loggers, levels, strict=True):
            lg.setLevel(level)


def calculate_whole(
    data: bytes, sheet_names: Sequence[str], iterate: bool
) -> dict[tuple[int, int, int], Any]:
    """Every computed cell of the workbook ``data`` (engine values by key).

    ``iterate``: circular references are solved as the package solves them.
    """
    index: dict[str, int] = {}
    for i, name in enumerate(sheet_names):
        index.setdefault(name.upper(), i)
    with tempfile.TemporaryDirectory(prefix="cellwright-formulas-") as folder, _quiet():
        path = os.path.join(folder, FILE)
        with open(path, "wb") as fh:
            fh.write(data)
        try:
            model = formulas.ExcelModel().loads(path).finish(circular=iterate)
            solution = model.calculate()
        except RecursionError:
            raise WorkbookError("formulas nested too deeply to compute") from None
        except Exception as exc:  # the package's errors have no common base class
            first = str(exc).splitlines()[0] if str(exc) else ""
            raise WorkbookError(
                f"the formulas package cannot compute this workbook ({type(exc).__name__}: "
                f"{first[:200]})"
            ) from None
    out: dict[tuple[int, int, int], Any] = {}
    for key, value in solution.items():
        m = _KEY.match(str(key))
        if m is None or m.group("book").upper() != FILE.upper():
            continue
        sheet = index.get(m.group("sheet").replace("''", "'"))
        if sheet is None:
            continue
        r1, c1 = int(m.group("r1")), col_index(m.group("c1"))
        r2 = int(m.group("r2") or r1)
        c2 = col_index(m.group("c2")) if m.group("c2") else c1
        if (r2 - r1 + 1) * (c2 - c1 + 1) > 1_000_000:
            continue  # whole columns the package expanded: their cells come one by one too
        arr = value.value if isinstance(value, Ranges) else np.asarray(value, dtype=object)
        grid = np.asarray(arr, dtype=object)
        if grid.ndim < 2:
            grid = grid.reshape(1, -1) if grid.ndim == 1 else grid.reshape(1, 1)
        for r in range(r1, r2 + 1):
            for c in range(c1, c2 + 1):
                i, j = r - r1, c - c1
                if i < grid.shape[0] and j < grid.shape[1]:
                    out.setdefault((sheet, r, c), _settle(grid[i, j]))
    return out
