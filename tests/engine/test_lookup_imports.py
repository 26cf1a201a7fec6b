"""The engine's replacements that change speed, never results.

* ``udfs.engine.lookup.xindex`` (INDEX without a reference object per cell)
  against the `formulas` package's own INDEX, on the same arguments: ranges of
  one row, one column and two dimensions with numbers, text, errors and empty
  cells; row and column numbers in and out of range, fractional, negative,
  text, logical, empty, errors and arrays. Every expected value is the
  package's own result.
* ``udfs.engine.deferred_scipy``: SciPy is not imported by a calculation that
  does not need it (checked in a fresh interpreter), and a function that needs
  it still gives SciPy's value.
"""

from __future__ import annotations

import itertools
import json
import math
import subprocess
import sys
import textwrap
from pathlib import Path
from typing import Any

import numpy as np
import pytest
import schedula as sh
from formulas.functions import wrap_func
from formulas.functions.look import xindex as package_xindex
from formulas.ranges import Ranges
from formulas.tokens.operand import Error
from molmass import Formula

import udfs.engine.functions  # noqa: F401  (installs the engine's functions)
from udfs.engine.lookup import LazyCells, xindex

ROOT = Path(__file__).resolve().parents[2]
ERR = Error.errors


def _reference(ref: str, grid: list[list[Any]]) -> Ranges:
    rng = Ranges().push(f"'[BOOK.XLSX]SHEET'!{ref}").ranges[0]
    arr = np.empty((len(grid), len(grid[0])), object)
    for i, row in enumerate(grid):
        for j, v in enumerate(row):
            arr[i, j] = v
    return Ranges((rng,), {rng["name"]: (rng, arr)})


AREAS = {
    "column": ("B2:B6", [[1.5], ["text"], [sh.EMPTY], [ERR["#N/A"]], [7]]),
    "row": ("C3:F3", [[2.0, "x", sh.EMPTY, 9]]),
    "grid": ("B2:D4", [[1.0, 2.0, 3.0], [4.0, sh.EMPTY, "six"], [7, ERR["#DIV/0!"], 9.5]]),
    "cell": ("E5", [[42.0]]),
}
NUMBERS: list[Any] = [
    1,
    2,
    3.7,
    0,
    -1,
    5,
    9,
    "2",
    "x",
    True,
    sh.EMPTY,
    ERR["#REF!"],
    np.array([[2]], object),
    np.array([[1], [3]], object),
]


def _describe(value: Any) -> Any:
    if isinstance(value, Ranges):
        return ("Ranges", [dict(r) for r in value.ranges], _describe(value.value))
    if isinstance(value, np.ndarray):
        return (type(value).__name__, value.shape, [_describe(v) for v in value.ravel()])
    return (type(value).__name__, repr(value))


@pytest.mark.parametrize("area", sorted(AREAS))
def test_index_on_a_reference_equals_the_package(area):
    ref, grid = AREAS[area]
    ours, theirs = wrap_func(xindex, ranges=True), wrap_func(package_xindex, ranges=True)
    compared = 0
    for row, col in itertools.product(NUMBERS, [None, *NUMBERS[:8]]):
        args = (row,) if col is None else (row, col)
        with np.errstate(all="ignore"):
            want = _describe(theirs(_reference(ref, grid), *args))
            got = _describe(ours(_reference(ref, grid), *args))
        assert got == want, (area, args)
        compared += 1
    assert compared == len(NUMBERS) * 9


def test_index_on_values_and_second_areas_equals_the_package():
    ours, theirs = wrap_func(xindex, ranges=True), wrap_func(package_xindex, ranges=True)
    values = np.array([[1.0, 2.0], [3.0, "x"]], object)
    for args in [(2, 2), (1,), (3, 1), (2, 1, 2), (1, 1, 0)]:
        assert _describe(ours(values, *args)) == _describe(theirs(values, *args)), args
        ref = _reference(*AREAS["grid"])
        assert _describe(ours(ref, *args)) == _describe(theirs(ref, *args)), args


def test_lazy_cells_make_only_what_is_picked():
    made: list[tuple[int, int]] = []
    grid = LazyCells(lambda r, c: made.append((r, c)) or (r, c), (300, 2))
    assert grid[299, 1] == (299, 1) and grid[-1, 0] == (299, 0)
    assert grid[299, 1] == (299, 1)  # made once
    assert made == [(299, 1), (299, 0)]
    for bad in [(300, 0), (0, 2), (-301, 0)]:
        with pytest.raises(IndexError):
            grid[bad]
    with pytest.raises(TypeError):
        grid[0]


def _fresh(code: str) -> dict[str, Any]:
    out = subprocess.run(
        [sys.executable, "-c", textwrap.dedent(code)],
        capture_output=True,
        text=True,
        cwd=ROOT,
        timeout=300,
    )
    assert out.returncode == 0, out.stderr[-2000:]
    return json.loads(out.stdout.strip().splitlines()[-1])


BOOK = """
import io, json, sys, openpyxl
from udfs.engine.model import load_model
wb = openpyxl.Workbook(); ws = wb.active
ws["A1"] = 3.0; ws["A2"] = 2
ws["B1"] = "=MAX(A1:A2)+SUM(A1,A2)+AVERAGE(A1:A2)+CW_MOLAR_MASS(\\"LiFePO4\\")"
ws["B2"] = "{formula}"
buf = io.BytesIO(); wb.save(buf)
ev = load_model(buf.getvalue(), "t.xlsx").evaluate()
loaded = sorted(m for m in ("scipy.stats", "scipy.linalg", "scipy.interpolate", "pint")
                if m in sys.modules)
print(json.dumps({{"b1": ev.value("Sheet!B1"), "b2": ev.value("Sheet!B2"), "loaded": loaded}}))
"""


def test_a_calculation_without_statistics_never_imports_scipy():
    got = _fresh(BOOK.format(formula="=A1*2"))
    assert got["loaded"] == []
    assert got["b2"] == 6.0
    lfp = Formula("LiFePO4").mass  # molar mass from molmass (IUPAC atomic weights)
    # MAX, SUM and AVERAGE of the inputs 3 and 2 are 3, 5 and 2.5 (arithmetic)
    assert math.isclose(got["b1"], 3.0 + 5.0 + 2.5 + lfp, rel_tol=1e-4)


def test_a_statistics_function_imports_scipy_and_gives_its_value():
    got = _fresh(BOOK.format(formula="=CHISQ.DIST(A1,A2,TRUE)"))
    assert "scipy.stats" in got["loaded"]
    # chi-squared with 2 degrees of freedom: CDF(x) = 1 - exp(-x/2) (closed form,
    # e.g. NIST/SEMATECH e-Handbook of Statistical Methods, 1.3.6.6.6)
    assert math.isclose(got["b2"], 1.0 - math.exp(-1.5), rel_tol=1e-12)
