"""Serial compiled loops over hipeq's model kernels, used to time the pieces of a state one by one.

Each loop runs on one thread (no prange) and returns a checksum so that the work cannot be optimised away.
Scratch arrays are allocated once per loop, outside the timed per-state work, the way a solver kernel would hold
them (``hipeq.models._states.states_range`` does the same, once per range of states).
The per-state loops are compiled without numba's reference counting (``_nrt=False``, as hipeq's own kernels, see
``hipeq._jit``), so that the figures are those of the kernels and not of handing arrays to them.
"""
from __future__ import annotations

import numpy as np
from numba import njit

INNER = dict(cache=True, _nrt=False)

from hipeq.models._kernels import ln_phi_dn_tp, ln_phi_tp, tdep_into


@njit(cache=True)
def loop_tdep(code, T, comp, consts, kmat):
    """tdep_into once per temperature T[k]."""
    nc = comp.shape[0]
    return _loop_tdep(code, T, comp, consts, kmat, np.empty((nc, nc)), np.empty(nc), np.empty((nc, nc)),
                      np.empty(nc))


@njit(**INNER)
def _loop_tdep(code, T, comp, consts, kmat, aij, bi, daij, dbi):
    acc = 0.0
    for k in range(T.shape[0]):
        tdep_into(code, T[k], comp, consts, kmat, aij, bi, daij, dbi)
        acc += aij[0, 0] + bi[0]
    return acc


@njit(cache=True)
def loop_ln_phi_fixed_T(code, T, P, Y, comp, consts, kmat):
    """ln_phi_tp for every (P[k], Y[k]) at the single temperature T[0] (tdep paid once)."""
    nc = comp.shape[0]
    aij, daij, bi, dbi = np.empty((nc, nc)), np.empty((nc, nc)), np.empty(nc), np.empty(nc)
    tdep_into(code, T[0], comp, consts, kmat, aij, bi, daij, dbi)
    return _loop_ln_phi_fixed_T(code, T, P, Y, consts, aij, bi, np.empty(nc))


@njit(**INNER)
def _loop_ln_phi_fixed_T(code, T, P, Y, consts, aij, bi, out):
    acc = 0.0
    for k in range(P.shape[0]):
        z, root = ln_phi_tp(code, T[0], P[k], Y[k], aij, bi, consts, out)
        acc += out[0] + z
    return acc


@njit(cache=True)
def loop_tdep_ln_phi(code, T, P, Y, comp, consts, kmat):
    """tdep_into + ln_phi_tp per state: the work of one ln phi evaluation at a new (T, P, y)."""
    nc = comp.shape[0]
    return _loop_tdep_ln_phi(code, T, P, Y, comp, consts, kmat, np.empty((nc, nc)), np.empty(nc),
                             np.empty((nc, nc)), np.empty(nc), np.empty(nc))


@njit(**INNER)
def _loop_tdep_ln_phi(code, T, P, Y, comp, consts, kmat, aij, bi, daij, dbi, out):
    acc = 0.0
    for k in range(T.shape[0]):
        tdep_into(code, T[k], comp, consts, kmat, aij, bi, daij, dbi)
        z, root = ln_phi_tp(code, T[k], P[k], Y[k], aij, bi, consts, out)
        acc += out[0] + z
    return acc


@njit(cache=True)
def loop_ln_phi_dn_fixed_T(code, T, P, Y, comp, consts, kmat):
    """ln_phi_dn_tp (ln phi and the composition Jacobian, what a Newton step needs) at T[0]."""
    nc = comp.shape[0]
    aij, daij, bi, dbi = np.empty((nc, nc)), np.empty((nc, nc)), np.empty(nc), np.empty(nc)
    tdep_into(code, T[0], comp, consts, kmat, aij, bi, daij, dbi)
    return _loop_ln_phi_dn_fixed_T(code, T, P, Y, consts, aij, bi, np.empty(nc), np.empty((nc, nc)),
                                   np.empty((2, nc)))


@njit(**INNER)
def _loop_ln_phi_dn_fixed_T(code, T, P, Y, consts, aij, bi, out, jac, scratch):
    acc = 0.0
    for k in range(P.shape[0]):
        z, root = ln_phi_dn_tp(code, T[0], P[k], Y[k], aij, bi, consts, out, jac, scratch)
        acc += out[0] + jac[0, 0] + z
    return acc
