"""Ammonia synthesis equilibrium, N2 + 3 H2 = 2 NH3 with Ar and CH4 inert, Peng-Robinson.

Measures hipeq's states/s in the batch core on one core and on all cores, the latency of one scalar call, and
the same problem solved by the hand-written baseline (thermo PRMIX + scipy brentq) on a sample of the states.

Targets: >= 1000x the baseline's states/s on one core; >= 200,000 states/s per core; one scalar call < 50 us;
a scalar solve plus reading ``result.y["NH3"]`` <= 15 us median (issue 10), and the loop form
(``system.state_solver()``) for one state beside it.
"""
from __future__ import annotations

import cases
import equilibrium_bench
import numpy as np
from harness import Context, Row, median_time

NAME = "ammonia"
DESCRIPTION = "NH3 synthesis, PR, 5 species: batch states/s (1 core, all), scalar latency, vs thermo+brentq"


def run(ctx: Context) -> list[Row]:
    rows, h = equilibrium_bench.measure(ctx, cases.AMMONIA, NAME)
    ratio = h["rate_one"] / h["baseline_rate"]
    rows += [
        Row(NAME, "speed-up vs baseline, 1 thread", ratio, "x", target=">= 1000", passed=ratio >= 1000),
        Row(NAME, "states/s per core (1 thread)", h["rate_one"], "states/s", target=">= 200,000",
            passed=h["rate_one"] >= 200_000),
        Row(NAME, "one scalar call from Python", h["scalar_s"] * 1e6, "us", target="< 50", passed=h["scalar_s"] < 50e-6),
    ]
    return rows + call_overhead(ctx)


def call_overhead(ctx: Context) -> list[Row]:
    """Median per call of ``equilibrium`` plus reading ``y["NH3"]`` (the default ``phases="auto"``), and of the
    bound ``state_solver()`` for one state into caller-owned arrays (wall time, one state at a time)."""
    system = equilibrium_bench.system_for(cases.AMMONIA)
    feed = dict(cases.AMMONIA.feed)
    T, P = 723.15, 2.5e7
    calls = ctx.scale(4000, 400)

    def solve_and_read() -> None:
        system.equilibrium(feed, T=T, P=P).y["NH3"]

    solver = system.state_solver()
    T1, P1 = np.array([T]), np.array([P])
    feed1 = system.feed_vector(feed).reshape(1, -1).copy()
    y_out, status_out = np.empty((1, len(system.species_names))), np.empty(1, dtype=np.int64)

    def loop_form() -> None:
        solver(T1, P1, feed1, y_out, status_out)

    for fn in (solve_and_read, loop_form):  # warm: compiled code loaded, buffers made
        for _ in range(200):
            fn()
    t_solve = median_time(solve_and_read, calls)
    t_loop = median_time(loop_form, calls)
    ctx.details[NAME + "_call_overhead"] = {"calls": calls, "solve_plus_y_median_s": t_solve,
                                            "state_solver_one_state_median_s": t_loop}
    return [
        Row(NAME, "scalar solve plus reading y, median", t_solve * 1e6, "us", target="<= 15",
            passed=t_solve <= 15e-6, note=f"median of {calls} calls, wall time, phases='auto'"),
        Row(NAME, "state_solver() loop form, one state, median", t_loop * 1e6, "us",
            note=f"median of {calls} calls, wall time; fills caller-owned arrays"),
    ]
