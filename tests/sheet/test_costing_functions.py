"""The cost layer's spreadsheet functions (udfs/sheet/costing.py) against
conversions of the trade, hand calculations and the core they call.

Prices, rates and books are the shipped demo data (invented, data/price_books and
data/exchange_rates.csv); a check value "computed" was worked out by hand from
them and the named source.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from udfs.core.cost_table import COST
from udfs.core.procurement import bill_lines, order_precursors
from udfs.core.risk import monte_carlo
from udfs.core.sizing import design_cell
from udfs.core.sizing_values import order_from_values, spec_from_values
from udfs.sheet.costing import BOM_ROWS
from udfs.sheet.error_values import SheetError
from udfs.sheet.registry import FUNCTIONS

F = FUNCTIONS


def close(x: object, expected: float, rel: float = 1e-12) -> bool:
    return isinstance(x, float) and math.isclose(x, expected, rel_tol=rel)


def test_price_units_currencies_and_bases() -> None:
    # 1 lb = 0.45359237 kg exactly (international pound, common practice)
    assert close(F["CW_PRICE"](1, "USD/lb"), 1 / 0.45359237)
    # EUR at 1.17 USD on 2025-06-30 (data/exchange_rates.csv, demo data): 2200 EUR/t (computed)
    assert close(F["CW_PRICE"](2200, "EUR/t", "USD/kg", 0, 0, 0, "2025-06-30"), 2.2 * 1.17)
    assert close(F["CW_PRICE"](2200, "EUR/t", "USD/kg", 0, 0, 0, "2025-01-15"), 2.2 * 1.04)
    # per m2 -> per kg through the areal mass: 0.55 USD/m2 at 9.12 g/m2 (computed)
    assert close(F["CW_PRICE"](0.55, "USD/m^2", "USD/kg", 9.12), 0.55 * 1000 / 9.12)
    # per L -> per kg through the density; per piece -> per kg through its mass (computed)
    assert close(F["CW_PRICE"](11.5, "USD/L", "USD/kg", 0, 1.25), 11.5 / 1.25)
    assert close(F["CW_PRICE"](0.02, "USD/each", "USD/kg", 0, 0, 2.0), 10.0)
    assert close(F["CW_PRICE"](10, "USD/kg", "USD/t"), 10000.0)
    # a range of facts with a zero: that element is refused, the others are numbers
    out = F["CW_PRICE"]([[0.55], [0.55]], "USD/m^2", "USD/kg", [[9.12], [0]])
    assert close(out[0][0], 0.55 * 1000 / 9.12)
    assert isinstance(out[1][0], SheetError) and "areal_mass_g_m2" in str(out[1][0])
    # to_unit is named when it is wrong
    assert str(F["CW_PRICE"](1, "USD/kg", "USD/ton")).startswith("#VALUE! to_unit: ")


def test_exchange_rates() -> None:
    # data/exchange_rates.csv (demo data): EUR 1.17, CNY 0.1395 USD on 2025-06-30
    assert F["CW_FX"]("EUR") == 1.17
    assert close(F["CW_FX"]("EUR", "CNY", "2025-06-30"), 1.17 / 0.1395)
    assert F["CW_FX"]("usd", "USD") == 1.0
    assert F["CW_FX"]([["EUR"], ["GBP"]], "USD", "2024-12-31") == [[1.04], [1.25]]


def test_price_books_and_their_items() -> None:
    assert F["CW_PRICE_BOOKS"]() == [["demo-2024-12"], ["demo-2025-06"]]
    book = "demo-2025-06"  # data/price_books/demo-2025-06.csv (demo data)
    assert F["CW_PRICE_BOOK_INFO"](book) == "demo-2025-06 (2025-06-30)"
    assert F["CW_PRICE_BOOK_INFO"](book, "date") == "2025-06-30"
    assert F["CW_PRICE_BOOK"](book, "index:nickel") == 15500.0
    # cobalt quoted at 15.0 USD/lb: 15 / 0.45359237 x 1000 USD/t (computed)
    assert close(F["CW_PRICE_BOOK"](book, "index:Co"), 15 / 0.45359237 * 1000)
    assert F["CW_PRICE_BOOK"](book, "index:cobalt", "quoted_unit") == "USD/lb"
    # graphite at 42000 CNY/t and 0.1395 USD per CNY (computed)
    assert close(F["CW_PRICE_BOOK"](book, "graphite"), 42.0 * 0.1395)
    assert F["CW_PRICE_BOOK"](book, "graphite", "kind") == "fixed"
    # PE separator 0.48 EUR/m2 at 1.17 (computed), priced per area
    assert close(F["CW_PRICE_BOOK"](book, "PE separator"), 0.48 * 1.17)
    assert F["CW_PRICE_BOOK"](book, "PE separator", "unit") == "USD/m^2"
    assert F["CW_PRICE_BOOK"](book, "copper tab", "basis") == "count"
    # an indexed material: fee + sum of coefficient x index / 1000
    fee = F["CW_PRICE_BOOK"](book, "NMC811", "base")
    assert fee == 9.5 and F["CW_PRICE_BOOK"](book, "NMC811", "kind") == "indexed"
    total = fee
    for ix in ("lithium hydroxide", "nickel", "cobalt", "manganese"):
        c = F["CW_PRICE_BOOK"](book, "NMC811", "coefficient", ix)
        assert close(c, F["CW_INDEX_COEFFICIENT"]("NMC811", ix,
                                                 F["CW_PRICE_BOOK"](book, "NMC811", "payable",
                                                                    ix)))
        total += c * F["CW_PRICE_BOOK"](book, f"index:{ix}") / 1000
    assert close(F["CW_PRICE_BOOK"](book, "NMC811"), total)
    assert F["CW_PRICE_BOOK"](book, "NMC811", "coefficient", "copper") == 0.0
    # the same books, one function call as a grid (text ranges broadcast)
    grid = F["CW_PRICE_BOOK"](book, [["NMC811"], ["copper foil"]], "coefficient",
                              [["nickel", "copper"]])
    assert grid[0][1] == 0.0 and grid[1][1] == 1.0 and grid[1][0] == 0.0


def test_index_coefficients_against_mass_fractions() -> None:
    # a metal index: the metal's mass fraction x payable (IUPAC2021 weights, computed)
    ni = F["CW_MASS_FRACTION"]("LiNi0.8Mn0.1Co0.1O2", "Ni")
    assert close(F["CW_INDEX_COEFFICIENT"]("NMC811", "nickel"), ni)
    assert close(F["CW_INDEX_COEFFICIENT"]("NMC811", "nickel", 0.9), 0.9 * ni)
    # the carbonate index is per t of LCE: w(Li) x M(Li2CO3) / (2 M(Li)) (IUPAC2021, computed)
    li = F["CW_MASS_FRACTION"]("LiFePO4", "Li")
    assert close(F["CW_INDEX_COEFFICIENT"]("LFP", "lithium carbonate"), F["CW_LCE"](li))
    assert F["CW_INDEX_COEFFICIENT"]("LFP", "nickel") == 0.0
    out = F["CW_INDEX_COEFFICIENT"]("NMC811", "nickel", [[0.5, 1.0, 2.5]])
    assert close(out[0][0], 0.5 * ni) and isinstance(out[0][2], SheetError)


def test_indexed_price_and_the_index_that_reproduces_a_fixed_price() -> None:
    pay = [["lithium carbonate", 1], ["iron", 0]]  # the demo book's LFP terms (demo data)
    price = F["CW_INDEXED_PRICE"]("LFP", [["lithium carbonate", 9500]], pay, 3)
    assert close(price, F["CW_PRICE_BOOK"]("demo-2025-06", "LFP"))
    # issue 13's check: the index that reproduces a fixed price gives that price back
    x = F["CW_INDEX_FOR_PRICE"]("LFP", 6.0, "lithium carbonate", [["iron", 0]], pay, 3)
    assert close(F["CW_INDEXED_PRICE"]("LFP", [["lithium carbonate", x]], pay, 3), 6.0)
    assert close(F["CW_INDEX_FOR_PRICE"]("LFP", price, "Li2CO3", [["iron", 0]], pay, 3), 9500.0)
    row = F["CW_INDEX_FOR_PRICE"]("LFP", [[6.0, 1.0]], "lithium carbonate", [["iron", 0]], pay, 3)
    assert close(row[0][0], x) and isinstance(row[0][1], SheetError)


def _order_rows(extra: list[list[object]] | None = None) -> list[list[object]]:
    return [["in_cathode", "NMC811"], ["in_order_basis", "MWh"], ["in_order_size", 100.0],
            *(extra or [])]


def test_precursors_equal_the_core() -> None:
    rows = _order_rows()
    values = dict((str(k), v) for k, v in rows)
    design = design_cell(spec_from_values(values))
    core = order_precursors(design, **order_from_values(values), lithium_salt="carbonate",
                            nmp_recovery=0.9)
    for item, want in (("Li2CO3", core.salts_t["Li2CO3"]),
                       ("NiSO4*6H2O", core.salts_t["NiSO4·6H2O"]),
                       ("CoSO4·7H2O", core.salts_t["CoSO4·7H2O"]),
                       ("NMP bought", core.nmp_bought_t), ("NMP used", core.nmp_used_t),
                       ("cathode active", core.cathode_active_t)):
        got = F["CW_PRECURSORS"](item, rows, "carbonate", 0, 1, 0.65, 0.9)
        assert close(got, float(want)), item
    assert F["CW_PRECURSORS"]("FePO4", rows, "carbonate") == 0.0  # no iron in NMC811
    # NMP bought falls with the recovery: used x (1 - recovery), element by element
    used = F["CW_PRECURSORS"]("NMP used", rows)
    bought = F["CW_PRECURSORS"]("NMP bought", rows, "hydroxide", 0, 1, 0.65, [[0.9, 0.99]])
    assert close(bought[0][0], used * (1 - 0.9)) and close(bought[0][1], used * (1 - 0.99))


def test_cell_bom_spills_the_core_bill_of_materials() -> None:
    rows = [["in_cathode", "LFP"], ["in_anode", "graphite"], ["in_target", 20.0]]
    lines = bill_lines(design_cell(spec_from_values(dict((str(k), v) for k, v in rows))))
    kg = F["CW_CELL_BOM"](rows, "kg")
    assert len(kg) == BOM_ROWS and all(len(r) == 1 for r in kg)
    assert [r[0] for r in kg[: len(lines)]] == [float(b.kg) for b in lines]
    assert all(r[0] == 0.0 for r in kg[len(lines):])
    assert [r[0] for r in F["CW_CELL_BOM"](rows, "component")][: len(lines)] == [
        b.component for b in lines]
    m2 = [r[0] for r in F["CW_CELL_BOM"](rows, "m2")][: len(lines)]
    assert [x == "" for x in m2] == [b.m2 is None for b in lines]
    electrode = [r[0] for r in F["CW_CELL_BOM"](rows, "electrode")][: len(lines)]
    assert electrode == [1.0 if b.electrode else 0.0 for b in lines]


def test_range_percentiles_in_closed_form() -> None:
    # triangular(0, 1, 4): the median is b - sqrt((b-a)(b-c)/2) = 4 - sqrt(6) (computed)
    assert close(F["CW_RANGE_PERCENTILE"](0, 1, 4, 50), 4 - math.sqrt(6))
    # P10 left of the mode: a + sqrt(0.1 (b-a)(c-a)) = sqrt(0.4) (computed)
    assert close(F["CW_RANGE_PERCENTILE"](0, 1, 4, 10), math.sqrt(0.4))
    assert F["CW_RANGE_PERCENTILE"](8, 10, 12, 10, "uniform") == pytest.approx(8.4, rel=1e-15)
    assert F["CW_RANGE_PERCENTILE"](5, 5, 5, 90) == 5.0
    out = F["CW_RANGE_PERCENTILE"](0, 1, 4, [[0, 100, 101]])
    assert out[0][:2] == [0.0, 4.0] and isinstance(out[0][2], SheetError)


class _Echo:
    """A model that returns its inputs, so a run's samples can be read."""

    def base(self) -> dict[str, float]:
        return {"index:nickel": 15500.0, "price:graphite": 6.0}

    def check(self, name: str, value: object) -> object:
        return np.asarray(value, dtype=float)

    def __call__(self, values: dict[str, object]) -> dict[str, object]:
        return {**self.base(), **values}


def test_range_samples_are_the_cores_draws() -> None:
    ranges = {"index:nickel": (12000.0, 15500.0, 20000.0), "price:graphite": (5.0, 6.0, 9.0,
                                                                           "pert")}
    n = 70_000  # two seeded blocks
    mc = monte_carlo(_Echo(), ranges, n, seed=2025, outputs=list(ranges))
    positions = [[1], [2], [65_536], [65_537], [70_000]]
    nickel = F["CW_RANGE_SAMPLE"](12000, 15500, 20000, 2025, positions, "index:nickel")
    assert [r[0] for r in nickel] == [mc.samples["index:nickel"][p[0] - 1] for p in positions]
    graphite = F["CW_RANGE_SAMPLE"](5, 6, 9, 2025, positions, "price:graphite", "pert")
    assert [r[0] for r in graphite] == [mc.samples["price:graphite"][p[0] - 1]
                                        for p in positions]
    # another seed, another input name: other draws
    assert F["CW_RANGE_SAMPLE"](12000, 15500, 20000, 2026, 1, "index:nickel") != nickel[0][0]
    assert F["CW_RANGE_SAMPLE"](12000, 15500, 20000, 2025, 1, "index:cobalt") != nickel[0][0]


def test_cost_table_defaults_are_what_the_functions_accept() -> None:
    # the book a new cost workbook starts with is one CW_PRICE_BOOKS lists
    assert [COST.get("in_price_book").default] in F["CW_PRICE_BOOKS"]()
