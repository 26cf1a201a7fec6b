"""CW_MATERIAL_NAME and CW_CELL_DESIGN (udfs/sheet/sizing.py) and the table
argument they introduce (udfs.sheet.coerce.table_arg).

Inputs are the template's starting values and round design numbers (common
practice magnitudes), not reference values; CW_CELL_DESIGN is compared with the
core it calls on the same inputs.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from udfs.app.demo import demo_spec
from udfs.core.errors import CellwrightError
from udfs.core.sizing import design_cell
from udfs.core.sizing_values import spec_values
from udfs.sheet.args import Table
from udfs.sheet.coerce import table_arg
from udfs.sheet.error_values import SheetError
from udfs.sheet.registry import FUNCTIONS

DESIGN = FUNCTIONS["CW_CELL_DESIGN"]
NAME = FUNCTIONS["CW_MATERIAL_NAME"]


def _rows() -> list[list[object]]:
    return [[k, v] for k, v in spec_values(demo_spec()).items()]


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
    spec = dataclasses.replace(demo_spec(), cathode_loading_mg_cm2=np.array([[18.0, 22.0]]),
                               np_ratio=np.array(nps))
    core = design_cell(spec).cost_per_kWh_USD
    assert np.array([row[:2] for row in grid]) == pytest.approx(core, rel=1e-12)
    assert all(str(row[2]).startswith("#NUM! cathode_loading_mg_cm2 must be > 0") for row in grid)
    assert DESIGN("cost_per_kWh_USD", _rows()) == pytest.approx(
        float(design_cell(demo_spec()).cost_per_kWh_USD), rel=1e-12)


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
