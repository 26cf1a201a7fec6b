"""Procurement: LCE, metal content, order quantities and contained metals."""

from __future__ import annotations

import math

import molmass
import numpy as np
import pytest

from udfs.app.demo import demo_spec
from udfs.core import catalogue
from udfs.core.errors import DomainError, InputError, NotFoundError, ShapeError
from udfs.core.procurement import (
    LCE_FACTOR,
    bill_lines,
    composition,
    lce,
    metal_content,
    order_materials,
    order_precursors,
)
from udfs.core.sizing import CellSpec, design_cell, size_cell


def _molmass_fraction(formula: str, element: str) -> float:
    """Mass fraction of an element from the molmass library (independent code and
    its own atomic-weight table)."""
    f = molmass.Formula(formula)
    comp = {item.symbol: item.fraction for item in f.composition().values()}
    return comp[element]


# ---------------------------------------------------------------- LCE


def test_lce_of_one_kg_lithium() -> None:
    # SOURCES.md / IUPAC2021: M(Li2CO3) / (2 M(Li)) = 5.323 kg per kg Li
    assert lce(1.0) == pytest.approx(5.323, rel=1e-4)
    factor = LCE_FACTOR
    assert factor == pytest.approx(5.323, rel=1e-4)


def test_lce_factor_from_iupac2021_abridged_weights() -> None:
    # IUPAC2021 abridged/conventional weights: Li 6.94, C 12.011, O 15.999
    expected = (2 * 6.94 + 12.011 + 3 * 15.999) / (2 * 6.94)
    assert expected == pytest.approx(5.3233, abs=5e-5)  # hand arithmetic: 73.888 / 13.88
    factor = LCE_FACTOR
    assert factor == pytest.approx(expected, rel=1e-5)


def test_lce_vectorised_and_validated() -> None:
    got = lce(np.array([0.0, 2.0, 10.0]))
    assert isinstance(got, np.ndarray)
    np.testing.assert_allclose(got, np.array([0.0, 2.0, 10.0]) * LCE_FACTOR, rtol=1e-15)
    with pytest.raises(DomainError) as info:
        lce(-1.0)
    assert info.value.argument == "lithium_mass"


# ---------------------------------------------------------------- metal content


def test_cobalt_fraction_of_licoo2_vs_molmass() -> None:
    # molmass library: Co mass fraction of LiCoO2 (about 0.6021)
    got = metal_content("LiCoO2", "Co", 1.0)
    assert got == pytest.approx(_molmass_fraction("LiCoO2", "Co"), rel=1e-4)
    assert got == pytest.approx(0.6021, abs=1e-4)


def test_nickel_fraction_of_nmc811_vs_molmass() -> None:
    # molmass library cannot read fractional counts; Li10Ni8MnCoO20 is LiNi0.8Mn0.1Co0.1O2
    # times ten and has the same mass fractions
    got = metal_content("LiNi0.8Mn0.1Co0.1O2", "Ni", 1.0)
    assert got == pytest.approx(_molmass_fraction("Li10Ni8MnCoO20", "Ni"), rel=1e-4)
    # molmass library: lithium in LiFePO4
    assert metal_content("LiFePO4", "Li", 1.0) == pytest.approx(
        _molmass_fraction("LiFePO4", "Li"), rel=1e-4
    )


def test_metal_content_divides_by_yield_and_broadcasts() -> None:
    frac = _molmass_fraction("LiCoO2", "Co")  # molmass library
    mass = np.array([[100.0], [200.0]])
    yld = np.array([1.0, 0.8, 0.5])
    got = metal_content("LiCoO2", "Co", mass, yld)
    assert isinstance(got, np.ndarray) and got.shape == (2, 3)
    np.testing.assert_allclose(got, mass / yld * frac, rtol=1e-4)
    assert metal_content("LiFePO4", "Co", 5.0) == 0.0  # no cobalt in the formula


def test_metal_content_validation() -> None:
    with pytest.raises(DomainError) as info:
        metal_content("LiCoO2", "Co", 1.0, 0.0)
    assert info.value.argument == "yield"
    with pytest.raises(DomainError) as info:
        metal_content("LiCoO2", "Co", [1.0, -2.0])
    assert info.value.argument == "material_mass"
    with pytest.raises(NotFoundError) as missing:
        metal_content("LiCoO2", "Cx", 1.0)
    assert missing.value.argument == "element" and missing.value.suggestions
    with pytest.raises(ShapeError):
        metal_content("LiCoO2", "Co", [1.0, 2.0], [0.9, 0.8, 0.7])


# ---------------------------------------------------------------- orders


def test_order_quantities_follow_scrap_and_yield() -> None:
    d = design_cell(demo_spec())
    o = order_materials(d, order_cells=10_000)
    scrap, yld = float(d.electrode_scrap), float(d.cell_yield)
    for name, grams in d.components.items():
        electrode = name in d.electrode_components
        expected = 10_000 * float(grams) / 1000 / ((1 - scrap) if electrode else 1) / yld
        assert float(o.buy_kg[name]) == pytest.approx(expected, rel=1e-12), name
        assert float(o.buy_t[name]) == pytest.approx(expected / 1000, rel=1e-12), name
    # electrode parts carry scrap, the rest do not (docs/sizing-model.md)
    assert "cathode foil (aluminium foil)" in d.electrode_components
    assert "separator (PE separator)" not in d.electrode_components
    sep = "separator (PE separator)"
    assert float(o.buy_m2[sep]) == pytest.approx(
        10_000 * float(d.separator_area_cm2) / 1e4 / yld, rel=1e-12
    )
    assert float(o.materials_cost_USD) == pytest.approx(10_000 * float(d.cost_per_cell_USD))


def test_order_by_energy_rounds_cells_up() -> None:
    d = design_cell(demo_spec())
    mwh = np.array([1.0, 2.5, 10.0])
    o = order_materials(d, order_MWh=mwh)
    cells = np.array([math.ceil(m * 1e6 / float(d.energy_Wh)) for m in mwh])
    np.testing.assert_array_equal(o.cells, cells)
    assert np.all(o.energy_MWh >= mwh)
    assert np.all((o.cells - 1) * float(d.energy_Wh) / 1e6 < mwh)


def test_contained_metals_of_the_demo_order() -> None:
    d = design_cell(demo_spec())
    o = order_materials(d, order_cells=1000)
    cath = float(o.buy_kg["cathode active (NMC811)"])
    # molmass library fractions of NMC811 (as Li10Ni8MnCoO20)
    for el in ("Co", "Mn"):
        assert float(o.metals_kg[el]) == pytest.approx(
            cath * _molmass_fraction("Li10Ni8MnCoO20", el), rel=1e-4
        ), el
    # nickel = cathode + the nickel tab (pure metal)
    ni = cath * _molmass_fraction("Li10Ni8MnCoO20", "Ni") + float(
        o.buy_kg["anode tab (nickel tab)"]
    )
    assert float(o.metals_kg["Ni"]) == pytest.approx(ni, rel=1e-4)
    # aluminium = foil + tab (pure metal); copper = foil; nickel adds the nickel tab
    al = float(o.buy_kg["cathode foil (aluminium foil)"]) + float(
        o.buy_kg["cathode tab (aluminium tab)"]
    )
    assert float(o.metals_kg["Al"]) == pytest.approx(al, rel=1e-12)
    assert float(o.metals_kg["Cu"]) == pytest.approx(
        float(o.buy_kg["anode foil (copper foil)"]), rel=1e-12
    )
    # lithium = cathode + LiPF6 at 1 mol/L in the electrolyte (density from the catalogue)
    rho = catalogue.material("LiPF6 1M in EC:DMC").number("density")
    salt = 1.0 * molmass.Formula("LiPF6").mass / (rho * 1000)  # molmass library M(LiPF6)
    li = cath * _molmass_fraction("Li10Ni8MnCoO20", "Li") + float(
        o.buy_kg["electrolyte (LiPF6 1M in EC:DMC)"]
    ) * salt * _molmass_fraction("LiPF6", "Li")
    assert float(o.metals_kg["Li"]) == pytest.approx(li, rel=1e-4)
    assert float(o.lce_kg) == pytest.approx(li * 5.323, rel=2e-4)  # SOURCES.md LCE factor
    # non-metals are not reported; unknown mixtures are named
    assert not {"C", "O", "H", "F", "P"} & set(o.metals_kg)
    assert "housing (pouch laminate)" in o.uncounted
    assert "cathode foil (aluminium foil)" not in o.uncounted


def test_order_vectorised_over_design_and_elements_subset() -> None:
    d = size_cell("LiFePO4", "graphite", target_capacity_Ah=[50.0, 100.0, 200.0],
                  cathode_loading_mg_cm2=25.0)
    o = order_materials(d, order_MWh=[[1.0], [5.0]], elements=["fe", "Li", "Co"])
    assert o.cells.shape == (2, 3)
    assert set(o.metals_kg) == {"Fe", "Li", "Co"}
    assert np.all(o.metals_kg["Co"] == 0.0)
    fe = o.buy_kg["cathode active (LiFePO4)"] * _molmass_fraction("LiFePO4", "Fe")
    np.testing.assert_allclose(o.metals_kg["Fe"], fe, rtol=1e-4)  # molmass library
    # more MWh, more iron
    assert np.all(o.metals_kg["Fe"][1] > o.metals_kg["Fe"][0])


def test_composition_of_inactive_items() -> None:
    assert composition("copper foil") == {"Cu": 1.0}  # pure metal (alloying ignored)
    assert composition("pouch laminate") is None  # variable make-up
    pvdf = composition("PVDF")  # repeat unit C2H2F2, molmass library
    assert pvdf is not None
    assert pvdf["F"] == pytest.approx(_molmass_fraction("C2H2F2", "F"), rel=1e-4)


def test_order_validation() -> None:
    d = design_cell(demo_spec())
    with pytest.raises(InputError):
        order_materials(d)
    with pytest.raises(InputError):
        order_materials(d, order_cells=10, order_MWh=1.0)
    with pytest.raises(DomainError) as info:
        order_materials(d, order_cells=10.5)
    assert info.value.argument == "order_cells"
    with pytest.raises(DomainError) as info:
        order_materials(d, order_MWh=-1.0)
    assert info.value.argument == "order_MWh"
    with pytest.raises(NotFoundError):
        order_materials(d, order_cells=10, elements=["Nx"])
    with pytest.raises(InputError):
        order_materials("design", order_cells=10)  # type: ignore[arg-type]


# ---------------------------------------------------------------- bill lines and precursors


def _nmc_design():  # type: ignore[no-untyped-def]
    # a demo design (invented): NMC811 against graphite, 55 Ah, 22 mg/cm2 per side
    return design_cell(CellSpec("NMC811", "graphite", target_capacity_Ah=55.0,
                                cathode_loading_mg_cm2=22.0))


def test_bill_lines_carry_every_basis_that_applies() -> None:
    d = _nmc_design()
    lines = {b.component: b for b in bill_lines(d)}
    assert list(lines) == list(d.components)
    for name, b in lines.items():
        assert float(b.kg) == pytest.approx(float(d.components[name]) / 1000.0, rel=1e-15)
        assert (b.m2 is not None) == (name in d.component_areas_cm2)
        assert b.electrode == (name in d.electrode_components)
    sep = lines["separator (PE separator)"]
    assert float(sep.m2) == pytest.approx(float(d.separator_area_cm2) / 1e4, rel=1e-15)
    elyte = lines["electrolyte (LiPF6 1M in EC:DMC)"]
    rho = catalogue.material("LiPF6 1M in EC:DMC").number("density")  # catalogue, g/cm3
    assert float(elyte.L) == pytest.approx(float(elyte.kg) / rho, rel=1e-15)
    assert [b.pieces is not None for b in lines.values()].count(True) == 3  # 2 tabs, housing
    assert lines["anode tab (nickel tab)"].quantity("count") == 1.0
    assert lines["cathode active (NMC811)"].quantity("area") is None


def test_precursor_salts_of_nmc811_by_hand() -> None:
    d = _nmc_design()
    o = order_materials(d, order_cells=10_000)
    cam = float(o.buy_t["cathode active (NMC811)"])
    p = order_precursors(d, order_cells=10_000, lithium_excess=0.03, synthesis_yield=0.98)
    assert float(p.cathode_active_t) == pytest.approx(cam, rel=1e-15)
    nmc = "Li10Ni8MnCoO20"  # 10 x LiNi0.8Mn0.1Co0.1O2 (molmass cannot read fractions)
    # salt t = metal t / yield / (metal fraction in the salt); molmass library fractions
    for salt, el, molmass_salt in [("NiSO4·6H2O", "Ni", "NiSO4(H2O)6"),
                                   ("CoSO4·7H2O", "Co", "CoSO4(H2O)7"),
                                   ("MnSO4·H2O", "Mn", "MnSO4(H2O)")]:
        want = cam * _molmass_fraction(nmc, el) / 0.98 / _molmass_fraction(molmass_salt, el)
        assert float(p.salts_t[salt]) == pytest.approx(want, rel=2e-4), salt
    li = cam * _molmass_fraction(nmc, "Li") * 1.03 / 0.98 / _molmass_fraction("LiOH(H2O)", "Li")
    assert float(p.salts_t["LiOH·H2O"]) == pytest.approx(li, rel=2e-4)
    assert p.no_salt_route == ()
    carb = order_precursors(d, order_cells=10_000, lithium_salt="Carbonate")
    li2 = cam * _molmass_fraction(nmc, "Li") / _molmass_fraction("Li2CO3", "Li")
    assert float(carb.salts_t["Li2CO3"]) == pytest.approx(li2, rel=2e-4)


def test_nmp_and_iron_phosphate() -> None:
    d = design_cell(CellSpec("LiFePO4", "graphite", target_capacity_Ah=100.0,
                             cathode_loading_mg_cm2=25.0))
    o = order_materials(d, order_MWh=5.0)
    p = order_precursors(d, order_MWh=5.0, slurry_solids_fraction=0.6, nmp_recovery=0.95)
    cam = float(o.buy_t["cathode active (LiFePO4)"])
    fe = cam * _molmass_fraction("LiFePO4", "Fe")  # molmass library
    assert float(p.salts_t["FePO4"]) == pytest.approx(fe / _molmass_fraction("FePO4", "Fe"),
                                                      rel=2e-4)
    # NMP: only the PVDF (cathode) slurry; used = solids * (1 - 0.6) / 0.6; bought 5 %
    solids = sum(float(o.buy_t[n]) for n in d.components
                 if n.startswith(("cathode active", "cathode binder", "cathode carbon")))
    assert p.nmp_electrodes == ("cathode",)
    assert float(p.nmp_used_t) == pytest.approx(solids * 0.4 / 0.6, rel=1e-12)
    assert float(p.nmp_bought_t) == pytest.approx(solids * 0.4 / 0.6 * 0.05, rel=1e-12)
    assert float(p.nmp_recovered_t + p.nmp_bought_t) == pytest.approx(float(p.nmp_used_t))


def test_precursor_edge_cases() -> None:
    nca = design_cell(CellSpec("NCA", "graphite", target_capacity_Ah=50.0,
                               cathode_loading_mg_cm2=20.0))
    p = order_precursors(nca, order_cells=100)
    assert p.no_salt_route == ("Al",) and float(p.metals_t["Al"]) > 0
    with pytest.raises(InputError):
        order_precursors(nca, order_cells=100, lithium_salt="chloride")
    with pytest.raises(DomainError) as info:
        order_precursors(nca, order_cells=100, slurry_solids_fraction=0.0)
    assert info.value.argument == "slurry_solids_fraction"
    with pytest.raises(DomainError):
        order_precursors(nca, order_cells=100, nmp_recovery=1.5)
    with pytest.raises(InputError):
        order_precursors(nca)
    vec = order_precursors(nca, order_cells=[[100], [200]], nmp_recovery=[0.9, 0.95, 0.99])
    assert vec.nmp_bought_t.shape == (2, 3)
