"""Inspect an .xlsx before anything unpacks it; refuse hostile or oversized files.

Two passes, both bounded:

1. **Zip directory only** (nothing decompressed): file size, number of parts,
   declared size of each part and of all parts, compression ratio of large
   parts, encrypted or duplicated entries. Python's zipfile never inflates a
   part past its declared size, so these checks bound all later reading.
   Only stored and deflated parts are accepted (what spreadsheet programs write).
2. **Structure** with defusedxml (a DTD or entity declaration in any part is
   refused): the workbook part, its sheets and names; the part maps of the
   package (relationships and [Content_Types].xml) must agree, so every reader
   reads the parts checked here; the number of cell formats. External links and
   macros are reported, never followed or run. The sheets' own limits (rows,
   cells, formulas, strings, ranges) are checked by :mod:`udfs.xlsx.reader` in
   the one pass that reads them.

The limits (module constants, bundled in :class:`Limits`):

=========================  ===========  ==========================================
limit                      value        why
=========================  ===========  ==========================================
MAX_INPUT_BYTES            32 MiB       size of the .xlsx file itself
MAX_PARTS                  1,000        zip entries (a workbook has tens)
MAX_PART_BYTES             64 MiB       one part, uncompressed
MAX_TOTAL_BYTES            256 MiB      all parts, uncompressed
MAX_RATIO                  100          uncompressed/compressed, parts over 1 MiB
MAX_CELLS                  1,000,000    ``<c>`` elements in all sheets
MAX_FORMULA_CELLS          200,000      formula cells (``--max-formulas`` raises it)
MAX_ROWS                   250,000      ``<row>`` elements (millions of empty rows)
MAX_SHARED_STRINGS         500,000      shared-strings table entries
MAX_DEFINED_NAMES          10,000       defined names
MAX_FORMULA_LENGTH         8,192        characters, Excel's own limit
MAX_NESTING                64           nested function calls, Excel's own limit
MAX_RANGES                 100,000      merged ranges, hyperlinks, data validations,
                                        conditional formats (each kind)
MAX_STYLES                 65,000       cell formats in the styles part (Excel: 64,000)
=========================  ===========  ==========================================

A hostile file is refused after reading at most MAX_TOTAL_BYTES of XML; on a
2-core machine the tests see every refusal in well under the 10 s they allow.

>>> formula_nesting("IF(A1>0,ROUND(SQRT(A1),2),0)")
3
"""

from __future__ import annotations

import posixpath
import zipfile
from dataclasses import dataclass, field

from .file_errors import HostileFileError, WorkbookError
from .package import Package, local

__all__ = [
    "DEFAULT_LIMITS",
    "MAX_CELLS",
    "MAX_DEFINED_NAMES",
    "MAX_FORMULA_CELLS",
    "MAX_FORMULA_LENGTH",
    "MAX_INPUT_BYTES",
    "MAX_NESTING",
    "MAX_PARTS",
    "MAX_PART_BYTES",
    "MAX_RANGES",
    "MAX_RATIO",
    "MAX_ROWS",
    "MAX_SHARED_STRINGS",
    "MAX_STYLES",
    "MAX_TOTAL_BYTES",
    "Limits",
    "PackageReport",
    "check_package",
    "formula_nesting",
]

MiB = 1024 * 1024
MAX_INPUT_BYTES = 32 * MiB
MAX_PARTS = 1_000
MAX_PART_BYTES = 64 * MiB
MAX_TOTAL_BYTES = 256 * MiB
MAX_RATIO = 100.0
RATIO_MIN_BYTES = 1 * MiB  # small parts may compress better than 100:1 harmlessly
MAX_CELLS = 1_000_000
MAX_FORMULA_CELLS = 200_000
MAX_ROWS = 250_000
MAX_SHARED_STRINGS = 500_000
MAX_DEFINED_NAMES = 10_000
MAX_FORMULA_LENGTH = 8_192
MAX_NESTING = 64
MAX_RANGES = 100_000
MAX_STYLES = 65_000
_PROLOG_PARTS = (".xml", ".rels", ".vml")


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
    defined_names: int = MAX_DEFINED_NAMES
    formula_length: int = MAX_FORMULA_LENGTH
    nesting: int = MAX_NESTING
    ranges: int = MAX_RANGES
    styles: int = MAX_STYLES


DEFAULT_LIMITS = Limits()


@dataclass
class PackageReport:
    """What the inspection found; ``notes`` are one-line messages for the user."""

    package: Package
    cells: int = 0
    formula_cells: int = 0
    rows: int = 0
    shared_strings: int = 0
    shared_strings_part: str | None = None
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
    """Every XML part: refuse a DTD (entity expansion, external entities)."""
    for info in pkg.infos:
        if not info.filename.lower().endswith(_PROLOG_PARTS):
            continue
        try:
            for _elem in pkg.iter_xml(info.filename, events=("start",)):
                break  # a DTD can only come before the first element
        except HostileFileError:
            raise
        except Exception:  # malformed non-essential parts (VML) are not our concern
            continue


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


def _check_styles(pkg: Package, limits: Limits) -> None:
    for rtype, target, _mode in pkg.relationships(pkg.workbook_part).values():
        if rtype != "/styles" or target not in pkg.names:
            continue
        count = 0
        for elem in pkg.iter_xml(target):
            if local(elem.tag) == "xf":
                count += 1
                if count > limits.styles:
                    raise HostileFileError(
                        pkg.name, f"more than {limits.styles:,} cell formats in {target}"
                    )


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
    for sheet in pkg.worksheets():
        if sheet.part not in pkg.names:
            raise WorkbookError(f"{name}: damaged: sheet {sheet.name!r} points at a missing part")
    _check_maps(pkg, rep)
    _check_styles(pkg, limits)
    _report_active_content(pkg, rep)
    return rep
