"""The inputs of the cost workbook, declared once: :data:`COST`.

One table holds every input of the ``cost`` template: the price book (by
name), the metal indexes (blank: the book's value), the cathode contract
(payables and conversion fee; blank: the book's), the plant
(:data:`udfs.core.conversion_cost.PLANT`, the same declarations), the cell
design (the cell-sizing inputs of :data:`udfs.core.sizing_table.CELL_SIZING`
that describe one cell, the same declarations, prices left out: a price book
prices the cost workbook) and the risk ranges. The template builder writes the
input cells, defined names, data validation and check formulas from it; the
command layer checks ``--set``/``--vary`` values with it.

>>> COST.get("in_price_book").default
'demo-2025-06'
>>> COST.check("in_index_nickel", 16000)
16000.0
>>> COST.reason("in_payable_cobalt", 3)
'in_payable_cobalt (Payable: cobalt) must be >= 0 and <= 2 (a fraction of the index; 1 = 100 %) \
(got 3)'
>>> [name for name, _ in RISK_INPUTS][:2]
['index:lithium carbonate', 'index:lithium hydroxide']
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from .cell_cost import CostModel, PriceInput, cost_model
from .conversion_cost import PLANT
from .errors import InputError, NotFoundError
from .inputs import Input, InputTable
from .metal_index import INDEXES, PAYABLE, index_coefficient
from .names import closest
from .price_books import MaterialPrice, PriceBook, price_book, price_book_names
from .sizing import CellDesign, design_cell
from .sizing_table import CELL_SIZING
from .sizing_values import SPEC_INPUTS, spec_from_values, vary
from .validate import NONNEGATIVE, Domain, Names, Options

__all__ = [
    "CONTRACT_INDEXES",
    "COST",
    "DEFAULT_BOOK",
    "DESIGN_INPUTS",
    "INDEX_KEYS",
    "RISK_INPUTS",
    "contract_price",
    "cost_model_from_values",
    "design_and_model",
    "index_key",
]

#: The book a new cost workbook starts with (the latest shipped demo book).
DEFAULT_BOOK = "demo-2025-06"
#: Indexes a cathode contract may pay against (the metals of cathode materials).
CONTRACT_INDEXES = ("lithium carbonate", "lithium hydroxide", "nickel", "cobalt", "manganese",
                    "aluminium", "iron")

_BOOK = "Price book"
_INDEX = "Metal indexes (USD per t of the index's product; blank: the price book's value)"
_CONTRACT = "Cathode contract (blank: the price book's terms)"
_RISK = "Risk: ranges around the values in use"
_DEMO = "demo data (invented)"


def index_key(name: str) -> str:
    """The part of a defined name that stands for an index.

    >>> index_key("lithium carbonate")
    'lithium_carbonate'
    """
    return name.replace(" ", "_")


#: Every index of :data:`udfs.core.metal_index.INDEXES`, in that order, as defined-name keys.
INDEX_KEYS: tuple[str, ...] = tuple(index_key(ix.name) for ix in INDEXES)

#: The cell-sizing inputs of one cell in the cost workbook: no prices (the price book
#: prices it) and no electrode scrap or cell yield (the plant's yields count there).
DESIGN_INPUTS: tuple[str, ...] = tuple(
    n for n in SPEC_INPUTS if not n.startswith("in_price") and n not in ("in_scrap", "in_yield")
)

#: The uncertain inputs of the Risk sheet: (cost-model input name, its input or index).
RISK_INPUTS: tuple[tuple[str, str], ...] = (
    *((f"index:{name}", f"in_index_{index_key(name)}") for name in (
        "lithium carbonate", "lithium hydroxide", "nickel", "cobalt", "manganese", "aluminium",
        "copper")),
    ("energy_price_USD_per_kWh", "in_energy_price_USD_per_kWh"),
    ("capex_USD_per_GWh", "in_capex_USD_per_GWh"),
    ("labour_cost_USD_per_year", "in_labour_cost_USD_per_year"),
    ("electrode_yield", "in_electrode_yield"),
    ("formation_yield", "in_formation_yield"),
)

#: Low and high of a risk range as a change of the value in use (-0.2 = 20 % lower).
_LOW = Domain(lower=-1, upper=0, note="(a change of the value in use: -0.2 = 20 % lower)")
_HIGH = Domain(lower=0, upper=10, note="(a change of the value in use: 0.3 = 30 % higher)")
_DEMO_RANGES = {  # (low, high) changes: demo data (invented)
    "energy_price_USD_per_kWh": (-0.2, 0.5),
    "capex_USD_per_GWh": (-0.15, 0.25),
    "labour_cost_USD_per_year": (-0.1, 0.2),
    "electrode_yield": (-0.03, 0.01),
    "formation_yield": (-0.03, 0.01),
}


def _risk_inputs() -> list[Input]:
    out = [
        Input("in_risk_seed", "Seed of the random draws", "", "The same seed draws the same "
              "samples (here, in the core and on a cluster).", _RISK,
              Domain(lower=0, integer=True), 2025.0, "template starting value", fmt="0"),
    ]
    for name, _ in RISK_INPUTS:
        key = name.split(":", 1)[-1].replace(" ", "_")
        label = name.split(":", 1)[-1].replace("_", " ")
        low, high = _DEMO_RANGES.get(name, (-0.2, 0.3))
        out.append(Input(f"in_risk_low_{key}", f"Low: {label}", "change",
                         "Lowest value as a change of the value in use.", _RISK, _LOW, low,
                         _DEMO, fmt="0.0%"))
        out.append(Input(f"in_risk_high_{key}", f"High: {label}", "change",
                         "Highest value as a change of the value in use.", _RISK, _HIGH, high,
                         _DEMO, fmt="0.0%"))
        out.append(Input(f"in_risk_dist_{key}", f"Distribution: {label}", "",
                         "triangular (likely = the value in use), pert or uniform.", _RISK,
                         Options(("triangular", "pert", "uniform")), "triangular",
                         "template starting value"))
    return out


def _inputs() -> list[Input]:
    out = [
        Input("in_price_book", "Price book", "name",
              "A dated price list of data/price_books; its name and date show on every cost.",
              _BOOK, Options(tuple(price_book_names())), DEFAULT_BOOK, _DEMO),
    ]
    for ix in INDEXES:
        out.append(Input(f"in_index_{index_key(ix.name)}", f"Index: {ix.name}", "USD/t",
                         f"{ix.note[0].upper()}{ix.note[1:]}; blank: the price book's value.",
                         _INDEX, NONNEGATIVE, None, "blank: the price book (demo data)",
                         optional=True, fmt="#,##0"))
    out.append(Input("in_contract_material", "Material under contract", "name",
                     "The cathode material these terms apply to (in every design that uses "
                     "it).", _CONTRACT, Names(("cathode",)), "NMC811", "template starting value"))
    out.append(Input("in_contract_fee", "Conversion fee", "USD/kg",
                     "Paid on top of the contained metals; blank: the price book's fee.",
                     _CONTRACT, NONNEGATIVE, None, "blank: the price book (demo data)",
                     optional=True, fmt="#,##0.00"))
    for name in CONTRACT_INDEXES:
        out.append(Input(f"in_payable_{index_key(name)}", f"Payable: {name}", "fraction",
                         "Share of the index paid for the contained metal; blank: the price "
                         "book's.", _CONTRACT, PAYABLE, None,
                         "blank: the price book (demo data)", optional=True, fmt="0.0%"))
    out += list(PLANT)
    out += [CELL_SIZING.get(n) for n in DESIGN_INPUTS]
    out += _risk_inputs()
    return out


#: The cost workbook's inputs (see the module docstring).
COST = InputTable("cost", "cost workbook", _inputs())


# --------------------------------------------------------------------------- the core's route


def _given(values: Mapping[str, Any], name: str) -> Any:
    """The checked value of input ``name`` (None when blank or absent)."""
    return COST.check(name, values.get(name, COST.get(name).default))


def contract_price(book: PriceBook, values: Mapping[str, Any]) -> MaterialPrice | None:
    """The cathode contract of the input values as a price, or None when the
    contract's material is not metal-indexed in ``book`` (then the book's own
    price stands, as in the workbook). Blank terms take the book's: its fee, its
    payable (0 where the book has none) for each index of
    :data:`CONTRACT_INDEXES`; coefficients of other indexes stay the book's."""
    material = _given(values, "in_contract_material")
    try:
        base = book.material_price(material)
    except NotFoundError:
        return None
    if not base.indexed:
        return None
    pays = book.payables(material)
    fee = _given(values, "in_contract_fee")
    coeffs = dict(base.coefficients)
    for name in CONTRACT_INDEXES:
        given = _given(values, f"in_payable_{index_key(name)}")
        payable = given if given is not None else pays.get(name, 0.0)
        coeffs[name] = float(index_coefficient(material, name, payable))
    paid = [n for n in ("lithium carbonate", "lithium hydroxide") if coeffs.get(n, 0.0) > 0]
    if len(paid) == 2:
        raise InputError("in_payable_lithium_carbonate", None,
                         detail="lithium is paid against both lithium indexes; give one a "
                         "payable of 0")
    return MaterialPrice(material, "mass", base.USD_per_base if fee is None else float(fee),
                         tuple(coeffs.items()), f"{book.label}: contract terms of the inputs")


def cost_model_from_values(values: Mapping[str, Any], book: PriceBook | None = None
                           ) -> CostModel:
    """The core's cost model of a cost (or cell-sizing) workbook's input
    values: the cell from its design inputs, prices from its price book (or
    ``book``), its index values where given, its contract and its plant. The
    same computation as the cost workbook's sheets, in numpy.

    >>> m = cost_model_from_values({"in_cathode": "LFP", "in_index_lithium_carbonate": 12000})
    >>> m.book_label, float(m.base()["index:lithium carbonate"])
    ('demo-2025-06 (2025-06-30)', 12000.0)
    """
    return design_and_model(values, book)[1]


def design_and_model(values: Mapping[str, Any], book: PriceBook | None = None,
                     changes: Mapping[str, Any] | None = None) -> tuple[CellDesign, CostModel]:
    """The sized cell and its cost model (see :func:`cost_model_from_values`);
    ``changes`` sets numeric CellSpec fields to arrays (a vectorised design:
    every output then has their shape)."""
    if not isinstance(values, Mapping):
        raise InputError("values", values, "a mapping input name -> value")
    known = set(COST.names) | set(CELL_SIZING.names)
    for name in values:
        if name not in known:
            raise NotFoundError("inputs", name, "input of the cost or cell-sizing model",
                                closest(str(name), sorted(known)))
    spec = spec_from_values({k: v for k, v in values.items() if k in CELL_SIZING.names})
    for field, value in (changes or {}).items():
        spec = vary(spec, field, value)
    design = design_cell(spec)
    pb = book if book is not None else price_book(_given(values, "in_price_book"))
    prices: dict[str, PriceInput] = dict(spec.prices or {})  # type: ignore[arg-type]
    contract = contract_price(pb, values)
    if contract is not None:
        prices[contract.material] = contract
    plant = {inp.field: _given(values, inp.name) for inp in PLANT if inp.field is not None}
    used: set[str] = set()
    for material in set(design.component_materials.values()):
        given = prices.get(material)
        try:
            p = given if isinstance(given, MaterialPrice) else pb.material_price(material)
        except NotFoundError:
            continue  # the model says which material has no price
        if given is None or isinstance(given, MaterialPrice):
            used |= {ix for ix, c in p.coefficients if c != 0.0}
    indexes = {}
    for ix in INDEXES:
        value = _given(values, f"in_index_{index_key(ix.name)}")
        if value is not None and ix.name in used:
            indexes[ix.name] = value
    return design, cost_model(design, pb, prices, indexes, plant)
