"""Write results into a copy of the workbook package, byte for byte elsewhere.

The output is the input package with only these changes, made directly in the
sheet XML (openpyxl never re-saves the workbook, so charts, images, pivot
tables, data-validation extensions, VBA and every other part survive):

* :func:`write_live` -- the workbook stays a model: every formula is kept and
  its computed value stored as the cell's cached value (``<v>``), so every
  program shows the numbers on open, Excel with the add-in recalculates live,
  and programs without it show the values until an input changes; cells set
  with ``--set`` hold their new value; ``calcPr`` no longer forces a full
  recalculation on load and names the current calculation engine
  (:data:`CALC_ID`), so Excel does not recompute everything on open;
* :func:`write_values` -- the plain-values copy: formulas replaced by their
  values (see :mod:`udfs.xlsx.values_copy` for the sheets that label it and the
  formulas it keeps for restoring);
* cells that were not evaluated (:class:`Edit` never given for them) keep
  their formula and cached value in every mode; a filled-down (shared) formula
  whose master cell loses its formula gives its other cells their own text,
  so the file stays valid.

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

__all__ = ["CALC_ID", "KEEP", "Edit", "escape", "patch_sheet", "write_live", "write_values"]

#: The calculation-engine id current Excel versions write (from memory; an older id
#: makes Excel recalculate every formula on open, a newer one is the same as current).
CALC_ID = "191029"
KEEP = object()  # Edit.value: leave the cell's value as it is

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
_VALUE = re.compile(r"<(?P<p>(?:[A-Za-z_][\w.-]*:)?)v\b[^>]*(?:/>|>(?P<text>.*?)</(?P=p)v>)", re.S)
_EXTLST = re.compile(r"<(?P<p>(?:[A-Za-z_][\w.-]*:)?)extLst\b.*?</(?P=p)extLst>", re.S)
_CALCPR = re.compile(r"<(?P<p>(?:[A-Za-z_][\w.-]*:)?)calcPr\b" + _ATTRS + r"/?>", re.S)
_PROLOG_ENCODING = re.compile(r"^(<\?xml[^>]*?encoding=)([\"'])[^\"']*\2")
_REF = re.compile(r"^([A-Z]{1,3})([0-9]+)$")


@dataclass(frozen=True)
class Edit:
    """What to do to one cell: its new ``value`` (or :data:`KEEP`), and its formula:
    None keeps it, "" removes it, text (with "=") sets it (``array``: its range)."""

    value: object = KEEP
    formula: str | None = None
    array: str | None = None


def escape(text: str) -> str:
    """Text for an XML element: markup escaped, illegal characters as _xHHHH_."""
    text = text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    text = text.replace("\r", "&#13;")
    return _ILLEGAL.sub(lambda m: f"_x{ord(m.group(0)):04X}_", text)


_ATTR_FIND: dict[str, re.Pattern[str]] = {}
_ATTR_DROP: dict[str, re.Pattern[str]] = {}


def _attr(attrs: str, name: str) -> str | None:
    find = _ATTR_FIND.get(name)
    if find is None:
        find = re.compile(r"(?:^|\s)" + re.escape(name) + r"\s*=\s*(\"[^\"]*\"|'[^']*')")
        _ATTR_FIND[name] = find
    m = find.search(attrs)
    return m.group(1)[1:-1] if m else None


def _set_attr(attrs: str, name: str, value: str | None) -> str:
    drop = _ATTR_DROP.get(name)
    if drop is None:
        drop = re.compile(r"\s+" + re.escape(name) + r"\s*=\s*(\"[^\"]*\"|'[^']*')")
        _ATTR_DROP[name] = drop
    if name + "=" in attrs or name + " " in attrs:
        attrs = drop.sub("", attrs)
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


def _cached_text(body: str, t: str | None) -> CellValue:
    """The cached value written in a cell's XML (for cells whose formula goes)."""
    vm = _VALUE.search(body)
    text = vm.group("text") if vm else None
    if text is None:
        return None
    if t in ("str", "s"):
        return None if t == "s" else text  # a shared string index is kept as it is
    if t == "b":
        return text.strip() in ("1", "true")
    if t == "e":
        return SheetError(text.strip())
    try:
        return float(text)
    except ValueError:
        return text


def _cell_xml(old: str | None, p: str, ref: str, edit: Edit) -> str:
    """The new XML of one cell (``old`` XML, or None when the cell does not exist yet)."""
    attrs = f' r="{ref}"'
    formula = child = ext = ""
    t: str | None = None
    if old is not None:
        m = _CELL.match(old)
        assert m is not None
        attrs = m.group("attrs")
        body = m.group("body") or ""
        fm = _FORMULA.search(body)
        formula = fm.group(0) if fm else ""
        em = _EXTLST.search(body)
        ext = em.group(0) if em else ""
        t = _attr(attrs, "t")
        child = _FORMULA.sub("", _EXTLST.sub("", body))
    if edit.formula == "":
        formula = ""
        attrs = _set_attr(_set_attr(attrs, "cm", None), "vm", None)
    elif edit.formula is not None:
        extra = f' t="array" ref="{edit.array}"' if edit.array else ""
        formula = f"<{p}f{extra}>{escape(edit.formula.removeprefix('='))}</{p}f>"
    value = edit.value
    if value is KEEP:
        if formula or t != "str":
            return (
                f"<{p}c{attrs}>{formula}{child}{ext}</{p}c>"
                if formula or child or ext
                else f"<{p}c{attrs}/>"
            )
        value = _cached_text(child, t)  # a formula's text result becomes plain text
    t_new, child = _value_xml(value, p, bool(formula))  # type: ignore[arg-type]
    attrs = _set_attr(attrs, "t", t_new)
    inner = formula + child + ext
    return f"<{p}c{attrs}>{inner}</{p}c>" if inner else f"<{p}c{attrs}/>"


def patch_sheet(xml: str, edits: Mapping[tuple[int, int], Edit]) -> str:
    """The sheet XML with ``edits`` (by (row, column)) made; other cells untouched.

    Cells that exist are rewritten in one pass over the cells; cells that do not
    exist yet (an array formula's range, a new input) are inserted row by row.
    """
    m = _SHEETDATA.search(xml)
    if m is None:
        raise WorkbookError("damaged sheet: no sheetData")
    by_ref = {f"{col_letters(c)}{r}": (r, c) for (r, c) in edits}
    done: set[tuple[int, int]] = set()
    unnamed = False

    def one(cm: re.Match[str]) -> str:
        nonlocal unnamed
        ref = _attr(cm.group("attrs"), "r")
        if ref is None:
            unnamed = True
            return cm.group(0)
        at = by_ref.get(ref)
        if at is None:
            return cm.group(0)
        done.add(at)
        return _cell_xml(cm.group(0), cm.group("p"), ref, edits[at])

    body = _CELL.sub(one, m.group("body") or "")
    if unnamed:  # cells without their address: place every edit row by row
        return _patch_rows(xml, edits)
    xml = xml[: m.start("body")] + body + xml[m.end("body") :] if m.group("body") else xml
    rest = {at: e for at, e in edits.items() if at not in done}
    return _patch_rows(xml, rest) if rest else xml


def _patch_rows(xml: str, edits: Mapping[tuple[int, int], Edit]) -> str:
    """``edits`` made row by row (rows and cells created where missing, kept in order)."""
    m = _SHEETDATA.search(xml)
    if m is None:
        raise WorkbookError("damaged sheet: no sheetData")
    p = m.group("p")
    rows, tail = _parse_rows(m.group("body") or "")
    by_number = {r.number: r for r in rows}
    todo: dict[int, dict[int, Edit]] = {}
    for (r, c), e in edits.items():
        todo.setdefault(r, {})[c] = e
    for number, cols in todo.items():
        row = by_number.get(number)
        if row is None:
            row = _Row(number, p, f' r="{number}"', raw=False)
            by_number[number] = row
            rows.append(row)
        existing = dict(row.cells)
        for c, e in cols.items():
            ref = f"{col_letters(c)}{number}"
            existing[c] = _cell_xml(existing.get(c), row.prefix, ref, e)
        row.cells = sorted(existing.items())
        row.raw = False
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
    """No full recalculation forced on load; the current calculation engine's id."""

    def fix(m: re.Match[str]) -> str:
        attrs = _set_attr(m.group("attrs"), "fullCalcOnLoad", None)
        attrs = _set_attr(attrs, "calcId", CALC_ID)
        return f"<{m.group('p')}calcPr{attrs.rstrip()}/>"

    return _CALCPR.sub(fix, xml, count=1)


def drop_calc_chain(parts: dict[str, bytes | None], pkg: Package) -> None:
    """Leave out the calculation chain (an optional cache Excel rebuilds)."""
    chain = next(
        (t for rt, t, _ in pkg.relationships(pkg.workbook_part).values() if rt == "/calcChain"),
        None,
    )
    if chain is None:
        return
    parts[chain] = None
    ct = text_of(parts, pkg, "[Content_Types].xml")
    ct = re.sub(
        r"<(?:[\w.-]+:)?Override\b[^>]*PartName=\"/" + re.escape(chain) + r"\"[^>]*/>", "", ct
    )
    parts["[Content_Types].xml"] = ct.encode("utf-8")
    rels_name = rels_path(pkg.workbook_part)
    rels = text_of(parts, pkg, rels_name)
    target = chain.rpartition("/")[2]
    rels = re.sub(
        r"<(?:[\w.-]+:)?Relationship\b[^>]*Target=\"[^\"]*" + re.escape(target) + r"\"[^>]*/>",
        "",
        rels,
    )
    parts[rels_name] = rels.encode("utf-8")


def text_of(parts: Mapping[str, bytes | None], pkg: Package, part: str) -> str:
    """A part's text as it will be written (changed earlier, or as in the package);
    UTF-16 parts are read and written back as UTF-8 with a matching declaration."""
    raw = parts.get(part)
    if raw is None:
        raw = pkg.zip.read(part)
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        try:
            text = raw.decode("utf-16")
        except UnicodeDecodeError:
            raise WorkbookError(f"damaged part {part}: not UTF-8 or UTF-16 text") from None
    text = text.lstrip("\ufeff")
    return _PROLOG_ENCODING.sub(r"\1\2UTF-8\2", text, count=1)


def assemble(pkg: Package, parts: Mapping[str, bytes | None], extra: Mapping[str, bytes]) -> bytes:
    """The new package: changed parts replaced, None parts left out, ``extra`` added."""
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as zf:
        for info in pkg.infos:
            if info.filename in parts and parts[info.filename] is None:
                continue
            data = parts.get(info.filename)
            if data is None:
                data = pkg.zip.read(info.filename)
            zi = zipfile.ZipInfo(info.filename, date_time=info.date_time)
            zi.compress_type = zipfile.ZIP_DEFLATED
            zi.external_attr = info.external_attr
            zf.writestr(zi, data)
        stamp = pkg.infos[0].date_time if pkg.infos else (1980, 1, 1, 0, 0, 0)
        for name, data in extra.items():
            zi = zipfile.ZipInfo(name, date_time=stamp)
            zi.compress_type = zipfile.ZIP_DEFLATED
            zf.writestr(zi, data)
    return out.getvalue()


def apply_edits(
    pkg: Package, edits: Mapping[CellRef, Edit], parts: dict[str, bytes | None]
) -> None:
    """Make ``edits`` in the sheets' XML (into ``parts``)."""
    by_sheet: dict[str, dict[tuple[int, int], Edit]] = {}
    for ref, e in edits.items():
        by_sheet.setdefault(ref.sheet, {})[(ref.row, ref.col)] = e
    for sheet in pkg.worksheets():
        cells = by_sheet.get(sheet.name)
        if cells:
            xml = patch_sheet(text_of(parts, pkg, sheet.part), cells)
            parts[sheet.part] = xml.encode("utf-8")


def write_live(pkg: Package, edits: Mapping[CellRef, Edit]) -> bytes:
    """The workbook with every formula kept and the ``edits`` (cached values, set inputs)
    made; calculation settings that show the stored values on open."""
    parts: dict[str, bytes | None] = {}
    apply_edits(pkg, edits, parts)
    parts[pkg.workbook_part] = _patch_calc_pr(text_of(parts, pkg, pkg.workbook_part)).encode(
        "utf-8"
    )
    return assemble(pkg, parts, {})


def write_values(
    pkg: Package,
    edits: Mapping[CellRef, Edit],
    parts: dict[str, bytes | None] | None = None,
    extra: Mapping[str, bytes] | None = None,
) -> bytes:
    """The workbook with the ``edits`` made (formulas removed where they say so), the
    calculation chain left out, and ``parts``/``extra`` from the values-only labelling."""
    parts = {} if parts is None else parts
    apply_edits(pkg, edits, parts)
    parts[pkg.workbook_part] = _patch_calc_pr(text_of(parts, pkg, pkg.workbook_part)).encode(
        "utf-8"
    )
    drop_calc_chain(parts, pkg)
    return assemble(pkg, parts, extra or {})
