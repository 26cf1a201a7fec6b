r"""Text that leaves the program: CSV cells, spreadsheet cells, the terminal, messages.

Workbook text (cell values, defined names, file names, formulas quoted in
messages) comes from whoever wrote the workbook. Before it leaves cellwright:

* **CSV cells** (:func:`csv_cell`): text that a spreadsheet program would
  read as a formula -- it starts with ``=``, ``+``, ``-``, ``@``, a tab or a
  carriage return -- gets a leading apostrophe ``'``, the usual neutralising
  of CSV injection (OWASP, "CSV Injection"); numbers stay numbers;
* **.xlsx cells written with openpyxl** (:func:`sheet_text`,
  :func:`text_cell`): text is stored as text (the cell's data type ``"s"``,
  openpyxl's public attribute; otherwise text starting with ``=`` becomes a
  live formula), characters XML cannot hold (and carriage returns, which XML
  readers turn into line feeds) are written as ``_xHHHH_`` as Excel writes
  them (and a literal ``_xHHHH_`` is protected as ``_x005F_`` does), at most
  32,767 characters (Excel's cell limit);
* **the terminal** (:func:`show`): control characters (C0, DEL, C1), Unicode
  format and bidirectional controls, line separators and undecodable bytes
  are shown escaped (``\x1b``, ``\u202e``), never sent raw, and the text is
  cut at a length limit, saying so;
* **messages** (:func:`one_line`): one line (runs of white space become one
  space), escaped as :func:`show`, bounded in length;
* **command-line text** (:func:`check_argument`): bytes that are not UTF-8
  (arriving as lone surrogates) are refused with a one-line reason.

>>> csv_cell('=HYPERLINK("http://x")'), csv_cell("-1+2"), csv_cell(-1.5), csv_cell("LFP")
('\'=HYPERLINK("http://x")', "'-1+2", -1.5, 'LFP')
>>> print(show("FAIL\x1b[2K\rall checks pass"))
FAIL\x1b[2K\rall checks pass
>>> one_line("line one\n  line two", limit=12)
'line one lin... (cut; 19 characters in all)'
>>> sheet_text("a\x01b_x0041_")
'a_x0001_b_x005F_x0041_'
"""

from __future__ import annotations

import math
import re
import unicodedata
from typing import Any

from udfs.xlsx.file_errors import ReferenceSyntaxError

__all__ = [
    "FORMULA_TRIGGERS",
    "MAX_CELL_TEXT",
    "check_argument",
    "csv_cell",
    "one_line",
    "sheet_text",
    "show",
    "text_cell",
]

#: First characters that make a spreadsheet program read a CSV field as a formula.
FORMULA_TRIGGERS = ("=", "+", "-", "@", "\t", "\r")
#: Excel's limit on the characters of one cell (Microsoft, "Excel specifications and limits").
MAX_CELL_TEXT = 32_767

_XML_ILLEGAL = re.compile(r"[\x00-\x08\x0b-\x1f\ufffe\uffff\ud800-\udfff]")  # CR too: XML
# readers turn a raw CR into LF, so Excel writes it escaped as well
_LITERAL_ESCAPE = re.compile(r"_(x[0-9A-Fa-f]{4}_)")
_SHORT = {"\n": "\\n", "\r": "\\r", "\t": "\\t"}


def csv_cell(value: Any) -> Any:
    """A CSV field: text a spreadsheet would run as a formula gets a leading ``'``.

    Numbers, booleans and None are returned unchanged (a negative number is a
    number, not a formula).
    """
    if isinstance(value, str) and value.startswith(FORMULA_TRIGGERS):
        return "'" + value
    return value


def sheet_text(text: str) -> str:
    """Text for an .xlsx cell: XML-illegal characters as ``_xHHHH_``, at most 32,767 characters."""
    text = _LITERAL_ESCAPE.sub(r"_x005F_\1", text)
    text = _XML_ILLEGAL.sub(lambda m: f"_x{ord(m.group(0)):04X}_", text)
    if len(text) > MAX_CELL_TEXT:
        note = "... (cut)"
        text = text[: MAX_CELL_TEXT - len(note)] + note
    return text


def text_cell(ws: Any, value: Any) -> Any:
    """A cell for ``ws.append`` (openpyxl, write-only worksheets included) holding ``value``.

    Text is stored as text whatever it starts with; non-finite numbers become
    the text ``#NUM!``; other values are returned as they are (openpyxl writes
    them with their own types).
    """
    from openpyxl.cell import WriteOnlyCell

    if isinstance(value, float) and not math.isfinite(value):
        value = "#NUM!"
    if not isinstance(value, str):
        return value
    cell = WriteOnlyCell(ws, value=sheet_text(value))
    cell.data_type = "s"  # text, even when it starts with "=" (openpyxl's public attribute)
    return cell


def _escaped(ch: str) -> str:
    code = ord(ch)
    if ch in _SHORT:
        return _SHORT[ch]
    if code < 0x20 or 0x7F <= code <= 0x9F:
        return f"\\x{code:02x}"
    if code < 0xA0:
        return ch
    category = unicodedata.category(ch)
    if category in ("Cc", "Cf", "Cs", "Zl", "Zp", "Co", "Cn"):
        return f"\\u{code:04x}" if code <= 0xFFFF else f"\\U{code:08x}"
    return ch


def _escape_upto(text: str, limit: int) -> tuple[str, bool]:
    """``text`` escaped, at most ``limit`` characters of it; True when it was cut."""
    out: list[str] = []
    used = 0
    for ch in text[: limit + 1]:
        piece = _escaped(ch)
        if used + len(piece) > limit:
            return "".join(out), True
        out.append(piece)
        used += len(piece)
    return "".join(out), len(text) > limit


def show(text: object, limit: int = 200) -> str:
    """Workbook text for the terminal: control characters escaped, at most ``limit`` characters.

    A longer text is cut and says how long it was:

    >>> show("x" * 500, limit=10)
    'xxxxxxxxxx... (cut; 500 characters in all)'
    """
    text = str(text)
    shown, cut = _escape_upto(text, limit)
    if cut:
        return f"{shown}... (cut; {len(text):,} characters in all)"
    return shown


def one_line(text: object, limit: int = 400) -> str:
    """A message on one line for the terminal: white space runs become one space, control
    characters are escaped (see :func:`show`), at most ``limit`` characters (then says so)."""
    text = str(text)
    total = len(text)
    head = text[: 4 * limit + 64]  # enough for the shown part even after collapsing spaces
    flat = " ".join(head.split())
    shown, cut = _escape_upto(flat, limit)
    if cut or len(head) < total:
        return f"{shown}... (cut; {total:,} characters in all)"
    return shown


def check_argument(text: str, what: str) -> str:
    r"""``text`` from the command line, refused when it holds bytes that are not UTF-8.

    Python hands such bytes over as lone surrogates (``\udcff``), which no
    file or terminal can take; the reason names the argument.

    >>> check_argument("Inputs!B4=40", "--set")
    'Inputs!B4=40'
    >>> check_argument("Inputs!B4=\udcff", "--set")
    Traceback (most recent call last):
    ...
    udfs.xlsx.file_errors.ReferenceSyntaxError: --set 'Inputs!B4=\udcff': not UTF-8 text
    """
    if any("\ud800" <= ch <= "\udfff" for ch in text):
        raise ReferenceSyntaxError(
            f"{what} '{show(text, 80)}': not UTF-8 text"
        )
    return text
