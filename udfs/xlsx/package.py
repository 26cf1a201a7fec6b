"""The parts of an .xlsx package (a zip of XML parts), read safely.

Only the structure is read here: which part is the workbook, which parts are
its sheets, its defined names, and where relationships point. Every XML part
goes through defusedxml (no DTD, no entities, no external resources).

Encodings: the Open Packaging Conventions (ECMA-376 Part 2) allow the XML
parts of a package in UTF-8 or UTF-16 only; :meth:`Package.prolog` says
which a part declares (and refuses a DTD), :func:`known_encoding` whether
that is one of the two. Code that rewrites a part reads it
with :func:`part_text` and writes it back with :func:`part_bytes`: UTF-8, its
XML declaration saying so, whatever the part was in.

Defined names that are not names (:func:`valid_name`: a name starts with a
letter, ``_`` or ``\\``, holds letters, digits, ``_``, ``.``, ``\\`` or ``?``,
at most 255 characters, and is not a cell reference) are set aside in
:attr:`Package.invalid_names`, never used.

>>> import io, openpyxl
>>> wb = openpyxl.Workbook(); wb.active.title = "Inputs"
>>> buf = io.BytesIO(); wb.save(buf)
>>> pkg = Package(buf.getvalue(), "demo.xlsx"); pkg.read_structure(100)
>>> [(s.name, s.part) for s in pkg.sheets]
[('Inputs', 'xl/worksheets/sheet1.xml')]
"""

from __future__ import annotations

import codecs
import contextlib
import io
import posixpath
import re
import zipfile
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from typing import IO
from xml.etree.ElementTree import Element, ParseError
from xml.parsers import expat

from defusedxml import DefusedXmlException
from defusedxml.ElementTree import fromstring, iterparse

from .file_errors import HostileFileError, WorkbookError
from .headroom import ensure_headroom
from .refs import MAX_COL, MAX_ROW, CellRef, col_index, sheet_key

__all__ = [
    "PART_ENCODINGS",
    "DefinedName",
    "Package",
    "SheetEntry",
    "known_encoding",
    "local",
    "part_bytes",
    "part_text",
    "rels_path",
    "resolve_target",
    "valid_name",
]

OLE_SIGNATURE = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"  # encrypted .xlsx and legacy .xls
OFFICE_DOCUMENT = "/officeDocument"
#: Encodings the parts of a package may use (Open Packaging Conventions).
PART_ENCODINGS = ("UTF-8", "UTF-16")
_ENCODING_NAMES = {"UTF8": "UTF-8", "UTF16": "UTF-16", "UTF16LE": "UTF-16", "UTF16BE": "UTF-16"}
_XML_DECL = re.compile(
    r"""^<\?xml\s[^>]*?\bencoding\s*=\s*(?P<q>["'])(?P<enc>[^"']*)(?P=q)""", re.S
)
_NAME = re.compile(r"^[^\W\d]|^[_\\]")
_NAME_REST = re.compile(r"^[\w.\\?]*$")
_A1_NAME = re.compile(r"^\$?([A-Za-z]{1,3})\$?([0-9]{1,7})$")
_R1C1_NAME = re.compile(r"^[Rr](\[?-?[0-9]*\]?)?([Cc](\[?-?[0-9]*\]?)?)?$|^[Cc](\[?-?[0-9]*\]?)?$")
_SINGLE_CELL = re.compile(
    r"^=?\s*(?:'(?P<q>(?:[^']|'')+)'|(?P<s>[^'!\s(),][^'!(),]*))!\$?(?P<c>[A-Za-z]{1,3})\$?"
    r"(?P<r>[0-9]{1,7})\s*$"
)


class _PrologEndError(Exception):
    """The first element of a part has started: its prolog has been read."""


def valid_name(name: str) -> bool:
    """Whether ``name`` can be a defined name (the rules Excel applies when one is made).

    >>> [valid_name(n) for n in ("load", "_xlnm.Print_Area", "Größe", "XFE1", "TAX2019")]
    [True, True, True, True, False]
    >>> [valid_name(n) for n in ("R1C1", "rc", "=HYPERLINK(1)", "a b", "")]
    [False, False, False, False, False]
    """
    if not name or len(name) > 255 or not _NAME.match(name) or not _NAME_REST.match(name):
        return False
    m = _A1_NAME.match(name)
    if m is not None and col_index(m.group(1)) <= MAX_COL and 1 <= int(m.group(2)) <= MAX_ROW:
        return False  # a cell reference
    return not _R1C1_NAME.match(name)


def known_encoding(name: str) -> str | None:
    """"UTF-8" or "UTF-16" for the names of those encodings, None for any other.

    >>> known_encoding("utf-8"), known_encoding("UTF-16LE"), known_encoding("ISO-8859-1")
    ('UTF-8', 'UTF-16', None)
    """
    return _ENCODING_NAMES.get(name.upper().replace("-", "").replace("_", ""))


def part_text(raw: bytes, part: str = "part") -> str:
    """The text of an XML part in UTF-8 or UTF-16 (byte-order mark or not), without the mark.

    >>> part_text('<?xml version="1.0" encoding="UTF-16"?><a>é</a>'.encode("utf-16"))
    '<?xml version="1.0" encoding="UTF-16"?><a>é</a>'
    """
    try:
        if raw.startswith(codecs.BOM_UTF8):
            return raw[len(codecs.BOM_UTF8) :].decode("utf-8")
        if raw.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
            return raw.decode("utf-16")
        if raw.startswith(b"<\0"):
            return raw.decode("utf-16-le")
        if raw.startswith(b"\0<"):
            return raw.decode("utf-16-be")
        return raw.decode("utf-8")
    except UnicodeDecodeError:
        raise WorkbookError(f"damaged part {part}: not UTF-8 or UTF-16 text") from None


def part_bytes(text: str) -> bytes:
    """The bytes to store for an XML part's text: UTF-8, its declaration saying UTF-8.

    >>> part_bytes('<?xml version="1.0" encoding="UTF-16"?><a>é</a>')
    b'<?xml version="1.0" encoding="UTF-8"?><a>\\xc3\\xa9</a>'
    """
    m = _XML_DECL.match(text)
    if m is not None and m.group("enc").upper() != "UTF-8":
        text = text[: m.start("enc")] + "UTF-8" + text[m.end("enc") :]
    return text.encode("utf-8")


def local(tag: str) -> str:
    """The local name of a namespaced ElementTree tag."""
    return tag.rpartition("}")[2]


def rels_path(part: str) -> str:
    """Path of the relationships part of ``part``."""
    head, tail = posixpath.split(part)
    return posixpath.join(head, "_rels", tail + ".rels")


def resolve_target(source_part: str, target: str) -> str:
    """Part name a relationship of ``source_part`` points at."""
    if target.startswith("/"):
        return posixpath.normpath(target.lstrip("/"))
    return posixpath.normpath(posixpath.join(posixpath.dirname(source_part), target))


@dataclass(frozen=True)
class SheetEntry:
    """A sheet of the workbook: its name, part, kind and visibility."""

    name: str
    part: str
    kind: str  # "worksheet", "chartsheet", "dialogsheet", "macrosheet" or "unknown"
    state: str = "visible"


@dataclass(frozen=True)
class DefinedName:
    """A defined name as written in the workbook part."""

    name: str
    text: str
    local_sheet: int | None = None
    hidden: bool = False

    def single_cell(self) -> CellRef | None:
        """The cell this name refers to, when it refers to exactly one cell."""
        m = _SINGLE_CELL.match(self.text.strip())
        if not m:
            return None
        sheet = m.group("q").replace("''", "'") if m.group("q") else m.group("s").strip()
        return CellRef(sheet, int(m.group("r")), col_index(m.group("c")))


class Package:
    """An opened .xlsx package; raises WorkbookError if it is not one."""

    def __init__(self, data: bytes, name: str):
        self.name = name
        if data[:8] == OLE_SIGNATURE:
            raise WorkbookError(
                f"{name}: a password-protected workbook or an old .xls file; "
                "save it as an unencrypted .xlsx first"
            )
        try:
            self.zip = zipfile.ZipFile(io.BytesIO(data))
        except (zipfile.BadZipFile, zipfile.LargeZipFile, ValueError, OSError):
            raise WorkbookError(f"{name}: not an .xlsx workbook (not a zip archive)") from None
        self.infos = self.zip.infolist()
        self.names = {i.filename for i in self.infos}
        self.workbook_part = ""  # found by read_structure()
        self.sheets: list[SheetEntry] = []
        self.defined_names: list[DefinedName] = []
        self.invalid_names: list[str] = []  # defined names that are not names: never used
        self.iterate = False  # calcPr asks for iterative calculation
        self._types: tuple[dict[str, str], dict[str, str]] | None = None

    # ----------------------------------------------------------------- reading
    def open(self, part: str) -> IO[bytes]:
        return self.zip.open(part)

    @contextlib.contextmanager
    def _reading(self, part: str) -> Iterator[None]:
        """Reading ``part``: entity declarations are hostile, anything unreadable damaged."""
        try:
            yield
        except DefusedXmlException as exc:
            raise HostileFileError(
                self.name, f"{part} declares a DTD or entities ({exc})"
            ) from None
        except (
            ParseError,
            zipfile.BadZipFile,
            OSError,
            EOFError,
            RuntimeError,
            NotImplementedError,
        ) as exc:
            raise WorkbookError(f"{self.name}: damaged part {part}: {exc}") from None

    def xml(self, part: str) -> Element:
        """Parse a (small) XML part with defusedxml."""
        with self._reading(part):
            return fromstring(self.zip.read(part), forbid_dtd=True)

    def iter_xml(self, part: str, events: tuple[str, ...] = ("end",)) -> Iterator[Element]:
        """Stream the elements of a part (defusedxml), yielding on ``events``."""
        with self._reading(part), self.zip.open(part) as fh:
            for _event, elem in iterparse(fh, events=events, forbid_dtd=True):
                yield elem

    def scan(
        self,
        part: str,
        start: Callable[[str, dict[str, str]], None],
        end: Callable[[str], None],
        text: Callable[[str], None],
        *,
        local_names: bool = True,
    ) -> None:
        """Stream a large part through expat's callbacks, hardened as defusedxml hardens
        it: a DTD, entity declaration or external entity is refused.

        ``start`` and ``end`` get local tag names ("c" for "x:c"); with
        ``local_names=False`` they get the names as written and strip any prefix
        themselves, which saves a Python call on every event of a large part.
        """

        def refuse(*_args: object) -> None:
            raise HostileFileError(self.name, f"{part} declares a DTD or entities")

        parser = expat.ParserCreate()
        parser.buffer_text = True
        parser.SetParamEntityParsing(expat.XML_PARAM_ENTITY_PARSING_NEVER)
        parser.StartDoctypeDeclHandler = refuse
        parser.EntityDeclHandler = refuse
        parser.UnparsedEntityDeclHandler = refuse
        parser.ExternalEntityRefHandler = refuse  # type: ignore[assignment]
        if local_names:
            parser.StartElementHandler = lambda name, attrs: start(name.rpartition(":")[2], attrs)
            parser.EndElementHandler = lambda name: end(name.rpartition(":")[2])
        else:
            parser.StartElementHandler = start
            parser.EndElementHandler = end
        parser.CharacterDataHandler = text
        with self._reading(part), self.zip.open(part) as fh:
            try:  # in chunks read here: an error in a callback stops the parse at once
                while chunk := fh.read(1 << 16):
                    ensure_headroom()  # libexpat out of memory may never return
                    parser.Parse(chunk, False)
                parser.Parse(b"", True)
            except expat.ExpatError as exc:
                if exc.code == expat.errors.codes[expat.errors.XML_ERROR_NO_MEMORY]:
                    raise MemoryError from None
                raise WorkbookError(f"{self.name}: damaged part {part}: {exc}") from None

    def prolog(self, part: str) -> str:
        """The encoding of an XML part as it says (its declaration, else "UTF-16" for a
        UTF-16 byte-order mark, else "UTF-8"; UTF-16 text without the mark XML requires is
        "UTF-16 without a byte-order mark"), read up to its first element.

        A DTD is refused (HostileFileError); see :func:`known_encoding` for the encodings
        a package may use.
        """
        declared: list[str] = []

        def refuse(*_args: object) -> None:
            raise HostileFileError(self.name, f"{part} declares a DTD or entities")

        def first(*_args: object) -> None:
            raise _PrologEndError

        parser = expat.ParserCreate()
        parser.SetParamEntityParsing(expat.XML_PARAM_ENTITY_PARSING_NEVER)
        parser.StartDoctypeDeclHandler = refuse
        parser.EntityDeclHandler = refuse
        parser.XmlDeclHandler = lambda _version, enc, _standalone: declared.append(enc or "")
        parser.StartElementHandler = first
        with self._reading(part), self.zip.open(part) as fh:
            head = fh.read(4)
            try:
                parser.Parse(head, False)
                while chunk := fh.read(4096):
                    parser.Parse(chunk, False)
                parser.Parse(b"", True)
            except _PrologEndError:
                pass
            except expat.ExpatError as exc:
                raise WorkbookError(f"{self.name}: damaged part {part}: {exc}") from None
        if head.startswith((b"<\0", b"\0<")):  # XML requires the mark in UTF-16 text
            return "UTF-16 without a byte-order mark"
        if declared and declared[0]:
            return declared[0]
        return "UTF-16" if head.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)) else "UTF-8"

    def relationships(self, part: str) -> dict[str, tuple[str, str, str]]:
        """Relationships of ``part``: id -> (type suffix, target part, target mode)."""
        rels = rels_path(part)
        if rels not in self.names:
            return {}
        out = {}
        for el in self.xml(rels):
            if local(el.tag) != "Relationship":
                continue
            mode = el.get("TargetMode", "Internal")
            target = el.get("Target", "")
            resolved = target if mode == "External" else resolve_target(part, target)
            rtype = el.get("Type", "")
            out[el.get("Id", "")] = (rtype[rtype.rfind("/") :], resolved, mode)
        return out

    def _find_workbook_part(self) -> str:
        if "[Content_Types].xml" not in self.names:
            raise WorkbookError(f"{self.name}: not an .xlsx workbook (no [Content_Types].xml)")
        for _rtype, target, _mode in (
            r for r in self.relationships("").values() if r[0] == OFFICE_DOCUMENT
        ):
            if target in self.names:
                return target
        if "xl/workbook.xml" in self.names:
            return "xl/workbook.xml"
        raise WorkbookError(f"{self.name}: not an .xlsx workbook (no workbook part)")

    def read_structure(self, max_defined_names: int) -> None:
        """Find the workbook part; read its sheets, defined names and calcPr (streamed)."""
        self.workbook_part = self._find_workbook_part()
        rels = self.relationships(self.workbook_part)
        count = 0
        for el in self.iter_xml(self.workbook_part):
            tag = local(el.tag)
            if tag == "sheet":
                rid = next((v for k, v in el.attrib.items() if local(k) == "id"), "")
                rtype, target, _ = rels.get(rid, ("", "", ""))
                kind = rtype.strip("/") or "unknown"
                if kind not in ("worksheet", "chartsheet", "dialogsheet", "macrosheet"):
                    kind = "unknown"
                self.sheets.append(
                    SheetEntry(el.get("name", ""), target, kind, el.get("state", "visible"))
                )
            elif tag == "definedName":
                count += 1
                if count > max_defined_names:
                    raise HostileFileError(
                        self.name, f"more than {max_defined_names} defined names"
                    )
                lsid = el.get("localSheetId")
                if not valid_name(el.get("name", "")):
                    self.invalid_names.append(el.get("name", ""))
                    continue
                self.defined_names.append(
                    DefinedName(
                        el.get("name", ""),
                        el.text or "",
                        int(lsid) if lsid and lsid.isdigit() else None,
                        el.get("hidden") in ("1", "true"),
                    )
                )
            elif tag == "calcPr":
                self.iterate = el.get("iterate") in ("1", "true")
        if not self.sheets:
            raise WorkbookError(f"{self.name}: the workbook has no sheets")

    def content_type(self, part: str) -> str:
        """The content type [Content_Types].xml gives ``part`` (override, else by extension)."""
        if self._types is None:
            overrides: dict[str, str] = {}
            defaults: dict[str, str] = {}
            for el in self.xml("[Content_Types].xml"):
                tag = local(el.tag)
                if tag == "Override":
                    part_name = el.get("PartName", "").lstrip("/").lower()
                    overrides[part_name] = el.get("ContentType", "")
                elif tag == "Default":
                    defaults[el.get("Extension", "").lower()] = el.get("ContentType", "")
            self._types = (overrides, defaults)
        overrides, defaults = self._types
        key = part.lower()
        if key in overrides:
            return overrides[key]
        return defaults.get(key.rpartition(".")[2], "")

    def parts_of_type(self, suffix: str) -> list[str]:
        """Parts whose declared content type ends with ``suffix`` (e.g. "sheet.main+xml")."""
        return sorted(n for n in self.names if self.content_type(n).lower().endswith(suffix))

    def main_content_type(self) -> str:
        """Content type of the workbook part (tells .xlsx from macro-enabled .xlsm)."""
        return self.content_type(self.workbook_part)

    def is_macro_enabled(self) -> bool:
        return "macroenabled" in self.main_content_type().lower()

    def worksheets(self) -> list[SheetEntry]:
        return [s for s in self.sheets if s.kind == "worksheet"]

    def sheet(self, name: str) -> SheetEntry | None:
        """The sheet called ``name``, compared as Excel compares sheet names."""
        key = sheet_key(name)
        for s in self.sheets:
            if sheet_key(s.name) == key:
                return s
        return None
