"""A 200 x 200 operating map of ammonia synthesis with four fugacity models: wall time of ``hipeq.operating_map``.

N2, H2, NH3 (N2 + 3 H2 = 2 NH3), feed N2:H2 = 1:3; models ideal, PR, SRK and PR78 with E-PPR78 k_ij and Peneloux
volume translation; T 300-600 degC (200 even steps), P 1-1000 bar (200 geometric steps): 160,000 states. The figure
is the best of a few repeats of the whole call (four batch solves over the grid, the band, and the ideal-gas limit
per temperature refined by Brent's method on scalar solves), JIT warm, all cores. Reported beside it: the four
batch solves alone, the ideal-gas limit refinement alone, the same map with one numba thread, the same map on a
dask LocalCluster (two in-process workers of one thread each) and drawing the two figures (PNG + SVG).
"""
from __future__ import annotations

import tempfile
import time
from pathlib import Path

import numba
import numpy as np

import hipeq
from harness import Context, Row, best_time
from hipeq.analysis.maps import Span, operating_map

NAME = "opmap"
DESCRIPTION = "200 x 200 ammonia operating map, 4 models (160,000 states), hipeq.operating_map: wall time"

FEED = {"N2": 1.0, "H2": 3.0}
T_GRID = Span("300 degC", "600 degC", 200)
P_GRID = Span("1 bar", "1000 bar", 200, "geometric")


def _map(system: hipeq.ReactionSystem, **options: object) -> hipeq.OperatingMap:
    return operating_map(system, FEED, T=T_GRID, P=P_GRID, progress=False, **options)


def run(ctx: Context) -> list[Row]:
    system = hipeq.ReactionSystem(["N2", "H2", "NH3"], ["N2 + 3 H2 = 2 NH3"])
    threads = numba.config.NUMBA_NUM_THREADS
    numba.set_num_threads(threads)
    warm = _map(system)  # loads every model's compiled code
    repeat = 2 if ctx.quick else 5
    total = best_time(lambda: _map(system), repeat)

    T = np.repeat(warm.T, warm.P.size)
    P = np.tile(warm.P, warm.T.size)
    n0 = system.feed_vector(FEED)
    systems = warm.systems
    solves = best_time(lambda: [s.equilibrium_batch(n0, T, P) for s in systems.values()], repeat)

    from hipeq.analysis.maps import _ideal_limits

    j = system.species_index("NH3")
    limit = best_time(lambda: _ideal_limits(systems, "ideal", "PR", n0, j, warm.T, warm.P, warm.y, warm.tolerance,
                                            "extent", 100), repeat)
    numba.set_num_threads(1)
    try:
        one_thread = best_time(lambda: _map(system), max(1, repeat - 2))
    finally:
        numba.set_num_threads(threads)

    from dask.distributed import Client, LocalCluster

    with LocalCluster(n_workers=2, threads_per_worker=1, processes=False, dashboard_address=None) as cluster, \
            Client(cluster) as client:
        _map(system, client=client, chunk_states=10_000)  # warm the workers
        on_dask = best_time(lambda: _map(system, client=client, chunk_states=10_000), max(1, repeat - 2))

    with tempfile.TemporaryDirectory() as folder:
        t0 = time.perf_counter()
        warm.save_figures(Path(folder), T="450 degC")
        figures = time.perf_counter() - t0

    states = warm.T.size * warm.P.size * len(warm.models)
    failed = sum(warm.failures.values())
    ctx.details[NAME] = {"states": states, "seconds": total, "batch_solves_s": solves, "ideal_limit_s": limit,
                         "one_thread_s": one_thread, "dask_local_cluster_s": on_dask, "figures_s": figures,
                         "failed_states": failed, "threads": threads,
                         "ideal_limit_bar_at_300_450_600_degC": [float(warm.ideal_limit_P[i] / 1e5)
                                                                 for i in (0, 99, 199)]}
    return [
        Row(NAME, f"200 x 200 map, 4 models, {threads} threads, wall", total, "s",
            note=f"{states / total:,.0f} states/s, ideal-gas limit included"),
        Row(NAME, "  of which the four batch solves", solves, "s"),
        Row(NAME, "  of which the ideal-gas limit (200 Brent searches)", limit, "s"),
        Row(NAME, "same map, 1 thread, wall", one_thread, "s"),
        Row(NAME, "same map on a dask LocalCluster (2 x 1 thread, in-process), wall", on_dask, "s"),
        Row(NAME, "map + yield figures, PNG + SVG", figures, "s"),
        Row(NAME, "failed states", failed, "-", target="= 0", passed=failed == 0),
    ]


if __name__ == "__main__":
    import sys

    from harness import table

    rows = run(Context(quick="--quick" in sys.argv, details={}))
    print(table(rows))
