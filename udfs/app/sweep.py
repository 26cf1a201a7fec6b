"""What-if sweeps: the cartesian product of varied inputs, through a workbook or the core.

``--vary TARGET=40:80:5`` gives 40, 45, ..., 80 (the stop is included when the
steps land on it); ``--vary TARGET=1.05,1.1,1.2`` gives a list. The first
varied input changes fastest, so each run of it is one line in the chart.

* :func:`sweep_workbook` evaluates a compiled workbook per scenario (the model
  is compiled once and reduced to what the inputs reach);
* :func:`sweep_core` sizes every scenario in ONE vectorised call of
  :func:`udfs.core.sizing.design_cell` (CellSpec field names, the demo spec
  as the base);
* the tables are written by :mod:`udfs.app.tables`.

>>> parse_vary("Inputs!B4=40:60:10")
Vary(target='Inputs!B4', values=(40.0, 50.0, 60.0))
>>> parse_vary("np_ratio=1.05,1.1").values
(1.05, 1.1)
"""

from __future__ import annotations

import dataclasses
import difflib
import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from udfs.sheet.error_values import SheetError
from udfs.xlsx.file_errors import ReferenceSyntaxError, WorkbookError
from udfs.xlsx.refs import CellRef

from .progress import Progress
from .tables import SweepTable

if TYPE_CHECKING:
    from udfs.engine.model import WorkbookModel

__all__ = [
    "CORE_OUTPUTS",
    "MAX_CORE_SCENARIOS",
    "MAX_WORKBOOK_SCENARIOS",
    "Vary",
    "core_fields",
    "grid_values",
    "parse_vary",
    "sweep_core",
    "sweep_workbook",
]

MAX_WORKBOOK_SCENARIOS = 10_000
MAX_CORE_SCENARIOS = 2_000_000
MAX_POINTS_PER_AXIS = 100_000

#: The key results of a core sweep (CellDesign attribute names).
CORE_OUTPUTS = (
    "capacity_Ah",
    "energy_Wh",
    "cell_mass_g",
    "specific_energy_Wh_kg",
    "energy_density_Wh_L",
    "cost_per_cell_USD",
    "cost_per_kWh_USD",
    "cathode_sheets",
    "cathode_coating_thickness_um",
    "stack_thickness_um",
)
_PAIRS = {
    "target_capacity_Ah": "target_energy_Wh",
    "target_energy_Wh": "target_capacity_Ah",
    "cathode_loading_mg_cm2": "cathode_areal_capacity_mAh_cm2",
    "cathode_areal_capacity_mAh_cm2": "cathode_loading_mg_cm2",
}


@dataclass(frozen=True)
class Vary:
    """One varied input: what to vary (cell, defined name or CellSpec field) and its values."""

    target: str
    values: tuple[float, ...]


def _number(text: str, what: str) -> float:
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


def parse_vary(text: str) -> Vary:
    """Read ``TARGET=start:stop:step``, ``TARGET=a,b,c`` or ``TARGET=value``."""
    target, sep, spec = text.rpartition("=")
    target = target.strip()
    if not sep or not target or not spec.strip():
        raise ReferenceSyntaxError(
            f"--vary {text!r}: write TARGET=start:stop:step (e.g. Inputs!B4=40:80:5) "
            "or TARGET=a,b,c"
        )
    what = f"--vary {target}"
    spec = spec.strip()
    if ":" in spec:
        pieces = spec.split(":")
        if len(pieces) != 3:
            raise ReferenceSyntaxError(f"{what}: a range is start:stop:step (got {spec!r})")
        start, stop, step = (_number(p, what) for p in pieces)
        return Vary(target, grid_values(start, stop, step, what))
    values = tuple(_number(p.strip(), what) for p in spec.split(",") if p.strip())
    if not values:
        raise ReferenceSyntaxError(f"{what}: no values")
    return Vary(target, values)


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


def _fastest_first(varies: Sequence[Vary]) -> list[tuple[float, ...]]:
    """The cartesian product with the first varied input changing fastest."""
    return [combo[::-1] for combo in itertools.product(*(v.values for v in reversed(varies)))]


def _cell_out(value: Any) -> Any:
    if isinstance(value, SheetError):
        return value.code
    return value


def sweep_workbook(
    model: WorkbookModel,
    varies: Sequence[Vary],
    outputs: Sequence[str] = (),
    progress: Progress | None = None,
) -> SweepTable:
    """Evaluate ``model`` for every scenario; outputs default to the named formula cells."""
    n = _scenarios(varies, MAX_WORKBOOK_SCENARIOS)
    targets = [model.resolve(v.target) for v in varies]
    for v, ref in zip(varies, targets, strict=True):
        if model.is_formula(ref):
            raise WorkbookError(f"--vary {v.target}: {ref.address} holds a formula, not an input")
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
    scenario = model.scenario_function(list(targets), [ref for _, ref in out_refs])
    bar = progress or Progress(n, "sweep")
    try:
        for combo in _fastest_first(varies):
            results = scenario(*combo)
            for v, x in zip(varies, combo, strict=True):
                columns[v.target].append(x)
            for (name, _), value in zip(out_refs, results, strict=True):
                columns[name].append(_cell_out(value))
            bar.advance()
    finally:
        bar.close()
    return SweepTable(
        [v.target for v in varies],
        [name for name, _ in out_refs],
        columns,
        f"workbook {model.name} (sha256 {model.sha256[:12]})",
        len(varies[0].values),
    )


def core_fields() -> list[str]:
    """CellSpec fields a core sweep can vary (the numeric ones)."""
    from udfs.app.demo import demo_spec
    from udfs.core.sizing import CellSpec

    base = demo_spec()
    out = []
    for f in dataclasses.fields(CellSpec):
        value = getattr(base, f.name)
        if f.name == "prices" or isinstance(value, (str, dict)) or not f.init:
            continue
        if value is None or isinstance(value, (int, float)):
            out.append(f.name)
    return out


def sweep_core(varies: Sequence[Vary], progress: Progress | None = None) -> SweepTable:
    """Size every scenario with one vectorised call of the core (demo spec as the base)."""
    from udfs.app.demo import demo_spec
    from udfs.core.sizing import design_cell

    n = _scenarios(varies, MAX_CORE_SCENARIOS)
    allowed = core_fields()
    changes: dict[str, Any] = {}
    for v in varies:
        if v.target not in allowed:
            near = difflib.get_close_matches(v.target, allowed, n=3)
            hint = f"did you mean {', '.join(near)}? " if near else ""
            raise WorkbookError(
                f"--vary {v.target}: not a numeric CellSpec field; {hint}"
                f"(fields: {', '.join(allowed)})"
            )
        partner = _PAIRS.get(v.target)
        if partner and partner in [w.target for w in varies]:
            raise WorkbookError(f"--vary {v.target} and {partner}: give only one of the two")
    grids = np.meshgrid(*(np.asarray(v.values) for v in reversed(varies)), indexing="ij")
    flat = [g.reshape(-1) for g in reversed(grids)]
    for v, arr in zip(varies, flat, strict=True):
        changes[v.target] = arr
        if v.target in _PAIRS:
            changes[_PAIRS[v.target]] = None
    spec = dataclasses.replace(demo_spec(), **changes)
    bar = progress or Progress(n, "sweep (core, one vectorised call)")
    try:
        design = design_cell(spec)
        bar.advance(n)
    finally:
        bar.close()
    columns: dict[str, Any] = {v.target: arr for v, arr in zip(varies, flat, strict=True)}
    notes: list[str] = []
    for name in CORE_OUTPUTS:
        col = np.broadcast_to(np.asarray(getattr(design, name), dtype=float), (n,))
        bad = ~np.isfinite(col)
        if bad.any():  # overflow in an extreme scenario: an error value, never inf or nan
            marked = col.astype(object)
            marked[bad] = "#NUM!"
            columns[name] = marked
            notes.append(f"{name}: {int(bad.sum())} scenario(s) out of range, shown as #NUM!")
        else:
            columns[name] = col
    return SweepTable(
        [v.target for v in varies],
        list(CORE_OUTPUTS),
        columns,
        "core sizing model (udfs.core.sizing) with the demo spec as the base (demo data)",
        len(varies[0].values),
        notes,
    )


