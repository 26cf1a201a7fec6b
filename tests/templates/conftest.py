"""Shared fixtures of the template tests: the cell-sizing template as built,
loaded into the headless engine once, and a helper that sets a CellSpec's
input values as overrides of an evaluation."""

from __future__ import annotations

from typing import Any

import pytest
from openpyxl import Workbook

from udfs.core.sizing import CellSpec
from udfs.core.sizing_table import CELL_SIZING
from udfs.core.sizing_values import pack_values, spec_values
from udfs.engine.model import WorkbookModel, load_model
from udfs.templates import TEMPLATES
from udfs.templates.snapshot import reproducible_bytes


@pytest.fixture(scope="session")
def sizing() -> tuple[Workbook, WorkbookModel]:
    """The cell-sizing template as built and its engine model."""
    wb = TEMPLATES["cell_sizing"]()
    return wb, load_model(reproducible_bytes(wb), "cell_sizing.xlsx")


def spec_overrides(spec: CellSpec, pack: Any = None, **order: float) -> dict[str, Any]:
    """The input values of ``spec`` (and a PackSpec) as engine overrides. A
    blank (None) needs no override: every input that a spec may leave blank
    is blank in the template as built."""
    values: dict[str, Any] = spec_values(spec, **order)
    if pack is not None:
        values.update(pack_values(pack))
    out = {}
    for name, value in values.items():
        if value is None:
            assert CELL_SIZING.get(name).default is None, name
            continue
        out[name] = value
    return out


@pytest.fixture(scope="session")
def overrides() -> Any:
    """:func:`spec_overrides`, for the test modules (they do not import conftest)."""
    return spec_overrides
