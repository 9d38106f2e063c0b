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
each present component nearly pure.
"""
from __future__ import annotations

import math

import numpy as np

from hipeq._jit import entry, kernel
from hipeq.models._kernels import (LIQUID_LIKE_REDUCED_VOLUME, MODEL_CUBIC, MODEL_VIRIAL, OMEGA, OMEGA_A, OMEGA_B,
                                   ROOT_INVALID,
                                   ROOT_LIQUID, TC, R, effective_critical, ln_phi_dn_tp, ln_phi_tp, tdep_into)

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


@kernel
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


@kernel
def _copy(src, dst):
    for i in range(src.shape[0]):
        dst[i] = src[i]


@kernel
def _normalise(W, nc, present, w):
    wt = 0.0
    for i in range(nc):
        wt += W[i] if present[i] else 0.0
    for i in range(nc):
        w[i] = W[i] / wt if present[i] else 0.0
    return wt


@kernel
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


@kernel
def _one_trial(code, T, P, d, present, aij, bi, consts, W, w, lnphi, jac, scratch, H, L, alpha, step, W_try,
               best_w, best):
    """Seek a stationary point of tm from the trial W (overwritten). ``best`` = [lowest tpd met, its Z, its
    root]; ``best_w`` the composition where it was met (updated only when lower). Returns (converged,
    iterations)."""
    nc = d.shape[0]
    _normalise(W, nc, present, w)
    z, root = ln_phi_tp(code, T, P, w, aij, bi, consts, lnphi)
    if root == ROOT_INVALID:
        return False, 0
    iterations = 0
    tm, tpd, wt, gmax = _tpd_of(W, nc, present, lnphi, d)
    if tpd < best[0]:
        best[0], best[1], best[2] = tpd, z, root
        _copy(w, best_w)
    for _ in range(SS_STEPS):
        if gmax < STABILITY_GRAD_TOL:
            return True, iterations
        for i in range(nc):
            W[i] = math.exp(d[i] - lnphi[i]) if present[i] else 0.0
        _normalise(W, nc, present, w)
        z, root = ln_phi_tp(code, T, P, w, aij, bi, consts, lnphi)
        iterations += 1
        if root == ROOT_INVALID or not math.isfinite(z):
            return False, iterations
        tm, tpd, wt, gmax = _tpd_of(W, nc, present, lnphi, d)
        if tpd < best[0]:
            best[0], best[1], best[2] = tpd, z, root
            _copy(w, best_w)
    if code != MODEL_CUBIC and code != MODEL_VIRIAL:
        return gmax < STABILITY_GRAD_TOL, iterations
    for _ in range(NEWTON_STEPS):
        if gmax < STABILITY_GRAD_TOL:
            return True, iterations
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
            return False, iterations
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
            z, root = ln_phi_tp(code, T, P, w, aij, bi, consts, lnphi)
            if root != ROOT_INVALID and math.isfinite(z):
                tm_new, tpd_new, wt_new, g_new = _tpd_of(W_try, nc, present, lnphi, d)
                if math.isfinite(tm_new) and tm_new <= tm + 1e-14 * max(1.0, abs(tm)):
                    accepted = True
                    break
            t *= 0.5
        iterations += 1
        if not accepted:
            _normalise(W, nc, present, w)
            z, root = ln_phi_tp(code, T, P, w, aij, bi, consts, lnphi)
            return gmax < 1e3 * STABILITY_GRAD_TOL, iterations
        _copy(W_try, W)
        tm, tpd, wt, gmax = tm_new, tpd_new, wt_new, g_new
        if tpd < best[0]:
            best[0], best[1], best[2] = tpd, z, root
            _copy(w, best_w)
    return gmax < STABILITY_GRAD_TOL, iterations


@kernel
def _trial_start(kind, T, P, z, present, comp, heaviest, W):
    """Initial W of trial ``kind`` (see ``TRIAL_*``)."""
    nc = z.shape[0]
    for i in range(nc):
        W[i] = 0.0
    if kind == TRIAL_WILSON_VAPOUR or kind == TRIAL_WILSON_LIQUID:
        for i in range(nc):
            if present[i]:
                tc, pc, _, _ = effective_critical(T, comp, i)
                lnk = math.log(pc / P) + 5.373 * (1.0 + comp[i, OMEGA]) * (1.0 - tc / T)
                lnk = min(max(lnk, -200.0), 200.0)
                W[i] = z[i] * math.exp(lnk if kind == TRIAL_WILSON_VAPOUR else -lnk)
        return
    target = heaviest if kind == TRIAL_HEAVIEST else kind - TRIAL_PURE0
    for i in range(nc):
        if present[i]:
            W[i] = PURE_TRACE * z[i]
    W[target] = 1.0


@entry
def stability_states(code, T, P, Z, comp, consts, kmat, screen, trials, floats, ints):
    """Stability test of the states (T[k] [K], P[k] [Pa], Z[k] mole fractions) of one model: for each state
    ``trials[k]`` gets the trial composition of lowest tpd met (the tested composition itself when no trial
    went below it), ``floats[k]`` = (tpd, Z of that trial, Z of the tested phase) and ``ints[k]`` = (status,
    trial kind or TRIAL_NONE, iterations, root of the trial, root of the tested phase). With ``screen`` a cubic
    state whose present components all lie above their (k_ij-widened) critical bound (``one_root_everywhere``)
    is not tested (status STABILITY_SCREENED). Serial; allocates its work buffers once."""
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
                d[i] = math.log(z[i]) + lnphi[i]
                if heaviest < 0 or comp[i, TC] > comp[heaviest, TC]:
                    heaviest = i
            else:
                d[i] = 0.0
        if n_present < 2:
            continue  # one component: no other composition to split into
        if screen and code == MODEL_CUBIC and one_root_everywhere(T_k, aij, bi, consts, present):
            ints[k, I_STATUS] = STABILITY_SCREENED
            continue
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
            _trial_start(kind, T_k, P[k], z, present, comp, heaviest, W)
            before = best[0]
            converged, its = _one_trial(code, T_k, P[k], d, present, aij, bi, consts, W, w, lnphi, jac, scratch,
                                        H, L, alpha, step, W_try, trials[k], best)
            total += its
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


@kernel
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


@kernel
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
