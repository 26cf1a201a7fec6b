"""Cell references and typed values as users write them on the command line.

>>> parse_cell("'Cell design'!$B$4")
CellRef(sheet='Cell design', row=4, col=2)
>>> CellRef("Cell design", 4, 2).address
"'Cell design'!B4"
>>> parse_value("1.5e3"), parse_value("true"), parse_value('"42"'), parse_value("LiFePO4")
(1500.0, True, '42', 'LiFePO4')
"""

from __future__ import annotations

import math
import re
from typing import NamedTuple

from .file_errors import ReferenceSyntaxError

__all__ = [
    "MAX_COL",
    "MAX_ROW",
    "CellRef",
    "col_index",
    "col_letters",
    "parse_cell",
    "parse_value",
    "quote_sheet",
    "sheet_key",
    "split_coordinate",
]

MAX_ROW = 1_048_576  # Excel's sheet size
MAX_COL = 16_384  # column XFD

_UNQUOTED_SHEET = re.compile(r"[A-Za-z_\u00c0-\uffff][\w.\u00c0-\uffff]*")
_CELL_TEXT = re.compile(
    r"""^\s*(?:(?:'(?P<qsheet>(?:[^']|'')+)'|(?P<sheet>[^!'=\s][^!'=]*?))!)?
        \$?(?P<col>[A-Za-z]{1,3})\$?(?P<row>[0-9]{1,7})\s*$""",
    re.X,
)
_COORD = re.compile(r"^\$?([A-Za-z]{1,3})\$?([0-9]{1,7})$")


def col_index(letters: str) -> int:
    """1-based column number of ``letters``: ``col_index("AB") == 28``."""
    n = 0
    for ch in letters.upper():
        n = n * 26 + (ord(ch) - 64)
    return n


def col_letters(index: int) -> str:
    """Column letters of a 1-based number: ``col_letters(28) == "AB"``."""
    out = ""
    while index > 0:
        index, rem = divmod(index - 1, 26)
        out = chr(65 + rem) + out
    return out


def sheet_key(name: str) -> str:
    """A sheet name as Excel compares it: each character in upper case where that is one
    character, so "inputs" matches "Inputs" but "Maße" does not match "Masse".

    >>> sheet_key("Inputs") == sheet_key("INPUTS"), sheet_key("Maße") == sheet_key("Masse")
    (True, False)
    """
    return "".join(u if len(u := ch.upper()) == 1 else ch for ch in name)


def quote_sheet(name: str) -> str:
    """A sheet name as written in a formula: quoted unless plain."""
    if _UNQUOTED_SHEET.fullmatch(name) and not re.fullmatch(r"[A-Za-z]{1,3}[0-9]+", name):
        return name
    return "'" + name.replace("'", "''") + "'"


class CellRef(NamedTuple):
    """One cell: sheet name as in the workbook, 1-based row and column."""

    sheet: str
    row: int
    col: int

    @property
    def coordinate(self) -> str:
        return f"{col_letters(self.col)}{self.row}"

    @property
    def address(self) -> str:
        return f"{quote_sheet(self.sheet)}!{self.coordinate}"

    def __str__(self) -> str:
        return self.address


def split_coordinate(text: str) -> tuple[int, int]:
    """(row, col) of an A1 coordinate such as ``"B4"`` or ``"$B$4"``."""
    m = _COORD.match(text.strip())
    if not m:
        raise ReferenceSyntaxError(f"{text!r} is not a cell coordinate such as B4")
    row, col = int(m.group(2)), col_index(m.group(1))
    _check_bounds(text, row, col)
    return row, col


def _check_bounds(text: str, row: int, col: int) -> None:
    if not 1 <= row <= MAX_ROW or not 1 <= col <= MAX_COL:
        raise ReferenceSyntaxError(
            f"{text!r} is outside a sheet (rows 1 to {MAX_ROW}, columns A to XFD)"
        )


def parse_cell(text: str) -> CellRef:
    """Read ``Sheet!B4``, ``'My sheet'!$B$4`` or ``B4`` (sheet "" = not given)."""
    m = _CELL_TEXT.match(text)
    if not m:
        raise ReferenceSyntaxError(
            f"{text!r} is not a cell reference; write Sheet!B4 or 'Sheet name'!B4"
        )
    sheet = m.group("qsheet")
    sheet = sheet.replace("''", "'") if sheet is not None else (m.group("sheet") or "")
    row, col = int(m.group("row")), col_index(m.group("col"))
    _check_bounds(text, row, col)
    return CellRef(sheet.strip() if m.group("qsheet") is None else sheet, row, col)


def parse_value(text: str) -> float | bool | str:
    """A typed cell value: number, TRUE/FALSE, "quoted text" or plain text.

    Empty text, NaN and infinity are refused (a cell cannot hold them).
    """
    s = text.strip()
    if not s:
        raise ReferenceSyntaxError(
            "empty value; give a number, TRUE/FALSE or text (quote text that looks like a number)"
        )
    if len(s) >= 2 and s[0] == s[-1] == '"':
        return s[1:-1].replace('""', '"')
    if s.upper() in ("TRUE", "FALSE"):
        return s.upper() == "TRUE"
    try:
        x = float(s.replace("_", "x"))  # no "1_000": it reads as text
    except ValueError:
        return s
    if not math.isfinite(x):
        raise ReferenceSyntaxError(f"{text!r}: a cell cannot hold NaN or infinity")
    return x
