"""A real spreadsheet program opens the templates: LibreOffice Calc (headless)
converts each one, recalculating it, and its values of the native-formula
cells must equal the headless engine's.

Scope: LibreOffice does not know our CW_ functions (those cells and every cell
that depends on them show #NAME? there), so the comparison covers the formula
cells whose formulas, followed through every reference and defined name, never
reach a CW_ call. Skipped with a reason when ``soffice`` is not on PATH (CI
installs Debian's ``libreoffice-calc-nogui``).
"""

from __future__ import annotations

import io
import math
import re
import shutil
import subprocess
from pathlib import Path
from typing import Any

import pytest
from openpyxl import Workbook, load_workbook
from openpyxl.formula import Tokenizer
from openpyxl.utils.cell import range_boundaries
from openpyxl.worksheet.formula import ArrayFormula

from udfs.engine.model import load_model
from udfs.sheet.error_values import SheetError
from udfs.templates import TEMPLATES
from udfs.templates.snapshot import reproducible_bytes
from udfs.xlsx.refs import CellRef

SOFFICE = shutil.which("soffice") or shutil.which("libreoffice")
pytestmark = pytest.mark.skipif(
    SOFFICE is None,
    reason="LibreOffice (soffice) is not installed: apt-get install libreoffice-calc-nogui",
)

#: Fewest CW-free formula cells each template must have for the check to mean something.
MIN_COMPARED = {"cell_sizing": 100, "potentials": 15, "electrolysis": 10, "cost": 500}

_REF = re.compile(r"^\$?[A-Z]{1,3}\$?\d+(:\$?[A-Z]{1,3}\$?\d+)?$")

Cell = tuple[str, int, int]  # sheet, row, column


def _formula(value: Any) -> str | None:
    if isinstance(value, ArrayFormula):
        return value.text
    if isinstance(value, str) and value.startswith("="):
        return value
    return None


def _cells(sheet: str, ref: str) -> list[Cell]:
    c1, r1, c2, r2 = range_boundaries(ref.replace("$", ""))
    return [(sheet, r, c) for r in range(r1, r2 + 1) for c in range(c1, c2 + 1)]


def _precedents(wb: Workbook, sheet: str, formula: str) -> tuple[bool, list[Cell]]:
    """(calls a CW_ function, cells it reads) for one formula."""
    calls_cw, cells = False, []
    for tok in Tokenizer(formula).items:
        if tok.type == "FUNC" and tok.subtype == "OPEN" and tok.value.upper().startswith("CW_"):
            calls_cw = True
        if tok.type != "OPERAND" or tok.subtype != "RANGE":
            continue
        text = tok.value
        where, _, ref = text.rpartition("!")
        target = where.strip("'").replace("''", "'") if where else sheet
        if _REF.match(ref):
            cells += _cells(target, ref)
        elif ref in wb.defined_names:
            for dest_sheet, dest_ref in wb.defined_names[ref].destinations:
                cells += _cells(dest_sheet, dest_ref)
        else:
            raise AssertionError(f"{sheet}: cannot follow reference {text!r} in {formula}")
    return calls_cw, cells


def cw_free_formula_cells(wb: Workbook) -> list[Cell]:
    """Formula cells (array parts included) that depend on no CW_ call."""
    graph: dict[Cell, tuple[bool, list[Cell]]] = {}
    for ws in wb.worksheets:
        for row in ws.iter_rows():
            for c in row:
                text = _formula(c.value)
                if text is None:
                    continue
                deps = _precedents(wb, ws.title, text)
                span = c.value.ref if isinstance(c.value, ArrayFormula) else c.coordinate
                for cell in _cells(ws.title, span):
                    graph[cell] = deps
    tainted: dict[Cell, bool] = {}

    def bad(cell: Cell, depth: int = 0) -> bool:
        if cell not in graph:
            return False  # a value cell
        if cell not in tainted:
            assert depth < 500, "reference chain too deep (a cycle?)"
            tainted[cell] = True  # provisional, breaks cycles conservatively
            calls_cw, deps = graph[cell]
            tainted[cell] = calls_cw or any(bad(d, depth + 1) for d in deps)
        return tainted[cell]

    return sorted(cell for cell in graph if not bad(cell))


@pytest.fixture(scope="module")
def converted(tmp_path_factory: pytest.TempPathFactory) -> dict[str, Path]:
    """Every template converted (and so recalculated) by LibreOffice."""
    src = tmp_path_factory.mktemp("templates")
    out = tmp_path_factory.mktemp("libreoffice")
    profile = tmp_path_factory.mktemp("lo-profile")
    for name, build in TEMPLATES.items():
        (src / f"{name}.xlsx").write_bytes(reproducible_bytes(build()))
    assert SOFFICE is not None
    cmd = [
        SOFFICE, f"-env:UserInstallation={profile.as_uri()}", "--headless", "--norestore",
        "--convert-to", "xlsx", "--outdir", str(out),
        *sorted(str(p) for p in src.iterdir()),
    ]
    done = subprocess.run(cmd, capture_output=True, text=True, timeout=240, check=False)
    assert done.returncode == 0, done.stderr
    return {name: out / f"{name}.xlsx" for name in TEMPLATES}


def _same(engine: Any, office: Any) -> bool:
    if engine == "" or engine is None:
        return office in ("", None)
    if isinstance(engine, bool) or isinstance(office, bool):
        return bool(engine) == bool(office) and type(office) is bool
    if isinstance(engine, (int, float)) and isinstance(office, (int, float)):
        return math.isclose(float(engine), float(office), rel_tol=1e-9, abs_tol=1e-12)
    return engine == office


@pytest.mark.parametrize("name", sorted(TEMPLATES))
def test_libreoffice_opens_and_agrees_on_native_formulas(
    name: str, converted: dict[str, Path]
) -> None:
    path = converted[name]
    assert path.is_file(), f"LibreOffice wrote no {path.name}"
    office = load_workbook(path, data_only=True)
    built = TEMPLATES[name]()
    assert office.sheetnames == built.sheetnames
    buf = io.BytesIO()
    built.save(buf)
    ev = load_model(buf.getvalue(), f"{name}.xlsx").evaluate()
    cells = cw_free_formula_cells(built)
    assert len(cells) >= MIN_COMPARED[name], len(cells)
    mismatches = []
    for sheet, row, col in cells:
        mine = ev.value(CellRef(sheet, row, col))
        theirs = office[sheet].cell(row, col).value
        assert not isinstance(mine, SheetError), (sheet, row, col, mine)
        if not _same(mine, theirs):
            mismatches.append(f"{sheet}!{office[sheet].cell(row, col).coordinate}: "
                              f"engine {mine!r}, LibreOffice {theirs!r}")
    assert not mismatches, "\n".join(mismatches[:20])


def test_dependency_scan_finds_cw_cells() -> None:
    wb = TEMPLATES["electrolysis"]()
    free = set(cw_free_formula_cells(wb))
    sheet, ref = next(iter(wb.defined_names["out_plating_kg_h"].destinations))
    row, col = range_boundaries(ref.replace("$", ""))[1], range_boundaries(ref.replace("$", ""))[0]
    assert (sheet, row, col) not in free  # per cell x cells, and per cell is CW_CHARGE_TO_MASS
    sheet, ref = next(iter(wb.defined_names["in_plating_current"].destinations))
    assert all(c[0] == "Electrolysis" for c in free) and free


@pytest.mark.skipif(shutil.which("pdftoppm") is None, reason="pdftoppm (poppler-utils) missing")
def test_render_sheet_png(tmp_path: Path) -> None:
    from udfs.app.render import render_sheet_png
    from udfs.core.errors import CellwrightError

    out = render_sheet_png(TEMPLATES["potentials"](), "Potentials", tmp_path / "img" / "p.png",
                           dpi=60)
    data = out.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 5000
    with pytest.raises(CellwrightError, match="sheet"):
        render_sheet_png(TEMPLATES["potentials"](), "No such sheet", tmp_path / "x.png")
