"""Potentials and cell thermodynamics against CRC, NBS and common practice."""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from udfs.core import catalogue, constants, nernst, thermo
from udfs.core.errors import CellwrightError, DomainError


def test_copper_at_one_and_a_tenth_molar() -> None:
    # common practice: copper about 0.34 V at 1 M and about 0.31 V at 0.1 M
    assert float(nernst.potential("Cu2+/Cu")) == pytest.approx(0.34, abs=0.003)
    assert float(nernst.potential("Cu2+/Cu", {"Cu2+": 0.1})) == pytest.approx(0.31, abs=0.003)
    # CW_NERNST(0.34, 2, 0.1, 1) about 0.310 V (common practice; 0.34 - 0.02958)
    assert float(nernst.nernst(0.34, 2, 0.1, 1.0)) == pytest.approx(0.3104, abs=1e-4)


def test_fifty_nine_millivolts_per_decade() -> None:
    # common practice: about 59 mV per decade per electron at 25 C (59.159 mV exactly)
    e1 = float(nernst.nernst(0.0, 1, 1.0, 1.0))
    e2 = float(nernst.nernst(0.0, 1, 0.1, 1.0))
    assert (e1 - e2) * 1000 == pytest.approx(59.159, abs=1e-3)


def test_oxygen_electrode_moves_59_mV_per_pH() -> None:
    # common practice: O2/H2O shifts -59 mV per pH unit at 25 C
    e = nernst.potential("O2/H2O", {"pH": np.array([0.0, 7.0, 14.0])})
    assert np.diff(e) / 7 * 1000 == pytest.approx([-59.159, -59.159], abs=1e-3)
    # and the alkaline form agrees with the acid form at pH 14 within the table's
    # consistency (1.229 - 14 * 0.05916 = 0.401 V; CRC-ECS)
    assert float(nernst.potential("O2/OH-", {"pH": 14.0})) == pytest.approx(float(e[2]), abs=0.002)


def test_zinc_copper_cell_about_1_1_V() -> None:
    # CRC-ECS: 0.3419 - (-0.7618) = 1.1037 V
    assert float(nernst.ocv("Cu2+/Cu", "Zn2+/Zn")) == pytest.approx(1.1037, abs=0.002)
    # concentration dependence of the Daniell cell (Nernst with Q = [Zn2+]/[Cu2+])
    e = float(nernst.ocv("Cu2+/Cu", "Zn2+/Zn", {"Cu2+": 0.01}, {"Zn2+": 1.0}))
    assert e == pytest.approx(1.1037 - 0.05916, abs=0.002)


def test_temperature_coefficient_applied() -> None:
    c = catalogue.couple("Zn2+/Zn")
    assert c.de0dt is not None
    shift = float(nernst.e0("Zn2+/Zn", 35.0)) - float(nernst.e0("Zn2+/Zn", 25.0))
    assert shift == pytest.approx(10 * c.de0dt, rel=1e-12)


@given(
    st.floats(-3, 3),
    st.integers(1, 6),
    st.floats(-12, 1.3),
    st.floats(-12, 1.3),
    st.floats(-40, 150),
)
def test_nernst_slope_is_exact(e0: float, n: int, log_ox: float, log_red: float, t: float) -> None:
    # property: E = E0 - ln(10) R T / (n F) * log10(Q), exactly
    e = float(nernst.nernst(e0, n, 10**log_ox, 10**log_red, t))
    slope = math.log(10) * constants.R * (t + 273.15) / (n * constants.F)
    assert e == pytest.approx(e0 - slope * (log_red - log_ox), abs=1e-12)


def test_membrane_potential_potassium() -> None:
    # Nernst potential of K+ at 37 C, 140 mM in / 5 mM out: (RT/F) ln(5/140) = -89.0 mV
    # (recomputed by hand from CODATA2018 R and F)
    assert float(nernst.membrane_potential(0.140, 0.005, 1, 37.0)) * 1000 == pytest.approx(
        -89.05, abs=0.05
    )
    with pytest.raises(DomainError, match="charge must be a non-zero whole number"):
        nernst.membrane_potential(0.1, 0.01, 0, 25.0)


@pytest.mark.parametrize(
    ("call", "fragment"),
    [
        (lambda: nernst.nernst(0.34, 2, -0.1, 1.0), "ox_activity must be > 0"),
        (lambda: nernst.nernst(0.34, 0, 0.1, 1.0), "electrons must be > 0"),
        (lambda: nernst.nernst(0.34, 2, 0.1, 1.0, -300.0), "temp_C must be > -273.15"),
        (lambda: nernst.potential("Cu2+/Cu", {"Cu2+": 0.0}), "must be > 0"),
        (lambda: nernst.potential("Cu9+/Cu"), "unknown couple"),
    ],
)
def test_potential_bad_input(call: Callable[[], object], fragment: str) -> None:
    with pytest.raises(CellwrightError, match=fragment):
        call()


def test_zinc_copper_thermodynamics_nbs1982() -> None:
    # NBS1982 (Wagman et al.) for Zn + Cu2+ -> Zn2+ + Cu: dH about -218.7 kJ/mol,
    # dG about -212.6 kJ/mol, T dS about -6.3 kJ/mol (NBS ion data are consistent
    # only to about 0.15 kJ/mol; SOURCES.md)
    t = thermo.reaction_thermo("Cu2+/Cu", "Zn2+/Zn")
    assert t.electrons == 2
    assert t.dH == pytest.approx(-218.7, abs=0.2)
    assert t.dG == pytest.approx(-212.6, abs=0.2)
    assert t.TdS == pytest.approx(-6.3, abs=0.2)
    assert t.dH - t.TdS == pytest.approx(t.dG, abs=0.3)
    # efficiency dG/dH about 0.97; emf from dG about 1.10 V (common practice)
    assert t.efficiency == pytest.approx(212.6 / 218.7, abs=0.002)
    assert t.emf == pytest.approx(1.10, abs=0.005)
    # dE/dT = dS / (2F) about -0.109 mV/K (recomputed by hand: -21.0 J/K / 192 971 C)
    assert t.dEdT == pytest.approx(-0.109, abs=0.003)


def test_gibbs_and_reversible_heat() -> None:
    # common practice: the zinc/copper cell gives about -212 kJ per mole at 1.1 V
    assert float(thermo.gibbs(1.1, 2)) == pytest.approx(-212.3, abs=0.1)
    # reversible heat per mole at 25 C is T dS, about -6 kJ (released on discharge)
    assert thermo.reaction_thermo("Cu2+/Cu", "Zn2+/Zn").TdS == pytest.approx(-6.3, abs=0.3)


def test_heat_rate_bernardi() -> None:
    # BERNARDI1985: q = I (U - V) - I T dU/dT; 10 A, U 3.7 V, V 3.6 V, dU/dT -0.1 mV/K
    # at 25 C: 1.0 W + 0.298 W (by hand)
    assert float(thermo.heat_rate(10.0, 3.7, 3.6, -0.1, 25.0)) == pytest.approx(
        1.0 + 0.29815, rel=1e-9
    )
    # on charge (I < 0, V > U) the irreversible term stays positive
    assert float(thermo.heat_rate(-10.0, 3.7, 3.8, 0.0)) == pytest.approx(1.0)


def test_cell_reaction_electron_count_uses_lcm() -> None:
    t = thermo.reaction_thermo("Ag+/Ag", "Zn2+/Zn")
    assert t.electrons == 2
    assert "2Ag+(aq)" in t.equation
