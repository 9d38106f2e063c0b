"""The contract the analysis layer relies on: fixed return types, pickling, with_model, raise_on_failure, Status.

(Reliability regressions and properties live in test_reliability_regressions.py and
tests/properties/test_reliability_properties.py.)
"""
from __future__ import annotations

import pickle

import numpy as np
import pytest

import hipeq
from hipeq.errors import InputError, NotConvergedError
from hipeq.solvers.result import Status

SPECIES = ["N2", "H2", "NH3", "Ar"]
FEED = {"N2": 1.0, "H2": 3.0, "Ar": 0.05}


@pytest.fixture(scope="module")
def system() -> hipeq.ReactionSystem:
    return hipeq.ReactionSystem(SPECIES, eos="PR")


@pytest.mark.parametrize("T", [700, 700.0, np.int64(700), np.float32(700.0), np.float64(700.0), np.array(700.0)])
def test_scalar_inputs_of_any_numeric_type_give_one_result(system, T) -> None:
    result = system.equilibrium(feed=FEED, T=T, P=np.float32(3e7))
    assert isinstance(result, hipeq.EquilibriumResult) and result.converged
    reference = system.equilibrium(feed=FEED, T=700.0, P=float(np.float32(3e7)))
    assert result.y["NH3"] == reference.y["NH3"]


def test_any_array_input_gives_a_batch(system) -> None:
    batch = system.equilibrium(feed=FEED, T=[700.0], P=3e7)
    assert isinstance(batch, hipeq.BatchResult) and batch.shape == (1,)


def test_unit_strings_equal_the_si_call(system) -> None:
    a = system.equilibrium(feed={"N2": "1 kmol", "H2": "3 kmol", "Ar": "50 mol"}, T="450 degC", P="300 bar")
    b = system.equilibrium(feed={"N2": 1000.0, "H2": 3000.0, "Ar": 50.0}, T=723.15, P=3e7)
    assert a.y.array.tolist() == b.y.array.tolist()
    sealed = system.equilibrium(feed=FEED, T="450 degC", V="2.5 L")
    assert sealed.V == pytest.approx(2.5e-3, rel=1e-10)


@pytest.mark.parametrize("bad", [None, True, np.bool_(False), "450", "300 bar"])
def test_bad_temperature_types_name_the_field_and_unit(system, bad) -> None:
    with pytest.raises(InputError) as info:
        system.equilibrium(feed=FEED, T=bad, P=3e7)
    assert str(info.value).startswith("T:")


def test_empty_batch_is_a_clear_error(system) -> None:
    with pytest.raises(InputError, match="T: is empty"):
        system.equilibrium(feed=FEED, T=np.array([]), P=3e7)


def test_status_is_one_enum(system) -> None:
    result = system.equilibrium(feed=FEED, T=700.0, P=3e7)
    assert result.status is Status.CONVERGED and result.status == 0
    failed = system.equilibrium(feed=FEED, T=700.0, P=3e7, max_iterations=1)
    assert failed.status is Status.MAX_ITERATIONS and "iteration limit" in failed.message


def test_raise_on_failure_is_honoured_on_batches(system) -> None:
    with pytest.raises(NotConvergedError) as info:
        system.equilibrium(feed=FEED, T=np.array([700.0, 700.0]), P=np.array([3e7, -1.0]), raise_on_failure=True)
    assert isinstance(info.value.result, hipeq.BatchResult) and "1 of 2 states" in str(info.value)
    ok = system.equilibrium(feed=FEED, T=np.array([700.0, 750.0]), P=3e7, raise_on_failure=True)
    assert ok.converged.all()


def test_pickle_round_trips(system) -> None:
    result = system.equilibrium(feed=FEED, T=723.15, P=3e7)
    _ = result.y, result.phi, result.message  # cached fields travel too
    batch = system.equilibrium(feed=FEED, T=np.linspace(650.0, 800.0, 5), P=3e7)
    copy_system = pickle.loads(pickle.dumps(system))
    assert copy_system.compiled.store.keys == system.compiled.store.keys
    again = copy_system.equilibrium(feed=FEED, T=723.15, P=3e7)
    assert again.y.array.tolist() == result.y.array.tolist()
    copy_result = pickle.loads(pickle.dumps(result))
    assert copy_result.y.array.tolist() == result.y.array.tolist() and copy_result.message == result.message
    assert copy_result.kij == result.kij and copy_result.data_sources == result.data_sources
    copy_batch = pickle.loads(pickle.dumps(batch))
    assert np.array_equal(copy_batch.y.array, batch.y.array) and copy_batch.messages == batch.messages
    for record in system.records:
        assert pickle.loads(pickle.dumps(record)) == record
    model = pickle.loads(pickle.dumps(system.model))
    assert np.array_equal(model.kmat, system.model.kmat) and model.kij == system.model.kij
    reaction = pickle.loads(pickle.dumps(system.reactions[0]))
    assert dict(reaction.coefficients) == dict(system.reactions[0].coefficients)


@pytest.mark.parametrize("options", [{"eos": "ideal"}, {"eos": "SRK"}, {"eos": "PR78", "kij": "e-ppr78"},
                                     {"eos": "virial"}])
def test_with_model_equals_a_fresh_system(system, options) -> None:
    other = system.with_model(**options)
    fresh = hipeq.ReactionSystem(SPECIES, **options)
    T = np.linspace(600.0, 800.0, 7)
    a = other.equilibrium(feed=FEED, T=T, P=2e7)
    b = fresh.equilibrium(feed=FEED, T=T, P=2e7)
    assert a.eos == b.eos and np.array_equal(a.status, b.status)
    assert np.max(np.abs(a.y.array - b.y.array)) <= 1e-12


def test_with_model_rejects_unknown_options(system) -> None:
    with pytest.raises(InputError, match="with_model"):
        system.with_model(eos="PR", reactions=["N2 + 3 H2 = 2 NH3"])


def test_state_solver_fills_caller_arrays_with_the_equilibrium_answers(system) -> None:
    solve = system.state_solver()
    n = 40
    T = np.linspace(600.0, 900.0, n)
    P = np.geomspace(1e6, 5e7, n)
    feed = np.tile([1.0, 3.0, 0.0, 0.05], (n, 1))
    feed[3] = [-1.0, 3.0, 0.0, 0.0]  # out of range: status 6, nothing raised
    y, status, amounts, pressure = np.empty((n, 4)), np.empty(n, dtype=np.int64), np.empty((n, 4)), np.empty(n)
    failed = solve(T, P, feed, y, status, amounts, pressure)
    assert failed == 1 and status[3] == Status.INVALID_INPUT
    reference = system.equilibrium(feed=feed, T=T, P=P)
    assert np.array_equal(status, reference.status)
    ok = status == 0
    assert np.max(np.abs(y[ok] - reference.y.array[ok])) <= 1e-12
    assert np.max(np.abs(amounts[ok] - reference.amounts.array[ok])) <= 1e-12
    one = np.empty((1, 4))
    assert solve(T[:1], P[:1], feed[:1], one) == 0
    assert np.max(np.abs(one[0] - system.equilibrium(feed=feed[0], T=T[0], P=P[0]).y.array)) <= 1e-12
    sealed = system.state_solver(fixed_volume=True)
    assert sealed(T[:2], np.array([1e-3, 2e-3]), feed[:2], np.empty((2, 4))) == 0
    with pytest.raises(InputError):
        solve(T, P, feed[:, :3], y)


def test_residual_properties_at_the_answer_come_from_the_model(system) -> None:
    """h_res and s_res on results equal the fugacity model evaluated at the answer's T, P, y, in a batch as alone;
    s_res = (h_res - g_res)/T with g_res = RT sum_i y_i ln phi_i (Michelsen & Mollerup 2007, ch. 2)."""
    one = system.equilibrium(feed={"N2": 1, "H2": 3}, T=723.15, P=300e5)
    states = system.model.fugacity_coefficients(one.T, one.P, one.y.array)
    assert one.h_res == pytest.approx(float(states.h_res), rel=1e-12)
    g_res = 8.314462618 * one.T * float(np.dot(one.y.array, np.log(one.phi.array)))
    assert one.s_res == pytest.approx((one.h_res - g_res) / one.T, rel=1e-9, abs=1e-9)
    batch = system.equilibrium(feed={"N2": 1, "H2": 3}, T=np.array([650.0, 723.15]), P=np.array([50e5, 300e5]))
    assert batch.h_res[1] == pytest.approx(one.h_res, rel=1e-9)
    assert batch.h_res.shape == (2,) and np.all(np.isfinite(batch.s_res))
    assert "h_res" in one.to_dict() and one.to_dict()["units"]["h_res"] == "J/mol"


def test_residual_properties_of_the_ideal_gas_are_zero() -> None:
    ideal = hipeq.ReactionSystem(["N2", "H2", "NH3"], eos="ideal")
    result = ideal.equilibrium(feed={"N2": 1, "H2": 3}, T=723.15, P=300e5)
    assert result.h_res == 0.0 and result.s_res == 0.0
