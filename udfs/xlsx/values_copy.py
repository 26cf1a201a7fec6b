"""A values-only copy that says so, and the way back to the model.

A values-only copy is a deliberate export: its formulas are replaced by their
values, so it must never be mistaken for a model. :func:`label_parts` adds

* a first sheet, **"About this copy"**: when and from which file the values
  were computed, every input they were computed from (cell, value then, value
  now as a live reference) and a check cell of native formulas that shows a
  warning as soon as any input differs from the value it had;
* a hidden sheet, **"cellwright formulas"**, keeping every replaced formula
  (sheet, cell, formula, array range), and a hidden defined name
  :data:`MARKER`, so :func:`restored` can put the formulas back: ``cellwright
  calc`` and ``sweep`` evaluate the model, never the frozen values.

>>> about_xml([("Inputs!C5", "Inputs", "C5", 60.0)], "2026-01-01 00:00 UTC", "in.xlsx", "ab12",
...           0)[:38]
'<?xml version="1.0" encoding="UTF-8" s'
"""

from __future__ import annotations

import posixpath
import re
from collections.abc import Sequence

from udfs.sheet.error_values import CellValue, SheetError

from .file_errors import WorkbookError
from .guard import Limits
from .package import Package
from .reader import read_workbook
from .refs import CellRef, col_index, quote_sheet
from .writer import Edit, NewPart, apply_edits, assemble, escape, package_bytes, text_of

__all__ = [
    "ABOUT_SHEET",
    "FORMULAS_SHEET",
    "MARKER",
    "about_xml",
    "formulas_xml",
    "label_parts",
    "restore_edits",
]

ABOUT_SHEET = "About this copy"
FORMULAS_SHEET = "cellwright formulas"
MARKER = "_cw_values_only"
_MAIN = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
_REL = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
_SHEET_TYPE = "application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"
_FIRST_INPUT_ROW = 9
_STALE = "WARNING: an input differs from the value these results were computed from"
_INPUT_HEAD = ("Input", "Cell", "Value then", "Value now", "Same")
_FRESH = "Inputs unchanged: these values match their inputs"


def _text_cell(ref: str, text: str) -> str:
    return f'<c r="{ref}" t="inlineStr"><is><t xml:space="preserve">{escape(text)}</t></is></c>'


def _value_cell(ref: str, value: CellValue) -> str:
    if value is None:
        return _text_cell(ref, "(empty)")
    if isinstance(value, SheetError):
        return f'<c r="{ref}" t="e"><v>{escape(value.code)}</v></c>'
    if isinstance(value, bool):
        return f'<c r="{ref}" t="b"><v>{int(value)}</v></c>'
    if isinstance(value, (int, float)):
        return f'<c r="{ref}"><v>{float(value)!r}</v></c>'
    return _text_cell(ref, str(value))


def _formula_cell(ref: str, formula: str, cached: CellValue) -> str:
    f = f"<f>{escape(formula.removeprefix('='))}</f>"
    if isinstance(cached, str) and not isinstance(cached, SheetError):
        return f'<c r="{ref}" t="str">{f}<v>{escape(cached)}</v></c>'
    if isinstance(cached, bool):
        return f'<c r="{ref}" t="b">{f}<v>{int(cached)}</v></c>'
    if isinstance(cached, (int, float)):
        return f'<c r="{ref}">{f}<v>{float(cached)!r}</v></c>'
    return f'<c r="{ref}">{f}</c>'


def _row(r: int, cells: str) -> str:
    return f'<row r="{r}">{cells}</row>'


def _sheet(rows: list[str], widths: Sequence[float] = ()) -> str:
    cols = "".join(
        f'<col min="{i}" max="{i}" width="{w}" customWidth="1"/>' for i, w in enumerate(widths, 1)
    )
    return (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>'
        f'<worksheet xmlns="{_MAIN}" xmlns:r="{_REL}">'
        + (f"<cols>{cols}</cols>" if cols else "")
        + "<sheetData>"
        + "".join(rows)
        + "</sheetData></worksheet>"
    )


def about_xml(
    inputs: Sequence[tuple[str, str, str, CellValue]],
    when: str,
    source: str,
    sha256: str,
    left_out: int,
) -> str:
    """The "About this copy" sheet: (label, sheet, cell, value) of each input."""
    n = len(inputs)
    last = _FIRST_INPUT_ROW + max(n, 1) - 1
    origin = f"Computed by cellwright on {when} from {source} (sha256 {sha256[:16]})."
    rows = [
        _row(1, _text_cell("A1", "Values-only copy: formulas replaced by their values")),
        _row(2, _text_cell("A2", origin)),
        '<row r="3">'
        + _text_cell(
            "A3",
            "This copy does not recalculate. cellwright calc and sweep restore its formulas "
            "(kept on the hidden sheet 'cellwright formulas') and evaluate the model.",
        )
        + "</row>",
        '<row r="5">'
        + _text_cell("A5", "Check")
        + _formula_cell(
            "B5",
            f'IF(SUMPRODUCT(--(E{_FIRST_INPUT_ROW}:E{last}=FALSE))=0,"{_FRESH}","{_STALE}")',
            _FRESH,
        )
        + "</row>",
    ]
    if left_out:
        note = f"{left_out:,} further input cells are not listed; the check covers the listed ones."
        rows.append(_row(6, _text_cell("A6", note)))
    rows.append(
        f'<row r="{_FIRST_INPUT_ROW - 1}">'
        + "".join(
            _text_cell(f"{c}{_FIRST_INPUT_ROW - 1}", t)
            for c, t in zip("ABCDE", _INPUT_HEAD, strict=True)
        )
        + "</row>"
    )
    for i, (label, sheet, cell, value) in enumerate(inputs):
        r = _FIRST_INPUT_ROW + i
        where = f"{quote_sheet(sheet)}!{cell}"
        now = f'IF(ISBLANK({where}),"(empty)",{where})'
        same = f"IFERROR(C{r}=D{r},AND(ISERROR(C{r}),ISERROR(D{r})))"
        rows.append(
            f'<row r="{r}">'
            + _text_cell(f"A{r}", label)
            + _text_cell(f"B{r}", where)
            + _value_cell(f"C{r}", value)
            + _formula_cell(f"D{r}", now, "(empty)" if value is None else value)
            + _formula_cell(f"E{r}", same, True)
            + "</row>"
        )
    return _sheet(rows, (34, 28, 16, 16, 8))


def formulas_xml(formulas: Sequence[tuple[str, str, str, str | None]]) -> str:
    """The hidden sheet of kept formulas: (sheet, cell, formula, array range or None)."""
    head = ("Sheet", "Cell", "Formula", "Array")
    rows = [_row(1, "".join(_text_cell(f"{c}1", t) for c, t in zip("ABCD", head, strict=True)))]
    for i, (sheet, cell, formula, array) in enumerate(formulas, start=2):
        rows.append(
            f'<row r="{i}">'
            + _text_cell(f"A{i}", sheet)
            + _text_cell(f"B{i}", cell)
            + _text_cell(f"C{i}", formula)
            + (_text_cell(f"D{i}", array) if array else "")
            + "</row>"
        )
    return _sheet(rows)


def _free_part(pkg: Package, stem: str) -> str:
    n = 1
    while f"xl/worksheets/{stem}{n}.xml" in pkg.names:
        n += 1
    return f"xl/worksheets/{stem}{n}.xml"


def label_parts(
    pkg: Package, about: str, formulas: str, parts: dict[str, NewPart]
) -> dict[str, bytes]:
    """Add the two sheets (About first, formulas hidden last) and the marker name to the
    workbook part, its relationships and the content types; returns the new parts."""
    for name in (ABOUT_SHEET, FORMULAS_SHEET):
        if pkg.sheet(name) is not None:
            raise WorkbookError(f"the workbook already has a sheet called {name!r}")
    about_part = _free_part(pkg, "cw_about")
    formulas_part = _free_part(pkg, "cw_formulas")
    wb_dir = posixpath.dirname(pkg.workbook_part)
    rels_name = posixpath.join(wb_dir, "_rels", posixpath.basename(pkg.workbook_part) + ".rels")
    rels = text_of(parts, pkg, rels_name)
    rels = re.sub(
        r"(</(?:[\w.-]+:)?Relationships>)",
        f'<Relationship Id="rIdCwAbout" Type="{_REL}/worksheet" '
        f'Target="{posixpath.relpath(about_part, wb_dir)}"/>'
        f'<Relationship Id="rIdCwFormulas" Type="{_REL}/worksheet" '
        f'Target="{posixpath.relpath(formulas_part, wb_dir)}"/>\\1',
        rels,
        count=1,
    )
    parts[rels_name] = rels.encode("utf-8")
    ct = text_of(parts, pkg, "[Content_Types].xml")
    ct = re.sub(
        r"(</(?:[\w.-]+:)?Types>)",
        f'<Override PartName="/{about_part}" ContentType="{_SHEET_TYPE}"/>'
        f'<Override PartName="/{formulas_part}" ContentType="{_SHEET_TYPE}"/>\\1',
        ct,
        count=1,
    )
    parts["[Content_Types].xml"] = ct.encode("utf-8")
    wb = text_of(parts, pkg, pkg.workbook_part)
    ids = [int(x) for x in re.findall(r"\bsheetId=\"([0-9]+)\"", wb)] or [0]
    top = max(ids)
    about_el = (
        f'<sheet xmlns:cwr="{_REL}" name="{ABOUT_SHEET}" sheetId="{top + 1}" cwr:id="rIdCwAbout"/>'
    )
    formulas_el = (
        f'<sheet xmlns:cwr="{_REL}" name="{FORMULAS_SHEET}" sheetId="{top + 2}" state="hidden" '
        'cwr:id="rIdCwFormulas"/>'
    )
    wb, n = re.subn(
        r"(<(?:[\w.-]+:)?sheets\b[^>]*>)", lambda m: m.group(1) + about_el, wb, count=1
    )
    wb = re.sub(r"(</(?:[\w.-]+:)?sheets>)", lambda m: formulas_el + m.group(1), wb, count=1)
    if n != 1:
        raise WorkbookError("damaged workbook part: no sheet list")
    wb = re.sub(r'\blocalSheetId="([0-9]+)"', lambda m: f'localSheetId="{int(m.group(1)) + 1}"', wb)
    wb = re.sub(r'\b(activeTab|firstSheet)="[0-9]+"', r'\1="0"', wb)
    marker = f'<definedName name="{MARKER}" hidden="1">"{FORMULAS_SHEET}"</definedName>'
    empty = re.compile(r"<((?:[\w.-]+:)?)definedNames\b([^>]*)/>")
    opened = re.compile(r"(<(?:[\w.-]+:)?definedNames\b[^>]*>)")
    if empty.search(wb):
        wb = empty.sub(lambda m: f"<{m[1]}definedNames{m[2]}>{marker}</{m[1]}definedNames>", wb, 1)
    elif opened.search(wb):
        wb = opened.sub(lambda m: m.group(1) + marker, wb, count=1)
    else:
        wb = re.sub(
            r"(</(?:[\w.-]+:)?sheets>(?:\s*<(?:[\w.-]+:)?functionGroups\b.*?/>)?"
            r"(?:\s*<(?:[\w.-]+:)?externalReferences\b.*?</(?:[\w.-]+:)?externalReferences>)?)",
            lambda m: m.group(1) + f"<definedNames>{marker}</definedNames>",
            wb,
            count=1,
            flags=re.S,
        )
    parts[pkg.workbook_part] = wb.encode("utf-8")
    return {about_part: about.encode("utf-8"), formulas_part: formulas.encode("utf-8")}


def restore_edits(
    rows: Sequence[tuple[CellValue, ...]], values_at: dict[CellRef, CellValue]
) -> dict[CellRef, Edit]:
    """Edits that put the kept formulas back (rows of the hidden sheet, header first),
    each cell keeping its current value as the cached value."""
    out: dict[CellRef, Edit] = {}
    for row in rows[1:]:
        sheet, cell, formula = (*row, None, None, None)[:3]
        array = row[3] if len(row) > 3 else None
        if not isinstance(sheet, str) or not isinstance(cell, str) or not isinstance(formula, str):
            raise WorkbookError(
                f"the hidden sheet {FORMULAS_SHEET!r} is damaged: a row without sheet, cell "
                "and formula; restore the formulas from the original workbook"
            )
        m = re.fullmatch(r"\$?([A-Za-z]{1,3})\$?([0-9]+)", cell.split("!")[-1])
        if m is None:
            raise WorkbookError(f"the hidden sheet {FORMULAS_SHEET!r} names no cell {cell!r}")
        ref = CellRef(sheet, int(m.group(2)), col_index(m.group(1)))
        out[ref] = Edit(values_at.get(ref), formula, array if isinstance(array, str) else None)
    return out


def unlabel_parts(pkg: Package, parts: dict[str, NewPart]) -> None:
    """Take the About and formulas sheets and the marker name out again (into ``parts``)."""
    wb = text_of(parts, pkg, pkg.workbook_part)
    rels = pkg.relationships(pkg.workbook_part)
    order = [s.name for s in pkg.sheets]
    gone = [i for i, name in enumerate(order) if name in (ABOUT_SHEET, FORMULAS_SHEET)]
    for entry in pkg.sheets:
        if entry.name not in (ABOUT_SHEET, FORMULAS_SHEET):
            continue
        wb = re.sub(
            r"<(?:[\w.-]+:)?sheet\b[^>]*\bname=\"" + re.escape(escape(entry.name)) + r"\"[^>]*/>",
            "",
            wb,
            count=1,
        )
        rid = next((k for k, v in rels.items() if v[1] == entry.part), None)
        parts[entry.part] = None
        ct = text_of(parts, pkg, "[Content_Types].xml")
        ct = re.sub(
            r"<(?:[\w.-]+:)?Override\b[^>]*PartName=\"/" + re.escape(entry.part) + r"\"[^>]*/>",
            "",
            ct,
        )
        parts["[Content_Types].xml"] = ct.encode("utf-8")
        if rid is not None:
            wb_dir = posixpath.dirname(pkg.workbook_part)
            name = posixpath.join(wb_dir, "_rels", posixpath.basename(pkg.workbook_part) + ".rels")
            text = text_of(parts, pkg, name)
            text = re.sub(
                r"<(?:[\w.-]+:)?Relationship\b[^>]*\bId=\"" + re.escape(rid) + r"\"[^>]*/>",
                "",
                text,
            )
            parts[name] = text.encode("utf-8")

    def shift(m: re.Match[str]) -> str:
        i = int(m.group(1))
        return f'localSheetId="{i - sum(1 for g in gone if g < i)}"'

    name_el = r"<(?:[\w.-]+:)?definedName\b[^>]*\bname=\"" + MARKER + r"\"[^>]*>.*?</"
    wb = re.sub(name_el + r"(?:[\w.-]+:)?definedName>", "", wb, flags=re.S)
    wb = re.sub(r'\blocalSheetId="([0-9]+)"', shift, wb)
    wb = re.sub(r'\b(activeTab|firstSheet)="[0-9]+"', r'\1="0"', wb)
    parts[pkg.workbook_part] = wb.encode("utf-8")


__all__ += ["unlabel_parts"]


def restored(data: bytes, name: str, limits: Limits) -> bytes | None:
    """The workbook with its kept formulas back, when ``data`` is a values-only copy
    (None otherwise); refused with a reason when the kept formulas are damaged."""
    look = Package(data, name)
    look.read_structure(limits.defined_names)  # the workbook part only: is it a values copy?
    if not any(dn.name == MARKER for dn in look.defined_names):
        return None
    book = read_workbook(data, name, limits)
    sheet = book.sheet(FORMULAS_SHEET)
    if sheet is None:
        raise WorkbookError(
            f"{name} is a values-only copy whose sheet {FORMULAS_SHEET!r} is missing: its "
            "formulas cannot be restored; evaluate the original workbook instead"
        )
    grid: dict[int, dict[int, CellValue]] = {}
    for (r, c), v in sheet.values.items():
        grid.setdefault(r, {})[c] = v
    rows = [tuple(grid[r].get(c) for c in range(1, 5)) for r in sorted(grid)]
    values_at: dict[CellRef, CellValue] = {}
    for s in book.sheets:
        for (r, c), v in s.values.items():
            values_at[CellRef(s.name, r, c)] = v
    edits = restore_edits(rows, values_at)
    parts: dict[str, NewPart] = {}
    apply_edits(book.package, edits, parts)
    unlabel_parts(book.package, parts)
    return package_bytes(lambda out: assemble(book.package, parts, {}, out))


__all__ += ["restored"]
