"""Peak memory of one batch equilibrium call against batch size (ammonia, PR): 1e4, 1e5 and 1e6 states.

Each size runs in its own fresh interpreter, so each peak is that size's alone. In the child: import hipeq,
build the system, warm the JIT on 64 states, create the T and P arrays, then make one batch call. Reported:

- peak RSS of the process during the call: the kernel's high-water mark (VmHWM) reset just before the call by
  writing 5 to /proc/self/clear_refs, so that imports, JIT compilation or cache loading and the warm-up do not
  mask it (``resource.getrusage(RUSAGE_SELF).ru_maxrss`` where that reset is not available);
- working memory = peak RSS - RSS just before the call - bytes of every array in the result: the temporary memory
  hipeq needs beyond the answer it hands back (which necessarily grows with the number of states);
- the numpy temporaries of the same call (tracemalloc peak minus what stays allocated, a second call);
- peak RSS net of the caller's inputs and the result's arrays; the target is on this figure: < 10 % growth
  from 1e4 to 1e6 states, i.e. no per-state temporaries beyond the answer.
"""
from __future__ import annotations

import json

import cases
from harness import Context, Row, run_python

NAME = "memory"
DESCRIPTION = "peak RSS vs batch size 1e4, 1e5, 1e6 (subprocess each): must stay flat net of inputs and results"

_CHILD = """
import json, resource, sys
import numpy as np
import psutil
import hipeq

def array_bytes(obj, seen):
    if id(obj) in seen:
        return 0
    seen.add(id(obj))
    if isinstance(obj, np.ndarray):
        base = obj.base if isinstance(obj.base, np.ndarray) else None
        return obj.nbytes if base is None else array_bytes(base, seen)
    if isinstance(obj, dict) or hasattr(obj, "items") and callable(obj.items):
        try:
            return sum(array_bytes(v, seen) for _, v in obj.items())
        except Exception:
            return 0
    if isinstance(obj, (list, tuple)):
        return sum(array_bytes(v, seen) for v in obj)
    fields = getattr(obj, "__dataclass_fields__", None)
    if fields:
        return sum(array_bytes(getattr(obj, f, None), seen) for f in fields)
    if hasattr(obj, "__dict__"):
        return sum(array_bytes(v, seen) for v in vars(obj).values())
    return 0

n = int(sys.argv[1]) if len(sys.argv) > 1 else {n}
system = hipeq.ReactionSystem({species!r}, reactions={reactions!r}, eos={eos!r})
feed = {feed!r}
rng = np.random.default_rng(1)
system.equilibrium(feed=feed, T=np.full(64, 700.0), P=np.full(64, 2e7))
system.equilibrium(feed=feed, T=rng.uniform({T_lo}, {T_hi}, 1000), P=rng.uniform({P_lo}, {P_hi}, 1000))
T = rng.uniform({T_lo}, {T_hi}, n)
P = rng.uniform({P_lo}, {P_hi}, n)
proc = psutil.Process()
maxrss_before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024

def hwm():
    with open("/proc/self/status") as f:
        for line in f:
            if line.startswith("VmHWM:"):
                return int(line.split()[1]) * 1024
    return None

try:  # reset the peak so that imports, compilation and warm-up do not hide the call's own peak (Linux)
    with open("/proc/self/clear_refs", "w") as f:
        f.write("5")
    method = "VmHWM after clear_refs"
except OSError:
    method = "ru_maxrss"
rss_before = proc.memory_info().rss
result = system.equilibrium(feed=feed, T=T, P=P)
maxrss = hwm() if method != "ru_maxrss" else resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024
rss_after = proc.memory_info().rss
out = array_bytes(result, set())
converged = float(np.mean(np.asarray(result.converged)))
del result
# the same call again under tracemalloc (numpy reports its buffers to it): the Python-side temporaries
import tracemalloc
tracemalloc.start()
tracemalloc.reset_peak()
again = system.equilibrium(feed=feed, T=T, P=P)
traced_now, traced_peak = tracemalloc.get_traced_memory()
tracemalloc.stop()
print(json.dumps(dict(n=n, traced_transient=traced_peak - traced_now, peak=maxrss, method=method, peak_before=maxrss_before, rss_before=rss_before, rss_after=rss_after,
                      result_bytes=out, input_bytes=T.nbytes + P.nbytes,
                      converged=converged)))
"""


def run(ctx: Context) -> list[Row]:
    case = cases.AMMONIA
    sizes = [10_000, 100_000, 1_000_000]
    out = {}
    for n in sizes:
        code = _CHILD.format(n=n, species=list(case.species), reactions=list(case.reactions), eos=case.eos,
                             feed=dict(case.feed), T_lo=case.T_range[0], T_hi=case.T_range[1],
                             P_lo=case.P_range[0], P_hi=case.P_range[1])
        out[n] = json.loads(run_python(code).strip().splitlines()[-1])
    mib = 1024.0 ** 2
    rows = []
    for n in sizes:
        d = out[n]
        d["working"] = max(d["peak"] - d["rss_before"] - d["result_bytes"], 0)
        d["net_peak"] = d["peak"] - d["input_bytes"] - d["result_bytes"]
        rows.append(Row(NAME, f"peak RSS, {n:.0e} states", d["peak"] / mib, "MiB",
                        note=f"{d['method']}; result arrays {d['result_bytes'] / mib:.1f} MiB, inputs {d['input_bytes'] / mib:.1f} "
                             f"MiB, working memory {d['working'] / mib:.1f} MiB"))
    lo, hi = out[sizes[0]], out[sizes[-1]]
    growth = hi["net_peak"] / lo["net_peak"] - 1.0
    per_state = (hi["working"] - lo["working"]) / (sizes[-1] - sizes[0])
    traced = hi["traced_transient"] / sizes[-1]
    rows += [
        Row(NAME, "growth 1e4 -> 1e6, peak net of inputs and results", growth * 100.0, "%", target="< 10",
            passed=growth < 0.10),
        Row(NAME, "temporary bytes per state beyond the result", per_state, "B/state",
            note=f"(working(1e6) - working(1e4)) / (1e6 - 1e4); numpy temporaries alone (tracemalloc peak "
                 f"- kept) {traced:.0f} B/state"),
        Row(NAME, "result bytes per state", hi["result_bytes"] / sizes[-1], "B/state"),
    ]
    ctx.details[NAME] = out
    return rows
