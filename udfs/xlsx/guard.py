"""Inspect an .xlsx before anything unpacks it; refuse hostile or oversized files.

Two passes, both bounded:

1. **Zip directory only** (nothing decompressed): file size, number of parts,
   declared size of each part and of all parts, compression ratio of large
   parts, encrypted or duplicated entries. Python's zipfile never inflates a
   part past its declared size, so these checks bound all later reading.
   Only stored and deflated parts are accepted (what spreadsheet programs write).
2. **Streaming XML pass** with defusedxml (a DTD or entity declaration in any
   part is refused): rows, cells, formula cells and shared strings are counted
   and the pass stops as soon as a limit is passed; every formula is checked
   for length and nesting depth. External links and macros are reported, never
   followed or run.

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
MAX_FORMULA_CELLS          10,000       the engine needs ~100 kB and ~3 ms per
                                        formula cell (about 1 GB, 30-60 s at the limit)
MAX_ROWS                   250,000      ``<row>`` elements (millions of empty rows)
MAX_SHARED_STRINGS         500,000      shared-strings table entries
MAX_DEFINED_NAMES          10,000       defined names
MAX_FORMULA_LENGTH         8,192        characters, Excel's own limit
MAX_NESTING                64           nested function calls, Excel's own limit
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
    "MAX_RATIO",
    "MAX_ROWS",
    "MAX_SHARED_STRINGS",
    "MAX_TOTAL_BYTES",
    "Limits",
    "PackageReport",
    "formula_nesting",
    "inspect_package",
]

MiB = 1024 * 1024
MAX_INPUT_BYTES = 32 * MiB
MAX_PARTS = 1_000
MAX_PART_BYTES = 64 * MiB
MAX_TOTAL_BYTES = 256 * MiB
MAX_RATIO = 100.0
RATIO_MIN_BYTES = 1 * MiB  # small parts may compress better than 100:1 harmlessly
MAX_CELLS = 1_000_000
MAX_FORMULA_CELLS = 10_000
MAX_ROWS = 250_000
MAX_SHARED_STRINGS = 500_000
MAX_DEFINED_NAMES = 10_000
MAX_FORMULA_LENGTH = 8_192
MAX_NESTING = 64
_PROLOG_PARTS = (".xml", ".rels", ".vml")


@dataclass(frozen=True)
class Limits:
    """The limits :func:`inspect_package` applies (defaults: the module constants)."""

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


DEFAULT_LIMITS = Limits()


@dataclass
class PackageReport:
    """What the inspection found; ``notes`` are one-line messages for the user."""

    package: Package
    cells: int = 0
    formula_cells: int = 0
    rows: int = 0
    shared_strings: int = 0
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


def _scan_sheet(pkg: Package, part: str, sheet: str, limits: Limits, rep: PackageReport) -> None:
    name = pkg.name
    for elem in pkg.iter_xml(part):
        tag = local(elem.tag)
        if tag == "c":
            rep.cells += 1
            if rep.cells > limits.cells:
                raise HostileFileError(name, f"more than {limits.cells:,} cells")
        elif tag == "f":
            rep.formula_cells += 1
            if rep.formula_cells > limits.formula_cells:
                raise HostileFileError(name, f"more than {limits.formula_cells:,} formula cells")
            text = elem.text or ""
            if len(text) > limits.formula_length:
                raise HostileFileError(
                    name,
                    f"a formula on sheet {sheet!r} is {len(text):,} characters long "
                    f"(limit {limits.formula_length:,})",
                )
            depth = formula_nesting(text)
            if depth > limits.nesting:
                raise HostileFileError(
                    name,
                    f"a formula on sheet {sheet!r} nests {depth} function calls "
                    f"(limit {limits.nesting}, as in Excel)",
                )
        elif tag == "row":
            rep.rows += 1
            if rep.rows > limits.rows:
                raise HostileFileError(name, f"more than {limits.rows:,} rows")
            elem.clear()


def _scan_shared_strings(pkg: Package, limits: Limits, rep: PackageReport) -> None:
    part = next(
        (
            target
            for rtype, target, _ in pkg.relationships(pkg.workbook_part).values()
            if rtype == "/sharedStrings"
        ),
        None,
    )
    if part is None or part not in pkg.names:
        return
    for elem in pkg.iter_xml(part):
        if local(elem.tag) == "si":
            rep.shared_strings += 1
            if rep.shared_strings > limits.shared_strings:
                raise HostileFileError(
                    pkg.name, f"more than {limits.shared_strings:,} shared strings"
                )
            elem.clear()


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


def inspect_package(data: bytes, name: str, limits: Limits = DEFAULT_LIMITS) -> PackageReport:
    """Check ``data`` (the bytes of an .xlsx) against ``limits``; report what it holds.

    Raises HostileFileError (a limit passed, a DTD, encryption) or WorkbookError
    (not an .xlsx, damaged parts).
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
    for sheet in pkg.sheets:
        if sheet.kind == "worksheet" and sheet.part in pkg.names:
            _scan_sheet(pkg, sheet.part, sheet.name, limits, rep)
        elif sheet.kind == "worksheet":
            raise WorkbookError(f"{name}: damaged: sheet {sheet.name!r} points at a missing part")
    _scan_shared_strings(pkg, limits, rep)
    _report_active_content(pkg, rep)
    return rep
