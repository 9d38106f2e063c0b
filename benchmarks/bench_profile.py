"""Where the time of an equilibrium state goes (ammonia, PR, one thread): the figures behind the findings in
docs/performance.md.

- split of one batch call into the compiled core (``hipeq.solvers._driver.solve_many``, timed by wrapping it in
  this process only) and the Python around it (broadcasting, checks, pattern analysis, result building);
- Newton iterations per state (``BatchResult.iterations``), for random states (each chunk's warm start jumps
  across the window) and for the same states sorted along T then P (warm starts from a near neighbour);
- compiled core time per state and per Newton iteration;
- the per-state pieces timed alone (``solver_loops.py``): tdep_into + g0_into (once per new temperature), and
  ``evaluate`` with the composition Jacobian (once per Newton trial point);
- a cProfile of one scalar call, the top Python functions by own time.
"""
from __future__ import annotations

import cProfile
import io
import json
import pstats
import time

import numba
import numpy as np

import cases
import equilibrium_bench
from harness import Context, Row, best_time, python_env, run_python

NAME = "profile"
DESCRIPTION = "where the time goes: core vs Python, Newton iterations/state, kernel pieces (ammonia, 1 thread)"


# heap allocations made by the compiled code (numba's NRT counters; they need NUMBA_NRT_STATS=1 before numba
# is imported, hence a subprocess)
_ALLOCATIONS = """
import json, sys
sys.path.insert(0, "benchmarks")
import numba, numpy as np
from numba.core.runtime import rtsys
import cases, equilibrium_bench, kernel_loops as loops
case = cases.AMMONIA
system = equilibrium_bench.system_for(case)
feed = dict(case.feed)
n = 20000
T, P = case.states(n)
Y = cases.compositions(n, len(case.species))
m = system.model
args = (m.code, np.asarray(m.comp), np.asarray(m.consts), np.asarray(m.kmat))
system.equilibrium(feed=feed, T=T[:64], P=P[:64])
system.equilibrium(feed=feed, T=700.0, P=2e7)
loops.loop_tdep(m.code, T[:2], *args[1:])
loops.loop_ln_phi_dn_fixed_T(m.code, T[:2], P[:2], Y[:2], *args[1:])
loops.loop_ln_phi_fixed_T(m.code, T[:2], P[:2], Y[:2], *args[1:])
numba.set_num_threads(1)
def count(fn, per):
    a = rtsys.get_allocation_stats().alloc
    fn()
    return (rtsys.get_allocation_stats().alloc - a) / per
out = dict(
    batch_per_state=count(lambda: system.equilibrium(feed=feed, T=T, P=P), n),
    scalar_per_call=count(lambda: [system.equilibrium(feed=feed, T=700.0, P=2e7) for _ in range(100)], 100),
    tdep_into_per_call=count(lambda: loops.loop_tdep(m.code, T, *args[1:]), n),
    ln_phi_dn_tp_per_call=count(lambda: loops.loop_ln_phi_dn_fixed_T(m.code, T, P, Y, *args[1:]), n),
    ln_phi_tp_per_call=count(lambda: loops.loop_ln_phi_fixed_T(m.code, T, P, Y, *args[1:]), n),
)
print(json.dumps(out))
"""


class _CoreTimer:
    """Wraps ``_driver.solve_many`` for this process so that the compiled core's share can be measured."""

    def __init__(self, driver) -> None:
        self.driver = driver
        self.inner = driver.solve_many
        self.seconds_cpu = 0.0

    def __call__(self, *args):
        t0 = time.thread_time()
        out = self.inner(*args)
        self.seconds_cpu += time.thread_time() - t0
        return out

    def __enter__(self):
        self.driver.solve_many = self
        return self

    def __exit__(self, *exc):
        self.driver.solve_many = self.inner


def run(ctx: Context) -> list[Row]:
    from hipeq.solvers import _driver as D

    import solver_loops as loops

    case = cases.AMMONIA
    n = ctx.scale(50_000, 10_000)
    repeat = ctx.scale(5, 2)
    T, P = case.states(n)
    order = np.lexsort((P, T))
    Ts, Ps = T[order].copy(), P[order].copy()
    system = equilibrium_bench.system_for(case)
    feed = dict(case.feed)
    system.equilibrium(feed=feed, T=T[:64], P=P[:64])
    numba.set_num_threads(1)
    rows: list[Row] = []
    details: dict[str, object] = {}
    try:
        for label, (tt, pp) in (("random order", (T, P)), ("sorted by T, P", (Ts, Ps))):
            best = None
            for _ in range(repeat):  # total and core from the same call; keep the fastest call
                with _CoreTimer(D) as timer:
                    c0 = time.thread_time()
                    res = system.equilibrium(feed=feed, T=tt, P=pp)
                    total = time.thread_time() - c0
                if best is None or total < best[0]:
                    best = (total, timer.seconds_cpu)
            total, core = best
            its = np.asarray(res.iterations, dtype=float)
            mean_it = float(its.mean())
            rows += [
                Row(NAME, f"{label}: states/s, 1 thread", n / total, "states/s", note="CPU time"),
                Row(NAME, f"{label}: compiled core share of the call", core / total * 100.0, "%",
                    note=f"Python around it: {(total - core) / n * 1e9:.0f} ns/state"),
                Row(NAME, f"{label}: Newton iterations per state", mean_it, "-",
                    note=f"max {int(its.max())}, p95 {np.percentile(its, 95):.0f}"),
                Row(NAME, f"{label}: core time per state", core / n * 1e9, "ns"),
                Row(NAME, f"{label}: core time per Newton iteration", core / its.sum() * 1e9, "ns"),
            ]
            details[label] = {"seconds": total, "core_seconds": core, "mean_iterations": mean_it,
                              "iterations_histogram": np.bincount(its.astype(int)).tolist()}
    finally:
        numba.set_num_threads(numba.config.NUMBA_NUM_THREADS)

    # kernel pieces, one thread, serial loops
    model = system.model
    code, comp, consts, kmat = int(model.code), np.asarray(model.comp), np.asarray(model.consts), np.asarray(
        model.kmat)
    table = system.table
    u_lo, h, values = table.u_lo, table.h, np.asarray(table.values)
    res = system.equilibrium(feed=feed, T=T, P=P)
    N = np.ascontiguousarray(np.stack([np.asarray(res.amounts[s], dtype=float) for s in case.species], -1))
    W = np.ascontiguousarray(np.asarray(cases.stoichiometry(case), dtype=float).T)  # nc x 1: the extent direction
    pieces = [
        ("tparams_into + g0_into per new temperature",
         lambda: loops.loop_per_temperature(code, T, comp, consts, kmat, u_lo, h, values)),
        ("g0_into per call", lambda: loops.loop_g0(T, u_lo, h, values, comp.shape[0])),
        ("evaluate with reduced Jacobian W^T J W per call",
         lambda: loops.loop_evaluate(loops.MODES["with_reduced"], code, 700.0, P, N, comp, consts, kmat, u_lo, h,
                                     values, W)),
        ("evaluate with full Jacobian per call (Gibbs method)",
         lambda: loops.loop_evaluate(loops.MODES["with_jacobian"], code, 700.0, P, N, comp, consts, kmat, u_lo, h,
                                     values, W)),
        ("evaluate, ln phi only, per call",
         lambda: loops.loop_evaluate(loops.MODES["with_phi"], code, 700.0, P, N, comp, consts, kmat, u_lo, h,
                                     values, W)),
    ]
    piece_ns = {}
    for label, fn in pieces:
        fn()
        t = best_time(fn, repeat, clock="cpu") / n
        piece_ns[label] = t * 1e9
        rows.append(Row(NAME, label, t * 1e9, "ns", note="serial loop, benchmarks/solver_loops.py"))
    details["pieces_ns"] = piece_ns

    # cost model: one evaluation per Newton iteration plus one at the start, tparams + g0 per state
    for label in ("random order", "sorted by T, P"):
        d = details[label]
        core_ns = d["core_seconds"] / n * 1e9
        model_ns = ((d["mean_iterations"] + 1.0) * piece_ns["evaluate with reduced Jacobian W^T J W per call"]
                    + piece_ns["tparams_into + g0_into per new temperature"])
        d["pieces_model_ns"] = model_ns
        rows.append(Row(NAME, f"{label}: core time not explained by the pieces", core_ns - model_ns, "ns",
                        note=f"core {core_ns:.0f} ns - [(iterations + 1) x evaluate + tparams + g0] "
                             f"{model_ns:.0f} ns"))

    allocations = json.loads(run_python(_ALLOCATIONS, env=python_env({"NUMBA_NRT_STATS": "1"})).splitlines()[-1])
    details["heap_allocations"] = allocations
    rows.append(Row(NAME, "heap allocations per state in the batch core", allocations["batch_per_state"], "-",
                    note=f"tdep_into {allocations['tdep_into_per_call']:.0f}/call, ln_phi_dn_tp "
                         f"{allocations['ln_phi_dn_tp_per_call']:.0f}/call, ln_phi_tp "
                         f"{allocations['ln_phi_tp_per_call']:.0f}/call; scalar call "
                         f"{allocations['scalar_per_call']:.0f}"))

    # one scalar call under cProfile: the Python functions with most own time
    T1, P1 = float(T[0]), float(P[0])
    system.equilibrium(feed=feed, T=T1, P=P1)
    calls = 2000 if not ctx.quick else 300
    prof = cProfile.Profile()
    prof.enable()
    for _ in range(calls):
        system.equilibrium(feed=feed, T=T1, P=P1)
    prof.disable()
    buf = io.StringIO()
    stats = pstats.Stats(prof, stream=buf)
    top = sorted(stats.stats.items(), key=lambda kv: kv[1][2], reverse=True)[:12]  # by own (total) time
    scalar_top = [{"function": f"{fn[0].split('/src/')[-1]}:{fn[1]}({fn[2]})", "own_us_per_call": v[2] / calls * 1e6,
                   "calls_per_call": v[1] / calls} for fn, v in top]
    details["scalar_cprofile_top_own_time"] = scalar_top
    solve_one = [d for d in scalar_top if "solve_one" in d["function"]]
    if solve_one:
        rows.append(Row(NAME, "scalar call: inside compiled solve_one (under cProfile)",
                        solve_one[0]["own_us_per_call"], "us",
                        note="the rest of the scalar call is Python (see details in the JSON)"))
    ctx.details[NAME] = details
    return rows
