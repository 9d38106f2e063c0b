"""A solver bound to one reaction system and one set of options, for equilibrium calls inside other programs'
loops: arrays in, caller-owned arrays filled, no result objects.

>>> import numpy as np, hipeq
>>> system = hipeq.ReactionSystem(["N2", "H2", "NH3"], eos="PR")
>>> solve = system.state_solver()                     # fixed T and P; state_solver(fixed_volume=True) for V
>>> T = np.array([700.0, 750.0]); P = np.array([2e7, 2e7]); feed = np.array([[1.0, 3.0, 0.0]] * 2)
>>> y = np.empty((2, 3)); status = np.empty(2, dtype=np.int64)
>>> solve(T, P, feed, y, status)                      # returns the number of states that did not converge
0

It solves exactly as :meth:`~hipeq.solvers.system.ReactionSystem.equilibrium` does (the same compiled core, the
same answers and status codes, standard state the ideal gas at 1 bar), and skips what a loop does not need: unit
strings, broadcasting, result objects and messages. Its work arrays are kept between calls (one solver per
thread: an instance is not safe to share between threads; the system is). Cost per call: see
docs/performance.md.
"""
from __future__ import annotations

import threading
from typing import TYPE_CHECKING

import numpy as np

from hipeq.errors import InputError
from hipeq.models.inputs import P_MAX
from hipeq.solvers import _arrays as A
from hipeq.solvers import _driver as D
from hipeq.solvers._batch import solve_rows
from hipeq.solvers.result import Status

if TYPE_CHECKING:
    from hipeq.solvers.system import ReactionSystem

__all__ = ["StateSolver"]


class StateSolver:
    """``solver(T, P_or_V, feed, y_out, status_out=None, amounts_out=None, P_out=None) -> number failed``.

    Args (at construction): system; method ("extent" or "gibbs"); fixed_volume (the second argument of each
    call is V [m3] instead of P [Pa]); tol; max_iterations; see :meth:`ReactionSystem.equilibrium`.
    """

    def __init__(self, system: ReactionSystem, method: str = "extent", fixed_volume: bool = False,
                 tol: float = 1e-11, max_iterations: int = 100) -> None:
        self.system = system
        self.context = system.context
        self.options = self.context.options(method, "coupled", tol, max_iterations, bool(fixed_volume), False)
        self._nc = len(system.species_names)
        self._layout = self.context.layout
        self._out = np.empty((0, self._layout.width))
        self._ints = np.empty((0, A.INT_COLUMNS), dtype=np.int64)
        self._owner = threading.get_ident()

    def __call__(self, T: np.ndarray, PV: np.ndarray, feed: np.ndarray, y_out: np.ndarray,
                 status_out: np.ndarray | None = None, amounts_out: np.ndarray | None = None,
                 P_out: np.ndarray | None = None) -> int:
        """Solve the states (T[k], PV[k], feed[k]) and write their mole fractions into ``y_out`` (and status
        codes, amounts [mol], pressures [Pa] into the other arrays given).

        T [K] (n,), PV (n,) [Pa] or [m3], feed (n, n_species) [mol] in the order of ``system.species_names``:
        C-contiguous float64 arrays (others are converted, which costs a copy). A state out of range gets status
        6 (INVALID_INPUT), as in a batch; nothing raises for one bad state. Returns the number of states whose
        status is not 0.
        """
        if threading.get_ident() != self._owner:
            raise InputError("StateSolver", "an instance belongs to the thread that made it; make one per thread "
                                            "with system.state_solver()")
        Tf = np.ascontiguousarray(T, dtype=np.float64)
        PVf = np.ascontiguousarray(PV, dtype=np.float64)
        N0 = np.ascontiguousarray(feed, dtype=np.float64)
        n = Tf.shape[0] if Tf.ndim == 1 else -1
        if n < 1 or PVf.shape != (n,) or N0.shape != (n, self._nc) or np.shape(y_out) != (n, self._nc):
            raise InputError("T", f"needs T and P (or V) of shape (n,), feed and y_out of shape (n, {self._nc}) "
                                  f"with n >= 1; got {np.shape(T)}, {np.shape(PV)}, {np.shape(feed)}, "
                                  f"{np.shape(y_out)}")
        if n == 1 and self.context.user_ln_k is None:  # one state: the scalar core, no thread-pool launch
            return self._one(Tf, PVf, N0, y_out, status_out, amounts_out, P_out)
        if self._out.shape[0] < n:
            self._out = np.empty((n, self._layout.width))
            self._ints = np.empty((n, A.INT_COLUMNS), dtype=np.int64)
        out, ints, _, _ = solve_rows(self.system, Tf, PVf, N0, False, self.options, self._out[:n], self._ints[:n])
        layout = self._layout
        y_out[...] = out[:, layout.y:layout.y + self._nc]
        if status_out is not None:
            status_out[...] = ints[:, A.STATUS]
        if amounts_out is not None:
            amounts_out[...] = out[:, layout.amounts:layout.amounts + self._nc]
        if P_out is not None:
            P_out[...] = out[:, layout.P]
        return int(np.count_nonzero(ints[:, A.STATUS]))

    def _one(self, Tf: np.ndarray, PVf: np.ndarray, N0: np.ndarray, y_out: np.ndarray,
             status_out: np.ndarray | None, amounts_out: np.ndarray | None, P_out: np.ndarray | None) -> int:
        """One state through ``_driver.solve_one`` (as a scalar ``equilibrium`` call), with the same validity
        rules as a batch."""
        context = self.context
        row = self._out[0] if self._out.shape[0] else np.empty(self._layout.width)
        ints = self._ints[0] if self._ints.shape[0] else np.empty(A.INT_COLUMNS, dtype=np.int64)
        valid = np.empty(1, dtype=np.uint8)
        D.valid_states(Tf, PVf, N0, context.T_min, context.T_max, P_MAX, self.options.fixed_volume,
                       valid)
        n0 = N0[0]
        if valid[0]:
            patterns, (pat,), _ = context.compiled.patterns_for((context.feed_key(n0),))
            D.solve_one(context.compiled.arrays, patterns, float(Tf[0]), float(PVf[0]), n0, pat, _EMPTY, _EMPTY,
                        self.options, row, ints)
        else:
            total = float(np.sum(np.maximum(n0, 0.0)))
            row[:] = 0.0
            row[self._layout.amounts:self._layout.amounts + self._nc] = np.maximum(n0, 0.0)
            if total > 0.0 and np.isfinite(total):
                row[self._layout.y:self._layout.y + self._nc] = np.maximum(n0, 0.0) / total
            ints[:] = 0
            ints[A.STATUS] = Status.INVALID_INPUT
        layout = self._layout
        y_out[0] = row[layout.y:layout.y + self._nc]
        if status_out is not None:
            status_out[0] = ints[A.STATUS]
        if amounts_out is not None:
            amounts_out[0] = row[layout.amounts:layout.amounts + self._nc]
        if P_out is not None:
            P_out[0] = row[layout.P]
        return int(ints[A.STATUS] != 0)


_EMPTY = np.zeros(0)
