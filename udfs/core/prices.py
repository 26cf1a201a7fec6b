"""Prices as the trade writes them: a value, a unit text and a currency, parsed,
never guessed, and converted to the cost basis a model wants.

A price unit is ``CURRENCY/BASIS`` (``"USD/kg"``, ``"EUR/t"``, ``"CNY/m^2"``,
``"USD/L"``, ``"USD/each"``), or a bare basis (``"kg"``) with the currency given
separately. The currency is a three-letter ISO 4217 code; the basis is one unit
of mass, area, volume or count from a short list (no ``ton``: it means
different masses in different countries). Conversion factors come from
:mod:`udfs.core.units`, so the unit registry is the package's one registry.

Changing basis needs a fact about the material: a price per area becomes a
price per kg only with the areal mass, a price per volume only with the
density, a price per piece only with the mass of one piece. Missing facts are
refused with a message, never assumed. Currencies convert through a dated
exchange-rate table (``data/exchange_rates.csv``, invented demo rates) or rates
the caller gives.

>>> price_unit("EUR / t").currency, price_unit("EUR / t").basis
('EUR', 'mass')
>>> rates = fixed_rates({"EUR": 1.10})
>>> round(float(convert_price(2200.0, "EUR/t", "USD/kg", rates=rates)), 6)
2.42
>>> round(float(convert_price(0.55, "USD/m2", "USD/kg", areal_mass_g_m2=9.12)), 4)
60.307
"""

from __future__ import annotations

import csv
import io
import math
import re
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from datetime import date
from functools import cache, lru_cache

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .catalogue import data_dir
from .errors import DataError, InputError, NotFoundError, UnitError
from .names import closest
from .shapes import broadcast_shape
from .units import conversion
from .validate import NONNEGATIVE, POSITIVE, check

__all__ = [
    "BASES",
    "BASE_UNITS",
    "PER_UNITS",
    "PriceUnit",
    "RateTable",
    "convert_currency",
    "convert_price",
    "currency_code",
    "exchange_rates",
    "fixed_rates",
    "iso_date",
    "price_unit",
    "rate_table",
]

Array = NDArray[np.float64]

#: The bases a price may be quoted on, and the unit each is normalised to.
BASE_UNITS: Mapping[str, str] = {"mass": "kg", "area": "m^2", "volume": "L", "count": "each"}
BASES = tuple(BASE_UNITS)

#: Every unit a price may be quoted per, by basis. Written forms are parsed by
#: :func:`price_unit`: ``m2`` and ``m²`` are ``m^2``; ``l`` is ``L``.
PER_UNITS: Mapping[str, tuple[str, ...]] = {
    "mass": ("mg", "g", "kg", "t", "lb"),
    "area": ("mm^2", "cm^2", "dm^2", "m^2"),
    "volume": ("mL", "cm^3", "L", "dm^3", "m^3"),
    "count": ("each", "pc"),
}
_COUNT_WORDS = {
    "each": "each", "ea": "each", "pc": "pc", "pcs": "pc", "piece": "pc", "pieces": "pc"
}
_AMBIGUOUS = {
    "ton": "'ton' means a metric tonne, a short ton or a long ton depending on the country; "
    "write 't' for the metric tonne (1000 kg)",
    "tons": "'tons' is ambiguous; write 't' for the metric tonne (1000 kg)",
    "mt": "'mt' is ambiguous (metric tonne in trade, millitonne in SI); write 't'",
    "dmt": "dry metric tonnes depend on moisture; convert to 't' of the material as bought",
    "dmtu": "dry metric tonne units depend on the grade; convert to 't' of the material",
    "oz": "ounces differ (troy or avoirdupois); write 'g' or 'kg'",
    "gal": "gallons differ (US or imperial); write 'L'",
}
_CURRENCY = re.compile(r"[A-Za-z]{3}")
_SYMBOLS = {"$": "USD, CAD, AUD, ...", "€": "EUR", "¥": "CNY or JPY", "£": "GBP", "₩": "KRW"}
_MAX_UNIT_LEN = 40


@dataclass(frozen=True)
class PriceUnit:
    """A parsed price unit: price per ``per`` times ``factor`` is the price per
    the basis's base unit (kg, m^2, L or each), in ``currency``.

    >>> u = price_unit("usd/t")
    >>> u.currency, u.per, u.basis, u.factor, u.base
    ('USD', 't', 'mass', 0.001, 'USD/kg')
    """

    text: str
    currency: str
    per: str
    basis: str
    factor: float

    @property
    def base(self) -> str:
        """The unit this price is normalised to, e.g. ``'USD/kg'``."""
        return f"{self.currency}/{BASE_UNITS[self.basis]}"


def _allowed_units() -> str:
    return "; ".join(f"{b}: {', '.join(u)}" for b, u in PER_UNITS.items())


def _per_unit(text: str, argument: str, whole: str) -> tuple[str, str]:
    """``(canonical per-unit, basis)`` of the part after the slash."""
    cleaned = text.replace(" ", "").replace("²", "^2").replace("³", "^3").replace("**", "^")
    key = cleaned.lower()
    if key in _AMBIGUOUS:
        raise UnitError(argument, whole, detail=f"price unit {whole!r}: {_AMBIGUOUS[key]}")
    if key in _COUNT_WORDS:
        return _COUNT_WORDS[key], "count"
    m = re.fullmatch(r"([a-zA-Z]{1,2})\^?([23])?", cleaned)
    if m is not None:
        canonical = m.group(1) if m.group(2) is None else f"{m.group(1)}^{m.group(2)}"
        if canonical == "l":
            canonical = "L"
        if canonical == "ml":
            canonical = "mL"
        for basis, units in PER_UNITS.items():
            if canonical in units:
                return canonical, basis
    allowed = [u for us in PER_UNITS.values() for u in us]
    near = closest(cleaned, allowed)
    hint = f"; did you mean {', '.join(repr(x) for x in near)}?" if near else ""
    raise UnitError(
        argument,
        whole,
        detail=f"price unit {whole!r}: unknown basis {text!r}{hint} (allowed: {_allowed_units()})",
    )


@lru_cache(maxsize=512)
def _parse(unit: str, currency: str | None, argument: str) -> PriceUnit:
    if len(unit) > _MAX_UNIT_LEN:
        raise UnitError(argument, None, detail=f"price unit of {len(unit):,} characters is too "
                        f"long (at most {_MAX_UNIT_LEN})")
    head, slash, tail = unit.strip().partition("/")
    if slash:
        code = head.strip()
        if code in _SYMBOLS:
            raise UnitError(
                argument, unit,
                detail=f"currency symbol {code!r} is ambiguous; write the ISO code "
                f"({_SYMBOLS[code]})",
            )
        if not _CURRENCY.fullmatch(code):
            raise UnitError(
                argument, unit,
                detail=f"price unit {unit!r}: {code!r} is not a three-letter currency code "
                "such as USD, EUR or CNY",
            )
        code = code.upper()
        if currency is not None and currency.strip().upper() != code:
            raise UnitError(
                argument, unit,
                detail=f"price unit {unit!r} is in {code} but the currency given is {currency!r}",
            )
        per_text = tail
    else:
        if currency is None or not currency.strip():
            raise UnitError(
                argument, unit,
                detail=f"price unit {unit!r} names no currency; write e.g. 'USD/{unit.strip()}' "
                "or give the currency",
            )
        if not _CURRENCY.fullmatch(currency.strip()):
            raise UnitError(
                argument, currency, detail=f"currency {currency!r} is not a three-letter code "
                "such as USD, EUR or CNY",
            )
        code = currency.strip().upper()
        per_text = head
    if "/" in per_text or not per_text.strip():
        raise UnitError(
            argument, unit,
            detail=f"price unit {unit!r}: write CURRENCY/BASIS with one basis ({_allowed_units()})",
        )
    per, basis = _per_unit(per_text, argument, unit)
    factor = 1.0 if basis == "count" else 1.0 / conversion(per, BASE_UNITS[basis], argument)[0]
    return PriceUnit(unit, code, per, basis, factor)


def price_unit(unit: object, currency: object = None, argument: str = "unit") -> PriceUnit:
    """Parse a price unit such as ``'USD/kg'`` or ``'kg'`` with ``currency='USD'``.

    >>> price_unit("kg", "eur").base
    'EUR/kg'
    >>> price_unit("USD/m2").per, price_unit("USD/cm²").factor
    ('m^2', 10000.0)
    >>> price_unit("USD/ton")
    Traceback (most recent call last):
    ...
    udfs.core.errors.UnitError: unit: price unit 'USD/ton': 'ton' means a metric tonne, \
a short ton or a long ton depending on the country; write 't' for the metric tonne (1000 kg)
    """
    if not isinstance(unit, str) or not unit.strip():
        raise UnitError(argument, unit, "a price unit such as 'USD/kg', 'EUR/t' or 'USD/m^2'")
    if currency is not None and not isinstance(currency, str):
        raise UnitError(argument, currency, "a three-letter currency code such as 'USD' (text)")
    return _parse(unit, currency, argument)


def currency_code(text: object, argument: str = "currency") -> str:
    """A three-letter ISO 4217 code, upper case (symbols are refused).

    >>> currency_code(" eur ")
    'EUR'
    """
    if isinstance(text, str) and text.strip() in _SYMBOLS:
        raise UnitError(argument, text, detail=f"currency symbol {text.strip()!r} is ambiguous; "
                        f"write the ISO code ({_SYMBOLS[text.strip()]})")
    if not isinstance(text, str) or not _CURRENCY.fullmatch(text.strip()):
        raise UnitError(argument, text, "a three-letter currency code such as USD, EUR or CNY")
    return text.strip().upper()


# --------------------------------------------------------------------------- dates


def iso_date(text: object, argument: str = "date") -> str:
    """An ISO date ``YYYY-MM-DD`` (a :class:`datetime.date` is accepted too).

    >>> iso_date("2025-06-30")
    '2025-06-30'
    """
    if isinstance(text, date):
        return text.isoformat()
    if isinstance(text, str) and re.fullmatch(r"\d{4}-\d{2}-\d{2}", text.strip()):
        try:
            return date.fromisoformat(text.strip()).isoformat()
        except ValueError:
            pass
    raise InputError(argument, text, "a date written YYYY-MM-DD (ISO 8601)")


# --------------------------------------------------------------------------- exchange rates


@dataclass(frozen=True)
class RateTable:
    """Dated exchange rates: for each currency, ``(date, USD per unit, source)``
    rows sorted by date. USD is 1 at every date. A conversion uses, per
    currency, the latest rate dated on or before the date asked for (the
    latest of all when no date is given).

    >>> t = fixed_rates({"EUR": 1.1, "CNY": 0.14})
    >>> round(t.factor("EUR", "CNY"), 6)
    7.857143
    """

    name: str
    rows: tuple[tuple[str, tuple[tuple[str, float, str], ...]], ...]

    def currencies(self) -> list[str]:
        return ["USD", *(c for c, _ in self.rows)]

    def rate(self, currency: str, as_of: object = None, argument: str = "currency"
             ) -> tuple[float, str, str]:
        """``(USD per unit, date, source)`` of ``currency`` on or before ``as_of``."""
        code = currency.strip().upper() if isinstance(currency, str) else currency
        if code == "USD":
            return 1.0, "", "definition"
        table = dict(self.rows)
        if code not in table:
            raise NotFoundError(
                argument, currency, f"currency (the exchange-rate table {self.name} has "
                f"{', '.join(self.currencies())})", closest(str(currency), self.currencies()),
            )
        rows = table[code]
        if as_of is None:
            return rows[-1][1], rows[-1][0], rows[-1][2]
        day = iso_date(as_of, "as_of")
        usable = [r for r in rows if r[0] <= day]
        if not usable:
            raise NotFoundError(
                argument, currency,
                f"{code} rate dated on or before {day} in {self.name!r} (its first rate is "
                f"dated {rows[0][0]})",
            )
        return usable[-1][1], usable[-1][0], usable[-1][2]

    def factor(self, source: str, target: str, as_of: object = None,
               argument: str = "currency") -> float:
        """Multiply an amount in ``source`` by this to get it in ``target``."""
        return self.rate(source, as_of, argument)[0] / self.rate(target, as_of, argument)[0]


def rate_table(rows: Iterable[Mapping[str, str]], name: str = "rates") -> RateTable:
    """Validate rate rows (``date, currency, usd_per_unit, source``; ``note``
    optional) into a :class:`RateTable`; a bad row raises :class:`DataError`.

    >>> rate_table([{"date": "2025-01-02", "currency": "EUR", "usd_per_unit": "1.03",
    ...              "source": "demo data (invented)"}]).rate("eur")[0]
    1.03
    """
    by: dict[str, dict[str, tuple[float, str]]] = {}
    for i, row in enumerate(rows, start=2):
        where = f"{name} row {i}"
        clean = {k.strip(): (v or "").strip() for k, v in row.items() if k is not None}
        missing = [c for c in ("date", "currency", "usd_per_unit", "source") if not clean.get(c)]
        if missing:
            raise DataError(where, clean, detail=f"missing {', '.join(missing)}")
        try:
            day = iso_date(clean["date"], "date")
        except InputError:
            raise DataError(where, clean["date"], detail="date must be YYYY-MM-DD") from None
        code = clean["currency"]
        if not _CURRENCY.fullmatch(code) or code != code.upper() or code == "USD":
            raise DataError(where, code, detail="currency must be an upper-case ISO code, not USD")
        try:
            value = float(clean["usd_per_unit"])
        except ValueError:
            value = math.nan
        if not (math.isfinite(value) and value > 0):
            raise DataError(where, clean["usd_per_unit"],
                            detail="usd_per_unit must be a number > 0")
        if day in by.setdefault(code, {}):
            raise DataError(where, code, detail=f"two {code} rates dated {day}")
        by[code][day] = (value, clean["source"])
    out = tuple(
        (code, tuple((d, v, s) for d, (v, s) in sorted(days.items())))
        for code, days in sorted(by.items())
    )
    return RateTable(name, out)


def fixed_rates(usd_per_unit: Mapping[str, float], on: str = "", name: str = "given rates"
                ) -> RateTable:
    """Rates the caller gives (USD per unit of each currency), e.g. a workbook's
    exchange-rate inputs; valid at every date unless ``on`` dates them."""
    if not isinstance(usd_per_unit, Mapping):
        raise InputError("rates", usd_per_unit, "a mapping currency -> USD per unit")
    day = iso_date(on, "on") if on else "0001-01-01"
    rows = []
    for code, value in usd_per_unit.items():
        v = float(check(f"rates[{code!r}]", value, POSITIVE))
        rows.append({"date": day, "currency": str(code).strip().upper(), "usd_per_unit": repr(v),
                     "source": "given"})
    return rate_table(rows, name)


@cache
def exchange_rates() -> RateTable:
    """The shipped table ``data/exchange_rates.csv`` (invented demo rates)."""
    text = (data_dir() / "exchange_rates.csv").read_text(encoding="utf-8")
    return rate_table(csv.DictReader(io.StringIO(text)), "exchange_rates.csv")


def convert_currency(
    amount: ArrayLike, source: str, target: str, *, rates: RateTable | None = None,
    as_of: object = None, argument: str = "amount",
) -> Array | float:
    """An amount of money in another currency.

    >>> round(float(convert_currency(100.0, "USD", "EUR", rates=fixed_rates({"EUR": 1.25}))), 9)
    80.0
    """
    table = exchange_rates() if rates is None else rates
    a = check(argument, amount, NONNEGATIVE)
    src, dst = currency_code(source, "source"), currency_code(target, "target")
    out = a * table.factor(src, dst, as_of, "source")
    return float(out) if out.ndim == 0 else out


# --------------------------------------------------------------------------- conversion


def _link(basis: str, areal: Array | None, density: Array | None, piece: Array | None
          ) -> Array | None:
    """Base units of ``basis`` per kg of material (None if the fact is missing)."""
    if basis == "mass":
        return np.float64(1.0)  # type: ignore[return-value,unused-ignore]
    if basis == "area":
        return None if areal is None else 1000.0 / areal  # m^2 per kg
    if basis == "volume":
        return None if density is None else 1.0 / density  # L per kg (g/cm3 = kg/L)
    return None if piece is None else 1000.0 / piece  # pieces per kg


_NEEDS = {
    "area": ("areal_mass_g_m2", "the mass per m^2 of the material (g/m^2)"),
    "volume": ("density_g_cm3", "the density of the material (g/cm^3)"),
    "count": ("piece_mass_g", "the mass of one piece (g)"),
}


def convert_price(
    value: ArrayLike,
    unit: str,
    want: str = "USD/kg",
    *,
    currency: str | None = None,
    rates: RateTable | None = None,
    as_of: object = None,
    areal_mass_g_m2: ArrayLike | None = None,
    density_g_cm3: ArrayLike | None = None,
    piece_mass_g: ArrayLike | None = None,
    argument: str = "price",
) -> Array | float:
    """A price in another unit and currency (``want``, e.g. ``'USD/kg'``).

    Within one basis only the unit factor and the exchange rate apply. Across
    bases the price goes through mass: area needs ``areal_mass_g_m2``, volume
    ``density_g_cm3``, count ``piece_mass_g``; without the fact it is refused.
    Numbers broadcast together.

    >>> round(float(convert_price(1.0, "USD/lb", "USD/kg")), 9)
    2.204622622
    >>> convert_price(9.5, "USD/L", "USD/kg")
    Traceback (most recent call last):
    ...
    udfs.core.errors.UnitError: price: a price per L (volume) cannot be turned into a price \
per kg (mass) without density_g_cm3, the density of the material (g/cm^3)
    """
    src = price_unit(unit, currency, "unit")
    dst = price_unit(want, None, "want")
    v = check(argument, value, NONNEGATIVE)
    facts = {
        name: None if raw is None else check(name, raw, POSITIVE)
        for name, raw in (("areal_mass_g_m2", areal_mass_g_m2), ("density_g_cm3", density_g_cm3),
                          ("piece_mass_g", piece_mass_g))
    }
    broadcast_shape({argument: v, **{k: a for k, a in facts.items() if a is not None}})
    out = v * src.factor  # per source base unit
    if src.basis != dst.basis:
        links = {
            b: _link(b, facts["areal_mass_g_m2"], facts["density_g_cm3"], facts["piece_mass_g"])
            for b in (src.basis, dst.basis)
        }
        for b in (src.basis, dst.basis):
            if links[b] is None:
                name, what = _NEEDS[b]
                raise UnitError(
                    argument, unit,
                    detail=f"a price per {src.per} ({src.basis}) cannot be turned into a price "
                    f"per {dst.per} ({dst.basis}) without {name}, {what}",
                )
        out = out * links[src.basis] / links[dst.basis]  # type: ignore[operator]
    out = out / dst.factor  # per wanted unit
    if src.currency != dst.currency:
        table = exchange_rates() if rates is None else rates
        out = out * table.factor(src.currency, dst.currency, as_of, "unit")
    return float(out) if np.ndim(out) == 0 else np.asarray(out)
