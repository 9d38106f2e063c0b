"""The baseline: equilibrium written by hand the way a practitioner would, with general-purpose libraries.

Fugacity coefficients come from ``thermo``'s mixture objects (``PRMIX`` for Peng-Robinson, ``SRKMIX`` for
Soave-Redlich-Kwong), built afresh for every state with the same Tc, Pc, omega and kij as hipeq's compiled model;
when the cubic has three roots the lower-Gibbs one is taken, as hipeq does. The equilibrium conditions are the
textbook ones (e.g. Smith, Van Ness & Abbott, "Introduction to Chemical Engineering Thermodynamics", 7th ed.,
section 13.7) in logarithmic form, for each independent reaction j:

    sum_i nu_ji ln(y_i phi_i P / P0) = ln K_j(T),   y_i = (n0_i + sum_j nu_ji xi_j) / n_T

solved by successive substitution on the fugacity coefficients: start ideal (phi = 1), solve for the extents with
phi held fixed, re-evaluate phi at the new composition, and repeat until max |delta ln phi| < 1e-10.

- one reaction (ammonia): ``scipy.optimize.brentq`` on the extent, bracketed by the extents at which a species
  runs out;
- two reactions (methanol): ``scipy.optimize.fsolve`` on both extents, warm-started from the previous
  substitution step; a step where fsolve fails (``ier != 1`` or a residual above 1e-9) is redone with nested
  ``brentq`` (outer on xi_2, inner on xi_1) and counted in ``fallbacks``.

ln K_j comes from ``hipeq.equilibrium_constant`` (the caller computes it), so hipeq and the baseline solve the
same problem; its cost is not timed here.
"""
from __future__ import annotations

from collections.abc import Callable

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq, fsolve
from thermo import PRMIX, SRKMIX

P0 = 1e5  # [Pa] standard-state pressure
PHI_TOL = 1e-10  # max |delta ln phi| between substitution steps
MAX_OUTER = 200

EOS_CLASSES = {"PR": PRMIX, "SRK": SRKMIX}

# thermo's alpha-function slopes m(omega) (the original 1976 / 1972 forms)
M_FORMULAS = {
    "PR": lambda w: 0.37464 + 1.54226 * w - 0.26992 * w * w,
    "SRK": lambda w: 0.480 + 1.574 * w - 0.176 * w * w,
}


@dataclass
class Parameters:
    """Pure-component constants and kij, as plain Python lists (what thermo is fastest with)."""

    eos: str
    Tcs: list[float]
    Pcs: list[float]
    omegas: list[float]
    kijs: list[list[float]]

    @classmethod
    def from_model(cls, model, eos: str) -> Parameters:
        from hipeq.models import _kernels as k

        comp = np.asarray(model.comp)
        return cls(eos=eos, Tcs=comp[:, k.TC].tolist(), Pcs=comp[:, k.PC].tolist(),
                   omegas=comp[:, k.OMEGA].tolist(), kijs=np.asarray(model.kmat).tolist())


def model_mismatch(model, eos: str) -> dict[str, float]:
    """Largest relative differences between hipeq's cubic constants and thermo's, for the report.

    Non-zero entries mean the two codes do not implement quite the same equation of state; the answers can then
    differ by more than solver tolerance.
    """
    from hipeq.models import _kernels as k

    cls = EOS_CLASSES[eos]
    comp = np.asarray(model.comp)
    consts = np.asarray(model.consts)
    m_thermo = np.array([M_FORMULAS[eos](w) for w in comp[:, k.OMEGA]])
    delta1, delta2 = (1.0 + math.sqrt(2.0), 1.0 - math.sqrt(2.0)) if eos == "PR" else (1.0, 0.0)
    return {
        "omega_a": abs(consts[k.OMEGA_A] / cls.c1 - 1.0),
        "omega_b": abs(consts[k.OMEGA_B] / cls.c2 - 1.0),
        "delta1": abs(consts[k.DELTA1] - delta1),
        "delta2": abs(consts[k.DELTA2] - delta2),
        "m_alpha": float(np.max(np.abs(comp[:, k.M_ALPHA] - m_thermo))),
        "quantum_mass": float(np.max(np.abs(comp[:, k.QMASS]))),
    }


class Counter:
    eos_calls = 0
    outer_steps = 0
    fallbacks = 0

    @classmethod
    def reset(cls) -> None:
        cls.eos_calls = cls.outer_steps = cls.fallbacks = 0


def ln_phis(params: Parameters, T: float, P: float, zs: list[float]) -> list[float]:
    """ln phi_i from a fresh thermo mixture object; of two roots the lower-Gibbs one (thermo reports the roots
    it found as ``_l`` / ``_g`` attributes)."""
    Counter.eos_calls += 1
    eos = EOS_CLASSES[params.eos](Tcs=params.Tcs, Pcs=params.Pcs, omegas=params.omegas, zs=zs,
                                  kijs=params.kijs, T=T, P=P)
    has_l = hasattr(eos, "lnphis_l")
    has_g = hasattr(eos, "lnphis_g")
    if has_l and has_g:
        return eos.lnphis_l if eos.G_dep_l < eos.G_dep_g else eos.lnphis_g
    return eos.lnphis_l if has_l else eos.lnphis_g


def _amounts(n0: list[float], nu: list[list[float]], xi: list[float]) -> list[float]:
    return [n0[i] + sum(nu[j][i] * xi[j] for j in range(len(xi))) for i in range(len(n0))]


def _residual(j: int, n: list[float], nu: list[list[float]], lnphi: list[float], ln_p: float,
              ln_k: float) -> float:
    """sum_i nu_ji ln(y_i phi_i P/P0) - ln K_j, with every n_i > 0."""
    nt = sum(n)
    row = nu[j]
    s = -ln_k
    dnu = 0.0
    for i, v in enumerate(row):
        if v != 0.0:
            s += v * (math.log(n[i] / nt) + lnphi[i])
            dnu += v
    return s + dnu * ln_p


def _bounds(row: list[float], shift: list[float], only: list[bool] | None = None) -> tuple[float, float]:
    """Open interval of one extent over which every n_i = shift_i + row_i xi stays positive (over the species
    flagged in ``only``, all by default)."""
    lo, hi = -math.inf, math.inf
    for i, v in enumerate(row):
        if only is not None and not only[i]:
            continue
        if v > 0.0:
            lo = max(lo, -shift[i] / v)
        elif v < 0.0:
            hi = min(hi, shift[i] / -v)
    return lo, hi


def _brent_one(j: int, shift: list[float], nu: list[list[float]], lnphi: list[float], ln_p: float,
               ln_k: float) -> float:
    """Extent of reaction j alone, the others fixed (their effect is in ``shift``)."""
    row = nu[j]
    lo, hi = _bounds(row, shift)
    width = hi - lo
    a, b = lo + 1e-14 * width, hi - 1e-14 * width

    def f(x: float) -> float:
        return _residual(j, [shift[i] + row[i] * x for i in range(len(shift))], nu, lnphi, ln_p, ln_k)

    return brentq(f, a, b, xtol=1e-15, maxiter=500)


def _nested_brent(n0: list[float], nu: list[list[float]], lnphi: list[float], ln_p: float,
                  ln_k: list[float]) -> list[float]:
    """Two extents by nested brentq: the outer one on xi_2, the inner one solving reaction 1 for xi_1."""
    inner: dict[float, float] = {}

    def xi1_of(x2: float) -> float:
        shift = [n0[i] + nu[1][i] * x2 for i in range(len(n0))]
        x1 = _brent_one(0, shift, nu, lnphi, ln_p, ln_k[0])
        inner[x2] = x1
        return x1

    def g(x2: float) -> float:
        x1 = xi1_of(x2)
        return _residual(1, _amounts(n0, nu, [x1, x2]), nu, lnphi, ln_p, ln_k[1])

    # xi_2 range: where some xi_1 keeps every amount positive, i.e. where reaction 1's interval is non-empty
    lo, hi = _feasible_range(n0, nu)
    width = hi - lo
    x2 = brentq(g, lo + 1e-12 * width, hi - 1e-12 * width, xtol=1e-15, maxiter=500)
    return [xi1_of(x2), x2]


def _feasible_range(n0: list[float], nu: list[list[float]]) -> tuple[float, float]:
    """Range of xi_2 over which reaction 1 still has a non-empty interval of xi_1 (bisection on its width)."""

    def width(x2: float) -> float:
        shift = [n0[i] + nu[1][i] * x2 for i in range(len(n0))]
        lo, hi = _bounds(nu[0], shift)
        return hi - lo

    # species untouched by reaction 1 bound xi_2 directly; the others may be restored by xi_1
    lo, hi = _bounds(nu[1], n0, [v == 0.0 for v in nu[0]])
    # shrink each end until the reaction-1 interval is non-empty
    ends = []
    for end in (lo, hi):
        if math.isfinite(end) and width(end) > 0.0:
            ends.append(end)
            continue
        inside, outside = 0.0, end if math.isfinite(end) else (1e3 if end > 0 else -1e3)
        for _ in range(200):
            mid = 0.5 * (inside + outside)
            if width(mid) > 0.0:
                inside = mid
            else:
                outside = mid
        ends.append(inside)
    return ends[0], ends[1]


def _substitute(params: Parameters, T: float, P: float, n0: list[float], nu: list[list[float]],
                inner: Callable[[list[float], float], list[float]]) -> list[float]:
    """Successive substitution on phi: solve the extents with phi frozen (``inner(lnphi, ln_p)``), update phi at
    the new composition, repeat until ln phi changes by less than PHI_TOL. Returns the mole fractions."""
    lnphi = [0.0] * len(n0)
    ln_p = math.log(P / P0)
    for _ in range(MAX_OUTER):
        Counter.outer_steps += 1
        n = _amounts(n0, nu, inner(lnphi, ln_p))
        nt = sum(n)
        y = [v / nt for v in n]
        new = ln_phis(params, T, P, y)
        change = max(abs(a - b) for a, b in zip(new, lnphi))
        lnphi = new
        if change < PHI_TOL:
            break
    return y


def solve_one_reaction(params: Parameters, T: float, P: float, n0: list[float], nu: list[list[float]],
                       ln_k: list[float]) -> list[float]:
    """Equilibrium mole fractions of a one-reaction system: brentq on the extent inside phi substitution."""
    return _substitute(params, T, P, n0, nu, lambda lnphi, ln_p: [_brent_one(0, n0, nu, lnphi, ln_p, ln_k[0])])


def solve_two_reactions(params: Parameters, T: float, P: float, n0: list[float], nu: list[list[float]],
                        ln_k: list[float]) -> list[float]:
    """Equilibrium mole fractions of a two-reaction system: fsolve on both extents inside phi substitution."""
    xi = [0.0, 0.0]  # the feed itself is a valid start (every species present); later passes start warm

    def inner(lnphi: list[float], ln_p: float) -> list[float]:
        def residuals(x: np.ndarray) -> list[float]:
            n = _amounts(n0, nu, [float(x[0]), float(x[1])])
            if min(n) <= 0.0:
                return [1e3, 1e3]
            return [_residual(0, n, nu, lnphi, ln_p, ln_k[0]), _residual(1, n, nu, lnphi, ln_p, ln_k[1])]

        sol, info, ier, _ = fsolve(residuals, xi, xtol=1e-13, full_output=True)
        if ier != 1 or max(abs(v) for v in residuals(sol)) > 1e-9:
            Counter.fallbacks += 1
            xi[:] = _nested_brent(n0, nu, lnphi, ln_p, ln_k)
        else:
            xi[:] = [float(sol[0]), float(sol[1])]
        return list(xi)

    return _substitute(params, T, P, n0, nu, inner)


def solve_states(params: Parameters, T: np.ndarray, P: np.ndarray, n0: np.ndarray, nu: np.ndarray,
                 ln_k: np.ndarray) -> np.ndarray:
    """Baseline equilibrium mole fractions for every state (a plain Python loop), shape (n, nc)."""
    n0l = n0.tolist()
    nul = nu.tolist()
    solve = solve_one_reaction if nu.shape[0] == 1 else solve_two_reactions
    out = np.empty((T.shape[0], n0.shape[0]))
    for k in range(T.shape[0]):
        out[k] = solve(params, float(T[k]), float(P[k]), n0l, nul, ln_k[k].tolist())
    return out
