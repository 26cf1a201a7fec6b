"""Hostile workbooks: each is built here, refused (or reported) with a clear message,
within bounded time (10 s, a safety bound, not a speed target) and memory.
"""

from __future__ import annotations

import io
import os
import random
import time
import tracemalloc
import warnings
import zipfile
from collections.abc import Callable, Iterable, Mapping
from pathlib import Path
from typing import Any, NamedTuple

import pytest

from udfs.engine.model import load_model
from udfs.sheet.error_values import SheetError
from udfs.xlsx import guard
from udfs.xlsx.file_errors import HostileFileError, WorkbookError
from udfs.xlsx.guard import MAX_NESTING, Limits, PackageReport, formula_nesting
from udfs.xlsx.reader import read_workbook


def inspect_package(data: bytes, name: str, limits: Limits | None = None) -> PackageReport:
    """Every check of a workbook: the package's, then the sheets' while they are read."""
    return read_workbook(data, name, limits or Limits()).report


MAIN = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
REL = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
PKG_REL = "http://schemas.openxmlformats.org/package/2006/relationships"
BOUND_S = 10.0

CONTENT_TYPES = (
    '<?xml version="1.0" encoding="UTF-8"?>'
    '<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">'
    '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.'
    'relationships+xml"/><Default Extension="xml" ContentType="application/xml"/>'
    '<Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-'
    'officedocument.spreadsheetml.sheet.main+xml"/>'
    '<Override PartName="/xl/worksheets/sheet1.xml" ContentType="application/vnd.'
    'openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>'
    '<Override PartName="/xl/sharedStrings.xml" ContentType="application/vnd.openxmlformats-'
    'officedocument.spreadsheetml.sharedStrings+xml"/></Types>'
)
ROOT_RELS = (
    f'<Relationships xmlns="{PKG_REL}"><Relationship Id="rId1" Type="{REL}/officeDocument" '
    'Target="xl/workbook.xml"/></Relationships>'
)
WB_RELS = (
    f'<Relationships xmlns="{PKG_REL}">'
    f'<Relationship Id="rId1" Type="{REL}/worksheet" Target="worksheets/sheet1.xml"/>'
    f'<Relationship Id="rId2" Type="{REL}/sharedStrings" Target="sharedStrings.xml"/>'
    "</Relationships>"
)


def workbook_xml(extra: str = "") -> str:
    return (
        f'<workbook xmlns="{MAIN}" xmlns:r="{REL}"><sheets>'
        f'<sheet name="S" sheetId="1" r:id="rId1"/></sheets>{extra}</workbook>'
    )


def sheet_xml(rows: str = '<row r="1"><c r="A1"><v>1</v></c></row>') -> str:
    return f'<worksheet xmlns="{MAIN}"><sheetData>{rows}</sheetData></worksheet>'


def package(
    sheet: str | None = None,
    workbook: str | None = None,
    strings: str = f'<sst xmlns="{MAIN}" count="0" uniqueCount="0"/>',
    extra: Mapping[str, bytes | str] | None = None,
    compression: int = zipfile.ZIP_DEFLATED,
) -> bytes:
    """A minimal .xlsx package, with any part replaced or added."""
    parts: dict[str, bytes | str] = {
        "[Content_Types].xml": CONTENT_TYPES,
        "_rels/.rels": ROOT_RELS,
        "xl/workbook.xml": workbook if workbook is not None else workbook_xml(),
        "xl/_rels/workbook.xml.rels": WB_RELS,
        "xl/worksheets/sheet1.xml": sheet if sheet is not None else sheet_xml(),
        "xl/sharedStrings.xml": strings,
    }
    parts.update(extra or {})
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", compression) as zf:
        for name, data in parts.items():
            zf.writestr(name, data)
    return buf.getvalue()


def code(value: object) -> str:
    """The code of an error value (fails if ``value`` is not one)."""
    assert isinstance(value, SheetError), value
    return value.code


def refused(data: bytes, limits: Limits | None = None) -> str:
    """The refusal message; also checks the time bound."""
    t0 = time.perf_counter()
    with pytest.raises((HostileFileError, WorkbookError)) as info:
        if limits is None:
            inspect_package(data, "hostile.xlsx")
        else:
            inspect_package(data, "hostile.xlsx", limits)
    assert time.perf_counter() - t0 < BOUND_S
    message = str(info.value)
    assert "\n" not in message and "Traceback" not in message
    return message


def test_the_minimal_package_itself_is_accepted_and_evaluates():
    data = package(sheet_xml('<row r="1"><c r="A1"><v>2</v></c><c r="B1"><f>A1*3</f></c></row>'))
    rep = inspect_package(data, "ok.xlsx")
    assert (rep.cells, rep.formula_cells, rep.rows) == (2, 1, 1)
    assert load_model(data, "ok.xlsx").evaluate().value("S!B1") == 6


def test_entity_expansion_is_refused():
    lol = (
        '<?xml version="1.0"?><!DOCTYPE lolz [<!ENTITY lol "lol">'
        '<!ENTITY lol2 "&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;">'
        '<!ENTITY lol3 "&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;">]>'
    )
    rows = '<row r="1"><c r="A1" t="inlineStr"><is><t>&lol3;</t></is></c></row>'
    msg = refused(package(sheet=lol + sheet_xml(rows)))
    assert "xl/worksheets/sheet1.xml declares a DTD or entities" in msg


def test_external_entity_is_refused():
    xxe = '<?xml version="1.0"?><!DOCTYPE r [<!ENTITY x SYSTEM "file:///etc/passwd">]>'
    msg = refused(package(workbook=xxe + workbook_xml()))
    assert "xl/workbook.xml declares a DTD or entities" in msg


def test_dtd_in_a_part_nobody_reads_is_refused_too():
    bad = '<?xml version="1.0"?><!DOCTYPE r [<!ENTITY a "b">]><r/>'
    msg = refused(package(extra={"docProps/custom.xml": bad}))
    assert "docProps/custom.xml declares a DTD" in msg


def test_zip_bomb_is_refused_from_the_directory_without_inflating():
    zeros = b"\0" * (80 * 1024 * 1024)  # 80 MiB of zeros deflate to about 80 kB
    data = package(extra={"xl/media/bomb.bin": zeros})
    del zeros
    tracemalloc.start()
    try:
        msg = refused(data)
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert "part xl/media/bomb.bin unpacks to 80 MiB (limit 32 MiB per part)" in msg
    assert peak < 16 * 1024 * 1024  # nothing was inflated


def test_highly_compressed_part_is_refused():
    msg = refused(package(extra={"xl/media/zeros.bin": b"\0" * (4 * 1024 * 1024)}))
    assert "part xl/media/zeros.bin compresses" in msg and "limit 100:1" in msg


def test_total_size_is_limited():
    blobs = {f"xl/media/r{i}.bin": os.urandom(600_000) for i in range(4)}
    msg = refused(package(extra=blobs), Limits(total_bytes=2 * 1024 * 1024))
    assert "parts unpack to 2.3 MiB in all (limit 2 MiB)" in msg


def test_file_itself_too_large():
    msg = refused(
        package(extra={"xl/media/r.bin": os.urandom(300_000)}), Limits(input_bytes=100_000)
    )
    assert "file is 30" in msg and "bytes (limit 100,000 bytes)" in msg


def test_too_many_parts():
    extra = {f"xl/media/p{i}.bin": b"x" for i in range(1001)}
    assert "zip parts (limit 1000)" in refused(package(extra=extra))


def test_unusual_compression_is_refused():
    data = package(compression=zipfile.ZIP_BZIP2)
    assert "compression method spreadsheets do not use" in refused(data)


def test_duplicate_and_encrypted_parts():
    buf = io.BytesIO(package())
    with zipfile.ZipFile(buf, "a") as zf, pytest.warns(UserWarning):
        zf.writestr("xl/workbook.xml", workbook_xml())
    assert "two parts with the same name" in refused(buf.getvalue())
    data = bytearray(package())
    # set the "encrypted" flag of every entry (local headers and central directory)
    for sig, off in ((b"PK\x03\x04", 6), (b"PK\x01\x02", 8)):
        i = data.find(sig)
        while i >= 0:
            data[i + off] |= 1
            i = data.find(sig, i + 4)
    assert "is encrypted" in refused(bytes(data))


def test_millions_of_empty_rows():
    rows = "".join(f'<row r="{i}"/>' for i in range(1, 1_000_001))
    assert f"more than {guard.MAX_ROWS:,} rows" in refused(package(sheet=sheet_xml(rows)))
    same = "<row/>" * 3_000_000  # identical rows: stopped at the zip directory already
    assert "compresses" in refused(package(sheet=sheet_xml(same)))


def test_too_many_cells_and_formula_cells():
    cells = "".join(f'<c r="A{i}"><v>{i}</v></c>' for i in range(1, 2001))
    many = package(sheet=sheet_xml(f"<row>{cells}</row>"))
    assert "more than 1,000 cells" in refused(many, Limits(cells=1000))
    f = "".join(f'<c r="A{i}"><f>{i}+1</f></c>' for i in range(1, 102))
    assert "more than 100 formula cells" in refused(
        package(sheet=sheet_xml(f"<row>{f}</row>")), Limits(formula_cells=100)
    )


def test_enormous_shared_strings_table():
    sst = "".join(f"<si><t>s{i}</t></si>" for i in range(500_001))
    data = package(strings=f'<sst xmlns="{MAIN}">{sst}</sst>')
    assert "more than 500,000 shared strings" in refused(data)


def test_formula_nested_past_excels_limit():
    deep = "ABS(" * (MAX_NESTING + 1) + "1" + ")" * (MAX_NESTING + 1)
    data = package(sheet=sheet_xml(f'<row r="1"><c r="A1"><f>{deep}</f></c></row>'))
    assert "nests 65 function calls (limit 64, as in Excel)" in refused(data)
    ok = "ABS(" * MAX_NESTING + "1" + ")" * MAX_NESTING
    inspect_package(package(sheet=sheet_xml(f'<row r="1"><c r="A1"><f>{ok}</f></c></row>')), "x")


def test_formula_longer_than_excels_limit():
    long = "+".join(["1"] * 4200)
    data = package(sheet=sheet_xml(f'<row r="1"><c r="A1"><f>{long}</f></c></row>'))
    assert "8,399 characters long (limit 8,192)" in refused(data)


def test_too_many_defined_names():
    names = "".join(f'<definedName name="n{i}">S!$A$1</definedName>' for i in range(11))
    data = package(workbook=workbook_xml(f"<definedNames>{names}</definedNames>"))
    assert "more than 10 defined names" in refused(data, Limits(defined_names=10))


@pytest.mark.parametrize(
    ("data", "message"),
    [
        (b"hello, not a zip", "not an .xlsx workbook (not a zip archive)"),
        (b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + b"\0" * 512, "password-protected workbook"),
        (package()[:200], "not a zip archive"),
    ],
)
def test_not_a_workbook(data, message):
    assert message in refused(data)


def test_zip_without_workbook_parts():
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as zf:
        zf.writestr("hello.txt", "hi")
    assert "no [Content_Types].xml" in refused(buf.getvalue())


def test_damaged_sheet_xml():
    msg = refused(package(sheet=f'<worksheet xmlns="{MAIN}"><sheetData><row>'))
    assert "damaged part xl/worksheets/sheet1.xml" in msg


def test_external_links_are_reported_and_not_followed():
    data = _external_link()
    rep = inspect_package(data, "linked.xlsx")
    assert rep.external_links == ["file:///C:/secret/prices.xlsx"]
    assert any("external links not followed" in n for n in rep.notes)
    ev = load_model(data, "linked.xlsx").evaluate()
    # not evaluated: the formula and its cached value stay as they are, and it is listed
    assert ev.value("S!A1") is None
    assert any(
        d.kind == "unsupported" and "external reference" in d.message and d.ref.coordinate == "A1"
        for d in ev.diagnostics
    )


def test_circular_references_are_reported_not_looped():
    rows = (
        '<row r="1"><c r="A1"><f>B1+1</f></c><c r="B1"><f>C1+1</f></c>'
        '<c r="C1"><f>A1+1</f></c></row>'
    )
    t0 = time.perf_counter()
    ev = load_model(package(sheet=sheet_xml(rows)), "loop.xlsx").evaluate()
    assert time.perf_counter() - t0 < BOUND_S
    text = "\n".join(str(d) for d in ev.errors())
    assert "circular reference: S!A1 -> S!B1 -> S!C1; not evaluated" in text


def test_nesting_counts_calls_not_strings_or_grouping():
    assert formula_nesting('IF(A1>0,"((((",(1+2)*3)') == 1
    assert formula_nesting("'a(b'!A1+SUM(MAX(1,2))") == 2


# ------------------------------------------------------------------ through the command
#
# Every hostile file below goes through ``cellwright calc`` as a user runs it (main()
# in one child process that runs all cases in turn). Safety bounds, not speed targets:
# each run must finish within HOSTILE_SECONDS, and the child's peak resident memory
# (interpreter, numpy, the formulas engine and C allocations included) must stay under
# HOSTILE_PEAK_RSS_MIB: the promise of udfs.xlsx.guard, which docs/bad-inputs.md states too.
# Time is the command's processor time: on an idle machine the command (one thread)
# takes that long, and the other test worker or an office program running beside it on
# a shared machine does not stretch it. A run stuck waiting is stopped by CHILD_TIMEOUT.

MiB = 1024 * 1024
HOSTILE_SECONDS = guard.PROMISED_SECONDS
HOSTILE_PEAK_RSS_MIB = guard.PROMISED_PEAK_MIB


def _took(label: str, run: Any) -> str:
    return f"{label}: {run.cpu_seconds:.1f} s of processor time ({run.seconds:.1f} s wall)"


def _rand(n: int, seed: int = 6) -> bytes:
    """Incompressible but reproducible bytes (the catalogue must not change per run)."""
    return random.Random(seed).randbytes(n)


def _lol() -> bytes:
    lol = (
        '<?xml version="1.0"?><!DOCTYPE lolz [<!ENTITY lol "lol">'
        + "".join(
            f'<!ENTITY lol{i} "{f"&lol{i - 1};" * 10 if i > 1 else "&lol;" * 10}">'
            for i in range(1, 10)
        )
        + "]>"
    )
    rows = '<row r="1"><c r="A1" t="inlineStr"><is><t>&lol9;</t></is></c></row>'
    return package(sheet=lol + sheet_xml(rows))


def _external_link() -> bytes:
    link = (
        f'<externalLink xmlns="{MAIN}"><externalBook xmlns:r="{REL}" r:id="rId1"/></externalLink>'
    )
    link_rels = (
        f'<Relationships xmlns="{PKG_REL}"><Relationship Id="rId1" Type="{REL}/externalLinkPath"'
        ' Target="file:///C:/secret/prices.xlsx" TargetMode="External"/></Relationships>'
    )
    rows = '<row r="1"><c r="A1"><f>\'[1]Prices\'!B2*2</f></c></row>'
    return package(
        sheet=sheet_xml(rows),
        extra={
            "xl/externalLinks/externalLink1.xml": link,
            "xl/externalLinks/_rels/externalLink1.xml.rels": link_rels,
        },
    )


def _encrypted_entries() -> bytes:
    data = bytearray(package())
    for sig, off in ((b"PK\x03\x04", 6), (b"PK\x01\x02", 8)):
        i = data.find(sig)
        while i >= 0:
            data[i + off] |= 1
            i = data.find(sig, i + 4)
    return bytes(data)


def _duplicate_parts() -> bytes:
    buf = io.BytesIO(package())
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        with zipfile.ZipFile(buf, "a") as zf:
            zf.writestr("xl/workbook.xml", workbook_xml())
    return buf.getvalue()


def _bare_zip() -> bytes:
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as zf:
        zf.writestr("hello.txt", "hi")
    return buf.getvalue()


def _cells(xml_cells: str) -> bytes:
    return package(sheet=sheet_xml(f'<row r="1">{xml_cells}</row>'))


# ---- what a small file can declare, the formulas package's own model, encodings, text

CIRCULAR = '<row r="1"><c r="A1"><f>B1+1</f></c><c r="B1"><f>A1*0.5</f></c></row>'
ITERATE = '<calcPr iterate="1" iterateCount="100"/>'


def _book(
    rows: str = '<row r="1"><c r="A1"><v>2</v></c><c r="B1"><f>A1*3</f></c></row>',
    after: str = "",
    iterate: bool = False,
    extra: Mapping[str, bytes | str] | None = None,
) -> bytes:
    """One sheet: ``rows``, then ``after`` (merged cells, formats, validations, hyperlinks
    in the schema's order); ``iterate`` asks for iterative calculation."""
    sheet = (
        f'<worksheet xmlns="{MAIN}" xmlns:r="{REL}"><sheetData>{rows}</sheetData>{after}'
        "</worksheet>"
    )
    return package(sheet=sheet, workbook=workbook_xml(ITERATE) if iterate else None, extra=extra)


def _fallback(
    rows: str = "", after: str = "", extra: Mapping[str, bytes | str] | None = None
) -> bytes:
    """A circular reference under iterative calculation: the plan declines the workbook."""
    return _book(CIRCULAR + rows, after, iterate=True, extra=extra)


def _merges(refs: Iterable[str]) -> str:
    cells = "".join(f'<mergeCell ref="{r}"/>' for r in refs)
    return f"<mergeCells>{cells}</mergeCells>"


def _links(refs: Iterable[str]) -> str:
    return (
        "<hyperlinks>"
        + "".join(f'<hyperlink ref="{r}" location="S!A1"/>' for r in refs)
        + ("</hyperlinks>")
    )


def _formats(sqref: str) -> str:
    return (
        f'<conditionalFormatting sqref="{sqref}"><cfRule type="cellIs" priority="1" '
        'operator="greaterThan"><formula>0</formula></cfRule></conditionalFormatting>'
    )


def _validations(sqref: str) -> str:
    return (
        f'<dataValidations count="1"><dataValidation type="whole" sqref="{sqref}">'
        "<formula1>0</formula1></dataValidation></dataValidations>"
    )


def _styles(fonts: int = 1, formats: int = 1) -> str:
    """A styles part with ``fonts`` fonts and ``formats`` cell formats (varied, as real
    files are, so that the part compresses as they do)."""
    font = "".join(f'<font><sz val="{8 + i % 29}"/><name val="F{i}"/></font>' for i in range(fonts))
    xf = "".join(
        f'<xf numFmtId="{i % 164}" fontId="{i % fonts}" fillId="0" borderId="0" xfId="0"/>'
        for i in range(formats)
    )
    return (
        f'<styleSheet xmlns="{MAIN}"><fonts count="{fonts}">{font}</fonts>'
        '<fills count="1"><fill><patternFill patternType="none"/></fill></fills>'
        '<borders count="1"><border/></borders>'
        '<cellStyleXfs count="1"><xf numFmtId="0" fontId="0" fillId="0" borderId="0"/>'
        f'</cellStyleXfs><cellXfs count="{formats}">{xf}</cellXfs></styleSheet>'
    )


def _encoded(encoding: str, codec: str) -> bytes:
    """A sheet part written in ``codec`` that says ``encoding``, with text that needs it."""
    rows = (
        '<row r="1"><c r="A1" t="inlineStr"><is><t>Größe µm</t></is></c>'
        '<c r="B1"><f>LEN(A1)</f></c></row>'
    )
    part = f'<?xml version="1.0" encoding="{encoding}"?>' + sheet_xml(rows)
    return package(sheet=part.encode(codec))


def _words(n: int, seed: int = 7) -> str:
    """``n`` characters of words from a small vocabulary: compresses about 6:1, as text does."""
    rnd = random.Random(seed)
    vocabulary = [
        "anode",
        "cathode",
        "binder",
        "slurry",
        "current",
        "collector",
        "separator",
        "cell",
        "pack",
        "coating",
        "porosity",
        "loading",
        "capacity",
        "energy",
        "cost",
        "yield",
    ]
    out: list[str] = []
    size = 0
    while size < n:
        w = rnd.choice(vocabulary) + rnd.choice(" ,.;")
        out.append(w)
        size += len(w) + 1
    return " ".join(out)[:n]


def _text_sheet(cells: int, length: int, seed: int) -> str:
    rows = "".join(
        f'<row r="{i}"><c r="A{i}" t="inlineStr"><is><t>{_words(length, seed * 100_000 + i)}'
        "</t></is></c></row>"
        for i in range(1, cells + 1)
    )
    return rows


def _big_text(sheets: int, cells: int, length: int) -> bytes:
    """``sheets`` sheets of ``cells`` text cells of ``length`` characters, and a formula."""
    names = [f"S{k}" for k in range(1, sheets + 1)]
    wb = (
        f'<workbook xmlns="{MAIN}" xmlns:r="{REL}"><sheets>'
        + "".join(
            f'<sheet name="{n}" sheetId="{k}" r:id="rId{k}"/>' for k, n in enumerate(names, 1)
        )
        + "</sheets></workbook>"
    )
    rels = (
        f'<Relationships xmlns="{PKG_REL}">'
        + "".join(
            f'<Relationship Id="rId{k}" Type="{REL}/worksheet" Target="worksheets/sheet{k}.xml"/>'
            for k in range(1, sheets + 1)
        )
        + "</Relationships>"
    )
    types = CONTENT_TYPES.replace(
        '<Override PartName="/xl/sharedStrings.xml"',
        "".join(
            f'<Override PartName="/xl/worksheets/sheet{k}.xml" ContentType="application/vnd.'
            'openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>'
            for k in range(2, sheets + 1)
        )
        + '<Override PartName="/xl/sharedStrings.xml"',
    )
    rels = rels.replace(
        "</Relationships>",
        f'<Relationship Id="rIdS" Type="{REL}/sharedStrings" '
        'Target="sharedStrings.xml"/></Relationships>',
    )
    parts: dict[str, bytes | str] = {
        "[Content_Types].xml": types,
        "xl/_rels/workbook.xml.rels": rels,
    }
    for k in range(1, sheets + 1):
        formula = f'<row r="{cells + 1}"><c r="B{cells + 1}"><f>LEN(A1)+COUNTA(A:A)</f></c></row>'
        parts[f"xl/worksheets/sheet{k}.xml"] = sheet_xml(_text_sheet(cells, length, k) + formula)
    return package(workbook=wb, extra=parts)


def _big_strings(count: int, length: int) -> bytes:
    sst = "".join(f"<si><t>{_words(length, i)}</t></si>" for i in range(count))
    rows = "".join(
        f'<row r="{i}"><c r="A{i}" t="s"><v>{i - 1}</v></c></row>' for i in range(1, count + 1)
    )
    rows += f'<row r="{count + 1}"><c r="B{count + 1}"><f>LEN(A1)</f></c></row>'
    return package(sheet=sheet_xml(rows), strings=f'<sst xmlns="{MAIN}">{sst}</sst>')


def _grid_of_values(n: int, width: int = 5) -> str:
    """Rows 2.. holding ``n`` numbers, ``width`` to a row."""
    letters = "ABCDEFGHIJ"[:width]
    rows = []
    for r in range(2, 2 + -(-n // width)):
        k = (r - 2) * width
        cells = "".join(
            f'<c r="{c}{r}"><v>{k + j}</v></c>' for j, c in enumerate(letters) if k + j < n
        )
        rows.append(f'<row r="{r}">{cells}</row>')
    return "".join(rows)


def _names(n: int) -> bytes:
    """``n`` defined names, each naming a cell of column A; B1 sums the column."""
    names = "".join(
        f'<definedName name="input_{i}">S!$A${i}</definedName>' for i in range(1, n + 1)
    )
    rows = "".join(
        f'<row r="{i}"><c r="A{i}"><v>{i}</v></c>'
        + ('<c r="B1"><f>SUM(A:A)</f></c>' if i == 1 else "")
        + "</row>"
        for i in range(1, n + 1)
    )
    return package(
        sheet=sheet_xml(rows), workbook=workbook_xml(f"<definedNames>{names}</definedNames>")
    )


class Hostile(NamedTuple):
    """A hostile workbook, the exit code of ``cellwright calc`` and its message."""

    label: str
    build: Callable[[], bytes]
    exit_code: int
    fragment: str
    flags: tuple[str, ...] = ()
    reported: bool = False  # evaluated and written, the problem reported (not refused)


HOSTILE_FILES: tuple[Hostile, ...] = (
    Hostile("entity expansion (billion laughs)", _lol, 1, "declares a DTD or entities"),
    Hostile(
        "external entity (XXE)",
        lambda: package(
            workbook='<?xml version="1.0"?><!DOCTYPE r [<!ENTITY x SYSTEM "file:///etc/passwd">]>'
            + workbook_xml()
        ),
        1,
        "xl/workbook.xml declares a DTD or entities",
    ),
    Hostile(
        "zip bomb (80 MiB of zeros in one part)",
        lambda: package(extra={"xl/media/bomb.bin": bytes(80 * 1024 * 1024)}),
        1,
        "unpacks to 80 MiB (limit 32 MiB per part)",
    ),
    Hostile(
        "part compressed past 100:1 (4 MiB of zeros)",
        lambda: package(extra={"xl/media/zeros.bin": bytes(4 * 1024 * 1024)}),
        1,
        "limit 100:1",
    ),
    Hostile(
        "file larger than 32 MiB",
        lambda: package(extra={"xl/media/noise.bin": _rand(33 * 1024 * 1024)}, compression=0),
        1,
        "larger than the 32 MiB the engine accepts",
    ),
    Hostile(
        "enormous shared-strings table (500,001 entries)",
        lambda: package(
            strings=f'<sst xmlns="{MAIN}">'
            + "".join(f"<si><t>s{i}</t></si>" for i in range(500_001))
            + "</sst>"
        ),
        1,
        "more than 500,000 shared strings",
    ),
    Hostile(
        "1,048,576 empty rows (a whole sheet)",
        lambda: package(sheet=sheet_xml("".join(f'<row r="{i}"/>' for i in range(1, 1_048_577)))),
        1,
        f"more than {guard.MAX_ROWS:,} rows",
    ),
    Hostile(
        "3,000,000 identical empty rows",
        lambda: package(sheet=sheet_xml("<row/>" * 3_000_000)),
        1,
        "compresses",
    ),
    Hostile(
        f"{guard.MAX_FORMULA_CELLS + 1:,} formula cells (the default limit)",
        lambda: _cells(
            "".join(f'<c r="A{i}"><f>{i}+1</f></c>' for i in range(1, guard.MAX_FORMULA_CELLS + 2))
        ),
        1,
        f"more than {guard.MAX_FORMULA_CELLS:,} formula cells",
    ),
    Hostile(
        "10,001 formula cells with --max-formulas 10000",
        lambda: _cells("".join(f'<c r="A{i}"><f>{i}+1</f></c>' for i in range(1, 10_002))),
        1,
        "more than 10,000 formula cells",
        flags=("--max-formulas", "10000"),
    ),
    Hostile(
        "a range growing down the column (SUM(A$1:An)) over 100,000 rows",
        lambda: _growing_sums(100_000),
        1,
        "cells of ranges in all (limit",
    ),
    Hostile(
        f"a sheet of {guard.MAX_PART_BYTES // MiB} MiB of different formulas of "
        f"{guard.MAX_FORMULA_LENGTH:,} characters",
        lambda: _long_formulas(guard.MAX_PART_BYTES // (guard.MAX_FORMULA_LENGTH + 80)),
        1,
        "distinct formulas hold more than",
    ),
    Hostile(
        "formula nested 65 deep (Excel: 64)",
        lambda: _cells(f'<c r="A1"><f>{"ABS(" * 65}1{")" * 65}</f></c>'),
        1,
        "nests 65 function calls (limit 64, as in Excel)",
    ),
    Hostile(
        "formula of 8,399 characters (Excel: 8,192)",
        lambda: _cells(f'<c r="A1"><f>{"+".join(["1"] * 4200)}</f></c>'),
        1,
        "8,399 characters long (limit 8,192)",
    ),
    Hostile(
        "1,001 zip parts",
        lambda: package(extra={f"xl/media/p{i}.bin": b"x" for i in range(1001)}),
        1,
        "zip parts (limit 1000)",
    ),
    Hostile("two parts with one name", _duplicate_parts, 1, "two parts with the same name"),
    Hostile("encrypted zip entries", _encrypted_entries, 1, "is encrypted"),
    Hostile(
        "bzip2-compressed parts",
        lambda: package(compression=zipfile.ZIP_BZIP2),
        1,
        "compression method spreadsheets do not use",
    ),
    Hostile("not a zip at all", lambda: b"hello, not a zip", 1, "not a zip archive"),
    Hostile(
        "password-protected (OLE) workbook",
        lambda: b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + bytes(512),
        1,
        "password-protected workbook",
    ),
    Hostile("truncated zip", lambda: package()[:200], 1, "not a zip archive"),
    Hostile("zip without workbook parts", _bare_zip, 1, "no [Content_Types].xml"),
    Hostile(
        "damaged sheet XML",
        lambda: package(sheet=f'<worksheet xmlns="{MAIN}"><sheetData><row>'),
        1,
        "damaged part xl/worksheets/sheet1.xml",
    ),
    Hostile(
        "circular references (reported; --strict exits 1)",
        lambda: _cells(
            '<c r="A1"><f>B1+1</f></c><c r="B1"><f>C1+1</f></c><c r="C1"><f>A1+1</f></c>'
        ),
        1,
        "circular reference: S!A1 -> S!B1 -> S!C1; not evaluated",
        ("--strict",),
        reported=True,
    ),
    Hostile(
        "external link (reported, never followed)",
        _external_link,
        0,
        "external links not followed",
        reported=True,
    ),
    # what a small file can declare: bounded before any work grows with it
    Hostile(
        "one merged range over the whole sheet (a 1.4 KB file)",
        lambda: _book(after=_merges(["A1:XFD1048576"])),
        1,
        f"cover 17,179,869,184 cells (limit {guard.MAX_CELLS:,})",
    ),
    Hostile(
        "one hyperlink over the whole sheet",
        lambda: _book(after=_links(["A1:XFD1048576"])),
        1,
        "hyperlink ranges on sheet 'S' and before cover 17,179,869,184 cells",
    ),
    Hostile(
        "an array formula over B2:B1048576",
        lambda: _book(
            '<row r="1"><c r="A1"><v>2</v></c></row>'
            '<row r="2"><c r="B2"><f t="array" ref="B2:B1048576">A1*2</f></c></row>'
        ),
        1,
        "an array formula on sheet 'S' fills 1,048,575 cells; more than "
        f"{guard.MAX_FORMULA_CELLS:,} formula cells",
    ),
    Hostile(
        "500,000 merged ranges",
        lambda: _book(after=_merges(f"C{i}:D{i}" for i in range(1, 500_001))),
        1,
        f"more than {guard.MAX_RANGES:,} mergeCell ranges",
    ),
    Hostile(
        f"{guard.MAX_RANGES + 1:,} ranges in one data validation",
        lambda: _book(
            after=_validations(" ".join(f"C{i}" for i in range(1, guard.MAX_RANGES + 2)))
        ),
        1,
        f"more than {guard.MAX_RANGES:,} dataValidation ranges",
    ),
    Hostile(
        f"{guard.MAX_RANGES + 1:,} ranges in one conditional format",
        lambda: _book(after=_formats(" ".join(f"C{i}" for i in range(1, guard.MAX_RANGES + 2)))),
        1,
        f"more than {guard.MAX_RANGES:,} conditionalFormatting ranges",
    ),
    Hostile(
        f"{guard.MAX_STYLES + 1:,} cell formats",
        lambda: _book(extra={"xl/styles.xml": _styles(formats=guard.MAX_STYLES + 1)}),
        1,
        f"more than {guard.MAX_STYLES:,} entries in cellXfs of xl/styles.xml",
    ),
    Hostile(
        f"{guard.MAX_STYLES + 1:,} fonts in xl/styles.xml, no relationship naming it",
        lambda: _book(extra={"xl/styles.xml": _styles(fonts=guard.MAX_STYLES + 1)}),
        1,
        f"more than {guard.MAX_STYLES:,} entries in fonts of xl/styles.xml",
    ),
    Hostile(
        "a text cell of 32,768 characters (Excel: 32,767)",
        lambda: _cells(f'<c r="A1" t="inlineStr"><is><t>{"x" * 32_768}</t></is></c>'),
        1,
        "holds 32,768 characters of text (limit 32,767, as in Excel)",
    ),
    Hostile(
        "a cell past the end of the sheet (row 2,000,000)",
        lambda: _book('<row r="2000000"><c r="A2000000"><v>1</v></c></row>'),
        1,
        "lies outside the sheet (row 2,000,000, column 1",
    ),
    Hostile(
        "a defined name that is a formula (reported, ignored)",
        lambda: package(
            workbook=workbook_xml(
                '<definedNames><definedName name="=HYPERLINK(&quot;http://x&quot;,1)">S!$A$1'
                "</definedName></definedNames>"
            )
        ),
        0,
        "defined names that are not valid names ignored: '=HYPERLINK",
        reported=True,
    ),
    # encodings: UTF-8 and UTF-16 only, as the Open Packaging Conventions require
    Hostile(
        "a sheet in ISO-8859-1",
        lambda: _encoded("ISO-8859-1", "latin-1"),
        1,
        "xl/worksheets/sheet1.xml is written in the encoding 'ISO-8859-1'; the parts of a "
        "workbook must be UTF-8 or UTF-16",
    ),
    Hostile(
        "a sheet in UTF-16 without its byte-order mark",
        lambda: package(
            sheet=('<?xml version="1.0" encoding="UTF-16"?>' + sheet_xml()).encode("utf-16-be")
        ),
        1,
        "xl/worksheets/sheet1.xml is written in UTF-16 without a byte-order mark",
    ),
    Hostile(
        "a sheet in windows-1252",
        lambda: _encoded("windows-1252", "cp1252"),
        1,
        "is written in the encoding 'windows-1252'",
    ),
    # the formulas package's own model (the plan declines a circular reference under
    # iterative calculation): its narrower limits, before openpyxl reads anything
    Hostile(
        "iterative circular reference, a merged range C1:C200000",
        lambda: _fallback(after=_merges(["C1:C200000"])),
        1,
        f"which takes at most {guard.MAX_FALLBACK_CELLS:,} cell positions from A1 to the last "
        "cell; this workbook has 600,000; sheet 'S' reaches row 200,000, column 3",
    ),
    Hostile(
        "iterative circular reference, a hyperlink over C1:C200000",
        lambda: _fallback(after=_links(["C1:C200000"])),
        1,
        f"which takes at most {guard.MAX_FALLBACK_CELLS:,} cell positions",
    ),
    Hostile(
        "iterative circular reference, two cells far apart (A1 and XFD20000)",
        lambda: _fallback('<row r="20000"><c r="XFD20000"><v>1</v></c></row>'),
        1,
        "this workbook has 327,680,000; sheet 'S' reaches row 20,000, column 16,384",
    ),
    Hostile(
        f"iterative circular reference, {guard.MAX_FALLBACK_FORMULAS + 1:,} formula cells",
        lambda: _fallback(
            "".join(
                f'<row r="{i}"><c r="A{i}"><f>B1+{i}</f></c></row>'
                for i in range(2, guard.MAX_FALLBACK_FORMULAS + 1)
            )
        ),
        1,
        f"which takes at most {guard.MAX_FALLBACK_FORMULAS:,} formula cells; this workbook "
        f"has {guard.MAX_FALLBACK_FORMULAS + 1:,}",
    ),
    Hostile(
        "iterative circular reference, hyperlinks on 1,001 merged ranges",
        lambda: _fallback(
            after=_merges(f"C{i}:D{i}" for i in range(1, 1002))
            + _links(f"C{i}" for i in range(1, 1002))
        ),
        1,
        f"which takes at most {guard.MAX_FALLBACK_RANGES:,} merged, hyperlinked",
    ),
    Hostile(
        "iterative circular reference, 9 MiB of XML",
        lambda: _fallback(
            extra={"docProps/custom.xml": f"<r>{_rand(9 * 1024 * 1024).hex()[: 9 << 20]}</r>"}
        ),
        1,
        f"which takes at most {guard.MAX_FALLBACK_XML_BYTES:,} bytes of XML",
    ),
)


@pytest.mark.parametrize("case", HOSTILE_FILES, ids=lambda h: h.label)
def test_hostile_file_through_calc(case: Hostile) -> None:
    from bad_input_catalogue import hostile_response, hostile_runs

    run = hostile_runs()[case.label]  # all cases run once, in one child process
    result = run.result
    assert run.cpu_seconds < HOSTILE_SECONDS, _took(case.label, run)
    assert run.peak_rss_mib < HOSTILE_PEAK_RSS_MIB, f"{case.label}: {run.peak_rss_mib:.0f} MiB"
    assert result.code == case.exit_code, result.stderr
    assert "Traceback" not in result.stderr and "internal error" not in result.stderr
    line = hostile_response(result, case.fragment)
    assert case.fragment in line, result.stderr
    assert run.input_unchanged  # the input's bytes never change
    assert run.wrote_output == case.reported  # a refused file writes nothing


class AtLimit(NamedTuple):
    """A workbook at the limits (or in an encoding we read): ``cellwright calc`` evaluates
    it and writes the result within the promised time and memory."""

    label: str
    build: Callable[[], bytes]
    flags: tuple[str, ...] = ()


def _distinct(i: int) -> str:
    """Formula ``i`` of a column of formulas that all differ (their constants do)."""
    return f"A{i}*{i}+{i % 97}"


def _distinct_count() -> int:
    """As many different formulas as the formula-text limit lets through."""
    total = count = 0
    while count < guard.MAX_FORMULA_CELLS:
        size = len(_distinct(count + 1)) + 1  # counted with its "="
        if total + size > guard.MAX_FORMULA_TEXT:
            break
        total += size
        count += 1
    return count


def _at_limits() -> tuple[AtLimit, ...]:
    g = guard
    n = g.MAX_FORMULA_CELLS
    text_cells = g.MAX_PART_BYTES // 32_900  # cells of 32,767 characters in one part
    return (
        AtLimit(
            f"{g.MAX_CELLS:,} cells: numbers, and a SUM over them",
            lambda: _book(
                '<row r="1"><c r="A1"><f>SUM(A2:E200001)</f></c></row>'
                + _grid_of_values(g.MAX_CELLS - 1)
            ),
        ),
        AtLimit(
            f"{n:,} formula cells, each reading the one before",
            lambda: _book(
                '<row r="1"><c r="A1"><f>1</f></c></row>'
                + "".join(
                    f'<row r="{i}"><c r="A{i}"><f>A{i - 1}+1</f></c></row>' for i in range(2, n + 1)
                )
            ),
        ),
        AtLimit(
            f"{_distinct_count():,} formula cells, all different (the formula-text limit)",
            lambda: _book(
                "".join(
                    f'<row r="{i}"><c r="A{i}"><v>{i}</v></c>'
                    f'<c r="B{i}"><f>{_distinct(i)}</f></c></row>'
                    for i in range(1, _distinct_count() + 1)
                )
            ),
        ),
        AtLimit(
            f"an array formula filling {n:,} cells",
            lambda: _book(
                f'<row r="1"><c r="A1"><v>1</v></c><c r="B1"><f t="array" ref="B1:B{n}">'
                f"A1:A{n}*2</f></c></row>"
                + "".join(f'<row r="{i}"><c r="A{i}"><v>{i}</v></c></row>' for i in range(2, n + 1))
            ),
        ),
        AtLimit(
            f"a merged range and a hyperlink, each over {g.MAX_CELLS:,} cells",
            lambda: _book(after=_merges([f"C1:C{g.MAX_CELLS}"]) + _links([f"D1:D{g.MAX_CELLS}"])),
        ),
        AtLimit(
            f"{g.MAX_RANGES:,} merged ranges, data-validation and conditional-format ranges each",
            lambda: _book(
                after=_merges(f"C{i}:D{i}" for i in range(1, g.MAX_RANGES + 1))
                + _formats(" ".join(f"E{i}" for i in range(1, g.MAX_RANGES + 1)))
                + _validations(" ".join(f"F{i}" for i in range(1, g.MAX_RANGES + 1)))
            ),
        ),
        AtLimit(
            f"{g.MAX_STYLES:,} cell formats and {g.MAX_STYLES:,} fonts",
            lambda: _book(
                extra={"xl/styles.xml": _styles(fonts=g.MAX_STYLES, formats=g.MAX_STYLES)}
            ),
        ),
        AtLimit(
            f"a sheet of {g.MAX_PART_BYTES // MiB} MiB: text cells of 32,767 characters",
            lambda: _big_text(1, text_cells, 32_767),
        ),
        AtLimit(
            f"shared strings of {g.MAX_PART_BYTES // MiB} MiB",
            lambda: _big_strings(text_cells, 32_767),
        ),
        AtLimit(
            f"{g.MAX_TOTAL_BYTES // g.MAX_PART_BYTES} such sheets: "
            f"{g.MAX_TOTAL_BYTES // MiB} MiB of parts",
            lambda: _big_text(g.MAX_TOTAL_BYTES // g.MAX_PART_BYTES, text_cells, 32_767),
        ),
        AtLimit(f"{g.MAX_DEFINED_NAMES:,} defined names", lambda: _names(g.MAX_DEFINED_NAMES)),
        AtLimit(
            f"{g.MAX_ROWS:,} rows",
            lambda: _book(
                '<row r="1"><c r="B1"><f>SUM(A:A)</f></c></row>'
                + "".join(
                    f'<row r="{i}"><c r="A{i}"><v>{i}</v></c></row>'
                    for i in range(2, g.MAX_ROWS + 1)
                )
            ),
        ),
        AtLimit("a sheet in UTF-16", lambda: _encoded("UTF-16", "utf-16")),
        AtLimit("every limit of the plan at once", _everything_at_once),
        AtLimit(
            "iterative circular reference: the formulas package's own model at its limits "
            f"({g.MAX_FALLBACK_CELLS:,} cell positions, {g.MAX_FALLBACK_FORMULAS:,} formula "
            f"cells, {g.MAX_FALLBACK_RANGES:,} ranges)",
            _fallback_at_limits,
        ),
        AtLimit(
            "iterative circular reference: the formulas package's own model with "
            f"{g.MAX_FALLBACK_XML_BYTES // MiB} MiB of XML (styles)",
            lambda: _fallback(extra={"xl/styles.xml": _styles(fonts=40_000, formats=g.MAX_STYLES)}),
        ),
        AtLimit(
            f"a range growing down the column (SUM(A$1:An)) over {_GROWING:,} rows: "
            f"{_GROWING * (_GROWING + 1) // 2:,} cells read, within {g.MAX_CELL_READS:,}",
            lambda: _growing_sums(_GROWING),
        ),
        AtLimit(
            f"a formula of {g.MAX_FORMULA_LENGTH:,} characters: 1+2+3+... (a long chain of +)",
            lambda: _cells(f'<c r="A1"><f>{_sum_chain(g.MAX_FORMULA_LENGTH)}</f></c>'),
        ),
        AtLimit(
            f"different formulas of {g.MAX_FORMULA_LENGTH:,} characters, "
            f"{g.MAX_FORMULA_TEXT:,} characters in all",
            lambda: _long_formulas(g.MAX_FORMULA_TEXT // (g.MAX_FORMULA_LENGTH + 80)),
        ),
    )


#: rows of SUM(A$1:An) whose cells read stay within MAX_CELL_READS
_GROWING = int((2 * guard.MAX_CELL_READS) ** 0.5) - 1


def _growing_sums(rows: int) -> bytes:
    return _book(
        "".join(
            f'<row r="{i}"><c r="A{i}"><v>{i}</v></c><c r="B{i}"><f>SUM(A$1:A{i})</f></c></row>'
            for i in range(1, rows + 1)
        )
    )


def _sum_chain(length: int) -> str:
    """1+2+3+... as long as ``length`` allows."""
    terms: list[str] = []
    size = -1
    k = 1
    while size + len(str(k)) + 1 <= length:
        terms.append(str(k))
        size += len(str(k)) + 1
        k += 1
    return "+".join(terms)


def _long_formulas(count: int) -> bytes:
    """``count`` formulas of about MAX_FORMULA_LENGTH characters, each different: sums of
    products of cells of column A with constants (nesting 2, 120 arguments a call)."""
    length = guard.MAX_FORMULA_LENGTH

    def formula(i: int) -> str:
        calls: list[str] = []
        size = 5
        j = 0
        while True:
            args = ",".join(f"A{(i * 31 + j * 7 + k) % count + 1}*{k + j}" for k in range(120))
            call = f"SUM({args})"
            if size + len(call) + 1 > length:
                break
            calls.append(call)
            size += len(call) + 1
            j += 1
        return "SUM(" + ",".join(calls) + ")"

    rows = "".join(
        f'<row r="{i}"><c r="A{i}"><v>{i}</v></c><c r="B{i}"><f>{formula(i)}</f></c></row>'
        for i in range(1, count + 1)
    )
    return _book(rows)


def _fallback_at_limits() -> bytes:
    """MAX_FALLBACK_CELLS positions in 1,000 rows: the circular pair, then formulas in column
    C up to the formula limit, numbers elsewhere; half the range limit in merged ranges and
    half in hyperlinks on merged cells (openpyxl looks each up among the merged ranges)."""
    g = guard
    cols = g.MAX_FALLBACK_CELLS // 1000
    letters = "ABCDEFGHIJKLMNOPQRSTUVWXYZ"[:cols]
    rows = []
    for r in range(2, 1001):
        cells = []
        for c in letters:
            if c == "C" and r <= g.MAX_FALLBACK_FORMULAS - 1:
                cells.append(f'<c r="C{r}"><f>A{r}*2+B1</f></c>')
            else:
                cells.append(f'<c r="{c}{r}"><v>{r}</v></c>')
        rows.append(f'<row r="{r}">{"".join(cells)}</row>')
    half = g.MAX_FALLBACK_RANGES // 2
    after = _merges(f"E{r}:F{r}" for r in range(2, 2 + half)) + _links(
        f"F{r}" for r in range(2, 2 + half)
    )
    return _fallback("".join(rows), after)


def _everything_at_once() -> bytes:
    """Every limit of the plan reached in one workbook: formula cells up to the cell
    limit, as many of them different as the formula-text limit allows, the rest filled
    down; the ranges of each kind; the names; the styles; and a second sheet of long
    text as large as a part may be."""
    g = guard
    text_cells = g.MAX_PART_BYTES // 32_900
    n = min(g.MAX_FORMULA_CELLS, (g.MAX_CELLS - text_cells - 10) // 2)  # a number, a formula
    distinct = _distinct_count()
    rows = "".join(
        f'<row r="{i}"><c r="A{i}"><v>{i}</v></c>'
        f'<c r="B{i}"><f>{_distinct(i) if i <= distinct else f"A{i}*2"}</f></c></row>'
        for i in range(1, n + 1)
    )
    after = (
        _merges(f"H{i}:I{i}" for i in range(1, g.MAX_RANGES + 1))
        + _formats(" ".join(f"J{i}" for i in range(1, g.MAX_RANGES + 1)))
        + _validations(" ".join(f"K{i}" for i in range(1, g.MAX_RANGES + 1)))
    )
    sheet = (
        f'<worksheet xmlns="{MAIN}" xmlns:r="{REL}"><sheetData>{rows}</sheetData>{after}'
        "</worksheet>"
    )
    names = "".join(
        f'<definedName name="input_{i}">S!$A${i}</definedName>'
        for i in range(1, g.MAX_DEFINED_NAMES + 1)
    )
    wb = (
        f'<workbook xmlns="{MAIN}" xmlns:r="{REL}"><sheets><sheet name="S" sheetId="1" '
        'r:id="rId1"/><sheet name="T" sheetId="2" r:id="rId3"/></sheets>'
        f"<definedNames>{names}</definedNames></workbook>"
    )
    rels = WB_RELS.replace(
        "</Relationships>",
        f'<Relationship Id="rId3" Type="{REL}/worksheet" Target="worksheets/sheet2.xml"/>'
        "</Relationships>",
    )
    types = CONTENT_TYPES.replace(
        '<Override PartName="/xl/sharedStrings.xml"',
        '<Override PartName="/xl/worksheets/sheet2.xml" ContentType="application/vnd.'
        'openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>'
        '<Override PartName="/xl/sharedStrings.xml"',
    )
    return package(
        sheet=sheet,
        workbook=wb,
        extra={
            "xl/worksheets/sheet2.xml": sheet_xml(_text_sheet(text_cells, 32_767, 3)),
            "xl/_rels/workbook.xml.rels": rels,
            "[Content_Types].xml": types,
            "xl/styles.xml": _styles(fonts=g.MAX_STYLES, formats=g.MAX_STYLES),
        },
    )


AT_LIMITS: tuple[AtLimit, ...] = _at_limits()


@pytest.mark.parametrize("case", AT_LIMITS, ids=lambda a: a.label)
def test_within_the_limits_through_calc(case: AtLimit) -> None:
    from bad_input_catalogue import limit_run

    run = limit_run(case.label)  # in a child process of its own
    result = run.result
    assert result.code == 0, result.stderr
    assert "Traceback" not in result.stderr and "internal error" not in result.stderr
    assert run.cpu_seconds < HOSTILE_SECONDS, _took(case.label, run)
    assert run.peak_rss_mib < HOSTILE_PEAK_RSS_MIB, f"{case.label}: {run.peak_rss_mib:.0f} MiB"
    assert run.input_unchanged and run.wrote_output


def test_round_with_absurd_digits_is_an_error_not_a_hang(tmp_path):
    # ROUND(x, 1E+300) would make the formulas package compute 10**(10**300) and hang;
    # the engine answers #NUM! at once (MAX_ROUND_DIGITS) and still rounds normal cases
    # (Excel's ROUND semantics, common practice).
    import io

    import openpyxl

    from udfs.engine import load_model

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "S"
    ws["A1"] = 2.345
    ws["A2"] = 1e300
    ws["B1"] = "=ROUND(A1,1E+300)"
    ws["B2"] = "=ROUND(A1,2)"
    ws["B3"] = "=ROUNDUP(A1,1)"
    ws["B4"] = "=ROUNDDOWN(-A1,1)"
    ws["B5"] = "=IFERROR(ROUND(A1,A2),-1)"
    buf = io.BytesIO()
    wb.save(buf)
    ev = load_model(buf.getvalue(), "round.xlsx").evaluate({})
    assert getattr(ev.value("S!B1"), "code", str(ev.value("S!B1"))) == "#NUM!"
    assert ev.value("S!B2") == pytest.approx(2.35)
    assert ev.value("S!B3") == pytest.approx(2.4)
    assert ev.value("S!B4") == pytest.approx(-2.3)
    assert ev.value("S!B5") == -1


# ------------------------------------------------------------------ under a memory cap
#
# A workbook at the limits run with less address space than it needs: the command must
# say so on one line and stop (exit 1), never print a chain of tracebacks or hang while
# the interpreter shuts down. The cap is set in the child once everything is imported:
# the address space it already maps, plus a little.

_CAPPED_CHILD = r"""
import resource, sys
from udfs.cli import main
import udfs.app.calc, udfs.app.report, udfs.engine.model  # noqa: F401
import scipy.special, scipy.stats  # noqa: F401  (what evaluation imports lazily)

def mapped():
    with open("/proc/self/status") as fh:
        return next(int(x.split()[1]) * 1024 for x in fh if x.startswith("VmSize:"))

extra = int(sys.argv[1]) << 20
resource.setrlimit(resource.RLIMIT_AS, (mapped() + extra, resource.RLIM_INFINITY))
sys.exit(main(sys.argv[2:]))
"""


@pytest.fixture(scope="module")
def large_book(tmp_path_factory):
    path = tmp_path_factory.mktemp("capped") / "large.xlsx"
    path.write_bytes(_everything_at_once())
    return path


@pytest.mark.skipif(not os.path.exists("/proc/self/status"), reason="needs Linux's /proc")
# 50 and 75 MiB: where libexpat looped on a failed allocation of its own (2 runs in 3 at
# 75 MiB) until the reader kept a margin (udfs/xlsx/headroom.py)
@pytest.mark.parametrize("extra_mib", [50, 75, 100, 150, 250, 280])
def test_out_of_memory_is_one_line_and_the_end(large_book, tmp_path, extra_mib):
    import subprocess
    import sys

    root = str(Path(__file__).resolve().parents[2])
    out = tmp_path / "out.xlsx"
    argv = ["calc", str(large_book), "-o", str(out)]
    try:
        done = subprocess.run(
            [sys.executable, "-c", _CAPPED_CHILD, str(extra_mib), *argv],
            capture_output=True,
            text=True,
            timeout=60,
            env=dict(os.environ, PYTHONPATH=root),
        )
    except subprocess.TimeoutExpired as exc:
        pytest.fail(f"still running after 60 s; stderr so far: {exc.stderr!r}")
    assert done.returncode == 1, done.stderr
    assert done.stderr == "cellwright calc: error: out of memory\n"
    assert list(tmp_path.iterdir()) == []  # nothing written, no temporary file
