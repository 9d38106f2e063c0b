"""Compiled fugacity-coefficient kernels: ideal gas, truncated virial, Lewis-Randall rule, generic cubic.

Private layer: arrays and scalars in, ``out=`` buffers, status codes out; nothing here raises.
The Python face is :mod:`hipeq.models.eos`.

Two steps per state, so that solvers at fixed temperature pay the temperature-dependent work once:

1. ``tdep_into(code, T, comp, consts, kmat, aij, bi, daij, dbi)`` fills the temperature-dependent
   parameters: for the cubic and Lewis-Randall models ``aij = (1 - kij) sqrt(a_i a_j)`` [Pa m6/mol2] and
   ``bi`` [m3/mol]; for the virial model ``aij = B_ij`` [m3/mol]; and their temperature derivatives.
2. ``ln_phi_tp``, ``ln_phi_hinted_tp``, ``ln_phi_dn_tp``, ``ln_phi_reduced_tp`` (for the solvers) and
   ``residual_dT_tp`` (with temperature derivatives and residual properties) evaluate a state (T, P, y).

Generic two-constant cubic (Michelsen & Mollerup 2007, "Thermodynamic Models: Fundamentals and Computational
Aspects", 2nd ed., ch. 3):

    P = R T / (v - b) - a / ((v + delta1 b) (v + delta2 b))

with Peng-Robinson (1976) delta1,2 = 1 +- sqrt(2) and Soave-Redlich-Kwong (1972) delta1 = 1, delta2 = 0.
Composition and temperature derivatives follow from the reduced residual Helmholtz energy
F = A_res / (R T) = -n g(V, B) - D(T)/T f(V, B) of the same reference.
"""
from __future__ import annotations

import math

import numpy as np

from hipeq._jit import entry, inline_kernel, inner_kernel, kernel

from hipeq.constants import R  # J/(mol K)

MODEL_IDEAL = 0
MODEL_VIRIAL = 1
MODEL_LEWIS_RANDALL = 2
MODEL_CUBIC = 3

# per-component parameter columns of ``comp``
TC, PC, OMEGA, M_ALPHA, QMASS, VC, ZC = 0, 1, 2, 3, 4, 5, 6
N_COMP_COLUMNS = 7
# cubic constants in ``consts``
DELTA1, DELTA2, OMEGA_A, OMEGA_B = 0, 1, 2, 3
# Optional extension of ``consts`` (length 4 means none of it): consts[HAS_SHIFT] = 1 switches on a volume
# translation with c_i [m3/mol] in consts[EXTRA0 : EXTRA0 + nc]; consts[HAS_GROUP_KIJ] = 1 switches on
# temperature-dependent group-contribution k_ij(T) (E-PPR78) with the pair constants A_ij, B_ij [Pa] in the
# next two nc*nc blocks (row-major; A_ij = 0 keeps the constant kmat[i, j] for that pair).
HAS_SHIFT, HAS_GROUP_KIJ, EXTRA0 = 4, 5, 6

ROOT_SINGLE = 0  # one real root above the co-volume
ROOT_GAS = 1  # three roots; the larger-volume one had the lower Gibbs energy
ROOT_LIQUID = 2  # three roots; the smaller-volume one had the lower Gibbs energy
ROOT_INVALID = -1  # the model has no physical state here (e.g. truncated virial with Z <= 0)
LIQUID_LIKE_REDUCED_VOLUME = 1.75  # v/b below this is liquid-like (our rule, DEVELOPERS.md)

# Gunn, Chueh & Prausnitz (1966), AIChE J. 12, 937: effective critical constants of quantum gases
#   Tc = Tc0 / (1 + c1 / (M T)),  Pc = Pc0 / (1 + c2 / (M T)),  M in g/mol, c1 = 21.8 K, c2 = 44.2 K
QUANTUM_C1 = 21.8
QUANTUM_C2 = 44.2


@kernel
def effective_critical(T, comp, i):
    """Critical constants of component i at T, with the quantum correction when comp[i, QMASS] > 0.

    Returns (Tc, Pc, dTc/dT, dPc/dT).
    """
    tc0 = comp[i, TC]
    pc0 = comp[i, PC]
    mass = comp[i, QMASS]
    if mass > 0.0:
        d1 = 1.0 + QUANTUM_C1 / (mass * T)
        d2 = 1.0 + QUANTUM_C2 / (mass * T)
        tc = tc0 / d1
        pc = pc0 / d2
        dtc = tc0 * QUANTUM_C1 / (mass * T * T) / (d1 * d1)
        dpc = pc0 * QUANTUM_C2 / (mass * T * T) / (d2 * d2)
        return tc, pc, dtc, dpc
    return tc0, pc0, 0.0, 0.0


# ---------------------------------------------------------------------------------------------------------
# temperature-dependent parameters
# ---------------------------------------------------------------------------------------------------------
@inner_kernel
def _cubic_tdep(T, comp, consts, kmat, aij, bi, daij, dbi):
    nc = comp.shape[0]
    oa = consts[OMEGA_A]
    ob = consts[OMEGA_B]
    for i in range(nc):
        tc, pc, dtc, dpc = effective_critical(T, comp, i)
        c = oa * R * R * tc * tc / pc
        dc = oa * R * R * (2.0 * tc * dtc / pc - tc * tc * dpc / (pc * pc))
        tau = T / tc
        dtau = (tc - T * dtc) / (tc * tc)
        s = math.sqrt(tau)
        m = comp[i, M_ALPHA]
        q = 1.0 + m * (1.0 - s)
        alpha = q * q
        dalpha = -m * q * dtau / s
        aij[i, i] = c * alpha
        daij[i, i] = dc * alpha + c * dalpha
        bi[i] = ob * R * tc / pc
        dbi[i] = ob * R * (dtc / pc - tc * dpc / (pc * pc))
    grouped = consts.shape[0] > EXTRA0 and consts[HAS_GROUP_KIJ] == 1.0
    offset_a = EXTRA0 + nc
    offset_b = offset_a + nc * nc
    for i in range(nc):
        for j in range(i + 1, nc):
            a_i, a_j, da_i, da_j = aij[i, i], aij[j, j], daij[i, i], daij[j, j]
            g = math.sqrt(a_i * a_j)
            big_a = consts[offset_a + i * nc + j] if grouped else 0.0
            if big_a != 0.0:
                # E-PPR78 (Jaubert, Qian, Lasala & Privat 2022, Fluid Phase Equilib. 560, 113456) for one-group
                # molecules: k_ij = [E_ij - (d_i - d_j)^2] / (2 d_i d_j), d_i = sqrt(a_i)/b_i,
                # E_ij = A_ij (298.15/T)^(B_ij/A_ij - 1); equivalently
                # a_ij = (a_i b_j/b_i + a_j b_i/b_j - b_i b_j E_ij) / 2.
                expo = consts[offset_b + i * nc + j] / big_a - 1.0
                e = big_a * (298.15 / T) ** expo
                de = -e * expo / T
                aij[i, j] = 0.5 * (a_i * bi[j] / bi[i] + a_j * bi[i] / bi[j] - bi[i] * bi[j] * e)
                daij[i, j] = 0.5 * (da_i * bi[j] / bi[i] + a_i * dbi[j] / bi[i]
                                    - a_i * bi[j] * dbi[i] / (bi[i] * bi[i])
                                    + da_j * bi[i] / bi[j] + a_j * dbi[i] / bi[j]
                                    - a_j * bi[i] * dbi[j] / (bi[j] * bi[j])
                                    - (dbi[i] * bi[j] + bi[i] * dbi[j]) * e - bi[i] * bi[j] * de)
            else:
                one_k = 1.0 - kmat[i, j]
                aij[i, j] = one_k * g
                daij[i, j] = one_k * (da_i * a_j + a_i * da_j) / (2.0 * g)
            aij[j, i] = aij[i, j]
            daij[j, i] = daij[i, j]


@inner_kernel
def _virial_tdep(T, comp, kmat, bij, dbij):
    """Second virial coefficients B_ij(T) [m3/mol] from the Pitzer-type generalized correlation.

    B_ij P_cij / (R T_cij) = B0(Tr) + omega_ij B1(Tr), B0 = 0.083 - 0.422 / Tr^1.6, B1 = 0.139 - 0.172 / Tr^4.2
    (Abbott's form of the Pitzer & Curl 1957 correlation; Smith, Van Ness & Abbott, "Introduction to Chemical
    Engineering Thermodynamics", 7th ed., eqs. 3.65-3.66), with the Prausnitz combining rules
    T_cij = sqrt(T_ci T_cj)(1 - k_ij), omega_ij = (omega_i + omega_j)/2, Z_cij = (Z_ci + Z_cj)/2,
    V_cij = ((V_ci^(1/3) + V_cj^(1/3))/2)^3, P_cij = Z_cij R T_cij / V_cij (same book, eqs. 11.70-11.74).
    """
    nc = comp.shape[0]
    for i in range(nc):
        tci, pci, dtci, _ = effective_critical(T, comp, i)
        for j in range(i, nc):
            tcj, pcj, dtcj, _ = effective_critical(T, comp, j)
            one_k = 1.0 - kmat[i, j]
            tcij = math.sqrt(tci * tcj) * one_k
            dtcij = 0.5 * one_k * (dtci * tcj + tci * dtcj) / math.sqrt(tci * tcj)
            wij = 0.5 * (comp[i, OMEGA] + comp[j, OMEGA])
            zcij = 0.5 * (comp[i, ZC] + comp[j, ZC])
            vroot = 0.5 * (comp[i, VC] ** (1.0 / 3.0) + comp[j, VC] ** (1.0 / 3.0))
            vcij = vroot * vroot * vroot
            # R T_cij / P_cij = V_cij / Z_cij: independent of T even for quantum gases (their V_c is fixed)
            scale = vcij / zcij
            tr = T / tcij
            dtr = (tcij - T * dtcij) / (tcij * tcij)
            b0 = 0.083 - 0.422 * tr ** -1.6
            b1 = 0.139 - 0.172 * tr ** -4.2
            db0 = 0.422 * 1.6 * tr ** -2.6 * dtr
            db1 = 0.172 * 4.2 * tr ** -5.2 * dtr
            bij[i, j] = scale * (b0 + wij * b1)
            bij[j, i] = bij[i, j]
            dbij[i, j] = scale * (db0 + wij * db1)
            dbij[j, i] = dbij[i, j]


@kernel
def tdep_into(code, T, comp, consts, kmat, aij, bi, daij, dbi):
    """Fill the temperature-dependent parameters of model ``code`` at T [K] (see module docstring)."""
    if code == MODEL_CUBIC or code == MODEL_LEWIS_RANDALL:
        _cubic_tdep(T, comp, consts, kmat, aij, bi, daij, dbi)
    elif code == MODEL_VIRIAL:
        _virial_tdep(T, comp, kmat, aij, daij)
        bi[:] = 0.0
        dbi[:] = 0.0
    else:
        aij[:, :] = 0.0
        daij[:, :] = 0.0
        bi[:] = 0.0
        dbi[:] = 0.0


@kernel
def tparams_into(code, T, comp, consts, kmat, aij, bi, daij, dbi):
    """As ``tdep_into`` but only a_ij and b_i, for solvers at fixed temperature (``daij``, ``dbi`` are scratch and
    are left undefined). For the cubic with constant k_ij the one-fluid terms are formed from
    sqrt(a_i) = sqrt(Omega_a) R T_ci / sqrt(P_ci) |1 + m_i (1 - sqrt(T/T_ci))| (Soave 1972 alpha function) as
    a_ij = (1 - k_ij) sqrt(a_i) sqrt(a_j): nc square roots instead of nc (nc + 1) / 2, and no T-derivatives."""
    grouped = consts.shape[0] > EXTRA0 and consts[HAS_GROUP_KIJ] == 1.0
    if code != MODEL_CUBIC and code != MODEL_LEWIS_RANDALL or grouped:
        tdep_into(code, T, comp, consts, kmat, aij, bi, daij, dbi)
        return
    nc = comp.shape[0]
    oa = consts[OMEGA_A]
    ob = consts[OMEGA_B]
    sa = dbi
    for i in range(nc):
        tc, pc, _, _ = effective_critical(T, comp, i)
        q = 1.0 + comp[i, M_ALPHA] * (1.0 - math.sqrt(T / tc))
        sa[i] = math.sqrt(oa / pc) * R * tc * abs(q)
        bi[i] = ob * R * tc / pc
    for i in range(nc):
        aij[i, i] = sa[i] * sa[i]
        for j in range(i + 1, nc):
            v = (1.0 - kmat[i, j]) * sa[i] * sa[j]
            aij[i, j] = v
            aij[j, i] = v


# ---------------------------------------------------------------------------------------------------------
# the cubic: roots
# ---------------------------------------------------------------------------------------------------------
@inline_kernel
def _newton_root(z, c2, c1, c0, steps):
    """At most ``steps`` Newton steps on Z^3 + c2 Z^2 + c1 Z + c0 = 0 from z, stopping once a step is below
    1e-14 Z. Returns (Z, whether it stopped that way)."""
    for _ in range(steps):
        f = ((z + c2) * z + c1) * z + c0
        df = (3.0 * z + 2.0 * c2) * z + c1
        if df == 0.0:
            break
        step = f / df
        z -= step
        if abs(step) <= 1e-14 * abs(z):
            return z, True
    return z, False


@inline_kernel
def _polish(z, c2, c1, c0):
    """Polish a closed-form root (good to about 1e-12): at most three Newton steps, usually two."""
    z, _ = _newton_root(z, c2, c1, c0, 3)
    return z


@inline_kernel
def _g_of_root(z, A, B, d1, d2):
    """Residual Gibbs energy over RT of the mixture at the root z (the same formula for every root)."""
    return z - 1.0 - math.log(z - B) - A / (B * (d1 - d2)) * math.log((z + d1 * B) / (z + d2 * B))


@inner_kernel
def cubic_z(A, B, d1, d2):
    """Compressibility factor of the generic cubic at reduced parameters A = aP/(RT)^2, B = bP/(RT).

    Solves Z^3 + [(u - 1) B - 1] Z^2 + [A + w B^2 - u B - u B^2] Z - [A B + w B^2 + w B^3] = 0 with
    u = delta1 + delta2, w = delta1 delta2 (Cardano's solution, or the trigonometric one for three real roots,
    Newton-polished; the smallest of three from the deflated quadratic). Of several roots above B the one with
    the lowest Gibbs energy is returned. Returns (Z, root code).
    """
    return cubic_z_from(A, B, d1, d2, 0.0)


@inner_kernel
def cubic_z_from(A, B, d1, d2, z_hint):
    """As ``cubic_z``, but with ``z_hint`` > B (a solver's previous Z at a nearby state) Newton's method from
    z_hint replaces the closed form: two or three steps instead of cube roots or an arccosine. The point where
    the step falls below 1e-14 Z is accepted when it lies above B and the other two roots (from the deflated
    quadratic) are complex or at most B, i.e. when it is the model's only root; otherwise, or without
    convergence in eight steps, the closed form answers."""
    u = d1 + d2
    w = d1 * d2
    c2 = (u - 1.0) * B - 1.0
    c1 = A + w * B * B - u * B - u * B * B
    c0 = -(A * B + w * B * B + w * B * B * B)
    p = c1 - c2 * c2 / 3.0
    q = 2.0 * c2 * c2 * c2 / 27.0 - c2 * c1 / 3.0 + c0
    disc = 0.25 * q * q + p * p * p / 27.0
    shift = -c2 / 3.0
    if z_hint > B:
        z, settled = _newton_root(z_hint, c2, c1, c0, 8)
        if settled and z > B:
            # the other two roots from the deflated quadratic: complex, or both at or below B, leave z as the
            # only root of the model (else the closed form sorts the roots out)
            s2 = c2 + z
            dq = s2 * s2 - 4.0 * (c1 + z * s2)
            if dq < 0.0 or -0.5 * (s2 - math.sqrt(dq)) <= B:
                return z, ROOT_SINGLE
    if disc > 0.0 or p >= 0.0:
        sd = math.sqrt(max(disc, 0.0))
        t = np.cbrt(-0.5 * q + sd) + np.cbrt(-0.5 * q - sd)
        z = _polish(t + shift, c2, c1, c0)
        if z <= B:
            return z, ROOT_INVALID
        return z, ROOT_SINGLE
    r = 2.0 * math.sqrt(-p / 3.0)
    arg = 3.0 * q / (p * r)
    arg = min(1.0, max(-1.0, arg))
    phi = math.acos(arg) / 3.0
    z_hi = _polish(r * math.cos(phi) + shift, c2, c1, c0)
    # the other two roots from the deflated quadratic Z^2 + (c2 + Z_hi) Z + c1 + Z_hi (c2 + Z_hi) = 0: only the
    # smallest can be a liquid-like phase, and it needs polishing only when it lies above B
    s2 = c2 + z_hi
    dq = s2 * s2 - 4.0 * (c1 + z_hi * s2)
    z_lo = -0.5 * (s2 + math.sqrt(max(dq, 0.0)))
    if z_lo <= B:
        if z_hi <= B:
            return z_hi, ROOT_INVALID
        return z_hi, ROOT_SINGLE
    z_lo = _polish(z_lo, c2, c1, c0)
    if z_lo <= B:
        return z_hi, ROOT_SINGLE
    if _g_of_root(z_lo, A, B, d1, d2) < _g_of_root(z_hi, A, B, d1, d2):
        return z_lo, ROOT_LIQUID
    return z_hi, ROOT_GAS


# ---------------------------------------------------------------------------------------------------------
# the cubic mixture: ln phi, and derivatives from the reduced residual Helmholtz energy
# ---------------------------------------------------------------------------------------------------------
@inline_kernel
def _cubic_mix_sums(y, aij, bi, si):
    """van der Waals one-fluid sums: si[i] = sum_j y_j a_ij; returns (a, b) = (sum_i y_i si[i], sum_i y_i b_i)."""
    nc = y.shape[0]
    a = 0.0
    b = 0.0
    for i in range(nc):
        s = 0.0
        for j in range(nc):
            s += y[j] * aij[i, j]
        si[i] = s
        a += y[i] * s
        b += y[i] * bi[i]
    return a, b


@inner_kernel
def _cubic_core(T, P, y, aij, bi, consts, out, si, z_hint):
    """ln phi_i of the cubic mixture into ``out`` (Michelsen & Mollerup 2007, ch. 3):

        ln phi_i = (b_i/b)(Z - 1) - ln(Z - B) - A/(B (delta1 - delta2)) (2 s_i/a - b_i/b) ln[(Z + delta1 B)/(Z + delta2 B)]

    with s_i = sum_j y_j a_ij left in ``si`` (``si`` may be ``out`` itself when the caller needs only ln phi);
    ``z_hint``: see ``cubic_z_from`` (0 for none).
    Returns (Z, root code, a, b, ln[(Z + delta1 B)/(Z + delta2 B)]) so that derivatives can reuse them."""
    nc = y.shape[0]
    d1 = consts[DELTA1]
    d2 = consts[DELTA2]
    a, b = _cubic_mix_sums(y, aij, bi, si)
    rt = R * T
    A = a * P / (rt * rt)
    B = b * P / rt
    z, root = cubic_z_from(A, B, d1, d2, z_hint)
    if root == ROOT_INVALID:
        for i in range(nc):
            out[i] = 0.0
        return z, root, a, b, 0.0
    lzb = math.log(z - B)
    lq = math.log((z + d1 * B) / (z + d2 * B))
    c = A / (B * (d1 - d2)) * lq
    for i in range(nc):
        br = bi[i] / b
        out[i] = br * (z - 1.0) - lzb - c * (2.0 * si[i] / a - br)
    return z, root, a, b, lq


@inline_kernel
def _cubic_ln_phi(T, P, y, aij, bi, consts, out):
    z, root, _, _, _ = _cubic_core(T, P, y, aij, bi, consts, out, out, 0.0)
    return z, root


@inline_kernel
def _helmholtz_parts(T, V, a, b, d1, d2, lq):
    """Derivatives of g and f of Michelsen & Mollerup (2007), ch. 3, at one mole, given
    lq = ln[(V + delta1 b)/(V + delta2 b)]: returns (g_V, g_B, g_VV, g_BV, g_BB, f, f_V, f_B, f_VV, f_BV, f_BB)."""
    vb = V - b
    p1 = V + d1 * b
    p2 = V + d2 * b
    ivb = 1.0 / vb
    ivb2 = ivb * ivb
    g_V = b / V * ivb
    g_B = -ivb
    g_VV = -ivb2 + 1.0 / (V * V)
    g_BV = ivb2
    g_BB = -ivb2
    f = lq / (R * b * (d1 - d2))
    f_V = -1.0 / (R * p1 * p2)
    f_B = -(f + V * f_V) / b
    f_VV = (2.0 * V + (d1 + d2) * b) * (f_V * f_V) * R
    f_BV = -(2.0 * f_V + V * f_VV) / b
    f_BB = -(2.0 * f_B + V * f_BV) / b
    return g_V, g_B, g_VV, g_BV, g_BB, f, f_V, f_B, f_VV, f_BV, f_BB


@inline_kernel
def _cubic_dn_parts(T, P, z, a, b, lq, bi, si, consts, Pi):
    """Coefficients of n d ln phi_i / d n_j for the cubic at fixed T, P (Michelsen & Mollerup 2007, ch. 2-3):

        n d ln phi_i/d n_j = F_nB (b_i + b_j) + F_BD (b_i D_j + b_j D_i) + F_BB b_i b_j + F_D 2 a_ij + 1
                             + P_i P_j / (R T P_V),     D_i = 2 s_i,

    with P_i = n dP/dn_i and P_V = n dP/dV scaled to one mole. Fills ``Pi`` and returns
    (F_nB, F_BD, F_BB, F_D, 1 / (R T P_V))."""
    nc = bi.shape[0]
    d1 = consts[DELTA1]
    d2 = consts[DELTA2]
    rt = R * T
    V = z * rt / P
    g_V, g_B, g_VV, g_BV, g_BB, f, f_V, f_B, f_VV, f_BV, f_BB = _helmholtz_parts(T, V, a, b, d1, d2, lq)
    F_nB = -g_B
    F_BD = -f_B / T
    F_BB = -g_BB - a / T * f_BB
    F_D = -f / T
    F_BV = -g_BV - a / T * f_BV
    F_DV = -f_V / T
    F_VV = -g_VV - a / T * f_VV
    P_V = -rt * F_VV - rt / (V * V)
    for i in range(nc):
        F_iV = -g_V + F_BV * bi[i] + F_DV * 2.0 * si[i]
        Pi[i] = -rt * F_iV + rt / V
    return F_nB, F_BD, F_BB, F_D, 1.0 / (rt * P_V)


@inner_kernel
def _cubic_ln_phi_dn(T, P, y, aij, bi, consts, out, jac, scratch):
    """ln phi_i and jac_ij = n d ln phi_i / d n_j at fixed T, P (Michelsen & Mollerup 2007, ch. 2:
    d ln phi_i/d n_j = F_ij + 1/n + P_i P_j / (R T P_V)); ``scratch`` (2, nc) holds s_i and P_i."""
    nc = y.shape[0]
    si = scratch[0]
    Pi = scratch[1]
    z, root, a, b, lq = _cubic_core(T, P, y, aij, bi, consts, out, si, 0.0)
    if root == ROOT_INVALID:
        jac[:, :] = 0.0
        return z, root
    F_nB, F_BD, F_BB, F_D, ipv = _cubic_dn_parts(T, P, z, a, b, lq, bi, si, consts, Pi)
    for i in range(nc):
        Di = 2.0 * si[i]
        for j in range(i, nc):
            Dj = 2.0 * si[j]
            v = (F_nB * (bi[i] + bi[j]) + F_BD * (bi[i] * Dj + bi[j] * Di) + F_BB * bi[i] * bi[j]
                 + F_D * 2.0 * aij[i, j] + 1.0 + Pi[i] * Pi[j] * ipv)
            jac[i, j] = v
            jac[j, i] = v
    return z, root


@inline_kernel
def _bilinear(W, t, X, u):
    """sum_ij W_it X_ij W_ju (columns t and u of W; rows of W that are zero skipped)."""
    v = 0.0
    for i in range(W.shape[0]):
        if W[i, t] != 0.0:
            q = 0.0
            for j in range(W.shape[0]):
                q += X[i, j] * W[j, u]
            v += W[i, t] * q
    return v


@inline_kernel
def _column_sums(W, t, bi, si, Pi):
    """(W^T b, W^T 1, W^T D, W^T P_i) for column t of W, with D_i = 2 s_i."""
    wb = 0.0
    ws = 0.0
    wd = 0.0
    wp = 0.0
    for i in range(W.shape[0]):
        w = W[i, t]
        wb += w * bi[i]
        ws += w
        wd += w * 2.0 * si[i]
        wp += w * Pi[i]
    return wb, ws, wd, wp


@inline_kernel
def _cubic_ln_phi_reduced(T, P, y, aij, bi, consts, W, neff, out, M, scratch):
    """ln phi_i and the reduced matrix M_tu = sum_ij W_it (n d ln phi_i / d n_j) W_ju for the columns t, u < neff
    of W, from the same coefficients as ``_cubic_ln_phi_dn`` without forming the nc x nc matrix:

        M_tu = F_nB (wb_t ws_u + ws_t wb_u) + F_BD (wb_t wD_u + wD_t wb_u) + F_BB wb_t wb_u + 2 F_D (W^T a W)_tu
               + ws_t ws_u + wp_t wp_u / (R T P_V)

    with wb = W^T b, ws = W^T 1, wD = W^T D, wp = W^T P_i (Michelsen & Mollerup 2007, ch. 2-3)."""
    si = scratch[0]
    Pi = scratch[1]
    z, root, a, b, lq = _cubic_core(T, P, y, aij, bi, consts, out, si, scratch[2, 0])
    if root == ROOT_INVALID:
        return z, root
    scratch[2, 0] = z
    F_nB, F_BD, F_BB, F_D, ipv = _cubic_dn_parts(T, P, z, a, b, lq, bi, si, consts, Pi)
    for t in range(neff):
        wb_t, ws_t, wd_t, wp_t = _column_sums(W, t, bi, si, Pi)
        for u in range(t + 1):
            wb_u, ws_u, wd_u, wp_u = _column_sums(W, u, bi, si, Pi)
            waw = _bilinear(W, t, aij, u)
            v = (F_nB * (wb_t * ws_u + ws_t * wb_u) + F_BD * (wb_t * wd_u + wd_t * wb_u) + F_BB * wb_t * wb_u
                 + 2.0 * F_D * waw + ws_t * ws_u + wp_t * wp_u * ipv)
            M[t, u] = v
            M[u, t] = v
    return z, root


@inner_kernel
def _cubic_ln_phi_dT(T, P, y, aij, bi, daij, dbi, consts, out, dT):
    """ln phi_i and d ln phi_i / dT at fixed P, n (Michelsen & Mollerup 2007:
    d ln phi_i/dT = F_iT + 1/T + P_i P_T / (R T P_V)), with temperature-dependent b for quantum gases.
    Returns (Z, root, F, T F_T) with F = A_res/(nRT) so that callers can form residual properties."""
    nc = y.shape[0]
    si = dT  # s_i = sum_j y_j a_ij; dT[i] is written only after the last read of si[i]
    z, root, a, b, lq = _cubic_core(T, P, y, aij, bi, consts, out, si, 0.0)
    if root == ROOT_INVALID:
        dT[:] = 0.0
        return z, root, 0.0, 0.0
    d1 = consts[DELTA1]
    d2 = consts[DELTA2]
    a_T = 0.0
    b_T = 0.0
    for i in range(nc):
        b_T += y[i] * dbi[i]
        for j in range(nc):
            a_T += y[i] * y[j] * daij[i, j]
    rt = R * T
    V = z * rt / P
    g_V, g_B, g_VV, g_BV, g_BB, f, f_V, f_B, f_VV, f_BV, f_BB = _helmholtz_parts(T, V, a, b, d1, d2, lq)
    g = math.log(1.0 - b / V)
    E = a / T
    E_T = a_T / T - a / (T * T)
    F = -g - E * f
    F_T = -g_B * b_T - E_T * f - E * f_B * b_T
    F_V = -g_V - E * f_V
    F_VV = -g_VV - E * f_VV
    F_VT = -g_BV * b_T - E_T * f_V - E * f_BV * b_T
    F_BV = -g_BV - E * f_BV
    F_DV = -f_V / T
    P_V = -rt * F_VV - rt / (V * V)
    P_T = -R * F_V - rt * F_VT + R / V
    for i in range(nc):
        Di = 2.0 * si[i]
        DiT = 0.0
        for j in range(nc):
            DiT += 2.0 * y[j] * daij[i, j]
        F_iT = (-g_B * b_T
                - g_BB * b_T * bi[i] - g_B * dbi[i]
                - E_T * f_B * bi[i] - E * f_BB * b_T * bi[i] - E * f_B * dbi[i]
                - (f_B * b_T / T - f / (T * T)) * Di - f / T * DiT)
        F_iV = -g_V + F_BV * bi[i] + F_DV * Di
        P_i = -rt * F_iV + rt / V
        dT[i] = F_iT + 1.0 / T + P_i * P_T / (rt * P_V)
    return z, root, F, T * F_T


# ---------------------------------------------------------------------------------------------------------
# virial and Lewis-Randall
# ---------------------------------------------------------------------------------------------------------
@inner_kernel
def _virial_ln_phi(T, P, y, bij, out):
    """ln phi_i = (2 sum_j y_j B_ij - B) P / (R T), Z = 1 + B P / (R T) (truncated virial in pressure)."""
    nc = y.shape[0]
    bmix = 0.0
    for i in range(nc):
        s = 0.0
        for j in range(nc):
            s += y[j] * bij[i, j]
        out[i] = s
        bmix += y[i] * s
    c = P / (R * T)
    for i in range(nc):
        out[i] = (2.0 * out[i] - bmix) * c
    z = 1.0 + bmix * c
    return z, (ROOT_SINGLE if z > 0.0 else ROOT_INVALID), bmix


@inner_kernel
def _pure_cubic(T, P, a, b, d1, d2):
    rt = R * T
    A = a * P / (rt * rt)
    B = b * P / rt
    z, root = cubic_z(A, B, d1, d2)
    if root == ROOT_INVALID:
        return z, root, 0.0
    return z, root, _g_of_root(z, A, B, d1, d2)


@inline_kernel
def _shift(T, P, y, consts, out):
    """Volume translation (Peneloux, Rauzy & Freze 1982, Fluid Phase Equilib. 8, 7): v = v_cubic - c with
    c = sum_i y_i c_i leaves phase equilibria alone but shifts ln phi_i by -c_i P/(R T) and Z by -c P/(R T).
    Applies the shift to ``out`` and returns c P/(R T) (0 when the model has no translation)."""
    if consts.shape[0] <= EXTRA0 or consts[HAS_SHIFT] != 1.0:
        return 0.0
    s = P / (R * T)
    cmix = 0.0
    for i in range(y.shape[0]):
        c = consts[EXTRA0 + i]
        out[i] -= c * s
        cmix += y[i] * c
    return cmix * s


# ---------------------------------------------------------------------------------------------------------
# dispatchers (the contract the solvers use)
# ---------------------------------------------------------------------------------------------------------
@kernel
def ln_phi_tp(code, T, P, y, aij, bi, consts, out):
    """ln phi_i of model ``code`` at T [K], P [Pa], mole fractions y; returns (Z, root code)."""
    nc = y.shape[0]
    if code == MODEL_CUBIC:
        z, root = _cubic_ln_phi(T, P, y, aij, bi, consts, out)
        if root == ROOT_INVALID:
            return z, root
        return z - _shift(T, P, y, consts, out), root
    if code == MODEL_VIRIAL:
        z, root, _ = _virial_ln_phi(T, P, y, aij, out)
        return z, root
    if code == MODEL_LEWIS_RANDALL:
        zmix = 0.0
        worst = ROOT_SINGLE
        for i in range(nc):
            z, root, lnphi = _pure_cubic(T, P, aij[i, i], bi[i], consts[DELTA1], consts[DELTA2])
            out[i] = lnphi
            zmix += y[i] * z
            if root == ROOT_INVALID:
                worst = ROOT_INVALID
            elif root > worst and worst != ROOT_INVALID:
                worst = root
        return zmix, worst
    for i in range(nc):
        out[i] = 0.0
    return 1.0, ROOT_SINGLE


@kernel
def ln_phi_dn_tp(code, T, P, y, aij, bi, consts, out, jac, scratch):
    """As ``ln_phi_tp``, also writing jac[i, j] = n d ln phi_i / d n_j at fixed T, P (symmetric);
    ``scratch`` is a (2, nc) work array (nothing is allocated)."""
    nc = y.shape[0]
    if code == MODEL_CUBIC:
        z, root = _cubic_ln_phi_dn(T, P, y, aij, bi, consts, out, jac, scratch)
        if root == ROOT_INVALID:
            return z, root
        return z - _shift(T, P, y, consts, out), root
    if code == MODEL_VIRIAL:
        z, root, bmix = _virial_ln_phi(T, P, y, aij, out)
        c = P / (R * T)
        si = scratch[0]
        for i in range(nc):
            v = 0.0
            for k in range(nc):
                v += y[k] * aij[i, k]
            si[i] = v
        for i in range(nc):
            for j in range(nc):
                jac[i, j] = 2.0 * c * (aij[i, j] - si[i] - si[j] + bmix)
        return z, root
    jac[:, :] = 0.0
    return ln_phi_tp(code, T, P, y, aij, bi, consts, out)


@kernel
def ln_phi_hinted_tp(code, T, P, y, aij, bi, consts, out, scratch):
    """As ``ln_phi_tp``; for the cubic the root starts from the Z of the previous call kept in scratch[2, 0]
    (see ``cubic_z_from``), which is then updated. ``scratch`` is a (3, nc) work array."""
    if code == MODEL_CUBIC:
        z, root, _, _, _ = _cubic_core(T, P, y, aij, bi, consts, out, out, scratch[2, 0])
        if root == ROOT_INVALID:
            return z, root
        scratch[2, 0] = z
        return z - _shift(T, P, y, consts, out), root
    return ln_phi_tp(code, T, P, y, aij, bi, consts, out)


@inner_kernel
def ln_phi_reduced_tp(code, T, P, y, aij, bi, consts, W, neff, out, M, jac, scratch):
    """ln phi_i and M = W^T J W (leading neff x neff block), J_ij = n d ln phi_i / d n_j at fixed T, P, for the
    columns of W (nc x >= neff): what a Newton step in reaction extents needs. The cubic forms M directly
    (``_cubic_ln_phi_reduced``, O(neff^2 nc^2) work and no nc x nc matrix); the other models form J in ``jac``
    and reduce it. ``scratch`` is a (3, nc) work array (row 2: the root's start, see ``ln_phi_hinted_tp``)."""
    if code == MODEL_CUBIC:
        z, root = _cubic_ln_phi_reduced(T, P, y, aij, bi, consts, W, neff, out, M, scratch)
        if root == ROOT_INVALID:
            return z, root
        return z - _shift(T, P, y, consts, out), root
    z, root = ln_phi_dn_tp(code, T, P, y, aij, bi, consts, out, jac, scratch)
    for t in range(neff):
        for u in range(t + 1):
            v = _bilinear(W, t, jac, u)
            M[t, u] = v
            M[u, t] = v
    return z, root


@entry
def residual_dT_tp(code, T, P, y, aij, bi, daij, dbi, consts, out, dT):
    """ln phi_i and d ln phi_i/dT at fixed P, y, plus the mixture's residual Gibbs energy and enthalpy.

    Returns (Z, root, g_res/(R T), h_res/(R T)), with g_res/RT = F + Z - 1 - ln Z and
    h_res/RT = -T F_T + Z - 1 for the cubic (Michelsen & Mollerup 2007, table 2.x).
    """
    nc = y.shape[0]
    if code == MODEL_CUBIC:
        z, root, F, TF_T = _cubic_ln_phi_dT(T, P, y, aij, bi, daij, dbi, consts, out, dT)
        if root == ROOT_INVALID:
            return z, root, 0.0, 0.0
        g_res = F + z - 1.0 - math.log(z)
        h_res = -TF_T + z - 1.0
        shift = _shift(T, P, y, consts, out)
        if shift != 0.0:
            for i in range(nc):  # d/dT of -c_i P/(R T)
                dT[i] += consts[EXTRA0 + i] * P / (R * T * T)
        return z - shift, root, g_res - shift, h_res - shift
    if code == MODEL_VIRIAL:
        z, root, bmix = _virial_ln_phi(T, P, y, aij, out)
        c = P / (R * T)
        bmix_T = 0.0
        for i in range(nc):
            s = 0.0
            for j in range(nc):
                s += y[j] * daij[i, j]
            dT[i] = s
            bmix_T += y[i] * s
        for i in range(nc):
            dT[i] = (2.0 * dT[i] - bmix_T) * c - out[i] / T
        return z, root, bmix * c, (bmix - T * bmix_T) * c
    if code == MODEL_LEWIS_RANDALL:
        one = np.ones(1)
        a1 = np.empty((1, 1))
        da1 = np.empty((1, 1))
        b1 = np.empty(1)
        db1 = np.empty(1)
        o1 = np.empty(1)
        t1 = np.empty(1)
        zmix = 0.0
        gmix = 0.0
        hmix = 0.0
        worst = ROOT_SINGLE
        for i in range(nc):
            a1[0, 0] = aij[i, i]
            da1[0, 0] = daij[i, i]
            b1[0] = bi[i]
            db1[0] = dbi[i]
            z, root, F, TF_T = _cubic_ln_phi_dT(T, P, one, a1, b1, da1, db1, consts, o1, t1)
            if root == ROOT_INVALID:
                worst = ROOT_INVALID
            elif root > worst and worst != ROOT_INVALID:
                worst = root
            out[i] = o1[0]
            dT[i] = t1[0]
            zmix += y[i] * z
            gmix += y[i] * o1[0]
            hmix += y[i] * (-TF_T + z - 1.0)
        return zmix, worst, gmix, hmix
    for i in range(nc):
        out[i] = 0.0
        dT[i] = 0.0
    return 1.0, ROOT_SINGLE, 0.0, 0.0
