"""Start-up costs, each in a fresh interpreter (this venv's python), so nothing is already imported or compiled.

- the warm-cache first call again, cut into stages: import numba, the species records (data layer), the
  compiled model (k_ij databank), the ReactionSystem (tables, cached kernels), the first solve.
- ``import hipeq``: wall time of the import statement alone (best of several runs); hipeq imports its public
  names lazily, so a second figure also resolves ``hipeq.ReactionSystem`` (importing data, models and solvers).
- first call: from after the import to the first answer of ``ReactionSystem(...).equilibrium(feed, T, P)`` for
  one state (building the system + the scalar solve), then the first batch call in the same process
  - with a cold numba cache: NUMBA_CACHE_DIR set to a new empty temporary directory (everything compiles);
  - with a warm cache: the same directory again, after that run filled it (best of several runs).
The repository's own .numba_cache is not touched. ``--quick`` skips the cold compile (about a minute) and runs
the warm figures against the project's own cache.
"""
from __future__ import annotations

import json
import shutil
import tempfile

import cases
from harness import Context, Row, python_env, run_python

NAME = "startup"
DESCRIPTION = "import hipeq, and first call with a cold and a warm numba cache (fresh subprocesses)"

_IMPORT = """
import time
t0 = time.perf_counter()
import hipeq
t1 = time.perf_counter()
hipeq.ReactionSystem
t2 = time.perf_counter()
print(t1 - t0, t2 - t0)
"""

_FIRST_CALL = """
import json, time
t0 = time.perf_counter()
import hipeq
t1 = time.perf_counter()
stages = {{}}
if {staged!r}:  # the same work, cut into stages (each stage pays for the imports it is the first to need)
    s0 = time.perf_counter()
    import numba
    s1 = time.perf_counter()
    records = [hipeq.species(name) for name in {species!r}]
    s2 = time.perf_counter()
    model = hipeq.build_model({species!r}, eos={eos!r})
    s3 = time.perf_counter()
    stages = dict(import_numba=s1 - s0, species_records=s2 - s1, build_model=s3 - s2)
t1b = time.perf_counter()
system = hipeq.ReactionSystem({species!r}, reactions={reactions!r}, eos={eos!r})
t2 = time.perf_counter()
stages["ReactionSystem"] = t2 - t1b
result = system.equilibrium(feed={feed!r}, T=700.0, P=2.0e7)
t3 = time.perf_counter()
import numpy as np
batch = system.equilibrium(feed={feed!r}, T=np.linspace(600.0, 900.0, 100), P=np.full(100, 2.0e7))
t4 = time.perf_counter()
print(json.dumps(dict(import_s=t1 - t0, system_s=t2 - t1, scalar_s=t3 - t2, batch_s=t4 - t3,
                      converged=bool(result.converged), stages=stages)))
"""


def run(ctx: Context) -> list[Row]:
    runs = 3 if ctx.quick else 7
    imports = [tuple(float(v) for v in run_python(_IMPORT).split()) for _ in range(runs)]
    t_import = min(i[0] for i in imports)
    t_import_names = min(i[1] for i in imports)

    case = cases.AMMONIA
    fields = dict(species=list(case.species), reactions=list(case.reactions), eos=case.eos, feed=dict(case.feed))
    code = _FIRST_CALL.format(staged=False, **fields)
    staged = _FIRST_CALL.format(staged=True, **fields)
    if ctx.quick:  # no cold compile (about a minute): warm runs against the project's own cache
        env = python_env()
        cold = None
        warm_runs = [json.loads(run_python(code, env=env).strip().splitlines()[-1]) for _ in range(runs)]
        stage_runs = [json.loads(run_python(staged, env=env).strip().splitlines()[-1]) for _ in range(runs)]
    else:
        cache = tempfile.mkdtemp(prefix="hipeq-numba-cache-")
        try:
            env = python_env({"NUMBA_CACHE_DIR": cache})
            cold = json.loads(run_python(code, env=env).strip().splitlines()[-1])
            warm_runs = [json.loads(run_python(code, env=env).strip().splitlines()[-1]) for _ in range(runs)]
            stage_runs = [json.loads(run_python(staged, env=env).strip().splitlines()[-1]) for _ in range(runs)]
        finally:
            shutil.rmtree(cache, ignore_errors=True)
    warm = min(warm_runs, key=lambda d: d["system_s"] + d["scalar_s"])
    first_warm = warm["system_s"] + warm["scalar_s"]
    stage_best = {k: min(r["stages"][k] for r in stage_runs) for k in stage_runs[0]["stages"]}
    stage_best["first solve"] = min(r["scalar_s"] for r in stage_runs)
    ctx.details[NAME] = {"import_runs": imports, "cold": cold, "warm_runs": warm_runs, "stage_runs": stage_runs,
                         "warm_stages_best_s": stage_best}
    rows = [
        Row(NAME, "import hipeq (fresh interpreter)", t_import, "s", target="< 1", passed=t_import < 1.0,
            note=f"best of {runs}"),
        Row(NAME, "import hipeq + resolve hipeq.ReactionSystem", t_import_names, "s",
            note="lazy facade: the real imports happen here"),
        Row(NAME, "first scalar call, warm numba cache", first_warm, "s", target="< 1", passed=first_warm < 1.0,
            note=f"system {warm['system_s']:.3f} s + solve {warm['scalar_s']:.3f} s; "
                 f"then first batch call {warm['batch_s']:.3f} s; best of {runs}"),
        Row(NAME, "warm first call in stages (best of each)", sum(stage_best.values()), "s",
            note="; ".join(f"{k} {v:.2f}" for k, v in stage_best.items())),
    ]
    if cold is not None:
        rows.insert(2, Row(NAME, "first scalar call, cold numba cache", cold["system_s"] + cold["scalar_s"], "s",
                           note=f"system {cold['system_s']:.2f} s + solve (compiles) {cold['scalar_s']:.1f} s; then "
                                f"first batch call {cold['batch_s']:.1f} s"))
    return rows
