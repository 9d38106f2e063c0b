"""Compiled Gibbs-energy minimisation at fixed T and P with element-balance constraints (no reactions needed).

Private layer: arrays and scalars in, work buffers, status codes out; nothing here raises.

Minimise G/RT = sum_i n_i mu_i/RT subject to sum_i a_ei n_i = b_e. At the minimum (Lagrange conditions, the
element-potential form of White, Johnson & Dantzig 1958, J. Chem. Phys. 28, 751; Smith & Missen 1982,
"Chemical Reaction Equilibrium Analysis", ch. 6):

    r_i = g0_i + ln(P/P0) + ln n_i - ln n_T + ln phi_i - sum_e a_ei lambda_e = 0   (every species present)
    e_e = sum_i a_ei n_i - b_e = 0                                                 (every element)

Newton in the logarithms of the amounts, u_i = d ln n_i, with the element potentials lambda and
v = d n_T / n_T as further unknowns (the RAND linearisation of White et al. 1958 written in log-amounts, with
the non-ideal term of Michelsen & Mollerup 2007, "Thermodynamic Models", 2nd ed., ch. 12):

    u_i - v + sum_j (n_T d ln phi_i/d n_j) (n_j / n_T) u_j - sum_e a_ei d lambda_e = -r_i
    sum_i a_ei n_i u_i = -e_e
    sum_i n_i u_i - n_T v = 0

Amounts are updated multiplicatively, n_i <- n_i exp(alpha u_i), so they stay positive and trace species keep
full relative precision. The step length alpha caps the change of ln n_i at 2 for species above 1e-3 in mole
fraction (a trust region, common practice), lets trace species fall freely and lets them rise up to about
1e-3. Element rows are an orthonormal basis of the row space of the element matrix restricted to the species
that can be present (built in Python per pattern of zero feeds), so that the system is never rank-deficient.

Schemes: "coupled" includes the ln phi derivatives (full Newton); "nested" freezes ln phi in an inner loop
(the ideal-solution RAND iteration) and updates it outside.
"""
from __future__ import annotations

import math

from hipeq._jit import inline_kernel, inner_kernel
from hipeq.solvers._common import (CONVERGED, ELEMENT_ATOL, FROZEN_PHI, MAX_ITERATIONS, NO_PHYSICAL_STATE,
                                   SINGULAR, WITH_JACOBIAN, WITH_PHI, cholesky_solve, evaluate, lu_solve)

LOG_STEP_MAJOR = 2.0  # largest change of ln n_i per iteration for species above TRACE in mole fraction
TRACE = 1e-3
ELEMENT_TOL = 1e-12  # element-balance residual at convergence, relative to each element's own feed amount
POLISH_TOL = 1e-13  # after meeting the tolerance, Newton steps continue down to this (see gibbs_solve)
MAX_POLISH = 3


@inline_kernel
def _fit_potentials(Q, neq, n, mu, active, hessian, rhs, potentials, factor, scale):
    """Element potentials by weighted least squares, min sum_i w_i (mu_i - sum_e Q_ei lambda_e)^2 with w_i = n_i;
    when that normal matrix is singular to working precision (an element carried only by 1e-12 mol beside
    9 mol of a species carrying the others makes two rows nearly parallel in that weighting), with w_i = 1 on the
    active species, whose normal matrix Q Q^T is regular (independent rows). Only a start for the Newton
    iteration, which corrects the potentials."""
    if neq == 0:
        return True
    nc = n.shape[0]
    H = hessian
    for weighted in (True, False):
        for e in range(neq):
            v = 0.0
            for i in range(nc):
                if active[i]:
                    v += Q[e, i] * (n[i] if weighted else 1.0) * mu[i]
            rhs[e] = v
            for f in range(e + 1):
                v = 0.0
                for i in range(nc):
                    if active[i]:
                        v += Q[e, i] * Q[f, i] * (n[i] if weighted else 1.0)
                H[e, f] = v
                H[f, e] = v
        if cholesky_solve(H, rhs, neq, potentials, factor, scale):
            return True
    return False


@inline_kernel
def _residuals(Q, neq, n, mu, active, r, potentials, element_totals, element_balance, element_scale):
    nc = n.shape[0]
    lam = potentials
    rmax = 0.0
    for i in range(nc):
        if active[i]:
            v = mu[i]
            for e in range(neq):
                v -= Q[e, i] * lam[e]
            r[i] = v
            rmax = max(rmax, abs(v))
        else:
            r[i] = 0.0
    emax = 0.0
    for e in range(neq):
        v = -element_totals[e]
        for i in range(nc):
            v += Q[e, i] * n[i]
        element_balance[e] = v
        emax = max(emax, abs(v) / element_scale[e])
    return rmax, emax


@inline_kernel
def _newton(Q, neq, n, n_t, use_jac, jac, active, r, kkt_index, kkt_rhs, kkt, element_scale, element_balance,
            kkt_solution, pivots):
    """Assemble and solve the log-amount Newton system; returns (ok, number of active species)."""
    nc = n.shape[0]
    idx = kkt_index
    rhs = kkt_rhs
    M = kkt
    m = 0
    for i in range(nc):
        if active[i]:
            idx[m] = i
            m += 1
    size = m + neq + 1
    for a in range(size):
        for c in range(size):
            M[a, c] = 0.0
    for a in range(m):
        i = idx[a]
        M[a, a] = 1.0
        if use_jac:
            for c in range(m):
                j = idx[c]
                M[a, c] += jac[i, j] * n[j] / n_t
        for e in range(neq):
            M[a, m + e] = -Q[e, i]
        M[a, size - 1] = -1.0
        rhs[a] = -r[i]
    for e in range(neq):
        for c in range(m):
            j = idx[c]
            M[m + e, c] = Q[e, j] * n[j] / element_scale[e]
        rhs[m + e] = -element_balance[e] / element_scale[e]
    for c in range(m):
        M[size - 1, c] = n[idx[c]] / n_t
    M[size - 1, size - 1] = -1.0
    rhs[size - 1] = 0.0
    return lu_solve(M, rhs, size, kkt_solution, pivots), m


@inline_kernel
def _locally_convex(n, n_t, jac, active, Nb, n_null, H, L, scale, rhs, x):
    """True when G is locally convex along the feasible composition changes (columns of Nb, the null space of
    the element balances): Nb^T [diag(1/n) - 1 1^T / n_T + Phi / n_T] Nb positive definite, Phi_ij =
    n_T d ln phi_i / d n_j. Otherwise the step uses the ideal-solution matrix (always positive definite there),
    as the extent formulation does with its reduced Hessian."""
    nc = n.shape[0]
    for a in range(n_null):
        for b in range(a + 1):
            v = 0.0
            sa = 0.0
            sb = 0.0
            q = 0.0
            for i in range(nc):
                if active[i] and Nb[i, a] != 0.0:
                    v += Nb[i, a] * Nb[i, b] / n[i]
                    for j in range(nc):
                        if active[j]:
                            q += Nb[i, a] * jac[i, j] * Nb[j, b]
                if active[i]:
                    sa += Nb[i, a]
                    sb += Nb[i, b]
            v += (q - sa * sb) / n_t
            H[a, b] = v
            H[b, a] = v
        rhs[a] = 1.0
    if n_null == 0:
        return True
    return cholesky_solve(H, rhs, n_null, x, L, scale)


@inline_kernel
def _update(neq, n, n_t, m, kkt_index, kkt_solution, potentials):
    """Damped multiplicative update of the amounts and additive update of the element potentials."""
    idx = kkt_index
    sol = kkt_solution
    alpha = 1.0
    for a in range(m):
        i = idx[a]
        u = sol[a]
        y = n[i] / n_t
        if u > 0.0:
            limit = LOG_STEP_MAJOR if y > TRACE else LOG_STEP_MAJOR + math.log(TRACE / y)
        elif y > TRACE:
            limit = LOG_STEP_MAJOR
        else:
            continue
        if abs(u) * alpha > limit:
            alpha = limit / abs(u)
    for a in range(m):
        i = idx[a]
        step = alpha * sol[a]
        if step < -200.0:
            step = -200.0
        n[i] = n[i] * math.exp(step)
        if not (n[i] > 0.0):
            n[i] = 1e-300
    for e in range(neq):
        potentials[e] += alpha * sol[m + e]
    return alpha


@inner_kernel
def gibbs_solve(code, T, P, ln_p, n0, g0, Q, neq, Nb, n_null, active, aij, bi, consts, coupled, tol, max_iter,
                w):
    """Minimise G at fixed T, P from the start in row F_N (positive on the active species, zero elsewhere).

    The first neq rows of Q are independent rows of the element matrix restricted to the active species (one
    element each, so that every balance is solved relative to its own feed amount b_e, with the floor
    ELEMENT_ATOL sum_e b_e: a trace element keeps its balance); the first n_null columns of Nb a basis of their
    null space. Once the tolerances are met, up to MAX_POLISH further Newton steps run while they still reduce
    the residual by half, down to POLISH_TOL: the answer then no longer depends on where the iteration started.
    Returns (status, iterations, outer_iterations, n_T, Z, root); rows F_N, F_Y, F_LNPHI, F_MU hold the last
    iterate.
    """
    nc = n0.shape[0]
    total = 0.0
    for e in range(neq):
        v = 0.0
        for i in range(nc):
            v += Q[e, i] * n0[i]
        w.element_totals[e] = v
        total += abs(v)
    for e in range(neq):
        w.element_scale[e] = max(abs(w.element_totals[e]), ELEMENT_ATOL * total, 1e-300)
    n = w.n
    y = w.y
    ln_phi = w.ln_phi
    mu = w.mu
    r = w.species_residuals
    jac = w.jac
    scratch = w.model_scratch
    first = WITH_JACOBIAN if coupled else WITH_PHI
    # W = Nb, neff = n_null: the reduced matrix is never asked for here (no WITH_REDUCED mode), but arguments of
    # the extent solver's types let both solvers share one compiled model dispatcher (a literal 0 compiled another)
    n_t, z, root, g = evaluate(first, code, T, P, ln_p, n, active, g0, aij, bi, consts, y, ln_phi, jac, mu, Nb,
                               n_null, jac, scratch)
    if root < 0:
        return NO_PHYSICAL_STATE, 0, 0, n_t, z, root
    if not _fit_potentials(Q, neq, n, mu, active, w.hessian, w.rhs, w.potentials, w.factor, w.scale):
        return SINGULAR, 0, 0, n_t, z, root
    mode = WITH_JACOBIAN if coupled else FROZEN_PHI
    inner_tol = 0.1 * tol
    iterations = 0
    outer = 0
    polish = 0
    last = 0.0
    inner = False  # nested scheme: inside the loop with ln phi frozen (the ideal-solution RAND iteration)
    while True:
        rmax, emax = _residuals(Q, neq, n, mu, active, r, w.potentials, w.element_totals, w.element_balance,
                                w.element_scale)
        if inner and ((rmax <= inner_tol and emax <= ELEMENT_TOL) or iterations >= max_iter):
            n_t, z, root, g = evaluate(WITH_PHI, code, T, P, ln_p, n, active, g0, aij, bi, consts, y, ln_phi,
                                       jac, mu, Nb, n_null, jac, scratch)
            if root < 0:
                return NO_PHYSICAL_STATE, iterations, outer, n_t, z, root
            inner = False
            rmax, emax = _residuals(Q, neq, n, mu, active, r, w.potentials, w.element_totals,
                                    w.element_balance, w.element_scale)
        met = not inner and rmax <= tol and emax <= ELEMENT_TOL  # the current iterate meets the tolerances
        if not inner:
            if met:
                if (rmax <= POLISH_TOL and emax <= POLISH_TOL) or polish >= MAX_POLISH or (
                        polish > 0 and max(rmax, emax) > 0.5 * last):
                    return CONVERGED, iterations, outer, n_t, z, root
                polish += 1
                last = max(rmax, emax)
            elif iterations >= max_iter:
                return MAX_ITERATIONS, iterations, outer, n_t, z, root
            if not coupled:
                outer += 1
                inner = True
        use_jac = coupled and _locally_convex(n, n_t, jac, active, Nb, n_null, w.jac_try, w.kkt, w.dn,
                                              w.y_try, w.n_try)
        ok, m = _newton(Q, neq, n, n_t, use_jac, jac, active, r, w.kkt_index, w.kkt_rhs, w.kkt,
                        w.element_scale, w.element_balance, w.kkt_solution, w.pivots)
        if not ok:
            if met:  # a polish step failed; the current iterate (not yet moved) meets the tolerances
                return CONVERGED, iterations, outer, n_t, z, root
            return SINGULAR, iterations, outer, n_t, z, root
        _update(neq, n, n_t, m, w.kkt_index, w.kkt_solution, w.potentials)
        iterations += 1
        n_t, z_new, root_new, g = evaluate(mode, code, T, P, ln_p, n, active, g0, aij, bi, consts, y, ln_phi, jac,
                                           mu, Nb, n_null, jac, scratch)
        if coupled:
            z = z_new
            root = root_new
            if root < 0:
                return NO_PHYSICAL_STATE, iterations, outer, n_t, z, root
