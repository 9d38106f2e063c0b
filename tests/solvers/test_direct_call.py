"""The scalar path calls the compiled solver's machine code directly (hipeq._jit.DirectCall): the argument types of
every call must follow from the keys (the system's arrays and the pattern snapshot), or a direct call would read
an argument with the wrong layout. These tests record, for every scalar call made through the path, the numba
types of its arguments and check that calls with the same keys always have the same types, over every option
the scalar path has (method, scheme, fixed volume, a user ln K, a start, every model), and that the direct call
gives bitwise the answer the dispatcher gives."""
from __future__ import annotations

import math

import numpy as np
import pytest

import hipeq
from hipeq._jit import DirectCall
from hipeq.solvers import _driver as D

AMMONIA = ["N2", "H2", "NH3", "Ar", "CH4"]
FEED = {"N2": 1.0, "H2": 3.0, "Ar": 0.05, "CH4": 0.02}


class Recorder(DirectCall):
    """DirectCall that also records (key ids, argument types) of each call."""

    def __init__(self, dispatcher):
        super().__init__(dispatcher)
        self.seen: dict[tuple[int, ...], set] = {}

    def __call__(self, keys, *args):
        self.seen.setdefault(tuple(map(id, keys)), set()).add(self.signature(args))
        return super().__call__(keys, *args)


class Recorders(dict):
    """One Recorder per solver path (``_driver._PATHS``), with the calls of all of them."""

    @property
    def seen(self) -> dict[tuple[int, ...], set]:
        merged: dict[tuple[int, ...], set] = {}
        for path, rec in self.items():
            for key, signatures in rec.seen.items():
                merged.setdefault((path, *key), set()).update(signatures)
        return merged


@pytest.fixture
def recorder(monkeypatch):
    recorders = Recorders({path: Recorder(call._dispatcher) for path, call in D._PATHS.items()})
    monkeypatch.setattr(D, "_PATHS", recorders)
    return recorders


def _ln_k(system):
    return lambda T: np.asarray(system.equilibrium(FEED, T=float(np.ravel(T)[0]), P=1e5).ln_K).reshape(1, -1) \
        * np.ones((np.size(T), 1))


def test_argument_types_follow_from_the_keys(recorder):
    systems = [hipeq.ReactionSystem(AMMONIA, ["N2 + 3 H2 = 2 NH3"], eos=eos) for eos in ("PR", "SRK", "ideal")]
    systems.append(hipeq.ReactionSystem(AMMONIA, ["N2 + 3 H2 = 2 NH3"], eos="PR", quantum_hydrogen=True))
    base = systems[0]
    systems.append(hipeq.ReactionSystem(AMMONIA, ["N2 + 3 H2 = 2 NH3"], eos="PR", ln_K=_ln_k(base)))
    systems.append(hipeq.ReactionSystem(["CO", "CO2", "H2", "H2O", "CH3OH"], eos="SRK"))
    for system in systems:
        feed = FEED if "N2" in system.species_names else {"CO": 1.0, "CO2": 0.3, "H2": 2.5}
        for kwargs in ({}, {"method": "gibbs"}, {"scheme": "nested"}, {"tol": 1e-9, "max_iterations": 50},
                       {"phases": "one"}):
            first = system.equilibrium(feed, T=700.0, P=2e7, **kwargs)
            system.equilibrium(feed, T=np.float64(650.0), P=np.float64(1e7), initial_guess=first, **kwargs)
            system.equilibrium(feed, T=700.0, V=1e-3, **kwargs)
            system.equilibrium(dict(feed, Ar=0.0) if "Ar" in feed else feed, T=720.0, P=3e7, **kwargs)
    assert recorder.seen, "the scalar path no longer goes through DirectCall"
    used = {key[0] for key in recorder.seen}
    assert used == set(D._PATHS), f"paths never called: {set(D._PATHS) - used}"
    for key, signatures in recorder.seen.items():
        assert len(signatures) == 1, f"calls with the same keys had {len(signatures)} argument signatures"


def test_direct_call_equals_the_dispatcher(monkeypatch):
    system = hipeq.ReactionSystem(AMMONIA, ["N2 + 3 H2 = 2 NH3"], eos="PR")
    states = [(700.0, 2e7), (650.0, 3e7), (800.0, 5e6)]
    direct = [system.equilibrium(FEED, T=T, P=P) for T, P in states]
    direct += [system.equilibrium(FEED, T=T, P=P) for T, P in states]  # now certainly through the direct entry

    class Plain(DirectCall):
        def __call__(self, keys, *args):
            return self._dispatcher(*args)

    monkeypatch.setattr(D, "_PATHS", {path: Plain(call._dispatcher) for path, call in D._PATHS.items()})
    plain = [system.equilibrium(FEED, T=T, P=P) for T, P in states] * 2
    for a, b in zip(direct, plain):
        assert a.status == b.status == 0
        assert np.array_equal(a.amounts.array, b.amounts.array)
        assert a.P == b.P and a.Z == b.Z and (a.G_RT == b.G_RT or math.isnan(a.G_RT))


def test_a_new_pattern_snapshot_gets_its_own_entry():
    system = hipeq.ReactionSystem(AMMONIA, ["N2 + 3 H2 = 2 NH3"], eos="PR")
    system.equilibrium(FEED, T=700.0, P=2e7)
    system.equilibrium({"N2": 1.0, "H2": 3.0}, T=700.0, P=2e7)  # a new feed pattern: a new snapshot
    alone = hipeq.ReactionSystem(AMMONIA, ["N2 + 3 H2 = 2 NH3"], eos="PR").equilibrium({"N2": 1.0, "H2": 3.0},
                                                                                        T=700.0, P=2e7)
    again = system.equilibrium({"N2": 1.0, "H2": 3.0}, T=700.0, P=2e7)
    assert np.array_equal(again.amounts.array, alone.amounts.array)
    at_pressure = D._PATHS[D.SolverPath(D.METHOD_EXTENT, False)]
    if hasattr(at_pressure._dispatcher, "overloads"):  # compiled (not under NUMBA_DISABLE_JIT)
        patterns = system.compiled.pattern_for(0b11)[0]  # the snapshot now current (N2 and H2 fed: bits 0, 1)
        assert (id(system.compiled.arrays), id(patterns)) in at_pressure._entries
