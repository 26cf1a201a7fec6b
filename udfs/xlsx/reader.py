"""Read a workbook's cells, formulas, names and tables from its package, within limits.

One streaming pass (defusedxml) over exactly the parts the evaluator uses: the
sheets the workbook part lists, its shared strings and its tables. Every
limit of :class:`udfs.xlsx.guard.Limits` is checked while reading, before any
work grows with it: cells (inside the sheet, A1:XFD1048576), rows, formula
cells (every cell an array formula fills counts as one), formula length and
nesting, shared strings, text length, merged ranges, hyperlinks, data
validations and conditional formats (every range they list; merged and
hyperlinked ranges also by the cells they cover, which other readers expand
cell by cell).

The reader also notes what other readers will see: each sheet's grid from A1
to its last cell, merged and hyperlinked ranges included (``grid_rows`` by
``grid_cols``), and the ranges the file lists; :func:`check_fallback` refuses
a workbook too large for the formulas package's own model before it runs.

Values: numbers are floats, text is str, TRUE/FALSE bool, error cells
:class:`~udfs.sheet.error_values.SheetError`. Shared formulas are kept as their
master's text with the master's position (``anchor``): a cell's own formula is
that text shifted by its offset from the anchor.

>>> import io, openpyxl
>>> wb = openpyxl.Workbook(); ws = wb.active; ws.title = "Calc"
>>> ws["A1"] = 2; ws["A2"] = "=A1*21"; ws["B1"] = "kg"
>>> buf = io.BytesIO(); wb.save(buf)
>>> book = read_workbook(buf.getvalue(), "demo.xlsx")
>>> s = book.sheets[0]
>>> s.name, s.values[(1, 1)], s.values[(1, 2)], s.formulas[(2, 1)].text, s.max_row
('Calc', 2.0, 'kg', '=A1*21', 2)
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from functools import lru_cache

from udfs.sheet.error_values import CellValue, SheetError

from .collector import collector_paused
from .file_errors import HostileFileError, WorkbookError
from .formula_text import TokenizeError, shift_formula
from .guard import DEFAULT_LIMITS, Limits, PackageReport, check_package, formula_nesting
from .package import DefinedName, Package, local
from .refs import MAX_COL, MAX_ROW, col_index, sheet_key

__all__ = [
    "FormulaCell",
    "SheetData",
    "Table",
    "WorkbookData",
    "check_fallback",
    "read_workbook",
]

_COORD = re.compile(r"^\$?([A-Za-z]{1,3})\$?([0-9]{1,7})$")
_CELL_PATTERN = r"\$?([A-Za-z]{1,3})\$?([0-9]{1,7})"
#: A cell or a rectangle of a range list ("B4", "$A$1:B2"; no whitespace in it).
_AREA = re.compile(f"{_CELL_PATTERN}(?::{_CELL_PATTERN})?")
_COLUMNS = re.compile(r"\$?([A-Za-z]{1,3}):\$?([A-Za-z]{1,3})")  # whole columns "C:D"
_ROWS = re.compile(r"\$?([0-9]+):\$?([0-9]+)")  # whole rows "3:5"
#: Any range of a range list: a cell, a rectangle, whole columns or whole rows.
_RANGE = re.compile(f"{_AREA.pattern}|{_COLUMNS.pattern}|{_ROWS.pattern}")
_RANGED = {"mergeCell": "ref", "hyperlink": "ref", "dataValidation": "sqref",
           "conditionalFormatting": "sqref"}  # elements listing ranges: their attribute
_ERROR_CODES = {
    "#NULL!", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#N/A", "#SPILL!", "#CALC!",
    "#GETTING_DATA", "#FIELD!", "#BLOCKED!", "#CONNECT!", "#BUSY!", "#UNKNOWN!", "#PYTHON!",
}


@dataclass(slots=True)
class FormulaCell:
    """A formula as stored: ``text`` (with "="), written for the ``anchor`` cell.

    ``kind`` is "normal", "shared", "array" or "dataTable"; ``span`` the range an
    array formula fills (r1, c1, r2, c2); ``cached`` the value the file holds.
    """

    text: str
    anchor: tuple[int, int]
    kind: str = "normal"
    span: tuple[int, int, int, int] | None = None
    cached: CellValue = None

    def text_at(self, row: int, col: int) -> str:
        """The cell's own formula text (a shared formula shifted to the cell)."""
        dr, dc = row - self.anchor[0], col - self.anchor[1]
        if (dr, dc) == (0, 0):
            return self.text
        try:
            return shift_formula(self.text, dr, dc)
        except TokenizeError:
            return self.text


@dataclass
class SheetData:
    """One sheet's cells: constants by (row, col), formulas by (row, col)."""

    name: str
    index: int
    part: str
    state: str = "visible"
    kind: str = "worksheet"
    values: dict[tuple[int, int], CellValue] = field(default_factory=dict)
    formulas: dict[tuple[int, int], FormulaCell] = field(default_factory=dict)
    max_row: int = 0
    max_col: int = 0
    grid_rows: int = 0  # the last row and column any ``<c>``, merged or hyperlinked range
    grid_cols: int = 0  # reaches (other readers make a cell for each position up to them)

    @property
    def key(self) -> str:
        return sheet_key(self.name)


@dataclass(frozen=True)
class Table:
    """A structured table: its range, header and totals rows, column names in order."""

    name: str
    sheet: str
    r1: int
    c1: int
    r2: int
    c2: int
    header_rows: int
    totals_rows: int
    columns: tuple[str, ...]


@dataclass
class WorkbookData:
    """Everything the evaluator reads from a workbook file."""

    name: str
    package: Package
    report: PackageReport
    sheets: list[SheetData]
    defined_names: list[DefinedName]
    tables: list[Table]
    iterate: bool = False  # the workbook asks for iterative calculation
    ranges: int = 0  # merged, hyperlinked, validated and conditionally formatted ranges

    def sheet(self, name: str) -> SheetData | None:
        """The worksheet called ``name``, compared as Excel compares sheet names."""
        key = sheet_key(name)
        return next((s for s in self.sheets if s.key == key), None)


#: ``col_index`` remembered: a sheet names the same few columns again and again.
_column = lru_cache(maxsize=4096)(col_index)


def _coord(ref: str | None) -> tuple[int, int] | None:
    """(row, col) of an A1-style coordinate, None if ``ref`` is not one.

    >>> _coord("$B$4"), _coord("ab12"), _coord("B"), _coord(None)
    ((4, 2), (12, 28), None, None)
    """
    m = _COORD.match(ref or "")
    if m is None:
        return None
    letters, digits = m.groups()
    return int(digits), _column(letters)


def _span(ref: str) -> tuple[int, int, int, int] | None:
    parts = ref.split(":")
    a, b = _coord(parts[0]), _coord(parts[-1])
    if a is None or b is None or len(parts) > 2:
        return None
    return (min(a[0], b[0]), min(a[1], b[1]), max(a[0], b[0]), max(a[1], b[1]))


def _extend(sheet: SheetData, row: int, col: int) -> None:
    """Widen ``sheet``'s used range (max_row, max_col) to reach (row, col)."""
    if row > sheet.max_row:
        sheet.max_row = row
    if col > sheet.max_col:
        sheet.max_col = col


def _grow(sheet: SheetData, row: int, col: int) -> None:
    """Widen the grid other readers see for ``sheet`` to reach (row, col)."""
    if row > sheet.grid_rows:
        sheet.grid_rows = row
    if col > sheet.grid_cols:
        sheet.grid_cols = col


def _corner(part: str, what: str, name: str) -> tuple[int, int, int]:
    """(cells covered, last row, last column) of one range of a range list (``part`` holds
    no whitespace; whole columns and rows too).

    >>> _corner("$C$4:B2", "mergeCell", "x"), _corner("B:C", "mergeCell", "x")
    ((6, 4, 3), (2097152, 1048576, 3))
    """
    m = _AREA.fullmatch(part)
    if m is not None:
        letters1, digits1, letters2, digits2 = m.groups()
        r1, c1 = int(digits1), _column(letters1)
        r2, c2 = (int(digits2), _column(letters2)) if digits2 is not None else (r1, c1)
        r1, r2 = (r1, r2) if r1 <= r2 else (r2, r1)
        c1, c2 = (c1, c2) if c1 <= c2 else (c2, c1)
        return (r2 - r1 + 1) * (c2 - c1 + 1), r2, c2
    m = _COLUMNS.fullmatch(part)
    if m:
        c1, c2 = sorted((col_index(m.group(1)), col_index(m.group(2))))
        return MAX_ROW * (c2 - c1 + 1), MAX_ROW, c2
    n = _ROWS.fullmatch(part)
    if n:
        r1, r2 = sorted((int(n.group(1)), int(n.group(2))))
        return MAX_COL * (r2 - r1 + 1), r2, MAX_COL
    raise WorkbookError(f"{name}: damaged: {what} range {part[:40]!r}")


class _SheetReader:
    """Streams one sheet part into a SheetData, checking limits as it goes."""

    def __init__(self, book: _Reading, sheet: SheetData):
        self.book = book
        self.sheet = sheet
        self.shared: dict[str, FormulaCell] = {}
        self.row = 0
        self.col = 0
        self.rows = 0
        self.row_digits = ""  # ``r`` of the open row when it is 1 to 7 digits 0-9
        self.row_number = 0  # and the open row's number: see _place()
        self.columns: dict[str, int] = {}  # column letters met in cells' ``r``: numbers
        self.cell: dict[str, str] | None = None  # attributes of the open <c>
        self.f: dict[str, str] | None = None  # attributes of its <f>
        self.f_text: str | None = None
        self.v_text: str | None = None
        self.is_text: list[str] | None = None
        self.buf: list[str] | None = None  # where character data goes

    def read(self) -> None:
        self.book.pkg.scan(
            self.sheet.part, self._start, self._end, self._text, local_names=False
        )
        self.book.rows += self.rows

    def _text(self, data: str) -> None:
        if self.buf is not None:
            self.buf.append(data)

    def _start(self, name: str, attrs: dict[str, str]) -> None:
        """An element starts; ``name`` as written ("x:c" is "c")."""
        tag = name.rpartition(":")[2] if ":" in name else name
        if tag == "c":
            self.cell = attrs
            self.f = self.f_text = self.v_text = self.is_text = None
        elif self.cell is not None:
            if tag == "f":
                self.f, self.buf = attrs, []
            elif tag == "v":
                self.buf = []
            elif tag == "is":
                self.is_text = []
            elif tag == "t" and self.is_text is not None:
                self.buf = []
            elif tag == "rPh":  # phonetic text is not part of the value
                self.is_text = None
        elif tag == "row":
            book = self.book
            self.rows += 1
            if self.rows > book.limits.rows:
                raise HostileFileError(
                    book.name, f"sheet {self.sheet.name!r} has more than {book.limits.rows:,} rows"
                )
            r = attrs.get("r", "")
            self.row = self.row_number = int(r) if r.isascii() and r.isdigit() else self.row + 1
            self.row_digits = r if len(r) <= 7 and r.isascii() and r.isdigit() else ""
            self.col = 0
        elif tag in _RANGED:
            self.book.count_ranges(tag, attrs.get(_RANGED[tag], ""), self.sheet)

    def _end(self, name: str) -> None:
        """An element ends; ``name`` as written."""
        if self.cell is None:
            return
        tag = name.rpartition(":")[2] if ":" in name else name
        if tag == "c":
            self._cell(self.cell)
            self.cell = None
        elif tag == "f":
            self.f_text = "".join(self.buf or ())
            self.buf = None
        elif tag == "v":
            self.v_text = "".join(self.buf or ())
            self.buf = None
        elif tag == "t" and self.is_text is not None:
            self.is_text.append("".join(self.buf or ()))
            self.buf = None

    def _cell(self, attrs: dict[str, str]) -> None:
        """The open cell ends: place it (inside the sheet), count it, keep what it holds."""
        book, sheet = self.book, self.sheet
        row, col = self._place(attrs.get("r"))
        if not (1 <= row <= MAX_ROW and 1 <= col <= MAX_COL):
            raise WorkbookError(
                f"{book.name}: damaged: a cell of sheet {sheet.name!r} lies outside the "
                f"sheet (row {row:,}, column {col:,}; a sheet ends at XFD1048576)"
            )
        self.row, self.col = row, col
        book.cells += 1
        if book.cells > book.limits.cells:
            raise HostileFileError(book.name, f"more than {book.limits.cells:,} cells")
        _grow(sheet, row, col)
        t = attrs.get("t", "n")
        value = self._number() if t == "n" else self._value(t)
        f = self.f
        pos = (row, col)  # one tuple: the key and a formula's anchor
        formula = None if f is None else self._formula(f, self.f_text or "", pos, value)
        if formula is not None:
            sheet.formulas[pos] = formula
            if formula.span is not None:
                _extend(sheet, formula.span[2], formula.span[3])
        elif value is not None:
            sheet.values[pos] = value
        else:
            return
        _extend(sheet, row, col)

    def _place(self, ref: str | None) -> tuple[int, int]:
        """(row, col) of a cell's ``r`` as :func:`_coord` reads it; without one, the cell
        after the one before. Most cells are written as column letters met before and the
        open row's own ``r`` ("B12" in row "12"): those are found by looking their letters
        up, with no pattern to match."""
        digits = self.row_digits
        if ref is not None and digits and ref.endswith(digits):
            col = self.columns.get(ref[: -len(digits)])
            if col is not None:
                return self.row_number, col
        m = _COORD.match(ref or "")
        if m is None:
            return max(self.row, 1), self.col + 1
        letters, row = m.groups()
        col = self.columns.get(letters)
        if col is None:
            col = self.columns[letters] = _column(letters)
        return int(row), col

    def _number(self) -> CellValue:
        """The value of a number cell (``t="n"``, the default)."""
        text = self.v_text
        if not text:
            return None
        try:
            return float(text)
        except ValueError:
            raise WorkbookError(f"{self.book.name}: damaged: number {text[:20]!r}") from None

    def _value(self, t: str) -> CellValue:
        if t == "inlineStr":
            if self.is_text is None:
                return None
            return self.book.check_text("".join(self.is_text), self.sheet.name)
        text = self.v_text
        if not text:
            return None
        if t == "s":
            try:
                if not text.strip().isdecimal() or not text.isascii():  # "-1" is not an index
                    raise ValueError(text)
                return self.book.strings[int(text)]
            except (ValueError, IndexError):
                raise WorkbookError(
                    f"{self.book.name}: damaged: shared string {text[:20]!r} does not exist"
                ) from None
        if t in ("str", "d"):
            return self.book.check_text(text, self.sheet.name)
        if t == "b":
            return text.strip() in ("1", "true")
        if t == "e":
            code = text.strip()
            return SheetError(code if code in _ERROR_CODES else "#VALUE!")
        return self._number()

    def _formula(
        self, f: dict[str, str], text: str, pos: tuple[int, int], cached: CellValue
    ) -> FormulaCell | None:
        book = self.book
        row, col = pos
        kind = f.get("t", "normal")
        if kind == "shared":
            si = f.get("si", "")
            if text:
                master = FormulaCell("=" + text, pos, "shared", cached=cached)
                self.shared[si] = master
            elif si in self.shared:
                m = self.shared[si]
                master = FormulaCell(m.text, m.anchor, "shared", cached=cached)
            else:
                raise WorkbookError(
                    f"{book.name}: damaged: shared formula {si!r} used before it is defined"
                )
            book.count_formula(text, self.sheet.name)
            return master
        if not text and kind != "dataTable":
            return None
        cell = FormulaCell("=" + text, pos, kind, cached=cached)
        if kind != "array":
            book.count_formula(text, self.sheet.name)
            return cell
        span = _span(f.get("ref", "")) or (row, col, row, col)
        if span[2] > MAX_ROW or span[3] > MAX_COL:
            raise WorkbookError(
                f"{book.name}: damaged: an array formula of sheet {self.sheet.name!r} reaches "
                "past the end of the sheet"
            )
        area = (span[2] - span[0] + 1) * (span[3] - span[1] + 1)
        book.count_formula(text, self.sheet.name, area)  # every cell it fills is computed
        _grow(self.sheet, span[2], span[3])
        cell.span = span
        return cell


class _Reading:
    """State shared by the sheets of one workbook while it is read."""

    def __init__(self, pkg: Package, limits: Limits):
        self.pkg = pkg
        self.name = pkg.name
        self.limits = limits
        self.cells = 0
        self.rows = 0
        self.formulas = 0
        self.areas: dict[str, int] = {}
        self.counts: dict[str, int] = {}
        self.ranges = 0
        self.strings: list[str] = []

    def count_formula(self, text: str, sheet: str, cells: int = 1) -> None:
        """One formula filling ``cells`` cells (an array formula fills its range)."""
        lim = self.limits
        self.formulas += cells
        if self.formulas > lim.formula_cells:
            what = f"an array formula on sheet {sheet!r} fills {cells:,} cells; " * (cells > 1)
            raise HostileFileError(
                self.name,
                f"{what}more than {lim.formula_cells:,} formula cells (raise the limit with "
                "--max-formulas)",
            )
        if len(text) > lim.formula_length:
            raise HostileFileError(
                self.name,
                f"a formula on sheet {sheet!r} is {len(text):,} characters long "
                f"(limit {lim.formula_length:,})",
            )
        depth = formula_nesting(text) if text.count("(") > lim.nesting else 0
        if depth > lim.nesting:
            raise HostileFileError(
                self.name,
                f"a formula on sheet {sheet!r} nests {depth} function calls "
                f"(limit {lim.nesting}, as in Excel)",
            )

    def check_text(self, text: str, sheet: str | None) -> str:
        """``text`` of a cell of ``sheet`` (None: of the shared strings), refused past the
        text-length limit (Excel's own)."""
        if len(text) > self.limits.text_length:
            where = f"a cell of sheet {sheet!r}" if sheet is not None else "a shared string"
            raise HostileFileError(
                self.name,
                f"{where} holds {len(text):,} characters of text "
                f"(limit {self.limits.text_length:,}, as in Excel)",
            )
        return text

    def count_ranges(self, what: str, refs: str, sheet: SheetData) -> None:
        """The ranges one merged cell, hyperlink, data validation or conditional format
        lists: each counts towards ``ranges``; merged and hyperlinked cells also by the
        cells they cover (other readers make an object for every one)."""
        lim = self.limits
        pieces = refs.split()
        n = self.counts[what] = self.counts.get(what, 0) + len(pieces)
        self.ranges += len(pieces)
        if n > lim.ranges:
            raise HostileFileError(
                self.name, f"more than {lim.ranges:,} {what} ranges (on sheet {sheet.name!r})"
            )
        if what not in ("mergeCell", "hyperlink"):
            for piece in pieces:  # only checked
                if _RANGE.fullmatch(piece) is None:
                    _corner(piece, what, self.name)  # raises, saying which
            return
        for piece in pieces:
            cells, last_row, last_col = _corner(piece, what, self.name)
            area = self.areas[what] = self.areas.get(what, 0) + cells
            if area > lim.cells:
                raise HostileFileError(
                    self.name,
                    f"{what} ranges on sheet {sheet.name!r} and before cover {area:,} cells "
                    f"(limit {lim.cells:,})",
                )
            _grow(sheet, last_row, last_col)

    def read_strings(self, part: str | None) -> None:
        if part is None:
            return
        state: dict[str, list[str] | None] = {"si": None, "buf": None}

        def start(tag: str, attrs: dict[str, str]) -> None:
            if tag == "si":
                state["si"] = []
            elif tag == "t" and state["si"] is not None:
                state["buf"] = []
            elif tag == "rPh":  # phonetic guide text is not part of the string
                state["si"], state["skip"] = None, state["si"]

        def end(tag: str) -> None:
            si, buf = state["si"], state["buf"]
            if tag == "t" and si is not None and buf is not None:
                si.append("".join(buf))
                state["buf"] = None
            elif tag == "rPh":
                state["si"] = state.pop("skip", None)
            elif tag == "si":
                self.strings.append(self.check_text("".join(si or ()), None))
                state["si"] = None
                if len(self.strings) > self.limits.shared_strings:
                    raise HostileFileError(
                        self.name, f"more than {self.limits.shared_strings:,} shared strings"
                    )

        def text(data: str) -> None:
            buf = state["buf"]
            if buf is not None:
                buf.append(data)

        self.pkg.scan(part, start, end, text)


def _read_tables(reading: _Reading, sheet: SheetData) -> list[Table]:
    pkg = reading.pkg
    out: list[Table] = []
    for rtype, target, mode in pkg.relationships(sheet.part).values():
        if rtype != "/table" or mode == "External" or target not in pkg.names:
            continue
        root = pkg.xml(target)
        span = _span(root.get("ref", ""))
        name = root.get("displayName") or root.get("name") or ""
        if span is None or not name:
            continue
        columns = tuple(
            el.get("name", "") for el in root.iter() if local(el.tag) == "tableColumn"
        )
        header = int(root.get("headerRowCount", "1") or 1)
        totals = int(root.get("totalsRowCount", "0") or 0)
        out.append(Table(name, sheet.name, *span, header, totals, columns))
    return out


def read_workbook(data: bytes, name: str, limits: Limits = DEFAULT_LIMITS) -> WorkbookData:
    """Check ``data`` (an .xlsx) against ``limits`` and read what the evaluator needs.

    Raises HostileFileError past a limit and WorkbookError for a damaged file.
    """
    with collector_paused():  # many objects, no cycles: see udfs.xlsx.collector
        return _read(data, name, limits)


def _read(data: bytes, name: str, limits: Limits) -> WorkbookData:
    report = check_package(data, name, limits)
    pkg = report.package
    reading = _Reading(pkg, limits)
    reading.read_strings(report.shared_strings_part)
    sheets: list[SheetData] = []
    tables: list[Table] = []
    for index, entry in enumerate(pkg.sheets):
        sheet = SheetData(entry.name, index, entry.part, entry.state, entry.kind)
        if entry.kind == "worksheet":
            _SheetReader(reading, sheet).read()
            tables += _read_tables(reading, sheet)
        sheets.append(sheet)
    report.cells, report.formula_cells, report.rows = reading.cells, reading.formulas, reading.rows
    report.shared_strings = len(reading.strings)
    return WorkbookData(
        name, pkg, report, sheets, list(pkg.defined_names), tables, pkg.iterate, reading.ranges
    )


def check_fallback(book: WorkbookData, limits: Limits = DEFAULT_LIMITS, why: str = "") -> None:
    """Refuse ``book`` for the formulas package's own model when it is too large for it.

    That model reads the whole file with openpyxl, makes an object for every cell
    position from A1 to each sheet's last cell and for every merged or hyperlinked cell,
    and runs every formula about a hundred times slower than the plan; the FALLBACK
    limits of :mod:`udfs.xlsx.guard` keep it within the promised time and memory.
    ``why`` says why the plan declined (shown, cut short, in the reason).
    """
    widest = max(book.sheets, key=lambda s: s.grid_rows * s.grid_cols)
    found = [
        (
            sum(s.grid_rows * s.grid_cols for s in book.sheets),
            limits.fallback_cells,
            "cell positions from A1 to the last cell",
            f"; sheet {widest.name!r} reaches row {widest.grid_rows:,}, "
            f"column {widest.grid_cols:,}",
        ),
        (book.report.formula_cells, limits.fallback_formulas, "formula cells", ""),
        (book.ranges, limits.fallback_ranges, "merged, hyperlinked, validated and "
         "conditionally formatted ranges", ""),
        (book.report.xml_bytes, limits.fallback_xml_bytes, "bytes of XML", ""),
    ]
    for count, limit, what, detail in found:
        if count > limit:
            because = f" (the plan declined it: {' '.join(why.split())[:160]})" if why else ""
            raise HostileFileError(
                book.name,
                f"it needs the formulas package's own model{because}, which takes at most "
                f"{limit:,} {what}; this workbook has {count:,}{detail}",
            )
