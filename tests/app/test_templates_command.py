"""``python -m udfs.app.templates``: the one command that writes the committed
templates, computed, and checks them against their builders."""

from __future__ import annotations

from pathlib import Path

import pytest
from openpyxl import load_workbook

from udfs.app.templates import main
from udfs.templates import TEMPLATES


def test_write_then_check_command(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    for big in ("cell_sizing", "cost"):  # the two small ones are enough here
        monkeypatch.delitem(TEMPLATES, big)
    assert main(["--write", "--dir", str(tmp_path)]) == 0
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted(f"{n}.xlsx" for n in TEMPLATES)
    assert main(["--check", "--dir", str(tmp_path)]) == 0
    # written computed: every formula cell carries its value for readers without the add-in
    values = load_workbook(tmp_path / "electrolysis.xlsx", data_only=True)
    formulas = load_workbook(tmp_path / "electrolysis.xlsx")
    cells = [
        (ws.title, c.coordinate)
        for ws in formulas.worksheets
        for row in ws.iter_rows()
        for c in row
        if isinstance(c.value, str) and c.value.startswith("=")
    ]
    assert cells
    assert all(values[s][ref].value is not None for s, ref in cells)
    wb = load_workbook(tmp_path / "potentials.xlsx")
    wb["Potentials"]["B2"] = "edited"
    wb.save(tmp_path / "potentials.xlsx")
    assert main(["--check", "--dir", str(tmp_path)]) == 1
    assert "differs from its builder" in capsys.readouterr().out
    assert main(["--write", "--dir", str(tmp_path)]) == 0
    assert main(["--check", "--dir", str(tmp_path)]) == 0
