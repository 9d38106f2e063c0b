"""Slow NumPy reference of the generic two-constant cubic, written from the textbook closed forms and independent
of the compiled kernels (no code shared with ``hipeq.models``).

Equations (Peng & Robinson 1976, Ind. Eng. Chem. Fundam. 15, 59, eqs. 4-5, 17-19 and their SRK counterparts in
Soave 1972; generalised to P = RT/(v-b) - a/((v + d1 b)(v + d2 b)) as in Michelsen & Mollerup 2007, ch. 3):

    a_i = Omega_a R^2 Tc_i^2 / Pc_i [1 + m_i (1 - sqrt(T/Tc_i))]^2,  b_i = Omega_b R Tc_i / Pc_i
    a = sum_ij y_i y_j (1 - k_ij) sqrt(a_i a_j),  b = sum_i y_i b_i,  A = a P/(RT)^2,  B = b P/(RT)
    Z^3 + [(d1 + d2 - 1) B - 1] Z^2 + [A + d1 d2 B^2 - (d1 + d2)(B + B^2)] Z - [A B + d1 d2 (B^2 + B^3)] = 0
    ln phi_i = b_i/b (Z - 1) - ln(Z - B) - A/((d1 - d2) B) (2 sum_j y_j a_ij / a - b_i/b) ln[(Z + d1 B)/(Z + d2 B)]
    g_res/RT = Z - 1 - ln(Z - B) - A/((d1 - d2) B) ln[(Z + d1 B)/(Z + d2 B)]
    h_res/RT = Z - 1 + (T da/dT - a)/((d1 - d2) b R T) ln[(Z + d1 B)/(Z + d2 B)]   (b independent of T)

Quantum gases (Gunn, Chueh & Prausnitz 1966, AIChE J. 12, 937): Tc = Tc0/(1 + 21.8/(M T)),
Pc = Pc0/(1 + 44.2/(M T)), M in g/mol. Roots from ``numpy.roots``; of several roots above B the one with the
lower g_res/RT is taken.
"""
from __future__ import annotations

import numpy as np

R = 8.314462618


def effective_critical(T: float, Tc: np.ndarray, Pc: np.ndarray, qmass: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    with np.errstate(divide="ignore"):
        c1 = np.where(qmass > 0, 21.8 / (qmass * T), 0.0)
        c2 = np.where(qmass > 0, 44.2 / (qmass * T), 0.0)
    return Tc / (1.0 + c1), Pc / (1.0 + c2)


def cubic_state(T: float, P: float, y, Tc, Pc, m, kij, d1: float, d2: float, omega_a: float, omega_b: float,
                qmass=None) -> dict:
    """ln phi_i, Z, root kind ('single'/'gas'/'liquid'), g_res/RT and (for qmass = 0) h_res/RT."""
    y, Tc, Pc, m = (np.asarray(v, dtype=float) for v in (y, Tc, Pc, m))
    kij = np.asarray(kij, dtype=float)
    qmass = np.zeros_like(Tc) if qmass is None else np.asarray(qmass, dtype=float)
    tc, pc = effective_critical(T, Tc, Pc, qmass)
    sqrt_alpha = 1.0 + m * (1.0 - np.sqrt(T / tc))
    ac = omega_a * R**2 * tc**2 / pc
    ai = ac * sqrt_alpha**2
    dai = -ac * m * sqrt_alpha / np.sqrt(T * tc)  # valid only without the quantum correction
    bi = omega_b * R * tc / pc
    aij = (1.0 - kij) * np.sqrt(np.outer(ai, ai))
    daij = (1.0 - kij) * (np.outer(dai, ai) + np.outer(ai, dai)) / (2.0 * np.sqrt(np.outer(ai, ai)))
    a = y @ aij @ y
    da = y @ daij @ y
    b = y @ bi
    A = a * P / (R * T) ** 2
    B = b * P / (R * T)
    u, w = d1 + d2, d1 * d2
    coeffs = [1.0, (u - 1.0) * B - 1.0, A + w * B**2 - u * (B + B**2), -(A * B + w * (B**2 + B**3))]
    roots = np.roots(coeffs)
    real = np.sort(roots[np.abs(roots.imag) < 1e-9 * np.abs(roots.real).max()].real)
    real = real[real > B]

    def log_ratio(z):
        return np.log((z + d1 * B) / (z + d2 * B))

    def g_res(z):
        return z - 1.0 - np.log(z - B) - A / ((d1 - d2) * B) * log_ratio(z)

    if len(real) == 1 or abs(real[-1] - real[0]) < 1e-12:
        z, kind = real[-1], "single"
    else:
        z_l, z_g = real[0], real[-1]
        z, kind = (z_l, "liquid") if g_res(z_l) < g_res(z_g) else (z_g, "gas")
    ln_phi = bi / b * (z - 1.0) - np.log(z - B) - A / ((d1 - d2) * B) * (2.0 * (aij @ y) / a - bi / b) * log_ratio(z)
    h_res = z - 1.0 + (T * da - a) / ((d1 - d2) * b * R * T) * log_ratio(z)
    return {"ln_phi": ln_phi, "Z": z, "kind": kind, "g_res_RT": g_res(z), "h_res_RT": h_res}
