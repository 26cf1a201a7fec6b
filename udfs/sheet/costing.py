"""Spreadsheet functions of the cost layer: prices in any unit and currency,
exchange rates, price books, metal-indexed prices, precursor salts and NMP,
the bill of materials of a sized cell, and percentiles and seeded samples of
ranges. Each one calls the core (:mod:`udfs.core.prices`,
:mod:`udfs.core.price_books`, :mod:`udfs.core.metal_index`,
:mod:`udfs.core.procurement`, :mod:`udfs.core.risk`); nothing is computed
twice.

>>> round(CW_PRICE(2200, "EUR/t", "USD/kg", 0, 0, 0, "2025-06-30"), 4)
2.574
>>> CW_PRICE_BOOK("demo-2025-06", "index:nickel")
15500.0
>>> round(CW_RANGE_PERCENTILE(0, 1, 4, 50), 6)
1.55051
>>> CW_CELL_BOM([["in_cathode", "LFP"]], "material")[0]
['LiFePO4']
"""

from __future__ import annotations

from collections.abc import Mapping
from functools import lru_cache
from typing import Any

import numpy as np

from ..core import metal_index, price_books, prices, procurement, risk
from ..core.errors import DomainError, InputError, NotFoundError
from ..core.names import closest, lookup
from ..core.sizing import design_cell
from ..core.sizing_table import COMPONENTS
from ..core.sizing_values import order_from_values, spec_from_values
from ..core.validate import (
    FRACTION,
    FRACTION_OPEN,
    NONNEGATIVE,
    UNIT_INTERVAL_HALF_OPEN,
    Domain,
)
from .declare import Kind, Num, Section, Table, Text, sheet_function

__all__ = [
    "BOM_FIELDS",
    "BOM_ROWS",
    "CW_CELL_BOM",
    "CW_FX",
    "CW_INDEXED_PRICE",
    "CW_INDEX_COEFFICIENT",
    "CW_INDEX_FOR_PRICE",
    "CW_PRECURSORS",
    "CW_PRICE",
    "CW_PRICE_BOOK",
    "CW_PRICE_BOOKS",
    "CW_PRICE_BOOK_INFO",
    "CW_RANGE_PERCENTILE",
    "CW_RANGE_SAMPLE",
    "PRECURSOR_ITEMS",
]

_BOOK_DOC = 'price book name, e.g. "demo-2025-06" (see CW_PRICE_BOOKS)'
_DATE_DOC = 'date of the exchange rate, text "YYYY-MM-DD" (empty: the latest rate)'
_INPUTS_DOC = "two columns: cell-sizing input names (in_...) and their values"
_FACT = Domain(lower=0, note="(0 or empty: not given)")
_PERCENT = Domain(lower=0, upper=100, note="(percent)")
_SEED = Domain(lower=0, upper=2**53, integer=True)
_SAMPLE = Domain(lower=1, upper=1e10, integer=True, note="(1 = the first sample)")


def _as_of(text: str) -> str | None:
    return prices.iso_date(text, "as_of") if text else None


def _given(name: str, value: Any) -> Any:
    """A fact that 0 means "not given": None when every element is 0."""
    arr = np.asarray(value, dtype=float)
    if not np.any(arr):
        return None
    if not np.all(arr):  # some given, some not: the caller retries element by element
        raise InputError(name, 0.0, detail="is 0 (not given) in some elements only")
    return arr


@sheet_function(
    "CW_PRICE",
    "A price in another unit and currency (cost basis, default USD/kg); across bases through "
    "the fact that links them: areal mass (per m^2), density (per L), piece mass (per each).",
    [
        Num("value", "the price as quoted, in unit", NONNEGATIVE),
        Text("unit", 'quoted unit with currency, e.g. "EUR/t", "CNY/m^2", "USD/L", "USD/each"'),
        Text("to_unit", 'wanted unit, e.g. "USD/kg", "EUR/m^2"', default="USD/kg"),
        Num("areal_mass_g_m2", "mass per m^2 of the material, g/m^2", _FACT, default=0.0),
        Num("density_g_cm3", "density of the material, g/cm^3", _FACT, default=0.0),
        Num("piece_mass_g", "mass of one piece, g", _FACT, default=0.0),
        Text("as_of", _DATE_DOC, default=""),
    ],
    section=Section.COST,
    returns="the wanted unit",
    example=(2200, "EUR/t", "USD/kg"),
)
def CW_PRICE(value: Any, unit: str, to_unit: str, areal_mass_g_m2: Any, density_g_cm3: Any,
             piece_mass_g: Any, as_of: str) -> Any:
    prices.price_unit(to_unit, None, "to_unit")  # refused under its own name
    return prices.convert_price(
        value, unit, to_unit, as_of=_as_of(as_of),
        areal_mass_g_m2=_given("areal_mass_g_m2", areal_mass_g_m2),
        density_g_cm3=_given("density_g_cm3", density_g_cm3),
        piece_mass_g=_given("piece_mass_g", piece_mass_g), argument="value",
    )


@sheet_function(
    "CW_FX",
    "Exchange rate: units of to_currency for one unit of from_currency, from the dated table "
    "data/exchange_rates.csv (invented demo rates), the rate dated on or before as_of.",
    [
        Text("from_currency", 'ISO code, e.g. "EUR", "CNY", "JPY"'),
        Text("to_currency", 'ISO code, e.g. "USD"', default="USD"),
        Text("as_of", _DATE_DOC, default=""),
    ],
    section=Section.COST,
    returns="to_currency per from_currency",
    example=("EUR", "USD", "2025-06-30"),
)
def CW_FX(from_currency: str, to_currency: str, as_of: str) -> float:
    src = prices.currency_code(from_currency, "from_currency")
    dst = prices.currency_code(to_currency, "to_currency")
    table = prices.exchange_rates()
    when = _as_of(as_of)
    return table.rate(src, when, "from_currency")[0] / table.rate(dst, when, "to_currency")[0]


@sheet_function(
    "CW_PRICE_BOOKS",
    "Names of the shipped price books (data/price_books, invented demo data), spilled down.",
    [],
    section=Section.COST,
    kind=Kind.COLUMN,
    returns="list of text",
    example=(),
)
def CW_PRICE_BOOKS() -> list[str]:
    return price_books.price_book_names()


def _book(name: str) -> price_books.PriceBook:
    return price_books.price_book(name, "book")


_FIELD_LIST = ", ".join(price_books.FIELDS)


@sheet_function(
    "CW_PRICE_BOOK",
    "One fact of a price book's item (a material, or index:NAME): price (USD per kg, m^2, L "
    "or piece; USD/t for an index), unit, base, basis, kind, coefficient, payable, date, "
    "source, region, quoted, quoted_unit.",
    [
        Text("book", _BOOK_DOC),
        Text("item", 'material name or alias, or "index:NAME", e.g. "NMC811", "index:nickel"'),
        Text("field", f"one of {_FIELD_LIST}"[:200], default="price"),
        Text("index_name", 'index for coefficient and payable, e.g. "nickel"', default=""),
    ],
    section=Section.COST,
    kind=Kind.VALUE,
    returns="number or text",
    example=("demo-2025-06", "NMC811", "price"),
)
def CW_PRICE_BOOK(book: str, item: str, field: str, index_name: str) -> str | float:
    return price_books.book_field(_book(book), item, field, index_name or None)


@sheet_function(
    "CW_PRICE_BOOK_INFO",
    "A fact of a whole price book: label (name and date, as cost outputs show it), name, date "
    "(its latest row), earliest, regions, rows.",
    [
        Text("book", _BOOK_DOC),
        Text("field", f"one of {', '.join(price_books.BOOK_FIELDS)}", default="label"),
    ],
    section=Section.COST,
    kind=Kind.VALUE,
    returns="text or number",
    example=("demo-2025-06",),
)
def CW_PRICE_BOOK_INFO(book: str, field: str) -> str | float:
    return price_books.book_info(_book(book), field)


@sheet_function(
    "CW_INDEX_COEFFICIENT",
    "Tonnes of an index's product paid per tonne of material: metal mass fraction / its "
    "fraction in the product x payable (price = fee + sum of coefficient x index / 1000).",
    [
        Text("material", 'catalogue material or formula, e.g. "NMC811", "LiFePO4"'),
        Text("index_name", 'e.g. "nickel", "lithium hydroxide", "lithium carbonate"'),
        Num("payable", "share of the index paid, fraction", metal_index.PAYABLE, default=1.0),
    ],
    section=Section.COST,
    returns="t per t",
    example=("NMC811", "nickel", 1),
)
def CW_INDEX_COEFFICIENT(material: str, index_name: str, payable: Any) -> Any:
    return metal_index.index_coefficient(material, index_name, payable)


@sheet_function(
    "CW_INDEXED_PRICE",
    "A metal-indexed price, USD/kg: conversion fee + sum over the material's metals of "
    "coefficient x index price (USD/t) / 1000; every metal needs a payable.",
    [
        Text("material", 'catalogue material or formula, e.g. "NMC811"'),
        Table("index_prices_USD_t", "two columns: index names and their prices, USD/t"),
        Table("payables", "two columns: index names and payable fractions (0 to 2)"),
        Num("conversion_fee_USD_kg", "fee on top of the metals, USD/kg", NONNEGATIVE,
            default=0.0),
    ],
    section=Section.COST,
    returns="USD/kg",
    example=("LFP", [["lithium carbonate", 9500]], [["lithium carbonate", 1], ["iron", 0]], 3),
)
def CW_INDEXED_PRICE(material: str, index_prices_USD_t: Mapping[str, Any],
                     payables: Mapping[str, Any], conversion_fee_USD_kg: Any) -> Any:
    return metal_index.indexed_price(material, index_prices_USD_t, payables,
                                     conversion_fee_USD_kg).price_USD_kg


@sheet_function(
    "CW_INDEX_FOR_PRICE",
    "The value of one index (USD/t) at which the indexed price equals a fixed price (USD/kg), "
    "the other indexes as given: where a fixed quote and an indexed contract break even.",
    [
        Text("material", 'catalogue material or formula, e.g. "LFP"'),
        Num("fixed_price_USD_kg", "the fixed price, USD/kg", NONNEGATIVE),
        Text("solve_for", 'the index to solve for, e.g. "lithium carbonate"'),
        Table("index_prices_USD_t", "two columns: the other indexes and their prices, USD/t"),
        Table("payables", "two columns: index names and payable fractions (0 to 2)"),
        Num("conversion_fee_USD_kg", "fee on top of the metals, USD/kg", NONNEGATIVE,
            default=0.0),
    ],
    section=Section.COST,
    returns="USD/t",
    example=("LFP", 9, "lithium carbonate", [["iron", 0]],
             [["lithium carbonate", 1], ["iron", 0]], 3),
)
def CW_INDEX_FOR_PRICE(material: str, fixed_price_USD_kg: Any, solve_for: str,
                       index_prices_USD_t: Mapping[str, Any], payables: Mapping[str, Any],
                       conversion_fee_USD_kg: Any) -> Any:
    return metal_index.index_for_price(material, fixed_price_USD_kg, solve_for,
                                       index_prices_USD_t, payables, conversion_fee_USD_kg)


# --------------------------------------------------------------------------- procurement

_NMP = {"NMP used": "nmp_used_t", "NMP recovered": "nmp_recovered_t",
        "NMP bought": "nmp_bought_t"}
#: The items CW_PRECURSORS knows: salts, the cathode active material, NMP, metals.
PRECURSOR_ITEMS: tuple[str, ...] = (
    *procurement.LITHIUM_SALTS.values(), *procurement.METAL_SALTS.values(), "FePO4",
    "cathode active", "NMP used", "NMP recovered", "NMP bought",
)


def _salt_key(text: str) -> str:
    return text.replace(" ", "").replace("*", "·").replace("•", "·").casefold()


@sheet_function(
    "CW_PRECURSORS",
    "Tonnes of a precursor for the order in the cell-sizing inputs: a lithium or metal salt "
    "(LiOH·H2O, Li2CO3, NiSO4·6H2O, CoSO4·7H2O, MnSO4·H2O, FePO4), cathode active, NMP "
    "used, recovered or bought.",
    [
        Text("item", 'e.g. "LiOH*H2O", "NiSO4*6H2O", "NMP bought", "cathode active"'),
        Table("inputs", _INPUTS_DOC + " (the order: in_order_basis, in_order_size)"),
        Text("lithium_salt", '"hydroxide" (LiOH·H2O) or "carbonate" (Li2CO3)',
             default="hydroxide"),
        Num("lithium_excess", "extra lithium in the synthesis, fraction", UNIT_INTERVAL_HALF_OPEN,
            default=0.0),
        Num("synthesis_yield", "cathode synthesis yield, fraction", FRACTION_OPEN, default=1.0),
        Num("slurry_solids_fraction", "solids share of the NMP slurries, fraction",
            FRACTION_OPEN, default=0.65),
        Num("nmp_recovery", "share of the NMP the dryers recover, fraction", FRACTION,
            default=0.97),
    ],
    section=Section.PROCUREMENT,
    returns="t",
    example=("NMP bought", [["in_order_basis", "MWh"], ["in_order_size", 100]]),
)
def CW_PRECURSORS(item: str, inputs: Any, lithium_salt: str, lithium_excess: Any,
                  synthesis_yield: Any, slurry_solids_fraction: Any, nmp_recovery: Any) -> Any:
    if not isinstance(inputs, Mapping):
        raise InputError("inputs", inputs, "a two-column range of input names and values")
    keys = {_salt_key(k): k for k in PRECURSOR_ITEMS}
    key = _salt_key(item)
    if key not in keys:
        raise NotFoundError("item", item, "precursor item", closest(item, PRECURSOR_ITEMS))
    design = design_cell(spec_from_values(inputs))
    p = procurement.order_precursors(
        design, **order_from_values(inputs), lithium_salt=lithium_salt,
        lithium_excess=lithium_excess, synthesis_yield=synthesis_yield,
        slurry_solids_fraction=slurry_solids_fraction, nmp_recovery=nmp_recovery,
    )
    name = keys[key]
    if name in _NMP:
        return getattr(p, _NMP[name])
    if name == "cathode active":
        return p.cathode_active_t
    if name in p.salts_t:
        return p.salts_t[name]
    chosen = procurement.LITHIUM_SALTS.get(lithium_salt.strip().lower())
    if name in procurement.LITHIUM_SALTS.values() and name != chosen:
        raise InputError("item", item, detail=f"{name} is not the lithium salt chosen "
                         f"(lithium_salt {lithium_salt!r} buys {chosen})")
    return 0.0 * p.cathode_active_t  # a salt of a metal this cathode does not hold


#: The columns CW_CELL_BOM can spill, and what they hold.
BOM_FIELDS: Mapping[str, str] = {
    "component": "component name, e.g. cathode active (NMC811)",
    "material": "the catalogue's material name",
    "category": "the material's role or category (cathode, foil, separator, ...)",
    "electrode": "1 for electrode parts (coatings and foils), 0 for the others",
    "kg": "net kg per cell",
    "m2": "net m^2 per cell (sheets; empty elsewhere)",
    "L": "net litres per cell (electrolytes; empty elsewhere)",
    "pieces": "pieces per cell (tabs, housings; empty elsewhere)",
}
#: Rows CW_CELL_BOM always spills (unused rows are empty text and 0).
BOM_ROWS = len(COMPONENTS)


@lru_cache(maxsize=64)
def _bom(items: tuple[tuple[str, Any], ...]) -> tuple[tuple[Any, ...], ...]:
    lines = procurement.bill_lines(design_cell(spec_from_values(dict(items))))
    if len(lines) > BOM_ROWS:  # pragma: no cover - COMPONENTS lists every component
        raise InputError("inputs", None, detail=f"the design has {len(lines)} bill lines; the "
                         f"sheet has {BOM_ROWS} rows")
    rows = []
    for b in lines:
        def number(x: Any) -> Any:
            return "" if x is None else float(x)

        rows.append((b.component, b.material, b.category, 1.0 if b.electrode else 0.0,
                     float(b.kg), number(b.m2), number(b.L), number(b.pieces)))
    return tuple(rows)


@sheet_function(
    "CW_CELL_BOM",
    f"One column of the sized cell's bill of materials (net, per cell), spilled down "
    f"{BOM_ROWS} rows in the core's order (unused rows empty): component, material, "
    "category, electrode, kg, m2, L, pieces.",
    [
        Table("inputs", _INPUTS_DOC),
        Text("field", f"one of {', '.join(BOM_FIELDS)}"),
    ],
    section=Section.SIZING,
    kind=Kind.COLUMN,
    returns="list of text or numbers",
    example=([["in_cathode", "LFP"], ["in_anode", "graphite"]], "kg"),
)
def CW_CELL_BOM(inputs: Any, field: str) -> list[Any]:
    if not isinstance(inputs, Mapping):
        raise InputError("inputs", inputs, "a two-column range of input names and values")
    column = list(BOM_FIELDS).index(lookup(field, BOM_FIELDS, "bill-of-materials field",
                                           "field"))
    rows = _bom(tuple(inputs.items()))
    blank: Any = "" if column < 3 else 0.0
    return [r[column] for r in rows] + [blank] * (BOM_ROWS - len(rows))


# --------------------------------------------------------------------------- ranges


def _ordered(low: Any, likely: Any, high: Any) -> None:
    bad = ~((np.asarray(low) <= likely) & (np.asarray(likely) <= high))
    if np.any(bad):
        a, c, b = (float(np.ravel(np.broadcast_to(x, bad.shape))[int(np.argmax(bad))])
                   for x in (low, likely, high))
        raise DomainError("likely", c, detail=f"low <= likely <= high is needed (got {a:g}, "
                          f"{c:g}, {b:g})")


def _distribution(text: str) -> str:
    return lookup(text, risk.DISTRIBUTIONS, "distribution", "distribution")


@sheet_function(
    "CW_RANGE_PERCENTILE",
    "The p-th percentile of a range given as low, likely, high: closed form for a triangular "
    "range (mode at likely) or a uniform one; PERT has none (use CW_RANGE_SAMPLE).",
    [
        Num("low", "lowest value"),
        Num("likely", "most likely value (the mode)"),
        Num("high", "highest value"),
        Num("percent", "which percentile, 0 to 100 (10 for P10)", _PERCENT),
        Text("distribution", '"triangular" or "uniform"', default="triangular"),
    ],
    section=Section.COST,
    returns="the unit of the range",
    example=(80, 90, 120, 90),
)
def CW_RANGE_PERCENTILE(low: Any, likely: Any, high: Any, percent: Any, distribution: str
                        ) -> Any:
    dist = _distribution(distribution)
    if dist == "pert":
        raise InputError("distribution", distribution,
                         detail="PERT has no closed-form percentile; sample it with "
                         "CW_RANGE_SAMPLE and take PERCENTILE of the samples")
    _ordered(low, likely, high)
    return risk.quantile(low, likely, high, np.asarray(percent, dtype=float) / 100.0, dist)


@sheet_function(
    "CW_RANGE_SAMPLE",
    "Sample number n of a seeded Monte Carlo run of a range (low, likely, high): exactly the "
    "value the core's run with this seed draws for the input named input_name.",
    [
        Num("low", "lowest value"),
        Num("likely", "most likely value (the mode; ignored by uniform)"),
        Num("high", "highest value"),
        Num("seed", "seed of the run, a whole number >= 0", _SEED),
        Num("sample", "which sample, 1 = the first (a column 1..N gives N samples)", _SAMPLE),
        Text("input_name", 'the model input it stands for, e.g. "index:nickel" (draws depend on '
             "it)", default="x"),
        Text("distribution", '"triangular", "pert" or "uniform"', default="triangular"),
    ],
    section=Section.COST,
    returns="the unit of the range",
    example=(80, 90, 120, 2025, 1, "index:nickel"),
)
def CW_RANGE_SAMPLE(low: Any, likely: Any, high: Any, seed: Any, sample: Any, input_name: str,
                    distribution: str) -> Any:
    dist = _distribution(distribution)
    _ordered(low, likely, high)
    arrays = np.broadcast_arrays(*(np.asarray(x, dtype=float)
                                   for x in (low, likely, high, seed, sample)))
    shape = arrays[0].shape
    flat = [a.ravel() for a in arrays]
    out = np.empty(flat[0].shape)
    keys = np.column_stack(flat[:4])
    uniq, which = np.unique(keys, axis=0, return_inverse=True)
    which = which.ravel()
    for g, (a, c, b, s) in enumerate(uniq.tolist()):
        take = which == g
        got = risk.draw({input_name: (a, c, b, dist)}, int(s), flat[4][take] - 1.0)
        out[take] = got[input_name]
    return out.reshape(shape) if shape else float(out[0])
