"""Compiled helpers shared by the equilibrium kernels: status codes, small dense linear algebra, the standard
Gibbs-energy table and the evaluation of chemical potentials.

Private layer: arrays and scalars in, ``out=`` buffers, integer status codes out; nothing here raises.

Chemical potential of species i in a gas mixture, over RT, standard state the ideal gas at P0 = 1 bar:

    mu_i / (R T) = g0_i(T) + ln(P / P0) + ln y_i + ln phi_i(T, P, y)

with g0_i = G0_i(T) / (R T) (Smith & Missen 1982, "Chemical Reaction Equilibrium Analysis", ch. 2).
"""
from __future__ import annotations

import math

import numpy as np

from hipeq._jit import entry, inline_kernel, kernel
from hipeq.models._kernels import ln_phi_dn_tp, ln_phi_hinted_tp, ln_phi_reduced_tp

# ---------------------------------------------------------------------------------------------------------
# status codes (the Python face is hipeq.solvers.result.Status; documented in docs/solvers.md)
# ---------------------------------------------------------------------------------------------------------
CONVERGED = 0
MAX_ITERATIONS = 1
STALLED = 2
NO_PHYSICAL_STATE = 3
SINGULAR = 4
PRESSURE_NOT_FOUND = 5
INVALID_INPUT = 6
OUTSIDE_MODEL_RANGE = 7
BALANCE_NOT_CLOSED = 8

# reasons that refine a status (the answer's REASON column; texts in hipeq.solvers.result.REASON_TEXTS)
REASON_NONE = 0
REASON_BELOW_COVOLUME = 1  # sealed vessel: V is at or below the co-volume of the mixture
REASON_ABOVE_CEILING = 2  # sealed vessel: the pressure would exceed the ceiling (1e10 Pa)
REASON_BELOW_FLOOR = 3  # sealed vessel: the pressure would be below the floor (1e-2 Pa)
REASON_NOT_ONE_PHASE = 4  # sealed vessel: V(P) of the one-phase mixture jumps across the given V
REASON_VIRIAL_RANGE = 5  # truncated virial with |Z - 1| above its limit
REASON_LEWIS_RANDALL_RANGE = 6  # Lewis-Randall rule above its pressure limit
REASON_NOT_FINITE = 7  # an output was not finite
REASON_ELEMENTS = 8  # an element balance did not close

MAX_VERTICES = 256  # vertices of a feed's feasible polytope kept per chunk (several_roots_possible)

# Element balances at convergence: |sum_i a_ei n_i - b_e| <= ELEMENT_RTOL b_e + ELEMENT_ATOL sum_e b_e
ELEMENT_RTOL = 1e-10
ELEMENT_ATOL = 1e-15

# evaluation modes of ``evaluate``
FROZEN_PHI = 0  # keep ln phi as it is in the buffer (nested scheme, inner loop)
WITH_PHI = 1  # evaluate ln phi
WITH_JACOBIAN = 2  # evaluate ln phi and n_T d ln phi_i / d n_j
WITH_REDUCED = 3  # evaluate ln phi and W^T (n_T d ln phi / d n) W for the extent directions W

TINY = 1e-300
LOG_TINY = math.log(TINY)

# ---------------------------------------------------------------------------------------------------------
# packed work buffers (a few arrays rather than many: every array crossing a compiled call boundary costs
# reference-count operations, so the kernels pass these and index rows by the constants below)
# ---------------------------------------------------------------------------------------------------------
# F (N_F_ROWS, nc): per-species vectors
F_N, F_N_TRY, F_Y, F_Y_TRY, F_LNPHI, F_LNPHI_TRY, F_MU, F_MU_TRY, F_DN, F_R, F_G0, F_N_PREV, F_N0_PREV, F_BI, \
    F_DBI, F_SCRATCH, _, _, F_G0_PREV = range(19)
# F[F_SCRATCH : F_SCRATCH + 3] is the (3, nc) scratch of the model kernels; F[F_SCRATCH + 2, 0] keeps the last
# cubic root, the start for the next one
N_F_ROWS = 19
# J (4, nc, nc)
J_JAC, J_JAC_TRY, J_AIJ, J_DAIJ = range(4)
# S (N_S_ROWS, k), k = max(n_reactions, n_element_rows, 1): small vectors
S_GRAD, S_RHS, S_D, S_SCALE, S_LAM, S_B, S_EBAL, S_XI, S_LNK, S_XI_PREV, S_XI_START, S_AUX, S_ESCALE = range(13)
N_S_ROWS = 13  # S[S_AUX, 0]: ln(P/P0) of the previous converged state; S_ESCALE: per-element-row scales
# SM (4, k, k): Newton matrix, its Cholesky factor, and the reduced ln phi Jacobian W^T J W (current, trial)
SM_H, SM_L, SM_M, SM_M_TRY = range(4)
# KV (2, nc + ne + 1) and IV (2, nc + ne + 1): the Newton system of the Gibbs minimisation
KV_RHS, KV_SOL = range(2)
IV_IDX, IV_PIV = range(2)


@entry
def make_work(nc, nr, ne):
    """Work buffers of one chunk of states: (F, J, S, SM, M, KV, IV, VX, VI), see the row constants above; VX
    (MAX_VERTICES + 1, nc) and VI (3,) keep the vertices of the last feed's feasible polytope (row 0: that feed;
    VI: count, valid, pattern), see ``hipeq.solvers._driver.several_roots_possible``."""
    k = max(nr, ne, 1)
    big = nc + ne + 1
    return (np.zeros((N_F_ROWS, nc)), np.zeros((4, nc, nc)), np.zeros((N_S_ROWS, k)), np.zeros((4, k, k)),
            np.zeros((big, big)), np.zeros((2, big)), np.zeros((2, big), dtype=np.int64),
            np.zeros((MAX_VERTICES + 1, nc)), np.zeros(3, dtype=np.int64))


# ---------------------------------------------------------------------------------------------------------
# linear algebra on the leading (m, m) block of preallocated buffers
# ---------------------------------------------------------------------------------------------------------
@kernel
def cholesky_solve(H, rhs, m, x, L, s):
    """Solve H x = rhs for symmetric positive definite H (leading m x m block), with Jacobi scaling.

    s_i = 1 / sqrt(H_ii); the scaled matrix S H S has a unit diagonal, so a pivot below 1e-13 means "not
    positive definite (numerically)". Returns False then, and also for non-finite input.
    """
    if m == 1:  # one independent reaction: the common case, without the loops
        d = H[0, 0]
        v = rhs[0] / d
        if not (d > 0.0) or not math.isfinite(v):
            return False
        x[0] = v
        s[0] = 1.0
        L[0, 0] = math.sqrt(d)
        return True
    for i in range(m):
        d = H[i, i]
        if not (d > 0.0) or not math.isfinite(d):
            return False
        s[i] = 1.0 / math.sqrt(d)
    for i in range(m):
        for j in range(i + 1):
            v = H[i, j] * s[i] * s[j]
            for k in range(j):
                v -= L[i, k] * L[j, k]
            if i == j:
                if not (v > 1e-13):
                    return False
                L[i, i] = math.sqrt(v)
            else:
                L[i, j] = v / L[j, j]
    return cholesky_resolve(L, s, rhs, m, x)


@kernel
def cholesky_resolve(L, s, rhs, m, x):
    """Solve H x = rhs with the factor left by ``cholesky_solve`` (S H S = L L^T, S = diag(s)); False when the
    answer is not finite (e.g. no factor has been formed yet)."""
    for i in range(m):  # forward: L z = s rhs
        v = rhs[i] * s[i]
        for k in range(i):
            v -= L[i, k] * x[k]
        x[i] = v / L[i, i]
    for i in range(m - 1, -1, -1):  # backward: L^T w = z
        v = x[i]
        for k in range(i + 1, m):
            v -= L[k, i] * x[k]
        x[i] = v / L[i, i]
    for i in range(m):
        x[i] *= s[i]
        if not math.isfinite(x[i]):
            return False
    return True


@kernel
def lu_solve(M, rhs, m, x, piv):
    """Solve M x = rhs (leading m x m block; M and rhs are overwritten) by Gaussian elimination with partial
    pivoting. Returns False when a pivot is zero to working precision or the answer is not finite."""
    big = 0.0
    for i in range(m):
        for j in range(m):
            big = max(big, abs(M[i, j]))
    if not (big > 0.0) or not math.isfinite(big):
        return False
    for i in range(m):
        piv[i] = i
    for k in range(m):
        p = k
        vmax = abs(M[k, k])
        for i in range(k + 1, m):
            if abs(M[i, k]) > vmax:
                vmax = abs(M[i, k])
                p = i
        if vmax <= 1e-300 * big:
            return False
        if p != k:
            for j in range(m):
                t = M[k, j]
                M[k, j] = M[p, j]
                M[p, j] = t
            t = rhs[k]
            rhs[k] = rhs[p]
            rhs[p] = t
        for i in range(k + 1, m):
            f = M[i, k] / M[k, k]
            if f != 0.0:
                for j in range(k + 1, m):
                    M[i, j] -= f * M[k, j]
                rhs[i] -= f * rhs[k]
    for i in range(m - 1, -1, -1):
        v = rhs[i]
        for j in range(i + 1, m):
            v -= M[i, j] * x[j]
        x[i] = v / M[i, i]
        if not math.isfinite(x[i]):
            return False
    return True


# ---------------------------------------------------------------------------------------------------------
# standard Gibbs energies g0_i(T) = G0_i(T) / (R T) from a quintic Hermite table
# ---------------------------------------------------------------------------------------------------------
@kernel
def g0_into(T, u_lo, h, table, out):
    """g0_i(T) by quintic Hermite interpolation in u = ln T of ``table[k, 0:3, i]`` = (g, dg/du, d2g/du2) at the
    nodes u_k = u_lo + k h (built and checked against the data layer by hipeq.solvers._tables)."""
    nodes = table.shape[0]
    u = (math.log(T) - u_lo) / h
    k = int(math.floor(u))
    if k < 0:
        k = 0
    elif k > nodes - 2:
        k = nodes - 2
    t = u - k
    t2 = t * t
    t3 = t2 * t
    t4 = t3 * t
    t5 = t4 * t
    h00 = 1.0 - 10.0 * t3 + 15.0 * t4 - 6.0 * t5
    h10 = t - 6.0 * t3 + 8.0 * t4 - 3.0 * t5
    h20 = 0.5 * (t2 - 3.0 * t3 + 3.0 * t4 - t5)
    h01 = 10.0 * t3 - 15.0 * t4 + 6.0 * t5
    h11 = -4.0 * t3 + 7.0 * t4 - 3.0 * t5
    h21 = 0.5 * (t3 - 2.0 * t4 + t5)
    hh = h * h
    for i in range(out.shape[0]):
        out[i] = (h00 * table[k, 0, i] + h * h10 * table[k, 1, i] + hh * h20 * table[k, 2, i]
                  + h01 * table[k + 1, 0, i] + h * h11 * table[k + 1, 1, i] + hh * h21 * table[k + 1, 2, i])


@kernel
def adjust_g0(g0, nu, nu_pinv, ln_k_user, ln_k_tab):
    """Shift g0 by the least change that makes -nu g0 equal the user's ln K:
    g0 <- g0 + nu^+ (ln K_table - ln K_user), with nu nu^+ = I (nu has full row rank)."""
    nr, nc = nu.shape
    for r in range(nr):
        v = 0.0
        for i in range(nc):
            v -= nu[r, i] * g0[i]
        ln_k_tab[r] = v
    for i in range(nc):
        v = 0.0
        for r in range(nr):
            v += nu_pinv[i, r] * (ln_k_tab[r] - ln_k_user[r])
        g0[i] += v


# ---------------------------------------------------------------------------------------------------------
# evaluation of a composition
# ---------------------------------------------------------------------------------------------------------
@inline_kernel
def evaluate(mode, code, T, P, ln_p, n, active, g0, aij, bi, consts, y, ln_phi, jac, mu, W, neff, M, scratch):
    """Mole fractions, ln phi (per ``mode``) and mu_i/RT of the active species at amounts n.

    Returns (n_T, Z, root, G/RT) with G/RT = sum_i n_i mu_i / RT. Inactive species (absent and not formable)
    get y_i = 0 and mu_i = 0. When mode == FROZEN_PHI the buffer ``ln_phi`` is used as it is and Z = 1.
    WITH_JACOBIAN fills ``jac`` (nc x nc); WITH_REDUCED fills the leading neff x neff block of ``M`` with
    W^T jac W (``jac`` is then scratch for the models that form it). ``scratch`` is a (3, nc) work array.
    """
    nc = n.shape[0]
    n_t = 0.0
    for i in range(nc):
        n_t += n[i]
    inv_t = 1.0 / n_t
    for i in range(nc):
        y[i] = n[i] * inv_t
    z = 1.0
    root = 0
    if mode == WITH_REDUCED:
        z, root = ln_phi_reduced_tp(code, T, P, y, aij, bi, consts, W, neff, ln_phi, M, jac, scratch)
    elif mode == WITH_JACOBIAN:
        z, root = ln_phi_dn_tp(code, T, P, y, aij, bi, consts, ln_phi, jac, scratch)
    elif mode == WITH_PHI:
        z, root = ln_phi_hinted_tp(code, T, P, y, aij, bi, consts, ln_phi, scratch)
    if root < 0:
        return n_t, z, root, 0.0
    g = 0.0
    for i in range(nc):
        if active[i]:
            yi = y[i] if y[i] > TINY else TINY
            mu[i] = g0[i] + ln_p + math.log(yi) + ln_phi[i]
            g += n[i] * mu[i]
        else:
            mu[i] = 0.0
    return n_t, z, root, g


@kernel
def reaction_residuals(nu, mu, frozen, out):
    """Residual of each equilibrium condition, sum_i nu_ki mu_i / RT
    = sum_i nu_ki (ln y_i + ln phi_i) + (sum_i nu_ki) ln(P/P0) - ln K_k; 0 for reactions that cannot proceed."""
    nr, nc = nu.shape
    worst = 0.0
    for r in range(nr):
        v = 0.0
        if not frozen[r]:
            for i in range(nc):
                v += nu[r, i] * mu[i]
        out[r] = v
        worst = max(worst, abs(v))
    return worst


@kernel
def element_residuals(A, n, n0, out):
    """out[e] = (sum_i a_ei n_i - b_e) / b_e with b_e = sum_i a_ei n0_i (or / sum_e b_e for an element absent from
    the feed). Returns True when every balance closes: |sum_i a_ei n_i - b_e| <= ELEMENT_RTOL b_e + ELEMENT_ATOL B
    with B = sum_e b_e (a relative tolerance with an absolute floor)."""
    ne, nc = A.shape
    total = 0.0
    for e in range(ne):
        for i in range(nc):
            total += A[e, i] * n0[i]
    closed = True
    for e in range(ne):
        b = 0.0
        v = 0.0
        for i in range(nc):
            b += A[e, i] * n0[i]
            v += A[e, i] * n[i]
        scale = b if b > 0.0 else (total if total > 0.0 else 1.0)
        out[e] = (v - b) / scale
        if not (abs(v - b) <= ELEMENT_RTOL * b + ELEMENT_ATOL * total):
            closed = False
    return closed
