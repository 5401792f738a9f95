"""One way to run many independent decisions: in this process, on local processes, or on a
dask.distributed cluster, with the same results in the same order whichever runs them.

:func:`run_tasks` takes a module-level function and a list of picklable items and returns
``[function(item) for item in items]``. The items are cut into chunks that depend only on
their number and the number of workers asked for, never on timing; each chunk is one unit
of work sent to a worker, and its results come back in item order. Because every task is
deterministic (budgets count work, seeds are fixed), the list is identical on one process,
on many, or on a cluster.

:class:`TaskRunner` keeps its processes (or its cluster connection) for several rounds of
tasks, so that a refinement in rounds pays for starting workers once.

A worker lost mid-run is never silently dropped: on local processes a broken pool is
replaced once by a fresh one that runs the chunks not yet finished; on dask every chunk may
be retried (``retries=``) on another worker. When that fails too, :class:`ExecutorError`
says so. dask is imported only when a cluster address is given (``pip install ".[cluster]"``).

Items travel by pickle: exact numbers, and a case's family (a few kilobytes: coefficients,
box, limits), as map cells, allocation designs and yield chunks send it; no open files or
other live resources.
"""

from __future__ import annotations

import math
import os
import re
from collections.abc import Callable, Sequence
from typing import Any, TypeVar

from ..errors import ExecutorError, InputError

__all__ = ["CLUSTER_VARIABLE", "ExecutorError", "TaskRunner", "check_cluster_address", "chunks_of",
           "default_workers", "run_tasks"]

#: The environment variable the command line reads a cluster address from.
CLUSTER_VARIABLE = "ROBUST_CLUSTER"
#: Chunks per worker: small enough to balance uneven tasks, large enough to amortise sending.
CHUNKS_PER_WORKER = 4
#: Attempts of a chunk on dask beyond the first, when its worker is lost.
DASK_RETRIES = 2

Item = TypeVar("Item")
Result = TypeVar("Result")
Progress = Callable[[int, int], None]


def default_workers() -> int:
    """All cores this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # not on Linux
        return max(1, os.cpu_count() or 1)


def chunks_of(count: int, workers: int) -> list[range]:
    """Consecutive index ranges covering ``range(count)``: about ``CHUNKS_PER_WORKER`` per
    worker, fixed by ``count`` and ``workers`` alone (never by timing)."""
    if count <= 0:
        return []
    size = max(1, math.ceil(count / (max(1, workers) * CHUNKS_PER_WORKER)))
    return [range(start, min(start + size, count)) for start in range(0, count, size)]


def _run_chunk(function: Callable[[Any], Any], items: Sequence[Any]) -> list[Any]:
    """One unit of work on a worker: the function over a chunk's items, in order."""
    return [function(item) for item in items]


def run_tasks(function: Callable[[Item], Result], items: Sequence[Item], workers: int | None = None,
              cluster: str | None = None, progress: Progress | None = None) -> list[Result]:
    """``[function(item) for item in items]``, computed sequentially, on local processes, or
    on a dask.distributed cluster.

    Parameters
    ----------
    function
        A module-level (picklable) function of one item; it must be deterministic.
    items
        Picklable items (strings, numbers, Fractions, tuples and dicts of them).
    workers
        Local processes; None: all cores; 1: in this process, no pool. With ``cluster`` it
        only sets the chunk size (which never changes a result).
    cluster
        A dask.distributed scheduler address such as ``"tcp://10.0.0.5:8786"``; the workers
        must have robust installed. None: local.
    progress
        Called in this process as ``progress(finished_items, total_items)`` after each chunk.

    Returns
    -------
    list
        The results in the order of ``items``.

    Raises
    ------
    ExecutorError
        When a chunk's worker is lost again after its retry, or the cluster cannot be reached.

    Examples
    --------
    >>> from robust.analysis.executor import run_tasks
    >>> run_tasks(abs, [-3, 1, -2], workers=1)
    [3, 1, 2]
    """
    with TaskRunner(workers, cluster) as runner:
        return runner.run(function, items, progress)


#: A scheduler address as dask.distributed takes it: an optional protocol, a host (a name, an
#: IPv4 address or an IPv6 address in brackets) and a port.
_ADDRESS = re.compile(r"(?:[a-z][a-z0-9+]*://)?(?:\[[0-9A-Fa-f:.]+\]|[A-Za-z0-9._-]+):[0-9]{1,5}\Z")


def check_cluster_address(address: str) -> str:
    """The address, checked before any work: ``tcp://HOST:PORT`` (or ``HOST:PORT``).

    Raises
    ------
    InputError
        For anything else, with what to write instead.

    Examples
    --------
    >>> check_cluster_address("tcp://10.0.0.5:8786")
    'tcp://10.0.0.5:8786'
    """
    if not isinstance(address, str) or not _ADDRESS.match(address.strip()) \
            or int(address.rsplit(":", 1)[1]) > 65535:
        raise InputError("--cluster", "not a scheduler address", "tcp://HOST:PORT, e.g. tcp://10.0.0.5:8786",
                         address)
    return address.strip()


class TaskRunner:
    """Where tasks run, kept open for several calls of :meth:`run` (use it in a ``with``).

    Parameters are those of :func:`run_tasks`.
    """

    def __init__(self, workers: int | None = None, cluster: str | None = None) -> None:
        if workers is not None and workers < 1:
            raise InputError("--workers", "must be at least 1", "a positive number of processes", workers)
        if cluster is not None:
            check_cluster_address(cluster)
        self.workers = workers if workers is not None else default_workers()
        self.cluster = cluster
        self._pool: Any = None
        self._client: Any = None

    def __enter__(self) -> TaskRunner:
        return self

    def __exit__(self, *_exc: object) -> None:
        self.close()

    def close(self) -> None:
        """Stop the local processes, or leave the cluster (which keeps running)."""
        if self._pool is not None:
            self._pool.shutdown(cancel_futures=True)
            self._pool = None
        if self._client is not None:
            self._client.close()
            self._client = None

    def run(self, function: Callable[[Item], Result], items: Sequence[Item],
            progress: Progress | None = None) -> list[Result]:
        """``[function(item) for item in items]`` in item order (see :func:`run_tasks`)."""
        items = list(items)
        parts = [[items[i] for i in chunk] for chunk in chunks_of(len(items), self.workers)]
        if self.cluster is not None:
            results = self._on_cluster(function, parts, progress, len(items))
        elif self.workers == 1 or len(parts) <= 1:
            results = []
            done = 0
            for part in parts:
                results.append(_run_chunk(function, part))
                done += len(part)
                if progress is not None:
                    progress(done, len(items))
        else:
            results = self._on_processes(function, parts, progress, len(items))
        return [result for part in results for result in part]

    def _new_pool(self, function) -> Any:
        from concurrent.futures import ProcessPoolExecutor
        from multiprocessing import get_all_start_methods, get_context

        # forkserver: workers start from a clean process, not a copy of this one and its threads
        context = get_context("forkserver" if "forkserver" in get_all_start_methods() else None)
        if context.get_start_method() == "forkserver":  # import the task's module once, in the server
            context.set_forkserver_preload([function.__module__])
        return ProcessPoolExecutor(max_workers=self.workers, mp_context=context)

    def _on_processes(self, function, parts: list[list], progress: Progress | None, total: int) -> list[list]:
        """The chunks on the local process pool; a broken pool is replaced once."""
        from concurrent.futures import as_completed
        from concurrent.futures.process import BrokenProcessPool

        results: dict[int, list] = {}
        done = 0
        for attempt in range(2):
            waiting = [i for i in range(len(parts)) if i not in results]
            if not waiting:
                break
            if self._pool is None:
                self._pool = self._new_pool(function)
            try:
                futures = {self._pool.submit(_run_chunk, function, parts[i]): i for i in waiting}
                for future in as_completed(futures):
                    index = futures[future]
                    results[index] = future.result()
                    done += len(parts[index])
                    if progress is not None:
                        progress(done, total)
            except BrokenProcessPool:
                self._pool.shutdown(cancel_futures=True)
                self._pool = None
                if attempt == 1:
                    lost = sum(1 for i in range(len(parts)) if i not in results)
                    raise ExecutorError(f"a worker process was lost twice; {lost} chunk(s) of work not done "
                                        "(out of memory? try fewer --workers)") from None
        return [results[i] for i in range(len(parts))]

    def _on_cluster(self, function, parts: list[list], progress: Progress | None, total: int) -> list[list]:
        """The chunks on a dask.distributed cluster; a chunk whose worker dies is retried."""
        address = self.cluster
        try:
            from distributed import Client
            from distributed.scheduler import KilledWorker
        except ImportError:
            raise InputError("--cluster", "needs dask.distributed, which is not installed",
                             'pip install "robust[cluster]" (or drop --cluster)', address) from None
        if self._client is None:
            try:
                self._client = Client(address, timeout="20s", set_as_default=False)
            except (OSError, TimeoutError, ValueError, TypeError) as error:
                raise ExecutorError(f"--cluster: cannot reach the scheduler at {address} ({error})") from None
        futures = [self._client.submit(_run_chunk, function, part, retries=DASK_RETRIES, pure=False)
                   for part in parts]
        results: dict[int, list] = {}
        done = 0
        for i, future in enumerate(futures):  # in order: progress lags a little, results do not
            try:
                results[i] = future.result()
            except KilledWorker:
                raise ExecutorError(f"--cluster: a chunk of work lost its worker {DASK_RETRIES + 1} times; "
                                    "stopped rather than leave it out") from None
            done += len(parts[i])
            if progress is not None:
                progress(done, total)
        return [results[i] for i in range(len(parts))]
