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

import functools
import io
import math
import re
import shutil
import zipfile
from collections.abc import Callable, Iterable, Iterator, Mapping
from dataclasses import dataclass
from typing import IO, BinaryIO

from udfs.sheet.error_values import CellValue, SheetError

from .file_errors import WorkbookError
from .package import Package, rels_path
from .refs import CellRef, col_index, col_letters

__all__ = [
    "CALC_ID",
    "KEEP",
    "Edit",
    "NewPart",
    "SheetEdits",
    "escape",
    "package_bytes",
    "patch_sheet",
    "write_live",
    "write_values",
]

#: A part as it will be written: new bytes, text pieces streamed as they are made (a
#: patched sheet), or None (left out). Parts not in the mapping are copied unchanged.
NewPart = bytes | Iterator[str] | None

#: The calculation-engine id current Excel versions write (from memory; an older id
#: makes Excel recalculate every formula on open, a newer one is the same as current).
CALC_ID = "191029"
KEEP = object()  # Edit.value: leave the cell's value as it is

_ILLEGAL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\ufffe\uffff]")
_ATTR_TEXT = r"(?:[^>\"'/]|\"[^\"]*\"|'[^']*'|/(?!>))*"
_ATTRS = r"(?P<attrs>" + _ATTR_TEXT + ")"
_SHEETDATA = re.compile(  # the start tag (the end tag is found by str.find: much faster)
    r"<(?P<p>(?:[A-Za-z_][\w.-]*:)?)sheetData\b" + _ATTRS + r"(?P<end>/?>)", re.S
)
# rows and cells: the usual first attribute r="..." is also read by the pattern
# (``number``, ``letters``; None when written otherwise: then read from ``attrs``)
_ROW = re.compile(
    r"<(?P<p>(?:[A-Za-z_][\w.-]*:)?)row\b"
    + r'(?P<attrs>(?: r="(?P<number>[0-9]+)")?' + _ATTR_TEXT + ")"
    + r"(?:/>|>(?P<body>.*?)</(?P=p)row>)",
    re.S,
)
_CELL = re.compile(
    r"<(?P<p>(?:[A-Za-z_][\w.-]*:)?)c\b"
    + r'(?P<attrs>(?: r="(?P<letters>[A-Z]{1,3})[0-9]+")?' + _ATTR_TEXT + ")"
    + r"(?:/>|>(?P<body>.*?)</(?P=p)c>)",
    re.S,
)
_FORMULA = re.compile(
    r"<(?P<p>(?:[A-Za-z_][\w.-]*:)?)f\b" + _ATTRS + r"(?:/>|>.*?</(?P=p)f>)", re.S
)
_VALUE = re.compile(r"<(?P<p>(?:[A-Za-z_][\w.-]*:)?)v\b[^>]*(?:/>|>(?P<text>.*?)</(?P=p)v>)", re.S)
_EXTLST = re.compile(r"<(?P<p>(?:[A-Za-z_][\w.-]*:)?)extLst\b.*?</(?P=p)extLst>", re.S)
_CALCPR = re.compile(r"<(?P<p>(?:[A-Za-z_][\w.-]*:)?)calcPr\b" + _ATTRS + r"/?>", re.S)
_PROLOG_ENCODING = re.compile(r"(<\?xml[^>]*?encoding=)([\"'])([^\"']*)\2")
_REF = re.compile(r"^([A-Z]{1,3})([0-9]+)$")


@dataclass(frozen=True, slots=True)
class Edit:
    """What to do to one cell: its new ``value`` (or :data:`KEEP`), and its formula:
    None keeps it, "" removes it, text (with "=") sets it (``array``: its range)."""

    value: object = KEEP
    formula: str | None = None
    array: str | None = None


class SheetEdits(dict[str, dict[tuple[int, int], Edit]]):
    """Edits by sheet name, then by (row, column): the form the sheets are patched in.

    Building it directly saves making a :class:`CellRef` per cell (on a sheet of
    200,000 formulas that is a noticeable part of writing the result).

    >>> edits = SheetEdits.of({CellRef("S", 2, 1): Edit(1.5)})
    >>> edits.cells("S")[(2, 1)].value, edits.cells("T")
    (1.5, {})
    """

    def cells(self, sheet: str) -> dict[tuple[int, int], Edit]:
        """The edits of ``sheet`` by (row, column), added when it has none yet."""
        return self.setdefault(sheet, {})

    @classmethod
    def of(cls, edits: Mapping[CellRef, Edit]) -> SheetEdits:
        """``edits`` by cell reference, grouped by sheet."""
        out = cls()
        for ref, e in edits.items():
            out.cells(ref.sheet)[(ref.row, ref.col)] = e
        return out


def escape(text: str) -> str:
    """Text for an XML element: markup escaped, illegal characters as _xHHHH_."""
    text = text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    text = text.replace("\r", "&#13;")
    return _ILLEGAL.sub(lambda m: f"_x{ord(m.group(0)):04X}_", text)


_ATTR_FIND: dict[str, re.Pattern[str]] = {}
_ATTR_DROP: dict[str, re.Pattern[str]] = {}


def _attr(attrs: str, name: str) -> str | None:
    """The value of attribute ``name`` in an element's attribute text (None if absent)."""
    if name not in attrs:  # cannot be there: no regex needed
        return None
    find = _ATTR_FIND.get(name)
    if find is None:
        find = re.compile(r"(?:^|\s)" + re.escape(name) + r"\s*=\s*(\"[^\"]*\"|'[^']*')")
        _ATTR_FIND[name] = find
    m = find.search(attrs)
    return m.group(1)[1:-1] if m else None


def _row_number(rm: re.Match[str], before: int) -> int:
    """The number of the row matched by ``rm`` (a row without one follows row ``before``)."""
    given = rm.group("number")  # the usual spelling, read by the pattern
    if given is None:
        given = _attr(rm.group("attrs"), "r")
    return int(given) if given and given.isascii() and given.isdigit() else before + 1


@functools.cache
def _column(letters: str) -> int:
    """:func:`col_index` of a cell address's letters, remembered (at most 18,278)."""
    return col_index(letters)


def _cell_column(cm: re.Match[str], before: int) -> int:
    """The column of the cell matched by ``cm`` (a cell without its address follows
    the one in column ``before``)."""
    letters = cm.group("letters")  # the usual spelling, read by the pattern
    if letters is None:
        rm = _REF.match(_attr(cm.group("attrs"), "r") or "")
        return col_index(rm.group(1)) if rm else before + 1
    return _column(letters)


def _set_attr(attrs: str, name: str, value: str | None) -> str:
    """``attrs`` with attribute ``name`` removed, then set first when ``value`` is given."""
    drop = _ATTR_DROP.get(name)
    if drop is None:
        drop = re.compile(r"\s+" + re.escape(name) + r"\s*=\s*(\"[^\"]*\"|'[^']*')")
        _ATTR_DROP[name] = drop
    if name in attrs:  # else there is nothing to drop: no regex needed
        attrs = drop.sub("", attrs)
    if value is not None:
        attrs = f' {name}="{value}"' + attrs
    return attrs


def _number(x: float | int) -> str:
    """A number as a cell value's text (whole floats without ".0", as Excel writes them)."""
    if type(x) is float:  # the usual case first
        return repr(x) if not x.is_integer() or abs(x) >= 1e16 else str(int(x))
    if isinstance(x, bool):
        return "1" if x else "0"
    if isinstance(x, int):
        return str(x)
    return repr(float(x)) if not float(x).is_integer() or abs(x) >= 1e16 else str(int(x))


def _value_xml(value: CellValue, p: str, formula: bool) -> tuple[str | None, str]:
    """(t attribute, child XML) for a value; formula results use t="str" for text."""
    if type(value) is float and math.isfinite(value):  # the usual case first
        return None, f"<{p}v>{_number(value)}</{p}v>"
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


def _row_xml(p: str, attrs: str, number: int, body: str, edits: Mapping[int, Edit]) -> str:
    """Row ``number`` with ``edits`` (by column) made to its cells (``body``: their XML),
    the cells in column order; of two cells in one column the last is kept."""
    cells: dict[int, str] = {}
    col = 0
    for cm in _CELL.finditer(body):
        col = _cell_column(cm, col)
        edit = edits.get(col)
        cells[col] = cm.group(0) if edit is None else _cell_xml(cm, p, number, col, edit)
    for c, e in edits.items():
        if c not in cells:
            cells[c] = _cell_xml(None, p, number, c, e)
    inner = "".join([cells[c] for c in sorted(cells)])
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


def _formula_and_ext(body: str) -> tuple[str, str]:
    """A cell's formula element and extLst (from its content ``body``), "" when absent.

    >>> _formula_and_ext('<f>A1*2</f><v>4</v><extLst><ext uri="u"/></extLst>')
    ('<f>A1*2</f>', '<extLst><ext uri="u"/></extLst>')
    """
    fm = _FORMULA.search(body)
    em = _EXTLST.search(body) if "extLst" in body else None  # rare: no search without it
    return fm.group(0) if fm else "", em.group(0) if em else ""


def _cell_xml(old: re.Match[str] | None, p: str, row: int, col: int, edit: Edit) -> str:
    """The new XML of the cell at ``row``, ``col`` (``old``: its match of the cell
    pattern, or None when the cell does not exist yet)."""
    formula = ext = body = ""
    t: str | None = None
    if old is None:
        attrs = f' r="{col_letters(col)}{row}"'
    else:
        attrs = old.group("attrs")
        body = old.group("body") or ""
        formula, ext = _formula_and_ext(body)
        t = _attr(attrs, "t")
    if edit.formula == "":
        formula = ""
        attrs = _set_attr(_set_attr(attrs, "cm", None), "vm", None)
    elif edit.formula is not None:
        extra = f' t="array" ref="{edit.array}"' if edit.array else ""
        formula = f"<{p}f{extra}>{escape(edit.formula.removeprefix('='))}</{p}f>"
    value = edit.value
    if value is KEEP:
        child = _FORMULA.sub("", _EXTLST.sub("", body))  # the value and anything else
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


def _sheet_data(xml: str) -> tuple[re.Match[str], int | None] | None:
    """The first sheetData element: its start tag's match and where its end tag starts
    (None for ``<sheetData/>``); None when there is none (or it is never closed).

    >>> m, end = _sheet_data("<w><sheetData><row/></sheetData></w>")
    >>> m.end(), end
    (14, 20)
    """
    at = 0
    while (m := _SHEETDATA.search(xml, at)) is not None:
        if m.group("end") == "/>":
            return m, None
        end = xml.find(f"</{m.group('p')}sheetData>", m.end())
        if end >= 0:
            return m, end
        at = m.start() + 1
    return None


def patch_sheet(xml: str, edits: Mapping[tuple[int, int], Edit]) -> str:
    """The sheet XML with ``edits`` (by (row, column)) made; other cells untouched
    (see :func:`_patched`).

    >>> patch_sheet('<w><sheetData><row r="1"><c r="A1"><v>1</v></c></row></sheetData></w>',
    ...             {(1, 1): Edit(2.5)})
    '<w><sheetData><row r="1"><c r="A1"><v>2.5</v></c></row></sheetData></w>'
    """
    return "".join(_patched(xml, edits))


def _patched(xml: str, edits: Mapping[tuple[int, int], Edit]) -> Iterator[str]:
    """The pieces of the sheet XML with ``edits`` made, in order, made as they are
    taken (a sheet is streamed into the package, never held whole once patched).

    One pass over the rows up to the last edited one: rows without edits are
    copied as slices of the text (never parsed into cells), and everything after
    the last edit is one slice; rows and cells that do not exist yet (an array
    formula's range, a new input) are created in order. Work and memory follow
    the edited rows, not the size of the sheet.
    """
    found = _sheet_data(xml)
    if found is None:  # refused here, before anything is written
        raise WorkbookError("damaged sheet: no sheetData")
    return _pieces(xml, edits, *found)


def _pieces(
    xml: str, edits: Mapping[tuple[int, int], Edit], m: re.Match[str], end_tag: int | None
) -> Iterator[str]:
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

    if end_tag is None:  # <sheetData/>
        head, start, end = f"<{p}sheetData{m.group('attrs')}>", m.end(), m.end()
        close = f"</{p}sheetData>"
        yield xml[: m.start()]
        yield head
    else:
        start, end = m.end(), end_tag
        close = ""
        yield xml[:start]
    copied = start  # xml[start:copied] is written
    number = 0
    for rm in _ROW.finditer(xml, start, end):
        if j == len(keys):
            break
        number = _row_number(rm, number)
        if keys[j][0] > number:
            continue  # copied later, with its neighbours, as one slice
        yield xml[copied : rm.start()]
        while j < len(keys) and keys[j][0] < number:  # new rows before this one
            n = keys[j][0]
            yield _row_xml(p, f' r="{n}"', n, "", take(n))
        if j < len(keys) and keys[j][0] == number:
            body = rm.group("body") or ""
            yield _row_xml(rm.group("p"), rm.group("attrs"), number, body, take(number))
        else:
            yield rm.group(0)
        copied = rm.end()
    if j < len(keys):  # rows after the sheet's last row, before any text after the rows
        tail_at = copied
        for rm in _ROW.finditer(xml, copied, end):
            tail_at = rm.end()
        yield xml[copied:tail_at]
        while j < len(keys):
            n = keys[j][0]
            yield _row_xml(p, f' r="{n}"', n, "", take(n))
        copied = tail_at
    yield xml[copied:end]
    yield close
    yield xml[end:]


def _patch_calc_pr(xml: str) -> str:
    """No full recalculation forced on load; the current calculation engine's id."""

    def fix(m: re.Match[str]) -> str:
        attrs = _set_attr(m.group("attrs"), "fullCalcOnLoad", None)
        attrs = _set_attr(attrs, "calcId", CALC_ID)
        return f"<{m.group('p')}calcPr{attrs.rstrip()}/>"

    return _CALCPR.sub(fix, xml, count=1)


def drop_calc_chain(parts: dict[str, NewPart], pkg: Package) -> None:
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


def text_of(parts: Mapping[str, NewPart], pkg: Package, part: str) -> str:
    """A part's text as it will be written (changed earlier, or as in the package);
    UTF-16 parts are read and written back as UTF-8 with a matching declaration."""
    raw = parts.get(part)
    if raw is None:
        raw = pkg.zip.read(part)
    elif not isinstance(raw, bytes):
        raise TypeError(f"{part} is streamed as it is written; its text cannot be read back")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        try:
            text = raw.decode("utf-16")
        except UnicodeDecodeError:
            raise WorkbookError(f"damaged part {part}: not UTF-8 or UTF-16 text") from None
    del raw  # a large sheet: its bytes, its text and a copy would be held at once
    text = text.lstrip("\ufeff")
    found = _PROLOG_ENCODING.match(text)
    if found is None or found.group(3).upper() == "UTF-8":
        return text  # no copy of the whole text when the declaration is already right
    return f"{found.group(1)}{found.group(2)}UTF-8{found.group(2)}{text[found.end():]}"


def assemble(
    pkg: Package,
    parts: Mapping[str, NewPart],
    extra: Mapping[str, bytes],
    out: BinaryIO,
) -> None:
    """Write the new package to ``out``: changed parts replaced, None parts left out,
    ``extra`` added; unchanged parts are streamed through (never held whole)."""
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as zf:
        for info in pkg.infos:
            data = parts.get(info.filename)
            if data is None and info.filename in parts:
                continue
            zi = zipfile.ZipInfo(info.filename, date_time=info.date_time)
            zi.compress_type = zipfile.ZIP_DEFLATED
            zi.external_attr = info.external_attr
            if isinstance(data, bytes):
                zf.writestr(zi, data)
                continue
            if data is not None:
                with zf.open(zi, "w") as dst:
                    _write_utf8(data, dst)
                continue
            zi.file_size = info.file_size  # lets zipfile choose its record format up front
            with pkg.zip.open(info) as src, zf.open(zi, "w") as dst:
                shutil.copyfileobj(src, dst, 1 << 20)
        stamp = pkg.infos[0].date_time if pkg.infos else (1980, 1, 1, 0, 0, 0)
        for name, data in extra.items():
            zi = zipfile.ZipInfo(name, date_time=stamp)
            zi.compress_type = zipfile.ZIP_DEFLATED
            zf.writestr(zi, data)


def package_bytes(write: Callable[[BinaryIO], None]) -> bytes:
    """What ``write`` writes, as bytes (for a package wanted in memory).

    >>> package_bytes(lambda out: out.write(b"PK"))
    b'PK'
    """
    buf = io.BytesIO()
    write(buf)
    return buf.getvalue()


def _write_utf8(pieces: Iterable[str], out: IO[bytes], batch: int = 1 << 20) -> None:
    """Write the pieces' text as UTF-8, about ``batch`` characters at a time (a patched
    sheet is never held whole, as text or as bytes)."""
    held: list[str] = []
    size = 0
    for piece in pieces:
        held.append(piece)
        size += len(piece)
        if size >= batch:
            out.write("".join(held).encode("utf-8"))
            held.clear()
            size = 0
    out.write("".join(held).encode("utf-8"))


def apply_edits(
    pkg: Package, edits: Mapping[CellRef, Edit] | SheetEdits, parts: dict[str, NewPart]
) -> None:
    """Make ``edits`` (by cell reference, or grouped by sheet) in the sheets' XML (into
    ``parts``, as pieces made when the package is written: one sheet's text is held at
    a time)."""
    by_sheet = edits if isinstance(edits, SheetEdits) else SheetEdits.of(edits)
    for sheet in pkg.worksheets():
        cells = by_sheet.get(sheet.name)
        if cells:
            given = parts.get(sheet.part)  # bytes from an earlier change, or None
            parts[sheet.part] = _patched_part(pkg, sheet.part, given, cells)


def _patched_part(
    pkg: Package, part: str, given: NewPart, cells: Mapping[tuple[int, int], Edit]
) -> Iterator[str]:
    """The pieces of ``part`` patched, its text read only when the first is taken."""
    yield from _patched(text_of({part: given} if given is not None else {}, pkg, part), cells)


def write_live(
    pkg: Package, edits: Mapping[CellRef, Edit] | SheetEdits, out: BinaryIO
) -> None:
    """Write to ``out`` the workbook with every formula kept and the ``edits`` (cached
    values, set inputs) made; calculation settings that show the stored values on open."""
    parts: dict[str, NewPart] = {}
    apply_edits(pkg, edits, parts)
    parts[pkg.workbook_part] = _patch_calc_pr(text_of(parts, pkg, pkg.workbook_part)).encode(
        "utf-8"
    )
    assemble(pkg, parts, {}, out)


def write_values(
    pkg: Package,
    edits: Mapping[CellRef, Edit] | SheetEdits,
    out: BinaryIO,
    parts: dict[str, NewPart] | None = None,
    extra: Mapping[str, bytes] | None = None,
) -> None:
    """Write to ``out`` the workbook with the ``edits`` made (formulas removed where they
    say so), the calculation chain left out, and ``parts``/``extra`` from the values-only
    labelling."""
    parts = {} if parts is None else parts
    apply_edits(pkg, edits, parts)
    parts[pkg.workbook_part] = _patch_calc_pr(text_of(parts, pkg, pkg.workbook_part)).encode(
        "utf-8"
    )
    drop_calc_chain(parts, pkg)
    assemble(pkg, parts, extra or {}, out)
