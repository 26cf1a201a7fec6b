"""The Dask runner (udfs.app.cluster) gives exactly the numpy run's numbers."""

from __future__ import annotations

import numpy as np
import pytest

from udfs.app.cluster import DaskRunner
from udfs.core.cell_cost import cost_model
from udfs.core.errors import DomainError, InputError
from udfs.core.risk import BLOCK, monte_carlo
from udfs.core.sizing import CellSpec, design_cell

pytest.importorskip(
    "distributed", reason="the optional 'cluster' extra (dask[distributed]) is not installed"
)

RANGES = {  # demo ranges (invented) around the demo book's values
    "index:nickel": (12000.0, 15500.0, 22000.0),
    "index:lithium hydroxide": (7000.0, 9000.0, 16000.0, "pert"),
    "price:graphite": (4.0, None, 8.0, "uniform"),
    "energy_price_USD_per_kWh": (0.05, 0.10, 0.20),
    "formation_yield": (0.90, 0.97, 0.99),
}


def test_local_cluster_equals_the_numpy_run() -> None:
    d = design_cell(CellSpec("NMC811", "graphite", target_capacity_Ah=55.0,
                             cathode_loading_mg_cm2=22.0))  # demo design (invented)
    model = cost_model(d, book="demo-2025-06")  # demo prices (invented)
    n = 3 * BLOCK + 777
    outputs = ["full_USD_kWh", "materials_USD_kWh"]
    ref = monte_carlo(model, RANGES, n, seed=9, outputs=outputs, chunk_size=2 * BLOCK)
    with DaskRunner(workers=2) as runner:
        got = monte_carlo(model, RANGES, n, seed=9, outputs=outputs, runner=runner)
        peaks = runner.peak_memory()
    for k in outputs:
        np.testing.assert_array_equal(got.samples[k], ref.samples[k])
        assert got.summary[k].percentiles == ref.summary[k].percentiles
        np.testing.assert_array_equal(got.summary[k].counts, ref.summary[k].counts)
    assert got.meta == ref.meta and got.meta["price book"] == "demo-2025-06 (2025-06-30)"
    assert len(peaks) == 2 and all(v > 0 for v in peaks.values())


def test_runner_arguments() -> None:
    with pytest.raises(InputError):
        DaskRunner()
    with pytest.raises(InputError):
        DaskRunner(workers=2, address="tcp://127.0.0.1:8786")
    with pytest.raises(DomainError):
        DaskRunner(workers=0)
    with pytest.raises(InputError, match="with-block"):
        DaskRunner(workers=1).threads()


def test_a_running_scheduler_by_its_address() -> None:
    from distributed import LocalCluster

    d = design_cell(CellSpec("LFP", "graphite", target_capacity_Ah=100.0,
                             cathode_loading_mg_cm2=25.0))  # demo design (invented)
    model = cost_model(d, book="demo-2024-12")  # demo prices (invented)
    ranges = {"price:LiFePO4": (4.0, 5.0, 7.0), "capex_USD_per_GWh": (60e6, 80e6, 120e6)}
    ref = monte_carlo(model, ranges, BLOCK + 5, seed=3)
    with LocalCluster(n_workers=1, threads_per_worker=1, dashboard_address=None) as cluster, \
            DaskRunner(address=cluster.scheduler_address) as runner:
        got = monte_carlo(model, ranges, BLOCK + 5, seed=3, runner=runner)
    np.testing.assert_array_equal(got.samples["full_USD_kWh"], ref.samples["full_USD_kWh"])


def test_core_sweep_on_the_cluster_equals_the_local_run() -> None:
    import io

    from udfs.app.progress import Progress
    from udfs.app.sweep import parse_vary, sweep_core

    varies = [parse_vary("in_cathode=NMC811,LFP"), parse_vary("np_ratio=1.0:1.3:0.01"),
              parse_vary("index:nickel=12000:20000:2000")]  # 2 x 31 x 5 = 310 scenarios

    def bar(n: int) -> Progress:
        return Progress(n, "t", stream=io.StringIO())

    local = sweep_core(varies, progress=bar(310))
    with DaskRunner(workers=2) as runner:
        remote = sweep_core(varies, progress=bar(310), runner=runner, chunk_rows=64)
    for name in local.outputs:
        np.testing.assert_array_equal(remote.columns[name], local.columns[name])
    assert remote.notes == local.notes


def test_risk_command_on_workers() -> None:
    from udfs.app.risk import run_risk

    ranges = ["index:nickel=12000,15500,22000", "capex_USD_per_GWh=6e7,8e7,1.2e8"]
    ref = run_risk(ranges, samples=BLOCK + 9, seed=4)
    got = run_risk(ranges, samples=BLOCK + 9, seed=4, workers=2)
    np.testing.assert_array_equal(got.run.samples["full_USD_kWh"], ref.run.samples["full_USD_kWh"])
