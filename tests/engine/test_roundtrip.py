"""Round trip: a workbook of our functions and native formulas, evaluated headlessly,
equals direct Python calls of the same sheet functions (one code path).

Argument values are typical inputs (common practice); every expected value is
the direct call's result, computed in the test.
"""

from __future__ import annotations

import io
import math

import openpyxl
import pytest
from openpyxl.worksheet.formula import ArrayFormula

from udfs.app.calc import write_evaluation
from udfs.engine.model import load_model
from udfs.sheet import registry
from udfs.sheet.error_values import SheetError

F = registry.FUNCTIONS

# (function, arguments as cell values) -- typical inputs, common practice
CASES: list[tuple[str, tuple[object, ...]]] = [
    ("CW_MOLAR_MASS", ("LiFePO4",)),
    ("CW_MOLAR_MASS", ("LiNi0.8Mn0.1Co0.1O2",)),
    ("CW_MASS_FRACTION", ("Li2CO3", "Li")),
    ("CW_THEORETICAL_CAPACITY", ("LiFePO4", 1)),
    ("CW_CHARGE_TO_MASS", (10.5, "Cu", 2)),
    ("CW_MASS_TO_CHARGE", (25.5, "LiFePO4", 1, 0.95)),
    ("CW_DEPOSITION_TIME", (3.5, 2.5, "Cu", 2)),
    ("CW_CONVERT", (1.5, "kWh", "Wh")),
    ("CW_CONSTANT", ("F",)),
    ("CW_NERNST", (0.34, 2, 0.1, 1, 40.5)),
    ("CW_E0", ("Cu2+/Cu",)),
    ("CW_OCV", ("Cu2+/Cu", "Zn2+/Zn")),
    ("CW_GIBBS", (1.1, 2)),
    ("CW_CAPACITY", (12.5, 160.5)),
    ("CW_ENERGY", (55.5, 3.65)),
    ("CW_AREAL_CAPACITY", (22.5, 0.96, 200.5)),
    ("CW_COATING_THICKNESS", (22.5, 4.75, 0.25)),
    ("CW_ELECTRODE_AREA", (55.5, 4.25)),
    ("CW_NP_RATIO", (4.6, 4.2)),
    ("CW_LCE", (1.5,)),
    ("CW_METAL_CONTENT", ("LiNi0.8Mn0.1Co0.1O2", "Ni", 1000.5)),
    ("CW_MATERIAL", ("LiFePO4", "density")),
    ("CW_HALF_REACTION", ("Cu2+/Cu",)),
    ("CW_MOLAR_MASS", ("Xx9",)),  # an error: same code both ways
    ("CW_CAPACITY", (-1.5, 160.5)),  # an error: same code both ways
]


def _same(got, want):
    if isinstance(want, SheetError):
        return isinstance(got, SheetError) and got.code == want.code
    if isinstance(want, float):
        return isinstance(got, (int, float)) and got == pytest.approx(want, rel=1e-12)
    return got == want


@pytest.fixture(scope="module")
def book():
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Cases"
    letters = "BCDEFGH"
    for row, (name, args) in enumerate(CASES, start=1):
        for i, a in enumerate(args):
            ws[f"{letters[i]}{row}"] = a
        refs = ",".join(f"{letters[i]}{row}" for i in range(len(args)))
        ws[f"A{row}"] = f"={name}({refs})"
    mix = wb.create_sheet("Mixed")
    mix["A1"] = 48.0
    mix["A2"] = 5000.0
    mix["A3"] = 3.65
    mix["A4"] = 55.5
    mix["B1"] = ArrayFormula("B1:E1", "=CW_SERIES_PARALLEL(A1,A2,A3,A4)")
    mix["B2"] = "=ROUNDUP(CW_ELECTRODE_AREA(A4,4.25)/300,0)"
    mix["B3"] = "=SUM(B1:E1)"
    mix["B4"] = '=IFERROR(CW_MOLAR_MASS("Xx9"),-1)'
    mix["B5"] = "=CW_ENERGY(A4,A3)*2"
    mix["A10"] = "H2O"
    mix["A11"] = "LiFePO4"
    mix["B10"] = ArrayFormula("B10:B11", "=CW_MOLAR_MASS(A10:A11)")
    mix["C10"] = ArrayFormula("C10:C15", "=CW_COUPLES()")
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def test_each_function_equals_its_direct_call(book):
    ev = load_model(book, "roundtrip.xlsx").evaluate()
    for row, (name, args) in enumerate(CASES, start=1):
        want = F[name](*args)
        got = ev.value(f"Cases!A{row}")
        assert _same(got, want), (name, args, got, want)


def test_native_formulas_around_our_functions(book):
    ev = load_model(book, "roundtrip.xlsx").evaluate()
    sp = F["CW_SERIES_PARALLEL"](48.0, 5000.0, 3.65, 55.5)
    assert [ev.value(f"Mixed!{c}1") for c in "BCDE"] == pytest.approx(sp[0])
    area = F["CW_ELECTRODE_AREA"](55.5, 4.25)
    assert ev.value("Mixed!B2") == math.ceil(area / 300)
    assert ev.value("Mixed!B3") == pytest.approx(sum(sp[0]))
    assert ev.value("Mixed!B4") == -1
    assert ev.value("Mixed!B5") == pytest.approx(2 * F["CW_ENERGY"](55.5, 3.65))
    masses = F["CW_MOLAR_MASS"]([["H2O"], ["LiFePO4"]])
    assert [ev.value("Mixed!B10"), ev.value("Mixed!B11")] == pytest.approx(
        [masses[0][0], masses[1][0]]
    )
    couples = F["CW_COUPLES"]()
    assert [ev.value(f"Mixed!C{r}") for r in range(10, 16)] == [c[0] for c in couples[:6]]


def test_written_workbook_shows_the_same_values(book, tmp_path):
    model = load_model(book, "roundtrip.xlsx")
    ev = model.evaluate()
    out = tmp_path / "out.xlsx"
    write_evaluation(model, ev, out)
    ws = openpyxl.load_workbook(out, data_only=True)["Cases"]
    for row, (name, args) in enumerate(CASES, start=1):
        want = F[name](*args)
        got = ws[f"A{row}"].value
        if isinstance(want, SheetError):
            assert got == want.code
        else:
            assert _same(got, want), (name, got, want)
