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
from collections.abc import Callable, Mapping
from typing import NamedTuple

import pytest

from udfs.engine.model import load_model
from udfs.sheet.error_values import SheetError
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
    assert "part xl/media/bomb.bin unpacks to 80 MiB (limit 64 MiB per part)" in msg
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
    assert "more than 250,000 rows" in refused(package(sheet=sheet_xml(rows)))
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
# HOSTILE_PEAK_RSS_MIB. docs/bad-inputs.md states the same bounds (it reads them here).

HOSTILE_SECONDS = 20.0
HOSTILE_PEAK_RSS_MIB = 512


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
        "unpacks to 80 MiB (limit 64 MiB per part)",
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
        "more than 250,000 rows",
    ),
    Hostile(
        "3,000,000 identical empty rows",
        lambda: package(sheet=sheet_xml("<row/>" * 3_000_000)),
        1,
        "compresses",
    ),
    Hostile(
        "200,001 formula cells (the default limit)",
        lambda: _cells("".join(f'<c r="A{i}"><f>{i}+1</f></c>' for i in range(1, 200_002))),
        1,
        "more than 200,000 formula cells",
    ),
    Hostile(
        "10,001 formula cells with --max-formulas 10000",
        lambda: _cells("".join(f'<c r="A{i}"><f>{i}+1</f></c>' for i in range(1, 10_002))),
        1,
        "more than 10,000 formula cells",
        flags=("--max-formulas", "10000"),
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
)


@pytest.mark.parametrize("case", HOSTILE_FILES, ids=lambda h: h.label)
def test_hostile_file_through_calc(case: Hostile) -> None:
    from bad_input_catalogue import hostile_response, hostile_runs

    run = hostile_runs()[case.label]  # all cases run once, in one child process
    result = run.result
    assert run.seconds < HOSTILE_SECONDS, f"{case.label}: {run.seconds:.1f} s"
    assert run.peak_rss_mib < HOSTILE_PEAK_RSS_MIB, f"{case.label}: {run.peak_rss_mib:.0f} MiB"
    assert result.code == case.exit_code, result.stderr
    assert "Traceback" not in result.stderr and "internal error" not in result.stderr
    line = hostile_response(result, case.fragment)
    assert case.fragment in line, result.stderr
    assert run.input_unchanged  # the input's bytes never change
    assert run.wrote_output == case.reported  # a refused file writes nothing


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
