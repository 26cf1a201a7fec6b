"""Vectorised cell sizing of mixed formats against a one-scenario-at-a-time loop.

Run:  python benchmarks/bench_sizing.py [--scenarios 100000] [--loop 600]

Times ``design_cell`` on N scenarios in one call -- pouch, cylindrical (18, 21
and 46 mm classes) and prismatic cells mixed in one array of formats, with the
loading, N/P and target capacity varied -- and the same computation one
scenario per call for ``--loop`` of them (an equal share of each format),
scaled to N. Prints both, their ratio (target >= 50x) and whether N scenarios
ran in under 2 s, then one JSON line with the results. The loop baseline runs
in the same process; no absolute time is asserted anywhere.
"""

from __future__ import annotations

import argparse
import json
import platform
import sys
import time
from pathlib import Path
from typing import Any

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from udfs.core.sizing import CellSpec, design_cell

#: (format, cylinder class, target range in Ah): generic classes (common practice magnitudes)
KINDS = (
    ("pouch", "21 mm", (20.0, 80.0)),
    ("cylindrical", "18 mm", (2.0, 4.0)),
    ("cylindrical", "21 mm", (3.5, 6.0)),
    ("cylindrical", "46 mm", (15.0, 30.0)),
    ("prismatic", "21 mm", (100.0, 330.0)),
)


def _inputs(n: int, seed: int = 2024) -> dict[str, Any]:
    rng = np.random.default_rng(seed)
    kind = rng.integers(0, len(KINDS), n)
    lo = np.array([k[2][0] for k in KINDS])[kind]
    hi = np.array([k[2][1] for k in KINDS])[kind]
    return {
        "cell_format": np.array([k[0] for k in KINDS], dtype=object)[kind],
        "cylinder_class": np.array([k[1] for k in KINDS], dtype=object)[kind],
        "cathode_loading_mg_cm2": rng.uniform(16.0, 28.0, n),
        "np_ratio": rng.uniform(1.05, 1.25, n),
        "target_capacity_Ah": rng.uniform(lo, hi),
    }


def _best_of(repeats: int, fn: object) -> float:
    assert callable(fn)
    best = float("inf")
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0] if __doc__ else None)
    parser.add_argument("--scenarios", type=int, default=100_000)
    parser.add_argument("--loop", type=int, default=600)
    parser.add_argument("--repeats", type=int, default=5)
    args = parser.parse_args(argv)
    n, k = args.scenarios, min(args.loop, args.scenarios)
    x = _inputs(n)
    spec = CellSpec("NMC811", "graphite", **x)

    design_cell(spec)  # warm the catalogue and caches (not timed)
    vector_s = _best_of(args.repeats, lambda: design_cell(spec))

    def one(i: int) -> dict[str, Any]:
        return {key: (str(v[i]) if v.dtype == object else float(v[i])) for key, v in x.items()}

    scalars = [one(i) for i in range(k)]

    def loop() -> None:
        for kw in scalars:
            design_cell(CellSpec("NMC811", "graphite", **kw))

    loop_s = _best_of(max(1, args.repeats // 2), loop)
    loop_scaled_s = loop_s * n / k

    # the two routes agree (every timed scenario of the loop against the vectorised call)
    vec = design_cell(spec)
    agree = all(
        np.isclose(float(design_cell(CellSpec("NMC811", "graphite", **kw)).cell_mass_g),
                   float(vec.cell_mass_g[i]), rtol=1e-12)
        for i, kw in enumerate(scalars[:50])
    )
    formats = {f: int((x["cell_format"] == f).sum()) for f in ("pouch", "cylindrical",
                                                                 "prismatic")}
    ratio = loop_scaled_s / vector_s
    print(f"scenarios by format                    : {formats}")
    print(f"design_cell, {n} mixed scenarios, one call: {vector_s * 1000:9.1f} ms")
    print(f"same, one call per scenario ({k} timed, scaled to {n}): {loop_scaled_s:9.2f} s")
    print(f"speed-up (loop / vectorised)           : {ratio:9.0f} x   (target >= 50 x)")
    print(f"{n} scenarios under 2 s                 : {vector_s < 2.0}")
    print(f"vectorised and scalar results agree    : {agree}")
    print(
        json.dumps(
            {
                "benchmark": "bench_sizing",
                "scenarios": n,
                "formats": formats,
                "loop_timed": k,
                "vectorised_s": round(vector_s, 6),
                "loop_per_call_s": round(loop_s / k, 9),
                "loop_scaled_s": round(loop_scaled_s, 4),
                "ratio": round(ratio, 1),
                "target_ratio": 50,
                "meets_ratio": ratio >= 50,
                "under_2s": vector_s < 2.0,
                "agree": agree,
                "python": platform.python_version(),
                "numpy": np.__version__,
            }
        )
    )
    return 0 if agree else 1


if __name__ == "__main__":
    raise SystemExit(main())
