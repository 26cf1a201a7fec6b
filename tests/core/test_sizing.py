"""Cell and pack sizing against hand arithmetic of the documented equations
(docs/sizing-model.md), mass conservation, monotonicity, array/scalar agreement
and input validation.

Design inputs in this file are round numbers chosen for easy arithmetic (common
practice magnitudes); material densities and prices are read from the catalogue
(data/, each row with its own source; prices are invented demo data). Expected
values are either hand arithmetic written out beside them or a plain-float
re-implementation of the documented equations (``_reference``) that does not
call the code under test.
"""

from __future__ import annotations

import math
from dataclasses import fields
from typing import Any

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from udfs.core import catalogue
from udfs.core.errors import (
    CellwrightError,
    DomainError,
    InputError,
    NotFoundError,
    ShapeError,
    UnitError,
)
from udfs.core.inputs import Input
from udfs.core.procurement import order_materials
from udfs.core.sizing import (
    CellDesign,
    CellSpec,
    CellValues,
    ceil_count,
    design_cell,
    size_cell,
    size_pack,
)
from udfs.core.sizing_table import CELL_SIZING, COMPONENTS
from udfs.core.sizing_values import (
    SPEC_INPUTS,
    field_of,
    order_from_values,
    spec_from_values,
    spec_values,
    vary,
)
from udfs.core.validate import Domain, FreeText, Names, Options

# ---------------------------------------------------------------- reference model


def _rho(name: str) -> float:
    return catalogue.material(name).number("density")


def _usd(name: str, basis: str) -> float:
    """Demo price (invented demo data) in USD/kg or USD/m^2 as the data file states."""
    fact = catalogue.price(name)
    assert fact.unit.replace(" ", "") == ("USD/kg" if basis == "kg" else "USD/m^2")
    return float(fact.value)


def _reference(**kw: object) -> dict[str, float]:
    """Plain-float implementation of docs/sizing-model.md (scalar inputs only).

    Requires explicit specific capacities, voltage, foil and separator data so
    that nothing but densities and prices comes from the catalogue."""
    g = dict(
        cathode_active_fraction=0.96, cathode_binder_fraction=0.02,
        anode_active_fraction=0.96, anode_binder_fraction=0.03,
        cathode_porosity=0.25, anode_porosity=0.30, np_ratio=1.1, first_cycle_loss=0.08,
        cathode_binder="PVDF", anode_binder={"CMC": 0.5, "SBR": 0.5},
        cathode_carbon="carbon black", anode_carbon="carbon black",
        cathode_foil="aluminium foil", anode_foil="copper foil", separator="PE separator",
        electrolyte="LiPF6 1M in EC:DMC", electrolyte_fill=1.1, cathode_tab="aluminium tab",
        anode_tab="nickel tab", tab_mass_g=2.0, housing="pouch laminate", housing_mass_g=15.0,
        width_mm=100.0, height_mm=300.0, anode_overhang_mm=1.0, separator_overhang_mm=1.5,
        volume_efficiency=0.85, electrode_scrap=0.05, cell_yield=0.95,
    )
    g.update(kw)
    x: dict[str, Any] = g
    f_c, b_c = x["cathode_active_fraction"], x["cathode_binder_fraction"]
    f_a, b_a = x["anode_active_fraction"], x["anode_binder_fraction"]
    k_c, k_a = max(1 - f_c - b_c, 0.0), max(1 - f_a - b_a, 0.0)
    q_c, q_a = x["cathode_specific_capacity_mAh_g"], x["anode_specific_capacity_mAh_g"]
    v = x["nominal_voltage_V"]
    if "cathode_loading_mg_cm2" in x:
        l_c = x["cathode_loading_mg_cm2"]
        qc = l_c * f_c * q_c / 1000
    else:
        qc = x["cathode_areal_capacity_mAh_cm2"]
        l_c = qc * 1000 / (f_c * q_c)
    target = x["target_capacity_Ah"] if "target_capacity_Ah" in x else x["target_energy_Wh"] / v
    qu = qc * (1 - x["first_cycle_loss"])
    w, h = x["width_mm"], x["height_mm"]
    oa, os_ = x["anode_overhang_mm"], x["separator_overhang_mm"]
    a_fp = w * h / 100
    a_fpa = (w + 2 * oa) * (h + 2 * oa) / 100
    a_fps = (w + 2 * oa + 2 * os_) * (h + 2 * oa + 2 * os_) / 100
    ratio = target * 1000 / qu / (2 * a_fp)
    near = abs(ratio - round(ratio)) <= 1e-9 * max(ratio, 1)
    n = max(float(round(ratio)) if near else float(math.ceil(ratio)), 1.0)
    area_c, area_a, area_s = 2 * n * a_fp, 2 * n * a_fpa, 2 * n * a_fps
    qa = x["np_ratio"] * qc
    l_a = qa * 1000 / (f_a * q_a)
    cap = area_c * qu / 1000

    def binders(b: object) -> list[tuple[str, float]]:
        return [(b, 1.0)] if isinstance(b, str) else list(b.items())  # type: ignore[attr-defined]

    cb, ab = binders(x["cathode_binder"]), binders(x["anode_binder"])
    cathode, anode = x["cathode"], x["anode"]
    inv_c = f_c / _rho(cathode) + sum(b_c * s / _rho(m) for m, s in cb)
    inv_c += k_c / _rho(x["cathode_carbon"])
    inv_a = f_a / _rho(anode) + sum(b_a * s / _rho(m) for m, s in ab)
    inv_a += k_a / _rho(x["anode_carbon"])
    t_cc = l_c * 10 / ((1 / inv_c) * (1 - x["cathode_porosity"]))
    t_ca = l_a * 10 / ((1 / inv_a) * (1 - x["anode_porosity"]))
    t_fc, t_fa = x["cathode_foil_thickness_um"], x["anode_foil_thickness_um"]
    t_s, eps_s = x["separator_thickness_um"], x["separator_porosity"]
    m: dict[str, float] = {}
    m[f"cathode active ({cathode})"] = l_c * f_c * area_c / 1000
    for name, s in cb:
        m[f"cathode binder ({name})"] = l_c * b_c * s * area_c / 1000
    m[f"cathode carbon ({x['cathode_carbon']})"] = l_c * k_c * area_c / 1000
    m[f"cathode foil ({x['cathode_foil']})"] = n * a_fp * t_fc * 1e-4 * _rho(x["cathode_foil"])
    m[f"anode active ({anode})"] = l_a * f_a * area_a / 1000
    for name, s in ab:
        m[f"anode binder ({name})"] = l_a * b_a * s * area_a / 1000
    m[f"anode carbon ({x['anode_carbon']})"] = l_a * k_a * area_a / 1000
    m[f"anode foil ({x['anode_foil']})"] = (n + 1) * a_fpa * t_fa * 1e-4 * _rho(x["anode_foil"])
    m[f"separator ({x['separator']})"] = area_s * t_s * 1e-4 * _rho(x["separator"]) * (1 - eps_s)
    pore = (
        area_c * t_cc * 1e-4 * x["cathode_porosity"]
        + area_a * t_ca * 1e-4 * x["anode_porosity"]
        + area_s * t_s * 1e-4 * eps_s
    )
    m[f"electrolyte ({x['electrolyte']})"] = x["electrolyte_fill"] * pore * _rho(x["electrolyte"])
    m[f"cathode tab ({x['cathode_tab']})"] = x["tab_mass_g"]
    m[f"anode tab ({x['anode_tab']})"] = x["tab_mass_g"]
    m[f"housing ({x['housing']})"] = x["housing_mass_g"]
    mass = math.fsum(m.values())
    stack_t = n * (t_fc + 2 * t_cc) + (n + 1) * t_fa + 2 * n * t_ca + 2 * n * t_s
    vol = a_fpa * stack_t * 1e-4 / x["volume_efficiency"]
    # cost: electrode parts (coatings + foils) / (1 - scrap), all / yield; separator per m2
    scrap, yld = x["electrode_scrap"], x["cell_yield"]
    cost = 0.0
    for name, grams in m.items():
        material = name[name.index("(") + 1 : -1]
        electrode = name.startswith(("cathode active", "cathode binder", "cathode carbon",
                                     "cathode foil", "anode active", "anode binder",
                                     "anode carbon", "anode foil"))
        if name.startswith("separator"):
            bought = area_s / 1e4 * _usd(material, "m2")
        else:
            bought = grams / 1000 * _usd(material, "kg")
        cost += bought / ((1 - scrap) if electrode else 1) / yld
    energy = cap * v
    return {
        "n": n, "qc": qc, "qu": qu, "qa": qa, "l_c": l_c, "l_a": l_a, "area_c": area_c,
        "area_a": area_a, "area_s": area_s, "capacity": cap, "energy": energy, "t_cc": t_cc,
        "t_ca": t_ca, "pore": pore, "stack_t": stack_t, "volume": vol, "mass": mass,
        "cost": cost, "cost_kwh": cost / (energy / 1000), **{f"m:{k}": v for k, v in m.items()},
    }


def _explicit(**kw: object) -> dict[str, object]:
    """Inputs that make the model independent of catalogue numbers other than
    densities and prices (values: common practice magnitudes)."""
    base: dict[str, object] = dict(
        cathode="LiFePO4", anode="graphite", cathode_specific_capacity_mAh_g=200.0,
        anode_specific_capacity_mAh_g=350.0, nominal_voltage_V=3.2,
        cathode_foil_thickness_um=12.0, anode_foil_thickness_um=8.0,
        separator_thickness_um=20.0, separator_porosity=0.4,
    )
    base.update(kw)
    return base


def _compare(d: CellDesign, ref: dict[str, float], rtol: float = 1e-12) -> None:
    pairs = {
        "n": d.cathode_sheets, "qc": d.cathode_areal_capacity_mAh_cm2,
        "qu": d.usable_areal_capacity_mAh_cm2, "qa": d.anode_areal_capacity_mAh_cm2,
        "l_c": d.cathode_loading_mg_cm2, "l_a": d.anode_loading_mg_cm2,
        "area_c": d.cathode_coated_area_cm2, "area_a": d.anode_coated_area_cm2,
        "area_s": d.separator_area_cm2, "capacity": d.capacity_Ah, "energy": d.energy_Wh,
        "t_cc": d.cathode_coating_thickness_um, "t_ca": d.anode_coating_thickness_um,
        "pore": d.pore_volume_cm3, "stack_t": d.stack_thickness_um, "volume": d.cell_volume_cm3,
        "mass": d.cell_mass_g, "cost": d.cost_per_cell_USD, "cost_kwh": d.cost_per_kWh_USD,
    }
    for key, got in pairs.items():
        assert float(got) == pytest.approx(ref[key], rel=rtol), key
    comps = {k[2:]: v for k, v in ref.items() if k.startswith("m:")}
    assert list(d.components) == list(comps)
    for key, value in comps.items():
        assert float(d.components[key]) == pytest.approx(value, rel=rtol, abs=1e-300), key


# ---------------------------------------------------------------- hand-computed cases


ROUND = _explicit(
    target_capacity_Ah=14.44, cathode_loading_mg_cm2=20.0, cathode_active_fraction=0.95,
    cathode_binder_fraction=0.03, anode_active_fraction=0.95, anode_binder_fraction=0.03,
    first_cycle_loss=0.05, np_ratio=1.2, width_mm=100.0, height_mm=200.0,
    anode_overhang_mm=1.0, separator_overhang_mm=2.0, anode_binder="PVDF",
)


def test_round_number_cell_by_hand() -> None:
    # Hand arithmetic from docs/sizing-model.md; inputs are round numbers (common practice
    # magnitudes), so every line below can be checked with pencil and paper.
    d = design_cell(CellSpec(**ROUND))  # type: ignore[arg-type]
    # Qc = 20*0.95*200/1000 = 3.8 mAh/cm2
    assert float(d.cathode_areal_capacity_mAh_cm2) == pytest.approx(3.8, rel=1e-12)
    assert float(d.usable_areal_capacity_mAh_cm2) == pytest.approx(3.61, rel=1e-12)  # 3.8*0.95
    # A_needed = 14.44*1000/3.61 = 4000 cm2; 2*A_fp = 2*(100*200/100) = 400 -> n = 10 exactly
    assert int(d.cathode_sheets) == 10 and int(d.anode_sheets) == 11
    assert int(d.separator_layers) == 20
    assert float(d.cathode_coated_area_cm2) == pytest.approx(4000.0, rel=1e-12)  # 2*10*200
    assert float(d.anode_coated_area_cm2) == pytest.approx(4120.8, rel=1e-12)  # 20*102*202/100
    assert float(d.separator_area_cm2) == pytest.approx(4367.2, rel=1e-12)  # 20*106*206/100
    assert float(d.capacity_Ah) == pytest.approx(14.44, rel=1e-12)  # 4000*3.61/1000
    assert float(d.energy_Wh) == pytest.approx(46.208, rel=1e-12)  # 14.44*3.2
    assert float(d.anode_areal_capacity_mAh_cm2) == pytest.approx(4.56, rel=1e-12)  # 1.2*3.8
    assert float(d.anode_loading_mg_cm2) == pytest.approx(4560 / 332.5, rel=1e-12)  # /(0.95*350)
    # cathode active = 20*0.95*4000/1000 = 76 g
    assert float(d.components["cathode active (LiFePO4)"]) == pytest.approx(76.0, rel=1e-12)
    # carbon = 1 - 0.95 - 0.03 = 0.02 -> 20*0.02*4000/1000 = 1.6 g
    assert float(d.components["cathode carbon (carbon black)"]) == pytest.approx(1.6, rel=1e-12)
    # anode active = 4.56/350*1000 mg/cm2 * 4120.8 cm2 / 1000 = 53.689097... g
    assert float(d.components["anode active (graphite)"]) == pytest.approx(
        4.56 / 350 * 4120.8, rel=1e-12
    )
    # aluminium foil: 10 sheets * 200 cm2 * 12e-4 cm * rho(Al foil, catalogue)
    assert float(d.components["cathode foil (aluminium foil)"]) == pytest.approx(
        10 * 200 * 12e-4 * _rho("aluminium foil"), rel=1e-12
    )
    # copper foil: 11 sheets * 206.04 cm2 * 8e-4 cm * rho(Cu foil, catalogue)
    assert float(d.components["anode foil (copper foil)"]) == pytest.approx(
        11 * 206.04 * 8e-4 * _rho("copper foil"), rel=1e-12
    )
    # stack: 10*(12 + 2 tc) + 11*8 + 20 ta + 20*20 um (thicknesses from the reference)
    ref = _reference(**ROUND)
    assert float(d.stack_thickness_um) == pytest.approx(
        10 * (12 + 2 * ref["t_cc"]) + 11 * 8 + 20 * ref["t_ca"] + 20 * 20, rel=1e-12
    )
    _compare(d, ref)


def test_layer_count_is_not_pushed_up_by_float_noise() -> None:
    # Hand arithmetic: Qc = 18*0.94*150/1000 = 2.538, Qu = 2.538*0.9 = 2.2842 mAh/cm2;
    # 4.5684 Ah needs 4568.4/2.2842 = 2000 cm2 = exactly 5 sheets of 2*200 cm2. In floats the
    # quotient is 5.000000000000001, so a bare ceiling would add a sixth sheet.
    kw = _explicit(target_capacity_Ah=4.5684, cathode_loading_mg_cm2=18.0,
                   cathode_active_fraction=0.94, cathode_specific_capacity_mAh_g=150.0,
                   first_cycle_loss=0.1, width_mm=100.0, height_mm=200.0)
    qu = 18 * 0.94 * 150 / 1000 * (1 - 0.1)
    assert math.ceil(4.5684 * 1000 / qu / 400) == 6  # the trap is real in this arithmetic
    d = design_cell(CellSpec(**kw))  # type: ignore[arg-type]
    assert int(d.cathode_sheets) == 5
    assert float(d.capacity_Ah) == pytest.approx(4.5684, rel=1e-12)
    _compare(d, _reference(**kw))


def test_round_number_cell_matches_reference_with_cmc_sbr_and_energy_target() -> None:
    # common practice: water-based anode binder split CMC/SBR; energy target / voltage
    kw = _explicit(target_energy_Wh=500.0, cathode_areal_capacity_mAh_cm2=3.5,
                   anode_binder={"CMC": 0.4, "SBR": 0.6}, anode="graphite",
                   cathode="NMC811", nominal_voltage_V=3.65)
    d = design_cell(CellSpec(**kw))  # type: ignore[arg-type]
    ref = _reference(**kw)
    _compare(d, ref)
    # target capacity = 500 / 3.65 Ah (hand arithmetic); the design meets it
    assert float(d.target_capacity_Ah) == pytest.approx(500 / 3.65, rel=1e-12)
    assert float(d.capacity_Ah) >= 500 / 3.65
    # loading from areal capacity: 3.5*1000/(0.96*200) mg/cm2
    assert float(d.cathode_loading_mg_cm2) == pytest.approx(3500 / 192, rel=1e-12)


def test_solids_density_and_thickness_by_hand() -> None:
    # one active + PVDF + carbon black: rho_s = 1/(0.95/rho_a + 0.03/rho_b + 0.02/rho_c),
    # t = L*10/(rho_s*(1-eps)) (docs/sizing-model.md); densities from the catalogue
    d = design_cell(CellSpec(**ROUND))  # type: ignore[arg-type]
    rho_s = 1 / (0.95 / _rho("LiFePO4") + 0.03 / _rho("PVDF") + 0.02 / _rho("carbon black"))
    assert float(d.cathode_solids_density_g_cm3) == pytest.approx(rho_s, rel=1e-12)
    assert float(d.cathode_coating_density_g_cm3) == pytest.approx(rho_s * 0.75, rel=1e-12)
    t = 20 * 10 / (rho_s * 0.75)
    assert float(d.cathode_coating_thickness_um) == pytest.approx(t, rel=1e-12)


def test_catalogue_defaults_are_used() -> None:
    # voltage = cathode minus anode average voltage (both vs Li/Li+ in data/), specific
    # capacities = catalogue practical_capacity, foil/separator thickness from the catalogue
    d = size_cell("NMC811", "graphite", target_capacity_Ah=50.0, cathode_loading_mg_cm2=20.0)
    nmc, gr = catalogue.material("NMC811"), catalogue.material("graphite")
    assert float(d.nominal_voltage_V) == pytest.approx(
        nmc.number("average_voltage") - gr.number("average_voltage"), rel=1e-12
    )
    assert float(d.cathode_specific_capacity_mAh_g) == nmc.number("practical_capacity")
    assert float(d.anode_specific_capacity_mAh_g) == gr.number("practical_capacity")
    sep = catalogue.material("PE separator")
    ref = _reference(
        cathode="NMC811", anode="graphite", target_capacity_Ah=50.0, cathode_loading_mg_cm2=20.0,
        cathode_specific_capacity_mAh_g=nmc.number("practical_capacity"),
        anode_specific_capacity_mAh_g=gr.number("practical_capacity"),
        nominal_voltage_V=float(d.nominal_voltage_V),
        cathode_foil_thickness_um=catalogue.material("aluminium foil").number("thickness"),
        anode_foil_thickness_um=catalogue.material("copper foil").number("thickness"),
        separator_thickness_um=sep.number("thickness"), separator_porosity=sep.number("porosity"),
    )
    _compare(d, ref)


def test_classic_couple_on_she_reference() -> None:
    # PbO2 (+1.6913 V) and Pb (-0.3588 V) both vs SHE in data/ (CRC-ECS): 2.0501 V
    d = size_cell("PbO2", "Pb", target_capacity_Ah=10.0, cathode_loading_mg_cm2=100.0,
                  cathode_foil="copper foil", separator="PP separator")
    pb2, pb = catalogue.material("PbO2"), catalogue.material("Pb")
    assert float(d.nominal_voltage_V) == pytest.approx(
        pb2.number("average_voltage") - pb.number("average_voltage"), rel=1e-12
    )
    assert float(d.nominal_voltage_V) == pytest.approx(2.0501, abs=1e-9)  # CRC-ECS values in data/


def test_ceil_count_forgives_float_noise() -> None:
    # common practice: quotients within 1e-9 of a whole number are that number
    got = ceil_count([3.0000000000000004, 2.9999999999999996, 3.01, 0.2, 1e6 + 1e-4])
    assert got.tolist() == [3.0, 3.0, 4.0, 1.0, 1e6]


# ---------------------------------------------------------------- properties


def _spec_strategy() -> st.SearchStrategy[dict[str, object]]:
    cathodes = st.sampled_from(["NMC811", "NMC111", "LiFePO4", "LiCoO2", "LiMn2O4", "NCA"])
    return st.fixed_dictionaries(
        {
            "cathode": cathodes,
            "anode": st.sampled_from(["graphite", "silicon", "Li4Ti5O12"]),
            "target_capacity_Ah": st.floats(0.5, 300.0),
            "cathode_loading_mg_cm2": st.floats(3.0, 60.0),
            "cathode_active_fraction": st.floats(0.5, 0.98),
            "cathode_binder_fraction": st.floats(0.0, 0.02),
            "anode_active_fraction": st.floats(0.5, 0.97),
            "anode_binder_fraction": st.floats(0.0, 0.03),
            "cathode_porosity": st.floats(0.0, 0.6),
            "anode_porosity": st.floats(0.0, 0.6),
            "np_ratio": st.floats(0.9, 2.0),
            "first_cycle_loss": st.floats(0.0, 0.3),
            "electrolyte_fill": st.floats(0.0, 2.0),
            "tab_mass_g": st.floats(0.0, 20.0),
            "housing_mass_g": st.floats(0.0, 200.0),
            "width_mm": st.floats(10.0, 500.0),
            "height_mm": st.floats(10.0, 500.0),
            "anode_overhang_mm": st.floats(0.0, 3.0),
            "separator_overhang_mm": st.floats(0.0, 3.0),
            "electrode_scrap": st.floats(0.0, 0.3),
            "cell_yield": st.floats(0.5, 1.0),
            "cathode_specific_capacity_mAh_g": st.floats(80.0, 250.0),
            "anode_specific_capacity_mAh_g": st.floats(150.0, 3000.0),
            "nominal_voltage_V": st.floats(1.0, 4.5),
            "cathode_foil_thickness_um": st.floats(6.0, 25.0),
            "anode_foil_thickness_um": st.floats(4.0, 20.0),
            "separator_thickness_um": st.floats(5.0, 40.0),
            "separator_porosity": st.floats(0.2, 0.7),
        }
    )


@settings(max_examples=50)
@given(_spec_strategy())
def test_components_sum_to_cell_mass_and_match_reference(kw: dict[str, object]) -> None:
    # mass conservation (docs/sizing-model.md: cell mass = sum of components)
    d = design_cell(CellSpec(**kw))  # type: ignore[arg-type]
    total = sum(float(v) for v in d.components.values())
    assert total == pytest.approx(float(d.cell_mass_g), rel=1e-12)
    assert sum(float(v) for v in d.component_costs_USD.values()) == pytest.approx(
        float(d.cost_per_cell_USD), rel=1e-12
    )
    # the design meets the target with less than one more sheet pair of capacity
    target = float(kw["target_capacity_Ah"])  # type: ignore[arg-type]
    per_sheet = 2 * float(d.cathode_footprint_cm2) * float(d.usable_areal_capacity_mAh_cm2) / 1000
    assert target * (1 - 1e-9) <= float(d.capacity_Ah) < target + per_sheet + 1e-9
    _compare(d, _reference(**kw), rtol=1e-9)


@settings(max_examples=20)
@given(_spec_strategy(), st.integers(2, 40))
def test_components_sum_to_cell_mass_arrays(kw: dict[str, object], size: int) -> None:
    rng = np.random.default_rng(size)
    kw = dict(kw)
    kw["cathode_loading_mg_cm2"] = rng.uniform(3, 60, size)
    kw["np_ratio"] = rng.uniform(0.9, 2.0, (size, 1))
    d = design_cell(CellSpec(**kw))  # type: ignore[arg-type]
    assert d.shape == (size, size)
    total = np.zeros(d.shape)
    for v in d.components.values():
        total = total + v
    np.testing.assert_allclose(total, d.cell_mass_g, rtol=1e-12)


def test_more_np_means_more_anode_and_same_cathode() -> None:
    # monotonicity: anode loading = NP * Qc * 1000 / (f q) grows with N/P
    nps = np.linspace(1.0, 1.5, 11)
    d = size_cell("NMC622", "graphite", target_capacity_Ah=40.0, cathode_loading_mg_cm2=20.0,
                  np_ratio=nps)
    anode = d.components["anode active (graphite)"]
    assert np.all(np.diff(anode) > 0)
    assert np.all(np.diff(d.anode_coating_thickness_um) > 0)
    assert np.all(np.diff(d.cell_mass_g) > 0)
    cathode = d.components["cathode active (NMC622)"]
    assert np.all(cathode == cathode[0])
    assert np.all(np.diff(d.capacity_Ah) == 0)


def test_more_loading_fewer_sheets() -> None:
    # monotonicity: layer count falls as the loading rises (same target)
    d = size_cell("NMC811", "graphite", target_capacity_Ah=60.0,
                  cathode_loading_mg_cm2=np.linspace(10, 35, 26))
    assert np.all(np.diff(d.cathode_sheets) <= 0)
    assert d.cathode_sheets[0] > d.cathode_sheets[-1]


def test_array_call_equals_scalar_calls() -> None:
    rng = np.random.default_rng(7)
    n = 1000
    arrays = {
        "target_capacity_Ah": rng.uniform(5, 100, n),
        "cathode_loading_mg_cm2": rng.uniform(10, 30, n),
        "np_ratio": rng.uniform(1.0, 1.3, n),
        "cathode_porosity": rng.uniform(0.2, 0.4, n),
        "electrode_scrap": rng.uniform(0.0, 0.1, n),
    }
    d = size_cell("NMC811", "graphite", **arrays)
    assert d.shape == (n,)
    names = [f.name for f in fields(CellDesign) if isinstance(getattr(d, f.name), np.ndarray)]
    for i in range(n):
        one = size_cell("NMC811", "graphite", **{k: float(v[i]) for k, v in arrays.items()})
        for name in names:
            assert float(getattr(one, name)) == pytest.approx(
                float(getattr(d, name)[i]), rel=1e-12
            ), (i, name)
        for k, v in one.components.items():
            assert float(v) == pytest.approx(float(d.components[k][i]), rel=1e-12)


def test_outputs_are_read_only_and_have_the_broadcast_shape() -> None:
    d = size_cell("NMC811", "graphite", target_capacity_Ah=[[40.0], [50.0]],
                  cathode_loading_mg_cm2=[18.0, 20.0, 22.0])
    assert d.shape == (2, 3)
    assert d.cell_mass_g.shape == (2, 3)
    assert d.components["housing (pouch laminate)"].shape == (2, 3)
    with pytest.raises(ValueError):
        d.cell_mass_g[0, 0] = 1.0
    row = d.scenario((1, 2))
    assert row["cell_mass_g"] == float(d.cell_mass_g[1, 2])


# ---------------------------------------------------------------- cost


def test_price_override_scales_the_component_cost() -> None:
    base = size_cell("NMC811", "graphite", target_capacity_Ah=50.0, cathode_loading_mg_cm2=20.0)
    demo = float(catalogue.price("NMC811").value)  # demo data (invented)
    dear = size_cell("NMC811", "graphite", target_capacity_Ah=50.0, cathode_loading_mg_cm2=20.0,
                     prices={"ncm811": 2 * demo, "PE separator": (1.1, "USD/m^2")})
    key = "cathode active (NMC811)"
    assert float(dear.component_costs_USD[key]) == pytest.approx(
        2 * float(base.component_costs_USD[key]), rel=1e-12
    )
    # separator: area (cm2) / 1e4 * USD/m2 / yield (no scrap on separators)
    sep = "separator (PE separator)"
    assert float(dear.component_costs_USD[sep]) == pytest.approx(
        float(base.separator_area_cm2) / 1e4 * 1.1 / 0.95, rel=1e-12
    )
    # electrode part: mass/1000 * USD/kg / (1 - scrap) / yield, defaults 0.05 and 0.95
    assert float(base.component_costs_USD[key]) == pytest.approx(
        float(base.components[key]) / 1000 * demo / 0.95 / 0.95, rel=1e-12
    )


def test_price_per_tonne_is_converted() -> None:
    demo = float(catalogue.price("NMC811").value)  # demo data (invented)
    a = size_cell("NMC811", "graphite", target_capacity_Ah=50.0, cathode_loading_mg_cm2=20.0)
    b = size_cell("NMC811", "graphite", target_capacity_Ah=50.0, cathode_loading_mg_cm2=20.0,
                  prices={"NMC811": (demo * 1000, "USD/t")})
    assert float(b.cost_per_cell_USD) == pytest.approx(float(a.cost_per_cell_USD), rel=1e-12)


# ---------------------------------------------------------------- validation


def _err(exc: type[Exception], **kw: object) -> Exception:
    base: dict[str, object] = dict(cathode="NMC811", anode="graphite", target_capacity_Ah=50.0,
                                   cathode_loading_mg_cm2=20.0)
    base.update(kw)
    with pytest.raises(exc) as info:
        design_cell(CellSpec(**base))  # type: ignore[arg-type]
    return info.value


def test_negative_loading_names_the_argument() -> None:
    e = _err(DomainError, cathode_loading_mg_cm2=[20.0, -1.0])
    assert e.argument == "cathode_loading_mg_cm2"  # type: ignore[attr-defined]
    assert "> 0" in str(e) and "-1" in str(e)


def test_active_plus_binder_above_one() -> None:
    e = _err(DomainError, cathode_active_fraction=0.96, cathode_binder_fraction=[0.02, 0.05])
    assert e.argument == "cathode_binder_fraction"  # type: ignore[attr-defined]
    assert "cathode_active_fraction" in str(e)


@pytest.mark.parametrize("value", [1.0, 1.2, -0.1, float("nan")])
def test_porosity_must_be_below_one(value: float) -> None:
    e = _err(DomainError, anode_porosity=value)
    assert e.argument == "anode_porosity"  # type: ignore[attr-defined]
    assert ">= 0 and < 1" in str(e)


def test_unknown_material_suggests_names() -> None:
    e = _err(NotFoundError, cathode="NMC812")
    assert e.argument == "cathode"  # type: ignore[attr-defined]
    assert "NMC811" in e.suggestions  # type: ignore[attr-defined]


def test_material_of_the_wrong_role() -> None:
    e = _err(InputError, cathode="graphite")
    assert e.argument == "cathode" and "anode material" in str(e)  # type: ignore[attr-defined]
    e = _err(InputError, separator="copper foil")
    assert e.argument == "separator"  # type: ignore[attr-defined]


def test_exactly_one_loading_and_one_target() -> None:
    e = _err(InputError, cathode_areal_capacity_mAh_cm2=3.0)
    assert "exactly one" in str(e)
    e = _err(InputError, target_capacity_Ah=None)
    assert e.argument == "target_capacity_Ah"  # type: ignore[attr-defined]


def test_shapes_that_cannot_broadcast() -> None:
    e = _err(ShapeError, cathode_loading_mg_cm2=[20.0, 21.0, 22.0], np_ratio=[1.1, 1.2])
    assert "(2,)" in str(e) and "(3,)" in str(e)


def test_voltage_references_must_match() -> None:
    # NMC811 is given vs Li/Li+ and Zn vs SHE in data/: no voltage can be derived
    e = _err(InputError, anode="Zn")
    assert e.argument == "nominal_voltage_V"  # type: ignore[attr-defined]
    d = size_cell("NMC811", "Zn", target_capacity_Ah=5.0, cathode_loading_mg_cm2=20.0,
                  nominal_voltage_V=1.5)
    assert float(d.energy_Wh) == pytest.approx(float(d.capacity_Ah) * 1.5, rel=1e-12)


def test_bad_binder_shares_and_prices() -> None:
    e = _err(DomainError, anode_binder={"CMC": 0.5, "SBR": 0.4})
    assert e.argument == "anode_binder"  # type: ignore[attr-defined]
    e = _err(NotFoundError, prices={"NMC81": 20.0})
    assert e.argument == "prices"  # type: ignore[attr-defined]
    e = _err(DomainError, prices={"NMC811": -1.0})
    assert "NMC811" in e.argument  # type: ignore[attr-defined]
    e = _err(UnitError, prices={"NMC811": (1.0, "EUR/kg")})
    assert "USD" in str(e)


@pytest.mark.parametrize("value", ["20", None, [20.0, "x"], [[1.0, 2.0], [3.0]]])
def test_text_or_empty_values_are_refused(value: object) -> None:
    e = _err(InputError, np_ratio=value)
    assert e.argument == "np_ratio" and "number" in str(e)  # type: ignore[attr-defined]


def test_price_arrays_broadcast_and_mismatch() -> None:
    d = size_cell("NMC811", "graphite", target_capacity_Ah=50.0, cathode_loading_mg_cm2=20.0,
                  prices={"NMC811": [20.0, 30.0]})
    assert d.shape == (2,) and d.cost_per_cell_USD[1] > d.cost_per_cell_USD[0]
    e = _err(ShapeError, np_ratio=[1.1, 1.2, 1.3], prices={"NMC811": [20.0, 30.0]})
    assert "prices" in e.argument  # type: ignore[attr-defined]


def test_unknown_keyword_in_size_cell() -> None:
    with pytest.raises(NotFoundError) as info:
        size_cell("NMC811", "graphite", target_capacity_Ah=5.0, cathode_loadng_mg_cm2=20.0)
    assert "cathode_loading_mg_cm2" in info.value.suggestions


# ---------------------------------------------------------------- pack


def test_pack_by_hand() -> None:
    # hand arithmetic: 51.2/3.2 = 16 series (float noise guarded), 20 kWh/(16*320 Wh) = 3.906
    # -> 4 parallel, 64 cells, 20.48 kWh; mass 64*2 kg/0.65
    p = size_pack(CellValues(3.2, 100.0, 2000.0), 51.2, 20.0)
    assert (int(p.series), int(p.parallel), int(p.cells)) == (16, 4, 64)
    assert float(p.pack_energy_kWh) == pytest.approx(20.48, rel=1e-12)
    assert float(p.pack_mass_kg) == pytest.approx(128 / 0.65, rel=1e-12)
    assert float(p.pack_voltage_V) == pytest.approx(51.2, rel=1e-12)
    assert float(p.pack_specific_energy_Wh_kg) == pytest.approx(20480 / (128 / 0.65), rel=1e-12)


def test_pack_from_design_vectorised() -> None:
    d = size_cell("LiFePO4", "graphite", target_capacity_Ah=[50.0, 100.0, 280.0],
                  cathode_loading_mg_cm2=25.0)
    p = size_pack(d, 400.0, [[60.0], [100.0]])
    assert p.cells.shape == (2, 3)
    assert np.all(p.pack_energy_kWh >= [[60.0], [100.0]])
    assert np.all(p.pack_voltage_V >= 400.0)
    # one fewer parallel string would miss the energy target
    short = (p.parallel - 1) * p.series * d.energy_Wh / 1000
    assert np.all(short < [[60.0], [100.0]])


def test_pack_validation() -> None:
    with pytest.raises(DomainError) as info:
        size_pack(CellValues(3.2, 100.0, 2000.0), 51.2, 20.0, cell_to_pack_mass_fraction=1.5)
    assert info.value.argument == "cell_to_pack_mass_fraction"
    with pytest.raises(DomainError) as info:
        size_pack(CellValues(3.2, 100.0, 2000.0), -1.0, 20.0)
    assert info.value.argument == "target_voltage_V"
    with pytest.raises(InputError):
        size_pack("cell", 48.0, 10.0)  # type: ignore[arg-type]


# ---------------------------------------------------------------- demo text


def test_demo_bom_text() -> None:
    from udfs.app.demo import DEMO_LABEL, demo_spec, format_bom

    d = design_cell(demo_spec())
    text = format_bom(d)
    assert "demo data: invented company, product and prices" in text
    assert DEMO_LABEL in text
    assert "standards" in text and "qualified engineers" in text
    total = next(line for line in text.splitlines() if line.startswith("Total"))
    assert f"{float(d.cell_mass_g):.2f}" in total and f"{float(d.cost_per_cell_USD):.3f}" in total
    for name in d.components:
        assert name in text
    assert "Wh/kg" in text and "Wh/L" in text and "USD/kWh" in text
    # 50-60 Ah NMC811/graphite demo cell (brief), meeting its 55 Ah target
    assert 55.0 <= float(d.capacity_Ah) <= 60.0


def test_demo_bom_needs_one_scenario() -> None:
    from udfs.app.demo import format_bom

    d = size_cell("NMC811", "graphite", target_capacity_Ah=[40.0, 60.0],
                  cathode_loading_mg_cm2=20.0)
    with pytest.raises(InputError) as info:
        format_bom(d)
    assert info.value.argument == "index"
    assert f"{float(d.cell_mass_g[1]):.2f}" in format_bom(d, index=1)
    with pytest.raises(InputError):
        format_bom(d, index=5)


# ---------------------------------------------------------------- one declaration per input
# udfs.core.sizing_table declares every input once; CellSpec's defaults, the core's checks
# and the check of a --set value all come from it. Bad values below are the domains' own
# bounds (or one past them), not reference values.

_BASE: dict[str, object] = dict(cathode="NMC811", anode="graphite", target_capacity_Ah=50.0,
                                cathode_loading_mg_cm2=20.0)
_SPEC_FIELDS = {f.name for f in fields(CellSpec)}


def _bad(inp: Input, field: str | None) -> list[tuple[str, object]]:
    """(what is wrong, value) for every way the input can be refused."""
    d = inp.domain_of(field)
    out: list[tuple[str, object]] = []
    if isinstance(d, Domain):
        if d.lower is not None:
            out.append(("below its minimum", d.lower if d.lower_open else d.lower - 1.0))
        if d.upper is not None:
            out.append(("above its maximum", d.upper if d.upper_open else d.upper + 1.0))
        if d.integer:
            out.append(("not whole", 2.5))
        out += [("not finite", math.nan), ("text", "abc"), ("boolean", True)]
    elif isinstance(d, Names):
        other = next(m for m in catalogue.material_names() if catalogue.material(m).role
                     not in d.roles)
        out += [("unknown name", "no such material"), ("number", 3.0), ("wrong kind", other)]
    elif isinstance(d, Options):
        out += [("unknown option", "sideways"), ("number", 1.0)]
    elif isinstance(d, FreeText):
        out += [("number", 1.0)]
    if not inp.optional and field is not None and not inp.choices:
        out.append(("empty", None))
    return out


def _core_error(inp: Input, field: str | None, value: object) -> Exception:
    """The core's own refusal of ``value``: the model that takes ``field``, or,
    for an input that sets no CellSpec field, the core's reading of workbook values."""
    with pytest.raises(CellwrightError) as info:
        if field in ("order_cells", "order_MWh"):
            order_materials(design_cell(CellSpec(**_BASE)), **{field: value})  # type: ignore[arg-type]
        elif field is not None:
            base = dict(_BASE)
            for pair in ("target_capacity_Ah", "target_energy_Wh"), (
                    "cathode_loading_mg_cm2", "cathode_areal_capacity_mAh_cm2"):
                if field in pair:
                    for f in pair:
                        base.pop(f, None)
            design_cell(CellSpec(**{**base, field: value}))  # type: ignore[arg-type]
        else:
            spec_from_values({inp.name: value})
    return info.value


_CASES = [
    pytest.param(inp, field, what, value, id=f"{inp.name}-{field}-{what}")
    for inp in CELL_SIZING
    for field in (inp.fields or (None,))
    for what, value in _bad(inp, field)
]


@pytest.mark.parametrize(("inp", "field", "what", "value"), _CASES)
def test_core_and_input_check_refuse_with_the_same_reason(
    inp: Input, field: str | None, what: str, value: object
) -> None:
    core = _core_error(inp, field, value)
    key = field or inp.name
    with pytest.raises(CellwrightError) as checked:
        CELL_SIZING.check(key, value)
    assert type(checked.value) is type(core)
    assert str(checked.value) == str(core), what
    assert CELL_SIZING.reason(key, value) == str(core)
    if field is not None and inp.domain_of(field) is inp.domain:
        # the defined name says the same, naming the input by its name and label
        by_name = CELL_SIZING.reason(inp.name, value)
        assert by_name == str(core).replace(field, f"{inp.name} ({inp.label})", 1)


def test_every_kind_of_bad_value_is_covered() -> None:
    names = {p.values[0].name for p in _CASES}  # type: ignore[union-attr]
    assert names == set(CELL_SIZING.names)
    whats = {p.values[2] for p in _CASES}
    assert {"below its minimum", "above its maximum", "text", "unknown name",
            "wrong kind", "unknown option", "not whole", "empty"} <= whats
    assert len(_CASES) > 300


def test_issue_reproduction_negative_np_ratio_is_refused_before_computing() -> None:
    assert CELL_SIZING.reason("in_np_ratio", -1) == "in_np_ratio (N/P ratio) must be > 0 (got -1)"
    e = _err(DomainError, np_ratio=-1.0)
    assert str(e) == "np_ratio must be > 0 (got -1)"


def test_price_numbers_are_refused_alike_by_spec_and_table() -> None:
    inp = CELL_SIZING.get(COMPONENTS[0].price)
    e = _err(DomainError, prices={"NMC811": -1.0})
    with pytest.raises(DomainError) as checked:
        CELL_SIZING.check(inp.name, -1.0)
    assert (checked.value.allowed, checked.value.value) == (e.allowed, e.value)  # type: ignore[attr-defined]


def test_cellspec_defaults_come_from_the_table() -> None:
    spec = CellSpec("NMC811", "graphite")
    defaults = CELL_SIZING.defaults()
    for f in fields(CellSpec):
        if f.name in defaults and f.name not in ("cathode", "anode"):
            want = defaults[f.name]
            if f.name == "anode_binder":
                want = {"CMC": 0.5, "SBR": 0.5}  # main binder with its second at a 0.5 share
            assert getattr(spec, f.name) == want, f.name
    covered = {f for inp in CELL_SIZING for f in inp.fields}
    assert covered == _SPEC_FIELDS - {"prices"} | {"order_cells", "order_MWh"}


def test_values_round_trip_through_the_table() -> None:
    spec = CellSpec("LFP", "graphite", target_energy_Wh=120.0, cathode_areal_capacity_mAh_cm2=3.1,
                    cathode_binder={"PVDF": 0.7, "CMC": 0.3}, anode_binder="SBR", np_ratio=1.15,
                    separator_thickness_um=18.0, prices={"LFP": 7.5, "PE separator":
                                                          (0.6, "USD/m^2")})
    values = spec_values(spec, order_MWh=2.0)
    again = spec_from_values(values)
    assert again.cathode == "LiFePO4" and again.target_energy_Wh == 120.0
    assert again.target_capacity_Ah is None and again.cathode_loading_mg_cm2 is None
    assert again.cathode_binder == {"PVDF": 0.7, "CMC": 0.3} and again.anode_binder == "SBR"
    assert again.prices == {"LiFePO4": (7.5, "USD/kg"), "PE separator": (0.6, "USD/m^2")}
    assert float(design_cell(again).cost_per_kWh_USD) == pytest.approx(
        float(design_cell(spec).cost_per_kWh_USD), rel=1e-12)
    assert order_from_values(values) == {"order_MWh": 2.0}
    assert set(SPEC_INPUTS) == set(CELL_SIZING.names) - {
        "in_scenario", "in_order_basis", "in_order_size"}


def test_values_with_aliases_and_cross_input_rules() -> None:
    assert spec_from_values({"in_cathode": "lfp", "in_anode": "Graphite"}).cathode == "LiFePO4"
    with pytest.raises(InputError, match="name the second binder"):
        spec_from_values({"in_cathode_binder2_share": 0.2})
    with pytest.raises(InputError, match="repeats the first"):
        spec_from_values({"in_cathode_binder2": "pvdf", "in_cathode_binder2_share": 0.2})
    with pytest.raises(InputError, match="give the unit"):
        spec_from_values({"in_price_cathode_active": 20.0})
    with pytest.raises(NotFoundError, match="in_np_ration"):
        spec_from_values({"in_np_ration": 1.1})


def test_vary_sets_the_field_a_chooser_picks() -> None:
    assert field_of("in_target", {"in_target_basis": "energy"}) == "target_energy_Wh"
    assert field_of("in_loading", {}) == "cathode_loading_mg_cm2"
    spec = vary(CellSpec(**_BASE), "target_energy_Wh", [100.0, 200.0])  # type: ignore[arg-type]
    assert spec.target_capacity_Ah is None
    assert design_cell(spec).shape == (2,)
    with pytest.raises(InputError, match="numeric input"):
        field_of("in_cathode", {})
