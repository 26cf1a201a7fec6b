"""Monte Carlo chunks on Dask: a local cluster of N worker processes, or an
existing scheduler by its address. Optional: ``pip install "cellwright[cluster]"``.

:class:`DaskRunner` is a runner for :func:`udfs.core.risk.monte_carlo`: the
core plans the chunks and seeds each block of samples by ``(seed, block,
input)``, so the numbers equal the in-process numpy run bit for bit whatever
the workers. Memory stays bounded: at most ``in_flight`` chunks are submitted
at a time (default two per worker thread), each result is copied into the
output arrays and released as soon as it arrives; the model is sent to every
worker once.

Usage::

    from udfs.app.cluster import DaskRunner
    with DaskRunner(workers=4) as runner:            # or DaskRunner(address="tcp://host:8786")
        mc = monte_carlo(model, ranges, 10_000_000, seed=1, runner=runner)
"""

from __future__ import annotations

import dataclasses
import resource
from collections.abc import Callable, Iterator, Sequence
from types import TracebackType
from typing import Any

from udfs.core.errors import DomainError, InputError
from udfs.core.risk import ChunkTask

__all__ = ["EXTRA_HINT", "DaskRunner", "dask_available"]

EXTRA_HINT = 'the Dask runner needs the optional extra: pip install "cellwright[cluster]"'


def dask_available() -> bool:
    """True when ``distributed`` (the ``cluster`` extra) can be imported."""
    try:
        import distributed  # noqa: F401
    except ImportError:
        return False
    return True


def _run_with_model(fn: Callable[[ChunkTask], Any], model: Any, task: ChunkTask) -> Any:
    """On a worker: put the model (sent once) back into the task and run it."""
    return fn(dataclasses.replace(task, model=model))


def _peak_rss_bytes() -> int:
    """Peak resident memory of this process (Linux reports KiB)."""
    return int(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss) * 1024


class DaskRunner:
    """Runs Monte Carlo chunks on Dask (see the module docstring).

    ``workers``: start a local cluster of that many worker processes
    (``threads_per_worker`` threads each, ``memory_limit`` per worker), or
    ``address``: connect to a running scheduler. Use it as a context manager.
    """

    def __init__(self, workers: int | None = None, address: str | None = None,
                 threads_per_worker: int = 1, memory_limit: str | None = "2GiB",
                 in_flight: int | None = None) -> None:
        if (workers is None) == (address is None):
            raise InputError("workers", workers, detail="give exactly one of workers and address")
        if workers is not None and (not isinstance(workers, int) or workers < 1):
            raise DomainError("workers", workers, "a whole number >= 1")
        if address is not None and (not isinstance(address, str) or not address.strip()):
            raise InputError("address", address, "a scheduler address such as 'tcp://host:8786'")
        if not isinstance(threads_per_worker, int) or threads_per_worker < 1:
            raise DomainError("threads_per_worker", threads_per_worker, "a whole number >= 1")
        if in_flight is not None and (not isinstance(in_flight, int) or in_flight < 1):
            raise DomainError("in_flight", in_flight, "a whole number >= 1")
        self.workers = workers
        self.address = address
        self.threads_per_worker = threads_per_worker
        self.memory_limit = memory_limit
        self.in_flight = in_flight
        self._cluster: Any = None
        self._client: Any = None

    # ---------------------------------------------------------------- life cycle

    def __enter__(self) -> DaskRunner:
        try:
            from distributed import Client, LocalCluster
        except ImportError as exc:
            raise InputError("runner", "dask", detail=EXTRA_HINT) from exc
        if self.address is not None:
            self._client = Client(self.address)
        else:
            self._cluster = LocalCluster(
                n_workers=self.workers, threads_per_worker=self.threads_per_worker,
                processes=True, memory_limit=self.memory_limit, dashboard_address=None,
            )
            self._client = Client(self._cluster)
        return self

    def __exit__(self, kind: type[BaseException] | None, exc: BaseException | None,
                 tb: TracebackType | None) -> None:
        self.close()

    def close(self) -> None:
        if self._client is not None:
            self._client.close()
            self._client = None
        if self._cluster is not None:
            self._cluster.close()
            self._cluster = None

    @property
    def client(self) -> Any:
        if self._client is None:
            raise InputError("runner", None, detail="use the DaskRunner in a with-block")
        return self._client

    def threads(self) -> int:
        """Worker threads of the cluster."""
        return max(1, sum(self.client.nthreads().values()))

    def peak_memory(self) -> dict[str, int]:
        """Peak resident memory (bytes) of each worker process so far."""
        return dict(self.client.run(_peak_rss_bytes))

    # ---------------------------------------------------------------- running

    def __call__(self, fn: Callable[[ChunkTask], Any], tasks: Sequence[ChunkTask]
                 ) -> Iterator[tuple[int, Any]]:
        """Submit the chunks (a bounded number at a time); yield ``(index,
        result)`` as they finish."""
        from distributed import as_completed

        if not tasks:
            return
        client = self.client
        models = {id(t.model) for t in tasks}
        if len(models) != 1:
            raise InputError("tasks", None, detail="all chunks of a run share one model")
        model = client.scatter(tasks[0].model, broadcast=True)
        light = [dataclasses.replace(t, model=None) for t in tasks]
        limit = self.in_flight or 2 * self.threads()
        index = {}
        pending = iter(range(len(light)))

        def submit() -> Any:
            i = next(pending, None)
            if i is None:
                return None
            f = client.submit(_run_with_model, fn, model, light[i], pure=False)
            index[f.key] = i
            return f

        first = [f for f in (submit() for _ in range(limit)) if f is not None]
        done = as_completed(first)
        for future in done:
            i = index.pop(future.key)
            result = future.result()
            future.release()
            nxt = submit()
            if nxt is not None:
                done.add(nxt)
            yield i, result
