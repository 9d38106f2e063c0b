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


def kernel(fn: F) -> F:
    """Compile ``fn`` as an allocation-free kernel: ``njit(cache=True, _nrt=False)``."""
    return njit(cache=True, _nrt=False)(fn)
