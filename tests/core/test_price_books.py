"""Price books: loading, validation, selection, conversion (udfs.core.price_books)."""

from __future__ import annotations

import pytest

from udfs.core import catalogue
from udfs.core.errors import DataError, InputError, NotFoundError
from udfs.core.metal_index import index_coefficients
from udfs.core.price_books import (
    book_field,
    book_info,
    price_book,
    price_book_names,
    read_price_book,
)
from udfs.core.prices import exchange_rates

HEADER = "kind,item,index,value,unit,currency,date,region,source,note\n"


def _book(rows: str):  # type: ignore[no-untyped-def]
    return read_price_book(HEADER + rows, "test-book")


def test_shipped_books_load_and_price_every_demo_material() -> None:
    names = price_book_names()
    assert {"demo-2025-06", "demo-2024-12"} <= set(names)
    demo = [m for m in catalogue.material_names() if m in _demo_priced()]
    for name in names:
        book = price_book(name)
        assert book.label == f"{book.name} ({book.date})"
        assert all("demo" in r.source for r in book.rows)  # demo data, labelled
        for m in demo:
            assert book.material_price(m).USD_per_base > 0, (name, m)
    assert price_book("DEMO-2025-06").date == "2025-06-30"  # selected by name, any case
    with pytest.raises(NotFoundError) as info:
        price_book("demo-2025-6")
    assert "demo-2025-06" in info.value.suggestions


def _demo_priced() -> set[str]:
    out = set()
    for m in catalogue.material_names():
        try:
            catalogue.price(m)
        except NotFoundError:
            continue
        out.add(m)
    return out


def test_rows_convert_at_the_rate_of_their_date() -> None:
    book = price_book("demo-2025-06")  # demo data
    rates = exchange_rates()
    sep = book.material_price("PE separator")  # 0.48 EUR/m^2 dated 2025-06-30
    assert sep.basis == "area"
    assert sep.USD_per_base == pytest.approx(0.48 * rates.rate("EUR", "2025-06-30")[0],
                                             rel=1e-15)
    graphite = book.material_price("graphite")  # 42,000 CNY/t
    assert graphite.USD_per_base == pytest.approx(42.0 * 0.1395, rel=1e-13)
    idx = book.index_prices_USD_t()
    # cobalt quoted at 15 USD/lb; 1 lb = 0.45359237 kg exactly (common practice)
    assert idx["cobalt"] == pytest.approx(15.0 / 0.45359237 * 1000.0, rel=1e-13)
    tab = book.material_price("copper tab")
    assert (tab.basis, tab.USD_per_base) == ("count", 0.035)
    lfp = book.material_price("LFP")  # alias accepted
    assert lfp.indexed and dict(lfp.coefficients) == pytest.approx(
        {k: float(v) for k, v in index_coefficients("LiFePO4", book.payables("LFP")).items()})


def test_a_book_from_text() -> None:
    book = _book(
        "index,nickel,,16000,t,USD,2025-03-01,EU,demo data (invented),\n"
        "fee,nickel tab,,4.0,kg,USD,2025-03-01,EU,demo data (invented),\n"
        "payable,nickel tab,nickel,1.0,,,2025-03-01,,demo data (invented),\n"
        "material,graphite,,7,kg,EUR,2025-01-10,EU,demo data (invented),\n"
    )
    assert (book.date, book.earliest, book.regions) == ("2025-03-01", "2025-01-10", ("EU",))
    assert book.material_price("graphite").USD_per_base == pytest.approx(7 * 1.04, rel=1e-15)
    tab = book.material_price("nickel tab")
    assert tab.USD_per_base == 4.0 and dict(tab.coefficients) == {"nickel": 1.0}


@pytest.mark.parametrize(
    ("rows", "fragment"),
    [
        ("material,graphite,,7,kg,USD,2025-01-10,EU,,\n", "has no source"),
        ("material,graphite,,7,kg,USD,10/01/2025,EU,x,\n", "YYYY-MM-DD"),
        ("material,grafite,,7,kg,USD,2025-01-10,EU,x,\n", "unknown material"),
        ("material,graphite,,7,ton,USD,2025-01-10,EU,x,\n", "'ton' means"),
        ("material,graphite,,7,kg,EUR,2020-01-10,EU,x,\n", "rate dated on or before"),
        ("material,graphite,,-7,kg,USD,2025-01-10,EU,x,\n", "a price >= 0"),
        ("material,graphite,,7,kg,USD,2025-01-10,,x,\n", "has no region"),
        ("price,graphite,,7,kg,USD,2025-01-10,EU,x,\n", "a kind, one of"),
        ("index,unobtainium,,7,t,USD,2025-01-10,EU,x,\n", "unknown price index"),
        ("index,nickel,,7,m^2,USD,2025-01-10,EU,x,\n", "quoted per mass"),
        ("material,graphite,,7,kg,USD,2025-01-10,EU,x,\n"
         "material,Graphite,,8,kg,USD,2025-01-10,EU,x,\n", "priced twice"),
        ("payable,LFP,LCE,1,,,2025-01-10,,x,\n", "without a fee row"),
        ("fee,LFP,,2,kg,USD,2025-01-10,EU,x,\npayable,LFP,LCE,1,,,2025-01-10,,x,\n"
         "payable,LFP,iron,0,,,2025-01-10,,x,\n", "which has no index row"),
        ("fee,LFP,,2,kg,USD,2025-01-10,EU,x,\npayable,LFP,LCE,1,,,2025-01-10,,x,\n"
         "index,LCE,,9000,t,USD,2025-01-10,EU,x,\n", "contains Fe"),
        ("fee,LFP,,2,kg,USD,2025-01-10,EU,x,\npayable,LFP,LCE,1,t,,2025-01-10,,x,\n",
         "no unit, no currency"),
        ("", "has no rows"),
    ],
)
def test_bad_rows_stop_the_load_naming_the_row(rows: str, fragment: str) -> None:
    with pytest.raises(DataError) as info:
        _book(rows)
    assert fragment in str(info.value)
    assert "test-book" in str(info.value)


def test_missing_columns_and_unpriced_material() -> None:
    with pytest.raises(DataError, match="missing columns"):
        read_price_book("item,value\nx,1\n", "short")
    book = _book("material,graphite,,7,kg,USD,2025-01-10,EU,x,\n")
    with pytest.raises(NotFoundError) as info:
        book.material_price("silicon")
    assert "test-book" in str(info.value)


def test_the_fields_of_an_item_and_of_a_book() -> None:
    book = price_book("demo-2025-06")  # data/price_books/demo-2025-06.csv (demo data)
    assert book_info(book) == "demo-2025-06 (2025-06-30)"
    assert book_info(book, "earliest") == "2025-06-30" and book_info(book, "rows") == float(
        len(book.rows))
    # an index quoted per lb: 15 USD/lb / 0.45359237 kg/lb x 1000 (common practice, computed)
    assert book_field(book, "index:cobalt") == pytest.approx(15 / 0.45359237 * 1000, rel=1e-15)
    assert book_field(book, "index:cobalt", "quoted") == 15.0
    assert book_field(book, "index:cobalt", "quoted_unit") == "USD/lb"
    assert book_field(book, "index:cobalt", "unit") == "USD/t"
    # a fixed price in another currency and per area: 0.48 EUR/m2 at 1.17 USD/EUR (computed)
    assert book_field(book, "PE separator") == pytest.approx(0.48 * 1.17, rel=1e-15)
    assert book_field(book, "PE separator", "basis") == "area"
    assert book_field(book, "PE separator", "quoted_unit") == "EUR/m^2"
    assert book_field(book, "pe separator", "region") == "Europe (demo)"
    # an indexed price: the fee plus its metals at the book's own indexes
    indexes = book.index_prices_USD_t()
    p = book.material_price("NMC811")
    want = p.USD_per_base + sum(c * indexes[ix] / 1000 for ix, c in p.coefficients)
    assert book_field(book, "NMC811") == pytest.approx(want, rel=1e-15)
    assert book_field(book, "NMC811", "payable", "manganese") == 0.0
    with pytest.raises(NotFoundError, match="index of NMC811's contract"):
        book_field(book, "NMC811", "payable", "copper")
    with pytest.raises(NotFoundError, match="index priced in the price book"):
        book_field(book, "index:iron")
    with pytest.raises(InputError, match="applies to materials"):
        book_field(book, "index:nickel", "coefficient", "nickel")
