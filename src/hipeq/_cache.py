"""Where numba keeps hipeq's compiled kernels on disk: one folder for every way hipeq runs, keyed by the sources.

Imported by :mod:`hipeq._jit` before any kernel is decorated. numba's locator reads ``numba.config.CACHE_DIR``
when a function is *decorated* (``njit(cache=True)`` builds its cache locator at once,
``numba.core.caching.UserProvidedCacheLocator``), so the folder is chosen and set here, at import.

Why a key: numba stamps each cache index with the source of the function's own file only. A cached caller keeps
the machine code of a callee from another module after that module changes (the callee is linked or inlined into
it). The folder's last component is therefore a hash of every kernel source file of the installed package
(``_*.py`` in the package and in its sub-packages, and ``data/heat_capacity.py``, whose closed forms
``data/_kernels.py`` compiles), of the numba, numpy and Python versions and of the CPU numba compiles for. Any
change gives a new, empty folder: stale machine code cannot be loaded.

The parent folder, first match wins:

1. ``$NUMBA_CACHE_DIR/hipeq`` if numba's own cache folder is set (environment or ``.numba_config.yaml``), so that
   the numba idiom ``NUMBA_CACHE_DIR=$(mktemp -d)`` still gives a run of its own;
2. ``$HIPEQ_CACHE_DIR`` (a relative path is taken from the working folder at import);
3. ``$XDG_CACHE_HOME/hipeq``, else ``~/.cache/hipeq``;
4. if the chosen folder cannot be written: ``<tempdir>/hipeq-<uid>`` (private to the user; a warning is issued
   when 1 or 2 was set explicitly).

The folder is chosen once per process. Setting ``numba.config.CACHE_DIR`` affects every function decorated with
``cache=True`` after hipeq's kernels are imported, not only hipeq's: such functions (the benchmarks' loops, a
user's own) are cached under the same key, which is what keeps a cached function that calls a hipeq kernel
correct; they only recompile after a hipeq update. numba re-reads its environment when a ``NUMBA_*`` variable
changes during the run; the folder is then set again (see :func:`_keep_across_reloads`).

On the first compilation into a folder that holds no index for the function being compiled (first run after an
install, an update or a kernel edit), one line goes to stderr, once per process; ``HIPEQ_QUIET=1`` silences it.
Nothing is deleted automatically: :func:`clear_stale` removes the folders of other keys.
"""
from __future__ import annotations

import hashlib
import os
import shutil
import sys
import tempfile
import warnings
from collections.abc import Mapping
from pathlib import Path
from typing import Any

import llvmlite.binding as _llvm
import numba
import numpy
from numba.core import config as _config
from numba.core import event as _event

PACKAGE_DIR = Path(__file__).resolve().parent
KEY_LENGTH = 16  # hex digits of the folder name (64 bits)
_RECIPE = b"hipeq-cache-key 1\0"  # bump when the recipe below changes
_HEX = frozenset("0123456789abcdef")


def kernel_sources(package_dir: Path | None = None) -> list[Path]:
    """The files whose bytes key the cache folder, sorted by their path inside ``package_dir``.

    ``package_dir`` [path of a ``hipeq`` package folder; default: the imported package] is listed, so a new kernel
    module is included without changing this function: ``_*.py`` in the package and in each sub-package
    (``__init__.py`` excepted: no kernels there), and ``data/heat_capacity.py`` (its TRC closed forms are compiled
    by ``data/_kernels.py``).
    """
    root = PACKAGE_DIR if package_dir is None else Path(package_dir)
    files = {root / "data" / "heat_capacity.py"}
    folders = [str(root)]
    with os.scandir(root) as entries:  # os.scandir: a third of the cost of Path.glob, which counts at import
        folders += [e.path for e in entries if e.is_dir() and e.name != "__pycache__" and e.name[0] != "."]
    for folder in folders:
        with os.scandir(folder) as entries:
            files.update(Path(e.path) for e in entries
                         if e.name[0] == "_" and e.name[:2] != "__" and e.name.endswith(".py") and e.is_file())
    return sorted(files, key=lambda p: p.relative_to(root).as_posix())


def platform_tag() -> str:
    """What else the machine code depends on: numba, numpy and Python versions and the CPU numba targets.

    The CPU is ``NUMBA_CPU_NAME`` when set (e.g. ``generic`` for a portable cache), else the host CPU as LLVM names
    it (``llvmlite.binding.get_host_cpu_name``, as numba's code generator does); ``NUMBA_CPU_FEATURES`` is added
    when set.
    """
    cpu = _config.CPU_NAME or _llvm.get_host_cpu_name()
    features = _config.CPU_FEATURES or ""
    python = f"{sys.implementation.cache_tag}{getattr(sys, 'abiflags', '')}"
    return f"numba {numba.__version__}; numpy {numpy.__version__}; {python}; cpu {cpu} {features}".rstrip()


def source_key(package_dir: Path | None = None, tag: str | None = None) -> str:
    """The folder name: the first ``KEY_LENGTH`` hex digits of a SHA-1 of the kernel sources and the platform.

    ``package_dir`` [path; default: the imported package] is read with :func:`kernel_sources`; each file enters
    with its path inside the package and its bytes. ``tag`` defaults to :func:`platform_tag`. About 0.5 ms for
    the 170 kB of kernel sources (DEVELOPERS.md, "The compiled-code cache").
    """
    root = PACKAGE_DIR if package_dir is None else Path(package_dir)
    digest = hashlib.sha1(_RECIPE)  # a content fingerprint, not a security measure; the fastest hash here
    digest.update((platform_tag() if tag is None else tag).encode() + b"\0")
    for path in kernel_sources(root):
        try:
            data = path.read_bytes()
        except OSError:  # vanished between glob and read (an editor saving): key it as missing
            data = b"\0missing\0"
        digest.update(f"{path.relative_to(root).as_posix()}\0{len(data)}\0".encode())
        digest.update(data)
    return digest.hexdigest()[:KEY_LENGTH]


def cache_dir() -> Path:
    """The folder numba caches hipeq's compiled kernels in for this process (chosen at import; see module doc)."""
    return _DIR


def clear_stale(keep: int = 1) -> list[Path]:
    """Remove the cache folders of other keys beside :func:`cache_dir`; returns the removed folders.

    ``keep`` [count >= 1] folders remain: the current one and the ``keep - 1`` most recently used others (each
    import marks its folder as used). Only sibling folders named like a key (``KEY_LENGTH`` hex digits) are
    touched. Other installations or checkouts of hipeq that share the parent folder lose their cache too; they
    recompile it on their next run.
    """
    if keep < 1:
        raise ValueError(f"keep must be at least 1 (the folder in use is always kept), got {keep}")
    current = cache_dir()
    others = []
    for entry in os.scandir(current.parent):
        if entry.name != current.name and _is_key(entry.name) and entry.is_dir(follow_symlinks=False):
            others.append((entry.stat(follow_symlinks=False).st_mtime, Path(entry.path)))
    others.sort(reverse=True)
    removed = []
    for _, path in others[keep - 1:]:
        shutil.rmtree(path, ignore_errors=True)
        if not path.exists():
            removed.append(path)
    return removed


def _is_key(name: str) -> bool:
    return len(name) == KEY_LENGTH and set(name) <= _HEX


def _quiet() -> bool:
    return os.environ.get("HIPEQ_QUIET", "").strip() not in ("", "0")


def _writable(path: Path) -> bool:
    try:
        path.mkdir(parents=True, exist_ok=True)
    except OSError:
        return False
    return os.access(path, os.W_OK | os.X_OK)


def _private_temp_parent() -> Path:
    """``<tempdir>/hipeq-<uid>``, owned by this user and closed to others; else a new folder for this process."""
    uid = os.getuid() if hasattr(os, "getuid") else None
    base = Path(tempfile.gettempdir()) / f"hipeq-{uid if uid is not None else 'user'}"
    try:
        base.mkdir(mode=0o700, exist_ok=True)
        st = base.lstat()
        # a folder another user could write would let them plant machine code that we then load
        if uid is None or (st.st_uid == uid and not st.st_mode & 0o022 and base.is_dir() and not base.is_symlink()):
            return base
    except OSError:
        pass
    return Path(tempfile.mkdtemp(prefix="hipeq-"))


def _choose(key: str, numba_dir: str, environ: Mapping[str, str] = os.environ) -> Path:
    """The key folder for these settings (created if missing); see the module docstring for the order."""
    explicit = None
    if numba_dir:
        parent = Path(numba_dir).expanduser() / "hipeq"
        explicit = "NUMBA_CACHE_DIR"
    elif environ.get("HIPEQ_CACHE_DIR"):
        parent = Path(environ["HIPEQ_CACHE_DIR"]).expanduser()
        explicit = "HIPEQ_CACHE_DIR"
    elif environ.get("XDG_CACHE_HOME") and os.path.isabs(environ["XDG_CACHE_HOME"]):
        parent = Path(environ["XDG_CACHE_HOME"]) / "hipeq"
    else:
        try:
            parent = Path.home() / ".cache" / "hipeq"
        except RuntimeError:  # no home folder known
            parent = None
    if parent is not None:
        folder = Path(os.path.abspath(parent / key))  # absolute: a later chdir must not move it
        if _writable(folder):
            return folder
        if explicit:
            warnings.warn(f"hipeq: cannot write the compiled-code cache under {parent} (from {explicit}); using a "
                          "temporary folder instead", RuntimeWarning, stacklevel=2)
    folder = _private_temp_parent() / key
    folder.mkdir(parents=True, exist_ok=True)
    return folder


def _keep_across_reloads() -> None:
    """Set the folder again whenever numba re-reads its environment.

    numba's compiler calls ``numba.core.config.reload_config()`` before each compilation; when a ``NUMBA_*``
    variable changed since the last read it resets every setting from the environment, ``CACHE_DIR`` included,
    and the hipeq modules decorated after that would cache unkeyed again. Guarded: if numba's reloader changes
    shape, the folder is still set at import and only this late-change case is lost.
    """
    reloader = getattr(_config, "_env_reloader", None)
    original = getattr(reloader, "process_environ", None)
    if original is None or getattr(original, "_hipeq", False):
        return

    def process_environ(environ: Any) -> None:
        original(environ)
        _config.CACHE_DIR = str(_DIR)

    process_environ._hipeq = True  # type: ignore[attr-defined]
    reloader.process_environ = process_environ


class _FirstCompileNotice(_event.Listener):
    """Prints one line to stderr when a function compiles into the cache folder for the first time under this key.

    numba broadcasts ``numba:compile`` only on a cache miss (``Dispatcher.compile`` after ``load_overload``). The
    line is printed when the function being compiled has no index file in its folder yet, i.e. not when a known
    function merely meets new argument types; at most once per process.

    A variant built by a factory (a closure, such as one solver path of ``hipeq.solvers._driver``: compiled the
    first time a call needs it, into the index file its sibling variants share) gets a line of its own when it
    misses the cache, once per variant and process: a sealed vessel's first call can compile for 15 s after the
    first answer's compile was announced and done.
    """

    def __init__(self) -> None:
        self.done = False
        self.depth = 0  # compilations in progress (numba compiles callees inside their caller's compilation)
        self.variants: set[int] = set()  # ids of the closure variants announced in this process

    def on_start(self, event: Any) -> None:
        self.depth += 1
        try:
            dispatcher = event.data["dispatcher"]
            path = dispatcher.stats.cache_path
            code = dispatcher.py_func.__code__
            qualname = dispatcher.py_func.__qualname__
        except Exception:  # not a cached dispatcher
            return
        if not path or not str(path).startswith(str(_DIR) + os.sep):
            return
        variant = "<locals>" in qualname
        if self.depth > 1 or (self.done and not variant) or id(dispatcher) in self.variants:
            return
        # numba's index name: "<file stem>.<qualname>-<first line>.py<XY>.nbi" (numba.core.caching._CacheImpl)
        prefix = f"{Path(code.co_filename).stem}.{qualname.replace('<', '').replace('>', '')}-{code.co_firstlineno}."
        try:
            known = any(n.startswith(prefix) and n.endswith(".nbi") for n in os.listdir(path))
        except OSError:
            known = False
        if variant:
            self.variants.add(id(dispatcher))
        if not known and not self.done:
            self.done = True
            if not _quiet():
                print(f"hipeq: compiling the numerical core into {_DIR} (first run after an install or update: up "
                      "to a minute or two; later runs load it in about a second; HIPEQ_QUIET=1 hides this)",
                      file=sys.stderr, flush=True)
        elif variant and known and not _quiet():  # (a variant first met in a cold folder: the line above said it)
            print("hipeq: compiling the part of the numerical core this call needs for the first time (about "
                  "10-20 s; kept for later runs)", file=sys.stderr, flush=True)

    def on_end(self, event: Any) -> None:
        self.depth -= 1


def _install() -> Path:
    folder = _choose(source_key(), _USER_NUMBA_DIR)
    try:
        os.utime(folder)  # "last used", for clear_stale(keep > 1)
    except OSError:
        pass
    _config.CACHE_DIR = str(folder)
    return folder


_USER_NUMBA_DIR: str = _config.CACHE_DIR  # numba's own folder as the user set it, read once before it is replaced
_DIR: Path = _install()
_keep_across_reloads()
_NOTICE = _FirstCompileNotice()
_event.register("numba:compile", _NOTICE)
