"""Compiled phase-stability test: the tangent-plane distance of Michelsen (1982) from several trial phases.

Private layer: arrays and scalars in, ``out`` arrays, status codes out; nothing here raises. The Python face is
:mod:`hipeq.models.stability`.

A mixture z at (T, P) is stable as one phase when the tangent-plane distance

    tpd(w) = sum_i w_i [ln w_i + ln phi_i(w) - d_i],   d_i = ln z_i + ln phi_i(z),

is non-negative for every trial composition w (Michelsen 1982, "The isothermal flash problem. Part I.
Stability", Fluid Phase Equilib. 9, 1-19; Michelsen & Mollerup 2007, "Thermodynamic Models: Fundamentals and
Computational Aspects", 2nd ed., ch. 9). Each phase, the tested one and the trial, takes the volume root of lower
Gibbs energy at its own composition (``ln_phi_tp``). The stationary points are sought in the unnormalised
variables W_i (w = W / sum W) on the modified distance

    tm(W) = 1 + sum_i W_i (ln W_i + ln phi_i(w) - d_i - 1),

whose stationary points satisfy ln W_i + ln phi_i(w) = d_i and have tm = 1 - exp(-tpd): first by successive
substitution ln W_i <- d_i - ln phi_i(w), then by Newton's method in alpha_i = 2 sqrt(W_i) (gradient
g_i = sqrt(W_i) G_i with G_i = ln W_i + ln phi_i(w) - d_i, Hessian
H_ij = delta_ij (1 + G_i / 2) + sqrt(W_i W_j) n d ln phi_i / d n_j / W_T; same references, ch. 9), with a
Levenberg shift where H is not positive definite and step halving where tm does not fall. Any W with tm < 0 (any
w with tpd < 0) proves the mixture unstable, so the lowest tpd met on the way is kept even when a trial does not
converge.

Trials (``TRIAL_*``): Wilson K-factors K_i = (P_ci / P) exp[5.373 (1 + omega_i)(1 - T_ci / T)] (Wilson 1969;
Michelsen & Mollerup 2007, ch. 9) giving a vapour-like W = z K and a liquid-like W = z / K; the present component
of highest critical temperature as a nearly pure liquid (the condensing product: water, methanol, ammonia); then
each present component nearly pure. A trial stops early once it lies near the tested phase or near a minimum an
earlier trial reached, where that point is a local minimum of tm with a margin (``stability_states``, "Early
exits"); ``exits=False`` runs every trial to convergence.
"""
from __future__ import annotations

import math

import numpy as np

from hipeq._jit import entry, inner_kernel
from hipeq.models._kernels import (LIQUID_LIKE_REDUCED_VOLUME, MODEL_CUBIC, MODEL_VIRIAL, OMEGA, OMEGA_A, OMEGA_B,
                                   ROOT_INVALID,
                                   ROOT_LIQUID, TC, R, effective_critical, ln_phi_dn_tp, ln_phi_hinted_tp, ln_phi_tp,
                                   tdep_into)

TRIAL_NONE = -1  # no trial went below zero
TRIAL_WILSON_VAPOUR = 0
TRIAL_WILSON_LIQUID = 1
TRIAL_HEAVIEST = 2
TRIAL_PURE0 = 3  # TRIAL_PURE0 + i: component i nearly pure

STABILITY_TPD_TOL = 1e-8  # tpd below -this proves instability (above the rounding of tpd, about 1e-14)
STABILITY_GRAD_TOL = 1e-10  # a stationary point: max_i |ln W_i + ln phi_i(w) - d_i| below this
SS_STEPS = 8  # successive-substitution steps before Newton's method
NEWTON_STEPS = 40
PURE_TRACE = 1e-6  # weight of the other components in a nearly pure trial (relative to their feed fractions)
TRIVIAL_RADIUS2 = 0.1  # early exit: sum_i (ln W_i - ln W*_i)^2 below this (every |ln W_i - ln W*_i| < 0.32)
TRIVIAL_MARGIN = 0.25  # ... near a W* (z or a trial's minimum) whose scaled Hessian of tm minus this I is pos. def.

# status of a test
STABILITY_OK = 0  # every trial converged (to the trivial solution or to a stationary point)
STABILITY_PARTIAL = 1  # some trial did not converge; the verdict rests on the trials that did (and on tpd < 0)
STABILITY_NO_STATE = 2  # the model has no physical state at the tested composition
STABILITY_SCREENED = 3  # not tested: the cubic has one volume root at every composition of these components

# columns of the integer summary (``ints``) and the float summary (``floats``) of one test
I_STATUS, I_TRIAL, I_ITERATIONS, I_TRIAL_ROOT, I_FEED_ROOT = 0, 1, 2, 3, 4
N_INT = 5
F_TPD, F_TRIAL_Z, F_FEED_Z = 0, 1, 2
N_FLOAT = 3


@inner_kernel
def _tpd_of(W, nc, present, lnphi, d):
    """(tm(W), tpd(w), W_T, max |G_i|) with G_i = ln W_i + ln phi_i(w) - d_i over the present components."""
    wt = 0.0
    for i in range(nc):
        if present[i]:
            wt += W[i]
    tm = 1.0
    tpd = 0.0
    gmax = 0.0
    for i in range(nc):
        if present[i] and W[i] > 0.0:
            g = math.log(W[i]) + lnphi[i] - d[i]
            tm += W[i] * (g - 1.0)
            tpd += W[i] / wt * (g - math.log(wt))
            gmax = max(gmax, abs(g))
    return tm, tpd, wt, gmax


@inner_kernel
def _tpd_ln(W, ln_W, nc, present, lnphi, d):
    """As ``_tpd_of`` with ln W_i given (``ln_W``): no logarithm per component."""
    wt = 0.0
    for i in range(nc):
        if present[i]:
            wt += W[i]
    lwt = math.log(wt)
    tm = 1.0
    tpd = 0.0
    gmax = 0.0
    for i in range(nc):
        if present[i] and W[i] > 0.0:
            g = ln_W[i] + lnphi[i] - d[i]
            tm += W[i] * (g - 1.0)
            tpd += W[i] / wt * (g - lwt)
            gmax = max(gmax, abs(g))
    return tm, tpd, wt, gmax


@inner_kernel
def _near_known(ln_W, tm, nc, present, known, known_tm, n_known):
    """True when the trial (ln W, tm) lies within TRIVIAL_RADIUS2 of a known local minimum of tm (a row of
    ``known``, ln W there; the first is the tested phase itself) with tm not below that minimum's tm."""
    for r in range(n_known):
        if tm < known_tm[r]:
            continue
        s = 0.0
        for i in range(nc):
            if present[i]:
                e = ln_W[i] - known[r, i]
                s += e * e
        if s < TRIVIAL_RADIUS2:
            return True
    return False


@inner_kernel
def locally_stable(nc, present, W, wt, jac, margin, H, L, x):
    """True when W (unnormalised, total ``wt``; a stationary point of tm, e.g. the tested phase z itself with
    wt = 1) is a strict local minimum of tm with room to spare: the scaled Hessian of tm there,
    H_ij = delta_ij + sqrt(W_i W_j) n d ln phi_i / d n_j / W_T (``jac`` at w = W / W_T; the Newton matrix of
    ``_one_trial`` where G = 0; Michelsen & Mollerup 2007, ch. 9), minus ``margin`` times the identity, is
    positive definite (its Cholesky factorisation exists). ``H``, ``L``, ``x`` are scratch."""
    for i in range(nc):
        x[i] = 0.0
        if not present[i]:
            continue
        for j in range(nc):
            if present[j]:
                H[i, j] = math.sqrt(W[i] * W[j]) * jac[i, j] / wt
        H[i, i] += 1.0 - margin
    return _cholesky_solve(H, x, nc, present, L, x)


@inner_kernel
def _copy(src, dst):
    for i in range(src.shape[0]):
        dst[i] = src[i]


@inner_kernel
def _normalise(W, nc, present, w):
    wt = 0.0
    for i in range(nc):
        wt += W[i] if present[i] else 0.0
    for i in range(nc):
        w[i] = W[i] / wt if present[i] else 0.0
    return wt


@inner_kernel
def _cholesky_solve(H, g, nc, present, L, x):
    """Solve H x = -g over the present components by Cholesky (L is scratch). False if H is not positive
    definite."""
    for i in range(nc):
        if not present[i]:
            continue
        for j in range(i + 1):
            if not present[j]:
                continue
            s = H[i, j]
            for k in range(j):
                if present[k]:
                    s -= L[i, k] * L[j, k]
            if i == j:
                if not (s > 1e-14):
                    return False
                L[i, i] = math.sqrt(s)
            else:
                L[i, j] = s / L[j, j]
    for i in range(nc):
        if present[i]:
            s = -g[i]
            for k in range(i):
                if present[k]:
                    s -= L[i, k] * x[k]
            x[i] = s / L[i, i]
    for i in range(nc - 1, -1, -1):
        if present[i]:
            s = x[i]
            for k in range(i + 1, nc):
                if present[k]:
                    s -= L[k, i] * x[k]
            x[i] = s / L[i, i]
    return True


@inner_kernel
def _one_trial(code, T, P, d, present, aij, bi, consts, W, w, lnphi, jac, scratch, H, L, alpha, step, W_try,
               best_w, best, ln_W, known, known_tm, n_known):
    """Seek a stationary point of tm from the trial W (overwritten; ``ln_W``: ln W, kept up to date). ``best`` =
    [lowest tpd met, its Z, its root]; ``best_w`` the composition where it was met (updated only when lower). The trial
    stops early (as converged) once it lies within TRIVIAL_RADIUS2 of one of the first ``n_known`` rows of
    ``known`` (local minima of tm with a margin, see ``stability_states``). Returns (converged, iterations,
    stopped early)."""
    nc = d.shape[0]
    _normalise(W, nc, present, w)
    scratch[2, 0] = 0.0  # no root hint for the start
    z, root = ln_phi_hinted_tp(code, T, P, w, aij, bi, consts, lnphi, scratch)
    if root == ROOT_INVALID:
        return False, 0, False
    iterations = 0
    tm, tpd, wt, gmax = _tpd_ln(W, ln_W, nc, present, lnphi, d)
    if tpd < best[0]:
        best[0], best[1], best[2] = tpd, z, root
        _copy(w, best_w)
    for _ in range(SS_STEPS):
        if gmax < STABILITY_GRAD_TOL:
            return True, iterations, False
        if _near_known(ln_W, tm, nc, present, known, known_tm, n_known):
            return True, iterations, True
        for i in range(nc):
            if present[i]:
                ln_W[i] = d[i] - lnphi[i]
                W[i] = math.exp(ln_W[i])
            else:
                W[i] = 0.0
        _normalise(W, nc, present, w)
        z, root = ln_phi_hinted_tp(code, T, P, w, aij, bi, consts, lnphi, scratch)
        iterations += 1
        if root == ROOT_INVALID or not math.isfinite(z):
            return False, iterations, False
        tm, tpd, wt, gmax = _tpd_ln(W, ln_W, nc, present, lnphi, d)
        if tpd < best[0]:
            best[0], best[1], best[2] = tpd, z, root
            _copy(w, best_w)
    if code != MODEL_CUBIC and code != MODEL_VIRIAL:
        return gmax < STABILITY_GRAD_TOL, iterations, False
    for _ in range(NEWTON_STEPS):
        if gmax < STABILITY_GRAD_TOL:
            return True, iterations, False
        if _near_known(ln_W, tm, nc, present, known, known_tm, n_known):
            return True, iterations, True
        z, root = ln_phi_dn_tp(code, T, P, w, aij, bi, consts, lnphi, jac, scratch)
        for i in range(nc):
            if present[i]:
                s = math.sqrt(W[i])
                alpha[i] = 2.0 * s
                step[i] = s * (math.log(W[i]) + lnphi[i] - d[i])  # the gradient, kept in step until solved
        for i in range(nc):
            if not present[i]:
                continue
            si = math.sqrt(W[i])
            for j in range(nc):
                if present[j]:
                    H[i, j] = si * math.sqrt(W[j]) * jac[i, j] / wt
            H[i, i] += 1.0 + 0.5 * step[i] / si
        shift = 0.0
        solved = False
        for _attempt in range(10):
            if _cholesky_solve(H, step, nc, present, L, scratch[0]):
                solved = True
                break
            add = 1e-3 if shift == 0.0 else 9.0 * shift  # the Levenberg shift grows tenfold per attempt
            shift += add
            for i in range(nc):
                if present[i]:
                    H[i, i] += add
        if not solved:
            return False, iterations, False
        x = scratch[0]
        t = 1.0
        accepted = False
        for _half in range(30):
            for i in range(nc):
                if present[i]:
                    a = alpha[i] + t * x[i]
                    W_try[i] = max(0.25 * a * a, 1e-300)
                else:
                    W_try[i] = 0.0
            _normalise(W_try, nc, present, w)
            z, root = ln_phi_hinted_tp(code, T, P, w, aij, bi, consts, lnphi, scratch)
            if root != ROOT_INVALID and math.isfinite(z):
                tm_new, tpd_new, wt_new, g_new = _tpd_of(W_try, nc, present, lnphi, d)
                if math.isfinite(tm_new) and tm_new <= tm + 1e-14 * max(1.0, abs(tm)):
                    accepted = True
                    break
            t *= 0.5
        iterations += 1
        if not accepted:
            _normalise(W, nc, present, w)
            z, root = ln_phi_hinted_tp(code, T, P, w, aij, bi, consts, lnphi, scratch)
            return gmax < 1e3 * STABILITY_GRAD_TOL, iterations, False
        _copy(W_try, W)
        for i in range(nc):
            ln_W[i] = math.log(W[i]) if present[i] else 0.0
        tm, tpd, wt, gmax = tm_new, tpd_new, wt_new, g_new
        if tpd < best[0]:
            best[0], best[1], best[2] = tpd, z, root
            _copy(w, best_w)
    return gmax < STABILITY_GRAD_TOL, iterations, False


@inner_kernel
def _trial_start(kind, T, P, z, ln_z, present, comp, heaviest, W, ln_W):
    """Initial W of trial ``kind`` (see ``TRIAL_*``) and its ln W over the present components (``ln_z``: ln of
    the tested composition there)."""
    nc = z.shape[0]
    for i in range(nc):
        W[i] = 0.0
        ln_W[i] = 0.0
    if kind == TRIAL_WILSON_VAPOUR or kind == TRIAL_WILSON_LIQUID:
        for i in range(nc):
            if present[i]:
                tc, pc, _, _ = effective_critical(T, comp, i)
                lnk = math.log(pc / P) + 5.373 * (1.0 + comp[i, OMEGA]) * (1.0 - tc / T)
                lnk = min(max(lnk, -200.0), 200.0)
                ln_W[i] = ln_z[i] + (lnk if kind == TRIAL_WILSON_VAPOUR else -lnk)
                W[i] = math.exp(ln_W[i])
        return
    target = heaviest if kind == TRIAL_HEAVIEST else kind - TRIAL_PURE0
    ln_trace = math.log(PURE_TRACE)
    for i in range(nc):
        if present[i]:
            W[i] = PURE_TRACE * z[i]
            ln_W[i] = ln_trace + ln_z[i]
    W[target] = 1.0
    ln_W[target] = 0.0


@entry
def stability_states(code, T, P, Z, comp, consts, kmat, screen, exits, trials, floats, ints):
    """Stability test of the states (T[k] [K], P[k] [Pa], Z[k] mole fractions) of one model: for each state
    ``trials[k]`` gets the trial composition of lowest tpd met (the tested composition itself when no trial
    went below it), ``floats[k]`` = (tpd, Z of that trial, Z of the tested phase) and ``ints[k]`` = (status,
    trial kind or TRIAL_NONE, iterations, root of the trial, root of the tested phase). With ``screen`` a cubic
    state whose present components all lie above their (k_ij-widened) critical bound (``one_root_everywhere``)
    is not tested (status STABILITY_SCREENED). With ``exits`` a trial stops early once it heads for the trivial
    solution (below); without, every trial runs to convergence (the exhaustive form the tests compare against).
    Serial; allocates its work buffers once.

    Early exits. Stopping a trial that approaches the trivial solution is common practice (Michelsen &
    Mollerup 2007, ch. 9); the criterion here is our own. A trial stops, counted as converged, when its current
    W lies near a known local minimum W* of tm and can only end there:
      (a) W* is the tested phase z (tm = 0), or a stationary point an earlier trial of the same state converged
          to; in both cases the scaled Hessian of tm there, H*_ij = delta_ij + sqrt(W*_i W*_j) n d ln phi_i /
          d n_j / W*_T (the Newton matrix of ``_one_trial`` at G = 0), minus TRIVIAL_MARGIN = 0.25 times the
          identity is positive definite (``locally_stable``: one derivative evaluation per state and per new
          minimum);
      (b) sum_i (ln W_i - ln W*_i)^2 < TRIVIAL_RADIUS2 = 0.1 (every |ln W_i - ln W*_i| < 0.32);
      (c) tm(W) >= tm(W*) (for z: tm >= 0; the trial has met no lower point near W*).
    Why this hides no instability: the Hessian of tm in alpha_i = 2 sqrt(W_i) is, at any W, exactly
    H_ij = delta_ij (1 + G_i / 2) + sqrt(W_i W_j) n d ln phi_i / d n_j / W_T with G_i = ln W_i + ln phi_i(w) -
    d_i (same reference), so from W* to a point of the ball (b) its diagonal moves by half of
    ln W_i - ln W*_i (at most 0.16) plus half the change of ln phi_i, and the second term by the change of the
    fugacity-coefficient derivatives over that composition change. While those changes stay below the margin
    (an assumption on the model's smoothness over a composition change of about 30 %, not a proof) tm is
    convex over the ball: W* is its only stationary point there, with the lowest tm, so the trial could leave
    the ball only by raising tm (the damped Newton steps never do; successive substitution's linear map near W*,
    I - H*, contracts while the eigenvalues of H* lie between 0.25 and 2) and otherwise ends at W*, whose tpd
    is already on record. Where z is near its stability limit (an eigenvalue of H below 0.25: near a spinodal
    or a critical point) no trial stops near z. The verdicts and the lowest tpd are checked against the
    exhaustive form and against random trial compositions (tests/properties/test_stability_exits.py)."""
    n, nc = Z.shape
    aij = np.empty((nc, nc))
    daij = np.empty((nc, nc))
    bi = np.empty(nc)
    dbi = np.empty(nc)
    lnphi = np.empty(nc)
    d = np.empty(nc)
    present = np.empty(nc, dtype=np.bool_)
    W = np.empty(nc)
    w = np.empty(nc)
    jac = np.empty((nc, nc))
    scratch = np.zeros((3, nc))
    H = np.empty((nc, nc))
    L = np.zeros((nc, nc))
    alpha = np.empty(nc)
    step = np.empty(nc)
    W_try = np.empty(nc)
    best = np.empty(3)
    ln_W = np.zeros(nc)
    ln_z = np.zeros(nc)
    known = np.zeros((TRIAL_PURE0 + nc + 1, nc))  # ln W at the local minima of tm met so far in a state
    known_tm = np.zeros(TRIAL_PURE0 + nc + 1)
    t_prev = -1.0
    for k in range(n):
        T_k = T[k]
        if T_k != t_prev:
            tdep_into(code, T_k, comp, consts, kmat, aij, bi, daij, dbi)
            t_prev = T_k
        z = Z[k]
        trials[k, :] = z
        floats[k, F_TPD] = 0.0
        ints[k, I_TRIAL] = TRIAL_NONE
        ints[k, I_ITERATIONS] = 0
        if exits:  # with n d ln phi_i / d n_j for the local-stability check below (jac)
            zf, rootf = ln_phi_dn_tp(code, T_k, P[k], z, aij, bi, consts, lnphi, jac, scratch)
        else:
            zf, rootf = ln_phi_tp(code, T_k, P[k], z, aij, bi, consts, lnphi)
        floats[k, F_FEED_Z] = zf
        floats[k, F_TRIAL_Z] = zf
        ints[k, I_FEED_ROOT] = _label(T_k, P[k], z, bi, zf, rootf)
        ints[k, I_TRIAL_ROOT] = ints[k, I_FEED_ROOT]
        if rootf == ROOT_INVALID:
            ints[k, I_STATUS] = STABILITY_NO_STATE
            continue
        ints[k, I_STATUS] = STABILITY_OK
        if code != MODEL_CUBIC and code != MODEL_VIRIAL:
            continue  # ideal gas, Lewis-Randall rule: ideal mixing in composition, always stable
        n_present = 0
        heaviest = -1
        for i in range(nc):
            present[i] = z[i] > 0.0
            if present[i]:
                n_present += 1
                ln_z[i] = math.log(z[i])
                d[i] = ln_z[i] + lnphi[i]
                if heaviest < 0 or comp[i, TC] > comp[heaviest, TC]:
                    heaviest = i
            else:
                d[i] = 0.0
                ln_z[i] = 0.0
        if n_present < 2:
            continue  # one component: no other composition to split into
        if screen and code == MODEL_CUBIC and one_root_everywhere(T_k, aij, bi, consts, present):
            ints[k, I_STATUS] = STABILITY_SCREENED
            continue
        n_known = 0
        if exits:
            if locally_stable(nc, present, z, 1.0, jac, TRIVIAL_MARGIN, H, L, alpha):
                known[0, :] = ln_z
                known_tm[0] = 0.0
                n_known = 1
        best[0] = 0.0
        best[1] = zf
        best[2] = rootf
        n_trials = TRIAL_PURE0 + nc
        total = 0
        for kind in range(n_trials):
            if kind >= TRIAL_PURE0 and not present[kind - TRIAL_PURE0]:
                continue
            if kind >= TRIAL_PURE0 and kind - TRIAL_PURE0 == heaviest:
                continue  # the same start as TRIAL_HEAVIEST
            _trial_start(kind, T_k, P[k], z, ln_z, present, comp, heaviest, W, ln_W)
            before = best[0]
            converged, its, early = _one_trial(code, T_k, P[k], d, present, aij, bi, consts, W, w, lnphi, jac,
                                               scratch, H, L, alpha, step, W_try, trials[k], best, ln_W, known,
                                               known_tm, n_known)
            total += its
            if exits and converged and not early and n_known < known.shape[0]:
                # a new stationary point: later trials may stop near it if it is a local minimum with a margin
                tm, _, wt, _ = _tpd_ln(W, ln_W, nc, present, lnphi, d)
                if not _near_known(ln_W, math.inf, nc, present, known, known_tm, n_known):
                    zt, roott = ln_phi_dn_tp(code, T_k, P[k], w, aij, bi, consts, lnphi, jac, scratch)
                    if roott != ROOT_INVALID and locally_stable(nc, present, W, wt, jac, TRIVIAL_MARGIN, H, L,
                                                                alpha):
                        for i in range(nc):
                            known[n_known, i] = ln_W[i]
                        known_tm[n_known] = tm
                        n_known += 1
            if best[0] < before and best[0] < -STABILITY_TPD_TOL:
                ints[k, I_TRIAL] = kind
            if not converged:
                ints[k, I_STATUS] = STABILITY_PARTIAL
        if best[0] < -STABILITY_TPD_TOL:
            floats[k, F_TPD] = best[0]
            floats[k, F_TRIAL_Z] = best[1]
            ints[k, I_TRIAL_ROOT] = _label(T_k, P[k], trials[k], bi, best[1], int(best[2]))
            ints[k, I_STATUS] = STABILITY_OK  # a negative tpd proves instability whatever the other trials did
        else:  # no trial below the tested phase: its own tpd, 0, is the minimum
            floats[k, F_TPD] = 0.0
            trials[k, :] = z
            ints[k, I_TRIAL] = TRIAL_NONE
        ints[k, I_ITERATIONS] = total


@inner_kernel
def one_root_everywhere(T, aij, bi, consts, present):
    """True when the one-fluid cubic has a single volume root at every composition of the present components:
    a/(b R T) <= c max_i a_i/(b_i R T) < Omega_a/Omega_b with c = max(1, max_ij a_ij/sqrt(a_i a_j)) (the first
    stage of ``hipeq.solvers._driver.several_roots_possible``; Michelsen & Mollerup 2007, ch. 3). Such a mixture
    has no vapour-liquid split; a split between two dense supercritical fluids (gas-gas immiscibility) is not
    excluded by it, which is why the screen is an option."""
    nc = bi.shape[0]
    limit = consts[OMEGA_A] / consts[OMEGA_B]
    c = 1.0
    for i in range(nc):
        if present[i] and aij[i, i] > 0.0:
            for j in range(i + 1, nc):
                if present[j] and aij[j, j] > 0.0:
                    c = max(c, aij[i, j] / math.sqrt(aij[i, i] * aij[j, j]))
    for i in range(nc):
        if present[i] and bi[i] > 0.0 and c * aij[i, i] / (bi[i] * R * T) >= limit:
            return False
    return True


@inner_kernel
def _label(T, P, y, bi, z, root):
    """The root code, with ROOT_LIQUID also where v/b < LIQUID_LIKE_REDUCED_VOLUME (the rule of
    ``hipeq.models._states.finish_states``)."""
    if root == ROOT_INVALID or root == ROOT_LIQUID:
        return root
    b = 0.0
    for i in range(y.shape[0]):
        b += y[i] * bi[i]
    if z * R * T / P < LIQUID_LIKE_REDUCED_VOLUME * b:
        return ROOT_LIQUID
    return root
