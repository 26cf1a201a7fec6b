"""A workbook compiled once by the `formulas` engine and evaluated many times.

:func:`load_model` checks the bytes (:mod:`udfs.xlsx.guard`), compiles them
and keeps the compiled model in memory keyed by the SHA-256 of the file's
content (and the generation of the function registry), so evaluating the same
workbook again -- with the same or new input values -- skips loading and
parsing.

Two evaluators give the same results:

* **the lean plan** (:class:`udfs.engine.fast.FastPlan`, used whenever it covers
  the workbook): the engine's parser, formula graphs and function objects, one
  parse per relative formula, our own dependency order; new inputs recompute
  only the cells downstream of them (and, in sweeps, upstream of the outputs).
  It declines what it does not reproduce exactly (circular references, unknown
  functions, names that are not plain references, ...) and a run in which a
  function raises falls back, for good, to
* **the full engine** (``formulas.ExcelModel``, compiled on first need): the
  first evaluation with a given set of input cells runs the whole model; from
  the second on, the model is reduced to the cells those inputs reach (a
  compiled "pipe"). Pipes are replayed by :class:`udfs.engine.lean.LeanPipe`
  (per formula always; per workbook once it has given exactly the engine's own
  results); ``CELLWRIGHT_LEAN=0`` turns that off.

``CELLWRIGHT_FAST=0`` turns the lean plan off. Sweeps use
:meth:`WorkbookModel.scenario_function`, reduced to the cells between the
varied inputs and the requested outputs.

There is no cache on disk: the engine's compiled objects do not pickle, and
unpickling from a shared directory would run code from it.

Problems are reported as :class:`Diagnostic` lines naming the sheet and cell:
circular references, unsupported functions (``#NAME?``), error values (with
the reason our functions gave), never a stack trace.

>>> import io, openpyxl
>>> wb = openpyxl.Workbook(); ws = wb.active; ws.title = "Calc"
>>> ws["A1"] = 2; ws["A2"] = "=A1*21"
>>> buf = io.BytesIO(); wb.save(buf)
>>> model = load_model(buf.getvalue(), "demo.xlsx")
>>> model.evaluate().value("Calc!A2"), model.evaluate({"Calc!A1": 3}).value("Calc!A2")
(42.0, 63.0)
"""

from __future__ import annotations

import contextlib
import functools
import hashlib
import io
import logging
import os
import re
import time
import types
import warnings
from collections import OrderedDict
from collections.abc import Callable, Iterable, Iterator, Mapping
from dataclasses import dataclass, field
from typing import Any, NamedTuple

import formulas
import formulas.excel as _formulas_excel
import numpy as np
import schedula as sh
import tqdm
from formulas.cell import InvRangesAssembler, Ref
from formulas.excel import BOOK
from formulas.excel.xlreader import load_workbook
from formulas.functions import get_functions
from formulas.ranges import Ranges

from udfs.sheet.error_values import SheetError
from udfs.xlsx.file_errors import EngineError, WorkbookError
from udfs.xlsx.guard import DEFAULT_LIMITS, Limits, PackageReport, inspect_package
from udfs.xlsx.package import Package
from udfs.xlsx.refs import CellRef, col_letters, parse_cell, split_coordinate

from .fast import FastPlan, FastRunError, Key, NotCoveredError, Unit, plain
from .functions import (
    CellValue,
    ensure_registered,
    from_engine,
    messages_for,
    registered_names,
)
from .lean import LeanPipe, UnsupportedPipeError, leanify_cells

__all__ = [
    "INTERNAL_BOOK",
    "Diagnostic",
    "Evaluation",
    "NamedValue",
    "WorkbookModel",
    "clear_cache",
    "load_model",
]

INTERNAL_BOOK = "BOOK.XLSX"  # the name the engine knows the workbook by: cache hits across names
MAX_CACHED_MODELS = 4
MAX_DERIVED_MODELS = 8
MAX_REPORTED_ERRORS = 20
_MISSING_BASEDIR = "/nonexistent/cellwright-engine-no-external-files"
#: Replay compiled pipes with :class:`udfs.engine.lean.LeanPipe` (CELLWRIGHT_LEAN=0 turns off).
LEAN = os.environ.get("CELLWRIGHT_LEAN", "1") != "0"
#: Evaluate with :class:`udfs.engine.fast.FastPlan` when it covers the workbook
#: (CELLWRIGHT_FAST=0 turns it off: the full engine always).
FAST = os.environ.get("CELLWRIGHT_FAST", "1") != "0"
_FUNCTION_CALL = re.compile(r"(?<![\w.])([A-Za-z_][\w.]*)\s*\(")
_STRING = re.compile(r'"(?:[^"]|"")*"')

# formulas shows a tqdm progress bar while compiling; the CLI draws its own.
_formulas_excel.tqdm = types.SimpleNamespace(tqdm=functools.partial(tqdm.tqdm, disable=True))

Override = float | int | bool | str


class Diagnostic(NamedTuple):
    """One problem found while compiling or evaluating, with its cell if any."""

    kind: str  # "circular", "unsupported", "error", "note"
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


@contextlib.contextmanager
def _quiet() -> Iterator[None]:
    """Silence the libraries' own logging and warnings (we report problems ourselves)."""
    loggers = [logging.getLogger(n) for n in ("formulas", "schedula", "openpyxl")]
    levels = [lg.level for lg in loggers]
    for lg in loggers:
        lg.setLevel(logging.CRITICAL + 1)
    try:
        with warnings.catch_warnings(), np.errstate(all="ignore"):
            warnings.simplefilter("ignore")
            yield
    finally:
        for lg, level in zip(loggers, levels, strict=True):
            lg.setLevel(level)


class _SealedModel(formulas.ExcelModel):
    """An ExcelModel that never opens any file but the one workbook it was given."""

    def add_book(self, book: Any = None, context: Any = None, data_only: bool = False) -> Any:
        if isinstance(book, str) and book.upper() != INTERNAL_BOOK:
            raise WorkbookError(f"external workbook {book!r} is not opened")
        return super().add_book(book, context, data_only)


@dataclass
class Evaluation:
    """Results of one evaluation: formula cells and the inputs that were set."""

    model: WorkbookModel
    values: dict[CellRef, CellValue]
    inputs: dict[CellRef, CellValue]
    diagnostics: list[Diagnostic]
    seconds: float
    compiled: bool = False  # True when a compiled pipe was reused
    notes: list[str] = field(default_factory=list)

    def value(self, ref: CellRef | str) -> CellValue:
        """The value of a cell after evaluation (formula result, input or constant)."""
        cell = self.model.resolve(ref)
        if cell in self.values:
            return self.values[cell]
        return self.model.constant(cell)

    def named(self) -> list[NamedValue]:
        """Defined names that refer to single cells, with their values (workbook order)."""
        return [
            NamedValue(n, ref, self.value(ref), self.model.is_formula(ref))
            for n, ref in self.model.named_cells.items()
        ]

    def errors(self) -> list[Diagnostic]:
        return [d for d in self.diagnostics if d.kind != "note"]


def _names_in(formula: str) -> list[str]:
    return [m.upper() for m in _FUNCTION_CALL.findall(_STRING.sub('""', formula))]


def _known_function(name: str) -> bool:
    table = get_functions()
    return name in table or name in ("LAMBDA", "LET") or name.startswith("_XLETA.")


def _tarjan(nodes: set[Any], succ: Mapping[Any, Any]) -> list[list[Any]]:
    """Strongly connected components (iterative Tarjan) of the graph restricted to nodes."""
    index: dict[Any, int] = {}
    low: dict[Any, int] = {}
    on_stack: set[Any] = set()
    stack: list[Any] = []
    out: list[list[Any]] = []
    counter = 0
    for root in nodes:
        if root in index:
            continue
        work = [(root, iter([n for n in succ.get(root, ()) if n in nodes]))]
        index[root] = low[root] = counter
        counter += 1
        stack.append(root)
        on_stack.add(root)
        while work:
            v, it = work[-1]
            advanced = False
            for w in it:
                if w not in index:
                    index[w] = low[w] = counter
                    counter += 1
                    stack.append(w)
                    on_stack.add(w)
                    work.append((w, iter([n for n in succ.get(w, ()) if n in nodes])))
                    advanced = True
                    break
                if w in on_stack:
                    low[v] = min(low[v], index[w])
            if advanced:
                continue
            work.pop()
            if work:
                low[work[-1][0]] = min(low[work[-1][0]], low[v])
            if low[v] == index[v]:
                comp = []
                while True:
                    w = stack.pop()
                    on_stack.discard(w)
                    comp.append(w)
                    if w == v:
                        break
                if len(comp) > 1 or v in succ.get(v, ()):
                    out.append(comp)
    return out


class WorkbookModel:
    """One workbook compiled by the engine; see :func:`load_model`."""

    def __init__(
        self,
        data: bytes,
        name: str,
        limits: Limits = DEFAULT_LIMITS,
        *,
        report: PackageReport | None = None,
        structural: tuple[tuple[CellRef, Override], ...] = (),
    ):
        t0 = time.perf_counter()
        self.name = name
        self.data = data
        self.limits = limits
        self.sha256 = hashlib.sha256(data).hexdigest()
        self.report = report if report is not None else inspect_package(data, name, limits)
        self.package: Package = self.report.package
        self.structural = structural
        self.generation = ensure_registered()
        self._titles = {s.name.upper(): s.name for s in self.package.sheets}
        for s in self.package.worksheets():
            if "'" in s.name:
                raise WorkbookError(
                    f"{name}: sheet name {s.name!r} contains an apostrophe, which the "
                    "headless engine cannot read; rename the sheet"
                )
        self._formula_nodes: dict[str, tuple[str, int, int, int, int]] = {}
        self._formula_at: dict[tuple[str, int, int], str] = {}
        self._formula_text: dict[CellRef, str] = {}
        self._constants: dict[tuple[str, int, int], CellValue] = {}
        self._solved: list[str] | None = None
        self._default: dict[CellRef, CellValue] | None = None
        self._pipes: dict[tuple[tuple[str, ...], tuple[str, ...]], Any] = {}
        self._uncompilable: set[tuple[tuple[str, ...], tuple[str, ...]]] = set()
        self._layouts: dict[str, list[tuple[CellRef, int, int]]] = {}
        self._seen: set[tuple[str, ...]] = set()
        self._fast_seen: set[tuple[Key, ...]] = set()
        self._derived: OrderedDict[tuple[tuple[CellRef, Override], ...], WorkbookModel] = (
            OrderedDict()
        )
        self.static_diagnostics: list[Diagnostic] = [
            Diagnostic("note", None, n) for n in self.report.notes
        ]
        self._cycle_diagnostics: list[Diagnostic] = []
        self._xl_model: Any = None
        self._fast: FastPlan | None = None
        self._fast_cache: dict[CellRef, CellValue] | None = None
        self._unit_cells: dict[int, list[tuple[CellRef, Key]]] = {}
        self._book: Any = self._load_book()
        if FAST:
            self._fast = self._plan(self._book)
        if self._fast is None:
            self._xl_model = self._compile(self._book)
        self.named_cells = self._read_names()
        self.build_seconds = time.perf_counter() - t0

    # ------------------------------------------------------------ compiling
    @property
    def _xl(self) -> Any:
        """The full engine's model (compiled on first use when the fast plan covers the book)."""
        if self._xl_model is None:
            self._xl_model = self._compile(self._book)
        return self._xl_model

    @property
    def fast(self) -> bool:
        """True when evaluations run through the lean :class:`FastPlan`."""
        return self._fast is not None

    def _load_book(self) -> Any:
        with _quiet():
            try:
                book = load_workbook(io.BytesIO(self.data), keep_links=False)
            except EngineError:
                raise
            except Exception as exc:
                raise WorkbookError(
                    f"{self.name}: cannot be read as a workbook ({type(exc).__name__}: {exc})"
                ) from None
            for ref, value in self.structural:
                cell = book[ref.sheet].cell(ref.row, ref.col)
                cell.value = value
                if isinstance(value, str):
                    cell.data_type = "s"  # text, even if it starts with "="
            self._scan_book(book)
        return book

    def _plan(self, book: Any) -> FastPlan | None:
        """The lean plan of the book, or None when the full engine is needed."""
        try:
            with _quiet():
                plan = FastPlan(book)
        except NotCoveredError:
            return None
        except RecursionError:
            return None
        for unit in plan.book_order:
            self._formula_nodes[unit.node] = (unit.sheet, unit.r1, unit.c1, unit.r2, unit.c2)
            title = self._titles[unit.sheet]
            cells = []
            for key, _, _ in unit.cells():
                self._formula_at[key] = unit.node
                cells.append((CellRef(title, key[1], key[2]), key))
            self._unit_cells[unit.order] = cells
        return plan

    def _compile(self, book: Any) -> Any:
        self._formula_nodes.clear()
        self._formula_at.clear()
        with _quiet():
            xl = _SealedModel()
            xl.basedir = _MISSING_BASEDIR
            xl.books[INTERNAL_BOOK] = {BOOK: book}
            try:
                wb, ctx = xl.add_book(INTERNAL_BOOK)
                xl.pushes(*wb.worksheets, context=ctx)
                xl.finish()
            except RecursionError:
                raise WorkbookError(f"{self.name}: formulas nested too deeply to compile") from None
            except EngineError:
                raise
            except Exception as exc:
                raise WorkbookError(
                    f"{self.name}: the engine cannot compile this workbook "
                    f"({type(exc).__name__}: {str(exc).splitlines()[0] if str(exc) else ''})"
                ) from None
        if LEAN:
            leanify_cells(xl.cells.values())
        for node, cell in xl.cells.items():
            if isinstance(cell, Ref) or cell.func is None:
                continue
            rng = cell.range.ranges[0]
            sheet = str(rng["sheet"]).upper()
            if sheet not in self._titles:
                continue
            r1, c1, r2, c2 = int(rng["r1"]), int(rng["n1"]), int(rng["r2"]), int(rng["n2"])
            self._formula_nodes[node] = (sheet, r1, c1, r2, c2)
            for r in range(r1, r2 + 1):
                for c in range(c1, c2 + 1):
                    self._formula_at[(sheet, r, c)] = node
        return xl

    def _scan_book(self, book: Any) -> None:
        """Constants, formula texts and unsupported functions, from the loaded book."""
        for ws in book.worksheets:
            sheet = ws.title.upper()
            for (r, c), cell in ws._cells.items():
                value = cell.value
                if value is None:
                    continue
                if cell.data_type == "f":
                    text = value if isinstance(value, str) else getattr(value, "text", "")
                    if not isinstance(text, str):
                        continue
                    ref = CellRef(ws.title, r, c)
                    self._formula_text[ref] = text
                    bad = sorted({n for n in _names_in(text) if not _known_function(n)})
                    if bad:
                        self.static_diagnostics.append(
                            Diagnostic(
                                "unsupported",
                                ref,
                                f"unsupported function {', '.join(bad)} (the cell shows #NAME?)",
                            )
                        )
                elif cell.data_type == "e":
                    self._constants[(sheet, r, c)] = SheetError(str(value))
                elif isinstance(value, (bool, int, float, str)):
                    self._constants[(sheet, r, c)] = value
                else:  # dates and times: the engine reads them as serial numbers
                    self._constants[(sheet, r, c)] = str(value)

    def _read_names(self) -> dict[str, CellRef]:
        out: dict[str, CellRef] = {}
        for dn in self.package.defined_names:
            if dn.hidden or dn.local_sheet is not None or dn.name.startswith("_xlnm."):
                continue
            ref = dn.single_cell()
            if ref is None or ref.sheet.upper() not in self._titles:
                continue
            out[dn.name] = CellRef(self._titles[ref.sheet.upper()], ref.row, ref.col)
        return out

    # ------------------------------------------------------------ queries
    @property
    def sheet_names(self) -> list[str]:
        return [s.name for s in self.package.sheets]

    @property
    def formula_count(self) -> int:
        return len(self._formula_nodes)

    def formula_refs(self) -> set[CellRef]:
        """Every cell that holds a formula result (array-formula ranges included)."""
        return {CellRef(self._titles[s], r, c) for (s, r, c) in self._formula_at}

    def portable_refs(self) -> set[CellRef]:
        """Formula cells every spreadsheet program can recompute: no CW_ (or unknown) call."""
        ours = set(registered_names())
        out: set[CellRef] = set()
        for sheet, r1, c1, r2, c2 in self._formula_nodes.values():
            title = self._titles[sheet]
            text = self._formula_text.get(CellRef(title, r1, c1), "")
            names = _names_in(text)
            if any(n in ours or n.startswith("_XLUDF.") or not _known_function(n) for n in names):
                continue
            out.update(CellRef(title, r, c) for r in range(r1, r2 + 1) for c in range(c1, c2 + 1))
        return out

    def is_formula(self, ref: CellRef) -> bool:
        return (ref.sheet.upper(), ref.row, ref.col) in self._formula_at

    def constant(self, ref: CellRef) -> CellValue:
        """The value stored in a non-formula cell (None when empty)."""
        return self._constants.get((ref.sheet.upper(), ref.row, ref.col))

    def formula_text(self, ref: CellRef) -> str | None:
        return self._formula_text.get(ref)

    def resolve(self, ref: CellRef | str) -> CellRef:
        """A CellRef with the sheet's real name; accepts ``Sheet!B4``, ``B4`` or a defined name."""
        if isinstance(ref, str):
            text = ref.strip()
            by_name = {k.casefold(): v for k, v in self.named_cells.items()}
            if "!" not in text and text.casefold() in by_name:
                return by_name[text.casefold()]
            try:
                ref = parse_cell(text)
            except EngineError:
                names = ", ".join(list(self.named_cells)[:12]) or "none"
                raise WorkbookError(
                    f"{text!r} is neither a cell (Sheet!B4) nor a defined name of one cell "
                    f"(named cells: {names})"
                ) from None
        sheets = self.package.worksheets()
        if not ref.sheet:
            if len(sheets) != 1:
                raise WorkbookError(
                    f"{ref.coordinate}: say which sheet, e.g. {sheets[0].name}!{ref.coordinate}"
                )
            return CellRef(sheets[0].name, ref.row, ref.col)
        entry = self.package.sheet(ref.sheet)
        if entry is None or entry.kind != "worksheet":
            raise WorkbookError(
                f"unknown sheet {ref.sheet!r} in {ref.address}; the sheets are: "
                + ", ".join(repr(s.name) for s in sheets)
            )
        return CellRef(entry.name, ref.row, ref.col)

    # ------------------------------------------------------------ evaluating
    def _node(self, sheet_upper: str, row: int, col: int) -> str:
        return f"'[{INTERNAL_BOOK}]{sheet_upper}'!{col_letters(col)}{row}"

    def _layout(self, node: str) -> list[tuple[CellRef, int, int]]:
        """The cells of a formula node with their (row, column) offsets (cached)."""
        cells = self._layouts.get(node)
        if cells is None:
            sheet, r1, c1, r2, c2 = self._formula_nodes[node]
            title = self._titles[sheet]
            cells = [
                (CellRef(title, r, c), r - r1, c - c1)
                for r in range(r1, r2 + 1)
                for c in range(c1, c2 + 1)
            ]
            self._layouts[node] = cells
        return cells

    def _collect(self, names: list[str], values: list[Any]) -> dict[CellRef, CellValue]:
        out: dict[CellRef, CellValue] = {}
        for node, value in zip(names, values, strict=True):
            arr = value.value if isinstance(value, Ranges) else np.asarray(value, dtype=object)
            if arr.ndim < 2:
                arr = arr.reshape(1, -1) if arr.ndim == 1 else arr.reshape(1, 1)
            rows, cols = arr.shape
            for ref, i, j in self._layout(node):
                v = arr[i, j] if i < rows and j < cols else None
                out[ref] = SheetError("#N/A") if v is None else from_engine(v)
        return out

    def _full(self, inputs: dict[str, Any]) -> dict[CellRef, CellValue]:
        with _quiet():
            sol = self._xl.calculate(inputs=inputs) if inputs else self._xl.calculate()
        names = [n for n in self._formula_nodes if n in sol]
        if self._solved is None:
            self._solved = names
            self._find_cycles(set(sol))
        return self._collect(names, [sol[n] for n in names])

    def _find_cycles(self, solved: set[Any]) -> None:
        missing = [n for n in self._formula_nodes if n not in solved]
        if not missing:
            return
        dsp = self._xl.dsp
        pending = {n for n in dsp.data_nodes if n not in solved}
        pending |= {
            f
            for f, node in dsp.function_nodes.items()
            if any(o in pending for o in node.get("outputs", ()))
        }
        cyclic: set[str] = set()
        for comp in _tarjan(pending, dsp.dmap.succ):
            cells = sorted(
                (self._ref_of(n) for n in comp if n in self._formula_nodes),
                key=lambda r: (r.sheet, r.row, r.col),
            )
            if not cells:
                continue
            cyclic.update(n for n in comp if n in self._formula_nodes)
            shown = " -> ".join(c.address for c in cells[:8])
            more = f" (and {len(cells) - 8} more)" if len(cells) > 8 else ""
            message = f"circular reference: {shown}{more}; not evaluated"
            self._cycle_diagnostics.append(Diagnostic("circular", cells[0], message))
        for n in missing:
            if n not in cyclic:
                reason = "depends on a circular reference" if cyclic else "could not be evaluated"
                self._cycle_diagnostics.append(
                    Diagnostic("circular", self._ref_of(n), f"not evaluated: {reason}")
                )

    def _ref_of(self, node: str) -> CellRef:
        sheet, r1, c1, _, _ = self._formula_nodes[node]
        return CellRef(self._titles[sheet], r1, c1)

    def _compile_pipe(
        self, keys: tuple[str, ...], args: list[Any], outputs: tuple[str, ...] | None = None
    ) -> Any:
        """The model reduced to what ``keys`` reach and ``outputs`` need (cached); a
        lean replay of it when that gives exactly the engine's own results for ``args``."""
        if self._solved is None:
            return None
        outs = tuple(self._solved) if outputs is None else outputs
        key = (keys, outs)
        if key in self._pipes:
            return self._pipes[key]
        if key in self._uncompilable:
            return None
        try:
            with _quiet():
                pipe = self._xl.compile(inputs=list(keys), outputs=list(outs))
        except Exception:  # the engine cannot reduce this model: evaluate it whole
            self._uncompilable.add(key)
            return None
        if LEAN:
            try:
                lean = LeanPipe(pipe, mode="model")
                with _quiet():
                    same = self._pipe_values(pipe(*args), outs) == self._pipe_values(
                        lean(*args), outs
                    )
                if same:
                    pipe = lean
            except UnsupportedPipeError:
                pass
        self._pipes[key] = pipe
        return pipe

    def _pipe_values(self, res: Any, outputs: tuple[str, ...]) -> dict[CellRef, CellValue]:
        res = [res] if len(outputs) == 1 else list(res)
        return self._collect(list(outputs), res)

    def scenario_function(
        self, targets: list[CellRef | str], outputs: list[CellRef | str]
    ) -> Callable[..., list[CellValue]]:
        """A function of the ``targets``' values returning the ``outputs``' values.

        For sweeps: the model is reduced once to the cells between those inputs
        and those outputs, so each call recomputes only them.
        """
        t_refs = [self.resolve(t) for t in targets]
        o_refs = [self.resolve(o) for o in outputs]
        if self._fast is not None:

            def slow_fast(*values: Override) -> list[CellValue]:
                ev = self.evaluate(dict(zip(t_refs, values, strict=True)), compile=True)
                return [ev.value(r) for r in o_refs]

            return self._fast_scenario(t_refs, o_refs, slow_fast)
        fast, structural = self._split(dict.fromkeys(t_refs, 0.0))
        keys = tuple(sorted(fast))
        order = [next(k for k, (r, _) in fast.items() if r == ref) for ref in t_refs]
        formula_outs = tuple(
            dict.fromkeys(
                self._formula_at[(r.sheet.upper(), r.row, r.col)]
                for r in o_refs
                if self.is_formula(r)
            )
        )
        state: dict[str, Any] = {}

        def slow(*values: Override) -> list[CellValue]:
            ev = self.evaluate(dict(zip(t_refs, values, strict=True)), compile=True)
            return [ev.value(r) for r in o_refs]

        def run(*values: Override) -> list[CellValue]:
            by_node = dict(zip(order, values, strict=True))
            args = [by_node[k] for k in keys]
            if "pipe" not in state:
                if self._solved is None:
                    self._full(dict(zip(keys, args, strict=True)))
                solved = set(self._solved or ())
                outs = tuple(n for n in formula_outs if n in solved)
                state["outs"] = outs
                state["pipe"] = self._compile_pipe(keys, args, outs) if outs else None
            outs, pipe = state["outs"], state["pipe"]
            if outs and pipe is None:
                return slow(*values)
            with _quiet():
                got = self._pipe_values(pipe(*args), outs) if outs else {}
            given = dict(zip(t_refs, values, strict=True))
            return [
                got[r] if r in got else given[r] if r in given else self.constant(r) for r in o_refs
            ]

        return slow if structural or not keys else run

    def _split(
        self, overrides: Mapping[CellRef | str, Override]
    ) -> tuple[dict[str, tuple[CellRef, Override]], dict[CellRef, Override]]:
        fast: dict[str, tuple[CellRef, Override]] = {}
        structural: dict[CellRef, Override] = {}
        pred = self._xl.dsp.dmap.pred
        for key, value in overrides.items():
            ref = self._check_override(key, value)
            loc = (ref.sheet.upper(), ref.row, ref.col)
            node = self._node(loc[0], ref.row, ref.col)
            if node in self._xl.dsp.data_nodes and self._is_input_node(node, pred):
                fast[node] = (ref, value)
            else:
                structural[ref] = value
        return fast, structural

    def _check_override(self, key: CellRef | str, value: Any) -> CellRef:
        """The cell an override sets; refuses formula cells and values a cell cannot hold."""
        ref = self.resolve(key)
        if isinstance(value, float) and not np.isfinite(value):
            raise WorkbookError(f"{ref.address}: a cell cannot hold {value}")
        if not isinstance(value, (bool, int, float, str)):
            raise WorkbookError(
                f"{ref.address}: value must be a number, TRUE/FALSE or text "
                f"(got {type(value).__name__})"
            )
        loc = (ref.sheet.upper(), ref.row, ref.col)
        if loc in self._formula_at:
            _, r1, c1, r2, c2 = self._formula_nodes[self._formula_at[loc]]
            where = (
                f"is part of the array formula {col_letters(c1)}{r1}:{col_letters(c2)}{r2}"
                if (r1, c1) != (r2, c2)
                else "holds a formula"
            )
            raise WorkbookError(
                f"{ref.address} {where}; --set changes input cells (values), not formulas"
            )
        return ref

    def _is_input_node(self, node: str, pred: Mapping[Any, Any]) -> bool:
        """No formula computes ``node``: its only links in are the engine's inverse
        links (a defined name or a range set as a whole writes back into its cells)."""
        nodes = self._xl.dsp.nodes
        for f in pred.get(node, ()):
            info = nodes[f]
            func = info.get("function")
            if isinstance(func, InvRangesAssembler):
                continue
            if func is sh.bypass and all(
                node in nodes[i].get("inv-data", ()) for i in info.get("inputs", ())
            ):
                continue
            return False
        return True

    def _derived_model(self, structural: dict[CellRef, Override]) -> WorkbookModel:
        key = tuple(sorted(structural.items(), key=lambda kv: (kv[0], repr(kv[1]))))
        model = self._derived.get(key)
        if model is None:
            model = WorkbookModel(
                self.data, self.name, self.limits, report=self.report, structural=key
            )
            self._derived[key] = model
            while len(self._derived) > MAX_DERIVED_MODELS:
                self._derived.popitem(last=False)
        else:
            self._derived.move_to_end(key)
        return model

    def evaluate(
        self, overrides: Mapping[CellRef | str, Override] | None = None, *, compile: bool = False
    ) -> Evaluation:
        """Evaluate with ``overrides`` (cell or defined name -> value).

        Overrides of value cells are engine inputs (fast, reusable); setting an
        empty cell the model does not hold recompiles a variant of the workbook
        once (cached). Formula cells cannot be set. ``compile=True`` reduces the
        model to what the inputs reach right away (for sweeps); otherwise that
        happens on the second evaluation with the same input cells.
        """
        t0 = time.perf_counter()
        if self._fast is not None:
            try:
                ev = self._evaluate_fast(overrides or {}, t0)
            except FastRunError:
                self._fast = None  # a function raised: the full engine from now on
                ev = None
            if ev is not None:
                return ev
        fast, structural = self._split(overrides or {})
        if structural:
            derived = self._derived_model(structural)
            ev = derived.evaluate({ref: v for ref, v in fast.values()}, compile=compile)
            for ref, v in structural.items():
                ev.values[ref] = v
                ev.inputs[ref] = v
            ev.model = self
            ev.seconds = time.perf_counter() - t0
            return ev
        compiled = False
        if not fast:
            if self._default is None:
                self._default = self._full({})
            values = dict(self._default)
        else:
            keys = tuple(sorted(fast))
            args = [fast[k][1] for k in keys]
            pipe = self._compile_pipe(keys, args) if (compile or keys in self._seen) else None
            if pipe is None and compile and self._solved is None:
                self._full(dict(zip(keys, args, strict=True)))  # learn what the model reaches
                pipe = self._compile_pipe(keys, args)
            if pipe is not None and self._solved is not None:
                with _quiet():
                    values = self._pipe_values(pipe(*args), tuple(self._solved))
                compiled = True
            else:
                values = self._full(dict(zip(keys, args, strict=True)))
            self._seen.add(keys)
        return self._evaluation(values, fast.values(), t0, compiled)

    def _fast_inputs(
        self, overrides: Mapping[CellRef | str, Override]
    ) -> dict[Key, tuple[CellRef, Override]] | None:
        """Checked overrides by cell key; None when only the full engine gives the
        exact result (a float with more than 15 decimals set into an empty cell,
        which the engine compiles as a rounded constant)."""
        assert self._fast is not None
        out: dict[Key, tuple[CellRef, Override]] = {}
        for key, value in overrides.items():
            ref = self._check_override(key, value)
            loc = (ref.sheet.upper(), ref.row, ref.col)
            if _rounds_differently(value) and loc not in self._fast.constants:
                return None
            out[loc] = (ref, value)
        return out

    def _fast_values(
        self, cells: Mapping[Key, Any], units: list[Unit] | None
    ) -> dict[CellRef, CellValue]:
        """Formula cells' values from the plan's cells (all, or only ``units`` on the default)."""
        assert self._fast is not None
        if units is None and self._fast_cache is not None:
            return dict(self._fast_cache)  # the default results, already converted
        if self._fast_cache is None or units is None:
            values: dict[CellRef, CellValue] = {}
            for unit in self._fast.book_order:
                for ref, key in self._unit_cells[unit.order]:
                    values[ref] = plain(cells[key][0, 0])
            if units is None and self._fast_cache is None:
                self._fast_cache = values
            return dict(values)
        values = dict(self._fast_cache)
        for unit in units:
            for ref, key in self._unit_cells[unit.order]:
                values[ref] = plain(cells[key][0, 0])
        return values

    def _evaluate_fast(
        self, overrides: Mapping[CellRef | str, Override], t0: float
    ) -> Evaluation | None:
        plan = self._fast
        assert plan is not None
        given = self._fast_inputs(overrides)
        if given is None:
            return None
        keys = tuple(sorted(given))
        compiled = keys in self._fast_seen if keys else False
        if not keys:
            values = self._fast_values(plan.evaluate({}), None)
        else:
            if self._fast_cache is None:
                self._fast_values(plan.evaluate({}), None)
            cells = plan.runner(keys, None)([given[k][1] for k in keys])
            values = self._fast_values(cells, plan.affected(keys, None))
            self._fast_seen.add(keys)
        return self._evaluation(values, given.values(), t0, compiled)

    def _evaluation(
        self,
        values: dict[CellRef, CellValue],
        given: Iterable[tuple[CellRef, Override]],
        t0: float,
        compiled: bool,
    ) -> Evaluation:
        """The evaluation of formula ``values`` with the ``given`` inputs set in."""
        inputs: dict[CellRef, CellValue] = {ref: v for ref, v in given}
        values.update(inputs)
        diags = list(self.static_diagnostics) + list(self._cycle_diagnostics)
        diags += self._error_diagnostics(values)
        return Evaluation(self, values, inputs, diags, time.perf_counter() - t0, compiled)

    def _fast_scenario(
        self, t_refs: list[CellRef], o_refs: list[CellRef], slow: Callable[..., list[CellValue]]
    ) -> Callable[..., list[CellValue]]:
        plan = self._fast
        assert plan is not None
        for ref in t_refs:
            self._check_override(ref, 0.0)
        t_keys = [(r.sheet.upper(), r.row, r.col) for r in t_refs]
        o_keys = [(r.sheet.upper(), r.row, r.col) for r in o_refs]
        outs = [k for k in o_keys if k in plan.owner]
        runner = plan.runner(t_keys, outs)
        given_at = {k: i for i, k in enumerate(t_keys)}
        empty = [k not in plan.constants for k in t_keys]
        constants = [self.constant(r) for r in o_refs]

        def run(*values: Override) -> list[CellValue]:
            if self._fast is None or any(
                e and _rounds_differently(v) for e, v in zip(empty, values, strict=True)
            ):
                return slow(*values)
            try:
                cells = runner(values)
            except FastRunError:
                self._fast = None
                return slow(*values)
            out: list[CellValue] = []
            for k, const in zip(o_keys, constants, strict=True):
                if k in plan.owner:
                    out.append(plain(cells[k][0, 0]))
                elif k in given_at:
                    out.append(values[given_at[k]])
                else:
                    out.append(const)
            return out

        return run

    def _error_diagnostics(self, values: Mapping[CellRef, CellValue]) -> list[Diagnostic]:
        out: list[Diagnostic] = []
        unsupported = {d.ref for d in self.static_diagnostics if d.kind == "unsupported"}
        count = 0
        for ref, v in values.items():
            if not isinstance(v, SheetError) or ref in unsupported:
                continue
            count += 1
            if count > MAX_REPORTED_ERRORS:
                continue
            out.append(Diagnostic("error", ref, self._explain(ref, v)))
        if count > MAX_REPORTED_ERRORS:
            out.append(
                Diagnostic("error", None, f"... and {count - MAX_REPORTED_ERRORS} more error cells")
            )
        return out

    def _explain(self, ref: CellRef, err: SheetError) -> str:
        text = self._formula_text.get(ref)
        if text:
            for fn in _names_in(text):
                hits = [m for m in messages_for(fn) if m.startswith(err.code)]
                if hits:
                    return f"{fn}: {hits[-1]}"
        return f"{err.code} (formula ={text.lstrip('=')})" if text else err.code


def _rounds_differently(value: Any) -> bool:
    """A float the engine would store rounded to 15 decimals when compiled as a constant."""
    return isinstance(value, float) and round(value, 15) != value


_CACHE: OrderedDict[str, WorkbookModel] = OrderedDict()


def load_model(data: bytes, name: str, limits: Limits = DEFAULT_LIMITS) -> WorkbookModel:
    """The compiled model of ``data``, from the in-memory cache when possible.

    The cache key is the SHA-256 of the bytes plus the function-registry
    generation; the most recent MAX_CACHED_MODELS models are kept.
    """
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
    """Forget every compiled model (tests, benchmarks)."""
    _CACHE.clear()


def coordinate_ref(sheet: str, coordinate: str) -> CellRef:
    """CellRef from a sheet name and an A1 coordinate."""
    row, col = split_coordinate(coordinate)
    return CellRef(sheet, row, col)
