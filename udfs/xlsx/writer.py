"""Write results into a copy of the workbook package, byte-for-byte elsewhere.

How results are made visible: the output is the input package with only
these changes, made directly in the sheet XML (openpyxl never re-saves the
workbook, so charts, images, pivot tables, data validation extensions, VBA
and every other part survive unchanged):

* ``mode="portable"`` (the default of ``cellwright calc``): cells whose
  formula calls one of our functions (or a function the engine does not know)
  hold their computed value as a plain value, so every spreadsheet program
  shows it; formulas of Excel's own functions are kept, with their computed
  value stored as the cached value (``<v>``), so the arithmetic stays live and
  auditable and programs that recompute get the same numbers;
* ``mode="all"``: every formula is kept with its cached value -- for Excel with
  the cellwright add-in. (LibreOffice shows cached values of plain formulas
  but recomputes array formulas and error cells, which then show #NAME?.);
* ``mode="none"``: no formulas at all, values only;
* cells set with ``--set`` get their new value; cells of array formulas get
  theirs too, created if missing;
* ``fullCalcOnLoad`` is removed from ``calcPr`` so programs show the stored
  values on open, and when formulas are removed the calculation chain
  (``calcChain.xml``, an optional cache Excel rebuilds) is dropped with them.

>>> escape("a<b & \\x01")
'a&lt;b &amp; _x0001_'
"""

from __future__ import annotations

import io
import math
import re
import zipfile
from collections.abc import Mapping
from dataclasses import dataclass, field

from udfs.sheet.error_values import CellValue, SheetError

from .file_errors import WorkbookError
from .package import Package, rels_path
from .refs import CellRef, col_index, col_letters

__all__ = ["MODES", "escape", "write_results"]

_ILLEGAL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\ufffe\uffff]")
_ATTRS = r"(?P<attrs>(?:[^>\"'/]|\"[^\"]*\"|'[^']*'|/(?!>))*)"
_SHEETDATA = re.compile(
    r"<(?P<p>(?:[A-Za-z_][\w.-]*:)?)sheetData\b"
    + _ATTRS
    + r"(?:/>|>(?P<body>.*?)</(?P=p)sheetData>)",
    re.S,
)
_ROW = re.compile(
    r"<(?P<p>(?:[A-Za-z_][\w.-]*:)?)row\b" + _ATTRS + r"(?:/>|>(?P<body>.*?)</(?P=p)row>)", re.S
)
_CELL = re.compile(
    r"<(?P<p>(?:[A-Za-z_][\w.-]*:)?)c\b" + _ATTRS + r"(?:/>|>(?P<body>.*?)</(?P=p)c>)", re.S
)
_FORMULA = re.compile(
    r"<(?P<p>(?:[A-Za-z_][\w.-]*:)?)f\b" + _ATTRS + r"(?:/>|>.*?</(?P=p)f>)", re.S
)
_EXTLST = re.compile(r"<(?P<p>(?:[A-Za-z_][\w.-]*:)?)extLst\b.*?</(?P=p)extLst>", re.S)
_CALCPR = re.compile(r"<(?P<p>(?:[A-Za-z_][\w.-]*:)?)calcPr\b" + _ATTRS + r"/?>", re.S)
_REF = re.compile(r"^([A-Z]{1,3})([0-9]+)$")


def escape(text: str) -> str:
    """Text for an XML element: markup escaped, illegal characters as _xHHHH_."""
    text = text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    text = text.replace("\r", "&#13;")
    return _ILLEGAL.sub(lambda m: f"_x{ord(m.group(0)):04X}_", text)


def _attr(attrs: str, name: str) -> str | None:
    m = re.search(r"(?:^|\s)" + re.escape(name) + r"\s*=\s*(\"[^\"]*\"|'[^']*')", attrs)
    return m.group(1)[1:-1] if m else None


def _set_attr(attrs: str, name: str, value: str | None) -> str:
    attrs = re.sub(r"\s+" + re.escape(name) + r"\s*=\s*(\"[^\"]*\"|'[^']*')", "", attrs)
    if value is not None:
        attrs = f' {name}="{value}"' + attrs
    return attrs


def _number(x: float | int) -> str:
    if isinstance(x, bool):
        return "1" if x else "0"
    if isinstance(x, int):
        return str(x)
    return repr(float(x)) if not float(x).is_integer() or abs(x) >= 1e16 else str(int(x))


def _value_xml(value: CellValue, p: str, formula: bool) -> tuple[str | None, str]:
    """(t attribute, child XML) for a value; formula results use t="str" for text."""
    if value is None:
        return None, ""
    if isinstance(value, SheetError):
        return "e", f"<{p}v>{escape(value.code)}</{p}v>"
    if isinstance(value, bool):
        return "b", f"<{p}v>{'1' if value else '0'}</{p}v>"
    if isinstance(value, (int, float)):
        if not math.isfinite(value):
            return "e", f"<{p}v>#NUM!</{p}v>"
        return None, f"<{p}v>{_number(value)}</{p}v>"
    text = escape(str(value))
    if formula:
        return "str", f"<{p}v>{text}</{p}v>"
    return "inlineStr", f'<{p}is><{p}t xml:space="preserve">{text}</{p}t></{p}is>'


@dataclass
class _Row:
    number: int
    prefix: str
    attrs: str
    cells: list[tuple[int, str]] = field(default_factory=list)  # (column, xml)
    raw: bool = True  # unchanged: keep the original text
    text: str = ""


def _parse_rows(body: str) -> tuple[list[_Row], str]:
    rows: list[_Row] = []
    last = 0
    for m in _ROW.finditer(body):
        attrs = m.group("attrs")
        r = _attr(attrs, "r")
        number = int(r) if r and r.isdigit() else (rows[-1].number + 1 if rows else 1)
        row = _Row(number, m.group("p"), attrs, text=m.group(0))
        col = 0
        for cm in _CELL.finditer(m.group("body") or ""):
            ref = _attr(cm.group("attrs"), "r")
            rm = _REF.match(ref or "")
            col = col_index(rm.group(1)) if rm else col + 1
            row.cells.append((col, cm.group(0)))
        rows.append(row)
        last = m.end()
    tail = body[last:] if rows else body
    return rows, tail


def _cell_xml(old: str | None, p: str, ref: str, value: CellValue, keep_formula: bool) -> str:
    """The new XML of one cell (old XML or None when the cell does not exist yet)."""
    attrs = f' r="{ref}"'
    formula = ""
    ext = ""
    if old is not None:
        m = _CELL.match(old)
        assert m is not None
        attrs = m.group("attrs")
        body = m.group("body") or ""
        fm = _FORMULA.search(body)
        formula = fm.group(0) if fm else ""
        em = _EXTLST.search(body)
        ext = em.group(0) if em else ""
        attrs = _set_attr(attrs, "vm", None)
    if not keep_formula:
        formula = ""
        attrs = _set_attr(attrs, "cm", None)
    t, child = _value_xml(value, p, bool(formula))
    attrs = _set_attr(attrs, "t", t)
    inner = formula + child + ext
    return f"<{p}c{attrs}>{inner}</{p}c>" if inner else f"<{p}c{attrs}/>"


def _strip_formula(old: str) -> str:
    m = _CELL.match(old)
    if m is None or not m.group("body"):
        return old
    body = _FORMULA.sub("", m.group("body"))
    attrs = _set_attr(m.group("attrs"), "cm", None)
    t = _attr(attrs, "t")
    if t == "str":  # cached text of a formula: keep it as inline text
        vm = re.search(r"<(?:[\w.-]+:)?v>(.*?)</(?:[\w.-]+:)?v>", body, re.S)
        text = vm.group(1) if vm else ""
        p = m.group("p")
        attrs = _set_attr(attrs, "t", "inlineStr")
        body = f'<{p}is><{p}t xml:space="preserve">{text}</{p}t></{p}is>'
    return f"<{m.group('p')}c{attrs}>{body}</{m.group('p')}c>"


def _patch_sheet(
    xml: str,
    values: Mapping[tuple[int, int], CellValue],
    keep: set[tuple[int, int]],
    values_only: bool,
) -> str:
    m = _SHEETDATA.search(xml)
    if m is None:
        raise WorkbookError("damaged sheet: no sheetData")
    p = m.group("p")
    rows, tail = _parse_rows(m.group("body") or "")
    by_number = {r.number: r for r in rows}
    todo: dict[int, dict[int, CellValue]] = {}
    for (r, c), v in values.items():
        todo.setdefault(r, {})[c] = v
    for number, cols in todo.items():
        row = by_number.get(number)
        if row is None:
            row = _Row(number, p, f' r="{number}"', raw=False)
            by_number[number] = row
            rows.append(row)
        existing = dict(row.cells)
        for c, v in cols.items():
            ref = f"{col_letters(c)}{number}"
            existing[c] = _cell_xml(existing.get(c), row.prefix, ref, v, (number, c) in keep)
        row.cells = sorted(existing.items())
        row.raw = False
    if values_only:
        for row in rows:
            stripped = [(c, _strip_formula(x)) for c, x in row.cells]
            if stripped != row.cells:
                row.cells, row.raw = stripped, False
    rows.sort(key=lambda r: r.number)
    parts = []
    for row in rows:
        if row.raw:
            parts.append(row.text)
            continue
        attrs = _set_attr(row.attrs, "spans", None)
        cells = "".join(x for _, x in row.cells)
        parts.append(
            f"<{row.prefix}row{attrs}>{cells}</{row.prefix}row>"
            if cells
            else f"<{row.prefix}row{attrs}/>"
        )
    body = "".join(parts) + tail
    new = f"<{p}sheetData{m.group('attrs')}>{body}</{p}sheetData>"
    return xml[: m.start()] + new + xml[m.end() :]


def _patch_calc_pr(xml: str) -> str:
    def fix(m: re.Match[str]) -> str:
        attrs = _set_attr(m.group("attrs"), "fullCalcOnLoad", None)
        return f"<{m.group('p')}calcPr{attrs.rstrip()}/>"

    return _CALCPR.sub(fix, xml, count=1)


def _drop_calc_chain(parts: dict[str, bytes], pkg: Package) -> None:
    chain = next(
        (t for rt, t, _ in pkg.relationships(pkg.workbook_part).values() if rt == "/calcChain"),
        None,
    )
    if chain is None:
        return
    parts[chain] = b""  # marker: omit from the output
    ct = parts.get("[Content_Types].xml", pkg.zip.read("[Content_Types].xml")).decode("utf-8")
    ct = re.sub(
        r"<(?:[\w.-]+:)?Override\b[^>]*PartName=\"/" + re.escape(chain) + r"\"[^>]*/>", "", ct
    )
    parts["[Content_Types].xml"] = ct.encode("utf-8")
    rels_name = rels_path(pkg.workbook_part)
    rels = pkg.zip.read(rels_name).decode("utf-8")
    target = chain.rpartition("/")[2]
    rels = re.sub(
        r"<(?:[\w.-]+:)?Relationship\b[^>]*Target=\"[^\"]*" + re.escape(target) + r"\"[^>]*/>",
        "",
        rels,
    )
    parts[rels_name] = rels.encode("utf-8")


def _decode(raw: bytes, part: str) -> str:
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError:
        try:
            return raw.decode("utf-16")
        except UnicodeDecodeError:
            raise WorkbookError(f"damaged part {part}: not UTF-8 or UTF-16 text") from None


MODES = ("portable", "all", "none")


def write_results(
    pkg: Package,
    values: Mapping[CellRef, CellValue],
    keep: set[CellRef],
    mode: str = "portable",
) -> bytes:
    """The bytes of a new .xlsx: ``pkg`` with ``values`` written in (see module doc).

    ``keep`` are the cells whose formula stays in ``"portable"`` mode (the
    other cells of ``values`` become plain values); ``"all"`` keeps every
    formula, ``"none"`` none.
    """
    if mode not in MODES:
        raise ValueError(f"mode must be one of {MODES}")
    by_sheet: dict[str, dict[tuple[int, int], CellValue]] = {}
    keep_by_sheet: dict[str, set[tuple[int, int]]] = {}
    for ref, v in values.items():
        by_sheet.setdefault(ref.sheet, {})[(ref.row, ref.col)] = v
        if mode == "all" or (mode == "portable" and ref in keep):
            keep_by_sheet.setdefault(ref.sheet, set()).add((ref.row, ref.col))
    parts: dict[str, bytes] = {}
    for sheet in pkg.worksheets():
        cells = by_sheet.get(sheet.name, {})
        if not cells and mode != "none":
            continue
        xml = _decode(pkg.zip.read(sheet.part), sheet.part)
        xml = _patch_sheet(xml, cells, keep_by_sheet.get(sheet.name, set()), mode == "none")
        parts[sheet.part] = xml.encode("utf-8")
    wb_xml = _decode(pkg.zip.read(pkg.workbook_part), pkg.workbook_part)
    parts[pkg.workbook_part] = _patch_calc_pr(wb_xml).encode("utf-8")
    if mode != "all":
        _drop_calc_chain(parts, pkg)
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as zf:
        for info in pkg.infos:
            data = parts.get(info.filename)
            if data == b"" and info.filename in parts:
                continue  # dropped part
            if data is None:
                data = pkg.zip.read(info.filename)
            zi = zipfile.ZipInfo(info.filename, date_time=info.date_time)
            zi.compress_type = zipfile.ZIP_DEFLATED
            zi.external_attr = info.external_attr
            zf.writestr(zi, data)
    return out.getvalue()
