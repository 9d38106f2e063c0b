"""Compilation options shared by hipeq's compiled kernels (numba): the only place that calls ``numba.njit``.

Every decorator here compiles ahead of time into the on-disk cache (``cache=True``) and with numpy's error model
(``error_model="numpy"``): a floating-point division by zero gives inf or NaN, which the kernels detect with
``math.isfinite`` and turn into a status code, instead of raising a Python ``ZeroDivisionError`` from inside
compiled code (which, inside a parallel region, left an exception set and uninitialised answers for the other
states of the batch).

``kernel`` compiles a function that allocates nothing, without numba's reference-counting runtime
(``_nrt=False``). Each array handed to a compiled function otherwise costs an atomic increment and decrement of
its reference count; with the few dozen arrays a solver passes per state that was about two thirds of the time
of an equilibrium state (measured with ``perf``, see docs/performance.md). A function compiled this way cannot
create arrays (``np.empty`` and friends fail to compile); callers that need work buffers allocate them
(``entry``) and pass them down.
"""
from __future__ import annotations

from collections.abc import Callable
from typing import Any, TypeVar

from numba import njit

from hipeq import _cache  # noqa: F401  (sets numba's cache folder: must run before any kernel is decorated)

F = TypeVar("F", bound=Callable[..., Any])


# IEEE-preserving subset of fast-math: fused multiply-add, reciprocal instead of division, reassociation and
# signed-zero freedom. NaN and infinity keep their meaning (no 'nnan'/'ninf'), so the kernels' finiteness
# checks (``math.isfinite``, ``not (x > 0.0)``) still catch a failed evaluation.
FASTMATH = frozenset({"contract", "arcp", "reassoc", "nsz"})
ERROR_MODEL = "numpy"  # x / 0.0 -> inf or NaN (caught by the kernels' finiteness checks), never an exception


def kernel(fn: F) -> F:
    """Compile ``fn`` as an allocation-free kernel: ``njit(cache=True, _nrt=False, fastmath=FASTMATH)``."""
    return njit(cache=True, _nrt=False, fastmath=set(FASTMATH), error_model=ERROR_MODEL)(fn)


def inline_kernel(fn: F) -> F:
    """As :func:`kernel`, and compiled into each caller (numba IR inlining) instead of being called: for the small
    pieces of the model evaluation, where handing over the arrays cost more than the arithmetic."""
    return njit(cache=True, _nrt=False, fastmath=set(FASTMATH), error_model=ERROR_MODEL, inline="always")(fn)


def entry(fn: F) -> F:
    """Compile an entry point that may allocate (work buffers, outputs): ``njit(cache=True)`` with the numpy error
    model. Called from Python; it allocates and hands the buffers down to :func:`kernel` functions."""
    return njit(cache=True, error_model=ERROR_MODEL)(fn)


def parallel_entry(fn: F) -> F:
    """As :func:`entry`, with ``parallel=True``: ``numba.prange`` loops run on numba's thread pool."""
    return njit(cache=True, parallel=True, error_model=ERROR_MODEL)(fn)


def threaded_entry(fn: F) -> F:
    """As :func:`entry`, without the GIL (``nogil=True``): for entry points that Python threads run side by side
    (``hipeq.solvers._driver.solve_many``). Unlike :func:`parallel_entry` it compiles its callees only once more
    (numba's parallel lowering builds a kernel and a wrapper that each recompile everything they call)."""
    return njit(cache=True, nogil=True, error_model=ERROR_MODEL)(fn)
