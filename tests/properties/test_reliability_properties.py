"""Reliability properties of the equilibrium solvers over random states (hypothesis).

Systems: the ammonia loop (N2, H2, NH3, Ar, CH4), methanol synthesis (CO, CO2, H2, H2O, CH3OH, CH4, N2) with the
two reactions CO + 2 H2 = CH3OH, CO2 + H2 = CO + H2O and with the derived set, steam reforming with ethane
(CH4, H2O, CO, CO2, H2, C2H6); models PR, SRK, ideal, virial, Lewis-Randall; methods extent and gibbs;
300-1500 K, 1-1000 bar (log-uniform) or sealed vessels of 0.1-1e5 mol/m3; feeds with zeros and 1e-12 traces.

(a) a state's answer does not depend on where it is solved: alone (scalar call), inside a random batch of other
    states, in the shuffled batch, and with numba.set_num_threads(1) and (2): |dy| <= 1e-12 where converged,
    same status, same liquid_like (checked for every state of the batch, the drawn one and its neighbours);
(b) status 0 is checked from scratch: every element balance closed (|sum_i a_ei n_i - b_e| <= ELEMENT_RTOL b_e
    + ELEMENT_ATOL sum_e b_e, element counts from hipeq.species(name).elements), every equilibrium condition
    |sum_i nu_ki (ln y_i + ln phi_i) + sum_i nu_ki ln(P/1e5) - ln K_k| <= 1e-9 (from result.y, result.phi,
    result.P, result.ln_K; reactions with an absent species skipped), outputs finite, amounts >= 0, P within the
    documented 1e-2-1e10 Pa; in a sealed vessel n_T Z R T / P = V, and the virial (|Z - 1| <= 0.5) and
    Lewis-Randall (P <= 2e8 Pa) models are not trusted beyond their range;
(c) no output is NaN or inf unless the status is non-zero and the message says why; never an exception;
(d) two threads on one fresh system meeting new zero-feed patterns give the answers of a serial run (in a worker
    subprocess, so that a crash fails the test instead of killing pytest).

These are invariants of the solver's own contract (docs/solvers.md): no value is checked against an outside source.
Default profile: tens of examples; `make soak` (HYPOTHESIS_PROFILE=soak, -m soak) runs the soak duplicates.
"""
from __future__ import annotations

import json
import os
import select
import subprocess
import sys
import tempfile
import textwrap
from dataclasses import dataclass
from pathlib import Path

import numba
import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

import hipeq

R = 8.314462618  # J/(mol K), CODATA 2018 (exact)
P_FLOOR, P_CEILING = 1e-2, 1e10  # [Pa] documented pressure range (docs/solvers.md)
CONDITION_TOL = 1e-9  # |recomputed equilibrium condition|, the project's stated requirement (docs/solvers.md)
SAME_TOL = 1e-12  # |dy| between two solves of one state

AMMONIA_LOOP = ("N2", "H2", "NH3", "Ar", "CH4")
METHANOL = ("CO", "CO2", "H2", "H2O", "CH3OH", "CH4", "N2")
STEAM = ("CH4", "H2O", "CO", "CO2", "H2", "C2H6")
SYSTEMS = {
    "ammonia": (AMMONIA_LOOP, None),
    "methanol_two": (METHANOL, ("CO + 2 H2 = CH3OH", "CO2 + H2 = CO + H2O")),
    "methanol_derived": (METHANOL, None),
    "steam_reforming": (STEAM, None),
}
MODELS = ("PR", "SRK", "ideal", "virial", "lewis-randall")
METHODS = ("extent", "gibbs")

SOAK = os.environ.get("HYPOTHESIS_PROFILE") == "soak"
soak = pytest.mark.skipif(not SOAK, reason="soak run: HYPOTHESIS_PROFILE=soak")

_BUILT: dict[tuple[str, str], hipeq.ReactionSystem] = {}


def system_for(name: str, eos: str) -> hipeq.ReactionSystem:
    key = (name, eos)
    if key not in _BUILT:
        species, reactions = SYSTEMS[name]
        _BUILT[key] = hipeq.ReactionSystem(list(species), reactions=None if reactions is None else list(reactions),
                                           eos=eos)
    return _BUILT[key]


# --------------------------------------------------------------------------------------------------------
# states
# --------------------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class State:
    system: str
    eos: str
    method: str
    feed: tuple[float, ...]
    T: float
    sealed: bool
    value: float  # P [Pa], or V [m3] when sealed

    @property
    def names(self) -> tuple[str, ...]:
        return SYSTEMS[self.system][0]

    @property
    def kw(self) -> str:
        return "V" if self.sealed else "P"

    def solve(self, s: hipeq.ReactionSystem):
        return s.equilibrium(feed=dict(zip(self.names, self.feed)), T=self.T, method=self.method,
                             **{self.kw: self.value})


amount = st.one_of(st.just(0.0), st.just(1e-12), st.floats(1e-3, 10.0))


@st.composite
def states(draw, models=MODELS):
    name = draw(st.sampled_from(sorted(SYSTEMS)))
    eos = draw(st.sampled_from(models))
    method = draw(st.sampled_from(METHODS))
    feed = tuple(draw(amount) for _ in SYSTEMS[name][0])
    assume(sum(feed) > 0.0)
    T = draw(st.floats(300.0, 1500.0))
    sealed = draw(st.booleans())
    if sealed:
        value = sum(feed) / 10.0 ** draw(st.floats(-1.0, 5.0))  # 0.1 to 1e5 mol/m3
    else:
        value = 10.0 ** draw(st.floats(5.0, 8.0))  # 1 to 1000 bar
    return State(name, eos, method, feed, T, sealed, value)


def _fixed_patterns(nc: int) -> np.ndarray:
    """A few zero-feed patterns for the random neighbours (few, so that the pattern analysis stays cheap)."""
    keep = np.ones((3, nc), dtype=bool)
    keep[1, 0] = False
    keep[2, nc - 1] = False
    keep[2, 1] = False
    return keep


def neighbours(state: State, rng: np.random.Generator, n: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """n other states: half the same feed scaled, near in T and P (warm starts), a quarter the same zero pattern
    with other amounts, a quarter random amounts in a few fixed zero patterns; traces of 1e-12 throughout."""
    nc = len(state.names)
    f0 = np.array(state.feed)
    feeds = np.empty((n, nc))
    T = np.empty(n)
    PV = np.empty(n)
    patterns = _fixed_patterns(nc)
    for k in range(n):
        kind = rng.uniform()
        if kind < 0.5:
            feeds[k] = f0 * 10.0 ** rng.uniform(-1, 1)
            T[k] = float(np.clip(state.T + rng.uniform(-50, 50), 300.0, 1500.0))
            scale = 10.0 ** rng.uniform(-0.3, 0.3)
        else:
            keep = f0 > 0 if kind < 0.75 else patterns[rng.integers(len(patterns))]
            row = rng.uniform(1e-3, 10.0, nc)
            row[rng.uniform(size=nc) < 0.2] = 1e-12
            row[~keep] = 0.0
            if not row.sum() > 0:
                row[np.argmax(keep)] = 1.0
            feeds[k] = row
            T[k] = rng.uniform(300.0, 1500.0)
            scale = None
        if state.sealed:
            density = (feeds[k].sum() / state.value * scale if scale is not None
                       else 10.0 ** rng.uniform(-1.0, 5.0))
            density = float(np.clip(density, 0.1, 1e5))
            PV[k] = feeds[k].sum() / density
        else:
            PV[k] = (float(np.clip(state.value * scale, 1e5, 1e8)) if scale is not None
                     else 10.0 ** rng.uniform(5.0, 8.0))
    return feeds, T, PV


def batch_with(state: State, rng: np.random.Generator, n_others: int):
    """The state inserted at a random position among n_others neighbours: (feeds, T, PV, index)."""
    feeds, T, PV = neighbours(state, rng, n_others)
    k = int(rng.integers(n_others + 1))
    feeds = np.insert(feeds, k, np.array(state.feed), axis=0)
    T = np.insert(T, k, state.T)
    PV = np.insert(PV, k, state.value)
    return feeds, T, PV, k


def solve_batch(s: hipeq.ReactionSystem, state: State, feeds, T, PV):
    return s.equilibrium(feed=feeds, T=T, method=state.method, **{state.kw: PV})


# --------------------------------------------------------------------------------------------------------
# from-scratch checks
# --------------------------------------------------------------------------------------------------------
def element_tolerances() -> tuple[float, float]:
    from hipeq.solvers.result import ELEMENT_ATOL, ELEMENT_RTOL
    return float(ELEMENT_RTOL), float(ELEMENT_ATOL)


_COUNTS: dict[tuple[str, ...], np.ndarray] = {}


def element_counts(names: tuple[str, ...]) -> np.ndarray:
    if names not in _COUNTS:
        records = [hipeq.species(n).elements for n in names]
        elements = sorted({e for rec in records for e in rec})
        _COUNTS[names] = np.array([[float(rec.get(e, 0)) for rec in records] for e in elements])
    return _COUNTS[names]


def stoichiometry(result) -> np.ndarray:
    """nu[k, i] parsed again from the result's reaction texts."""
    names = result.species
    rows = []
    for text in result.reactions:
        coefficients = hipeq.Reaction.parse(text).coefficients
        rows.append([float(coefficients.get(n, 0.0)) for n in names])
    return np.array(rows).reshape(len(rows), len(names))


def fields(result) -> dict[str, np.ndarray]:
    """Every numeric output, as arrays with the states along the first axis (a scalar result is one state)."""
    one = isinstance(result, hipeq.EquilibriumResult)

    def rows(x):
        a = np.asarray(x, dtype=float)
        return a.reshape(1, -1) if one else a.reshape(len(result), -1)

    return {"amounts": rows(result.amounts.array), "y": rows(result.y.array), "phi": rows(result.phi.array),
            "P": rows(result.P), "V": rows(result.V), "Z": rows(result.Z), "K_phi": rows(result.K_phi),
            "extents": rows(result.extents), "residuals": rows(result.residuals), "T": rows(result.T),
            "ln_K": rows(result.ln_K), "K_y": rows(result.K_y),
            "element_residuals": rows(result.element_residuals.array)}


def statuses(result) -> np.ndarray:
    return np.atleast_1d(np.asarray(result.status, dtype=np.int64)).ravel()


def message(result, k: int) -> str:
    return result.message if isinstance(result, hipeq.EquilibriumResult) else result.message(k)


def converged_state_failures(result, state: State, feeds: np.ndarray, requested: np.ndarray) -> list[str]:
    """For every state with status 0, what a from-scratch check finds wrong (empty when all is well)."""
    rtol, atol = element_tolerances()
    f = fields(result)
    ok = statuses(result) == 0
    problems = []
    with np.errstate(all="ignore"):
        for name, arr in f.items():
            bad = ok & ~np.all(np.isfinite(arr), axis=1)
            problems += [f"state {k}: {name} not finite" for k in np.flatnonzero(bad)]
        n = f["amounts"]
        problems += [f"state {k}: negative amount" for k in np.flatnonzero(ok & np.any(n < 0.0, axis=1))]
        A = element_counts(state.names)
        b = feeds @ A.T
        ratio = np.abs(n @ A.T - b) / (rtol * b + atol * b.sum(axis=1, keepdims=True))
        problems += [f"state {k}: element balance open by {ratio[k].max():.3g} x tolerance"
                     for k in np.flatnonzero(ok & np.any(ratio > 1.0, axis=1))]
        P = f["P"][:, 0]
        problems += [f"state {k}: P = {P[k]:.6g} Pa outside [1e-2, 1e10]"
                     for k in np.flatnonzero(ok & ~((P >= P_FLOOR) & (P <= P_CEILING)))]
        y, phi, ln_k = f["y"], f["phi"], f["ln_K"]
        nu = stoichiometry(result)
        ln_y = np.log(np.where(y > 0.0, y, 1.0))
        ln_phi = np.log(phi)
        for r in range(nu.shape[0]):
            involved = nu[r] != 0.0
            defined = ok & np.all(y[:, involved] > 0.0, axis=1)
            lhs = (ln_y + ln_phi)[:, involved] @ nu[r, involved] + nu[r].sum() * np.log(P / 1e5)
            miss = np.abs(lhs - ln_k[:, r])
            problems += [f"state {k}: condition of '{result.reactions[r]}' off by {miss[k]:.3g}"
                         for k in np.flatnonzero(defined & ~(miss <= CONDITION_TOL))]
        if state.sealed:
            Z, T = f["Z"][:, 0], f["T"][:, 0]
            v = n.sum(axis=1) * Z * R * T / P
            rel = np.abs(v / requested - 1.0)
            problems += [f"state {k}: n Z R T / P = {v[k]:.6g} m3 for V = {requested[k]:.6g} m3"
                         for k in np.flatnonzero(ok & ~(rel <= 1e-9))]
            if state.eos == "virial":
                problems += [f"state {k}: virial converged at Z = {Z[k]:.4g}"
                             for k in np.flatnonzero(ok & ~(np.abs(Z - 1.0) <= 0.5))]
            if state.eos == "lewis-randall":
                problems += [f"state {k}: Lewis-Randall converged at P = {P[k]:.4g} Pa"
                             for k in np.flatnonzero(ok & ~(P <= 2e8))]
    return problems


_BARE = {"", "invalid", "invalid input", "invalid input for this state", "error", "failed", "nan", "not finite"}


def unexplained_non_finite(result) -> list[str]:
    """States with a NaN or inf output whose status is 0 or whose message does not say why."""
    f = fields(result)
    st_ = statuses(result)
    problems = []
    with np.errstate(all="ignore"):
        bad = np.zeros(st_.size, dtype=bool)
        which: dict[int, list[str]] = {}
        for name, arr in f.items():
            rows = ~np.all(np.isfinite(arr), axis=1)
            for k in np.flatnonzero(rows):
                which.setdefault(int(k), []).append(name)
            bad |= rows
    for k in np.flatnonzero(bad):
        text = message(result, int(k)).strip()
        if st_[k] == 0:
            problems.append(f"state {k}: status 0 with non-finite {which[int(k)]}")
        elif text.lower().rstrip(".") in _BARE or len(text) < 10:
            problems.append(f"state {k}: non-finite {which[int(k)]}, status {st_[k]}, message {text!r}")
    return problems


# --------------------------------------------------------------------------------------------------------
# (a) the same answer alone, in a batch, shuffled, on one or two threads
# --------------------------------------------------------------------------------------------------------
def differences(alone, batch, order: np.ndarray) -> dict[int, str]:
    """State -> how its answer in ``batch`` (where state order[j] sits at row j) differs from its scalar solve."""
    out = {}
    y = batch.y.array.reshape(len(batch), -1)
    for j, k in enumerate(order):
        one = alone[k]
        sb, lb = int(batch.status.flat[j]), bool(batch.liquid_like.flat[j])
        if sb != one.status:
            out[int(k)] = f"status {sb} in the batch, {one.status} alone ({batch.message(j)!r} / {one.message!r})"
        elif lb != one.liquid_like:
            out[int(k)] = f"liquid_like {lb} in the batch, {one.liquid_like} alone"
        elif sb == 0:
            dy = float(np.max(np.abs(y[j] - one.y.array)))
            if not dy <= SAME_TOL:
                out[int(k)] = f"|dy| = {dy:.3g}"
    return out


def check_same_everywhere(state: State, seed: int, n_others: int) -> None:
    """Every state of a random batch around ``state`` (``state`` included) against its own scalar solve."""
    s = system_for(state.system, state.eos)
    rng = np.random.default_rng(seed)
    feeds, T, PV, _ = batch_with(state, rng, n_others)
    alone = [s.equilibrium(feed=feeds[k], T=float(T[k]), method=state.method, **{state.kw: float(PV[k])})
             for k in range(T.size)]
    identity = np.arange(T.size)
    found = {"in a batch": differences(alone, solve_batch(s, state, feeds, T, PV), identity)}
    perm = rng.permutation(T.size)
    found["shuffled"] = differences(alone, solve_batch(s, state, feeds[perm], T[perm], PV[perm]), perm)
    before = numba.get_num_threads()
    try:
        for threads in (1, min(2, numba.config.NUMBA_NUM_THREADS)):
            numba.set_num_threads(threads)
            found[f"{threads} thread(s)"] = differences(alone, solve_batch(s, state, feeds, T, PV), identity)
    finally:
        numba.set_num_threads(before)
    report = []
    for where, what in found.items():
        for k, text in list(what.items())[:3]:
            amounts = {n: float(a) for n, a in zip(state.names, feeds[k]) if a > 0}
            report.append(f"{where}: {text} -- T={T[k]!r}, {state.kw}={PV[k]!r}, feed={amounts}")
    assert not report, (state.system, state.eos, state.method, report[:8])


@given(state=states(), seed=st.integers(0, 2**32 - 1), n_others=st.integers(5, 60))
def test_state_answer_does_not_depend_on_the_batch(state: State, seed: int, n_others: int) -> None:
    check_same_everywhere(state, seed, n_others)


@pytest.mark.soak
@soak
@given(state=states(), seed=st.integers(0, 2**32 - 1), n_others=st.integers(5, 300))
def test_state_answer_does_not_depend_on_the_batch_soak(state: State, seed: int, n_others: int) -> None:
    check_same_everywhere(state, seed, n_others)


# --------------------------------------------------------------------------------------------------------
# (b) status 0 passes the from-scratch checks; (c) nothing non-finite without a reason
# --------------------------------------------------------------------------------------------------------
def check_converged_states(state: State, seed: int, n_others: int) -> None:
    s = system_for(state.system, state.eos)
    one = state.solve(s)
    problems = converged_state_failures(one, state, np.array([state.feed]), np.array([state.value]))
    feeds, T, PV = neighbours(state, np.random.default_rng(seed), n_others)
    batch = solve_batch(s, state, feeds, T, PV)
    problems += [f"batch {p}" for p in converged_state_failures(batch, state, feeds, PV)]
    assert not problems, (state, seed, problems[:8])


@given(state=states(), seed=st.integers(0, 2**32 - 1), n_others=st.integers(5, 200))
def test_converged_means_checked_from_scratch(state: State, seed: int, n_others: int) -> None:
    check_converged_states(state, seed, n_others)


@pytest.mark.soak
@soak
@given(state=states(), seed=st.integers(0, 2**32 - 1), n_others=st.integers(5, 2000))
def test_converged_means_checked_from_scratch_soak(state: State, seed: int, n_others: int) -> None:
    check_converged_states(state, seed, n_others)


def check_finite_or_explained(state: State, seed: int, n_others: int) -> None:
    s = system_for(state.system, state.eos)
    one = state.solve(s)  # an exception fails the test
    problems = unexplained_non_finite(one)
    feeds, T, PV = neighbours(state, np.random.default_rng(seed), n_others)
    problems += [f"batch {p}" for p in unexplained_non_finite(solve_batch(s, state, feeds, T, PV))]
    assert not problems, (state, seed, problems[:8])


@given(state=states(), seed=st.integers(0, 2**32 - 1), n_others=st.integers(5, 200))
def test_outputs_finite_unless_explained(state: State, seed: int, n_others: int) -> None:
    check_finite_or_explained(state, seed, n_others)


@pytest.mark.soak
@soak
@given(state=states(), seed=st.integers(0, 2**32 - 1), n_others=st.integers(5, 2000))
def test_outputs_finite_unless_explained_soak(state: State, seed: int, n_others: int) -> None:
    check_finite_or_explained(state, seed, n_others)


# --------------------------------------------------------------------------------------------------------
# (d) two threads on one fresh system = a serial run (worker subprocess)
# --------------------------------------------------------------------------------------------------------
WORKER = r"""
import json, sys, threading
import numpy as np
import hipeq

sys.setswitchinterval(1e-6)  # switch threads as often as possible
for line in sys.stdin:
    job = json.loads(line)
    F, T, PV = np.array(job["feeds"]), np.array(job["T"]), np.array(job["PV"])
    kw, n, method = ("V" if job["sealed"] else "P"), len(job["T"]), job["method"]

    def fresh():
        return hipeq.ReactionSystem(job["species"], reactions=job["reactions"], eos=job["eos"])

    def solve(s, lo, hi, out, errors):
        try:
            if job["mode"] == "scalar":
                for k in range(lo, hi):
                    r = s.equilibrium(feed=F[k], T=float(T[k]), method=method, **{kw: float(PV[k])})
                    out[k] = [int(r.status), r.y.array.tolist(), bool(r.liquid_like)]
            else:  # small batches
                for a in range(lo, hi, 4):
                    b = min(hi, a + 4)
                    r = s.equilibrium(feed=F[a:b], T=T[a:b], method=method, **{kw: PV[a:b]})
                    for j in range(b - a):
                        out[a + j] = [int(r.status[j]), r.y.array[j].tolist(), bool(r.liquid_like[j])]
        except BaseException as err:
            errors.append(repr(err))

    half = n // 2
    shared, threaded, errors = fresh(), [None] * n, []
    other = threading.Thread(target=solve, args=(shared, 0, half, threaded, errors))
    other.start()
    solve(shared, half, n, threaded, errors)
    other.join()
    serial, serial_errors = [None] * n, []
    reference = fresh()
    solve(reference, 0, half, serial, serial_errors)
    solve(reference, half, n, serial, serial_errors)
    print(json.dumps({"threaded": threaded, "serial": serial, "errors": errors, "serial_errors": serial_errors}),
          flush=True)
"""


class Worker:
    """A long-lived interpreter that runs the threaded jobs (restarted after a crash)."""

    def __init__(self) -> None:
        self.proc: subprocess.Popen | None = None
        self.log = tempfile.TemporaryFile(mode="w+")

    def start(self) -> None:
        env = dict(os.environ)
        env["PYTHONPATH"] = str(Path(hipeq.__file__).resolve().parent.parent) + os.pathsep + env.get("PYTHONPATH", "")
        self.log.seek(0)
        self.log.truncate()
        self.proc = subprocess.Popen([sys.executable, "-c", textwrap.dedent(WORKER)], stdin=subprocess.PIPE,
                                     stdout=subprocess.PIPE, stderr=self.log, text=True, env=env)

    def run(self, job: dict, timeout: float = 120.0) -> dict:
        if self.proc is None or self.proc.poll() is not None:
            self.start()
        assert self.proc is not None and self.proc.stdin is not None and self.proc.stdout is not None
        self.proc.stdin.write(json.dumps(job) + "\n")
        self.proc.stdin.flush()
        ready, _, _ = select.select([self.proc.stdout], [], [], timeout)
        line = self.proc.stdout.readline() if ready else ""
        if not line:
            if self.proc.poll() is None:
                self.proc.kill()
            code = self.proc.wait()
            self.log.seek(0)
            tail = self.log.read()[-3000:]
            self.proc = None
            pytest.fail(f"worker {'timed out' if not ready else 'crashed'} (exit code {code}); stderr tail:\n{tail}")
        return json.loads(line)

    def close(self) -> None:
        if self.proc is not None and self.proc.poll() is None:
            self.proc.stdin.close()
            try:
                self.proc.wait(timeout=30)
            except subprocess.TimeoutExpired:
                self.proc.kill()
                self.proc.wait()
        self.log.close()


@pytest.fixture(scope="module")
def worker():
    w = Worker()
    yield w
    w.close()


@st.composite
def thread_jobs(draw, max_states: int):
    name = draw(st.sampled_from(sorted(SYSTEMS)))
    species, reactions = SYSTEMS[name]
    eos = draw(st.sampled_from(MODELS))
    method = draw(st.sampled_from(METHODS))
    sealed = draw(st.booleans())
    mode = draw(st.sampled_from(("scalar", "batch")))
    half = draw(st.integers(4, max_states // 2))
    n = 2 * half
    rng = np.random.default_rng(draw(st.integers(0, 2**32 - 1)))
    nc = len(species)
    # many zero patterns, each new to the system; both halves (one per thread) meet the same patterns in the
    # same order, with other amounts, so that the threads analyse each new pattern at about the same time
    keep = rng.uniform(size=(half, nc)) >= 0.35
    keep[~keep.any(axis=1), 0] = True
    keep = np.vstack([keep, keep])
    feeds = rng.uniform(1e-3, 10.0, (n, nc))
    feeds[rng.uniform(size=(n, nc)) < 0.15] = 1e-12
    feeds[~keep] = 0.0
    T = rng.uniform(300.0, 1500.0, n)
    PV = (feeds.sum(axis=1) / 10.0 ** rng.uniform(-1.0, 5.0, n)) if sealed else 10.0 ** rng.uniform(5.0, 8.0, n)
    return {"system": name, "species": list(species), "reactions": None if reactions is None else list(reactions),
            "eos": eos, "method": method, "sealed": sealed, "mode": mode, "feeds": feeds.tolist(),
            "T": T.tolist(), "PV": PV.tolist()}


def check_threads_equal_serial(worker: Worker, job: dict) -> None:
    out = worker.run(job)
    label = {k: job[k] for k in ("system", "eos", "method", "sealed", "mode")}
    assert not out["serial_errors"], (label, out["serial_errors"][:3])
    assert not out["errors"], (label, out["errors"][:3])
    bad = []
    for k, (a, b) in enumerate(zip(out["threaded"], out["serial"])):
        if a[0] != b[0] or a[2] != b[2]:
            bad.append((k, "status/liquid_like", a[0], b[0], a[2], b[2]))
        elif a[0] == 0:
            dy = float(np.max(np.abs(np.array(a[1]) - np.array(b[1]))))
            if not dy <= SAME_TOL:
                bad.append((k, "dy", dy))
    assert not bad, (label, bad[:8])


@given(job=thread_jobs(max_states=60))
@settings(max_examples=6)
def test_two_threads_on_one_fresh_system_equal_a_serial_run(worker, job) -> None:
    check_threads_equal_serial(worker, job)


@pytest.mark.soak
@soak
@given(job=thread_jobs(max_states=300))
@settings(max_examples=150)
def test_two_threads_on_one_fresh_system_equal_a_serial_run_soak(worker, job) -> None:
    check_threads_equal_serial(worker, job)
