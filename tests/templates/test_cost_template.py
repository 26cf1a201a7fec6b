"""The cost workbook (udfs/templates/cost_model.py): built from its one input
table, computed headlessly without an error value, and equal to the core's
cost model (udfs.core.cost_table, udfs.core.cell_cost, udfs.core.risk) for the
template as built and for a case with every kind of override.

Inputs are the template's starting values, the shipped demo books and round
numbers of our own (demo data), not reference values; the reference is the
core's own computation of the same inputs.
"""

from __future__ import annotations

import io
import math
from typing import Any

import numpy as np
import pytest
from chart_parts import sheet_charts
from openpyxl import Workbook

from udfs.core.conversion_cost import COST_CAUTION
from udfs.core.cost_table import COST, DESIGN_INPUTS, RISK_INPUTS, design_and_model
from udfs.core.risk import monte_carlo, tornado
from udfs.core.validate import FreeText
from udfs.engine.model import Evaluation, load_model
from udfs.sheet.error_values import SheetError
from udfs.templates import TEMPLATES
from udfs.templates.cost_model import BOM_ROWS, HISTOGRAM_BINS, RISK_SAMPLES, build_cost_model
from udfs.templates.input_rules import data_validation
from udfs.templates.snapshot import reproducible_bytes
from udfs.templates.workbook_inputs import input_values, set_inputs

REL = 1e-9


def _close(got: Any, want: Any, what: str, rel: float = REL) -> None:
    assert not isinstance(got, SheetError), f"{what}: error value {got}"
    assert isinstance(got, (int, float)), f"{what}: {got!r}"
    assert math.isclose(float(got), float(want), rel_tol=rel, abs_tol=1e-12), (
        f"{what}: workbook {got!r} != core {float(want)!r}")


def _evaluate(wb: Workbook) -> Evaluation:
    buf = io.BytesIO()
    wb.save(buf)
    return load_model(buf.getvalue(), "cost.xlsx").evaluate()


def _named_range(wb: Workbook, name: str) -> tuple[str, list[str]]:
    sheet, ref = next(iter(wb.defined_names[name].destinations))
    ref = ref.replace("$", "")
    if ":" not in ref:
        return sheet, [ref]
    return sheet, [c.coordinate for row in wb[sheet][ref] for c in row]


def _compare_row(wb: Workbook, name: str) -> int:
    ws = wb["Compare"]
    return next(r for r in range(1, ws.max_row + 1) if ws[f"B{r}"].value == name
                and ws[f"C{r}"].value == f'=IF(ISBLANK({name}),"",{name})')


def _core_ranges(wb: Workbook, model: Any) -> dict[str, tuple[float, float, float, str]]:
    """The Risk sheet's ranges for the inputs the core's model has."""
    v = input_values(wb)
    base = model.base()
    out = {}
    for name, _ in RISK_INPUTS:
        if name not in base:
            continue  # an index no material of this cell uses: no effect in either route
        key = name.split(":", 1)[-1].replace(" ", "_")
        x = float(base[name])
        out[name] = (x * (1 + v[f"in_risk_low_{key}"]), x, x * (1 + v[f"in_risk_high_{key}"]),
                     v[f"in_risk_dist_{key}"])
    return out


# Cases: (id, changes of the inputs, overrides of design B and C on the Compare sheet).
CASES: list[tuple[str, dict[str, Any], dict[str, dict[str, Any]]]] = [
    ("as built", {}, {"B": {"in_cathode": "LFP"}, "C": {"in_np_ratio": 1.2}}),
    (
        "overrides",
        {
            "in_index_nickel": 21000.0, "in_index_lithium_hydroxide": 12500.0,
            "in_index_cobalt": 28000.0, "in_contract_fee": 11.0, "in_payable_cobalt": 0.85,
            "in_energy_price_USD_per_kWh": 0.16, "in_electrode_yield": 0.93,
            "in_margin_fraction": 0.08, "in_cathode": "NCM622", "in_target": 80.0,
            "in_risk_seed": 7.0, "in_risk_dist_nickel": "pert", "in_risk_dist_copper": "uniform",
            "in_risk_high_formation_yield": 0.02,
        },
        {"B": {"in_cathode": "NMC811", "in_target_basis": "energy", "in_target": 300.0},
         "C": {"in_anode": "SiOx", "in_separator": "PP separator"}},
    ),
    ("old book", {"in_price_book": "demo-2024-12", "in_cathode": "LFP"},
     {"B": {"in_cathode": "NMC811"}, "C": {"in_cathode": "LMFP"}}),
]


@pytest.fixture(scope="module", params=CASES, ids=[c[0] for c in CASES])
def case(request: pytest.FixtureRequest) -> tuple[Workbook, Evaluation, dict[str, Any]]:
    _, changes, designs = request.param
    wb = build_cost_model()
    set_inputs(wb, changes)
    for d, col in (("B", "D"), ("C", "E")):
        for name, value in designs[d].items():
            wb["Compare"][f"{col}{_compare_row(wb, name)}"] = value
    return wb, _evaluate(wb), designs


def test_the_template_is_registered_and_built_from_its_table() -> None:
    assert TEMPLATES["cost"] is build_cost_model
    wb = build_cost_model()
    assert wb.sheetnames == ["Inputs", "Design", "Cost", "Risk", "Compare", "Notes", "Lists"]
    assert wb.active.title == "Inputs" and wb["Lists"].sheet_state == "hidden"
    for inp in COST:
        assert inp.name in wb.defined_names, inp.name
        sheet, cells = _named_range(wb, inp.name)
        assert len(cells) == 1
        cell = wb[sheet][cells[0]]
        assert cell.value == inp.default and not cell.protection.locked, inp.name
        if isinstance(inp.domain, FreeText):
            continue
        hits = [dv for dv in wb[sheet].data_validations.dataValidation if cells[0] in dv.sqref]
        assert len(hits) == 1, inp.name
        want = data_validation(inp, cells[0])
        assert (hits[0].type, hits[0].operator, hits[0].formula1, hits[0].error) == (
            want.type, want.operator, want.formula1, want.error), inp.name
    # charts: the waterfall; the tornado and the histogram
    charts = sheet_charts(io.BytesIO(reproducible_bytes(wb)))
    assert len(charts["Cost"]) == 1 and len(charts["Risk"]) == 2
    # every sheet with costs says they are estimates and shows the price book
    for title in ("Cost", "Risk", "Compare"):
        texts = [c.value for row in wb[title].iter_rows(max_row=6) for c in row]
        assert COST_CAUTION in texts and "=out_book_label" in texts, title


def test_no_error_value_anywhere(case: Any) -> None:
    _, ev, _ = case
    bad = [str(ref) for ref, v in ev.values.items() if isinstance(v, SheetError)]
    assert not bad, bad[:10]
    assert ev.value("out_checks") == "all checks pass"
    outputs = [nv for nv in ev.named() if nv.name.startswith("out_")]
    assert len(outputs) >= 12


def test_key_results_and_waterfall_equal_the_core(case: Any) -> None:
    wb, ev, _ = case
    cell, model = design_and_model(input_values(wb))
    out = model(model.base())
    for name in ("full_USD_kWh", "full_USD_cell", "full_USD_Ah", "materials_USD_kWh",
                 "conversion_USD_kWh"):
        _close(ev.value(f"out_{name}"), out[name], name)
    _close(ev.value("out_energy_Wh"), cell.energy_Wh, "energy")
    _close(ev.value("out_capacity_Ah"), cell.capacity_Ah, "capacity")
    assert ev.value("out_book_label") == model.book_label
    # the waterfall, line by line, and the cost of every bill line
    ws_rows = {wb["Cost"][f"B{r}"].value: r for r in range(1, wb["Cost"].max_row + 1)}
    for line in ("materials in cells", "scrap", "scrap credit", "depreciation", "labour",
                 "energy", "overhead", "margin"):
        r = ws_rows[line[0].upper() + line[1:]]
        _close(ev.value(f"Cost!C{r}"), out[line.replace(" ", "_") + "_USD_kWh"], line)
    lines = list(model.lines)
    _, usd = _named_range(wb, "cost_line_usd_kwh")
    assert len(usd) == BOM_ROWS
    by_component = dict(zip((ln.component for ln in lines), range(len(lines)), strict=True))
    k = model.kernel(model.base(), [ln.per_kWh for ln in lines], model.energy_Wh,
                     model.capacity_Ah)
    for component, i in by_component.items():
        want = float(lines[i].per_kWh) * float(k["unit prices"][lines[i].material])
        _close(ev.value(f"Cost!{usd[i]}"), want, component)
    for extra in usd[len(lines):]:
        assert ev.value(f"Cost!{extra}") == 0.0


def test_sensitivities_equal_the_core(case: Any) -> None:
    wb, ev, _ = case
    _, model = design_and_model(input_values(wb))
    sens = model.sensitivities()
    sheet, cells = _named_range(wb, "cost_sensitivity")
    names = [wb[sheet][f"B{c[1:]}"].value for c in cells]
    for name, c in zip(names, cells, strict=True):
        _close(ev.value(f"{sheet}!{c}"), float(sens.get(name, 0.0)), f"sensitivity {name}")


def test_risk_percentiles_tornado_and_histogram_equal_the_core(case: Any) -> None:
    wb, ev, _ = case
    _, model = design_and_model(input_values(wb))
    ranges = _core_ranges(wb, model)
    seed = int(input_values(wb)["in_risk_seed"])
    mc = monte_carlo(model, ranges, RISK_SAMPLES, seed)
    pct = mc.summary["full_USD_kWh"].percentiles
    for p, name in ((10.0, "p10"), (50.0, "p50"), (90.0, "p90")):
        _close(ev.value(f"out_risk_{name}"), pct[p], name)
    _close(ev.value("out_risk_mean"), mc.summary["full_USD_kWh"].mean, "mean")
    sheet, samples = _named_range(wb, "risk_samples")
    got = np.array([ev.value(f"{sheet}!{c}") for c in samples], dtype=float)
    np.testing.assert_allclose(got, mc.samples["full_USD_kWh"], rtol=REL)
    # the tornado: same bars in the same order (inputs without effect swing 0 at the end)
    t = tornado(model, ranges)
    sheet, cells = _named_range(wb, "risk_tornado")
    rows = sorted({int(c[1:]) for c in cells})
    shown = [(ev.value(f"{sheet}!B{r}"), ev.value(f"{sheet}!C{r}"), ev.value(f"{sheet}!D{r}"))
             for r in rows]
    for bar, (name, low, high) in zip(t.bars, shown, strict=False):
        assert name == bar.name
        _close(low, bar.low_output - t.base, f"tornado low {name}", rel=1e-8)
        _close(high, bar.high_output - t.base, f"tornado high {name}", rel=1e-8)
    assert all(low == 0.0 and high == 0.0 for _, low, high in shown[len(t.bars):])
    # the histogram counts every sample once
    ws = wb[sheet]
    first = next(r for r in range(1, ws.max_row + 1) if ws[f"B{r}"].value == "From")
    counts = [ev.value(f"{sheet}!D{first + 1 + j}") for j in range(HISTOGRAM_BINS)]
    assert sum(counts) == RISK_SAMPLES


def test_compare_sheet_equals_the_core(case: Any) -> None:
    wb, ev, designs = case
    base = input_values(wb)
    ws = wb["Compare"]
    rows = {ws[f"B{r}"].value: r for r in range(1, 40)}
    full = rows["Full cost per kWh"]
    for col, d in (("C", None), ("D", "B"), ("E", "C")):
        values = dict(base)
        if d is not None:
            for name, value in designs[d].items():
                values[name] = value
        cell, model = design_and_model(values)
        out = model(model.base())
        _close(ev.value(f"Compare!{col}{full}"), out["full_USD_kWh"], f"design {d} full")
        _close(ev.value(f"Compare!{col}{rows['Specific energy']}"), cell.specific_energy_Wh_kg,
               f"design {d} Wh/kg")
        _close(ev.value(f"Compare!{col}{rows['Full cost per Ah']}"), out["full_USD_Ah"],
               f"design {d} USD/Ah")
    _close(ev.value(f"Compare!F{full}"),
           float(ev.value(f"Compare!D{full}")) - float(ev.value(f"Compare!C{full}")), "B - A")


def test_a_range_outside_its_input_is_an_error_not_a_number() -> None:
    wb = build_cost_model()
    set_inputs(wb, {"in_risk_high_electrode_yield": 0.2})  # 0.95 x 1.2 > 1: not a yield
    ev = _evaluate(wb)
    assert isinstance(ev.value("out_risk_p50"), SheetError)
    ws = wb["Risk"]
    row = next(r for r in range(1, ws.max_row + 1) if ws[f"L{r}"].value == "electrode_yield")
    assert str(ev.value(f"Risk!K{row}")).startswith("the range leaves > 0 and <= 1")
    assert ev.value("out_full_USD_kWh") is not None and not isinstance(
        ev.value("out_full_USD_kWh"), SheetError)  # the cost itself stands


def test_lithium_paid_twice_fails_the_checks() -> None:
    wb = build_cost_model()
    set_inputs(wb, {"in_payable_lithium_carbonate": 1.0})  # the book pays it as hydroxide
    ev = _evaluate(wb)
    assert ev.value("out_checks") == "a check fails: see the Check columns"


def test_design_inputs_reach_the_core_through_one_table() -> None:
    wb = build_cost_model()
    sheet, cells = _named_range(wb, "design_inputs")
    names = [wb[sheet][c].value for c in cells if c.startswith("B")]
    assert names == list(DESIGN_INPUTS)
