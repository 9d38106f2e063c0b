"""Serial compiled loops over the solver's per-state pieces, to say where a state's time goes.

Each loop runs on one thread, with scratch allocated once (the per-state loops compiled without reference
counting, as hipeq's kernels), and returns a checksum. They call hipeq's private
kernels exactly as the driver does (``hipeq.solvers._common.evaluate``, ``g0_into``; ``tparams_into``), so a change
of those signatures shows up here first; the benchmark that uses them reports a failure instead of a figure.
"""
from __future__ import annotations

import numpy as np
from numba import njit

from hipeq.models._kernels import tdep_into, tparams_into
from hipeq.solvers._common import WITH_JACOBIAN, WITH_PHI, WITH_REDUCED, evaluate, g0_into


@njit(cache=True)
def loop_per_temperature(code, T, comp, consts, kmat, u_lo, h, table):
    """tparams_into + g0_into per state: what a state at a new temperature pays once (as the driver does)."""
    nc = comp.shape[0]
    return _loop_per_temperature(code, T, comp, consts, kmat, u_lo, h, table, np.empty((nc, nc)), np.empty(nc),
                                 np.empty((nc, nc)), np.empty(nc), np.empty(nc))


@njit(cache=True, _nrt=False)
def _loop_per_temperature(code, T, comp, consts, kmat, u_lo, h, table, aij, bi, daij, dbi, g0):
    acc = 0.0
    for k in range(T.shape[0]):
        tparams_into(code, T[k], comp, consts, kmat, aij, bi, daij, dbi)
        g0_into(T[k], u_lo, h, table, g0)
        acc += aij[0, 0] + g0[0]
    return acc


@njit(cache=True)
def loop_g0(T, u_lo, h, table, nc):
    return _loop_g0(T, u_lo, h, table, np.empty(nc))


@njit(cache=True, _nrt=False)
def _loop_g0(T, u_lo, h, table, g0):
    acc = 0.0
    for k in range(T.shape[0]):
        g0_into(T[k], u_lo, h, table, g0)
        acc += g0[0]
    return acc


@njit(cache=True)
def loop_evaluate(mode, code, T0, P, N, comp, consts, kmat, u_lo, h, table, W):
    """``evaluate`` (amounts -> y, ln phi [+ Jacobian or the reduced Jacobian W^T J W], mu, G) at the temperature
    T0 for every row of N."""
    nc = comp.shape[0]
    aij, daij, bi, dbi = np.empty((nc, nc)), np.empty((nc, nc)), np.empty(nc), np.empty(nc)
    g0 = np.empty(nc)
    tdep_into(code, T0, comp, consts, kmat, aij, bi, daij, dbi)
    g0_into(T0, u_lo, h, table, g0)
    return _loop_evaluate(mode, code, T0, P, N, consts, aij, bi, g0, np.empty(nc), np.zeros(nc),
                          np.empty((nc, nc)), np.empty(nc), W, np.empty((W.shape[1], W.shape[1])),
                          np.zeros((3, nc)), np.ones(nc, dtype=np.bool_))


@njit(cache=True, _nrt=False)
def _loop_evaluate(mode, code, T0, P, N, consts, aij, bi, g0, y, ln_phi, jac, mu, W, M, scratch, active):
    acc = 0.0
    for k in range(N.shape[0]):
        ln_p = np.log(P[k] / 1e5)
        n_t, z, root, g = evaluate(mode, code, T0, P[k], ln_p, N[k], active, g0, aij, bi, consts, y, ln_phi, jac,
                                   mu, W, W.shape[1], M, scratch)
        acc += g + z
    return acc


MODES = {"with_jacobian": WITH_JACOBIAN, "with_reduced": WITH_REDUCED, "with_phi": WITH_PHI}
