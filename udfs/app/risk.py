"""``cellwright risk``: ranges, a seeded Monte Carlo of the full cost model,
P10/P50/P90, a histogram and a tornado.

The cell and its prices come from a workbook's inputs (a cell-sizing or cost
workbook) or the demo cell; the price book from ``--prices FILE``, the
workbook's own (a cost workbook), or the latest shipped demo book. Ranges are
``NAME=LOW,LIKELY,HIGH[,DISTRIBUTION]`` with NAME an input of the cost model
(``index:nickel``, ``price:graphite``, ``fee:NMC811``, a plant field such as
``energy_price_USD_per_kWh``, or ``design:np_ratio``). The run is the core's
(:func:`udfs.core.risk.monte_carlo`): the same seed gives the same numbers in
this process and on a Dask cluster (``workers``).

>>> parse_range("index:nickel=12000,15500,20000")
('index:nickel', (12000.0, 15500.0, 20000.0, 'triangular'))
>>> r = run_risk(["energy_price_USD_per_kWh=0.08,0.1,0.15"], samples=65_536, seed=1)
>>> [t.rows for t in r.tables().values()]
[1, 40, 1]
"""

from __future__ import annotations

import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from udfs.core.cell_cost import OUTPUTS, CostModel
from udfs.core.conversion_cost import COST_CAUTION
from udfs.core.errors import InputError
from udfs.core.risk import DISTRIBUTIONS, MonteCarlo, Runner, Tornado, monte_carlo, tornado
from udfs.xlsx.file_errors import ReferenceSyntaxError

from .safe_text import check_argument
from .scenario import cost_model_for, demo_values, load_book, read_input_values
from .sweep import finite_number
from .tables import SweepTable

__all__ = [
    "MAX_SAMPLES",
    "OUTPUT_UNITS",
    "RiskResult",
    "parse_range",
    "risk_paths",
    "run_risk",
    "runner_for",
    "write_risk_tables",
]

MAX_SAMPLES = 100_000_000
#: Units of the cost model's outputs (every one is USD per kWh but two).
OUTPUT_UNITS: Mapping[str, str] = {
    name: "USD/cell" if name.endswith("_cell") else "USD/Ah" if name.endswith("_Ah")
    else "USD/kWh" for name in OUTPUTS
}
StrPath = str | os.PathLike[str]


def parse_range(text: str) -> tuple[str, tuple[float, float, float, str]]:
    """``NAME=LOW,LIKELY,HIGH[,DISTRIBUTION]`` -> (name, range)."""
    name, sep, spec = check_argument(text, "--range").rpartition("=")
    name = name.strip()
    parts = [p.strip() for p in spec.split(",")]
    if not sep or not name or len(parts) not in (3, 4):
        raise ReferenceSyntaxError(
            f"--range {text!r}: write NAME=LOW,LIKELY,HIGH[,DISTRIBUTION], e.g. "
            "index:nickel=12000,15500,20000 or energy_price_USD_per_kWh=0.08,0.1,0.15,uniform"
        )
    dist = parts[3].lower() if len(parts) == 4 else "triangular"
    if dist not in DISTRIBUTIONS:
        raise ReferenceSyntaxError(f"--range {name}: distribution {parts[3]!r} is not one of "
                                   f"{', '.join(DISTRIBUTIONS)}")
    numbers = [finite_number(p, f"--range {name}") for p in parts[:3]]
    return name, (numbers[0], numbers[1], numbers[2], dist)


def runner_for(workers: str | int | None) -> Any:
    """``None``: this process; a whole number: a local Dask cluster of that many
    workers; anything else: the address of a running Dask scheduler. Returns a
    context manager that gives the runner (None for this process)."""
    import contextlib

    if workers is None:
        return contextlib.nullcontext(None)
    from .cluster import DaskRunner

    text = str(workers).strip()
    if text.isdigit():
        return DaskRunner(workers=int(text))
    return DaskRunner(address=text)


@dataclass(frozen=True)
class RiskResult:
    """A Monte Carlo run and its tornado, with the model's price book and caution."""

    model: CostModel
    run: MonteCarlo
    tornado: Tornado
    source: str

    def lines(self) -> list[str]:
        """What the command prints."""
        out = [f"Monte Carlo of {self.source}: {self.run.n:,} samples, seed {self.run.seed}, "
               f"price book {self.model.book_label}"]
        for name, s in self.run.summary.items():
            unit = OUTPUT_UNITS.get(name, "")
            pct = "  ".join(f"P{p:g} {v:,.3f}" for p, v in s.percentiles.items())
            out.append(f"  {name}: {pct}  mean {s.mean:,.3f}  ({unit})")
        out.append(f"Tornado of {self.tornado.output} (each input alone, low to high; base "
                   f"{self.tornado.base:,.3f} {OUTPUT_UNITS.get(self.tornado.output, '')}):")
        for bar in self.tornado.bars:
            out.append(f"  {bar.name:<32} {bar.low_output - self.tornado.base:+10.3f} "
                       f"{bar.high_output - self.tornado.base:+10.3f}  swing {bar.swing:,.3f}")
        out.append(COST_CAUTION)
        return out

    def tables(self) -> dict[str, SweepTable]:
        """Three tables for the table writer: percentiles per output, the
        histogram of each output, the tornado."""
        book = f"{self.source}; price book {self.model.book_label}"
        notes = [COST_CAUTION, f"seed {self.run.seed}, {self.run.n:,} samples"]
        names = list(self.run.summary)
        pcts = list(self.run.summary[names[0]].percentiles)
        cols: dict[str, Any] = {"output": names,
                                "unit": [OUTPUT_UNITS.get(n, "") for n in names]}
        for p in pcts:
            cols[f"P{p:g}"] = np.array([self.run.summary[n].percentiles[p] for n in names])
        cols["mean"] = np.array([self.run.summary[n].mean for n in names])
        cols["std"] = np.array([self.run.summary[n].std for n in names])
        summary = SweepTable(["output", "unit"], [c for c in cols if c not in ("output", "unit")],
                             cols, book, 1, list(notes), kind="percentiles")
        hist_cols: dict[str, Any] = {}
        for n in names:
            s = self.run.summary[n]
            hist_cols[f"{n} from"] = s.edges[:-1]
            hist_cols[f"{n} to"] = s.edges[1:]
            hist_cols[f"{n} samples"] = s.counts.astype(float)
        first = f"{names[0]} from"
        histogram = SweepTable([first], [c for c in hist_cols if c != first], hist_cols, book,
                               len(self.run.summary[names[0]].counts), list(notes),
                               kind="histogram")
        t = self.tornado
        bars = t.bars
        torn = {
            "input": [b.name for b in bars],
            "low": np.array([b.low for b in bars]),
            "high": np.array([b.high for b in bars]),
            f"{t.output} at low": np.array([b.low_output for b in bars]),
            f"{t.output} at high": np.array([b.high_output for b in bars]),
            "swing": np.array([b.swing for b in bars]),
        }
        tornado_table = SweepTable(["input"], [c for c in torn if c != "input"], torn, book,
                                   len(bars), [*notes, f"base {t.base:.6g} (every input at "
                                               "likely)"], kind="tornado")
        return {"percentiles": summary, "histogram": histogram, "tornado": tornado_table}


def run_risk(
    ranges: Sequence[str] | Mapping[str, Any],
    samples: int = 1_000_000,
    seed: int = 2025,
    outputs: Sequence[str] = ("full_USD_kWh",),
    workbook: StrPath | None = None,
    prices: StrPath | None = None,
    workers: str | int | None = None,
    percentiles: Sequence[float] = (10.0, 50.0, 90.0),
    bins: int = 40,
    runner: Runner | None = None,
) -> RiskResult:
    """Run the Monte Carlo and the tornado (see the module docstring).
    ``ranges`` are ``--range`` texts or a mapping name -> (low, likely, high[, dist])."""
    parsed: dict[str, Any] = {}
    items = ranges.items() if isinstance(ranges, Mapping) else (parse_range(t) for t in ranges)
    for name, r in items:
        if name in parsed:
            raise ReferenceSyntaxError(f"--range {name} is given twice")
        parsed[name] = r
    if not parsed:
        raise ReferenceSyntaxError("give at least one --range NAME=LOW,LIKELY,HIGH")
    if not isinstance(samples, int) or not 1 <= samples <= MAX_SAMPLES:
        raise InputError("samples", samples, f"a whole number from 1 to {MAX_SAMPLES:,}")
    values = read_input_values(workbook) if workbook is not None else demo_values()
    source = f"workbook {os.fspath(workbook)}" if workbook is not None else "the demo cell"
    book = load_book(prices) if prices is not None else None
    model = cost_model_for(values, book)
    outs = list(outputs) or ["full_USD_kWh"]
    if runner is not None:
        mc = monte_carlo(model, parsed, samples, seed, outs, percentiles, bins, runner=runner)
    else:
        with runner_for(workers) as dask:
            mc = monte_carlo(model, parsed, samples, seed, outs, percentiles, bins, runner=dask)
    return RiskResult(model, mc, tornado(model, parsed, outs[0]), source)


def risk_paths(out: StrPath) -> dict[str, Path]:
    """Where ``--out OUT.csv`` puts the three tables: ``OUT-percentiles.csv``,
    ``OUT-histogram.csv``, ``OUT-tornado.csv`` (same suffix, .csv or .xlsx).

    >>> [p.name for p in risk_paths("run.xlsx").values()]
    ['run-percentiles.xlsx', 'run-histogram.xlsx', 'run-tornado.xlsx']
    """
    path = Path(out)
    return {k: path.with_name(f"{path.stem}-{k}{path.suffix}")
            for k in ("percentiles", "histogram", "tornado")}


def write_risk_tables(result: RiskResult, out: StrPath, force: bool = False,
                      inputs: Sequence[StrPath] = ()) -> list[Path]:
    """Write the three tables (see :func:`risk_paths`); every path is checked
    before the first is written."""
    from .tables import check_table_output, write_table

    paths = risk_paths(out)
    for p in paths.values():
        check_table_output(p, force, inputs)
    tables = result.tables()
    return [write_table(tables[k], p, force, inputs) for k, p in paths.items()]
