"""The plan's units: runs that read their own cells."""

from __future__ import annotations

import io

import openpyxl

from udfs.engine.plan import Plan
from udfs.xlsx.reader import read_workbook


def _plan(cells: dict[str, object]) -> Plan:
    wb = openpyxl.Workbook()
    ws = wb.active
    for ref, value in cells.items():
        ws[ref] = value
    buf = io.BytesIO()
    wb.save(buf)
    return Plan(read_workbook(buf.getvalue(), "p.xlsx"), lambda name: True)


def test_a_run_reading_the_cells_before_it_stays_one_unit_in_order() -> None:
    cells: dict[str, object] = {f"A{r}": r for r in range(1, 1001)}
    cells["B1"] = "=A1"
    cells.update({f"B{r}": f"=B{r - 1}+A{r}" for r in range(2, 1001)})
    cells.update({f"C{r}": f"=SUM($C$1:C{r - 1})+1" for r in range(2, 1001)})
    p = _plan(cells)
    runs = [u for u in p.units if len(u.cells) > 1]
    assert len(runs) == 2 and all(u.sequential for u in runs)
    assert all(u.index not in u.deps for u in runs) and not p.circular


def test_a_run_reading_a_later_cell_of_its_own_is_split() -> None:
    cells: dict[str, object] = {f"A{r}": f"=A{r + 1}+1" for r in range(1, 10)}
    cells["A10"] = 1
    p = _plan(cells)
    assert len(p.units) == 9 and not any(u.sequential for u in p.units)
    assert [u.depth for u in sorted(p.units, key=lambda u: u.cells[0])] == list(range(8, -1, -1))


def test_a_run_reading_all_of_itself_is_circular() -> None:
    p = _plan({f"A{r}": "=SUM($A$1:$A$5)" for r in range(1, 6)})
    assert not any(u.sequential for u in p.units)
    assert len(p.circular) == 1 and len(p.circular[0]) == 5
