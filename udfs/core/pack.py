"""A pack of cells: series and parallel counts from the pack's voltage window
and the cell's voltage limits, the structure around the cells (explicit
component lines or cell-to-pack fractions), and the pack's Wh/kg, Wh/L and
cost per kWh. Vectorised like the cell model: every number may be an array.

Series count: the most cells whose upper limits stay at or below the pack's
highest voltage, ``s = floor(V_pack,max / V_cell,max)``; the pack's lowest
voltage must then stay at or above the load's, ``s * V_cell,min >= V_pack,min``
(else no series count fits the window: an error). Parallel strings:
``p = ceil(E_wanted / (s * cell Wh))``. A pack whose highest voltage exceeds
60 V DC is flagged (:data:`HIGH_VOLTAGE_CAUTION`).

>>> cell = CellValues(3.2, 2.5, 3.65, 100.0, 2000.0, 1000.0, 1100.0, 30.0)
>>> p = size_pack(cell, PackSpec(pack_voltage_min_V=40.0, pack_voltage_max_V=60.0,
...                              pack_energy_kWh=10.0))
>>> int(p.series), int(p.parallel), float(p.pack_voltage_max_V), bool(p.above_60V_DC)
(16, 2, 58.4, False)
"""

from __future__ import annotations

from dataclasses import dataclass, fields
from types import MappingProxyType
from typing import Any, NamedTuple

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .capacity import ceil_count
from .cell_formats import floor_count
from .element_errors import ElementErrors
from .errors import DomainError, InputError
from .shapes import broadcast_shape
from .sizing import CellDesign
from .sizing_table import CELL_SIZING, PACK_LINES, PACK_STRUCTURES
from .validate import POSITIVE, Domain, Options, check

__all__ = [
    "HIGH_VOLTAGE_CAUTION",
    "HIGH_VOLTAGE_DC_V",
    "CellValues",
    "PackDesign",
    "PackSpec",
    "high_voltage_caution",
    "series_count",
    "size_pack",
]

Array = NDArray[np.float64]

#: The DC voltage above which a pack is treated as hazardous (common practice: the usual
#: extra-low-voltage limit for DC in electrical-safety rules).
HIGH_VOLTAGE_DC_V = 60.0
HIGH_VOLTAGE_CAUTION = (
    "Caution: this pack exceeds 60 V DC. Touching live parts can kill; design, build, test, "
    "ship and service it under the standards and local codes for hazardous-voltage batteries, "
    "with qualified engineers (insulation, isolation monitoring, disconnects, arc-flash and "
    "shock protection). These numbers are estimates, not a design release."
)

_D = CELL_SIZING.defaults()


_LINE_FIELDS = tuple(f for line in PACK_LINES for f in line.fields)


@dataclass(frozen=True)
class PackSpec:
    """Inputs of a pack (numbers may be arrays). Defaults and domains are
    declared once in :data:`udfs.core.sizing_table.CELL_SIZING` (section
    "Pack"). ``structure`` is ``"fractions"`` (cell-to-pack mass, volume and
    cost fractions) or ``"components"`` (the lines of
    :data:`udfs.core.sizing_table.PACK_LINES`, counted per cell, per module
    or per pack)."""

    pack_voltage_min_V: ArrayLike = _D["pack_voltage_min_V"]
    pack_voltage_max_V: ArrayLike = _D["pack_voltage_max_V"]
    pack_energy_kWh: ArrayLike = _D["pack_energy_kWh"]
    structure: str = _D["structure"]
    cell_to_pack_mass_fraction: ArrayLike = _D["cell_to_pack_mass_fraction"]
    cell_to_pack_volume_fraction: ArrayLike = _D["cell_to_pack_volume_fraction"]
    cell_to_pack_cost_fraction: ArrayLike = _D["cell_to_pack_cost_fraction"]
    cells_per_module: ArrayLike = _D["cells_per_module"]
    busbar_mass_g: ArrayLike = _D["busbar_mass_g"]
    busbar_volume_cm3: ArrayLike = _D["busbar_volume_cm3"]
    busbar_cost_USD: ArrayLike = _D["busbar_cost_USD"]
    holder_mass_g: ArrayLike = _D["holder_mass_g"]
    holder_volume_cm3: ArrayLike = _D["holder_volume_cm3"]
    holder_cost_USD: ArrayLike = _D["holder_cost_USD"]
    frame_mass_kg: ArrayLike = _D["frame_mass_kg"]
    frame_volume_L: ArrayLike = _D["frame_volume_L"]
    frame_cost_USD: ArrayLike = _D["frame_cost_USD"]
    electronics_mass_kg: ArrayLike = _D["electronics_mass_kg"]
    electronics_volume_L: ArrayLike = _D["electronics_volume_L"]
    electronics_cost_USD: ArrayLike = _D["electronics_cost_USD"]
    thermal_mass_kg: ArrayLike = _D["thermal_mass_kg"]
    thermal_volume_L: ArrayLike = _D["thermal_volume_L"]
    thermal_cost_USD: ArrayLike = _D["thermal_cost_USD"]
    enclosure_mass_kg: ArrayLike = _D["enclosure_mass_kg"]
    enclosure_volume_L: ArrayLike = _D["enclosure_volume_L"]
    enclosure_cost_USD: ArrayLike = _D["enclosure_cost_USD"]


#: PackSpec's numeric fields (all of them but the structure).
PACK_FIELDS: tuple[str, ...] = tuple(f.name for f in fields(PackSpec) if f.name != "structure")
assert set(_LINE_FIELDS) <= set(PACK_FIELDS)


class CellValues(NamedTuple):
    """The numbers of a cell that pack sizing needs (a :class:`CellDesign`
    gives them): voltages in V, capacity in Ah, mass in g, volumes in cm3
    (``box_volume_cm3``: the bounding box a cell takes in a pack), cost in
    USD per cell."""

    nominal_voltage_V: ArrayLike
    voltage_min_V: ArrayLike
    voltage_max_V: ArrayLike
    capacity_Ah: ArrayLike
    mass_g: ArrayLike
    volume_cm3: ArrayLike
    box_volume_cm3: ArrayLike
    cost_USD: ArrayLike


@dataclass(frozen=True)
class PackDesign:
    """The pack (arrays of the broadcast shape): counts, voltages (V),
    capacity (Ah), energy (kWh), masses (kg), volumes (L), costs (USD), the
    figures per kWh, kg and L, and the high-voltage flag. ``lines``: each
    structure line's (mass kg, volume L, cost USD) per pack (components
    structure; empty for fractions)."""

    structure: str
    series: Array
    parallel: Array
    cells: Array
    modules: Array
    pack_voltage_nominal_V: Array
    pack_voltage_min_V: Array
    pack_voltage_max_V: Array
    pack_capacity_Ah: Array
    pack_energy_kWh: Array
    cells_mass_kg: Array
    pack_mass_kg: Array
    cells_volume_L: Array
    pack_volume_L: Array
    cells_cost_USD: Array
    pack_cost_USD: Array
    pack_specific_energy_Wh_kg: Array
    pack_energy_density_Wh_L: Array
    pack_cost_per_kWh_USD: Array
    above_60V_DC: NDArray[np.bool_]
    lines: Any

    @property
    def caution(self) -> str:
        """:data:`HIGH_VOLTAGE_CAUTION` if any scenario exceeds 60 V DC, else ''."""
        return HIGH_VOLTAGE_CAUTION if bool(np.any(self.above_60V_DC)) else ""


#: The numbers of a pack (PackDesign's arrays), in order.
PACK_OUTPUTS: tuple[str, ...] = tuple(
    f.name for f in fields(PackDesign) if str(f.type) == "Array"
)


def high_voltage_caution(pack_voltage_max_V: float) -> str:
    """The caution for a pack whose highest voltage exceeds 60 V DC, else ''.

    >>> high_voltage_caution(48.0), high_voltage_caution(400.0)[:35]
    ('', 'Caution: this pack exceeds 60 V DC.')
    """
    return HIGH_VOLTAGE_CAUTION if pack_voltage_max_V > HIGH_VOLTAGE_DC_V else ""


def _domain(field: str) -> Domain:
    d = CELL_SIZING.domain(field)
    assert isinstance(d, Domain)
    return d


def series_count(
    pack_voltage_min_V: ArrayLike, pack_voltage_max_V: ArrayLike, cell_voltage_min_V: ArrayLike,
    cell_voltage_max_V: ArrayLike, errors: ElementErrors | None = None,
) -> Array:
    """Cells in series: the most whose upper limits stay within the pack's
    highest voltage, provided their lower limits stay above its lowest (else
    an error naming the window).

    >>> float(series_count(200.0, 450.0, 2.5, 4.2))
    107.0
    """
    vlo = check("pack_voltage_min_V", pack_voltage_min_V, POSITIVE)
    vhi = check("pack_voltage_max_V", pack_voltage_max_V, POSITIVE)
    clo = check("cell voltage_min_V", cell_voltage_min_V, POSITIVE)
    chi = check("cell voltage_max_V", cell_voltage_max_V, POSITIVE)
    shape = broadcast_shape({"pack_voltage_min_V": vlo, "pack_voltage_max_V": vhi,
                             "cell voltage_min_V": clo, "cell voltage_max_V": chi})
    errs = errors if errors is not None else ElementErrors(shape)
    errs.add(clo >= chi, lambda lo, hi: DomainError(
        "cell voltage_min_V", lo, f"< the cell's upper limit ({hi:g} V)"), clo, chi)
    errs.add(vlo >= vhi, lambda lo, hi: DomainError(
        "pack_voltage_min_V", lo, f"< pack_voltage_max_V ({hi:g} V)"), vlo, vhi)
    s = floor_count(vhi / chi)
    errs.add(s < 1, lambda hi, c: DomainError(
        "pack_voltage_max_V", hi, f">= one cell's upper limit ({c:g} V)"), vhi, chi)
    errs.add((s >= 1) & (s * clo < vlo * (1.0 - 1e-12)), lambda lo, hi, c_lo, c_hi: DomainError(
        "pack_voltage_min_V", lo, detail=(
            f"no whole number of cells in series fits the window {lo:g}-{hi:g} V: "
            f"{np.floor(hi / c_hi + 1e-9):g} cells of {c_lo:g}-{c_hi:g} V go down to "
            f"{np.floor(hi / c_hi + 1e-9) * c_lo:g} V; widen the window or give the cell's "
            "voltage limits")), vlo, vhi, clo, chi)
    return np.broadcast_to(np.asarray(s, dtype=float), shape)


def _cell_values(cell: CellDesign | CellValues) -> dict[str, Array]:
    if isinstance(cell, CellDesign):
        vals = (cell.nominal_voltage_V, cell.voltage_min_V, cell.voltage_max_V,
                cell.capacity_Ah, cell.cell_mass_g, cell.cell_volume_cm3, cell.box_volume_cm3,
                cell.cost_per_cell_USD)
        names = CellValues._fields
        if np.any(~np.isfinite(cell.voltage_min_V)) or np.any(~np.isfinite(cell.voltage_max_V)):
            raise InputError("cell", None, detail=f"the catalogue has no voltage window for "
                             f"{cell.cathode} against {cell.anode}; give voltage_min_V and "
                             "voltage_max_V to the cell")
        return {f"cell {n}": np.asarray(x, dtype=float) for n, x in zip(names, vals, strict=True)}
    if isinstance(cell, tuple) and len(cell) == len(CellValues._fields):
        return {f"cell {n}": check(f"cell {n}", x, POSITIVE)
                for n, x in zip(CellValues._fields, cell, strict=True)}
    raise InputError("cell", cell, "a CellDesign or CellValues(nominal_voltage_V, voltage_min_V, "
                     "voltage_max_V, capacity_Ah, mass_g, volume_cm3, box_volume_cm3, cost_USD)")


def size_pack(cell: CellDesign | CellValues, pack: PackSpec | None = None,
              errors: ElementErrors | None = None) -> PackDesign:
    """The pack of ``cell`` (see the module docstring and docs/sizing-model.md).

    ``cell`` is a :class:`~udfs.core.sizing.CellDesign` (its materials cost is
    the cell cost) or :class:`CellValues`. ``errors`` (lenient) records the
    scenarios that cannot be built instead of raising.
    """
    spec = PackSpec() if pack is None else pack
    if not isinstance(spec, PackSpec):
        raise InputError("pack", pack, "a PackSpec")
    structure = Options(PACK_STRUCTURES).check("structure", spec.structure)
    c = _cell_values(cell)
    p = {name: check(name, getattr(spec, name), _domain(name)) for name in PACK_FIELDS}
    shape = broadcast_shape({**c, **p})
    errs = errors if errors is not None else ElementErrors(shape)
    with np.errstate(all="ignore"):
        series = series_count(p["pack_voltage_min_V"], p["pack_voltage_max_V"],
                              c["cell voltage_min_V"], c["cell voltage_max_V"], errs)
        cell_wh = c["cell nominal_voltage_V"] * c["cell capacity_Ah"]
        parallel = np.maximum(ceil_count(p["pack_energy_kWh"] * 1000.0 / (series * cell_wh)), 1.0)
        cells = series * parallel
        modules = ceil_count(cells / p["cells_per_module"])
        energy = cells * cell_wh / 1000.0
        cells_mass = cells * c["cell mass_g"] / 1000.0
        cells_cost = cells * c["cell cost_USD"]
        lines: dict[str, tuple[Array, Array, Array]] = {}
        if structure == "fractions":
            cells_volume = cells * c["cell volume_cm3"] / 1000.0
            mass = cells_mass / p["cell_to_pack_mass_fraction"]
            volume = cells_volume / p["cell_to_pack_volume_fraction"]
            cost = cells_cost / p["cell_to_pack_cost_fraction"]
        else:
            cells_volume = cells * c["cell box_volume_cm3"] / 1000.0
            mass, volume, cost = cells_mass, cells_volume, cells_cost
            count = {"cell": cells, "module": modules, "pack": np.ones(shape)}
            for line in PACK_LINES:
                m_f, v_f, c_f = line.fields
                k = count[line.per]
                m = k * p[m_f] / (1000.0 if line.mass_unit == "g" else 1.0)
                v = k * p[v_f] / (1000.0 if line.volume_unit == "cm3" else 1.0)
                usd = k * p[c_f]
                lines[line.key] = (m, v, usd)
                mass, volume, cost = mass + m, volume + v, cost + usd
    failed = errs.failed() if errs.shape == shape else np.zeros(shape, dtype=bool)

    def full(a: ArrayLike) -> Array:
        out = np.broadcast_to(np.asarray(a, dtype=float), shape)
        return np.where(failed, np.nan, out) if failed.any() else out

    vmax = series * c["cell voltage_max_V"]
    return PackDesign(
        structure=structure,
        series=full(series),
        parallel=full(parallel),
        cells=full(cells),
        modules=full(modules),
        pack_voltage_nominal_V=full(series * c["cell nominal_voltage_V"]),
        pack_voltage_min_V=full(series * c["cell voltage_min_V"]),
        pack_voltage_max_V=full(vmax),
        pack_capacity_Ah=full(parallel * c["cell capacity_Ah"]),
        pack_energy_kWh=full(energy),
        cells_mass_kg=full(cells_mass),
        pack_mass_kg=full(mass),
        cells_volume_L=full(cells_volume),
        pack_volume_L=full(volume),
        cells_cost_USD=full(cells_cost),
        pack_cost_USD=full(cost),
        pack_specific_energy_Wh_kg=full(energy * 1000.0 / mass),
        pack_energy_density_Wh_L=full(energy * 1000.0 / volume),
        pack_cost_per_kWh_USD=full(cost / energy),
        above_60V_DC=np.broadcast_to(np.asarray(vmax > HIGH_VOLTAGE_DC_V), shape),
        lines=MappingProxyType({k: tuple(full(x) for x in t) for k, t in lines.items()}),
    )
