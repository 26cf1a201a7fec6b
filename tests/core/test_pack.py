"""The pack (udfs.core.pack): series count from the voltage window, parallel
strings from the energy, the structure as fractions or component lines, and
the 60 V DC caution. Cell numbers and pack inputs are round numbers for hand
arithmetic (common practice magnitudes); component costs are invented demo data."""

from __future__ import annotations

import math

import numpy as np
import pytest

from udfs.core.element_errors import ElementErrors
from udfs.core.errors import DomainError, InputError
from udfs.core.pack import (
    HIGH_VOLTAGE_CAUTION,
    HIGH_VOLTAGE_DC_V,
    PACK_OUTPUTS,
    CellValues,
    PackSpec,
    high_voltage_caution,
    series_count,
    size_pack,
)
from udfs.core.sizing import size_cell
from udfs.core.sizing_table import CELL_SIZING, PACK_LINES

# an LFP-like cell: 3.2 V nominal, 2.5-3.65 V, 100 Ah, 2 kg, 1 L (1.1 L box), 30 USD
CELL = CellValues(3.2, 2.5, 3.65, 100.0, 2000.0, 1000.0, 1100.0, 30.0)


def test_series_from_the_window_by_hand() -> None:
    # 48 V class window 40-60 V: floor(60 / 3.65) = 16 cells (58.4 V charged), and 16 * 2.5 =
    # 40 V >= 40 V empty
    assert float(series_count(40.0, 60.0, 2.5, 3.65)) == 16.0
    # 400 V class 200-450 V with 2.5-4.2 V cells: floor(450 / 4.2) = 107; 107 * 2.5 = 267.5 V
    assert float(series_count(200.0, 450.0, 2.5, 4.2)) == 107.0
    # exactly on the limit: 3.65 * 16 = 58.4 V (float noise must not drop a cell)
    assert float(series_count(40.0, 58.4, 2.5, 3.65)) == 16.0


def test_a_window_no_series_count_fits_is_refused() -> None:
    # 16 cells reach 58.4 V but also fall to 40 V: a load that needs 45 V cannot be served
    with pytest.raises(DomainError) as info:
        series_count(45.0, 60.0, 2.5, 3.65)
    assert info.value.argument == "pack_voltage_min_V" and "40 V" in str(info.value)
    with pytest.raises(DomainError) as info:
        series_count(1.0, 3.0, 2.5, 3.65)  # not even one cell
    assert info.value.argument == "pack_voltage_max_V"
    errors = ElementErrors((3,), strict=False)
    got = series_count(np.array([40.0, 45.0, 40.0]), 60.0, 2.5, 3.65, errors)
    assert errors.failed().tolist() == [False, True, False] and got[0] == 16.0


def test_pack_with_fractions_by_hand() -> None:
    p = size_pack(CELL, PackSpec(pack_voltage_min_V=40.0, pack_voltage_max_V=60.0,
                                 pack_energy_kWh=10.0, cell_to_pack_mass_fraction=0.8,
                                 cell_to_pack_volume_fraction=0.5,
                                 cell_to_pack_cost_fraction=0.75))
    # 16 s; 10 kWh / (16 * 320 Wh) = 1.95 -> 2 p; 32 cells, 10.24 kWh
    assert (int(p.series), int(p.parallel), int(p.cells)) == (16, 2, 32)
    assert float(p.pack_energy_kWh) == pytest.approx(10.24, rel=1e-12)
    assert float(p.pack_voltage_nominal_V) == pytest.approx(51.2, rel=1e-12)
    assert float(p.pack_capacity_Ah) == pytest.approx(200.0, rel=1e-12)
    # mass 32 * 2 kg / 0.8 = 80 kg; volume 32 L / 0.5 = 64 L; cost 32 * 30 / 0.75 = 1280 USD
    assert float(p.pack_mass_kg) == pytest.approx(80.0, rel=1e-12)
    assert float(p.pack_volume_L) == pytest.approx(64.0, rel=1e-12)
    assert float(p.pack_cost_USD) == pytest.approx(1280.0, rel=1e-12)
    assert float(p.pack_specific_energy_Wh_kg) == pytest.approx(10240 / 80, rel=1e-12)
    assert float(p.pack_energy_density_Wh_L) == pytest.approx(10240 / 64, rel=1e-12)
    assert float(p.pack_cost_per_kWh_USD) == pytest.approx(1280 / 10.24, rel=1e-12)
    assert not bool(p.above_60V_DC) and p.caution == ""


def test_pack_with_component_lines_by_hand() -> None:
    spec = PackSpec(pack_voltage_min_V=40.0, pack_voltage_max_V=60.0, pack_energy_kWh=10.0,
                    structure="components", cells_per_module=12.0,
                    busbar_mass_g=10.0, busbar_volume_cm3=1.0, busbar_cost_USD=0.5,
                    holder_mass_g=20.0, holder_volume_cm3=50.0, holder_cost_USD=0.25,
                    frame_mass_kg=1.0, frame_volume_L=2.0, frame_cost_USD=10.0,
                    electronics_mass_kg=3.0, electronics_volume_L=4.0, electronics_cost_USD=300.0,
                    thermal_mass_kg=5.0, thermal_volume_L=6.0, thermal_cost_USD=200.0,
                    enclosure_mass_kg=20.0, enclosure_volume_L=30.0, enclosure_cost_USD=400.0)
    p = size_pack(CELL, spec)
    # 32 cells in ceil(32/12) = 3 modules
    assert int(p.modules) == 3
    # mass: 64 + 32*0.010 + 32*0.020 + 3*1 + 3 + 5 + 20 = 95.96 kg
    assert float(p.pack_mass_kg) == pytest.approx(95.96, rel=1e-12)
    # volume: cell boxes 32 * 1.1 L = 35.2; + 0.032 + 1.6 + 6 + 4 + 6 + 30 = 82.832 L
    assert float(p.pack_volume_L) == pytest.approx(82.832, rel=1e-12)
    # cost: 960 + 16 + 8 + 30 + 300 + 200 + 400 = 1914 USD
    assert float(p.pack_cost_USD) == pytest.approx(1914.0, rel=1e-12)
    assert set(p.lines) == {line.key for line in PACK_LINES}
    assert float(p.lines["frame"][0]) == pytest.approx(3.0, rel=1e-12)


def test_the_60_volt_caution() -> None:
    assert HIGH_VOLTAGE_DC_V == 60.0  # common practice: the usual DC extra-low-voltage limit
    assert high_voltage_caution(60.0) == "" and high_voltage_caution(60.01) == HIGH_VOLTAGE_CAUTION
    assert "standards" in HIGH_VOLTAGE_CAUTION and "qualified engineers" in HIGH_VOLTAGE_CAUTION
    p = size_pack(CELL, PackSpec(pack_voltage_min_V=[40.0, 200.0], pack_voltage_max_V=[60.0,
                                 450.0], pack_energy_kWh=10.0))
    assert p.above_60V_DC.tolist() == [False, True] and p.caution == HIGH_VOLTAGE_CAUTION


def test_pack_of_a_sized_cell_and_vectorised() -> None:
    d = size_cell("LFP", "graphite", cell_format="prismatic", sizing_mode="envelope",
                  cathode_loading_mg_cm2=25.0)
    p = size_pack(d, PackSpec(pack_energy_kWh=[[100.0], [200.0]], structure="components",
                              pack_voltage_max_V=[400.0, 800.0]))
    assert p.series.shape == (2, 2)
    assert np.all(p.pack_energy_kWh >= [[100.0], [200.0]])
    # one parallel string fewer would miss the energy
    short = (p.parallel - 1) * p.series * d.energy_Wh / 1000
    assert np.all(short < [[100.0], [200.0]])
    assert np.all(p.pack_voltage_max_V <= [400.0, 800.0])
    for name in PACK_OUTPUTS:
        assert np.all(np.isfinite(getattr(p, name))), name


def test_pack_inputs_come_from_the_table_and_are_checked() -> None:
    for name in ("pack_voltage_min_V", "cell_to_pack_mass_fraction", "cells_per_module"):
        with pytest.raises(DomainError) as info:
            size_pack(CELL, PackSpec(**{name: -1.0}))  # type: ignore[arg-type]
        assert str(info.value) == CELL_SIZING.reason(name, -1.0)
    with pytest.raises(InputError):
        size_pack(CELL, PackSpec(structure="bricks"))
    with pytest.raises(InputError):
        size_pack("cell", PackSpec())  # type: ignore[arg-type]
    pb = size_cell("PbO2", "Pb", target_capacity_Ah=10.0, cathode_loading_mg_cm2=100.0,
                   cathode_foil="copper foil", anode_foil="copper foil",
                   cathode_binder="PVDF", anode_binder="PVDF", cathode_carbon="carbon black",
                   anode_carbon="carbon black", cathode_active_fraction=0.9,
                   cathode_binder_fraction=0.05, anode_active_fraction=0.9,
                   anode_binder_fraction=0.05, cathode_porosity=0.4, anode_porosity=0.4)
    assert math.isnan(float(pb.voltage_min_V))  # no window in the catalogue for PbO2/Pb
    with pytest.raises(InputError, match="voltage_min_V"):
        size_pack(pb, PackSpec())
