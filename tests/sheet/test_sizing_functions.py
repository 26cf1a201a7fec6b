"""The CW_ functions of the sizing model (udfs/sheet/sizing.py): material
names, the cell design, its design rules, the formats' pieces (presets, the
wound roll), the pack, and the table argument they share
(udfs.sheet.coerce.table_arg).

Inputs are round design numbers (common practice magnitudes), not reference
values; each function is compared with the core it calls on the same inputs.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from udfs.core.cell_formats import PRESETS
from udfs.core.design_rules import review_design
from udfs.core.errors import CellwrightError
from udfs.core.pack import HIGH_VOLTAGE_CAUTION, PackSpec, size_pack
from udfs.core.sizing import CellSpec, design_cell
from udfs.core.sizing_values import pack_values, spec_values
from udfs.core.spiral import wound_length
from udfs.sheet.args import Table
from udfs.sheet.coerce import table_arg
from udfs.sheet.error_values import SheetError
from udfs.sheet.registry import FUNCTIONS

DESIGN = FUNCTIONS["CW_CELL_DESIGN"]
NAME = FUNCTIONS["CW_MATERIAL_NAME"]
F = FUNCTIONS


def _spec(**kw: object) -> CellSpec:
    # a 55 Ah NMC811/graphite pouch at 22 mg/cm2 (common practice magnitudes)
    base: dict[str, object] = dict(cathode="NMC811", anode="graphite", target_capacity_Ah=55.0,
                                   cathode_loading_mg_cm2=22.0)
    return CellSpec(**{**base, **kw})  # type: ignore[arg-type]


def _rows(spec: CellSpec | None = None, pack: PackSpec | None = None) -> list[list[object]]:
    values = {**spec_values(spec or _spec()), **pack_values(pack or PackSpec())}
    return [[k, v] for k, v in values.items()]


def test_material_name_resolves_once_with_or_without_a_role() -> None:
    # aliases from data/active_materials.csv
    assert NAME("LFP", "") == "LiFePO4" and NAME("ncm811", "cathode") == "NMC811"
    assert NAME("carbon black", "conductive carbon") == "carbon black"
    assert NAME([["LFP"], ["graphite"]], [["cathode"], ["anode"]]) == [["LiFePO4"], ["graphite"]]
    out = NAME([["LFP", "graphite"]], "cathode")
    assert out[0][0] == "LiFePO4" and isinstance(out[0][1], SheetError)


def test_cell_design_grid_equals_the_core_with_errors_per_element() -> None:
    loads, nps = [[18.0, 22.0, -1.0]], [[1.05], [1.2]]
    grid = DESIGN("cost_per_kWh_USD", _rows(), "cathode_loading_mg_cm2", loads, "in_np_ratio",
                  nps)
    spec = dataclasses.replace(_spec(), cathode_loading_mg_cm2=np.array([[18.0, 22.0]]),
                               np_ratio=np.array(nps))
    core = design_cell(spec).cost_per_kWh_USD
    assert np.array([row[:2] for row in grid]) == pytest.approx(core, rel=1e-12)
    assert all(str(row[2]).startswith("#NUM! cathode_loading_mg_cm2 must be > 0") for row in grid)
    assert DESIGN("cost_per_kWh_USD", _rows()) == pytest.approx(
        float(design_cell(_spec()).cost_per_kWh_USD), rel=1e-12)


def test_an_error_value_among_the_inputs_is_passed_on() -> None:
    rows = [r if r[0] != "in_np_ratio" else ["in_np_ratio", "#DIV/0!"] for r in _rows()]
    assert str(DESIGN("capacity_Ah", rows)).startswith("#DIV/0!")


def test_table_argument_reads_one_mapping() -> None:
    arg = Table("inputs", "")
    got = table_arg(np.array([["in_a", 1], ["in_b", None], [None, None]], dtype=object), arg)
    assert dict(got.value) == {"in_a": 1.0, "in_b": None} and got.bad is None
    with pytest.raises(CellwrightError, match="repeats the name 'in_a'"):
        table_arg([["in_a", 1], ["in_a", 2]], arg)
    with pytest.raises(CellwrightError, match="row 1 has a value but no name"):
        table_arg([[None, 1]], arg)
    with pytest.raises(CellwrightError, match="two-column"):
        table_arg([["in_a", 1, 2]], arg)
    bad = table_arg([["in_a", True]], arg)
    assert bad.bad is not None and "not TRUE" in str(bad.errors)


# ---------------------------------------------------------------- formats, checks and the pack


def test_cell_design_of_each_format_and_outputs_that_do_not_apply() -> None:
    for fmt, target in (("cylindrical", 5.0), ("prismatic", 200.0)):
        spec = _spec(cell_format=fmt, target_capacity_Ah=target)
        got = DESIGN("cell_mass_g", _rows(spec))
        assert got == pytest.approx(float(design_cell(spec).cell_mass_g), rel=1e-12)
    out = DESIGN("cell_diameter_mm", _rows())
    assert isinstance(out, SheetError) and "does not apply to a pouch cell" in str(out)
    env = _spec(sizing_mode="envelope", target_capacity_Ah=None)
    out = DESIGN("target_capacity_Ah", _rows(env))
    assert isinstance(out, SheetError) and "envelope" in str(out)
    # a what-if over the cylinder's diameter: one formula, the core's numbers
    cyl = _spec(cell_format="cylindrical", sizing_mode="envelope", target_capacity_Ah=None)
    grid = DESIGN("capacity_Ah", _rows(cyl), "in_cell_diameter", [[18.3, 21.2, 46.0]])
    want = design_cell(dataclasses.replace(cyl, cell_diameter_mm=np.array([[18.3, 21.2, 46.0]])))
    assert np.array(grid) == pytest.approx(want.capacity_Ah, rel=1e-12)


def test_cell_checks_spill_the_rules_or_all_pass() -> None:
    assert F["CW_CELL_CHECKS"](_rows()) == [["all checks pass"]]
    rows = _rows(_spec(np_ratio=0.5, electrolyte_fill=0.3))
    got = [r[0] for r in F["CW_CELL_CHECKS"](rows)]
    assert got == review_design(_spec(np_ratio=0.5, electrolyte_fill=0.3)).summary()
    assert any("lithium plating" in g for g in got) and any("pores left dry" in g for g in got)
    bad = F["CW_CELL_CHECKS"]([["in_np_ratio", -1.0]])
    assert isinstance(bad, SheetError) and "in_np_ratio" in str(bad)


def test_format_presets() -> None:
    assert F["CW_FORMAT_PRESET"]("wall_mm", "cylindrical", "18 mm") == \
        PRESETS["cylindrical 18 mm"]["wall_mm"].value
    assert F["CW_FORMAT_PRESET"]("cell_height_mm", "prismatic") == \
        PRESETS["prismatic"]["cell_height_mm"].value
    out = F["CW_FORMAT_PRESET"]("core_mm", "pouch")
    assert isinstance(out, SheetError) and "has no preset core_mm" in str(out)
    out = F["CW_FORMAT_PRESET"]("wall_mm", "round")
    assert isinstance(out, SheetError) and "cell_format" in str(out)


def test_wound_roll_functions_broadcast_with_errors_per_element() -> None:
    got = F["CW_WOUND_LENGTH"]([[17.8], [20.7]], 2.0, [[345.0, 380.0]])
    want = wound_length(np.array([[17.8], [20.7]]), 2.0, np.array([[345.0, 380.0]]))
    assert np.array(got) == pytest.approx(want, rel=1e-12)
    row = F["CW_WOUND_LENGTH"]([[17.8, 1.0]], 2.0, 345.0)
    assert isinstance(row[0][0], float) and "core_mm must be < the roll" in str(row[0][1])
    flat = F["CW_WOUND_LENGTH"](30.0, 2.0, 400.0, 170.0)
    assert flat == pytest.approx(float(wound_length(30.0, 2.0, 400.0, 170.0)), rel=1e-12)
    narrow = F["CW_WOUND_LENGTH"](30.0, 2.0, 400.0, 20.0)
    assert isinstance(narrow, SheetError) and "width_mm" in str(narrow)
    back = F["CW_WOUND_THICKNESS"]([[flat, 500.0]], 2.0, 400.0, [[170.0, 0.0]])
    assert back[0][0] == pytest.approx(30.0, rel=1e-12)
    assert back[0][1] == pytest.approx(float(np.sqrt(1 + 500 * 0.4 / np.pi) * 2), rel=1e-3)
    assert isinstance(F["CW_WOUND_THICKNESS"](1e9, 2.0, 400.0, 170.0), SheetError)


def test_pack_functions_equal_the_core() -> None:
    assert F["CW_PACK_SERIES"](200, 450, 2.5, 4.2) == 107.0
    out = F["CW_PACK_SERIES"]([[200, 400]], 450, 2.5, 4.2)
    assert out[0][0] == 107.0 and str(out[0][1]).startswith("#NUM! pack_voltage_min_V")
    pack = PackSpec(structure="components", pack_energy_kWh=80.0)
    want = size_pack(design_cell(_spec()), pack)
    for name in ("series", "parallel", "pack_specific_energy_Wh_kg", "pack_cost_per_kWh_USD"):
        assert F["CW_PACK_DESIGN"](name, _rows(pack=pack)) == pytest.approx(
            float(getattr(want, name)), rel=1e-12)
    grid = F["CW_PACK_DESIGN"]("pack_energy_kWh", _rows(), "in_pack_energy", [[50.0, 100.0]],
                               "in_np_ratio", [[1.05], [1.2]])
    assert np.all(np.array(grid) >= [[50.0, 100.0]])
    assert F["CW_PACK_HIGH_VOLTAGE"](400) == 1.0 and F["CW_PACK_HIGH_VOLTAGE"](60) == 0.0
    assert F["CW_PACK_HIGH_VOLTAGE"]([[48.0, 60.5]]) == [[0.0, 1.0]]
    assert "60 V DC" in HIGH_VOLTAGE_CAUTION  # the text a sheet shows where the flag is 1
