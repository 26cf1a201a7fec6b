"""Every spreadsheet function through its spreadsheet face, against published
values (the source is named beside each check; "computed" means the value
was worked out by hand from the named source's inputs)."""

from __future__ import annotations

import math

import pytest

from udfs.core import catalogue
from udfs.sheet.error_values import SheetError
from udfs.sheet.registry import CATALOGUE_ORDER, FUNCTIONS, PLANS

F = FUNCTIONS


def close(x: object, expected: float, rel: float = 1e-3, abs_: float = 0.0) -> bool:
    return isinstance(x, float) and math.isclose(x, expected, rel_tol=rel, abs_tol=abs_)


def test_catalogue_is_complete_and_in_order() -> None:
    assert list(CATALOGUE_ORDER) == [n for n in CATALOGUE_ORDER if n in F]
    assert len(CATALOGUE_ORDER) == 54  # 35 + 7 (formats and packs) + 12 (cost layer)
    assert set(CATALOGUE_ORDER) == set(F)


# ----------------------------------------------------------------- formula and units


def test_convert() -> None:
    assert F["CW_CONVERT"](1, "Ah", "C") == 3600.0  # SI: 1 A h = 3600 C (common practice)
    assert close(F["CW_CONVERT"](25, "degC", "K"), 298.15, 1e-12)  # SI definition of degC
    assert close(F["CW_CONVERT"](1, "kWh", "MJ"), 3.6, 1e-12)  # SI: 1 kWh = 3.6 MJ
    assert close(F["CW_CONVERT"](150, "mAh/g", "Ah/kg"), 150.0, 1e-12)  # common practice
    assert close(F["CW_CONVERT"](20, "mg/cm^2", "g/m^2"), 200.0, 1e-12)  # common practice


def test_constant() -> None:
    assert close(F["CW_CONSTANT"]("F"), 96485.33212, 1e-10)  # CODATA2018 (exact)
    assert close(F["CW_CONSTANT"]("r"), 8.314462618, 1e-9)  # CODATA2018 (exact), case forgiven
    # ln(10) RT/F at 298.15 K = 59.159 mV (SOURCES.md trap list; computed from CODATA2018)
    assert close(F["CW_CONSTANT"]("NERNST_SLOPE", "mV"), 59.159, 1e-5)


def test_molar_mass_and_mass_fraction() -> None:
    # IUPAC2021 abridged weights: Li 6.94, Fe 55.845, P 30.973762, O 15.999 -> 157.755 (computed)
    assert close(F["CW_MOLAR_MASS"]("LiFePO4"), 157.755, 1e-5)
    assert close(F["CW_MOLAR_MASS"]("CuSO4*5H2O"), 249.68, 1e-4)  # IUPAC2021, computed
    assert F["CW_MOLAR_MASS"]("LFP") == F["CW_MOLAR_MASS"]("LiFePO4")  # catalogue alias
    # Ni in NMC811: 0.8 x 58.6934 / 97.28 = 0.4827 (IUPAC2021, computed)
    assert close(F["CW_MASS_FRACTION"]("LiNi0.8Mn0.1Co0.1O2", "Ni"), 0.4827, 2e-4)
    assert F["CW_MASS_FRACTION"]("LiFePO4", "Co") == 0.0


def test_theoretical_capacity() -> None:
    # NITTA2015 lists 170 mAh/g for LiFePO4; n F / M with IUPAC2021 weights gives 169.9
    assert close(F["CW_THEORETICAL_CAPACITY"]("LiFePO4", 1), 169.9, 3e-4)
    assert close(F["CW_THEORETICAL_CAPACITY"]("LiCoO2", 1), 274.0, 2e-3)  # NITTA2015: 274
    assert close(F["CW_THEORETICAL_CAPACITY"]("graphite", 1), 372.0, 2e-3)  # NITTA2015: 372 (C6)
    assert close(F["CW_THEORETICAL_CAPACITY"]("LiFePO4", 1, "Ah/kg"), 169.9, 3e-4)  # same number
    assert close(F["CW_THEORETICAL_CAPACITY"]("LiFePO4", 1, "C/g"), 169.9 * 3.6, 3e-4)


# ----------------------------------------------------------------- Faraday's law


def test_charge_to_mass() -> None:
    assert close(F["CW_CHARGE_TO_MASS"](1, "Cu", 2), 1.186, 5e-4)  # LINDEN: Cu 1.186 g/Ah
    assert close(F["CW_CHARGE_TO_MASS"](1000, "Cu", 2, 1, "mAh"), 1.186, 5e-4)  # LINDEN
    assert close(F["CW_CHARGE_TO_MASS"](3600, "Cu", 2, 1, "C"), 1.186, 5e-4)  # LINDEN
    assert close(F["CW_CHARGE_TO_MASS"](1, "Zn", 2), 1.22, 2e-3)  # LINDEN: Zn 1.22 g/Ah
    assert close(F["CW_CHARGE_TO_MASS"](1, "Cu", 2, 0.5), 0.593, 1e-3)  # half efficiency


def test_mass_to_charge() -> None:
    assert close(F["CW_MASS_TO_CHARGE"](1, "Li", 1), 3.86, 1e-3)  # LINDEN: Li 3.86 Ah/g
    assert close(F["CW_MASS_TO_CHARGE"](1, "Zn", 2), 0.82, 2e-3)  # LINDEN: Zn 0.82 Ah/g
    assert close(F["CW_MASS_TO_CHARGE"](1.186, "Cu", 2, 1, "C"), 3600.0, 5e-4)  # LINDEN


def test_deposition_time_energy_and_thickness() -> None:
    # LINDEN: 1.186 g Cu per Ah, so 11.86 g at 5 A takes 2 h (computed)
    assert close(F["CW_DEPOSITION_TIME"](11.86, 5, "Cu", 2), 2.0, 5e-4)
    # 2 V / 1.186 g/Ah = 1.686 Wh/g = 1.686 kWh/kg (LINDEN equivalent, computed)
    assert close(F["CW_ENERGY_PER_MASS"](2, "Cu", 2), 1.686, 1e-3)
    assert close(F["CW_ENERGY_PER_MASS"](2, "Cu", 2, 1, "kWh/t"), 1686.0, 1e-3)
    # Ni: 1.095 g/Ah (LINDEN-style n F / M, computed) over 100 cm2 at 8.908 g/cm3
    # (CRC handbook density, from memory) = 12.29 um per A h/dm2
    assert close(F["CW_PLATING_THICKNESS"](1, 1, "Ni", 2, 8.908), 12.29, 1e-3)


# ----------------------------------------------------------------- potentials


def test_e0_and_nernst() -> None:
    assert F["CW_E0"]("Cu2+/Cu") == 0.3419  # CRC-ECS
    assert F["CW_E0"](" zn2+/zn ") == -0.7618  # CRC-ECS; spaces and case forgiven
    assert close(F["CW_NERNST"](0.34, 2, 0.1, 1), 0.310, 2e-3)  # common practice (0.0296 V/decade)
    # 59.16 mV per decade at 25 degC, n = 1 (common practice)
    assert close(F["CW_NERNST"](0.0, 1, 1, 10), -0.05916, 1e-4)
    # at 37 degC the slope is 61.5 mV (common practice)
    assert close(F["CW_NERNST"](0.0, 1, 1, 10, 37), -0.06154, 1e-3)


def test_potential() -> None:
    # Cu2+ at 0.1 M: 0.3419 - 0.05916/2 = 0.3123 V (CRC-ECS E0, computed)
    assert close(F["CW_POTENTIAL"]("Cu2+/Cu", "Cu2+=0.1"), 0.3123, 1e-4)
    # hydrogen electrode at pH 7: -0.414 V (common practice)
    assert close(F["CW_POTENTIAL"]("H+/H2", "pH=7"), -0.414, 1e-3)
    # oxygen at pH 7 and 1 bar: 1.229 - 0.414 = 0.815 V (CRC-ECS E0; common practice)
    assert close(F["CW_POTENTIAL"]("O2/H2O", "pH=7"), 0.815, 1e-3)
    table = [["pH", 7.0], ["O2", 0.21]]
    assert F["CW_POTENTIAL"]("O2/H2O", table) == F["CW_POTENTIAL"]("O2/H2O", "pH=7; O2=0.21")
    assert F["CW_POTENTIAL"]("Cu2+/Cu") == F["CW_E0"]("Cu2+/Cu")  # standard state


def test_half_reaction_and_couples() -> None:
    assert F["CW_HALF_REACTION"]("Cu2+/Cu") == "Cu2+(aq) + 2e- = Cu(s)"  # CRC-ECS
    spilled = F["CW_COUPLES"]()
    assert spilled == [[c] for c in catalogue.couple_ids()]
    assert ["Cu2+/Cu"] in spilled


def test_ocv() -> None:
    assert close(F["CW_OCV"]("Cu2+/Cu", "Zn2+/Zn"), 1.10, 5e-3)  # CRC-ECS: 0.3419 + 0.7618
    # Daniell cell with Cu2+ 0.01 M and Zn2+ 1 M: 1.1037 - 0.05916 = 1.0445 V (CRC-ECS, computed)
    assert close(F["CW_OCV"]("Cu2+/Cu", "Zn2+/Zn", "Cu2+=0.01"), 1.0445, 1e-4)


def test_membrane_potential() -> None:
    # K+ 140 mM inside, 5 mM outside at 37 degC: about -89 mV (common practice)
    assert close(F["CW_MEMBRANE_POTENTIAL"](0.140, 0.005, 1, 37), -0.089, 5e-3)
    # Ca2+ with z = 2 halves the slope (common practice)
    assert close(F["CW_MEMBRANE_POTENTIAL"](1e-4, 1e-3, 2), 0.02958, 1e-3)


# ----------------------------------------------------------------- cell thermodynamics


def test_gibbs_and_reaction_thermo() -> None:
    # dG = -n F E = -2 x 96485 x 1.10 = -212.3 kJ/mol (OPENSTAX-CHEM2E ch. 17, computed)
    assert close(F["CW_GIBBS"](1.10, 2), -212.3, 5e-4)
    rt = F["CW_REACTION_THERMO"]
    # NBS1982: dfG(Zn2+) -147.06, dfG(Cu2+) 65.49 -> dG = -212.55 kJ/mol (computed)
    assert close(rt("Cu2+/Cu", "Zn2+/Zn", "dG"), -212.55, 1e-3)
    # NBS1982: dfH(Zn2+) -153.89, dfH(Cu2+) 64.77 -> dH = -218.66 kJ/mol (computed)
    assert close(rt("Cu2+/Cu", "Zn2+/Zn", "dh"), -218.66, 1e-3)
    assert close(rt("Cu2+/Cu", "Zn2+/Zn", "efficiency"), 212.55 / 218.66, 1e-3)  # NBS1982
    # emf from the NBS1982 data is within 3 mV of CRC-ECS 1.1037 V (SOURCES.md trap list)
    assert close(rt("Cu2+/Cu", "Zn2+/Zn", "emf"), 1.1037, abs_=3e-3, rel=0)
    assert rt("Cu2+/Cu", "Zn2+/Zn", "equation") == "Cu2+(aq) + Zn(s) -> Cu(s) + Zn2+(aq)"


def test_heat_rate() -> None:
    # BERNARDI1985: I (U - V) - I T dU/dT = 10 x 0.1 + 10 x 298.15 x 1e-4 = 1.298 W (computed)
    assert close(F["CW_HEAT_RATE"](10, 3.7, 3.6, -0.1), 1.298, 1e-3)
    # on charge (negative current) the entropic term changes sign (BERNARDI1985, computed)
    assert close(F["CW_HEAT_RATE"](-10, 3.7, 3.8, -0.1), 1.0 - 0.29815, 1e-3)


# ----------------------------------------------------------------- materials and capacity


def test_material_materials_and_source() -> None:
    assert F["CW_MATERIAL"]("LFP", "theoretical_capacity") == 170.0  # NITTA2015
    assert F["CW_MATERIAL"]("lfp", "Theoretical Capacity") == 170.0  # lenient
    assert F["CW_MATERIAL"]("LFP", "formula") == "LiFePO4"
    assert F["CW_MATERIAL"]("LCO", "role") == "cathode"
    assert F["CW_MATERIALS"]("cathode") == [[n] for n in catalogue.material_names("cathode")]
    assert "CRC-ECS" in F["CW_SOURCE"]("Cu2+/Cu")
    assert F["CW_SOURCE"]("LFP", "theoretical_capacity") == "NITTA2015"


def test_capacity_energy_and_couple_energy() -> None:
    assert close(F["CW_CAPACITY"](100, 160), 16.0, 1e-12)  # 100 g x 160 mAh/g (common practice)
    assert close(F["CW_ENERGY"](50, 3.2), 160.0, 1e-12)  # 50 Ah x 3.2 V (common practice)
    # LFP/graphite, theoretical: (3.4 - 0.15) V / (1/169.9 + 1/372.2) Ah/kg
    # (LFP 3.4 V NITTA2015; graphite 0.15 V on delithiation, common practice; capacities
    # n F / M, computed by hand) = 379 Wh/kg
    q_c, q_a = 169.9, 372.2
    expected = (3.4 - 0.15) / (1 / q_c + 1 / q_a) * 1.0
    assert close(F["CW_COUPLE_SPECIFIC_ENERGY"]("LFP", "graphite"), expected, 1e-3)
    assert close(expected, 379.1, 2e-3)


def test_series_parallel() -> None:
    # ceil(48/3.65) = 14 in series; 14 x 3.65 V x 50 Ah = 2555 Wh per string;
    # ceil(5000/2555) = 2 strings (common practice)
    assert F["CW_SERIES_PARALLEL"](48, 5000, 3.65, 50) == [[14.0, 2.0, 28.0, 5110.0]]


# ----------------------------------------------------------------- electrode and cell sizing


def test_electrode_functions() -> None:
    assert close(F["CW_AREAL_CAPACITY"](20, 0.95, 200), 3.8, 1e-12)  # common practice arithmetic
    # 20 mg/cm2 / (4 g/cm3 x 0.7) = 71.43 um (common practice arithmetic)
    assert close(F["CW_COATING_THICKNESS"](20, 4.0, 0.3), 71.43, 1e-4)
    assert close(F["CW_ELECTRODE_AREA"](5, 3.0), 1666.67, 1e-5)  # 5000 mAh / 3 mAh/cm2
    assert close(F["CW_NP_RATIO"](3.3, 3.0), 1.1, 1e-12)  # common practice


# ----------------------------------------------------------------- procurement


def test_lce_and_metal_content() -> None:
    assert close(F["CW_LCE"](1), 5.323, 1e-4)  # IUPAC2021: M(Li2CO3) / (2 M(Li))
    # Co in LiCoO2: 58.933194 / 97.87 = 0.6021 (IUPAC2021, computed)
    assert close(F["CW_METAL_CONTENT"]("LiCoO2", "Co", 1000), 602.1, 2e-4)
    assert close(F["CW_METAL_CONTENT"]("LCO", "Co", 900, 0.9), 602.1, 2e-4)  # yield 90 %


@pytest.mark.parametrize("name", CATALOGUE_ORDER)
def test_every_function_has_a_working_example(name: str) -> None:
    plan = PLANS[name]
    assert plan.example is not None
    out = F[name](*plan.example)
    cells = [x for row in out for x in row] if isinstance(out, list) else [out]
    assert cells and not any(isinstance(x, SheetError) for x in cells), out
