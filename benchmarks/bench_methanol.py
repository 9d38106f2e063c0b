"""Methanol synthesis equilibrium, CO, CO2, H2, H2O, CH3OH with Soave-Redlich-Kwong; three reactions given,
two independent.

Measures hipeq's states/s (one core, all cores) and scalar latency, and the hand-written baseline (thermo SRKMIX
+ scipy fsolve on two extents, nested brentq where fsolve fails) on a sample of the states.

Target: >= 500x the baseline's states/s on one core.
"""
from __future__ import annotations

import cases
import equilibrium_bench
from harness import Context, Row

NAME = "methanol"
DESCRIPTION = "methanol synthesis, SRK, 3 reactions (2 independent): states/s vs thermo+fsolve"


def run(ctx: Context) -> list[Row]:
    rows, h = equilibrium_bench.measure(ctx, cases.METHANOL, NAME)
    ratio = h["rate_one"] / h["baseline_rate"]
    rows.append(Row(NAME, "speed-up vs baseline, 1 thread", ratio, "x", target=">= 500", passed=ratio >= 500))
    return rows
