"""Validation of thermodynamic states (T, P, y) before they reach the compiled kernels.

Allowed ranges (a sanity check, not a claim of model validity): 1 K <= T <= 6000 K, 0 < P <= 1e10 Pa, mole
fractions finite, >= 0 and summing to 1 within 1e-8. Errors are :class:`hipeq.errors.InputError` naming the
field, the offending state and the allowed range.
"""
from __future__ import annotations

from typing import Any

import numpy as np

from hipeq.errors import InputError
from hipeq.models._states import STATES_OK, check_states

__all__ = ["T_MIN", "T_MAX", "P_MAX", "SUM_TOLERANCE", "StateArrays", "state_arrays"]

T_MIN = 1.0  # [K]
T_MAX = 6000.0  # [K]
P_MAX = 1e10  # [Pa]
SUM_TOLERANCE = 1e-8  # allowed |sum(y) - 1|

StateArrays = tuple[tuple[int, ...], np.ndarray, np.ndarray, np.ndarray]


def _index(shape: tuple[int, ...], flat_index: int) -> str:
    """Text of the multi-index of ``flat_index`` in ``shape``: "3" or "(1, 2)"."""
    index = tuple(int(k) for k in np.unravel_index(flat_index, shape))
    return str(index[0]) if len(index) == 1 else str(index)


def _numbers(value: Any, field: str) -> np.ndarray:
    try:
        array = np.asarray(value, dtype=np.float64)
    except (TypeError, ValueError):
        raise InputError(field, f"must be a number or an array of numbers, got {value!r}") from None
    return array


def _check_range(array: np.ndarray, field: str, low: float, high: float, low_open: bool, unit: str) -> None:
    bad = ~np.isfinite(array) | (array > high) | ((array <= low) if low_open else (array < low))
    if bad.any():
        k = int(np.flatnonzero(bad)[0])
        value = float(array.flat[k])
        rule = f"{'>' if low_open else '>='} {low:g} {unit} and <= {high:g} {unit}"
        where = f" at index {_index(array.shape, k)}" if array.shape else ""
        raise InputError(field, f"must be finite, {rule}; got {value!r}{where}")


def _check_fractions(y: np.ndarray, names: tuple[str, ...]) -> None:
    lead = y.shape[:-1]
    rows = y.reshape(-1, y.shape[-1])

    def row(k: int) -> str:
        return f" in row {_index(lead, k)}" if lead else ""

    finite = np.isfinite(rows).all(axis=-1)
    if not finite.all():
        k = int(np.flatnonzero(~finite)[0])
        raise InputError("y", f"mole fractions must be finite{row(k)}; got {rows[k].tolist()}")
    negative = rows < 0.0
    if negative.any():
        k, i = (int(v) for v in np.argwhere(negative)[0])
        raise InputError("y", f"mole fractions must be >= 0; {names[i]} is {float(rows[k, i])!r}{row(k)}")
    sums = rows.sum(axis=-1)
    off = np.abs(sums - 1.0) > SUM_TOLERANCE
    if off.any():
        k = int(np.flatnonzero(off)[0])
        raise InputError("y", f"mole fractions must sum to 1 within {SUM_TOLERANCE:g}; the sum{row(k)} is "
                              f"{float(sums[k])!r}")


def state_arrays(T: Any, P: Any, y: Any, names: tuple[str, ...]) -> StateArrays:
    """Validate and broadcast T [K], P [Pa] and mole fractions y (shape (..., nc)) for ``names``.

    Returns (shape, T, P, Y): the broadcast state shape and C-contiguous float64 arrays of shapes (n,), (n,),
    (n, nc) with n = prod(shape); Y is a fresh copy normalised to sum exactly to 1 (it already does within
    1e-8). The checks run compiled; the detailed messages are built only when one fails.

    Raises:
        InputError: field ``T``, ``P`` or ``y`` (or ``T, P, y`` for shapes that do not broadcast).
    """
    nc = len(names)
    T_arr = _numbers(T, "T")
    P_arr = _numbers(P, "P")
    y_arr = _numbers(y, "y")
    if y_arr.ndim == 0 or y_arr.shape[-1] != nc:
        raise InputError("y", f"last axis must hold {nc} mole fractions ({', '.join(names)}), "
                              f"got shape {y_arr.shape}")
    if T_arr.ndim == 0 and P_arr.ndim == 0 and y_arr.ndim == 1:  # one state: the common, latency-bound case
        shape: tuple[int, ...] = ()
        T_flat, P_flat, Y = np.array(T_arr.reshape(1)), np.array(P_arr.reshape(1)), y_arr.reshape(1, nc).copy()
    else:
        try:
            shape = np.broadcast_shapes(T_arr.shape, P_arr.shape, y_arr.shape[:-1])
        except ValueError:
            raise InputError("T, P, y", f"state shapes do not broadcast: T {T_arr.shape}, P {P_arr.shape}, "
                                        f"y {y_arr.shape} (y's last axis is the species axis)") from None
        n = int(np.prod(shape, dtype=np.int64))
        # fresh writeable copies, as for one state (a read-only caller's array, or a broadcast view, would
        # otherwise compile the state kernels a second time, for read-only arrays)
        T_flat = np.array(np.broadcast_to(T_arr, shape).reshape(n), order="C")
        P_flat = np.array(np.broadcast_to(P_arr, shape).reshape(n), order="C")
        Y = np.array(np.broadcast_to(y_arr, shape + (nc,)).reshape(n, nc), order="C", copy=True)
    if check_states(T_flat, P_flat, Y, T_MIN, T_MAX, P_MAX, SUM_TOLERANCE) != STATES_OK:
        _check_range(T_arr, "T", T_MIN, T_MAX, False, "K")
        _check_range(P_arr, "P", 0.0, P_MAX, True, "Pa")
        _check_fractions(y_arr, names)
        raise InputError("T, P, y", "invalid state")  # unreachable: the checks above name the field
    return shape, T_flat, P_flat, Y
