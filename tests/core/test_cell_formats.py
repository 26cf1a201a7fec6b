"""Formats: the wound roll's spiral, the cans and the pouch against hand
calculations written out here, target and envelope modes that invert each
other, and presets that carry their basis.

Dimensions are the presets of generic classes (common practice / from memory,
udfs.core.cell_formats.PRESETS) or round numbers chosen for hand arithmetic;
densities are the catalogue's (data/inactive_materials.csv, CRC-HCP rows).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from udfs.core import catalogue
from udfs.core.cell_formats import (
    CYLINDER_CLASSES,
    FORMATS,
    GEOMETRY_FIELDS,
    PRESETS,
    computed_fields,
    floor_count,
    used_fields,
)
from udfs.core.sizing import CellSpec, design_cell, size_cell
from udfs.core.spiral import arc_length, turns, wound_length, wound_thickness


def _rho(name: str) -> float:
    return catalogue.material(name).number("density")


# ---------------------------------------------------------------- the spiral


def _spiral_by_quadrature(r0: float, r1: float, pitch: float, steps: int = 200_000) -> float:
    """Arc length of r = r0 + pitch * theta / (2 pi) by the trapezoid rule on
    ds = sqrt(r^2 + (dr/dtheta)^2) dtheta: an independent route to the formula."""
    b = pitch / (2 * math.pi)
    t1 = (r1 - r0) / b
    h = t1 / steps
    total = 0.0
    for k in range(steps + 1):
        r = r0 + b * k * h
        f = math.sqrt(r * r + b * b)
        total += f if 0 < k < steps else f / 2
    return total * h


def test_spiral_length_against_quadrature_and_the_area_estimate() -> None:
    # an 18 mm class roll (preset): core 2.0 mm, roll 18.3 - 2 * 0.25 = 17.8 mm, pitch 345 um
    got = float(wound_length(17.8, 2.0, 345.0))
    assert got == pytest.approx(_spiral_by_quadrature(1.0, 8.9, 0.345), rel=1e-9)
    # the area estimate pi (R^2 - r0^2) / pitch = pi (79.21 - 1) / 0.345 = 712.19 mm is within
    # a tenth of a percent (hand arithmetic; the exact arc is a little longer)
    area = math.pi * (8.9**2 - 1.0**2) / 0.345
    assert area == pytest.approx(712.19, abs=0.01)
    assert 0 < got - area < 1e-3 * area
    # turns: (8.9 - 1.0) / 0.345 = 22.899 (hand arithmetic)
    assert float(turns(17.8, 2.0, 345.0)) == pytest.approx(7.9 / 0.345, rel=1e-12)


def test_one_turn_from_the_centre() -> None:
    # r0 = 0, pitch 1: one turn to R = 1. Hand evaluation of the closed form with
    # b = 1/(2 pi) = 0.159155: [1 * sqrt(1 + b^2) + b^2 asinh(1/b)] / (2 b)
    b = 1 / (2 * math.pi)
    by_hand = (math.sqrt(1 + b * b) + b * b * math.asinh(1 / b)) / (2 * b)
    assert by_hand == pytest.approx(3.383044, abs=1e-6)
    assert float(arc_length(0.0, 1.0, 1.0)) == pytest.approx(by_hand, rel=1e-14)
    assert by_hand == pytest.approx(_spiral_by_quadrature(0.0, 1.0, 1.0), rel=1e-9)


def test_flat_roll_adds_two_straights_per_turn() -> None:
    # racetrack: width 170, thickness 30, core 2 mm, pitch 0.4 mm: turns = (15 - 1)/0.4 = 35,
    # straight part 170 - 30 = 140 mm twice per turn: 2 * 140 * 35 = 9800 mm on top of the arcs
    flat = float(wound_length(30.0, 2.0, 400.0, width_mm=170.0))
    arcs = float(wound_length(30.0, 2.0, 400.0))
    assert flat - arcs == pytest.approx(9800.0, rel=1e-12)


def test_roll_thickness_inverts_the_length() -> None:
    t = np.linspace(3.0, 60.0, 50)
    np.testing.assert_allclose(wound_thickness(wound_length(t, 2.0, 350.0), 2.0, 350.0), t,
                               rtol=1e-12)
    flat = np.linspace(3.0, 40.0, 20)
    lengths = wound_length(flat, 1.0, 420.0, 172.0)
    np.testing.assert_allclose(wound_thickness(lengths, 1.0, 420.0, 172.0), flat, rtol=1e-12)
    # a length no roll of that width can hold: NaN (the caller turns it into an error)
    assert math.isnan(float(wound_thickness(1e9, 1.0, 420.0, 172.0)))


def test_floor_count_forgives_float_noise() -> None:
    assert floor_count([2.9999999999996, 3.0000000001, 2.5]).tolist() == [3.0, 3.0, 2.0]


# ---------------------------------------------------------------- cylinders


def test_cylinder_can_and_roll_by_hand() -> None:
    # 18 mm class presets: D 18.3, H 65, wall 0.25, bottom 0.3, lid 1.0, headspace 4.0,
    # core 2.0, no lane; steel 7.85 g/cm3 (catalogue, nickel-plated steel housing)
    d = size_cell("NMC811", "graphite", cell_format="cylindrical", cylinder_class="18 mm",
                  sizing_mode="envelope", cathode_loading_mg_cm2=22.0)
    steel = _rho("nickel-plated steel housing")
    # can body: tube pi/4 (18.3^2 - 17.8^2) (65 - 0.3 - 1.0) = 14.1765 * 63.7 = 903.04 mm3,
    # bottom pi/4 18.3^2 * 0.3 = 78.91 mm3: 981.95 mm3
    tube = math.pi / 4 * (334.89 - 316.84) * 63.7
    bottom = math.pi / 4 * 334.89 * 0.3
    assert tube + bottom == pytest.approx(981.95, abs=0.01)
    assert float(d.housing_body_mass_g) == pytest.approx((tube + bottom) / 1000 * steel,
                                                         rel=1e-12)
    # cap: pi/4 18.3^2 * 1.0 = 263.02 mm3 of steel
    assert float(d.housing_lid_mass_g) == pytest.approx(math.pi / 4 * 334.89 / 1000 * steel,
                                                        rel=1e-12)
    # roll height 65 - 0.3 - 1.0 - 4.0 = 59.7 mm = separator width; anode 59.7 - 3 = 56.7;
    # cathode 56.7 - 2 = 54.7 (overhangs 1.5 and 1.0 mm each edge)
    assert float(d.separator_width_mm) == pytest.approx(59.7, rel=1e-12)
    assert float(d.cathode_width_mm) == pytest.approx(54.7, rel=1e-12)
    # strips: separator = the spiral from r 1.0 to 8.9 mm at the design's pitch; the anode is
    # 2 x 1.5 mm shorter, the cathode 2 x 1.0 mm shorter again
    pitch = float(d.pitch_um) / 1000
    spiral = _spiral_by_quadrature(1.0, 8.9, pitch)
    assert float(d.separator_length_mm) == pytest.approx(spiral, rel=1e-9)
    assert float(d.cathode_length_mm) == pytest.approx(spiral - 5.0, rel=1e-9)
    # coated area both faces: 2 * L_c * 54.7 mm2; capacity = area * reversible mAh/cm2
    area = 2 * (spiral - 5.0) * 54.7 / 100
    assert float(d.cathode_coated_area_cm2) == pytest.approx(area, rel=1e-9)
    assert float(d.capacity_Ah) == pytest.approx(
        area * float(d.reversible_areal_capacity_mAh_cm2) / 1000, rel=1e-9)
    # volume pi/4 18.3^2 * 65 mm3 = 17.097 cm3
    assert float(d.cell_volume_cm3) == pytest.approx(math.pi / 4 * 334.89 * 65 / 1000, rel=1e-12)
    # tabs: 4 x 0.1 x 60 mm = 0.024 cm3 each (aluminium and nickel)
    assert float(d.cathode_tab_mass_g) == pytest.approx(0.024 * _rho("aluminium tab"), rel=1e-12)
    assert float(d.anode_tab_mass_g) == pytest.approx(0.024 * _rho("nickel tab"), rel=1e-12)


def test_uncoated_lanes_widen_the_foils_and_the_roll() -> None:
    # 46 mm class, lane 6 mm: the cathode lane passes the separator by 6 - 2.5 = 3.5 mm, the
    # anode lane by 6 - 1.5 = 4.5 mm; separator width = 80 - 0.6 - 1.2 - 5 - 8 = 65.2 mm
    d = size_cell("NMC811", "graphite", cell_format="cylindrical", cylinder_class="46 mm",
                  sizing_mode="envelope", cathode_loading_mg_cm2=22.0)
    assert float(d.separator_width_mm) == pytest.approx(65.2, rel=1e-12)
    assert float(d.cathode_width_mm) == pytest.approx(60.2, rel=1e-12)
    # foil = coated width + lane, along the strip
    assert float(d.cathode_foil_area_cm2) == pytest.approx(
        float(d.cathode_length_mm) * (60.2 + 6.0) / 100, rel=1e-12)
    assert float(d.anode_foil_area_cm2) == pytest.approx(
        float(d.anode_length_mm) * (62.2 + 6.0) / 100, rel=1e-12)


def test_cylinder_target_gives_the_height_the_envelope_takes_back() -> None:
    for cls in CYLINDER_CLASSES:
        env = size_cell("NCA", "graphite", cell_format="cylindrical", cylinder_class=cls,
                        sizing_mode="envelope", cathode_loading_mg_cm2=21.0)
        tgt = size_cell("NCA", "graphite", cell_format="cylindrical", cylinder_class=cls,
                        target_capacity_Ah=float(env.capacity_Ah), cathode_loading_mg_cm2=21.0)
        assert float(tgt.cell_height_mm) == pytest.approx(PRESETS[f"cylindrical {cls}"][
            "cell_height_mm"].value, rel=1e-12)
        assert float(tgt.cell_mass_g) == pytest.approx(float(env.cell_mass_g), rel=1e-12)
    # a taller target, a taller can: height rises with the capacity
    d = size_cell("NCA", "graphite", cell_format="cylindrical", cylinder_class="46 mm",
                  target_capacity_Ah=[15.0, 20.0, 25.0], cathode_loading_mg_cm2=21.0)
    assert np.all(np.diff(d.cell_height_mm) > 0)


# ---------------------------------------------------------------- prismatic


def test_prismatic_can_by_hand() -> None:
    # prismatic presets: 174 x 200 x 72 mm, wall 1.0, bottom 1.0, lid 5.0; aluminium 2.70
    d = size_cell("LFP", "graphite", cell_format="prismatic", sizing_mode="envelope",
                  cathode_loading_mg_cm2=25.0)
    al = _rho("aluminium housing")
    # body: 174*72*(200 - 5) - 172*70*(200 - 5 - 1) = 2442960 - 2335760 = 107200 mm3
    assert 174 * 72 * 195 - 172 * 70 * 194 == 107200
    assert float(d.housing_body_mass_g) == pytest.approx(107.2 * al, rel=1e-12)
    # lid: 174*72*5 = 62640 mm3
    assert float(d.housing_lid_mass_g) == pytest.approx(62.64 * al, rel=1e-12)
    # two flat rolls, each (72 - 2)/2 = 35 mm thick and 172 mm wide
    assert float(d.cores) == 2 and float(d.roll_thickness_mm) == pytest.approx(35.0, rel=1e-12)
    strip = float(wound_length(35.0, 1.0, float(d.pitch_um), 172.0))
    assert float(d.separator_length_mm) == pytest.approx(strip, rel=1e-12)
    # roll height 200 - 1 - 5 - 15 = 179; lanes 10 mm pass the separator by 7.5 and 8.5 mm:
    # separator 163 mm, cathode 163 - 5 = 158 mm wide
    assert float(d.cathode_width_mm) == pytest.approx(158.0, rel=1e-12)
    area = 2 * 2 * (strip - 5.0) * 158.0 / 100  # two rolls, both faces
    assert float(d.cathode_coated_area_cm2) == pytest.approx(area, rel=1e-12)


def test_prismatic_target_gives_the_thickness_the_envelope_takes_back() -> None:
    env = size_cell("LFP", "graphite", cell_format="prismatic", sizing_mode="envelope",
                    cathode_loading_mg_cm2=25.0, cores=[1.0, 2.0, 4.0])
    tgt = size_cell("LFP", "graphite", cell_format="prismatic", cathode_loading_mg_cm2=25.0,
                    target_capacity_Ah=env.capacity_Ah, cores=[1.0, 2.0, 4.0])
    np.testing.assert_allclose(tgt.cell_thickness_mm, 72.0, rtol=1e-10)
    np.testing.assert_allclose(tgt.cell_mass_g, env.cell_mass_g, rtol=1e-9)


def test_prismatic_stack_counts_whole_layers() -> None:
    # stacked: per stack, (72 - 2)/2 = 35 mm = 35000 um holds floor((35000 - t_fa)/pitch)
    # cathode sheets between anodes
    d = size_cell("LFP", "graphite", cell_format="prismatic", prismatic_core="stacked",
                  sizing_mode="envelope", cathode_loading_mg_cm2=25.0)
    n = math.floor((35000 - 8.0) / float(d.pitch_um))  # copper foil 8 um (catalogue)
    assert float(d.cathode_sheets) == 2 * n and float(d.anode_sheets) == 2 * (n + 1)
    # sheets: 172 - 5 = 167 mm wide, 179 - 5 = 174 mm tall (no lanes in a stack)
    assert float(d.cathode_width_mm) == 167.0 and float(d.cathode_length_mm) == 174.0


# ---------------------------------------------------------------- pouch


def test_pouch_envelope_and_target_agree() -> None:
    env = size_cell("NMC811", "graphite", sizing_mode="envelope", cathode_loading_mg_cm2=22.0)
    # outer 115 x 315 (preset) less 2 x 5 mm seals less 2 x 2.5 mm overhangs: 100 x 300 sheet
    assert float(env.cathode_width_mm) == 100.0 and float(env.cathode_length_mm) == 300.0
    tgt = size_cell("NMC811", "graphite", target_capacity_Ah=float(env.capacity_Ah),
                    cathode_loading_mg_cm2=22.0)
    assert float(tgt.cathode_sheets) == float(env.cathode_sheets)
    assert float(tgt.cell_width_mm) == 115.0 and float(tgt.cell_height_mm) == 315.0
    # the envelope's thickness holds the stack: at most one layer pair of slack
    slack = float(env.cell_thickness_mm) - float(tgt.cell_thickness_mm)
    assert 0 <= slack < float(env.pitch_um) / 1000


# ---------------------------------------------------------------- presets


def test_every_preset_names_its_basis_and_every_format_its_fields() -> None:
    for key, values in PRESETS.items():
        for name, p in values.items():
            assert p.value >= 0 and p.basis, (key, name)
            assert name in (*GEOMETRY_FIELDS, "cores"), (key, name)
            assert "common practice" in p.basis or "from memory" in p.basis, (key, name)
    for fmt in FORMATS:
        for mode in ("target", "envelope"):
            used = set(used_fields(fmt, mode))
            assert not used & set(computed_fields(fmt, mode)), (fmt, mode)
            key = f"cylindrical {CYLINDER_CLASSES[0]}" if fmt == "cylindrical" else fmt
            missing = used - set(PRESETS[key]) - {"wall_mm"}  # a pouch's wall: the laminate
            assert not missing, (fmt, mode, missing)


def test_given_dimensions_override_presets() -> None:
    a = size_cell("NMC811", "graphite", cell_format="cylindrical", sizing_mode="envelope",
                  cathode_loading_mg_cm2=22.0, cylinder_class="21 mm")
    b = design_cell(CellSpec("NMC811", "graphite", cell_format="cylindrical",
                             sizing_mode="envelope", cathode_loading_mg_cm2=22.0,
                             cylinder_class="18 mm", cell_diameter_mm=21.2,
                             cell_height_mm=70.0, bottom_mm=0.35, headspace_mm=4.5,
                             core_mm=2.5, tab_width_mm=5.0, tab_length_mm=65.0))
    # the 18 mm class's other presets equal the 21 mm class's (wall, lid, lane, tab thickness)
    assert float(b.capacity_Ah) == pytest.approx(float(a.capacity_Ah), rel=1e-12)
    assert float(b.cell_mass_g) == pytest.approx(float(a.cell_mass_g), rel=1e-12)
