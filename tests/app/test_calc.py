"""``calc``'s prepared output: written without the model, as often as asked."""

from __future__ import annotations

import gc
import io
import weakref

import openpyxl

from udfs.app.calc import prepare_output
from udfs.engine.model import WorkbookModel


def _book() -> bytes:
    wb = openpyxl.Workbook()
    ws = wb.active
    assert ws is not None
    ws.title = "S"
    ws["A1"] = 2.0
    for r in range(2, 6):
        ws[f"B{r}"] = f"=A1*{r}"
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def _written(prepared) -> bytes:
    buf = io.BytesIO()
    prepared.write_to(buf)
    return buf.getvalue()


def test_prepared_output_needs_no_model_and_writes_the_same_twice():
    for mode in ("live", "values"):
        model = WorkbookModel(_book(), "in.xlsx")
        evaluation = model.evaluate({"S!A1": 3.0})
        prepared = prepare_output(model, evaluation, mode)
        gone = weakref.ref(model)
        del model, evaluation
        gc.collect()
        assert gone() is None, f"{mode}: the prepared output keeps the model alive"
        first, second = _written(prepared), _written(prepared)
        assert first == second
        values = openpyxl.load_workbook(io.BytesIO(first), data_only=True)["S"]
        assert [values[f"B{r}"].value for r in range(2, 6)] == [3.0 * r for r in range(2, 6)]
