"""The stability test's early exits change no verdict (issue 12: the test runs by default on batches).

The compiled tangent-plane test (hipeq.models._stability) stops a trial once it heads for the trivial solution
or for a local minimum of tm that an earlier trial already reached (docstring of ``stability_states``). Over
grids of states through the condensing region of two processes, its verdict (stable / unstable) is compared
with two references that do not use those exits:

- the exhaustive form of the same test (``run_states(..., exhaustive=True)``: every trial run to convergence,
  the algorithm as it was before the exits): the verdicts must be equal at every state, and where unstable the
  lowest tpd found must agree;
- random trial compositions (Dirichlet draws spread towards the corners, plus each component nearly pure),
  with tpd(w) = sum_i w_i [ln w_i + ln phi_i(w) - ln z_i - ln phi_i(z)] (Michelsen 1982, Fluid Phase Equilib.
  9, 1-19) from the public ``fugacity_coefficients``: wherever a drawn composition lies clearly below the
  tangent plane (tpd < -1e-6), the test must say unstable.

States: methanol converter gas (SRK; CO, CO2, H2, H2O, CH3OH; the equilibrium gas of an invented 0.12 CO /
0.08 CO2 / 0.78 H2 / 0.01 H2O / 0.01 CH3OH feed at 480-560 K) cooled to 280-620 K at 10-200 bar, and ammonia
loop gas (PR; H2, N2, NH3, CH4, Ar; equilibrium at 650-750 K of an invented feed) cooled to 230-420 K at
50-300 bar: both stable gas and states that condense (a liquid-like trial below the tangent plane).
"""
from __future__ import annotations

import numpy as np
import pytest

import hipeq
from hipeq.models.stability import TPD_TOLERANCE, run_states

METHANOL = (["CO", "CO2", "H2", "H2O", "CH3OH"], ["CO + 2 H2 = CH3OH", "CO2 + H2 = CO + H2O"], "SRK",
            {"CO": 0.12, "CO2": 0.08, "H2": 0.78, "H2O": 0.01, "CH3OH": 0.01},
            (480.0, 520.0, 560.0), np.linspace(280.0, 620.0, 18), np.array([10, 30, 50, 80, 100, 150, 200]) * 1e5)
AMMONIA = (["H2", "N2", "NH3", "CH4", "Ar"], ["N2 + 3 H2 = 2 NH3"], "PR",
           {"H2": 0.70, "N2": 0.235, "NH3": 0.02, "CH4": 0.03, "Ar": 0.015},
           (650.0, 700.0, 750.0), np.linspace(230.0, 420.0, 11), np.array([50, 100, 150, 200, 300]) * 1e5)
DRAWS = 300  # random trial compositions per state
CLEAR = 1e-6  # a drawn composition this far below the tangent plane must be found by the test


def _states(case):
    """(model, T, P, Y): the equilibrium gas at each (T_eq, P) tested at every T of the grid, at that P, and at
    ten more temperatures between the two grid points where the exhaustive verdict flips plus the 18 steps of a
    bisection on that verdict (the states just inside and just outside the condensing region, where tpd is
    near zero: where an early exit could err)."""
    species, reactions, eos, feed, T_eq, T_test, pressures = case
    system = hipeq.ReactionSystem(species, reactions, eos=eos)
    Te, Pe = np.meshgrid(np.asarray(T_eq), pressures, indexing="ij")
    gas = system.equilibrium(feed, T=Te.ravel(), P=Pe.ravel(), phases="one")
    assert np.all(np.asarray(gas.converged))
    Y = np.stack([np.asarray(gas.y[n]) for n in species], axis=-1)
    Y /= Y.sum(axis=1, keepdims=True)
    T = np.repeat(T_test[None, :], Y.shape[0], axis=0).ravel()
    P = np.repeat(Pe.ravel()[:, None], T_test.size, axis=1).ravel()
    Y = np.repeat(Y, T_test.size, axis=0)
    _, full, _ = run_states(system.model, T, P, Y, exhaustive=True)
    flips = (full[:, 0] < -TPD_TOLERANCE).reshape(-1, T_test.size)
    T_more, P_more, Y_more = [], [], []
    for row, col in zip(*np.nonzero(flips[:, 1:] != flips[:, :-1])):
        k = row * T_test.size + col
        T_more.append(np.linspace(T[k], T[k + 1], 12)[1:-1])
        lo, hi = T[k], T[k + 1]  # and bisection on the exhaustive verdict down to 1e-4 K of the boundary
        lo_unstable = bool(flips[row, col])
        for _ in range(18):
            mid = 0.5 * (lo + hi)
            _, f, _ = run_states(system.model, np.array([mid]), P[k:k + 1], Y[k:k + 1], exhaustive=True)
            if (f[0, 0] < -TPD_TOLERANCE) == lo_unstable:
                lo = mid
            else:
                hi = mid
            T_more.append(np.array([mid]))
        P_more.append(np.full(28, P[k]))
        Y_more.append(np.repeat(Y[k][None, :], 28, axis=0))
    return (system.model, np.concatenate([T, *T_more]), np.concatenate([P, *P_more]),
            np.concatenate([Y, *Y_more]))


def _lowest_drawn_tpd(model, T, P, z, rng):
    """The lowest tpd over DRAWS random compositions and the nearly pure ones (slow reference, public API)."""
    nc = z.size
    draws = rng.dirichlet(np.full(nc, 0.3), size=DRAWS)
    pure = np.full((nc, nc), 1e-6) + np.eye(nc)
    W = np.concatenate([draws, pure / pure.sum(axis=1, keepdims=True)])
    W = np.clip(W, 1e-12, None)
    W /= W.sum(axis=1, keepdims=True)
    d = np.log(z) + np.asarray(model.fugacity_coefficients(T, P, z).ln_phis)
    ln_phi = np.asarray(model.fugacity_coefficients(np.full(len(W), T), np.full(len(W), P), W).ln_phis)
    return float(np.min(np.sum(W * (np.log(W) + ln_phi - d), axis=1)))


@pytest.mark.parametrize("case", [METHANOL, AMMONIA], ids=["methanol", "ammonia"])
def test_early_exits_keep_every_verdict(case):
    model, T, P, Y = _states(case)
    _, fast, _ = run_states(model, T, P, Y)
    _, full, _ = run_states(model, T, P, Y, exhaustive=True)
    _, screened, _ = run_states(model, T, P, Y, screen=True)  # the form phases="auto" runs
    unstable_fast = fast[:, 0] < -TPD_TOLERANCE
    unstable_full = full[:, 0] < -TPD_TOLERANCE
    assert 0 < unstable_full.sum() < len(T)  # the grid crosses the condensing boundary
    np.testing.assert_array_equal(unstable_fast, unstable_full)
    np.testing.assert_array_equal(screened[:, 0] < -TPD_TOLERANCE, unstable_full)
    both = unstable_fast & unstable_full
    np.testing.assert_allclose(fast[both, 0], full[both, 0], rtol=1e-6, atol=1e-9)

    rng = np.random.default_rng(12)
    missed = [(float(T[k]), float(P[k])) for k in range(len(T))
              if not unstable_fast[k] and _lowest_drawn_tpd(model, T[k], P[k], Y[k], rng) < -CLEAR]
    assert not missed, missed
