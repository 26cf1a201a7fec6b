"""docs/bad-inputs.md is generated from the bad-input tables and stays current.

The staleness check regenerates the document (running every case) and compares
it with the committed file; regenerate with ``python tests/bad_input_catalogue.py``.
The range table (RANGE_BAD_INPUTS) is checked here too.
"""

from __future__ import annotations

import math
import re
from collections import Counter
from typing import Any

import pytest
from bad_input_catalogue import DOC, ROOT, catalogue_rows, range_response, render
from bad_inputs import BAD_INPUTS, CLI_BAD_INPUTS, RANGE_BAD_INPUTS, RangeBadInput

from udfs.sheet.declare import Kind
from udfs.sheet.error_values import SheetError
from udfs.sheet.registry import CATALOGUE_ORDER, PLANS

#: Characters of a command's one-line reason: "cellwright CMD: error: " and a message that
#: udfs.app.safe_text.one_line bounds (400 characters, then how long it was).
MAX_MESSAGE = 500


@pytest.mark.parametrize("row", RANGE_BAD_INPUTS, ids=lambda r: f"{r.function}-{r.why}")
def test_range_bad_input(row: RangeBadInput) -> None:
    text, out = range_response(row)
    assert isinstance(out, list), text
    i, j = row.cell
    bad = out[i][j]
    assert isinstance(bad, SheetError), text
    assert bad.code == row.code and row.fragment in bad, text
    whole_row = PLANS[row.function].kind is Kind.RECORD  # one input row spills one record
    for r, cells in enumerate(out):
        for c, x in enumerate(cells):
            if r == i and whole_row:
                assert x == bad, (r, c, x)
            elif (r, c) != (i, j):  # the bad element spoils no other element
                assert type(x) is float and math.isfinite(x), (r, c, x)


def test_catalogue_is_current_and_complete(tmp_path) -> None:
    rows = catalogue_rows(tmp_path)
    assert len(rows) >= 60
    # every spreadsheet function and every command has rows of its own
    functions = {r.target for r in rows if r.target.startswith("CW_")}
    assert functions == set(CATALOGUE_ORDER)
    commands = {r.target.split()[1] for r in rows if r.target.startswith("cellwright")}
    assert {"calc", "template", "demo", "sweep", "functions"} <= commands
    # test ids are unique, so each row names exactly one test
    tests = Counter(r.test for r in rows)
    assert [t for t, n in tests.items() if n > 1] == []
    for r in rows:
        path, _, name = r.test.partition("::")
        assert f"def {name.split('[')[0]}(" in (ROOT / path).read_text(encoding="utf-8"), r.test
    # no response hides a crash; every message is one bounded line of printable text
    for r in rows:
        assert "internal error" not in r.response and "Traceback" not in r.response, r
        if r.target.startswith("cellwright"):
            assert len(r.response) <= MAX_MESSAGE, (len(r.response), r)
            assert not re.search("[\x00-\x1f\x7f-\x9f]", r.response), r
    assert DOC.exists(), "run: python tests/bad_input_catalogue.py"
    assert DOC.read_text(encoding="utf-8") == render(rows), (
        "docs/bad-inputs.md is stale; run: python tests/bad_input_catalogue.py"
    )


def test_tables_cover_the_issue_checklist() -> None:
    tables: list[Any] = [*BAD_INPUTS, *RANGE_BAD_INPUTS, *CLI_BAD_INPUTS]
    whys = " ".join(r.why.lower() for r in tables)
    for kind in (
        "empty",
        "text",
        "boolean",
        "negative",
        "zero electrons",
        "activity of zero",
        "absolute zero",
        "nan",
        "infinity",
        "unknown formula",
        "unknown element",
        "unknown couple",
        "unknown material",
        "unknown property",
        "unknown unit",
        "wrong dimension",
        "cannot broadcast",
        "huge range",
        "error value",
        "activities text",
    ):
        assert kind in whys, kind
