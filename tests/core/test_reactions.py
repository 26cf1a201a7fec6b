"""Half-reaction parsing, balance checks and the reaction quotient."""

from __future__ import annotations

import contextlib
import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from udfs.core.constants import PKW_25C
from udfs.core.errors import CellwrightError, DomainError, NotFoundError, ParseError
from udfs.core.reactions import log10_quotient, parse_activities, parse_half_reaction

BALANCED = [
    ("Cu2+(aq) + 2e- = Cu(s)", 2),
    ("O2(g) + 4H+(aq) + 4e- = 2H2O(l)", 4),
    ("O2(g) + 2H2O(l) + 4e- = 4OH-(aq)", 4),
    ("PbO2(s) + SO42-(aq) + 4H+(aq) + 2e- = PbSO4(s) + 2H2O(l)", 2),
    ("NiOOH(s) + H2O(l) + e- = Ni(OH)2(s) + OH-(aq)", 1),
    ("Hg2Cl2(s) + 2e- = 2Hg(l) + 2Cl-(aq)", 2),
    ("MnO4-(aq) + 8H+(aq) + 5e- = Mn2+(aq) + 4H2O(l)", 5),
]


@pytest.mark.parametrize(("text", "n"), BALANCED)
def test_balanced_reactions_parse(text: str, n: int) -> None:
    r = parse_half_reaction(text)
    assert r.electrons == n
    assert parse_half_reaction(r.as_text()).electrons == n  # round trip through text


@pytest.mark.parametrize(
    ("text", "fragment"),
    [
        ("Cu2+(aq) + e- = Cu(s)", "charge does not balance"),
        ("O2(g) + 2H+(aq) + 4e- = 2H2O(l)", "atoms do not balance"),
        ("Cu2+ + 2e- = Cu(s)", "needs a phase"),
        ("Cu2+(aq) + 2e- = Cx(s)", "unknown element 'Cx'"),
        ("Cu2+(aq) = Cu(s) + 2e-", "electrons belong on the oxidised"),
        ("Cu2+(aq) + 2e- Cu(s)", "exactly one '='"),
        ("Cu2+(aq) + 2e- = ", "empty term"),
        ("Cu(s) = Cu(s)", "no electrons"),
    ],
)
def test_unbalanced_or_malformed(text: str, fragment: str) -> None:
    with pytest.raises(CellwrightError, match=fragment):
        parse_half_reaction(text)


def test_quotient_conventions() -> None:
    r = parse_half_reaction("O2(g) + 4H+(aq) + 4e- = 2H2O(l)")
    # Q = 1 / (pO2 * a_H+^4); pH 7 and pO2 = 0.21 bar (common practice conventions)
    q = log10_quotient(r, {"pH": 7.0, "O2": 0.21})
    assert float(q) == pytest.approx(-(math.log10(0.21) - 4 * 7.0), rel=1e-12)


def test_hydroxide_from_ph_through_kw() -> None:
    r = parse_half_reaction("O2(g) + 2H2O(l) + 4e- = 4OH-(aq)")
    # a(OH-) = 10**(pH - pKw); unless the caller says otherwise pKw is its 25 C value,
    # 13.995 (CRC Handbook prints 13.995; BANDURA2006 gives 13.9949)
    assert pytest.approx(13.995, abs=6e-4) == PKW_25C
    assert float(log10_quotient(r, {"pH": 14.0})) == pytest.approx(4 * (14.0 - PKW_25C), abs=1e-12)


def test_hydroxide_uses_the_callers_pkw_and_broadcasts() -> None:
    r = parse_half_reaction("O2(g) + 2H2O(l) + 4e- = 4OH-(aq)")
    # pKw 13.02 at 60 C and 12.60 at 80 C (BANDURA2006), as a column against a row of pH
    q = log10_quotient(r, {"pH": [13.0, 14.0]}, pkw=[[13.02], [12.60]])
    assert q.shape == (2, 2)
    expected = [[4 * (13.0 - 13.02), 4 * (14.0 - 13.02)], [4 * (13.0 - 12.60), 4 * (14.0 - 12.60)]]
    assert q.tolist() == [pytest.approx(row, abs=1e-12) for row in expected]
    # the H+ form does not depend on pKw (a(H+) = 10**-pH by definition of pH)
    acid = parse_half_reaction("O2(g) + 4H+(aq) + 4e- = 2H2O(l)")
    assert float(log10_quotient(acid, {"pH": 3.0}, pkw=12.6)) == pytest.approx(12.0, abs=1e-12)


def test_quotient_broadcasts() -> None:
    r = parse_half_reaction("Cu2+(aq) + 2e- = Cu(s)")
    q = log10_quotient(r, {"Cu2+": [[1.0], [0.1]]})
    assert q.shape == (2, 1)
    assert q.ravel().tolist() == pytest.approx([0.0, 1.0])


@pytest.mark.parametrize(
    ("activities", "error", "fragment"),
    [
        ({"Cu2+": 0.0}, DomainError, "must be > 0"),
        ({"Cu2+": -1.0}, DomainError, "must be > 0"),
        ({"Cu2+": float("nan")}, DomainError, "must be > 0"),
        ({"Zn2+": 1.0}, NotFoundError, "unknown species"),
        ({"Cu": 1.0}, CellwrightError, "pure phase with activity 1"),
        ({"pH": 3.0}, CellwrightError, "has no H\\+ or OH-"),
    ],
)
def test_bad_activities(activities: dict[str, float], error: type, fragment: str) -> None:
    r = parse_half_reaction("Cu2+(aq) + 2e- = Cu(s)")
    with pytest.raises(error, match=fragment):
        log10_quotient(r, activities)


def test_ph_and_h_plus_together_refused() -> None:
    r = parse_half_reaction("2H+(aq) + 2e- = H2(g)")
    with pytest.raises(CellwrightError, match="either pH or"):
        log10_quotient(r, {"pH": 1.0, "H+": 0.1})


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("Cu2+=0.1; pH=3", {"Cu2+": 0.1, "pH": 3.0}),
        (" O2 = 0.21 , PH=7 ", {"O2": 0.21, "pH": 7.0}),
        ("", {}),
        ("Fe3+=1e-3;Fe2+=0.5;", {"Fe3+": 1e-3, "Fe2+": 0.5}),
    ],
)
def test_activity_strings(text: str, expected: dict[str, float]) -> None:
    assert parse_activities(text) == expected


@pytest.mark.parametrize(
    ("text", "fragment"),
    [
        ("Cu2+", "species=value"),
        ("Cu2+=abc", "is not a number"),
        ("=1", "missing species name"),
        ("pH=1; ph=2", "given twice"),
    ],
)
def test_malformed_activity_strings(text: str, fragment: str) -> None:
    with pytest.raises(ParseError, match=fragment):
        parse_activities(text)


@given(st.text(max_size=60))
def test_parsers_raise_only_our_errors(text: str) -> None:
    for parser in (parse_half_reaction, parse_activities):
        with contextlib.suppress(CellwrightError):
            parser(text)
