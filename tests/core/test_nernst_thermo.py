"""Potentials and cell thermodynamics against CRC, NBS and common practice."""

from __future__ import annotations

import math
from collections.abc import Callable
from pathlib import Path

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


def test_cadmium_hydroxide_couple_is_the_solid_cadmium_electrode() -> None:
    # Issue 12: the row carried CRC-ECS's -0.809 V, the cadmium-amalgam electrode
    # Cd(OH)2 + 2e- = Cd(Hg) + 2OH- (from memory), while its equation says solid Cd.
    # Solid cadmium from NBS1982 dfG (by hand): dG = 2(-157.244) - (-473.6) = 159.112 kJ/mol,
    # E0 = -159112 / (2 x 96485.332) = -0.8245 V.
    c = catalogue.couple("Cd(OH)2/Cd")
    assert "Cd(s)" in c.reaction.as_text()
    assert c.e0 == pytest.approx(-0.8245, abs=1e-4)
    assert thermo.formation_e0("Cd(OH)2/Cd") == pytest.approx(c.e0, abs=1e-4)
    assert (-0.809 - c.e0) * 1000 == pytest.approx(15.5, abs=0.5)  # the amalgam's 16 mV
    # the cadmium electrode material follows its couple
    assert catalogue.material("Cd").number("average_voltage") == c.e0


def test_bromine_temperature_coefficient() -> None:
    # Issue 12: Br2/Br- had no dE0/dT. By hand from the entropies of species.csv for
    # Br2(l) + H2(g) -> 2Br-(aq) + 2H+(aq): dS = 2 x 80.71 - 152.231 - 130.684 = -121.495 J/K
    # (Br- from OPENSTAX-CHEM2E App. G; Br2(l), H2 from NBS1982), dE0/dT = dS/(2F) = -0.630 mV/K.
    c = catalogue.couple("Br2/Br-")
    assert c.de0dt is not None
    assert c.de0dt * 1000 == pytest.approx(-0.6296, abs=6e-4)
    # the other route: NBS1982's S0(Br-) of 82.4 J/(mol K) gives -0.612 mV/K, and the
    # BRATSCH1989 value is about -0.61 mV/K (both from memory): they agree within 0.03 mV/K
    assert c.de0dt * 1000 == pytest.approx(-0.61, abs=0.03)
    shift = float(nernst.e0("Br2/Br-", 75.0)) - float(nernst.e0("Br2/Br-", 25.0))
    assert shift * 1000 == pytest.approx(50 * -0.630, abs=0.05)


@pytest.mark.parametrize(
    "cid", [c for c in catalogue.couple_ids() if "dS/nF" in catalogue.couple(c).de0dt_source]
)
def test_tabulated_de0dt_is_the_entropy_route(cid: str) -> None:
    # data/README.md: these coefficients are dS/(nF) from the entropies of species.csv for
    # Ox + (n/2) H2 -> Red + n H+, rounded to 0.001 mV/K; recomputed here
    c = catalogue.couple(cid)
    assert c.de0dt is not None
    assert thermo.entropy_de0dt(cid) == pytest.approx(c.de0dt * 1000, abs=6e-4)


def _documented_differences() -> dict[str, float]:
    """The table "Two routes to a cell's emf" of docs/sources.md: couple -> mV."""
    text = (Path(__file__).resolve().parents[2] / "docs" / "sources.md").read_text("utf-8")
    section = text.split("## Two routes to a cell's emf", 1)[1].split("\n## ", 1)[0]
    out = {}
    for line in section.splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) == 5 and cells[0].startswith("`"):
            out[cells[0].strip("`")] = float(cells[4])
    return out


def test_two_routes_to_the_emf_differ_by_the_documented_amounts() -> None:
    # CW_OCV uses the tabulated E0 of each couple; CW_REACTION_THERMO's emf is -dG/(nF)
    # from the formation data. docs/sources.md lists each couple's difference (0.1 mV);
    # every couple with formation data must be listed and stay within 0.06 mV of it.
    documented = _documented_differences()
    with_data = []
    for cid in catalogue.couple_ids():
        try:
            from_dfg = thermo.formation_e0(cid)
        except CellwrightError:
            continue
        with_data.append(cid)
        diff_mV = (catalogue.couple(cid).e0 - from_dfg) * 1000
        assert cid in documented, f"{cid} missing from docs/sources.md"
        assert diff_mV == pytest.approx(documented[cid], abs=0.06), cid
    assert sorted(with_data) == sorted(documented)
    # the sizes the help text of CW_OCV and CW_REACTION_THERMO states: under 5 mV for most
    # couples, 5 to 16 mV for seven, 20 to 40 mV for three
    sizes = sorted(abs(v) for v in documented.values())
    assert sum(v < 5 for v in sizes) > len(sizes) / 2
    assert sum(5 <= v <= 16 for v in sizes) == 7
    assert sum(20 <= v <= 40 for v in sizes) == 3 and sizes[-1] <= 40


@pytest.mark.parametrize(
    ("cathode", "anode"),
    [
        ("MnO2/Mn2O3", "ZnO/Zn"),
        ("Cu2+/Cu", "Zn2+/Zn"),
        ("Ni2+/Ni", "Mg2+/Mg"),
        ("O2/OH-", "Cd(OH)2/Cd"),
    ],
)
def test_ocv_minus_emf_is_the_difference_of_the_couple_offsets(cathode: str, anode: str) -> None:
    t = thermo.reaction_thermo(cathode, anode)
    ocv = float(nernst.ocv(cathode, anode))
    assert t.emf == pytest.approx(
        thermo.formation_e0(cathode) - thermo.formation_e0(anode), abs=1e-9
    )
    offset = (catalogue.couple(cathode).e0 - thermo.formation_e0(cathode)) - (
        catalogue.couple(anode).e0 - thermo.formation_e0(anode)
    )
    assert ocv - t.emf == pytest.approx(offset, abs=1e-9)


def test_alkaline_zinc_manganese_routes_differ_by_15_mV() -> None:
    # docs/sources.md: 4.0 - (-11.4) = 15.4 mV for MnO2/Mn2O3 against ZnO/Zn
    t = thermo.reaction_thermo("MnO2/Mn2O3", "ZnO/Zn")
    assert (float(nernst.ocv("MnO2/Mn2O3", "ZnO/Zn")) - t.emf) * 1000 == pytest.approx(
        15.4, abs=0.1
    )
