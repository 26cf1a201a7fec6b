"""The two routes of the live-workbook issue, end to end: a computed demo
workbook stays a model.

``cellwright demo -o demo.xlsx`` then ``calc demo.xlsx --set in_cathode=LiFePO4``
must give what a fresh template filled with the same inputs gives (no mixture
of the NMC811 results with the LFP price), and a sweep of the computed demo must
move with its input as the fresh template does.
"""

from __future__ import annotations

import math
from pathlib import Path

import openpyxl
import pytest
from named_outputs import out_values

from udfs.app.calc import calculate_file
from udfs.app.sweep import run_sweep
from udfs.app.templates import computed, demo_workbook
from udfs.templates import build_demo
from udfs.templates.workbook_inputs import set_inputs


def _saved_demo(tmp_path: Path) -> Path:
    path = tmp_path / "demo.xlsx"
    path.write_bytes(demo_workbook()[2])
    return path


def _outputs(path: Path) -> dict[str, object]:
    return out_values(openpyxl.load_workbook(path, data_only=True))


def _fresh(values: dict[str, object]) -> dict[str, object]:
    wb = build_demo()
    set_inputs(wb, values)  # type: ignore[arg-type]
    _model, evaluation, _data = computed(wb, "fresh.xlsx")
    return {n.name: n.value for n in evaluation.named() if n.name.startswith("out_")}


def _same(a: object, b: object) -> bool:
    if isinstance(a, float) and isinstance(b, (int, float)):
        return math.isclose(a, b, rel_tol=1e-9, abs_tol=1e-12)
    return a == b


def test_demo_then_lfp_equals_a_fresh_template_with_lfp(tmp_path: Path) -> None:
    demo = _saved_demo(tmp_path)
    calculate_file(demo, tmp_path / "lfp.xlsx", {"in_cathode": "LiFePO4"})
    got = _outputs(tmp_path / "lfp.xlsx")
    want = _fresh({"in_cathode": "LiFePO4"})
    before = _outputs(demo)
    assert set(got) == set(want) and len(got) > 10
    differ = [n for n in want if not _same(got[n], want[n])]
    assert not differ, [(n, got[n], want[n]) for n in differ]
    # and the cathode really changed everything downstream (voltage, energy, cost)
    moved = [n for n in want if not _same(before[n], got[n])]
    assert len(moved) >= len(want) // 2, moved


def test_sweep_of_the_computed_demo_moves_like_the_fresh_template(tmp_path: Path) -> None:
    demo = _saved_demo(tmp_path)
    table = run_sweep(["in_separator_um=10:25:5"], demo, outputs=["out_Wh_L"])
    column = table.columns["out_Wh_L"]
    assert len(set(column)) == 4, column  # the frozen copy printed one value in every row
    for thickness, value in zip(table.columns["in_separator_um"], column, strict=True):
        want = _fresh({"in_separator_um": thickness})["out_Wh_L"]
        assert value == pytest.approx(want, rel=1e-9)
