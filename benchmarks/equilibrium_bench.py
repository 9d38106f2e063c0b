"""Shared body of the equilibrium benchmarks (ammonia with PR, methanol with SRK): hipeq against the baseline.

For one case it measures
- the baseline (``baseline.py``) on a sample of states: states/s, with ln K given (not timed);
- hipeq's batch call ``system.equilibrium(feed=..., T=array, P=array)`` on one core
  (``numba.set_num_threads(1)``) and on all cores: states/s, including hipeq's own ln K and result building;
- hipeq's scalar call ``system.equilibrium(feed=..., T=float, P=float)``: latency of one call from Python;
- agreement: max |y_hipeq - y_baseline| over the baseline sample (same inputs), and hipeq's converged fraction.
"""
from __future__ import annotations

import numba
import numpy as np

import baseline
import cases
from harness import Context, Row, autorange_number, timings


def system_for(case: cases.Case):
    import hipeq

    return hipeq.ReactionSystem(list(case.species), reactions=list(case.reactions), eos=case.eos)


def batch_y(result, species: tuple[str, ...]) -> np.ndarray:
    """Mole fractions of a BatchResult as an (n, nc) array in the case's species order."""
    return np.stack([np.asarray(result.y[s], dtype=float).ravel() for s in species], axis=-1)


def scalar_y(result, species: tuple[str, ...]) -> np.ndarray:
    return np.array([float(result.y[s]) for s in species])


def converged_fraction(result) -> float:
    return float(np.mean(np.asarray(result.converged)))


def measure(ctx: Context, case: cases.Case, name: str) -> tuple[list[Row], dict[str, float]]:
    """Rows and the headline figures (``baseline_rate``, ``rate_one``, ``rate_all``, ``scalar_s``).

    Single-threaded figures (baseline, hipeq on one thread, the scalar call) are on the CPU-time clock of the
    calling thread (see ``harness.timings``); the all-cores figure is wall time. Both clocks go to the JSON.
    """
    import hipeq

    all_threads = numba.config.NUMBA_NUM_THREADS
    n_batch = ctx.scale(100_000, 10_000)
    n_base = ctx.scale(150, 20)
    repeat = ctx.scale(5, 2)
    T, P = case.states(n_batch)
    Tb, Pb = T[:n_base].copy(), P[:n_base].copy()
    feed = dict(case.feed)
    system = system_for(case)

    # --- baseline on the sample (ln K from hipeq, computed outside the timing)
    model = cases.model(case)
    params = baseline.Parameters.from_model(model, case.eos)
    ln_k = cases.ln_equilibrium_constants(case, Tb)
    nu = cases.stoichiometry(case)
    n0 = case.feed_vector()
    baseline.solve_states(params, Tb[:2], Pb[:2], n0, nu, ln_k[:2])  # import / first-call effects out
    baseline.Counter.reset()
    y_base = baseline.solve_states(params, Tb, Pb, n0, nu, ln_k)
    counts = dict(eos_calls=baseline.Counter.eos_calls, outer_steps=baseline.Counter.outer_steps,
                  fallbacks=baseline.Counter.fallbacks)
    t_base = timings(lambda: baseline.solve_states(params, Tb, Pb, n0, nu, ln_k), ctx.scale(3, 1))
    baseline_rate = n_base / t_base["cpu"]

    # --- hipeq batch, warm first (compile or load from the cache), then one core and all cores. Like for like with
    # the baseline, which solves for one phase: phases="one". The default phases="auto" (stability test, and the
    # two-phase solve where a liquid forms) is timed beside it.
    one_phase = dict(feed=feed, phases="one")
    system.equilibrium(T=T[:64], P=P[:64], **one_phase)
    system.equilibrium(feed=feed, T=T[:64], P=P[:64])
    numba.set_num_threads(1)
    try:
        t_one = timings(lambda: system.equilibrium(T=T, P=P, **one_phase), repeat)
        t_small = timings(lambda: system.equilibrium(T=Tb, P=Pb, **one_phase), repeat)
        t_auto = timings(lambda: system.equilibrium(feed=feed, T=T, P=P), min(repeat, 2))
    finally:
        numba.set_num_threads(all_threads)
    t_all = timings(lambda: system.equilibrium(T=T, P=P, **one_phase), repeat)
    res = system.equilibrium(T=T, P=P, **one_phase)
    split = int(np.sum(np.asarray(system.equilibrium(feed=feed, T=T, P=P).phase_count) == 2))
    rate_one = n_batch / t_one["cpu"]
    rate_all = n_batch / t_all["wall"]
    conv = converged_fraction(res)
    y_h = batch_y(res, case.species)
    dy = float(np.max(np.abs(y_h[:n_base] - y_base)))
    iterations = float(np.mean(np.asarray(res.iterations)))
    # hipeq's ln K (its tabulated g0) against the data layer's, for the reactions hipeq kept
    ln_k_data = np.stack([np.log(np.asarray(hipeq.equilibrium_constant(str(r), Tb), dtype=float))
                          for r in system.reactions], axis=-1)
    dlnk = float(np.max(np.abs(np.asarray(res.ln_K)[:n_base] - ln_k_data)))

    # --- hipeq scalar call
    T1, P1 = float(Tb[0]), float(Pb[0])

    def one() -> None:
        system.equilibrium(feed=feed, T=T1, P=P1)

    r1 = system.equilibrium(feed=feed, T=T1, P=P1)
    number = autorange_number(one)
    t_scalar = timings(one, repeat, number)
    dy_scalar = float(np.max(np.abs(scalar_y(r1, case.species) - y_base[0])))

    rows = [
        Row(name, f"baseline (thermo {params.eos}MIX + scipy), states/s", baseline_rate, "states/s",
            note=f"{n_base} states; {counts['outer_steps'] / n_base:.1f} phi substitutions/state"
                 + (f"; fsolve fell back to nested brentq {counts['fallbacks']}x" if nu.shape[0] > 1 else "")
                 + "; CPU time"),
        Row(name, "hipeq batch, 1 thread, states/s", rate_one, "states/s",
            note=f"phases='one' (as the baseline); {n_batch} random states per call, {iterations:.2f} Newton iterations/state; CPU time "
                 f"(wall {n_batch / t_one['wall']:,.0f})"),
        Row(name, "hipeq batch, 1 thread, default phases='auto', states/s", n_batch / t_auto["cpu"], "states/s",
            note=f"stability test on every state that may split, and the two-phase solve (Python) for the {split} "
                 f"that do; CPU time"),
        Row(name, f"hipeq batch, {all_threads} threads, states/s", rate_all, "states/s",
            note=f"wall time; {rate_all / all_threads:,.0f} states/s per core"),
        Row(name, f"hipeq batch of the {n_base} baseline states, 1 thread, states/s", n_base / t_small["cpu"],
            "states/s", note="same inputs as the baseline; includes the fixed cost of a call"),
        Row(name, "hipeq scalar call from Python", t_scalar["cpu"] * 1e6, "us",
            note=f"CPU time (wall {t_scalar['wall'] * 1e6:.1f} us)"),
        Row(name, "max |y_hipeq - y_baseline|", max(dy, dy_scalar), "-",
            note=f"over {n_base} states (batch and scalar); hipeq ln K table vs data layer {dlnk:.1e}",
            target="<= 1e-8", passed=max(dy, dy_scalar) <= 1e-8),
        Row(name, "hipeq converged fraction", conv, "-", target="= 1", passed=conv == 1.0,
            note=f"{n_batch} states"),
    ]
    ctx.details[name] = {
        "batch_states": n_batch, "baseline_states": n_base, "baseline_counts": counts,
        "baseline_seconds": t_base, "hipeq_one_thread_seconds": t_one, "hipeq_all_threads_seconds": t_all,
        "hipeq_small_batch_seconds": t_small, "hipeq_one_thread_auto_seconds": t_auto, "split_states": split,
        "scalar_seconds": t_scalar, "max_abs_dy": dy,
        "max_abs_dy_scalar": dy_scalar, "converged_fraction": conv, "mean_newton_iterations": iterations,
        "max_abs_dlnK_table_vs_data": dlnk,
        "model_mismatch_vs_thermo": baseline.model_mismatch(model, case.eos),
        "feed": feed, "T_range": case.T_range, "P_range": case.P_range,
    }
    headline = dict(baseline_rate=baseline_rate, rate_one=rate_one, rate_all=rate_all, scalar_s=t_scalar["cpu"])
    return rows, headline
