"""The template builders: structure, protection, names, validations, the
committed files in workbook_templates/, and the CellSpec <-> inputs bridge.

Numbers here are layout facts of our own templates (common practice for
spreadsheets: inputs unlocked, formulas locked), not reference values.
"""

from __future__ import annotations

import io
from pathlib import Path
from typing import Any

import pytest
from chart_parts import sheet_charts
from openpyxl import Workbook, load_workbook
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.formula import ArrayFormula

from udfs.core.errors import CellwrightError
from udfs.core.sizing import CellSpec
from udfs.core.sizing_values import spec_values
from udfs.templates import TEMPLATES, build_demo, fill_demo, fill_spec
from udfs.templates.snapshot import diff_snapshots, reproducible_bytes, snapshot
from udfs.templates.workbook_inputs import input_values, set_inputs

ROOT = Path(__file__).resolve().parents[2]
COMMITTED = ROOT / "workbook_templates"

SHEETS = {
    "cell_sizing": ["Inputs", "Electrodes", "Format", "Bill of materials", "Pack",
                    "Procurement", "What-if", "Notes", "Lists"],
    "potentials": ["Potentials", "Sweep", "Notes", "Lists"],
    "electrolysis": ["Electrolysis", "Notes"],
    "cost": ["Inputs", "Design", "Cost", "Risk", "Compare", "Notes", "Lists"],
}


@pytest.fixture(scope="module")
def books() -> dict[str, Workbook]:
    return {name: build() for name, build in TEMPLATES.items()}


def _cell(wb: Workbook, name: str) -> Any:
    sheet, ref = next(iter(wb.defined_names[name].destinations))
    return wb[sheet][ref.replace("$", "")]


def test_registry_names_the_four_templates() -> None:
    assert set(TEMPLATES) == {"cell_sizing", "potentials", "electrolysis", "cost"}
    assert all(callable(b) for b in TEMPLATES.values())


@pytest.mark.parametrize("name", sorted(SHEETS))
def test_sheets_in_working_order_and_opens_on_inputs(books: dict[str, Workbook], name: str) -> None:
    wb = books[name]
    assert wb.sheetnames == SHEETS[name]
    assert wb.active.title == SHEETS[name][0]
    assert [ws.sheet_state for ws in wb.worksheets].count("visible") == len(
        [s for s in SHEETS[name] if s != "Lists"]
    )
    if "Lists" in wb.sheetnames:
        assert wb["Lists"].sheet_state == "hidden"


@pytest.mark.parametrize("name", sorted(SHEETS))
def test_inputs_unlocked_formulas_locked_sheets_protected(
    books: dict[str, Workbook], name: str
) -> None:
    wb = books[name]
    inputs = [n for n in wb.defined_names if n.startswith("in_")]
    assert len(inputs) >= 8
    for n in inputs:
        cell = _cell(wb, n)
        assert not cell.protection.locked, n
        assert not (isinstance(cell.value, str) and cell.value.startswith("=")), n
    formulas = 0
    for ws in wb.worksheets:
        assert ws.protection.sheet, ws.title
        assert not ws.protection.password, ws.title  # protection without a password
        for row in ws.iter_rows():
            for c in row:
                if isinstance(c.value, ArrayFormula) or (
                    isinstance(c.value, str) and c.value.startswith("=")
                ):
                    formulas += 1
                    assert c.protection.locked, f"{ws.title}!{c.coordinate}"
    assert formulas > 20


@pytest.mark.parametrize("name", sorted(SHEETS))
def test_outputs_are_named_formula_cells(books: dict[str, Workbook], name: str) -> None:
    wb = books[name]
    outs = [n for n in wb.defined_names if n.startswith("out_")]
    assert len(outs) >= 6
    for n in outs:
        value = _cell(wb, n).value
        assert isinstance(value, str) and value.startswith("="), n


@pytest.mark.parametrize("name", sorted(SHEETS))
def test_every_input_has_unit_hint_and_validation_message(
    books: dict[str, Workbook], name: str
) -> None:
    wb = books[name]
    validated: dict[str, set[str]] = {}
    for ws in wb.worksheets:
        for dv in ws.data_validations.dataValidation:
            assert dv.prompt and dv.error and dv.showErrorMessage, (ws.title, dv.sqref)
            assert len(dv.prompt) <= 255 and len(dv.promptTitle or "") <= 32
            for rng in dv.sqref.ranges:
                validated.setdefault(ws.title, set()).update(
                    f"{get_column_letter(col)}{row}" for row, col in rng.cells
                )
    unvalidated = []
    for n in (n for n in wb.defined_names if n.startswith("in_")):
        sheet, ref = next(iter(wb.defined_names[n].destinations))
        if ref.replace("$", "") not in validated.get(sheet, set()) and n != "in_scenario":
            unvalidated.append(n)
    # free text inputs: species names and product formulas are checked by the CW_ functions
    assert all(("species" in n) or n.endswith("_product") for n in unvalidated), unvalidated


def test_cell_sizing_units_and_hints_beside_inputs(books: dict[str, Workbook]) -> None:
    ws = books["cell_sizing"]["Inputs"]
    for n, dn in books["cell_sizing"].defined_names.items():
        sheet, ref = next(iter(dn.destinations))
        if not n.startswith("in_") or sheet != "Inputs" or n.startswith("in_price"):
            continue
        row = int(ref.split("$")[-1])
        if n == "in_scenario":
            continue
        assert ws[f"B{row}"].value, n  # label
        assert ws[f"E{row}"].value, n  # one-line hint
        assert ws[f"D{row}"].value is not None or n.endswith("_basis"), n  # unit


@pytest.mark.parametrize("name", sorted(SHEETS))
def test_print_settings_fit_one_page(books: dict[str, Workbook], name: str) -> None:
    for ws in books[name].worksheets:
        if ws.sheet_state == "hidden":
            continue
        assert ws.sheet_properties.pageSetUpPr.fitToPage, ws.title
        assert ws.page_setup.fitToWidth == 1 and ws.page_setup.fitToHeight == 1, ws.title


def test_cell_sizing_has_charts_and_one_formula_grids(books: dict[str, Workbook]) -> None:
    wb = books["cell_sizing"]
    charts = sheet_charts(io.BytesIO(reproducible_bytes(wb)))
    assert len(charts["Bill of materials"]) == 1
    assert len(charts["Procurement"]) == 1
    for grid in ("wi_cost_per_kWh", "wi_Wh_kg"):
        sheet, ref = next(iter(wb.defined_names[grid].destinations))
        first = ref.split(":")[0].replace("$", "")
        formula = wb[sheet][first].value
        assert isinstance(formula, ArrayFormula)
        assert formula.ref.replace("$", "") == ref.replace("$", "")  # one formula, whole grid
    assert wb["What-if"].conditional_formatting  # colour scales
    potentials = sheet_charts(io.BytesIO(reproducible_bytes(books["potentials"])))
    assert len(potentials["Sweep"]) == 1


def test_checks_are_named_cells_and_unread_rows_are_greyed(books: dict[str, Workbook]) -> None:
    from udfs.templates.sizing_checks import RULES

    wb = books["cell_sizing"]
    for rule in RULES:  # the convention `cellwright calc` relies on: warn_... / err_...
        assert rule.name.startswith(("warn_", "err_")), rule.name
        cell = _cell(wb, rule.name)
        assert cell.parent.title == "Inputs" and str(cell.value).startswith("="), rule.name
    summary = str(_cell(wb, "out_checks").value)
    assert all(rule.name in summary for rule in RULES)  # "all checks pass" reads every rule
    rules = [r for cf in wb["Inputs"].conditional_formatting for r in cf.rules]
    assert any("not used" in (r.formula or [""])[0] for r in rules)
    assert wb["Pack"].conditional_formatting  # the 60 V DC caution band
    for name in ("use_wall", "use_cathode_first_charge", "geo_cell_volume_cm3", "pack_caution"):
        assert name in wb.defined_names, name


def test_drop_downs_are_fed_by_the_catalogue(books: dict[str, Workbook]) -> None:
    from udfs.core import catalogue

    wb = books["cell_sizing"]
    sheet, ref = next(iter(wb.defined_names["list_cathode"].destinations))
    names = [c.value for row in wb[sheet][ref.replace("$", "")] for c in row]
    canonical = catalogue.material_names("cathode")
    assert names[: len(canonical)] == canonical  # the catalogue's names, then the aliases
    assert "LFP" in names[len(canonical):]  # an alias of LiFePO4 in data/active_materials.csv
    dvs = [dv for dv in wb["Inputs"].data_validations.dataValidation if dv.type == "list"]
    assert any(dv.formula1 == "list_cathode" for dv in dvs)
    pw = books["potentials"]
    sheet, ref = next(iter(pw.defined_names["list_couple"].destinations))
    assert [c.value for row in pw[sheet][ref.replace("$", "")] for c in row] == (
        catalogue.couple_ids()
    )


@pytest.mark.parametrize("name", sorted(SHEETS))
def test_committed_template_equals_its_builder(name: str) -> None:
    path = COMMITTED / f"{name}.xlsx"
    assert path.is_file(), f"{path} missing: run python -m udfs.app.templates --write"
    diffs = diff_snapshots(snapshot(load_workbook(path)), snapshot(TEMPLATES[name]()))
    assert not diffs, "\n".join([f"{path.name} drifted from its builder:", *diffs])


def test_snapshot_sees_a_changed_formula_name_and_validation() -> None:
    base = TEMPLATES["electrolysis"]()
    changed = TEMPLATES["electrolysis"]()
    sheet, ref = next(iter(changed.defined_names["out_plating_kg_h"].destinations))
    changed[sheet][ref.replace("$", "")] = "=1"
    del changed.defined_names["in_water_hours"]
    changed["Electrolysis"].data_validations.dataValidation[0].prompt = "changed"
    diffs = diff_snapshots(snapshot(base), snapshot(changed))
    assert any(ref.replace("$", "") in d for d in diffs)
    assert any("in_water_hours" in d for d in diffs)
    assert any("validations" in d for d in diffs)


def test_builder_output_is_reproducible_bytes() -> None:
    a = reproducible_bytes(TEMPLATES["potentials"]())
    b = reproducible_bytes(TEMPLATES["potentials"]())
    assert a == b
    assert snapshot(load_workbook(io.BytesIO(a))) == snapshot(load_workbook(io.BytesIO(b)))


# ----------------------------------------------------------------- CellSpec <-> inputs


def test_spec_values_cover_every_sizing_input() -> None:
    spec = CellSpec("LFP", "graphite", target_energy_Wh=100.0, cathode_areal_capacity_mAh_cm2=3.0,
                    cathode_binder={"PVDF": 0.7, "CMC": 0.3}, anode_binder="SBR",
                    prices={"LFP": 7.0, "PE separator": (0.9, "USD/m^2"),
                            "graphite": (6500.0, "USD/t")})
    values = spec_values(spec, order_cells=1000)
    wb = TEMPLATES["cell_sizing"]()
    names = {n for n in wb.defined_names if n.startswith("in_")}
    assert set(values) == names - {"in_scenario"}
    assert values["in_cathode"] == "LiFePO4"  # the catalogue's spelling, not the alias
    assert values["in_cathode_binder2"] == "CMC" and values["in_cathode_binder2_share"] == 0.3
    assert values["in_anode_binder2"] is None and values["in_anode_binder2_share"] == 0.0
    assert values["in_price_cathode_active"] == 7.0
    assert values["in_price_unit_separator"] == "USD/m^2"
    assert values["in_price_anode_active"] == pytest.approx(6.5, rel=1e-12)  # USD/t -> USD/kg
    assert values["in_price_anode_binder"] is None  # demo price list
    assert values["in_order_basis"] == "cells" and values["in_order_size"] == 1000.0


def test_fill_spec_writes_inputs_only() -> None:
    wb = fill_spec(TEMPLATES["cell_sizing"](), CellSpec(
        "NMC622", "graphite", target_capacity_Ah=20.0, cathode_loading_mg_cm2=18.0,
        np_ratio=1.2), order_MWh=3.0)
    values = input_values(wb)
    assert values["in_cathode"] == "NMC622" and values["in_np_ratio"] == 1.2
    assert values["in_target"] == 20.0 and values["in_order_size"] == 3.0
    with pytest.raises(CellwrightError, match="computed cell"):
        set_inputs(wb, {"out_energy_Wh": 1.0})
    with pytest.raises(CellwrightError, match="not an input"):
        set_inputs(wb, {"in_nonsense": 1.0})


def test_fill_spec_refuses_what_one_workbook_cannot_hold() -> None:
    wb = TEMPLATES["cell_sizing"]()
    with pytest.raises(CellwrightError, match="single number"):
        fill_spec(wb, CellSpec("NMC811", "graphite", target_capacity_Ah=[10.0, 20.0],
                               cathode_loading_mg_cm2=20.0))
    with pytest.raises(CellwrightError, match="per mass or per area"):  # the table's units
        fill_spec(wb, CellSpec("NMC811", "graphite", target_capacity_Ah=10.0,
                               cathode_loading_mg_cm2=20.0, prices={"graphite": (5.0, "USD/L")}))
    with pytest.raises(CellwrightError, match="cell-sizing"):
        fill_spec(TEMPLATES["potentials"](), CellSpec("NMC811", "graphite",
                                                       target_capacity_Ah=10.0,
                                                       cathode_loading_mg_cm2=20.0))
    with pytest.raises(CellwrightError, match="spec"):
        fill_spec(wb, "not a spec")  # type: ignore[arg-type]


def test_demo_fill_is_labelled_demo_data() -> None:
    from udfs.app.demo import DEMO_LABEL, demo_spec

    wb = build_demo()
    values = input_values(wb)
    assert DEMO_LABEL in values["in_scenario"]
    assert values["in_cathode"] == demo_spec().cathode
    assert values["in_target"] == float(demo_spec().target_capacity_Ah)  # type: ignore[arg-type]
    again = fill_demo(TEMPLATES["cell_sizing"]())
    assert input_values(again) == values
