"""A workbook read once and evaluated many times: the engine's public face.

:func:`load_model` reads the bytes (checked against the limits while they are
read, :mod:`udfs.xlsx.reader`), plans the evaluation (:mod:`udfs.engine.plan`)
and keeps the model in memory keyed by the SHA-256 of the content, so a second
evaluation -- with the same or new inputs -- recomputes only what the inputs
reach. What the plan declines (a circular reference in a workbook that asks
for iterative calculation, a formula the runner does not reproduce) is run by
the plain ``formulas.ExcelModel`` (:mod:`udfs.engine.fallback`); the model
says which ran and why (:attr:`WorkbookModel.evaluator`, :attr:`declined`).

Problems are :class:`Diagnostic` lines naming the sheet and cell: formulas
that cannot be evaluated (kept with their cached values), cells computed from
them, circular references, error values with their own message.

>>> import io, openpyxl
>>> wb = openpyxl.Workbook(); ws = wb.active; ws.title = "Calc"
>>> ws["A1"] = 2; ws["A2"] = "=A1*21"
>>> buf = io.BytesIO(); wb.save(buf)
>>> model = load_model(buf.getvalue(), "demo.xlsx")
>>> model.evaluate().value("Calc!A2"), model.evaluate({"Calc!A1": 3}).value("Calc!A2")
(42.0, 63.0)
"""

from __future__ import annotations

import hashlib
import time
from bisect import bisect_left
from collections import OrderedDict
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from functools import cached_property
from typing import Any, NamedTuple

import numpy as np
from formulas.functions import get_functions

from udfs.sheet import registry
from udfs.sheet.error_values import CellValue, SheetError
from udfs.xlsx.collector import collector_paused
from udfs.xlsx.file_errors import WorkbookError
from udfs.xlsx.guard import DEFAULT_LIMITS, Limits
from udfs.xlsx.reader import WorkbookData, check_fallback, read_workbook
from udfs.xlsx.refs import CellRef, col_letters, parse_cell
from udfs.xlsx.writer import Edit, package_bytes, write_live

from .evaluator import Evaluator, Result, engine_value
from .fallback import calculate_whole
from .functions import ensure_registered, to_cell
from .plan import Key, Plan
from .program import ProgramError

__all__ = ["Diagnostic", "Evaluation", "NamedValue", "WorkbookModel", "clear_cache", "load_model"]

MAX_CACHED_MODELS = 4
MAX_REPORTED = 20
Override = float | int | bool | str


class Diagnostic(NamedTuple):
    """One problem, with its cell if any.

    ``kind``: "unsupported" (not evaluated, kept as it is), "untrusted" (computed
    from a cell that was not evaluated), "circular", "error" (an error value) or
    "note".
    """

    kind: str
    ref: CellRef | None
    message: str

    def __str__(self) -> str:
        return f"{self.ref.address}: {self.message}" if self.ref else self.message


class NamedValue(NamedTuple):
    """A defined name that refers to one cell, with the cell's value."""

    name: str
    ref: CellRef
    value: CellValue
    is_output: bool  # the cell holds a formula


@dataclass
class Evaluation:
    """Results of one evaluation: formula cells' values and the inputs that were set."""

    model: WorkbookModel
    result: Result
    inputs: dict[CellRef, CellValue]
    seconds: float
    notes: list[str] = field(default_factory=list)

    @cached_property
    def values(self) -> dict[CellRef, CellValue]:
        """Every formula cell's value, and the inputs that were set."""
        m = self.model
        got = self.result.values
        out = {m.ref_of(k): to_cell(got.get(k)) for k in m.formula_keys}
        out.update(self.inputs)
        return out

    def value(self, ref: CellRef | str) -> CellValue:
        """A cell's value after evaluation (formula result, input or constant)."""
        key = self.model.key_of(self.model.resolve(ref))
        if key in self.result.values:
            return to_cell(self.result.values[key])
        return None

    def named(self) -> list[NamedValue]:
        """Defined names of single cells with their values (workbook order)."""
        m = self.model
        return [NamedValue(n, r, self.value(r), m.is_formula(r)) for n, r in m.named_cells.items()]

    @cached_property
    def diagnostics(self) -> list[Diagnostic]:
        m = self.model
        out = list(m.static_diagnostics)
        errors = 0
        skip = m.not_evaluated | m.untrusted
        for key in m.formula_keys:
            if key in skip:
                continue
            value = self.result.values.get(key)
            if not isinstance(to_cell(value), SheetError):
                continue
            errors += 1
            if errors <= MAX_REPORTED:
                text = self.result.messages.get(key) or m.explain(key, self.result.values)
                out.append(Diagnostic("error", m.ref_of(key), text))
        if errors > MAX_REPORTED:
            more = f"... and {errors - MAX_REPORTED} more error cells"
            out.append(Diagnostic("error", None, more))
        return out

    def errors(self) -> list[Diagnostic]:
        return [d for d in self.diagnostics if d.kind != "note"]


def _known(name: str) -> bool:
    return name in get_functions() or name in ("LET", "LAMBDA")


def _ours_elementwise(name: str) -> bool:
    """One of our functions that works element by element on stacked single cells."""
    return name in registry.PLANS and registry.elementwise(name)


class WorkbookModel:
    """One workbook, planned for evaluation; see :func:`load_model`."""

    @collector_paused()
    def __init__(self, data: bytes, name: str, limits: Limits = DEFAULT_LIMITS):
        t0 = time.perf_counter()
        ensure_registered()
        self.name = name
        self.data = data
        self.sha256 = hashlib.sha256(data).hexdigest()
        self.book: WorkbookData = read_workbook(data, name, limits)
        self.package = self.book.package
        self.report = self.book.report
        self.sheets = self.book.sheets
        # formulas as written are about twice as long as their shapes (refs, numbers)
        self.plan = Plan(self.book, _known, max_text=limits.formula_text)
        self.declined: list[str] = []
        self._evaluator: Evaluator | None = None
        if self.plan.circular and self.book.iterate:
            first = self.plan.circular[0][0]
            self.declined.append(
                f"{self._address(first)}: a circular reference, and the workbook asks for "
                "iterative calculation"
            )
        evaluator = Evaluator(self.plan, _ours_elementwise)
        if not self.declined:
            try:
                evaluator.check_programs(name, limits)
                self._evaluator = evaluator
            except ProgramError as exc:
                self.declined.append(str(exc))
        if self.declined:  # the formulas package's own model: refused when too large for it
            check_fallback(self.book, limits, "; ".join(self.declined))
        self._explainer = evaluator  # messages for error cells the fallback computed
        self._fallback: OrderedDict[tuple[tuple[Key, Any], ...], dict[Key, Any]] = OrderedDict()
        self._extended: OrderedDict[tuple[tuple[int, tuple[int, int]], ...], Evaluator] = (
            OrderedDict()
        )
        # every cell a formula fills, sorted (the plan's keys, not copies of them)
        self.formula_keys: list[Key] = sorted(self.plan.owner)
        self.not_evaluated: set[Key] = set()
        self.static_diagnostics = [_note(n) for n in self.report.notes]
        self._diagnose()
        self.named_cells = self._read_names()
        self.restored_from_values = False  # set when a values-only copy got its formulas back
        self.build_seconds = time.perf_counter() - t0

    # ------------------------------------------------------------------ reading
    def _diagnose(self) -> None:
        plan = self.plan
        bad = [u for u in plan.units if u.problem is not None]
        for u in bad:
            self.not_evaluated.update(u.cell_keys())
        for keys in plan.circular:
            shown = " -> ".join(self._address(k) for k in keys[:8])
            more = f" (and {len(keys) - 8} more)" if len(keys) > 8 else ""
            self.static_diagnostics.append(
                Diagnostic(
                    "circular",
                    self.ref_of(keys[0]),
                    f"circular reference: {shown}{more}; not evaluated, kept with its cached value",
                )
            )
        for u in bad:
            if u.problem and not u.problem.startswith("circular"):
                self.static_diagnostics.append(
                    Diagnostic(
                        "unsupported",
                        self.ref_of((u.sheet, *u.cells[0])),
                        f"{u.problem}; not evaluated, kept with its cached value",
                    )
                )
        down = plan.downstream(u.index for u in bad) - {u.index for u in bad}
        self.untrusted: set[Key] = {k for i in down for k in plan.units[i].cell_keys()}
        for i in sorted(down)[:MAX_REPORTED]:
            u = plan.units[i]
            self.static_diagnostics.append(
                Diagnostic(
                    "untrusted",
                    self.ref_of((u.sheet, *u.cells[0])),
                    "computed from a cell that was not evaluated; kept with its cached value",
                )
            )
        if self.declined:
            self.static_diagnostics.append(
                _note(
                    "evaluated by the formulas package's own model, slower, because the plan "
                    "declined: " + "; ".join(self.declined)
                )
            )

    def _read_names(self) -> dict[str, CellRef]:
        out: dict[str, CellRef] = {}
        for dn in self.book.defined_names:
            if dn.hidden or dn.local_sheet is not None or dn.name.startswith("_xlnm."):
                continue
            ref = dn.single_cell()
            if ref is None:
                continue
            sheet = self.book.sheet(ref.sheet)
            if sheet is None or sheet.kind != "worksheet":
                continue
            out[dn.name] = CellRef(sheet.name, ref.row, ref.col)
        return out

    # ------------------------------------------------------------------ queries
    @property
    def evaluator(self) -> str:
        """Which evaluator runs this workbook: "plan" or "formulas"."""
        return "plan" if self._evaluator is not None else "formulas"

    @property
    def sheet_names(self) -> list[str]:
        return [s.name for s in self.sheets]

    @property
    def formula_count(self) -> int:
        return len(self.formula_keys)

    def key_of(self, ref: CellRef) -> Key:
        sheet = self.book.sheet(ref.sheet)
        if sheet is None:
            raise WorkbookError(f"unknown sheet {ref.sheet!r}")
        return (sheet.index, ref.row, ref.col)

    def ref_of(self, key: Key) -> CellRef:
        return CellRef(self.sheets[key[0]].name, key[1], key[2])

    def _address(self, key: Key) -> str:
        return self.ref_of(key).address

    def is_formula(self, ref: CellRef) -> bool:
        return self._is_formula_key(self.key_of(ref))

    def _is_formula_key(self, key: Key) -> bool:
        keys = self.formula_keys
        i = bisect_left(keys, key)
        return i < len(keys) and keys[i] == key

    def constant(self, ref: CellRef) -> CellValue:
        """The value stored in a non-formula cell (None when empty)."""
        key = self.key_of(ref)
        return self.sheets[key[0]].values.get(key[1:])

    def formula_text(self, ref: CellRef) -> str | None:
        key = self.key_of(ref)
        fc = self.sheets[key[0]].formulas.get(key[1:])
        return fc.text_at(ref.row, ref.col) if fc is not None else None

    def constants_read(self, limit: int = 10_000) -> list[Key]:
        """Constant cells that formulas read (at most ``limit`` + 1: more means more)."""
        rects: set[tuple[int, int, int, int, int]] = set()
        for u in self.plan.units:
            for slot in u.structure.refs:
                rect = u.reach(slot) if slot.kind == "ref" else None
                if rect is not None:
                    rects.add(rect)
        out: dict[Key, None] = {}
        for s, r1, c1, r2, c2 in sorted(rects):
            values = self.sheets[s].values
            if (r2 - r1 + 1) * (c2 - c1 + 1) <= len(values):
                found = (
                    (s, r, c)
                    for r in range(r1, r2 + 1)
                    for c in range(c1, c2 + 1)
                    if (r, c) in values
                )
            else:
                found = ((s, r, c) for (r, c) in values if r1 <= r <= r2 and c1 <= c <= c2)
            for key in found:
                out[key] = None
                if len(out) > limit:
                    return list(out)
        return list(out)

    def explain(self, key: Key, values: dict[Key, Any]) -> str:
        """A message for an error cell that has none of its own (computed by the fallback
        model: the cell is computed once more for its message)."""
        err = to_cell(values.get(key))
        if self._evaluator is None:
            found = self._explainer.explain(key, values)
            if found:
                return found
        text = self.formula_text(self.ref_of(key)) or ""
        code = err.code if isinstance(err, SheetError) else str(err)
        return f"{code} (formula {text})" if text else code

    def resolve(self, ref: CellRef | str) -> CellRef:
        """A CellRef with the sheet's real name; accepts ``Sheet!B4``, ``B4`` or a defined name."""
        if isinstance(ref, str):
            text = ref.strip()
            by_name = {k.casefold(): v for k, v in self.named_cells.items()}
            if "!" not in text and text.casefold() in by_name:
                return by_name[text.casefold()]
            try:
                ref = parse_cell(text)
            except Exception:
                names = ", ".join(list(self.named_cells)[:12]) or "none"
                raise WorkbookError(
                    f"{text[:80]!r} is neither a cell (Sheet!B4) nor a defined name of one cell "
                    f"(named cells: {names})"
                ) from None
        worksheets = [s for s in self.sheets if s.kind == "worksheet"]
        if not ref.sheet:
            if len(worksheets) != 1:
                raise WorkbookError(
                    f"{ref.coordinate}: say which sheet, e.g. {worksheets[0].name}!{ref.coordinate}"
                )
            return CellRef(worksheets[0].name, ref.row, ref.col)
        sheet = self.book.sheet(ref.sheet)
        if sheet is None or sheet.kind != "worksheet":
            raise WorkbookError(
                f"unknown sheet {ref.sheet!r} in {ref.address}; the sheets are: "
                + ", ".join(repr(s.name) for s in worksheets)
            )
        return CellRef(sheet.name, ref.row, ref.col)

    # ------------------------------------------------------------------ evaluating
    def _check_override(self, key: CellRef | str, value: Any) -> tuple[CellRef, Key]:
        ref = self.resolve(key)
        if isinstance(value, float) and not np.isfinite(value):
            raise WorkbookError(f"{ref.address}: a cell cannot hold {value}")
        if not isinstance(value, (bool, int, float, str)):
            raise WorkbookError(
                f"{ref.address}: value must be a number, TRUE/FALSE or text "
                f"(got {type(value).__name__})"
            )
        k = self.key_of(ref)
        if self._is_formula_key(k):
            where = "holds a formula"
            for (r, c), fc in self.sheets[k[0]].formulas.items():
                span = fc.span
                if span is not None and (r, c) != k[1:] and _inside(k[1:], span):
                    r1, c1, r2, c2 = span
                    rng = f"{col_letters(c1)}{r1}:{col_letters(c2)}{r2}"
                    where = f"is part of the array formula {rng}"
            raise WorkbookError(
                f"{ref.address} {where}; --set changes input cells (values), not formulas"
            )
        return ref, k

    def _evaluator_for(self, keys: list[Key]) -> Evaluator | None:
        """The evaluator for inputs at ``keys``: cells set beyond a sheet's used range
        widen the whole columns and rows that the plan bounded by it (planned once)."""
        if self._evaluator is None:
            return None
        need: dict[int, tuple[int, int]] = {}
        for s, r, c in keys:
            sheet = self.sheets[s]
            if r > sheet.max_row or c > sheet.max_col:
                rows, cols = need.get(s, (0, 0))
                need[s] = (max(rows, r), max(cols, c))
        if not need:
            return self._evaluator
        key = tuple(sorted(need.items()))
        found = self._extended.get(key)
        if found is None:
            found = Evaluator(Plan(self.book, _known, dict(key)), _ours_elementwise)
            self._extended[key] = found
            while len(self._extended) > 8:
                self._extended.popitem(last=False)
        return found

    @collector_paused()
    def evaluate(self, overrides: Mapping[CellRef | str, Override] | None = None) -> Evaluation:
        """Evaluate with ``overrides`` (cell or defined name -> value)."""
        t0 = time.perf_counter()
        checked = [(*self._check_override(k, v), v) for k, v in (overrides or {}).items()]
        inputs: dict[CellRef, CellValue] = {
            ref: (float(v) if type(v) is int else v) for ref, _, v in checked
        }
        changes = {k: engine_value(inputs[ref]) for ref, k, _ in checked}
        evaluator = self._evaluator_for(list(changes))
        if evaluator is None:
            result = Result(self._whole(changes))
        elif changes:
            result = evaluator.run(changes)
        else:
            result = evaluator.default()
        return Evaluation(self, result, inputs, time.perf_counter() - t0)

    def _whole(self, changes: Mapping[Key, Any]) -> dict[Key, Any]:
        """Every cell's value by the plain ``formulas`` model, ``changes`` written in."""
        key = tuple(sorted(changes.items(), key=lambda kv: (kv[0], repr(kv[1]))))
        found = self._fallback.get(key)
        if found is not None:
            return found
        data = self.data
        if changes:
            edits = {self.ref_of(k): Edit(to_cell(v)) for k, v in changes.items()}
            data = package_bytes(lambda out: write_live(self.package, edits, out))
        computed = calculate_whole(data, self.sheet_names, self.book.iterate)
        values_by_key: dict[Key, Any] = {}
        for s in self.sheets:
            for (r, c), v in s.values.items():
                values_by_key[(s.index, r, c)] = engine_value(v)
        values_by_key.update(changes)
        for k in self.formula_keys:
            values_by_key[k] = computed.get(k, engine_value(self._cached(k)))
        self._fallback[key] = values_by_key
        while len(self._fallback) > 8:
            self._fallback.popitem(last=False)
        return values_by_key

    def _cached(self, key: Key) -> CellValue:
        fc = self.sheets[key[0]].formulas.get(key[1:])
        return fc.cached if fc is not None else self.sheets[key[0]].values.get(key[1:])

    def scenario_function(
        self, targets: list[CellRef | str], outputs: list[CellRef | str]
    ) -> Callable[..., list[CellValue]]:
        """A function of the ``targets``' values returning the ``outputs``' values (sweeps:
        only the cells between those inputs and those outputs are recomputed)."""
        batch = self.scenarios_function(targets, outputs)
        return lambda *values: batch([values])[0]

    def scenarios_function(
        self, targets: list[CellRef | str], outputs: list[CellRef | str]
    ) -> Callable[[Sequence[Sequence[Override]]], list[list[CellValue]]]:
        """:meth:`scenario_function` for many rows of the ``targets``' values at once (the
        same values, computed a cell at a time for all rows: :meth:`Evaluator.scenarios`)."""
        t_keys = [self._check_override(t, 0.0)[1] for t in targets]
        o_keys = [self.key_of(self.resolve(o)) for o in outputs]
        evaluator = self._evaluator_for(t_keys)
        if evaluator is None:

            def whole(rows: Sequence[Sequence[Override]]) -> list[list[CellValue]]:
                evs = [self.evaluate(dict(zip(targets, row, strict=True))) for row in rows]
                return [[ev.value(self.ref_of(k)) for k in o_keys] for ev in evs]

            return whole
        batch = evaluator.scenarios(t_keys, o_keys)

        def scenarios(rows: Sequence[Sequence[Override]]) -> list[list[CellValue]]:
            engine_rows = []
            for row in rows:
                for t, v in zip(targets, row, strict=True):
                    self._check_override(t, v)
                engine_rows.append([engine_value(float(v) if type(v) is int else v) for v in row])
            return [[to_cell(v) for v in got] for got in batch(engine_rows)]

        return scenarios


def _inside(cell: tuple[int, int], span: tuple[int, int, int, int]) -> bool:
    return span[0] <= cell[0] <= span[2] and span[1] <= cell[1] <= span[3]


def _note(text: str) -> Diagnostic:
    return Diagnostic("note", None, text)


_CACHE: OrderedDict[str, WorkbookModel] = OrderedDict()


def load_model(data: bytes, name: str, limits: Limits = DEFAULT_LIMITS) -> WorkbookModel:
    """The model of ``data``, from the in-memory cache when possible (keyed by content,
    function-registry generation and limits; the latest MAX_CACHED_MODELS are kept)."""
    gen = ensure_registered()
    key = f"{hashlib.sha256(data).hexdigest()}:{gen}:{hash(limits)}"
    model = _CACHE.get(key)
    if model is not None:
        _CACHE.move_to_end(key)
        model.name = name
        return model
    model = WorkbookModel(data, name, limits)
    _CACHE[key] = model
    while len(_CACHE) > MAX_CACHED_MODELS:
        _CACHE.popitem(last=False)
    return model


def clear_cache() -> None:
    """Forget every model (tests, benchmarks)."""
    _CACHE.clear()

