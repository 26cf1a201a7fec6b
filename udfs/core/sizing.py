"""Electrode -> cell -> pack sizing and the bill of materials of a stacked cell,
vectorised: every numeric input may be a float or an array and all of them
broadcast together, so one call sizes 100,000 what-if scenarios.

The equations are written out in ``docs/sizing-model.md``; a spreadsheet
template reproduces them with native formulas. Trade units throughout: Ah, Wh,
mg/cm2, mAh/g, g/cm3, um, mm, cm2, g, USD/kg.

>>> spec = CellSpec("LiFePO4", "graphite", target_capacity_Ah=20.0,
...                 cathode_loading_mg_cm2=25.0)
>>> d = design_cell(spec)
>>> float(d.capacity_Ah) >= 20.0
True
>>> bool(abs(sum(d.components.values()) - d.cell_mass_g) < 1e-9)
True
>>> p = size_pack(CellValues(3.2, 100.0, 2000.0), 48.0, 10.0)
>>> int(p.series), int(p.parallel), int(p.cells)
(15, 3, 45)
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field, fields
from functools import lru_cache
from types import MappingProxyType
from typing import Any, NamedTuple

import numpy as np
from numpy.typing import ArrayLike, NDArray

from . import catalogue
from .capacity import ceil_count, series_parallel
from .errors import DomainError, InputError, NotFoundError, ShapeError, UnitError
from .names import closest, normalise
from .sizing_table import CELL_SIZING, binder_default
from .units import conversion, dimension_of
from .validate import FRACTION_OPEN, NONNEGATIVE, POSITIVE, Domain, Names, check

__all__ = [
    "CellDesign",
    "CellSpec",
    "CellValues",
    "PackDesign",
    "design_cell",
    "price_basis",
    "size_cell",
    "size_pack",
]

Array = NDArray[np.float64]
#: A price: a number (or array) in USD/kg, or ``(number, "USD/m^2")`` style pairs.
Price = ArrayLike | tuple[ArrayLike, str]
#: A binder: one material name, or a mapping name -> share of the binder fraction.
Binder = str | Mapping[str, float]

_FRACTION_SUM_TOL = 1e-12


# --------------------------------------------------------------------------- inputs


def _cathode_binder() -> Binder:
    return binder_default("cathode")


def _anode_binder() -> Binder:
    return binder_default("anode")


#: Field -> default, from the input table (each default with its basis is declared there).
_D = CELL_SIZING.defaults()


@dataclass(frozen=True)
class CellSpec:
    """Inputs of a stacked-electrode cell. Numbers may be floats or arrays.

    Give exactly one of ``target_capacity_Ah`` / ``target_energy_Wh`` and
    exactly one of ``cathode_loading_mg_cm2`` / ``cathode_areal_capacity_mAh_cm2``.
    ``None`` elsewhere means "take it from the catalogue". The defaults, their
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
    cathode_loading_mg_cm2: ArrayLike | None = None  # total coating mass per area per side
    cathode_areal_capacity_mAh_cm2: ArrayLike | None = None  # per side
    cathode_specific_capacity_mAh_g: ArrayLike | None = None  # None: catalogue practical_capacity
    anode_specific_capacity_mAh_g: ArrayLike | None = None  # None: catalogue practical_capacity
    nominal_voltage_V: ArrayLike | None = None  # None: cathode minus anode average voltage
    cathode_active_fraction: ArrayLike = _D["cathode_active_fraction"]
    cathode_binder_fraction: ArrayLike = _D["cathode_binder_fraction"]
    anode_active_fraction: ArrayLike = _D["anode_active_fraction"]
    anode_binder_fraction: ArrayLike = _D["anode_binder_fraction"]
    cathode_porosity: ArrayLike = _D["cathode_porosity"]
    anode_porosity: ArrayLike = _D["anode_porosity"]
    np_ratio: ArrayLike = _D["np_ratio"]
    first_cycle_loss: ArrayLike = _D["first_cycle_loss"]
    cathode_binder: Binder = field(default_factory=_cathode_binder)
    anode_binder: Binder = field(default_factory=_anode_binder)
    cathode_carbon: str = _D["cathode_carbon"]
    anode_carbon: str = _D["anode_carbon"]
    cathode_foil: str = _D["cathode_foil"]
    anode_foil: str = _D["anode_foil"]
    cathode_foil_thickness_um: ArrayLike | None = None  # None: catalogue thickness of the foil
    anode_foil_thickness_um: ArrayLike | None = None  # None: catalogue thickness of the foil
    separator: str = _D["separator"]
    separator_thickness_um: ArrayLike | None = None  # None: catalogue thickness
    separator_porosity: ArrayLike | None = None  # None: catalogue porosity
    electrolyte: str = _D["electrolyte"]
    electrolyte_fill: ArrayLike = _D["electrolyte_fill"]  # x pore volume
    cathode_tab: str = _D["cathode_tab"]
    anode_tab: str = _D["anode_tab"]
    tab_mass_g: ArrayLike = _D["tab_mass_g"]  # each of the two tabs
    housing: str = _D["housing"]
    housing_mass_g: ArrayLike = _D["housing_mass_g"]
    width_mm: ArrayLike = _D["width_mm"]  # cathode sheet
    height_mm: ArrayLike = _D["height_mm"]
    anode_overhang_mm: ArrayLike = _D["anode_overhang_mm"]  # each edge
    separator_overhang_mm: ArrayLike = _D["separator_overhang_mm"]  # beyond the anode
    volume_efficiency: ArrayLike = _D["volume_efficiency"]  # stack / cell volume
    prices: Mapping[str, Price] | None = None  # None: the demo prices (invented demo data)
    electrode_scrap: ArrayLike = _D["electrode_scrap"]
    cell_yield: ArrayLike = _D["cell_yield"]


# --------------------------------------------------------------------------- catalogue


@dataclass(frozen=True)
class _Mat:
    name: str
    density: float
    facts: Mapping[str, catalogue.Fact]


@lru_cache(maxsize=512)
def _resolve(name: str, argument: str, names: Names) -> _Mat:
    """A catalogue material allowed by ``names`` (aliases resolved), cached."""
    m = catalogue.material(names.check(argument, name), argument)
    return _Mat(m.name, m.number("density"), m.facts)


def _material(name: object, argument: str) -> _Mat:
    """The material a name input of the table (``argument``) names."""
    names = CELL_SIZING.domain(argument)
    assert isinstance(names, Names)
    if not isinstance(name, str):
        names.check(argument, name)  # raises: not text
    return _resolve(name, argument, names)


def _fact_number(mat: _Mat, prop: str, argument: str) -> float:
    fact = mat.facts.get(prop)
    if fact is None:
        raise InputError(
            argument, None, detail=f"the catalogue has no {prop} for {mat.name!r}; give {argument}"
        )
    return float(fact.value)


def _binder_shares(value: object, argument: str) -> tuple[tuple[_Mat, float], ...]:
    if not isinstance(value, Mapping):  # one name (checked as the input table declares)
        return ((_material(value, argument), 1.0),)
    if not value:
        raise InputError(
            argument, value, "a binder name or a mapping name -> share (shares sum to 1)"
        )
    out = []
    for name, share in value.items():
        s = float(_check(f"{argument}[{name!r}]", share, FRACTION_OPEN))
        out.append((_material(name, argument), s))
    total = sum(s for _, s in out)
    if abs(total - 1.0) > 1e-9:
        raise DomainError(argument, total, "shares that sum to 1")
    if len({m.name for m, _ in out}) != len(out):
        raise InputError(argument, value, detail="names the same binder twice")
    return tuple(out)


_BASES = {"kg": "kg", "m^2": "m2", "m2": "m2", "m**2": "m2"}


@lru_cache(maxsize=128)
def price_basis(unit: str, argument: str) -> tuple[str, float]:
    """``('kg' | 'm2', factor)``: price per unit times factor = USD/kg or USD/m^2.

    >>> price_basis("USD/t", "price")
    ('kg', 0.001)
    >>> price_basis("USD/m^2", "price")
    ('m2', 1.0)
    """
    currency, slash, denominator = unit.replace(" ", "").partition("/")
    if currency.upper() != "USD" or not slash or not denominator:
        raise UnitError(argument, unit, "a price unit such as 'USD/kg', 'USD/t' or 'USD/m^2'")
    if denominator in _BASES:  # already on a basis: no unit registry needed
        return _BASES[denominator], 1.0
    dim = dimension_of(denominator, argument)
    if dim == "[mass]":
        return "kg", 1.0 / conversion(denominator, "kg", argument)[0]
    if dim == "[length] ** 2":
        return "m2", 1.0 / conversion(denominator, "m^2", argument)[0]
    raise UnitError(argument, unit, detail=f"price unit {unit!r} is neither per mass nor per area")


def _user_prices(prices: Mapping[str, Price] | None) -> dict[str, tuple[Array, str]]:
    if prices is None:
        return {}
    if not isinstance(prices, Mapping):
        raise InputError("prices", prices, "a mapping material name -> USD/kg (or (value, unit))")
    out: dict[str, tuple[Array, str]] = {}
    for name, raw in prices.items():
        canonical = catalogue.material(name, "prices").name
        where = f"prices[{name!r}]"
        if isinstance(raw, tuple):
            if len(raw) != 2 or not isinstance(raw[1], str):
                raise InputError(where, raw, "a number in USD/kg or a pair (value, 'USD/m^2')")
            basis, factor = price_basis(raw[1], where)
            out[canonical] = (_check(where, raw[0], NONNEGATIVE) * factor, basis)
        else:
            out[canonical] = (_check(where, raw, NONNEGATIVE), "kg")
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
    basis, factor = price_basis(fact.unit, f"demo price of {name!r}")
    return np.asarray(float(fact.value) * factor), basis


# --------------------------------------------------------------------------- helpers


def _check(name: str, value: object, domain: Domain) -> Array:
    """Numbers only (no text, booleans or empty values), then the domain check."""
    return check(name, value, domain)  # type: ignore[arg-type]


def _broadcast_shape(values: Mapping[str, Array]) -> tuple[int, ...]:
    shape: tuple[int, ...] = ()
    shaped: list[str] = []
    for name, a in values.items():
        try:
            shape = np.broadcast_shapes(shape, a.shape)
        except ValueError:
            raise ShapeError(
                name,
                a.shape,
                detail=(
                    f"shape {a.shape} cannot be broadcast with shape {shape} "
                    f"of {', '.join(shaped)}"
                ),
            ) from None
        if a.ndim:
            shaped.append(name)
    return shape


def _fractions(active: Array, binder: Array, active_name: str, binder_name: str) -> Array:
    """Carbon fraction 1 - active - binder; error if it would be negative."""
    excess = active + binder - 1.0
    bad = excess > _FRACTION_SUM_TOL
    if np.any(bad):
        b = np.broadcast_to(binder, bad.shape)[bad].flat[0] if bad.ndim else binder
        raise DomainError(
            binder_name, float(b), f"<= 1 - {active_name} (the carbon fraction cannot be < 0)"
        )
    return np.maximum(1.0 - active - binder, 0.0)


def _voltage(cathode: _Mat, anode: _Mat) -> float:
    needed = ("average_voltage", "voltage_reference")
    for m in (cathode, anode):
        missing = [p for p in needed if p not in m.facts]
        if missing:
            raise InputError(
                "nominal_voltage_V",
                None,
                detail=f"the catalogue has no {missing[0]} for {m.name!r}; give nominal_voltage_V",
            )
    ref_c = cathode.facts["voltage_reference"].value
    ref_a = anode.facts["voltage_reference"].value
    if normalise(ref_c) != normalise(ref_a):
        raise InputError(
            "nominal_voltage_V",
            None,
            detail=(
                f"{cathode.name} ({ref_c}) and {anode.name} ({ref_a}) have voltages on different "
                "references; give nominal_voltage_V"
            ),
        )
    volts = float(cathode.facts["average_voltage"].value)
    volts -= float(anode.facts["average_voltage"].value)
    if volts <= 0:
        raise DomainError(
            "nominal_voltage_V",
            volts,
            f"> 0 ({cathode.name} against {anode.name} gives {volts:.3g} V; "
            "give nominal_voltage_V)",
        )
    return volts


def _exactly_one(spec: CellSpec, a: str, b: str) -> tuple[str, Any]:
    va, vb = getattr(spec, a), getattr(spec, b)
    if (va is None) == (vb is None):
        raise InputError(a, va, detail=f"give exactly one of {a} and {b}")
    return (a, va) if va is not None else (b, vb)


# --------------------------------------------------------------------------- outputs


@dataclass(frozen=True)
class CellDesign:
    """The sized cell: arrays of the broadcast shape of the inputs (0-d for a
    scalar spec). Masses in g, areas in cm2, thicknesses in um, costs in USD.

    ``components`` maps component name -> mass per cell; the masses sum to
    ``cell_mass_g``. ``component_costs_USD`` maps component name -> cost per
    good cell (scrap and yield included); they sum to ``cost_per_cell_USD``.
    """

    spec: CellSpec
    shape: tuple[int, ...]
    cathode: str
    anode: str
    nominal_voltage_V: Array
    target_capacity_Ah: Array
    cathode_specific_capacity_mAh_g: Array
    anode_specific_capacity_mAh_g: Array
    cathode_sheets: Array
    anode_sheets: Array
    separator_layers: Array
    cathode_footprint_cm2: Array
    anode_footprint_cm2: Array
    separator_footprint_cm2: Array
    cathode_coated_area_cm2: Array
    anode_coated_area_cm2: Array
    separator_area_cm2: Array
    cathode_areal_capacity_mAh_cm2: Array
    usable_areal_capacity_mAh_cm2: Array
    anode_areal_capacity_mAh_cm2: Array
    cathode_loading_mg_cm2: Array
    anode_loading_mg_cm2: Array
    cathode_solids_density_g_cm3: Array
    anode_solids_density_g_cm3: Array
    cathode_coating_density_g_cm3: Array
    anode_coating_density_g_cm3: Array
    cathode_coating_thickness_um: Array
    anode_coating_thickness_um: Array
    pore_volume_cm3: Array
    stack_thickness_um: Array
    stack_volume_cm3: Array
    cell_volume_cm3: Array
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

    def scenario(self, index: int | tuple[int, ...]) -> dict[str, float]:
        """The scalar numbers of one scenario (components prefixed ``mass: ``
        and ``cost: ``), e.g. for a table row."""
        out: dict[str, float] = {}
        for f in fields(self):
            v = getattr(self, f.name)
            if isinstance(v, np.ndarray):
                out[f.name] = float(v[index]) if v.ndim else float(v)
        for kind, table in (("mass", self.components), ("cost", self.component_costs_USD)):
            for k, v in table.items():
                out[f"{kind}: {k}"] = float(v[index]) if v.ndim else float(v)
        return out


def _numeric(field: str) -> Domain:
    domain = CELL_SIZING.domain(field)
    assert isinstance(domain, Domain)
    return domain


#: (field, domain) of the numeric inputs that always have a value.
_NUMERIC_DOMAINS: tuple[tuple[str, Domain], ...] = tuple(
    (inp.field, _numeric(inp.field))
    for inp in CELL_SIZING
    if inp.is_number and inp.field is not None and not inp.optional
)
#: Numeric fields whose blank (None) means "from the catalogue".
_CATALOGUE_FIELDS = tuple(
    inp.field for inp in CELL_SIZING if inp.is_number and inp.field and inp.optional
)


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


def design_cell(spec: CellSpec) -> CellDesign:
    """Size a stacked cell and its bill of materials (see docs/sizing-model.md).

    >>> d = design_cell(CellSpec("NMC811", "graphite", target_capacity_Ah=[50.0, 60.0],
    ...                          cathode_loading_mg_cm2=22.0))
    >>> d.shape, bool((d.capacity_Ah >= [50.0, 60.0]).all())
    ((2,), True)
    """
    if not isinstance(spec, CellSpec):
        raise InputError("spec", spec, "a CellSpec")
    # ---- materials, resolved once (cached)
    cath = _material(spec.cathode, "cathode")
    anod = _material(spec.anode, "anode")
    c_binders = _binder_shares(spec.cathode_binder, "cathode_binder")
    a_binders = _binder_shares(spec.anode_binder, "anode_binder")
    c_carbon = _material(spec.cathode_carbon, "cathode_carbon")
    a_carbon = _material(spec.anode_carbon, "anode_carbon")
    c_foil = _material(spec.cathode_foil, "cathode_foil")
    a_foil = _material(spec.anode_foil, "anode_foil")
    sep = _material(spec.separator, "separator")
    elyte = _material(spec.electrolyte, "electrolyte")
    c_tab = _material(spec.cathode_tab, "cathode_tab")
    a_tab = _material(spec.anode_tab, "anode_tab")
    housing = _material(spec.housing, "housing")

    # ---- numbers, validated (DomainError names the argument)
    v: dict[str, Array] = {
        name: _check(name, getattr(spec, name), dom) for name, dom in _NUMERIC_DOMAINS
    }
    target_name, target_value = _exactly_one(spec, "target_capacity_Ah", "target_energy_Wh")
    v[target_name] = _check(target_name, target_value, _numeric(target_name))
    load_name, load_value = _exactly_one(
        spec, "cathode_loading_mg_cm2", "cathode_areal_capacity_mAh_cm2"
    )
    v[load_name] = _check(load_name, load_value, _numeric(load_name))
    from_catalogue = {
        "cathode_specific_capacity_mAh_g": lambda: _fact_number(
            cath, "practical_capacity", "cathode_specific_capacity_mAh_g"),
        "anode_specific_capacity_mAh_g": lambda: _fact_number(
            anod, "practical_capacity", "anode_specific_capacity_mAh_g"),
        "nominal_voltage_V": lambda: _voltage(cath, anod),
        "cathode_foil_thickness_um": lambda: _fact_number(
            c_foil, "thickness", "cathode_foil_thickness_um"),
        "anode_foil_thickness_um": lambda: _fact_number(
            a_foil, "thickness", "anode_foil_thickness_um"),
        "separator_thickness_um": lambda: _fact_number(sep, "thickness", "separator_thickness_um"),
        "separator_porosity": lambda: _fact_number(sep, "porosity", "separator_porosity"),
    }
    for name in _CATALOGUE_FIELDS:
        given = getattr(spec, name)
        v[name] = _check(name, from_catalogue[name]() if given is None else given, _numeric(name))
    prices = _user_prices(spec.prices)
    shape = _broadcast_shape({**v, **{f"prices[{k!r}]": a for k, (a, _) in prices.items()}})

    f_c, b_c = v["cathode_active_fraction"], v["cathode_binder_fraction"]
    f_a, b_a = v["anode_active_fraction"], v["anode_binder_fraction"]
    k_c = _fractions(f_c, b_c, "cathode_active_fraction", "cathode_binder_fraction")
    k_a = _fractions(f_a, b_a, "anode_active_fraction", "anode_binder_fraction")
    q_c, q_a = v["cathode_specific_capacity_mAh_g"], v["anode_specific_capacity_mAh_g"]
    volts = v["nominal_voltage_V"]

    # ---- electrode balance and layer count
    if load_name == "cathode_loading_mg_cm2":
        load_c = v[load_name]
        qc = load_c * f_c * q_c / 1000.0
    else:
        qc = v[load_name]
        load_c = qc * 1000.0 / (f_c * q_c)
    target_ah = v[target_name] if target_name == "target_capacity_Ah" else v[target_name] / volts
    qu = qc * (1.0 - v["first_cycle_loss"])
    w, h = v["width_mm"], v["height_mm"]
    oa, osep = v["anode_overhang_mm"], v["separator_overhang_mm"]
    a_fp = w * h / 100.0
    a_fp_an = (w + 2.0 * oa) * (h + 2.0 * oa) / 100.0
    a_fp_sep = (w + 2.0 * oa + 2.0 * osep) * (h + 2.0 * oa + 2.0 * osep) / 100.0
    area_needed = target_ah * 1000.0 / qu
    n = np.maximum(ceil_count(area_needed / (2.0 * a_fp)), 1.0)
    area_c = 2.0 * n * a_fp
    area_a = 2.0 * n * a_fp_an
    area_sep = 2.0 * n * a_fp_sep
    qa = v["np_ratio"] * qc
    load_a = qa * 1000.0 / (f_a * q_a)
    capacity = area_c * qu / 1000.0
    energy = capacity * volts

    # ---- coatings: solids density, coating density, thickness
    c_parts = _coating_parts("cathode", cath, c_binders, c_carbon, f_c, b_c, k_c)
    a_parts = _coating_parts("anode", anod, a_binders, a_carbon, f_a, b_a, k_a)
    rho_solid_c = 1.0 / sum(frac / rho for _, _, frac, rho in c_parts)
    rho_solid_a = 1.0 / sum(frac / rho for _, _, frac, rho in a_parts)
    rho_coat_c = rho_solid_c * (1.0 - v["cathode_porosity"])
    rho_coat_a = rho_solid_a * (1.0 - v["anode_porosity"])
    t_coat_c = load_c * 10.0 / rho_coat_c
    t_coat_a = load_a * 10.0 / rho_coat_a
    t_fc, t_fa = v["cathode_foil_thickness_um"], v["anode_foil_thickness_um"]
    t_sep, eps_sep = v["separator_thickness_um"], v["separator_porosity"]

    # ---- masses (g)
    components: dict[str, Array] = {}
    materials: dict[str, str] = {}
    areas: dict[str, Array] = {}
    electrode: list[str] = []

    def add(
        name: str, mat: str, mass: Array, area: Array | None = None, elec: bool = False
    ) -> None:
        components[name] = mass
        materials[name] = mat
        if area is not None:
            areas[name] = area
        if elec:
            electrode.append(name)

    for cname, mname, frac, _ in c_parts:
        add(cname, mname, load_c * frac * area_c / 1000.0, elec=True)
    foil_c_area = n * a_fp
    add(f"cathode foil ({c_foil.name})", c_foil.name,
        foil_c_area * t_fc * 1e-4 * c_foil.density, foil_c_area, elec=True)
    for cname, mname, frac, _ in a_parts:
        add(cname, mname, load_a * frac * area_a / 1000.0, elec=True)
    foil_a_area = (n + 1.0) * a_fp_an
    add(f"anode foil ({a_foil.name})", a_foil.name,
        foil_a_area * t_fa * 1e-4 * a_foil.density, foil_a_area, elec=True)
    add(f"separator ({sep.name})", sep.name,
        area_sep * t_sep * 1e-4 * sep.density * (1.0 - eps_sep), area_sep)
    pore = (
        area_c * t_coat_c * 1e-4 * v["cathode_porosity"]
        + area_a * t_coat_a * 1e-4 * v["anode_porosity"]
        + area_sep * t_sep * 1e-4 * eps_sep
    )
    add(f"electrolyte ({elyte.name})", elyte.name, v["electrolyte_fill"] * pore * elyte.density)
    add(f"cathode tab ({c_tab.name})", c_tab.name, v["tab_mass_g"])
    add(f"anode tab ({a_tab.name})", a_tab.name, v["tab_mass_g"])
    add(f"housing ({housing.name})", housing.name, v["housing_mass_g"])

    cell_mass = np.zeros(shape)
    for mass in components.values():
        cell_mass = cell_mass + mass

    # ---- geometry
    stack_t = n * (t_fc + 2.0 * t_coat_c) + (n + 1.0) * t_fa + 2.0 * n * t_coat_a + 2.0 * n * t_sep
    stack_vol = a_fp_an * stack_t * 1e-4
    cell_vol = stack_vol / v["volume_efficiency"]

    # ---- cost (USD per good cell)
    scrap, yld = v["electrode_scrap"], v["cell_yield"]
    costs: dict[str, Array] = {}
    for cname, mass in components.items():
        unit_price, basis = _unit_price(materials[cname], prices)
        if basis == "kg":
            bought = mass / 1000.0
        elif cname in areas:
            bought = areas[cname] / 1e4
        else:
            raise InputError(
                "prices", None,
                detail=(
                    f"{materials[cname]!r} is priced per area but {cname} has no area; "
                    "use USD/kg"
                ),
            )
        if cname in electrode:
            bought = bought / (1.0 - scrap)
        costs[cname] = bought * unit_price / yld
    cost_cell = np.zeros(shape)
    for c in costs.values():
        cost_cell = cost_cell + c

    def full(a: ArrayLike) -> Array:
        return np.broadcast_to(np.asarray(a, dtype=float), shape)

    return CellDesign(
        spec=spec,
        shape=shape,
        cathode=cath.name,
        anode=anod.name,
        nominal_voltage_V=full(volts),
        target_capacity_Ah=full(target_ah),
        cathode_specific_capacity_mAh_g=full(q_c),
        anode_specific_capacity_mAh_g=full(q_a),
        cathode_sheets=full(n),
        anode_sheets=full(n + 1.0),
        separator_layers=full(2.0 * n),
        cathode_footprint_cm2=full(a_fp),
        anode_footprint_cm2=full(a_fp_an),
        separator_footprint_cm2=full(a_fp_sep),
        cathode_coated_area_cm2=full(area_c),
        anode_coated_area_cm2=full(area_a),
        separator_area_cm2=full(area_sep),
        cathode_areal_capacity_mAh_cm2=full(qc),
        usable_areal_capacity_mAh_cm2=full(qu),
        anode_areal_capacity_mAh_cm2=full(qa),
        cathode_loading_mg_cm2=full(load_c),
        anode_loading_mg_cm2=full(load_a),
        cathode_solids_density_g_cm3=full(rho_solid_c),
        anode_solids_density_g_cm3=full(rho_solid_a),
        cathode_coating_density_g_cm3=full(rho_coat_c),
        anode_coating_density_g_cm3=full(rho_coat_a),
        cathode_coating_thickness_um=full(t_coat_c),
        anode_coating_thickness_um=full(t_coat_a),
        pore_volume_cm3=full(pore),
        stack_thickness_um=full(stack_t),
        stack_volume_cm3=full(stack_vol),
        cell_volume_cm3=full(cell_vol),
        capacity_Ah=full(capacity),
        energy_Wh=full(energy),
        cell_mass_g=full(cell_mass),
        specific_energy_Wh_kg=full(energy / (cell_mass / 1000.0)),
        energy_density_Wh_L=full(energy / (cell_vol / 1000.0)),
        components=MappingProxyType({k: full(m) for k, m in components.items()}),
        component_materials=MappingProxyType(materials),
        component_areas_cm2=MappingProxyType({k: full(a) for k, a in areas.items()}),
        electrode_components=tuple(electrode),
        component_costs_USD=MappingProxyType({k: full(c) for k, c in costs.items()}),
        cost_per_cell_USD=full(cost_cell),
        cost_per_kWh_USD=full(cost_cell / (energy / 1000.0)),
        electrode_scrap=full(scrap),
        cell_yield=full(yld),
    )


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


# --------------------------------------------------------------------------- pack


class CellValues(NamedTuple):
    """The few numbers of a cell that pack sizing needs."""

    voltage_V: ArrayLike
    capacity_Ah: ArrayLike
    mass_g: ArrayLike


@dataclass(frozen=True)
class PackDesign:
    """Series/parallel counts and pack totals (arrays of the broadcast shape)."""

    series: Array
    parallel: Array
    cells: Array
    pack_voltage_V: Array
    pack_capacity_Ah: Array
    pack_energy_kWh: Array
    cells_mass_kg: Array
    pack_mass_kg: Array
    pack_specific_energy_Wh_kg: Array


def size_pack(
    cell: CellDesign | CellValues,
    target_voltage_V: ArrayLike,
    target_energy_kWh: ArrayLike,
    cell_to_pack_mass_fraction: ArrayLike = 0.65,  # from memory (module/pack overheads)
) -> PackDesign:
    """Smallest series x parallel pack that meets both targets.

    series = ceil(target V / cell V); parallel = ceil(target Wh / (series *
    cell Wh)); pack mass = cells * cell mass / cell-to-pack mass fraction.

    >>> p = size_pack(CellValues(3.2, 100.0, 2000.0), 51.2, 20.0)
    >>> int(p.series), int(p.parallel), float(p.pack_energy_kWh)
    (16, 4, 20.48)
    """
    cv: Array
    ca: Array
    cm: Array
    if isinstance(cell, CellDesign):
        cv, ca, cm = cell.nominal_voltage_V, cell.capacity_Ah, cell.cell_mass_g
    elif isinstance(cell, tuple) and len(cell) == 3:
        cv = _check("cell voltage_V", cell[0], POSITIVE)
        ca = _check("cell capacity_Ah", cell[1], POSITIVE)
        cm = _check("cell mass_g", cell[2], POSITIVE)
    else:
        raise InputError("cell", cell, "a CellDesign or CellValues(voltage_V, capacity_Ah, mass_g)")
    tv = _check("target_voltage_V", target_voltage_V, POSITIVE)
    te = _check("target_energy_kWh", target_energy_kWh, POSITIVE)
    frac = _check("cell_to_pack_mass_fraction", cell_to_pack_mass_fraction, FRACTION_OPEN)
    shape = _broadcast_shape(
        {"cell voltage_V": cv, "cell capacity_Ah": ca, "cell mass_g": cm,
         "target_voltage_V": tv, "target_energy_kWh": te, "cell_to_pack_mass_fraction": frac}
    )
    cell_wh = cv * ca
    series, parallel, cells, _ = series_parallel(tv, te * 1000.0, cv, ca)
    cells_mass = cells * cm / 1000.0
    pack_mass = cells_mass / frac
    pack_kwh = cells * cell_wh / 1000.0

    def full(a: ArrayLike) -> Array:
        return np.broadcast_to(np.asarray(a, dtype=float), shape)

    return PackDesign(
        series=full(series),
        parallel=full(parallel),
        cells=full(cells),
        pack_voltage_V=full(series * cv),
        pack_capacity_Ah=full(parallel * ca),
        pack_energy_kWh=full(pack_kwh),
        cells_mass_kg=full(cells_mass),
        pack_mass_kg=full(pack_mass),
        pack_specific_energy_Wh_kg=full(pack_kwh * 1000.0 / pack_mass),
    )


