"""One-cell formulas on plain values (udfs.engine.chain) give exactly the step-by-step results.

The reference is the lean plan with the chain switched off (`FastPlan.use_chain
= False`), which `tests/test_engine_fast.py` proves equal to the full `formulas`
engine; one test also checks the full engine directly. Every expected value is
computed by those engines, never typed in. Equality is exact: the stored
array's type and shape and each element's type and repr.
"""

from __future__ import annotations

import io
import itertools
from typing import Any

import numpy as np
import openpyxl
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from udfs.engine import model as model_mod
from udfs.engine.chain import BAIL
from udfs.engine.fast import FastPlan, Key
from udfs.engine.functions import ensure_registered

#: edge values for the input cells (None: left empty; "=1/0": an error value)
EDGES: list[Any] = [
    2.5,
    -3.0,
    0.0,
    -0.0,
    7,
    1e308,
    -1e308,
    5e-324,
    True,
    False,
    "3",
    "text",
    None,
    "=1/0",
]

#: formulas of two inputs, x and y (the chain covers all but those marked)
FORMULAS = [
    "={x}+{y}",
    "={x}-{y}",
    "={x}*{y}",
    "={x}/{y}",
    "={x}^{y}",  # element-wise, not native
    "=-{x}",
    "={x}%",
    "={x}={y}",
    "={x}<>{y}",
    "={x}<{y}",
    "={x}<={y}",
    "={x}>{y}",
    "={x}>={y}",
    '=IFERROR({x},"e")',
    "=IFERROR({x}/{y},0)",
    "=MAX({x},{y})",
    "=MIN({x},{y},1.5)",
    "=MAX({x}*2,{y}+1)",
    "=IF({x}>{y},ROUNDUP({x}/2,0),MAX({x},{y}))",
    "=ROUND({x},2)+1",
    "=CW_CAPACITY({x},{y})",
    "=IFERROR(CW_ELECTRODE_AREA({x},3.2)/{y},0)",
    '={x}&"!"',  # not covered: the plan runs it step by step
]


def _book() -> bytes:
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "In"
    for i, v in enumerate(EDGES, start=1):
        if v is not None:
            ws.cell(i, 1, v)
    calc = wb.create_sheet("Calc")
    n = len(EDGES)
    row = 1
    for i, j in itertools.product(range(1, n + 1), repeat=2):
        for c, text in enumerate(FORMULAS, start=1):
            calc.cell(row, c, text.format(x=f"In!$A${i}", y=f"In!$A${j}"))
        row += 1
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def _plan(data: bytes) -> FastPlan:
    ensure_registered()
    return FastPlan(model_mod.load_workbook(io.BytesIO(data)))


def _stored(arr: Any) -> tuple[Any, ...]:
    return (type(arr).__name__, arr.shape, [(type(v).__name__, repr(v)) for v in arr.ravel()])


def _evaluate(plan: FastPlan, chain: bool, overrides: dict[Key, Any] | None = None) -> dict:
    plan.use_chain = chain
    plan._default = None
    try:
        with np.errstate(all="ignore"):
            return dict(plan.evaluate(overrides or {}))
    finally:
        plan.use_chain = True
        plan._default = None


@pytest.fixture(scope="module")
def plan() -> FastPlan:
    return _plan(_book())


def test_chains_cover_the_element_wise_formulas(plan):
    chained = {u.c1 for u in plan.units if u.template.chain is not None}
    assert chained == set(range(1, len(FORMULAS)))  # all but the text join (last column)


def test_every_edge_pair_equals_the_step_by_step_results(plan):
    fast, slow = _evaluate(plan, True), _evaluate(plan, False)
    assert fast.keys() == slow.keys()
    for key in slow:
        assert _stored(fast[key]) == _stored(slow[key]), key


def test_the_chain_hands_text_errors_and_empty_cells_back(plan):
    counts = {"chain": 0, "bail": 0}
    cells = _evaluate(plan, False)
    for unit in plan.units:
        chain = unit.template.chain
        if chain is None:
            continue
        with np.errstate(all="ignore"):
            got = chain.run(unit.consts, unit.refs, cells)
        counts["bail" if got is BAIL else "chain"] += 1
    assert counts["chain"] > 1000 and counts["bail"] > 100, counts


def test_small_book_equals_the_full_engine(monkeypatch):
    wb = openpyxl.Workbook()
    ws = wb.active
    for i, v in enumerate([2.5, 0.0, 7, True, "3", None, "=1/0", 1e308], start=1):
        if v is not None:
            ws.cell(i, 1, v)
    for r in range(1, 9):
        for c, text in enumerate(FORMULAS, start=2):
            ws.cell(r, c, text.format(x=f"$A{r}", y=f"$A{9 - r}"))
    buf = io.BytesIO()
    wb.save(buf)
    data = buf.getvalue()
    monkeypatch.setattr(model_mod, "FAST", True)
    fast = model_mod.WorkbookModel(data, "fast.xlsx")
    monkeypatch.setattr(model_mod, "FAST", False)
    full = model_mod.WorkbookModel(data, "full.xlsx")
    assert fast.fast and not full.fast
    a, b = fast.evaluate().values, full.evaluate().values
    assert a.keys() == b.keys()
    for k in a:
        assert (type(a[k]), a[k]) == (type(b[k]), b[k]), k


SMALL = [f.format(x="In!$A$1", y="In!$A$2") for f in FORMULAS]


@pytest.fixture(scope="module")
def small_plan() -> FastPlan:
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "In"
    ws["A1"], ws["A2"] = 1.0, 2.0
    calc = wb.create_sheet("Calc")
    for c, text in enumerate(SMALL, start=1):
        calc.cell(1, c, text)
    buf = io.BytesIO()
    wb.save(buf)
    return _plan(buf.getvalue())


values = (
    st.floats(allow_nan=False, allow_infinity=False)
    | st.integers(-(10**20), 10**20)
    | st.booleans()
    | st.sampled_from(["", "1e3", "x", " 4 "])
)


@settings(deadline=None)  # examples: the hypothesis profile (tests/conftest.py)
@given(x=values, y=values)
def test_random_inputs_equal_the_step_by_step_results(small_plan, x, y):
    ov = {("IN", 1, 1): x, ("IN", 2, 1): y}
    fast, slow = _evaluate(small_plan, True, ov), _evaluate(small_plan, False, ov)
    for key in slow:
        assert _stored(fast[key]) == _stored(slow[key]), (key, x, y)
