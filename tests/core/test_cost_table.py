"""The cost workbook's input table and the core's route through it
(udfs.core.cost_table): one declaration per input, the price book, index values,
the cathode contract and the plant reach the cost model as the workbook reads them.

Prices and terms are the shipped demo books (invented demo data).
"""

from __future__ import annotations

import pytest

from udfs.core.cell_cost import cell_cost
from udfs.core.conversion_cost import PLANT
from udfs.core.cost_table import (
    CONTRACT_INDEXES,
    COST,
    DESIGN_INPUTS,
    RISK_INPUTS,
    contract_price,
    cost_model_from_values,
    design_and_model,
)
from udfs.core.errors import CellwrightError, InputError, NotFoundError
from udfs.core.metal_index import indexed_price
from udfs.core.price_books import price_book
from udfs.core.sizing import design_cell
from udfs.core.sizing_table import CELL_SIZING
from udfs.core.sizing_values import spec_from_values


def test_every_input_is_declared_once() -> None:
    for name in DESIGN_INPUTS:
        assert COST.get(name) is CELL_SIZING.get(name)  # the same declaration, not a copy
    for inp in PLANT:
        assert COST.get(inp.name) is inp
    assert not any(n.startswith("in_price_") and n != "in_price_book" for n in COST.names)
    assert "in_scrap" not in COST.names and "in_yield" not in COST.names  # the plant's yields
    for name, source in RISK_INPUTS:
        assert source in COST.names, name
    assert COST.reason("in_price_book", "demo-1999") is not None
    assert COST.check("in_contract_material", "ncm811") == "NMC811"  # an alias of the catalogue


def test_defaults_give_the_core_cost_of_the_default_cell() -> None:
    model = cost_model_from_values({})
    d = design_cell(spec_from_values({}))
    want = cell_cost(d, book="demo-2025-06")
    got = model(model.base())
    assert float(got["full_USD_kWh"]) == pytest.approx(float(want.full_USD_kWh), rel=1e-14)
    assert model.book_label == "demo-2025-06 (2025-06-30)"


def test_index_values_where_given_and_used() -> None:
    values = {"in_index_nickel": 20000.0, "in_index_zinc": 1.0}  # no zinc in this cell
    model = cost_model_from_values(values)
    assert float(model.base()["index:nickel"]) == 20000.0
    assert "index:zinc" not in model.base()
    one = model(model.base())["full_USD_kWh"]
    base = cost_model_from_values({})
    # the cost moves by the sensitivity x the change (the price is linear in the index)
    s = float(base.sensitivities()["nickel"])  # USD/kWh per 1,000 USD/t
    assert float(one) - float(base(base.base())["full_USD_kWh"]) == pytest.approx(
        s * (20000.0 - 15500.0) / 1000.0, rel=1e-10)


def test_the_contract_replaces_the_books_terms() -> None:
    book = price_book("demo-2025-06")
    values = {"in_contract_material": "NMC811", "in_contract_fee": 12.0,
              "in_payable_cobalt": 0.9}
    p = contract_price(book, values)
    assert p is not None and p.USD_per_base == 12.0
    terms = dict(p.coefficients)
    indexes = book.index_prices_USD_t()
    # the same terms through the metal-index route: book payables but cobalt at 0.9
    pays = {**book.payables("NMC811"), "cobalt": 0.9}
    want = indexed_price("NMC811", indexes, {k: v for k, v in pays.items()}, 12.0)
    got = p.USD_per_base + sum(c * indexes[ix] / 1000 for ix, c in terms.items() if c)
    assert got == pytest.approx(float(want.price_USD_kg), rel=1e-14)
    assert set(CONTRACT_INDEXES) <= set(terms)
    model = cost_model_from_values(values)
    assert float(model.base()["fee:NMC811"]) == 12.0
    # lithium paid against both lithium indexes is refused
    with pytest.raises(InputError, match="both lithium indexes"):
        contract_price(book, {**values, "in_payable_lithium_carbonate": 1.0})
    # a material with a fixed price in the book: the contract does not apply
    assert contract_price(price_book("demo-2024-12"), values) is None


def test_a_workbook_book_or_a_given_book() -> None:
    old = cost_model_from_values({"in_price_book": "demo-2024-12"})
    assert old.book_label == "demo-2024-12 (2024-12-31)"
    assert not any(k.startswith("index:") for k in old.base())  # that book has fixed prices
    again = cost_model_from_values({"in_price_book": "demo-2024-12"}, price_book("demo-2025-06"))
    assert again.book_label == "demo-2025-06 (2025-06-30)"


def test_vectorised_design_changes() -> None:
    cell, model = design_and_model({}, None, {"np_ratio": [1.05, 1.2]})
    out = model(model.base())["full_USD_kWh"]
    assert out.shape == (2,) and cell.energy_Wh.shape == (2,)
    one = cost_model_from_values({"in_np_ratio": 1.2})
    assert float(out[1]) == pytest.approx(float(one(one.base())["full_USD_kWh"]), rel=1e-13)


@pytest.mark.parametrize(
    ("values", "error", "fragment"),
    [
        ({"in_nope": 1}, NotFoundError, "unknown input of the cost or cell-sizing model"),
        ({"in_index_nickel": -1}, CellwrightError, "in_index_nickel (Index: nickel) must be >= 0"),
        ({"in_payable_nickel": 3}, CellwrightError, "must be >= 0 and <= 2"),
        ({"in_electrode_yield": 0}, CellwrightError, "in_electrode_yield"),
        ({"in_price_book": "demo-1999"}, CellwrightError, "in_price_book"),
    ],
)
def test_bad_values_are_refused_naming_the_input(values: dict[str, object],
                                                  error: type[Exception], fragment: str) -> None:
    with pytest.raises(error) as info:
        cost_model_from_values(values)
    assert fragment in str(info.value)
