"""Electrode -> cell sizing and the bill of materials of a pouch, cylindrical
or prismatic cell, vectorised: every numeric input may be a float or an array
and all of them broadcast together, so one call sizes 100,000 what-if
scenarios (the format itself may be an array of names too).

The capacity basis is the trade's: each electrode's first-charge specific
capacity and first-cycle efficiency (catalogue values unless given), N/P on
the first-charge areal capacities, and the reversible capacity of the cell
the lower of the two electrodes after their losses
(:mod:`udfs.core.electrode_balance`). The formats are
:mod:`udfs.core.cell_formats`; prices are parsed by :mod:`udfs.core.prices`.
The equations are written out in ``docs/sizing-model.md``. Trade units
throughout: Ah, Wh, mg/cm2, mAh/g, g/cm3, um, mm, cm2, cm3, g, USD.

>>> spec = CellSpec("LiFePO4", "graphite", target_capacity_Ah=20.0,
...                 cathode_loading_mg_cm2=25.0)
>>> d = design_cell(spec)
>>> float(d.capacity_Ah) >= 20.0
True
>>> bool(abs(sum(d.components.values()) - d.cell_mass_g) < 1e-9)
True
>>> c = design_cell(CellSpec("NMC811", "graphite", cell_format="cylindrical",
...                          sizing_mode="envelope", cylinder_class="21 mm",
...                          cathode_loading_mg_cm2=22.0))
>>> round(float(c.cell_height_mm), 1), 4.0 < float(c.capacity_Ah) < 6.0
(70.0, True)
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field, fields
from functools import lru_cache
from types import MappingProxyType
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from . import catalogue
from .cell_formats import (
    CORE_TYPES,
    CYLINDER_CLASSES,
    FORMATS,
    GEOMETRY_FIELDS,
    MODES,
    PRESETS,
    Geometry,
    Layers,
    computed_fields,
    preset_key,
    size_format,
    used_fields,
)
from .electrode_balance import (
    anode_limited,
    areal_capacity,
    first_charge,
    loading_for,
    reversible_areal_capacity,
)
from .element_errors import ElementErrors
from .errors import CellwrightError, DomainError, InputError, NotFoundError, UnitError
from .names import closest, normalise
from .prices import BASE_UNITS, exchange_rates, price_unit
from .shapes import broadcast_shape
from .sizing_table import CELL_SIZING
from .validate import FRACTION_OPEN, NONNEGATIVE, Domain, Names, Options, check

__all__ = [
    "DESIGN_OUTPUTS",
    "FORMAT_OUTPUTS",
    "HOUSINGS",
    "Binder",
    "CellDesign",
    "CellSpec",
    "Price",
    "applies",
    "design_cell",
    "price_basis",
    "review_cell",
    "size_cell",
]

Array = NDArray[np.float64]
#: A price: a number (or array) in USD/kg, or ``(value, unit)`` / ``(value, unit,
#: currency)`` such as ``(0.55, "USD/m^2")``, ``(2200, "EUR/t")``, ``(1.2, "kg", "EUR")``.
Price = ArrayLike | tuple[ArrayLike, str] | tuple[ArrayLike, str, str]
#: A binder: one material name, or a mapping name -> share of the binder fraction.
Binder = str | Mapping[str, float]
#: A text option: one word, or an array of words (one per scenario).
TextOption = str | ArrayLike

_FRACTION_SUM_TOL = 1e-12

#: The housing material of each format when none is given (common practice).
HOUSINGS: Mapping[str, str] = MappingProxyType({
    "pouch": "pouch laminate",
    "cylindrical": "nickel-plated steel housing",
    "prismatic": "aluminium housing",
})

# --------------------------------------------------------------------------- inputs

#: Field -> default, from the input table (each default with its basis is declared there).
_D = CELL_SIZING.defaults()


@dataclass(frozen=True)
class CellSpec:
    """Inputs of a cell. Numbers may be floats or arrays (all broadcast).

    In ``sizing_mode="target"`` give exactly one of ``target_capacity_Ah`` /
    ``target_energy_Wh`` (the reversible capacity wanted); in ``"envelope"``
    mode give neither (the outer size sets the capacity). Always give exactly
    one of ``cathode_loading_mg_cm2`` / ``cathode_areal_capacity_mAh_cm2``
    (first-charge basis, per side). ``None`` elsewhere means: the catalogue's
    value (capacities, efficiencies, voltages, foil and separator data), the
    chemistry's electrode recipe (fractions, porosities, binders, carbon,
    foils) or the format's preset (dimensions; see
    :data:`udfs.core.cell_formats.PRESETS`). Dimensions a format does not use,
    or computes in the chosen mode, must be left ``None``. Defaults, their
    basis and every field's allowed values are declared once, in
    :data:`udfs.core.sizing_table.CELL_SIZING`.

    >>> CellSpec("NMC811", "graphite", target_capacity_Ah=50.0,
    ...          cathode_loading_mg_cm2=[20.0, 25.0]).np_ratio
    1.1
    """

    cathode: str
    anode: str
    target_capacity_Ah: ArrayLike | None = None
    target_energy_Wh: ArrayLike | None = None
    cathode_loading_mg_cm2: ArrayLike | None = None  # whole coating per area, per side
    cathode_areal_capacity_mAh_cm2: ArrayLike | None = None  # first-charge basis, per side
    cathode_first_charge_mAh_g: ArrayLike | None = None
    cathode_first_cycle_efficiency: ArrayLike | None = None
    anode_first_charge_mAh_g: ArrayLike | None = None
    anode_first_cycle_efficiency: ArrayLike | None = None
    nominal_voltage_V: ArrayLike | None = None  # None: cathode minus anode average voltage
    voltage_min_V: ArrayLike | None = None  # None: the couple's window
    voltage_max_V: ArrayLike | None = None
    cathode_active_fraction: ArrayLike | None = None  # None: the chemistry's recipe
    cathode_binder_fraction: ArrayLike | None = None
    anode_active_fraction: ArrayLike | None = None
    anode_binder_fraction: ArrayLike | None = None
    cathode_porosity: ArrayLike | None = None
    anode_porosity: ArrayLike | None = None
    np_ratio: ArrayLike = _D["np_ratio"]  # first-charge basis
    cathode_binder: Binder | None = None
    anode_binder: Binder | None = None
    cathode_carbon: str | None = None
    anode_carbon: str | None = None
    cathode_foil: str | None = None
    anode_foil: str | None = None
    cathode_foil_thickness_um: ArrayLike | None = None
    anode_foil_thickness_um: ArrayLike | None = None
    separator: str = _D["separator"]
    separator_thickness_um: ArrayLike | None = None
    separator_porosity: ArrayLike | None = None
    electrolyte: str | None = None  # None: NaPF6 for Na-ion couples, LiPF6 otherwise
    electrolyte_fill: ArrayLike = _D["electrolyte_fill"]  # x pore volume
    cathode_tab: str = _D["cathode_tab"]
    anode_tab: str | None = None  # None: by the anode foil
    tab_mass_g: ArrayLike | None = None  # each tab; None: from its size
    housing: str | None = None  # None: by the format
    housing_mass_g: ArrayLike | None = None  # None: from its size
    cell_format: TextOption = _D["cell_format"]
    sizing_mode: str = _D["sizing_mode"]
    cylinder_class: TextOption = _D["cylinder_class"]
    prismatic_core: TextOption = _D["prismatic_core"]
    cores: ArrayLike | None = None
    width_mm: ArrayLike | None = None  # cathode sheet (pouch, target mode)
    height_mm: ArrayLike | None = None
    cell_width_mm: ArrayLike | None = None
    cell_height_mm: ArrayLike | None = None
    cell_thickness_mm: ArrayLike | None = None
    cell_diameter_mm: ArrayLike | None = None
    wall_mm: ArrayLike | None = None
    bottom_mm: ArrayLike | None = None
    lid_mm: ArrayLike | None = None
    seal_mm: ArrayLike | None = None
    headspace_mm: ArrayLike | None = None
    core_mm: ArrayLike | None = None
    tab_lane_mm: ArrayLike | None = None
    tab_width_mm: ArrayLike | None = None
    tab_thickness_mm: ArrayLike | None = None
    tab_length_mm: ArrayLike | None = None
    anode_overhang_mm: ArrayLike = _D["anode_overhang_mm"]  # each edge
    separator_overhang_mm: ArrayLike = _D["separator_overhang_mm"]  # beyond the anode
    prices: Mapping[str, Price] | None = None  # None: the demo prices (invented demo data)
    electrode_scrap: ArrayLike = _D["electrode_scrap"]
    cell_yield: ArrayLike = _D["cell_yield"]
    rule_np_min: ArrayLike = _D["rule_np_min"]
    rule_fill_min: ArrayLike = _D["rule_fill_min"]
    rule_porosity_band: ArrayLike = _D["rule_porosity_band"]
    rule_cathode_loading_min: ArrayLike | None = None
    rule_cathode_loading_max: ArrayLike | None = None
    rule_anode_loading_min: ArrayLike | None = None
    rule_anode_loading_max: ArrayLike | None = None
    rule_cathode_thickness_min: ArrayLike | None = None
    rule_cathode_thickness_max: ArrayLike | None = None
    rule_anode_thickness_min: ArrayLike | None = None
    rule_anode_thickness_max: ArrayLike | None = None
    rule_voltage_margin_V: ArrayLike = _D["rule_voltage_margin_V"]
    #: Removed: the loss now comes from each electrode's first-cycle efficiency. Any value
    #: other than None is refused with a message (old scripts must not count it twice).
    first_cycle_loss: ArrayLike | None = None


# --------------------------------------------------------------------------- catalogue


@dataclass(frozen=True)
class _Mat:
    name: str
    density: float
    material: catalogue.Material


@lru_cache(maxsize=512)
def _resolve(name: str, argument: str, names: Names) -> _Mat:
    """A catalogue material allowed by ``names`` (aliases resolved), cached."""
    m = catalogue.material(names.check(argument, name), argument)
    return _Mat(m.name, m.number("density"), m)


def _material(name: object, argument: str) -> _Mat:
    """The material a name input of the table (``argument``) names."""
    names = CELL_SIZING.domain(argument)
    assert isinstance(names, Names)
    if not isinstance(name, str):
        names.check(argument, name)  # raises: not text
    return _resolve(name, argument, names)


def _fact_number(mat: _Mat, prop: str, argument: str) -> float:
    fact = mat.material.facts.get(prop)
    if fact is None:
        raise InputError(
            argument, None, detail=f"the catalogue has no {prop} for {mat.name!r}; give {argument}"
        )
    return float(fact.value)


def _recipe(mat: _Mat, argument: str) -> catalogue.Recipe:
    if mat.material.recipe is None:
        raise InputError(
            argument, None,
            detail=f"the catalogue has no electrode recipe for {mat.name!r}; give {argument}",
        )
    return mat.material.recipe


def _binder_shares(value: object, argument: str) -> tuple[tuple[_Mat, float], ...]:
    if not isinstance(value, Mapping):  # one name (checked as the input table declares)
        return ((_material(value, argument), 1.0),)
    if not value:
        raise InputError(
            argument, value, "a binder name or a mapping name -> share (shares sum to 1)"
        )
    out = []
    for name, share in value.items():
        s = float(check(f"{argument}[{name!r}]", share, FRACTION_OPEN))
        out.append((_material(name, argument), s))
    total = sum(s for _, s in out)
    if abs(total - 1.0) > 1e-9:
        raise DomainError(argument, total, "shares that sum to 1")
    if len({m.name for m, _ in out}) != len(out):
        raise InputError(argument, value, detail="names the same binder twice")
    return tuple(out)


def _voltage(cathode: _Mat, anode: _Mat) -> float:
    """Cathode minus anode average discharge voltage, on one reference."""
    needed = ("average_voltage", "voltage_reference")
    for m in (cathode, anode):
        missing = [p for p in needed if p not in m.material.facts]
        if missing:
            raise InputError(
                "nominal_voltage_V",
                None,
                detail=f"the catalogue has no {missing[0]} for {m.name!r}; give nominal_voltage_V",
            )
    ref_c = cathode.material.get("voltage_reference")
    ref_a = anode.material.get("voltage_reference")
    if normalise(ref_c) != normalise(ref_a):
        raise InputError(
            "nominal_voltage_V",
            None,
            detail=(
                f"{cathode.name} ({ref_c}) and {anode.name} ({ref_a}) have voltages on different "
                "references; give nominal_voltage_V"
            ),
        )
    volts = cathode.material.number("average_voltage") - anode.material.number("average_voltage")
    if volts <= 0:
        raise DomainError(
            "nominal_voltage_V",
            volts,
            f"> 0 ({cathode.name} against {anode.name} gives {volts:.3g} V; "
            "give nominal_voltage_V)",
        )
    return volts


def _window(cathode: _Mat, anode: _Mat) -> tuple[float, float]:
    """The couple's usable window: [cathode min - anode max, cathode max - anode min]
    (NaN where the catalogue has no window for a material)."""
    c, a = cathode.material.cycling, anode.material.cycling
    if c is None or a is None or normalise(c.reference) != normalise(a.reference):
        return float("nan"), float("nan")
    return c.voltage_min - a.voltage_max, c.voltage_max - a.voltage_min


# --------------------------------------------------------------------------- prices


def price_basis(unit: str, argument: str) -> tuple[str, float]:
    """``('kg' | 'm2', factor)``: a price in ``unit`` times factor is USD/kg or
    USD/m^2. Kept for the workbook's two price units; it is
    :func:`udfs.core.prices.price_unit` (mass and area bases only) and the
    exchange-rate table (latest rates) for other currencies.

    >>> price_basis("USD/t", "price")
    ('kg', 0.001)
    >>> price_basis("USD/m2", "price")
    ('m2', 1.0)
    """
    u = price_unit(unit, None, argument)
    if u.basis not in ("mass", "area"):
        raise UnitError(argument, unit,
                        detail=f"price unit {unit!r} is per {u.basis}; the workbook takes prices "
                        "per mass or per area")
    factor = u.factor * exchange_rates().factor(u.currency, "USD", None, argument)
    return ("kg" if u.basis == "mass" else "m2"), factor


def _price_value(where: str, raw: object) -> tuple[Array, str]:
    """A caller's price as (USD per base unit, basis)."""
    if isinstance(raw, tuple):
        if len(raw) not in (2, 3) or not all(isinstance(x, str) for x in raw[1:]):
            raise InputError(where, raw, "a number in USD/kg, (value, 'EUR/t') or "
                             "(value, 'kg', 'EUR')")
        currency = raw[2] if len(raw) == 3 else None
        u = price_unit(raw[1], currency, where)
        value = check(where, raw[0], NONNEGATIVE)
    else:
        u = price_unit("USD/kg", None, where)
        value = check(where, raw, NONNEGATIVE)  # type: ignore[arg-type]
    rate = exchange_rates().factor(u.currency, "USD", None, where)
    return value * u.factor * rate, u.basis


def _user_prices(prices: Mapping[str, Price] | None) -> dict[str, tuple[Array, str]]:
    if prices is None:
        return {}
    if not isinstance(prices, Mapping):
        raise InputError("prices", prices, "a mapping material name -> USD/kg (or (value, unit))")
    out: dict[str, tuple[Array, str]] = {}
    for name, raw in prices.items():
        canonical = catalogue.material(name, "prices").name
        out[canonical] = _price_value(f"prices[{name!r}]", raw)
    return out


def _unit_price(name: str, given: Mapping[str, tuple[Array, str]]) -> tuple[Array, str]:
    if name in given:
        return given[name]
    try:
        fact = catalogue.price(name, "prices")
    except NotFoundError:
        raise InputError(
            "prices", None, detail=f"no price for {name!r}; add it to prices"
        ) from None
    return _price_value(f"demo price of {name!r}", (float(fact.value), fact.unit))


# --------------------------------------------------------------------------- helpers


def _numeric(field: str) -> Domain:
    domain = CELL_SIZING.domain(field)
    assert isinstance(domain, Domain)
    return domain


_SPEC_FIELDS = frozenset(f.name for f in fields(CellSpec))
#: (field, domain) of the numeric inputs that always have a value.
_ALWAYS: tuple[tuple[str, Domain], ...] = tuple(
    (inp.field, _numeric(inp.field))
    for inp in CELL_SIZING
    if inp.is_number and inp.field in _SPEC_FIELDS and not inp.optional
)
#: Numeric fields whose blank (None) means the catalogue, the recipe or the preset.
_OPTIONAL: tuple[tuple[str, Domain], ...] = tuple(
    (inp.field, _numeric(inp.field))
    for inp in CELL_SIZING
    if inp.is_number and inp.field in _SPEC_FIELDS and inp.optional
)
_SAFE = (1.0, 0.5, 25.0, 0.0, 2.0)


def _safe(domain: Domain) -> float:
    return next(x for x in _SAFE if domain.contains(x))


class _Reader:
    """Numbers of a spec, checked: strict (the first bad element raises, as
    :func:`udfs.core.validate.check` words it) or lenient (bad elements are
    recorded per element, once the common shape is known, and stood in for)."""

    def __init__(self, strict: bool):
        self.strict = strict
        self.values: dict[str, Array] = {}
        self.domains: dict[str, Domain] = {}

    def read(self, name: str, value: object, domain: Domain) -> Array:
        if self.strict:
            arr = check(name, value, domain)  # type: ignore[arg-type]
        else:
            try:
                raw = np.asarray(value)
            except (TypeError, ValueError):
                raw = np.asarray(None)
            if raw.dtype.kind not in "iuf":
                raise InputError(name, value, domain.expected)
            arr = raw.astype(float)
        self.values[name] = arr
        self.domains[name] = domain
        return arr

    def settle(self, errors: ElementErrors) -> None:
        """Lenient: record elements outside their domain and stand in for them."""
        if self.strict:
            return
        for name, arr in self.values.items():
            domain = self.domains[name]
            bad = ~domain.ok(arr)
            if bad.any():
                errors.add(bad, _domain_error(name, domain), arr)
                self.values[name] = np.where(bad, _safe(domain), arr)


def _domain_error(name: str, domain: Domain) -> Callable[[float], CellwrightError]:
    def make(value: float) -> CellwrightError:
        return DomainError(name, value, domain.allowed)
    return make


def _options(name: str, value: object, choices: tuple[str, ...]) -> str | NDArray[np.object_]:
    """A word of ``choices`` (case and spaces forgiven), or an array of them."""
    opts = Options(choices)
    if isinstance(value, str):
        return opts.check(name, value)
    arr = np.asarray(value, dtype=object)
    if arr.ndim == 0:
        return opts.check(name, arr.item())
    flat = arr.reshape(-1)
    try:
        uniques, inverse = np.unique(flat.astype(str), return_inverse=True)
    except (TypeError, ValueError):  # pragma: no cover - astype(str) takes any object
        uniques, inverse = np.unique(flat, return_inverse=True)
    if not all(isinstance(v, str) for v in flat[np.unique(inverse, return_index=True)[1]]):
        bad = next(v for v in flat if not isinstance(v, str))
        opts.check(name, bad)  # raises: not text
    canon = np.array([opts.check(name, str(u)) for u in uniques], dtype=object)
    return canon[inverse].reshape(arr.shape)


def _fractions(active: Array, binder: Array, active_name: str, binder_name: str,
               errors: ElementErrors) -> Array:
    """Carbon fraction 1 - active - binder; an error where it would be negative."""
    excess = active + binder - 1.0
    errors.add(excess > _FRACTION_SUM_TOL, lambda b: DomainError(
        binder_name, b, f"<= 1 - {active_name} (the carbon fraction cannot be < 0)"), binder)
    return np.maximum(1.0 - active - binder, 0.0)


def _coating_parts(
    side: str, active: _Mat, binders: tuple[tuple[_Mat, float], ...], carbon: _Mat,
    f_active: Array, f_binder: Array, f_carbon: Array,
) -> list[tuple[str, str, Array, float]]:
    """(component name, material, mass fraction, density) of one coating."""
    parts = [(f"{side} active ({active.name})", active.name, f_active, active.density)]
    for mat, share in binders:
        parts.append((f"{side} binder ({mat.name})", mat.name, f_binder * share, mat.density))
    parts.append((f"{side} carbon ({carbon.name})", carbon.name, f_carbon, carbon.density))
    return parts


# --------------------------------------------------------------------------- outputs


@dataclass(frozen=True)
class CellDesign:
    """The sized cell: arrays of the broadcast shape of the inputs (0-d for a
    scalar spec). Masses in g, areas in cm2, lengths in mm, layer thicknesses
    in um, volumes in cm3, costs in USD. Numbers that do not apply to a format
    (sheets of a wound cell, the diameter of a pouch) are NaN; see
    :data:`FORMAT_OUTPUTS`.

    Capacities: ``cathode_areal_capacity_mAh_cm2`` and
    ``anode_areal_capacity_mAh_cm2`` are first-charge areal capacities per side
    (N/P is their ratio); ``reversible_areal_capacity_mAh_cm2`` is what the
    cell delivers per cathode face after both first-cycle losses;
    ``anode_limited`` is 1 where the anode side sets it.

    ``components`` maps component name -> mass per cell; the masses sum to
    ``cell_mass_g``. ``component_costs_USD`` maps component name -> cost per
    good cell (scrap and yield included); they sum to ``cost_per_cell_USD``.
    """

    spec: CellSpec
    shape: tuple[int, ...]
    cathode: str
    anode: str
    cell_format: str
    sizing_mode: str
    nominal_voltage_V: Array
    voltage_min_V: Array
    voltage_max_V: Array
    target_capacity_Ah: Array
    cathode_first_charge_mAh_g: Array
    anode_first_charge_mAh_g: Array
    cathode_first_cycle_efficiency: Array
    anode_first_cycle_efficiency: Array
    np_ratio: Array
    cathode_areal_capacity_mAh_cm2: Array
    anode_areal_capacity_mAh_cm2: Array
    reversible_areal_capacity_mAh_cm2: Array
    cell_first_cycle_efficiency: Array
    anode_limited: Array
    cathode_active_fraction: Array
    cathode_binder_fraction: Array
    anode_active_fraction: Array
    anode_binder_fraction: Array
    cathode_porosity: Array
    anode_porosity: Array
    cathode_loading_mg_cm2: Array
    anode_loading_mg_cm2: Array
    cathode_solids_density_g_cm3: Array
    anode_solids_density_g_cm3: Array
    cathode_coating_density_g_cm3: Array
    anode_coating_density_g_cm3: Array
    cathode_coating_thickness_um: Array
    anode_coating_thickness_um: Array
    pitch_um: Array
    cores: Array
    cathode_sheets: Array
    anode_sheets: Array
    separator_layers: Array
    turns: Array
    cathode_width_mm: Array
    cathode_length_mm: Array
    anode_width_mm: Array
    anode_length_mm: Array
    separator_width_mm: Array
    separator_length_mm: Array
    cathode_coated_area_cm2: Array
    anode_coated_area_cm2: Array
    separator_area_cm2: Array
    cathode_foil_area_cm2: Array
    anode_foil_area_cm2: Array
    stack_thickness_um: Array
    roll_thickness_mm: Array
    cell_width_mm: Array
    cell_height_mm: Array
    cell_thickness_mm: Array
    cell_diameter_mm: Array
    cell_volume_cm3: Array
    box_volume_cm3: Array
    housing_body_mass_g: Array
    housing_lid_mass_g: Array
    cathode_tab_mass_g: Array
    anode_tab_mass_g: Array
    pore_volume_cm3: Array
    electrolyte_fill: Array
    capacity_Ah: Array
    energy_Wh: Array
    cell_mass_g: Array
    specific_energy_Wh_kg: Array
    energy_density_Wh_L: Array
    components: Mapping[str, Array]
    component_materials: Mapping[str, str]
    component_areas_cm2: Mapping[str, Array]
    electrode_components: tuple[str, ...]
    component_costs_USD: Mapping[str, Array]
    cost_per_cell_USD: Array
    cost_per_kWh_USD: Array
    electrode_scrap: Array
    cell_yield: Array
    formats: Any = field(default=None, repr=False)  # the format of each scenario (array) or None

    def scenario(self, index: int | tuple[int, ...]) -> dict[str, float]:
        """The scalar numbers of one scenario (components prefixed ``mass: ``
        and ``cost: ``), e.g. for a table row."""
        out: dict[str, float] = {}
        for f in fields(self):
            v = getattr(self, f.name)
            if isinstance(v, np.ndarray) and f.name != "formats":
                out[f.name] = float(v[index]) if v.ndim else float(v)
        for kind, table in (("mass", self.components), ("cost", self.component_costs_USD)):
            for k, v in table.items():
                out[f"{kind}: {k}"] = float(v[index]) if v.ndim else float(v)
        return out


#: The numbers of a design (CellDesign's arrays), in order.
DESIGN_OUTPUTS: tuple[str, ...] = tuple(
    f.name for f in fields(CellDesign) if str(f.type) == "Array"
)

_STACKED = ("pouch", "prismatic stacked")
_WOUND_CELLS = ("cylindrical", "prismatic wound")
_FLAT = ("pouch", "prismatic wound", "prismatic stacked")
#: Outputs that apply to some assemblies only (NaN elsewhere): "pouch", "cylindrical",
#: "prismatic wound", "prismatic stacked". The other outputs apply to every cell.
FORMAT_OUTPUTS: Mapping[str, tuple[str, ...]] = MappingProxyType({
    "cathode_sheets": _STACKED, "anode_sheets": _STACKED, "separator_layers": _STACKED,
    "stack_thickness_um": _STACKED, "turns": _WOUND_CELLS, "roll_thickness_mm": _WOUND_CELLS,
    "cell_width_mm": _FLAT, "cell_thickness_mm": _FLAT, "cell_diameter_mm": ("cylindrical",),
})


def applies(output: str, cell_format: str, prismatic_core: str = "wound") -> bool:
    """Whether a design output means something for a format (see :data:`FORMAT_OUTPUTS`).

    >>> applies("turns", "prismatic", "stacked"), applies("capacity_Ah", "pouch")
    (False, True)
    """
    if output not in FORMAT_OUTPUTS:
        return True
    kind = f"prismatic {prismatic_core}" if cell_format == "prismatic" else cell_format
    return kind in FORMAT_OUTPUTS[output]


# --------------------------------------------------------------------------- the model


def _exactly_one(spec: CellSpec, a: str, b: str) -> tuple[str, Any]:
    va, vb = getattr(spec, a), getattr(spec, b)
    if (va is None) == (vb is None):
        raise InputError(a, va, detail=f"give exactly one of {a} and {b}")
    return (a, va) if va is not None else (b, vb)


def _geometry_error(name: str, cell_format: str, mode: str, computed: bool
                    ) -> Callable[[float], CellwrightError]:
    if computed:
        detail = (f"the {mode} mode computes it for a {cell_format} cell; leave it blank"
                  + (" (or use sizing_mode 'envelope')" if mode == "target" else ""))
    else:
        detail = f"does not apply to a {cell_format} cell in {mode} mode; leave it blank"

    def make(value: float) -> CellwrightError:
        return InputError(name, value, detail=f"{value:g} given, but {detail}")
    return make


def _laminate(housing: _Mat) -> float:
    """A pouch's wall: the catalogue thickness of its laminate (um -> mm)."""
    fact = housing.material.facts.get("thickness")
    if fact is None:
        raise InputError("wall_mm", None, detail=f"the catalogue has no thickness for "
                         f"{housing.name!r}; give wall_mm")
    return float(fact.value) / 1000.0


def _group_dims(
    cell_format: str, cylinder_class: str, core: str, mode: str, housing: _Mat,
    given: Mapping[str, Array | None], take: Callable[[Array], Array], errors: ElementErrors,
) -> dict[str, Array]:
    """The dimensions one group of scenarios uses: given, else the preset;
    given dimensions the group does not use are errors."""
    pre = PRESETS[preset_key(cell_format, cylinder_class)]
    used = set(used_fields(cell_format, mode, core))
    if cell_format == "prismatic":
        used.add("cores")
    computed = set(computed_fields(cell_format, mode))
    dims: dict[str, Array] = {}
    for name in (*GEOMETRY_FIELDS, "cores"):
        value = given.get(name)
        if name in used:
            if value is not None:
                dims[name] = take(value)
            elif name == "wall_mm" and cell_format == "pouch":
                dims[name] = np.float64(_laminate(housing))
            else:
                dims[name] = np.float64(pre[name].value)
        elif value is not None:
            errors.add(np.ones(np.shape(take(value)), dtype=bool),
                       _geometry_error(name, cell_format, mode, name in computed), take(value))
    return dims


def review_cell(spec: CellSpec) -> tuple[CellDesign, ElementErrors]:
    """The design of ``spec`` and the errors of its scenarios, without raising
    for a scenario that cannot be computed (its numbers are NaN and its errors
    are in the :class:`~udfs.core.element_errors.ElementErrors`). Inputs that
    no scenario can use (unknown names, text for numbers, shapes that cannot
    broadcast) still raise. See :mod:`udfs.core.design_rules`."""
    return _design(spec, strict=False)


def design_cell(spec: CellSpec) -> CellDesign:
    """Size a cell and its bill of materials (see docs/sizing-model.md).

    >>> d = design_cell(CellSpec("NMC811", "graphite", target_capacity_Ah=[50.0, 60.0],
    ...                          cathode_loading_mg_cm2=22.0))
    >>> d.shape, bool((d.capacity_Ah >= [50.0, 60.0]).all())
    ((2,), True)
    """
    return _design(spec, strict=True)[0]


def _design(spec: CellSpec, strict: bool) -> tuple[CellDesign, ElementErrors]:
    if not isinstance(spec, CellSpec):
        raise InputError("spec", spec, "a CellSpec")
    if spec.first_cycle_loss is not None:
        raise InputError(
            "first_cycle_loss", spec.first_cycle_loss,
            detail="no longer an input: the first-cycle loss comes from each electrode's "
            "first-charge capacity and first-cycle efficiency (catalogue, or "
            "cathode_first_cycle_efficiency / anode_first_cycle_efficiency); leave it out",
        )
    # ---- options and materials, resolved once (cached)
    mode = _options("sizing_mode", spec.sizing_mode, MODES)
    if not isinstance(mode, str):
        raise InputError("sizing_mode", spec.sizing_mode, "one word: 'target' or 'envelope'")
    formats = _options("cell_format", spec.cell_format, FORMATS)
    classes = _options("cylinder_class", spec.cylinder_class, CYLINDER_CLASSES)
    cores_kind = _options("prismatic_core", spec.prismatic_core, CORE_TYPES)
    cath = _material(spec.cathode, "cathode")
    anod = _material(spec.anode, "anode")

    def recipe_name(side: str, value: object, attr: str, mat: _Mat) -> Any:
        """The given name, else the recipe's (binders as name -> share)."""
        if value is not None:
            return value
        r = _recipe(mat, f"{side}_{attr}")
        if attr == "binder":
            return dict(r.binder) if len(r.binder) > 1 else r.binder[0][0]
        return getattr(r, attr)

    c_binders = _binder_shares(recipe_name("cathode", spec.cathode_binder, "binder", cath),
                               "cathode_binder")
    a_binders = _binder_shares(recipe_name("anode", spec.anode_binder, "binder", anod),
                               "anode_binder")
    c_carbon = _material(recipe_name("cathode", spec.cathode_carbon, "carbon", cath),
                         "cathode_carbon")
    a_carbon = _material(recipe_name("anode", spec.anode_carbon, "carbon", anod),
                         "anode_carbon")
    c_foil = _material(recipe_name("cathode", spec.cathode_foil, "foil", cath),
                       "cathode_foil")
    a_foil = _material(recipe_name("anode", spec.anode_foil, "foil", anod), "anode_foil")
    sep = _material(spec.separator, "separator")
    sodium = cath.material.cycling is not None and cath.material.cycling.reference == "Na/Na+"
    elyte = _material(spec.electrolyte if spec.electrolyte is not None
                      else ("NaPF6 1M in EC:DMC" if sodium else "LiPF6 1M in EC:DMC"),
                      "electrolyte")
    c_tab = _material(spec.cathode_tab, "cathode_tab")
    a_tab = _material(spec.anode_tab if spec.anode_tab is not None
                      else ("nickel tab" if a_foil.name == "copper foil" else "aluminium tab"),
                      "anode_tab")
    given_housing = None if spec.housing is None else _material(spec.housing, "housing")

    def housing_of(cell_format: str) -> _Mat:
        return given_housing or _material(HOUSINGS[cell_format], "housing")

    # ---- numbers, read and checked (DomainError names the argument)
    reader = _Reader(strict)
    v: dict[str, Array] = {}
    for name, dom in _ALWAYS:
        v[name] = reader.read(name, getattr(spec, name), dom)
    if mode == "target":
        target_name, target_value = _exactly_one(spec, "target_capacity_Ah", "target_energy_Wh")
        v[target_name] = reader.read(target_name, target_value, _numeric(target_name))
    else:
        for name in ("target_capacity_Ah", "target_energy_Wh"):
            if getattr(spec, name) is not None:
                raise InputError(name, getattr(spec, name), detail="the envelope mode takes no "
                                 "target (the outer size sets the capacity); leave it blank")
        target_name = ""
    load_name, load_value = _exactly_one(
        spec, "cathode_loading_mg_cm2", "cathode_areal_capacity_mAh_cm2"
    )
    v[load_name] = reader.read(load_name, load_value, _numeric(load_name))
    given: dict[str, Array | None] = {}
    for name, dom in _OPTIONAL:
        value = getattr(spec, name)
        given[name] = None if value is None else reader.read(name, value, dom)

    c_cyc, a_cyc = cath.material.cycling, anod.material.cycling

    def catalogue_value(name: str) -> float:
        if name == "cathode_first_charge_mAh_g":
            return c_cyc.first_charge_capacity if c_cyc else _fact_number(
                cath, "practical_capacity", name)
        if name == "anode_first_charge_mAh_g":
            return a_cyc.first_charge_capacity if a_cyc else _fact_number(
                anod, "practical_capacity", name)
        if name == "cathode_first_cycle_efficiency":
            return c_cyc.first_cycle_efficiency if c_cyc else 1.0
        if name == "anode_first_cycle_efficiency":
            return a_cyc.first_cycle_efficiency if a_cyc else 1.0
        if name == "nominal_voltage_V":
            return _voltage(cath, anod)
        if name == "voltage_min_V":
            return _window(cath, anod)[0]
        if name == "voltage_max_V":
            return _window(cath, anod)[1]
        if name == "cathode_foil_thickness_um":
            return _fact_number(c_foil, "thickness", name)
        if name == "anode_foil_thickness_um":
            return _fact_number(a_foil, "thickness", name)
        if name == "separator_thickness_um":
            return _fact_number(sep, "thickness", name)
        if name == "separator_porosity":
            return _fact_number(sep, "porosity", name)
        side, _, prop = name.partition("_")
        mat = cath if side == "cathode" else anod
        r = _recipe(mat, name)
        return {"active_fraction": r.active_fraction, "binder_fraction": r.binder_fraction,
                "porosity": r.porosity}[prop]

    _FROM_CATALOGUE = (
        "cathode_first_charge_mAh_g", "anode_first_charge_mAh_g",
        "cathode_first_cycle_efficiency", "anode_first_cycle_efficiency", "nominal_voltage_V",
        "voltage_min_V", "voltage_max_V", "cathode_foil_thickness_um", "anode_foil_thickness_um",
        "separator_thickness_um", "separator_porosity", "cathode_active_fraction",
        "cathode_binder_fraction", "anode_active_fraction", "anode_binder_fraction",
        "cathode_porosity", "anode_porosity",
    )
    for name in _FROM_CATALOGUE:
        g = given[name]
        v[name] = g if g is not None else np.float64(catalogue_value(name))
    prices = _user_prices(spec.prices)
    text_shapes = {k: np.shape(x) for k, x in (("cell_format", formats),
                                                 ("cylinder_class", classes),
                                                 ("prismatic_core", cores_kind))}
    shape = broadcast_shape({
        **v, **{k: g for k, g in given.items() if g is not None},
        **{f"prices[{k!r}]": a for k, (a, _) in prices.items()},
        **{k: np.zeros(s) for k, s in text_shapes.items()},
    })
    errors = ElementErrors(shape, strict)
    reader.settle(errors)
    for name in v:
        if name in reader.values:
            v[name] = reader.values[name]
    for name in given:
        if given[name] is not None:
            given[name] = reader.values[name]

    with np.errstate(all="ignore"):
        # ---- coating composition and the capacity basis (first-charge, per side)
        f_c, b_c = v["cathode_active_fraction"], v["cathode_binder_fraction"]
        f_a, b_a = v["anode_active_fraction"], v["anode_binder_fraction"]
        k_c = _fractions(f_c, b_c, "cathode_active_fraction", "cathode_binder_fraction", errors)
        k_a = _fractions(f_a, b_a, "anode_active_fraction", "anode_binder_fraction", errors)
        q_c, q_a = v["cathode_first_charge_mAh_g"], v["anode_first_charge_mAh_g"]
        eta_c, eta_a = v["cathode_first_cycle_efficiency"], v["anode_first_cycle_efficiency"]
        volts = v["nominal_voltage_V"]
        if load_name == "cathode_loading_mg_cm2":
            load_c = v[load_name]
            qc = areal_capacity(load_c, f_c, q_c)
        else:
            qc = v[load_name]
            load_c = loading_for(qc, f_c, q_c)
        np_ratio = v["np_ratio"]
        qa = np_ratio * qc
        load_a = loading_for(qa, f_a, q_a)
        q_rev = reversible_areal_capacity(qc, qa, eta_c, eta_a)
        errors.add(q_rev <= 0, lambda n: DomainError(
            "np_ratio", n, detail=f"N/P {n:g} (first-charge basis): the anode's first-cycle loss "
            "takes all the lithium the cathode gives; no reversible capacity is left"), np_ratio)
        limited = anode_limited(qc, qa, eta_c, eta_a)
        fce_cell = q_rev / first_charge(qc, qa)

        # ---- coatings: solids density, coating density, thickness (um)
        c_parts = _coating_parts("cathode", cath, c_binders, c_carbon, f_c, b_c, k_c)
        a_parts = _coating_parts("anode", anod, a_binders, a_carbon, f_a, b_a, k_a)
        rho_solid_c = 1.0 / sum(frac / rho for _, _, frac, rho in c_parts)
        rho_solid_a = 1.0 / sum(frac / rho for _, _, frac, rho in a_parts)
        rho_coat_c = rho_solid_c * (1.0 - v["cathode_porosity"])
        rho_coat_a = rho_solid_a * (1.0 - v["anode_porosity"])
        t_coat_c = load_c * 10.0 / rho_coat_c
        t_coat_a = load_a * 10.0 / rho_coat_a
        t_sep, eps_sep = v["separator_thickness_um"], v["separator_porosity"]
        layers = Layers(
            *(np.asarray(x, dtype=float) for x in (
                v["cathode_foil_thickness_um"], t_coat_c, v["anode_foil_thickness_um"], t_coat_a,
                t_sep, v["anode_overhang_mm"], v["separator_overhang_mm"]))
        )
        if mode == "target":
            target_ah = v[target_name] if target_name == "target_capacity_Ah" \
                else v[target_name] / volts
            need: Array | None = target_ah * 1000.0 / q_rev
        else:
            target_ah = np.float64(np.nan)
            need = None

        # ---- the formats: one group of scenarios per (format, class, core)
        geo, housing_lines = _geometries(
            shape, formats, classes, cores_kind, mode, layers, given, need, errors, housing_of)

        # ---- masses (g)
        components: dict[str, Array] = {}
        materials: dict[str, str] = {}
        areas: dict[str, Array] = {}
        pieces: dict[str, Array] = {}
        electrode: list[str] = []

        def add(name: str, mat: str, mass: Array, area: Array | None = None,
                elec: bool = False, piece: Array | None = None) -> None:
            components[name] = mass
            materials[name] = mat
            if area is not None:
                areas[name] = area
            if piece is not None:
                pieces[name] = piece
            if elec:
                electrode.append(name)

        area_c, area_a, area_s = (geo.cathode_coated_area_cm2, geo.anode_coated_area_cm2,
                                  geo.separator_area_cm2)
        for cname, mname, frac, _ in c_parts:
            add(cname, mname, load_c * frac * area_c / 1000.0, elec=True)
        t_fc, t_fa = layers.cathode_foil_um, layers.anode_foil_um
        add(f"cathode foil ({c_foil.name})", c_foil.name,
            geo.cathode_foil_area_cm2 * t_fc * 1e-4 * c_foil.density, geo.cathode_foil_area_cm2,
            elec=True)
        for cname, mname, frac, _ in a_parts:
            add(cname, mname, load_a * frac * area_a / 1000.0, elec=True)
        add(f"anode foil ({a_foil.name})", a_foil.name,
            geo.anode_foil_area_cm2 * t_fa * 1e-4 * a_foil.density, geo.anode_foil_area_cm2,
            elec=True)
        add(f"separator ({sep.name})", sep.name,
            area_s * t_sep * 1e-4 * sep.density * (1.0 - eps_sep), area_s)
        pore = (
            area_c * t_coat_c * 1e-4 * v["cathode_porosity"]
            + area_a * t_coat_a * 1e-4 * v["anode_porosity"]
            + area_s * t_sep * 1e-4 * eps_sep
        )
        add(f"electrolyte ({elyte.name})", elyte.name,
            v["electrolyte_fill"] * pore * elyte.density)
        tab_given = given["tab_mass_g"]
        one = np.ones(shape)
        c_tab_mass = tab_given if tab_given is not None else geo.tab_cm3 * c_tab.density
        a_tab_mass = tab_given if tab_given is not None else geo.tab_cm3 * a_tab.density
        add(f"cathode tab ({c_tab.name})", c_tab.name, c_tab_mass, piece=one)
        add(f"anode tab ({a_tab.name})", a_tab.name, a_tab_mass, piece=one)
        h_given = given["housing_mass_g"]
        body_g = np.zeros(shape)
        lid_g = np.zeros(shape)
        for mat, present in housing_lines:
            body = np.where(present, geo.housing_body_cm3 * mat.density, 0.0)
            lid = np.where(present, geo.housing_lid_cm3 * mat.density, 0.0)
            body_g = body_g + body
            lid_g = lid_g + lid
            mass = body + lid if h_given is None else np.where(present, h_given, 0.0)
            laminate = np.where(present & np.isfinite(geo.housing_area_cm2),
                                geo.housing_area_cm2, 0.0)
            add(f"housing ({mat.name})", mat.name, mass,
                laminate if np.any(laminate > 0) else None, piece=present.astype(float))

        cell_mass = np.zeros(shape)
        for mass in components.values():
            cell_mass = cell_mass + mass
        capacity = area_c * q_rev / 1000.0
        energy = capacity * volts

        # ---- cost (USD per good cell)
        scrap, yld = v["electrode_scrap"], v["cell_yield"]
        costs = _costs(components, materials, areas, pieces, electrode, prices, elyte, scrap,
                       yld)
        cost_cell = np.zeros(shape)
        for c in costs.values():
            cost_cell = cost_cell + c

    failed = errors.failed()

    def full(a: ArrayLike) -> Array:
        out = np.broadcast_to(np.asarray(a, dtype=float), shape)
        if failed.any():
            out = np.where(failed, np.nan, out)
        return out

    fmt_name = formats if isinstance(formats, str) else "mixed"
    out = {g.name: full(getattr(geo, g.name)) for g in fields(Geometry)
           if g.name in {f.name for f in fields(CellDesign)}}
    design = CellDesign(
        spec=spec,
        shape=shape,
        cathode=cath.name,
        anode=anod.name,
        cell_format=fmt_name,
        sizing_mode=mode,
        nominal_voltage_V=full(volts),
        voltage_min_V=full(v["voltage_min_V"]),
        voltage_max_V=full(v["voltage_max_V"]),
        target_capacity_Ah=full(target_ah),
        cathode_first_charge_mAh_g=full(q_c),
        anode_first_charge_mAh_g=full(q_a),
        cathode_first_cycle_efficiency=full(eta_c),
        anode_first_cycle_efficiency=full(eta_a),
        np_ratio=full(np_ratio),
        cathode_areal_capacity_mAh_cm2=full(qc),
        anode_areal_capacity_mAh_cm2=full(qa),
        reversible_areal_capacity_mAh_cm2=full(q_rev),
        cell_first_cycle_efficiency=full(fce_cell),
        anode_limited=full(limited.astype(float)),
        cathode_active_fraction=full(f_c),
        cathode_binder_fraction=full(b_c),
        anode_active_fraction=full(f_a),
        anode_binder_fraction=full(b_a),
        cathode_porosity=full(v["cathode_porosity"]),
        anode_porosity=full(v["anode_porosity"]),
        cathode_loading_mg_cm2=full(load_c),
        anode_loading_mg_cm2=full(load_a),
        cathode_solids_density_g_cm3=full(rho_solid_c),
        anode_solids_density_g_cm3=full(rho_solid_a),
        cathode_coating_density_g_cm3=full(rho_coat_c),
        anode_coating_density_g_cm3=full(rho_coat_a),
        cathode_coating_thickness_um=full(t_coat_c),
        anode_coating_thickness_um=full(t_coat_a),
        pitch_um=full(layers.pitch_um),
        **out,
        housing_body_mass_g=full(body_g),
        housing_lid_mass_g=full(lid_g),
        cathode_tab_mass_g=full(c_tab_mass),
        anode_tab_mass_g=full(a_tab_mass),
        pore_volume_cm3=full(pore),
        electrolyte_fill=full(v["electrolyte_fill"]),
        capacity_Ah=full(capacity),
        energy_Wh=full(energy),
        cell_mass_g=full(cell_mass),
        specific_energy_Wh_kg=full(energy / (cell_mass / 1000.0)),
        energy_density_Wh_L=full(energy / (geo.cell_volume_cm3 / 1000.0)),
        components=MappingProxyType({k: full(m) for k, m in components.items()}),
        component_materials=MappingProxyType(materials),
        component_areas_cm2=MappingProxyType({k: full(a) for k, a in areas.items()}),
        electrode_components=tuple(electrode),
        component_costs_USD=MappingProxyType({k: full(c) for k, c in costs.items()}),
        cost_per_cell_USD=full(cost_cell),
        cost_per_kWh_USD=full(cost_cell / (energy / 1000.0)),
        electrode_scrap=full(scrap),
        cell_yield=full(yld),
        formats=None if isinstance(formats, str) else np.broadcast_to(formats, shape),
    )
    return design, errors


def _costs(
    components: Mapping[str, Array], materials: Mapping[str, str], areas: Mapping[str, Array],
    pieces: Mapping[str, Array], electrode: list[str], prices: Mapping[str, tuple[Array, str]],
    electrolyte: _Mat, scrap: Array, cell_yield: Array,
) -> dict[str, Array]:
    """USD per good cell of each component: its quantity on its price's basis x
    the price, electrode parts / (1 - scrap), everything / the cell yield."""
    costs: dict[str, Array] = {}
    for name, mass in components.items():
        unit_price, basis = _unit_price(materials[name], prices)
        bought = _quantity(basis, name, materials[name], mass, areas, pieces, electrolyte)
        if name in electrode:
            bought = bought / (1.0 - scrap)
        costs[name] = bought * unit_price / cell_yield
    return costs


def _quantity(basis: str, component: str, material: str, mass_g: Array,
              areas: Mapping[str, Array], pieces: Mapping[str, Array], electrolyte: _Mat
              ) -> Array:
    """How much of a component one cell holds on a price's basis (kg, m^2, L or
    pieces); a basis the component has no quantity on is refused."""
    if basis == "mass":
        return mass_g / 1000.0
    if basis == "area" and component in areas:
        return areas[component] / 1e4
    if basis == "volume" and material == electrolyte.name:
        return mass_g / 1000.0 / electrolyte.density
    if basis == "count" and component in pieces:
        return pieces[component]
    unit = BASE_UNITS[basis]
    hint = "price it per kg" + (" or per each" if component in pieces else "")
    raise UnitError(
        "prices", material,
        detail=f"{material!r} is priced per {unit} ({basis}) but the {component} has no "
        f"{basis} quantity in the design; {hint}",
    )


def _geometries(
    shape: tuple[int, ...],
    formats: str | NDArray[np.object_],
    classes: str | NDArray[np.object_],
    cores_kind: str | NDArray[np.object_],
    mode: str,
    layers: Layers,
    given: Mapping[str, Array | None],
    need: Array | None,
    errors: ElementErrors,
    housing_of: Callable[[str], _Mat],
) -> tuple[Geometry, list[tuple[_Mat, NDArray[np.bool_]]]]:
    """The geometry of every scenario, one vectorised call per group of
    scenarios sharing a format (and cylinder class and prismatic core), and
    the housing material of each group with where it applies."""
    geo_given = {k: given.get(k) for k in (*GEOMETRY_FIELDS, "cores")}
    texts = (formats, classes, cores_kind)
    if all(isinstance(t, str) for t in texts):
        f, c, k = (str(t) for t in texts)
        housing = housing_of(f)
        dims = _group_dims(f, c, k, mode, housing, geo_given, lambda a: a, errors)
        geo = size_format(f, mode, layers, dims, need, errors, k, dims.get("cores", 1.0))
        return geo, [(housing, np.ones(shape, dtype=bool))]
    size = int(np.prod(shape)) if shape else 1
    keys = [np.broadcast_to(np.asarray(t, dtype=object), shape).reshape(-1) for t in texts]
    flat_layers = layers.full(shape)
    flat_need = None if need is None else np.broadcast_to(need, shape).reshape(-1)
    out = {g.name: np.full(size, np.nan) for g in fields(Geometry)}
    by_housing: dict[str, tuple[_Mat, NDArray[np.bool_]]] = {}
    # class and core matter to one format only: fold the others together
    fmt_keys = keys[0]
    cls_keys = np.where(fmt_keys == "cylindrical", keys[1], "")
    core_keys = np.where(fmt_keys == "prismatic", keys[2], "")
    combined = np.char.add(np.char.add(fmt_keys.astype(str), "|"),
                           np.char.add(np.char.add(cls_keys.astype(str), "|"),
                                       core_keys.astype(str)))
    uniques, inverse = np.unique(combined, return_inverse=True)
    groups: dict[tuple[str, str, str], NDArray[np.intp]] = {}
    for n, key in enumerate(uniques.tolist()):
        f, c, k = key.split("|")
        groups[(f, c, k)] = np.flatnonzero(inverse == n)
    for (f, c, k), idx in groups.items():
        sub = errors.subset(idx)
        housing = housing_of(f)

        def take(a: Array, idx: NDArray[np.intp] = idx) -> Array:
            return np.broadcast_to(a, shape).reshape(-1)[idx]

        dims = _group_dims(f, c or CYLINDER_CLASSES[0], k or CORE_TYPES[0], mode, housing,
                           geo_given, take, sub)
        geo = size_format(f, mode, flat_layers.take(idx), dims,
                          None if flat_need is None else flat_need[idx], sub, k or "wound",
                          dims.get("cores", 1.0))
        for g in fields(Geometry):
            out[g.name][idx] = np.broadcast_to(getattr(geo, g.name), idx.shape)
        mat, present = by_housing.get(housing.name, (housing, np.zeros(size, dtype=bool)))
        present[idx] = True
        by_housing[housing.name] = (mat, present)
    geo_full = Geometry(**{name: a.reshape(shape) for name, a in out.items()})
    return geo_full, [(m, p.reshape(shape)) for m, p in by_housing.values()]


def size_cell(cathode: str, anode: str, **inputs: Any) -> CellDesign:
    """Keyword convenience: ``size_cell(cathode, anode, **CellSpec fields)``.

    >>> d = size_cell("LiFePO4", "graphite", target_energy_Wh=[64.0, 128.0],
    ...               cathode_areal_capacity_mAh_cm2=3.0)
    >>> bool((d.anode_sheets == d.cathode_sheets + 1).all())
    True
    """
    names = {f.name for f in fields(CellSpec)}
    unknown = [k for k in inputs if k not in names]
    if unknown:
        raise NotFoundError(unknown[0], unknown[0], "CellSpec field", closest(unknown[0], names))
    return design_cell(CellSpec(cathode, anode, **inputs))
