"""A simulation that calls hipeq inside its own loop: an invented plug-flow converter model of our own that, at
each axial step, asks how far the gas is from equilibrium at the local temperature and pressure.

The converter, its rate law and every number here are invented for the example (the "Harrowfield" loop of the
demo case); only the equilibrium calls are hipeq's. The pattern: build the system once, take a bound solver
(`system.state_solver()`), and hand it caller-owned arrays, so that the loop pays neither result objects nor
allocations (cost per call in docs/performance.md).

Run: python examples/loop_reactor_model.py
Caution: equilibrium is a thermodynamic limit, not a design basis; follow local codes and licensed practice.
"""
from __future__ import annotations

import numpy as np

import hipeq

SPECIES = ["N2", "H2", "NH3", "Ar"]
system = hipeq.ReactionSystem(SPECIES, ["N2 + 3 H2 = 2 NH3"], eos="PR")
solve = system.state_solver()  # one per thread; fills the arrays it is given

# invented converter: 40 axial steps, a linear temperature rise, a small pressure drop
steps = 40
T = np.linspace(653.15, 773.15, steps)  # [K]
P = np.linspace(215e5, 212e5, steps)  # [Pa]
n = np.array([23.6, 70.9, 2.4, 1.3])  # [mol/s] entering, in SPECIES order
approach = 0.35  # invented: the fraction of the remaining way to equilibrium covered per step

# caller-owned arrays, reused every step
T_one, P_one = np.empty(1), np.empty(1)
feed_one, y_eq, status = np.empty((1, len(SPECIES))), np.empty((1, len(SPECIES))), np.empty(1, dtype=np.int64)
amounts_eq = np.empty((1, len(SPECIES)))

print(f"{'step':>4} {'T [degC]':>9} {'P [bar]':>8} {'y NH3':>8} {'y NH3 eq':>9}")
for k in range(steps):
    T_one[0], P_one[0], feed_one[0] = T[k], P[k], n
    failed = solve(T_one, P_one, feed_one, y_eq, status, amounts_eq)
    if failed:
        raise RuntimeError(f"step {k}: equilibrium did not converge (status {int(status[0])})")
    n = n + approach * (amounts_eq[0] - n)  # move part of the way towards equilibrium
    if k % 5 == 0 or k == steps - 1:
        y = n / n.sum()
        print(f"{k:4d} {T[k] - 273.15:9.1f} {P[k] / 1e5:8.2f} {y[2]:8.4f} {y_eq[0, 2]:9.4f}")
