"""Ranges, Monte Carlo and tornado (udfs.core.risk): closed-form checks, seeding."""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import numpy as np
import pytest

from udfs.core.cell_cost import cost_model
from udfs.core.errors import DomainError, InputError, NotFoundError
from udfs.core.risk import (
    BLOCK,
    Range,
    draw,
    input_key,
    make_range,
    monte_carlo,
    percentiles_of,
    quantile,
    thread_runner,
    tornado,
)
from udfs.core.sizing import CellSpec, design_cell


class Linear:
    """cost = 5 + sum(k_i * x_i): a model with a closed-form answer."""

    def __init__(self, slopes: Mapping[str, float], base: Mapping[str, float]):
        self.slopes = dict(slopes)
        self._base = dict(base)

    def base(self) -> dict[str, float]:
        return dict(self._base)

    def check(self, name: str, value: Any) -> Any:
        if name not in self._base:
            raise NotFoundError("input", name, "input", list(self._base))
        if np.any(np.asarray(value) < 0):
            raise DomainError(name, float(np.min(value)), ">= 0")
        return np.asarray(value, dtype=float)

    def __call__(self, values: Mapping[str, Any]) -> dict[str, Any]:
        v = {**self._base, **values}
        cost: Any = 5.0
        for k, s in self.slopes.items():
            cost = cost + s * v[k]
        return {"cost": cost, **{f"echo {k}": v[k] for k in self._base}}


def _se(p: float, n: int) -> float:
    """Standard error of the p-quantile of a uniform on [0, 1]: sqrt(p(1-p)/n)
    (the density is 1; asymptotic result for sample quantiles, common practice)."""
    return math.sqrt(p * (1 - p) / n)


def test_uniform_price_linear_cost_percentiles() -> None:
    m = Linear({"price": 3.0}, {"price": 10.0})
    n = 200_000
    mc = monte_carlo(m, {"price": (8.0, None, 12.0, "uniform")}, n, seed=11, outputs="cost")
    s = mc.summary["cost"]
    for p in (10.0, 50.0, 90.0):
        exact = 5.0 + 3.0 * (8.0 + p / 100.0 * 4.0)  # closed form
        assert s.percentiles[p] == pytest.approx(exact, abs=5 * 3.0 * 4.0 * _se(p / 100, n))
    assert s.mean == pytest.approx(35.0, abs=5 * 3.0 * 4.0 / math.sqrt(12 * n))
    assert int(s.counts.sum()) == n and len(s.edges) == 41
    assert s.minimum >= 29.0 and s.maximum <= 41.0


def test_uniform_price_through_the_cost_model() -> None:
    # the full cost model is linear in one material price: P10/P50/P90 of the cost are the
    # cost at the price's P10/P50/P90 (closed form), within sampling tolerance
    d = design_cell(CellSpec("NMC811", "graphite", target_capacity_Ah=55.0,
                             cathode_loading_mg_cm2=22.0))  # demo design (invented)
    model = cost_model(d, book="demo-2025-06")  # demo prices (invented)
    lo, hi, n = 4.0, 9.0, 131_072
    mc = monte_carlo(model, {"price:graphite": (lo, None, hi, "uniform")}, n, seed=5)
    at = model({"price:graphite": np.array([lo, hi])})["full_USD_kWh"]
    slope = float(at[1] - at[0]) / (hi - lo)
    for p in (10.0, 50.0, 90.0):
        exact = float(at[0]) + slope * p / 100.0 * (hi - lo)
        tol = 5 * slope * (hi - lo) * _se(p / 100, n)
        assert mc.summary["full_USD_kWh"].percentiles[p] == pytest.approx(exact, abs=tol)
    assert mc.meta["price book"] == "demo-2025-06 (2025-06-30)"
    assert "not quotations" in mc.meta["caution"]


def test_triangular_and_pert() -> None:
    r = Range(0.0, 1.0, 4.0)
    # closed form: F(c) = 1/4; P50 = 4 - sqrt(0.5 * 4 * 3) = 4 - sqrt(6); P10 = sqrt(0.1*4*1)
    assert r.percentile(50) == pytest.approx(4 - math.sqrt(6), rel=1e-15)
    assert r.percentile(10) == pytest.approx(math.sqrt(0.4), rel=1e-15)
    m = Linear({"x": 1.0}, {"x": 1.0})
    n = 300_000
    mc = monte_carlo(m, {"x": (0.0, 1.0, 4.0)}, n, seed=2, outputs="cost")
    for p in (10.0, 50.0, 90.0):
        # density at the quantile: f = 2(x-a)/((b-a)(c-a)) left of c, 2(b-x)/((b-a)(b-c)) right
        x = r.percentile(p)
        f = 2 * x / 4 if x < 1 else 2 * (4 - x) / 12
        assert mc.summary["cost"].percentiles[p] - 5.0 == pytest.approx(
            x, abs=5 * math.sqrt(p / 100 * (1 - p / 100) / n) / f)
    pert = monte_carlo(m, {"x": (0.0, 1.0, 4.0, "pert")}, n, seed=2, outputs="cost")
    # PERT mean (a + 4c + b) / 6 = 8/6; its sd is below (b - a) / 6 (common practice)
    assert pert.summary["cost"].mean - 5.0 == pytest.approx(8 / 6, abs=5 * (4 / 6) / math.sqrt(n))
    assert Range(0.0, 1.0, 4.0, "pert").mean == pytest.approx(8 / 6)


def test_same_seed_same_numbers_whatever_the_chunking_or_order() -> None:
    m = Linear({"a": 1.0, "b": -2.0, "c": 0.5}, {"a": 1.0, "b": 1.0, "c": 1.0})
    ranges = {"a": (0.0, 1.0, 2.0), "b": (0.5, 1.0, 3.0, "pert"), "c": (0.0, None, 9.0, "uniform")}
    n = 3 * BLOCK + 1234
    one = monte_carlo(m, ranges, n, seed=42, outputs=["cost", "echo a"])
    again = monte_carlo(m, dict(reversed(list(ranges.items()))), n, seed=42,
                        outputs=["cost", "echo a"], chunk_size=2 * BLOCK)
    np.testing.assert_array_equal(one.samples["cost"], again.samples["cost"])
    assert one.summary["cost"].percentiles == again.summary["cost"].percentiles
    other = monte_carlo(m, ranges, n, seed=43, outputs="cost")
    assert not np.array_equal(one.samples["cost"], other.samples["cost"])
    # an input's samples do not change when other inputs are added or removed
    alone = monte_carlo(m, {"a": ranges["a"]}, n, seed=42, outputs="echo a")
    np.testing.assert_array_equal(alone.samples["echo a"], one.samples["echo a"])
    threaded = monte_carlo(m, ranges, n, seed=42, outputs=["cost", "echo a"],
                           runner=thread_runner(2))
    np.testing.assert_array_equal(threaded.samples["cost"], one.samples["cost"])
    # the first samples of a longer run are the samples of a shorter one
    longer = monte_carlo(m, ranges, n + BLOCK, seed=42, outputs="cost")
    np.testing.assert_array_equal(longer.samples["cost"][:n], one.samples["cost"])


def test_tornado_ranks_by_swing() -> None:
    m = Linear({"a": 1.0, "b": -2.0, "c": 0.5}, {"a": 1.0, "b": 1.0, "c": 1.0})
    t = tornado(m, {"a": (0.0, 1.0, 2.0), "b": (0.5, 1.0, 3.0), "c": (0.0, 4.0, 9.0)}, "cost")
    # swings by hand: a 1*2 = 2, b 2*2.5 = 5, c 0.5*9 = 4.5; base 5 + 1 - 2 + 2 = 6
    assert [b.name for b in t.bars] == ["b", "c", "a"]
    assert [b.swing for b in t.bars] == pytest.approx([5.0, 4.5, 2.0])
    assert t.base == pytest.approx(6.0)
    b = t.bars[0]
    assert (b.low_output, b.high_output) == pytest.approx((6.0 + 1.0, 6.0 - 4.0))


@pytest.mark.parametrize(
    ("ranges", "kwargs", "error", "fragment"),
    [
        ({"x": (3.0, 2.0, 4.0)}, {}, DomainError, "low <= likely <= high"),
        ({"x": (1.0, 2.0, 4.0, "normal")}, {}, NotFoundError, "unknown distribution"),
        ({"x": (1.0, 2.0)}, {}, InputError, "a range (low, likely, high"),
        ({"x": (-1.0, 2.0, 4.0)}, {}, DomainError, "x must be >= 0"),
        ({"y": (1.0, 2.0, 4.0)}, {}, NotFoundError, "unknown input"),
        ({"x": (1.0, 2.0, float("nan"))}, {}, DomainError, "x high"),
        ({}, {}, InputError, "ranges"),
        ({"x": (1.0, 2.0, 4.0)}, {"n": 0}, DomainError, "n must be"),
        ({"x": (1.0, 2.0, 4.0)}, {"seed": -1}, InputError, "seed"),
        ({"x": (1.0, 2.0, 4.0)}, {"chunk_size": 1000}, DomainError, "a multiple of"),
        ({"x": (1.0, 2.0, 4.0)}, {"outputs": "kost"}, NotFoundError, "unknown output"),
        ({"x": (1.0, 2.0, 4.0)}, {"percentiles": (10, 150)}, DomainError, "percentiles"),
    ],
)
def test_bad_requests_are_refused(ranges: dict[str, Any], kwargs: dict[str, Any],
                                  error: type[Exception], fragment: str) -> None:
    m = Linear({"x": 1.0}, {"x": 1.0})
    args = {"n": 100, "seed": 1, "outputs": "cost", **kwargs}
    with pytest.raises(error) as info:
        monte_carlo(m, ranges, **args)
    assert fragment in str(info.value)


def test_make_range_accepts_a_range() -> None:
    r = make_range("p", Range(1.0, 2.0, 3.0, "pert"))
    assert r == Range(1.0, 2.0, 3.0, "pert")
    assert make_range("p", (1, None, 3, "Uniform")).likely == 2.0


def test_block_draws_are_the_inverse_distribution_function_bit_for_bit() -> None:
    # the branch-free, in-place transform of a whole slice equals Range.quantile's
    # np.where of two square roots on the same uniforms, bit for bit
    ranges = {"a": (0.0, 1.0, 4.0), "b": (2.0, 2.0, 5.0), "c": (3.0, 7.0, 7.0),
              "d": (1.0, None, 2.0, "uniform"), "e": (4.0, 4.0, 4.0)}
    positions = np.arange(2 * BLOCK + 17)
    got = draw(ranges, 7, positions)
    for name, raw in ranges.items():
        r = make_range(name, raw)
        want = np.empty(positions.size)
        for b in range(3):
            rng = np.random.default_rng(np.random.SeedSequence(7, spawn_key=(b, input_key(name))))
            lo, hi = b * BLOCK, min((b + 1) * BLOCK, positions.size)
            want[lo:hi] = r.quantile(rng.random(hi - lo))
        np.testing.assert_array_equal(got[name], want)


def test_draw_gives_the_samples_of_a_run_at_any_positions() -> None:
    m = Linear({"a": 1.0, "b": 1.0}, {"a": 1.0, "b": 1.0})
    ranges = {"a": (0.0, 1.0, 2.0), "b": (0.5, 1.0, 3.0, "pert")}
    run = monte_carlo(m, ranges, 2 * BLOCK + 5, seed=9, outputs="echo a")
    at = np.array([[0, BLOCK - 1], [BLOCK, 2 * BLOCK + 4]])
    np.testing.assert_array_equal(draw(ranges, 9, at)["a"], run.samples["echo a"][at])
    with pytest.raises(DomainError, match="whole numbers >= 0"):
        draw(ranges, 9, [1.5])
    with pytest.raises(InputError, match="seed"):
        draw(ranges, -1, [1])


def test_percentiles_are_the_order_statistics_interpolated() -> None:
    rng = np.random.default_rng(3)
    for x in (rng.standard_normal(200_001) ** 3, np.repeat(rng.random(50), 2_000),
              rng.random(100)):
        p = [0.0, 10.0, 50.0, 90.0, 99.99, 100.0]
        # numpy's linear method (the spreadsheet's PERCENTILE) is the reference
        assert percentiles_of(x, p) == pytest.approx(list(np.percentile(x, p)), rel=1e-15,
                                                     abs=1e-300)
    assert percentiles_of(np.full(100_000, 2.5), [10.0, 90.0]) == [2.5, 2.5]


def test_closed_form_quantiles_broadcast() -> None:
    # triangular(0, c, 4) medians for c = 1 and c = 4 (computed: b - sqrt((b-a)(b-c)/2), and
    # a + sqrt(0.5 (b-a)(c-a)) left of the mode)
    got = quantile(0.0, np.array([1.0, 4.0]), 4.0, 0.5)
    assert got.tolist() == pytest.approx([4 - math.sqrt(6), math.sqrt(8)], rel=1e-15)
    assert quantile(np.array([1.0, 2.0]), np.array([1.0, 2.0]), np.array([1.0, 2.0]),
                    0.3).tolist() == [1.0, 2.0]
    with pytest.raises(InputError, match="PERT has no closed-form"):
        quantile(0.0, 1.0, 2.0, 0.5, "pert")
