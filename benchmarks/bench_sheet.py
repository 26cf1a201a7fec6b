"""Cost of calling a spreadsheet function (udfs.sheet.call), as ratios to baselines
run side by side.

1. Scalar call: one ``CW_NERNST(0.34, 2, 0.1, 1)`` (and one ``CW_CAPACITY``) against a
   bare float implementation of the same formula (math module, no checks).
   Target: <= 25x. Also shown: how much of it is the core's own time.
2. Range call: ``CW_NERNST`` over a 100,000-cell range given as nested lists,
   against the unavoidable cost of turning the same nested lists into an array
   and back with ``.tolist()``. Target: <= 1.5x. Two shapes: 1000x100 and 100000x1.

Run: ``python benchmarks/bench_sheet.py`` (prints the ratios; no assertions).
"""

from __future__ import annotations

import math
import sys
import timeit
from collections.abc import Callable
from pathlib import Path
from typing import Any

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from udfs.core import capacity as core_capacity
from udfs.core import nernst as core_nernst
from udfs.core.constants import LN10, T0, F, R
from udfs.sheet.declare import PLANS, sheet_function
from udfs.sheet.registry import FUNCTIONS

SCALAR_TARGET = 25.0
RANGE_TARGET = 1.5


def best(fn: Callable[[], Any], number: int, repeat: int = 7) -> float:
    """Best time per call in seconds."""
    return min(timeit.repeat(fn, number=number, repeat=repeat)) / number


def interleaved(fns: list[Callable[[], Any]], number: int, rounds: int = 9) -> list[float]:
    """Best time per call of each function, measured in alternating rounds so
    that machine noise hits all of them alike."""
    for fn in fns:
        fn()  # warm up caches
    times = [math.inf] * len(fns)
    for _ in range(rounds):
        for k, fn in enumerate(fns):
            times[k] = min(times[k], timeit.timeit(fn, number=number) / number)
    return times


def bare_nernst(e0: float, n: float, ox: float, red: float, temp_C: float = 25.0) -> float:
    return e0 - LN10 * R * (temp_C + T0) / (n * F) * (math.log10(red) - math.log10(ox))


def bare_capacity(mass_g: float, q_mAh_g: float) -> float:
    return mass_g * q_mAh_g / 1000.0


def adapter_around(name: str, bare: Callable[..., float]) -> Callable[..., Any]:
    """The same spreadsheet declaration wrapped around the bare formula: its cost
    minus the bare formula's is the adapter's own overhead."""
    plan = PLANS[name]
    return sheet_function(
        name, plan.help, plan.args, section=plan.section, returns=plan.returns, register=False
    )(bare)


def scalar_report() -> list[tuple[str, float]]:
    nernst = FUNCTIONS["CW_NERNST"]
    cap = FUNCTIONS["CW_CAPACITY"]
    assert math.isclose(
        nernst(0.34, 2.0, 0.1, 1.0), bare_nernst(0.34, 2.0, 0.1, 1.0), rel_tol=1e-12
    )
    assert math.isclose(cap(100.0, 160.0), bare_capacity(100.0, 160.0), rel_tol=1e-12)
    n = 20000
    rows = []
    for label, sheet, core, bare, args in (
        ("CW_NERNST", nernst, core_nernst.nernst, bare_nernst, (0.34, 2.0, 0.1, 1.0)),
        ("CW_CAPACITY", cap, core_capacity.capacity, bare_capacity, (100.0, 160.0)),
    ):
        xl_args = [[[a]] for a in args]  # the form xlwings passes with ndim=2
        wrapped = adapter_around(label, bare)
        t_bare, t_core, t_sheet, t_xl, t_wrapped = interleaved(
            [
                lambda: bare(*args),  # noqa: B023
                lambda: core(*args),  # noqa: B023
                lambda: sheet(*args),  # noqa: B023
                lambda: sheet(*xl_args),  # noqa: B023
                lambda: wrapped(*args),  # noqa: B023
            ],
            n // 4,
        )
        ratio = t_sheet / t_bare
        print(
            f"{label:12s} scalar: bare {t_bare * 1e6:6.2f} us | "
            f"core alone {t_core * 1e6:6.2f} us | "
            f"sheet call {t_sheet * 1e6:6.2f} us ([[x]] form {t_xl * 1e6:6.2f} us) | "
            f"adapter around the bare formula {t_wrapped * 1e6:5.2f} us"
        )
        print(
            f"{'':12s} ratio sheet/bare = {ratio:5.1f}x (target <= {SCALAR_TARGET:g}x); "
            f"core alone = {t_core / t_bare:5.1f}x bare; "
            f"adapter around the bare formula = {t_wrapped / t_bare:4.1f}x bare"
        )
        rows.append((f"{label} scalar (adapter only)", t_wrapped / t_bare))
        rows.append((f"{label} scalar", ratio))
    return rows


def range_report() -> list[tuple[str, float]]:
    nernst = FUNCTIONS["CW_NERNST"]
    rng = np.random.default_rng(7)
    rows = []
    for shape in ((1000, 100), (100000, 1)):
        cells = (rng.random(shape) * 0.9 + 0.05).tolist()

        def baseline() -> Any:
            return np.array(cells, dtype=float).tolist()  # noqa: B023

        def sheet() -> Any:
            return nernst(0.34, 2, cells, 1.0)  # noqa: B023

        out = sheet()
        assert len(out) == shape[0] and len(out[0]) == shape[1]
        assert out[0][0] == bare_nernst(0.34, 2.0, cells[0][0], 1.0) or math.isclose(
            out[0][0], bare_nernst(0.34, 2.0, cells[0][0], 1.0), rel_tol=1e-12
        )
        t_base, t_sheet = interleaved([baseline, sheet], 2, rounds=7)
        ratio = t_sheet / t_base
        print(
            f"CW_NERNST {shape[0]}x{shape[1]} range: list->array->list {t_base * 1e3:6.2f} ms | "
            f"sheet call {t_sheet * 1e3:6.2f} ms | "
            f"ratio {ratio:4.2f}x (target <= {RANGE_TARGET:g}x)"
        )
        rows.append((f"CW_NERNST range {shape[0]}x{shape[1]}", ratio))
    return rows


def main() -> int:
    print(f"python {sys.version.split()[0]}, numpy {np.__version__}")
    rows = scalar_report() + range_report()
    print()
    for label, ratio in rows:
        target = SCALAR_TARGET if "scalar" in label else RANGE_TARGET
        verdict = "meets" if ratio <= target else "MISSES"
        print(f"{label:36s} {ratio:7.2f}x  {verdict} target {target:g}x")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
