"""Batch solves (broadcasting, per-state status, agreement with scalar calls) and the sealed vessel."""
from __future__ import annotations

import json
import math

import numpy as np
import pytest

import hipeq
from hipeq.solvers.result import BatchResult

R = 8.314462618  # J/(mol K), CODATA 2018
FEED = {"N2": 1.0, "H2": 3.0}


@pytest.fixture(scope="module")
def system() -> hipeq.ReactionSystem:
    return hipeq.ReactionSystem(["N2", "H2", "NH3", "Ar"], eos="PR")


def test_broadcasting_and_agreement_with_scalar_calls(system) -> None:
    T = np.array([[650.0], [700.0], [800.0]])
    P = np.array([10e5, 100e5, 300e5, 800e5])
    batch = system.equilibrium(feed=FEED, T=T, P=P)
    assert isinstance(batch, BatchResult) and batch.shape == (3, 4) and len(batch) == 12
    assert batch.y["NH3"].shape == (3, 4) and batch.residuals.shape == (3, 4, 1)
    assert np.all(batch.converged)
    for i in range(3):
        for j in range(4):
            one = system.equilibrium(feed=FEED, T=float(T[i, 0]), P=float(P[j]))
            np.testing.assert_allclose(batch.amounts.array[i, j], one.amounts.array, rtol=1e-9, atol=1e-14)
            assert batch.P[i, j] == P[j]


def test_feed_as_dict_of_arrays_and_as_matrix(system) -> None:
    h2 = np.array([1.0, 2.0, 3.0, 4.0])
    a = system.equilibrium(feed={"N2": 1.0, "H2": h2, "Ar": 0.1}, T=700.0, P=200e5)
    matrix = np.column_stack([np.ones(4), h2, np.zeros(4), np.full(4, 0.1)])
    b = system.equilibrium(feed=matrix, T=700.0, P=200e5)
    assert a.shape == b.shape == (4,)
    np.testing.assert_allclose(a.amounts.array, b.amounts.array, rtol=1e-12)
    np.testing.assert_allclose(a.conversion["H2"], (h2 - a.amounts["H2"]) / h2, rtol=1e-12)


def test_result_does_not_depend_on_state_order(system) -> None:
    rng = np.random.default_rng(7)
    T = rng.uniform(600.0, 900.0, 300)
    P = rng.uniform(50e5, 600e5, 300)
    a = system.equilibrium(feed=FEED, T=T, P=P)
    perm = rng.permutation(300)
    b = system.equilibrium(feed=FEED, T=T[perm], P=P[perm])
    assert np.all(a.converged) and np.all(b.converged)
    np.testing.assert_allclose(a.y.array[perm], b.y.array, rtol=1e-9, atol=1e-14)


def test_bad_states_get_a_status_and_never_raise(system) -> None:
    T = np.array([700.0, -5.0, 700.0, 700.0, 5000.0, 700.0])
    P = np.array([100e5, 100e5, 0.0, 100e5, 100e5, np.nan])
    feed = {"N2": np.array([1.0, 1.0, 1.0, -1.0, 1.0, 1.0]), "H2": 3.0}
    batch = system.equilibrium(feed=feed, T=T, P=P)
    assert batch.status.tolist() == [0, 6, 6, 6, 6, 6]
    assert batch.n_failed == 5
    assert "T = -5.0 K" in batch.message(1)
    assert "P = 0.0 Pa" in batch.message(2)
    assert "feed amounts must be finite and >= 0" in batch.message(3)
    assert "T = 5000.0 K" in batch.message(4)
    assert batch.message(0) == "converged"
    for name in ("amounts", "y", "phi"):
        assert np.all(np.isfinite(getattr(batch, name).array))
    for arr in (batch.residuals, batch.extents, batch.K_phi, batch.K_y, batch.P, batch.V, batch.Z):
        assert np.all(np.isfinite(arr))


def test_one_failing_state_does_not_spoil_the_others() -> None:
    virial = hipeq.ReactionSystem(["N2", "H2", "NH3"], eos="virial")
    batch = virial.equilibrium(feed=FEED, T=700.0, P=np.array([50e5, 5000e5, 100e5]))
    assert batch.status.tolist() == [0, 3, 0]
    assert "no physical state" in batch.message(1)
    one = virial.equilibrium(feed=FEED, T=700.0, P=100e5)
    np.testing.assert_allclose(batch.y.array[2], one.y.array, rtol=1e-9)


def test_batch_methods_schemes_and_serialisation(system) -> None:
    T = np.linspace(600.0, 900.0, 7)
    ext = system.equilibrium(feed=FEED, T=T, P=300e5)
    for method in ("extent", "gibbs"):
        for scheme in ("coupled", "nested"):
            b = system.equilibrium_batch(feed=FEED, T=T, P=300e5, method=method, scheme=scheme)
            assert np.all(b.converged), (method, scheme)
            assert np.max(np.abs(b.y.array - ext.y.array)) <= 1e-9
    single = system.equilibrium_batch(feed=FEED, T=700.0, P=300e5)
    assert isinstance(single, BatchResult) and single.shape == ()
    data = json.loads(ext.to_json())
    assert len(data["y"]["NH3"]) == 7 and len(data["message"]) == 7


# --------------------------------------------------------------------------------------------------------
# sealed vessel
# --------------------------------------------------------------------------------------------------------
def _hand_calculation(T: float, V: float, ln_k: float) -> tuple[np.ndarray, float]:
    """N2 + 3 H2 = 2 NH3 in a sealed vessel, ideal gas: partial pressures p_i = n_i R T / V change with the
    total amount, K = (p_NH3/P0)^2 / ((p_N2/P0)(p_H2/P0)^3); solved by bisection on the extent."""
    def f(xi: float) -> float:
        n = np.array([1.0 - xi, 3.0 - 3.0 * xi, 2.0 * xi])
        p = n * R * T / V / 1e5
        return 2 * math.log(p[2]) - math.log(p[0]) - 3 * math.log(p[1]) - ln_k

    lo, hi = 1e-300, 1.0
    while True:
        mid = 0.5 * (lo + hi)
        if mid in (lo, hi):
            break
        lo, hi = (mid, hi) if f(mid) < 0 else (lo, mid)
    n = np.array([1.0 - mid, 3.0 - 3.0 * mid, 2.0 * mid])
    return n, float(n.sum() * R * T / V)


def test_sealed_vessel_ideal_gas_reproduces_hand_calculation() -> None:
    system = hipeq.ReactionSystem(["N2", "H2", "NH3"], eos="ideal")
    T, V = 723.15, 1e-3
    res = system.equilibrium(feed=FEED, T=T, V=V)
    assert res.converged and res.fixed_volume and res.V == pytest.approx(V, rel=1e-12)
    n_hand, P_hand = _hand_calculation(T, V, float(res.ln_K[0]))
    np.testing.assert_allclose(res.amounts.array, n_hand, rtol=1e-9)
    assert res.P == pytest.approx(P_hand, rel=1e-10)
    # the pressure fell with the total amount: solving at the initial pressure gives a different answer
    P_initial = 4.0 * R * T / V
    assert res.P < P_initial
    at_initial = system.equilibrium(feed=FEED, T=T, P=P_initial)
    assert at_initial.y["NH3"] > res.y["NH3"] + 0.01


def test_sealed_vessel_with_pr_is_consistent_with_fixed_pressure() -> None:
    system = hipeq.ReactionSystem(["N2", "H2", "NH3"], eos="PR")
    res = system.equilibrium(feed=FEED, T=723.15, V=1e-3)
    assert res.converged and res.outer_iterations >= 2
    same = system.equilibrium(feed=FEED, T=723.15, P=res.P)
    np.testing.assert_allclose(same.amounts.array, res.amounts.array, rtol=1e-9)
    assert same.V == pytest.approx(1e-3, rel=1e-10)
    gibbs = system.equilibrium(feed=FEED, T=723.15, V=1e-3, method="gibbs")
    assert gibbs.P == pytest.approx(res.P, rel=1e-9)
    batch = system.equilibrium(feed=FEED, T=723.15, V=np.array([1e-3, 2e-3, 1e-2]))
    assert np.all(batch.converged) and batch.P[0] == pytest.approx(res.P, rel=1e-9)
    assert np.all(np.diff(batch.P) < 0)


def test_sealed_vessel_below_the_covolume_is_reported() -> None:
    system = hipeq.ReactionSystem(["N2", "H2", "NH3"], eos="PR")
    res = system.equilibrium(feed=FEED, T=723.15, V=1e-5)  # 4 mol in 10 cm3: below n b
    assert res.status == 5 and "co-volume" in res.message
    assert np.all(np.isfinite(res.amounts.array))
