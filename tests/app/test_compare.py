"""Designs side by side (udfs.app.compare): every figure of every design equals
the core's own sizing and cost of the same inputs, the differences are B - A.

Designs are the demo cell (demo data) with round changes of our own.
"""

from __future__ import annotations

import re

import pytest

from udfs.app.compare import Design, compare, compare_files, parse_case
from udfs.app.scenario import demo_values, load_book
from udfs.app.templates import template_bytes
from udfs.core.cost_table import design_and_model
from udfs.xlsx.file_errors import ReferenceSyntaxError


def _value(table, figure: str, column: str) -> object:  # type: ignore[no-untyped-def]
    return table.columns[column][table.columns["figure"].index(figure)]


def test_every_figure_equals_the_core_with_the_differences() -> None:
    base = demo_values()
    c = compare([Design("A", base), parse_case("LFP: in_cathode=LFP; in_np_ratio=1.15", base)])
    t = c.table
    assert t.outputs == ["A", "LFP", "LFP - A"] and t.kind == "comparison"
    for label, values in (("A", base), ("LFP", {**base, "in_cathode": "LFP",
                                                  "in_np_ratio": 1.15})):
        cell, model = design_and_model(values)
        out = model(model.base())
        assert _value(t, "Full cost per kWh", label) == pytest.approx(
            float(out["full_USD_kWh"]), rel=1e-13)
        assert _value(t, "Specific energy", label) == pytest.approx(
            float(cell.specific_energy_Wh_kg), rel=1e-13)
        assert _value(t, "Waterfall: margin", label) == pytest.approx(
            float(out["margin_USD_kWh"]), rel=1e-13)
    full = [_value(t, "Full cost per kWh", k) for k in ("A", "LFP", "LFP - A")]
    assert full[2] == pytest.approx(full[1] - full[0], rel=1e-13)
    # the inputs that differ lead the table; the bill of materials by role, with materials
    assert t.columns["unit"][:2] == ["in_cathode", "in_np_ratio"]
    assert _value(t, "Material: cathode active", "LFP") == "LiFePO4"
    assert _value(t, "Material: cathode active", "LFP - A") == "differs"
    assert _value(t, "Material: anode active", "LFP - A") == "same"
    assert isinstance(_value(t, "Mass: cathode active", "LFP - A"), float)
    lines = c.lines()
    assert "not quotations" in lines[-1] and "LFP - A" in lines[1]


def test_workbooks_and_cases_with_a_price_book_file(tmp_path) -> None:  # type: ignore[no-untyped-def]
    path = tmp_path / "ours.xlsx"
    path.write_bytes(template_bytes("cost"))
    before = path.read_bytes()
    c = compare_files([path], ["thick: in_loading=26"], prices=None)
    assert [d.label for d in c.designs] == ["ours", "thick"]
    assert c.models[0].book_label == "demo-2025-06 (2025-06-30)"
    assert path.read_bytes() == before  # the input is only read
    from udfs.core.catalogue import data_dir

    book = tmp_path / "older.csv"
    book.write_bytes((data_dir() / "price_books" / "demo-2024-12.csv").read_bytes())
    again = compare_files([path], ["thick: in_loading=26"], prices=book)
    assert {m.book_label for m in again.models} == {"older (2024-12-31)"}
    assert load_book(book).name == "older"


@pytest.mark.parametrize(
    ("cases", "fragment"),
    [
        (["no label"], "write LABEL: in_x=VALUE"),
        (["x: in_np_ration=1.2"], "unknown input"),
        (["x: in_np_ratio=-1"], "design x: in_np_ratio (N/P ratio"),
        (["x: in_np_ratio=1.2", "x: in_np_ratio=1.3"], "two designs are labelled"),
    ],
)
def test_bad_cases_are_refused_with_a_reason(cases: list[str], fragment: str) -> None:
    with pytest.raises(ReferenceSyntaxError, match=re.escape(fragment)):
        compare_files([], cases)
