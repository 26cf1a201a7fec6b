"""Encodings of package parts: UTF-8 and UTF-16 are read, and the output of ``cellwright
calc`` is UTF-8 that says so, readable by openpyxl and by LibreOffice; any other encoding
is refused before anything is evaluated, with the reason (the Open Packaging Conventions
allow only these two).
"""

from __future__ import annotations

import codecs
import csv
import shutil
import subprocess
import zipfile
from pathlib import Path

import openpyxl
import pytest
from test_hostile import MAIN, _encoded, package, sheet_xml

from udfs.xlsx.file_errors import WorkbookError
from udfs.xlsx.guard import check_package
from udfs.xlsx.package import part_bytes, part_text
from udfs.xlsx.reader import read_workbook

SOFFICE = shutil.which("soffice") or shutil.which("libreoffice")
TEXT = "Größe µm"  # the sheet's text: characters outside ASCII, 8 of them


def _utf16_without_mark() -> bytes:
    rows = (
        f'<row r="1"><c r="A1" t="inlineStr"><is><t>{TEXT}</t></is></c>'
        '<c r="B1"><f>LEN(A1)</f></c></row>'
    )
    part = '<?xml version="1.0" encoding="UTF-16"?>' + sheet_xml(rows)
    return package(sheet=part.encode("utf-16-be"))


def _utf16_big_endian() -> bytes:
    rows = (
        f'<row r="1"><c r="A1" t="inlineStr"><is><t>{TEXT}</t></is></c>'
        '<c r="B1"><f>LEN(A1)</f></c></row>'
    )
    part = '<?xml version="1.0" encoding="UTF-16"?>' + sheet_xml(rows)
    return package(sheet=codecs.BOM_UTF16_BE + part.encode("utf-16-be"))


def _utf8_with_mark() -> bytes:
    rows = (
        f'<row r="1"><c r="A1" t="inlineStr"><is><t>{TEXT}</t></is></c>'
        '<c r="B1"><f>LEN(A1)</f></c></row>'
    )
    return package(sheet=codecs.BOM_UTF8 + sheet_xml(rows).encode("utf-8"))


BOOKS = {
    "UTF-16 with a byte-order mark": lambda: _encoded("UTF-16", "utf-16"),
    "UTF-16 big-endian with a byte-order mark": _utf16_big_endian,
    "UTF-8 with a byte-order mark": _utf8_with_mark,
    "UTF-8 without a declaration": lambda: package(
        sheet=sheet_xml(
            f'<row r="1"><c r="A1" t="inlineStr"><is><t>{TEXT}</t></is></c>'
            '<c r="B1"><f>LEN(A1)</f></c></row>'
        )
    ),
}


def _calc(tmp_path: Path, data: bytes) -> Path:
    from bad_input_catalogue import run_cli

    src, out = tmp_path / "in.xlsx", tmp_path / "out.xlsx"
    src.write_bytes(data)
    result = run_cli(["calc", str(src), "-o", str(out)])
    assert result.code == 0, result.stderr
    return out


@pytest.mark.parametrize("kind", BOOKS)
def test_sheets_in_utf8_and_utf16_give_utf8_output_openpyxl_reads(tmp_path, kind):
    out = _calc(tmp_path, BOOKS[kind]())
    raw = zipfile.ZipFile(out).read("xl/worksheets/sheet1.xml")
    head = raw[:60].decode("utf-8")
    assert "UTF-16" not in head.upper() and raw.decode("utf-8")  # UTF-8, and says nothing else
    ws = openpyxl.load_workbook(out)["S"]
    assert ws["A1"].value == TEXT and ws["B1"].value == "=LEN(A1)"
    cached = openpyxl.load_workbook(out, data_only=True)["S"]
    assert cached["B1"].value == len(TEXT)


@pytest.mark.skipif(SOFFICE is None, reason="LibreOffice (soffice) is not installed")
def test_libreoffice_reads_the_output_of_a_utf16_sheet(tmp_path):
    out = _calc(tmp_path, _encoded("UTF-16", "utf-16"))
    folder = tmp_path / "lo"
    cmd = [
        str(SOFFICE),
        f"-env:UserInstallation={(tmp_path / 'profile').as_uri()}",
        "--headless",
        "--norestore",
        "--convert-to",
        "csv:Text - txt - csv (StarCalc):44,34,76",  # UTF-8 CSV
        "--outdir",
        str(folder),
        str(out),
    ]
    done = subprocess.run(cmd, capture_output=True, text=True, timeout=240, check=False)
    assert done.returncode == 0, done.stderr
    rows = list(csv.reader((folder / "out.csv").open(encoding="utf-8")))
    assert rows[0] == [TEXT, str(len(TEXT))]


@pytest.mark.parametrize(
    ("encoding", "codec"), [("ISO-8859-1", "latin-1"), ("windows-1252", "cp1252")]
)
def test_other_encodings_are_refused_before_the_sheets_are_read(encoding, codec):
    with pytest.raises(WorkbookError) as info:
        check_package(_encoded(encoding, codec), "old.xlsx")  # the package check alone
    assert str(info.value) == (
        f"old.xlsx: xl/worksheets/sheet1.xml is written in the encoding '{encoding}'; the "
        "parts of a workbook must be UTF-8 or UTF-16 with its byte-order mark (XML, Open "
        "Packaging Conventions): open it in a spreadsheet program and save it again"
    )


def test_utf16_without_its_byte_order_mark_is_refused_before_the_sheets_are_read():
    with pytest.raises(WorkbookError, match="is written in UTF-16 without a byte-order mark"):
        check_package(_utf16_without_mark(), "nomark.xlsx")


def test_an_encoding_named_for_one_part_and_used_for_another_is_damage():
    part = '<?xml version="1.0" encoding="UTF-16"?>' + sheet_xml()
    with pytest.raises(WorkbookError, match=r"damaged part xl/worksheets/sheet1\.xml"):
        read_workbook(package(sheet=part.encode("utf-8")), "lying.xlsx")


@pytest.mark.parametrize("codec", ["utf-8", "utf-8-sig", "utf-16", "utf-16-le", "utf-16-be"])
def test_part_text_and_part_bytes_round_trip(codec):
    declared = "UTF-8" if codec.startswith("utf-8") else "UTF-16"
    text = f'<?xml version="1.0" encoding="{declared}"?><t xmlns="{MAIN}">{TEXT}</t>'
    assert part_text(text.encode(codec)) == text
    again = part_bytes(part_text(text.encode(codec)))
    assert again == text.replace(f'encoding="{declared}"', 'encoding="UTF-8"').encode("utf-8")
