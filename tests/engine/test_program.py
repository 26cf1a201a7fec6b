"""Programs: a structure parsed once, run on single values or on stacked columns.

Two claims are proved here for as long as the code lives:

* a Program gives what the `formulas` package's own compiled formula gives for the
  same text and arguments (its public ``Parser().ast(...)[1].compile()``);
* every operator and every function of ``ELEMENTWISE`` gives, on stacked columns,
  exactly what it gives element by element -- values, types and error codes --
  which is what lets the evaluator compute a filled-down block in one call.
"""

from __future__ import annotations

import math

import formulas
import numpy as np
import pytest
import schedula as sh
from formulas.tokens.operand import Error
from hypothesis import given
from hypothesis import strategies as st

from udfs.engine.evaluator import _settle
from udfs.engine.functions import ensure_registered, to_cell
from udfs.engine.program import ELEMENTWISE, OPERATORS, Program, ProgramError, program
from udfs.sheet.error_values import SheetError

ensure_registered()

#: element values of every kind a cell can hold (numbers, numeric and other text,
#: booleans, empty, errors); edge values common practice for spreadsheet testing
POOL = [
    0.0, 1.0, -1.0, 2.5, -2.5, 0.5, 1e-9, 1e12, 7, 3, "2.5", "abc", "", True, False,
    sh.EMPTY, Error.errors["#DIV/0!"], Error.errors["#N/A"], Error.errors["#VALUE!"],
]

ARITY = {
    "IF": 3, "IFERROR": 2, "IFNA": 2, "NOT": 1, "ABS": 1, "SQRT": 1, "EXP": 1, "LN": 1,
    "LOG10": 1, "POWER": 2, "MOD": 2, "INT": 1, "TRUNC": 1, "SIGN": 1, "ROUND": 2,
    "ROUNDUP": 2, "ROUNDDOWN": 2, "ISERROR": 1, "ISERR": 1, "ISNA": 1, "ISNUMBER": 1,
    "ISTEXT": 1, "ISBLANK": 1, "ISLOGICAL": 1, "LEN": 1, "UPPER": 1, "LOWER": 1, "TRIM": 1,
}
BINARY = sorted(OPERATORS - {"u-", "u+", "%"})


def _text(name: str) -> str:
    if name in ARITY:
        return f"={name}(" + ",".join(f"_R{i}" for i in range(ARITY[name])) + ")"
    if name == "u-":
        return "=-_R0"
    if name == "u+":
        return "=+_R0"
    if name == "%":
        return "=_R0%"
    return f"=_R0{name}_R1"


def _same(a, b) -> bool:
    a, b = to_cell(a), to_cell(b)
    if isinstance(a, SheetError) or isinstance(b, SheetError):
        return isinstance(a, SheetError) and isinstance(b, SheetError) and a.code == b.code
    if isinstance(a, float) and isinstance(b, float):
        return a == b or (math.isnan(a) and math.isnan(b))
    return type(a) is type(b) and a == b


def test_every_elementwise_name_is_tested():
    assert set(ARITY) == set(ELEMENTWISE)


def test_power_is_not_stacked_because_one_error_spoils_the_whole_column():
    # 0^-1 is #DIV/0! in one element; the package then answers one error for the column
    p = program("=_R0^_R1")
    col = np.array([[0.0], [2.0]], dtype=object)
    assert np.asarray(p.run([col, -1.0]), dtype=object).size == 1
    assert "^" not in OPERATORS and not p.elementwise({"_R0"}, lambda _n: False)


@pytest.mark.parametrize("name", sorted(ELEMENTWISE) + BINARY + ["u-", "u+", "%"])
@given(data=st.data())
def test_stacked_equals_element_by_element(name, data):
    p = program(_text(name))
    n = data.draw(st.integers(2, 6))
    moving = data.draw(st.lists(st.booleans(), min_size=len(p.inputs), max_size=len(p.inputs)))
    if not any(moving):
        moving[0] = True
    columns = []
    for move in moving:
        if move:
            columns.append([data.draw(st.sampled_from(POOL)) for _ in range(n)])
        else:
            columns.append([data.draw(st.sampled_from(POOL))] * n)
    stacked_args = []
    for move, col in zip(moving, columns, strict=True):
        if move:
            arr = np.empty((n, 1), dtype=object)
            arr[:, 0] = col
            stacked_args.append(arr)
        else:
            stacked_args.append(col[0])
    varying = {name_ for name_, move in zip(p.inputs, moving, strict=True) if move}
    assert p.elementwise(varying, lambda _n: False)
    stacked = p.run(stacked_args)
    flat = np.asarray(stacked, dtype=object).reshape(-1)
    assert flat.size == n
    for i in range(n):
        one = p.run([col[i] for col in columns])
        assert _same(_settle(flat[i]), _settle(one)), (name, [c[i] for c in columns])


#: numbers at the edges of the fast path for operators on numbers (program._on_numbers):
#: signed zeros, the largest and smallest doubles, integers around 2**53, and values it
#: must leave to the package (booleans, text, empty, errors); common practice
EDGES = [
    0.0, -0.0, 1.0, -2.5, 0.1, 3.0, 1e308, -1e308, 5e-324, 1e-300, 3, -7, 0, 2**53, 2**53 + 1,
    True, False, "2", "abc", "ABC", "Straße", "STRASSE", "", "a\x00", "A", "\x00", sh.EMPTY,
    Error.errors["#DIV/0!"],
]
TEXTS = [x for x in EDGES if type(x) is str]
FLOATS = [x for x in EDGES if type(x) is float]


def _exactly(a, b) -> bool:
    """Same value, same type, same sign of zero."""
    if type(a) is not type(b):
        return False
    if isinstance(a, float):
        return (a == b and math.copysign(1, a) == math.copysign(1, b)) or (a != a and b != b)
    return _same(a, b)


@pytest.mark.parametrize(
    "name", ["+", "-", "*", "/", "u-", "=", "<>", "<", ">", "<=", ">=", "IF", "IF2"]
)
@given(data=st.data())
def test_operators_on_numbers_give_exactly_what_the_package_gives(name, data):
    # program runs these operators directly on finite numbers, = and <> on texts, and
    # IF on TRUE/FALSE conditions (one numpy call for a column); the package's own
    # compiled formula is the reference, element by element
    text = "=IF(_R0,_R1)" if name == "IF2" else _text(name)
    p = program(text)
    compiled = formulas.Parser().ast(text)[1].compile()
    n = data.draw(st.integers(2, 5))
    args = []
    for _ in p.inputs:
        kind = data.draw(st.sampled_from(["one", "floats", "texts", "logical", "mixed"]))
        if kind == "one":
            args.append(data.draw(st.sampled_from(EDGES)))
            continue
        pool = {"floats": FLOATS, "texts": TEXTS, "logical": [True, False], "mixed": EDGES}[kind]
        arr = np.empty((n, 1), dtype=object)
        arr[:, 0] = [data.draw(st.sampled_from(pool)) for _ in range(n)]
        args.append(arr)
    ours, theirs = p.run(args), compiled(*args)
    assert type(ours) is type(theirs), (text, args)
    a, b = np.asarray(ours, dtype=object), np.asarray(theirs, dtype=object)
    assert a.shape == b.shape, (text, args)
    for x, y in zip(a.reshape(-1), b.reshape(-1), strict=True):
        assert _exactly(x, y), (text, args, x, y)


CORPUS = [
    "=_R0*_K0+_R1",
    "=IF(_R0>_K0,ROUND(_R1*_K1,_K2),MAX(_R2,_K0))+_R3",
    "=SUM(_R0)*_K0/_R1-_R2",
    "=IFERROR(_R0/_R1,_K0)",
    "=INDEX(_R0,MATCH(_R1,_R2,_K0))",
    "=VLOOKUP(_R0,_R1,_K0,FALSE)",
    "=AND(_R0>_K0,_R1<_K1)",
    "=_R0&_K0&TEXT(_R1,_K1)",
    "=SUMPRODUCT(_R0,_R1)/COUNT(_R0)",
    "=-_R0%+_R1^_K0",
    "=CW_CAPACITY(_R0,_R1)",
    "=IFERROR(CW_ENERGY(_R0,_R1),_K0)",
]


def _args(p: Program, rng: np.random.Generator) -> list:
    out = []
    for name in p.inputs:
        if name in ("_R0", "_R1", "_R2") and rng.random() < 0.3:
            out.append(np.array([[1.0], [2.5], [3.0], [4.0]], dtype=object))
        else:
            out.append(float(rng.integers(-3, 6)))
    return out


@pytest.mark.parametrize("text", CORPUS)
def test_a_program_gives_what_the_packages_compiled_formula_gives(text):
    rng = np.random.default_rng(7)  # fixed seed: the same cases every run
    p = program(text)
    compiled = formulas.Parser().ast(text)[1].compile()
    assert list(compiled.inputs) == list(p.inputs)
    for _ in range(12):
        args = _args(p, rng)
        assert _same(_settle(p.run(args)), _settle(compiled(*args))), (text, args)


def test_programs_are_parsed_once_and_reused():
    assert program("=_R0+_K0") is program("=_R0+_K0")


def test_what_the_runner_cannot_reproduce_is_refused():
    with pytest.raises(ProgramError, match="cannot parse"):
        Program("=SUM(")
