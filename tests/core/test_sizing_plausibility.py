"""Plausibility against facts of the trade: generic cells of each format class
sized by the core (presets and the chemistries' recipes, typical loadings)
fall inside the usual ranges of capacity, mass, Wh/kg and Wh/L of their class.

The ranges are typical figures of the trade for generic classes, recalled (marked
"common practice, from memory" beside each), never a product's datasheet. The
loadings are the middle of each chemistry's usual range in data/active_materials.csv
(common practice rows). A range is wide on purpose: the test catches a model that is
off by a factor, a unit or a double-counted loss, not one that differs by a few percent.
"""

from __future__ import annotations

from typing import NamedTuple

import pytest

from udfs.core.design_rules import ALL_PASS, review_design
from udfs.core.sizing import CellSpec


class Range(NamedTuple):
    capacity_Ah: tuple[float, float]
    mass_g: tuple[float, float]
    Wh_kg: tuple[float, float]
    Wh_L: tuple[float, float]


CASES = [
    pytest.param(
        CellSpec("NMC811", "graphite", cell_format="cylindrical", cylinder_class="18 mm",
                 sizing_mode="envelope", cathode_loading_mg_cm2=22.0),
        # 18 mm class high-nickel energy cells: 2.5-3.6 Ah, 42-50 g, 200-270 Wh/kg,
        # 550-760 Wh/L (common practice, from memory)
        Range((2.5, 3.6), (42.0, 50.0), (200.0, 270.0), (550.0, 760.0)),
        id="18 mm class NMC811",
    ),
    pytest.param(
        CellSpec("NCA", "graphite", cell_format="cylindrical", cylinder_class="18 mm",
                 sizing_mode="envelope", cathode_loading_mg_cm2=21.0),
        # same class, NCA: same ranges (common practice, from memory)
        Range((2.5, 3.6), (42.0, 50.0), (200.0, 270.0), (550.0, 760.0)),
        id="18 mm class NCA",
    ),
    pytest.param(
        CellSpec("NMC811", "graphite", cell_format="cylindrical", cylinder_class="21 mm",
                 sizing_mode="envelope", cathode_loading_mg_cm2=22.0),
        # 21 mm class energy cells: 4.0-5.3 Ah, 62-72 g, 220-290 Wh/kg, 600-800 Wh/L
        # (common practice, from memory; QUINN2018 compares the 18 and 21 mm classes)
        Range((4.0, 5.3), (62.0, 72.0), (220.0, 290.0), (600.0, 800.0)),
        id="21 mm class NMC811",
    ),
    pytest.param(
        CellSpec("LFP", "graphite", cell_format="prismatic", sizing_mode="envelope",
                 cathode_loading_mg_cm2=25.0,
                 electrolyte_fill=1.3),  # common practice: long-life storage cells carry excess
        # large prismatic storage class (about 174 x 200 x 72 mm body): 250-350 Ah,
        # 4.8-6.0 kg, 160-205 Wh/kg (issue 12: commercial LFP cells, from memory),
        # 330-440 Wh/L (common practice, from memory)
        Range((250.0, 350.0), (4800.0, 6000.0), (160.0, 205.0), (330.0, 440.0)),
        id="LFP prismatic storage class",
    ),
    pytest.param(
        CellSpec("NMC811", "graphite", target_capacity_Ah=55.0, cathode_loading_mg_cm2=22.0,
                 width_mm=100.0, height_mm=300.0),
        # large high-nickel pouch, 50-60 Ah: 50-65 Ah, 600-900 g, 230-310 Wh/kg,
        # 550-750 Wh/L (common practice, from memory)
        Range((50.0, 65.0), (600.0, 900.0), (230.0, 310.0), (550.0, 750.0)),
        id="NMC811 pouch",
    ),
    pytest.param(
        CellSpec("NFM111", "hard carbon", cell_format="cylindrical", cylinder_class="18 mm",
                 sizing_mode="envelope", cathode_loading_mg_cm2=18.0),
        # sodium-ion layered oxide / hard carbon, 18 mm class: 1.0-1.7 Ah, 35-48 g,
        # 90-160 Wh/kg, 200-350 Wh/L (common practice, from memory; HWANG2017 and VAALMA2018
        # for the chemistry)
        Range((1.0, 1.7), (35.0, 48.0), (90.0, 160.0), (200.0, 350.0)),
        id="sodium-ion 18 mm class",
    ),
]


@pytest.mark.parametrize(("spec", "want"), CASES)
def test_generic_cells_fall_in_their_class(spec: CellSpec, want: Range) -> None:
    review = review_design(spec)
    assert review.summary() == [ALL_PASS]  # a class-typical design breaks no design rule
    d = review.design
    got = Range(float(d.capacity_Ah), float(d.cell_mass_g), float(d.specific_energy_Wh_kg),
                float(d.energy_density_Wh_L))
    for name, (lo, hi), value in zip(Range._fields, want, got, strict=True):
        assert lo <= value <= hi, f"{name} {value:.4g} outside {lo:g}-{hi:g}"


def test_the_same_chemistry_in_each_format_orders_as_the_trade_expects() -> None:
    # common practice: a pouch packs the stack tighter than a can, and the steel can of a
    # small cylinder weighs more per Wh than a large aluminium prismatic can
    kw = dict(cathode="NMC811", anode="graphite", cathode_loading_mg_cm2=22.0,
              sizing_mode="envelope")
    pouch = review_design(CellSpec(**kw)).design  # type: ignore[arg-type]
    small = review_design(CellSpec(**kw, cell_format="cylindrical",  # type: ignore[arg-type]
                                   cylinder_class="18 mm")).design
    assert float(pouch.specific_energy_Wh_kg) > float(small.specific_energy_Wh_kg)
    housing_share = float(small.housing_body_mass_g + small.housing_lid_mass_g) / float(
        small.cell_mass_g)
    assert 0.1 < housing_share < 0.3  # 18 mm can and cap: 10-30 % of the cell (common practice)
