"""Tests for the executor (:mod:`robust.analysis.executor`): the same results in the same
order whichever runs the tasks, and a lost worker retried rather than its work dropped.

The reference for every result is Python's own ``[f(x) for x in items]`` (common practice,
no source); the exact decisions behind them are checked in tests/test_designmap.py.
"""

from __future__ import annotations

import os
from fractions import Fraction

import pytest

from robust.analysis.executor import TaskRunner, chunks_of, run_tasks
from robust.errors import InputError


def square_fraction(x: str) -> str:
    """A module-level task: exact, picklable in and out."""
    return str(Fraction(x) ** 2)


def die_once(item: tuple[str, int]) -> int:
    """Kill the worker process the first time it runs (a marker file remembers), then work."""
    marker, value = item
    if value == 3 and not os.path.exists(marker):
        with open(marker, "w") as handle:
            handle.write("lost once")
        os._exit(1)
    return value * 10


@pytest.mark.parametrize("count", [0, 1, 7, 64, 65])
@pytest.mark.parametrize("workers", [1, 2, 5])
def test_chunks_cover_every_item_once_in_order(count, workers):
    """The chunks are consecutive, cover range(count) once, and depend on the counts alone."""
    chunks = chunks_of(count, workers)
    assert [i for chunk in chunks for i in chunk] == list(range(count))
    assert chunks == chunks_of(count, workers)


def test_results_are_in_item_order_on_one_and_two_processes():
    """run_tasks equals the list comprehension sequentially and on a process pool, and the
    progress counts every finished task."""
    items = [f"{k}/7" for k in range(-20, 21)]
    expected = [square_fraction(x) for x in items]
    seen: list[tuple[int, int]] = []
    assert run_tasks(square_fraction, items, workers=1) == expected
    assert run_tasks(square_fraction, items, workers=2, progress=lambda d, t: seen.append((d, t))) == expected
    assert seen[-1] == (len(items), len(items))
    assert [d for d, _ in seen] == sorted(d for d, _ in seen)


def test_a_lost_worker_is_retried_on_a_fresh_pool(tmp_path):
    """A worker that dies mid-run breaks the pool; the unfinished chunks run again on a new
    one and no result is missing."""
    marker = str(tmp_path / "lost")
    items = [(marker, v) for v in range(8)]
    with TaskRunner(workers=2) as runner:
        assert runner.run(die_once, items) == [v * 10 for v in range(8)]
    assert os.path.exists(marker)


def test_workers_below_one_are_refused():
    """--workers 0 is bad input, not an empty run."""
    with pytest.raises(InputError, match="at least 1"):
        run_tasks(abs, [1], workers=0)
