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
from dataclasses import dataclass

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


def _row_cells(body: str) -> dict[int, str]:
    """A row's cells by column (a cell without its address follows the one before)."""
    cells: dict[int, str] = {}
    col = 0
    for cm in _CELL.finditer(body):
        rm = _REF.match(_attr(cm.group("attrs"), "r") or "")
        col = col_index(rm.group(1)) if rm else col + 1
        cells[col] = cm.group(0)
    return cells


def _row_xml(p: str, attrs: str, number: int, cells: dict[int, str],
             edits: Mapping[int, Edit]) -> str:
    """A row with ``edits`` (by column) made to its ``cells``, in column order."""
    for c, e in edits.items():
        cells[c] = _cell_xml(cells.get(c), p, f"{col_letters(c)}{number}", e)
    inner = "".join(cells[c] for c in sorted(cells))
    attrs = _set_attr(attrs, "spans", None)
    return f"<{p}row{attrs}>{inner}</{p}row>" if inner else f"<{p}row{attrs}/>"


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

    One pass over the rows up to the last edited one: rows without edits are
    copied as slices of the text (never parsed into cells), and everything after
    the last edit is one slice; rows and cells that do not exist yet (an array
    formula's range, a new input) are created in order. Work and memory follow
    the edited rows, not the size of the sheet.
    """
    m = _SHEETDATA.search(xml)
    if m is None:
        raise WorkbookError("damaged sheet: no sheetData")
    p = m.group("p")
    keys = sorted(edits)
    j = 0

    def take(number: int) -> dict[int, Edit]:
        """The edits of row ``number`` (the next row with edits)."""
        nonlocal j
        got: dict[int, Edit] = {}
        while j < len(keys) and keys[j][0] == number:
            got[keys[j][1]] = edits[keys[j]]
            j += 1
        return got

    if m.group("body") is None:  # <sheetData/>
        head, start, end = f"<{p}sheetData{m.group('attrs')}>", m.end(), m.end()
        parts, close = [xml[: m.start()], head], f"</{p}sheetData>"
    else:
        start, end = m.start("body"), m.end("body")
        parts, close = [xml[:start]], ""
    copied = start  # xml[start:copied] is in parts
    number = 0
    for rm in _ROW.finditer(xml, start, end):
        if j == len(keys):
            break
        given = _attr(rm.group("attrs"), "r")
        number = int(given) if given and given.isdigit() else number + 1
        if keys[j][0] > number:
            continue  # copied later, with its neighbours, as one slice
        parts.append(xml[copied : rm.start()])
        while j < len(keys) and keys[j][0] < number:  # new rows before this one
            n = keys[j][0]
            parts.append(_row_xml(p, f' r="{n}"', n, {}, take(n)))
        if j < len(keys) and keys[j][0] == number:
            cells = _row_cells(rm.group("body") or "")
            parts.append(_row_xml(rm.group("p"), rm.group("attrs"), number, cells, take(number)))
        else:
            parts.append(rm.group(0))
        copied = rm.end()
    if j < len(keys):  # rows after the sheet's last row, before any text after the rows
        tail_at = copied
        for rm in _ROW.finditer(xml, copied, end):
            tail_at = rm.end()
        parts.append(xml[copied:tail_at])
        while j < len(keys):
            n = keys[j][0]
            parts.append(_row_xml(p, f' r="{n}"', n, {}, take(n)))
        copied = tail_at
    parts.append(xml[copied:end])
    parts.append(close)
    parts.append(xml[end:])
    return "".join(parts)


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
