"""The plant model (udfs.core.conversion_cost) against a hand calculation."""

from __future__ import annotations

import numpy as np
import pytest

from udfs.core.conversion_cost import COST_CAUTION, PLANT, PLANT_FIELDS, plant_cost, plant_kernel
from udfs.core.errors import DomainError, InputError, NotFoundError, ShapeError

# An invented plant (demo data) for the hand calculation below.
PLANT_CASE = {
    "annual_output_GWh": 10.0,
    "electrode_yield": 0.90,
    "assembly_yield": 0.95,
    "formation_yield": 0.98,
    "scrap_credit": 0.5,
    "capex_USD_per_GWh": 100e6,
    "depreciation_years": 8.0,
    "labour_headcount": 1000.0,
    "labour_cost_USD_per_year": 50_000.0,
    "energy_electrode_kWh_per_kWh": 10.0,
    "energy_dry_room_kWh_per_kWh": 8.0,
    "energy_formation_kWh_per_kWh": 5.0,
    "energy_price_USD_per_kWh": 0.12,
    "overhead_fraction": 0.2,
    "margin_fraction": 0.1,
}


def test_against_a_hand_calculation() -> None:
    # Hand calculation (done on paper, digits kept to 12 places), E = 40 and C = 10 USD/kWh:
    #   cells per good cell after formation 1/0.98 = 1.020408163265
    #   ... after assembly 1/(0.95*0.98) = 1/0.931 = 1.074113856069
    #   electrode per good cell 1/(0.90*0.931) = 1/0.8379 = 1.193459840076
    #   scrap = 40*1.193459840076 + 10*1.074113856069 - 50 = 8.479532163743
    #   credit = -0.5 * 8.479532163743 = -4.239766081871
    #   depreciation = 100e6 / (8 * 1e6) = 12.5
    #   labour = 1000 * 50,000 / (10 * 1e6) = 5.0
    #   energy = 0.12 * (10*1.193459840076 + 8*1.074113856069 + 5*1.020408163265)
    #          = 0.12 * 25.629550065640 = 3.075546007877
    #   overhead = 0.2 * (12.5 + 5.0 + 3.075546007877) = 4.115109201575
    #   before margin = 50 + 8.479532163743 - 4.239766081871 + 12.5 + 5 + 3.075546007877
    #                   + 4.115109201575 = 78.930421291324
    #   margin = 0.1 * 78.930421291324 = 7.893042129132; full = 86.823463420456
    w = plant_cost(40.0, 10.0, PLANT_CASE)
    hand = {
        "materials in cells": 50.0,
        "scrap": 8.479532163743,
        "scrap credit": -4.239766081871,
        "depreciation": 12.5,
        "labour": 5.0,
        "energy": 3.075546007877,
        "overhead": 4.115109201575,
        "margin": 7.893042129132,
    }
    for line, value in w.lines().items():
        assert float(value) == pytest.approx(hand[line], rel=1e-11), line
    assert float(w.full_USD_kWh) == pytest.approx(86.823463420456, rel=1e-11)
    assert float(w.energy_kWh_per_kWh) == pytest.approx(25.629550065640, rel=1e-11)
    assert float(sum(w.lines().values())) == pytest.approx(float(w.full_USD_kWh), rel=1e-15)
    assert w.caution == COST_CAUTION and "not quotations" in w.caution


def test_waterfall_sums_to_the_total_over_arrays() -> None:
    rng = np.random.default_rng(3)
    E = rng.uniform(10, 80, 500)
    w = plant_cost(E, 12.0, {"energy_price_USD_per_kWh": rng.uniform(0.02, 0.3, 500),
                             "formation_yield": 0.9})
    np.testing.assert_allclose(sum(w.lines().values()), w.full_USD_kWh, rtol=1e-13)
    assert w.full_USD_kWh.shape == (500,)


def test_perfect_yields_and_nothing_else_leave_the_materials() -> None:
    zero = {f: 0.0 for f in ("capex_USD_per_GWh", "labour_headcount", "energy_price_USD_per_kWh",
                             "overhead_fraction", "margin_fraction")}
    ones = {"electrode_yield": 1.0, "assembly_yield": 1.0, "formation_yield": 1.0}
    w = plant_cost(30.0, 20.0, {**zero, **ones})
    assert float(w.full_USD_kWh) == 50.0
    assert float(w.scrap_USD_kWh) == 0.0


def test_kernel_runs_on_plain_floats_too() -> None:
    p = {f: float(PLANT.default(f)) for f in PLANT_FIELDS}
    on_floats = plant_kernel(40.0, 10.0, p)
    on_arrays = plant_cost(40.0, 10.0, p)
    assert isinstance(on_floats["full"], float)
    assert on_floats["full"] == float(on_arrays.full_USD_kWh)


def test_inputs_are_checked_from_the_table() -> None:
    with pytest.raises(DomainError) as info:
        plant_cost(40.0, 10.0, {"electrode_yield": 0.0})
    assert str(info.value) == "electrode_yield must be > 0 and <= 1 (got 0)"
    with pytest.raises(DomainError):
        plant_cost(40.0, 10.0, {"margin_fraction": 1.0})
    with pytest.raises(NotFoundError) as unknown:
        plant_cost(40.0, 10.0, {"energy_price": 0.1})
    assert "energy_price_USD_per_kWh" in unknown.value.suggestions
    with pytest.raises(InputError):
        plant_cost("forty", 10.0)
    with pytest.raises(ShapeError):
        plant_cost([1.0, 2.0], [1.0, 2.0, 3.0])
    with pytest.raises(InputError):
        plant_cost(1.0, 1.0, [("capex_USD_per_GWh", 1.0)])  # type: ignore[arg-type]
    # every input of the table is labelled demo data and has a defined name
    assert all(i.source == "demo data (invented)" and i.name.startswith("in_") for i in PLANT)
