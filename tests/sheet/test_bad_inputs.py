"""Every row of the bad-input table (tests/bad_inputs.py) gives its error."""

from __future__ import annotations

from collections import Counter

import pytest
from bad_inputs import BAD_INPUTS, BadInput

from udfs.sheet.error_values import SheetError
from udfs.sheet.registry import CATALOGUE_ORDER, FUNCTIONS


def test_at_least_two_bad_inputs_per_function() -> None:
    counts = Counter(row.function for row in BAD_INPUTS)
    assert {name: counts[name] for name in CATALOGUE_ORDER if counts[name] < 2} == {}
    assert set(counts) <= set(FUNCTIONS)


@pytest.mark.parametrize("row", BAD_INPUTS, ids=lambda r: f"{r.function}-{r.why}")
def test_bad_input_gives_its_error(row: BadInput) -> None:
    out = FUNCTIONS[row.function](*row.args)
    if isinstance(out, list):  # functions that spill give one error for one bad input
        pytest.fail(f"{row.function}{row.args} returned {out!r}, expected one error")
    assert isinstance(out, SheetError), f"{row.function}{row.args} returned {out!r}"
    assert out.code == row.code, str(out)
    assert row.fragment in str(out), str(out)
    assert str(out).startswith(out.shown)  # a newer error value shows its own code
