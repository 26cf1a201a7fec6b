"""What-if sweeps over a workbook and over the core sizing model."""

from __future__ import annotations

import csv
import dataclasses
import io

import numpy as np
import openpyxl
import pytest
from openpyxl.workbook.defined_name import DefinedName

from udfs.app.demo import demo_spec
from udfs.app.progress import Progress, format_duration
from udfs.app.sweep import (
    CORE_OUTPUTS,
    Vary,
    grid_values,
    parse_vary,
    sweep_core,
    sweep_workbook,
)
from udfs.app.tables import write_table
from udfs.core.sizing import design_cell
from udfs.engine.model import load_model
from udfs.xlsx.file_errors import ReferenceSyntaxError, WorkbookError


def test_grid_values_include_the_stop_and_avoid_float_noise():
    assert grid_values(40, 80, 5) == tuple(float(x) for x in range(40, 81, 5))
    assert grid_values(1.05, 1.2, 0.05) == (1.05, 1.1, 1.15, 1.2)
    assert grid_values(0.1, 0.35, 0.1) == (0.1, 0.2, 0.3)  # 0.4 is past the stop
    assert grid_values(5, 1, -2) == (5.0, 3.0, 1.0)
    assert grid_values(3, 3, 1) == (3.0,)


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("Inputs!B4", "TARGET=start:stop:step"),
        ("Inputs!B4=", "TARGET=start:stop:step"),
        ("Inputs!B4=1:2", "a range is start:stop:step"),
        ("Inputs!B4=1:2:0", "the step must not be 0"),
        ("Inputs!B4=5:1:1", "never goes from 5 to 1"),
        ("Inputs!B4=a:2:1", "'a' is not a number"),
        ("Inputs!B4=1:nan:1", "not a finite number"),
        ("Inputs!B4=0:1e9:1", "values on one axis"),
    ],
)
def test_bad_range_syntax_is_refused_with_a_reason(text, message):
    with pytest.raises(ReferenceSyntaxError, match=message):
        parse_vary(text)


def test_parse_vary_lists_and_quoted_sheets():
    assert parse_vary("'My sheet'!B4=1,2.5, 4") == Vary("'My sheet'!B4", (1.0, 2.5, 4.0))
    assert parse_vary("np_ratio=1.1").values == (1.1,)


def _book() -> bytes:
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "In"
    ws["A1"] = 2.0
    ws["A2"] = 3.0
    ws["B1"] = "=A1*A2"
    ws["B2"] = "=A1+10*A2"
    ws["B3"] = "=IF(A1>A2,1/0,A1)"
    wb.defined_names["prod"] = DefinedName("prod", attr_text="In!$B$1")
    wb.defined_names["mix"] = DefinedName("mix", attr_text="In!$B$2")
    wb.defined_names["a"] = DefinedName("a", attr_text="In!$A$1")
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def _quiet_bar(n):
    return Progress(n, "test", stream=io.StringIO())


def test_workbook_sweep_equals_single_evaluations_first_input_fastest():
    model = load_model(_book(), "sweep.xlsx")
    varies = [parse_vary("a=1:3:1"), parse_vary("In!A2=10,20")]
    table = sweep_workbook(model, varies, progress=_quiet_bar(6))
    assert table.outputs == ["prod", "mix"]  # named formula cells; the named input is not one
    assert table.columns["a"] == [1.0, 2.0, 3.0, 1.0, 2.0, 3.0]
    assert table.columns["In!A2"] == [10.0, 10.0, 10.0, 20.0, 20.0, 20.0]
    for i in range(6):
        a, b = table.columns["a"][i], table.columns["In!A2"][i]
        assert table.columns["prod"][i] == a * b
        assert table.columns["mix"][i] == a + 10 * b


def test_workbook_sweep_with_chosen_outputs_and_error_values():
    model = load_model(_book(), "sweep.xlsx")
    table = sweep_workbook(model, [parse_vary("In!A1=1,5")], ["In!B3"], progress=_quiet_bar(2))
    assert table.columns["In!B3"] == [1.0, "#DIV/0!"]


def test_workbook_sweep_refuses_formula_targets_and_missing_outputs():
    model = load_model(_book(), "sweep.xlsx")
    with pytest.raises(WorkbookError, match="holds a formula, not an input"):
        sweep_workbook(model, [parse_vary("prod=1,2")], progress=_quiet_bar(2))
    wb = openpyxl.Workbook()
    wb.active["A1"] = 1
    wb.active["A2"] = "=A1"
    buf = io.BytesIO()
    wb.save(buf)
    bare = load_model(buf.getvalue(), "bare.xlsx")
    with pytest.raises(WorkbookError, match="choose outputs with --output"):
        sweep_workbook(bare, [parse_vary("Sheet!A1=1,2")], progress=_quiet_bar(2))
    with pytest.raises(ReferenceSyntaxError, match="given twice"):
        sweep_workbook(model, [parse_vary("a=1,2"), parse_vary("A=3,4")], progress=_quiet_bar(4))


def test_core_sweep_equals_direct_design_calls():
    varies = [parse_vary("target_capacity_Ah=40:60:10"), parse_vary("np_ratio=1.05,1.2")]
    table = sweep_core(varies, progress=_quiet_bar(6))
    assert table.rows == 6
    for i in (0, 4):
        spec = dataclasses.replace(
            demo_spec(),
            target_capacity_Ah=table.columns["target_capacity_Ah"][i],
            np_ratio=table.columns["np_ratio"][i],
        )
        one = design_cell(spec)
        for name in CORE_OUTPUTS:
            assert table.columns[name][i] == pytest.approx(float(getattr(one, name)), rel=1e-12)


def test_core_sweep_switches_the_paired_field():
    table = sweep_core([parse_vary("target_energy_Wh=150,200")], progress=_quiet_bar(2))
    assert np.all(table.columns["energy_Wh"] >= np.array([150.0, 200.0]))


@pytest.mark.parametrize(
    ("vary", "message"),
    [
        ("np_ration=1,2", "did you mean np_ratio"),
        ("cathode=1,2", "not a numeric CellSpec field"),
    ],
)
def test_core_sweep_refuses_unknown_fields(vary, message):
    with pytest.raises(WorkbookError, match=message):
        sweep_core([parse_vary(vary)], progress=_quiet_bar(2))


def test_core_sweep_refuses_both_of_a_pair_and_bad_values():
    with pytest.raises(WorkbookError, match="give only one of the two"):
        sweep_core(
            [parse_vary("target_energy_Wh=150"), parse_vary("target_capacity_Ah=40")],
            progress=_quiet_bar(1),
        )
    with pytest.raises(ValueError, match="np_ratio"):
        sweep_core([parse_vary("np_ratio=-1,1")], progress=_quiet_bar(2))


def test_tables_written_as_csv_and_xlsx_with_chart(tmp_path):
    varies = [parse_vary("target_capacity_Ah=40:60:10"), parse_vary("np_ratio=1.05,1.2")]
    table = sweep_core(varies, progress=_quiet_bar(6))
    out_csv = write_table(table, tmp_path / "s.csv")
    rows = list(csv.reader(out_csv.open()))
    assert rows[0] == table.names and len(rows) == 7
    assert float(rows[1][table.names.index("capacity_Ah")]) == pytest.approx(
        table.columns["capacity_Ah"][0], rel=1e-9
    )
    out_xlsx = write_table(table, tmp_path / "s.xlsx")
    wb = openpyxl.load_workbook(out_xlsx)
    ws = wb["Sweep"]
    assert [c.value for c in ws[1]] == table.names
    assert ws.max_row == 7
    assert len(ws._charts) == 4
    about = [r[0].value for r in wb["About"].iter_rows()]
    assert any(str(v).startswith("Caution: results are estimates") for v in about)
    with pytest.raises(Exception, match="already exists"):
        write_table(table, tmp_path / "s.csv")
    with pytest.raises(WorkbookError, match=r"must end in \.csv or \.xlsx"):
        write_table(table, tmp_path / "s.txt")


def test_text_outputs_are_tabulated_but_not_charted(tmp_path):
    model = load_model(_book(), "sweep.xlsx")
    table = sweep_workbook(
        model, [parse_vary("In!A1=1,5")], ["In!B3", "prod"], progress=_quiet_bar(2)
    )
    wb = openpyxl.load_workbook(write_table(table, tmp_path / "t.xlsx"))
    charts = wb["Sweep"]._charts
    assert len(charts) == 1  # In!B3 holds an error value in one scenario: not charted
    assert [c.value for c in wb["Sweep"]["B"]][1:] == [1, "#DIV/0!"]


def test_progress_writes_lines_with_eta_when_not_a_terminal():
    buf = io.StringIO()
    bar = Progress(50, "sweep", stream=buf)
    for _ in range(50):
        bar.advance()
    bar.close()
    lines = buf.getvalue().splitlines()
    assert 1 < len(lines) <= 12  # about one per tenth, not one per step
    assert all("ETA" in line for line in lines)
    assert lines[-1].startswith("sweep [") and "50/50 100%" in lines[-1]
    assert format_duration(3725) == "1:02:05" and format_duration(65) == "1:05"
