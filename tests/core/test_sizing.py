"""Cell sizing against hand arithmetic of the documented equations
(docs/sizing-model.md), a plain-float re-implementation of the stacked pouch,
mass conservation, monotonicity, array/scalar agreement, prices in any unit and
currency, and input validation from the one input table.

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
from udfs.core.capacity import ceil_count
from udfs.core.cell_formats import PRESETS
from udfs.core.errors import (
    CellwrightError,
    DomainError,
    InputError,
    NotFoundError,
    ShapeError,
    UnitError,
)
from udfs.core.inputs import Input
from udfs.core.pack import PackSpec, size_pack
from udfs.core.prices import exchange_rates
from udfs.core.procurement import order_materials
from udfs.core.sizing import (
    DESIGN_OUTPUTS,
    FORMAT_OUTPUTS,
    CellDesign,
    CellSpec,
    applies,
    design_cell,
    price_basis,
    review_cell,
    size_cell,
)
from udfs.core.sizing_table import CELL_SIZING, COMPONENTS
from udfs.core.sizing_values import (
    PACK_INPUTS,
    SPEC_INPUTS,
    field_of,
    order_from_values,
    pack_from_values,
    pack_values,
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
    """Plain-float implementation of docs/sizing-model.md for a stacked pouch in
    target mode (scalar inputs only). Requires every number explicitly (see
    ``_explicit``) so that nothing but densities and prices comes from the catalogue."""
    g = dict(
        np_ratio=1.1, electrolyte_fill=1.1, cathode_tab="aluminium tab", anode_tab="nickel tab",
        housing="pouch laminate", anode_overhang_mm=1.0, separator_overhang_mm=1.5,
        electrode_scrap=0.05, cell_yield=0.95,
    )
    g.update(kw)
    x: dict[str, Any] = g
    f_c, b_c = x["cathode_active_fraction"], x["cathode_binder_fraction"]
    f_a, b_a = x["anode_active_fraction"], x["anode_binder_fraction"]
    k_c, k_a = max(1 - f_c - b_c, 0.0), max(1 - f_a - b_a, 0.0)
    q_c, q_a = x["cathode_first_charge_mAh_g"], x["anode_first_charge_mAh_g"]
    e_c, e_a = x["cathode_first_cycle_efficiency"], x["anode_first_cycle_efficiency"]
    v = x["nominal_voltage_V"]
    if "cathode_loading_mg_cm2" in x:
        l_c = x["cathode_loading_mg_cm2"]
        qc = l_c * f_c * q_c / 1000
    else:
        qc = x["cathode_areal_capacity_mAh_cm2"]
        l_c = qc * 1000 / (f_c * q_c)
    qa = x["np_ratio"] * qc
    l_a = qa * 1000 / (f_a * q_a)
    q_rev = min(qc * e_c, min(qc, qa) - qa * (1 - e_a))
    target = x["target_capacity_Ah"] if "target_capacity_Ah" in x else x["target_energy_Wh"] / v
    w, h = x["width_mm"], x["height_mm"]
    oa, os_ = x["anode_overhang_mm"], x["separator_overhang_mm"]
    a_fp = w * h / 100
    a_fpa = (w + 2 * oa) * (h + 2 * oa) / 100
    ws, hs = w + 2 * oa + 2 * os_, h + 2 * oa + 2 * os_
    a_fps = ws * hs / 100
    ratio = target * 1000 / q_rev / (2 * a_fp)
    near = abs(ratio - round(ratio)) <= 1e-9 * max(ratio, 1)
    n = max(float(round(ratio)) if near else float(math.ceil(ratio)), 1.0)
    area_c, area_a, area_s = 2 * n * a_fp, 2 * n * a_fpa, 2 * n * a_fps
    cap = area_c * q_rev / 1000

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
    tab_cm3 = x["tab_width_mm"] * x["tab_thickness_mm"] * x["tab_length_mm"] / 1000
    m[f"cathode tab ({x['cathode_tab']})"] = tab_cm3 * _rho(x["cathode_tab"])
    m[f"anode tab ({x['anode_tab']})"] = tab_cm3 * _rho(x["anode_tab"])
    stack_t = n * (t_fc + 2 * t_cc) + (n + 1) * t_fa + 2 * n * t_ca + 2 * n * t_s
    seal, wall = x["seal_mm"], x["wall_mm"]
    cw, ch = ws + 2 * seal, hs + 2 * seal
    ct = stack_t / 1000 + 2 * wall
    laminate_cm2 = (2 * cw * ch + 2 * (ws + hs) * stack_t / 1000) / 100
    m[f"housing ({x['housing']})"] = laminate_cm2 * wall / 10 * _rho(x["housing"])
    mass = math.fsum(m.values())
    vol = cw * ch * ct / 1000
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
        "n": n, "qc": qc, "q_rev": q_rev, "qa": qa, "l_c": l_c, "l_a": l_a, "area_c": area_c,
        "area_a": area_a, "area_s": area_s, "capacity": cap, "energy": energy, "t_cc": t_cc,
        "t_ca": t_ca, "pore": pore, "stack_t": stack_t, "volume": vol, "mass": mass,
        "cost": cost, "cost_kwh": cost / (energy / 1000), "cw": cw, "ch": ch, "ct": ct,
        **{f"m:{k}": v for k, v in m.items()},
    }


def _explicit(**kw: object) -> dict[str, object]:
    """Inputs that make the model independent of catalogue numbers other than
    densities and prices (values: common practice magnitudes)."""
    base: dict[str, object] = dict(
        cathode="LiFePO4", anode="graphite", cathode_first_charge_mAh_g=200.0,
        cathode_first_cycle_efficiency=0.95, anode_first_charge_mAh_g=350.0,
        anode_first_cycle_efficiency=0.92, nominal_voltage_V=3.2,
        cathode_active_fraction=0.96, cathode_binder_fraction=0.02, anode_active_fraction=0.96,
        anode_binder_fraction=0.03, cathode_porosity=0.25, anode_porosity=0.30,
        cathode_binder="PVDF", anode_binder={"CMC": 0.5, "SBR": 0.5},
        cathode_carbon="carbon black", anode_carbon="carbon black",
        cathode_foil="aluminium foil", anode_foil="copper foil", electrolyte="LiPF6 1M in EC:DMC",
        cathode_foil_thickness_um=12.0, anode_foil_thickness_um=8.0, separator="PE separator",
        separator_thickness_um=20.0, separator_porosity=0.4, width_mm=100.0, height_mm=300.0,
        wall_mm=0.1, seal_mm=5.0, tab_width_mm=30.0, tab_thickness_mm=0.2, tab_length_mm=30.0,
    )
    base.update(kw)
    return base


def _compare(d: CellDesign, ref: dict[str, float], rtol: float = 1e-12) -> None:
    pairs = {
        "n": d.cathode_sheets, "qc": d.cathode_areal_capacity_mAh_cm2,
        "q_rev": d.reversible_areal_capacity_mAh_cm2, "qa": d.anode_areal_capacity_mAh_cm2,
        "l_c": d.cathode_loading_mg_cm2, "l_a": d.anode_loading_mg_cm2,
        "area_c": d.cathode_coated_area_cm2, "area_a": d.anode_coated_area_cm2,
        "area_s": d.separator_area_cm2, "capacity": d.capacity_Ah, "energy": d.energy_Wh,
        "t_cc": d.cathode_coating_thickness_um, "t_ca": d.anode_coating_thickness_um,
        "pore": d.pore_volume_cm3, "stack_t": d.stack_thickness_um, "volume": d.cell_volume_cm3,
        "mass": d.cell_mass_g, "cost": d.cost_per_cell_USD, "cost_kwh": d.cost_per_kWh_USD,
        "cw": d.cell_width_mm, "ch": d.cell_height_mm, "ct": d.cell_thickness_mm,
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
    cathode_first_cycle_efficiency=0.95, anode_first_cycle_efficiency=0.95, np_ratio=1.2,
    width_mm=100.0, height_mm=200.0, anode_overhang_mm=1.0, separator_overhang_mm=2.0,
    anode_binder="PVDF",
)


def test_round_number_cell_by_hand() -> None:
    # Hand arithmetic from docs/sizing-model.md; inputs are round numbers (common practice
    # magnitudes), so every line below can be checked with pencil and paper.
    d = design_cell(CellSpec(**ROUND))  # type: ignore[arg-type]
    # first-charge areal capacity Qc = 20*0.95*200/1000 = 3.8 mAh/cm2; Qa = 1.2*3.8 = 4.56
    assert float(d.cathode_areal_capacity_mAh_cm2) == pytest.approx(3.8, rel=1e-12)
    assert float(d.anode_areal_capacity_mAh_cm2) == pytest.approx(4.56, rel=1e-12)
    # reversible: min(3.8*0.95 = 3.61, min(3.8, 4.56) - 4.56*0.05 = 3.572) = 3.572 (the anode's
    # loss limits it)
    assert float(d.reversible_areal_capacity_mAh_cm2) == pytest.approx(3.572, rel=1e-12)
    assert float(d.anode_limited) == 1.0
    # cell first-cycle efficiency = 3.572 / 3.8 = 0.94
    assert float(d.cell_first_cycle_efficiency) == pytest.approx(0.94, rel=1e-12)
    # A_needed = 14.44*1000/3.572 = 4042.6 cm2; 2*A_fp = 400 -> 10.1 -> n = 11 sheets
    assert int(d.cathode_sheets) == 11 and int(d.anode_sheets) == 12
    assert int(d.separator_layers) == 22
    assert float(d.cathode_coated_area_cm2) == pytest.approx(4400.0, rel=1e-12)  # 2*11*200
    assert float(d.anode_coated_area_cm2) == pytest.approx(22 * 102 * 202 / 100, rel=1e-12)
    assert float(d.separator_area_cm2) == pytest.approx(22 * 106 * 206 / 100, rel=1e-12)
    assert float(d.capacity_Ah) == pytest.approx(4400 * 3.572 / 1000, rel=1e-12)  # 15.7168
    assert float(d.energy_Wh) == pytest.approx(15.7168 * 3.2, rel=1e-12)
    assert float(d.anode_loading_mg_cm2) == pytest.approx(4560 / 332.5, rel=1e-12)  # /(0.95*350)
    # cathode active = 20*0.95*4400/1000 = 83.6 g; carbon 20*0.02*4400/1000 = 1.76 g
    assert float(d.components["cathode active (LiFePO4)"]) == pytest.approx(83.6, rel=1e-12)
    assert float(d.components["cathode carbon (carbon black)"]) == pytest.approx(1.76, rel=1e-12)
    # aluminium foil: 11 sheets * 200 cm2 * 12e-4 cm * rho(Al foil, catalogue)
    assert float(d.components["cathode foil (aluminium foil)"]) == pytest.approx(
        11 * 200 * 12e-4 * _rho("aluminium foil"), rel=1e-12
    )
    # pouch: outer 100 + 2*1 + 2*2 + 2*5 = 116 mm by 200 + 6 + 10 = 216 mm
    assert float(d.cell_width_mm) == 116.0 and float(d.cell_height_mm) == 216.0
    # tabs: 30 x 0.2 x 30 mm = 0.18 cm3 of aluminium and of nickel (catalogue densities)
    assert float(d.cathode_tab_mass_g) == pytest.approx(0.18 * _rho("aluminium tab"), rel=1e-12)
    assert float(d.anode_tab_mass_g) == pytest.approx(0.18 * _rho("nickel tab"), rel=1e-12)
    ref = _reference(**ROUND)
    # laminate: (2*116*216 + 2*(106 + 206)*stack mm) mm2 * 0.1 mm * rho
    st_mm = ref["stack_t"] / 1000
    laminate = (2 * 116 * 216 + 2 * 312 * st_mm) / 100 * 0.01 * _rho("pouch laminate")
    assert float(d.housing_body_mass_g) == pytest.approx(laminate, rel=1e-12)
    assert float(d.cell_thickness_mm) == pytest.approx(st_mm + 0.2, rel=1e-12)
    _compare(d, ref)


def test_layer_count_is_not_pushed_up_by_float_noise() -> None:
    # Hand arithmetic: Qc = 18*0.94*150/1000 = 2.538, Qa = 1.1*2.538; with both efficiencies 1
    # Qrev = Qc = 2.538 mAh/cm2. 5.076 Ah needs 5076/2.538 = 2000 cm2 = exactly 5 sheets of
    # 2*200 cm2; in floats the quotient may land a hair above 5, and a bare ceiling would
    # add a sixth sheet.
    kw = _explicit(target_capacity_Ah=5.076, cathode_loading_mg_cm2=18.0,
                   cathode_active_fraction=0.94, cathode_first_charge_mAh_g=150.0,
                   cathode_first_cycle_efficiency=1.0, anode_first_cycle_efficiency=1.0,
                   width_mm=100.0, height_mm=200.0)
    d = design_cell(CellSpec(**kw))  # type: ignore[arg-type]
    assert int(d.cathode_sheets) == 5
    assert float(d.capacity_Ah) == pytest.approx(5.076, rel=1e-12)
    _compare(d, _reference(**kw))


def test_reference_with_cmc_sbr_and_energy_target() -> None:
    # common practice: water-based anode binder split CMC/SBR; energy target / voltage
    kw = _explicit(target_energy_Wh=500.0, cathode_areal_capacity_mAh_cm2=3.5,
                   anode_binder={"CMC": 0.4, "SBR": 0.6}, cathode="NMC811",
                   nominal_voltage_V=3.65)
    d = design_cell(CellSpec(**kw))  # type: ignore[arg-type]
    _compare(d, _reference(**kw))
    # target capacity = 500 / 3.65 Ah (hand arithmetic); the design meets it
    assert float(d.target_capacity_Ah) == pytest.approx(500 / 3.65, rel=1e-12)
    assert float(d.capacity_Ah) >= 500 / 3.65
    # loading from the first-charge areal capacity: 3.5*1000/(0.96*200) mg/cm2
    assert float(d.cathode_loading_mg_cm2) == pytest.approx(3500 / 192, rel=1e-12)


def test_below_np_one_the_anode_sets_the_capacity() -> None:
    # N/P 0.8 (first-charge basis): Qc = 4.0, Qa = 3.2 mAh/cm2 (hand arithmetic with the
    # round inputs below); the anode holds at most Qa * eta_a = 3.2 * 0.92 = 2.944
    kw = _explicit(target_capacity_Ah=10.0, cathode_areal_capacity_mAh_cm2=4.0, np_ratio=0.8)
    d = design_cell(CellSpec(**kw))  # type: ignore[arg-type]
    assert float(d.reversible_areal_capacity_mAh_cm2) == pytest.approx(2.944, rel=1e-12)
    assert float(d.anode_limited) == 1.0
    # at N/P 1.1 the cathode's own efficiency limits it: min(4*0.95, 4 - 4.4*0.08) = 3.648
    d11 = design_cell(CellSpec(**{**kw, "np_ratio": 1.1}))  # type: ignore[arg-type]
    assert float(d11.reversible_areal_capacity_mAh_cm2) == pytest.approx(3.648, rel=1e-12)


def test_no_reversible_capacity_is_refused() -> None:
    # an anode loss of 60 % of a 1.2x anode takes 0.72 of the cathode's first charge; with
    # N/P 2 it is 1.2 Qc > Qc: nothing comes back (hand arithmetic)
    kw = _explicit(target_capacity_Ah=10.0, cathode_loading_mg_cm2=20.0, np_ratio=2.0,
                   anode_first_cycle_efficiency=0.4)
    with pytest.raises(DomainError) as info:
        design_cell(CellSpec(**kw))  # type: ignore[arg-type]
    assert info.value.argument == "np_ratio" and "no reversible capacity" in str(info.value)


def test_solids_density_and_thickness_by_hand() -> None:
    # one active + PVDF + carbon black: rho_s = 1/(0.95/rho_a + 0.03/rho_b + 0.02/rho_c),
    # t = L*10/(rho_s*(1-eps)) (docs/sizing-model.md); densities from the catalogue
    d = design_cell(CellSpec(**ROUND))  # type: ignore[arg-type]
    rho_s = 1 / (0.95 / _rho("LiFePO4") + 0.03 / _rho("PVDF") + 0.02 / _rho("carbon black"))
    assert float(d.cathode_solids_density_g_cm3) == pytest.approx(rho_s, rel=1e-12)
    assert float(d.cathode_coating_density_g_cm3) == pytest.approx(rho_s * 0.75, rel=1e-12)
    t = 20 * 10 / (rho_s * 0.75)
    assert float(d.cathode_coating_thickness_um) == pytest.approx(t, rel=1e-12)


def test_catalogue_and_recipe_defaults_are_used() -> None:
    # first-charge capacities, first-cycle efficiencies, the voltage (cathode minus anode
    # average), the couple's window, the recipes (fractions, porosity, binders, carbon,
    # foils) and the foil/separator thicknesses all come from data/ when not given
    d = size_cell("NMC811", "graphite", target_capacity_Ah=50.0, cathode_loading_mg_cm2=20.0)
    nmc, gr = catalogue.material("NMC811"), catalogue.material("graphite")
    assert nmc.cycling is not None and gr.cycling is not None
    assert nmc.recipe is not None and gr.recipe is not None
    assert float(d.nominal_voltage_V) == pytest.approx(
        nmc.cycling.average_voltage - gr.cycling.average_voltage, rel=1e-12)
    assert float(d.voltage_min_V) == pytest.approx(
        nmc.cycling.voltage_min - gr.cycling.voltage_max, rel=1e-12)
    assert float(d.voltage_max_V) == pytest.approx(
        nmc.cycling.voltage_max - gr.cycling.voltage_min, rel=1e-12)
    assert float(d.cathode_first_charge_mAh_g) == nmc.cycling.first_charge_capacity
    assert float(d.anode_first_cycle_efficiency) == gr.cycling.first_cycle_efficiency
    assert float(d.cathode_active_fraction) == nmc.recipe.active_fraction
    assert float(d.anode_porosity) == gr.recipe.porosity
    assert "anode binder (CMC)" in d.components and "anode binder (SBR)" in d.components
    sep = catalogue.material("PE separator")
    bind = dict(gr.recipe.binder)
    ref = _reference(**_explicit(
        cathode="NMC811", target_capacity_Ah=50.0, cathode_loading_mg_cm2=20.0,
        cathode_first_charge_mAh_g=nmc.cycling.first_charge_capacity,
        cathode_first_cycle_efficiency=nmc.cycling.first_cycle_efficiency,
        anode_first_charge_mAh_g=gr.cycling.first_charge_capacity,
        anode_first_cycle_efficiency=gr.cycling.first_cycle_efficiency,
        nominal_voltage_V=float(d.nominal_voltage_V),
        cathode_active_fraction=nmc.recipe.active_fraction,
        cathode_binder_fraction=nmc.recipe.binder_fraction,
        anode_active_fraction=gr.recipe.active_fraction,
        anode_binder_fraction=gr.recipe.binder_fraction,
        cathode_porosity=nmc.recipe.porosity, anode_porosity=gr.recipe.porosity,
        anode_binder=bind,
        cathode_foil_thickness_um=catalogue.material("aluminium foil").number("thickness"),
        anode_foil_thickness_um=catalogue.material("copper foil").number("thickness"),
        separator_thickness_um=sep.number("thickness"), separator_porosity=sep.number("porosity"),
        wall_mm=catalogue.material("pouch laminate").number("thickness") / 1000,
        **{k: PRESETS["pouch"][k].value for k in ("seal_mm", "tab_width_mm", "tab_thickness_mm",
                                                   "tab_length_mm", "width_mm", "height_mm")},
    ))
    _compare(d, ref)


def test_the_first_cycle_loss_is_taken_once() -> None:
    # NMC811 in data/: 225 mAh/g on first charge x 0.89 = 200.25 mAh/g reversible (the
    # catalogue's practical_capacity). Against a generous, loss-free anode the cell gives
    # exactly that per g of cathode active material: no second loss on top.
    d = size_cell("NMC811", "graphite", target_capacity_Ah=50.0, cathode_loading_mg_cm2=20.0,
                  anode_first_cycle_efficiency=1.0)
    active = float(d.components["cathode active (NMC811)"])
    assert float(d.capacity_Ah) * 1000 / active == pytest.approx(225 * 0.89, rel=1e-12)
    assert catalogue.material("NMC811").number("practical_capacity") == pytest.approx(200.25)
    with pytest.raises(InputError, match="no longer an input"):
        size_cell("NMC811", "graphite", target_capacity_Ah=50.0, cathode_loading_mg_cm2=20.0,
                  first_cycle_loss=0.08)


def test_sodium_ion_recipe_collector_and_electrolyte() -> None:
    # data/: hard carbon is coated on the aluminium anode foil and sodium-ion cells take
    # NaPF6 (HWANG2017, VAALMA2018 in the rows' notes); the anode tab follows the foil
    d = size_cell("NFM111", "hard carbon", target_capacity_Ah=10.0, cathode_loading_mg_cm2=18.0)
    names = list(d.components)
    assert "anode foil (aluminium anode foil)" in names
    assert "electrolyte (NaPF6 1M in EC:DMC)" in names
    assert "anode tab (aluminium tab)" in names
    # voltages on the Na/Na+ reference: 3.2 - 0.2 = 3.0 V (data/ average voltages)
    assert float(d.nominal_voltage_V) == pytest.approx(3.0, abs=1e-12)


def test_materials_without_a_recipe_must_be_given_their_coating() -> None:
    # silicon has no electrode recipe in data/: its fractions, porosity, binder, carbon and
    # foil must be given, each refusal naming the field
    with pytest.raises(InputError) as info:
        size_cell("NMC811", "silicon", target_capacity_Ah=5.0, cathode_loading_mg_cm2=20.0)
    assert info.value.argument == "anode_binder" and "no electrode recipe" in str(info.value)


def test_classic_couple_on_she_reference() -> None:
    # PbO2 (+1.6913 V) and Pb (-0.3588 V) both vs SHE in data/ (CRC-ECS): 2.0501 V
    d = size_cell("PbO2", "Pb", target_capacity_Ah=10.0, cathode_loading_mg_cm2=100.0,
                  cathode_foil="copper foil", anode_foil="copper foil", separator="PP separator",
                  cathode_binder="PVDF", anode_binder="PVDF", cathode_carbon="carbon black",
                  anode_carbon="carbon black", cathode_active_fraction=0.9,
                  cathode_binder_fraction=0.05, anode_active_fraction=0.9,
                  anode_binder_fraction=0.05, cathode_porosity=0.4, anode_porosity=0.4)
    assert float(d.nominal_voltage_V) == pytest.approx(2.0501, abs=1e-9)  # CRC-ECS values in data/
    # no first-charge data for these rows: the practical capacity stands for it, FCE 1
    assert float(d.cathode_first_charge_mAh_g) == catalogue.material("PbO2").number(
        "practical_capacity")
    assert float(d.cathode_first_cycle_efficiency) == 1.0
    assert math.isnan(float(d.voltage_min_V))  # no window in the catalogue


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
            "cathode_first_cycle_efficiency": st.floats(0.8, 1.0),
            "anode_first_cycle_efficiency": st.floats(0.8, 1.0),
            "electrolyte_fill": st.floats(0.0, 2.0),
            "width_mm": st.floats(10.0, 500.0),
            "height_mm": st.floats(10.0, 500.0),
            "anode_overhang_mm": st.floats(0.0, 3.0),
            "separator_overhang_mm": st.floats(0.0, 3.0),
            "electrode_scrap": st.floats(0.0, 0.3),
            "cell_yield": st.floats(0.5, 1.0),
            "cathode_first_charge_mAh_g": st.floats(80.0, 250.0),
            "anode_first_charge_mAh_g": st.floats(150.0, 3000.0),
            "nominal_voltage_V": st.floats(1.0, 4.5),
            "cathode_foil_thickness_um": st.floats(6.0, 25.0),
            "anode_foil_thickness_um": st.floats(4.0, 20.0),
            "separator_thickness_um": st.floats(5.0, 40.0),
            "separator_porosity": st.floats(0.2, 0.7),
            "wall_mm": st.floats(0.05, 0.3),
            "seal_mm": st.floats(1.0, 10.0),
            "tab_width_mm": st.floats(2.0, 60.0),
            "tab_thickness_mm": st.floats(0.05, 0.5),
            "tab_length_mm": st.floats(5.0, 60.0),
        }
    )


def _named(kw: dict[str, object]) -> dict[str, object]:
    """The names a recipe-less anode (silicon) needs; the rest as given."""
    names = _explicit()
    return {**{k: names[k] for k in ("cathode_binder", "anode_binder", "cathode_carbon",
                                     "anode_carbon", "cathode_foil", "anode_foil",
                                     "electrolyte", "separator")}, **kw}


@settings(max_examples=50)
@given(_spec_strategy())
def test_components_sum_to_cell_mass_and_match_reference(kw: dict[str, object]) -> None:
    # mass conservation (docs/sizing-model.md: cell mass = sum of components)
    kw = _named(kw)
    d = design_cell(CellSpec(**kw))  # type: ignore[arg-type]
    total = sum(float(v) for v in d.components.values())
    assert total == pytest.approx(float(d.cell_mass_g), rel=1e-12)
    assert sum(float(v) for v in d.component_costs_USD.values()) == pytest.approx(
        float(d.cost_per_cell_USD), rel=1e-12
    )
    # the design meets the target with less than one more sheet pair of capacity
    target = float(kw["target_capacity_Ah"])  # type: ignore[arg-type]
    per_sheet = (2 * float(d.cathode_width_mm) * float(d.cathode_length_mm) / 100
                 * float(d.reversible_areal_capacity_mAh_cm2) / 1000)
    assert target * (1 - 1e-9) <= float(d.capacity_Ah) < target + per_sheet + 1e-9
    _compare(d, _reference(**kw), rtol=1e-9)


@settings(max_examples=20)
@given(_spec_strategy(), st.integers(2, 40))
def test_components_sum_to_cell_mass_arrays(kw: dict[str, object], size: int) -> None:
    rng = np.random.default_rng(size)
    kw = _named(dict(kw))
    kw["cathode_loading_mg_cm2"] = rng.uniform(3, 60, size)
    kw["np_ratio"] = rng.uniform(0.9, 2.0, (size, 1))
    d = design_cell(CellSpec(**kw))  # type: ignore[arg-type]
    assert d.shape == (size, size)
    total = np.zeros(d.shape)
    for v in d.components.values():
        total = total + v
    np.testing.assert_allclose(total, d.cell_mass_g, rtol=1e-12)


def test_more_np_means_more_anode_and_same_cathode() -> None:
    # monotonicity: anode loading = NP * Qc * 1000 / (f q) grows with N/P; above the point
    # where the cathode's own efficiency limits the capacity, the capacity stays put
    nps = np.linspace(1.2, 1.5, 11)
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
    n = 300
    arrays = {
        "target_capacity_Ah": rng.uniform(5, 100, n),
        "cathode_loading_mg_cm2": rng.uniform(10, 30, n),
        "np_ratio": rng.uniform(0.9, 1.3, n),
        "cathode_porosity": rng.uniform(0.2, 0.4, n),
        "electrode_scrap": rng.uniform(0.0, 0.1, n),
    }
    for fmt in ("pouch", "cylindrical", "prismatic"):
        d = size_cell("NMC811", "graphite", cell_format=fmt, **arrays)
        assert d.shape == (n,)
        for i in range(0, n, 7):
            one = size_cell("NMC811", "graphite", cell_format=fmt,
                            **{k: float(v[i]) for k, v in arrays.items()})
            for name in DESIGN_OUTPUTS:
                np.testing.assert_allclose(float(getattr(one, name)),
                                           float(getattr(d, name)[i]), rtol=1e-12,
                                           err_msg=f"{fmt} {i} {name}")
            for k, v in one.components.items():
                assert float(v) == pytest.approx(float(d.components[k][i]), rel=1e-12)


def test_mixed_formats_in_one_call_equal_each_format_alone() -> None:
    formats = np.array(["pouch", "cylindrical", "prismatic", "cylindrical", "pouch"])
    loads = np.array([18.0, 20.0, 22.0, 24.0, 26.0])
    targets = np.array([50.0, 5.0, 200.0, 4.0, 60.0])
    d = size_cell("NMC811", "graphite", cell_format=formats, target_capacity_Ah=targets,
                  cathode_loading_mg_cm2=loads)
    assert d.cell_format == "mixed" and d.shape == (5,)
    for i, fmt in enumerate(formats):
        one = size_cell("NMC811", "graphite", cell_format=str(fmt),
                        target_capacity_Ah=float(targets[i]),
                        cathode_loading_mg_cm2=float(loads[i]))
        for name in DESIGN_OUTPUTS:
            np.testing.assert_allclose(float(getattr(d, name)[i]), float(getattr(one, name)),
                                       rtol=1e-12, err_msg=f"{fmt} {name}")
        for k, v in one.components.items():
            assert float(d.components[k][i]) == pytest.approx(float(v), rel=1e-12), k
    # each housing line is that format's material, zero elsewhere
    steel = d.components["housing (nickel-plated steel housing)"]
    assert np.all((steel > 0) == (formats == "cylindrical"))


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


def test_format_only_outputs_are_nan_elsewhere() -> None:
    for fmt, core in (("pouch", "wound"), ("cylindrical", "wound"), ("prismatic", "wound"),
                      ("prismatic", "stacked")):
        d = size_cell("NMC811", "graphite", cell_format=fmt, prismatic_core=core,
                      target_capacity_Ah=10.0, cathode_loading_mg_cm2=20.0)
        for name in DESIGN_OUTPUTS:
            value = float(getattr(d, name))
            assert math.isnan(value) == (not applies(name, fmt, core)), (fmt, core, name)
    assert set(FORMAT_OUTPUTS) < set(DESIGN_OUTPUTS)


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


def _cost(**prices: object) -> float:
    d = size_cell("NMC811", "graphite", target_capacity_Ah=50.0, cathode_loading_mg_cm2=20.0,
                  prices=prices or None)
    return float(d.cost_per_kWh_USD)


def test_prices_in_every_unit_and_currency_give_the_same_cost() -> None:
    # the demo prices (invented demo data) restated per t, g, lb, L, piece, m2 and in EUR
    # and CNY at the shipped exchange rates (invented demo rates): the same cost per kWh
    base = _cost()
    d = size_cell("NMC811", "graphite", target_capacity_Ah=50.0, cathode_loading_mg_cm2=20.0)
    nmc = float(catalogue.price("NMC811").value)
    elyte = float(catalogue.price("LiPF6 1M in EC:DMC").value)
    rho_e = _rho("LiPF6 1M in EC:DMC")
    tab = float(catalogue.price("nickel tab").value) * float(d.anode_tab_mass_g) / 1000
    lam_kg = float(catalogue.price("pouch laminate").value)
    lam_m2 = lam_kg * float(d.housing_body_mass_g) / 1000 / (
        float(d.component_areas_cm2["housing (pouch laminate)"]) / 1e4)
    eur = exchange_rates().rate("EUR")[0]
    cny = exchange_rates().rate("CNY")[0]
    same = [
        {"NMC811": (nmc * 1000, "USD/t")},
        {"NMC811": (nmc / 1000, "USD/g")},
        {"NMC811": (nmc / 2.20462262185, "USD/lb")},  # 1 lb = 0.45359237 kg (definition)
        {"NMC811": (nmc / eur, "EUR/kg")},
        {"NMC811": (nmc / cny * 1000, "t", "CNY")},
        {"LiPF6 1M in EC:DMC": (elyte * rho_e, "USD/L")},
        {"nickel tab": (tab, "USD/each")},
        {"pouch laminate": (lam_m2, "USD/m2")},
        {"PE separator": (0.55, "USD/m2")},
    ]
    for prices in same:
        assert _cost(**prices) == pytest.approx(base, rel=1e-9), prices


def test_prices_that_cannot_be_converted_are_refused() -> None:
    with pytest.raises(UnitError, match="has no area quantity"):
        _cost(NMC811=(10.0, "USD/m^2"))
    with pytest.raises(UnitError, match="price it per kg or per each"):
        size_cell("NMC811", "graphite", target_capacity_Ah=5.0, cathode_loading_mg_cm2=20.0,
                  cell_format="cylindrical", prices={"nickel-plated steel housing":
                                                     (1.0, "USD/m^2")})
    with pytest.raises(UnitError, match="ton"):
        _cost(NMC811=(1.0, "USD/ton"))
    with pytest.raises(UnitError, match="currency"):
        _cost(NMC811=(1.0, "$/kg"))
    with pytest.raises(NotFoundError):
        _cost(NMC811=(1.0, "XYZ/kg"))
    with pytest.raises(UnitError, match="unknown basis"):
        _cost(NMC811=(1.0, "USD/furlong"))
    with pytest.raises(InputError):
        _cost(NMC811="cheap")


def test_price_basis_is_the_price_parser() -> None:
    # kept for the workbook's two units: prices.price_unit plus the rate table
    assert price_basis("USD/t", "p") == ("kg", 0.001)
    assert price_basis("USD/cm2", "p") == ("m2", 10000.0)
    eur = exchange_rates().rate("EUR")[0]  # invented demo rate
    assert price_basis("EUR/kg", "p") == ("kg", pytest.approx(eur, rel=1e-12))
    with pytest.raises(UnitError, match="per volume"):
        price_basis("USD/L", "p")


# ---------------------------------------------------------------- lenient review


def test_review_keeps_the_good_scenarios() -> None:
    spec = CellSpec("NMC811", "graphite", target_capacity_Ah=50.0,
                    cathode_loading_mg_cm2=[20.0, -1.0, 22.0], electrolyte_fill=[1.1, 1.1, -2.0])
    d, errors = review_cell(spec)
    assert errors.failed().tolist() == [False, True, True]
    assert errors.messages(1) == ["cathode_loading_mg_cm2 must be > 0 (got -1)"]
    assert errors.messages(2) == ["electrolyte_fill must be >= 0 (got -2)"]
    assert math.isnan(float(d.capacity_Ah[1])) and math.isnan(float(d.cell_mass_g[2]))
    good = size_cell("NMC811", "graphite", target_capacity_Ah=50.0, cathode_loading_mg_cm2=20.0)
    assert float(d.cell_mass_g[0]) == pytest.approx(float(good.cell_mass_g), rel=1e-12)
    with pytest.raises(DomainError) as info:  # strict: the first input (table order) refused
        design_cell(spec)
    assert str(info.value) == "electrolyte_fill must be >= 0 (got -2)"


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
    # NMC811 is given vs Li/Li+ and Zn vs SHE in data/: no voltage can be derived (Zn has no
    # recipe either, so its coating is given here)
    zn = dict(anode="Zn", anode_active_fraction=0.9, anode_binder_fraction=0.05,
              anode_porosity=0.3, anode_binder="PVDF", anode_carbon="carbon black",
              anode_foil="copper foil")
    e = _err(InputError, **zn)
    assert e.argument == "nominal_voltage_V"  # type: ignore[attr-defined]
    d = size_cell("NMC811", target_capacity_Ah=5.0, cathode_loading_mg_cm2=20.0,
                  nominal_voltage_V=1.5, **zn)
    assert float(d.energy_Wh) == pytest.approx(float(d.capacity_Ah) * 1.5, rel=1e-12)


def test_bad_binder_shares_and_prices() -> None:
    e = _err(DomainError, anode_binder={"CMC": 0.5, "SBR": 0.4})
    assert e.argument == "anode_binder"  # type: ignore[attr-defined]
    e = _err(NotFoundError, prices={"NMC81": 20.0})
    assert e.argument == "prices"  # type: ignore[attr-defined]
    e = _err(DomainError, prices={"NMC811": -1.0})
    assert "NMC811" in e.argument  # type: ignore[attr-defined]
    e = _err(UnitError, prices={"NMC811": (1.0, "EUR/m^2")})
    assert "no area quantity" in str(e)


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


def test_envelope_and_target_inputs() -> None:
    e = _err(InputError, sizing_mode="envelope")
    assert e.argument == "target_capacity_Ah" and "envelope" in str(e)  # type: ignore[attr-defined]
    e = _err(InputError, cell_diameter_mm=18.0)  # a pouch has no diameter
    assert e.argument == "cell_diameter_mm" and "does not apply" in str(e)  # type: ignore[attr-defined]
    e = _err(InputError, cell_thickness_mm=10.0)  # computed in target mode
    assert "computes it" in str(e) and "envelope" in str(e)
    e = _err(InputError, cell_format="cylindrical", width_mm=100.0)
    assert e.argument == "width_mm"  # type: ignore[attr-defined]
    e = _err(InputError, cell_format="round")
    assert e.argument == "cell_format" and "'pouch'" in str(e)  # type: ignore[attr-defined]
    e = _err(InputError, cell_format=["pouch", "round"])
    assert e.argument == "cell_format"  # type: ignore[attr-defined]
    e = _err(InputError, sizing_mode=["target", "envelope"])
    assert e.argument == "sizing_mode"  # type: ignore[attr-defined]


def test_envelopes_that_hold_nothing_name_the_dimension() -> None:
    base = dict(cathode="NMC811", anode="graphite", cathode_loading_mg_cm2=20.0,
                sizing_mode="envelope")
    cases = [
        (dict(cell_format="pouch", cell_thickness_mm=0.3), "cell_thickness_mm"),
        (dict(cell_format="pouch", cell_width_mm=12.0), "cell_width_mm"),
        (dict(cell_format="cylindrical", cell_height_mm=6.0), "cell_height_mm"),
        (dict(cell_format="cylindrical", cell_diameter_mm=2.4), "cell_diameter_mm"),
        (dict(cell_format="prismatic", cell_thickness_mm=2.5), "cell_thickness_mm"),
        (dict(cell_format="prismatic", cell_width_mm=30.0), "cell_width_mm"),
        (dict(cell_format="prismatic", prismatic_core="stacked", cell_height_mm=20.0),
         "cell_height_mm"),
    ]
    for kw, arg in cases:
        with pytest.raises(DomainError) as info:
            design_cell(CellSpec(**{**base, **kw}))  # type: ignore[arg-type]
        assert info.value.argument == arg, kw
    # a prismatic can too narrow for the rolls a target needs
    with pytest.raises(DomainError) as info:
        size_cell("NMC811", "graphite", cell_format="prismatic", target_capacity_Ah=5000.0,
                  cathode_loading_mg_cm2=20.0)
    assert info.value.argument == "cell_width_mm" and "do not fit" in str(info.value)


# ---------------------------------------------------------------- one declaration per input
# udfs.core.sizing_table declares every input once; CellSpec's defaults, the core's checks
# and the check of a --set value all come from it. Bad values below are the domains' own
# bounds (or one past them), not reference values.

_BASE: dict[str, object] = dict(cathode="NMC811", anode="graphite", target_capacity_Ah=50.0,
                                cathode_loading_mg_cm2=20.0)
_SPEC_FIELDS = {f.name for f in fields(CellSpec)}
_PACK_FIELDS = {f.name for f in fields(PackSpec)}


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
        elif field in _PACK_FIELDS:
            size_pack(design_cell(CellSpec(**_BASE)), PackSpec(**{field: value}))  # type: ignore[arg-type]
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
    assert CELL_SIZING.reason("in_np_ratio", -1) == \
        "in_np_ratio (N/P ratio, first-charge basis) must be > 0 (got -1)"
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
            assert getattr(spec, f.name) == defaults[f.name], f.name
    pack = PackSpec()
    for f in fields(PackSpec):
        assert getattr(pack, f.name) == defaults[f.name], f.name
    covered = {f for inp in CELL_SIZING for f in inp.fields}
    assert covered == (_SPEC_FIELDS - {"prices", "first_cycle_loss"}
                       | {"order_cells", "order_MWh"} | _PACK_FIELDS)


def test_values_round_trip_through_the_table() -> None:
    spec = CellSpec("LFP", "graphite", target_energy_Wh=120.0, cathode_areal_capacity_mAh_cm2=3.1,
                    cathode_binder={"PVDF": 0.7, "CMC": 0.3}, anode_binder="SBR", np_ratio=1.15,
                    separator_thickness_um=18.0, cell_format="prismatic", cores=3.0,
                    prices={"LFP": 7.5, "PE separator": (0.6, "USD/m^2"),
                            "graphite": (6000.0, "USD/t")})
    values = spec_values(spec, order_MWh=2.0)
    again = spec_from_values(values)
    assert again.cathode == "LiFePO4" and again.target_energy_Wh == 120.0
    assert again.target_capacity_Ah is None and again.cathode_loading_mg_cm2 is None
    assert again.cathode_binder == {"PVDF": 0.7, "CMC": 0.3} and again.anode_binder == "SBR"
    assert again.cell_format == "prismatic" and again.cores == 3.0
    assert again.prices == {"LiFePO4": (7.5, "USD/kg"), "PE separator": (0.6, "USD/m^2"),
                            "graphite": (6.0, "USD/kg")}
    assert float(design_cell(again).cost_per_kWh_USD) == pytest.approx(
        float(design_cell(spec).cost_per_kWh_USD), rel=1e-12)
    assert order_from_values(values) == {"order_MWh": 2.0}
    assert set(SPEC_INPUTS) == set(CELL_SIZING.names) - {
        "in_scenario", "in_order_basis", "in_order_size", *PACK_INPUTS}
    # the recipe's binders stay blank (None) both ways
    plain = spec_values(CellSpec("NMC811", "graphite", target_capacity_Ah=5.0,
                                 cathode_loading_mg_cm2=20.0))
    assert plain["in_anode_binder"] is None and spec_from_values(plain).anode_binder is None


def test_envelope_values_leave_the_target_out() -> None:
    spec = CellSpec("NMC811", "graphite", sizing_mode="envelope", cell_format="cylindrical",
                    cylinder_class="18 mm", cathode_loading_mg_cm2=20.0)
    values = spec_values(spec)
    assert values["in_sizing_mode"] == "envelope" and values["in_target"] == 50.0  # unused
    again = spec_from_values(values)
    assert again.target_capacity_Ah is None and again.target_energy_Wh is None
    assert float(design_cell(again).capacity_Ah) == float(design_cell(spec).capacity_Ah)


def test_pack_values_round_trip() -> None:
    pack = PackSpec(pack_energy_kWh=80.0, structure="components", frame_mass_kg=3.0)
    values = pack_values(pack)
    assert set(values) == set(PACK_INPUTS)
    assert pack_from_values(values) == pack
    with pytest.raises(DomainError, match="in_pack_energy"):
        pack_from_values({"in_pack_energy": -1.0})


def test_values_with_aliases_and_cross_input_rules() -> None:
    assert spec_from_values({"in_cathode": "lfp", "in_anode": "Graphite"}).cathode == "LiFePO4"
    with pytest.raises(InputError, match="name the main binder"):
        spec_from_values({"in_cathode_binder2_share": 0.2})
    with pytest.raises(InputError, match="name the second binder"):
        spec_from_values({"in_cathode_binder": "PVDF", "in_cathode_binder2_share": 0.2})
    with pytest.raises(InputError, match="repeats the first"):
        spec_from_values({"in_cathode_binder": "PVDF", "in_cathode_binder2": "pvdf",
                          "in_cathode_binder2_share": 0.2})
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
