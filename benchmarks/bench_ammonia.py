"""Ammonia synthesis equilibrium, N2 + 3 H2 = 2 NH3 with Ar and CH4 inert, Peng-Robinson.

Measures hipeq's states/s in the batch core on one core and on all cores, the latency of one scalar call, and
the same problem solved by the hand-written baseline (thermo PRMIX + scipy brentq) on a sample of the states.

Targets: >= 1000x the baseline's states/s on one core; >= 200,000 states/s per core; one scalar call < 50 us.
"""
from __future__ import annotations

import cases
import equilibrium_bench
from harness import Context, Row

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
    return rows
