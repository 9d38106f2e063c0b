"""Large batches in chunks: solved here on every core, or on a dask cluster when given a client.

A batch is cut into chunks of consecutive states (``chunk_states`` each, the last one shorter); each chunk is one
call of :meth:`ReactionSystem.equilibrium_batch`, which spreads its states over the cores of the machine it runs
on. With ``client=`` (a ``dask.distributed.Client``) the systems are scattered to the workers once (a
``ReactionSystem`` pickles with the feed patterns it has analysed) and one task per chunk and system is
submitted; the answers are gathered and put back in order. The chunks, and so the answers, are the same whether
they run here or on a cluster: a state's answer depends only on the states of its own chunk (the warm-start
chain of the batch core) and never on the number of threads or workers, so a distributed run reproduces the
local run bit for bit for the same ``chunk_states`` (on workers with the same CPU type and hipeq version).

Only the public solver API is used (``equilibrium_batch``, ``species_names``, ``species_index``, results' public
attributes).
"""
from __future__ import annotations

import math
import time
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from hipeq.errors import HipeqError, InputError
from hipeq.solvers.system import ReactionSystem
from hipeq.units import to_si

DEFAULT_CHUNK_STATES = 65_536  # states per chunk (one batch call): large enough to keep every core busy
PROGRESS_AFTER = 2.0  # [s] a progress bar is shown when the whole run is expected to take longer than this


@dataclass(frozen=True, eq=False)
class ChunkAnswer:
    """What one chunk sends back (plain arrays, cheap to pickle): mole fractions ``y`` (n, nc) [-], amounts
    (n, nc) [mol], compressibility factor ``Z`` (n,) [-], ``status`` (n,) (hipeq.Status codes), ``liquid_like`` (n,)
    (the answer took a liquid-like volume root: a liquid may form), the messages of the failed states (index in the
    chunk -> text) and the model's provenance."""

    y: np.ndarray
    amounts: np.ndarray
    Z: np.ndarray
    status: np.ndarray
    liquid_like: np.ndarray
    messages: dict[int, str]
    provenance: dict[str, Any]


def solve_chunk(system: ReactionSystem, feed: np.ndarray, T: np.ndarray, P: np.ndarray, method: str = "extent",
                max_iterations: int = 100) -> ChunkAnswer:
    """One chunk: ``system.equilibrium_batch(feed, T, P)`` with feed (nc,) or (n, nc) [mol], T (n,) [K], P (n,)
    [Pa], reduced to a :class:`ChunkAnswer`. Runs wherever it is called (here, or in a dask worker)."""
    result = system.equilibrium_batch(feed, T, P, method=method, max_iterations=max_iterations)
    status = np.array(result.status, dtype=np.int64).reshape(-1)
    messages = {int(i): result.message(int(i)) for i in np.flatnonzero(status)}
    nonzero_kij = {f"{a}-{b}": float(v) for (a, b), v in result.kij.items() if a < b and v != 0.0}
    provenance = {"eos": result.eos, "kij": nonzero_kij, "K_source": result.K_source,
                  "standard_state": result.standard_state}
    return ChunkAnswer(np.array(result.y.array), np.array(result.amounts.array), np.array(result.Z).reshape(-1),
                       status, np.array(result.liquid_like, dtype=bool).reshape(-1), messages, provenance)


def chunk_bounds(n: int, chunk_states: int) -> list[tuple[int, int]]:
    """Half-open ranges [a, b) of at most ``chunk_states`` consecutive states covering 0..n."""
    return [(a, min(n, a + chunk_states)) for a in range(0, n, chunk_states)]


def check_chunk_states(chunk_states: Any) -> int:
    """``chunk_states`` as an int >= 1, else InputError naming it."""
    if isinstance(chunk_states, bool) or not isinstance(chunk_states, (int, np.integer)) or chunk_states < 1:
        raise InputError("chunk_states", f"must be an integer >= 1 (states per batch call), got {chunk_states!r}")
    return int(chunk_states)


def check_client(client: Any) -> None:
    """InputError naming ``client`` unless it looks like a ``dask.distributed.Client``."""
    if client is not None and not all(hasattr(client, name) for name in ("scatter", "submit", "gather")):
        raise InputError("client", f"must be a dask.distributed.Client (or None to solve here), got {client!r}")


@dataclass
class _Task:
    key: Any  # what the caller files the answer under
    system: str  # label of the system in the systems mapping
    feed: np.ndarray
    T: np.ndarray
    P: np.ndarray


def run_tasks(systems: Mapping[str, ReactionSystem], tasks: Sequence[_Task], *, client: Any = None,
              progress: bool | None = None, method: str = "extent", max_iterations: int = 100,
              description: str = "equilibrium") -> dict[Any, ChunkAnswer]:
    """Solve every task (one chunk of one system): here, in order, or as dask tasks when ``client`` is given.

    ``progress``: True shows a tqdm bar, False never, None when the run is expected to take more than about
    ``PROGRESS_AFTER`` seconds (estimated from the first chunk here, from the first finished task on a cluster).
    """
    check_client(client)
    if client is None:
        return _run_here(systems, tasks, progress, method, max_iterations, description)
    return _run_on_cluster(systems, tasks, client, progress, method, max_iterations, description)


def _bar(total: int, done: int, description: str) -> Any:
    from tqdm.auto import tqdm

    return tqdm(total=total, initial=done, desc=description, unit="chunk")


def _run_here(systems: Mapping[str, ReactionSystem], tasks: Sequence[_Task], progress: bool | None, method: str,
              max_iterations: int, description: str) -> dict[Any, ChunkAnswer]:
    answers: dict[Any, ChunkAnswer] = {}
    bar = None
    fastest = math.inf
    for k, task in enumerate(tasks):
        start = time.perf_counter()
        answers[task.key] = solve_chunk(systems[task.system], task.feed, task.T, task.P, method, max_iterations)
        if bar is not None:
            bar.update(1)
            continue
        # the first chunk of a model may include loading compiled code: the fastest chunk so far is the estimate
        fastest = min(fastest, time.perf_counter() - start)
        left = len(tasks) - k - 1
        if left and progress is not False and (progress or fastest * left > PROGRESS_AFTER):
            bar = _bar(len(tasks), k + 1, description)
    if bar is not None:
        bar.close()
    return answers


def _run_on_cluster(systems: Mapping[str, ReactionSystem], tasks: Sequence[_Task], client: Any,
                    progress: bool | None, method: str, max_iterations: int, description: str
                    ) -> dict[Any, ChunkAnswer]:
    from dask.distributed import as_completed

    used = sorted({task.system for task in tasks})
    # hash=False: fresh keys, so that data scattered by an earlier call and being released cannot cancel these
    remote = dict(zip(used, client.scatter([systems[label] for label in used], broadcast=True, hash=False)))
    inputs = client.scatter([(task.feed, task.T, task.P) for task in tasks], hash=False)
    futures = {client.submit(_solve_packed, remote[task.system], packed, method, max_iterations, pure=False): task.key
               for task, packed in zip(tasks, inputs)}
    slots = max(1, sum(client.nthreads().values())) if hasattr(client, "nthreads") else 1
    answers: dict[Any, ChunkAnswer] = {}
    bar = None
    start = time.perf_counter()
    for done, (future, answer) in enumerate(as_completed(futures, with_results=True), start=1):
        if not isinstance(answer, ChunkAnswer):  # a cancelled task (a worker lost, the client closed)
            raise HipeqError(f"the dask task of chunk {futures[future]!r} did not finish: {answer!r}")
        answers[futures[future]] = answer
        if bar is not None:
            bar.update(1)
        elif done == 1 and len(tasks) > 1 and progress is not False:
            expected = (time.perf_counter() - start) * math.ceil(len(tasks) / slots)
            if progress or expected > PROGRESS_AFTER:
                bar = _bar(len(tasks), 1, description)
    if bar is not None:
        bar.close()
    return answers


def _solve_packed(system: ReactionSystem, packed: tuple[np.ndarray, np.ndarray, np.ndarray], method: str,
                  max_iterations: int) -> ChunkAnswer:
    feed, T, P = packed
    return solve_chunk(system, feed, T, P, method, max_iterations)


# ---------------------------------------------------------------------------------------------------------------
@dataclass(frozen=True, eq=False)
class ChunkedBatch:
    """Answers of :func:`solve_in_chunks` over the broadcast shape ``shape`` of its inputs.

    ``T`` [K], ``P`` [Pa], ``Z`` [-], ``status`` (hipeq.Status codes, 0 = converged) are arrays of that shape;
    ``y[name]`` [-] and ``amounts[name]`` [mol] are arrays of that shape per species (the values of a failed
    state are the solver's last iterate, as in a BatchResult: check ``status``); ``messages`` maps the flat index
    of every failed state to its explanation. ``standard_state``: ideal gas at 1 bar.
    """

    shape: tuple[int, ...]
    species: tuple[str, ...]
    T: np.ndarray
    P: np.ndarray
    Z: np.ndarray
    status: np.ndarray
    mole_fractions: np.ndarray = field(repr=False)  # shape + (nc,)
    amounts_array: np.ndarray = field(repr=False)  # shape + (nc,)
    messages: Mapping[int, str] = field(repr=False)
    chunk_states: int
    provenance: Mapping[str, Any] = field(repr=False)

    @property
    def y(self) -> dict[str, np.ndarray]:
        """Mole fraction [-] per species."""
        return {name: self.mole_fractions[..., j] for j, name in enumerate(self.species)}

    @property
    def amounts(self) -> dict[str, np.ndarray]:
        """Amount [mol] per species."""
        return {name: self.amounts_array[..., j] for j, name in enumerate(self.species)}

    @property
    def converged(self) -> np.ndarray:
        """status == 0 per state."""
        return self.status == 0

    @property
    def n_failed(self) -> int:
        """Number of states that did not converge (invalid input included)."""
        return int(np.count_nonzero(self.status))


def _feed_rows(system: ReactionSystem, feed: Any) -> tuple[np.ndarray, tuple[int, ...]]:
    """The feed as amounts [mol] with species along the last axis, and its batch shape (() for one feed)."""
    nc = len(system.species_names)
    if isinstance(feed, Mapping):
        if not feed:
            raise InputError("feed", "is empty; give at least one species with a positive amount [mol]")
        columns = {}
        for name, amount in feed.items():
            j = system.species_index(name)
            value = np.asarray(to_si(amount, "amount", f"feed[{name!r}]"), dtype=float)
            columns[j] = columns[j] + value if j in columns else value
        try:
            shape = np.broadcast_shapes(*(v.shape for v in columns.values()))
        except ValueError:
            raise InputError("feed", "the amounts of the species do not broadcast to one shape") from None
        rows = np.zeros(shape + (nc,))
        for j, value in columns.items():
            rows[..., j] = value
        return rows, shape
    rows = np.asarray(to_si(feed, "amount", "feed"), dtype=float)
    if rows.ndim == 0 or rows.shape[-1] != nc:
        raise InputError("feed", f"an array feed needs species along the last axis ({nc}, in the order "
                                 f"{list(system.species_names)}), got shape {rows.shape}")
    return rows, rows.shape[:-1]


def solve_in_chunks(system: ReactionSystem, feed: Mapping[str, Any] | Any, T: Any, P: Any, *, client: Any = None,
                    chunk_states: int = DEFAULT_CHUNK_STATES, progress: bool | None = None,
                    method: str = "extent", max_iterations: int = 100) -> ChunkedBatch:
    """Equilibrium of a large batch (many feeds, temperatures, pressures), in chunks, here or on a dask cluster.

    Args:
        system: the reaction system (any fugacity model; for k_ij perturbations build one system per k_ij set
            with ``system.with_model(kij=...)`` and call once per system, or use the same client for all).
        feed: amounts [mol] per species ({name: number, array or unit string}) or an array with species along
            the last axis; broadcast with T and P.
        T: temperature [K] (number, array or unit strings).
        P: pressure [Pa] (number, array or unit strings).
        client: a ``dask.distributed.Client`` to run the chunks on its workers (each needs hipeq installed);
            None solves here on every core.
        chunk_states: states per chunk (one ``equilibrium_batch`` call each). The answers depend on it only
            through the warm starts inside a chunk (differences at the level of the solver tolerance); the same
            value gives bitwise the same answers here and on a cluster.
        progress: True shows a progress bar, False never, None (default) when the run is expected to take more
            than about 2 s.
        method, max_iterations: as in :meth:`ReactionSystem.equilibrium`.

    Each state solves sum_i nu_ki [g0_i(T)/RT + ln(P/P0) + ln y_i + ln phi_i] = 0 for every independent reaction
    k, P0 = 1 bar (Smith & Missen 1982, ch. 4), exactly as :meth:`ReactionSystem.equilibrium` does.
    """
    if not isinstance(system, ReactionSystem):
        raise InputError("system", f"must be a hipeq.ReactionSystem, got {type(system).__name__}")
    chunk_states = check_chunk_states(chunk_states)
    check_client(client)
    rows, feed_shape = _feed_rows(system, feed)
    T_si = np.asarray(to_si(T, "temperature", "T"), dtype=float)
    P_si = np.asarray(to_si(P, "pressure", "P"), dtype=float)
    try:
        shape = np.broadcast_shapes(T_si.shape, P_si.shape, feed_shape)
    except ValueError:
        raise InputError("T", f"T {T_si.shape}, P {P_si.shape} and the feed {feed_shape} do not broadcast to one "
                              "shape of states") from None
    n = math.prod(shape)
    if n == 0:
        raise InputError("T", "no states: the inputs broadcast to an empty shape; give at least one value")
    T_flat = np.ascontiguousarray(np.broadcast_to(T_si, shape).reshape(n))
    P_flat = np.ascontiguousarray(np.broadcast_to(P_si, shape).reshape(n))
    one_feed = feed_shape == ()
    N0 = rows if one_feed else np.ascontiguousarray(np.broadcast_to(rows, shape + rows.shape[-1:]).reshape(n, -1))
    tasks = [_Task(k, "system", N0 if one_feed else N0[a:b], T_flat[a:b], P_flat[a:b])
             for k, (a, b) in enumerate(chunk_bounds(n, chunk_states))]
    answers = run_tasks({"system": system}, tasks, client=client, progress=progress, method=method,
                        max_iterations=max_iterations, description="equilibrium chunks")
    parts = [answers[k] for k in range(len(tasks))]
    nc = len(system.species_names)
    messages = {}
    for (a, _), part in zip(chunk_bounds(n, chunk_states), parts):
        messages.update({a + i: text for i, text in part.messages.items()})
    return ChunkedBatch(shape, tuple(system.species_names), T_flat.reshape(shape), P_flat.reshape(shape),
                        np.concatenate([p.Z for p in parts]).reshape(shape),
                        np.concatenate([p.status for p in parts]).reshape(shape),
                        np.concatenate([p.y for p in parts]).reshape(shape + (nc,)),
                        np.concatenate([p.amounts for p in parts]).reshape(shape + (nc,)),
                        messages, chunk_states, parts[0].provenance)
