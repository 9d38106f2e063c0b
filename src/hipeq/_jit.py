"""Compilation options shared by hipeq's compiled kernels (numba).

``kernel`` compiles a function that allocates nothing: ahead-of-time cached (``cache=True``) and without numba's
reference-counting runtime (``_nrt=False``). Each array handed to a compiled function otherwise costs an atomic
increment and decrement of its reference count; with the few dozen arrays a solver passes per state that was
about two thirds of the time of an equilibrium state (measured with ``perf``, see docs/performance.md). A
function compiled this way cannot create arrays (``np.empty`` and friends fail to compile); callers that need
work buffers allocate them (``njit(cache=True)``) and pass them down.
"""
from __future__ import annotations

from collections.abc import Callable
from typing import Any, TypeVar

from numba import njit

F = TypeVar("F", bound=Callable[..., Any])


# IEEE-preserving subset of fast-math: fused multiply-add, reciprocal instead of division, reassociation and
# signed-zero freedom. NaN and infinity keep their meaning (no 'nnan'/'ninf'), so the kernels' finiteness
# checks (``math.isfinite``, ``not (x > 0.0)``) still catch a failed evaluation.
FASTMATH = frozenset({"contract", "arcp", "reassoc", "nsz"})


def kernel(fn: F) -> F:
    """Compile ``fn`` as an allocation-free kernel: ``njit(cache=True, _nrt=False, fastmath=FASTMATH)``."""
    return njit(cache=True, _nrt=False, fastmath=set(FASTMATH))(fn)


def inline_kernel(fn: F) -> F:
    """As :func:`kernel`, and compiled into each caller (numba IR inlining) instead of being called: for the small
    pieces of the model evaluation, where handing over the arrays cost more than the arithmetic."""
    return njit(cache=True, _nrt=False, fastmath=set(FASTMATH), inline="always")(fn)
