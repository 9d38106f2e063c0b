"""Timing helpers, result rows and the machine description shared by every benchmark module.

A benchmark module exposes ``NAME`` (used by ``run.py --only``), ``DESCRIPTION`` (one line: what it measures)
and ``run(ctx) -> list[Row]``. Timings are wall-clock (``time.perf_counter``); a timed block is repeated and the
best (lowest) repeat is reported, the usual way to take scheduler noise out of a throughput figure.
"""
from __future__ import annotations

import dataclasses
import os
import platform
import subprocess
import sys
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any

BENCH_DIR = Path(__file__).resolve().parent
REPO = BENCH_DIR.parent
RESULTS_DIR = BENCH_DIR / "results"


@dataclasses.dataclass
class Row:
    """One measured figure. ``passed`` is None when the row has no target."""

    benchmark: str
    metric: str
    value: float
    unit: str
    target: str = ""
    passed: bool | None = None
    note: str = ""

    def as_dict(self) -> dict[str, Any]:
        return dataclasses.asdict(self)


@dataclasses.dataclass
class Context:
    """Options handed to every benchmark."""

    quick: bool
    details: dict[str, Any]  # free-form per-benchmark details, written to the JSON file

    def scale(self, full: int, quick: int) -> int:
        return quick if self.quick else full


def timings(fn: Callable[[], Any], repeat: int, number: int = 1) -> dict[str, float]:
    """Best (lowest) time per call [s] over ``repeat`` repeats of ``number`` calls, on two clocks:

    - ``wall``: ``time.perf_counter``, what a user waits;
    - ``cpu``: ``time.thread_time``, the calling thread's CPU time. For single-threaded work (pure Python, or
      numba with ``set_num_threads(1)``, whose work runs on the calling thread) it equals the wall time on an idle
      machine and is far less disturbed when other processes share the cores. Meaningless for multi-threaded
      work (it misses the worker threads).
    """
    best_wall = best_cpu = float("inf")
    for _ in range(repeat):
        w0, c0 = time.perf_counter(), time.thread_time()
        for _ in range(number):
            fn()
        c1, w1 = time.thread_time(), time.perf_counter()
        best_wall = min(best_wall, w1 - w0)
        best_cpu = min(best_cpu, c1 - c0)
    return {"wall": best_wall / number, "cpu": best_cpu / number}


def median_time(fn: Callable[[], Any], calls: int) -> float:
    """Median wall time [s] of ``calls`` single calls of ``fn`` (``time.perf_counter`` around each call): what a
    loop in a user's program sees per call, including the occasional slow one that a best-of figure hides."""
    times = []
    for _ in range(calls):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    times.sort()
    return times[len(times) // 2]


def best_time(fn: Callable[[], Any], repeat: int, number: int = 1, clock: str = "wall") -> float:
    """Lowest time per call [s] of ``fn`` on ``clock`` ("wall" or "cpu", see :func:`timings`)."""
    return timings(fn, repeat, number)[clock]


def autorange_number(fn: Callable[[], Any], min_time: float = 0.05) -> int:
    """Number of calls of ``fn`` that takes at least ``min_time`` seconds (powers of two)."""
    number = 1
    while True:
        t0 = time.perf_counter()
        for _ in range(number):
            fn()
        if time.perf_counter() - t0 >= min_time or number >= 1 << 20:
            return number
        number *= 2


def python_env(extra: dict[str, str] | None = None) -> dict[str, str]:
    env = dict(os.environ)
    env.setdefault("NUMBA_CACHE_DIR", str(REPO / ".numba_cache"))
    if extra:
        env.update(extra)
    return env


def run_python(code: str, env: dict[str, str] | None = None, timeout: float = 900.0) -> str:
    """Run ``code`` in a fresh interpreter (this venv's python); return its stdout, raise with stderr on failure."""
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env or python_env(),
                          cwd=str(REPO), timeout=timeout)
    if proc.returncode != 0:
        raise RuntimeError(f"subprocess failed ({proc.returncode}):\n{proc.stderr[-4000:]}")
    return proc.stdout


def _threading_layer() -> str:
    import numba

    try:
        return numba.threading_layer()  # known once a parallel kernel has run
    except ValueError:
        return os.environ.get("NUMBA_THREADING_LAYER", "default (not yet chosen)")


def machine() -> dict[str, Any]:
    """CPU model, core count, and the versions of the numerical stack."""
    import numba
    import numpy
    import scipy

    info: dict[str, Any] = {
        "python": platform.python_version(),
        "platform": platform.platform(),
        "numpy": numpy.__version__,
        "scipy": scipy.__version__,
        "numba": numba.__version__,
        "numba_threads": numba.config.NUMBA_NUM_THREADS,
        "numba_threading_layer": _threading_layer(),
        "logical_cpus": os.cpu_count(),
    }
    try:
        import thermo
        info["thermo"] = thermo.__version__
    except Exception:  # pragma: no cover - thermo is a dependency
        pass
    try:
        out = subprocess.run(["lscpu"], capture_output=True, text=True, timeout=10).stdout
        for line in out.splitlines():
            key, _, value = line.partition(":")
            if key.strip() in ("Model name", "Core(s) per socket", "Socket(s)", "Thread(s) per core", "CPU max MHz"):
                info[key.strip()] = value.strip()
    except Exception:
        pass
    try:
        info["hipeq_commit"] = subprocess.run(["git", "rev-parse", "--short", "HEAD"], cwd=str(REPO),
                                              capture_output=True, text=True, timeout=10).stdout.strip()
        status = subprocess.run(["git", "status", "--porcelain", "--", "src"], cwd=str(REPO),
                                capture_output=True, text=True, timeout=10).stdout.splitlines()
        modified = sum(1 for line in status if not line.startswith("??"))
        untracked = sum(1 for line in status if line.startswith("??"))
        info["hipeq_src_tree"] = (f"{modified} tracked files modified, {untracked} untracked paths under src/"
                                  if status else "clean")
    except Exception:
        pass
    return info


def busy_cpus(interval: float = 1.0) -> float:
    """CPUs' worth of work done by other processes over ``interval`` seconds (0 on an idle machine).

    The figures are only as good as the machine is quiet: a benchmark shares the cores with whatever else runs.
    """
    import psutil

    me = psutil.Process()
    mine0 = sum(me.cpu_times()[:2])
    total0 = psutil.cpu_times()
    time.sleep(interval)
    total1 = psutil.cpu_times()
    mine1 = sum(me.cpu_times()[:2])
    busy = (sum(total1) - total1.idle - getattr(total1, "iowait", 0.0)) - (
        sum(total0) - total0.idle - getattr(total0, "iowait", 0.0))
    return max(busy - (mine1 - mine0), 0.0) / interval


def fmt_value(value: float, unit: str) -> str:
    if value != value:  # NaN
        return "n/a"
    if unit in ("states/s", "x"):
        return f"{value:,.0f}" if value >= 100 else f"{value:.3g}"
    if abs(value) >= 1000 or (abs(value) < 1e-3 and value != 0.0):
        return f"{value:.3g}"
    return f"{value:.4g}"


def table(rows: list[Row]) -> str:
    """Plain-text (Markdown-compatible) table of the rows."""
    head = ["benchmark", "metric", "value", "unit", "target", "pass"]
    body = []
    for r in rows:
        mark = "" if r.passed is None else ("PASS" if r.passed else "FAIL")
        body.append([r.benchmark, r.metric, fmt_value(r.value, r.unit), r.unit, r.target, mark])
    widths = [max(len(h), *(len(b[i]) for b in body)) if body else len(h) for i, h in enumerate(head)]
    lines = ["| " + " | ".join(h.ljust(w) for h, w in zip(head, widths)) + " |",
             "|" + "|".join("-" * (w + 2) for w in widths) + "|"]
    for b in body:
        lines.append("| " + " | ".join(c.rjust(w) if i == 2 else c.ljust(w)
                                       for i, (c, w) in enumerate(zip(b, widths))) + " |")
    return "\n".join(lines)
