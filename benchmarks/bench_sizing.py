"""Vectorised cell sizing against a one-scenario-at-a-time Python loop.

Run:  python benchmarks/bench_sizing.py [--scenarios 100000] [--loop 1000]

Times ``design_cell`` on N scenarios in one call (varying loading, N/P and
target capacity) and the same computation one scenario per call for the first
``--loop`` scenarios, scaled to N. Prints both, their ratio (target >= 50x) and
whether N scenarios ran in under 1 s, then one JSON line with the results. The
loop baseline runs in the same process; no absolute time is asserted anywhere.
"""

from __future__ import annotations

import argparse
import json
import platform
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from udfs.core.sizing import CellSpec, design_cell


def _inputs(n: int, seed: int = 2024) -> dict[str, np.ndarray]:
    rng = np.random.default_rng(seed)
    return {
        "cathode_loading_mg_cm2": rng.uniform(12.0, 32.0, n),
        "np_ratio": rng.uniform(1.03, 1.25, n),
        "target_capacity_Ah": rng.uniform(10.0, 120.0, n),
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
    parser.add_argument("--loop", type=int, default=1_000)
    parser.add_argument("--repeats", type=int, default=5)
    args = parser.parse_args(argv)
    n, k = args.scenarios, min(args.loop, args.scenarios)
    x = _inputs(n)
    spec = CellSpec("NMC811", "graphite", **x)  # type: ignore[arg-type]

    design_cell(spec)  # warm the catalogue and caches (not timed)
    vector_s = _best_of(args.repeats, lambda: design_cell(spec))

    scalars = [{key: float(v[i]) for key, v in x.items()} for i in range(k)]

    def loop() -> None:
        for kw in scalars:
            design_cell(CellSpec("NMC811", "graphite", **kw))  # type: ignore[arg-type]

    loop_s = _best_of(max(1, args.repeats // 2), loop)
    loop_scaled_s = loop_s * n / k

    # the two routes agree (spot check of the timed scenarios)
    vec = design_cell(spec)
    one = design_cell(CellSpec("NMC811", "graphite", **scalars[-1]))  # type: ignore[arg-type]
    agree = bool(np.isclose(float(one.cell_mass_g), float(vec.cell_mass_g[k - 1]), rtol=1e-12))

    ratio = loop_scaled_s / vector_s
    print(f"design_cell, {n} scenarios in one call : {vector_s * 1000:9.1f} ms")
    print(f"same, one call per scenario ({k} timed, scaled to {n}): {loop_scaled_s:9.2f} s")
    print(f"speed-up (loop / vectorised)           : {ratio:9.0f} x   (target >= 50 x)")
    print(f"{n} scenarios under 1 s                 : {vector_s < 1.0}")
    print(f"vectorised and scalar results agree    : {agree}")
    print(
        json.dumps(
            {
                "benchmark": "bench_sizing",
                "scenarios": n,
                "loop_timed": k,
                "vectorised_s": round(vector_s, 6),
                "loop_per_call_s": round(loop_s / k, 9),
                "loop_scaled_s": round(loop_scaled_s, 4),
                "ratio": round(ratio, 1),
                "target_ratio": 50,
                "meets_ratio": ratio >= 50,
                "under_1s": vector_s < 1.0,
                "agree": agree,
                "python": platform.python_version(),
                "numpy": np.__version__,
            }
        )
    )
    return 0 if agree else 1


if __name__ == "__main__":
    raise SystemExit(main())
