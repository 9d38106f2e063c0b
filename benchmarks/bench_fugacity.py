"""ln phi of the five-component ammonia-loop mixture (N2, H2, NH3, Ar, CH4) with Peng-Robinson.

Measures, per state:
- the compiled states ``hipeq.models._states.states_range`` (ln phi, d ln phi/dT, Z, root, g_res, h_res) over
  all of them, split across all threads (``hipeq._threads.run_in_ranges``) and on one thread;
- the public ``hipeq.fugacity_coefficients`` with arrays of states (the batch plus input checks and results);
- one call of ``hipeq.fugacity_coefficients`` for one state from Python (latency);
- for comparison, one ``thermo.PRMIX`` object with the same constants (what the baseline pays per evaluation);
- the kernel pieces on one core (``tdep_into``, ``ln_phi_tp``, ``ln_phi_dn_tp``), for the profile in
  docs/performance.md.
"""
from __future__ import annotations

import numba
import numpy as np

import baseline
import cases
from harness import Context, Row, autorange_number, best_time, timings

NAME = "fugacity"
DESCRIPTION = "ln phi, 5-component PR mixture: compiled batch, public call, kernel pieces, thermo for reference"


def run(ctx: Context) -> list[Row]:
    import hipeq
    from hipeq._threads import run_in_ranges
    from hipeq.models._states import states_range

    import kernel_loops as loops

    case = cases.AMMONIA
    model = cases.model(case)
    code, comp, consts, kmat = model.code, np.asarray(model.comp), np.asarray(model.consts), np.asarray(model.kmat)
    nc = comp.shape[0]
    n = ctx.scale(200_000, 20_000)
    T, P = case.states(n)
    Y = cases.compositions(n, nc)
    ln_phis = np.empty((n, nc))
    dT = np.empty((n, nc))
    Z = np.empty(n)
    roots = np.empty(n, dtype=np.int64)
    g = np.empty(n)
    h = np.empty(n)
    repeat = ctx.scale(7, 3)
    all_threads = numba.config.NUMBA_NUM_THREADS

    def batch(threads: int) -> None:
        run_in_ranges(n, threads, lambda first, last: states_range(code, T, P, Y, comp, consts, kmat, first, last,
                                                                    ln_phis, dT, Z, roots, g, h))

    batch(all_threads)  # warm (compile or load from cache)
    t_batch_all = best_time(lambda: batch(all_threads), repeat) / n
    t_batch_one = best_time(lambda: batch(1), repeat, clock="cpu") / n

    rows = [
        Row(NAME, f"states_range, {all_threads} threads, per state", t_batch_all * 1e9, "ns",
            note=f"{n} states: ln phi + d ln phi/dT + Z + g_res, h_res; wall time"),
        Row(NAME, "states_range, 1 thread, per state", t_batch_one * 1e9, "ns", note="CPU time"),
    ]

    # kernel pieces (one core)
    pieces = [
        ("tdep_into per call", lambda: loops.loop_tdep(code, T, comp, consts, kmat)),
        ("ln_phi_tp per call (T fixed)", lambda: loops.loop_ln_phi_fixed_T(code, T, P, Y, comp, consts, kmat)),
        ("tdep_into + ln_phi_tp per state", lambda: loops.loop_tdep_ln_phi(code, T, P, Y, comp, consts, kmat)),
        ("ln_phi_dn_tp per call (T fixed)",
         lambda: loops.loop_ln_phi_dn_fixed_T(code, T, P, Y, comp, consts, kmat)),
    ]
    profile = {}
    for label, fn in pieces:
        fn()
        t = best_time(fn, repeat, clock="cpu") / n
        profile[label] = t * 1e9
        rows.append(Row(NAME, label, t * 1e9, "ns", note="one core, benchmarks/kernel_loops.py"))
    ctx.details[NAME] = {"states": n, "profile_ns": profile, "root_codes": np.bincount(roots).tolist()}

    # public face: arrays
    names = list(case.species)
    res = hipeq.fugacity_coefficients(names, T=T, P=P, y=Y, eos=case.eos)
    err_batch = float(np.max(np.abs(np.asarray(res.ln_phis) - ln_phis)))
    t_public = best_time(lambda: hipeq.fugacity_coefficients(names, T=T, P=P, y=Y, eos=case.eos),
                         repeat) / n
    rows.append(Row(NAME, f"fugacity_coefficients(arrays), {all_threads} threads, per state", t_public * 1e9, "ns",
                    note=f"{n} states in one call, wall time; |ln phi - states_range| <= {err_batch:.1e}"))

    # public face: one state from Python
    T1, P1, y1 = float(T[0]), float(P[0]), Y[0].tolist()

    def one() -> None:
        hipeq.fugacity_coefficients(names, T=T1, P=P1, y=y1, eos=case.eos)

    one()
    number = autorange_number(one)
    t_one = timings(one, repeat, number)
    rows.append(Row(NAME, "fugacity_coefficients, one state from Python", t_one["cpu"] * 1e6, "us",
                    note=f"CPU time (wall {t_one['wall'] * 1e6:.1f} us)"))

    # thermo, same constants, one state
    params = baseline.Parameters.from_model(model, case.eos)

    def thermo_one() -> None:
        baseline.ln_phis(params, T1, P1, y1)

    thermo_one()
    number = autorange_number(thermo_one)
    t_thermo = best_time(thermo_one, repeat, number, clock="cpu")
    m = min(n, ctx.scale(2000, 300))
    ref_thermo = np.array([baseline.ln_phis(params, float(T[i]), float(P[i]), Y[i].tolist()) for i in range(m)])
    err_thermo = float(np.max(np.abs(ref_thermo - ln_phis[:m])))
    rows.append(Row(NAME, "thermo PRMIX, one state from Python (reference)", t_thermo * 1e6, "us",
                    note=f"CPU time; same Tc, Pc, omega, kij; max |ln phi - hipeq| = {err_thermo:.1e} over {m} states"))
    rows.append(Row(NAME, "speed-up: states_range 1 thread vs thermo PRMIX", t_thermo / t_batch_one, "x"))
    ctx.details[NAME].update({"max_abs_dlnphi_vs_thermo": err_thermo, "max_abs_dlnphi_public_vs_batch": err_batch,
                              "model_mismatch_vs_thermo": baseline.model_mismatch(model, case.eos)})
    return rows

