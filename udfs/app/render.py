"""Render one sheet of a template, computed by the headless engine, to a PNG
picture through LibreOffice (PDF) and poppler's ``pdftoppm``: the picture of
the demo's bill of materials in the README is made this way::

    render_sheet_png(build_demo(), "Bill of materials", "docs/img/bom.png")

Needs ``soffice`` (Debian: libreoffice-calc-nogui) and ``pdftoppm``
(poppler-utils) on PATH; says so plainly when they are missing.
"""

from __future__ import annotations

import io
import shutil
import subprocess
import tempfile
from pathlib import Path
from typing import Any

from openpyxl import Workbook

from udfs.core.errors import InputError
from udfs.xlsx.files import write_bytes_atomic

__all__ = ["render_sheet_png"]


def _tool(name: str, package: str) -> str:
    path = shutil.which(name)
    if path is None:
        raise InputError(name, None, detail=f"{name} is not on PATH (apt-get install {package})")
    return path


def render_sheet_png(wb: Workbook, sheet: str, out: str | Path, dpi: int = 150) -> Path:
    """Compute ``wb`` headlessly and write a PNG of ``sheet`` (one page) to ``out``."""
    from udfs.engine.model import load_model

    soffice = _tool("soffice", "libreoffice-calc-nogui")
    pdftoppm = _tool("pdftoppm", "poppler-utils")
    if sheet not in wb.sheetnames:
        raise InputError("sheet", sheet, f"one of {', '.join(wb.sheetnames)}")
    for ws in wb.worksheets:
        ws.sheet_state = "visible" if ws.title == sheet else "hidden"
        ws.sheet_view.tabSelected = ws.title == sheet
    wb.active = wb.sheetnames.index(sheet)
    buf = io.BytesIO()
    wb.save(buf)
    model = load_model(buf.getvalue(), "render.xlsx")
    evaluation = model.evaluate()
    if evaluation.errors():
        raise InputError("workbook", None, detail=str(evaluation.errors()[0]))
    page = (11.69, 8.27) if wb[sheet].page_setup.orientation == "landscape" else (8.27, 11.69)
    try:
        return _draw(model, evaluation, (soffice, pdftoppm), Path(out), dpi, page)
    except (subprocess.CalledProcessError, subprocess.TimeoutExpired, FileNotFoundError) as exc:
        raise InputError("render", None, detail=f"drawing the sheet failed: {exc}") from None


def _draw(
    model: Any, evaluation: Any, tools: tuple[str, str], target: Path, dpi: int,
    page: tuple[float, float],
) -> Path:
    from udfs.app.calc import write_evaluation

    soffice, pdftoppm = tools
    with tempfile.TemporaryDirectory(prefix="cellwright-render-") as tmp:
        folder = Path(tmp)
        book = write_evaluation(model, evaluation, folder / "render.xlsx")
        subprocess.run(
            [soffice, f"-env:UserInstallation={(folder / 'profile').as_uri()}", "--headless",
             "--norestore", "--convert-to", "pdf", "--outdir", str(folder), str(book)],
            check=True, capture_output=True, timeout=240,
        )
        # the A4 page less 0.3 inch on each side (the page margins are 0.5 to 0.6 inch)
        edge = int(0.3 * dpi)
        width, height = int(page[0] * dpi) - 2 * edge, int(page[1] * dpi) - 2 * edge
        subprocess.run(
            [pdftoppm, "-png", "-r", str(dpi), "-singlefile", "-f", "1", "-l", "1",
             "-x", str(edge), "-y", str(edge), "-W", str(width), "-H", str(height),
             str(folder / "render.pdf"), str(folder / "page")],
            check=True, capture_output=True, timeout=120,
        )
        target.parent.mkdir(parents=True, exist_ok=True)
        write_bytes_atomic(target, (folder / "page.png").read_bytes(), force=True)
    return target
