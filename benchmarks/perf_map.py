"""Name hipeq's compiled functions for Linux ``perf``: write ``/tmp/perf-<pid>.map`` for this process.

``perf`` shows code compiled at run time as bare addresses. This writes the symbol map it reads for such code
(one line per function: start address, size, name), taken from the LLVM modules numba linked for hipeq's entry
points, so that a profile reads ``solvers7_extent12extent_solve`` instead of ``0x7f...``. Functions loaded from
numba's cache have no module to read, so profile with an empty cache (``NUMBA_CACHE_DIR=$(mktemp -d)``; the
first call then compiles, about a minute).

Usage (how the figures in docs/performance.md were found)::

    NUMBA_CACHE_DIR=$(mktemp -d) .venv/bin/python benchmarks/perf_map.py ammonia 400 &
    # wait for "ready", then, with its pid:
    perf record -F 4000 -p <pid> -o perf.data -- sleep 4
    perf report -i perf.data --no-children --sort symbol

Run as a script it builds the ammonia (or methanol) benchmark system, solves 100,000 states once (compiling),
writes the map, prints "ready" and then repeats the one-thread batch solve the given number of times.
"""
from __future__ import annotations

import os
import re
import sys
import time

_NAME = re.compile(r"hipeq\w*?\d+(\w+?)\d*B\d+")


def write_map(entry_points: tuple[str, ...] = ("solve_chunks",)) -> int:
    """Write /tmp/perf-<pid>.map for every function linked into hipeq's compiled entry points; returns the
    number of functions named."""
    from numba.core.registry import CPUDispatcher

    entries: list[tuple[int, str]] = []
    seen: set[int] = set()
    for module_name, module in list(sys.modules.items()):
        if not module_name.startswith("hipeq"):
            continue
        candidates = list(vars(module).values())
        candidates += [call._dispatcher for call in getattr(module, "_PATHS", {}).values()]  # the chunk solvers
        for obj in candidates:
            if not (isinstance(obj, CPUDispatcher) and obj.__name__ in entry_points):
                continue
            for cres in obj.overloads.values():
                library = cres.library
                if id(library) in seen:
                    continue
                seen.add(id(library))
                for fn in library._final_module.functions:  # empty for code loaded from the cache
                    if fn.is_declaration:
                        continue
                    address = library.get_pointer_to_function(fn.name)
                    if address:
                        match = _NAME.search(fn.name)
                        entries.append((address, match.group(1) if match else fn.name[:60]))
    entries.sort()
    with open(f"/tmp/perf-{os.getpid()}.map", "w") as fh:
        for k, (address, name) in enumerate(entries):
            end = entries[k + 1][0] if k + 1 < len(entries) else address + 4096
            fh.write(f"{address:x} {min(end - address, 1 << 20):x} {name}\n")
    return len(entries)


def main(argv: list[str]) -> None:
    sys.path.insert(0, os.path.dirname(__file__))
    import numba

    import cases
    import equilibrium_bench

    case = cases.METHANOL if argv and argv[0] == "methanol" else cases.AMMONIA
    repeats = int(argv[1]) if len(argv) > 1 else 100
    system = equilibrium_bench.system_for(case)
    T, P = case.states(100_000)
    feed = dict(case.feed)
    system.equilibrium(feed=feed, T=T, P=P)
    numba.set_num_threads(1)
    print(f"perf map: {write_map()} functions", file=sys.stderr)
    print("ready", flush=True)
    t0 = time.perf_counter()
    for _ in range(repeats):
        system.equilibrium(feed=feed, T=T, P=P)
    print(f"{(time.perf_counter() - t0) / repeats / T.size * 1e9:.0f} ns per state (1 thread, wall)")


if __name__ == "__main__":
    main(sys.argv[1:])
