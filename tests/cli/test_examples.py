"""The library example for simulations that call hipeq in a loop runs and stays below equilibrium's limit."""
from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

EXAMPLE = Path(__file__).resolve().parents[2] / "examples" / "loop_reactor_model.py"


def test_loop_example_runs():
    done = subprocess.run([sys.executable, str(EXAMPLE)], capture_output=True, text=True, timeout=600,
                          env=dict(os.environ, HIPEQ_QUIET="1"))
    assert done.returncode == 0, done.stderr
    rows = [line.split() for line in done.stdout.splitlines()[1:]]
    assert len(rows) == 9
    # approaching from below while the gas is below equilibrium (first rows): never beyond it
    first = rows[0]
    assert float(first[3]) < float(first[4])
