"""Electrode materials of the Li-ion and Na-ion families: first-charge capacity and
first-cycle efficiency, voltages, densities, coating recipes, and the loader's checks."""

from __future__ import annotations

import csv
import shutil
from collections.abc import Callable, Iterator
from pathlib import Path

import pytest

from udfs.core import catalogue
from udfs.core.capacity import couple_specific_energy, theoretical_capacity
from udfs.core.errors import CellwrightError, DataError, NotFoundError
from udfs.core.formula import mass_fraction, parse

# Issue 12 items 2 and 3: the electrode materials that carry their own figures and recipe.
ELECTRODE_MATERIALS = {
    "LiFePO4": "cathode",
    "LMFP": "cathode",
    "NCA": "cathode",
    "NMC111": "cathode",
    "NMC532": "cathode",
    "NMC622": "cathode",
    "NMC811": "cathode",
    "NMC92": "cathode",
    "LiMn2O4": "cathode",
    "LiNi0.5Mn1.5O4": "cathode",
    "LiCoO2": "cathode",
    "NFM111": "cathode",
    "Prussian white": "cathode",
    "NVPF": "cathode",
    "graphite": "anode",
    "hard carbon": "anode",
    "SiOx": "anode",
    "Si-C composite": "anode",
    "Li4Ti5O12": "anode",
}
SODIUM = {"NFM111", "Prussian white", "NVPF", "hard carbon"}
RECORD_ROWS = (
    "first_charge_capacity",
    "first_cycle_efficiency",
    "average_voltage",
    "voltage_min",
    "voltage_max",
    "voltage_reference",
    "theoretical_capacity",
    "basis",
    "density",
    "density_basis",
    "electrode_active_fraction",
    "electrode_binder_fraction",
    "electrode_carbon_fraction",
    "electrode_binder",
    "electrode_carbon",
    "electrode_foil",
    "electrode_porosity",
    "electrode_loading_min",
    "electrode_loading_max",
    "electrode_thickness_min",
    "electrode_thickness_max",
)


@pytest.mark.parametrize(("name", "role"), sorted(ELECTRODE_MATERIALS.items()))
def test_every_electrode_material_has_its_sourced_rows(name: str, role: str) -> None:
    m = catalogue.material(name)
    assert m.role == role
    assert m.cycling is not None and m.recipe is not None
    for prop in RECORD_ROWS:
        assert prop in m.facts, f"{name} lacks {prop}"
        fact = m.facts[prop]
        assert fact.source.strip(), f"{name} {prop} has no source"
        assert fact.note.strip(), f"{name} {prop} has no note saying how far it was checked"
    reference = "Na/Na+" if name in SODIUM else "Li/Li+"
    assert m.cycling.reference == reference


@pytest.mark.parametrize("name", sorted(ELECTRODE_MATERIALS))
def test_reversible_capacity_is_first_charge_times_efficiency(name: str) -> None:
    # Known trap (SOURCES.md): the reviews' practical capacities already exclude the
    # first-cycle loss. The table stores the first charge and the efficiency; the
    # reversible figure is derived once, and practical_capacity is that same number.
    m = catalogue.material(name)
    cyc = catalogue.cycling(name)
    first, fce = m.number("first_charge_capacity"), m.number("first_cycle_efficiency")
    assert cyc.reversible_capacity == pytest.approx(first * fce, rel=1e-12)
    assert m.number("reversible_capacity") == pytest.approx(first * fce, rel=1e-5)
    assert m.number("practical_capacity") == m.number("reversible_capacity")
    assert "first_cycle_efficiency" in m.facts["practical_capacity"].source
    assert 0.5 <= fce <= 1.0
    assert cyc.first_cycle_loss == pytest.approx(first - first * fce, rel=1e-12)


@pytest.mark.parametrize("name", sorted(ELECTRODE_MATERIALS))
def test_capacities_within_the_theoretical_and_window_around_the_average(name: str) -> None:
    m = catalogue.material(name)
    cyc = catalogue.cycling(name)
    theoretical = m.number("theoretical_capacity")
    assert cyc.reversible_capacity <= theoretical * 1.01
    if m.role == "cathode":  # a cathode cannot give up more than all its lithium or sodium
        assert cyc.first_charge_capacity <= theoretical * 1.01
    assert cyc.voltage_min < cyc.average_voltage < cyc.voltage_max


# Theoretical capacities recomputed by hand from the basis each row states
# (n F / (3.6 M), IUPAC2021 weights, CODATA2018 F; the arithmetic is written out here).
F_MAH = 96485.33212 / 3.6  # mAh per mol of electrons


def test_siox_basis_by_hand() -> None:
    # OBROVAC2014 (from memory): 4 SiO + 15.25 Li -> Li4SiO4 + 3 Li3.75Si. 2.8125 Li per SiO
    # cycle; the first lithiation takes 3.8125 Li. M(SiO) = 28.085 + 15.999 = 44.084 g/mol.
    m = catalogue.material("SiOx")
    assert m.number("electrons") == pytest.approx(11.25 / 4)
    assert m.number("theoretical_capacity") == pytest.approx(2.8125 * F_MAH / 44.084, rel=2e-3)
    # the first-cycle efficiency of the carbon-coated material cannot beat the path's own
    # 2.8125 / 3.8125 = 0.738 by much (the coating adds a little reversible capacity)
    assert m.number("first_cycle_efficiency") <= 2.8125 / 3.8125 + 0.05


def test_si_c_composite_basis_by_hand() -> None:
    # 50 wt% Si as the composition formula SiC2.338: M = 28.085 + 2.338 x 12.011 = 56.167 g/mol;
    # 3.75 Li per Si (Li15Si4, OBROVAC2004), carbon counted as inactive.
    m = catalogue.material("Si-C composite")
    assert mass_fraction(m.get("formula"), "Si") == pytest.approx(0.50, abs=0.001)
    assert m.number("theoretical_capacity") == pytest.approx(3.75 * F_MAH / 56.167, rel=2e-3)


def test_sodium_cathode_bases_by_hand() -> None:
    # Prussian white Na2Fe[Fe(CN)6]: 2 Na per 313.78 g/mol -> 170.8 mAh/g;
    # NVPF Na3V2(PO4)2F3: 2 of 3 Na per 417.79 g/mol -> 128.3 mAh/g (both commonly quoted,
    # common practice); O3 NaNi1/3Fe1/3Mn1/3O2: 1 Na per 111.48 g/mol -> 240.4 mAh/g.
    expected = {"Prussian white": 170.8, "NVPF": 128.3, "NFM111": 240.4}
    for name, value in expected.items():
        assert catalogue.material(name).number("theoretical_capacity") == pytest.approx(
            value, abs=0.1
        )


def test_hard_carbon_nominal_basis_is_the_c6_one() -> None:
    # no definite end phase: the row's nominal basis is one Na per C6, like LiC6 (372 mAh/g)
    hc, gr = catalogue.material("hard carbon"), catalogue.material("graphite")
    assert hc.get("formula") == gr.get("formula") == "C6"
    assert "no definite end phase" in hc.get("basis")
    assert catalogue.cycling("hard carbon").reversible_capacity < hc.number("theoretical_capacity")


@pytest.mark.parametrize(
    "name",
    sorted(
        n
        for n in catalogue.material_names("active")
        if "theoretical_capacity" in catalogue.material(n).facts
    ),
)
def test_theoretical_capacity_against_its_formula_within_its_stated_tolerance(name: str) -> None:
    # data/README.md: within 0.2 %, or within 1 % where the note says what n F / M gives
    m = catalogue.material(name)
    f = m.formula
    assert f is not None
    computed = float(theoretical_capacity(f.mass, m.number("electrons")))
    printed = m.number("theoretical_capacity")
    tolerance = (
        0.01 if "n*F/M from the formula gives" in m.facts["theoretical_capacity"].note else 0.002
    )
    assert computed == pytest.approx(printed, rel=tolerance)


CRYSTALLINE = sorted(
    n
    for n in catalogue.material_names("active")
    if catalogue.material(n).facts.get("density_basis", catalogue.Fact("", "", "")).value
    == "crystallographic"
)


def test_crystalline_materials_listed() -> None:
    assert {"NCA", "NMC811", "LiFePO4", "graphite", "NVPF"} <= set(CRYSTALLINE)


@pytest.mark.parametrize("name", CRYSTALLINE)
def test_density_is_the_x_ray_density_of_its_unit_cell(name: str) -> None:
    m = catalogue.material(name)
    assert m.unit_cell is not None and m.formula is not None
    assert m.unit_cell.density(m.formula.mass) == pytest.approx(m.number("density"), rel=0.01)


def test_nca_density_corrected_to_its_x_ray_density() -> None:
    # Issue 12: NCA was 4.85 g/cm^3, about 2 % above its X-ray density. By hand from the
    # cell (a 2.864 A, c 14.17 A, Z 3; typical values from memory): V = sqrt(3)/2 a^2 c
    # = 100.66 A^3, M = 96.08 g/mol, rho = 3 x 96.08 / (6.02214e23 x 100.66e-24) = 4.755.
    nca = catalogue.material("NCA")
    assert nca.number("density") == pytest.approx(4.755, abs=0.01)
    assert nca.number("density") < 4.85 * 0.985


@pytest.mark.parametrize("name", sorted(ELECTRODE_MATERIALS))
def test_recipe_fractions_sum_to_at_most_one(name: str) -> None:
    r = catalogue.recipe(name)
    parts = (r.active_fraction, r.binder_fraction, r.carbon_fraction)
    assert all(0.0 <= p <= 1.0 for p in parts)
    assert sum(parts) <= 1.0 + 1e-9
    assert r.other_fraction == pytest.approx(max(1.0 - sum(parts), 0.0))
    assert sum(share for _, share in r.binder) == pytest.approx(1.0)
    assert 0.15 <= r.porosity <= 0.45  # calendered electrodes (common practice)


@pytest.mark.parametrize("name", sorted(ELECTRODE_MATERIALS))
def test_recipe_thickness_range_follows_from_its_loading_range(name: str) -> None:
    # thickness = loading / (solids density x (1 - porosity)); the stored range is that of
    # the loading range, rounded: within 10 % at both ends
    r = catalogue.recipe(name)
    for loading, thickness in zip(r.loading_mg_cm2, r.thickness_um, strict=True):
        assert r.thickness_for(loading) == pytest.approx(thickness, rel=0.10)


def test_recipe_solids_density_by_hand() -> None:
    # graphite coating: 96 % graphite (2.26), 1.5 % CMC (1.6), 1.5 % SBR (0.96),
    # 1 % carbon black (1.9): 1 / (0.424779 + 0.009375 + 0.015625 + 0.005263) = 2.1976
    r = catalogue.recipe("graphite")
    assert r.solids_density == pytest.approx(2.1976, abs=5e-4)
    assert r.coating_density == pytest.approx(2.1976 * 0.70, abs=5e-4)
    # 10 mg/cm^2 at 1.5383 g/cm^3: 0.010 g/cm^2 / 1.5383 g/cm^3 = 65.0 um
    assert r.thickness_for(10.0) == pytest.approx(65.0, abs=0.1)


@pytest.mark.parametrize(
    ("name", "foil"),
    [
        ("NMC811", "aluminium foil"),
        ("NFM111", "aluminium foil"),
        ("graphite", "copper foil"),
        ("SiOx", "copper foil"),
        ("Si-C composite", "copper foil"),
        ("Li4Ti5O12", "aluminium foil"),  # at 1.55 V lithium does not alloy with aluminium
        ("hard carbon", "aluminium anode foil"),  # nor does sodium (HWANG2017, from memory)
    ],
)
def test_current_collectors(name: str, foil: str) -> None:
    assert catalogue.recipe(name).foil == foil
    assert catalogue.material(foil).role == "foil"


def test_water_based_binder_on_carbon_anodes() -> None:
    # common practice: CMC + SBR on graphite and hard carbon, PVDF on the oxides
    assert dict(catalogue.recipe("graphite").binder) == {"CMC": 0.5, "SBR": 0.5}
    assert dict(catalogue.recipe("hard carbon").binder) == {"CMC": 0.5, "SBR": 0.5}
    assert dict(catalogue.recipe("NMC811").binder) == {"PVDF": 1.0}


def test_sodium_ion_inactive_materials() -> None:
    elyte = catalogue.material("NaPF6 1M in EC:DMC")
    assert elyte.role == "electrolyte"
    assert 1.2 < elyte.number("density") < 1.4  # carbonate solutions (common practice)
    foil = catalogue.material("aluminium anode foil")
    assert foil.role == "foil"
    assert foil.number("density") == catalogue.material("aluminium foil").number("density")
    assert "NaPF6 1M in EC:DMC" in catalogue.material_names("electrolyte")


@pytest.mark.parametrize(
    ("cathode", "anode", "low", "high"),
    [
        # nominal cell voltages of the trade (common practice, from memory): LFP/graphite
        # 3.2-3.3 V, NMC811/graphite 3.6-3.7 V, layered-oxide Na-ion about 3.0-3.1 V,
        # NVPF/hard carbon about 3.7 V, NMC/LTO about 2.2-2.4 V
        ("LiFePO4", "graphite", 3.15, 3.35),
        ("NMC811", "graphite", 3.55, 3.7),
        ("NFM111", "hard carbon", 2.9, 3.15),
        ("NVPF", "hard carbon", 3.6, 3.8),
        ("NMC622", "Li4Ti5O12", 2.1, 2.4),
    ],
)
def test_nominal_voltages_from_the_average_voltages(
    cathode: str, anode: str, low: float, high: float
) -> None:
    c, a = catalogue.cycling(cathode), catalogue.cycling(anode)
    assert c.reference == a.reference
    assert low <= c.average_voltage - a.average_voltage <= high


def test_sodium_and_lithium_voltages_are_not_mixed() -> None:
    with pytest.raises(CellwrightError, match="different references"):
        couple_specific_energy("NFM111", "graphite", "practical")
    assert couple_specific_energy("NFM111", "hard carbon", "practical") > 0


def test_silicon_components_carry_their_own_figures() -> None:
    # a graphite-silicon blend is mixed from its components' rows; each needs its own
    # first charge, efficiency, density and voltage. Common practice: silicon materials
    # store several times graphite's capacity and lose more on the first cycle.
    gr = catalogue.cycling("graphite")
    for name in ("SiOx", "Si-C composite"):
        si = catalogue.cycling(name)
        assert si.reversible_capacity > 3 * gr.reversible_capacity
        assert si.first_cycle_efficiency < gr.first_cycle_efficiency
        assert catalogue.material(name).number("density") > 0


def test_aliases_of_the_new_materials() -> None:
    for alias, name in [
        ("LMFP", "LMFP"),
        ("NCM92", "NMC92"),
        ("PW", "Prussian white"),
        ("HC", "hard carbon"),
        ("sodium layered oxide", "NFM111"),
        ("Na3V2(PO4)2F3", "NVPF"),
        ("silicon monoxide", "SiOx"),
        ("LTO", "Li4Ti5O12"),
    ]:
        assert catalogue.material(alias).name == name


def test_materials_without_first_charge_data_say_so() -> None:
    with pytest.raises(NotFoundError, match="material with first-charge data"):
        catalogue.cycling("Zn")
    with pytest.raises(NotFoundError, match="material with an electrode recipe"):
        catalogue.recipe("lithium metal")
    assert catalogue.material("Zn").cycling is None
    assert catalogue.material("Zn").number("practical_capacity") > 0  # stored, not derived


def test_unit_cell_text() -> None:
    cell = catalogue.parse_unit_cell("hexagonal; a=2.464; c=6.711; Z=4/6")
    assert cell.z == pytest.approx(2 / 3)
    # graphite by hand: 4 C x 12.011 / (6.02214e23 x 35.29e-24 cm^3) = 2.261 g/cm^3
    assert cell.density(parse("C6").mass) == pytest.approx(2.261, abs=0.002)
    for bad in ("rhombic; a=1; Z=1", "cubic; a=8.2", "cubic; a=8.2; c=3; Z=8", "cubic; a=-1; Z=8"):
        with pytest.raises(DataError):
            catalogue.parse_unit_cell(bad)


# ----------------------------------------------------------------- the loader refuses bad rows


@pytest.fixture
def edited_data(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Iterator[Callable[..., None]]:
    """Copy data/ to a temporary folder and point the catalogue at it; yields a function
    that rewrites one property row of a material (or appends a row)."""
    shutil.copytree(catalogue.data_dir(), tmp_path / "data")
    folder = tmp_path / "data"
    monkeypatch.setattr(catalogue, "data_dir", lambda: folder)
    catalogue.reload()

    def edit(material: str, prop: str, value: str | None, unit: str | None = None) -> None:
        path = folder / "active_materials.csv"
        with path.open(newline="", encoding="utf-8") as fh:
            rows = list(csv.DictReader(fh))
        hits = [r for r in rows if r["material"] == material and r["property"] == prop]
        if hits and value is None:
            rows.remove(hits[0])
        elif hits:
            hits[0]["value"] = value
            if unit is not None:
                hits[0]["unit"] = unit
        else:
            rows.append(
                {
                    "material": material,
                    "property": prop,
                    "value": value or "",
                    "unit": unit or "",
                    "source": "test",
                    "note": "test row",
                }
            )
        with path.open("w", newline="", encoding="utf-8") as fh:
            w = csv.DictWriter(fh, fieldnames=list(rows[0]))
            w.writeheader()
            w.writerows(rows)
        catalogue.reload()

    yield edit
    monkeypatch.undo()
    catalogue.reload()


@pytest.mark.parametrize(
    ("material", "prop", "value", "unit", "fragment"),
    [
        ("NMC811", "practical_capacity", "200", "mAh/g", "practical_capacity is derived"),
        ("Zn", "reversible_capacity", "700", "mAh/g", "reversible_capacity is derived"),
        ("NMC811", "electrode_active_fraction", "0.98", None, "recipe fractions sum above 1"),
        ("NMC811", "electrode_porosity", None, None, "recipe without"),
        ("NMC811", "first_charge_capacity", "225", "Ah/kg", "is given in 'mAh/g'"),
        ("NMC811", "first_charge_capacity", "290", None, "first charge above theoretical"),
        ("NMC811", "voltage_min", "3.9", None, "average_voltage outside the window"),
        ("NMC811", "first_cycle_efficiency", "1.2", None, "outside"),
        ("NMC811", "voltage_min", None, None, "first-charge data without"),
        ("graphite", "electrode_binder", "CMC=0.5; PVDF=0.4", None, "sum to 1"),
        ("graphite", "electrode_binder", "carbon black", None, "binder material"),
        ("graphite", "electrode_foil", "PE separator", None, "foil material"),
        ("graphite", "density_basis", "guessed", None, "density_basis one of"),
        ("graphite", "unit_cell", "cubic; a=3", "angstrom", "exactly"),
        ("SiOx", "voltage_reference", "Mg/Mg2+", None, "voltage_reference one of"),
    ],
)
def test_loader_refuses_inconsistent_rows(
    edited_data: Callable[..., None],
    material: str,
    prop: str,
    value: str | None,
    unit: str | None,
    fragment: str,
) -> None:
    catalogue.validate_all()  # the copy loads as it is
    edited_data(material, prop, value, unit)
    with pytest.raises(DataError, match=fragment):
        catalogue.validate_all()


def test_loader_refuses_electrode_rows_on_inactive_materials(
    edited_data: Callable[..., None], tmp_path: Path
) -> None:
    path = tmp_path / "data" / "inactive_materials.csv"
    with path.open("a", encoding="utf-8") as fh:
        fh.write("PVDF,first_cycle_efficiency,0.9,,test,test row\n")
    catalogue.reload()
    with pytest.raises(DataError, match="no electrode rows"):
        catalogue.validate_all()
