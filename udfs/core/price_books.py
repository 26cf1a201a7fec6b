"""Price books: dated price lists (CSV), validated on load and selected by name.

One row per price::

    kind,item,index,value,unit,currency,date,region,source,note

``kind`` is ``material`` (a fixed price of a catalogue material, any basis),
``index`` (a metal index, per mass of its product), ``fee`` (the conversion fee
of a metal-indexed material, per mass) or ``payable`` (the payable fraction of
one index in a metal-indexed material: ``index`` names the index, ``value`` the
fraction, no unit or currency). A material is priced either fixed or by
indexes, never both; an indexed material needs a payable row for every metal
it contains (0 where the contract does not pay for it). Money converts to USD
at the exchange rate dated on or before each row's date. The book's ``name``
(the file name without ``.csv``) and ``date`` (its latest row) travel with
every cost computed from it.

The shipped books in ``data/price_books/`` are invented demo data.

>>> book = price_book("demo-2025-06")
>>> book.label
'demo-2025-06 (2025-06-30)'
>>> p = book.material_price("LFP")
>>> p.basis, sorted(dict(p.coefficients))
('mass', ['iron', 'lithium carbonate'])
"""

from __future__ import annotations

import csv
import io
import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from functools import cache
from pathlib import Path

from . import catalogue
from .errors import CellwrightError, DataError, InputError, NotFoundError
from .metal_index import PAYABLE, index, index_coefficients
from .names import lookup
from .prices import BASE_UNITS, PriceUnit, RateTable, exchange_rates, iso_date, price_unit

__all__ = [
    "BOOK_FIELDS",
    "COLUMNS",
    "FIELDS",
    "INDEX_PREFIX",
    "KINDS",
    "MaterialPrice",
    "PriceBook",
    "book_field",
    "book_info",
    "fixed_price",
    "price_book",
    "price_book_names",
    "read_price_book",
]

COLUMNS = ("kind", "item", "index", "value", "unit", "currency", "date", "region", "source", "note")
KINDS = ("material", "index", "fee", "payable")
_MAX_VALUE = 1e9


@dataclass(frozen=True)
class MaterialPrice:
    """A material's price in USD on one basis (``mass``, ``area``, ``volume``
    or ``count``): ``USD_per_base`` per kg, m^2, L or piece, plus, for a
    metal-indexed material (mass basis only), ``coefficients``: t of each
    index's product paid per t of material. Then

        USD/kg = USD_per_base + sum(c * index [USD/t] / 1000).

    Plain tuples (not mappings) so that the price pickles to Dask workers.
    """

    material: str
    basis: str
    USD_per_base: float
    coefficients: tuple[tuple[str, float], ...] = ()
    source: str = ""

    @property
    def indexed(self) -> bool:
        return bool(self.coefficients)


def fixed_price(material: str, value: float, unit: str, currency: str | None = None, *,
                rates: RateTable | None = None, as_of: object = None,
                argument: str = "prices") -> MaterialPrice:
    """A fixed price of a catalogue material, converted to USD on its own basis.

    >>> fixed_price("PE separator", 0.5, "EUR/m^2", rates=None, as_of="2025-06-30").USD_per_base
    0.585
    """
    name = catalogue.material(material, argument).name
    unit_ = price_unit(unit, currency, argument)
    v = _positive_value(value, argument)
    table = exchange_rates() if rates is None else rates
    usd = v * unit_.factor * table.factor(unit_.currency, "USD", as_of, argument)
    return MaterialPrice(name, unit_.basis, usd, (), f"{value:g} {unit_.text}")


def _positive_value(value: object, argument: str) -> float:
    try:
        x = float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        raise InputError(argument, value, "a price >= 0 (a number)") from None
    if not (math.isfinite(x) and 0.0 <= x <= _MAX_VALUE):
        raise InputError(argument, value, f"a price >= 0 and <= {_MAX_VALUE:g}")
    return x


@dataclass(frozen=True)
class _Row:
    kind: str
    item: str
    index: str
    value: float
    unit: PriceUnit | None
    date: str
    region: str
    source: str
    where: str


@dataclass(frozen=True)
class PriceBook:
    """A validated price book. ``date`` is its latest row's date, ``earliest``
    its first; ``rows`` keep every row (for display); the look-ups convert to
    USD with ``rates`` at each row's date."""

    name: str
    date: str
    earliest: str
    regions: tuple[str, ...]
    rows: tuple[_Row, ...]
    rates: RateTable

    @property
    def label(self) -> str:
        """Name and date, as cost outputs show them."""
        return f"{self.name} ({self.date})"

    def _rows(self, kind: str) -> list[_Row]:
        return [r for r in self.rows if r.kind == kind]

    def materials(self) -> list[str]:
        """Materials priced in this book (fixed or indexed)."""
        return [r.item for r in self.rows if r.kind in ("material", "fee")]

    def index_prices_USD_t(self) -> dict[str, float]:
        """Every index of the book in USD per tonne of its product."""
        out = {}
        for r in self._rows("index"):
            assert r.unit is not None
            usd_kg = r.value * r.unit.factor * self.rates.factor(r.unit.currency, "USD", r.date,
                                                                  r.where)
            out[r.item] = usd_kg * 1000.0
        return out

    def payables(self, material: str) -> dict[str, float]:
        name = catalogue.material(material, "material").name
        return {r.index: r.value for r in self._rows("payable") if r.item == name}

    def material_price(self, material: str) -> MaterialPrice:
        """The price of ``material`` (name or alias) in this book, in USD."""
        name = catalogue.material(material, "material").name
        for r in self.rows:
            if r.item != name or r.kind not in ("material", "fee"):
                continue
            assert r.unit is not None
            usd = r.value * r.unit.factor * self.rates.factor(r.unit.currency, "USD", r.date,
                                                               r.where)
            src = f"{self.label} {r.where}: {r.source}"
            if r.kind == "material":
                return MaterialPrice(name, r.unit.basis, usd, (), src)
            coeff = index_coefficients(name, self.payables(name))
            return MaterialPrice(
                name, "mass", usd, tuple((k, float(c)) for k, c in coeff.items()), src
            )
        raise NotFoundError(
            "material", material, f"material priced in the price book {self.name!r}",
            [m for m in self.materials() if m[:3].lower() == name[:3].lower()][:3],
        )


#: What :func:`book_field` returns for an item of a book (``"index:NAME"`` or a material).
FIELDS: Mapping[str, str] = {
    "price": "USD per base unit (kg, m^2, L, piece; USD/t for an index); an indexed "
             "material at the book's own index prices",
    "unit": "the unit of price: USD/kg, USD/m^2, USD/L, USD/each or USD/t",
    "base": "the fixed price, or the conversion fee of an indexed material (USD per base unit)",
    "basis": "mass, area, volume or count",
    "kind": "fixed, indexed or index",
    "coefficient": "t of the index's product paid per t of material (needs index_name)",
    "payable": "payable fraction of one index in an indexed material (needs index_name)",
    "date": "the row's date (YYYY-MM-DD)",
    "source": "the row's source",
    "region": "the row's region",
    "quoted": "the value as the book writes it",
    "quoted_unit": "the unit and currency as the book writes them, e.g. CNY/t",
}
#: What :func:`book_info` returns about a whole book.
BOOK_FIELDS = ("label", "name", "date", "earliest", "regions", "rows")
INDEX_PREFIX = "index:"


def book_info(book: PriceBook, field: str = "label") -> str | float:
    """A fact of the whole book: its label (name and date), name, date (its
    latest row), earliest date, regions, or number of rows.

    >>> book_info(price_book("demo-2024-12"), "date")
    '2024-12-31'
    """
    key = lookup(field, BOOK_FIELDS, "field of a price book", "field")
    if key == "regions":
        return ", ".join(book.regions)
    if key == "rows":
        return float(len(book.rows))
    return str(getattr(book, key))


def _row_of(book: PriceBook, item: str) -> tuple[_Row, str]:
    """The book's row of ``item`` (``index:NAME`` or a material) and the kind."""
    text = item.strip()
    if text.lower().startswith(INDEX_PREFIX):
        name = index(text[len(INDEX_PREFIX):], "item").name
        for r in book.rows:
            if r.kind == "index" and r.item == name:
                return r, "index"
        raise NotFoundError("item", item, f"index priced in the price book {book.name!r}",
                            [f"{INDEX_PREFIX}{r.item}" for r in book.rows if r.kind == "index"][:4])
    name = catalogue.material(text, "item").name
    for r in book.rows:
        if r.item == name and r.kind in ("material", "fee"):
            return r, "fixed" if r.kind == "material" else "indexed"
    raise NotFoundError(
        "item", item, f"material priced in the price book {book.name!r} (an index is written "
        f"{INDEX_PREFIX}NAME)",
        [m for m in book.materials() if m[:3].lower() == name[:3].lower()][:3],
    )


def book_field(book: PriceBook, item: str, field: str = "price",
               index_name: str | None = None) -> str | float:
    """One fact of an item of ``book`` (see :data:`FIELDS`): ``item`` is a
    material (name or alias) or ``"index:NAME"``; ``coefficient`` and
    ``payable`` need ``index_name``.

    >>> book = price_book("demo-2025-06")
    >>> book_field(book, "index:nickel"), book_field(book, "index:cobalt", "quoted_unit")
    (15500.0, 'USD/lb')
    >>> round(book_field(book, "LFP", "coefficient", "Li2CO3"), 4), book_field(book, "LFP", "kind")
    (0.2342, 'indexed')
    >>> book_field(book, "PE separator", "unit")
    'USD/m^2'
    """
    if not isinstance(item, str) or not item.strip():
        raise InputError("item", item, f"a material name or {INDEX_PREFIX}NAME (text)")
    key = lookup(field, tuple(FIELDS), "field of a price-book item", "field")
    row, kind = _row_of(book, item)
    if key in ("date", "source", "region"):
        return str(getattr(row, key))
    if key == "quoted":
        return row.value
    if key == "quoted_unit":
        assert row.unit is not None
        return row.unit.text.replace(" ", "") if "/" in row.unit.text else (
            f"{row.unit.currency}/{row.unit.per}")
    if key == "kind":
        return kind
    if kind == "index":
        if key in ("price", "base"):
            return book.index_prices_USD_t()[row.item]
        if key in ("unit",):
            return "USD/t"
        if key == "basis":
            return "mass"
        raise InputError("field", field, detail=f"{field!r} applies to materials, not to an index")
    p = book.material_price(row.item)
    if key == "basis":
        return p.basis
    if key == "unit":
        return f"USD/{BASE_UNITS[p.basis]}"
    if key == "base":
        return p.USD_per_base
    if key == "price":
        indexes = book.index_prices_USD_t()
        return p.USD_per_base + sum(c * indexes[ix] / 1000.0 for ix, c in p.coefficients
                                    if c != 0.0)
    if not index_name:
        raise InputError("index_name", index_name, detail=f"the field {key!r} needs the name "
                         "of an index (e.g. nickel)")
    ix = index(index_name, "index_name").name
    if key == "coefficient":
        return dict(p.coefficients).get(ix, 0.0)
    if kind != "indexed":
        raise InputError("item", item, detail=f"{row.item} has a fixed price in "
                         f"{book.name!r}: it has no payables")
    pays = book.payables(row.item)
    if ix not in pays:
        raise NotFoundError("index_name", index_name, f"index of {row.item}'s contract in "
                            f"{book.name!r}", list(pays))
    return pays[ix]


def _clean(row: Mapping[str | None, str | None]) -> dict[str, str]:
    return {k.strip(): (v or "").strip() for k, v in row.items() if k is not None}


def _read_row(i: int, raw: Mapping[str | None, str | None], name: str) -> _Row:
    where = f"row {i}"
    row = _clean(raw)
    at = f"{name} {where}"
    kind = row.get("kind", "").lower()
    if kind not in KINDS:
        raise DataError(at, row.get("kind"), f"a kind, one of {', '.join(KINDS)}")
    for col in ("item", "value", "date", "source"):
        if not row.get(col):
            raise DataError(at, row, detail=f"has no {col}")
    try:
        day = iso_date(row["date"], "date")
    except CellwrightError:
        raise DataError(at, row["date"], detail="date must be YYYY-MM-DD") from None
    try:
        if kind == "index":
            item = index(row["item"], "item").name
        else:
            item = catalogue.material(row["item"], "item").name
        if kind == "payable":
            ix = index(row.get("index", ""), "index").name
            if row.get("unit") or row.get("currency"):
                raise DataError(at, row, detail="a payable is a fraction: no unit, no currency")
            value = float(PAYABLE.check("value", _number(row["value"], at)))
            return _Row(kind, item, ix, value, None, day, row.get("region", ""), row["source"],
                        where)
        if row.get("index"):
            raise DataError(at, row["index"], detail="only payable rows name an index")
        if not row.get("region"):
            raise DataError(at, row, detail="has no region")
        unit = price_unit(row.get("unit", ""), row.get("currency") or None, "unit")
        if kind in ("index", "fee") and unit.basis != "mass":
            raise DataError(at, unit.text, detail=f"an {kind} is quoted per mass (t, kg, lb)")
        value = _positive_value(_number(row["value"], at), "value")
    except DataError:
        raise
    except CellwrightError as exc:
        raise DataError(at, row, detail=str(exc)) from None
    return _Row(kind, item, "", value, unit, day, row["region"], row["source"], where)


def _number(text: str, at: str) -> float:
    try:
        x = float(text)
    except ValueError:
        raise DataError(at, text, detail=f"value {text!r} is not a number") from None
    return x


def _book(rows: Iterable[Mapping[str | None, str | None]], name: str, rates: RateTable
          ) -> PriceBook:
    parsed = [_read_row(i, r, name) for i, r in enumerate(rows, start=2)]
    if not parsed:
        raise DataError(name, None, detail="the price book has no rows")
    seen: dict[tuple[str, str], str] = {}
    for r in parsed:
        key = ("priced" if r.kind in ("material", "fee") else r.kind, r.item + "|" + r.index)
        if key in seen:
            raise DataError(f"{name} {r.where}", r.item,
                            detail=f"priced twice (also {seen[key]}); keep one row")
        seen[key] = r.where
    fees = {r.item for r in parsed if r.kind == "fee"}
    for r in parsed:
        if r.kind == "payable" and r.item not in fees:
            raise DataError(f"{name} {r.where}", r.item,
                            detail="a payable without a fee row for the material")
    book = PriceBook(
        name=name,
        date=max(r.date for r in parsed),
        earliest=min(r.date for r in parsed),
        regions=tuple(sorted({r.region for r in parsed if r.region})),
        rows=tuple(parsed),
        rates=rates,
    )
    indexes = book.index_prices_USD_t()  # every rate resolvable (raises otherwise)
    for r in parsed:
        try:
            if r.kind in ("material", "fee"):
                p = book.material_price(r.item)
                missing = [k for k, c in p.coefficients if c != 0.0 and k not in indexes]
                if missing:
                    raise DataError(f"{name} {r.where}", r.item,
                                    detail=f"indexed on {missing[0]!r}, which has no index row")
        except DataError:
            raise
        except CellwrightError as exc:
            raise DataError(f"{name} {r.where}", r.item, detail=str(exc)) from None
    return book


def read_price_book(text: str, name: str, rates: RateTable | None = None) -> PriceBook:
    """A price book from CSV text (e.g. a file the application read for
    ``--prices FILE``); every row is checked, a bad one raises :class:`DataError`
    naming the book and row."""
    if not isinstance(text, str):
        raise InputError("text", text, "the CSV text of a price book")
    reader = csv.DictReader(io.StringIO(text))
    header = [h.strip() for h in (reader.fieldnames or [])]
    missing = [c for c in COLUMNS if c not in header and c != "note"]
    if missing:
        raise DataError(name, header, detail=f"missing columns {', '.join(missing)} "
                        f"(columns: {', '.join(COLUMNS)})")
    return _book(reader, name, exchange_rates() if rates is None else rates)


def _books_dir() -> Path:
    return catalogue.data_dir() / "price_books"


def price_book_names() -> list[str]:
    """Names of the shipped price books (file names without ``.csv``)."""
    return sorted(p.stem for p in _books_dir().glob("*.csv"))


@cache
def _shipped(name: str) -> PriceBook:
    text = (_books_dir() / f"{name}.csv").read_text(encoding="utf-8")
    return read_price_book(text, name)


def price_book(name: str, argument: str = "price_book") -> PriceBook:
    """A shipped price book by name (case-insensitive), loaded once."""
    return _shipped(lookup(name, price_book_names(), "price book", argument))
