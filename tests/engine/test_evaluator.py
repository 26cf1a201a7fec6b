"""The evaluator against the `formulas` package's own model (the oracle), stacked
blocks against cell-by-cell evaluation, warm runs against cold ones.

The oracle is ``formulas.ExcelModel`` through its public API (udfs.engine.fallback);
every formula cell of every workbook here must agree in value and type.
"""

from __future__ import annotations

import io
import math
import random
from pathlib import Path

import openpyxl
import pytest
from openpyxl.workbook.defined_name import DefinedName

from udfs.engine.evaluator import Evaluator
from udfs.engine.fallback import calculate_whole
from udfs.engine.functions import ensure_registered, to_cell
from udfs.engine.model import WorkbookModel, _ours_elementwise
from udfs.sheet.error_values import SheetError
from udfs.templates.cost_model import build_cost_model

ROOT = Path(__file__).resolve().parents[2]
TEMPLATES = sorted((ROOT / "workbook_templates").glob("*.xlsx"))
ensure_registered()


def _bytes(wb: openpyxl.Workbook) -> bytes:
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def _same(a, b) -> bool:
    a, b = to_cell(a), to_cell(b)
    if isinstance(a, SheetError) or isinstance(b, SheetError):
        return isinstance(a, SheetError) and isinstance(b, SheetError) and a.code == b.code
    if isinstance(a, float) and isinstance(b, float):
        return math.isclose(a, b, rel_tol=1e-12, abs_tol=1e-300)
    return a == b


def _mixed_book() -> bytes:
    """Native functions, our functions, filled-down blocks, ranges, names, errors."""
    rng = random.Random(3)  # fixed: the same workbook every run
    wb = openpyxl.Workbook()
    inp = wb.active
    inp.title = "Inputs"
    for r in range(1, 41):
        inp[f"A{r}"] = rng.choice([rng.uniform(-5, 50), 0, "7.5", "text", None, True])
        inp[f"B{r}"] = round(rng.uniform(0.1, 9.0), 3)
    wb.defined_names["rate"] = DefinedName("rate", attr_text="1.25")
    calc = wb.create_sheet("Calc")
    for r in range(1, 41):
        calc[f"A{r}"] = f"=Inputs!A{r}*Inputs!B{r}+rate"
        calc[f"B{r}"] = f"=IF(A{r}>10,ROUND(A{r}/3,2),IFERROR(1/A{r},-1))"
        calc[f"C{r}"] = f"=CW_CAPACITY(Inputs!B{r}*10,A{r})"
        calc[f"D{r}"] = f"=IFERROR(CW_ENERGY(C{r},3.6),\"n/a\")"
        calc[f"E{r}"] = f"=SUM($B$1:B{r})"  # a running total of column B
        calc[f"F{r}"] = f"=Inputs!B{r}^2-MAX(Inputs!B{r},2)"
        # runs that read their own cells: before them (kept one unit, computed in order),
        # and after them (split into single cells)
        calc[f"I{r}"] = f"=I{r - 1}+A{r}" if r > 1 else "=A1"
        calc[f"J{r}"] = f"=SUM($J$1:J{r - 1})+1" if r > 1 else "=1"
        calc[f"K{r}"] = f"=K{r + 1}*0.5+1" if r < 40 else "=2"
    calc["H1"] = "=SUMPRODUCT(A1:A40,B1:B40)"
    calc["H2"] = "=INDEX(B1:B40,MATCH(MAX(B1:B40),B1:B40,0))"
    calc["H3"] = '=COUNTIF(D1:D40,"n/a")'
    calc["H4"] = "=AVERAGE(C1:C40)"
    return _bytes(wb)


def _check_against_oracle(data: bytes, name: str) -> None:
    model = WorkbookModel(data, name)
    ours = model.evaluate()
    oracle = calculate_whole(data, model.sheet_names, False)
    checked = 0
    for key in model.formula_keys:
        if key in model.not_evaluated or key in model.untrusted:
            continue
        a, b = ours.result.values.get(key), oracle.get(key)
        assert _same(a, b), (model.ref_of(key).address, to_cell(a), to_cell(b))
        checked += 1
    assert checked > 0


#: Monte Carlo rows of the cost template the oracle checks. The shipped template has
#: 1,000 (15,631 of its 17,857 formula cells), over which the oracle takes about 64 s;
#: built with 20 it has the same distinct formulas on every sheet (the test below) and
#: the oracle takes about 10 s.
ORACLE_SAMPLES = 20


def _oracle_input(path: Path) -> bytes:
    if path.name == "cost.xlsx":
        return _bytes(build_cost_model(ORACLE_SAMPLES))
    return path.read_bytes()


def _shapes(model: WorkbookModel) -> set[tuple[str, str]]:
    return {(model.sheets[u.sheet].name, u.structure.text) for u in model.plan.units}


@pytest.mark.parametrize("path", TEMPLATES, ids=lambda p: p.name)
def test_every_shipped_template_agrees_with_the_oracle(path):
    _check_against_oracle(_oracle_input(path), path.name)


def test_the_cost_template_the_oracle_checks_has_every_formula_of_the_shipped_one():
    (path,) = [p for p in TEMPLATES if p.name == "cost.xlsx"]
    shipped = WorkbookModel(path.read_bytes(), path.name)
    checked = WorkbookModel(_oracle_input(path), "checked.xlsx")
    assert _shapes(checked) == _shapes(shipped)
    assert len(checked.formula_keys) < len(shipped.formula_keys) / 4


def test_a_mixed_workbook_agrees_with_the_oracle():
    _check_against_oracle(_mixed_book(), "mixed.xlsx")


@pytest.mark.parametrize(
    "data",
    [_mixed_book(), *(p.read_bytes() for p in TEMPLATES)],
    ids=["mixed", *(p.name for p in TEMPLATES)],
)
def test_stacked_blocks_equal_cell_by_cell_evaluation(data):
    model = WorkbookModel(data, "x.xlsx")
    stacked = Evaluator(model.plan, _ours_elementwise).default()
    single = Evaluator(model.plan, _ours_elementwise, stack=False).default()
    assert stacked.values.keys() == single.values.keys()
    for key, value in single.values.items():
        assert _same(stacked.values[key], value), model.ref_of(key).address
    assert stacked.messages == single.messages


def test_warm_runs_equal_cold_runs_of_a_fresh_model():
    data = _mixed_book()
    model = WorkbookModel(data, "mixed.xlsx")
    model.evaluate()
    for a, b in [(3.0, 2.0), (-4.0, 0.5), (0.0, 9.0)]:
        warm = model.evaluate({"Inputs!B7": a, "Inputs!A3": b})
        cold = WorkbookModel(data, "fresh.xlsx").evaluate({"Inputs!B7": a, "Inputs!A3": b})
        assert warm.values == cold.values
        assert {str(d) for d in warm.errors()} == {str(d) for d in cold.errors()}


def test_a_sweep_scenario_equals_an_evaluation():
    model = WorkbookModel(_mixed_book(), "mixed.xlsx")
    run = model.scenario_function(["Inputs!B2"], ["Calc!H1", "Calc!E40", "Calc!D2"])
    for v in (0.5, 2.0, 8.0):
        ev = model.evaluate({"Inputs!B2": v})
        assert run(v) == [ev.value("Calc!H1"), ev.value("Calc!E40"), ev.value("Calc!D2")]


def _batch_case(data: bytes, name: str) -> tuple[WorkbookModel, list[str], list[list], list[str]]:
    """Inputs to vary (named constant cells, at most 4), rows of their values (numbers
    scaled, zeroed, negated; texts in another case and unknown), and every named output."""
    model = WorkbookModel(data, name)
    rng = random.Random(11)  # fixed: the same rows every run
    named = [(n, r) for n, r in model.named_cells.items() if not model.is_formula(r)]
    numbers = [(n, model.constant(r)) for n, r in named if type(model.constant(r)) is float]
    texts = [(n, model.constant(r)) for n, r in named if type(model.constant(r)) is str]
    chosen = rng.sample(numbers, min(3, len(numbers))) + texts[:1]
    rows = []
    for _ in range(12):
        row = []
        for _n, v in chosen:
            if isinstance(v, str):
                row.append(rng.choice([v, v.lower(), "no such name"]))
            else:
                row.append(v * rng.choice([1.0, 0.5, 1.5, 0.0, -1.0, 1.01]))
        rows.append(row)
    outputs = [n for n, r in model.named_cells.items() if model.is_formula(r)]
    return model, [n for n, _ in chosen], rows, outputs


@pytest.mark.parametrize("path", TEMPLATES, ids=lambda p: p.name)
def test_a_batch_of_scenarios_equals_the_scenarios_one_by_one(path):
    # Evaluator.scenarios computes every row at once (stacked where elementwise, row by
    # row elsewhere); a scenario at a time is the reference
    model, targets, rows, outputs = _batch_case(_oracle_input(path), path.name)
    assert targets and outputs
    _assert_batch_equals_one_by_one(model, targets, outputs, rows, batched=False)


def _assert_batch_equals_one_by_one(
    model: WorkbookModel, targets: list[str], outputs: list[str], rows: list[list],
    batched: bool,
) -> None:
    """The rows computed as one batch equal them computed one at a time (``batched``: and
    the batch really was computed at once, not declined to row by row)."""
    if batched:
        ev = model._evaluator
        assert ev is not None
        keys = tuple(model.key_of(model.resolve(t)) for t in targets)
        outs = tuple(model.key_of(model.resolve(o)) for o in outputs)
        assert ev._batch(keys, [tuple(r) for r in rows], outs) is not None
    one = model.scenario_function(targets, outputs)
    expected = [one(*row) for row in rows]
    got = model.scenarios_function(targets, outputs)(rows)
    assert len(got) == len(expected)
    for row, a, b in zip(rows, got, expected, strict=True):
        assert all(_same(x, y) for x, y in zip(a, b, strict=True)), (row, a, b)


def test_a_batch_of_cell_designs_is_computed_at_once_and_equals_one_by_one():
    # the sweep's own case: cell-sizing inputs of every kind (numbers, a material name
    # with its alias and an unknown one, the cell format), computed for all rows at once
    (path,) = [p for p in TEMPLATES if p.name == "cell_sizing.xlsx"]
    model = WorkbookModel(path.read_bytes(), path.name)
    targets = ["in_np_ratio", "in_loading", "in_cathode", "in_format"]
    outputs = [n for n, r in model.named_cells.items() if model.is_formula(r)]
    rows = [
        [np_, load, cathode, fmt]
        for np_ in (0.9, 1.25)
        for load in (12.0, 20.0)
        for cathode in ("NMC811", "LFP", "unobtainium")
        for fmt in ("pouch", "cylindrical", "prismatic")
    ]
    _assert_batch_equals_one_by_one(model, targets, outputs, rows, batched=True)


def test_a_batch_reading_ranges_over_varied_cells_equals_one_by_one():
    # the mixed workbook's sums, lookups and running totals read blocks of cells that
    # vary by row: those cells are computed row by row
    model = WorkbookModel(_mixed_book(), "mixed.xlsx")
    targets = ["Inputs!B2", "Inputs!A3", "Inputs!B7"]
    outputs = ["Calc!H1", "Calc!H2", "Calc!H3", "Calc!H4", "Calc!E40", "Calc!I40", "Calc!D2"]
    rows = [[b, a, c] for b in (0.5, 2.0, 9.0) for a in (0.0, -3.0, "x") for c in (1.0, 4.0)]
    _assert_batch_equals_one_by_one(model, targets, outputs, rows, batched=True)


def test_three_cells_three_messages_in_the_plan_and_in_the_fallback():
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "S"
    ws["A1"] = "=CW_CAPACITY(-1,160)"
    ws["A2"] = "=CW_CAPACITY(-2,160)"
    ws["A3"] = "=CW_CAPACITY(5,-7)"
    plain = _bytes(wb)
    # the same cells in a workbook the plan declines (a cycle with iterative calculation)
    ws["C1"] = "=C2+1"
    ws["C2"] = "=C1/2"
    wb.calculation.iterate = True
    declined = _bytes(wb)
    for data, evaluator in ((plain, "plan"), (declined, "formulas")):
        model = WorkbookModel(data, "m.xlsx")
        assert model.evaluator == evaluator
        got = {d.ref.coordinate: d.message for d in model.evaluate().errors() if d.ref}
        assert "mass_g must be >= 0 (got -1)" in got["A1"]
        assert "mass_g must be >= 0 (got -2)" in got["A2"]
        assert "specific_capacity_mAh_g must be >= 0 (got -7)" in got["A3"]


def test_the_fallback_is_announced_with_the_cell_and_the_reason():
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "S"
    ws["A1"] = "=A2/2+1"
    ws["A2"] = "=A1/2"
    wb.calculation.iterate = True
    model = WorkbookModel(_bytes(wb), "loop.xlsx")
    notes = [d.message for d in model.evaluate().diagnostics if d.kind == "note"]
    assert any("formulas package's own model" in n and "S!A1" in n for n in notes), notes
