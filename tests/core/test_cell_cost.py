"""The full cost of a design (udfs.core.cell_cost): two routes agree, the waterfall
sums, units are refused where the design has no such quantity, results carry the book."""

from __future__ import annotations

import numpy as np
import pytest

from udfs.core.cell_cost import DEMO_PRICES, cell_cost, cost_model
from udfs.core.conversion_cost import COST_CAUTION
from udfs.core.errors import DomainError, InputError, NotFoundError, UnitError
from udfs.core.sizing import CellSpec, design_cell


def _spec(**kw: object) -> CellSpec:
    # a demo design (invented): NMC811 against graphite, 55 Ah, 22 mg/cm2 per side
    return CellSpec("NMC811", "graphite", target_capacity_Ah=55.0,  # type: ignore[arg-type]
                    cathode_loading_mg_cm2=22.0, **kw)


def _sizing_plant(d) -> dict[str, object]:  # type: ignore[no-untyped-def]
    """The plant yields that match the sizing model's own cost: its scrap and yield, no
    credit (conversion, overhead and margin are other lines of the waterfall)."""
    return {"electrode_yield": 1.0 - d.electrode_scrap, "assembly_yield": d.cell_yield,
            "formation_yield": 1.0, "scrap_credit": 0.0}


def test_materials_agree_with_the_sizing_models_cost() -> None:
    # two independent routes to the materials cost (docs/sizing-model.md): the sizing
    # model's cost per kWh, and the plant model's materials + scrap at the same yields
    for spec in (_spec(), CellSpec("LFP", "graphite", target_capacity_Ah=[50.0, 120.0],
                                   cathode_loading_mg_cm2=25.0)):
        d = design_cell(spec)
        c = cell_cost(d, plant=_sizing_plant(d))
        np.testing.assert_allclose(c.waterfall["materials in cells"] + c.waterfall["scrap"],
                                   d.cost_per_kWh_USD, rtol=1e-12)
        assert c.book_name == DEMO_PRICES


def test_waterfall_per_cell_and_per_ah() -> None:
    d = design_cell(_spec())
    c = cell_cost(d, book="demo-2025-06")
    total = sum(float(v) for v in c.waterfall.values())
    assert total == pytest.approx(float(c.full_USD_kWh), rel=1e-13)
    assert float(c.materials_USD_kWh + c.conversion_USD_kWh + c.waterfall["margin"]) == \
        pytest.approx(float(c.full_USD_kWh), rel=1e-13)
    # per cell = per kWh * cell kWh; per Ah = per cell / cell Ah (definitions)
    assert float(c.full_USD_cell) == pytest.approx(
        float(c.full_USD_kWh) * float(d.energy_Wh) / 1000.0, rel=1e-13)
    assert float(c.full_USD_Ah) == pytest.approx(
        float(c.full_USD_cell) / float(d.capacity_Ah), rel=1e-13)
    # 20 GWh/yr (demo plant) of cells of energy_Wh each
    assert float(c.cells_per_year) == pytest.approx(20e9 / float(d.energy_Wh), rel=1e-13)
    # the components' purchase value in the cells adds up to that waterfall line
    assert sum(float(v) for v in c.components_USD_kWh.values()) == pytest.approx(
        float(c.waterfall["materials in cells"]), rel=1e-13)
    assert c.book_label == "demo-2025-06 (2025-06-30)" and c.caution == COST_CAUTION
    assert "demo-2025-06 (2025-06-30) row" in c.prices["graphite"][2]


def test_prices_on_other_bases() -> None:
    d = design_cell(_spec())
    base = cell_cost(d)
    # the tab priced per piece at its demo price per kg times its mass (demo data)
    tab_kg = float(d.components["anode tab (nickel tab)"]) / 1000.0
    per_piece = cell_cost(d, prices={"nickel tab": (32.0 * tab_kg, "USD/each")})
    assert float(per_piece.full_USD_kWh) == pytest.approx(float(base.full_USD_kWh), rel=1e-12)
    # the electrolyte per litre at its demo price per kg times the catalogue density 1.28
    per_litre = cell_cost(d, prices={"LiPF6 1M in EC:DMC": (9.5 * 1.28, "L", "USD")})
    assert float(per_litre.full_USD_kWh) == pytest.approx(float(base.full_USD_kWh), rel=1e-12)
    with pytest.raises(UnitError) as coating:
        cell_cost(d, prices={"NMC811": (10.0, "USD/m^2")})
    assert "has no area quantity" in str(coating.value)
    with pytest.raises(UnitError) as pouch:
        cell_cost(d, prices={"nickel tab": (1.0, "USD/m^2")})
    assert "price it per kg or per each" in str(pouch.value)
    with pytest.raises(InputError):
        cell_cost(d, prices={"NMC811": "cheap"})  # type: ignore[dict-item]
    with pytest.raises(NotFoundError):
        cell_cost(d, prices={"unobtainium": 1.0})


def test_index_overrides_and_book_choice() -> None:
    d = design_cell(_spec())
    base = cell_cost(d, book="demo-2025-06")
    up = cell_cost(d, book="demo-2025-06", indexes={"nickel": 25500.0})
    s = float(base.index_sensitivity["nickel"])  # USD/kWh per 1,000 USD/t
    # demo book's nickel index is 15,500 USD/t: +10,000 USD/t moves the cost by 10 * s
    assert float(up.full_USD_kWh - base.full_USD_kWh) == pytest.approx(10 * s, rel=1e-9)
    fixed = cell_cost(d, book="demo-2024-12")
    assert fixed.book_label == "demo-2024-12 (2024-12-31)" and not fixed.index_sensitivity
    with pytest.raises(NotFoundError):
        cell_cost(d, book="demo-2025-06", indexes={"nikel": 1.0})
    with pytest.raises(InputError, match="priced against 'zinc'"):
        cell_cost(d, book="demo-2025-06", indexes={"zinc": 3000.0})  # not in this cell
    with pytest.raises(InputError, match="priced against 'nickel'"):
        cell_cost(d, indexes={"nickel": 3000.0})  # the demo prices are all fixed
    with pytest.raises(NotFoundError):
        cell_cost(d, book="no such book")


def test_model_inputs_and_design_ranges() -> None:
    d = design_cell(_spec())
    m = cost_model(d, book="demo-2025-06")
    names = dict((n, u) for n, u, _ in m.inputs())
    assert names["index:nickel"] == "USD/t" and names["price:PE separator"] == "USD/m^2"
    assert names["energy_price_USD_per_kWh"] == "USD/kWh"
    assert m.meta()["price book"] == "demo-2025-06 (2025-06-30)"
    with pytest.raises(NotFoundError) as info:
        m.check("index:nickle", 1.0)
    assert "index:nickel" in info.value.suggestions
    with pytest.raises(NotFoundError):
        m.check("design:colour", 1.0)
    # a design input re-sizes the cell inside the model: same as sizing it separately
    loads = np.array([18.0, 22.0, 26.0])
    out = m({"design:cathode_loading_mg_cm2": loads})
    for i, load in enumerate(loads):
        spec = CellSpec("NMC811", "graphite", target_capacity_Ah=55.0,
                        cathode_loading_mg_cm2=float(load))
        one = cell_cost(design_cell(spec), book="demo-2025-06")
        assert float(out["full_USD_kWh"][i]) == pytest.approx(float(one.full_USD_kWh), rel=1e-12)
    m.check("design:cathode_loading_mg_cm2", loads)
    with pytest.raises(DomainError) as bad:
        m.check("design:np_ratio", [-1.0, 1.1, 1.2])
    assert "np_ratio" in str(bad.value)
