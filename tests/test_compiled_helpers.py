"""Compiled helpers without a Python entry point (``hipeq._jit.inner_kernel``).

Such a function is compiled without numba's Python wrapper: compiled callers link its machine code as usual, and
a call from Python must raise a clear ``TypeError``, never jump to the entry point that was not built (that would
crash the interpreter). It must also be found again in the on-disk cache by the next process, as every kernel is.

The processes started here import only ``hipeq._jit`` and compile a two-line probe written into a temporary
folder, so the file runs in a few seconds whatever state the solver sources are in.
"""
from __future__ import annotations

import os
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

from hipeq import _jit

PROBE = '''
from hipeq._jit import inner_kernel, kernel


@inner_kernel
def half(x):
    return 0.5 * x


@kernel
def quarter(x):
    return half(half(x))
'''

CALLS = textwrap.dedent('''
    import probe
    assert probe.quarter(8.0) == 2.0
    try:
        probe.half(8.0)
    except TypeError as exc:
        print("refused:", exc)
    else:
        raise SystemExit("an inner kernel ran from Python")
    print("hits", sum(probe.quarter.stats.cache_hits.values()), sum(probe.half.stats.cache_hits.values()))
''')

needs_jit = pytest.mark.skipif(os.environ.get("NUMBA_DISABLE_JIT", "0") not in ("", "0"),
                               reason="without the JIT every kernel is a plain Python function")


def run_probe(folder: Path, cache: Path) -> str:
    env = {k: v for k, v in os.environ.items() if k not in ("NUMBA_CACHE_DIR", "HIPEQ_CACHE_DIR")}
    env.update(HIPEQ_CACHE_DIR=str(cache), HIPEQ_QUIET="1", PYTHONPATH=str(folder))
    proc = subprocess.run([sys.executable, "-c", CALLS], env=env, cwd=folder, capture_output=True, text=True,
                          timeout=300)
    assert proc.returncode == 0, proc.stderr
    return proc.stdout


@needs_jit
def test_inner_kernel_runs_from_compiled_code_refuses_python_and_is_cached(tmp_path: Path) -> None:
    (tmp_path / "probe.py").write_text(PROBE)
    first = run_probe(tmp_path, tmp_path / "cache")
    assert "refused: hipeq: probe.half is compiled without a Python entry point" in first
    assert "hits 0 0" in first
    second = run_probe(tmp_path, tmp_path / "cache")
    assert "hits 1 0" in second  # the caller's machine code comes from the cache, the helper's is linked in it


def test_without_the_jit_an_inner_kernel_is_the_python_function(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(_jit.numba_config, "DISABLE_JIT", True)

    def double(x: float) -> float:
        return 2.0 * x

    assert _jit.inner_kernel(double) is double
