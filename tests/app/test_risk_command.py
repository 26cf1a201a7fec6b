"""``cellwright risk`` (udfs.app.risk): the core's Monte Carlo and tornado of
the cost model, from ranges typed on the command line, as tables for the writer.

Ranges are round demo numbers (invented) around the demo book's values.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from chart_parts import sheet_charts

from udfs.app.risk import parse_range, run_risk, write_risk_tables
from udfs.app.scenario import demo_values
from udfs.core.cost_table import cost_model_from_values
from udfs.core.errors import InputError
from udfs.core.risk import monte_carlo, tornado
from udfs.xlsx.file_errors import ReferenceSyntaxError

RANGES = ["index:nickel=12000,15500,22000", "energy_price_USD_per_kWh=0.05,0.1,0.2,uniform",
          "formation_yield=0.9,0.97,0.99,pert"]


def test_the_run_is_the_cores_run() -> None:
    r = run_risk(RANGES, samples=70_000, seed=11, outputs=["full_USD_kWh", "full_USD_cell"])
    model = cost_model_from_values(demo_values())
    ranges = dict(parse_range(t) for t in RANGES)
    ref = monte_carlo(model, ranges, 70_000, 11, ["full_USD_kWh", "full_USD_cell"])
    np.testing.assert_array_equal(r.run.samples["full_USD_kWh"], ref.samples["full_USD_kWh"])
    assert r.run.summary["full_USD_cell"].percentiles == ref.summary["full_USD_cell"].percentiles
    t = tornado(model, ranges)
    assert [b.name for b in r.tornado.bars] == [b.name for b in t.bars]
    tables = r.tables()
    p = tables["percentiles"]
    assert p.columns["output"] == ["full_USD_kWh", "full_USD_cell"]
    assert p.columns["unit"] == ["USD/kWh", "USD/cell"]
    assert p.columns["P50"][0] == ref.summary["full_USD_kWh"].percentiles[50.0]
    h = tables["histogram"]
    assert h.columns["full_USD_kWh samples"].sum() == 70_000
    assert tables["tornado"].columns["input"] == [b.name for b in t.bars]
    lines = r.lines()
    assert "price book demo-2025-06 (2025-06-30)" in lines[0] and "not quotations" in lines[-1]


@pytest.mark.parametrize(
    ("ranges", "kwargs", "error", "fragment"),
    [
        (["index:nickel=1,2"], {}, ReferenceSyntaxError, "NAME=LOW,LIKELY,HIGH"),
        (["index:nickel=1,2,x"], {}, ReferenceSyntaxError, "'x' is not a number"),
        (["index:nickel=1,2,3,normal"], {}, ReferenceSyntaxError, "distribution 'normal'"),
        (["index:nickel=3,2,1"], {}, Exception, "low <= likely <= high"),
        (["index:zinc=1,2,3"], {}, Exception, "unknown input"),
        ([], {}, ReferenceSyntaxError, "at least one --range"),
        (["index:nickel=1,2,3", "index:nickel=1,2,4"], {}, ReferenceSyntaxError, "given twice"),
        (["index:nickel=1,2,3"], {"samples": 0}, InputError, "samples"),
    ],
)
def test_bad_requests_are_refused(ranges: list[str], kwargs: dict[str, object],
                                  error: type[Exception], fragment: str) -> None:
    with pytest.raises(error, match=fragment):
        run_risk(ranges, **{"samples": 1000, **kwargs})  # type: ignore[arg-type]


def test_written_tables_chart_the_histogram_and_the_tornado_as_bars(tmp_path: Path) -> None:
    r = run_risk(RANGES, samples=5_000, seed=3)
    written = write_risk_tables(r, tmp_path / "run.xlsx")
    charts = {p.stem.split("-")[-1]: sheet_charts(p)["Sweep"] for p in written}
    assert charts["percentiles"] == []  # rows of figures: nothing to plot against
    (hist,) = charts["histogram"]
    assert hist.kind == "barChart" and "Histogram: full_USD_kWh samples" in hist.texts
    (bars,) = charts["tornado"]
    assert bars.kind == "barChart" and bars.series == 1
