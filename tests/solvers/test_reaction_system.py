"""ReactionSystem: construction, the result object, options, and the equilibrium identities of a result."""
from __future__ import annotations

import dataclasses
import json
import math

import numpy as np
import pytest

import hipeq
from hipeq.data.thermochem import ln_equilibrium_constants
from hipeq.errors import InputError, NotConvergedError
from hipeq.solvers.result import STATUS_MESSAGES, STATUS_NAMES

AMMONIA = ["N2", "H2", "NH3", "Ar"]
METHANOL = ["CO", "CO2", "H2", "H2O", "CH3OH"]
METHANOL_REACTIONS = ["CO + 2 H2 = CH3OH", "CO2 + H2 = CO + H2O", "CO2 + 3 H2 = CH3OH + H2O"]
FEED = {"N2": 1.0, "H2": 3.0, "Ar": 0.05}


@pytest.fixture(scope="module")
def ammonia() -> hipeq.ReactionSystem:
    return hipeq.ReactionSystem(AMMONIA, eos="PR")


@pytest.fixture(scope="module")
def result(ammonia):
    return ammonia.equilibrium(feed=FEED, T=723.15, P=300e5)


# --------------------------------------------------------------------------------------------------------
# construction
# --------------------------------------------------------------------------------------------------------
def test_reactions_derived_from_species(ammonia) -> None:
    assert [str(r) for r in ammonia.reactions] == ["N2 + 3 H2 = 2 NH3"]
    assert ammonia.dropped_reactions == ()


def test_dependent_reaction_is_dropped_keeping_user_order() -> None:
    system = hipeq.ReactionSystem(METHANOL, reactions=METHANOL_REACTIONS, eos="SRK")
    assert [str(r) for r in system.reactions] == METHANOL_REACTIONS[:2]
    (dropped, why), = system.dropped_reactions
    assert str(dropped) == METHANOL_REACTIONS[2]
    assert "CO + 2 H2 = CH3OH" in why and "CO2 + H2 = CO + H2O" in why
    assert any("dropped dependent reaction" in note for note in system.notes)


def test_incomplete_reaction_set_is_noted() -> None:
    system = hipeq.ReactionSystem(METHANOL, reactions=["CO + 2 H2 = CH3OH"], eos="SRK")
    assert any("span 1 of the 2" in note for note in system.notes)


def test_ln_k_table_matches_data_layer(ammonia) -> None:
    # the solver tabulates g0(T); its ln K must reproduce hipeq.data.thermochem to the table's checked error
    T = np.linspace(300.0, 1500.0, 37)
    res = ammonia.equilibrium(feed=FEED, T=T, P=1e5)
    exact = ln_equilibrium_constants(ammonia.reactions, ammonia.species_names, T)
    assert np.max(np.abs(res.ln_K - exact)) <= 1e-10
    assert ammonia.table.max_error <= 1e-11


# --------------------------------------------------------------------------------------------------------
# the result
# --------------------------------------------------------------------------------------------------------
def test_result_fields_and_identities(result) -> None:
    assert result.converged and result.status == 0 and "converged" in result.message
    assert result.standard_state == "ideal gas at 1 bar"
    assert (result.method, result.scheme, result.eos) == ("extent", "coupled", "PR")
    assert result.T == 723.15 and result.P == 300e5
    y = result.y
    assert sum(y.values()) == pytest.approx(1.0, abs=1e-14)
    assert result.amounts["Ar"] == pytest.approx(0.05, rel=1e-14)  # inert
    # K = K_y K_phi (P/P0)^(sum nu) at equilibrium (Smith & Missen 1982, ch. 7)
    dnu = hipeq.Reaction.parse(result.reactions[0]).mole_change
    lhs = math.log(result.K_y[0]) + math.log(result.K_phi[0]) + dnu * math.log(result.P / 1e5)
    assert lhs == pytest.approx(result.ln_K[0], abs=1e-10)
    assert result.K[0] == pytest.approx(math.exp(result.ln_K[0]), rel=1e-14)
    # extent and conversion are consistent with the amounts
    xi = result.extents[0]
    assert result.amounts["NH3"] == pytest.approx(2 * xi, rel=1e-12)
    assert result.conversion["N2"] == pytest.approx(xi / 1.0, rel=1e-12)
    assert set(result.conversion) == {"N2", "H2", "Ar"}
    # volume from Z
    n_t = sum(result.amounts.values())
    assert result.V == pytest.approx(n_t * result.Z * 8.314462618 * result.T / result.P, rel=1e-14)
    assert 0.9 < result.phi["H2"] < 1.2


def test_result_provenance(result) -> None:
    assert set(result.data_sources) == set(AMMONIA)
    assert "Hf" in result.data_sources["NH3"]
    assert ("H2", "NH3") in result.zero_kij_pairs or ("NH3", "H2") in result.zero_kij_pairs
    assert result.kij
    assert "Cp integrals" in result.K_source


def test_result_is_frozen_and_read_only(result) -> None:
    with pytest.raises(dataclasses.FrozenInstanceError):
        result.T = 1.0  # type: ignore[misc]
    with pytest.raises(ValueError):
        result.extents[0] = 0.0
    with pytest.raises(ValueError):
        result.amounts.array[0] = 0.0


def test_result_serialises(result) -> None:
    data = json.loads(result.to_json())
    for key in ("T", "P", "V", "amounts", "y", "phi", "extents", "conversion", "K", "K_phi", "K_y", "residuals",
                "element_residuals", "iterations", "converged", "status", "message", "method", "scheme", "eos",
                "kij", "zero_kij_pairs", "data_sources", "standard_state"):
        assert key in data, key
    assert data["y"]["NH3"] == pytest.approx(result.y["NH3"])
    assert data["standard_state"] == "ideal gas at 1 bar"


def test_status_tables_are_consistent() -> None:
    from hipeq.solvers import _common as C
    from hipeq.solvers.result import Status
    assert len(STATUS_NAMES) == len(STATUS_MESSAGES) == len(Status) == 9
    for code, name in enumerate(STATUS_NAMES):
        assert getattr(C, name) == code == Status[name]


# --------------------------------------------------------------------------------------------------------
# options
# --------------------------------------------------------------------------------------------------------
def test_not_converged_says_why_and_where(ammonia) -> None:
    from hipeq.solvers._driver import COLD_FRACTIONS

    res = ammonia.equilibrium(feed=FEED, T=723.15, P=300e5, max_iterations=1)
    # max_iterations holds per start; a failed start is followed by the next deterministic cold start
    starts = len(COLD_FRACTIONS)
    assert not res.converged and res.status == 1 and res.iterations == starts
    assert "iteration limit" in res.message and f"stopped after {starts} Newton iterations" in res.message
    assert "N2 + 3 H2 = 2 NH3" in res.message and "P = 3e+07 Pa" in res.message
    assert np.all(np.isfinite(res.amounts.array)) and np.all(res.amounts.array > 0)
    with pytest.raises(NotConvergedError) as info:
        ammonia.equilibrium(feed=FEED, T=723.15, P=300e5, max_iterations=1, raise_on_failure=True)
    assert info.value.result.status == 1 and "iteration limit" in str(info.value)


def test_nested_scheme_reports_phi_updates(ammonia, result) -> None:
    res = ammonia.equilibrium(feed=FEED, T=723.15, P=300e5, scheme="nested")
    assert res.converged and res.scheme == "nested" and res.outer_iterations >= 2
    assert np.max(np.abs(res.y.array - result.y.array)) <= 1e-10


def test_initial_guess_from_previous_result(ammonia, result) -> None:
    again = ammonia.equilibrium(feed=FEED, T=723.15, P=300e5, initial_guess=result)
    assert again.converged and again.iterations <= 1
    near = ammonia.equilibrium(feed=FEED, T=730.0, P=300e5, initial_guess=result, method="gibbs")
    assert near.converged
    with pytest.raises(InputError) as err:
        ammonia.equilibrium(feed=FEED, T=723.15, P=300e5, initial_guess={"N2": -1.0})
    assert err.value.field == "initial_guess"


def test_tolerance_is_honoured(ammonia) -> None:
    loose = ammonia.equilibrium(feed=FEED, T=723.15, P=300e5, tol=1e-4)
    tight = ammonia.equilibrium(feed=FEED, T=723.15, P=300e5, tol=1e-13)
    assert np.max(np.abs(loose.residuals)) <= 1e-4 and np.max(np.abs(tight.residuals)) <= 1e-13


def test_ln_k_override() -> None:
    names = ["N2", "H2", "NH3"]
    base = hipeq.ReactionSystem(names)
    data_ln_k = lambda T: ln_equilibrium_constants(base.reactions, names, T)  # noqa: E731
    same = hipeq.ReactionSystem(names, ln_K=data_ln_k)
    shifted = hipeq.ReactionSystem(names, ln_K=lambda T: data_ln_k(T) + 1.0)
    feed = {"N2": 1, "H2": 3}
    a = base.equilibrium(feed=feed, T=700.0, P=100e5)
    b = same.equilibrium(feed=feed, T=700.0, P=100e5)
    c = shifted.equilibrium(feed=feed, T=700.0, P=100e5)
    g = shifted.equilibrium(feed=feed, T=700.0, P=100e5, method="gibbs")
    assert np.max(np.abs(a.y.array - b.y.array)) <= 1e-10
    assert c.ln_K[0] == pytest.approx(a.ln_K[0] + 1.0, abs=1e-12)
    assert c.y["NH3"] > a.y["NH3"]
    assert np.max(np.abs(c.y.array - g.y.array)) <= 1e-10  # Gibbs uses the shifted standard Gibbs energies
    assert c.K_source == "user ln_K override"
    with pytest.raises(InputError) as err:
        hipeq.ReactionSystem(names, ln_K=lambda T: np.zeros((len(T), 3))).equilibrium(feed=feed, T=700.0, P=1e5)
    assert err.value.field == "ln_K"


def test_liquid_like_state_is_flagged() -> None:
    system = hipeq.ReactionSystem(METHANOL, reactions=METHANOL_REACTIONS[:2])
    feed = {"CO": 0.1, "CO2": 0.1, "H2": 0.7, "H2O": 0.01}
    res = system.equilibrium(feed=feed, T=473.15, P=1000e5, phases="one")  # the one-phase answer's flag
    assert res.converged and res.liquid_like and "liquid-like" in res.message
    assert not res.stability.stable and "not stable as one phase" in res.message
    split = system.equilibrium(feed=feed, T=473.15, P=1000e5)  # phases="auto": it splits
    assert split.phase_count == 2 and "two phases" in split.message


def test_no_physical_state_is_a_status_not_nan() -> None:
    system = hipeq.ReactionSystem(["N2", "H2", "NH3"], eos="virial")
    res = system.equilibrium(feed={"N2": 1, "H2": 3}, T=700.0, P=5000e5)
    assert res.status == 3 and not res.converged and "no physical state" in res.message
    assert np.all(np.isfinite(res.amounts.array)) and np.all(np.isfinite(res.phi.array))
    assert np.all(np.isfinite(res.K_phi)) and np.all(np.isfinite(res.residuals))
