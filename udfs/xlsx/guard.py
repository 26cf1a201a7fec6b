"""Inspect an .xlsx before anything unpacks it; refuse hostile or oversized files.

Two passes, both bounded:

1. **Zip directory only** (nothing decompressed): file size, number of parts,
   declared size of each part and of all parts, compression ratio of large
   parts, encrypted or duplicated entries. Python's zipfile never inflates a
   part past its declared size, so these checks bound all later reading.
   Only stored and deflated parts are accepted (what spreadsheet programs write).
2. **Structure** with defusedxml (a DTD or entity declaration in any part is
   refused; every XML part must be UTF-8, or UTF-16 with its byte-order mark,
   as XML and the Open Packaging Conventions require): the workbook part, its
   sheets and names; the part maps of the package (relationships and
   [Content_Types].xml) must agree, so every reader reads the parts checked
   here; the entries of the styles part
   (streamed, never built into a tree; ``xl/styles.xml`` too, which openpyxl
   reads whatever the relationships say). External links and macros are
   reported, never followed or run. The sheets' own limits (rows, cells,
   formulas, strings, ranges) are checked by :mod:`udfs.xlsx.reader` in the one
   pass that reads them.

**The promise.** A workbook within these limits is read, evaluated and
written by ``cellwright calc`` within PROMISED_SECONDS (20 s) and
PROMISED_PEAK_MIB (512 MiB of peak resident memory, interpreter and libraries
included) on a 2-core machine; past any of them it is refused with a one-line
reason before the work that grows with it starts (tests/xlsx/test_hostile.py
runs both kinds of file through the command and measures them; time as the
command's processor time, which other work on a shared machine does not stretch).
``--max-formulas`` raises the formula limit (and, in proportion, the cells,
rows, formula text and cell reads: :func:`limits_for`), and with it the promise.

The limits (module constants, bundled in :class:`Limits`):

=========================  ===========  ==========================================
limit                      value        what is counted
=========================  ===========  ==========================================
MAX_INPUT_BYTES            32 MiB       size of the .xlsx file itself
MAX_PARTS                  1,000        zip entries (a workbook has tens)
MAX_PART_BYTES             32 MiB       one part, uncompressed
MAX_TOTAL_BYTES            64 MiB       all parts, uncompressed
MAX_RATIO                  100          uncompressed/compressed, parts over 1 MiB
MAX_CELLS                  400,000      ``<c>`` elements in all sheets
MAX_FORMULA_CELLS          200,000      formula cells, every cell an array formula
                                        fills included (``--max-formulas``)
MAX_ROWS                   400,000      ``<row>`` elements (millions of empty rows)
MAX_SHARED_STRINGS         500,000      shared-strings table entries
MAX_TEXT_LENGTH            32,767       characters of one text cell (Excel's limit)
MAX_DEFINED_NAMES          10,000       defined names
MAX_FORMULA_LENGTH         8,192        characters, Excel's own limit
MAX_NESTING                64           nested function calls, Excel's own limit
MAX_RANGES                 100,000      ranges listed by merged cells, hyperlinks,
                                        data validations and conditional formats
                                        (each kind; a list of ranges counts each)
MAX_FORMULA_TEXT           1,000,000    characters of the distinct formulas, as
                                        written (relative to their cells) and as
                                        shapes to parse (references and constants
                                        taken out; about 7 us a character)
MAX_CELL_READS             8,000,000    cells read by ranges, once per evaluation
                                        of each formula reading them (a range that
                                        grows down a column reads n^2/2 cells)
MAX_STYLES                 65,000       entries of each list of the styles part:
                                        cell formats, fonts, fills, borders, number
                                        formats ... (Excel: 64,000 cell formats)
=========================  ===========  ==========================================

Merged ranges may cover at most MAX_CELLS cells in all, and hyperlinks as many
(other readers make a cell object for each); array formulas are bounded by
the formula limit, every cell they fill counted.

The engine checks MAX_FORMULA_TEXT and MAX_CELL_READS after planning, before
it parses or computes anything (:mod:`udfs.engine.plan`,
:mod:`udfs.engine.evaluator`): they bound the work that the counts above do not
(long distinct formulas, ranges that grow with the row).

**The formulas package's own model.** A workbook the plan declines (a
circular reference under iterative calculation, a formula the plan does not
run) is run by the plain ``formulas.ExcelModel``, which reads the whole file
with openpyxl and works through every cell position from A1 to the last
cell of each sheet. It is about a hundred times slower, so it takes a workbook
only within the narrower FALLBACK limits (:func:`udfs.xlsx.reader.check_fallback`):

=========================  ===========  ==========================================
MAX_FALLBACK_CELLS         10,000       cell positions from A1 to the last cell
                                        (merged and hyperlinked ranges included),
                                        all sheets
MAX_FALLBACK_FORMULAS      1,000        formula cells (array formula cells included)
MAX_FALLBACK_RANGES        1,000        merged ranges, hyperlinks, data validation
                                        and conditional format ranges, in all
MAX_FALLBACK_XML_BYTES     8 MiB        XML parts, uncompressed, in all
=========================  ===========  ==========================================

A hostile file is refused after reading at most MAX_TOTAL_BYTES of XML.

>>> formula_nesting("IF(A1>0,ROUND(SQRT(A1),2),0)")
3
"""

from __future__ import annotations

import posixpath
import zipfile
from dataclasses import dataclass, field

from .file_errors import HostileFileError, WorkbookError
from .package import Package, known_encoding

__all__ = [
    "DEFAULT_LIMITS",
    "MAX_CELLS",
    "MAX_CELL_READS",
    "MAX_DEFINED_NAMES",
    "MAX_FALLBACK_CELLS",
    "MAX_FALLBACK_FORMULAS",
    "MAX_FALLBACK_RANGES",
    "MAX_FALLBACK_XML_BYTES",
    "MAX_FORMULA_CELLS",
    "MAX_FORMULA_LENGTH",
    "MAX_FORMULA_TEXT",
    "MAX_INPUT_BYTES",
    "MAX_NESTING",
    "MAX_PARTS",
    "MAX_PART_BYTES",
    "MAX_RANGES",
    "MAX_RATIO",
    "MAX_ROWS",
    "MAX_SHARED_STRINGS",
    "MAX_STYLES",
    "MAX_TEXT_LENGTH",
    "MAX_TOTAL_BYTES",
    "PROMISED_PEAK_MIB",
    "PROMISED_SECONDS",
    "Limits",
    "PackageReport",
    "check_package",
    "formula_nesting",
    "limits_for",
]

MiB = 1024 * 1024
#: Processor time and peak resident memory of ``cellwright calc`` on any workbook within
#: the limits. The worst file measured (every limit at once, 200,000 formula cells)
#: takes about 10 s and peaks at about 485 MiB.
PROMISED_SECONDS = 20.0
PROMISED_PEAK_MIB = 512
MAX_INPUT_BYTES = 32 * MiB
MAX_PARTS = 1_000
MAX_PART_BYTES = 32 * MiB
MAX_TOTAL_BYTES = 64 * MiB
MAX_RATIO = 100.0
RATIO_MIN_BYTES = 1 * MiB  # small parts may compress better than 100:1 harmlessly
MAX_CELLS = 400_000
MAX_FORMULA_CELLS = 200_000
#: characters of the distinct formula shapes the engine parses (numbers, strings and
#: references left out): parsing costs about 7 us a character
MAX_FORMULA_TEXT = 1_000_000
#: cells read by ranges, counted once per evaluation of each formula that reads them
#: (a range growing down a column, SUM(A$1:A2), SUM(A$1:A3) ..., reads n^2/2 cells)
MAX_CELL_READS = 8_000_000
MAX_ROWS = 400_000
MAX_SHARED_STRINGS = 500_000
MAX_TEXT_LENGTH = 32_767
MAX_DEFINED_NAMES = 10_000
MAX_FORMULA_LENGTH = 8_192
MAX_NESTING = 64
MAX_RANGES = 100_000
MAX_STYLES = 65_000
MAX_FALLBACK_CELLS = 10_000
MAX_FALLBACK_FORMULAS = 1_000
MAX_FALLBACK_RANGES = 1_000
MAX_FALLBACK_XML_BYTES = 8 * MiB
_XML_PARTS = (".xml", ".rels")
_PROLOG_PARTS = (*_XML_PARTS, ".vml")
_STYLES_PART = "xl/styles.xml"  # where openpyxl reads the styles, whatever the relationships say


@dataclass(frozen=True)
class Limits:
    """The limits the checks and the reader apply (defaults: the module constants)."""

    input_bytes: int = MAX_INPUT_BYTES
    parts: int = MAX_PARTS
    part_bytes: int = MAX_PART_BYTES
    total_bytes: int = MAX_TOTAL_BYTES
    ratio: float = MAX_RATIO
    ratio_min_bytes: int = RATIO_MIN_BYTES
    cells: int = MAX_CELLS
    formula_cells: int = MAX_FORMULA_CELLS
    rows: int = MAX_ROWS
    shared_strings: int = MAX_SHARED_STRINGS
    text_length: int = MAX_TEXT_LENGTH
    defined_names: int = MAX_DEFINED_NAMES
    formula_length: int = MAX_FORMULA_LENGTH
    nesting: int = MAX_NESTING
    ranges: int = MAX_RANGES
    styles: int = MAX_STYLES
    fallback_cells: int = MAX_FALLBACK_CELLS
    fallback_formulas: int = MAX_FALLBACK_FORMULAS
    fallback_ranges: int = MAX_FALLBACK_RANGES
    fallback_xml_bytes: int = MAX_FALLBACK_XML_BYTES
    formula_text: int = MAX_FORMULA_TEXT
    cell_reads: int = MAX_CELL_READS


DEFAULT_LIMITS = Limits()


def limits_for(formula_cells: int) -> Limits:
    """The limits with room for ``formula_cells`` formula cells (``--max-formulas``):
    a larger limit raises, in proportion, the cells, rows, formula text and cell reads
    that so many formulas need (and with them the time and memory promised); a
    smaller one lowers only the formula limit.

    >>> limits_for(400_000).cells, limits_for(1_000).cells == MAX_CELLS
    (800000, True)
    """
    scale = max(1.0, formula_cells / MAX_FORMULA_CELLS)
    return Limits(
        formula_cells=formula_cells,
        cells=int(MAX_CELLS * scale),
        rows=int(MAX_ROWS * scale),
        formula_text=int(MAX_FORMULA_TEXT * scale),
        cell_reads=int(MAX_CELL_READS * scale),
    )


@dataclass
class PackageReport:
    """What the inspection found; ``notes`` are one-line messages for the user."""

    package: Package
    cells: int = 0
    formula_cells: int = 0
    rows: int = 0
    shared_strings: int = 0
    shared_strings_part: str | None = None
    xml_bytes: int = 0  # all XML parts, uncompressed
    macros: list[str] = field(default_factory=list)
    external_links: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)


def _size(n: float) -> str:
    """``_size(3 * MiB) == "3 MiB"``, ``_size(2.5 * MiB) == "2.5 MiB"``, small sizes in bytes."""
    if n < MiB:
        return f"{int(n):,} bytes"
    return f"{n / MiB:.1f}".removesuffix(".0") + " MiB"


def formula_nesting(text: str) -> int:
    """Deepest nesting of function calls in a formula (strings and quoted names skipped)."""
    opened = text.count("(")
    if opened <= 1:
        return opened
    depth = best = 0
    stack: list[bool] = []
    quote = ""
    prev = ""
    for ch in text:
        if quote:
            if ch == quote:
                quote = ""
            prev = ch
            continue
        if ch in "\"'":
            quote = ch
        elif ch == "(":
            is_call = prev.isalnum() or prev in "_."
            stack.append(is_call)
            if is_call:
                depth += 1
                best = max(best, depth)
        elif ch == ")" and stack and stack.pop():
            depth -= 1
        if not ch.isspace():
            prev = ch
    return best


def _check_directory(pkg: Package, limits: Limits) -> None:
    name = pkg.name
    if len(pkg.infos) > limits.parts:
        raise HostileFileError(name, f"{len(pkg.infos)} zip parts (limit {limits.parts})")
    if len(pkg.names) != len(pkg.infos):
        raise HostileFileError(name, "the zip holds two parts with the same name")
    total = 0
    for info in pkg.infos:
        if info.flag_bits & 0x1:
            raise HostileFileError(name, f"part {info.filename} is encrypted")
        if info.compress_type not in (zipfile.ZIP_STORED, zipfile.ZIP_DEFLATED):
            raise HostileFileError(
                name, f"part {info.filename} uses a compression method spreadsheets do not use"
            )
        if info.file_size > limits.part_bytes:
            raise HostileFileError(
                name,
                f"part {info.filename} unpacks to {_size(info.file_size)} "
                f"(limit {_size(limits.part_bytes)} per part)",
            )
        total += info.file_size
        if info.file_size > limits.ratio_min_bytes:
            ratio = info.file_size / max(info.compress_size, 1)
            if ratio > limits.ratio:
                raise HostileFileError(
                    name,
                    f"part {info.filename} compresses {ratio:.0f}:1 "
                    f"(limit {limits.ratio:.0f}:1; a zip bomb?)",
                )
    if total > limits.total_bytes:
        raise HostileFileError(
            name,
            f"parts unpack to {_size(total)} in all (limit {_size(limits.total_bytes)})",
        )


def _check_prologs(pkg: Package) -> None:
    """Every XML part: refuse a DTD (entity expansion, external entities) and any encoding
    but UTF-8 and UTF-16 (legacy VML drawings, often not well-formed, are checked for a DTD
    only)."""
    for info in pkg.infos:
        low = info.filename.lower()
        if not low.endswith(_PROLOG_PARTS):
            continue
        try:
            declared = pkg.prolog(info.filename)
        except HostileFileError:
            raise
        except WorkbookError:  # malformed non-essential parts (VML) are not our concern
            continue
        if low.endswith(_XML_PARTS) and known_encoding(declared) is None:
            what = declared if "without" in declared else f"the encoding {declared[:40]!r}"
            raise WorkbookError(
                f"{pkg.name}: {info.filename} is written in {what}; the parts of a workbook "
                "must be UTF-8 or UTF-16 with its byte-order mark (XML, Open Packaging "
                "Conventions): open it in a spreadsheet program and save it again"
            )


def _check_maps(pkg: Package, rep: PackageReport) -> None:
    """The workbook and shared-strings parts named by the relationships must be the ones
    [Content_Types].xml declares: readers that follow either map then read the same parts."""
    name = pkg.name
    declared = pkg.parts_of_type(".main+xml")
    if declared != [pkg.workbook_part]:
        shown = ", ".join(declared) or "none"
        raise HostileFileError(
            name,
            f"the package's maps disagree: its relationships name {pkg.workbook_part} as the "
            f"workbook, [Content_Types].xml names {shown}",
        )
    strings = [
        target
        for rtype, target, mode in pkg.relationships(pkg.workbook_part).values()
        if rtype == "/sharedStrings" and mode != "External"
    ]
    typed = pkg.parts_of_type("sharedstrings+xml")
    if sorted(strings) != typed or len(typed) > 1:
        raise HostileFileError(
            name,
            "the package's maps disagree on the shared strings: relationships name "
            f"{', '.join(strings) or 'none'}, [Content_Types].xml {', '.join(typed) or 'none'}",
        )
    for part in strings:
        if part not in pkg.names:
            raise WorkbookError(f"{name}: damaged: shared strings part {part} is missing")
    rep.shared_strings_part = strings[0] if strings else None
    listed = {s.part for s in pkg.sheets}
    for part in pkg.parts_of_type("worksheet+xml"):
        if part not in listed:
            raise HostileFileError(
                name, f"the package's maps disagree: {part} is a sheet the workbook does not list"
            )


class _StyleCounter:
    """Counts the entries of each list of a styles part (styleSheet > list > entry)."""

    def __init__(self, pkg: Package, part: str, limit: int):
        self.pkg, self.part, self.limit = pkg, part, limit
        self.path: list[str] = []
        self.counts: dict[str, int] = {}

    def start(self, tag: str, _attrs: dict[str, str]) -> None:
        self.path.append(tag)
        if len(self.path) == 3:
            kind = self.path[1]
            n = self.counts[kind] = self.counts.get(kind, 0) + 1
            if n > self.limit:
                raise HostileFileError(
                    self.pkg.name, f"more than {self.limit:,} entries in {kind} of {self.part}"
                )

    def end(self, _tag: str) -> None:
        self.path.pop()

    def run(self) -> None:
        self.pkg.scan(self.part, self.start, self.end, lambda _text: None)


def _check_styles(pkg: Package, limits: Limits) -> None:
    """The entries of each list of the styles part (cell formats, fonts, fills, ...), counted
    while streaming it: the part the relationships name and the one openpyxl reads."""
    parts = {t for rt, t, _ in pkg.relationships(pkg.workbook_part).values() if rt == "/styles"}
    parts.add(_STYLES_PART)
    for part in sorted(p for p in parts if p in pkg.names):
        _StyleCounter(pkg, part, limits.styles).run()


def _report_active_content(pkg: Package, rep: PackageReport) -> None:
    for n in sorted(pkg.names):
        low = n.lower()
        base = posixpath.basename(low)
        vba = base.startswith("vbaproject") and base.endswith(".bin")
        active = low.startswith(("xl/macrosheets/", "xl/activex/")) and low.endswith(".xml")
        if vba or active:
            rep.macros.append(n)
    if rep.macros:
        rep.notes.append(
            f"macros/active content present ({', '.join(rep.macros)}): ignored, never run"
        )
    for n in sorted(pkg.names):
        if n.startswith("xl/externalLinks/") and n.endswith(".xml"):
            targets = [t for _, t, mode in pkg.relationships(n).values() if mode == "External"]
            rep.external_links.extend(targets or [n])
    if rep.external_links:
        shown = ", ".join(repr(t) for t in rep.external_links[:5])
        rep.notes.append(
            f"external links not followed ({shown}); formulas that use them give #REF!"
        )


def check_package(data: bytes, name: str, limits: Limits = DEFAULT_LIMITS) -> PackageReport:
    """Check ``data`` (the bytes of an .xlsx) before its sheets are read: size, zip
    directory, DTDs, structure, consistent part maps, styles; report macros and links.

    The sheets themselves are checked while :func:`udfs.xlsx.reader.read_workbook`
    reads them. Raises HostileFileError or WorkbookError.
    """
    if len(data) > limits.input_bytes:
        raise HostileFileError(
            name, f"file is {_size(len(data))} (limit {_size(limits.input_bytes)})"
        )
    pkg = Package(data, name)
    _check_directory(pkg, limits)
    _check_prologs(pkg)
    pkg.read_structure(limits.defined_names)
    rep = PackageReport(pkg)
    rep.xml_bytes = sum(
        i.file_size for i in pkg.infos if i.filename.lower().endswith(_PROLOG_PARTS)
    )
    for sheet in pkg.worksheets():
        if sheet.part not in pkg.names:
            raise WorkbookError(f"{name}: damaged: sheet {sheet.name!r} points at a missing part")
    _check_maps(pkg, rep)
    _check_styles(pkg, limits)
    _report_active_content(pkg, rep)
    if pkg.invalid_names:
        shown = ", ".join(repr(n[:40]) for n in pkg.invalid_names[:3])
        more = f" and {len(pkg.invalid_names) - 3:,} more" if len(pkg.invalid_names) > 3 else ""
        rep.notes.append(f"defined names that are not valid names ignored: {shown}{more}")
    return rep
