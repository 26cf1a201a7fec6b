"""What-if sweeps: the cartesian product of varied inputs, through a workbook or the core.

``--vary TARGET=40:80:5`` gives 40, 45, ..., 80 (the stop is included when the
steps land on it); ``--vary TARGET=1.05,1.1,1.2`` gives a list; a list may hold
text (``--vary in_cathode=NMC811,LFP``: chemistry, material names, a format, a
price book). The first varied input changes fastest, so each run of it is one
line in the chart.

* :func:`sweep_workbook` evaluates a compiled workbook per scenario (the model
  is compiled once and reduced to what the inputs reach); values of the
  workbook's declared inputs are checked first, and a price typed without its
  unit gets the table's first unit (USD/kg) so a price sweep gives numbers;
* :func:`sweep_core` runs the core: the cell from the input values of any
  cell-sizing or cost workbook (the demo cell by default), sized in one
  vectorised call per combination of the text inputs, and costed with the full
  cost model (:mod:`udfs.core.cell_cost`) of a price book. Targets are CellSpec
  fields or defined names of the inputs, ``price:MATERIAL``, ``fee:MATERIAL``,
  ``index:NAME`` and the plant's fields. Rows can run on Dask (``runner``) in
  chunks; the numbers are the same;
* the tables (:class:`udfs.app.tables.SweepTable`, with each column's label
  and unit and the outputs to chart) are written by :mod:`udfs.app.tables`.

>>> parse_vary("Inputs!B4=40:60:10")
Vary(target='Inputs!B4', values=(40.0, 50.0, 60.0))
>>> parse_vary("in_cathode=NMC811, LFP").values
('NMC811', 'LFP')
>>> parse_vary("in_electrolyte=LiPF6 1M in EC:DMC").values
('LiPF6 1M in EC:DMC',)
"""

from __future__ import annotations

import dataclasses
import difflib
import itertools
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from udfs.core.cell_cost import OUTPUTS as COST_OUTPUT_NAMES
from udfs.core.conversion_cost import COST_CAUTION, PLANT, PLANT_FIELDS
from udfs.core.cost_table import COST, design_and_model
from udfs.core.errors import CellwrightError, NotFoundError
from udfs.core.metal_index import index as find_index
from udfs.core.price_books import PriceBook
from udfs.core.sizing import CellSpec
from udfs.core.sizing_table import CELL_SIZING, COMPONENTS, PRICE_UNITS
from udfs.core.sizing_values import field_of
from udfs.sheet.error_values import SheetError
from udfs.xlsx.file_errors import ReferenceSyntaxError, WorkbookError
from udfs.xlsx.refs import CellRef

from .progress import Progress
from .safe_text import check_argument
from .scenario import demo_values, input_table
from .tables import SweepTable

if TYPE_CHECKING:
    from udfs.engine.model import WorkbookModel

__all__ = [
    "CORE_OUTPUTS",
    "COST_OUTPUTS",
    "LABELS",
    "MAX_CORE_SCENARIOS",
    "MAX_WORKBOOK_SCENARIOS",
    "SweepJob",
    "Vary",
    "all_failed",
    "axes",
    "core_fields",
    "failures",
    "finite_number",
    "grid_values",
    "parse_vary",
    "run_rows",
    "run_sweep",
    "sweep_core",
    "sweep_workbook",
]

MAX_WORKBOOK_SCENARIOS = 10_000
#: Workbook scenarios computed together (Evaluator.scenarios); the progress bar moves
#: a batch at a time.
SWEEP_BATCH = 250
MAX_CORE_SCENARIOS = 2_000_000
MAX_POINTS_PER_AXIS = 100_000
#: Rows per chunk of a core sweep on Dask.
SWEEP_CHUNK = 65_536

#: The key results of the sized cell in a core sweep (CellDesign attribute names).
CORE_OUTPUTS = (
    "capacity_Ah",
    "energy_Wh",
    "cell_mass_g",
    "specific_energy_Wh_kg",
    "energy_density_Wh_L",
    "cathode_sheets",
    "cathode_coating_thickness_um",
    "stack_thickness_um",
    "cost_per_cell_USD",
    "cost_per_kWh_USD",
)
#: The full cost of the cell in a core sweep (the cost model's outputs, price book prices).
COST_OUTPUTS = ("full_USD_kWh", "full_USD_cell", "full_USD_Ah", "materials_USD_kWh",
                "conversion_USD_kWh")
#: Label and unit of every output a core sweep can give (the charts show them).
LABELS: Mapping[str, tuple[str, str]] = {
    "capacity_Ah": ("Capacity", "Ah"),
    "energy_Wh": ("Energy", "Wh"),
    "cell_mass_g": ("Cell mass", "g"),
    "specific_energy_Wh_kg": ("Specific energy", "Wh/kg"),
    "energy_density_Wh_L": ("Energy density", "Wh/L"),
    "cathode_sheets": ("Cathode sheets", "sheets"),
    "cathode_coating_thickness_um": ("Cathode coating thickness", "um"),
    "stack_thickness_um": ("Stack thickness", "um"),
    "cost_per_cell_USD": ("Materials per good cell (sizing model, demo price list)", "USD"),
    "cost_per_kWh_USD": ("Materials per kWh (sizing model, demo price list)", "USD/kWh"),
    "full_USD_kWh": ("Full cost per kWh", "USD/kWh"),
    "full_USD_cell": ("Full cost per cell", "USD/cell"),
    "full_USD_Ah": ("Full cost per Ah", "USD/Ah"),
    "materials_USD_kWh": ("Materials with scrap and credit", "USD/kWh"),
    "conversion_USD_kWh": ("Conversion (depreciation, labour, energy, overhead)", "USD/kWh"),
    **{k: (k.removesuffix("_USD_kWh").replace("_", " ").capitalize(), "USD/kWh")
       for k in COST_OUTPUT_NAMES if k not in COST_OUTPUTS},
}
_PAIRS = {
    "target_capacity_Ah": "target_energy_Wh",
    "target_energy_Wh": "target_capacity_Ah",
    "cathode_loading_mg_cm2": "cathode_areal_capacity_mAh_cm2",
    "cathode_areal_capacity_mAh_cm2": "cathode_loading_mg_cm2",
}
_MODEL_PREFIXES = ("price:", "fee:", "index:")

Value = float | str


@dataclass(frozen=True)
class Vary:
    """One varied input: what to vary (cell, defined name, CellSpec field or
    cost-model input) and its values (numbers, or text for a name input)."""

    target: str
    values: tuple[Value, ...]


def finite_number(text: str, what: str) -> float:
    """``text`` as a finite number, else a one-line reason starting with ``what``."""
    try:
        x = float(text)
    except ValueError:
        raise ReferenceSyntaxError(f"{what}: {text!r} is not a number") from None
    if not math.isfinite(x):
        raise ReferenceSyntaxError(f"{what}: {text!r} is not a finite number")
    return x


def grid_values(start: float, stop: float, step: float, what: str = "range") -> tuple[float, ...]:
    """start, start+step, ... up to stop (included when a step lands on it, 1e-9 tolerance)."""
    if step == 0:
        raise ReferenceSyntaxError(f"{what}: the step must not be 0")
    if (step > 0 and stop < start) or (step < 0 and stop > start):
        raise ReferenceSyntaxError(
            f"{what}: a step of {step:g} never goes from {start:g} to {stop:g}"
        )
    span = (stop - start) / step  # >= 0; inf when the step is vanishingly small
    if not span + 1.0 <= MAX_POINTS_PER_AXIS:
        shown = f"{span + 1:,.0f}" if math.isfinite(span) else "too many"
        raise ReferenceSyntaxError(
            f"{what}: {shown} values on one axis (limit {MAX_POINTS_PER_AXIS:,})"
        )
    n = math.floor(span + 1e-9) + 1
    return tuple(float(f"{start + i * step:.12g}") for i in range(n))


def _item(text: str, what: str) -> Value:
    """A list item: a finite number, or text (a name)."""
    try:
        x = float(text)
    except ValueError:
        return text
    if not math.isfinite(x):
        raise ReferenceSyntaxError(f"{what}: {text!r} is not a finite number")
    return x


def parse_vary(text: str) -> Vary:
    """Read ``TARGET=start:stop:step``, ``TARGET=a,b,c`` or ``TARGET=value``; list
    items that are not numbers are text (names)."""
    target, sep, spec = check_argument(text, "--vary").rpartition("=")
    target = target.strip()
    if not sep or not target or not spec.strip():
        raise ReferenceSyntaxError(
            f"--vary {text!r}: write TARGET=start:stop:step (e.g. Inputs!B4=40:80:5), "
            "TARGET=a,b,c or TARGET=NMC811,LFP"
        )
    what = f"--vary {target}"
    spec = spec.strip()
    pieces = spec.split(":")
    if len(pieces) == 3 or (len(pieces) == 2 and all(_is_number(p) for p in pieces)):
        if len(pieces) != 3:
            raise ReferenceSyntaxError(f"{what}: a range is start:stop:step (got {spec!r})")
        start, stop, step = (finite_number(p, what) for p in pieces)
        return Vary(target, grid_values(start, stop, step, what))
    values = tuple(_item(p.strip(), what) for p in spec.split(",") if p.strip())
    if not values:
        raise ReferenceSyntaxError(f"{what}: no values")
    return Vary(target, values)


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def _scenarios(varies: Sequence[Vary], limit: int) -> int:
    if not varies:
        raise ReferenceSyntaxError("give at least one --vary TARGET=start:stop:step")
    targets = [v.target.casefold() for v in varies]
    dup = next((t for t in targets if targets.count(t) > 1), None)
    if dup is not None:
        raise ReferenceSyntaxError(f"--vary {dup} is given twice")
    n = math.prod(len(v.values) for v in varies)
    if n > limit:
        raise ReferenceSyntaxError(f"{n:,} scenarios (limit {limit:,}); use coarser steps")
    return n


def _fastest_first(varies: Sequence[Vary]) -> list[tuple[Value, ...]]:
    """The cartesian product with the first varied input changing fastest."""
    return [combo[::-1] for combo in itertools.product(*(v.values for v in reversed(varies)))]


def _cell_out(value: Any) -> Any:
    if isinstance(value, SheetError):
        return value.code
    return value


def _checked_values(model: WorkbookModel, varies: Sequence[Vary]) -> None:
    """Values of the workbook's declared inputs, checked by its input table
    before anything runs (a bad value is refused with the input's own reason)."""
    table = input_table(list(model.named_cells))
    if table is None:
        return
    for v in varies:
        if v.target not in table.names:
            continue
        for x in v.values:
            try:
                table.check(v.target, x)
            except CellwrightError as exc:
                raise ReferenceSyntaxError(f"--vary {v.target}={x}: {exc}") from None


def _price_units(model: WorkbookModel, varies: Sequence[Vary]) -> tuple[list[CellRef], list[str],
                                                                        list[str]]:
    """A varied price of the cell-sizing inputs needs its unit: where the unit
    cell is blank (and not varied too), it is set to the table's first unit
    (USD/kg) for the sweep, and a note says so."""
    targets = {v.target for v in varies}
    refs: list[CellRef] = []
    units: list[str] = []
    notes: list[str] = []
    for c in COMPONENTS:
        if c.price not in targets or c.price_unit in targets:
            continue
        ref = model.named_cells.get(c.price_unit)
        if ref is None or model.is_formula(ref) or model.constant(ref) not in (None, ""):
            continue
        refs.append(ref)
        units.append(PRICE_UNITS[0])
        notes.append(f"{c.price_unit} was blank: set to {PRICE_UNITS[0]} for the sweep of "
                     f"{c.price}")
    return refs, units, notes


def _label_of(model: WorkbookModel, ref: CellRef) -> tuple[str, str]:
    """A named cell's label and unit as the templates lay them out: the text in
    column B of its row, the text in the column after it (else empty)."""
    def text(col: int) -> str:
        if col < 1:
            return ""
        here = CellRef(ref.sheet, ref.row, col)
        if model.is_formula(here):
            return ""
        value = model.constant(here)
        return value.strip() if isinstance(value, str) else ""

    return text(2) if ref.col > 2 else "", text(ref.col + 1)


def failures(table: SweepTable) -> list[str]:
    """One line per output with error values in some scenarios; empty when
    every output is a number everywhere."""
    out = []
    for name in table.outputs:
        col = table.columns[name]
        if isinstance(col, np.ndarray) and col.dtype.kind == "f":
            continue
        bad = sum(1 for x in col if isinstance(x, str) and x.startswith("#"))
        if bad:
            out.append(f"{name}: {bad:,} of {table.rows:,} scenarios give an error value")
    return out


def sweep_workbook(
    model: WorkbookModel,
    varies: Sequence[Vary],
    outputs: Sequence[str] = (),
    progress: Progress | None = None,
) -> SweepTable:
    """Evaluate ``model`` for every scenario; outputs default to the named formula cells.
    Scenarios with error values are kept (as the error's code) and counted in
    the notes (:func:`failures`)."""
    n = _scenarios(varies, MAX_WORKBOOK_SCENARIOS)
    targets = [model.resolve(v.target) for v in varies]
    for v, ref in zip(varies, targets, strict=True):
        if model.is_formula(ref):
            raise WorkbookError(f"--vary {v.target}: {ref.address} holds a formula, not an input")
    _checked_values(model, varies)
    unit_refs, unit_values, notes = _price_units(model, varies)
    out_refs: list[tuple[str, CellRef]] = []
    if outputs:
        out_refs = [(o, model.resolve(o)) for o in outputs]
    else:
        out_refs = [(n_, r) for n_, r in model.named_cells.items() if model.is_formula(r)]
        if not out_refs:
            raise WorkbookError(
                f"{model.name} has no defined names for single formula cells; "
                "choose outputs with --output Sheet!C5"
            )
    columns: dict[str, list[Any]] = {v.target: [] for v in varies}
    columns.update({name: [] for name, _ in out_refs})
    batch = model.scenarios_function([*targets, *unit_refs], [ref for _, ref in out_refs])
    combos = _fastest_first(varies)
    bar = progress or Progress(n, "sweep")
    try:
        for start in range(0, len(combos), SWEEP_BATCH):
            chunk = combos[start : start + SWEEP_BATCH]
            for combo, results in zip(
                chunk, batch([[*combo, *unit_values] for combo in chunk]), strict=True
            ):
                for v, x in zip(varies, combo, strict=True):
                    columns[v.target].append(x)
                for (name, _), value in zip(out_refs, results, strict=True):
                    columns[name].append(_cell_out(value))
                bar.advance()
    finally:
        bar.close()
    labels, units = {}, {}
    for name, ref in out_refs:
        label, unit = _label_of(model, ref)
        labels[name], units[name] = label or name, unit
    table = SweepTable(
        [v.target for v in varies],
        [name for name, _ in out_refs],
        dict(columns),
        f"workbook {model.name} (sha256 {model.sha256[:12]})",
        len(varies[0].values),
        notes,
        labels,
        units,
        [name for name, _ in out_refs] if outputs else [],
    )
    table.notes.extend(failures(table))
    return table


# --------------------------------------------------------------------------- core


def core_fields() -> list[str]:
    """CellSpec fields a core sweep can vary as numbers (vectorised)."""
    base = CellSpec("NMC811", "graphite")
    out = []
    for f in dataclasses.fields(CellSpec):
        if f.name == "prices" or not f.init or f.name not in CELL_SIZING:
            continue
        inp = CELL_SIZING.get(f.name)
        if inp.is_number and not isinstance(getattr(base, f.name), (str, dict)):
            out.append(f.name)
    return out


@dataclass(frozen=True)
class _Target:
    """A resolved --vary target: ``kind`` "spec" (a numeric CellSpec field, sized
    in one vectorised call), "model" (an input of the cost model: a price, fee,
    index or plant field) or "value" (an input value of the workbook's table:
    text, or a number that changes the model's structure); ``key`` is the
    field, the model input or the defined name."""

    target: str
    kind: str
    key: str


def _resolve(target: str, values: Mapping[str, Any]) -> _Target:
    if target.startswith(_MODEL_PREFIXES):
        kind, _, rest = target.partition(":")
        if kind == "index":
            return _Target(target, "model", f"index:{find_index(rest, '--vary').name}")
        return _Target(target, "model", target)
    if target in PLANT_FIELDS:
        return _Target(target, "model", target)
    if target in PLANT.names:
        return _Target(target, "model", PLANT.get(target).field or target)
    if target.startswith("in_index_"):
        inp = COST.get(target)
        return _Target(target, "model", f"index:{inp.label.split(': ', 1)[1]}")
    numeric = core_fields()
    if target in numeric:
        return _Target(target, "spec", target)
    if target in CELL_SIZING:
        inp = CELL_SIZING.get(target)
        if inp.is_number and inp.fields and all(f in numeric for f in inp.fields):
            return _Target(target, "spec", field_of(inp.name, values))
        return _Target(target, "value", inp.name)
    if target in COST.names:
        return _Target(target, "value", target)
    allowed = [*numeric, *PLANT_FIELDS, *CELL_SIZING.names, *COST.names]
    near = difflib.get_close_matches(target, allowed, n=3)
    hint = f"did you mean {', '.join(near)}? " if near else ""
    raise WorkbookError(
        f"--vary {target}: not an input of the core model: {hint}(a numeric CellSpec field such "
        "as np_ratio, a defined name of the cell-sizing or cost inputs such as in_cathode, "
        "price:MATERIAL, fee:MATERIAL, index:NAME or a plant field such as "
        "energy_price_USD_per_kWh)"
    )


@dataclass(frozen=True)
class SweepJob:
    """What every chunk of a core sweep needs (pickled once to Dask workers)."""

    values: tuple[tuple[str, Any], ...]
    book: PriceBook | None
    targets: tuple[_Target, ...]
    grids: tuple[tuple[Value, ...], ...]  # the values of each target
    outputs: tuple[str, ...]


@dataclass(frozen=True)
class SweepChunk:
    """Rows ``[start, stop)`` of a core sweep (a task for a runner)."""

    model: SweepJob
    start: int
    stop: int


def _row_values(job: SweepJob, start: int, stop: int) -> list[np.ndarray]:
    """The value of each target at rows ``[start, stop)``, first target fastest."""
    rows = np.arange(start, stop)
    out = []
    for grid in job.grids:
        k = len(grid)
        arr = np.array(grid, dtype=object if any(isinstance(x, str) for x in grid) else float)
        out.append(arr[rows % k])
        rows = rows // k
    return out


def run_rows(chunk: SweepChunk) -> dict[str, Any]:
    """The outputs of rows ``[chunk.start, chunk.stop)``: one vectorised design
    and cost model per combination of the "value" targets in the chunk."""
    job = chunk.model
    n = chunk.stop - chunk.start
    cols = _row_values(job, chunk.start, chunk.stop)
    out: dict[str, Any] = {k: np.full(n, np.nan) for k in job.outputs}
    notes: set[str] = set()
    value_idx = [i for i, t in enumerate(job.targets) if t.kind == "value"]
    keys = [tuple(cols[i][r] for i in value_idx) for r in range(n)] if value_idx else [()] * n
    groups: dict[tuple[Any, ...], list[int]] = {}
    for r, key in enumerate(keys):
        groups.setdefault(key, []).append(r)
    base = dict(job.values)
    for key, members in groups.items():
        idx = np.asarray(members)
        values = dict(base)
        for i, x in zip(value_idx, key, strict=True):
            values[job.targets[i].key] = x
        changes = {t.key: cols[i][idx].astype(float) for i, t in enumerate(job.targets)
                   if t.kind == "spec"}
        design, model = design_and_model(values, job.book, changes)
        model_values = {}
        for i, t in enumerate(job.targets):
            if t.kind != "model":
                continue
            try:
                model_values[t.key] = model.check(t.key, cols[i][idx].astype(float))
            except NotFoundError:
                what = ", ".join(f"{job.targets[j].target}={x}" for j, x in zip(value_idx, key,
                                                                             strict=True))
                notes.add(f"{t.target} is not an input of the cost model for "
                          f"{what or 'this design'} (no material of it uses it): no effect there")
        cost = model(model_values) if any(o in COST_OUTPUT_NAMES for o in job.outputs) else {}
        for name in job.outputs:
            value = cost[name] if name in COST_OUTPUT_NAMES else getattr(design, name)
            out[name][idx] = np.broadcast_to(np.asarray(value, dtype=float), idx.shape)
    out["_notes"] = sorted(notes)
    return out


def sweep_core(
    varies: Sequence[Vary],
    progress: Progress | None = None,
    values: Mapping[str, Any] | None = None,
    book: PriceBook | None = None,
    outputs: Sequence[str] = (),
    runner: Any = None,
    source: str = "",
    chunk_rows: int = SWEEP_CHUNK,
) -> SweepTable:
    """Size and cost every scenario with the core: the cell of ``values`` (the
    input values of a cell-sizing or cost workbook; default the demo cell),
    priced from ``book`` (default the workbook's own book, else the latest
    demo book). ``outputs``: names of :data:`LABELS` (default: the cell's key
    figures and the full cost). ``runner`` runs chunks of ``chunk_rows`` rows
    (Dask; every row is computed on its own, so the numbers are the same)."""
    n = _scenarios(varies, MAX_CORE_SCENARIOS)
    base = dict(values) if values is not None else demo_values()
    targets = tuple(_resolve(v.target, base) for v in varies)
    seen: dict[str, str] = {}
    for t in targets:
        if t.key in seen:
            raise WorkbookError(f"--vary {seen[t.key]} and {t.target} set the same input")
        seen[t.key] = t.target
        partner = _PAIRS.get(t.key)
        if partner and partner in seen:
            raise WorkbookError(f"--vary {t.target} and {seen[partner]}: give only one of the two")
    for v, t in zip(varies, targets, strict=True):
        texts = [x for x in v.values if isinstance(x, str)]
        if texts and t.kind != "value":
            raise WorkbookError(f"--vary {v.target}: {texts[0]!r} is not a number")
        if t.kind == "value":
            for x in v.values:
                try:
                    (COST if t.key in COST.names else CELL_SIZING).check(t.key, x)
                except CellwrightError as exc:
                    raise ReferenceSyntaxError(f"--vary {v.target}={x}: {exc}") from None
    wanted = list(outputs) or [*CORE_OUTPUTS[:8], *COST_OUTPUTS]
    for name in wanted:
        if name not in LABELS:
            raise WorkbookError(f"--output {name}: not an output of the core model "
                                f"({', '.join(LABELS)})")
    job = SweepJob(tuple(base.items()), book, targets, tuple(v.values for v in varies),
                   tuple(wanted))
    bar = progress or Progress(n, "sweep (core)")
    size = n if runner is None else max(1, int(chunk_rows))
    chunks = [SweepChunk(job, s, min(s + size, n)) for s in range(0, n, size)]
    results: dict[str, Any] = {k: np.empty(n) for k in wanted}
    notes: set[str] = set()
    try:
        for i, res in (runner or _serial)(run_rows, chunks):
            c = chunks[i]
            for k in wanted:
                results[k][c.start:c.stop] = res[k]
            notes.update(res["_notes"])
            bar.advance(c.stop - c.start)
    finally:
        bar.close()
    flat = _row_values(job, 0, n)
    columns: dict[str, Any] = {}
    for v, col in zip(varies, flat, strict=True):
        columns[v.target] = col if col.dtype.kind == "f" else col.tolist()
    out_notes = sorted(notes)
    for name in wanted:
        col = results[name]
        bad = ~np.isfinite(col)
        if bad.any():  # overflow in an extreme scenario: an error value, never inf or nan
            marked = col.astype(object)
            marked[bad] = "#NUM!"
            columns[name] = marked
            out_notes.append(f"{name}: {int(bad.sum())} scenario(s) out of range, shown as #NUM!")
        else:
            columns[name] = col
    label = job_book_label(base, book)
    out_notes.append(COST_CAUTION)
    return SweepTable(
        [v.target for v in varies],
        wanted,
        columns,
        f"core model (udfs.core.sizing and udfs.core.cell_cost) of {source or 'the demo cell'}"
        f"; price book {label}",
        len(varies[0].values),
        out_notes,
        {k: LABELS[k][0] for k in wanted},
        {k: LABELS[k][1] for k in wanted},
        list(outputs),
    )


def job_book_label(values: Mapping[str, Any], book: PriceBook | None) -> str:
    """The label of the price book a core sweep prices with."""
    if book is not None:
        return book.label
    from udfs.core.price_books import price_book

    name = COST.check("in_price_book", values.get("in_price_book",
                                                  COST.get("in_price_book").default))
    return price_book(name).label


def _serial(fn: Any, tasks: Sequence[SweepChunk]) -> Any:
    for i, t in enumerate(tasks):
        yield i, fn(t)


def axes(table: SweepTable) -> list[int]:
    """The number of values of each varied input (the grid is their product)."""
    return [len(dict.fromkeys(np.asarray(table.columns[name]).tolist())) for name in table.inputs]


def all_failed(table: SweepTable) -> bool:
    """True when every scenario gives an error value in every output (nothing to read)."""
    for name in table.outputs:
        col = table.columns[name]
        if isinstance(col, np.ndarray) and col.dtype.kind == "f":
            return False
        if any(not (isinstance(x, str) and x.startswith("#")) for x in col):
            return False
    return True


def run_sweep(
    varies: Sequence[str],
    workbook: Any = None,
    model: str = "workbook",
    outputs: Sequence[str] = (),
    prices: Any = None,
    workers: str | int | None = None,
    limits: Any = None,
    progress: Progress | None = None,
) -> SweepTable:
    """``cellwright sweep``: the ``--vary`` texts over ``workbook`` (its cells)
    or, with ``model="core"``, over the core model starting from the
    workbook's inputs (the demo cell when none is given). ``outputs``: cells or
    defined names (workbook), output names of :data:`LABELS` (core).
    ``prices`` (a price-book CSV) and ``workers`` (a number of local Dask
    workers or a scheduler's address) are for the core only."""
    from .scenario import load_book, read_input_values

    parsed = [parse_vary(v) for v in varies]
    if not parsed:
        raise ReferenceSyntaxError("give at least one --vary TARGET=start:stop:step")
    if model == "core":
        values = read_input_values(workbook, limits) if workbook is not None else None
        book = load_book(prices) if prices is not None else None
        source = f"the inputs of {workbook}" if workbook is not None else "the demo cell"
        from .risk import runner_for

        with runner_for(workers) as runner:
            return sweep_core(parsed, progress, values, book, outputs, runner, source)
    if prices is not None or workers is not None:
        raise ReferenceSyntaxError("--prices and --workers are for --model core; a workbook "
                                   "sweep uses the workbook's own prices")
    if workbook is None:
        raise ReferenceSyntaxError("give the workbook to sweep (or --model core)")
    from .calc import open_model

    wb = open_model(workbook, limits) if limits is not None else open_model(workbook)
    return sweep_workbook(wb, parsed, outputs, progress)
