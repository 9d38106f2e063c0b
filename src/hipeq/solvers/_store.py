"""The frozen compiled form of a reaction system: fixed arrays plus a thread-safe store of feed patterns.

:class:`CompiledSystem` is what the scalar and batch paths of :class:`~hipeq.solvers.system.ReactionSystem` hand
to the compiled core. Its :class:`~hipeq.solvers._arrays.SystemArrays` never change. Feed patterns (which
species are fed, see :mod:`hipeq.solvers._patterns`) are analysed on first sight and kept in a
:class:`PatternStore`: an immutable snapshot (patterns, their ids and the stacked arrays) that is replaced as a
whole under a lock when new patterns arrive. A solve reads one snapshot and keeps it, so two threads that meet
new patterns at the same time never see a half-built set of arrays (a reader either has the old snapshot, whose
ids it uses, or the new one).
"""
from __future__ import annotations

import threading
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass
from typing import Any, NamedTuple

import numpy as np

from hipeq.solvers._arrays import PatternArrays, SystemArrays
from hipeq.solvers._patterns import Pattern, analyse


@dataclass(frozen=True, eq=False)
class _Snapshot:
    patterns: tuple[Pattern, ...]
    ids: dict[int, int]  # pattern key -> position (never mutated once published)
    arrays: PatternArrays | None


def _stack(patterns: Sequence[Pattern]) -> PatternArrays:
    def stacked(name: str, dtype: Any = None) -> np.ndarray:
        # writeable (never written): numba compiles read-only arrays as a type of their own
        return np.array([getattr(p, name) for p in patterns], dtype=dtype)

    return PatternArrays(
        extent_active=stacked("ext_active"), extent_basis=stacked("Zb"), extent_directions=stacked("W"),
        extent_rank=stacked("neff", np.int64), extent_start=stacked("ext_dir"),
        extent_start_extents=stacked("ext_xdir"), gibbs_active=stacked("gibbs_active"), gibbs_rows=stacked("Q"),
        gibbs_rank=stacked("neq", np.int64), gibbs_start=stacked("gibbs_dir"), gibbs_null=stacked("gibbs_null"),
        gibbs_null_rank=stacked("n_null", np.int64))


class PatternStore:
    """Append-only, thread-safe store of analysed feed patterns (see the module docstring).

    Args:
        nu: (nr, nc) stoichiometric matrix; element_null: (nc, k) basis of the null space of the element matrix;
        elements: (ne, nc) element matrix.
    """

    def __init__(self, nu: np.ndarray, element_null: np.ndarray, elements: np.ndarray) -> None:
        self._nu = nu
        self._element_null = element_null
        self._elements = elements
        self._lock = threading.Lock()
        self._snapshot = _Snapshot((), {}, None)

    def lookup(self, keys: Iterable[int]) -> tuple[PatternArrays, list[int], tuple[Pattern, ...]]:
        """The stacked arrays, the id of each key (bit i set when species i is fed) and the patterns, from one
        snapshot; unknown keys are analysed and published first."""
        keys = [int(k) for k in keys]
        snapshot = self._snapshot  # one atomic read: everything below comes from this snapshot
        if not all(k in snapshot.ids for k in keys):
            with self._lock:
                snapshot = self._snapshot
                new = [k for k in dict.fromkeys(keys) if k not in snapshot.ids]
                if new:
                    nc = self._nu.shape[1] if self._nu.size else self._elements.shape[1]
                    added = tuple(analyse(k, nc, self._nu, self._element_null, self._elements) for k in new)
                    patterns = snapshot.patterns + added
                    ids = dict(snapshot.ids)
                    ids.update({k: len(snapshot.patterns) + j for j, k in enumerate(new)})
                    snapshot = _Snapshot(patterns, ids, _stack(patterns))
                    self._snapshot = snapshot
        assert snapshot.arrays is not None
        return snapshot.arrays, [snapshot.ids[k] for k in keys], snapshot.patterns

    def lookup_one(self, key: int) -> tuple[PatternArrays, int, Pattern]:
        """:meth:`lookup` for one key (the scalar path): the stacked arrays, the key's id and its pattern, from
        one snapshot."""
        snapshot = self._snapshot  # one atomic read
        i = snapshot.ids.get(key)
        if i is None:
            arrays, (i,), patterns = self.lookup((key,))
            return arrays, i, patterns[i]
        return snapshot.arrays, i, snapshot.patterns[i]

    @property
    def keys(self) -> tuple[int, ...]:
        """Keys of the patterns analysed so far, in the order they were added."""
        return tuple(p.key for p in self._snapshot.patterns)

    def __getstate__(self) -> dict[str, Any]:
        return {"nu": self._nu, "element_null": self._element_null, "elements": self._elements,
                "patterns": self._snapshot.patterns}

    def __setstate__(self, state: dict[str, Any]) -> None:
        self.__init__(state["nu"], state["element_null"], state["elements"])  # type: ignore[misc]
        patterns = tuple(state["patterns"])
        if patterns:
            self._snapshot = _Snapshot(patterns, {p.key: k for k, p in enumerate(patterns)}, _stack(patterns))


class CompiledSystem:
    """Fixed arrays of a reaction system (:class:`SystemArrays`) and its :class:`PatternStore`; safe to share
    between threads. ``patterns_for(keys)`` is the one way to get pattern arrays for a solve."""

    def __init__(self, arrays: SystemArrays, store: PatternStore) -> None:
        self.arrays = arrays
        self.store = store

    def patterns_for(self, keys: Iterable[int]) -> tuple[PatternArrays, list[int], tuple[Pattern, ...]]:
        """Arrays of every pattern known after ``keys`` were registered, the id of each key, and the patterns
        (one consistent snapshot; see :meth:`PatternStore.lookup`)."""
        return self.store.lookup(keys)

    def pattern_for(self, key: int) -> tuple[PatternArrays, int, Pattern]:
        """``patterns_for`` for one feed key: the arrays of every pattern known, the key's id and its pattern."""
        return self.store.lookup_one(key)


class SolveContext(NamedTuple):
    """Everything the scalar, batch and bound paths need from a :class:`~hipeq.solvers.system.ReactionSystem`,
    built once by the system (``system.context``): the paths read these fields, never the system's private
    members.

    compiled: the frozen arrays and the feed-pattern store. layout: positions in a packed answer row
    (:func:`hipeq.solvers._arrays.answer_layout`). info: provenance for result objects. pattern_bits: 1 << i per
    species (a feed's zero-amount pattern is ``(n0 > 0) @ pattern_bits``). T_min, T_max: the temperature range
    [K] of the species data. user_ln_k: the user's ln K callable checked for shape (T (n,) -> (n, n_reactions)),
    or None. options: ``options(method, scheme, tol, max_iterations, fixed_volume, guess)`` -> the validated,
    cached :class:`~hipeq.solvers._arrays.Options`.
    """

    compiled: CompiledSystem
    layout: Any
    info: Any
    pattern_bits: np.ndarray
    T_min: float
    T_max: float
    user_ln_k: Callable[[np.ndarray], np.ndarray] | None
    options: Callable[..., Any]

    def feed_key(self, n0: np.ndarray) -> int:
        """The zero-amount pattern key of one feed (bit i set when species i is fed)."""
        return int((n0 > 0.0) @ self.pattern_bits)
