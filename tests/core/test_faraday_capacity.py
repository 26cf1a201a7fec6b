"""Faraday's law and capacity against plating and battery handbook values."""

from __future__ import annotations

from collections.abc import Callable

import pytest
from hypothesis import given
from hypothesis import strategies as st

from udfs.core import capacity, faraday
from udfs.core.errors import CellwrightError, DomainError
from udfs.core.formula import molar_mass

# Electrochemical equivalents used in plating, g/Ah (LINDEN Table 1.1 and plating
# practice; values from memory), tolerance 0.1 %.
PLATING_EQUIVALENTS = [("Cu", 2, 1.186), ("Ni", 2, 1.095), ("Zn", 2, 1.220), ("Ag", 1, 4.025)]


@pytest.mark.parametrize(("metal", "n", "g_per_Ah"), PLATING_EQUIVALENTS)
def test_electrochemical_equivalents(metal: str, n: int, g_per_Ah: float) -> None:
    assert float(faraday.electrochemical_equivalent(molar_mass(metal), n)) == pytest.approx(
        g_per_Ah, rel=1e-3
    )
    assert float(faraday.charge_to_mass(1.0, molar_mass(metal), n)) == pytest.approx(
        g_per_Ah, rel=1e-3
    )


def test_one_ampere_for_one_day() -> None:
    # common practice: 1 A for 24 h moves about 0.9 mol of electrons, depositing
    # about 0.45 mol of copper or 0.9 mol of silver (86 400 C / F = 0.8955 mol)
    mol_e = float(faraday.electrons_per_day(1.0))
    assert mol_e == pytest.approx(0.8955, abs=5e-4)
    cu_mol = float(faraday.charge_to_mass(24.0, molar_mass("Cu"), 2)) / molar_mass("Cu")
    ag_mol = float(faraday.charge_to_mass(24.0, molar_mass("Ag"), 1)) / molar_mass("Ag")
    assert cu_mol == pytest.approx(0.448, abs=1e-3)
    assert ag_mol == pytest.approx(0.8955, abs=1e-3)


def test_efficiency_time_and_inverse() -> None:
    m = molar_mass("Cu")
    # 90 % current efficiency deposits 90 % of the mass (definition)
    assert float(faraday.charge_to_mass(10.0, m, 2, 0.9)) == pytest.approx(
        0.9 * float(faraday.charge_to_mass(10.0, m, 2)), rel=1e-12
    )
    assert float(
        faraday.mass_to_charge(faraday.charge_to_mass(7.0, m, 2, 0.8), m, 2, 0.8)
    ) == pytest.approx(7.0)
    # time = charge / current (definition)
    assert float(faraday.deposition_time(1.1855, 2.0, m, 2)) == pytest.approx(0.5, rel=1e-3)


def test_energy_per_mass_copper_electrowinning() -> None:
    # V * n F / M: 2.0 V for copper gives 2.0 / 1.1855 = 1.687 kWh/kg (recomputed by hand)
    assert float(faraday.energy_per_mass(2.0, molar_mass("Cu"), 2)) == pytest.approx(
        1.687, rel=1e-3
    )
    # water electrolysis at 1.8 V per kg of H2 (n = 2): 1.8 * 26.59 Ah/g = 47.9 kWh/kg
    # (recomputed by hand from F and M(H2) = 2.016 g/mol, IUPAC2021)
    assert float(faraday.energy_per_mass(1.8, molar_mass("H2"), 2)) == pytest.approx(
        47.86, rel=1e-3
    )


def test_plating_thickness_nickel() -> None:
    # 1 A/dm2 for 1 h of nickel (rho 8.908 g/cm3, CRC Handbook): 1.095 g/dm2 = 12.29 um
    # (recomputed by hand: 1.095 / 100 / 8.908 * 1e4)
    assert float(faraday.plating_thickness(1.0, 1.0, molar_mass("Ni"), 2, 8.908)) == pytest.approx(
        12.29, abs=0.01
    )


@given(st.floats(0, 1e9), st.floats(0, 1e9))
def test_faraday_is_linear_in_charge(q1: float, q2: float) -> None:
    m = molar_mass("Zn")
    both = float(faraday.charge_to_mass(q1 + q2, m, 2))
    parts = float(faraday.charge_to_mass(q1, m, 2)) + float(faraday.charge_to_mass(q2, m, 2))
    assert both == pytest.approx(parts, rel=1e-12, abs=1e-300)


@pytest.mark.parametrize(
    ("call", "fragment"),
    [
        (lambda: faraday.charge_to_mass(-1.0, 63.5, 2), "charge_Ah must be >= 0"),
        (lambda: faraday.charge_to_mass(1.0, 63.5, 0), "electrons must be > 0"),
        (lambda: faraday.charge_to_mass(1.0, 63.5, 2, 1.5), "efficiency must be > 0 and <= 1"),
        (lambda: faraday.deposition_time(1.0, 0.0, 63.5, 2), "current_A must be > 0"),
        (lambda: faraday.plating_thickness(1.0, 1.0, 58.7, 2, -8.9), "density_g_cm3 must be > 0"),
        (lambda: faraday.charge_to_mass(float("nan"), 63.5, 2), "charge_Ah must be >= 0"),
    ],
)
def test_faraday_bad_input(call: Callable[[], object], fragment: str) -> None:
    with pytest.raises(DomainError, match=fragment):
        call()


def test_theoretical_capacity_lfp() -> None:
    # NITTA2015: LiFePO4 170 mAh/g (n F / M = 169.9)
    assert float(capacity.theoretical_capacity(molar_mass("LiFePO4"), 1)) == pytest.approx(
        169.9, abs=0.05
    )


def test_capacity_energy_and_electrode_quantities() -> None:
    # definitions: Ah = g * mAh/g / 1000, Wh = Ah * V (common practice)
    assert float(capacity.capacity(10.0, 160.0)) == pytest.approx(1.6)
    assert float(capacity.energy(50.0, 3.65)) == pytest.approx(182.5)
    assert float(capacity.areal_capacity(20.0, 0.95, 200.0)) == pytest.approx(3.8)
    assert float(capacity.coating_thickness(20.0, 4.0, 0.3)) == pytest.approx(71.4286, rel=1e-5)
    assert float(capacity.electrode_area(5.0, 4.0)) == pytest.approx(1250.0)
    assert float(capacity.np_ratio(4.4, 4.0)) == pytest.approx(1.1)


def test_series_parallel_meets_both_targets() -> None:
    # 48 V, 5 kWh from 3.65 V, 50 Ah cells: 14s (51.1 V) and 2p (5.11 kWh), by hand
    s, p, cells, wh = capacity.series_parallel(48.0, 5000.0, 3.65, 50.0)
    assert (float(s), float(p), float(cells)) == (14.0, 2.0, 28.0)
    assert float(wh) == pytest.approx(5110.0)
    # exact multiples do not round up through float noise: 3 x 3.7 V = 11.1 V
    s, *_ = capacity.series_parallel(11.1, 100.0, 3.7, 10.0)
    assert float(s) == 3.0


# LINDEN Table 1.2 (values from memory): theoretical Ah/kg of classic couples,
# active materials only: Zn/MnO2 224, Pb/PbO2 120, Cd/NiOOH 181. Tolerance 1 %
# (the table rounds its electrochemical equivalents).
@pytest.mark.parametrize(
    ("cathode", "anode", "ah_per_kg"),
    [("MnO2", "Zn", 224.0), ("PbO2", "Pb", 120.0), ("NiOOH", "Cd", 181.0)],
)
def test_couple_capacity_per_kg(cathode: str, anode: str, ah_per_kg: float) -> None:
    wh = capacity.couple_specific_energy(cathode, anode)
    from udfs.core.catalogue import material

    volts = material(cathode).number("average_voltage") - material(anode).number("average_voltage")
    assert wh / volts == pytest.approx(ah_per_kg, rel=0.01)


def test_couple_specific_energy_lithium_ion() -> None:
    # LiCoO2 / graphite: 1 / (1/274 + 1/372) = 157.8 Ah/kg (NITTA2015 capacities);
    # times the catalogue's voltage difference
    from udfs.core.catalogue import material

    wh = capacity.couple_specific_energy("LiCoO2", "graphite")
    volts = material("LiCoO2").number("average_voltage") - material("graphite").number(
        "average_voltage"
    )
    assert wh == pytest.approx(volts / (1 / 273.8 + 1 / 371.9), rel=2e-3)
    with pytest.raises(CellwrightError, match="different references"):
        capacity.couple_specific_energy("LiCoO2", "Zn")
    with pytest.raises(CellwrightError, match="'theoretical' or 'practical'"):
        capacity.couple_specific_energy("LiCoO2", "graphite", "nominal")
