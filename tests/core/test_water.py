"""pKw(T) of liquid water and the pH -> OH- conversion at temperature."""

from __future__ import annotations

import math

import numpy as np
import pytest

from udfs.core import catalogue, constants, nernst, water
from udfs.core.errors import DomainError

# BANDURA2006 (as quoted in SOURCES.md): pKw of liquid water at saturation pressure,
# "about 14.00" at 25 C (tolerance 0.01), 13.26 and 13.02 to two decimals (0.005) and
# 12.6 to one (0.05).
PUBLISHED_PKW = [
    (25.0, 14.00, 0.01),
    (50.0, 13.26, 0.005),
    (60.0, 13.02, 0.005),
    (80.0, 12.6, 0.05),
]


@pytest.mark.parametrize(("temp_C", "published", "tol"), PUBLISHED_PKW)
def test_pkw_against_published_points(temp_C: float, published: float, tol: float) -> None:
    assert float(nernst.pkw(temp_C)) == pytest.approx(published, abs=tol)


def test_pkw_at_25_c_matches_the_handbook_figure() -> None:
    # CRC Handbook, ionization constant of water: 13.995 at 25 C (from memory)
    assert float(nernst.pkw(25.0)) == pytest.approx(13.995, abs=6e-4)
    assert float(nernst.pkw(25.0)) == constants.PKW_25C
    assert constants.constant("PKW")[0] == constants.PKW_25C


def test_formulation_check_values_at_fixed_density() -> None:
    # IAPWS-R11-07 check values of the BANDURA2006 equation (T in K, density in kg/m^3),
    # as printed in the doctests of two stored open-source implementations (checked);
    # they test the coefficients without the density equation
    assert float(water.pkw_at_density(300.0, 1000.0)) == pytest.approx(13.906565, abs=2e-6)
    assert float(water.pkw_at_density(600.0, 700.0)) == pytest.approx(11.203153, abs=2e-6)


def test_saturated_liquid_density() -> None:
    # WAGNER1993 saturated-liquid equation: 997.0 kg/m^3 at 25 C and 958.4 at 100 C
    # (IAPWS tables, from memory: 997.05 and 958.35); tolerance 0.1 kg/m^3
    assert float(water.saturated_liquid_density(298.15)) == pytest.approx(997.0, abs=0.1)
    assert float(water.saturated_liquid_density(373.15)) == pytest.approx(958.35, abs=0.1)


def test_pkw_falls_with_temperature_and_broadcasts() -> None:
    t = np.array([[0.0, 25.0, 50.0, 75.0, 100.0]])
    p = nernst.pkw(t)
    assert p.shape == (1, 5)
    assert np.all(np.diff(p) < 0)  # Kw rises with temperature up to about 250 C
    # 14.95 at 0 C (BANDURA2006, from memory: 14.946)
    assert float(p[0, 0]) == pytest.approx(14.946, abs=0.005)


@pytest.mark.parametrize("temp_C", [-5.0, 351.0, math.nan])
def test_pkw_outside_liquid_water_is_an_error(temp_C: float) -> None:
    with pytest.raises(DomainError, match="temp_C must be >= 0 and <= 350 degC"):
        nernst.pkw(temp_C)
    with pytest.raises(DomainError, match="liquid water"):
        nernst.potential("O2/OH-", {"pH": 13.0}, temp_C)


def test_couples_without_hydroxide_keep_their_temperature_range() -> None:
    # pH sets H+ only: no pKw, so no liquid-water limit (the acid form at -5 C)
    e = float(nernst.potential("O2/H2O", {"pH": 13.0}, -5.0))
    c = catalogue.couple("O2/H2O")
    assert c.de0dt is not None
    slope = math.log(10) * constants.R * 268.15 / constants.F
    assert e == pytest.approx(c.e0 + c.de0dt * (-30.0) - slope * 13.0, abs=1e-12)


@pytest.mark.parametrize(("temp_C", "tol_mV"), [(25.0, 0.2), (60.0, 4.0), (80.0, 10.0)])
def test_acid_and_alkaline_oxygen_electrodes_agree_at_ph_13(temp_C: float, tol_mV: float) -> None:
    # The same electrode written with H+ (O2/H2O) and with OH- (O2/OH-) must give one
    # potential. With pKw fixed at 25 C they differed by 68 mV at 60 C and 107 mV at 80 C
    # (issue 12); with pKw(T) what is left is the curvature a constant dE0/dT leaves out.
    acid = float(nernst.potential("O2/H2O", {"pH": 13.0}, temp_C))
    alkaline = float(nernst.potential("O2/OH-", {"pH": 13.0}, temp_C))
    assert abs(acid - alkaline) * 1000 <= tol_mV


@pytest.mark.parametrize("temp_C", [60.0, 80.0])
def test_what_is_left_is_the_heat_capacity_of_water_ionization(temp_C: float) -> None:
    # E0(O2/H2O) - E0(O2/OH-) = dG(H2O -> H+ + OH-)/F. The table's two linear E0(T) keep dS
    # at its 25 C value; the heat capacity change of the ionization, dCp = Cp(OH-) - Cp(H2O)
    # = -148.5 - 75.291 J/(mol K) (NBS1982, from memory), adds
    # dCp/F [(T - T0) - T ln(T/T0)] (positive above 25 C) to the true difference, which
    # pKw(T) carries and the linear E0(T) do not. The alkaline minus the acid potential must
    # be that term to within 2.5 mV (by hand: +4.6 mV at 60 C, +11.1 mV at 80 C).
    t, t0 = temp_C + 273.15, 298.15
    d_cp = -148.5 - 75.291
    curvature = d_cp / constants.F * ((t - t0) - t * math.log(t / t0))
    acid = float(nernst.potential("O2/H2O", {"pH": 13.0}, temp_C))
    alkaline = float(nernst.potential("O2/OH-", {"pH": 13.0}, temp_C))
    assert (alkaline - acid) == pytest.approx(curvature, abs=0.0025)
    assert abs(curvature) > abs(alkaline - acid)  # it explains the sign and most of the size
