"""A lean evaluator of a workbook: the engine's own formula functions, none of its bookkeeping.

The `formulas` package builds one schedula dispatcher for a whole workbook and
one more per formula; building them costs about 4 ms per formula cell and
running them 100-250 us per formula. :class:`FastPlan` keeps what decides the
results -- the engine's parser, its token graph of each formula and the very
function objects it calls (Excel's functions and our registered ``CW_``
adapters) -- and replaces the rest:

* **parse once per relative formula**: formulas that differ only by position
  (a filled-down column) share one key -- the text with each A1 reference
  written relative to its cell, ``$`` parts kept absolute -- and are parsed
  once; each cell re-binds the references to its own position;
* **own dependency graph**: cells are evaluated in topological order, each
  formula's function nodes in their order, with plain values: a reference is
  passed as the 2-D object array the engine's ``Ranges.value`` gives (functions
  wrapped to take values) or as a real ``Ranges`` (functions such as INDEX that
  look at references); a result is stored as the engine stores it
  (``replace_empty`` and the reshape to the cell's range);
* **warm runs**: :meth:`FastPlan.runner` evaluates only the cells downstream of
  the changed inputs (and upstream of the wanted outputs), in topological order,
  on top of the cached default results.

Anything it does not handle exactly -- an unknown function, a name that is not a
plain reference, a circular reference, an error constant, an external link, a
function that raises -- raises :class:`NotCoveredError` (while planning) or
:class:`FastRunError` (while running); the caller then uses the full engine.
Tests prove equality with the full engine on mixed workbooks and on the
templates.

>>> import io, openpyxl
>>> from formulas.excel.xlreader import load_workbook
>>> wb = openpyxl.Workbook(); ws = wb.active; ws.title = "Calc"
>>> ws["A1"] = 2; ws["A2"] = "=A1*21"; ws["A3"] = "=A2+A1"
>>> buf = io.BytesIO(); wb.save(buf)
>>> plan = FastPlan(load_workbook(io.BytesIO(buf.getvalue())))
>>> plan.cell_value(plan.evaluate({}), ("CALC", 3, 1))
44.0
>>> plan.cell_value(plan.runner([("CALC", 1, 1)], None)([3]), ("CALC", 3, 1))
66.0
"""

from __future__ import annotations

import functools
import re
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import schedula as sh
from formulas.functions import Array, replace_empty, wrap_ranges_func
from formulas.parser import Parser
from formulas.ranges import Ranges
from formulas.tokens.operand import Number, Range, XlError

from udfs.sheet.error_values import SheetError
from udfs.xlsx.refs import col_index, col_letters

from .aggregates import aggregate_for
from .batch import Batch, schedule
from .chain import BAIL, Chain, compile_chain
from .functions import SheetFunctionAdapter, from_engine
from .scalar_ops import shortcut_for

__all__ = ["FastPlan", "FastRunError", "Key", "NotCoveredError"]

INTERNAL_BOOK = "BOOK.XLSX"
MAX_RANGE_CELLS = 200_000  # a reference larger than this is left to the full engine
Key = tuple[str, int, int]  # (SHEET NAME UPPER CASE, row, column)

_EMPTY = sh.EMPTY
_DIGITS = frozenset("0123456789.")
_NONE = sh.NONE
_VALUE_FUNCTION_CODE = wrap_ranges_func(lambda: None).__code__
_PARSER = Parser(True)
_REF = re.compile(
    r"\"(?:[^\"]|\"\")*\"|'(?:[^']|'')*'"  # strings and quoted sheet names: kept as they are
    r"|(?<![\w.$])(\$?)([A-Za-z]{1,3})(\$?)([0-9]{1,7})(?![\w.(!])"
    # a number as the engine's Number token reads it (TRUE/FALSE are not abstracted)
    r"|(?<![\w.$])((?:[0-9]+(?:\.[0-9]+)?|\.[0-9]+)(?:[Ee][+-][0-9]+)?)(?![A-Za-z0-9.]|\s*:)"
)


class NotCoveredError(Exception):
    """The workbook uses something the lean evaluator does not reproduce exactly."""


class FastRunError(Exception):
    """A function raised (or gave no value) while running: use the full engine."""


def relative_key(
    text: str, row: int, col: int
) -> tuple[str, list[tuple[bool, bool]], tuple[str, ...]]:
    """The formula with each A1 reference relative to (row, col) and each number as ``#``;
    the references' $ flags (row, column) and the numbers, in order.

    >>> relative_key("=A1+$B$2*C$3/2.5", 2, 2)
    ('=R[-1]C[-1]+R2C2*R3C[1]/#', [(False, False), (True, True), (True, False)], ('2.5',))
    >>> relative_key("=A2+A1*2", 3, 1)[0] == relative_key("=A3+A2*7", 4, 1)[0]
    True
    """
    flags: list[tuple[bool, bool]] = []
    numbers: list[str] = []

    def swap(m: re.Match[str]) -> str:
        if m.group(5) is not None:
            numbers.append(m.group(5))
            return "#"
        if m.group(2) is None:
            return m.group(0)
        abs_c, abs_r = bool(m.group(1)), bool(m.group(3))
        c, r = col_index(m.group(2)), int(m.group(4))
        flags.append((abs_r, abs_c))
        rr = f"R{r}" if abs_r else f"R[{r - row}]"
        cc = f"C{c}" if abs_c else f"C[{c - col}]"
        return rr + cc

    return _REF.sub(swap, text), flags, tuple(numbers)


@dataclass
class _RefSlot:
    """A reference operand of a template: where it points from the template's cell."""

    slot: int
    sheet: str
    r1: int
    c1: int
    r2: int
    c2: int
    #: which of r1, c1, r2, c2 are absolute ($); more than one way when the reference is
    #: written twice differently (A1 and $A1): a cell where they part is parsed on its own
    absolute: list[tuple[bool, bool, bool, bool]]
    raw: bool  # some consumer needs a real Ranges object


@dataclass
class _Template:
    """One parsed formula: its program of the engine's function nodes."""

    row: int
    col: int
    consts: list[Any]
    refs: list[_RefSlot]
    program: list[tuple[int, Callable[..., Any], tuple[int, ...], Any]]
    root: int
    numbers: list[int] | None = None  # const slots of the numbers, in text order (shareable)
    chain: Chain | None = None  # one-cell formulas: the steps on plain values (chain.py)


@dataclass
class _Bound:
    """A reference bound to one cell: its range and how to fetch it."""

    slot: int
    sheet: str
    r1: int
    c1: int
    r2: int
    c2: int
    raw: bool
    rng: dict[str, Any] | None = None  # the engine's range dict (for Ranges objects)
    keys: list[Key] | None = None  # the cells of a range, row by row (made on first fetch)
    single: bool = field(init=False)
    plain: bool = field(init=False)  # one cell, passed as its value
    key: Key = field(init=False)

    def __post_init__(self) -> None:
        self.single = self.r1 == self.r2 and self.c1 == self.c2
        self.plain = self.single and not self.raw
        self.key = (self.sheet, self.r1, self.c1)

    def cells(self) -> Iterable[Key]:
        for r in range(self.r1, self.r2 + 1):
            for c in range(self.c1, self.c2 + 1):
                yield (self.sheet, r, c)

    @property
    def name(self) -> str:
        a = f"{col_letters(self.c1)}{self.r1}"
        b = "" if self.single else f":{col_letters(self.c2)}{self.r2}"
        return f"'[{INTERNAL_BOOK}]{self.sheet}'!{a}{b}"


@dataclass
class Unit:
    """A formula cell, or the range of an array formula, bound to its template."""

    node: str
    sheet: str
    r1: int
    c1: int
    r2: int
    c2: int
    template: _Template
    refs: list[_Bound]
    rng: dict[str, Any]
    consts: list[Any]  # the template's constants with this cell's numbers
    order: int = 0
    readers: list[Unit] = field(default_factory=list)
    key: Key = field(init=False)  # the top-left cell

    def __post_init__(self) -> None:
        self.key = (self.sheet, self.r1, self.c1)

    @property
    def shape(self) -> tuple[int, int]:
        return (self.r2 - self.r1 + 1, self.c2 - self.c1 + 1)

    def cells(self) -> Iterable[tuple[Key, int, int]]:
        for r in range(self.r1, self.r2 + 1):
            for c in range(self.c1, self.c2 + 1):
                yield (self.sheet, r, c), r - self.r1, c - self.c1


def _one(value: Any) -> np.ndarray:
    out = np.empty((1, 1), object)
    out[0, 0] = value
    return out


_EMPTY11 = _one(_EMPTY)


def _is_value_function(func: Any) -> bool:
    """True when the function reads references only as values (``Ranges.value``)."""
    return getattr(func, "__code__", None) is _VALUE_FUNCTION_CODE or isinstance(
        func, SheetFunctionAdapter
    )


def _settle(value: Any, shape: tuple[int, int], rng: dict[str, Any]) -> np.ndarray:
    """The cell's stored array, as the engine's output filters make it."""
    t = type(value)
    if shape == (1, 1):
        if t is float or t is int or t is bool or t is str or t is XlError:
            return _one(value)
        if t is Array and value.shape == (1, 1):  # the reshape to (1, 1) gives the same Array
            return _one(0).view(Array) if value[0, 0] is _EMPTY else value  # replace_empty
    value = replace_empty(value)
    stored: np.ndarray = Ranges().set_value(rng, value).values[rng["name"]][1]
    return stored


class FastPlan:
    """Evaluation plan of a loaded workbook (see module doc); raises NotCoveredError."""

    #: evaluate one-cell formulas on plain values where chain.py covers them (same results)
    use_chain = True
    #: ... and filled-down columns of them together (batch.py; same results)
    use_batches = True

    def __init__(self, book: Any):
        self._sheets = {ws.title.upper(): ws for ws in book.worksheets}
        self._ctx_base = {
            "directory": "",
            "filename": INTERNAL_BOOK,
            "excel": INTERNAL_BOOK,
            "external_links": {},
        }
        if getattr(book, "_external_links", None):
            raise NotCoveredError("external links")
        self._names = self._read_names(book)
        self.constants: dict[Key, np.ndarray] = {}
        self.units: list[Unit] = []
        self.owner: dict[Key, Unit] = {}
        self._templates: dict[tuple[str, str], _Template | None] = {}
        self._read_cells()
        self._order()
        self._default: dict[Key, np.ndarray] | None = None
        self._runners: dict[tuple[tuple[Key, ...], tuple[Key, ...] | None], list[Unit]] = {}

    # ------------------------------------------------------------ reading
    def _read_names(self, book: Any) -> dict[str, _Bound]:
        out: dict[str, _Bound] = {}
        names = book.defined_names
        items = names.values() if isinstance(names, dict) else names.definedName
        for dn in items:
            if dn.hidden or dn.localSheetId is not None:
                continue
            key = f"'[{INTERNAL_BOOK}]'!{dn.name.upper()}"
            try:
                _, builder = _PARSER.ast("=" + str(dn.value), context=dict(self._ctx_base))
            except Exception:
                continue  # used by a formula -> unsupported there
            nodes = builder.dsp.nodes
            root = builder.get_node_id(builder[-1])
            if len(nodes) != 1 or not isinstance(builder[-1], Range):
                continue
            attr = builder[-1].attr
            if "r1" not in attr or root not in nodes:
                continue
            b = self._bound_from_attr(attr, 0, False)
            if b is not None:
                out[key] = b
        return out

    def _bound_from_attr(self, attr: Mapping[str, Any], slot: int, raw: bool) -> _Bound | None:
        sheet = str(attr.get("sheet", "")).upper()
        if attr.get("filename", INTERNAL_BOOK).upper() != INTERNAL_BOOK:
            return None
        if sheet not in self._sheets:
            return None
        r1, r2, c1, c2 = int(attr["r1"]), int(attr["r2"]), int(attr["n1"]), int(attr["n2"])
        if min(r1, c1) < 1 or (r2 - r1 + 1) * (c2 - c1 + 1) > MAX_RANGE_CELLS:
            return None
        return _Bound(slot, sheet, r1, c1, r2, c2, raw)

    def _read_cells(self) -> None:
        arrays: dict[Key, tuple[int, int, int, int]] = {}
        for sheet, ws in self._sheets.items():
            for top, ref in getattr(ws, "array_formulae", {}).items():
                r1, c1, r2, c2 = _span(ref)
                top_row, top_col = _span(top)[:2]
                arrays[(sheet, top_row, top_col)] = (r1, c1, r2, c2)
        covered = {
            (sheet, r, c)
            for (sheet, _, _), (r1, c1, r2, c2) in arrays.items()
            for r in range(r1, r2 + 1)
            for c in range(c1, c2 + 1)
        }
        for sheet, ws in self._sheets.items():
            for (r, c), cell in ws._cells.items():
                key = (sheet, r, c)
                value, dtype = cell.value, cell.data_type
                if value is None:
                    continue
                if dtype == "f":
                    text = value if isinstance(value, str) else getattr(value, "text", None)
                    if not isinstance(text, str):
                        raise NotCoveredError(f"formula object at {sheet}!{col_letters(c)}{r}")
                    text = text[1:] if text[:2] == "==" else text
                    span = arrays.get(key, (r, c, r, c))
                    self._add_unit(sheet, span, text)
                    continue
                if key in covered:
                    continue  # a value inside an array formula's range: the engine drops it
                if dtype == "n" and isinstance(value, float):
                    value = round(value, 15)
                if isinstance(value, bool) or type(value) in (int, float):
                    pass
                elif isinstance(value, str):
                    if dtype != "s" and _PARSER.is_formula(value):
                        raise NotCoveredError(f"error constant or text formula at {key}")
                else:
                    raise NotCoveredError(f"{type(value).__name__} value at {key}")
                self.constants[key] = _one(value)

    def _add_unit(self, sheet: str, span: tuple[int, int, int, int], text: str) -> None:
        r1, c1, r2, c2 = span
        single = (r1, c1) == (r2, c2)
        tpl: _Template | None = None
        key_text, flags, numbers = relative_key(text, r1, c1)
        general = (sheet, key_text)  # any numbers
        exact = (sheet, key_text + "\0" + "\0".join(numbers))  # these numbers
        consts: list[Any] | None = None
        if single:
            tpl = self._templates.get(general)
            if tpl is not None and tpl.numbers is not None:
                consts = list(tpl.consts)
                for slot, number in zip(tpl.numbers, numbers, strict=True):
                    consts[slot] = _number(number)
            else:
                tpl = self._templates.get(exact)
        if tpl is None:
            tpl, shareable = self._parse(sheet, span, text, flags, numbers)
            if single and shareable:
                self._templates[exact] = tpl
                if tpl.numbers is not None:
                    self._templates[general] = tpl
        refs = self._bind(tpl, r1, c1)
        if refs is None:  # one reference written two ways parts here: parse this cell,
            tpl, shareable = self._parse(sheet, span, text, flags, numbers)
            consts = None
            refs = self._bind(tpl, r1, c1)
            assert refs is not None
            if single and shareable:  # and let the next cells try this parse instead
                self._templates[exact] = tpl
                if tpl.numbers is not None:
                    self._templates[general] = tpl
        a = f"{col_letters(c1)}{r1}"
        ref_text = a if single else f"{a}:{col_letters(c2)}{r2}"
        node = f"'[{INTERNAL_BOOK}]{sheet}'!{ref_text}"
        rng = Ranges().push(node).ranges[0]
        unit = Unit(node, sheet, r1, c1, r2, c2, tpl, refs, rng, consts or tpl.consts)
        for key_, _, _ in unit.cells():
            if key_ in self.owner:
                raise NotCoveredError("overlapping formulas")
            self.owner[key_] = unit
        self.units.append(unit)

    @staticmethod
    def _bind(tpl: _Template, row: int, col: int) -> list[_Bound] | None:
        """The template's references bound to the cell at (row, col); None if they part."""
        refs: list[_Bound] = []
        dr, dc = row - tpl.row, col - tpl.col
        for ref in tpl.refs:
            spans = {
                (
                    ref.r1 + (0 if ar1 else dr),
                    ref.c1 + (0 if ac1 else dc),
                    ref.r2 + (0 if ar2 else dr),
                    ref.c2 + (0 if ac2 else dc),
                )
                for ar1, ac1, ar2, ac2 in ref.absolute
            }
            if len(spans) != 1:
                return None
            r1, c1, r2, c2 = spans.pop()
            if min(r1, c1) < 1 or r2 > 1_048_576 or c2 > 16_384:
                raise NotCoveredError("a reference moves off the sheet")
            refs.append(_Bound(ref.slot, ref.sheet, r1, c1, r2, c2, ref.raw))
        return refs

    def _parse(
        self,
        sheet: str,
        span: tuple[int, int, int, int],
        text: str,
        flags: list[tuple[bool, bool]],
        numbers: tuple[str, ...] = (),
    ) -> tuple[_Template, bool]:
        """Parse ``text`` at ``span`` into a template; True if other cells may share it."""
        r1, c1, r2, c2 = span
        a = f"{col_letters(c1)}{r1}"
        crd = a if (r1, c1) == (r2, c2) else f"{a}:{col_letters(c2)}{r2}"
        ctx = dict(self._ctx_base, sheet=sheet)
        try:
            rng = Ranges().push(crd, context=ctx, raise_anchor=False).ranges[0]
            pctx = sh.combine_dicts(
                ctx,
                sh.selector(("filename", "sheet"), rng, allow_miss=True),
                base={"cr": rng["r1"], "cc": rng["n1"]},
            )
            tokens, builder = _PARSER.ast(text, context=pctx)
        except Exception as exc:
            raise NotCoveredError(f"cannot parse {text!r}: {exc}") from None
        dsp = builder.dsp
        root_id = builder.get_node_id(builder[-1])
        range_tokens = [t for t in tokens if isinstance(t, Range)]
        cell_tokens = [t for t in range_tokens if "r1" in t.attr]
        # the $ flags found in the text belong to these tokens when they line up; a
        # reference written twice is one node, so both must be the same relative reference
        shareable = len(cell_tokens) * 2 >= len(flags)
        token_flags: dict[str, list[tuple[bool, bool, bool, bool]]] = {}
        pos = 0
        for t in cell_tokens:
            at = t.attr
            one = at["r1"] == at["r2"] and at["n1"] == at["n2"] and ":" not in at.get("ref", "")
            need = 1 if one else 2
            fl = flags[pos : pos + need]
            pos += need
            if len(fl) != need:
                shareable = False
                fl = [(True, True)] * need
            first, last = fl[0], fl[-1]
            mine = (first[0], first[1], last[0], last[1])
            alts = token_flags.setdefault(t.name, [])
            if mine not in alts:
                alts.append(mine)  # one node, written differently: checked where bound
        if pos != len(flags):
            shareable = False
        consts: list[Any] = []
        slots: dict[Any, int] = {}
        refs: list[_RefSlot] = []
        program: list[tuple[int, Callable[..., Any], tuple[int, ...], Any]] = []
        tok_by_name = {t.name: t for t in range_tokens}
        pred = dsp.dmap.pred
        consumers_raw: set[int] = set()

        def slot_of(node: Any, depth: int = 0) -> int:
            if node in slots:
                return slots[node]
            if depth > 400:
                raise NotCoveredError("formula nested too deeply")
            if node in dsp.default_values:
                s = len(consts)
                consts.append(dsp.default_values[node]["value"])
                slots[node] = s
                return s
            funcs = list(pred.get(node, ()))
            if not funcs:
                tok = tok_by_name.get(node)
                if tok is None:
                    raise NotCoveredError(f"input {node!r}")
                if tok.attr.get("is_reference"):
                    named = self._names.get(node)
                    if named is None:
                        raise NotCoveredError(f"name {tok.attr.get('ref')!r}")
                    b = named
                    absolute = [(True, True, True, True)]
                else:
                    found = self._bound_from_attr(tok.attr, 0, False)
                    if found is None:
                        raise NotCoveredError(f"reference {node!r}")
                    b = found
                    absolute = token_flags.get(node, [(True, True, True, True)])
                s = len(consts)
                consts.append(None)
                refs.append(_RefSlot(s, b.sheet, b.r1, b.c1, b.r2, b.c2, absolute, False))
                slots[node] = s
                return s
            if len(funcs) != 1:
                raise NotCoveredError(f"{node!r} has {len(funcs)} definitions")
            attr = dsp.nodes[funcs[0]]
            extra = set(attr) - {"type", "inputs", "outputs", "function", "wait_inputs", "index"}
            extra -= {"solve_cycle", "extra_inputs"}
            if extra or len(attr.get("outputs", ())) != 1:
                raise NotCoveredError(f"function node {funcs[0]!r} ({sorted(extra)})")
            func = attr["function"]
            ins = [slot_of(i, depth + 1) for i in attr.get("inputs") or ()]
            ins = [i for i in ins if consts[i] is not _NONE]
            value_func = _is_value_function(func) or func is sh.bypass
            if not value_func:
                consumers_raw.update(ins)
            s = len(consts)
            consts.append(None)
            kind = (shortcut_for(func) or aggregate_for(func)) if value_func else None
            program.append((s, func, tuple(ins), kind))
            slots[node] = s
            return s

        root = slot_of(root_id)
        for ref in refs:
            ref.raw = ref.slot in consumers_raw
        tpl = _Template(r1, c1, consts, refs, program, root)
        if (r1, c1) == (r2, c2):
            plain_refs = {r.slot: r.r1 == r.r2 and r.c1 == r.c2 and not r.raw for r in refs}
            tpl.chain = compile_chain(program, root, consts, plain_refs)
        # numbers: one node each (none written twice) lined up with the text's numbers
        number_tokens = [t for t in tokens if isinstance(t, Number) and t.name[:1] in _DIGITS]
        names = [t.name for t in number_tokens]
        if (
            names == list(numbers)
            and len(set(names)) == len(names)
            and all(n in slots and consts[slots[n]] is not _NONE for n in names)
        ):
            tpl.numbers = [slots[n] for n in names]
        return tpl, shareable

    # ------------------------------------------------------------ ordering
    def _order(self) -> None:
        """Topological order of the units; a circular reference is NotCoveredError."""
        deps: dict[int, set[int]] = {}
        index = {id(u): i for i, u in enumerate(self.units)}
        for i, u in enumerate(self.units):
            mine: set[int] = set()
            for b in u.refs:
                if b.single:
                    owner = self.owner.get((b.sheet, b.r1, b.c1))
                    if owner is not None:
                        mine.add(index[id(owner)])
                else:
                    for key in b.cells():
                        owner = self.owner.get(key)
                        if owner is not None:
                            mine.add(index[id(owner)])
            deps[i] = mine
            for j in mine:
                self.units[j].readers.append(u)
        indeg = {i: len(d) for i, d in deps.items()}
        ready = [i for i, n in indeg.items() if n == 0]
        ordered: list[Unit] = []
        while ready:
            i = ready.pop()
            u = self.units[i]
            u.order = len(ordered)
            ordered.append(u)
            for reader in u.readers:
                j = index[id(reader)]
                indeg[j] -= 1
                if indeg[j] == 0:
                    ready.append(j)
        if len(ordered) != len(self.units):
            raise NotCoveredError("circular reference")
        sheets = {name: i for i, name in enumerate(self._sheets)}
        #: the units in the order the engine reads them (sheet by sheet, row by row)
        self.book_order = sorted(self.units, key=lambda u: (sheets[u.sheet], u.r1, u.c1))
        for u in ordered:
            u.readers = sorted({id(r): r for r in u.readers}.values(), key=lambda r: r.order)
        self.units = ordered
        #: depth of each unit (by order) in the dependency graph: units of equal depth
        #: never depend on one another (batch.py evaluates them together)
        self.depth: dict[int, int] = {u.order: 0 for u in ordered}
        for u in ordered:
            for r in u.readers:
                self.depth[r.order] = max(self.depth[r.order], self.depth[u.order] + 1)
        self._schedules: dict[int, list[Unit | Batch]] = {}
        # who reads an input cell (for warm runs): units with a reference covering it
        self._input_readers: dict[Key, set[int]] | None = None

    def _readers_of(self, key: Key) -> set[int]:
        if self._input_readers is None:
            table: dict[Key, set[int]] = {}
            for u in self.units:
                for b in u.refs:
                    for k in b.cells():
                        table.setdefault(k, set()).add(u.order)
            self._input_readers = table
        return self._input_readers.get(key, set())

    # ------------------------------------------------------------ running
    def _fetch(self, b: _Bound, cells: Mapping[Key, np.ndarray]) -> Any:
        if b.single:
            arr = cells.get((b.sheet, b.r1, b.c1), _EMPTY11)
        else:
            if b.keys is None:
                b.keys = list(b.cells())  # row by row
            get = cells.get
            items = [_EMPTY if (got := get(k)) is None else got[0, 0] for k in b.keys]
            arr = np.empty(len(items), object)
            arr[:] = items
            arr = arr.reshape(b.r2 - b.r1 + 1, b.c2 - b.c1 + 1)
        if not b.raw:
            return arr
        if b.rng is None:
            b.rng = Ranges().push(b.name).ranges[0]
        return Ranges((b.rng,), {b.rng["name"]: (b.rng, arr)})

    def _run(self, unit: Unit, cells: dict[Key, np.ndarray]) -> None:
        tpl = unit.template
        if tpl.chain is not None and self.use_chain:
            value = tpl.chain.run(unit.consts, unit.refs, cells)
            if value is not BAIL:
                self._store(cells, unit, value)
                return
        regs = list(unit.consts)
        for b in unit.refs:
            if b.plain:
                regs[b.slot] = cells.get(b.key, _EMPTY11)
            else:
                regs[b.slot] = self._fetch(b, cells)
        try:
            for out, func, ins, kind in tpl.program:
                args = [regs[i] for i in ins]
                res = kind(func, args) if kind is not None else func(*args)
                if res is _NONE:
                    raise FastRunError(f"{unit.node}: no value")
                regs[out] = res
        except FastRunError:
            raise
        except Exception as exc:
            raise FastRunError(f"{unit.node}: {type(exc).__name__}") from None
        value = regs[tpl.root]
        if isinstance(value, Ranges):
            value = value.value
        stored = _settle(value, unit.shape, unit.rng)
        if unit.shape == (1, 1):
            cells[unit.key] = stored
        else:
            rows, cols = stored.shape
            for key, i, j in unit.cells():
                cells[key] = stored[i : i + 1, j : j + 1] if i < rows and j < cols else _one(None)

    @staticmethod
    def _store(cells: dict[Key, np.ndarray], unit: Unit, value: Any) -> None:
        """Store a one-cell unit's value as the engine stores it."""
        cells[unit.key] = _settle(value, (1, 1), unit.rng)

    def _run_all(self, units: list[Unit], cells: dict[Key, np.ndarray]) -> None:
        """Evaluate ``units`` (in order) into ``cells``, filled-down columns together."""
        with np.errstate(all="ignore"):
            if not (self.use_batches and self.use_chain):
                for unit in units:
                    self._run(unit, cells)
                return
            # keyed by the list: self.units and the lists affected() caches live as long
            schedule_ = self._schedules.get(id(units))
            if schedule_ is None:
                schedule_ = schedule(units, self.depth, lambda u: u.template.chain is not None)
                self._schedules[id(units)] = schedule_
            store = functools.partial(self._store, cells)
            for item in schedule_:
                if isinstance(item, Batch):
                    for unit in item.run(cells, store):
                        self._run(unit, cells)
                else:
                    self._run(item, cells)

    def evaluate(self, overrides: Mapping[Key, Any]) -> dict[Key, np.ndarray]:
        """Every cell's stored (1, 1) array after evaluating with ``overrides``."""
        if not overrides:
            if self._default is None:
                cells = dict(self.constants)
                self._run_all(self.units, cells)
                self._default = cells
            return self._default
        return self.runner(list(overrides), None)(list(overrides.values()))

    def affected(self, inputs: Sequence[Key], outputs: Sequence[Key] | None) -> list[Unit]:
        """Units downstream of ``inputs`` (and upstream of ``outputs``), in order."""
        key = (tuple(inputs), None if outputs is None else tuple(outputs))
        units = self._runners.get(key)
        if units is not None:
            return units
        seen: set[int] = set()
        stack = [i for k in inputs for i in self._readers_of(k)]
        while stack:
            i = stack.pop()
            if i in seen:
                continue
            seen.add(i)
            stack.extend(r.order for r in self.units[i].readers)
        if outputs is not None:
            need: set[int] = set()
            todo = [self.owner[k].order for k in outputs if k in self.owner]
            deps = self._deps()
            while todo:
                i = todo.pop()
                if i in need:
                    continue
                need.add(i)
                todo.extend(deps[i])
            seen &= need
        units = [self.units[i] for i in sorted(seen)]
        self._runners[key] = units
        return units

    def _deps(self) -> list[list[int]]:
        deps: list[list[int]] = [[] for _ in self.units]
        for u in self.units:
            for r in u.readers:
                deps[r.order].append(u.order)
        return deps

    def runner(
        self, inputs: Sequence[Key], outputs: Sequence[Key] | None
    ) -> Callable[[Sequence[Any]], dict[Key, np.ndarray]]:
        """A function of the ``inputs``' values giving every cell's stored array.

        Only the affected units are recomputed, on a copy of the default results.
        """
        units = self.affected(inputs, outputs)
        keys = list(inputs)

        def run(values: Sequence[Any]) -> dict[Key, np.ndarray]:
            cells = dict(self.evaluate({}))
            for k, v in zip(keys, values, strict=True):
                cells[k] = _one(v)
            self._run_all(units, cells)
            return cells

        return run

    @staticmethod
    def cell_value(cells: Mapping[Key, np.ndarray], key: Key) -> Any:
        """A cell's value as a plain cell value (errors as SheetError)."""
        arr = cells.get(key)
        return None if arr is None else plain(arr[0, 0])


def plain(element: Any) -> Any:
    """A stored engine element as a plain cell value, as the full engine reports it."""
    return SheetError("#N/A") if element is None else from_engine(element)


def _number(text: str) -> Any:
    """A number literal's value as the engine's Number token gives it."""
    return Number(text).compile()


def _span(ref: str) -> tuple[int, int, int, int]:
    m = re.fullmatch(r"\$?([A-Za-z]{1,3})\$?([0-9]+)(?::\$?([A-Za-z]{1,3})\$?([0-9]+))?", ref)
    if not m:
        raise NotCoveredError(f"array formula range {ref!r}")
    c1, r1 = col_index(m.group(1)), int(m.group(2))
    c2, r2 = (col_index(m.group(3)), int(m.group(4))) if m.group(3) else (c1, r1)
    return r1, c1, r2, c2


__all__ += ["Unit", "plain", "relative_key"]
