"""Every unit argument of every function checks its text before pint sees it:
unit text that pint would evaluate for ever (a power tower), for gigabytes
(``2**2**40``) or for minutes (a long unknown name) is ``#VALUE!`` with the
reason, whether the unit is the one converted from or to."""

from __future__ import annotations

import pytest

from udfs.sheet.error_values import SheetError
from udfs.sheet.registry import CATALOGUE_ORDER, FUNCTIONS, PLANS

#: (function, position of a unit argument) for every declared unit argument
UNIT_ARGUMENTS = [
    (name, i)
    for name in CATALOGUE_ORDER
    for i, a in enumerate(PLANS[name].args)
    if not a.is_number and a.name.endswith("unit")
]

#: Functions whose unit arguments are price units (CURRENCY/BASIS, udfs.core.prices): parsed
#: by their own short grammar, never by pint; they refuse the same texts with their own reason.
PRICE_UNITS = frozenset({"CW_PRICE"})

HOSTILE = [
    ("9**9**9", "a number cannot be raised to a power"),
    ("2**2**40", "a number cannot be raised to a power"),
    ("m^9^9", "powers of powers need parentheses"),
    ("Ah" * 50_000, "too long"),
]


def test_the_unit_arguments_are_found() -> None:
    names = {(n, PLANS[n].args[i].name) for n, i in UNIT_ARGUMENTS}
    assert {("CW_CONVERT", "from_unit"), ("CW_CONVERT", "to_unit")} <= names
    assert ("CW_CHARGE_TO_MASS", "charge_unit") in names
    assert len(UNIT_ARGUMENTS) >= 7


@pytest.mark.parametrize(("text", "reason"), HOSTILE, ids=["tower", "huge", "chained", "long"])
@pytest.mark.parametrize(("name", "i"), UNIT_ARGUMENTS, ids=lambda x: str(x))
def test_unit_argument_refuses_hostile_text(name: str, i: int, text: str, reason: str) -> None:
    plan = PLANS[name]
    example = list(plan.example or ())
    args = [
        example[k] if k < len(example) else (a.default if a.optional else None)
        for k, a in enumerate(plan.args)
    ]
    good = args[i]
    args[i] = text
    if name in PRICE_UNITS and "too long" not in reason:
        reason = "price unit"
    out = FUNCTIONS[name](*args)
    for cell in [x for row in out for x in row] if isinstance(out, list) else [out]:
        assert isinstance(cell, SheetError) and cell.code == "#VALUE!", cell
        assert plan.args[i].name in cell and reason in cell, cell
    # inside a range too (a column of unit texts, one of them hostile)
    args[i] = [[good], [text]]
    out = FUNCTIONS[name](*args)
    assert isinstance(out, list) and isinstance(out[1][0], SheetError), out
    assert reason in out[1][0], out
