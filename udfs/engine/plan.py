"""The evaluation plan of a workbook: blocks of cells filled from one formula, in order.

A **unit** is a run of cells (down a column, or along a row) filled from one
formula -- the same structure with references that move with the cell -- or a
single cell, or an array formula. Units depend on the units whose cells their
references cover (found through an interval index per column, never by
expanding ranges). A run whose cells read only the cells before them in the
run (a running total, ``=B4+A5`` filled down) stays one unit computed cell by
cell in order (``sequential``); a unit that reads its own cells otherwise, or
units in a cycle, are split into single cells and ordered cell by cell; what
still forms a cycle is a circular reference. Each unit gets a depth (longest path from the inputs):
units of one depth never depend on one another, so units of one depth sharing
a structure can be evaluated in one stacked call.

>>> import io, openpyxl
>>> from udfs.xlsx.reader import read_workbook
>>> wb = openpyxl.Workbook(); ws = wb.active
>>> for r in range(1, 6): ws[f"A{r}"] = r; ws[f"B{r}"] = f"=A{r}*2"; ws[f"C{r}"] = f"=B{r}+1"
>>> buf = io.BytesIO(); wb.save(buf)
>>> p = Plan(read_workbook(buf.getvalue(), "x.xlsx"), lambda name: True)
>>> [(len(u.cells), u.depth) for u in p.units]
[(5, 0), (5, 1)]
"""

from __future__ import annotations

import bisect
from collections import defaultdict
from collections.abc import Callable, Iterable, Iterator
from collections.abc import Set as AbstractSet
from dataclasses import dataclass

from udfs.xlsx.file_errors import HostileFileError
from udfs.xlsx.formula_text import Area
from udfs.xlsx.reader import FormulaCell, WorkbookData
from udfs.xlsx.refs import col_letters

from .structure import Context, RefSlot, Structure, relative_text

__all__ = ["CellIndex", "Key", "Plan", "Unit"]

Key = tuple[int, int, int]  # (sheet index, row, column)
#: The dependencies or readers of a unit that has none (most units of a large sheet):
#: one shared empty set instead of two empty sets per unit.
_NO_UNITS: frozenset[int] = frozenset()
Rect = tuple[int, int, int, int, int]  # (sheet, r1, c1, r2, c2)


@dataclass(eq=False, slots=True)
class Unit:
    """Cells evaluated together: one structure; ``cells`` as (row, col) in order."""

    sheet: int
    cells: list[tuple[int, int]]
    structure: Structure
    anchor: tuple[int, int]  # the cell the structure's areas are written for
    span: tuple[int, int, int, int] | None = None  # an array formula's range
    deps: AbstractSet[int] = _NO_UNITS  # units it reads
    readers: AbstractSet[int] = _NO_UNITS  # units reading it
    index: int = 0
    depth: int = 0
    problem: str | None = None  # not evaluated: why
    sequential: bool = False  # reads earlier cells of its own: computed cell by cell, in order

    def cell_keys(self) -> Iterator[Key]:
        """Every cell the unit fills (an array formula's whole range)."""
        if self.span is not None:
            r1, c1, r2, c2 = self.span
            for r in range(r1, r2 + 1):
                for c in range(c1, c2 + 1):
                    yield (self.sheet, r, c)
        else:
            for r, c in self.cells:
                yield (self.sheet, r, c)

    def rect(self) -> tuple[int, int, int, int]:
        if self.span is not None:
            return self.span
        rows = [r for r, _ in self.cells]
        cols = [c for _, c in self.cells]
        return min(rows), min(cols), max(rows), max(cols)

    def area(self, slot: RefSlot, cell: tuple[int, int]) -> Area | None:
        """Where ``slot`` points for ``cell`` (None: off the sheet, #REF!)."""
        return slot.at(cell[0] - self.anchor[0], cell[1] - self.anchor[1])

    def reach(self, slot: RefSlot) -> Rect | None:
        """Every cell ``slot`` covers over all the unit's cells (its bounding box)."""
        first, last = self.area(slot, self.cells[0]), self.area(slot, self.cells[-1])
        boxes = [a for a in (first, last) if a is not None]
        if not boxes:
            return None
        return (
            slot.sheet,
            min(a.r1 for a in boxes),
            min(a.c1 for a in boxes),
            max(a.r2 for a in boxes),
            max(a.c2 for a in boxes),
        )

    @property
    def where(self) -> str:
        r, c = self.cells[0]
        return f"{col_letters(c)}{r}"

    def reads_only_earlier_cells(self) -> bool:
        """True when each cell reads, of the unit's own cells, only those before it
        (a run down a column or along a row; never an array formula)."""
        if self.span is not None or len(self.cells) < 2:
            return False
        (r0, c0), (rn, cn) = self.cells[0], self.cells[-1]
        down = c0 == cn
        for slot in self.structure.refs:
            if slot.kind != "ref" or slot.sheet != self.sheet:
                continue
            for r, c in self.cells:
                a = self.area(slot, (r, c))
                if a is None:
                    continue
                if down:
                    hit = a.c1 <= c0 <= a.c2 and max(a.r1, r0) <= min(a.r2, rn)
                    if hit and min(a.r2, rn) >= r:
                        return False
                else:
                    hit = a.r1 <= r0 <= a.r2 and max(a.c1, c0) <= min(a.c2, cn)
                    if hit and min(a.c2, cn) >= c:
                        return False
        return True


class CellIndex:
    """Per sheet and column, the row intervals of the units' cells."""

    def __init__(self) -> None:
        self.cols: dict[tuple[int, int], list[tuple[int, int, int]]] = defaultdict(list)
        self._ready: dict[tuple[int, int], tuple[list[int], list[int], list[int]]] = {}

    def add(self, unit: Unit) -> None:
        if unit.span is not None or len({c for _, c in unit.cells}) > 1:
            r1, c1, r2, c2 = unit.rect()
            by_col: dict[int, list[int]] = defaultdict(list)
            if unit.span is not None:
                for c in range(c1, c2 + 1):
                    by_col[c] = [r1, r2]
            else:
                for r, c in unit.cells:
                    by_col[c] = [r, r]
            for c, (a, b) in by_col.items():
                self.cols[(unit.sheet, c)].append((a, b, unit.index))
        else:
            r1, c1, r2, _ = unit.rect()
            self.cols[(unit.sheet, c1)].append((r1, r2, unit.index))
        self._ready.clear()

    def find(self, rect: Rect) -> Iterator[int]:
        """Units with a cell in ``rect``."""
        sheet, r1, c1, r2, c2 = rect
        if c2 - c1 > 64:
            cols: Iterable[int] = sorted(c for (s, c) in self.cols if s == sheet and c1 <= c <= c2)
        else:
            cols = range(c1, c2 + 1)
        for c in cols:
            key = (sheet, c)
            if key not in self.cols:
                continue
            ready = self._ready.get(key)
            if ready is None:
                items = sorted(self.cols[key])
                starts = [a for a, _, _ in items]
                ready = (starts, [b for _, b, _ in items], [u for _, _, u in items])
                self._ready[key] = ready
            starts, ends, units = ready
            for i in range(bisect.bisect_left(ends, r1), bisect.bisect_right(starts, r2)):
                yield units[i]


def _runs(cells: list[tuple[int, int]]) -> list[list[tuple[int, int]]]:
    """Cells split into runs down columns; along rows when that gives fewer runs."""

    def split(order: list[tuple[int, int]], down: bool) -> list[list[tuple[int, int]]]:
        out: list[list[tuple[int, int]]] = []
        for cell in order:
            if out:
                r, c = out[-1][-1]
                nxt = (r + 1, c) if down else (r, c + 1)
                if cell == nxt:
                    out[-1].append(cell)
                    continue
            out.append([cell])
        return out

    down = split(sorted(cells, key=lambda rc: (rc[1], rc[0])), True)
    if len(down) == len(cells) and len(cells) > 1:
        across = split(sorted(cells), False)
        if len(across) < len(down):
            return across
    return down


class Plan:
    """Units of a workbook's formulas with their dependencies, depths and problems."""

    def __init__(
        self,
        book: WorkbookData,
        known: Callable[[str], bool],
        extra: dict[int, tuple[int, int]] | None = None,
        max_text: int | None = None,
    ):
        """``max_text``: characters of distinct formulas (as written) past which the
        workbook is refused before any of them is read further (HostileFileError)."""
        self.book = book
        self.max_text = max_text
        self.text_size = 0
        self.context = Context(book.sheets, book.defined_names, book.tables, known, extra)
        self.units: list[Unit] = []
        self.owner: dict[Key, int] = {}
        self.circular: list[list[Key]] = []
        self._group(book)
        self._link()
        self._order()

    # ------------------------------------------------------------------ units
    def _group(self, book: WorkbookData) -> None:
        structures: dict[tuple[int, str, tuple[int, int]], Structure] = {}
        for sheet in book.sheets:
            groups: dict[str, list[tuple[int, int]]] = defaultdict(list)
            firsts: dict[str, FormulaCell] = {}
            texts: dict[tuple[str, tuple[int, int]], str] = {}
            for pos, fc in sheet.formulas.items():  # pos: the reader's tuple, shared
                if fc.kind in ("array", "dataTable"):
                    self._add_single(sheet.index, pos, fc, structures)
                    continue
                # the cells of one filled-down (shared) formula share its text and anchor
                key = texts.get((fc.text, fc.anchor)) if fc.kind == "shared" else None
                if key is None:
                    key = relative_text(fc.text, *fc.anchor)
                    if fc.kind == "shared":
                        texts[(fc.text, fc.anchor)] = key
                    if key not in groups:
                        self._count_text(len(fc.text))
                groups[key].append(pos)
                if key not in firsts:
                    firsts[key] = FormulaCell(fc.text_at(*pos), pos)
            for key, cells in groups.items():
                first = firsts[key]
                s = self._structure(sheet.index, first, structures)
                for run in _runs(cells):
                    self._add(Unit(sheet.index, run, s, first.anchor, problem=s.problem))

    def _count_text(self, n: int) -> None:
        self.text_size += n
        if self.max_text is not None and self.text_size > self.max_text:
            raise HostileFileError(
                self.book.name,
                f"its distinct formulas hold more than {self.max_text:,} characters "
                "(parsing costs about 7 us a character)",
            )

    def _structure(
        self,
        sheet: int,
        fc: FormulaCell,
        cache: dict[tuple[int, str, tuple[int, int]], Structure],
    ) -> Structure:
        key = (sheet, fc.text, fc.anchor)
        s = cache.get(key)
        if s is None:
            s = self.context.structure(fc.text, fc.anchor[0], fc.anchor[1], sheet)
            cache[key] = s
        return s

    def _add_single(
        self,
        sheet: int,
        cell: tuple[int, int],
        fc: FormulaCell,
        cache: dict[tuple[int, str, tuple[int, int]], Structure],
    ) -> None:
        if fc.kind == "dataTable":
            s = Structure(fc.text, problem="a what-if data table (computed only by Excel)")
        else:
            s = self._structure(sheet, FormulaCell(fc.text_at(*cell), cell), cache)
        self._add(Unit(sheet, [cell], s, cell, fc.span, problem=s.problem))

    def _add(self, unit: Unit) -> None:
        unit.index = len(self.units)
        self.units.append(unit)
        for key in unit.cell_keys():
            self.owner.setdefault(key, unit.index)

    # ------------------------------------------------------------------ graph
    def _link(self, only: set[int] | None = None) -> None:
        index = CellIndex()
        for u in self.units:
            index.add(u)
        todo = self.units if only is None else [self.units[i] for i in sorted(only)]
        for u in todo:
            deps: set[int] = set()
            for slot in u.structure.refs:
                if slot.kind != "ref":
                    continue
                rect = u.reach(slot)
                if rect is not None:
                    deps.update(index.find(rect))
            if u.sequential:
                deps.discard(u.index)
            u.deps = deps or _NO_UNITS
        readers: dict[int, set[int]] = {}
        for u in self.units:
            for d in u.deps:
                readers.setdefault(d, set()).add(u.index)
        for u in self.units:
            u.readers = readers.get(u.index, _NO_UNITS)

    def _order(self) -> None:
        """Depths by Kahn's algorithm. Units on a cycle (a run reading its own cells
        included) are split into single cells and ordered again; cells still on a
        cycle are a circular reference: not evaluated, read with their cached values."""
        stuck = self._depths()
        if not stuck:
            return
        in_order = [
            comp[0]
            for comp in _cycles(self.units, stuck)
            if len(comp) == 1 and self.units[comp[0]].reads_only_earlier_cells()
        ]
        for i in in_order:
            u = self.units[i]
            u.sequential = True
            u.deps = u.deps - {i}
            u.readers = u.readers - {i}
        if in_order:
            stuck = self._depths()
            if not stuck:
                return
        multi = {
            i for comp in _cycles(self.units, stuck) for i in comp if len(self.units[i].cells) > 1
        }
        if multi:
            self._split(multi)
            stuck = self._depths()
        if not stuck:
            return
        comps = _cycles(self.units, stuck)
        cyclic = {i for comp in comps for i in comp}
        for comp in comps:
            keys = sorted(k for i in comp for k in self.units[i].cell_keys())
            self.circular.append(keys)
            for i in comp:
                self.units[i].problem = self.units[i].problem or "circular reference"
        for i in cyclic:
            self.units[i].deps = _NO_UNITS
        for i in cyclic:  # read with cached values: no longer waiting for each other
            self.units[i].readers = self.units[i].readers - cyclic
        self._depths()

    def _depths(self) -> set[int]:
        """Set every unit's depth; the units left over (on or after a cycle)."""
        indeg = {u.index: len(u.deps) for u in self.units}
        ready = [i for i, n in indeg.items() if n == 0]
        for u in self.units:
            u.depth = 0
        done: set[int] = set()
        while ready:
            i = ready.pop()
            done.add(i)
            u = self.units[i]
            for r in u.readers:
                reader = self.units[r]
                reader.depth = max(reader.depth, u.depth + 1)
                indeg[r] -= 1
                if indeg[r] == 0:
                    ready.append(r)
        return {u.index for u in self.units} - done

    def _split(self, parts_of: set[int]) -> None:
        """Units on a cycle (or reading their own cells) become single cells."""
        keep = [u for u in self.units if u.index not in parts_of]
        parts = [u for u in self.units if u.index in parts_of]
        self.units, self.owner = [], {}
        for u in keep:
            self._add(u)
        for u in parts:
            for cell in u.cells:  # an array formula is one cell and keeps its span
                self._add(Unit(u.sheet, [cell], u.structure, u.anchor, u.span, problem=u.problem))
        self._link()


    # ------------------------------------------------------------------ queries
    def schedule(self, units: Iterable[int]) -> list[list[Unit]]:
        """``units`` by depth, then grouped by structure (one stacked call per group)."""
        by: dict[tuple[int, str], list[Unit]] = defaultdict(list)
        for i in units:
            u = self.units[i]
            by[(u.depth, u.structure.text)].append(u)
        return [by[k] for k in sorted(by, key=lambda k: k[0])]

    def downstream(self, start: Iterable[int]) -> set[int]:
        """``start`` and every unit that reads them, directly or not."""
        return self._reach(start, readers=True)

    def upstream(self, start: Iterable[int]) -> set[int]:
        """``start`` and every unit they read, directly or not."""
        return self._reach(start, readers=False)

    def _reach(self, start: Iterable[int], readers: bool) -> set[int]:
        seen: set[int] = set()
        stack = list(start)
        while stack:
            i = stack.pop()
            if i in seen:
                continue
            seen.add(i)
            u = self.units[i]
            stack.extend(u.readers if readers else u.deps)
        return seen


def _cycles(units: list[Unit], among: set[int]) -> list[list[int]]:
    """The cycles among ``among``: strongly connected units, or a unit reading itself."""
    index: dict[int, int] = {}
    low: dict[int, int] = {}
    stack: list[int] = []
    on: set[int] = set()
    out: list[list[int]] = []
    counter = 0
    for root in sorted(among):
        if root in index:
            continue
        work = [(root, iter(sorted(d for d in units[root].deps if d in among)))]
        index[root] = low[root] = counter
        counter += 1
        stack.append(root)
        on.add(root)
        while work:
            v, it = work[-1]
            pushed = False
            for w in it:
                if w not in index:
                    index[w] = low[w] = counter
                    counter += 1
                    stack.append(w)
                    on.add(w)
                    work.append((w, iter(sorted(d for d in units[w].deps if d in among))))
                    pushed = True
                    break
                if w in on:
                    low[v] = min(low[v], index[w])
            if pushed:
                continue
            work.pop()
            if work:
                low[work[-1][0]] = min(low[work[-1][0]], low[v])
            if low[v] == index[v]:
                comp = []
                while True:
                    w = stack.pop()
                    on.discard(w)
                    comp.append(w)
                    if w == v:
                        break
                if len(comp) > 1 or v in units[v].deps:
                    out.append(sorted(comp))
    return out
