"""Compiled extent-of-reaction solver at fixed T and P: Newton on the extents of the independent reactions.

Private layer: arrays and scalars in, work buffers, status codes out; nothing here raises.

Amounts n_i = n0_i + sum_k nu_ki xi_k. At equilibrium every independent reaction k satisfies

    sum_i nu_ki mu_i / (R T) = sum_i nu_ki (ln y_i + ln phi_i) + (sum_i nu_ki) ln(P/P0) - ln K_k = 0,

which is the stationarity of G(xi) = sum_i n_i mu_i at fixed T, P (Smith & Missen 1982, "Chemical Reaction
Equilibrium Analysis", ch. 4 and 7). The Newton matrix is the Hessian of G/RT in the extents,

    H_kl = sum_i nu_ki nu_li / n_i - dnu_k dnu_l / n_T + sum_ij nu_ki (n_T d ln phi_i / d n_j) nu_lj / n_T,

(Michelsen & Mollerup 2007, "Thermodynamic Models: Fundamentals and Computational Aspects", 2nd ed., ch. 2
for the last term), so every Newton step is a descent direction of G when H is positive definite; otherwise the
ideal-gas part (always positive definite for n > 0) is used. Steps are cut to keep 99 % of every amount
(fraction to the boundary) and then backtracked until G decreases (Armijo rule), or accepted outright when the
predicted decrease is below the rounding level of G. Amounts are carried and updated directly, not recomputed
from n0 + nu^T xi, so that species driven to 1e-20 of their feed keep full relative precision.

Reactions that cannot proceed (a species on each side absent and not formable) are removed by solving in the
reduced extents t, xi = xi_start + Zb t, where the columns of Zb span the extent directions that leave every
absent species at zero (built in Python per pattern of zero feeds).

Schemes: "coupled" evaluates ln phi and its composition derivatives at every Newton iterate; "nested" freezes
ln phi in an inner Newton loop (ideal-solution Hessian, no equation-of-state calls) and updates it outside until
the true residuals meet the tolerance.
"""
from __future__ import annotations

from hipeq._jit import inline_kernel, inner_kernel
from hipeq.solvers._common import (CONVERGED, FROZEN_PHI, MAX_ITERATIONS, NO_PHYSICAL_STATE, SINGULAR, STALLED,
                                   WITH_PHI, WITH_REDUCED, cholesky_resolve, cholesky_solve, evaluate)

FRACTION_TO_BOUNDARY = 0.99
ARMIJO = 1e-4
MAX_BACKTRACKS = 40
CHORD_SWITCH = 1e-5  # coupled scheme: below this residual the last Jacobian of ln phi is reused
POLISH_TOL = 1e-13  # after meeting the tolerance, Newton steps continue down to this (see extent_solve)
MAX_POLISH = 3


@inline_kernel
def _gradient(W, mu, active, neff, grad):
    nc = W.shape[0]
    worst = 0.0
    for t in range(neff):
        v = 0.0
        for i in range(nc):
            if active[i]:
                v += W[i, t] * mu[i]
        grad[t] = v
        worst = max(worst, abs(v))
    return worst


@inline_kernel
def _hessian(W, n, n_t, M, with_phi, active, neff, H):
    """H = W^T diag(1/n) W - (W^T 1)(1^T W)/n_T [+ M/n_T, M = W^T (n_T d ln phi/d n) W when with_phi]."""
    nc = W.shape[0]
    for t in range(neff):
        for u in range(t + 1):
            v = 0.0
            st = 0.0
            su = 0.0
            for i in range(nc):
                if active[i]:
                    v += W[i, t] * W[i, u] / n[i]
                    st += W[i, t]
                    su += W[i, u]
            v -= st * su / n_t
            if with_phi:
                v += M[t, u] / n_t
            H[t, u] = v
            H[u, t] = v


@inline_kernel
def _step(mode, code, T, P, ln_p, g0, W, Zb, neff, active, xi, aij, bi, consts, n_t, z, g, views):
    """One damped Newton step from the current point (n, y, ln phi, mu and M = W^T J W in ``views``; grad holds
    the gradient). On success the accepted point replaces the current one and (-1, n_T, Z, root, G) is returned;
    otherwise a status code. In FROZEN_PHI mode ln phi is left as it is (the nested scheme's inner loop) and the
    ideal-solution Hessian is used; otherwise the Hessian includes the ln phi derivatives (the ideal part alone
    if that is not positive definite). In WITH_PHI mode the trial point is evaluated without the derivatives and
    the previous ones are kept (a chord step near the answer).
    """
    n, y, ln_phi, mu, M, grad, dn, rhs, d, H, L, scale_v, n_try, y_try, ln_phi_try, M_try, mu_try, jac, scr = views
    nc = W.shape[0]
    use_jac = mode != FROZEN_PHI  # the Hessian includes the (current or previous) ln phi derivatives
    for t in range(neff):
        rhs[t] = -grad[t]
    _hessian(W, n, n_t, M, use_jac, active, neff, H)
    ok = cholesky_solve(H, rhs, neff, d, L, scale_v)
    if not ok and use_jac:
        _hessian(W, n, n_t, M, False, active, neff, H)
        ok = cholesky_solve(H, rhs, neff, d, L, scale_v)
    if not ok:
        return SINGULAR, n_t, z, 0, g
    slope = 0.0
    for t in range(neff):
        slope += grad[t] * d[t]
    alpha = 1.0
    scale = n_t
    for i in range(nc):
        if active[i]:
            v = 0.0
            for t in range(neff):
                v += W[i, t] * d[t]
            dn[i] = v
            scale += abs(n[i] * mu[i])
            if v < 0.0 and -v * alpha > FRACTION_TO_BOUNDARY * n[i]:
                alpha = FRACTION_TO_BOUNDARY * n[i] / -v
        else:
            dn[i] = 0.0
    noise = 1e-13 * scale
    invalid = 0
    for _ in range(MAX_BACKTRACKS):
        for i in range(nc):
            if active[i]:
                v = n[i] + alpha * dn[i]
                n_try[i] = v if v > 0.0 else n[i] * (1.0 - FRACTION_TO_BOUNDARY)
            else:
                n_try[i] = 0.0
        if mode == FROZEN_PHI:
            for i in range(nc):
                ln_phi_try[i] = ln_phi[i]
        nt_t, z_t, root_t, g_t = evaluate(mode, code, T, P, ln_p, n_try, active, g0, aij, bi, consts, y_try,
                                          ln_phi_try, jac, mu_try, W, neff, M_try, scr)
        if root_t < 0:
            invalid += 1
            alpha *= 0.5
            continue
        if g_t <= g + ARMIJO * alpha * slope or -alpha * slope <= noise:
            for i in range(nc):
                n[i] = n_try[i]
                y[i] = y_try[i]
                ln_phi[i] = ln_phi_try[i]
                mu[i] = mu_try[i]
            if mode == WITH_REDUCED:
                for t in range(neff):
                    for u in range(neff):
                        M[t, u] = M_try[t, u]
            for r in range(Zb.shape[0]):
                v = 0.0
                for t in range(neff):
                    v += Zb[r, t] * d[t]
                xi[r] += alpha * v
            return -1, nt_t, z_t, root_t, g_t
        denom = g_t - g - slope * alpha
        trial = -slope * alpha * alpha / (2.0 * denom) if denom > 0.0 else 0.5 * alpha
        alpha = max(0.1 * alpha, min(0.5 * alpha, trial))
    if invalid == MAX_BACKTRACKS:
        return NO_PHYSICAL_STATE, n_t, z, -1, g
    return STALLED, n_t, z, 0, g


@inner_kernel
def predict_start(W, Zb, neff, active, g0, g0_prev, dlnp, L, scale, rhs, d, n, xi):
    """Move a warm start (the previous state's answer, in n and xi) by one Newton step for the change of
    conditions: the gradient there is W^T (Delta g0 + Delta ln P) to first order, with the fugacity coefficients
    held (their change is left to the solver), and the Newton matrix is the previous state's last factor
    (``cholesky_resolve``). The step is cut to keep half of every amount; nothing happens without a usable
    factor."""
    nc = W.shape[0]
    for t in range(neff):
        v = 0.0
        for i in range(nc):
            if W[i, t] != 0.0:
                v += W[i, t] * (g0[i] - g0_prev[i] + dlnp)
        rhs[t] = -v
    if not cholesky_resolve(L, scale, rhs, neff, d):
        return
    alpha = 1.0
    for i in range(nc):
        if active[i]:
            v = 0.0
            for t in range(neff):
                v += W[i, t] * d[t]
            if v < 0.0 and -v * alpha > 0.5 * n[i]:
                alpha = 0.5 * n[i] / -v
    for i in range(nc):
        if active[i]:
            v = 0.0
            for t in range(neff):
                v += W[i, t] * d[t]
            n[i] += alpha * v
    for r in range(Zb.shape[0]):
        v = 0.0
        for t in range(neff):
            v += Zb[r, t] * d[t]
        xi[r] += alpha * v


@inner_kernel
def extent_solve(code, T, P, ln_p, g0, W, Zb, neff, active, xi, aij, bi, consts, coupled, tol, max_iter,
                 w):
    """Solve the equilibrium conditions in the reduced extents from the start in row F_N (amounts, positive on
    the active species) and ``xi`` (extents matching them; updated in place).

    W = nu^T Zb (nc x neff). Returns (status, iterations, outer_iterations, n_T, Z, root); on return the rows
    F_N, F_Y, F_LNPHI and F_MU hold the last iterate, with ln phi evaluated there.
    """
    n = w.n
    y = w.y
    ln_phi = w.ln_phi
    mu = w.mu
    M = w.reduced_jac
    jac = w.jac
    scr = w.model_scratch
    grad = w.grad
    views = (n, y, ln_phi, mu, M, grad, w.dn, w.rhs, w.step, w.hessian, w.factor, w.scale, w.n_try,
             w.y_try, w.ln_phi_try, w.reduced_jac_try, w.mu_try, jac, scr)
    first = WITH_REDUCED if coupled else WITH_PHI
    n_t, z, root, g = evaluate(first, code, T, P, ln_p, n, active, g0, aij, bi, consts, y, ln_phi, jac, mu, W, neff,
                               M, scr)
    if root < 0:
        return NO_PHYSICAL_STATE, 0, 0, n_t, z, root
    mode = WITH_REDUCED if coupled else FROZEN_PHI
    inner_tol = 0.1 * tol
    iterations = 0
    outer = 0
    polish = 0
    last = 0.0
    inner = False  # nested scheme: inside the loop with ln phi frozen
    while True:
        gmax = _gradient(W, mu, active, neff, grad)
        if inner and (gmax <= inner_tol or iterations >= max_iter):
            n_t, z, root, g = evaluate(WITH_PHI, code, T, P, ln_p, n, active, g0, aij, bi, consts, y, ln_phi,
                                       jac, mu, W, neff, M, scr)
            if root < 0:
                return NO_PHYSICAL_STATE, iterations, outer, n_t, z, root
            inner = False
            gmax = _gradient(W, mu, active, neff, grad)
        met = not inner and gmax <= tol  # the current iterate meets the tolerance
        if not inner:
            if met:
                # met; polish while the steps still halve the residual, so that the answer does not depend on
                # the start (a warm start stopping at 5e-12 and a cold one at 1e-16 would differ by ~1e-12)
                if gmax <= POLISH_TOL or polish >= MAX_POLISH or (polish > 0 and gmax > 0.5 * last):
                    return CONVERGED, iterations, outer, n_t, z, root
                polish += 1
                last = gmax
            elif iterations >= max_iter:
                return MAX_ITERATIONS, iterations, outer, n_t, z, root
            if not coupled:
                outer += 1
                inner = True
        iterations += 1
        # near the answer the trial point is evaluated without the composition derivatives: if it converges
        # (the usual case) they were not needed; if not, the next step reuses the previous ones (a chord step)
        trial = WITH_PHI if (coupled and gmax < CHORD_SWITCH) else mode
        status, n_t, z_new, root_new, g = _step(trial, code, T, P, ln_p, g0, W, Zb, neff, active, xi, aij, bi,
                                                consts, n_t, z, g, views)
        if status >= 0:
            if met:  # a polish step failed; the current iterate (left as it was) meets the tolerance
                return CONVERGED, iterations, outer, n_t, z, root
            return status, iterations, outer, n_t, z, root
        if coupled:
            z = z_new
            root = root_new
