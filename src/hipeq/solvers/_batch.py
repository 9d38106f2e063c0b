"""The Python face of batch solves: broadcast and check the inputs, call the parallel compiled core, wrap.

Shapes that do not broadcast raise InputError; out-of-range values mark single states INVALID_INPUT (status 6)
and never raise. The states are handed to ``_driver.solve_many`` in blocks of ``BLOCK`` (so that the user's ln K
callable and the temporary arrays stay bounded), and inside a block in chunks of consecutive states per thread
(warm starts run along a chunk).
"""
from __future__ import annotations

import math
from collections.abc import Mapping
from typing import TYPE_CHECKING, Any

import numpy as np

from hipeq.errors import InputError
from hipeq.models.inputs import P_MAX
from hipeq.solvers import _arrays as A
from hipeq.solvers import _driver as D
from hipeq.solvers.result import BatchResult, batch_result
from hipeq.units import to_si

if TYPE_CHECKING:
    from hipeq.solvers.system import ReactionSystem

from hipeq.solvers.system import feed_amount  # noqa: E402  (system imports this module lazily)

BLOCK = 1 << 16
MAX_CHUNK = 128
CHUNKS_PER_BLOCK = 16  # chunks of a block (independent of the thread count: answers do not depend on it)
MAX_STATES = 50_000_000  # one call; larger maps are split by the caller (analysis layer)




def _feed_arrays(system: ReactionSystem, feed: Any) -> tuple[list[tuple[int, np.ndarray]], list[tuple[int, ...]]]:
    nc = len(system.species_names)
    if isinstance(feed, Mapping):
        if not feed:
            raise InputError("feed", "is empty; give at least one species with a positive amount [mol]")
        cols: dict[int, np.ndarray] = {}
        for name, amount in feed.items():
            j = system.species_index(name)
            arr = np.asarray(feed_amount(name, amount), dtype=float)
            cols[j] = cols[j] + arr if j in cols else arr
        items = sorted(cols.items())
        return items, [a.shape for _, a in items]
    arr = np.asarray(to_si(feed, "amount", "feed"), dtype=float)
    if arr.ndim == 0 or arr.shape[-1] != nc:
        raise InputError("feed", f"an array feed needs species along the last axis ({nc}, in the order "
                                 f"{list(system.species_names)}), got shape {arr.shape}")
    return [(j, arr[..., j]) for j in range(nc)], [arr.shape[:-1]]


class _InvalidReasons(Mapping[int, str]):
    """Reason text for an invalid state, computed on demand from the inputs kept in the result."""

    def __init__(self, T_min: float, T_max: float, T: np.ndarray, PV: np.ndarray, N0: np.ndarray,
                 fixed_volume: bool, valid: np.ndarray, bad_ln_k: np.ndarray) -> None:
        self._args = (T_min, T_max, T, PV, N0, fixed_volume)
        self._valid = valid  # uint8, 0 where the state was not solved
        self._bad_ln_k = bad_ln_k  # bool, True where the user's ln K was not finite

    def __getitem__(self, k: int) -> str:
        T_min, T_max, T, PV, N0, fixed_volume = self._args
        if self._valid[k]:
            raise KeyError(k)
        reasons = []
        t = float(T[k])
        if not (T_min <= t <= T_max):
            reasons.append(f"T = {t!r} K is outside {T_min:g}-{T_max:g} K")
        if self._bad_ln_k.size and self._bad_ln_k[k]:
            reasons.append(f"the ln_K callable returned a value that is not finite at T = {t!r} K")
        v = float(PV[k])
        if fixed_volume and not (v > 0.0 and math.isfinite(v)):
            reasons.append(f"V = {v!r} m3 must be finite and > 0")
        if not fixed_volume and not (0.0 < v <= P_MAX):
            reasons.append(f"P = {v!r} Pa must be finite, > 0 and <= {P_MAX:g}")
        row = N0[k]
        if not np.all(np.isfinite(row)) or np.any(row < 0.0):
            reasons.append("feed amounts must be finite and >= 0 mol")
        elif not row.sum() > 0.0:
            reasons.append("feed amounts are all zero")
        return "; ".join(reasons)

    def __iter__(self):
        return iter(np.flatnonzero(self._valid == 0).tolist())

    def __len__(self) -> int:
        return int(self._valid.size - np.count_nonzero(self._valid))


def neighbour_order(T: np.ndarray, PV: np.ndarray, pats: np.ndarray) -> np.ndarray:
    """A permutation of the states that puts similar states next to each other, so that warm starts along a
    chunk start close to the answer (``pats``: one pattern per state, or one for all): grouped by zero-feed
    pattern, then a boustrophedon ("snake") path over about sqrt(n) bands of temperature, ordered by ln P (or
    ln V) within a band, alternating direction."""
    n = T.size
    if n < 64:
        return np.arange(n, dtype=np.int64)
    key = np.empty(n)
    D.order_keys(T, PV, pats, max(1, int(math.sqrt(n))), key)  # one compiled pass; a single sort key
    return np.argsort(key).astype(np.int64)


def solve_rows(system: ReactionSystem, Tf: np.ndarray, PVf: np.ndarray, N0: np.ndarray, scalar_feed: bool,
               options: A.Options, out: np.ndarray | None = None, ints: np.ndarray | None = None
               ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Solve the states (Tf[k], PVf[k], N0[k]) (C-contiguous float64; ``scalar_feed``: every row of N0 is the
    same) into packed answer rows ``out`` (n, width) and ``ints`` (n, INT_COLUMNS), allocated when not given.
    Returns (out, ints, valid, bad_ln_k): ``valid`` 0 where a state's input was out of range, ``bad_ln_k`` True
    where the user's ln K was not finite (empty without a user ln K)."""
    context = system.context
    compiled = context.compiled
    n = Tf.shape[0]
    nr = len(system.reactions)
    fixed_volume = options.fixed_volume
    # validity (one compiled pass) and feed patterns (block by block, so that temporaries stay bounded by BLOCK):
    # peak memory stays flat in the number of states
    valid = np.empty(n, dtype=np.uint8)
    D.valid_states(Tf, PVf, N0, context.T_min, context.T_max, P_MAX, fixed_volume, valid)
    bits = context.pattern_bits
    if scalar_feed:  # one feed for every state: one pattern of zero amounts, given once
        keys = [int((N0[0] > 0.0) @ bits)]
    else:
        keys = []
        for a in range(0, n, BLOCK):
            b = min(n, a + BLOCK)
            ok = valid[a:b] != 0
            if ok.any():
                keys.extend(np.unique((N0[a:b][ok] > 0.0) @ bits).tolist())
    patterns, ids, _ = compiled.patterns_for(keys)  # one snapshot for the whole batch
    lookup = dict(zip(keys, ids))
    if scalar_feed:
        pats = np.array(ids, dtype=np.int64)
    else:
        pats = np.zeros(n, dtype=np.int64)
        for a in range(0, n, BLOCK):
            b = min(n, a + BLOCK)
            ok = valid[a:b] != 0
            if ok.any():
                unique, inverse = np.unique((N0[a:b][ok] > 0.0) @ bits, return_inverse=True)
                pats[a:b][ok] = np.array([lookup[int(k)] for k in unique], dtype=np.int64)[inverse]
    layout = context.layout
    if out is None:
        out = np.empty((n, layout.width))  # one packed row per state (hipeq.solvers._arrays.answer_layout)
    if ints is None:
        ints = np.empty((n, A.INT_COLUMNS), dtype=np.int64)
    bad_ln_k = np.zeros(n if context.user_ln_k is not None else 0, dtype=bool)
    for a in range(0, n, BLOCK):
        b = min(n, a + BLOCK)
        ln_k_user = np.zeros((0, nr))
        if context.user_ln_k is not None:
            ln_k_user = np.zeros((b - a, nr))
            ok = valid[a:b] != 0
            if ok.any():
                values = context.user_ln_k(np.ascontiguousarray(Tf[a:b][ok]))
                finite = np.all(np.isfinite(values), axis=1)
                values[~finite] = 0.0
                ln_k_user[ok] = values
                rows_bad = np.flatnonzero(ok)[~finite]
                valid[a:b][rows_bad] = 0  # that state is invalid input, its message names T
                bad_ln_k[a:b][rows_bad] = True
        chunk = max(1, min(MAX_CHUNK, -(-(b - a) // CHUNKS_PER_BLOCK)))
        block_pats = pats if scalar_feed else pats[a:b]
        order = neighbour_order(Tf[a:b], PVf[a:b], block_pats)
        D.solve_many(compiled.arrays, patterns, Tf[a:b], PVf[a:b], N0[a:b], block_pats, ln_k_user, valid[a:b],
                     options, chunk, order, out[a:b], ints[a:b])
    return out, ints, valid, bad_ln_k


def solve_batch(system: ReactionSystem, feed: Any, T: Any, value: Any, fixed_volume: bool, method: str,
                scheme: str, tol: float, max_iterations: int) -> BatchResult:
    """Body of :meth:`ReactionSystem.equilibrium_batch` (see there); T [K] and value (P [Pa] or V [m3]) are
    already SI numbers or arrays."""
    field = "V" if fixed_volume else "P"
    T_arr = np.asarray(T, dtype=float)
    PV_arr = np.asarray(value, dtype=float)
    cols, feed_shapes = _feed_arrays(system, feed)
    try:
        shape = np.broadcast_shapes(T_arr.shape, PV_arr.shape, *feed_shapes)
    except ValueError:
        raise InputError("T", f"T {T_arr.shape}, {field} {PV_arr.shape} and the feed {feed_shapes} do not "
                              "broadcast to one shape of states") from None
    n = int(np.prod(shape)) if shape else 1
    if n == 0:
        raise InputError("T", f"no states: T {T_arr.shape}, {field} {PV_arr.shape} and the feed {feed_shapes} "
                              "broadcast to an empty shape; give at least one value")
    if n > MAX_STATES:
        raise InputError("T", f"{n} states in one call is more than {MAX_STATES}; split the work into calls of at "
                              "most that many states")
    context = system.context
    options = context.options(method, scheme, tol, max_iterations, fixed_volume, False)
    nc = len(system.species_names)
    # fresh writeable C-contiguous copies: one compiled signature whatever the caller passed
    Tf = np.array(np.broadcast_to(T_arr, shape).reshape(n), dtype=np.float64, order="C")
    PVf = np.array(np.broadcast_to(PV_arr, shape).reshape(n), dtype=np.float64, order="C")
    N0 = np.zeros((n, nc))
    for j, arr in cols:
        N0[:, j] = np.broadcast_to(arr, shape).reshape(n)
    scalar_feed = all(arr.ndim == 0 for _, arr in cols)
    out, ints, valid, bad_ln_k = solve_rows(system, Tf, PVf, N0, scalar_feed, options)
    for arr in (out, ints, Tf, PVf, N0):
        arr.flags.writeable = False
    reasons = _InvalidReasons(context.T_min, context.T_max, Tf, PVf, N0, fixed_volume, valid, bad_ln_k)
    return batch_result(context.info, context.layout, out, ints, shape, Tf, N0, method, scheme, fixed_volume, reasons)
