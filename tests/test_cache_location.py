"""Where numba caches hipeq's compiled code (hipeq._cache): one folder for every way hipeq is started, a new one
whenever a kernel source changes, and a single first-run notice.

The processes started here only import ``hipeq._jit`` and compile a trivial kernel written into a temporary
folder, never the solver, so the file runs in a few seconds whatever state the solver sources are in.
"""
from __future__ import annotations

import os
import shutil
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

from hipeq import _cache

VENV_BIN = Path(sys.executable).parent
REPO = Path(__file__).resolve().parents[1]
NOTICE = "hipeq: compiling the numerical core"
PRINT_DIR = "import hipeq._jit, numba; from hipeq._cache import cache_dir; " \
            "assert numba.config.CACHE_DIR == str(cache_dir()); print(cache_dir())"

PROBE = '''
from hipeq._jit import entry, kernel


@kernel
def add_one(x):
    return x + 1.0


@entry
def twice(x):
    return 2.0 * x
'''


def clean_env(**extra: str) -> dict[str, str]:
    """This process's environment without any cache setting, plus ``extra``."""
    env = {k: v for k, v in os.environ.items()
           if k not in ("NUMBA_CACHE_DIR", "HIPEQ_CACHE_DIR", "HIPEQ_QUIET", "XDG_CACHE_HOME")}
    env.update(extra)
    return env


def run(args: list[str], env: dict[str, str], cwd: Path) -> subprocess.CompletedProcess[str]:
    proc = subprocess.run(args, env=env, cwd=cwd, capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    return proc


def copy_package(dest: Path) -> Path:
    """A copy of the installed package's sources (what the key is computed from)."""
    return Path(shutil.copytree(_cache.PACKAGE_DIR, dest / "hipeq", ignore=shutil.ignore_patterns("__pycache__")))


# --- the key ----------------------------------------------------------------------------------------------------

def test_key_follows_kernel_sources(tmp_path: Path) -> None:
    pkg = copy_package(tmp_path)
    tag = "fixed platform"
    base = _cache.source_key(pkg, tag)
    assert len(base) == _cache.KEY_LENGTH and _cache.source_key(pkg, tag) == base

    kernels = pkg / "models" / "_kernels.py"
    original = kernels.read_bytes()
    kernels.write_bytes(original + b"\n")                     # one byte more in a kernel file
    assert _cache.source_key(pkg, tag) != base
    kernels.write_bytes(original)
    assert _cache.source_key(pkg, tag) == base

    heat = pkg / "data" / "heat_capacity.py"                   # compiled by data/_kernels.py
    heat.write_bytes(heat.read_bytes() + b"# edit\n")
    edited = _cache.source_key(pkg, tag)
    assert edited != base

    (pkg / "solvers" / "_new_kernels.py").write_text("X = 1\n")   # a new kernel module is picked up by the glob
    assert _cache.source_key(pkg, tag) not in (base, edited)

    assert _cache.source_key(pkg, "numba 9.9; other cpu") != _cache.source_key(pkg, tag)


def test_key_ignores_python_only_modules(tmp_path: Path) -> None:
    pkg = copy_package(tmp_path)
    base = _cache.source_key(pkg, "t")
    for name in ("models/eos.py", "__init__.py", "solvers/__init__.py"):
        path = pkg / name
        path.write_bytes(path.read_bytes() + b"# edit\n")
    assert _cache.source_key(pkg, "t") == base
    names = {p.relative_to(pkg).as_posix() for p in _cache.kernel_sources(pkg)}
    assert {"_jit.py", "models/_kernels.py", "data/_kernels.py", "data/heat_capacity.py"} <= names
    assert not any(n.endswith("__init__.py") for n in names)


def test_platform_tag_names_versions_and_cpu() -> None:
    import numba

    tag = _cache.platform_tag()
    assert f"numba {numba.__version__}" in tag and sys.implementation.cache_tag in tag and "cpu " in tag


# --- one folder, whichever way hipeq is started -----------------------------------------------------------------

def test_same_folder_for_every_way_of_starting(tmp_path: Path) -> None:
    xdg = tmp_path / "xdg"
    elsewhere = tmp_path / "another_project"
    elsewhere.mkdir()
    seen = {}

    # an activated venv: its bin first on PATH, `python` found there, run in the checkout
    activated = clean_env(XDG_CACHE_HOME=str(xdg), VIRTUAL_ENV=str(VENV_BIN.parent),
                          PATH=f"{VENV_BIN}{os.pathsep}{os.environ.get('PATH', '')}")
    python_on_path = shutil.which("python", path=activated["PATH"])
    assert python_on_path is not None
    seen["activated venv"] = run([python_on_path, "-c", PRINT_DIR], activated, REPO).stdout.strip()

    # no activation: the venv's interpreter by its path, from another project's folder
    plain_path = os.pathsep.join(p for p in os.environ.get("PATH", "").split(os.pathsep)
                                 if p and Path(p).resolve() != VENV_BIN.resolve())
    plain = clean_env(XDG_CACHE_HOME=str(xdg), PATH=plain_path or "/usr/bin")
    plain.pop("VIRTUAL_ENV", None)
    seen["interpreter by path"] = run([sys.executable, "-c", PRINT_DIR], plain, elsewhere).stdout.strip()

    # the console script: a sitecustomize on PYTHONPATH prints the folder of the process when it ends
    script = VENV_BIN / "hipeq"
    if script.exists():
        hook = tmp_path / "hook"
        hook.mkdir()
        (hook / "sitecustomize.py").write_text(textwrap.dedent("""
            import atexit, sys

            def _report():
                from hipeq._cache import cache_dir
                sys.stderr.write(f"CACHE_DIR={cache_dir()}\\n")

            atexit.register(_report)
        """))
        env = dict(plain, PYTHONPATH=str(hook))
        proc = run([str(script), "species", "methanol"], env, elsewhere)
        assert "CH3OH" in proc.stdout
        seen["hipeq console script"] = next(line.split("=", 1)[1] for line in proc.stderr.splitlines()
                                            if line.startswith("CACHE_DIR="))

    assert len(set(seen.values())) == 1, seen
    folder = Path(next(iter(seen.values())))
    assert folder.parent == xdg / "hipeq" and _cache._is_key(folder.name)


def test_hipeq_cache_dir_is_respected(tmp_path: Path) -> None:
    mine = tmp_path / "mine"
    out = run([sys.executable, "-c", PRINT_DIR], clean_env(HIPEQ_CACHE_DIR=str(mine)), tmp_path).stdout.strip()
    assert Path(out).parent == mine and _cache._is_key(Path(out).name)


def test_numba_cache_dir_is_respected_and_still_keyed(tmp_path: Path) -> None:
    numba_dir = tmp_path / "numba"
    env = clean_env(NUMBA_CACHE_DIR=str(numba_dir), HIPEQ_CACHE_DIR=str(tmp_path / "ignored"))
    out = Path(run([sys.executable, "-c", PRINT_DIR], env, tmp_path).stdout.strip())
    assert out.parent == numba_dir / "hipeq" and _cache._is_key(out.name)


def test_unwritable_choice_falls_back_to_a_private_temporary_folder(tmp_path: Path) -> None:
    blocker = tmp_path / "a_file"
    blocker.write_text("not a folder")
    env = clean_env(HIPEQ_CACHE_DIR=str(blocker / "cache"), TMPDIR=str(tmp_path / "tmp"))
    (tmp_path / "tmp").mkdir()
    proc = run([sys.executable, "-W", "always", "-c", PRINT_DIR], env, tmp_path)
    out = Path(proc.stdout.strip())
    assert out.parent.parent == tmp_path / "tmp" and out.parent.name.startswith("hipeq-")
    assert "cannot write" in proc.stderr


def test_folder_survives_numba_rereading_its_environment(tmp_path: Path) -> None:
    code = PRINT_DIR + textwrap.dedent("""
        import os
        os.environ["NUMBA_OPT"] = "2"          # numba resets every setting from the environment on its next read
        numba.core.config.reload_config()
        assert numba.config.OPT == 2 and numba.config.CACHE_DIR == str(cache_dir())
    """)
    run([sys.executable, "-c", code], clean_env(HIPEQ_CACHE_DIR=str(tmp_path)), tmp_path)


# --- the first-run notice ---------------------------------------------------------------------------------------

def compile_probe(folder: Path, cache: Path, module: str = "probe_kernels", **env: str) -> str:
    """Import a trivial kernel module from ``folder`` in a fresh process, call it, return the process's stderr."""
    (folder / f"{module}.py").write_text(PROBE)
    code = (f"import sys; sys.path.insert(0, {str(folder)!r}); import {module} as m; "
            "assert m.add_one(1.0) == 2.0 and m.twice(2.0) == 4.0; "
            "from hipeq._cache import cache_dir; "
            "assert m.add_one.stats.cache_path.startswith(str(cache_dir()))")
    return run([sys.executable, "-c", code], clean_env(HIPEQ_CACHE_DIR=str(cache), **env), folder).stderr


def test_notice_once_on_a_cold_folder_and_never_on_a_warm_one(tmp_path: Path) -> None:
    cache = tmp_path / "cache"
    cold = compile_probe(tmp_path, cache)
    assert cold.count(NOTICE) == 1, cold             # two kernels compiled, one line
    line = next(s for s in cold.splitlines() if s.startswith(NOTICE))
    assert str(cache) in line
    warm = compile_probe(tmp_path, cache)
    assert NOTICE not in warm, warm
    # a function never compiled under this key (here: another module) is a first compile again
    fresh = compile_probe(tmp_path, cache, module="other_kernels")
    assert fresh.count(NOTICE) == 1, fresh


VARIANT_NOTICE = "hipeq: compiling the part of the numerical core this call needs for the first time"
VARIANTS = '''
from hipeq._jit import kernel


def scaled(factor):
    @kernel
    def scale(x):
        return factor * x
    return scale


VARIANTS = {f: scaled(f) for f in (2.0, 3.0)}
'''


def compile_variant(folder: Path, cache: Path, factor: float) -> str:
    """In a fresh process, call one closure variant (as the solver paths of hipeq.solvers._driver are built);
    return the process's stderr."""
    (folder / "variant_kernels.py").write_text(VARIANTS)
    code = (f"import sys; sys.path.insert(0, {str(folder)!r}); import variant_kernels as m; "
            f"assert m.VARIANTS[{factor!r}](1.0) == {factor!r}")
    return run([sys.executable, "-c", code], clean_env(HIPEQ_CACHE_DIR=str(cache)), folder).stderr


def test_a_variant_compiled_later_says_so_once(tmp_path: Path) -> None:
    cache = tmp_path / "cache"
    first = compile_variant(tmp_path, cache, 2.0)  # a cold folder: the first-run notice only
    assert first.count(NOTICE) == 1 and VARIANT_NOTICE not in first, first
    other = compile_variant(tmp_path, cache, 3.0)  # the sibling variant, compiled on first use later
    assert other.count(VARIANT_NOTICE) == 1 and NOTICE not in other, other
    again = compile_variant(tmp_path, cache, 3.0)  # found in the cache: nothing to say
    assert VARIANT_NOTICE not in again and NOTICE not in again, again


def test_notice_silenced_by_hipeq_quiet(tmp_path: Path) -> None:
    stderr = compile_probe(tmp_path, tmp_path / "cache", HIPEQ_QUIET="1")
    assert NOTICE not in stderr, stderr


# --- clearing other keys ----------------------------------------------------------------------------------------

def test_clear_stale_keeps_the_current_and_the_most_recent(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    current = tmp_path / ("a" * _cache.KEY_LENGTH)
    newer, older = tmp_path / ("1" * _cache.KEY_LENGTH), tmp_path / ("2" * _cache.KEY_LENGTH)
    unrelated = tmp_path / "notes"
    for i, folder in enumerate((older, newer, current, unrelated)):
        (folder / "sub").mkdir(parents=True)
        os.utime(folder, (1e9 + i, 1e9 + i))
    monkeypatch.setattr(_cache, "_DIR", current)

    assert _cache.clear_stale(keep=2) == [older]
    assert current.exists() and newer.exists() and unrelated.exists() and not older.exists()
    assert _cache.clear_stale() == [newer]
    assert current.exists() and unrelated.exists()
    with pytest.raises(ValueError):
        _cache.clear_stale(keep=0)
