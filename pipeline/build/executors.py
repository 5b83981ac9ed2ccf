"""Where a build's period jobs run: in this process, in a local process pool, or on Dask.

The store keeps a single writer. The building process reads one period's vote matrix at a
time, hands it to an executor, and writes each result back as it returns, in submission order.
At most ``window`` jobs are in flight (default: twice the workers), so a body with decades of
periods is streamed, never held in memory at once.

Every job is :func:`~blocwatch.pipeline.build.compute.compute_period` on a matrix: pure, seeded by
a SHA-256 of (seed, body, period), so the numbers do not depend on where it ran. Integer
agreement counts are exact in float32 whatever the BLAS thread count, so serial, pool and
cluster runs store the same values.

Kinds
-----
``local`` with ``jobs=1`` (the default)
    runs each job in this process.
``local`` with ``jobs=N > 1``
    a pool of N worker processes (``forkserver``: workers do not inherit the open store),
    each limited to ``cores // N`` BLAS threads so they do not oversubscribe the machine.
    A script that builds with N > 1 needs the usual ``if __name__ == "__main__":`` guard:
    worker processes import the main module.
``dask``
    submits each job to a ``dask.distributed`` scheduler at ``scheduler``
    (e.g. ``tcp://10.0.0.5:8786``), or to a local cluster of ``jobs`` worker processes when no
    address is given. Needs the ``blocwatch[dask]`` extra on the client and every worker.
"""

from __future__ import annotations

import collections
import multiprocessing
import os
import time
from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass
from typing import Any

from blocwatch.pipeline.errors import UsageError

EXECUTOR_KINDS = ("local", "dask")
DEFAULT_JOBS = 1


@dataclass(frozen=True)
class ExecutorSpec:
    """What to run period jobs on (see the module docstring for the kinds)."""

    kind: str = "local"
    jobs: int = DEFAULT_JOBS
    scheduler: str | None = None
    window: int | None = None  # jobs in flight; default 2 × workers

    def __post_init__(self):
        if self.kind not in EXECUTOR_KINDS:
            raise UsageError(f"executor {self.kind!r}", "is not known",
                             f"use one of: {', '.join(EXECUTOR_KINDS)}")
        if int(self.jobs) != self.jobs or self.jobs < 1:
            raise UsageError(f"jobs {self.jobs!r}", "is not a positive whole number",
                             "pass --jobs 1 or more")
        if self.scheduler is not None and self.kind != "dask":
            raise UsageError(f"scheduler {self.scheduler!r}", "only applies to Dask",
                             "add --executor dask, or drop --scheduler")

    @property
    def in_flight(self) -> int:
        return self.window or 2 * self.jobs


class Executor:
    """Base: ``map(fn, items)`` yields ``fn(item)`` in order with a bounded number in flight."""

    def __init__(self, spec: ExecutorSpec):
        self.spec = spec

    def submit(self, fn: Callable, item: Any):  # -> a future with .result()
        raise NotImplementedError

    def map(self, fn: Callable, items: Iterable) -> Iterator:
        pending: collections.deque = collections.deque()
        for item in items:
            pending.append(self.submit(fn, item))
            if len(pending) >= self.spec.in_flight:
                yield pending.popleft().result()
        while pending:
            yield pending.popleft().result()

    def close(self) -> None:
        pass

    def __enter__(self) -> Executor:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


class _Done:
    """An already computed result, shaped like a future."""

    def __init__(self, value):
        self._value = value

    def result(self):
        return self._value


class SerialExecutor(Executor):
    """Each job in this process, one after the other (nothing is held back)."""

    def submit(self, fn, item):
        return _Done(fn(item))

    def map(self, fn, items):
        for item in items:
            yield fn(item)


def _limit_threads(threads: int) -> None:
    """Worker initializer: cap BLAS/OpenMP threads so N workers share the cores."""
    from threadpoolctl import threadpool_limits

    threadpool_limits(limits=threads)


class PoolExecutor(Executor):
    """A local pool of worker processes."""

    def __init__(self, spec: ExecutorSpec):
        from concurrent.futures import ProcessPoolExecutor

        super().__init__(spec)
        threads = max(1, (os.cpu_count() or 1) // spec.jobs)
        method = "forkserver" if "forkserver" in multiprocessing.get_all_start_methods() \
            else "spawn"
        ctx = multiprocessing.get_context(method)
        if method == "forkserver":  # import the heavy modules once, not in every worker
            ctx.set_forkserver_preload(["blocwatch.pipeline.build.compute"])
        self._pool = ProcessPoolExecutor(max_workers=spec.jobs, mp_context=ctx,
                                         initializer=_limit_threads, initargs=(threads,))

    def submit(self, fn, item):
        return self._pool.submit(fn, item)

    def close(self) -> None:
        self._pool.shutdown(wait=True, cancel_futures=True)


def _distributed():
    try:
        import distributed
    except ImportError:
        raise UsageError("executor dask", "needs dask.distributed, which is not installed",
                         "pip install 'blocwatch[dask]' on this machine and every worker"
                         ) from None
    return distributed


class DaskExecutor(Executor):
    """Jobs on a dask.distributed cluster (or a local one when no scheduler is named)."""

    def __init__(self, spec: ExecutorSpec):
        super().__init__(spec)
        distributed = _distributed()
        self._cluster = None
        try:
            if spec.scheduler:
                self._client = distributed.Client(spec.scheduler, timeout="20s")
            else:
                self._cluster = distributed.LocalCluster(
                    n_workers=spec.jobs, threads_per_worker=1, processes=True,
                    dashboard_address=":0")  # any free port: never clash with a running one
                self._client = distributed.Client(self._cluster)
        except (OSError, TimeoutError) as exc:
            raise UsageError(f"scheduler {spec.scheduler!r}", f"cannot be reached ({exc})",
                             "check the address (tcp://HOST:PORT) and that the scheduler "
                             "runs") from exc

    def submit(self, fn, item):
        return self._client.submit(fn, item, pure=False)

    def close(self) -> None:
        self._client.close()
        if self._cluster is not None:
            self._cluster.close()


def make_executor(spec: ExecutorSpec | None = None) -> Executor:
    """An open executor for ``spec`` (serial when None); close it, or use it as a context."""
    spec = spec or ExecutorSpec()
    if spec.kind == "dask":
        return DaskExecutor(spec)
    return PoolExecutor(spec) if spec.jobs > 1 else SerialExecutor(spec)


@dataclass(frozen=True)
class PeriodJob:
    """What a worker needs to compute one period: picklable, no store handle."""

    options: Any  # BuildOptions
    version: str

    def __call__(self, vm) -> tuple[Any, float]:
        from blocwatch.pipeline.build.compute import compute_period

        t0 = time.perf_counter()
        return compute_period(vm, self.options, self.version), time.perf_counter() - t0
