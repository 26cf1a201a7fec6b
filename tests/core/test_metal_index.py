"""Metal-indexed prices (udfs.core.metal_index) and their effect on the cell cost."""

from __future__ import annotations

import molmass
import numpy as np
import pytest

from udfs.core.cell_cost import cell_cost, cost_model
from udfs.core.errors import DomainError, InputError, NotFoundError
from udfs.core.metal_index import (
    index,
    index_coefficient,
    index_coefficients,
    index_for_price,
    index_names,
    indexed_price,
    metals_of,
)
from udfs.core.sizing import CellSpec, design_cell

NMC811_PAY = {"lithium hydroxide": 1.0, "nickel": 1.0, "manganese": 0.0, "cobalt": 1.0}


def _fraction(formula: str, element: str) -> float:
    """Mass fraction from the molmass library (independent code and weights)."""
    f = molmass.Formula(formula)
    return {i.symbol: i.fraction for i in f.composition().values()}[element]


def _demo_design():  # type: ignore[no-untyped-def]
    # a demo design (invented): NMC811 against graphite, 55 Ah, 22 mg/cm2 per side
    return design_cell(CellSpec("NMC811", "graphite", target_capacity_Ah=55.0,
                                cathode_loading_mg_cm2=22.0))


def test_index_names_and_aliases() -> None:
    assert index("LCE").name == "lithium carbonate"
    assert index("lithium hydroxide monohydrate").product == "LiOH·H2O"
    assert index(" Nickel ").element == "Ni"
    with pytest.raises(NotFoundError) as info:
        index("nikel")
    assert "nickel" in info.value.suggestions
    assert {"lithium carbonate", "lithium hydroxide", "nickel", "cobalt",
            "manganese"} <= set(index_names())


def test_lithium_salt_fractions_vs_molmass() -> None:
    # molmass library: Li in Li2CO3 (1 / 5.323, SOURCES.md LCE factor) and in LiOH.H2O
    assert index("Li2CO3").element_fraction == pytest.approx(_fraction("Li2CO3", "Li"), rel=2e-4)
    assert 1.0 / index("Li2CO3").element_fraction == pytest.approx(5.323, rel=2e-4)
    assert index("LiOH").element_fraction == pytest.approx(_fraction("LiOH(H2O)", "Li"),
                                                           rel=2e-4)


def test_coefficients_by_hand() -> None:
    # LFP paid on lithium carbonate: t Li2CO3 per t LiFePO4 = w_Li / f_Li (molmass library)
    c = index_coefficients("LFP", {"LCE": 0.9, "iron": 0.0})
    want = _fraction("LiFePO4", "Li") / _fraction("Li2CO3", "Li") * 0.9
    assert float(c["lithium carbonate"]) == pytest.approx(want, rel=2e-4)
    assert float(c["iron"]) == 0.0
    # NMC811 nickel: Ni mass fraction (molmass, Li10Ni8MnCoO20 = 10 x LiNi0.8Mn0.1Co0.1O2)
    c = index_coefficients("NMC811", NMC811_PAY)
    assert float(c["nickel"]) == pytest.approx(_fraction("Li10Ni8MnCoO20", "Ni"), rel=2e-4)
    assert metals_of("copper foil") == {"Cu": 1.0}


def test_indexed_price_and_its_sensitivity() -> None:
    idx = {"LiOH": 9000.0, "Ni": np.array([12000.0, 18000.0]), "Co": 30000.0}
    p = indexed_price("NMC811", idx, NMC811_PAY, conversion_fee_USD_kg=9.5)
    # by hand: fee + sum w/f * payable * index / 1000 (molmass fractions)
    w = {el: _fraction("Li10Ni8MnCoO20", el) for el in ("Li", "Ni", "Co")}
    f_li = _fraction("LiOH(H2O)", "Li")
    want = 9.5 + w["Li"] / f_li * 9.0 + w["Ni"] * np.array([12.0, 18.0]) + w["Co"] * 30.0
    np.testing.assert_allclose(p.price_USD_kg, want, rtol=2e-4)
    # the sensitivity is exact: equal to the difference quotient
    s = float(p.sensitivity_USD_kg_per_USD_t["nickel"])
    np.testing.assert_allclose(np.diff(p.price_USD_kg) / 6000.0, s, rtol=1e-12)
    parts = sum(p.metal_value_USD_kg.values()) + p.conversion_fee_USD_kg
    np.testing.assert_allclose(parts, p.price_USD_kg, rtol=1e-15)


@pytest.mark.parametrize(
    ("payables", "fragment"),
    [
        ({"LiOH": 1, "Ni": 1, "Co": 1}, "contains Mn"),
        ({**NMC811_PAY, "Li2CO3": 1.0}, "paid against both"),
        ({**NMC811_PAY, "iron": 1.0}, "contains no Fe"),
    ],
)
def test_payables_must_cover_every_metal_once(payables: dict[str, float], fragment: str) -> None:
    with pytest.raises(InputError) as info:
        index_coefficients("NMC811", payables)
    assert fragment in str(info.value)


def test_payable_and_index_validation() -> None:
    with pytest.raises(DomainError) as info:
        index_coefficients("LFP", {"LCE": 95.0, "iron": 0.0})  # a percentage typed as a number
    assert "between" not in str(info.value) and "<= 2" in str(info.value)
    with pytest.raises(InputError, match="no price for the index 'lithium carbonate'"):
        indexed_price("LFP", {"nickel": 1.0}, {"LCE": 1.0, "iron": 0.0})
    with pytest.raises(DomainError):
        indexed_price("LFP", {"LCE": -5.0}, {"LCE": 1.0, "iron": 0.0})
    with pytest.raises(InputError, match="composition of 'pouch laminate' is not known"):
        metals_of("pouch laminate")


def test_index_reproducing_a_fixed_price_gives_the_fixed_price_cost() -> None:
    # issue 13: with the index at the value that reproduces a fixed price, the cost of the
    # design equals its cost at that fixed price (demo prices, invented)
    d = _demo_design()
    fixed = 26.0  # USD/kg, NMC811 in data/demo_prices.csv (demo data)
    others = {"LiOH": 9000.0, "cobalt": 30000.0}
    fee = 9.5
    nickel = index_for_price("NMC811", fixed, "nickel", others, NMC811_PAY, fee)
    p = indexed_price("NMC811", {**others, "nickel": nickel}, NMC811_PAY, fee)
    assert float(p.price_USD_kg) == pytest.approx(fixed, rel=1e-13)
    at_fixed = cell_cost(d, prices={"NMC811": fixed})
    from udfs.core.price_books import MaterialPrice
    contract = MaterialPrice("NMC811", "mass", fee, tuple(
        (k, float(v)) for k, v in index_coefficients("NMC811", NMC811_PAY).items()))
    at_index = cell_cost(d, prices={"NMC811": contract}, indexes={**others, "nickel": nickel})
    assert float(at_index.full_USD_kWh) == pytest.approx(float(at_fixed.full_USD_kWh), rel=1e-12)
    for line, value in at_fixed.waterfall.items():
        assert float(at_index.waterfall[line]) == pytest.approx(float(value), rel=1e-12, abs=1e-12)
    with pytest.raises(InputError, match="no lithium carbonate index >= 0"):
        index_for_price("LFP", 0.5, "LCE", {}, {"LCE": 1.0, "iron": 0.0}, 2.0)
    with pytest.raises(InputError, match="does not depend on 'manganese'"):
        index_for_price("NMC811", 26.0, "Mn", others, NMC811_PAY, fee)


def test_cost_sensitivity_to_each_index_equals_the_finite_difference() -> None:
    d = _demo_design()
    m = cost_model(d, book="demo-2025-06")  # demo data (invented)
    sens = m.sensitivities()
    base = m.base()
    assert {"lithium hydroxide", "nickel", "cobalt", "copper", "aluminium"} <= set(sens)
    for ix, s in sens.items():
        name = f"index:{ix}"
        if name not in base:  # payable 0: no input, no sensitivity
            assert float(s) == 0.0
            continue
        h = 1000.0  # USD/t; the model is linear in every index
        up = float(m({name: base[name] + h})["full_USD_kWh"])
        down = float(m({name: base[name] - h})["full_USD_kWh"])
        fd = (up - down) / (2 * h) * 1000.0  # USD/kWh per 1,000 USD/t
        assert float(s) == pytest.approx(fd, rel=1e-9), ix
    # a 10,000 USD/t move in lithium hydroxide, by the sensitivity (USD/kWh)
    li = float(sens["lithium hydroxide"]) * 10.0
    assert 0.0 < li < 20.0


def test_one_coefficient_and_its_payable() -> None:
    # w(Co in LiCoO2) from molmass (independent code and weights) x payable
    co = _fraction("LiCoO2", "Co")
    assert index_coefficient("LCO", "cobalt") == pytest.approx(co, rel=1e-4)
    got = index_coefficient("LCO", "Co", np.array([0.5, 1.0]))
    assert got.tolist() == pytest.approx([0.5 * co, co], rel=1e-4)
    assert index_coefficient("NMC811", "nickel") == pytest.approx(
        float(index_coefficients("NMC811", NMC811_PAY)["nickel"]), rel=1e-15)
    assert index_coefficient("LFP", "cobalt") == 0.0  # no cobalt: nothing paid
    with pytest.raises(DomainError, match="payable"):
        index_coefficient("NMC811", "nickel", 2.5)


def test_the_index_for_a_price_broadcasts() -> None:
    pay = {"lithium carbonate": 1.0, "iron": 0.0}
    x = index_for_price("LFP", np.array([6.0, 9.0]), "lithium carbonate", {}, pay, 2.5)
    back = indexed_price("LFP", {"lithium carbonate": x}, pay, 2.5).price_USD_kg
    assert back.tolist() == pytest.approx([6.0, 9.0], rel=1e-14)
    with pytest.raises(InputError, match="below the fee"):
        index_for_price("LFP", np.array([6.0, 1.0]), "lithium carbonate", {}, pay, 2.5)
