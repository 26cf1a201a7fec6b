"""Price units, currencies and exchange rates (udfs.core.prices)."""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from udfs.core import catalogue
from udfs.core.cell_cost import cost_model
from udfs.core.errors import (
    DataError,
    DomainError,
    InputError,
    NotFoundError,
    ShapeError,
    UnitError,
)
from udfs.core.prices import (
    PER_UNITS,
    convert_currency,
    convert_price,
    exchange_rates,
    fixed_rates,
    price_unit,
    rate_table,
)
from udfs.core.sizing import CellSpec, design_cell

# Exact unit definitions (independent of pint): the international pound is 0.45359237 kg
# exactly (common practice, international yard and pound agreement of 1959).
KG_PER = {"mg": 1e-6, "g": 1e-3, "kg": 1.0, "t": 1e3, "lb": 0.45359237}
M2_PER = {"mm^2": 1e-6, "cm^2": 1e-4, "dm^2": 1e-2, "m^2": 1.0}
L_PER = {"mL": 1e-3, "cm^3": 1e-3, "L": 1.0, "dm^3": 1.0, "m^3": 1e3}
WRITTEN = {  # other spellings a user may type, and what they mean
    "m2": "m^2", "cm2": "cm^2", "m²": "m^2", "m**2": "m^2", "m3": "m^3", "l": "L", "ml": "mL",
    "pcs": "pc", "piece": "pc", "ea": "each",
}


def _demo_spec() -> CellSpec:
    # a demo design (invented): NMC811 against graphite, 55 Ah, 22 mg/cm2 per side
    return CellSpec("NMC811", "graphite", target_capacity_Ah=55.0, cathode_loading_mg_cm2=22.0)


# ---------------------------------------------------------------- parsing


def test_every_listed_basis_parses_with_its_exact_factor() -> None:
    exact = {"mass": KG_PER, "area": M2_PER, "volume": L_PER}
    for basis, units in PER_UNITS.items():
        for per in units:
            u = price_unit(f"USD/{per}")
            assert u.basis == basis and u.currency == "USD" and u.per == per
            want = 1.0 if basis == "count" else 1.0 / exact[basis][per]
            assert u.factor == pytest.approx(want, rel=1e-15), per


def test_written_forms_and_currency_argument() -> None:
    for written, canonical in WRITTEN.items():
        assert price_unit(f"eur / {written}").per == canonical
    assert price_unit("kg", "cny").base == "CNY/kg"
    assert price_unit(" USD/t ").factor == pytest.approx(1e-3, rel=1e-15)
    assert price_unit("USD/kg", "usd").currency == "USD"  # given twice, the same


@pytest.mark.parametrize(
    ("unit", "currency", "fragment"),
    [
        ("USD/ton", None, "'ton' means a metric tonne"),
        ("USD/mt", None, "write 't'"),
        ("USD/oz", None, "ounces differ"),
        ("$/kg", None, "ambiguous; write the ISO code"),
        ("US/kg", None, "not a three-letter currency code"),
        ("USD/kWh", None, "unknown basis"),
        ("USD/kgs", None, "did you mean 'kg'"),
        ("USD/kg/m", None, "one basis"),
        ("kg", None, "names no currency"),
        ("EUR/kg", "USD", "is in EUR but the currency given is 'USD'"),
        ("USD/" + "k" * 60, None, "is too long (at most 40)"),
        ("", None, "a price unit such as"),
    ],
)
def test_bad_units_are_refused_with_a_reason(unit: str, currency: str | None,
                                             fragment: str) -> None:
    with pytest.raises(UnitError) as info:
        price_unit(unit, currency, "price_unit")
    assert fragment in str(info.value)
    assert info.value.argument == "price_unit"


# ---------------------------------------------------------------- exchange rates


def test_rates_are_taken_on_or_before_the_date() -> None:
    t = exchange_rates()  # data/exchange_rates.csv (demo data, invented)
    assert t.rate("EUR", "2025-01-15")[:2] == (1.04, "2024-12-31")
    assert t.rate("EUR", "2025-06-30")[:2] == (1.17, "2025-06-30")
    assert t.rate("EUR")[1] == "2025-06-30"  # no date: the latest
    assert t.rate("USD", "1990-01-01")[0] == 1.0
    with pytest.raises(NotFoundError) as early:
        t.rate("EUR", "2024-01-01")
    assert "first rate is dated 2024-12-31" in str(early.value)
    with pytest.raises(NotFoundError) as unknown:
        t.rate("EUX")
    assert "EUR" in unknown.value.suggestions
    # EUR -> CNY through USD, demo rates of 2025-06-30: 1.17 / 0.1395
    assert t.factor("EUR", "CNY", "2025-06-30") == pytest.approx(1.17 / 0.1395, rel=1e-15)


def test_rate_rows_are_validated() -> None:
    good = {"date": "2025-01-02", "currency": "EUR", "usd_per_unit": "1.1", "source": "x"}
    for change, fragment in [
        ({"source": ""}, "missing source"),
        ({"date": "02/01/2025"}, "YYYY-MM-DD"),
        ({"currency": "eur"}, "upper-case ISO code"),
        ({"currency": "USD"}, "not USD"),
        ({"usd_per_unit": "-1"}, "> 0"),
        ({"usd_per_unit": "abc"}, "> 0"),
    ]:
        with pytest.raises(DataError) as info:
            rate_table([{**good, **change}])
        assert fragment in str(info.value)
    with pytest.raises(DataError, match="two EUR rates"):
        rate_table([good, good])


def test_convert_currency() -> None:
    t = fixed_rates({"EUR": 1.25, "JPY": 0.008})
    assert convert_currency(100.0, "EUR", "JPY", rates=t) == pytest.approx(15625.0, rel=1e-15)
    got = convert_currency([1.0, 2.0], "usd", "EUR", rates=t)
    np.testing.assert_allclose(got, [0.8, 1.6], rtol=1e-15)
    with pytest.raises(UnitError):
        convert_currency(1.0, "€", "USD", rates=t)


# ---------------------------------------------------------------- conversion


def test_conversion_across_bases_needs_the_fact() -> None:
    # separator: 0.55 USD/m^2 at 9.12 g/m^2 -> 0.55 / 0.00912 USD/kg (hand arithmetic)
    assert convert_price(0.55, "USD/m^2", "USD/kg", areal_mass_g_m2=9.12) == pytest.approx(
        0.55 / 0.00912, rel=1e-14)
    # electrolyte: 12 USD/L at 1.28 g/cm3 -> 12 / 1.28 USD/kg
    assert convert_price(12.0, "USD/L", "USD/kg", density_g_cm3=1.28) == pytest.approx(
        9.375, rel=1e-14)
    # a tab: 0.064 USD each at 2 g -> 32 USD/kg
    assert convert_price(0.064, "USD/each", "USD/kg", piece_mass_g=2.0) == pytest.approx(
        32.0, rel=1e-14)
    # area -> volume goes through mass: both facts needed
    assert convert_price(1.0, "USD/m^2", "USD/L", areal_mass_g_m2=100.0,
                         density_g_cm3=2.0) == pytest.approx(20.0, rel=1e-14)
    for unit, want, missing in [("USD/m^2", "USD/kg", "areal_mass_g_m2"),
                                ("USD/L", "USD/kg", "density_g_cm3"),
                                ("USD/each", "USD/kg", "piece_mass_g"),
                                ("USD/kg", "USD/m2", "areal_mass_g_m2")]:
        with pytest.raises(UnitError) as info:
            convert_price(1.0, unit, want)
        assert missing in str(info.value)


def test_conversion_validates_and_broadcasts() -> None:
    got = convert_price([[1.0], [2.0]], "USD/m^2", "USD/kg", areal_mass_g_m2=[10.0, 20.0, 40.0])
    assert isinstance(got, np.ndarray) and got.shape == (2, 3)
    np.testing.assert_allclose(got, [[100, 50, 25], [200, 100, 50]], rtol=1e-14)
    with pytest.raises(ShapeError):
        convert_price([1.0, 2.0], "USD/m^2", "USD/kg", areal_mass_g_m2=[1.0, 2.0, 3.0])
    with pytest.raises(InputError) as text:
        convert_price("cheap", "USD/kg")
    assert text.value.argument == "price"
    with pytest.raises(DomainError) as negative:
        convert_price(-1.0, "USD/kg")
    assert "price must be >= 0" in str(negative.value)
    with pytest.raises(DomainError) as zero:
        convert_price(1.0, "USD/m^2", areal_mass_g_m2=0.0)
    assert "areal_mass_g_m2 must be > 0" in str(zero.value)


def _restated(usd_per_base: float, basis: str) -> list[tuple[float, str]]:
    """A USD price per base unit written in every supported unit and currency of
    the demo rate table (value computed with the exact factors above)."""
    rates = exchange_rates()
    per = {"mass": KG_PER, "area": M2_PER, "volume": L_PER, "count": {"each": 1.0, "pc": 1.0}}
    out = []
    for (unit, size), code in itertools.product(per[basis].items(), rates.currencies()):
        usd_per_unit = rates.rate(code)[0]
        out.append((usd_per_base * size / usd_per_unit, f"{code}/{unit}"))
    return out


# facts linking the bases, for the restatements below (demo figures, invented)
AREAL_G_M2 = 9.12  # g/m^2
DENSITY_G_CM3 = 1.28  # g/cm^3 = kg/L
PIECE_G = 2.0  # g per piece
KG_PER_BASE = {"mass": 1.0, "area": AREAL_G_M2 / 1000.0, "volume": DENSITY_G_CM3,
               "count": PIECE_G / 1000.0}  # kg of material per kg, m^2, L, piece


def test_demo_prices_in_every_unit_and_currency_give_the_same_cost_per_kg_and_m2() -> None:
    # every row of data/demo_prices.csv (demo data) restated on every basis, in every
    # supported unit and currency, converted back: the same price per kg and per m^2
    priced = [n for n in catalogue.material_names() if _has_demo_price(n)]
    assert len(priced) >= 30
    facts = {"areal_mass_g_m2": AREAL_G_M2, "density_g_cm3": DENSITY_G_CM3,
             "piece_mass_g": PIECE_G}
    checked = 0
    for name in priced:
        fact = catalogue.price(name)
        base = price_unit(fact.unit)
        usd_base = float(fact.value) * base.factor
        usd_kg = usd_base / KG_PER_BASE[base.basis]  # hand arithmetic through mass
        usd_m2 = usd_kg * KG_PER_BASE["area"]
        for basis in ("mass", "area", "volume", "count"):
            for value, unit in _restated(usd_kg * KG_PER_BASE[basis], basis):
                per_kg = convert_price(value, unit, "USD/kg", **facts)
                per_m2 = convert_price(value, unit, "USD/m^2", **facts)
                assert per_kg == pytest.approx(usd_kg, rel=1e-12), (name, unit)
                assert per_m2 == pytest.approx(usd_m2, rel=1e-12), (name, unit)
                checked += 1
    n_units = sum(len(u) for u in PER_UNITS.values())
    assert checked == len(priced) * n_units * len(exchange_rates().currencies())


def _has_demo_price(name: str) -> bool:
    try:
        catalogue.price(name)
    except NotFoundError:
        return False
    return True


def test_restated_demo_prices_give_the_same_cost_per_kwh() -> None:
    # issue 11 item 4: the demo design costed with its demo prices, and with every price
    # restated in another unit and currency: the same cost per kWh
    d = design_cell(_demo_spec())
    reference = cost_model(d)  # the catalogue's demo prices
    ref = float(reference(reference.base())["full_USD_kWh"])
    materials = [m for m, _ in reference.prices]
    n_ways = len(_restated(1.0, "mass"))
    for k in range(n_ways):
        prices = {}
        for m in materials:
            fact = catalogue.price(m)
            base = price_unit(fact.unit)
            value, unit = _restated(float(fact.value) * base.factor, base.basis)[k % len(
                _restated(1.0, base.basis))]
            prices[m] = (value, unit)
        model = cost_model(d, prices=prices)
        got = float(model(model.base())["full_USD_kWh"])
        assert got == pytest.approx(ref, rel=1e-12), k
