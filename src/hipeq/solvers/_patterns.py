"""Which species can be present at equilibrium, per pattern of zero feeds, and the reduced bases that follow.

A species can be present at equilibrium only if some feasible composition contains it. For the extent
formulation the feasible set is {n = n0 + nu^T xi >= 0}; for Gibbs minimisation it is {n >= 0 : A n = A n0}.
The *support* of such a polytope (species positive somewhere in it) depends only on which feed amounts are zero,
not on their values (if n is feasible for n0, then n0' + eps (n - n0) is feasible for any n0' with the same
zero pattern and small eps > 0), so it is computed once per pattern with linear programmes and cached.

Each LP maximises sum_i s_i over the species not yet known to be present, subject to n_i >= s_i, 0 <= s_i <= 1,
for the indicator feed f (1 for every species fed); it is repeated until no further species can be made
positive (Smith & Missen 1982, "Chemical Reaction Equilibrium Analysis", ch. 2, on the feasibility of
compositions; the LP is our formulation). The average of the LP solutions gives an interior point p
(positive on the whole support), from which the kernels build their cold start n0 + eps (p - f).

Reactions with a species outside the support cannot proceed ("frozen"); the extent solver then works in the
reduced extents t with xi = Zb t, the columns of Zb an orthonormal basis of the extent directions that keep
every absent species at zero. Gibbs minimisation uses independent rows of the element matrix restricted to the
support (each row one element, so that every balance can be solved relative to its own feed amount, which keeps
a trace element's balance), and an orthonormal basis of their null space (the feasible composition changes) for
its convexity test.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

_POSITIVE = 1e-9  # an LP value above this (for a unit indicator feed) counts as "can be present"


@dataclass(frozen=True, eq=False)
class Pattern:
    """Reduced bases for one pattern of zero feeds (see module docstring); arrays sized for the kernels."""

    key: int
    ext_active: np.ndarray  # (nc,) bool
    Zb: np.ndarray  # (nr, nr), first neff columns used
    W: np.ndarray  # (nc, nr) = nu^T Zb
    neff: int
    ext_dir: np.ndarray  # (nc,) p - f for the extent formulation
    ext_xdir: np.ndarray  # (nr,) extents reaching p from f
    frozen: np.ndarray  # (nr,) bool: reactions that cannot proceed
    gibbs_active: np.ndarray  # (nc,) bool
    Q: np.ndarray  # (ne, nc), first neq rows used: independent element rows on the active species
    neq: int
    gibbs_dir: np.ndarray  # (nc,) p - f for Gibbs minimisation
    gibbs_null: np.ndarray  # (nc, nc), first n_null columns: basis of the feasible composition changes
    n_null: int


def null_space(matrix: np.ndarray) -> np.ndarray:
    """Orthonormal basis of the null space of ``matrix`` (columns): ``scipy.linalg.null_space`` (SVD) with a
    relative singular-value cut of 1e-10; an empty matrix (no rows) gives the identity."""
    from scipy.linalg import null_space as svd_null_space

    rows, cols = matrix.shape
    if rows == 0:
        return np.eye(cols)
    return np.ascontiguousarray(svd_null_space(matrix, rcond=1e-10))


def independent_rows(matrix: np.ndarray) -> list[int]:
    """Indices of rows of ``matrix`` that are linearly independent, taken greedily, rows with the fewest non-zero
    entries first (each kept row raises the rank, relative cut 1e-10).

    For element rows on the species present, an element carried by few species is solved directly and the
    balances left out follow as sums of the kept ones: a trace element (say oxygen, carried only by 1e-12 mol of
    CO beside 0.9 mol of CH4) is then not the small difference of two large balances (carbon minus hydrogen/4),
    which would leave it off by ~1e-4 of itself."""
    order = sorted(range(matrix.shape[0]), key=lambda k: (int(np.count_nonzero(matrix[k])), k))
    kept: list[int] = []
    for k in order:
        trial = matrix[kept + [k]]
        if np.linalg.matrix_rank(trial, tol=1e-10 * max(1.0, float(np.abs(trial).max(initial=0.0)))) > len(kept):
            kept.append(k)
    return sorted(kept)


def _support(f: np.ndarray, span: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Species that can be positive in {f + span^T x >= 0}; returns (mask, interior point p, x of p)."""
    from scipy.optimize import linprog

    k, nc = span.shape
    active = f > 0.0
    solutions: list[np.ndarray] = []
    while k > 0:
        candidates = np.flatnonzero(~active)
        if candidates.size == 0:
            break
        m = candidates.size
        select = np.zeros((nc, m))
        select[candidates, np.arange(m)] = 1.0
        cost = np.concatenate([np.zeros(k), -np.ones(m)])
        a_ub = np.hstack([-span.T, select])
        bounds = [(None, None)] * k + [(0.0, 1.0)] * m
        res = linprog(cost, A_ub=a_ub, b_ub=f, bounds=bounds, method="highs")
        if res.status != 0 or -res.fun <= _POSITIVE:
            break
        s = res.x[k:]
        found = candidates[s > _POSITIVE]
        if found.size == 0:
            break
        active[found] = True
        solutions.append(res.x[:k])
    x = np.mean(solutions, axis=0) if solutions else np.zeros(k)
    return active, f + span.T @ x, x


def analyse(key: int, nc: int, nu: np.ndarray, element_null: np.ndarray, A: np.ndarray) -> Pattern:
    """Pattern data for the feed pattern ``key`` (bit i set when species i is fed)."""
    nr = nu.shape[0]
    f = np.array([(key >> i) & 1 for i in range(nc)], dtype=float)
    # --- extent formulation
    ext_active, p, x = _support(f, nu)
    frozen = np.array([bool(np.any(nu[r, ~ext_active] != 0.0)) for r in range(nr)], dtype=bool)
    Zb = np.zeros((nr, nr))
    if frozen.any():
        basis = null_space(nu[:, ~ext_active].T)
        neff = basis.shape[1]
        Zb[:, :neff] = basis
        x = basis @ (basis.T @ x)  # remove rounding outside the feasible directions
    else:
        neff = nr
        Zb[:, :] = np.eye(nr)
    W = nu.T @ Zb
    ext_dir = np.where(ext_active, nu.T @ x, 0.0)
    # --- Gibbs minimisation
    gibbs_active, pg, _ = _support(f, element_null.T)
    ne = A.shape[0]
    Q = np.zeros((max(ne, 1), nc))
    sub = A[:, gibbs_active]
    rows = independent_rows(sub)
    neq = len(rows)
    Q[:neq][:, gibbs_active] = sub[rows]
    gibbs_dir = np.where(gibbs_active, pg - f, 0.0)
    changes = null_space(sub[rows]) if neq else np.eye(int(gibbs_active.sum()))
    n_null = changes.shape[1]
    gibbs_null = np.zeros((nc, nc))
    gibbs_null[np.flatnonzero(gibbs_active)[:, None], np.arange(n_null)[None, :]] = changes
    for arr in (ext_active, Zb, W, ext_dir, x, frozen, gibbs_active, Q, gibbs_dir, gibbs_null):
        arr.setflags(write=False)
    return Pattern(key, ext_active, Zb, W, neff, ext_dir, x, frozen, gibbs_active, Q, neq, gibbs_dir, gibbs_null,
                   n_null)
