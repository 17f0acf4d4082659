"""Drawing chart files in worker processes while the workbook is being written.

matplotlib draws one chart at a time on one core, and an export draws a dozen or more
(PNG and SVG each): on the demo that was a quarter of `traits run`. :class:`Drawing`
hands the drawing calls to up to :data:`WORKERS` forked processes as soon as the charts'
figures are known, so they are drawn while the workbook's sheets are written; ``wait``
returns when every file is written, or raises the first error. The files are the same as
when drawn in turn: each call draws one chart from its own figures and writes its files
atomically.

Where processes cannot be forked (fork is the start method that needs no re-import of
the package), or with one core, the calls run in turn in ``wait``.

A worker ends when the process that started it ends, however it ends: killed with
SIGKILL, the parent cannot stop its pool, and a worker waiting for its next call would
sleep on as an orphan, so each worker ends with its parent
(:func:`extractor.child_processes.end_with_parent`).
"""

from __future__ import annotations

import multiprocessing
import os
import sys
from collections.abc import Callable, Sequence
from concurrent.futures import Future, ProcessPoolExecutor, as_completed
from typing import Any

from extractor.child_processes import end_with_parent
from extractor.progress import track

WORKERS = 2
"""Most worker processes drawing at once (the machines we aim at have two cores or more)."""

Call = tuple[Callable[..., Any], tuple[Any, ...]]
"""A module-level drawing function and its arguments (both picklable)."""


def _workers(n_calls: int) -> int:
    """Return how many worker processes to start for ``n_calls`` calls (0: draw in turn)."""
    if sys.platform != "linux" or "fork" not in multiprocessing.get_all_start_methods():
        return 0
    workers = min(WORKERS, n_calls, os.cpu_count() or 1)
    return workers if workers > 1 else 0


class Drawing:
    """Drawing calls started in worker processes; :meth:`wait` for them to finish."""

    def __init__(self, calls: Sequence[Call], description: str = "Drawing charts") -> None:
        """Start ``calls`` in worker processes (or keep them to run in turn in :meth:`wait`)."""
        self._calls = list(calls)
        self._description = description
        self._pool: ProcessPoolExecutor | None = None
        self._futures: list[Future[Any]] = []
        workers = _workers(len(self._calls))
        if workers:
            fork = multiprocessing.get_context("fork")
            self._pool = ProcessPoolExecutor(
                workers, mp_context=fork, initializer=end_with_parent, initargs=(os.getpid(),)
            )
            self._futures = [self._pool.submit(fn, *args) for fn, args in self._calls]

    def __enter__(self) -> Drawing:
        """Return this drawing; leaving the block stops the workers, cancelling what is left."""
        return self

    def __exit__(self, *exc: object) -> None:
        """Stop the workers: calls not started yet are cancelled (after an error)."""
        if self._pool is not None:
            self._pool.shutdown(wait=True, cancel_futures=True)
            self._pool = None

    def wait(self) -> None:
        """Return when every call has run; raise the first error one of them raised."""
        if self._pool is None:
            for fn, args in track(self._calls, self._description):
                fn(*args)
            return
        try:
            for future in track(
                as_completed(self._futures), self._description, total=len(self._futures)
            ):
                future.result()
        finally:
            self._pool.shutdown(wait=True, cancel_futures=True)
            self._pool = None
