"""Compiled drivers: one state, or many states in parallel chunks with warm starts.

Private layer: arrays and scalars in, ``out`` arrays, status codes per state; nothing here raises.

Per state: temperature-dependent model parameters (``tparams_into``) and g0_i(T) are computed only when T differs
from the previous state of the chunk; the start is the previous converged state of the chunk when the pattern of
zero feeds is the same (a warm start, moved by one predicted Newton step for the change of T and P,
``predict_start``), else an interior point (a cold start); a failed warm-started solve is retried cold. At fixed
volume an outer safeguarded secant iteration on ln P brings the equilibrium mixture's volume n_T Z R T / P to the
given V (bracketed once the sign of the mismatch has changed; bisection otherwise). Work buffers are allocated
once per chunk (packed into a few arrays, see hipeq.solvers._common); the chunk's inputs are gathered into
solving order and its answers scattered back as packed rows (``row_layout``); nothing is allocated inside the
Newton loops, and every kernel here runs without reference counting (``hipeq._jit.kernel``).
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

from hipeq._jit import kernel
from hipeq.models._kernels import MODEL_CUBIC, R, ROOT_LIQUID, tparams_into
from hipeq.solvers._common import (CONVERGED, F_BI, F_DBI, F_G0, F_G0_PREV, F_LNPHI, F_MU, F_N, F_N0_PREV,
                                   F_N_PREV, F_Y, INVALID_INPUT, J_AIJ, J_DAIJ, NO_PHYSICAL_STATE,
                                   PRESSURE_NOT_FOUND, S_AUX, S_D, S_LNK, S_RHS, S_SCALE, S_XI, S_XI_PREV,
                                   S_XI_START, SM_L, adjust_g0, element_residuals, g0_into, make_work)
from hipeq.solvers._extent import extent_solve, predict_start
from hipeq.solvers._gibbs import gibbs_solve

P_STANDARD = 1e5  # [Pa]
LN_P_STANDARD = math.log(P_STANDARD)
LIQUID_LIKE_REDUCED_VOLUME = 1.75  # v/b below this is liquid-like (our rule, DEVELOPERS.md)
P_FLOOR = 1e-2  # [Pa] pressure limits of the sealed-vessel search
P_CEILING = 1e10  # [Pa]
P_MAX = 1e10  # [Pa] upper limit of a given P (the same sanity limit as the fugacity models)
MAX_PRESSURE_STEPS = 80

# integer options (opts_i)
OPT_METHOD, OPT_COUPLED, OPT_FIXED_VOLUME, OPT_MAX_ITER, OPT_USER_LNK, OPT_WARM, OPT_GUESS = range(7)
N_OPT_I = 7
# float options (opts_f)
OPT_TOL, OPT_TOL_GIBBS, OPT_TOL_VOLUME = range(3)
N_OPT_F = 3
METHOD_EXTENT = 0
METHOD_GIBBS = 1


@kernel
def _cold_start(n0, active, direction, xdir, nr, F, S):
    """Interior start n = n0 + eps (p - f), xi = eps x_p, with eps half the largest step keeping n >= 0
    (p: an interior point of the pattern's feasible set for the indicator feed f, from Python)."""
    nc = n0.shape[0]
    eps = np.inf
    for i in range(nc):
        if direction[i] < 0.0:
            eps = min(eps, n0[i] / -direction[i])
    if not math.isfinite(eps):
        eps = 0.0
    eps *= 0.5
    for i in range(nc):
        v = n0[i] + eps * direction[i] if active[i] else 0.0
        if active[i] and not (v > 0.0):
            v = 1e-300
        F[F_N, i] = v
    for r in range(nr):
        S[S_XI, r] = eps * xdir[r]


@kernel
def _start_from_extents(n0, nu, active, F, S):
    """n = n0 + nu^T xi from row S_XI; False when an active amount is not positive."""
    nc = n0.shape[0]
    nr = nu.shape[0]
    total = 0.0
    for i in range(nc):
        v = n0[i]
        for r in range(nr):
            v += nu[r, i] * S[S_XI, r]
        F[F_N, i] = v if active[i] else 0.0
        total += abs(v)
    for i in range(nc):
        if active[i] and not (F[F_N, i] > 1e-14 * total):
            return False
    return True


@njit(cache=True, inline='always')
def _solve_at_pressure(method, code, T, P, n0, W, Zb, neff, Q, neq, Nb, n_null, active, consts, coupled, tol, tol_g,
                       max_iter, F, J, S, SM, M, KV, IV):
    ln_p = math.log(P) - LN_P_STANDARD
    if method == METHOD_EXTENT:
        return extent_solve(code, T, P, ln_p, F[F_G0], W, Zb, neff, active, S[S_XI], J[J_AIJ], F[F_BI], consts,
                            coupled, tol, max_iter, F, J, S, SM)
    return gibbs_solve(code, T, P, ln_p, n0, F[F_G0], Q, neq, Nb, n_null, active, J[J_AIJ], F[F_BI], consts,
                       coupled, tol_g, max_iter, F, J, S, SM, M, KV, IV)


@kernel
def _solve_at_volume(method, code, T, V, P_guess, n0, W, Zb, neff, Q, neq, Nb, n_null, active, consts, coupled,
                     tol, tol_g, tol_v, max_iter, F, J, S, SM, M, KV, IV):
    """Outer safeguarded secant on s = ln P for ln(n_T Z R T / P) = ln V. Returns (status, iterations,
    outer, n_T, Z, root, P)."""
    nc = n0.shape[0]
    nr = S.shape[1]
    s = math.log(P_guess)
    s_floor = math.log(P_FLOOR)
    s_ceiling = math.log(P_CEILING)
    lo = s_floor
    hi = s_ceiling
    have_lo = False
    have_hi = False
    prev_s = 0.0
    prev_h = 0.0
    have_prev = False
    total = 0
    ln_v = math.log(V)
    # remember the last good start so that a failed trial can restart from it (rows F_N_PREV, S_XI_START)
    for i in range(nc):
        F[F_N_PREV, i] = F[F_N, i]
    for r in range(nr):
        S[S_XI_START, r] = S[S_XI, r]
    n_t = 0.0
    z = 1.0
    root = 0
    for k in range(MAX_PRESSURE_STEPS):
        P = math.exp(s)
        status, it, _, n_t, z, root = _solve_at_pressure(method, code, T, P, n0, W, Zb, neff, Q, neq, Nb, n_null,
                                                         active, consts, coupled, tol, tol_g, max_iter, F, J, S,
                                                         SM, M, KV, IV)
        total += it
        if status == NO_PHYSICAL_STATE:
            # no state of the model at this pressure: treat it as "too high" and step back
            hi = s
            have_hi = True
            for i in range(nc):
                F[F_N, i] = F[F_N_PREV, i]
            for r in range(nr):
                S[S_XI, r] = S[S_XI_START, r]
            s = 0.5 * (s + lo) if have_lo else s - 1.0
            have_prev = False
            if s <= s_floor:
                return PRESSURE_NOT_FOUND, total, k + 1, n_t, z, root, P
            continue
        if status != CONVERGED:
            return status, total, k + 1, n_t, z, root, P
        for i in range(nc):
            F[F_N_PREV, i] = F[F_N, i]
        for r in range(nr):
            S[S_XI_START, r] = S[S_XI, r]
        h = math.log(n_t * z * R * T / P) - ln_v
        if abs(h) <= tol_v:
            return CONVERGED, total, k + 1, n_t, z, root, P
        if h > 0.0:
            lo = s
            have_lo = True
        else:
            hi = s
            have_hi = True
        slope = -1.0
        if have_prev and s != prev_s:
            slope = (h - prev_h) / (s - prev_s)
            if not (slope < -1e-3):
                slope = -1.0
        step = -h / slope
        step = min(2.0, max(-2.0, step))
        s_new = s + step
        if (have_lo and s_new <= lo) or (have_hi and s_new >= hi):
            s_new = 0.5 * (lo + hi) if (have_lo and have_hi) else (lo + 0.5 if s_new <= lo else hi - 0.5)
        if s_new <= s_floor or s_new >= s_ceiling:
            return PRESSURE_NOT_FOUND, total, k + 1, n_t, z, root, P
        prev_s = s
        prev_h = h
        have_prev = True
        s = s_new
    return PRESSURE_NOT_FOUND, total, MAX_PRESSURE_STEPS, n_t, z, root, math.exp(s)


@njit(cache=True, _nrt=False, inline='always')
def solve_state(system, T, PV, n0, pat, ln_k_user, guess, opts_i, opts_f, new_T, warm, work, out_species,
                out_reactions, element_res):
    """Solve one state; writes the per-state outputs and returns (status, iterations, outer, P, V, Z, root,
    liquid_like). ``out_species`` rows: amounts, ln phi; ``out_reactions`` rows: extents, ln K, residuals.
    ``new_T``: recompute the temperature-dependent parameters; ``warm``: the work buffers hold a converged
    previous state of the same pattern (rows F_N_PREV, F_N0_PREV, S_XI_PREV). ``system`` is the tuple of the
    system's arrays (see ``solve_many``); inlined into its callers (one call site each), so that the few dozen
    arrays are not handed over per state."""
    (code, comp, consts, kmat, u_lo, t_h, table, nu, nu_pinv, A, pe_active, pe_Zb, pe_W, pe_neff, pe_dir, pe_xdir,
     pg_active, pg_Q, pg_neq, pg_dir, pg_N, pg_nnull) = system
    F, J, S, SM, M, KV, IV = work
    nc = n0.shape[0]
    nr = nu.shape[0]
    method = opts_i[OPT_METHOD]
    coupled = opts_i[OPT_COUPLED] != 0
    max_iter = opts_i[OPT_MAX_ITER]
    tol = opts_f[OPT_TOL]
    tol_g = opts_f[OPT_TOL_GIBBS]
    g0 = F[F_G0]
    ln_k = S[S_LNK]
    if new_T:
        tparams_into(code, T, comp, consts, kmat, J[J_AIJ], F[F_BI], J[J_DAIJ], F[F_DBI])
        g0_into(T, u_lo, t_h, table, g0)
        if opts_i[OPT_USER_LNK] == 0:
            for r in range(nr):
                v = 0.0
                for i in range(nc):
                    v -= nu[r, i] * g0[i]
                ln_k[r] = v
    if opts_i[OPT_USER_LNK] != 0:
        if not new_T:
            g0_into(T, u_lo, t_h, table, g0)
        adjust_g0(g0, nu, nu_pinv, ln_k_user, ln_k)
        for r in range(nr):
            ln_k[r] = ln_k_user[r]
    active = pe_active[pat] if method == METHOD_EXTENT else pg_active[pat]
    n_feed = 0.0
    for i in range(nc):
        n_feed += n0[i]
    # ---- start
    started = False
    if opts_i[OPT_GUESS] != 0:
        if method == METHOD_EXTENT:
            for r in range(nr):
                S[S_XI, r] = guess[r]
            started = _start_from_extents(n0, nu, active, F, S)
        else:
            started = True
            for i in range(nc):
                v = guess[i] if active[i] else 0.0
                F[F_N, i] = max(v, 1e-14 * n_feed) if active[i] else 0.0
    elif warm:
        same = True
        prev_total = 0.0
        for i in range(nc):
            prev_total += F[F_N0_PREV, i]
            if F[F_N0_PREV, i] != n0[i]:
                same = False
        if same:
            started = True
            for i in range(nc):
                F[F_N, i] = F[F_N_PREV, i]
            for r in range(nr):
                S[S_XI, r] = S[S_XI_PREV, r]
            if method == METHOD_EXTENT and opts_i[OPT_FIXED_VOLUME] == 0:
                predict_start(pe_W[pat], pe_Zb[pat], pe_neff[pat], active, g0, F[F_G0_PREV],
                              math.log(PV) - LN_P_STANDARD - S[S_AUX, 0], SM[SM_L], S[S_SCALE], S[S_RHS], S[S_D],
                              F[F_N], S[S_XI])
        elif method == METHOD_EXTENT:
            for r in range(nr):
                S[S_XI, r] = S[S_XI_PREV, r] * n_feed / prev_total
            started = _start_from_extents(n0, nu, active, F, S)
        else:
            started = True
            for i in range(nc):
                v = F[F_N_PREV, i] * n_feed / prev_total
                F[F_N, i] = max(v, 1e-14 * n_feed) if active[i] else 0.0
    if not started:
        _cold_start(n0, active, pe_dir[pat] if method == METHOD_EXTENT else pg_dir[pat], pe_xdir[pat], nr, F, S)
    # ---- solve
    P = PV
    if opts_i[OPT_FIXED_VOLUME] != 0:
        status, iters, outer, n_t, z, root, P = _solve_at_volume(
            method, code, T, PV, n_feed * R * T / PV, n0, pe_W[pat], pe_Zb[pat], pe_neff[pat], pg_Q[pat],
            pg_neq[pat], pg_N[pat], pg_nnull[pat], active, consts, coupled, tol, tol_g, opts_f[OPT_TOL_VOLUME],
            max_iter, F, J, S, SM, M, KV, IV)
    else:
        status, iters, outer, n_t, z, root = _solve_at_pressure(
            method, code, T, P, n0, pe_W[pat], pe_Zb[pat], pe_neff[pat], pg_Q[pat], pg_neq[pat], pg_N[pat],
            pg_nnull[pat], active, consts, coupled, tol, tol_g, max_iter, F, J, S, SM, M, KV, IV)
    # ---- outputs
    for i in range(nc):
        out_species[0, i] = F[F_N, i]
        out_species[1, i] = F[F_LNPHI, i] if root >= 0 else 0.0
    for r in range(nr):
        frozen = False
        for i in range(nc):
            if nu[r, i] != 0.0 and not active[i]:
                frozen = True
        out_reactions[1, r] = ln_k[r]
        v = 0.0
        if not frozen and root >= 0:
            for i in range(nc):
                v += nu[r, i] * F[F_MU, i]
        out_reactions[2, r] = v
        if method == METHOD_EXTENT:
            out_reactions[0, r] = S[S_XI, r]
        else:
            # extents of the Gibbs answer, xi = nu_pinv^T (n - n0) (exact when n - n0 is in the span of nu)
            v = 0.0
            for i in range(nc):
                v += nu_pinv[i, r] * (F[F_N, i] - n0[i])
            out_reactions[0, r] = v
    element_residuals(A, F[F_N], n0, element_res)
    V = n_t * z * R * T / P
    liquid = root == ROOT_LIQUID
    if code == MODEL_CUBIC and root >= 0:
        b = 0.0
        for i in range(nc):
            b += F[F_Y, i] * F[F_BI, i]
        if b > 0.0 and (z * R * T / P) / b < LIQUID_LIKE_REDUCED_VOLUME:
            liquid = True
    if status == CONVERGED:
        for i in range(nc):
            F[F_N_PREV, i] = F[F_N, i]
            F[F_N0_PREV, i] = n0[i]
            F[F_G0_PREV, i] = g0[i]
        S[S_AUX, 0] = math.log(P) - LN_P_STANDARD
        for r in range(nr):
            S[S_XI_PREV, r] = S[S_XI, r]
    return status, iters, outer, P, V, z, root, liquid


@njit(cache=True)
def solve_one(code, comp, consts, kmat, u_lo, t_h, table, nu, nu_pinv, A,
              pe_active, pe_Zb, pe_W, pe_neff, pe_dir, pe_xdir, pg_active, pg_Q, pg_neq, pg_dir, pg_N, pg_nnull,
              T, PV, n0, pat, ln_k_user, guess, opts_i, opts_f, out_species, out_reactions, element_res, scalars):
    """One state (the scalar fast path); a failed start from ``guess`` is retried cold. Returns (status,
    iterations, outer, root, liquid_like); P, V, Z in ``scalars``."""
    nc = n0.shape[0]
    work = make_work(nc, nu.shape[0], max(A.shape[0], pg_Q.shape[1]))
    system = (code, comp, consts, kmat, u_lo, t_h, table, nu, nu_pinv, A, pe_active, pe_Zb, pe_W, pe_neff, pe_dir,
              pe_xdir, pg_active, pg_Q, pg_neq, pg_dir, pg_N, pg_nnull)
    no = nc < 0  # run-time booleans, not literals: one compiled solve_state for every caller
    new_T = not no
    options = opts_i
    iters = 0
    outer = 0
    while True:  # one call site of the inlined solve_state
        status, it, ou, P, V, z, root, liquid = solve_state(system, T, PV, n0, pat, ln_k_user, guess, options,
                                                            opts_f, new_T, no, work, out_species, out_reactions,
                                                            element_res)
        iters += it
        outer += ou
        if status == CONVERGED or options[OPT_GUESS] == 0:
            break
        options = opts_i.copy()  # a failed start from the guess: once more from a cold start
        options[OPT_GUESS] = 0
        new_T = no
    scalars[0] = P
    scalars[1] = V
    scalars[2] = z
    return status, iters, outer, root, liquid


def row_layout(nc, nr, ne):
    """Offsets in the packed per-state output row of ``solve_many``: amounts (nc), ln phi (nc), extents (nr),
    ln K (nr), residuals (nr), element residuals (ne), then P, V, Z. Returns (offset of P, row length)."""
    tail = 2 * nc + 3 * nr + ne
    return tail, tail + 3


row_layout_jit = njit(cache=True, inline="always")(row_layout)


@kernel
def _solve_chunk(system, T, PV, N0, pats, ln_k_user, valid, opts_i, opts_f, rows, ints, liquid, work):
    """The states of one chunk (already gathered in solving order) one after the other with one set of work
    buffers, each warm-started from the previous converged one of the same pattern (see ``solve_many``); the
    answers go to ``rows`` (one packed row per state, see ``row_layout``), ``ints`` (status, iterations, outer
    iterations, root code) and ``liquid``."""
    nc = N0.shape[1]
    nr = system[7].shape[0]  # nu
    ne = system[9].shape[0]  # A: element rows
    tail, _ = row_layout_jit(nc, nr, ne)
    empty = opts_f[0:0]
    no = nc < 0  # a run-time boolean, not a literal: one compiled solve_state for every caller
    last_T = -1.0
    warm = False
    last_pat = -1
    for k in range(T.shape[0]):
        row = rows[k]
        if valid[k] == 0:
            row[:] = 0.0
            for i in range(nc):
                row[i] = N0[k, i] if N0[k, i] > 0.0 else 0.0
            fixed_volume = opts_i[OPT_FIXED_VOLUME] != 0
            ok = math.isfinite(PV[k])
            row[tail] = PV[k] if (ok and not fixed_volume) else 0.0
            row[tail + 1] = PV[k] if (ok and fixed_volume) else 0.0
            ints[k, 0] = INVALID_INPUT
            ints[k, 1] = 0
            ints[k, 2] = 0
            ints[k, 3] = -1
            liquid[k] = False
            continue
        pat = pats[k]
        user = ln_k_user[k] if ln_k_user.shape[0] > 0 else empty
        use_warm = warm and pat == last_pat and opts_i[OPT_WARM] != 0
        new_T = T[k] != last_T
        it = 0
        ou = 0
        species = row[0:2 * nc].reshape((2, nc))
        reactions = row[2 * nc:2 * nc + 3 * nr].reshape((3, nr))
        elements = row[2 * nc + 3 * nr:tail]
        while True:  # one call site of the inlined solve_state
            st, it1, ou1, P, V, z, root, liq = solve_state(system, T[k], PV[k], N0[k], pat, user, empty, opts_i,
                                                           opts_f, new_T, use_warm, work, species, reactions,
                                                           elements)
            it += it1
            ou += ou1
            if st == CONVERGED or not use_warm:
                break
            use_warm = no  # a failed warm start: once more from a cold start
            new_T = no
        last_T = T[k]
        warm = st == CONVERGED
        last_pat = pat
        row[tail] = P
        row[tail + 1] = V
        row[tail + 2] = z
        ints[k, 0] = st
        ints[k, 1] = it
        ints[k, 2] = ou
        ints[k, 3] = root
        liquid[k] = liq


@njit(cache=True, parallel=True)
def solve_many(code, comp, consts, kmat, u_lo, t_h, table, nu, nu_pinv, A,
               pe_active, pe_Zb, pe_W, pe_neff, pe_dir, pe_xdir, pg_active, pg_Q, pg_neq, pg_dir, pg_N, pg_nnull,
               T, PV, N0, pats, ln_k_user, valid, opts_i, opts_f, chunk, order, out, out_ints, out_liquid):
    """Many states (T[k], PV[k], N0[k]) in parallel chunks of ``chunk`` consecutive entries of ``order`` (a
    permutation that puts similar states next to each other), warm-started along a chunk, a failed warm start
    retried cold. States with valid[k] == 0 are skipped and marked INVALID_INPUT; ``pats`` holds one pattern per
    state or a single one for all. ``ln_k_user`` has shape
    (n, nr) or (0, nr). ``out`` (n, row length) receives one packed row per state (``row_layout``), ``out_ints``
    (n, 4) status, iterations, outer iterations, root code, ``out_liquid`` (n,) the liquid-like flag: a state's
    answers are three contiguous pieces of memory, each written once."""
    n = T.shape[0]
    nc = N0.shape[1]
    nr = nu.shape[0]
    n_chunks = (n + chunk - 1) // chunk
    width = out.shape[1]
    system = (code, comp, consts, kmat, u_lo, t_h, table, nu, nu_pinv, A, pe_active, pe_Zb, pe_W, pe_neff, pe_dir,
              pe_xdir, pg_active, pg_Q, pg_neq, pg_dir, pg_N, pg_nnull)
    for c in prange(n_chunks):
        first = c * chunk
        m = min(n, first + chunk) - first
        work = make_work(nc, nr, max(A.shape[0], pg_Q.shape[1]))
        # the chunk's states gathered into solving order, and its answers scattered back at the end: the
        # solve itself then reads and writes memory in sequence (in the caller's order every state was a few
        # cache misses)
        Tl = np.empty(m)
        PVl = np.empty(m)
        N0l = np.empty((m, nc))
        patl = np.empty(m, dtype=np.int64)
        validl = np.empty(m, dtype=np.uint8)
        userl = np.empty((m if ln_k_user.shape[0] > 0 else 0, nr))
        rows = np.empty((m, width))
        ints = np.empty((m, 4), dtype=np.int64)
        liq = np.empty(m, dtype=np.bool_)
        _gather(order[first:first + m], T, PV, N0, pats, valid, ln_k_user, Tl, PVl, N0l, patl, validl, userl)
        _solve_chunk(system, Tl, PVl, N0l, patl, userl, validl, opts_i, opts_f, rows, ints, liq, work)
        _scatter(order[first:first + m], rows, ints, liq, out, out_ints, out_liquid)


@kernel
def _gather(order, T, PV, N0, pats, valid, ln_k_user, Tl, PVl, N0l, patl, validl, userl):
    """Row order[l] of the inputs into row l of the chunk's own arrays."""
    for l in range(order.shape[0]):
        k = order[l]
        Tl[l] = T[k]
        PVl[l] = PV[k]
        patl[l] = pats[k] if pats.shape[0] > 1 else pats[0]
        validl[l] = valid[k]
        for i in range(N0.shape[1]):
            N0l[l, i] = N0[k, i]
        for r in range(userl.shape[1] if userl.shape[0] > 0 else 0):
            userl[l, r] = ln_k_user[k, r]


@kernel
def _scatter(order, rows, ints, liq, out, out_ints, out_liquid):
    """Row l of the chunk's answers into row order[l] of the outputs."""
    for l in range(order.shape[0]):
        k = order[l]
        for a in range(rows.shape[1]):
            out[k, a] = rows[l, a]
        for a in range(4):
            out_ints[k, a] = ints[l, a]
        out_liquid[k] = liq[l]

# ---------------------------------------------------------------------------------------------------------
# batch preparation (one pass over the states each, no temporaries)
# ---------------------------------------------------------------------------------------------------------
@kernel
def valid_states(T, PV, N0, T_min, T_max, P_max, fixed_volume, ok):
    """ok[k] = 1 (uint8) where T_min <= T[k] <= T_max, 0 < PV[k] finite (and <= P_max at fixed pressure), every
    feed amount finite and >= 0 with a positive total; else 0."""
    for k in range(T.shape[0]):
        t = T[k]
        pv = PV[k]
        good = t >= T_min and t <= T_max and pv > 0.0 and math.isfinite(pv) and (fixed_volume or pv <= P_max)
        total = 0.0
        for i in range(N0.shape[1]):
            v = N0[k, i]
            if not (math.isfinite(v) and v >= 0.0):
                good = False
            total += v
        ok[k] = 1 if (good and total > 0.0) else 0


@kernel
def order_keys(T, PV, pats, bands, key):
    """Sort key of ``hipeq.solvers._batch.neighbour_order``: (pattern, band of T) in the integer part, +-ln P
    scaled to [0, 1] (sign alternating between bands, a snake path) in the fraction. ``pats`` has one entry per
    state or a single one for all."""
    n = T.shape[0]
    t_lo = math.inf
    t_hi = -math.inf
    l_lo = math.inf
    l_hi = -math.inf
    for k in range(n):
        if math.isfinite(T[k]):
            t_lo = min(t_lo, T[k])
            t_hi = max(t_hi, T[k])
        if PV[k] > 0.0 and math.isfinite(PV[k]):
            lp = math.log(PV[k])
            l_lo = min(l_lo, lp)
            l_hi = max(l_hi, lp)
    t_span = max(t_hi - t_lo, 1e-300)
    l_span = max(l_hi - l_lo, 1e-300)
    for k in range(n):
        t = (T[k] - t_lo) / t_span if math.isfinite(T[k]) else 0.0
        p = (math.log(PV[k]) - l_lo) / l_span if (PV[k] > 0.0 and math.isfinite(PV[k])) else 0.0
        band = min(int(t * bands), bands - 1)
        if band % 2 == 1:
            p = -p
        pat = pats[k] if pats.shape[0] > 1 else pats[0]
        key[k] = (pat * bands + band) * 4.0 + (p + 1.0)
