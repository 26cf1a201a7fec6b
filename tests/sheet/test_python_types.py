"""Python callers: one rule for every Python and numpy type, alone or inside a
range (a list of rows, a numpy array of the natural dtype, a numpy object array).

The rule (udfs/sheet/coerce.py): a number is a real number, ``numbers.Real``
(int, float, Fraction, numpy integers and floats of any width) or ``Decimal``;
every other type -- bool, complex (also with a zero imaginary part), dates,
times and durations, bytes, anything else -- is ``#VALUE!`` naming the argument
and the type. Text is ``str`` (numpy.str_ included). Never a traceback.
"""

from __future__ import annotations

import datetime as dt
import logging
from decimal import Decimal
from fractions import Fraction
from typing import Any

import numpy as np
import pytest

from udfs.sheet.error_values import SheetError
from udfs.sheet.registry import FUNCTIONS

NERNST = FUNCTIONS["CW_NERNST"]
MOLAR_MASS = FUNCTIONS["CW_MOLAR_MASS"]

# Two, in every accepted number type (each converts to exactly 2.0).
NUMBERS: list[Any] = [
    2,
    2.0,
    Fraction(2),
    Decimal(2),
    np.int8(2),
    np.int16(2),
    np.int32(2),
    np.int64(2),
    np.uint8(2),
    np.uint64(2),
    np.float16(2),
    np.float32(2),
    np.float64(2),
    np.longdouble(2),
]

# (value, words the message must contain besides the argument's name)
NOT_NUMBERS: list[tuple[Any, str]] = [
    (True, "not TRUE"),
    (np.bool_(False), "not FALSE"),
    (2 + 0j, "complex"),
    (np.complex128(2 + 1j), "complex"),
    (np.complex64(2), "complex"),
    (dt.date(2024, 1, 2), "date or time (got date)"),
    (dt.datetime(2024, 1, 2, 3, 4), "date or time (got datetime)"),
    (dt.time(3, 4), "date or time (got time)"),
    (dt.timedelta(hours=2), "date or time (got timedelta)"),
    (np.datetime64("2024-01-02"), "date or time (got numpy.datetime64)"),
    (np.datetime64("2024-01-02T03:04:05.000000000"), "date or time (got numpy.datetime64)"),
    (np.timedelta64(2, "s"), "date or time (got numpy.timedelta64)"),
    (b"2", "bytes"),  # numpy.bytes_ in a typed array
    (bytearray(b"2"), "(got bytearray)"),
    (object(), "(got object)"),
    ({2}, "(got set)"),
]


def _forms(value: Any) -> dict[str, Any]:
    """The value alone and as the second cell of a 1x2 range, in three containers."""
    obj = np.empty((1, 2), dtype=object)
    obj[0, 0], obj[0, 1] = 0.1, value
    forms: dict[str, Any] = {"alone": value, "list": [[0.1, value]], "object array": obj}
    try:
        natural = np.array([[value, value]])
    except (TypeError, ValueError):
        natural = None
    if natural is not None and natural.dtype != object and natural.shape == (1, 2):
        forms["typed array"] = natural
    return forms


def _element(out: Any, form: str) -> Any:
    if form == "alone":
        return out
    assert isinstance(out, list) and len(out) == 1, out
    return out[0][-1]


@pytest.fixture
def no_traceback(caplog: pytest.LogCaptureFixture, capsys: pytest.CaptureFixture[str]) -> Any:
    with caplog.at_level(logging.DEBUG, logger="udfs.sheet"):
        yield
    assert [r for r in caplog.records if r.levelno >= logging.ERROR] == []
    assert "Traceback" not in capsys.readouterr().err


@pytest.mark.parametrize("value", NUMBERS, ids=lambda v: type(v).__name__)
def test_real_numbers_are_numbers_alone_and_in_ranges(value: Any, no_traceback: Any) -> None:
    want = NERNST(0.34, 2, 0.1, 2.0)
    for form, given in _forms(value).items():
        got = _element(NERNST(0.34, 2, 0.1, given), form)
        assert got == want, (form, got)
    assert NERNST(0.34, value, 0.1, 1) == NERNST(0.34, 2.0, 0.1, 1)  # as electrons too


@pytest.mark.parametrize(("value", "words"), NOT_NUMBERS, ids=lambda v: type(v).__name__)
def test_other_types_are_value_errors_alone_and_in_ranges(
    value: Any, words: str, no_traceback: Any
) -> None:
    for form, given in _forms(value).items():
        got = _element(NERNST(0.34, 2, 0.1, given), form)
        assert isinstance(got, SheetError) and got.code == "#VALUE!", (form, got)
        assert got.startswith("#VALUE! red_activity must be"), (form, got)
        assert words in got, (form, got)


@pytest.mark.parametrize("value", ["Cu", np.str_("Cu")], ids=lambda v: type(v).__name__)
def test_text_is_str(value: Any, no_traceback: Any) -> None:
    want = MOLAR_MASS("Cu")
    for form, given in _forms(value).items():
        assert _element(MOLAR_MASS(given), form) == want, form


@pytest.mark.parametrize(
    "value",
    [b"Cu", 2, Decimal(2), 2 + 0j, np.datetime64("2024-01-02"), np.timedelta64(2, "s"), object()],
    ids=lambda v: type(v).__name__,
)
def test_text_arguments_refuse_other_types(value: Any, no_traceback: Any) -> None:
    for form, given in _forms(value).items():
        got = _element(MOLAR_MASS(given), form)
        assert isinstance(got, SheetError) and got.code == "#VALUE!", (form, got)
        assert got.startswith("#VALUE! formula must be text"), (form, got)


def test_a_complex_range_keeps_no_real_part() -> None:
    out = NERNST(0.34, 2, 0.1, np.array([[2.0 + 1j, 2.0 + 0j]]))
    assert all(isinstance(x, SheetError) and "complex" in x for x in out[0])


def test_numbers_too_large_or_not_a_number() -> None:
    assert NERNST(0.34, 2, 0.1, Decimal("1e400")).code == "#NUM!"
    assert NERNST(0.34, 2, 0.1, Fraction(10**400)).code == "#NUM!"
    assert NERNST(0.34, 2, 0.1, [[Decimal("sNaN")]]).code == "#NUM!"
    assert NERNST(0.34, 2, 0.1, np.array([[np.nan, 2.0]]))[0][0].code == "#NUM!"
