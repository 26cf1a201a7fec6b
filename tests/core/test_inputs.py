"""Declarative domains (udfs.core.validate), input tables (udfs.core.inputs) and
the registry of the models' tables (udfs.core.input_tables).

Bounds in this file are the domains' own declarations; the material names and
aliases come from data/ (each row with its source there).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from udfs.core import catalogue
from udfs.core.errors import DomainError, InputError, NotFoundError
from udfs.core.input_tables import (
    CELL_SIZING,
    ELECTROLYSIS,
    POTENTIALS,
    TABLES,
    check_input,
    table_for,
)
from udfs.core.inputs import Choice, Input, InputTable, read_typed
from udfs.core.validate import (
    ANY,
    CELSIUS,
    ELECTRONS,
    FRACTION,
    FRACTION_OPEN,
    NONNEGATIVE,
    NONZERO_INTEGER,
    POSITIVE,
    POSITIVE_INTEGER,
    UNIT_INTERVAL_HALF_OPEN,
    Domain,
    FreeText,
    Names,
    Options,
    check,
    integer_or_positive,
)

# ---------------------------------------------------------------- Domain


@pytest.mark.parametrize(
    ("domain", "text"),
    [
        (ANY, "a finite number"),
        (POSITIVE, "> 0"),
        (NONNEGATIVE, ">= 0"),
        (FRACTION, ">= 0 and <= 1"),
        (FRACTION_OPEN, "> 0 and <= 1"),
        (UNIT_INTERVAL_HALF_OPEN, ">= 0 and < 1"),
        (CELSIUS, "> -273.15 (degC)"),
        (ELECTRONS, "> 0 (electrons per formula unit)"),
        (NONZERO_INTEGER, "a non-zero whole number"),
        (POSITIVE_INTEGER, "a whole number > 0"),
        (Domain(upper=8784), "<= 8784"),
        (Domain(lower=1, integer=True), "a whole number >= 1"),
        (Domain(lower=-1, upper=1, nonzero=True), "non-zero and >= -1 and <= 1"),
    ],
)
def test_description_is_derived_from_the_declaration(domain: Domain, text: str) -> None:
    assert domain.allowed == text


# (domain, value, allowed?) -- each bound's own side, written out by hand
CASES = [
    (POSITIVE, 0.0, False), (POSITIVE, 1e-300, True), (POSITIVE, -1.0, False),
    (NONNEGATIVE, 0.0, True), (NONNEGATIVE, -1e-300, False),
    (FRACTION_OPEN, 0.0, False), (FRACTION_OPEN, 1.0, True), (FRACTION_OPEN, 1.0 + 1e-15, False),
    (UNIT_INTERVAL_HALF_OPEN, 0.0, True), (UNIT_INTERVAL_HALF_OPEN, 1.0, False),
    (CELSIUS, -273.15, False), (CELSIUS, -273.0, True),
    (NONZERO_INTEGER, 0.0, False), (NONZERO_INTEGER, -2.0, True), (NONZERO_INTEGER, 1.5, False),
    (POSITIVE_INTEGER, 3.0, True), (POSITIVE_INTEGER, 0.0, False), (POSITIVE_INTEGER, 2.5, False),
    (ANY, -1e300, True), (ANY, math.inf, False), (ANY, math.nan, False),
]


@pytest.mark.parametrize(("domain", "value", "allowed"), CASES)
def test_scalar_check_mask_and_reason_agree(domain: Domain, value: float, allowed: bool) -> None:
    assert domain.contains(value) is allowed
    assert bool(domain.ok(np.asarray(value))) is allowed
    reason = domain.reason("x", value)
    if allowed:
        assert reason is None
        assert float(check("x", value, domain)) == value
    else:
        assert reason == f"x must be {domain.allowed} (got {value:.6g})"
        with pytest.raises(DomainError) as info:
            check("x", value, domain)
        assert str(info.value) == reason


def test_masks_are_element_wise_and_check_names_the_first_bad_element() -> None:
    values = np.array([[0.5, 1.0], [0.0, -2.0]])
    assert FRACTION_OPEN.ok(values).tolist() == [[True, True], [False, False]]
    with pytest.raises(DomainError) as info:
        check("fraction", values, FRACTION_OPEN)
    assert info.value.value == 0.0 and info.value.allowed == "> 0 and <= 1"


@pytest.mark.parametrize("value", ["2", "abc", True, None, [1.0, "x"], [[1.0], [2.0, 3.0]]])
def test_check_refuses_what_is_not_numbers(value: object) -> None:
    with pytest.raises(InputError) as info:
        check("n", value, POSITIVE)  # type: ignore[arg-type]
    assert str(info.value).startswith("n must be a number > 0 (got ")


def test_integer_or_positive_keeps_its_derived_text() -> None:
    assert integer_or_positive("a whole number > 0") is POSITIVE_INTEGER
    with pytest.raises(ValueError, match="derived"):
        integer_or_positive("a count")


# ---------------------------------------------------------------- text domains


def test_names_resolve_aliases_case_and_role() -> None:
    # LFP is an alias of LiFePO4 and NCM811 of NMC811 in data/active_materials.csv
    cathodes = Names(("cathode",))
    assert cathodes.check("c", "LFP") == "LiFePO4"
    assert cathodes.check("c", "ncm811") == "NMC811"
    with pytest.raises(InputError, match="'graphite' is an anode material; expected a cathode"):
        cathodes.check("c", "graphite")
    with pytest.raises(NotFoundError) as info:
        Names(("anode",)).check("a", "graphyte")
    assert info.value.suggestions == ["graphite"]
    with pytest.raises(InputError, match="the name of a cathode material"):
        cathodes.check("c", 3.0)
    assert cathodes.names() == catalogue.material_names("cathode")
    assert Names(kind="couple").check("c", "cu2+/cu") == "Cu2+/Cu"


def test_options_and_free_text() -> None:
    basis = Options(("capacity", "energy"))
    assert basis.check("b", "Energy") == "energy"
    assert basis.reason("b", "power") == "b must be one of 'capacity', 'energy' (got 'power')"
    assert basis.reason("b", 1.0) is not None
    assert FreeText().check("t", "  title ") == "title"
    assert FreeText().reason("t", 1.0) == "t must be text (got 1)"


# ---------------------------------------------------------------- tables

_T = InputTable("demo", "demo model", (
    Input("in_basis", "Given as", "", "", "S", Options(("capacity", "energy")), "capacity"),
    Input("in_target", "Target", "Ah or Wh", "", "S", POSITIVE, 50.0, chooser="in_basis",
          choices=(Choice("capacity", "capacity_Ah", "Ah"), Choice("energy", "energy_Wh", "Wh"))),
    Input("in_count", "Count", "", "", "S", POSITIVE, 2.0, chooser="in_basis",
          choices=(Choice("capacity", "cells", "cells", POSITIVE_INTEGER),
                   Choice("energy", "kWh", "kWh"))),
    Input("in_fill", "Fill", "", "", "T", FRACTION_OPEN, None, field="fill", optional=True),
))


def test_table_lookup_check_and_reason() -> None:
    assert _T.names == ("in_basis", "in_target", "in_count", "in_fill")
    assert [s for s, _ in _T.sections()] == ["S", "T"]
    assert _T.get("energy_Wh").name == "in_target" and "fill" in _T
    assert _T.check("in_fill", None) is None and _T.check("in_fill", " ") is None
    assert _T.check("in_fill", 1) == 1.0 and type(_T.check("in_fill", 1)) is float
    assert _T.reason("in_fill", 0.0) == "in_fill (Fill) must be > 0 and <= 1 (got 0)"
    assert _T.get("in_fill").allowed == "> 0 and <= 1, or blank"
    assert _T.reason("fill", 0.0) == "fill must be > 0 and <= 1 (got 0)"
    # a field picked by another input may have its own domain
    assert _T.reason("cells", 2.5) == "cells must be a whole number > 0 (got 2.5)"
    assert _T.reason("in_count", 2.5) is None
    with pytest.raises(NotFoundError) as info:
        _T.check("in_fil", 0.5)
    assert "in_fill" in info.value.suggestions
    assert _T.defaults() == {"fill": None}
    assert _T.check_typed("in_fill", "0.5") == 0.5
    with pytest.raises(InputError):
        _T.check_typed("in_fill", "half")


def test_table_refuses_repeated_names_and_fields() -> None:
    a = Input("in_a", "A", "", "", "S", POSITIVE, 1.0, field="a")
    with pytest.raises(ValueError, match="repeated"):
        InputTable("t", "t", (a, a))
    with pytest.raises(ValueError, match="two inputs"):
        InputTable("t", "t", (a, Input("in_b", "B", "", "", "S", POSITIVE, 1.0, field="a")))
    with pytest.raises(ValueError, match="chosen by unknown"):
        InputTable("t", "t", (Input("in_c", "C", "", "", "S", POSITIVE, 1.0, chooser="in_x",
                                    choices=(Choice("x", "c", ""),)),))


def test_read_typed_reads_text_as_a_cell_would() -> None:
    assert read_typed("1e3", True) == 1000.0
    assert read_typed("1e3", False) == "1e3"
    assert read_typed("", False) is None


# ---------------------------------------------------------------- registry


@pytest.mark.parametrize("table", TABLES, ids=[t.key for t in TABLES])
def test_each_workbook_finds_its_own_table(table: InputTable) -> None:
    names = [*table.names, "out_x", "list_y"]
    assert table_for(names) is table
    assert table_for(names[: len(table) // 2 + 1]) is table  # a copy with names removed
    assert table_for(["in_mass"]) is None


def test_check_input_checks_known_inputs_only() -> None:
    assert check_input(CELL_SIZING.names, "in_cathode", "LFP") == "LiFePO4"
    with pytest.raises(
        DomainError, match=r"in_np_ratio \(N/P ratio, first-charge basis\) must be > 0 \(got -1\)"
    ):
        check_input(CELL_SIZING.names, "in_np_ratio", -1)
    assert check_input(["in_mass"], "in_mass", -1) == -1  # no model: nothing to check against
    assert check_input(ELECTROLYSIS.names, "in_plating_cells", 3.0) == 3.0
    with pytest.raises(DomainError, match="a whole number >= 1"):
        check_input(ELECTROLYSIS.names, "in_plating_cells", 2.5)
    with pytest.raises(DomainError, match=r"> -273\.15"):
        check_input(POTENTIALS.names, "in_temp_C", -300)
    with pytest.raises(NotFoundError, match="unknown couple"):
        check_input(POTENTIALS.names, "in_couple_1", "Xx/X")


@pytest.mark.parametrize("table", TABLES, ids=[t.key for t in TABLES])
def test_every_default_passes_its_own_check(table: InputTable) -> None:
    for inp in table:
        assert table.reason(inp.name, inp.default) is None, inp.name
        assert inp.source or inp.default is None, f"{inp.name}: a default without its basis"
