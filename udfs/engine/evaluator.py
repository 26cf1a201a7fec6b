"""Evaluate a :class:`~udfs.engine.plan.Plan`: cold, warm (changed inputs) and for sweeps.

Units run in depth order; units of one depth that share a structure run as one
stacked call when every varying input is a single cell and every step on them
works element by element (:meth:`udfs.engine.program.Program.elementwise`),
otherwise cell by cell with the same program. A warm run copies the default
values and recomputes only the units downstream of the changed cells (and, for
a sweep, upstream of the wanted outputs); OFFSET and INDIRECT cells are always
recomputed and compute the cells they point at on demand.

Each cell's error message is its own: the evaluator opens a message collector
around each call and keeps a message for a cell whose value is an error of the
same code.

>>> import io, openpyxl
>>> from udfs.xlsx.reader import read_workbook
>>> from udfs.engine.functions import ensure_registered
>>> _ = ensure_registered()
>>> wb = openpyxl.Workbook(); ws = wb.active
>>> ws["A1"] = 2; ws["A2"] = "=A1*21"
>>> buf = io.BytesIO(); wb.save(buf)
>>> ev = Evaluator(Plan(read_workbook(buf.getvalue(), "x.xlsx"), lambda n: True))
>>> ev.default().values[(0, 2, 1)], ev.run({(0, 1, 1): 3.0}).values[(0, 2, 1)]
(42.0, 63.0)
"""

from __future__ import annotations

import re
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import schedula as sh
from formulas.ranges import Ranges
from formulas.tokens.operand import XlError

from udfs.sheet.error_values import SheetError
from udfs.xlsx.file_errors import HostileFileError
from udfs.xlsx.formula_text import TokenizeError
from udfs.xlsx.guard import Limits
from udfs.xlsx.refs import MAX_COL, MAX_ROW, col_letters

from .deviations import reading
from .functions import Messages, error_value
from .plan import CellIndex, Key, Plan, Unit
from .program import Program, ProgramError, program

__all__ = ["Evaluator", "Result"]

_EMPTY = sh.EMPTY
MAX_KEPT = 2_000_000  # cells of ranges one run keeps for re-use (about 16 MiB of references)
_CODE = re.compile(r"^(?:[\w.]+: )?(#[A-Z0-9/!?_]+)")
_ALIAS = re.compile(r"^S([0-9]+)$")


@dataclass
class Result:
    """Cell values (engine values by key) and error messages of one evaluation."""

    values: dict[Key, Any]
    messages: dict[Key, str] = field(default_factory=dict)


def engine_value(value: Any) -> Any:
    """A plain cell value (constants, cached values) as the engine stores it."""
    if value is None:
        return _EMPTY
    if isinstance(value, SheetError):
        return error_value(value.code)
    return value


def _settle(value: Any) -> Any:
    """A formula's result as one cell's stored value."""
    if isinstance(value, np.ndarray):
        if value.size == 0:
            return error_value("#VALUE!")
        value = value.reshape(-1)[0]
    if isinstance(value, Ranges):
        return _settle(value.value)
    if value is _EMPTY or value is None:
        return 0.0
    if isinstance(value, np.generic):
        return value.item()
    return value


class _Run:
    """The state of one evaluation (values, range cache, what is still to compute)."""

    def __init__(self, ev: Evaluator, values: dict[Key, Any], todo: set[int]):
        self.ev = ev
        self.values = values
        self.messages: dict[Key, str] = {}
        self.pending = set(todo)
        self.active: set[int] = set()
        self.ranges: dict[tuple[int, int, int, int, int], np.ndarray] = {}
        self.kept = 0  # cells held in self.ranges
        self.sheet = 0  # sheet of the cell being computed (INDIRECT without a sheet)
        self.cell = (1, 1)

    # --------------------------------------------------------------- reading
    def block(self, sheet: int, r1: int, c1: int, r2: int, c2: int) -> np.ndarray:
        """The cells of a range (kept for the rest of the run, up to MAX_KEPT cells)."""
        key = (sheet, r1, c1, r2, c2)
        got = self.ranges.get(key)
        if got is None:
            get = self.values.get
            cols = range(c1, c2 + 1)
            got = np.empty((r2 - r1 + 1) * (c2 - c1 + 1), dtype=object)
            got[:] = [get((sheet, r, c), _EMPTY) for r in range(r1, r2 + 1) for c in cols]
            got = got.reshape(r2 - r1 + 1, c2 - c1 + 1)
            while self.ranges and self.kept + got.size > MAX_KEPT:
                self.kept -= self.ranges.pop(next(iter(self.ranges))).size
            self.ranges[key] = got
            self.kept += got.size
        return got

    def area(self, sheet: str, r1: int, c1: int, r2: int, c2: int) -> Ranges | None:
        """OFFSET/INDIRECT: the cells of an area, computing pending units there first."""
        m = _ALIAS.match(sheet)
        if m is None or min(r1, c1) < 1 or r2 > MAX_ROW or c2 > MAX_COL:
            return None
        s = int(m.group(1))
        if (r2 - r1 + 1) * (c2 - c1 + 1) > self.ev.max_dynamic_cells:
            return None
        for i in set(self.ev.plan_index.find((s, r1, c1, r2, c2))):
            if i in self.active:
                return None  # it would read itself: a circular reference
            if i in self.pending:
                self.ev.run_units([self.ev.plan.units[i]], self)
        return _ranges(s, r1, c1, r2, c2, self.block(s, r1, c1, r2, c2))

    def parse(self, text: str) -> tuple[str, int, int, int, int] | None:
        """INDIRECT: an A1-style reference or a defined name, seen from the current cell."""
        ctx = self.ev.plan.context
        try:
            s = ctx.structure("=" + text.strip(), *self.cell, self.sheet)
        except TokenizeError:
            return None
        if s.text != "=_R0" or len(s.refs) != 1 or s.problem:
            return None
        a = s.refs[0].area
        return (f"S{s.refs[0].sheet}", a.r1, a.c1, a.r2, a.c2)


def _ranges(sheet: int, r1: int, c1: int, r2: int, c2: int, value: np.ndarray) -> Ranges:
    a = f"{col_letters(c1)}{r1}"
    b = f"{col_letters(c2)}{r2}"
    return Ranges().push(f"S{sheet}!{a}:{b}" if (r1, c1) != (r2, c2) else f"S{sheet}!{a}", value)


class Evaluator:
    """Runs a plan; :meth:`default`, :meth:`run` (warm) and :meth:`scenario` (sweeps)."""

    max_dynamic_cells = 1_000_000

    def __init__(
        self,
        plan: Plan,
        elementwise: Callable[[str], bool] = lambda name: False,
        stack: bool = True,
    ):
        """``stack=False`` computes every cell on its own (the tests prove both equal)."""
        self.plan = plan
        self.elementwise = elementwise
        self.stack = stack
        self.plan_index = CellIndex()
        for u in plan.units:
            self.plan_index.add(u)
        self.programs: dict[str, Program] = {}
        self.volatile = plan.downstream(u.index for u in plan.units if u.structure.dynamic)
        self._default: Result | None = None
        self._readers: dict[Key, set[int]] | None = None
        self._wide: list[tuple[tuple[int, int, int, int, int], int]] = []
        self._affected: dict[tuple[tuple[Key, ...], tuple[Key, ...] | None], list[list[Unit]]] = {}

    # ------------------------------------------------------------------ public
    def program_of(self, text: str) -> Program:
        """The program of a structure (parsed once); raises ProgramError."""
        found = self.programs.get(text)
        if found is None:
            found = self.programs[text] = program(text)
        return found

    def check_programs(self, name: str, limits: Limits) -> None:
        """Bound the work, then parse every structure: HostileFileError past the limits on
        distinct formula text and on cells read; ProgramError names what cannot run."""
        texts = {u.structure.text for u in self.plan.units if u.problem is None}
        size = sum(len(t) for t in texts)
        if size > limits.formula_text:
            raise HostileFileError(
                name,
                f"its {len(texts):,} distinct formula shapes hold {size:,} characters "
                f"(limit {limits.formula_text:,}; parsing costs about 7 us a character)",
            )
        for text in texts:
            self.program_of(text)
        reads, worst = 0, None
        for u in self.plan.units:
            if u.problem is None:
                n = self._reads(u)
                reads += n
                if worst is None or n > worst[0]:
                    worst = (n, u)
        if reads > limits.cell_reads and worst is not None:
            where = self.plan.book.sheets[worst[1].sheet].name + "!" + worst[1].where
            raise HostileFileError(
                name,
                f"its formulas read {reads:,} cells of ranges in all (limit "
                f"{limits.cell_reads:,}); most of them from {len(worst[1].cells):,} cells "
                f"filled from {where}, whose ranges move with the cell",
            )

    def _reads(self, u: Unit) -> int:
        """Cells of ranges a unit reads: a range that moves with the cell is read once per
        cell; one that stays put once per unit when the unit can be stacked."""
        s = u.structure
        prog = self.program_of(s.text)
        first, last = u.cells[0], u.cells[-1]
        moving: set[str] = set()
        sizes: list[tuple[str, float]] = []
        n = len(u.cells)
        for slot in s.refs:
            a, b = u.area(slot, first), u.area(slot, last)
            if a is None or b is None or slot.kind != "ref":
                continue
            size_a = (a.r2 - a.r1 + 1) * (a.c2 - a.c1 + 1)
            size_b = (b.r2 - b.r1 + 1) * (b.c2 - b.c1 + 1)
            if a != b:
                moving.add(slot.name)
            if max(size_a, size_b) > 1:
                # a run's areas change linearly from its first cell to its last
                sizes.append((slot.name, (size_a + size_b) / 2))
        stacked = not (s.references or s.dynamic) and all(
            (a := u.area(r, first)) is not None and a.r1 == a.r2 and a.c1 == a.c2
            for r in s.refs if r.name in moving
        ) and prog.elementwise(moving, self.elementwise)
        once = [size if stacked and name not in moving else size * n for name, size in sizes]
        return int(sum(once))

    def explain(self, key: Key, values: dict[Key, Any]) -> str | None:
        """The message of an error cell whose value was computed elsewhere (the fallback
        model): the cell is computed once more here, from those cell values."""
        index = self.plan.owner.get(key)
        if index is None or self.plan.units[index].problem is not None:
            return None
        u = self.plan.units[index]
        try:
            prog = self.program_of(u.structure.text)
        except ProgramError:
            return None
        run = _Run(self, values, set())
        with reading(run):
            self._one(prog, u, key[1:], run)
        return run.messages.get(key)

    def default(self) -> Result:
        """Every formula cell evaluated with the workbook's own inputs (cached)."""
        if self._default is None:
            run = _Run(self, self._constants(), {u.index for u in self.plan.units})
            self.run_units(self.plan.units, run)
            self._default = Result(run.values, run.messages)
        return self._default

    def _constants(self) -> dict[Key, Any]:
        """Engine values of the constant cells, and the cached values of the formula cells
        not evaluated (built for the one default run, which fills it in)."""
        plan = self.plan
        out: dict[Key, Any] = {}
        for sheet in plan.book.sheets:
            for (r, c), v in sheet.values.items():
                out[(sheet.index, r, c)] = engine_value(v)
        for u in plan.units:
            if u.problem is not None:
                for key in u.cell_keys():
                    fc = plan.book.sheets[u.sheet].formulas.get(key[1:])
                    if fc is not None:
                        out[key] = engine_value(fc.cached)
        return out

    def run(self, changes: Mapping[Key, Any], outputs: Sequence[Key] | None = None) -> Result:
        """Values after setting ``changes`` (engine values by key); only what they reach
        (and what ``outputs`` need, when given) is recomputed."""
        base = self.default()
        groups = self._groups(tuple(changes), None if outputs is None else tuple(outputs))
        values = dict(base.values)
        values.update(changes)
        run = _Run(self, values, {u.index for g in groups for u in g})
        run.messages = dict(base.messages)
        for key in changes:
            run.messages.pop(key, None)
        for group in groups:
            self._run_group([u for u in group if u.index in run.pending], run)
        return Result(run.values, run.messages)

    def scenario(
        self, inputs: Sequence[Key], outputs: Sequence[Key]
    ) -> Callable[[Sequence[Any]], list[Any]]:
        """A function of the ``inputs``' engine values giving the ``outputs``' values."""
        self.default()
        keys = tuple(inputs)

        def run(values: Sequence[Any]) -> list[Any]:
            res = self.run(dict(zip(keys, values, strict=True)), outputs)
            return [res.values.get(k, _EMPTY) for k in outputs]

        return run

    def scenarios(
        self, inputs: Sequence[Key], outputs: Sequence[Key]
    ) -> Callable[[Sequence[Sequence[Any]]], list[list[Any]]]:
        """A function of many scenarios (rows of the ``inputs``' engine values) giving each
        row's ``outputs``: what :meth:`scenario` gives row by row (proved for every shipped
        template by tests/engine/test_evaluator.py), computed for all rows at once.

        Each cell that a row's inputs reach is computed once per batch: in one stacked
        call where its formula works element by element on what varies (as the cells of a
        filled-down block are stacked), row by row otherwise. Workbooks with OFFSET or
        INDIRECT, functions that take references, or array formulas on the way are
        computed row by row. Measured on the cell-sizing template (benchmarks/
        bench_engine.py, 300 rows): about 100 -> 400 scenarios/s.
        """
        one = self.scenario(inputs, outputs)
        keys, outs = tuple(inputs), tuple(outputs)

        def run(rows: Sequence[Sequence[Any]]) -> list[list[Any]]:
            got = self._batch(keys, [tuple(r) for r in rows], outs) if len(rows) > 1 else None
            return got if got is not None else [one(r) for r in rows]

        return run

    def _batch(
        self, keys: tuple[Key, ...], rows: list[tuple[Any, ...]], outputs: tuple[Key, ...]
    ) -> list[list[Any]] | None:
        """:meth:`scenarios` for ``rows``, or None where a unit on the way is computed
        only row by row (OFFSET/INDIRECT, reference functions, array formulas)."""
        base = self.default()
        units = [u for g in self._groups(keys, outputs) for u in g if u.problem is None]
        if any(u.structure.dynamic or u.structure.references or u.span for u in units):
            return None
        values = dict(base.values)
        for j, key in enumerate(keys):
            values[key] = _Each(row[j] for row in rows)
        run = _Run(self, values, set())
        n = len(rows)
        for u in units:
            prog = self.program_of(u.structure.text)
            for cell in u.cells:
                args = self._args(prog, u, cell, run)
                values[(u.sheet, cell[0], cell[1])] = self._each(prog, args, n)
        return [[_at(values.get(k, _EMPTY), i) for k in outputs] for i in range(n)]

    def _each(self, prog: Program, args: list[Any], n: int) -> Any:
        """One cell's value for every row: one value when nothing it reads varies."""
        moving = [i for i, a in enumerate(args) if _varies(a)]
        if not moving:
            return _computed(prog, args)
        names = {prog.inputs[i] for i in moving}
        if all(type(args[i]) is _Each for i in moving) and prog.elementwise(
            names, self.elementwise
        ):
            stacked = list(args)
            for i in moving:
                column = np.empty((n, 1), dtype=object)
                column[:, 0] = args[i]
                stacked[i] = column
            with Messages.collect():
                try:
                    result = prog.run(stacked)
                except Exception:  # the package raised: each row says what went wrong
                    result = None
            if isinstance(result, np.ndarray) and result.size == n:
                return _Each(_settle(v) for v in result.reshape(-1))
        return _Each(_computed(prog, [_row_of(a, i) for a in args]) for i in range(n))

    # ------------------------------------------------------------------ running
    def _groups(
        self, changed: tuple[Key, ...], outputs: tuple[Key, ...] | None
    ) -> list[list[Unit]]:
        key = (changed, outputs)
        found = self._affected.get(key)
        if found is None:
            start = set(self.volatile)
            for k in changed:
                start |= self._reading(k)
            todo = self.plan.downstream(start)
            if outputs is not None:
                owners = {self.plan.owner[k] for k in outputs if k in self.plan.owner}
                todo &= self.plan.upstream(owners)
            found = self.plan.schedule(todo)
            if len(self._affected) > 256:
                self._affected.clear()
            self._affected[key] = found
        return found

    def _reading(self, key: Key) -> set[int]:
        """Units with a reference covering the cell ``key``."""
        if self._readers is None:
            table: dict[Key, set[int]] = {}
            for u in self.plan.units:
                for slot in u.structure.refs:
                    rect = u.reach(slot) if slot.kind == "ref" else None
                    if rect is None:
                        continue
                    s, r1, c1, r2, c2 = rect
                    if (r2 - r1 + 1) * (c2 - c1 + 1) <= 64:
                        for r in range(r1, r2 + 1):
                            for c in range(c1, c2 + 1):
                                table.setdefault((s, r, c), set()).add(u.index)
                    else:
                        self._wide.append((rect, u.index))
            self._readers = table
        out = set(self._readers.get(key, ()))
        s, r, c = key
        for (ws, r1, c1, r2, c2), i in self._wide:
            if ws == s and r1 <= r <= r2 and c1 <= c <= c2:
                out.add(i)
        return out

    def run_units(self, units: Iterable[Unit], run: _Run) -> None:
        """Compute ``units`` (and, on demand, what OFFSET/INDIRECT need) into ``run``."""
        with reading(run):
            for group in self.plan.schedule(u.index for u in units):
                self._run_group([u for u in group if u.index in run.pending], run)

    def _run_group(self, units: list[Unit], run: _Run) -> None:
        if not units:
            return
        for u in units:
            run.pending.discard(u.index)
        live = [u for u in units if u.problem is None]
        if not live:
            return
        run.active.update(u.index for u in live)
        try:
            with reading(run):
                prog = self.program_of(live[0].structure.text)
                cells = [(u, cell) for u in live for cell in u.cells]
                in_order = any(u.sequential for u in live)  # each cell reads the one before
                if len(cells) == 1 or not self.stack or in_order or not self._stacked(
                    prog, cells, run
                ):
                    for u, cell in cells:
                        self._one(prog, u, cell, run)
        finally:
            run.active.difference_update(u.index for u in live)

    def _args(self, prog: Program, u: Unit, cell: tuple[int, int], run: _Run) -> list[Any]:
        s = u.structure
        out: list[Any] = []
        slots = {r.name: r for r in s.refs}
        consts = dict(s.consts)
        for name in prog.inputs:
            slot = slots.get(name)
            if slot is None:
                out.append(consts[name] if name in consts else error_value("#NAME?"))
                continue
            area = u.area(slot, cell)
            if area is None:
                out.append(error_value("#REF!"))
                continue
            if slot.kind != "ref":
                out.append(_ranges(slot.sheet, area.r1, area.c1, area.r2, area.c2,
                                   np.full((1, 1), _EMPTY, dtype=object)))
                continue
            single = area.r1 == area.r2 and area.c1 == area.c2
            if single and not s.references:
                out.append(run.values.get((slot.sheet, area.r1, area.c1), _EMPTY))
                continue
            block = run.block(slot.sheet, area.r1, area.c1, area.r2, area.c2)
            if s.references:
                out.append(_ranges(slot.sheet, area.r1, area.c1, area.r2, area.c2, block))
            else:
                out.append(block)
        return out

    def _one(self, prog: Program, u: Unit, cell: tuple[int, int], run: _Run) -> None:
        run.sheet, run.cell = u.sheet, cell
        with Messages.collect() as box:
            result = _outcome(prog, lambda: self._args(prog, u, cell, run), box)
        if u.span is not None:
            self._fill(u, result, run, box)
            return
        key = (u.sheet, cell[0], cell[1])
        value = _settle(result)
        run.values[key] = value
        self._message(key, value, box.items, None, run)

    def _fill(self, u: Unit, result: Any, run: _Run, box: Messages) -> None:
        """An array formula's result over its range (#N/A where the result is smaller)."""
        assert u.span is not None
        r1, c1, r2, c2 = u.span
        arr = result.value if isinstance(result, Ranges) else result
        grid = np.asarray(arr, dtype=object)
        if grid.ndim < 2:
            grid = grid.reshape(1, -1) if grid.ndim == 1 else grid.reshape(1, 1)
        rows, cols = grid.shape
        for r in range(r1, r2 + 1):
            for c in range(c1, c2 + 1):
                i = 0 if rows == 1 else r - r1
                j = 0 if cols == 1 else c - c1
                key = (u.sheet, r, c)
                value = _settle(grid[i, j]) if i < rows and j < cols else error_value("#N/A")
                run.values[key] = value
                self._message(key, value, box.items, None, run)

    def _stacked(self, prog: Program, cells: list[tuple[Unit, tuple[int, int]]], run: _Run) -> bool:
        """Evaluate ``cells`` in one call if that is exact; False when it is not."""
        s = cells[0][0].structure
        if s.references or s.dynamic or any(u.span is not None for u, _ in cells):
            return False
        columns = self._columns(prog, cells, run)
        varying: set[str] = set()
        stacked: list[Any] = []
        for name, column in zip(prog.inputs, columns, strict=True):
            first = column[0]
            if all(x is first or _same(x, first) for x in column):
                stacked.append(first)
                continue
            if not all(type(x) is float for x in column) and any(
                isinstance(x, np.ndarray) for x in column
            ):
                return False  # a range that moves with the cell: cell by cell
            arr = np.empty((len(column), 1), dtype=object)
            arr[:, 0] = column
            stacked.append(arr)
            varying.add(name)
        if not varying or not prog.elementwise(varying, self.elementwise):
            return False
        with Messages.collect() as box:
            try:
                result = prog.run(stacked)
            except Exception:  # let the cells say what went wrong, one by one
                return False
        n = len(cells)
        if isinstance(result, np.ndarray) and result.size == n:
            flat: list[Any] = list(result.reshape(-1))
        elif isinstance(result, (np.ndarray, list, tuple)):
            return False
        else:
            flat = [result] * n
        values, messages = run.values, run.messages
        for i, ((u, cell), value) in enumerate(zip(cells, flat, strict=True)):
            key = (u.sheet, cell[0], cell[1])
            if type(value) is float:  # most cells: nothing to settle, no message
                values[key] = value
                messages.pop(key, None)
                continue
            settled = _settle(value)
            values[key] = settled
            self._message(key, settled, box.items, i, run)
        return True

    def _columns(
        self, prog: Program, cells: list[tuple[Unit, tuple[int, int]]], run: _Run
    ) -> list[list[Any]]:
        """Each input's values over ``cells`` (as :meth:`_args` gives them cell by cell);
        a single-cell reference's addresses are computed for a whole unit at once."""
        columns: list[list[Any]] = [[] for _ in prog.inputs]
        start = 0
        while start < len(cells):
            u = cells[start][0]
            stop = start
            while stop < len(cells) and cells[stop][0] is u:
                stop += 1
            mine = [cell for _, cell in cells[start:stop]]
            slots = {r.name: r for r in u.structure.refs}
            consts = dict(u.structure.consts)
            ar, ac = u.anchor
            get = run.values.get
            for i, name in enumerate(prog.inputs):
                slot = slots.get(name)
                a = slot.area if slot is not None else None
                if slot is None:
                    value = consts[name] if name in consts else error_value("#NAME?")
                    columns[i].extend([value] * len(mine))
                elif a is not None and slot.kind == "ref" and a.r1 == a.r2 and a.c1 == a.c2:
                    dr = a.kind != "cols" and not a.abs_r1
                    dc = a.kind != "rows" and not a.abs_c1
                    s, r1, c1 = slot.sheet, a.r1 - (ar if dr else 0), a.c1 - (ac if dc else 0)
                    for r, c in mine:
                        rr, cc = r1 + (r if dr else 0), c1 + (c if dc else 0)
                        if 1 <= rr <= MAX_ROW and 1 <= cc <= MAX_COL:
                            columns[i].append(get((s, rr, cc), _EMPTY))
                        else:
                            columns[i].append(error_value("#REF!"))
                else:
                    for cell in mine:
                        columns[i].append(self._input(slot, u, cell, run))
            start = stop
        return columns

    def _input(self, slot: Any, u: Unit, cell: tuple[int, int], run: _Run) -> Any:
        """One reference's value for one cell (a range as its block)."""
        area = u.area(slot, cell)
        if area is None:
            return error_value("#REF!")
        if area.r1 == area.r2 and area.c1 == area.c2:
            return run.values.get((slot.sheet, area.r1, area.c1), _EMPTY)
        return run.block(slot.sheet, area.r1, area.c1, area.r2, area.c2)

    @staticmethod
    def _message(
        key: Key, value: Any, items: list[tuple[int | None, str]], index: int | None, run: _Run
    ) -> None:
        if not isinstance(value, XlError):
            run.messages.pop(key, None)
            return
        code = str(value)
        for at, text in items:
            if at is not None and index is not None and at != index:
                continue
            m = _CODE.match(text)
            if m and m.group(1) == code:
                run.messages[key] = text
                return
        run.messages.pop(key, None)


class _Each(list[Any]):
    """One cell's value in each row of a batch of scenarios (:meth:`Evaluator.scenarios`)."""

    __slots__ = ()


def _varies(value: Any) -> bool:
    """A row-dependent value: per row, or a block holding one."""
    if type(value) is _Each:
        return True
    return (
        isinstance(value, np.ndarray)
        and value.dtype == object
        and any(type(v) is _Each for v in value.flat)
    )


def _row_of(value: Any, i: int) -> Any:
    """``value`` as row ``i`` sees it."""
    if type(value) is _Each:
        return value[i]
    if _varies(value):
        out = value.copy()
        for at, v in np.ndenumerate(value):
            if type(v) is _Each:
                out[at] = v[i]
        return out
    return value


def _at(value: Any, i: int) -> Any:
    return value[i] if type(value) is _Each else value


def _outcome(prog: Program, args: Callable[[], list[Any]], box: Messages) -> Any:
    """The program's result on ``args()``; #VALUE! (with its message in ``box``) when a
    function of the package raises."""
    try:
        return prog.run(args())
    except Exception as exc:
        box.items.append((None, f"#VALUE! {type(exc).__name__} while computing"))
        return error_value("#VALUE!")


def _computed(prog: Program, args: list[Any]) -> Any:
    """A cell's value from its arguments, as :meth:`Evaluator._one` computes it."""
    with Messages.collect() as box:
        return _settle(_outcome(prog, lambda: args, box))


def _same(a: Any, b: Any) -> bool:
    if type(a) is not type(b) or isinstance(a, np.ndarray):
        return False
    try:
        return bool(a == b)
    except Exception:
        return False


__all__ += ["ProgramError", "engine_value"]
