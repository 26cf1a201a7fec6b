"""Ranges, a seeded Monte Carlo and the tornado, for any vectorised model.

An uncertain input is given as low, likely and high. The default distribution
is **triangular** on [low, high] with its mode at likely: its ends are the
values the user wrote (nothing beyond them, nothing unreachable inside), it
keeps more weight in the tails than PERT (a more cautious spread for cost
work), its percentiles have a closed form, and it is sampled by its exact
inverse distribution function (a square root, correctly rounded), so a run gives
the same bits on any machine with the same numpy. ``"pert"`` (a beta
distribution with shape 4 around likely, mean (low + 4 likely + high) / 6,
drawn by numpy's beta generator, whose last digits may differ between
processor types) and ``"uniform"`` (likely ignored) are available per input.

Reproducibility: the samples of input ``x`` at positions ``[b*BLOCK,
(b+1)*BLOCK)`` come from their own generator, seeded by ``(seed, b, x)``. So a
run's numbers depend only on the seed, the sample count and the ranges: not on
the chunk size, the order of the inputs, the runner (numpy here, Dask in
:mod:`udfs.app.cluster`) or on which other inputs vary. Memory stays bounded
by the chunk size, except the outputs asked for (8 bytes per sample each),
which the percentiles need.

A model is anything with ``base()`` (every input at its base value),
``check(name, value)`` (the input's own validation) and ``__call__(values)``
(vectorised outputs for a mapping of some inputs; the rest at base), such as
:class:`udfs.core.cell_cost.CostModel`.

>>> class Line:
...     def base(self): return {"price": 10.0}
...     def check(self, name, value): return np.asarray(value, dtype=float)
...     def __call__(self, v): return {"cost": 2.0 + 3.0 * v.get("price", 10.0)}
>>> mc = monte_carlo(Line(), {"price": Range(8.0, 8.0, 12.0, "uniform")}, 100_000, seed=1)
>>> round(mc.summary["cost"].percentiles[50], 1)   # 2 + 3 * 10
32.0
>>> t = tornado(Line(), {"price": (8.0, 10.0, 12.0)}, "cost")
>>> t.bars[0].low_output, t.bars[0].high_output
(26.0, 38.0)
"""

from __future__ import annotations

import hashlib
import itertools
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any, Protocol

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .errors import DomainError, InputError, NotFoundError
from .names import closest
from .validate import ANY, POSITIVE_INTEGER, Domain, check

__all__ = [
    "BLOCK",
    "DISTRIBUTIONS",
    "SLICE",
    "ChunkTask",
    "Model",
    "MonteCarlo",
    "Range",
    "Runner",
    "Summary",
    "Tornado",
    "TornadoBar",
    "draw",
    "input_key",
    "make_range",
    "monte_carlo",
    "percentiles_of",
    "plan_chunks",
    "quantile",
    "run_chunk",
    "serial_runner",
    "thread_runner",
    "tornado",
]

Array = NDArray[np.float64]

#: Samples per seeded block (the unit of reproducibility; chunks are whole blocks).
BLOCK = 65_536
#: Samples per model call inside a block: arrays of 64 KiB stay in the processor's
#: cache and below glibc's 128 KiB threshold for allocating by mmap (a Dask worker
#: sets MALLOC_TRIM_THRESHOLD_, which fixes that threshold; with 128 KiB arrays every
#: temporary was mapped and unmapped and the chunks ran several times slower there).
SLICE = 8_192
DISTRIBUTIONS = ("triangular", "pert", "uniform")
_MAX_SAMPLES = 10**10
_PERT_SHAPE = 4.0
_FINITE = ANY
_PERCENT = Domain(lower=0, upper=100, note="(percent)")


class Model(Protocol):
    def base(self) -> Mapping[str, Any]: ...

    def check(self, name: str, value: ArrayLike) -> Any: ...

    def __call__(self, values: Mapping[str, Any]) -> Mapping[str, Any]: ...


@dataclass(frozen=True)
class Range:
    """low <= likely <= high and a distribution (see the module docstring).

    >>> Range(0.0, 1.0, 4.0).mean, Range(0.0, 1.0, 4.0).percentile(50)
    (1.6666666666666667, 1.5505102572168221)
    """

    low: float
    likely: float
    high: float
    distribution: str = "triangular"

    @property
    def mean(self) -> float:
        a, c, b = self.low, self.likely, self.high
        if self.distribution == "uniform":
            return (a + b) / 2.0
        if self.distribution == "pert":
            return (a + _PERT_SHAPE * c + b) / (_PERT_SHAPE + 2.0)
        return (a + c + b) / 3.0

    def quantile(self, u: Any) -> Any:
        """Inverse distribution function (triangular and uniform), element-wise."""
        return quantile(self.low, self.likely, self.high, u, self.distribution)

    def percentile(self, p: float) -> float:
        """The closed-form ``p``-th percentile (triangular and uniform)."""
        return float(self.quantile(np.float64(p / 100.0)))

    def sample(self, rng: np.random.Generator, n: int) -> Array:
        """``n`` draws (inverse transform of uniforms; PERT through a beta draw)."""
        if self.distribution == "pert":
            a, c, b = self.low, self.likely, self.high
            if b == a:
                return np.full(n, a)
            alpha = 1.0 + _PERT_SHAPE * (c - a) / (b - a)
            beta = 1.0 + _PERT_SHAPE * (b - c) / (b - a)
            return a + rng.beta(alpha, beta, n) * (b - a)
        return np.asarray(self.quantile(rng.random(n)), dtype=float)


def quantile(low: Any, likely: Any, high: Any, u: Any, distribution: str = "triangular"
             ) -> Any:
    """The value below which a share ``u`` (0..1) of a triangular or uniform
    range lies (closed form; everything broadcasts). Triangular: ``a + sqrt(u
    (b-a)(c-a))`` left of the mode, ``b - sqrt((1-u)(b-a)(b-c))`` right of it.

    >>> [round(float(x), 6) for x in quantile(0.0, np.array([1.0, 4.0]), 4.0, 0.5)]
    [1.55051, 2.828427]
    >>> float(quantile(2.0, 2.0, 2.0, 0.9))
    2.0
    """
    if distribution == "uniform":
        return low + u * (high - low)
    if distribution != "triangular":
        raise InputError("distribution", distribution,
                         detail="PERT has no closed-form quantile here; sample it")
    a, c, b = low, likely, high
    if np.ndim(a) == 0 and np.ndim(b) == 0 and a == b:
        return a + 0.0 * u
    with np.errstate(divide="ignore", invalid="ignore"):
        fc = (c - a) / (b - a)
        left = a + np.sqrt(u * ((b - a) * (c - a)))
        right = b - np.sqrt((1.0 - u) * ((b - a) * (b - c)))
        out = np.where(u < fc, left, right)
    return np.where(np.asarray(b) == np.asarray(a), a + 0.0 * u, out)


def make_range(name: str, value: object) -> Range:
    """A checked :class:`Range` from a Range or ``(low, likely, high[, distribution])``
    (for ``uniform``, likely may be None).

    >>> make_range("price", (5, 4, 6))
    Traceback (most recent call last):
    ...
    udfs.core.errors.DomainError: price: low <= likely <= high is needed (got 5, 4, 6)
    """
    if isinstance(value, Range):
        parts: tuple[Any, ...] = (value.low, value.likely, value.high, value.distribution)
    elif isinstance(value, (tuple, list)) and len(value) in (3, 4):
        parts = (*value, "triangular") if len(value) == 3 else tuple(value)
    else:
        raise InputError(name, value, "a range (low, likely, high[, distribution])")
    low, likely, high, dist = parts
    if not isinstance(dist, str) or dist.strip().lower() not in DISTRIBUTIONS:
        raise NotFoundError(name, dist, f"distribution ({', '.join(DISTRIBUTIONS)})",
                            closest(str(dist), DISTRIBUTIONS))
    dist = dist.strip().lower()
    if likely is None and dist == "uniform":
        likely = (float(check(f"{name} low", low, _FINITE))
                  + float(check(f"{name} high", high, _FINITE))) / 2.0
    a = float(check(f"{name} low", low, _FINITE))
    c = float(check(f"{name} likely", likely, _FINITE))
    b = float(check(f"{name} high", high, _FINITE))
    if not a <= c <= b:
        raise DomainError(name, None, detail=f"low <= likely <= high is needed (got {a:g}, "
                          f"{c:g}, {b:g})")
    return Range(a, c, b, dist)


def _checked_ranges(model: Model, ranges: Mapping[str, object]) -> tuple[tuple[str, Range], ...]:
    if not isinstance(ranges, Mapping) or not ranges:
        raise InputError("ranges", ranges, "a mapping input name -> (low, likely, high)")
    out = []
    for name, raw in ranges.items():
        r = make_range(str(name), raw)
        model.check(str(name), np.array([r.low, r.likely, r.high]))
        out.append((str(name), r))
    return tuple(sorted(out))


def input_key(name: str) -> int:
    """The part of an input's seed that comes from its name (the first 8 bytes of
    its SHA-256): the samples of input ``name`` in block ``b`` of a run with seed
    ``s`` come from ``SeedSequence(s, spawn_key=(b, input_key(name)))``."""
    return int.from_bytes(hashlib.sha256(name.encode("utf-8")).digest()[:8], "little")


@dataclass(frozen=True)
class ChunkTask:
    """Samples ``[start, stop)`` of a run (start a multiple of :data:`BLOCK`)."""

    model: Any
    ranges: tuple[tuple[str, Range], ...]
    outputs: tuple[str, ...]
    seed: int
    start: int
    stop: int


class _Draws:
    """The samples of one block of :data:`BLOCK` positions, drawn a slice at a
    time into buffers allocated once.

    Each input keeps its own generator, seeded by ``(seed, block, input)``. The
    uniforms of every input are written into one ``(inputs, slice)`` array
    (``Generator.random(out=...)``), and the inverse distribution function of
    all triangular inputs runs on that array at once, in place and without
    branches: with ``m`` = 1.0 where ``u < (c - a)/(b - a)`` and 0.0 elsewhere,
    ``v = u (b-a)(c-a) m + (1-u)(b-a)(b-c) (1-m)``, ``s = sqrt(v)`` and
    ``x = (a + s) m + (b - s)(1 - m)``. One term of each sum is exactly zero,
    so per sample the result is the same bits as :meth:`Range.quantile` (which
    takes both square roots and picks one with ``np.where``). A masked pick
    (``np.where``, ``copyto(where=)``) costs more than all this arithmetic,
    because the branch it takes is random.
    """

    def __init__(self, ranges: tuple[tuple[str, Range], ...], seed: int, block: int,
                 width: int = SLICE):
        self.names = [name for name, _ in ranges]
        self.gens = [np.random.default_rng(np.random.SeedSequence(seed, spawn_key=(
            block, input_key(name)))) for name in self.names]
        tri, uni, other = [], [], []
        for i, (_, r) in enumerate(ranges):
            if r.distribution == "triangular" and r.high > r.low:
                tri.append(i)
            elif r.distribution == "uniform":
                uni.append(i)
            else:
                other.append(i)  # PERT, and triangular ranges of zero width
        self.ranges = [r for _, r in ranges]
        self.tri, self.uni, self.other = tri, uni, other
        col = np.float64

        def column(values: list[float]) -> Array:
            return np.array(values, dtype=col).reshape(-1, 1)

        t = [self.ranges[i] for i in tri]
        self.t_a = column([r.low for r in t])
        self.t_b = column([r.high for r in t])
        self.t_fc = column([(r.likely - r.low) / (r.high - r.low) for r in t])
        self.t_left = column([(r.high - r.low) * (r.likely - r.low) for r in t])
        self.t_right = column([(r.high - r.low) * (r.high - r.likely) for r in t])
        u = [self.ranges[i] for i in uni]
        self.u_a = column([r.low for r in u])
        self.u_w = column([r.high - r.low for r in u])
        self.tu = np.empty((len(tri), width))  # uniforms, then a + sqrt(...)
        self.tr = np.empty((len(tri), width))  # the result
        self.left = np.empty((len(tri), width))
        self.right = np.empty((len(tri), width))
        self.uu = np.empty((len(uni), width))

    def next(self, m: int) -> dict[str, Array]:
        """The next ``m`` samples of every input (views into the buffers: valid
        until the next call)."""
        out: dict[str, Array] = {}
        if self.tri:
            u, r = self.tu[:, :m], self.tr[:, :m]
            left, right = self.left[:, :m], self.right[:, :m]
            for row, i in enumerate(self.tri):
                self.gens[i].random(out=self.tu[row, :m])
            np.less(u, self.t_fc, out=left, casting="unsafe")  # 1.0 left of the mode
            np.subtract(1.0, left, out=right)
            np.subtract(1.0, u, out=r)
            np.multiply(r, self.t_right, out=r)  # (1 - u)(b - a)(b - c)
            np.multiply(r, right, out=r)
            np.multiply(u, self.t_left, out=u)  # u (b - a)(c - a)
            np.multiply(u, left, out=u)
            np.add(u, r, out=r)
            np.sqrt(r, out=r)
            np.add(self.t_a, r, out=u)  # a + s
            np.multiply(u, left, out=u)
            np.subtract(self.t_b, r, out=r)  # b - s
            np.multiply(r, right, out=r)
            np.add(u, r, out=r)
            for row, i in enumerate(self.tri):
                out[self.names[i]] = r[row]
        if self.uni:
            uu = self.uu[:, :m]
            for row, i in enumerate(self.uni):
                self.gens[i].random(out=self.uu[row, :m])
            np.multiply(uu, self.u_w, out=uu)
            np.add(self.u_a, uu, out=uu)
            for row, i in enumerate(self.uni):
                out[self.names[i]] = uu[row]
        for i in self.other:
            out[self.names[i]] = self.ranges[i].sample(self.gens[i], m)
        return out


def draw(ranges: Mapping[str, object], seed: int, positions: ArrayLike) -> dict[str, Array]:
    """The samples at ``positions`` (0-based sample numbers) of a run with
    ``seed`` and ``ranges``: exactly the values :func:`monte_carlo` feeds the
    model there (the spreadsheet's seeded samples use this).

    >>> r = {"price": (8.0, 10.0, 12.0)}
    >>> mc = monte_carlo(_Echo(), r, 70_000, seed=3, outputs="price")
    >>> bool(draw(r, 3, [0, 69_999])["price"].tolist() == mc.samples["price"][[0, -1]].tolist())
    True
    """
    if not isinstance(seed, (int, np.integer)) or isinstance(seed, bool) or seed < 0:
        raise InputError("seed", seed, "a whole number >= 0")
    checked = tuple(sorted((str(k), make_range(str(k), v)) for k, v in ranges.items()))
    pos = np.asarray(positions)
    if pos.dtype.kind not in "iuf" or not np.all(np.isfinite(pos)) or np.any(pos < 0) or (
            np.any(pos != np.floor(pos))) or np.any(pos >= _MAX_SAMPLES):
        raise DomainError("positions", None, detail=f"sample numbers must be whole numbers "
                          f">= 0 and < {_MAX_SAMPLES:g}")
    flat = pos.astype(np.int64).ravel()
    out = {name: np.empty(flat.shape) for name, _ in checked}
    blocks = flat // BLOCK
    for b in np.unique(blocks).tolist():
        take = blocks == b
        need = int(flat[take].max() % BLOCK) + 1
        d = _Draws(checked, int(seed), b, width=need)
        got = d.next(need)
        for name in out:
            out[name][take] = got[name][flat[take] % BLOCK]
    return {k: v.reshape(pos.shape) for k, v in out.items()}


class _Echo:
    """A model that returns its inputs (for :func:`draw`'s example)."""

    def base(self) -> dict[str, float]:
        return {"price": 10.0}

    def check(self, name: str, value: Any) -> Any:
        return np.asarray(value, dtype=float)

    def __call__(self, values: Mapping[str, Any]) -> dict[str, Any]:
        return {"price": values.get("price", 10.0)}


def run_chunk(task: ChunkTask) -> dict[str, Array]:
    """Draw the chunk's samples (each block of :data:`BLOCK` from generators
    seeded by ``(seed, block, input)``, see :class:`_Draws`) and run the model
    on them, a slice of :data:`SLICE` samples at a time (cache-sized arrays:
    several times faster than whole blocks; the model is element-wise, so the
    numbers are the same)."""
    n = task.stop - task.start
    out = {k: np.empty(n) for k in task.outputs}
    for b in range(task.start // BLOCK, (task.stop - 1) // BLOCK + 1):
        lo, hi = max(b * BLOCK, task.start), min((b + 1) * BLOCK, task.stop)
        draws = _Draws(task.ranges, task.seed, b)
        for s in range(lo, hi, SLICE):
            e = min(s + SLICE, hi)
            res = task.model(draws.next(e - s))
            for k in task.outputs:
                out[k][s - task.start:e - task.start] = res[k]
    return out


#: A runner maps ``fn`` over ``tasks`` and yields ``(task index, result)`` in any order.
Runner = Callable[[Callable[[ChunkTask], dict[str, Array]], Sequence[ChunkTask]],
                  Iterable[tuple[int, dict[str, Array]]]]


def serial_runner(fn: Callable[[ChunkTask], dict[str, Array]], tasks: Sequence[ChunkTask]
                  ) -> Iterable[tuple[int, dict[str, Array]]]:
    """Run the chunks one after the other in this process (numpy)."""
    for i, t in enumerate(tasks):
        yield i, fn(t)


def thread_runner(threads: int = 2) -> Runner:
    """A runner that runs chunks on ``threads`` threads of this process (numpy
    releases the interpreter lock in its array loops, so the cores share the
    work); at most two chunks per thread are in flight.

    >>> r = thread_runner(2)
    >>> sorted(i for i, _ in r(lambda t: t, ["a", "b", "c"]))
    [0, 1, 2]
    """
    count = int(check("threads", threads, POSITIVE_INTEGER))

    def run(fn: Callable[[ChunkTask], dict[str, Array]], tasks: Sequence[ChunkTask]
            ) -> Iterable[tuple[int, dict[str, Array]]]:
        from concurrent.futures import FIRST_COMPLETED, ThreadPoolExecutor, wait

        with ThreadPoolExecutor(max_workers=count) as pool:
            todo = iter(enumerate(tasks))
            running = {}
            for i, t in itertools.islice(todo, 2 * count):
                running[pool.submit(fn, t)] = i
            while running:
                done, _ = wait(running, return_when=FIRST_COMPLETED)
                for f in done:
                    i = running.pop(f)
                    for j, t in itertools.islice(todo, 1):
                        running[pool.submit(fn, t)] = j
                    yield i, f.result()

    return run


def plan_chunks(n: int, chunk_size: int) -> list[tuple[int, int]]:
    """``(start, stop)`` of each chunk (chunk_size a multiple of BLOCK)."""
    return [(s, min(s + chunk_size, n)) for s in range(0, n, chunk_size)]


_SELECT_BINS = 4096


def _lerp(a: float, b: float, t: float) -> float:
    """numpy's linear interpolation between neighbouring order statistics
    (exact at both ends)."""
    d = b - a
    return b - d * (1.0 - t) if t >= 0.5 else a + d * t


def percentiles_of(x: Array, percents: Sequence[float], lo: float | None = None,
                   hi: float | None = None) -> list[float]:
    """Percentiles of ``x`` with linear interpolation between order
    statistics (numpy's default, the spreadsheet's PERCENTILE / PERCENTILE.INC).

    The order statistics are found without sorting or partitioning all of
    ``x``: each value is put in one of 4,096 bins of equal width between the
    minimum and the maximum (a monotone map, so a bin holds a contiguous run of
    the sorted values), the counts locate the bin of each rank, and only that
    bin is partitioned. The values are exactly the order statistics, so the
    result equals ``np.percentile`` (to its interpolation's rounding).

    >>> x = np.random.default_rng(0).random(10_001)
    >>> got = percentiles_of(x, [0, 10, 50, 99.9, 100])
    >>> bool(np.allclose(got, np.percentile(x, [0, 10, 50, 99.9, 100]), rtol=0, atol=1e-15))
    True
    """
    n = int(x.size)
    lo = float(x.min()) if lo is None else lo
    hi = float(x.max()) if hi is None else hi
    if n < 4 * _SELECT_BINS or not (np.isfinite(lo) and np.isfinite(hi)) or lo == hi:
        return [float(v) for v in np.percentile(x, list(percents))]
    scale = _SELECT_BINS / (hi - lo)
    f = np.subtract(x, lo)
    f *= scale
    bins = f.astype(np.intp)
    del f
    np.minimum(bins, _SELECT_BINS - 1, out=bins)
    counts = np.bincount(bins, minlength=_SELECT_BINS)
    ends = np.cumsum(counts)
    sorted_bins: dict[int, Array] = {}

    def order_statistic(rank: int) -> float:
        j = int(np.searchsorted(ends, rank, side="right"))
        if j not in sorted_bins:
            sorted_bins[j] = np.sort(x[bins == j])
        return float(sorted_bins[j][rank - (int(ends[j]) - int(counts[j]))])

    out = []
    for p in percents:
        h = (n - 1) * (float(p) / 100.0)  # numpy's virtual index
        r0 = int(np.floor(h))
        r1 = min(r0 + 1, n - 1)
        out.append(_lerp(order_statistic(r0), order_statistic(r1), h - r0))
    return out


@dataclass(frozen=True)
class Summary:
    """Percentiles, mean, spread and histogram of one output."""

    name: str
    percentiles: Mapping[float, float]
    mean: float
    std: float
    minimum: float
    maximum: float
    counts: Array
    edges: Array


@dataclass(frozen=True)
class MonteCarlo:
    """A Monte Carlo run: its settings, a :class:`Summary` per output, the
    output samples (in sample order) and the model's ``meta`` (price book,
    caution)."""

    n: int
    seed: int
    ranges: tuple[tuple[str, Range], ...]
    summary: Mapping[str, Summary]
    samples: Mapping[str, Array]
    meta: Mapping[str, str] = field(default_factory=dict)


def _probe_outputs(model: Model, ranges: tuple[tuple[str, Range], ...]) -> list[str]:
    out = model({name: np.array([r.likely]) for name, r in ranges})
    return list(out)


def monte_carlo(
    model: Model,
    ranges: Mapping[str, object],
    n: int,
    seed: int,
    outputs: Sequence[str] | str | None = None,
    percentiles: Sequence[float] = (10.0, 50.0, 90.0),
    bins: int = 40,
    chunk_size: int = BLOCK,
    runner: Runner | None = None,
) -> MonteCarlo:
    """Sample ``ranges`` ``n`` times (seeded) through ``model`` and summarise
    ``outputs`` (default: the model's first output, the full cost per kWh
    for a :class:`~udfs.core.cell_cost.CostModel`). ``runner`` runs the chunks
    (default: in this process).

    The same ``seed``, ``n`` and ranges give the same numbers, whatever the
    runner and ``chunk_size`` (a multiple of :data:`BLOCK`)."""
    checked = _checked_ranges(model, ranges)
    count = int(check("n", n, POSITIVE_INTEGER))
    if count > _MAX_SAMPLES:
        raise DomainError("n", count, f"<= {_MAX_SAMPLES:g}")
    if not isinstance(seed, (int, np.integer)) or isinstance(seed, bool) or seed < 0:
        raise InputError("seed", seed, "a whole number >= 0")
    size = int(check("chunk_size", chunk_size, POSITIVE_INTEGER))
    if size % BLOCK:
        raise DomainError("chunk_size", size, f"a multiple of {BLOCK}")
    known = _probe_outputs(model, checked)
    if outputs is None:
        outputs = known[:1]
    wanted = [outputs] if isinstance(outputs, str) else list(outputs)
    for name in wanted:
        if name not in known:
            raise NotFoundError("outputs", name, "output of the model", closest(name, known))
    pcts = [float(check("percentiles", p, _PERCENT)) for p in percentiles]
    nbins = int(check("bins", bins, POSITIVE_INTEGER))
    tasks = [ChunkTask(model, checked, tuple(wanted), int(seed), s, e)
             for s, e in plan_chunks(count, size)]
    samples = {k: np.empty(count) for k in wanted}
    for i, res in (runner or serial_runner)(run_chunk, tasks):
        t = tasks[i]
        for k in wanted:
            samples[k][t.start:t.stop] = res[k]
    summary = {}
    for k, x in samples.items():
        lo, hi = float(x.min()), float(x.max())
        q = percentiles_of(x, pcts, lo, hi)
        counts, edges = np.histogram(x, bins=nbins)
        summary[k] = Summary(k, dict(zip(pcts, q, strict=True)), float(x.mean()),
                             float(x.std()), lo, hi, counts, edges)
    meta_fn = getattr(model, "meta", None)
    meta = dict(meta_fn()) if callable(meta_fn) else {}
    return MonteCarlo(count, int(seed), checked, summary, samples, meta)


# --------------------------------------------------------------------------- tornado


@dataclass(frozen=True)
class TornadoBar:
    """One input swung alone from low to high (the others at likely)."""

    name: str
    low: float
    high: float
    low_output: float
    high_output: float

    @property
    def swing(self) -> float:
        return abs(self.high_output - self.low_output)


@dataclass(frozen=True)
class Tornado:
    """Bars ranked by swing, largest first, around ``base`` (all at likely)."""

    output: str
    base: float
    bars: tuple[TornadoBar, ...]
    meta: Mapping[str, str] = field(default_factory=dict)


def tornado(model: Model, ranges: Mapping[str, object], output: str = "full_USD_kWh"
            ) -> Tornado:
    """Swing each input alone from low to high, the others at likely, in one
    vectorised call; rank by the swing of ``output``."""
    checked = _checked_ranges(model, ranges)
    k = len(checked)
    values = {}
    for j, (name, r) in enumerate(checked):
        col = np.full(2 * k + 1, r.likely)
        col[2 * j], col[2 * j + 1] = r.low, r.high
        values[name] = col
    out = model(values)
    if output not in out:
        raise NotFoundError("output", output, "output of the model", closest(output, list(out)))
    y = np.broadcast_to(np.asarray(out[output], dtype=float), (2 * k + 1,))
    bars = [TornadoBar(name, r.low, r.high, float(y[2 * j]), float(y[2 * j + 1]))
            for j, (name, r) in enumerate(checked)]
    bars.sort(key=lambda b: (-b.swing, b.name))
    meta_fn = getattr(model, "meta", None)
    return Tornado(output, float(y[-1]), tuple(bars),
                   dict(meta_fn()) if callable(meta_fn) else {})
