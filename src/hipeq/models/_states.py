"""Compiled helpers of the public ``fugacity_coefficients`` call: the state check, a range of states, the finish.

Private layer (arrays and scalars in, status codes out, nothing raises). The Python face turns a non-zero status
into an :class:`hipeq.errors.InputError` with the detailed message (:mod:`hipeq.models.inputs`).
"""
from __future__ import annotations

import math

import numpy as np

from hipeq._jit import entry

from hipeq.models._kernels import (MODEL_CUBIC, MODEL_LEWIS_RANDALL, OMEGA_B, ROOT_INVALID, ROOT_LIQUID, R,
                                   effective_critical, residual_dT_tp, tdep_into)

STATES_OK = 0
STATES_BAD_T = 1
STATES_BAD_P = 2
STATES_BAD_Y = 3
ROOT_OVERFLOW = -2  # set by finish_states: the state's results are not all finite
PARALLEL_MIN_STATES = 32  # below this many states the Python face runs one ``states_range`` on its own thread


@entry
def check_states(T, P, Y, t_min, t_max, p_max, sum_tolerance):
    """Status of states (T[k], P[k], Y[k]): STATES_OK, or the first failing field's code. On success Y is
    normalised in place to sum exactly to 1."""
    n, nc = Y.shape
    for k in range(n):
        t = T[k]
        if not (math.isfinite(t) and t_min <= t <= t_max):
            return STATES_BAD_T
        p = P[k]
        if not (math.isfinite(p) and 0.0 < p <= p_max):
            return STATES_BAD_P
        s = 0.0
        for i in range(nc):
            v = Y[k, i]
            if not (math.isfinite(v) and v >= 0.0):
                return STATES_BAD_Y
            s += v
        if abs(s - 1.0) > sum_tolerance:
            return STATES_BAD_Y
    for k in range(n):
        s = 0.0
        for i in range(nc):
            s += Y[k, i]
        for i in range(nc):
            Y[k, i] /= s
    return STATES_OK


@entry
def states_range(code, T, P, Y, comp, consts, kmat, first, last, ln_phis, dln_phis_dT, Z, roots, g_res, h_res):
    """States first .. last - 1 of (T[k], P[k], Y[k]): ln phi_i, d ln phi_i/dT, Z, the root code, g_res/RT and
    h_res/RT (``_kernels.residual_dT_tp``; the model's a_ij, b_i and their T-derivatives from ``tdep_into``).
    Runs without the GIL: the Python face calls it once per thread's range of states
    (``hipeq._threads.run_in_ranges``), one call for a few states."""
    nc = Y.shape[1]
    aij = np.empty((nc, nc))
    daij = np.empty((nc, nc))
    bi = np.empty(nc)
    dbi = np.empty(nc)
    for k in range(first, last):
        tdep_into(code, T[k], comp, consts, kmat, aij, bi, daij, dbi)
        Z[k], roots[k], g_res[k], h_res[k] = residual_dT_tp(code, T[k], P[k], Y[k], aij, bi, daij, dbi, consts,
                                                            ln_phis[k], dln_phis_dT[k])


@entry
def finish_states(code, T, P, Y, comp, consts, liquid_ratio, ln_phis, phis, dln_phis_dT, Z, volume, roots, g_res,
                  h_res):
    """After ``states_range``: phi_i = exp(ln phi_i), v = Z R T / P [m3/mol], h_res/RT ->
    h_res [J/mol], and ROOT_LIQUID also where v/b < ``liquid_ratio`` (mixture co-volume of the cubic models,
    b = sum_i y_i Omega_b R T_ci / P_ci with the effective critical constants). A state whose results are not all
    finite (e.g. the virial correlation far below its temperature range, where exp(ln phi) overflows) is marked
    ROOT_OVERFLOW. Returns the index of the first ROOT_INVALID or ROOT_OVERFLOW state, or -1."""
    n, nc = Y.shape
    first_invalid = -1
    for k in range(n):
        if roots[k] != ROOT_INVALID:
            volume[k] = Z[k] * R * T[k] / P[k]
            h_res[k] *= R * T[k]
            finite = math.isfinite(volume[k]) and math.isfinite(g_res[k]) and math.isfinite(h_res[k])
            for i in range(nc):
                phis[k, i] = math.exp(ln_phis[k, i])
                finite = finite and math.isfinite(phis[k, i]) and math.isfinite(dln_phis_dT[k, i])
            if not finite:
                roots[k] = ROOT_OVERFLOW
        if roots[k] < 0:
            if first_invalid < 0:
                first_invalid = k
            continue
        if code == MODEL_CUBIC or code == MODEL_LEWIS_RANDALL:
            b = 0.0
            for i in range(nc):
                tc, pc, _, _ = effective_critical(T[k], comp, i)
                b += Y[k, i] * consts[OMEGA_B] * R * tc / pc
            if volume[k] < liquid_ratio * b:
                roots[k] = ROOT_LIQUID
    return first_invalid
