"""Compiled drivers: one state, or many states in parallel chunks with warm starts.

One compiled chunk solver per ``SolverPath`` (equilibrium method, fixed pressure or sealed vessel), compiled the
first time the path is used and only with the solvers it runs; the scalar path calls it for one state, the batch
for each thread's range of chunks.

Private layer: arrays and scalars in, ``out`` arrays, status codes per state; nothing here raises.

Per state: the temperature-dependent model parameters (``tparams_into``) and g0_i(T) are computed only when T
differs from the previous state of the chunk. Then the equilibrium is solved from one or more starts:

- where the model has a single volume root at every composition the active species can reach
  (``several_roots_possible`` is False: the one-fluid cubic's a/(b R T) stays below Omega_a/Omega_b, i.e. the
  mixture is above its pseudo-critical temperature whatever its composition; always for the ideal gas, the
  virial and the Lewis-Randall rule), the state has one stationary point in practice, and the start is the
  previous converged state of the chunk when the pattern of zero feeds is the same (a warm start, moved by one
  predicted Newton step for the change of T and P, ``predict_start``), else an interior point (a cold start); a
  failed warm start is retried cold (the truncated virial always starts cold: it has regions with no physical
  state, which a neighbour's answer can lead around and the state's own starts cannot);
- otherwise (a species could condense) several stationary points may exist, and the state is solved from the
  deterministic cold starts of ``COLD_FRACTIONS`` and the converged answer of lowest Gibbs energy (Helmholtz
  energy in a sealed vessel) is kept, whatever the rest of the batch.

Both solvers polish a converged answer to the rounding level (``POLISH_TOL``), so that the answer does not
depend on the start either. When the extent method fails and the reactions span every composition change the
element balances allow, the state is solved again by Gibbs minimisation, which answers instead (the answer's
METHOD column says so; ``solve_one``).

At fixed volume an outer safeguarded secant iteration on ln P brings the equilibrium mixture's volume
n_T Z R T / P to the given V, within P_FLOOR <= P <= P_CEILING (bracketed once the sign of the mismatch has
changed; bisection otherwise); a bracket that closes on a jump of the volume means that no single phase fills
the vessel at that density.

A converged answer is checked before it is reported: every element balance closed (``element_residuals``), every
output finite, and the model inside its range (truncated virial: |Z - 1| <= VIRIAL_MAX_DEPARTURE;
Lewis-Randall rule: P <= LEWIS_RANDALL_P_MAX); otherwise the status says what failed. Work buffers are
allocated once per thread (``make_work``, a ``WorkBuffers``) and reset at each chunk's start; answers are written
as one packed float row and one integer row per state (``hipeq.solvers._arrays.answer_layout``,
``INT_COLUMNS``).
"""
from __future__ import annotations

import math
import threading
from typing import NamedTuple

import numpy as np

from hipeq._jit import DirectCall, inline_kernel, inner_kernel, kernel
from hipeq._threads import run_in_ranges, thread_count
from hipeq.models._kernels import (LIQUID_LIKE_REDUCED_VOLUME, MODEL_CUBIC, MODEL_LEWIS_RANDALL, MODEL_VIRIAL,
                                   OMEGA_A, OMEGA_B, R, ROOT_LIQUID, tparams_into)
from hipeq.models.inputs import P_MAX
from hipeq.solvers._arrays import (INT_COLUMNS, ITERATIONS, LIQUID, MAY_SPLIT, METHOD, METHOD_EXTENT, METHOD_GIBBS,
                                   OUTER,
                                   REASON, ROOT, STATUS, Options, PatternArrays, SystemArrays, answer_layout)
from hipeq.solvers._common import (BALANCE_NOT_CLOSED, CONVERGED, INVALID_INPUT, MAX_VERTICES, NO_PHYSICAL_STATE,
                                   OUTSIDE_MODEL_RANGE, PRESSURE_NOT_FOUND, REASON_ABOVE_CEILING,
                                   REASON_BELOW_COVOLUME, REASON_BELOW_FLOOR, REASON_ELEMENTS,
                                   REASON_LEWIS_RANDALL_RANGE, REASON_NONE, REASON_NOT_FINITE,
                                   REASON_NOT_ONE_PHASE, REASON_VIRIAL_RANGE, SINGULAR, STALLED, adjust_g0,
                                   element_residuals, g0_into, lu_solve, make_work, work_views)
from hipeq.solvers._extent import extent_solve, predict_start
from hipeq.solvers._gibbs import gibbs_solve

from hipeq.constants import P_STANDARD  # [Pa]
LN_P_STANDARD = math.log(P_STANDARD)
P_FLOOR = 1e-2  # [Pa] pressure limits of a sealed vessel
P_CEILING = P_MAX  # [Pa] the fugacity models' upper limit of P
MAX_PRESSURE_STEPS = 80
# Model ranges (our limits, docs/solvers.md): the truncated virial (second coefficient only) is used while
# |Z - 1| <= 0.5 (Smith, Van Ness & Abbott 2005, sect. 3.6, give reduced volumes of about 2 and above, i.e.
# moderate departures from the ideal gas, for the two-term form; the bound here is common practice); the
# Lewis-Randall rule up to 2e8 Pa, twice the 1000 atm to which docs/ammonia_validation.md checks it.
VIRIAL_MAX_DEPARTURE = 0.5
LEWIS_RANDALL_P_MAX = 2e8  # [Pa]
# what the cubic's volume roots allow at a state's temperature (several_roots_possible)
ONE_ROOT, CONDENSABLE, SEVERAL_ROOTS = 0, 1, 2
# deterministic cold starts n0 + eps (p - f): eps as fractions of the largest step that keeps n >= 0
COLD_FRACTIONS = (0.5, 0.02, 0.98)
START_GUESS = 0
START_WARM = 1
START_COLD = 2
# states per call of the chunk solver in a batch (whole chunks): their answer rows (~0.3 kB each) stay in the
# processor's cache until scattered back; one call per thread's whole range wrote and re-read megabytes
RANGE_BLOCK = 1024


@kernel
def several_roots_possible(code, T, aij, bi, consts, active, n0, null, n_null, pat, w):
    """SEVERAL_ROOTS when the cubic could have three volume roots at T [K] for some composition the feed ``n0``
    can reach (n = n0 + null t >= 0, the columns of ``null`` spanning the feasible composition changes of the
    active species); else CONDENSABLE when some active species is below its (k_ij-widened) critical temperature
    (three roots at some composition of the active species, so a vapour-liquid split is possible), else ONE_ROOT
    (one volume root at every composition: no split; the ``phases="auto"`` screen).

    With the one-fluid rule, a = sum_ij y_i y_j a_ij <= c (sum_i y_i sqrt(a_i))^2 <= c b sum_i y_i a_i / b_i
    (Cauchy-Schwarz twice; c = max(1, max_ij a_ij / sqrt(a_i a_j)) covers negative k_ij), and the isotherm of a
    cubic with fixed a and b is monotonic (one volume root at every P) when a / (b R T) < Omega_a / Omega_b (its
    critical condition; Michelsen & Mollerup 2007, ch. 3). So three roots need sum_i n_i (c r_i - L) >= 0 with
    r_i = a_i / (b_i R T) and L = Omega_a / Omega_b; that linear function is largest at a vertex of the feasible
    polytope. The vertices (n_null of the amounts at zero) depend on the feed only, not on T: they are enumerated
    once per feed and pattern and kept in ``w.vertices`` / ``w.vertex_info`` (row 0 of the vertices the feed;
    vertex_info = count, valid, pattern), so a chunk
    of states with one feed pays the enumeration once. Past MAX_VERTICES candidate sets the answer is True (the
    safe side). Always ONE_ROOT for the other models (one root per state). The Gibbs Newton buffers of ``w``
    serve as scratch."""
    if code != MODEL_CUBIC:
        return ONE_ROOT
    nc = bi.shape[0]
    limit = consts[OMEGA_A] / consts[OMEGA_B]
    c = 1.0
    top = -np.inf
    for i in range(nc):
        if active[i] and bi[i] > 0.0 and aij[i, i] > 0.0:
            for j in range(i + 1, nc):
                if active[j] and aij[j, j] > 0.0:
                    c = max(c, aij[i, j] / math.sqrt(aij[i, i] * aij[j, j]))
    feed = 0.0
    for i in range(nc):
        if active[i] and bi[i] > 0.0:
            weight = c * aij[i, i] / (bi[i] * R * T) - limit
            top = max(top, weight)
            feed += n0[i] * weight
    if top < 0.0:
        return ONE_ROOT  # no active species is below its (kij-widened) critical temperature
    if feed >= 0.0:
        return SEVERAL_ROOTS
    if n_null == 0:
        return CONDENSABLE
    VX, VI = w.vertices, w.vertex_info
    same = VI[1] == 1 and VI[2] == pat
    if same:
        for i in range(nc):
            if VX[0, i] != n0[i]:
                same = False
                break
    if not same and not _polytope_vertices(active, n0, null, n_null, w.vertices, w.vertex_info, w.kkt, w.kkt_rhs,
                                           w.kkt_solution, w.kkt_index, w.pivots):
        return SEVERAL_ROOTS  # too many candidate vertices to enumerate: the safe side
    VI[2] = pat
    for v in range(1, VI[0] + 1):
        value = 0.0
        for i in range(nc):
            if active[i] and bi[i] > 0.0:
                value += VX[v, i] * (c * aij[i, i] / (bi[i] * R * T) - limit)
        if value >= 0.0:
            return SEVERAL_ROOTS
    return CONDENSABLE


@inner_kernel
def _polytope_vertices(active, n0, null, n_null, vertices, vertex_info, kkt, kkt_rhs, kkt_solution, kkt_index, pivots):
    """The vertices of {n = n0 + null t >= 0} (every set of n_null active species at zero whose solution is
    feasible) into vertices[1:], the feed into vertices[0], their count into vertex_info[0] and vertex_info[1] = 1;
    False (vertex_info[1] = 0) when
    there are more candidate sets than MAX_VERTICES."""
    nc = n0.shape[0]
    VX, VI = vertices, vertex_info
    M, rhs, x, idx, piv = kkt, kkt_rhs, kkt_solution, kkt_index, pivots
    VI[1] = 0
    VI[0] = 0
    m = 0
    for i in range(nc):
        if active[i]:
            m += 1
    if n_null > m:
        return False
    sets = 1.0
    for k in range(n_null):
        sets = sets * (m - k) / (k + 1)
    if sets > MAX_VERTICES:
        return False
    scale = 0.0
    for i in range(nc):
        scale += n0[i]
        VX[0, i] = n0[i]
    count = 0
    for k in range(n_null):
        idx[k] = k
    while True:
        # solve null[S, :] t = -n0[S] for the set S (positions ``idx`` among the active species)
        a = 0
        position = 0
        for i in range(nc):
            if not active[i]:
                continue
            if a < n_null and idx[a] == position:
                for b in range(n_null):
                    M[a, b] = null[i, b]
                rhs[a] = -n0[i]
                a += 1
            position += 1
        if lu_solve(M, rhs, n_null, x, piv):
            feasible = True
            for i in range(nc):
                v = n0[i]
                for b in range(n_null):
                    v += null[i, b] * x[b]
                if active[i] and v < -1e-12 * scale:
                    feasible = False
                    break
                VX[count + 1, i] = max(v, 0.0) if active[i] else 0.0
            if feasible:
                count += 1
        k = n_null - 1
        while k >= 0 and idx[k] == m - n_null + k:
            k -= 1
        if k < 0:
            break
        idx[k] += 1
        for j in range(k + 1, n_null):
            idx[j] = idx[j - 1] + 1
    VI[0] = count
    VI[1] = 1
    return True


@inner_kernel
def _cold_start(n0, active, direction, xdir, nr, fraction, n, extents):
    """Interior start n = n0 + eps (p - f), xi = eps x_p, with eps ``fraction`` of the largest step keeping
    n >= 0 (p: an interior point of the pattern's feasible set for the indicator feed f, from Python)."""
    nc = n0.shape[0]
    eps = np.inf
    for i in range(nc):
        if direction[i] < 0.0:
            eps = min(eps, n0[i] / -direction[i])
    if not math.isfinite(eps):
        eps = 0.0
    eps *= fraction
    for i in range(nc):
        v = n0[i] + eps * direction[i] if active[i] else 0.0
        if active[i] and not (v > 0.0):
            v = 1e-300
        n[i] = v
    for r in range(nr):
        extents[r] = eps * xdir[r]


@inner_kernel
def _start_from_extents(n0, nu, active, extents, n):
    """n = n0 + nu^T xi from row S_XI; False when an active amount is not positive."""
    nc = n0.shape[0]
    nr = nu.shape[0]
    total = 0.0
    for i in range(nc):
        v = n0[i]
        for r in range(nr):
            v += nu[r, i] * extents[r]
        n[i] = v if active[i] else 0.0
        total += abs(v)
    for i in range(nc):
        if active[i] and not (n[i] > 1e-14 * total):
            return False
    return True


@inline_kernel
def _solve_at_pressure(method, code, T, P, n0, W, Zb, neff, Q, neq, Nb, n_null, active, consts, coupled, tol, tol_g,
                       max_iter, w):
    ln_p = math.log(P) - LN_P_STANDARD
    if method == METHOD_EXTENT:
        return extent_solve(code, T, P, ln_p, w.g0, W, Zb, neff, active, w.extents, w.a_ij, w.b_i, consts,
                            coupled, tol, max_iter, w)
    return gibbs_solve(code, T, P, ln_p, n0, w.g0, Q, neq, Nb, n_null, active, w.a_ij, w.b_i, consts,
                       coupled, tol_g, max_iter, w)


@inner_kernel
def _boundary_reason(code, at_ceiling, V, n_t, y, b_i):
    """Why a sealed-vessel search ended at a pressure limit."""
    if not at_ceiling:
        return REASON_BELOW_FLOOR
    if code == MODEL_CUBIC:
        b = 0.0
        for i in range(y.shape[0]):
            b += y[i] * b_i[i]
        if V <= n_t * b:
            return REASON_BELOW_COVOLUME
    return REASON_ABOVE_CEILING


def _volume_solver(method: int):
    """The sealed-vessel solver of one equilibrium method (``method``: METHOD_EXTENT or METHOD_GIBBS, a constant
    of the compiled code, so that each compiles only its own method's solver; see ``SolverPath``)."""

    @kernel
    def solve_at_volume(code, T, V, P_guess, n0, W, Zb, neff, Q, neq, Nb, n_null, active, consts, coupled, tol, tol_g,
                        tol_v, max_iter, w):
        """Outer safeguarded secant on s = ln P, P_FLOOR <= P <= P_CEILING, for ln(n_T Z R T / P) = ln V. Returns
        (status, reason, iterations, outer, n_T, Z, root, P)."""
        nc = n0.shape[0]
        nr = w.extents.shape[0]
        s_floor = math.log(P_FLOOR)
        s_ceiling = math.log(P_CEILING)
        s = math.log(P_guess) if P_guess > 0.0 else s_floor
        if not (s >= s_floor):  # also NaN
            s = s_floor
        if s > s_ceiling:
            s = s_ceiling
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
            w.n_prev[i] = w.n[i]
        for r in range(nr):
            w.extents_start[r] = w.extents[r]
        n_t = 0.0
        z = 1.0
        root = 0
        P = min(P_CEILING, max(P_FLOOR, math.exp(s)))
        for k in range(MAX_PRESSURE_STEPS):
            P = min(P_CEILING, max(P_FLOOR, math.exp(s)))  # exp(ln P) may round past a limit
            status, it, _, n_t, z, root = _solve_at_pressure(method, code, T, P, n0, W, Zb, neff, Q, neq, Nb, n_null,
                                                             active, consts, coupled, tol, tol_g, max_iter, w)
            total += it
            if status == NO_PHYSICAL_STATE:
                # no state of the model at this pressure: treat it as "too high" and step back
                hi = s
                have_hi = True
                for i in range(nc):
                    w.n[i] = w.n_prev[i]
                for r in range(nr):
                    w.extents[r] = w.extents_start[r]
                s = 0.5 * (s + lo) if have_lo else s - 1.0
                have_prev = False
                if s <= s_floor:
                    return PRESSURE_NOT_FOUND, REASON_NONE, total, k + 1, n_t, z, root, P
                continue
            if status != CONVERGED:
                return status, REASON_NONE, total, k + 1, n_t, z, root, P
            for i in range(nc):
                w.n_prev[i] = w.n[i]
            for r in range(nr):
                w.extents_start[r] = w.extents[r]
            h = math.log(n_t * z * R * T / P) - ln_v
            if abs(h) <= tol_v:
                return CONVERGED, REASON_NONE, total, k + 1, n_t, z, root, P
            if h > 0.0:
                lo = s
                have_lo = True
            else:
                hi = s
                have_hi = True
            if have_lo and have_hi and hi - lo < 1e-12:
                # the bracket has closed on a jump of the volume: no single phase fills the vessel here
                return PRESSURE_NOT_FOUND, REASON_NOT_ONE_PHASE, total, k + 1, n_t, z, root, P
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
            if s_new >= s_ceiling:
                if s >= s_ceiling:  # already at the ceiling and still too large a volume
                    reason = _boundary_reason(code, True, V, n_t, w.y, w.b_i)
                    return PRESSURE_NOT_FOUND, reason, total, k + 1, n_t, z, root, P
                s_new = s_ceiling
            elif s_new <= s_floor:
                if s <= s_floor:
                    return PRESSURE_NOT_FOUND, REASON_BELOW_FLOOR, total, k + 1, n_t, z, root, P
                s_new = s_floor
            prev_s = s
            prev_h = h
            have_prev = True
            s = s_new
        reason = REASON_NOT_ONE_PHASE if (have_lo and have_hi) else REASON_NONE
        return PRESSURE_NOT_FOUND, reason, total, MAX_PRESSURE_STEPS, n_t, z, root, P

    return solve_at_volume


_solve_at_volume_extent = _volume_solver(METHOD_EXTENT)
_solve_at_volume_gibbs = _volume_solver(METHOD_GIBBS)


@inline_kernel
def _solve_at_volume(method, code, T, V, P_guess, n0, W, Zb, neff, Q, neq, Nb, n_null, active, consts, coupled, tol,
                     tol_g, tol_v, max_iter, w):
    """The sealed-vessel solver of ``method`` (a constant where this is compiled: only that one is called)."""
    if method == METHOD_EXTENT:
        return _solve_at_volume_extent(code, T, V, P_guess, n0, W, Zb, neff, Q, neq, Nb, n_null, active, consts,
                                       coupled, tol, tol_g, tol_v, max_iter, w)
    return _solve_at_volume_gibbs(code, T, V, P_guess, n0, W, Zb, neff, Q, neq, Nb, n_null, active, consts, coupled,
                                  tol, tol_g, tol_v, max_iter, w)


@inline_kernel
def _record(row, ints, layout, status, reason, root, method, P, V, z, G, n0, active, ln_k, nu, nu_pinv, A, code,
            T, n, ln_phi, mu, extents, y, b_i):
    """Write the current iterate (amounts, ln phi, potentials, extents of the work buffers) as a state's answer."""
    nc = n0.shape[0]
    nr = nu.shape[0]
    total = 0.0
    for i in range(nc):
        total += n[i]
    for i in range(nc):
        row[layout.amounts + i] = n[i]
        row[layout.y + i] = n[i] / total if total > 0.0 else 0.0
        row[layout.ln_phis + i] = ln_phi[i] if root >= 0 else 0.0
    for r in range(nr):
        frozen = False
        for i in range(nc):
            if nu[r, i] != 0.0 and not active[i]:
                frozen = True
        row[layout.ln_k + r] = ln_k[r]
        v = 0.0
        if not frozen and root >= 0:
            for i in range(nc):
                v += nu[r, i] * mu[i]
        row[layout.residuals + r] = v
        if method == METHOD_EXTENT:
            row[layout.extents + r] = extents[r]
        else:
            # extents of the Gibbs answer, xi = nu_pinv^T (n - n0) (exact when n - n0 is in the span of nu)
            v = 0.0
            for i in range(nc):
                v += nu_pinv[i, r] * (n[i] - n0[i])
            row[layout.extents + r] = v
    row[layout.P] = P
    row[layout.V] = V
    row[layout.Z] = z
    row[layout.G] = G
    liquid = root == ROOT_LIQUID
    if code == MODEL_CUBIC and root >= 0:
        b = 0.0
        for i in range(nc):
            b += y[i] * b_i[i]
        if b > 0.0 and (z * R * T / P) / b < LIQUID_LIKE_REDUCED_VOLUME:
            liquid = True
    ints[STATUS] = status
    ints[REASON] = reason
    ints[ROOT] = root
    ints[METHOD] = method
    ints[LIQUID] = 1 if liquid else 0


@inner_kernel
def _check_answer(row, ints, layout, code, n0, A, fixed_volume):
    """Make every output finite whatever the status, write the element residuals of the answer, and hold a
    converged answer to what status 0 promises."""
    nc = n0.shape[0]
    closed = element_residuals(A, row[layout.amounts:layout.amounts + nc], n0,
                               row[layout.element_residuals:layout.element_residuals + A.shape[0]])
    finite = True
    for a in range(layout.width):
        if not math.isfinite(row[a]):
            row[a] = 0.0
            finite = False
    if ints[STATUS] != CONVERGED:
        return
    if not finite:
        ints[STATUS] = SINGULAR
        ints[REASON] = REASON_NOT_FINITE
    elif not closed:
        ints[STATUS] = BALANCE_NOT_CLOSED
        ints[REASON] = REASON_ELEMENTS
    elif code == MODEL_VIRIAL and abs(row[layout.Z] - 1.0) > VIRIAL_MAX_DEPARTURE:
        ints[STATUS] = OUTSIDE_MODEL_RANGE
        ints[REASON] = REASON_VIRIAL_RANGE
    elif code == MODEL_LEWIS_RANDALL and row[layout.P] > LEWIS_RANDALL_P_MAX:
        ints[STATUS] = OUTSIDE_MODEL_RANGE
        ints[REASON] = REASON_LEWIS_RANDALL_RANGE
    elif fixed_volume and not (P_FLOOR <= row[layout.P] <= P_CEILING):
        ints[STATUS] = PRESSURE_NOT_FOUND
        ints[REASON] = REASON_ABOVE_CEILING if row[layout.P] > P_CEILING else REASON_BELOW_FLOOR


@inline_kernel
def _prepare_state(system, patterns, T, n0, pat, ln_k_user, opts, new_T, w):
    """What a state's solve needs before its first start: the temperature-dependent model parameters and g0_i(T)
    (only when ``new_T``: T differs from the previous state of the chunk), ln K (the caller's, if given: g0 is
    then shifted to match it), and whether several stationary points may exist (``several_roots_possible``).
    Returns (total feed [mol], roots)."""
    nc = n0.shape[0]
    nu = system.nu
    nr = nu.shape[0]
    code = system.model_code
    g0 = w.g0
    ln_k = w.ln_k
    if new_T:
        tparams_into(code, T, system.components, system.model_constants, system.kij, w.a_ij, w.b_i, w.da_ij_dT,
                     w.db_i_dT)
        g0_into(T, system.g0_ln_t0, system.g0_step, system.g0_nodes, g0)
        if not opts.user_ln_k:
            for r in range(nr):
                v = 0.0
                for i in range(nc):
                    v -= nu[r, i] * g0[i]
                ln_k[r] = v
    if opts.user_ln_k:
        if not new_T:
            g0_into(T, system.g0_ln_t0, system.g0_step, system.g0_nodes, g0)
        adjust_g0(g0, nu, system.nu_pinv, ln_k_user, ln_k)
        for r in range(nr):
            ln_k[r] = ln_k_user[r]
    n_feed = 0.0
    for i in range(nc):
        n_feed += n0[i]
    roots = several_roots_possible(code, T, w.a_ij, w.b_i, system.model_constants, patterns.gibbs_active[pat], n0,
                                   patterns.gibbs_null[pat], patterns.gibbs_null_rank[pat], pat, w)
    return n_feed, roots


@inline_kernel
def _finish_state(system, n0, roots, iterations, outer, fixed_volume, layout, w, row, ints):
    """Complete a state's answer after its starts: iteration counts, the vapour-liquid screen (MAY_SPLIT), and
    the checks of ``_check_answer``. When the answer converged, remember it for a warm start of the next state
    (returns True)."""
    nc = n0.shape[0]
    ints[ITERATIONS] = iterations
    ints[OUTER] = outer
    ints[MAY_SPLIT] = 0 if roots == ONE_ROOT else 1
    _check_answer(row, ints, layout, system.model_code, n0, system.elements, fixed_volume)
    if ints[STATUS] != CONVERGED:
        return False
    for i in range(nc):
        w.n_prev[i] = row[layout.amounts + i]
        w.n0_prev[i] = n0[i]
        w.g0_prev[i] = w.g0[i]
    w.ln_p_prev[0] = math.log(row[layout.P]) - LN_P_STANDARD
    for r in range(w.extents.shape[0]):
        w.extents_prev[r] = row[layout.extents + r]
    return True


@inner_kernel
def _mark_invalid(n0, PV, method, fixed_volume, layout, row, ints):
    """The answer of a state that was not solved (invalid input): the feed as given, status INVALID_INPUT."""
    nc = n0.shape[0]
    row[:] = 0.0
    total = 0.0
    for i in range(nc):
        row[layout.amounts + i] = n0[i] if n0[i] > 0.0 else 0.0
        total += row[layout.amounts + i]
    for i in range(nc):
        if total > 0.0 and math.isfinite(total):
            row[layout.y + i] = row[layout.amounts + i] / total
    ok = math.isfinite(PV)
    row[layout.P] = PV if (ok and not fixed_volume) else 0.0
    row[layout.V] = PV if (ok and fixed_volume) else 0.0
    ints[:] = 0
    ints[STATUS] = INVALID_INPUT
    ints[ROOT] = -1
    ints[METHOD] = method


class SolverPath(NamedTuple):
    """What a compiled chunk solver is specialised for: its equilibrium method and whether the states are sealed
    vessels. numba compiles a path's code the first time it is used (``_chunk_solver``), and only the solvers that
    path runs: the first answer at fixed T and P compiles neither Gibbs minimisation nor the vessel search."""

    method: int  # METHOD_EXTENT or METHOD_GIBBS
    fixed_volume: bool


def _chunk_solver(method: int, fixed_volume: bool):
    """The chunk solver of one ``SolverPath`` (``method`` and ``fixed_volume`` are constants of the compiled code:
    numba drops the branches of the other paths, so that a path compiles only the solvers it calls)."""

    @kernel
    def solve_chunks(system, patterns, T, PV, N0, pats, ln_k_user, guesses, valid, opts, chunk, rows, ints, work):
        """The states given (already gathered in solving order), in chunks of ``chunk`` consecutive states, one
        state after the other with one set of work buffers (``work``, :class:`~hipeq.solvers._common.WorkBuffers`):
        along a chunk each state is warm-started from the previous converged one of the same pattern where that
        is safe (see the module docstring); each chunk starts as if alone (no previous state, no cubic root and
        no feed polytope carried over), so that its answers do not depend on the other chunks, or on what the
        buffers held before. The answers go to ``rows`` (float, ``answer_layout``) and ``ints`` (STATUS,
        ITERATIONS, OUTER, ROOT, REASON, METHOD, LIQUID, MAY_SPLIT). ``ln_k_user`` and ``guesses`` (the caller's
        start, used when ``opts.guess``) have one row per state or none. Runs without the GIL (``solve_many``
        runs ranges of chunks on Python threads).

        Each state is solved from one or more starts: where several stationary points may exist (``ambiguous``)
        from every cold start, keeping the converged answer of lowest G/RT (A/RT in a sealed vessel); elsewhere
        from the caller's guess or the previous state (warm), then the next cold start only when the previous
        one failed (the first that converges answers)."""
        nc = N0.shape[1]
        nu = system.nu
        nr = nu.shape[0]
        code = system.model_code
        consts = system.model_constants
        w = work_views(work)  # the Work views of the buffers, built once and handed down by name
        layout = answer_layout(nc, nr, system.elements.shape[0])
        empty = T[0:0]
        last_T = -1.0
        warm = False
        last_pat = -1
        for k in range(T.shape[0]):
            if k % chunk == 0:  # a new chunk: as if alone
                w.model_scratch[2, 0] = 0.0
                w.vertex_info[1] = 0
                last_T = -1.0
                warm = False
                last_pat = -1
            row = rows[k]
            n0 = N0[k]
            if valid[k] == 0:
                _mark_invalid(n0, PV[k], method, fixed_volume, layout, row, ints[k])
                continue
            pat = pats[k]
            guess = guesses[k] if guesses.shape[0] > 0 else empty
            n_feed, roots = _prepare_state(system, patterns, T[k], n0, pat,
                                           ln_k_user[k] if ln_k_user.shape[0] > 0 else empty, opts, T[k] != last_T,
                                           w)
            ambiguous = roots == SEVERAL_ROOTS
            if method == METHOD_EXTENT:
                active = patterns.extent_active[pat]
                direction = patterns.extent_start[pat]
            else:
                active = patterns.gibbs_active[pat]
                direction = patterns.gibbs_start[pat]
            special = START_COLD
            if opts.guess:
                special = START_GUESS
            elif warm and pat == last_pat and opts.warm and not ambiguous and code != MODEL_VIRIAL:
                # (the truncated virial has regions with no physical state: a warm start from a neighbour can reach
                # an answer that the state's own cold starts cannot, so it always starts cold, as when alone)
                special = START_WARM
            first_cold = 0 if special == START_COLD else 1
            recorded = False
            best = np.inf
            iterations = 0
            outer_iterations = 0
            for start in range(first_cold + len(COLD_FRACTIONS)):
                started = False
                if start < first_cold and special == START_GUESS:
                    if method == METHOD_EXTENT:
                        for r in range(nr):
                            w.extents[r] = guess[r]
                        started = _start_from_extents(n0, nu, active, w.extents, w.n)
                    else:
                        started = True
                        for i in range(nc):
                            w.n[i] = max(guess[i], 1e-14 * n_feed) if active[i] else 0.0
                elif start < first_cold:  # warm start from the previous state of the chunk
                    same = True
                    prev_total = 0.0
                    for i in range(nc):
                        prev_total += w.n0_prev[i]
                        if w.n0_prev[i] != n0[i]:
                            same = False
                    if same:
                        started = True
                        for i in range(nc):
                            w.n[i] = w.n_prev[i]
                        for r in range(nr):
                            w.extents[r] = w.extents_prev[r]
                        if method == METHOD_EXTENT and not fixed_volume:
                            predict_start(patterns.extent_directions[pat], patterns.extent_basis[pat],
                                          patterns.extent_rank[pat], active, w.g0, w.g0_prev,
                                          math.log(PV[k]) - LN_P_STANDARD - w.ln_p_prev[0], w.factor, w.scale,
                                          w.rhs, w.step, w.n, w.extents)
                    elif method == METHOD_EXTENT:
                        for r in range(nr):
                            w.extents[r] = w.extents_prev[r] * n_feed / prev_total
                        started = _start_from_extents(n0, nu, active, w.extents, w.n)
                    else:
                        started = True
                        for i in range(nc):
                            v = w.n_prev[i] * n_feed / prev_total
                            w.n[i] = max(v, 1e-14 * n_feed) if active[i] else 0.0
                if not started:
                    fraction = COLD_FRACTIONS[start - first_cold] if start >= first_cold else COLD_FRACTIONS[0]
                    _cold_start(n0, active, direction, patterns.extent_start_extents[pat], nr, fraction, w.n,
                                w.extents)
                # ---- solve
                reason = REASON_NONE
                P = PV[k]
                if fixed_volume:
                    status, reason, iters, outer, n_t, z, root, P = _solve_at_volume(
                        method, code, T[k], PV[k], n_feed * R * T[k] / PV[k], n0, patterns.extent_directions[pat],
                        patterns.extent_basis[pat], patterns.extent_rank[pat], patterns.gibbs_rows[pat],
                        patterns.gibbs_rank[pat], patterns.gibbs_null[pat], patterns.gibbs_null_rank[pat], active,
                        consts, opts.coupled, opts.tol, opts.tol_gibbs, opts.tol_volume, opts.max_iterations, w)
                else:
                    status, iters, outer, n_t, z, root = _solve_at_pressure(
                        method, code, T[k], P, n0, patterns.extent_directions[pat], patterns.extent_basis[pat],
                        patterns.extent_rank[pat], patterns.gibbs_rows[pat], patterns.gibbs_rank[pat],
                        patterns.gibbs_null[pat], patterns.gibbs_null_rank[pat], active, consts, opts.coupled,
                        opts.tol, opts.tol_gibbs, opts.max_iterations, w)
                iterations += iters
                outer_iterations += outer
                V = n_t * z * R * T[k] / P
                # the objective compared between starts: G/RT at fixed P, A/RT = G/RT - P V/(R T) at fixed V
                G = 0.0
                for i in range(nc):
                    if active[i]:
                        G += w.n[i] * w.mu[i]
                value = G - n_t * z if fixed_volume else G
                # kept: the first answer, any converged one over a failure, a lower converged one
                keep = not recorded or ints[k, STATUS] != CONVERGED
                if status == CONVERGED and not keep:
                    keep = value < best - 1e-12 * abs(best)
                if keep:
                    _record(row, ints[k], layout, status, reason, root, method, P, V, z, G, n0, active, w.ln_k, nu,
                            system.nu_pinv, system.elements, code, T[k], w.n, w.ln_phi, w.mu, w.extents, w.y,
                            w.b_i)
                    recorded = True
                    if status == CONVERGED:
                        best = value
                if status == CONVERGED and not ambiguous:
                    break
            warm = _finish_state(system, n0, roots, iterations, outer_iterations, fixed_volume, layout, w, row,
                                 ints[k])
            last_T = T[k]
            last_pat = pat

    return solve_chunks


# Every path's chunk solver, and its call site for the scalar path: the argument types follow from the system's
# arrays and the pattern snapshot (everything else is the caller's own buffers and an Options), so the compiled
# version is looked up once per (system, snapshot) instead of being chosen by typing every argument on every call
# (hipeq._jit.DirectCall). Building them compiles nothing: numba compiles a path on its first call.
_PATHS = {path: DirectCall(_chunk_solver(*path))
          for path in (SolverPath(method, fixed_volume) for method in (METHOD_EXTENT, METHOD_GIBBS)
                       for fixed_volume in (False, True))}


FALLBACK_STATUSES = (STALLED, SINGULAR)  # the extent method's failures that Gibbs minimisation answers instead


def _fallback_possible(system: SystemArrays, opts: Options) -> bool:
    """Whether a state whose extent solve ended in FALLBACK_STATUSES (not the caller's iteration limit) is solved
    again by Gibbs minimisation: the extent method was asked for and the reactions span every composition change
    the elements allow."""
    return opts.method == METHOD_EXTENT and system.complete


def solve_one(system: SystemArrays, patterns: PatternArrays, T: float, PV: float, n0: np.ndarray, pat: int,
              ln_k_user: np.ndarray, guess: np.ndarray, opts: Options, row: np.ndarray, ints: np.ndarray) -> None:
    """One state (the scalar path): answers in ``row`` (float, ``answer_layout``) and ``ints`` (INT_COLUMNS).

    Solved as a chunk of one state by the compiled chunk solver of its path (``SolverPath``), called from here
    with arrays of the types ``solve_many`` hands it: the scalar and the batch path then share one compiled
    solver. The first state of a chunk is solved exactly as a lone state: new temperature, no warm start.

    When the extent method fails (``FALLBACK_STATUSES``, ``_fallback_possible``), the state is solved again by
    Gibbs minimisation from its cold starts (the Gibbs path, compiled on first need); that answer is reported,
    with the iterations of both."""
    nc = n0.shape[0]
    nr = system.nu.shape[0]
    k = max(system.elements.shape[0], patterns.gibbs_rows.shape[1])
    work, one_T, one_PV, one_n0, one_pat, one_valid, no_ln_k, no_guess = _scalar_buffers(nc, nr, k)
    one_T[0] = T
    one_PV[0] = PV
    one_n0[0] = n0
    one_pat[0] = pat
    # writeable C-ordered float64 arrays, as solve_many's chunks are: another array type would compile the solver
    # once more
    one_ln_k = np.array(ln_k_user, dtype=np.float64, ndmin=2) if ln_k_user.shape[0] > 0 else no_ln_k
    guesses = np.array(guess, dtype=np.float64, ndmin=2) if opts.guess else no_guess
    rows = row.reshape(1, row.shape[0])  # views: the answers land in the caller's arrays
    ints_one = ints.reshape(1, ints.shape[0])
    # (a plain tuple finds the SolverPath key: a named tuple hashes and compares as its fields)
    _PATHS[opts.method, opts.fixed_volume](
        (system, patterns), system, patterns, one_T, one_PV, one_n0, one_pat, one_ln_k, guesses, one_valid, opts, 1,
        rows, ints_one, work)
    if ints.item(STATUS) in FALLBACK_STATUSES and _fallback_possible(system, opts):
        iterations, outer = int(ints[ITERATIONS]), int(ints[OUTER])
        gibbs = opts._replace(method=METHOD_GIBBS, guess=False)  # from the cold starts, as after any failure
        _PATHS[SolverPath(METHOD_GIBBS, opts.fixed_volume)](
            (system, patterns), system, patterns, one_T, one_PV, one_n0, one_pat, one_ln_k, no_guess, one_valid,
            gibbs, 1, rows, ints_one, work)
        ints[ITERATIONS] += iterations
        ints[OUTER] += outer


_scalar = threading.local()


def _scalar_buffers(nc: int, nr: int, k: int) -> tuple:
    """Work buffers and one-state input arrays of this thread for systems of this size, kept between scalar calls
    (allocating them cost a few microseconds of a ~20 us call). Only the inputs, the cubic root's start and the
    kept polytope vertices are read before being written, and the chunk solver resets them."""
    cache = getattr(_scalar, "buffers", None)
    if cache is None:
        cache = _scalar.buffers = {}
    found = cache.get((nc, nr, k))
    if found is None:
        found = (make_work(nc, nr, k), np.empty(1), np.empty(1), np.empty((1, nc)), np.empty(1, dtype=np.int64),
                 np.ones(1, dtype=np.uint8), np.empty((0, nr)), np.empty((0, 0)))
        cache[(nc, nr, k)] = found
    return found


def solve_many(system: SystemArrays, patterns: PatternArrays, T: np.ndarray, PV: np.ndarray, N0: np.ndarray,
               pats: np.ndarray, ln_k_user: np.ndarray, valid: np.ndarray, opts: Options, chunk: int,
               order: np.ndarray, out: np.ndarray, out_ints: np.ndarray) -> None:
    """Many states (T[k], PV[k], N0[k]) in chunks of ``chunk`` consecutive entries of ``order`` (a permutation
    that puts similar states next to each other), warm-started along a chunk where that is safe. States with
    valid[k] == 0 are skipped and marked INVALID_INPUT; ``pats`` holds one pattern per state or a single one for
    all; ``ln_k_user`` has shape (n, nr) or (0, nr). ``out`` (n, width) receives one packed float row per state
    (``answer_layout``), ``out_ints`` (n, INT_COLUMNS) its integer row.

    The chunks are split into ``numba.get_num_threads()`` contiguous ranges, each solved on a Python thread of
    its own, in blocks of whole chunks (``RANGE_BLOCK`` states): each block gathered into solving order
    (``_gather``), solved by one call of the path's compiled chunk solver (the one the scalar path calls; it runs
    without the GIL and starts each chunk as if alone, so the answers do not depend on the thread count), and
    scattered back (``_scatter``). States the extent method left STALLED or SINGULAR are then solved alone by
    ``solve_one``, which falls back to Gibbs minimisation: their answers are those of the scalar path."""
    n = T.shape[0]
    nc = N0.shape[1]
    nr = system.nu.shape[0]
    ne = max(system.elements.shape[0], patterns.gibbs_rows.shape[1])
    no_guesses = np.empty((0, 0))  # a batch starts from its own answers, never from a caller's guess
    solve = _PATHS[SolverPath(opts.method, opts.fixed_volume)]
    keys = (system, patterns, _BATCH)  # the batch's own compiled-version entry, whatever the scalar path took

    def solve_range(first: int, last: int) -> None:
        """States order[first:last] (whole chunks), in blocks of whole chunks small enough to stay in the
        processor's cache: each gathered into solving order, solved, scattered back."""
        block = chunk * max(1, RANGE_BLOCK // chunk)
        m = min(block, last - first)
        Tl, PVl, N0l = np.empty(m), np.empty(m), np.empty((m, nc))
        patl, validl = np.empty(m, dtype=np.int64), np.empty(m, dtype=np.uint8)
        userl = np.empty((m if ln_k_user.shape[0] > 0 else 0, nr))
        rows, ints = np.empty((m, out.shape[1])), np.empty((m, INT_COLUMNS), dtype=np.int64)
        work = make_work(nc, nr, ne)
        for a in range(first, last, block):
            b = min(last, a + block)
            k = b - a
            user = userl[:k] if userl.shape[0] > 0 else userl
            _gather(order[a:b], T, PV, N0, pats, valid, ln_k_user, Tl[:k], PVl[:k], N0l[:k], patl[:k], validl[:k],
                    user)
            solve(keys, system, patterns, Tl[:k], PVl[:k], N0l[:k], patl[:k], user, no_guesses, validl[:k], opts,
                  chunk, rows[:k], ints[:k], work)
            _scatter(order[a:b], rows[:k], ints[:k], out, out_ints)

    n_chunks = -(-n // chunk)
    run_in_ranges(n_chunks, thread_count(n_chunks),
                  lambda first, last: solve_range(min(n, first * chunk), min(n, last * chunk)))
    if not _fallback_possible(system, opts):
        return
    statuses = out_ints[:, STATUS]
    again = statuses == FALLBACK_STATUSES[0]
    for status in FALLBACK_STATUSES[1:]:
        again |= statuses == status  # (np.isin took 50 us, a third of a 150-state batch's overhead)
    for k in np.flatnonzero(again):
        solve_one(system, patterns, float(T[k]), float(PV[k]), np.ascontiguousarray(N0[k], dtype=np.float64),
                  int(pats[k] if pats.shape[0] > 1 else pats[0]),
                  ln_k_user[k] if ln_k_user.shape[0] > 0 else np.empty(0), np.empty(0), opts, out[k],
                  out_ints[k])


_BATCH = object()  # a key of solve_many's direct calls (hipeq._jit.DirectCall)


@kernel
def _gather(order, T, PV, N0, pats, valid, ln_k_user, Tl, PVl, N0l, patl, validl, userl):
    """Row order[l] of the inputs into row l of a range's own arrays (its states in solving order: the solve then
    reads memory in sequence)."""
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
def _scatter(order, rows, ints, out, out_ints):
    """Row l of a range's answers into row order[l] of the outputs."""
    for l in range(order.shape[0]):
        k = order[l]
        for a in range(rows.shape[1]):
            out[k, a] = rows[l, a]
        for a in range(ints.shape[1]):
            out_ints[k, a] = ints[l, a]


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
