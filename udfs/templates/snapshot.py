"""Compare workbooks by content, and save them byte-for-byte reproducibly.

A snapshot holds what a template *means*: sheet names and states, every cell's
value or formula (array formulas with their range), defined names, data
validations, merged ranges and protection of input cells. Styles and the zip
container are left out, so two saves of one workbook compare equal.

>>> from openpyxl import Workbook
>>> a, b = Workbook(), Workbook()
>>> a.active["A1"] = 1; b.active["A1"] = 2.0
>>> diff_snapshots(snapshot(a), snapshot(b))
['Sheet!A1: 1.0 != 2.0']
"""

from __future__ import annotations

import io
import os
import re
import tempfile
import zipfile
from datetime import datetime
from pathlib import Path
from typing import Any

from openpyxl import Workbook
from openpyxl.worksheet.formula import ArrayFormula

__all__ = ["diff_snapshots", "reproducible_bytes", "snapshot", "write_atomic"]

#: Fixed timestamps so that regenerating an unchanged template changes no byte.
_STAMP = datetime(2024, 1, 1, 0, 0, 0)
_MODIFIED = re.compile(rb"(<dcterms:modified[^>]*>)[^<]*(</dcterms:modified>)")


def _cell_value(value: Any) -> Any:
    if isinstance(value, ArrayFormula):
        return ("array", value.ref.replace("$", ""), value.text)
    if value == "":
        return None  # openpyxl does not keep empty text
    if isinstance(value, bool) or value is None or isinstance(value, str):
        return value
    if isinstance(value, (int, float)):
        return float(value)
    return repr(value)


def _array_results(ws: Any) -> set[str]:
    """Cells an array formula fills besides its own cell: computed results, not content."""
    out: set[str] = set()
    for row in ws.iter_rows():
        for cell in row:
            if isinstance(cell.value, ArrayFormula):
                for line in ws[cell.value.ref.replace("$", "")]:
                    for member in line if isinstance(line, tuple) else (line,):
                        if member.coordinate != cell.coordinate:
                            out.add(member.coordinate)
    return out


def snapshot(wb: Workbook) -> dict[str, Any]:
    """The content of ``wb`` as plain data (see the module docstring)."""
    out: dict[str, Any] = {"sheets": [(ws.title, ws.sheet_state) for ws in wb.worksheets]}
    out["active"] = wb.active.title if wb.active is not None else None
    out["names"] = {name: dn.attr_text for name, dn in wb.defined_names.items()}
    for ws in wb.worksheets:
        cells = {}
        unlocked = []
        results = _array_results(ws)
        for row in ws.iter_rows():
            for cell in row:
                value = _cell_value(cell.value)
                if value is not None and cell.coordinate not in results:
                    cells[cell.coordinate] = value
                if cell.has_style and not cell.protection.locked:
                    unlocked.append(cell.coordinate)
        out[f"{ws.title}!cells"] = cells
        out[f"{ws.title}!unlocked"] = sorted(unlocked)
        out[f"{ws.title}!protected"] = bool(ws.protection.sheet)
        out[f"{ws.title}!merged"] = sorted(str(r) for r in ws.merged_cells.ranges)
        out[f"{ws.title}!validations"] = sorted(
            (
                str(dv.sqref), dv.type or "", dv.formula1 or "", dv.formula2 or "",
                bool(dv.allow_blank), dv.prompt or "", dv.error or "",
            )
            for dv in ws.data_validations.dataValidation
        )
    return out


def diff_snapshots(a: dict[str, Any], b: dict[str, Any], limit: int = 20) -> list[str]:
    """Readable differences between two snapshots (at most ``limit`` lines)."""
    lines: list[str] = []
    for key in sorted(set(a) | set(b)):
        va, vb = a.get(key), b.get(key)
        if va == vb:
            continue
        if isinstance(va, dict) and isinstance(vb, dict):
            sheet = key.split("!")[0]
            for k in sorted(set(va) | set(vb), key=str):
                if va.get(k) != vb.get(k):
                    where = f"{sheet}!{k}" if key.endswith("!cells") else f"{key} {k}"
                    lines.append(f"{where}: {va.get(k)!r} != {vb.get(k)!r}")
        else:
            lines.append(f"{key}: {va!r} != {vb!r}")
        if len(lines) >= limit:
            break
    return lines[:limit]


def reproducible_bytes(wb: Workbook) -> bytes:
    """The .xlsx bytes of ``wb`` with fixed timestamps (document and zip entries)."""
    wb.properties.creator = "cellwright template builder"
    wb.properties.lastModifiedBy = "cellwright template builder"
    wb.properties.created = _STAMP
    wb.properties.modified = _STAMP
    raw = io.BytesIO()
    wb.save(raw)
    out = io.BytesIO()
    with zipfile.ZipFile(raw) as src, zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as dst:
        for info in src.infolist():
            fixed = zipfile.ZipInfo(info.filename, date_time=_STAMP.timetuple()[:6])
            fixed.compress_type = zipfile.ZIP_DEFLATED
            fixed.external_attr = 0o644 << 16
            data = src.read(info.filename)
            if info.filename == "docProps/core.xml":  # openpyxl stamps the save time here
                data = _MODIFIED.sub(
                    rb"\g<1>" + _STAMP.strftime("%Y-%m-%dT%H:%M:%SZ").encode() + rb"\g<2>", data
                )
            dst.writestr(fixed, data)
    return out.getvalue()


def write_atomic(path: str | os.PathLike[str], data: bytes) -> None:
    """Write ``data`` to a temporary file beside ``path`` and rename it over ``path``."""
    target = Path(path)
    umask = os.umask(0)
    os.umask(umask)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=target.parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
        os.chmod(tmp, 0o666 & ~umask)
        os.replace(tmp, target)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
