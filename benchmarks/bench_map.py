"""A 200 x 200 temperature-pressure map of ammonia synthesis equilibrium (PR): wall time of one batch call.

The map spans the ammonia case's window (600-900 K, 50-600 bar) on an even grid, 40,000 states in one
``system.equilibrium(feed=..., T=grid, P=grid)`` call on all cores, JIT warm; the figure is the best of a few
repeats and includes ln K, the solve and building the result.
"""
from __future__ import annotations

import numba
import numpy as np

import cases
import equilibrium_bench
from harness import Context, Row, best_time

NAME = "map"
DESCRIPTION = "200 x 200 T-P map, ammonia, PR: wall time of one batch call (all cores)"


def run(ctx: Context) -> list[Row]:
    case = cases.AMMONIA
    size = 200  # the map is the figure asked for; --quick only repeats it fewer times
    T, P = case.grid(size, size)
    T2, P2 = T.reshape(size, size), P.reshape(size, size)
    system = equilibrium_bench.system_for(case)
    feed = dict(case.feed)
    system.equilibrium(feed=feed, T=T[:64], P=P[:64])  # warm
    numba.set_num_threads(numba.config.NUMBA_NUM_THREADS)
    try:  # a 2-D grid, if the API broadcasts shapes
        res = system.equilibrium(feed=feed, T=T2, P=P2)
        args = (T2, P2)
        shape_note = "2-D arrays in, 2-D arrays out"
    except Exception:
        res = system.equilibrium(feed=feed, T=T, P=P)
        args = (T, P)
        shape_note = "flattened to 1-D (2-D input not accepted)"
    repeat = 3 if ctx.quick else 7
    t = best_time(lambda: system.equilibrium(feed=feed, T=args[0], P=args[1]), repeat)
    conv = equilibrium_bench.converged_fraction(res)
    y_nh3 = np.asarray(res.y["NH3"], dtype=float)
    ctx.details[NAME] = {"states": size * size, "seconds": t, "converged_fraction": conv, "input": shape_note,
                         "y_NH3_range": [float(np.nanmin(y_nh3)), float(np.nanmax(y_nh3))]}
    return [
        Row(NAME, f"{size} x {size} map, {numba.config.NUMBA_NUM_THREADS} threads, wall time", t, "s",
            note=f"{size * size / t:,.0f} states/s; {shape_note}"),
        Row(NAME, "map converged fraction", conv, "-", target="= 1", passed=conv == 1.0),
    ]
