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
from numba.core import config as numba_config
from numba.core.registry import CPUDispatcher

from hipeq import _cache  # noqa: F401  (sets numba's cache folder: must run before any kernel is decorated)

F = TypeVar("F", bound=Callable[..., Any])


# IEEE-preserving subset of fast-math: fused multiply-add, reciprocal instead of division, reassociation and
# signed-zero freedom. NaN and infinity keep their meaning (no 'nnan'/'ninf'), so the kernels' finiteness
# checks (``math.isfinite``, ``not (x > 0.0)``) still catch a failed evaluation.
FASTMATH = frozenset({"contract", "arcp", "reassoc", "nsz"})
ERROR_MODEL = "numpy"  # x / 0.0 -> inf or NaN (caught by the kernels' finiteness checks), never an exception


# Every compiled function here is built without numba's C-callable wrapper (``no_cfunc_wrapper``): hipeq never
# passes a compiled function as a first-class value, and the wrapper was lowered, optimised and machine-coded for
# each of them on the first run.
_KERNEL_OPTIONS = dict(_nrt=False, error_model=ERROR_MODEL, no_cfunc_wrapper=True)


def kernel(fn: F) -> F:
    """Compile ``fn`` as an allocation-free kernel: ``njit(cache=True, _nrt=False, fastmath=FASTMATH,
    nogil=True)``. Called from Python it releases the GIL, so that Python threads run kernels side by side (the
    batch solver's chunks, ``hipeq.solvers._driver.solve_many``)."""
    return njit(cache=True, nogil=True, **_options())(fn)


class _InnerDispatcher(CPUDispatcher):
    """numba's dispatcher for a function compiled without a Python entry point: compiled callers link its machine
    code as usual, a call from Python raises instead of jumping to the entry point that was never built."""

    def __call__(self, *args: Any, **kwargs: Any) -> Any:
        raise TypeError(f"hipeq: {self.py_func.__module__}.{self.py_func.__qualname__} is compiled without a Python "
                        f"entry point (hipeq._jit.inner_kernel) and runs only inside other compiled functions; "
                        f"call it from a kernel, or decorate it with kernel if Python needs it")


def inner_kernel(fn: F) -> F:
    """As :func:`kernel`, for a function that only other compiled functions call: compiled without numba's Python
    entry point (``no_cpython_wrapper``). That entry point unboxes every argument from Python objects; for the
    solver's functions, which take a dozen or more arrays and named tuples, it was about a sixth of the machine
    code of the first answer and a fifth of its cold compile (docs/performance.md, "Compiled helpers without a
    Python entry"). Called from Python the function raises ``TypeError`` (:class:`_InnerDispatcher`); without the
    JIT it is the plain Python function."""
    if numba_config.DISABLE_JIT:
        return fn
    options = _options(nopython=True, no_cpython_wrapper=True)
    dispatcher = _InnerDispatcher(py_func=fn, locals={}, targetoptions=options)
    dispatcher.enable_caching()
    return dispatcher  # type: ignore[return-value]


def inline_kernel(fn: F) -> F:
    """As :func:`kernel`, and compiled into each caller (numba IR inlining) instead of being called: for the small
    pieces of the model evaluation, where handing over the arrays cost more than the arithmetic."""
    return njit(cache=True, inline="always", **_options())(fn)


def entry(fn: F) -> F:
    """Compile an entry point that may allocate (work buffers, outputs): ``njit(cache=True, nogil=True)`` with the
    numpy error model. Called from Python; it allocates and hands the buffers down to :func:`kernel` functions,
    and releases the GIL as kernels do (``hipeq._threads``)."""
    return njit(cache=True, nogil=True, error_model=ERROR_MODEL, no_cfunc_wrapper=True)(fn)


def _options(**extra: Any) -> dict[str, Any]:
    """The kernels' numba options (a fresh copy with its own fast-math set), with ``extra`` added."""
    return dict(_KERNEL_OPTIONS, fastmath=set(FASTMATH), **extra)


class DirectCall:
    """A call site of one compiled function whose argument *types* are fixed by a few long-lived objects (the
    ``keys``): the machine code found for them is then called directly, without the dispatcher's typing of every
    argument on every call.

    numba's dispatcher types each argument of each call to choose the compiled version (numba's reference,
    "Dispatcher objects"); for the scalar solver's named tuples of arrays that was about 5 us of a ~20 us call
    (benchmarks/bench_profile.py, docs/performance.md). Here the first call for a set of keys goes through the
    dispatcher (compiling if needed), the version it chose is looked up from the same argument types
    (``dispatcher.typeof_pyval``, ``dispatcher.overloads``) and kept; later calls with the *same key objects*
    (identity, not equality) call it directly.

    Contract of the call site: every argument's numba type follows from the keys (the other arguments are the
    call site's own buffers of fixed dtype, dimension and layout). A direct call skips numba's type check, so an
    argument of another type would be read with the wrong layout; tests/solvers/test_direct_call.py checks the
    scalar path's argument types over its options. Without the JIT (``NUMBA_DISABLE_JIT=1``) or with a numba
    without these attributes, every call goes through the plain function."""

    def __init__(self, dispatcher: Callable[..., Any], capacity: int = 64) -> None:
        self._dispatcher = dispatcher
        self._direct = hasattr(dispatcher, "overloads") and hasattr(dispatcher, "typeof_pyval")
        self._entries: dict[tuple[int, ...], tuple[tuple[Any, ...], Callable[..., Any]]] = {}
        self._capacity = capacity

    def __call__(self, keys: tuple[Any, ...], *args: Any) -> Any:
        # an entry holds its key objects, so while it exists no other object can have their ids: equal ids are
        # the same objects
        found = self._entries.get(tuple(map(id, keys))) if self._direct else None
        if found is not None:
            return found[1](*args)
        result = self._dispatcher(*args)
        if self._direct:
            self._remember(keys, args)
        return result

    def signature(self, args: tuple[Any, ...]) -> tuple[Any, ...]:
        """The numba types of ``args``, as the dispatcher types them to choose a compiled version."""
        return tuple(self._dispatcher.typeof_pyval(a) for a in args)

    def _remember(self, keys: tuple[Any, ...], args: tuple[Any, ...]) -> None:
        compiled = self._dispatcher.overloads.get(self.signature(args))
        if compiled is None:
            return
        entries = dict(self._entries) if len(self._entries) < self._capacity else {}
        entries[tuple(map(id, keys))] = (tuple(keys), compiled.entry_point)
        self._entries = entries  # replaced whole: a reader on another thread sees the old or the new dict
