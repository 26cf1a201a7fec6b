"""Chemical formulas: IUPAC 2021 atomic weights, cross-checked against molmass."""

from __future__ import annotations

import molmass
import pytest
from hypothesis import given
from hypothesis import strategies as st

from udfs.core import formula
from udfs.core.errors import CellwrightError, NotFoundError, ParseError

# IUPAC2021 standard atomic weights (abridged/conventional values for elements
# given as intervals), Pure Appl. Chem. 94, 573 (2022); tolerance 0.01 %.
IUPAC2021 = {
    "H": 1.008,
    "Li": 6.94,
    "C": 12.011,
    "O": 15.999,
    "P": 30.973761998,
    "Fe": 55.845,
    "Co": 58.933194,
    "Ni": 58.6934,
    "Mn": 54.938043,
    "Cu": 63.546,
    "Zn": 65.38,
    "Ag": 107.8682,
    "Al": 26.9815384,
    "Cl": 35.45,
    "Ti": 47.867,
    "Si": 28.085,
    "Na": 22.98976928,
    "Cd": 112.414,
    "Pb": 207.2,
}


@pytest.mark.parametrize(("symbol", "weight"), sorted(IUPAC2021.items()))
def test_atomic_weights_iupac2021(symbol: str, weight: float) -> None:
    assert formula.atomic_weight(symbol) == pytest.approx(weight, rel=1e-4)


# Integer formulas: molar mass cross-checked against the molmass library
# (an independent implementation with its own element table), within 0.01 %.
INTEGER_FORMULAS = [
    "LiFePO4",
    "LiCoO2",
    "LiMn2O4",
    "Li4Ti5O12",
    "Li2CO3",
    "CuSO4",
    "H2O",
    "PbO2",
    "PbSO4",
    "Hg2Cl2",
    "AgCl",
    "Ni(OH)2",
    "NiOOH",
    "MnO2",
    "ZnO",
    "Cd(OH)2",
    "Li15Si4",
    "LiPF6",
]


@pytest.mark.parametrize("text", INTEGER_FORMULAS)
def test_molar_mass_matches_molmass(text: str) -> None:
    assert formula.molar_mass(text) == pytest.approx(molmass.Formula(text).mass, rel=1e-4)


def test_hydrate_and_brackets() -> None:
    # CuSO4*5H2O = CuSO4 + 5 H2O (molmass cross-check, 0.01 %)
    assert formula.molar_mass("CuSO4*5H2O") == pytest.approx(
        molmass.Formula("CuSO4").mass + 5 * molmass.Formula("H2O").mass, rel=1e-4
    )
    assert formula.parse("[Fe(CN)6]3-").atoms == {"Fe": 1.0, "C": 6.0, "N": 6.0}


def test_fractional_stoichiometry_nmc811() -> None:
    # LiNi0.8Mn0.1Co0.1O2 from IUPAC2021 weights, computed by hand
    expected = 6.94 + 0.8 * 58.6934 + 0.1 * 54.938043 + 0.1 * 58.933194 + 2 * 15.999
    assert formula.molar_mass("LiNi0.8Mn0.1Co0.1O2") == pytest.approx(expected, rel=1e-9)
    assert formula.mass_fraction("LiNi0.8Mn0.1Co0.1O2", "Ni") == pytest.approx(
        0.8 * 58.6934 / expected, rel=1e-9
    )


@pytest.mark.parametrize(
    ("text", "charge", "phase", "atoms"),
    [
        ("Cu2+(aq)", 2, "aq", {"Cu": 1}),
        ("SO42-(aq)", -2, "aq", {"S": 1, "O": 4}),
        ("OH-", -1, None, {"O": 1, "H": 1}),
        ("Hg2^2+", 2, None, {"Hg": 2}),
        ("Fe+++", 3, None, {"Fe": 1}),
        ("H2O(l)", 0, "l", {"H": 2, "O": 1}),
        ("MnO4-(aq)", -1, "aq", {"Mn": 1, "O": 4}),
    ],
)
def test_charge_and_phase(text: str, charge: int, phase: str | None, atoms: dict[str, int]) -> None:
    f = formula.parse(text)
    assert (f.charge, f.phase, dict(f.atoms)) == (
        charge,
        phase,
        {k: float(v) for k, v in atoms.items()},
    )


@pytest.mark.parametrize(
    ("text", "position", "fragment"),
    [
        ("LiXq2", 3, "unknown element 'Xq'"),
        ("Li(OH", 6, "missing closing bracket"),
        ("Li)", 3, "unexpected ')'"),
        ("", 1, "empty formula"),
        ("2", 1, "no elements"),
        ("li", 1, "unexpected character 'l'"),
        ("Li$", 3, "unexpected character '$'"),
    ],
)
def test_parse_errors_point_at_the_fault(text: str, position: int, fragment: str) -> None:
    with pytest.raises(ParseError) as info:
        formula.parse(text)
    assert fragment in str(info.value)
    assert f"position {position}" in str(info.value)


def test_unknown_element_in_mass_fraction() -> None:
    with pytest.raises(NotFoundError, match="unknown element 'Qx'"):
        formula.mass_fraction("LiCoO2", "Qx")
    assert formula.mass_fraction("LiCoO2", "Ni") == 0.0


def test_non_text_formula() -> None:
    with pytest.raises(CellwrightError, match="formula must be a chemical formula"):
        formula.parse(3.0)  # type: ignore[arg-type]


def test_long_formula_refused() -> None:
    with pytest.raises(ParseError, match="longer than"):
        formula.parse("H" * 500)


@given(st.text(max_size=40))
def test_parser_never_raises_anything_but_our_errors(text: str) -> None:
    try:
        f = formula.parse(text)
    except CellwrightError:
        return
    assert f.mass > 0
