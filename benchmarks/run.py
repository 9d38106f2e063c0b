"""hipeq benchmarks: speed and memory, against a baseline written by hand with thermo and scipy.

Usage (from the repository root; ``make bench`` runs the first line):

    .venv/bin/python benchmarks/run.py                 # everything (several minutes)
    .venv/bin/python benchmarks/run.py --quick         # smaller samples, a smoke run (about a minute)
    .venv/bin/python benchmarks/run.py --only ammonia  # one benchmark (repeat --only or comma-separate)
    .venv/bin/python benchmarks/run.py --list          # names and what each measures

Before anything is timed, every compiled kernel a benchmark uses is called once (compiled, or loaded from the
numba cache in NUMBA_CACHE_DIR); compile time is measured separately, in fresh subprocesses, by ``startup``.
The table is printed and written, with the machine description and per-benchmark details, to
``benchmarks/results/<timestamp>.json`` and ``benchmarks/results/latest.json``.
"""
from __future__ import annotations

import argparse
import datetime as _dt
import importlib
import json
import os
import sys
import time
import traceback
from pathlib import Path

HERE = Path(__file__).resolve().parent
if str(HERE) not in sys.path:
    sys.path.insert(0, str(HERE))
os.environ.setdefault("NUMBA_CACHE_DIR", str(HERE.parent / ".numba_cache"))

from harness import RESULTS_DIR, Context, Row, busy_cpus, machine, table  # noqa: E402

MODULES = ["bench_fugacity", "bench_ammonia", "bench_methanol", "bench_map", "bench_operating_map", "bench_startup",
           "bench_memory", "bench_profile"]


def _load() -> dict[str, object]:
    found = {}
    for mod_name in MODULES:
        mod = importlib.import_module(mod_name)
        found[mod.NAME] = mod
    return found


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0],
                                     formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--quick", action="store_true", help="small samples: a smoke run, not figures to quote")
    parser.add_argument("--only", action="append", default=[], metavar="NAME",
                        help="run only this benchmark (repeatable, or comma-separated)")
    parser.add_argument("--list", action="store_true", help="list the benchmarks and exit")
    parser.add_argument("--no-save", action="store_true", help="print the table only; write no JSON")
    args = parser.parse_args(argv)

    benches = _load()
    if args.list:
        for name, mod in benches.items():
            print(f"{name:10s} {mod.DESCRIPTION}")
        return 0
    wanted = [w.strip() for item in args.only for w in item.split(",") if w.strip()]
    unknown = [w for w in wanted if w not in benches]
    if unknown:
        parser.error(f"unknown benchmark(s) {', '.join(unknown)}; choose from {', '.join(benches)}")
    selected = [name for name in benches if not wanted or name in wanted]

    ctx = Context(quick=args.quick, details={})
    rows: list[Row] = []
    failures: dict[str, str] = {}
    started = time.perf_counter()
    load: dict[str, float] = {}
    for name in selected:
        t0 = time.perf_counter()
        load[name] = busy_cpus()
        note = f" (other processes busy: {load[name]:.1f} CPUs)" if load[name] > 0.1 else ""
        print(f"[{name}] {benches[name].DESCRIPTION}{note}", file=sys.stderr, flush=True)
        try:
            rows.extend(benches[name].run(ctx))
        except Exception as exc:  # keep going: one missing piece must not hide the other figures
            failures[name] = "".join(traceback.format_exception_only(type(exc), exc)).strip()
            print(f"[{name}] FAILED: {failures[name]}", file=sys.stderr, flush=True)
            traceback.print_exc(file=sys.stderr)
        print(f"[{name}] {time.perf_counter() - t0:.1f} s", file=sys.stderr, flush=True)

    print()
    print(table(rows))
    targets = [r for r in rows if r.passed is not None]
    if targets:
        print(f"\ntargets: {sum(r.passed for r in targets)} of {len(targets)} met"
              + (" (quick run: samples are small, do not quote)" if args.quick else ""))
    for name, msg in failures.items():
        print(f"benchmark {name!r} did not run: {msg}")
    busy = {name: v for name, v in load.items() if v > 0.1}
    if busy:
        print("warning: other processes were using CPU when these started (CPUs busy): "
              + ", ".join(f"{k} {v:.1f}" for k, v in busy.items()) + "; timings are pessimistic")

    if not args.no_save:
        stamp = _dt.datetime.now().strftime("%Y%m%d-%H%M%S")
        payload = {
            "timestamp": stamp,
            "quick": args.quick,
            "selected": selected,
            "wall_time_s": time.perf_counter() - started,
            "machine": machine(),
            "rows": [r.as_dict() for r in rows],
            "failures": failures,
            "other_processes_busy_cpus": load,
            "details": ctx.details,
        }
        RESULTS_DIR.mkdir(parents=True, exist_ok=True)
        text = json.dumps(payload, indent=2, default=float)
        (RESULTS_DIR / f"{stamp}.json").write_text(text)
        (RESULTS_DIR / "latest.json").write_text(text)
        print(f"\nwritten: {RESULTS_DIR / (stamp + '.json')} and latest.json")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
