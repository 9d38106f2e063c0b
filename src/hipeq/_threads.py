"""Running a compiled kernel over contiguous ranges of many states on Python threads.

hipeq's kernels release the GIL (``hipeq._jit.kernel``, ``hipeq._jit.entry``), so Python threads run them side by
side: the batch solver's ranges of chunks (``hipeq.solvers._driver.solve_many``) and the state properties of the
public ``fugacity_coefficients`` call (``hipeq.models.eos``). This replaces numba's parallel loops, whose
compilation (the parallel pass and its thread-pool glue) took seconds on a first run, for no gain here: each
range is one compiled call. The thread count is numba's (``numba.get_num_threads()``, ``NUMBA_NUM_THREADS``), so
one setting governs every thread hipeq starts.
"""
from __future__ import annotations

import threading
from collections.abc import Callable
from concurrent.futures import ThreadPoolExecutor

import numba

_pool: ThreadPoolExecutor | None = None
_pool_workers = 0
_pool_lock = threading.Lock()


def thread_count(units: int) -> int:
    """Threads to use for ``units`` independent pieces of work: numba's thread count, at most ``units``, at
    least 1."""
    return max(1, min(numba.get_num_threads(), units))


def run_in_ranges(units: int, threads: int, task: Callable[[int, int], None]) -> None:
    """Call ``task(first, last)`` on ``threads`` contiguous ranges that together cover units 0 .. units - 1, in
    parallel: the calling thread takes the first range, a process-wide pool the others. Returns when every range
    is done; an exception raised by a range is raised here."""
    if threads <= 1 or units <= 1:
        task(0, units)
        return
    bounds = [units * t // threads for t in range(threads + 1)]
    pool = _thread_pool(threads)
    done = [pool.submit(task, bounds[t], bounds[t + 1]) for t in range(1, threads)]
    try:
        task(bounds[0], bounds[1])
    finally:
        for job in done:
            job.result()


def _thread_pool(threads: int) -> ThreadPoolExecutor:
    """A process-wide pool with at least ``threads - 1`` workers (the calling thread is the other one)."""
    global _pool, _pool_workers
    with _pool_lock:
        if _pool is None or _pool_workers < threads - 1:
            if _pool is not None:
                _pool.shutdown(wait=False)
            _pool_workers = threads - 1
            _pool = ThreadPoolExecutor(max_workers=_pool_workers, thread_name_prefix="hipeq")
        return _pool
