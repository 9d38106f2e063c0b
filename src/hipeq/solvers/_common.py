"""Compiled helpers shared by the equilibrium kernels: status codes, small dense linear algebra, the standard
Gibbs-energy table and the evaluation of chemical potentials.

Private layer: arrays and scalars in, ``out=`` buffers, integer status codes out; nothing here raises.

Chemical potential of species i in a gas mixture, over RT, standard state the ideal gas at P0 = 1 bar:

    mu_i / (R T) = g0_i(T) + ln(P / P0) + ln y_i + ln phi_i(T, P, y)

with g0_i = G0_i(T) / (R T) (Smith & Missen 1982, "Chemical Reaction Equilibrium Analysis", ch. 2).
"""
from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np

from hipeq._jit import entry, inline_kernel, inner_kernel, kernel
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
REASON_TWO_PHASE_NOT_FOUND = 9  # sealed vessel: no single phase fills V, and no vapour-liquid pair was found that
# does (set in Python by hipeq.solvers.vessel_phases, phases="auto"; the compiled core never sets it)

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
# work buffers of a chunk of states: one named tuple (numba passes it as one argument), one array per role
# ---------------------------------------------------------------------------------------------------------
class Work(NamedTuple):
    """Work buffers of one chunk of states, allocated once per chunk as :class:`WorkBuffers`
    (:func:`make_work`, viewed by :func:`work_views`; nc species, k =
    max(n_reactions, n_element_rows, 1), big = nc + ne + 1). Kept between states of a chunk: ``n_prev``,
    ``n0_prev``, ``g0_prev``, ``extents_prev``, ``ln_p_prev`` (the last converged state, for warm starts),
    ``model_scratch[2, 0]`` (the last cubic root, the start of the next) and ``vertices``/``vertex_info`` (the
    feed polytope of the last feed; see ``_driver.several_roots_possible``)."""

    # per species (nc,)
    n: np.ndarray              # amounts of the current iterate [mol]
    n_try: np.ndarray          # amounts of a trial step
    y: np.ndarray              # mole fractions of the current iterate
    y_try: np.ndarray
    ln_phi: np.ndarray         # ln fugacity coefficients at the current iterate
    ln_phi_try: np.ndarray
    mu: np.ndarray             # chemical potentials / RT
    mu_try: np.ndarray
    dn: np.ndarray             # Newton step in the amounts
    species_residuals: np.ndarray  # Gibbs: mu_i - sum_e A_ei lambda_e per species
    g0: np.ndarray             # standard Gibbs energies / RT at T
    n_prev: np.ndarray         # last converged answer of the chunk (warm starts)
    n0_prev: np.ndarray        # its feed
    g0_prev: np.ndarray        # its g0
    b_i: np.ndarray            # co-volumes at T [m3/mol]
    db_i_dT: np.ndarray
    model_scratch: np.ndarray  # (3, nc) scratch of the model kernels; [2, 0] keeps the last cubic root
    # per species pair (nc, nc)
    jac: np.ndarray            # n_T d ln phi_i / d n_j
    jac_try: np.ndarray
    a_ij: np.ndarray           # cubic attraction parameters at T
    da_ij_dT: np.ndarray
    # per reaction or element row (k,)
    grad: np.ndarray           # gradient of G/RT in the reduced extents
    rhs: np.ndarray
    step: np.ndarray
    scale: np.ndarray          # Jacobi scaling of the Cholesky factor
    potentials: np.ndarray     # element potentials lambda_e (Gibbs)
    element_totals: np.ndarray  # b_e = sum_i A_ei n0_i
    element_balance: np.ndarray
    element_scale: np.ndarray  # per element row: max(|b_e|, ELEMENT_ATOL * total)
    extents: np.ndarray        # extents of reaction of the current iterate [mol]
    ln_k: np.ndarray           # ln K at T
    extents_prev: np.ndarray
    extents_start: np.ndarray  # the last good start of a sealed-vessel pressure step
    ln_p_prev: np.ndarray      # (1,) ln(P/P0) of the last converged state
    # (k, k)
    hessian: np.ndarray        # Newton matrix in the reduced extents
    factor: np.ndarray         # its Cholesky factor
    reduced_jac: np.ndarray    # W^T (n_T d ln phi/d n) W
    reduced_jac_try: np.ndarray
    # the Gibbs minimisation's Newton system (big = nc + ne + 1)
    kkt: np.ndarray            # (big, big)
    kkt_rhs: np.ndarray        # (big,)
    kkt_solution: np.ndarray   # (big,)
    kkt_index: np.ndarray      # (big,) int64: active species positions
    pivots: np.ndarray         # (big,) int64
    # the feed polytope of the last feed
    vertices: np.ndarray       # (MAX_VERTICES + 1, nc): row 0 the feed, then the vertices
    vertex_info: np.ndarray    # (3,) int64: count, valid, pattern


class WorkBuffers(NamedTuple):
    """The work buffers of a chunk as they travel between compiled functions: ``vectors`` (one flat float64
    array holding every per-species and per-reaction vector), ``scratch`` (3, nc), ``pairs`` (4, nc, nc),
    ``small`` (4, k, k), ``kkt`` (big, big), ``vertices`` (MAX_VERTICES + 1, nc), ``ints`` (int64) and the sizes
    they were made for: what Python hands the compiled solver (seven arrays for the dispatcher to type instead of
    forty-five). A chunk views them once as a :class:`Work` (:func:`work_views`) and hands that down by name.
    (Building the views again in every kernel that needs them cost more than handing the Work down.)"""

    vectors: np.ndarray
    scratch: np.ndarray
    pairs: np.ndarray
    small: np.ndarray
    kkt: np.ndarray
    vertices: np.ndarray
    ints: np.ndarray
    nc: int
    k: int
    big: int


@inline_kernel
def work_views(wb):
    """The :class:`Work` view of :class:`WorkBuffers` ``wb`` (slices and sub-arrays, no copies). Plain slices of
    ``wb.vectors``: per species at [i nc, (i + 1) nc) in the order of :class:`Work`, then per reaction at
    [16 nc + j k, ...), then ``ln_p_prev``, ``kkt_rhs`` and ``kkt_solution``."""
    nc, k, big = wb.nc, wb.k, wb.big
    f = wb.vectors
    o = 16 * nc
    q = o + 12 * k + 1
    g = wb.ints
    return Work(
        f[0:nc], f[1 * nc:2 * nc], f[2 * nc:3 * nc], f[3 * nc:4 * nc], f[4 * nc:5 * nc], f[5 * nc:6 * nc],
        f[6 * nc:7 * nc], f[7 * nc:8 * nc], f[8 * nc:9 * nc], f[9 * nc:10 * nc], f[10 * nc:11 * nc],
        f[11 * nc:12 * nc], f[12 * nc:13 * nc], f[13 * nc:14 * nc], f[14 * nc:15 * nc], f[15 * nc:16 * nc],
        wb.scratch, wb.pairs[0], wb.pairs[1], wb.pairs[2], wb.pairs[3], f[o:o + k], f[o + 1 * k:o + 2 * k],
        f[o + 2 * k:o + 3 * k], f[o + 3 * k:o + 4 * k], f[o + 4 * k:o + 5 * k], f[o + 5 * k:o + 6 * k],
        f[o + 6 * k:o + 7 * k], f[o + 7 * k:o + 8 * k], f[o + 8 * k:o + 9 * k], f[o + 9 * k:o + 10 * k],
        f[o + 10 * k:o + 11 * k], f[o + 11 * k:o + 12 * k], f[o + 12 * k:q], wb.small[0], wb.small[1], wb.small[2],
        wb.small[3], wb.kkt, f[q:q + big], f[q + big:q + 2 * big], g[0:big], g[big:2 * big], wb.vertices,
        g[2 * big:2 * big + 3])


def make_work(nc: int, nr: int, ne: int) -> WorkBuffers:
    """New zeroed :class:`WorkBuffers` for systems of nc species, nr reactions and ne element rows.

    Plain numpy, called from Python only (once per thread for scalar calls, once per thread's range of chunks in
    a batch): compiled, its four array shapes cost a dozen of numba's allocation routines, about 2.5 s of the
    first answer's cold compile, for a function that runs once per batch."""
    k = max(nr, ne, 1)
    big = nc + ne + 1
    return WorkBuffers(np.zeros(16 * nc + 12 * k + 1 + 2 * big), np.zeros((3, nc)), np.zeros((4, nc, nc)),
                       np.zeros((4, k, k)), np.zeros((big, big)), np.zeros((MAX_VERTICES + 1, nc)),
                       np.zeros(2 * big + 3, dtype=np.int64), int(nc), int(k), int(big))


@entry
def python_views(wb):
    """The :class:`Work` view of ``wb`` for Python callers (tests, tools), built with numba's runtime so that the
    views returned to Python keep their buffers alive."""
    return work_views(wb)


# ---------------------------------------------------------------------------------------------------------
# linear algebra on the leading (m, m) block of preallocated buffers
# ---------------------------------------------------------------------------------------------------------
@inner_kernel
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


@inner_kernel
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


@inner_kernel
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


@inner_kernel
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
