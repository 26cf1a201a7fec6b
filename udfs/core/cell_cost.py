"""The full cost of a cell design: materials at a price book's prices (fixed or
metal-indexed) plus conversion in a plant (:mod:`udfs.core.conversion_cost`),
per kWh, per Ah and per cell, with the waterfall and the sensitivity of the
cost to each metal index.

Materials: every bill-of-materials line of the design (net quantity per cell,
:func:`udfs.core.procurement.bill_lines`) times its price on the price's own
basis (kg, m^2, L or piece; a basis the line does not have is refused), per kWh
of good cells. Electrode parts (coatings, foils) and the rest go separately
into the plant model, which adds scrap, scrap credit, depreciation, labour,
energy, overhead and margin. The sensitivity to an index is analytic::

    d full / d index_i = (1 + margin) * sum_lines q * c_i / 1000 * k_line

with ``q`` the line's kg per kWh, ``c_i`` its index coefficient and ``k_line``
the plant's materials factor (yields and scrap credit) of the line.

:class:`CostModel` is the same computation as a vectorised function of named
inputs (``price:MATERIAL``, ``fee:MATERIAL``, ``index:NAME``, the plant fields
and ``design:FIELD``) for sweeps and Monte Carlo runs (:mod:`udfs.core.risk`).
Every result carries the price book's name and date and a caution: these are
estimates, not quotations.

>>> from udfs.core.sizing import CellSpec, design_cell
>>> d = design_cell(CellSpec("LiFePO4", "graphite", target_capacity_Ah=100.0,
...                          cathode_loading_mg_cm2=25.0))
>>> c = cell_cost(d, book="demo-2025-06")
>>> c.book_label, bool(abs(sum(c.waterfall.values()) - c.full_USD_kWh) < 1e-9)
('demo-2025-06 (2025-06-30)', True)
"""

from __future__ import annotations

import dataclasses
from collections.abc import Iterator, Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from . import catalogue
from .conversion_cost import (
    COST_CAUTION,
    PLANT,
    PLANT_FIELDS,
    check_plant,
    materials_factors,
    plant_kernel,
)
from .errors import InputError, NotFoundError, UnitError
from .metal_index import index as find_index
from .names import closest
from .price_books import MaterialPrice, PriceBook, fixed_price, price_book
from .prices import BASE_UNITS
from .procurement import bill_lines
from .shapes import broadcast_shape, full
from .sizing import CellDesign, CellSpec, design_cell
from .sizing_table import CELL_SIZING
from .validate import NONNEGATIVE, check

__all__ = [
    "DEMO_PRICES", "OUTPUTS", "CellCost", "CostModel", "PriceInput", "cell_cost", "cost_model",
]

Array = NDArray[np.float64]
#: A price as a caller gives it: a MaterialPrice, a number in USD/kg, or
#: ``(value, unit)`` / ``(value, unit, currency)`` such as ``(0.5, "EUR/m^2")``.
PriceInput = MaterialPrice | float | tuple[float, str] | tuple[float, str, str]

#: The label of the catalogue's undated demo price list (``data/demo_prices.csv``).
DEMO_PRICES = "demo prices (data/demo_prices.csv, undated demo data)"


@dataclass(frozen=True)
class _Line:
    component: str
    material: str
    electrode: bool
    basis: str
    per_kWh: Array  # quantity on the price's basis per kWh of good cells (net)
    kg_per_kWh: Array


def _demo_price(material: str) -> MaterialPrice:
    fact = catalogue.price(material, "prices")
    p = fixed_price(material, float(fact.value), fact.unit, argument=f"demo price of {material!r}")
    return dataclasses.replace(p, source=f"{DEMO_PRICES}: {fact.source}")


def _given_price(material: str, raw: object) -> MaterialPrice:
    where = f"prices[{material!r}]"
    if isinstance(raw, MaterialPrice):
        return raw
    if isinstance(raw, tuple) and len(raw) in (2, 3) and all(isinstance(x, str) for x in raw[1:]):
        value = float(check(where, raw[0], NONNEGATIVE))
        return fixed_price(material, value, raw[1], raw[2] if len(raw) == 3 else None,
                           argument=where)
    if isinstance(raw, (int, float)) and not isinstance(raw, bool):
        return fixed_price(material, float(check(where, raw, NONNEGATIVE)), "USD/kg",
                           argument=where)
    raise InputError(where, raw, "a number in USD/kg, (value, 'EUR/t'), (value, 'kg', 'EUR') "
                     "or a MaterialPrice")


def _prices_for(materials: list[str], book: PriceBook | None,
                prices: Mapping[str, PriceInput] | None) -> dict[str, MaterialPrice]:
    given: dict[str, object] = {}
    if prices is not None:
        if not isinstance(prices, Mapping):
            raise InputError("prices", prices, "a mapping material name -> price")
        for k, v in prices.items():
            given[catalogue.material(k, "prices").name] = v
    out = {}
    for m in materials:
        if m in given:
            out[m] = _given_price(m, given[m])
        elif book is not None:
            out[m] = book.material_price(m)
        else:
            out[m] = _demo_price(m)
    return out


def _lines(design: CellDesign, prices: Mapping[str, MaterialPrice]) -> tuple[_Line, ...]:
    kwh = design.energy_Wh / 1000.0
    out = []
    for b in bill_lines(design):
        p = prices[b.material]
        q = b.quantity(p.basis)
        if q is None:
            unit = BASE_UNITS[p.basis]
            raise UnitError(
                "prices", p.material,
                detail=f"{p.material!r} is priced per {unit} ({p.basis}) but the {b.component} "
                f"has no {p.basis} quantity in the design; price it per kg"
                + (" or per each" if b.pieces is not None else ""),
            )
        out.append(_Line(b.component, b.material, b.electrode, p.basis,
                         np.asarray(q / kwh), np.asarray(b.kg / kwh)))
    return tuple(out)


def _design_fields() -> list[str]:
    """Numeric fields of :class:`CellSpec` a range may vary (from the input table)."""
    return [f.name for f in dataclasses.fields(CellSpec)
            if f.name in CELL_SIZING and CELL_SIZING.get(f.name).is_number]


def _book(book: str | PriceBook | None) -> PriceBook | None:
    if book is None or isinstance(book, PriceBook):
        return book
    return price_book(book, "book")


# --------------------------------------------------------------------------- the model


@dataclass(frozen=True)
class CostModel:
    """The full cost of one design as a vectorised function of named inputs.

    Inputs (see :meth:`inputs`): ``price:MATERIAL`` (USD per kg, m^2, L or
    piece, the price's basis), ``fee:MATERIAL`` (USD/kg, metal-indexed
    materials), ``index:NAME`` (USD/t of the index's product), every plant
    field of :data:`udfs.core.conversion_cost.PLANT`, and ``design:FIELD`` for
    numeric fields of the design's :class:`CellSpec` (the cell is re-sized).
    Calling the model with a mapping of some inputs (floats or arrays that
    broadcast) returns the outputs; inputs not given keep their base values.
    Calls do not check values: :meth:`check` does (the Monte Carlo checks the
    ends of each range once). Plain tuples inside, so the model pickles.
    """

    spec: CellSpec
    book_name: str
    book_date: str
    lines: tuple[_Line, ...]
    prices: tuple[tuple[str, MaterialPrice], ...]
    base_values: tuple[tuple[str, Any], ...]
    energy_Wh: Array
    capacity_Ah: Array
    caution: str = COST_CAUTION

    # ---------------------------------------------------------------- description

    @property
    def book_label(self) -> str:
        return f"{self.book_name} ({self.book_date})" if self.book_date else self.book_name

    def base(self) -> dict[str, Any]:
        """Every input (except ``design:`` ones) at its base value."""
        return dict(self.base_values)

    def unit(self, name: str) -> str:
        """The unit of input ``name``."""
        kind, _, rest = name.partition(":")
        if kind == "price":
            return f"USD/{BASE_UNITS[dict(self.prices)[rest].basis]}"
        if kind == "fee":
            return "USD/kg"
        if kind == "index":
            return "USD/t"
        if kind == "design":
            return CELL_SIZING.get(rest).unit if rest in _design_fields() else ""
        return PLANT.get(name).unit

    def inputs(self) -> list[tuple[str, str, Any]]:
        """``(name, unit, base value)`` of every input but the design fields."""
        return [(k, self.unit(k), v) for k, v in self.base_values]

    def meta(self) -> dict[str, str]:
        """What every output shows beside the numbers."""
        return {"price book": self.book_label, "caution": self.caution}

    def check(self, name: str, value: ArrayLike) -> Array:
        """``value`` checked for input ``name`` (unknown names are refused)."""
        kind, _, rest = name.partition(":")
        if kind == "design":
            if rest not in _design_fields():
                raise NotFoundError("input", name, "numeric design field",
                                    [f"design:{x}" for x in closest(rest, _design_fields())])
            arr = np.asarray(value, dtype=float)
            changed: dict[str, Any] = {rest: arr}
            design_cell(dataclasses.replace(self.spec, **changed))  # the design's own checks
            return arr
        if name not in dict(self.base_values):
            names = [k for k, _ in self.base_values]
            raise NotFoundError("input", name, "input of the cost model", closest(name, names))
        if name in PLANT_FIELDS:
            return np.asarray(PLANT.check(name, value), dtype=float)
        return check(name, value, NONNEGATIVE)

    # ---------------------------------------------------------------- evaluation

    def _quantities(self, values: Mapping[str, Any]) -> tuple[list[Any], list[Any], Any, Any]:
        design_values = {k[7:]: v for k, v in values.items() if k.startswith("design:")}
        if not design_values:
            return ([ln.per_kWh for ln in self.lines], [ln.kg_per_kWh for ln in self.lines],
                    self.energy_Wh, self.capacity_Ah)
        d = design_cell(dataclasses.replace(self.spec, **design_values))
        lines = _lines(d, dict(self.prices))
        return ([ln.per_kWh for ln in lines], [ln.kg_per_kWh for ln in lines], d.energy_Wh,
                d.capacity_Ah)

    def kernel(self, v: Mapping[str, Any], per: list[Any], energy_Wh: Any, capacity_Ah: Any
               ) -> dict[str, Any]:
        """The equations on plain numbers or arrays (arithmetic only): ``v``
        holds every input, ``per`` each line's quantity per kWh. Returns the
        plant's lines (:func:`~udfs.core.conversion_cost.plant_kernel`), each
        material's unit price in USD, and the cell's energy and capacity (the
        costs per cell and per Ah are :data:`OUTPUTS` made of them)."""
        E: Any = 0.0
        C: Any = 0.0
        unit_price: dict[str, Any] = {}
        for m, p in self.prices:
            if p.coefficients:
                x = v[f"fee:{m}"]
                for ix, c in p.coefficients:
                    if c != 0.0:
                        x = x + c * v[f"index:{ix}"] / 1000.0
                unit_price[m] = x
            else:
                unit_price[m] = v[f"price:{m}"]
        for ln, q in zip(self.lines, per, strict=True):
            if ln.electrode:
                E = E + q * unit_price[ln.material]
            else:
                C = C + q * unit_price[ln.material]
        out = plant_kernel(E, C, v)
        out["unit prices"] = unit_price
        out["energy_Wh"] = energy_Wh
        out["capacity_Ah"] = capacity_Ah
        return out

    def __call__(self, values: Mapping[str, Any]) -> Mapping[str, Array]:
        """Outputs (USD per kWh unless named otherwise) for ``values``: a
        read-only mapping that adds up a sum output (materials, conversion)
        only when it is read, so a Monte Carlo run pays for what it keeps."""
        v = dict(self.base_values)
        v.update(values)
        per, _, energy, capacity = self._quantities(values)
        return _Outputs(self.kernel(v, per, energy, capacity))

    def sensitivities(self, values: Mapping[str, Any] | None = None) -> dict[str, Array]:
        """d(full USD/kWh) / d(index), in USD/kWh per 1,000 USD/t, per index."""
        v = dict(self.base_values)
        v.update(values or {})
        _, kg, _, _ = self._quantities(values or {})
        factors = materials_factors(v)
        prices = dict(self.prices)
        out: dict[str, Any] = {}
        for ln, q in zip(self.lines, kg, strict=True):
            factor = factors[0] if ln.electrode else factors[1]
            for ix, c in prices[ln.material].coefficients:
                out[ix] = out.get(ix, 0.0) + q * c * factor
        return {ix: np.asarray(s * factors[2]) for ix, s in out.items()}


#: The outputs of :class:`CostModel` and the kernel lines each is made of (summed, but for
#: the costs per cell, full x Wh / 1000, and per Ah, that / Ah).
OUTPUTS: dict[str, tuple[str, ...]] = {
    "full_USD_kWh": ("full",),
    "full_USD_cell": ("full", "energy_Wh"),
    "full_USD_Ah": ("full", "energy_Wh", "capacity_Ah"),
    "materials_USD_kWh": ("materials in cells", "scrap", "scrap credit"),
    "conversion_USD_kWh": ("depreciation", "labour", "energy", "overhead"),
    **{f"{k}_USD_kWh".replace(" ", "_"): (k,) for k in (
        "materials in cells", "scrap", "scrap credit", "depreciation", "labour", "energy",
        "overhead", "margin")},
}


class _Outputs(Mapping[str, Any]):
    """The model's outputs over one kernel result, summed when read."""

    def __init__(self, kernel: Mapping[str, Any]):
        self._k = kernel
        self._done: dict[str, Any] = {}

    def __getitem__(self, name: str) -> Any:
        if name not in self._done:
            if name == "full_USD_cell":
                value = self._k["full"] * self._k["energy_Wh"] / 1000.0
            elif name == "full_USD_Ah":
                value = self["full_USD_cell"] / self._k["capacity_Ah"]
            else:
                parts = OUTPUTS[name]
                value = self._k[parts[0]]
                for part in parts[1:]:
                    value = value + self._k[part]
            self._done[name] = value
        return self._done[name]

    def __iter__(self) -> Iterator[str]:
        return iter(OUTPUTS)

    def __len__(self) -> int:
        return len(OUTPUTS)


def cost_model(
    design: CellDesign,
    book: str | PriceBook | None = None,
    prices: Mapping[str, PriceInput] | None = None,
    indexes: Mapping[str, ArrayLike] | None = None,
    plant: Mapping[str, ArrayLike] | None = None,
) -> CostModel:
    """The :class:`CostModel` of ``design`` with prices from ``book`` (a
    shipped book's name or a :class:`PriceBook`; None: the catalogue's demo
    prices), ``prices`` overriding materials, ``indexes`` (USD/t) overriding the
    book's index prices, and ``plant`` fields (missing: demo values)."""
    if not isinstance(design, CellDesign):
        raise InputError("design", design, "a CellDesign from design_cell")
    pb = _book(book)
    materials = list(dict.fromkeys(design.component_materials[c] for c in design.components))
    mprices = _prices_for(materials, pb, prices)
    lines = _lines(design, mprices)
    base: dict[str, Any] = {}
    index_values: dict[str, Any] = dict(pb.index_prices_USD_t()) if pb is not None else {}
    if indexes is not None:
        if not isinstance(indexes, Mapping):
            raise InputError("indexes", indexes, "a mapping index name -> USD/t")
        for k, val in indexes.items():
            index_values[find_index(k, "indexes").name] = check(f"indexes[{k!r}]", val,
                                                                 NONNEGATIVE)
    for m, p in mprices.items():
        if not p.coefficients:
            base[f"price:{m}"] = p.USD_per_base
            continue
        base[f"fee:{m}"] = p.USD_per_base
        for ix, c in p.coefficients:
            if c == 0.0:
                continue
            if ix not in index_values:
                raise InputError("indexes", None,
                                 detail=f"{m} is indexed on {ix!r}; give its price (USD/t)")
            base[f"index:{ix}"] = index_values[ix]
    given = {find_index(k, "indexes").name: k for k in (indexes or {})}
    unused = [k for name, k in given.items() if f"index:{name}" not in base]
    if unused:
        raise InputError(
            "indexes", unused[0],
            detail=f"no material of this design is priced against {unused[0]!r} "
            f"(price book: {pb.label if pb is not None else DEMO_PRICES})",
        )
    base.update(check_plant(plant))
    broadcast_shape({"design": design.energy_Wh, **base})
    return CostModel(
        spec=design.spec,
        book_name=pb.name if pb is not None else DEMO_PRICES,
        book_date=pb.date if pb is not None else "",
        lines=lines,
        prices=tuple(mprices.items()),
        base_values=tuple(base.items()),
        energy_Wh=np.asarray(design.energy_Wh),
        capacity_Ah=np.asarray(design.capacity_Ah),
    )


# --------------------------------------------------------------------------- one evaluation


@dataclass(frozen=True)
class CellCost:
    """The full cost of a design (arrays of the broadcast shape).

    ``waterfall``: USD/kWh by line (materials in cells, scrap, scrap credit,
    depreciation, labour, energy, overhead, margin), summing to
    ``full_USD_kWh``. ``components_USD_kWh``: purchase value of each bill line
    in the cells. ``index_sensitivity``: USD/kWh per 1,000 USD/t of each index.
    ``prices``: material -> (basis, USD per base unit or fee, source)."""

    book_name: str
    book_date: str
    book_label: str
    energy_Wh: Array
    capacity_Ah: Array
    waterfall: Mapping[str, Array]
    full_USD_kWh: Array
    full_USD_cell: Array
    full_USD_Ah: Array
    materials_USD_kWh: Array
    conversion_USD_kWh: Array
    components_USD_kWh: Mapping[str, Array]
    index_sensitivity: Mapping[str, Array]
    prices: Mapping[str, tuple[str, Any, str]]
    cells_per_year: Array
    caution: str = COST_CAUTION


def cell_cost(
    design: CellDesign,
    book: str | PriceBook | None = None,
    prices: Mapping[str, PriceInput] | None = None,
    indexes: Mapping[str, ArrayLike] | None = None,
    plant: Mapping[str, ArrayLike] | None = None,
) -> CellCost:
    """The full cost of ``design`` (see :func:`cost_model` for the arguments)."""
    model = cost_model(design, book, prices, indexes, plant)
    v = model.base()
    shape = broadcast_shape({"design": model.energy_Wh, **v})
    out = model(v)
    per = [ln.per_kWh for ln in model.lines]
    k = model.kernel(v, per, model.energy_Wh, model.capacity_Ah)
    unit_price = k["unit prices"]
    components = {ln.component: full(ln.per_kWh * unit_price[ln.material], shape)
                  for ln in model.lines}
    lines = ("materials in cells", "scrap", "scrap credit", "depreciation", "labour", "energy",
             "overhead", "margin")
    return CellCost(
        book_name=model.book_name,
        book_date=model.book_date,
        book_label=model.book_label,
        energy_Wh=full(model.energy_Wh, shape),
        capacity_Ah=full(model.capacity_Ah, shape),
        waterfall={name: full(k[name], shape) for name in lines},
        full_USD_kWh=full(out["full_USD_kWh"], shape),
        full_USD_cell=full(out["full_USD_cell"], shape),
        full_USD_Ah=full(out["full_USD_Ah"], shape),
        materials_USD_kWh=full(out["materials_USD_kWh"], shape),
        conversion_USD_kWh=full(out["conversion_USD_kWh"], shape),
        components_USD_kWh=components,
        index_sensitivity={ix: full(s, shape)
                           for ix, s in model.sensitivities().items()},
        prices={m: (p.basis, p.USD_per_base, p.source) for m, p in model.prices},
        cells_per_year=full(v["annual_output_GWh"] * 1e9 / model.energy_Wh, shape),
    )
