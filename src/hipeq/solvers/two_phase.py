"""Simultaneous chemical and phase equilibrium at fixed T and P: a reacting mixture split into a vapour and a liquid.

Used by :meth:`hipeq.ReactionSystem.equilibrium` (``phases="auto"``, the default) when the one-phase answer fails
the tangent-plane stability test (Michelsen 1982). The total Gibbs energy of two phases,

    G / RT = sum_p sum_i n_i^p [g0_i + ln(P / P0) + ln x_i^p + ln phi_i^p(T, P, x^p)],

is minimised over the total composition n = n_1 + D t (D: an orthonormal basis of the composition changes the
reactions allow for the species present in the one-phase answer n_1) and the vapour amounts v (liquid
l = n - v). Its stationary conditions are every reaction's condition in the liquid, D^T mu^L = 0, and equal
chemical potentials (fugacities) of every species in both phases, mu^V = mu^L; with the reactions met in one phase
they are met in the other. Newton's method with the Hessian

    [[D^T H^L D, -D^T H^L], [-H^L D, H^V + H^L]],   H^p_ij = (delta_ij / x_i - 1 + J^p_ij) / n_p,

J^p_ij = n_p d ln phi_i / d n_j (Michelsen & Mollerup 2007, "Thermodynamic Models", 2nd ed., ch. 2, 10 and 12;
Smith & Missen 1982, "Chemical Reaction Equilibrium Analysis", ch. 6 for the one-phase part), a Levenberg shift
where the Hessian is not positive definite, a line search on G, and steps kept inside n_i^p > 0. It starts from
the non-reactive flash of the one-phase answer (:func:`hipeq.models.phases.model_flash`), which itself starts
from the stability test's trial phase.

Each phase takes the volume root of lower Gibbs energy at its own composition.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from hipeq.constants import R
from hipeq.data.thermochem import standard_gibbs
from hipeq.models import _kernels as K
from hipeq.models.phases import _ModelAtT, _rachford_rice, model_flash

__all__ = ["TwoPhaseAnswer", "solve_two_phase", "GRADIENT_TOL"]

GRADIENT_TOL = 1e-11  # |mu_i^V - mu_i^L| / RT and |D^T mu^L| / RT where Newton's method stops
CHECK_TOL = 1e-10  # the answer: every |ln f_i^V - ln f_i^L| and every |D^T mu^V| / RT below this
MAX_NEWTON = 200


@dataclass(frozen=True)
class TwoPhaseAnswer:
    """Amounts [mol] of the vapour and the liquid, their ln phi, Z and root codes, the total G/RT [mol] and the
    Newton iterations; ``converged`` when every condition met CHECK_TOL (``max_residual``)."""

    vapour: np.ndarray
    liquid: np.ndarray
    ln_phi_vapour: np.ndarray
    ln_phi_liquid: np.ndarray
    Z_vapour: float
    Z_liquid: float
    root_vapour: int
    root_liquid: int
    G_RT: float
    iterations: int
    converged: bool
    max_residual: float


def standard_potentials(system: Any, T: float, ln_k: np.ndarray) -> np.ndarray:
    """g0_i = G0_i / (R T) [-] at T, adjusted by the least change that reproduces the system's ln K (the same rule
    Gibbs minimisation uses for a user ln_K; a no-op for the system's own)."""
    g0 = np.asarray(standard_gibbs(list(system.records), T), dtype=float) / (R * T)
    nu = system.nu
    if nu.shape[0]:
        g0 = g0 + np.linalg.pinv(nu) @ (-ln_k - nu @ g0)
    return g0


def _directions(system: Any, active: np.ndarray) -> np.ndarray:
    """Orthonormal basis (nc, k) of the composition changes nu^T xi that leave inactive species at zero."""
    N = system.nu.T  # (nc, nr)
    if N.shape[1] == 0:
        return np.zeros((N.shape[0], 0))
    inactive = ~active
    if np.any(inactive):
        rows = N[inactive]
        _, s, vt = np.linalg.svd(rows)
        rank = int(np.sum(s > 1e-10 * max(1.0, s.max() if s.size else 1.0)))
        xi = vt[rank:].T
    else:
        xi = np.eye(N.shape[1])
    D = N @ xi
    if D.shape[1] == 0:
        return D
    u, s, _ = np.linalg.svd(D, full_matrices=False)
    keep = s > 1e-10 * max(1.0, s.max())
    D = u[:, keep]
    D[inactive] = 0.0
    return D


def _phase_terms(m: _ModelAtT, P: float, n: np.ndarray, idx: np.ndarray, g0p: np.ndarray
                 ) -> tuple[float, np.ndarray, np.ndarray, np.ndarray, float, int]:
    """(G/RT, mu/RT, H, ln phi, Z, root) of one phase with amounts n (active species idx)."""
    nt = float(n[idx].sum())
    x = np.zeros_like(n)
    x[idx] = n[idx] / nt
    lnphi, jac, z, root = m.ln_phi_dn(P, x)
    mu = g0p + np.log(np.where(x > 0, x, 1.0)) + lnphi
    G = float(n[idx] @ mu[idx])
    H = (np.diag(1.0 / x[idx]) - 1.0 + jac[np.ix_(idx, idx)]) / nt
    return G, mu, H, lnphi, z, root


def _gibbs_only(m: _ModelAtT, P: float, n: np.ndarray, idx: np.ndarray, g0p: np.ndarray) -> float:
    nt = float(n[idx].sum())
    x = np.zeros_like(n)
    x[idx] = n[idx] / nt
    lnphi, _, root = m.ln_phi(P, x)
    if root == K.ROOT_INVALID:
        return math.inf
    return float(n[idx] @ (g0p[idx] + np.log(x[idx]) + lnphi[idx]))


def solve_two_phase(system: Any, T: float, P: float, amounts: np.ndarray, ln_k: np.ndarray) -> TwoPhaseAnswer | None:
    """Two-phase reactive equilibrium at T [K], P [Pa] from the one-phase answer ``amounts`` [mol] (see the module
    docstring). None when the non-reactive flash of the one-phase answer finds no split to start from."""
    model = system.model
    n1 = np.asarray(amounts, dtype=float)
    active = n1 > 0.0
    idx = np.flatnonzero(active)
    split = model_flash(model, n1, T, P, system.records)
    if split.phase_count < 2:
        return None
    vap, liq = split.phases
    v = vap.mole_fractions * vap.amount
    v[~active] = 0.0
    l = liq.mole_fractions * liq.amount
    l[~active] = 0.0
    scale = n1 / np.where(v + l > 0, v + l, 1.0)  # the flash's totals are n1 up to rounding: keep n1 exactly
    v, l = v * scale, l * scale
    D = _directions(system, active)
    k = D.shape[1]
    g0p = standard_potentials(system, T, ln_k) + math.log(P / 1e5)
    m = _ModelAtT(model, T)
    iterations = 0
    residual = math.inf
    # both phases' amounts are kept (not l = n - v): each step changes them by Newton's small increments, so a
    # species that is a trace in one phase keeps its relative precision there
    for _ in range(MAX_NEWTON):
        Gv, mu_v, Hv, _, _, rv = _phase_terms(m, P, v, idx, g0p)
        Gl, mu_l, Hl, _, _, rl = _phase_terms(m, P, l, idx, g0p)
        if rv == K.ROOT_INVALID or rl == K.ROOT_INVALID:
            break
        Da = D[idx]
        grad = np.concatenate([Da.T @ mu_l[idx], (mu_v - mu_l)[idx]])
        previous, residual = residual, float(np.max(np.abs(grad))) if grad.size else 0.0
        if residual < GRADIENT_TOL or (residual < 1e-9 and residual > 0.5 * previous):
            break  # converged, or no longer improving at the rounding level
        HlD = Hl @ Da
        H = np.vstack([np.hstack([Da.T @ HlD, -HlD.T]), np.hstack([-HlD, Hv + Hl])])
        step = None
        shift = 0.0
        for _attempt in range(12):
            try:
                c = np.linalg.cholesky(H + shift * np.eye(H.shape[0]))
                step = -np.linalg.solve(c.T, np.linalg.solve(c, grad))
                break
            except np.linalg.LinAlgError:
                shift = 1e-10 * max(1.0, float(np.max(np.abs(np.diag(H))))) if shift == 0.0 else 10.0 * shift
        if step is None or not np.all(np.isfinite(step)):
            break
        dv_a = step[k:]
        dl_a = Da @ step[:k] - dv_a
        vi, li = v[idx], l[idx]
        alpha = 1.0
        for j in range(idx.size):  # stay inside v > 0 and l > 0
            if dv_a[j] < 0.0:
                alpha = min(alpha, -0.95 * vi[j] / dv_a[j])
            if dl_a[j] < 0.0:
                alpha = min(alpha, -0.95 * li[j] / dl_a[j])
        G0 = Gv + Gl
        accepted = False
        for _half in range(50):
            v_new, l_new = v.copy(), l.copy()
            v_new[idx] = vi + alpha * dv_a
            l_new[idx] = li + alpha * dl_a
            if np.all(v_new[idx] > 0.0) and np.all(l_new[idx] > 0.0):
                G_new = _gibbs_only(m, P, v_new, idx, g0p) + _gibbs_only(m, P, l_new, idx, g0p)
                if G_new <= G0 + 1e-14 * max(1.0, abs(G0)):
                    accepted = True
                    break
            alpha *= 0.5
        iterations += 1
        if not accepted:
            break
        v, l = v_new, l_new
    n = v + l
    # polish the split of the total n by successive substitution of K (x_i = z_i / (1 + beta (K_i - 1)))
    nt = float(n.sum())
    zt = n / nt
    xv = v / v.sum()
    xl = l / l.sum()
    for _ in range(8):
        lp_v, zv, rv = m.ln_phi(P, xv)
        lp_l, zl, rl = m.ln_phi(P, xl)
        if rv == K.ROOT_INVALID or rl == K.ROOT_INVALID:
            break
        lnk = np.where(active, lp_l - lp_v, 0.0)
        beta, x_new, y_new = _rachford_rice(zt, lnk)
        if not 0.0 < beta < 1.0:
            break
        xv, xl = y_new, x_new
        v, l = beta * nt * xv, (1.0 - beta) * nt * xl
    lp_v, zv, rv = m.ln_phi(P, xv)
    lp_l, zl, rl = m.ln_phi(P, xl)
    with np.errstate(divide="ignore", invalid="ignore"):
        fugacity_gap = float(np.max(np.abs((np.log(xv) + lp_v - np.log(xl) - lp_l)[idx])))
    mu_v = g0p + np.log(np.where(xv > 0, xv, 1.0)) + lp_v
    nu = system.nu
    defined = [r for r in range(nu.shape[0]) if np.all(active[nu[r] != 0])]
    reaction_gap = float(np.max(np.abs(nu[defined] @ mu_v))) if defined else 0.0  # every reaction's condition
    residual = max(fugacity_gap, reaction_gap)
    converged = residual < CHECK_TOL
    G = _gibbs_only(m, P, v, idx, g0p) + _gibbs_only(m, P, l, idx, g0p)
    return TwoPhaseAnswer(v, l, lp_v, lp_l, float(zv), float(zl), int(rv), int(rl), G, iterations, converged,
                          residual)
