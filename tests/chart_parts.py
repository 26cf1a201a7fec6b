"""Charts of a written .xlsx, read from the file itself (the public file format),
by sheet: the tests see what Excel and LibreOffice will draw.

>>> import io, openpyxl
>>> from openpyxl.chart import BarChart, Reference
>>> wb = openpyxl.Workbook(); ws = wb.active; ws.title = "S"; ws.append([1]); ws.append([2])
>>> c = BarChart(); c.add_data(Reference(ws, min_col=1, min_row=1, max_row=2)); ws.add_chart(c)
>>> buf = io.BytesIO(); wb.save(buf)
>>> [chart.kind for chart in sheet_charts(buf)["S"]]
['barChart']
"""

from __future__ import annotations

import posixpath
import zipfile
from dataclasses import dataclass
from pathlib import Path
from typing import IO
from xml.etree import ElementTree as ET

NS = {
    "m": "http://schemas.openxmlformats.org/spreadsheetml/2006/main",
    "r": "http://schemas.openxmlformats.org/officeDocument/2006/relationships",
    "p": "http://schemas.openxmlformats.org/package/2006/relationships",
    "c": "http://schemas.openxmlformats.org/drawingml/2006/chart",
    "a": "http://schemas.openxmlformats.org/drawingml/2006/main",
}
R_ID = f"{{{NS['r']}}}id"


@dataclass
class Chart:
    kind: str  # the plot element: scatterChart, barChart, lineChart, ...
    texts: list[str]  # every title and label text, in document order
    smooth: list[str]  # the val of each c:smooth element (series and chart)
    scatter_style: str | None
    series: int


def _rels(z: zipfile.ZipFile, part: str) -> dict[str, str]:
    folder, name = posixpath.split(part)
    rels = posixpath.join(folder, "_rels", name + ".rels")
    if rels not in z.namelist():
        return {}
    root = ET.fromstring(z.read(rels))
    out = {}
    for r in root.findall("p:Relationship", NS):
        target = r.get("Target", "")
        # absolute targets are package paths ("/xl/worksheets/sheet1.xml")
        path = target[1:] if target.startswith("/") else posixpath.join(folder, target)
        out[r.get("Id", "")] = posixpath.normpath(path)
    return out


def _chart(xml: bytes) -> Chart:
    root = ET.fromstring(xml)
    plot = root.find("c:chart/c:plotArea", NS)
    assert plot is not None
    kinds = [e.tag.split("}")[1] for e in plot if e.tag.endswith("Chart")]
    style = plot.find("c:scatterChart/c:scatterStyle", NS)
    return Chart(
        kind=kinds[0],
        texts=[t.text or "" for t in root.iter(f"{{{NS['a']}}}t")],
        smooth=[e.get("val", "1") for e in root.iter(f"{{{NS['c']}}}smooth")],
        scatter_style=None if style is None else style.get("val"),
        series=len(list(root.iter(f"{{{NS['c']}}}ser"))),
    )


def sheet_charts(source: str | Path | IO[bytes]) -> dict[str, list[Chart]]:
    """Sheet title -> its charts (every sheet is listed, with none if it has none)."""
    with zipfile.ZipFile(source) as z:
        book = ET.fromstring(z.read("xl/workbook.xml"))
        book_rels = _rels(z, "xl/workbook.xml")
        out: dict[str, list[Chart]] = {}
        for sheet in book.findall("m:sheets/m:sheet", NS):
            part = book_rels[sheet.get(R_ID, "")]
            charts: list[Chart] = []
            sheet_root = ET.fromstring(z.read(part))
            sheet_rels = _rels(z, part)
            for drawing in sheet_root.findall("m:drawing", NS):
                drawing_part = sheet_rels[drawing.get(R_ID, "")]
                for target in _rels(z, drawing_part).values():
                    if "/charts/" in target:
                        charts.append(_chart(z.read(target)))
            out[sheet.get("name", "")] = charts
        return out
