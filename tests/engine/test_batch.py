"""Filled-down columns evaluated together (udfs.engine.batch) equal cell-by-cell evaluation.

The references are the lean plan cell by cell (`use_batches = False`, which
`tests/test_engine_chain.py` proves equal to step-by-step evaluation) and step
by step (`use_chain = False`, which `tests/test_engine_fast.py` proves equal to
the full `formulas` engine). Every expected value is computed by those paths,
never typed in. Equality is exact: the stored array's type and shape and each
element's type and repr.
"""

from __future__ import annotations

import io
import itertools
from typing import Any

import openpyxl
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from test_chain import EDGES, _plan, _stored

from udfs.engine import batch as batch_mod
from udfs.engine import model as model_mod
from udfs.engine.batch import MIN_BATCH, Batch, schedule
from udfs.engine.fast import FastPlan, Key

#: formulas of the row's x (column A) and y (column B), filled down; In!$D$1 = 2.5,
#: In!$D$2 = "LiFePO4" are the same for every row
FORMULAS = [
    "=In!A{r}+In!B{r}",
    "=In!A{r}-In!$D$1",
    "=In!A{r}*In!B{r}",
    "=In!A{r}/In!B{r}",
    "=-In!A{r}",
    "=In!A{r}%",
    "=In!A{r}^In!B{r}",
    "=In!A{r}>In!B{r}",
    "=In!A{r}=In!B{r}",
    "=In!A{r}<=In!$D$1",
    "=IF(In!A{r}>In!B{r},ROUNDUP(In!A{r}/2,0),MAX(In!A{r},In!B{r}))",
    "=IFERROR(In!A{r}/In!B{r},0)",
    "=MAX(In!A{r},In!B{r})+1",  # text or empty: MAX hands the cell back
    "=CW_CAPACITY(In!A{r},In!B{r})",
    "=CW_CAPACITY(MAX(In!A{r},1),160)",  # cells handed back inside a batch
    "=CW_ENERGY(In!A{r},In!$D$1)*2",
    "=CW_MOLAR_MASS(In!$D$2)*In!A{r}",  # a sheet function of the same text everywhere
    "=CW_THEORETICAL_CAPACITY(In!$D$2,In!B{r})",
    "=ROUND(In!A{r},2)+In!$D$1",
    "=C{r}+D{r}",  # depth 1: reads two columns of this sheet
]


def _book(xs: list[Any], ys: list[Any]) -> bytes:
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "In"
    for r, (x, y) in enumerate(zip(xs, ys, strict=True), start=1):
        for col, v in ((1, x), (2, y)):
            if v is not None:
                ws.cell(r, col, v)
    ws["D1"], ws["D2"] = 2.5, "LiFePO4"
    calc = wb.create_sheet("Calc")
    for r in range(1, len(xs) + 1):
        for c, text in enumerate(FORMULAS, start=1):
            calc.cell(r, c, text.format(r=r))
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def _evaluate(plan: FastPlan, how: str, overrides: dict[Key, Any] | None = None) -> dict:
    plan.use_batches = how == "batches"
    plan.use_chain = how != "steps"
    plan._default = None
    try:
        return dict(plan.evaluate(overrides or {}))
    finally:
        plan.use_batches = plan.use_chain = True
        plan._default = None


def _same(a: dict, b: dict) -> None:
    assert a.keys() == b.keys()
    for key in b:
        assert _stored(a[key]) == _stored(b[key]), key


PAIRS = list(itertools.product(EDGES, repeat=2))


@pytest.fixture(scope="module")
def plan() -> FastPlan:
    return _plan(_book([x for x, _ in PAIRS], [y for _, y in PAIRS]))


def test_columns_run_as_batches(plan):
    items = schedule(plan.units, plan.depth, lambda u: u.template.chain is not None)
    batches = [b for b in items if isinstance(b, Batch) and b.units[0].sheet == "CALC"]
    # a row whose x or y is the formula =1/0 is one level deeper: its cells batch apart
    assert sum(len(b.units) for b in batches) == len(FORMULAS) * len(PAIRS)
    assert all(len(b.units) >= MIN_BATCH for b in batches)
    assert len({id(b.units[0].template) for b in batches}) == len(FORMULAS)


def test_every_edge_pair_equals_cell_by_cell_and_step_by_step(plan):
    batches = _evaluate(plan, "batches")
    _same(batches, _evaluate(plan, "cells"))
    _same(batches, _evaluate(plan, "steps"))


def test_new_inputs_equal_cell_by_cell(plan):
    for ov in ({("IN", 1, 4): 0.0}, {("IN", 2, 4): "Cu"}, {("IN", 3, 1): "x", ("IN", 1, 4): -1.0}):
        _same(_evaluate(plan, "batches", ov), _evaluate(plan, "cells", ov))


column = st.lists(
    st.one_of(
        st.floats(allow_nan=False, allow_infinity=False),
        st.integers(-(2**60), 2**60),
        st.sampled_from([0.0, -0.0, 2**53, 2**53 + 1, 1e308, True, "3", "x", None]),
    ),
    min_size=MIN_BATCH,
    max_size=12,
)


others = st.one_of(st.floats(-10, 10), st.sampled_from([0, 0.0, "2", None, True, 2**53 + 1]))


@settings(deadline=None)  # examples: the hypothesis profile (tests/conftest.py)
@given(xs=column, data=st.data())
def test_random_columns_equal_cell_by_cell(xs, data):
    ys = data.draw(st.lists(others, min_size=len(xs), max_size=len(xs)))
    plan = _plan(_book(xs, ys))
    _same(_evaluate(plan, "batches"), _evaluate(plan, "cells"))


def test_warm_runs_equal_the_full_engine(monkeypatch):
    xs = [float(i) for i in range(1, MIN_BATCH + 3)]
    data = _book(xs, [2.0] * len(xs))
    monkeypatch.setattr(model_mod, "FAST", True)
    model = model_mod.WorkbookModel(data, "batch.xlsx")
    monkeypatch.setattr(model_mod, "FAST", False)
    full = model_mod.WorkbookModel(data, "full.xlsx")
    assert model.fast and not full.fast
    for v in (3.0, -1.0, 0.0, "x"):
        ov = {"In!B5": v, "In!D1": 7.5}
        warm, want = model.evaluate(ov).values, full.evaluate(ov).values
        assert {k: (type(x), x) for k, x in warm.items()} == {
            k: (type(x), x) for k, x in want.items()
        }


def test_a_batch_that_fails_hands_every_cell_back(plan, monkeypatch):
    def broken(*args: Any) -> Any:
        raise RuntimeError("unforeseen")

    monkeypatch.setattr(batch_mod, "_step", broken)
    plan._schedules.clear()
    _same(_evaluate(plan, "batches"), _evaluate(plan, "cells"))
    plan._schedules.clear()
