"""A formula's structure: its text with every reference and constant as a placeholder.

``=Inputs!$B$2*C7+2.5`` on Calc!D7 becomes the parse key ``=_R0*_R1+_K0`` with
the bindings ``_R0`` -> Inputs!$B$2, ``_R1`` -> C7 (relative), ``_K0`` -> 2.5.
Every formula of the same shape shares one parse; cells filled from one formula
share one structure and differ only by where their relative references point.
On the way references are resolved as Excel resolves them: sheet names compared
as Excel compares them, defined names with sheet scope (a name local to the
sheet wins) holding references, constants or formulas, whole columns and rows
bounded by the sheet's used range, structured table references (``Parts[Qty]``,
``[@Qty]``), ``ROW()``/``COLUMN()`` of the cell itself.

>>> from udfs.xlsx.reader import SheetData
>>> calc = SheetData("Calc", 0, "", max_row=9, max_col=4)
>>> ctx = Context([calc], [], [], lambda name: True)
>>> s = ctx.structure("=SUM(A:A)*$B$2+3", 5, 3, 0)
>>> s.text, [(r.name, r.area.r1, r.area.r2) for r in s.refs], s.consts
('=SUM(_R0)*_R1+_K0', [('_R0', 1, 9), ('_R1', 2, 2)], (('_K0', 3),))
"""

from __future__ import annotations

import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from functools import cache
from typing import Any

from udfs.xlsx.formula_text import Area, Token, TokenizeError, tokenize
from udfs.xlsx.package import DefinedName
from udfs.xlsx.reader import SheetData, Table
from udfs.xlsx.refs import MAX_COL, MAX_ROW, col_index, sheet_key

from .deviations import DYNAMIC_FUNCTIONS, REFERENCE_FUNCTIONS

__all__ = ["Context", "RefSlot", "Structure", "relative_text"]

_PREFIXES = ("_XLFN._XLWS.", "_XLFN.", "_XLWS.", "_XLUDF.")
_MAX_NAME_DEPTH = 16
_NAME_CONSTANT = {"number", "string", "error"}


@dataclass(frozen=True, slots=True)
class RefSlot:
    """A reference placeholder: ``sheet`` index and ``area`` as written for ``(row, col)``.

    ``kind`` is "ref" for cells, "row"/"col" for the position of the cell itself.
    """

    name: str
    sheet: int
    area: Area
    kind: str = "ref"

    def at(self, dr: int, dc: int) -> Area | None:
        """The area for a cell ``dr`` rows and ``dc`` columns from the written one."""
        return self.area.shifted(dr, dc) if (dr or dc) else self.area


@dataclass(slots=True)
class Structure:
    """The parse key ``text`` of a formula and what its placeholders stand for."""

    text: str
    refs: tuple[RefSlot, ...] = ()
    consts: tuple[tuple[str, Any], ...] = ()
    functions: frozenset[str] = frozenset()
    problem: str | None = None  # why the formula cannot be evaluated (kept as it is)
    references: bool = False  # some function reads references, not values
    dynamic: bool = False  # OFFSET/INDIRECT: reads cells no reference names


_REL = re.compile(
    r"\"(?:[^\"]|\"\")*\"|'(?:[^']|'')*'"  # strings and quoted sheet names: kept as they are
    r"|(?<![\w.$\]])(\$?)([A-Za-z]{1,3})(\$?)([0-9]{1,7})(?![\w.(!\[])"
)


def number_literal(text: str) -> int | float:
    """The value of a number as written in a formula: a whole number of up to 15 digits
    stays an integer, anything else is the nearest double (as Excel reads it).

    >>> number_literal("0123"), number_literal("1E5"), number_literal(".5")
    (123, 100000.0, 0.5)
    """
    if text.isdigit() and len(text.lstrip("0")) <= 15:
        return int(text)
    return float(text)


def relative_text(text: str, row: int, col: int) -> str:
    """``text`` with each cell reference written relative to (row, col): cells whose
    formulas read the same are filled from one formula.

    >>> relative_text("=A1+$B$2", 2, 2) == relative_text("=A2+$B$2", 3, 2)
    True
    """

    def swap(m: re.Match[str]) -> str:
        if m.group(2) is None:
            return m.group(0)
        c, r = col_index(m.group(2)), int(m.group(4))
        if c > MAX_COL or r > MAX_ROW:
            return m.group(0)
        rr = f"R{r}" if m.group(3) else f"R[{r - row}]"
        cc = f"C{c}" if m.group(1) else f"C[{c - col}]"
        return "\x00" + rr + cc

    return _REL.sub(swap, text)


@cache
def _slot_name(prefix: str, i: int) -> str:
    """``_R3``, ``_K0``: one string for each name, shared by every structure."""
    return f"{prefix}{i}"


@dataclass
class _Build:
    """Placeholders collected while one formula is rewritten."""

    row: int
    col: int
    sheet: int
    refs: list[RefSlot] = field(default_factory=list)
    consts: list[tuple[str, Any]] = field(default_factory=list)
    functions: set[str] = field(default_factory=set)
    problem: str | None = None

    def ref(self, sheet: int, area: Area, kind: str = "ref") -> str:
        for r in self.refs:
            if r.sheet == sheet and r.area == area and r.kind == kind:
                return r.name
        name = _slot_name("_R", len(self.refs))
        self.refs.append(RefSlot(name, sheet, area, kind))
        return name

    def const(self, value: Any) -> str:
        name = _slot_name("_K", len(self.consts))
        self.consts.append((name, value))
        return name


class Context:
    """What resolving a formula needs from its workbook: sheets, names, tables, functions."""

    def __init__(
        self,
        sheets: Sequence[SheetData],
        names: Sequence[DefinedName],
        tables: Sequence[Table],
        known: Callable[[str], bool],
        extra: dict[int, tuple[int, int]] | None = None,
    ):
        self.sheets = list(sheets)
        self._sheet_index = {s.key: i for i, s in enumerate(self.sheets)}
        self.known = known
        self._names: dict[tuple[int | None, str], str] = {}
        for n in names:
            if n.name.startswith("_xlnm."):
                continue
            self._names[(n.local_sheet, n.name.upper())] = n.text
        self._tables = {t.name.upper(): t for t in tables}
        self._extra = extra or {}  # sheet -> (rows, columns) set beyond the used range

    # ------------------------------------------------------------------ lookups
    def sheet_index(self, name: str) -> int | None:
        """Index of the worksheet called ``name`` (Excel's comparison), None if unknown."""
        i = self._sheet_index.get(sheet_key(name))
        return i if i is not None and self.sheets[i].kind == "worksheet" else None

    def name_text(self, name: str, sheet: int) -> str | None:
        """The definition of name ``name`` seen from ``sheet`` (local wins over global)."""
        key = name.upper()
        text = self._names.get((sheet, key))
        return text if text is not None else self._names.get((None, key))

    def used(self, sheet: int) -> tuple[int, int]:
        s = self.sheets[sheet]
        rows, cols = self._extra.get(sheet, (0, 0))
        return max(s.max_row, rows, 1), max(s.max_col, cols, 1)

    # ------------------------------------------------------------------ rewriting
    def structure(self, text: str, row: int, col: int, sheet: int) -> Structure:
        """The structure of ``text`` (a formula written for ``sheet``!(row, col))."""
        build = _Build(row, col, sheet)
        try:
            body = self._rewrite(tokenize(text), build, sheet, 0, (0, 0))
        except TokenizeError as exc:
            return Structure(text, problem=f"cannot read the formula ({exc})")
        funcs = frozenset(build.functions)
        return Structure(
            "=" + body,
            tuple(build.refs),
            tuple(build.consts),
            funcs,
            build.problem,
            references=bool(funcs & REFERENCE_FUNCTIONS) or ":" in _outside_refs(body),
            dynamic=bool(funcs & DYNAMIC_FUNCTIONS),
        )

    def _rewrite(
        self, tokens: list[Token], b: _Build, sheet: int, depth: int, base: tuple[int, int]
    ) -> str:
        out: list[str] = []
        prev = ""
        for i, tok in enumerate(tokens):
            kind = tok.kind
            if kind == "ref":
                piece = self._ref(tok, b, sheet, base)
            elif kind == "number":
                piece = b.const(number_literal(tok.text))
            elif kind == "string":
                piece = b.const(tok.text[1:-1].replace('""', '"'))
            elif kind == "func":
                name = tok.text[:-1].upper()
                for p in _PREFIXES:
                    if name.startswith(p):
                        name = name[len(p) :]
                        break
                b.functions.add(name)
                if not self.known(name) and b.problem is None:
                    b.problem = f"unsupported function {name}"
                nxt = tokens[i + 1].text if i + 1 < len(tokens) else ""
                if name in ("ROW", "COLUMN") and nxt == ")":
                    area = Area(b.row, b.col, b.row, b.col)
                    piece = name + "(" + b.ref(b.sheet, area, name.lower())
                else:
                    piece = name + "("
            elif kind == "name":
                piece = self._name(tok, b, sheet, depth, base)
            elif kind == "space":
                nxt = tokens[i + 1].kind if i + 1 < len(tokens) else ""
                piece = " " if prev in ("ref", "name") and nxt in ("ref", "name") else ""
            else:
                piece = tok.text
            out.append(piece)
            if kind != "space":
                prev = kind
        return "".join(out)

    def _ref(self, tok: Token, b: _Build, sheet: int, base: tuple[int, int]) -> str:
        assert tok.area is not None
        target = sheet
        if tok.sheet is not None:
            if "[" in tok.sheet and "]" in tok.sheet:  # [1]Sheet, 'C:\\dir\\[book.xlsx]Sheet'
                b.problem = b.problem or f"external reference {tok.text}"
                return "#REF!"
            if ":" in tok.sheet:
                b.problem = b.problem or f"3-D reference {tok.text}"
                return "#REF!"
            found = self.sheet_index(tok.sheet)
            if found is None:
                return "#REF!"
            target = found
        area = tok.area
        if base != (0, 0):  # a name's relative parts count from A1 of the using cell
            moved = area.shifted(*base)
            if moved is None:
                return "#REF!"
            area = moved
        rows, cols = self.used(target)
        if area.kind == "cols":
            area = Area(1, area.c1, rows, area.c2, True, area.abs_c1, True, area.abs_c2, "cols")
        elif area.kind == "rows":
            area = Area(area.r1, 1, area.r2, cols, area.abs_r1, True, area.abs_r2, True, "rows")
        return b.ref(target, area)

    def _name(self, tok: Token, b: _Build, sheet: int, depth: int, base: tuple[int, int]) -> str:
        text = tok.text
        upper = text.upper()
        if upper in ("TRUE", "FALSE"):
            return upper
        if "[" in text:
            return self._table_ref(text, b)
        scope = sheet
        if tok.sheet is not None:
            found = self.sheet_index(tok.sheet)
            if found is None:
                return "#REF!"
            scope = found
        definition = self.name_text(text, scope)
        if definition is None:
            return upper  # a LET/LAMBDA variable, or an unknown name (#NAME?)
        if depth >= _MAX_NAME_DEPTH:
            b.problem = b.problem or f"defined name {text} refers to itself"
            return "#NAME?"
        try:
            inner = tokenize(definition)
        except TokenizeError:
            b.problem = b.problem or f"defined name {text} cannot be read"
            return "#NAME?"
        if len(inner) == 1 and inner[0].kind in _NAME_CONSTANT:
            only = inner[0]
            if only.kind == "number":
                return b.const(number_literal(only.text))
            if only.kind == "string":
                return b.const(only.text[1:-1].replace('""', '"'))
            return only.text
        # relative parts of a name's references count from A1 of the cell using it
        shift = (b.row - 1, b.col - 1)
        return "(" + self._rewrite(inner, b, scope, depth + 1, shift) + ")"

    def _table_ref(self, text: str, b: _Build) -> str:
        head, _, spec = text.partition("[")
        spec = spec[:-1]
        table = self._tables.get(head.upper()) if head else self._table_at(b)
        if table is None:
            return "#REF!"
        items = re.findall(r"\[((?:[^\[\]']|'.)*)\]", spec) if spec.startswith("[") else [spec]
        specials = {i.strip().upper() for i in items if i.strip().startswith("#")}
        cols = [i for i in items if not i.strip().startswith("#")]
        this_row = "#THIS ROW" in specials
        if cols and cols[0].startswith("@"):
            this_row, cols[0] = True, cols[0][1:].strip("[]")
        elif spec.startswith("@"):
            this_row, cols = True, [spec[1:].strip("[]")] if spec[1:] else []
        names = [re.sub(r"'(.)", r"\1", c).upper() for c in cols if c]
        known = [c.upper() for c in table.columns]
        idx = []
        for n in names:
            if n not in known:
                return "#REF!"
            idx.append(known.index(n))
        c1 = table.c1 + (min(idx) if idx else 0)
        c2 = table.c1 + (max(idx) if idx else table.c2 - table.c1)
        r1, r2 = table.r1 + table.header_rows, table.r2 - table.totals_rows
        if "#ALL" in specials:
            r1, r2 = table.r1, table.r2
        elif "#HEADERS" in specials:
            r1, r2 = table.r1, table.r1 + table.header_rows - 1
            if "#DATA" in specials:
                r2 = table.r2 - table.totals_rows
        elif "#TOTALS" in specials:
            r1, r2 = table.r2 - table.totals_rows + 1, table.r2
            if "#DATA" in specials:
                r1 = table.r1 + table.header_rows
        if this_row:
            if not r1 <= b.row <= r2:
                return "#VALUE!"
            area = Area(b.row, c1, b.row, c2, False, True, False, True)
        else:
            if r2 < r1:
                return "#REF!"
            area = Area(r1, c1, r2, c2, True, True, True, True)
        target = self.sheet_index(table.sheet)
        return "#REF!" if target is None else b.ref(target, area)

    def _table_at(self, b: _Build) -> Table | None:
        """The table whose rows hold the cell (an unqualified ``[@Col]`` is read there)."""
        for t in self._tables.values():
            if self.sheet_index(t.sheet) == b.sheet and t.r1 <= b.row <= t.r2:
                return t
        return None


def _outside_refs(body: str) -> str:
    """The formula text without strings (to look for range operators on results)."""
    return re.sub(r"\"(?:[^\"]|\"\")*\"|_R[0-9]+:_R[0-9]+", "", body)
