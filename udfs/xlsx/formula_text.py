"""Formula text as tokens: where the references, names, numbers and calls are.

A lexer, not a parser: it splits Excel formula text into tokens (strings,
numbers, references with their ``$`` flags and sheet prefix, whole columns and
rows, structured table references, names, function calls, operators) so that
references can be resolved, shifted (shared formulas) and abstracted without
guessing inside strings. Parsing the expression stays the ``formulas``
package's job in the engine.

>>> [(t.kind, t.text) for t in tokenize("=SUM('My sheet'!$A$1:B2)*2")]
[('func', 'SUM('), ('ref', "'My sheet'!$A$1:B2"), ('op', ')'), ('op', '*'), ('number', '2')]
>>> shift_formula("=A1+$B$2*C$3+Parts[Qty]", 2, 1)
'=B3+$B$2*D$3+Parts[Qty]'
"""

from __future__ import annotations

import re
from typing import NamedTuple

from .refs import MAX_COL, MAX_ROW, col_index, col_letters

__all__ = [
    "Area",
    "Token",
    "TokenizeError",
    "shift_formula",
    "tokenize",
]


class TokenizeError(ValueError):
    """Formula text that cannot be split into tokens (an unclosed string, say)."""


_ERRORS = (
    r"\#(?:NULL!|DIV/0!|VALUE!|REF!|NAME\?|NUM!|N/A|SPILL!|CALC!|GETTING_DATA|FIELD!|BLOCKED!"
    r"|CONNECT!|BUSY!|UNKNOWN!|PYTHON!)"
)
_NAME_START = r"[^\W\d]|\\"
_TOKEN = re.compile(
    rf"""
     (?P<string>"(?:[^"]|"")*")
    |(?P<error>{_ERRORS})
    |(?P<array>\{{(?:[^}}"]|"(?:[^"]|"")*")*\}})
    |(?P<prefix>(?:'(?:[^']|'')+'|\[[0-9]+\][^!'\s()]*|(?:{_NAME_START})[\w.]*(?::(?:{_NAME_START})[\w.]*)?)!)
    |(?P<cell>\$?[A-Za-z]{{1,3}}\$?[0-9]{{1,7}}(?::\$?[A-Za-z]{{1,3}}\$?[0-9]{{1,7}})?)(?![\w.(!\[])
    |(?P<cols>\$?[A-Za-z]{{1,3}}:\$?[A-Za-z]{{1,3}})(?![\w.(!\[])
    |(?P<rows>\$?[0-9]{{1,7}}:\$?[0-9]{{1,7}})(?![\w.(!\[])
    |(?P<number>(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[Ee][+-]?[0-9]+)?)
    |(?P<func>(?:{_NAME_START})[\w.]*\()
    |(?P<name>(?:(?:{_NAME_START})[\w.]*)?\[(?:[^\[\]]|\[(?:[^\[\]]|'.)*\])*\]|(?:{_NAME_START})[\w.]*)
    |(?P<space>\s+)
    |(?P<op><>|<=|>=|[-+*/^&=<>%(),;:@!])
    """,
    re.X,
)
_CELL = re.compile(r"(\$?)([A-Za-z]{1,3})(\$?)([0-9]{1,7})")


class Area(NamedTuple):
    """A rectangle of cells with the ``$`` flags of its first and last corner.

    Whole columns have ``rows=None`` style bounds: ``r1 = 1, r2 = MAX_ROW`` and
    ``kind == "cols"``; whole rows likewise with columns. (A named tuple: formulas
    hold hundreds of thousands of them, and a tuple is built several times faster
    than a frozen dataclass.)
    """

    r1: int
    c1: int
    r2: int
    c2: int
    abs_r1: bool = False
    abs_c1: bool = False
    abs_r2: bool = False
    abs_c2: bool = False
    kind: str = "cells"  # "cells", "cols" or "rows"

    def shifted(self, dr: int, dc: int) -> Area | None:
        """The area moved by (dr, dc) where its parts are relative; None off the sheet."""
        r1 = self.r1 if self.abs_r1 or self.kind == "cols" else self.r1 + dr
        r2 = self.r2 if self.abs_r2 or self.kind == "cols" else self.r2 + dr
        c1 = self.c1 if self.abs_c1 or self.kind == "rows" else self.c1 + dc
        c2 = self.c2 if self.abs_c2 or self.kind == "rows" else self.c2 + dc
        if min(r1, r2, c1, c2) < 1 or max(r1, r2) > MAX_ROW or max(c1, c2) > MAX_COL:
            return None
        return Area(r1, c1, r2, c2, self.abs_r1, self.abs_c1, self.abs_r2, self.abs_c2, self.kind)

    def text(self) -> str:
        """The area written back in A1 style with its ``$`` flags."""

        def part(r: int, c: int, ar: bool, ac: bool) -> str:
            if self.kind == "cols":
                return ("$" if ac else "") + col_letters(c)
            if self.kind == "rows":
                return ("$" if ar else "") + str(r)
            return ("$" if ac else "") + col_letters(c) + ("$" if ar else "") + str(r)

        a = part(self.r1, self.c1, self.abs_r1, self.abs_c1)
        if self.kind == "cells" and (self.r1, self.c1) == (self.r2, self.c2):
            return a
        return a + ":" + part(self.r2, self.c2, self.abs_r2, self.abs_c2)


class Token(NamedTuple):
    """One token: ``kind`` is string, error, array, ref, number, func, name, space or op.

    For ``ref``: ``sheet`` is the prefix as written (unquoted; None when there
    is none) and ``area`` the rectangle. ``func`` text ends with "(".
    """

    kind: str
    text: str
    sheet: str | None = None
    area: Area | None = None


def _area(kind: str, text: str) -> Area:
    if kind == "cells":
        parts = [_CELL.fullmatch(p) for p in text.split(":")]
        m1, m2 = parts[0], parts[-1]
        assert m1 is not None and m2 is not None
        r1, c1 = int(m1.group(4)), col_index(m1.group(2))
        r2, c2 = int(m2.group(4)), col_index(m2.group(2))
        flags = (bool(m1.group(3)), bool(m1.group(1)), bool(m2.group(3)), bool(m2.group(1)))
    elif kind == "cols":
        a, b = text.split(":")
        c1, c2 = col_index(a.lstrip("$")), col_index(b.lstrip("$"))
        r1, r2 = 1, MAX_ROW
        flags = (True, a.startswith("$"), True, b.startswith("$"))
    else:
        a, b = text.split(":")
        r1, r2 = int(a.lstrip("$")), int(b.lstrip("$"))
        c1, c2 = 1, MAX_COL
        flags = (a.startswith("$"), True, b.startswith("$"), True)
    if c1 > c2:
        c1, c2 = c2, c1
        flags = (flags[0], flags[3], flags[2], flags[1])
    if r1 > r2:
        r1, r2 = r2, r1
        flags = (flags[2], flags[1], flags[0], flags[3])
    return Area(r1, c1, r2, c2, *flags, kind=kind)


def _in_sheet(area: Area) -> bool:
    return area.r1 >= 1 and area.r2 <= MAX_ROW and area.c1 >= 1 and area.c2 <= MAX_COL


def tokenize(text: str) -> list[Token]:
    """The tokens of a formula (a leading "=" is dropped); raises TokenizeError.

    >>> [t.kind for t in tokenize('=IF(A1>0,"a,b",Sheet2!B:B)')]
    ['func', 'ref', 'op', 'number', 'op', 'string', 'op', 'ref', 'op']
    """
    body = text[1:] if text.startswith("=") else text
    out: list[Token] = []
    pos, end = 0, len(body)
    prefix: str | None = None
    for m in _TOKEN.finditer(body):
        if m.start() != pos:
            raise TokenizeError(f"cannot read the formula at {body[pos:pos + 12]!r}")
        pos = m.end()
        kind = m.lastgroup or "op"
        tok = m.group(0)
        if kind == "prefix":
            if prefix is not None:
                raise TokenizeError(f"two sheet prefixes in a row at {tok!r}")
            sheet = tok[:-1]
            prefix = sheet[1:-1].replace("''", "'") if sheet.startswith("'") else sheet
            continue
        if kind in ("cell", "cols", "rows"):
            area = _area("cells" if kind == "cell" else kind, tok)
            if not _in_sheet(area):  # a name such as ABC12345678 is not a cell
                kind = "name"
            else:
                written = (_quote(prefix) + "!" if prefix is not None else "") + tok
                out.append(Token("ref", written, prefix, area))
                prefix = None
                continue
        if prefix is not None:
            if kind != "name":
                raise TokenizeError(f"a sheet prefix must be followed by a reference ({tok!r})")
            out.append(Token("name", tok, prefix))
            prefix = None
            continue
        out.append(Token(kind, tok))
    if pos != end or prefix is not None:
        raise TokenizeError(f"cannot read the formula at {body[pos:pos + 12]!r}")
    return out


def _quote(sheet: str) -> str:
    if re.fullmatch(r"(?:[^\W\d]|\\)[\w.]*", sheet) and not _CELL.fullmatch(sheet):
        return sheet
    return "'" + sheet.replace("'", "''") + "'"


def shift_formula(text: str, dr: int, dc: int) -> str:
    """``text`` as it reads when copied ``dr`` rows down and ``dc`` columns right
    (relative references move, ``$`` parts stay; off the sheet becomes #REF!)."""
    out: list[str] = []
    for tok in tokenize(text):
        if tok.kind == "ref" and tok.area is not None:
            moved = tok.area.shifted(dr, dc)
            if moved is None:
                out.append("#REF!")
                continue
            prefix = _quote(tok.sheet) + "!" if tok.sheet is not None else ""
            out.append(prefix + moved.text())
        else:
            out.append(tok.text)
    return "=" + "".join(out)

