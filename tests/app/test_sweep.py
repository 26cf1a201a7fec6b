"""What-if sweeps over a workbook and over the core sizing model."""

from __future__ import annotations

import csv
import dataclasses
import io
import re

import numpy as np
import openpyxl
import pytest
from chart_parts import sheet_charts
from openpyxl.workbook.defined_name import DefinedName

from udfs.app.demo import demo_spec
from udfs.app.progress import Progress, format_duration
from udfs.app.scenario import demo_values
from udfs.app.sweep import (
    CORE_OUTPUTS,
    Vary,
    failures,
    grid_values,
    parse_vary,
    sweep_core,
    sweep_workbook,
)
from udfs.app.tables import write_table
from udfs.core.cost_table import cost_model_from_values
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
    table = sweep_core(varies, progress=_quiet_bar(6), outputs=CORE_OUTPUTS)
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
        ("bogus=1,2", "not an input of the core model"),
        ("np_ratio=1.1,LFP", "'LFP' is not a number"),
        ("cathode=1,2", "in_cathode (Cathode active material) must be the name of a cathode"),
    ],
)
def test_core_sweep_refuses_unknown_fields(vary, message):
    with pytest.raises((WorkbookError, ReferenceSyntaxError), match=re.escape(message)):
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
    charts = sheet_charts(out_xlsx)["Sweep"]
    assert len(charts) == 4  # no outputs asked for: the first four numeric ones
    for chart in charts:  # one series per N/P value, straight segments between points
        assert chart.kind == "scatterChart" and chart.series == 2
        assert chart.scatter_style == "lineMarker" and set(chart.smooth) == {"0"}
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
    charts = sheet_charts(tmp_path / "t.xlsx")["Sweep"]
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


# ----------------------------------------------------------------- issue 13: text, prices, cost


def test_text_values_in_lists_and_names_with_colons():
    assert parse_vary("in_cathode=NMC811, LFP,NCM622").values == ("NMC811", "LFP", "NCM622")
    assert parse_vary("in_electrolyte=LiPF6 1M in EC:DMC").values == ("LiPF6 1M in EC:DMC",)
    assert parse_vary("x=1,LFP").values == (1.0, "LFP")
    with pytest.raises(ReferenceSyntaxError, match="not a finite number"):
        parse_vary("x=1,inf")


def test_core_sweep_varies_chemistry_prices_and_the_plant():
    varies = [parse_vary("in_cathode=NMC811,LFP"), parse_vary("index:nickel=12000,20000"),
              parse_vary("energy_price_USD_per_kWh=0.1,0.2")]
    table = sweep_core(varies, progress=_quiet_bar(8))
    assert table.columns["in_cathode"] == ["NMC811", "LFP"] * 4
    for i in range(8):
        values = {**demo_values(), "in_cathode": table.columns["in_cathode"][i],
                  "in_energy_price_USD_per_kWh": table.columns["energy_price_USD_per_kWh"][i]}
        if values["in_cathode"] == "NMC811":
            values["in_index_nickel"] = table.columns["index:nickel"][i]
        model = cost_model_from_values(values)
        want = float(model(model.base())["full_USD_kWh"])
        assert table.columns["full_USD_kWh"][i] == pytest.approx(want, rel=1e-12)
    # LFP holds no nickel: the nickel index moves nothing there, and a note says so
    lfp = [table.columns["full_USD_kWh"][i] for i in (1, 3)]
    assert lfp[0] == lfp[1]
    assert any("index:nickel" in n and "LFP" in n for n in table.notes)
    assert table.labels["full_USD_kWh"] == "Full cost per kWh"
    assert table.units["full_USD_kWh"] == "USD/kWh"
    assert any("not quotations" in n for n in table.notes)
    assert "demo-2025-06 (2025-06-30)" in table.source


def test_core_sweep_starts_from_a_workbooks_inputs_and_a_price_book(tmp_path):
    from udfs.app.scenario import load_book, read_input_values
    from udfs.app.templates import template_bytes

    path = tmp_path / "cost.xlsx"
    path.write_bytes(template_bytes("cost"))
    values = read_input_values(path)
    assert values["in_price_book"] == "demo-2025-06" and values["in_cathode"] == "NMC811"
    values["in_cathode"] = "LFP"
    book = load_book(name="demo-2024-12")
    table = sweep_core([parse_vary("in_np_ratio=1.05,1.2")], values=values, book=book,
                       outputs=["full_USD_kWh", "capacity_Ah"], progress=_quiet_bar(2))
    model = cost_model_from_values({**values, "in_np_ratio": 1.2}, book)
    assert table.columns["full_USD_kWh"][1] == pytest.approx(
        float(model(model.base())["full_USD_kWh"]), rel=1e-12)
    assert table.charted == ["full_USD_kWh", "capacity_Ah"]
    assert "demo-2024-12" in table.source
    # a price book from a CSV file (--prices FILE): the shipped book's text
    from udfs.core.catalogue import data_dir

    csv_path = tmp_path / "my-book.csv"
    csv_path.write_bytes((data_dir() / "price_books" / "demo-2024-12.csv").read_bytes())
    assert load_book(csv_path).label == "my-book (2024-12-31)"


def test_workbook_price_sweep_gives_numbers_not_na():
    from udfs.templates import TEMPLATES

    buf = io.BytesIO()
    TEMPLATES["cell_sizing"]().save(buf)  # its price units are blank, as built
    model = load_model(buf.getvalue(), "cell_sizing.xlsx")
    table = sweep_workbook(model, [parse_vary("in_price_cathode_active=10:30:10")],
                           ["out_cost_per_kWh_USD"], progress=_quiet_bar(3))
    costs = table.columns["out_cost_per_kWh_USD"]
    assert all(isinstance(x, float) for x in costs), costs
    assert costs[0] < costs[1] < costs[2]
    assert any("set to USD/kg" in n for n in table.notes)
    assert table.units["out_cost_per_kWh_USD"] == "USD/kWh"


def test_workbook_sweep_checks_values_by_the_input_table_and_varies_names():
    from udfs.app.templates import template_bytes

    model = load_model(template_bytes("cost"), "cost.xlsx")
    with pytest.raises(ReferenceSyntaxError, match=r"in_np_ratio \(.*\) must be > 0"):
        sweep_workbook(model, [parse_vary("in_np_ratio=1.1,-1")], progress=_quiet_bar(2))
    table = sweep_workbook(model, [parse_vary("in_cathode=NMC811,LFP")],
                           ["out_full_USD_kWh"], progress=_quiet_bar(2))
    got = table.columns["out_full_USD_kWh"]
    for i, cathode in enumerate(("NMC811", "LFP")):
        core = cost_model_from_values({"in_cathode": cathode})
        assert got[i] == pytest.approx(float(core(core.base())["full_USD_kWh"]), rel=1e-9)
    assert failures(table) == []


def test_a_price_swept_without_its_unit_gets_the_tables_first_unit():
    # the cell-sizing inputs' price and unit pair, in a small workbook: a price without its
    # unit is #N/A there, as in the template
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "In"
    ws["A1"] = None  # the price, blank
    ws["A2"] = None  # its unit, blank
    ws["B1"] = '=IF(ISBLANK(A2),NA(),IF(A2="USD/kg",A1*2,A1*3))'
    for name, ref in (("in_price_cathode_active", "In!$A$1"),
                      ("in_price_unit_cathode_active", "In!$A$2"), ("out_cost", "In!$B$1")):
        wb.defined_names[name] = DefinedName(name, attr_text=ref)
    buf = io.BytesIO()
    wb.save(buf)
    model = load_model(buf.getvalue(), "price.xlsx")
    table = sweep_workbook(model, [parse_vary("in_price_cathode_active=10,20")],
                           progress=_quiet_bar(2))
    assert table.columns["out_cost"] == [20.0, 40.0]
    assert table.notes == ["in_price_unit_cathode_active was blank: set to USD/kg for the sweep "
                           "of in_price_cathode_active"]
    # a unit varied too is the user's: nothing is added
    both = sweep_workbook(model, [parse_vary("in_price_cathode_active=10"),
                                  parse_vary("in_price_unit_cathode_active=USD/m^2")],
                          progress=_quiet_bar(1))
    assert both.columns["out_cost"] == [30.0] and both.notes == []


def test_charts_plot_the_asked_outputs_with_labels_and_units(tmp_path):
    varies = [parse_vary("target_capacity_Ah=40:60:10")]
    asked = ["cost_per_kWh_USD", "specific_energy_Wh_kg"]
    table = sweep_core(varies, progress=_quiet_bar(3), outputs=asked)
    charts = sheet_charts(write_table(table, tmp_path / "s.xlsx"))["Sweep"]
    assert len(charts) == 2
    first = " ".join(charts[0].texts)
    assert "Materials per kWh" in first and "(USD/kWh)" in first
    assert "Specific energy (Wh/kg)" in " ".join(charts[1].texts)
    assert all(c.smooth and set(c.smooth) == {"0"} for c in charts)


def test_a_sweep_over_names_is_tabulated_with_a_note_instead_of_a_chart(tmp_path):
    varies = [parse_vary("in_cathode=NMC811,LFP"), parse_vary("np_ratio=1.05,1.2")]
    table = sweep_core(varies, progress=_quiet_bar(4))
    out = write_table(table, tmp_path / "names.xlsx")
    assert sheet_charts(out)["Sweep"] == []
    about = [" ".join(str(c.value) for c in row) for row in openpyxl.load_workbook(out)["About"]
             .iter_rows()]
    assert any("NMC811, LFP" in line for line in about)
    assert any("not a number" in line for line in about)
