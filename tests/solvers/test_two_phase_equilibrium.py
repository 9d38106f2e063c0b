"""Simultaneous chemical and phase equilibrium (``phases="auto"``): a one-phase answer that fails the tangent-plane
stability test (Michelsen 1982) is solved again as a vapour and a liquid.

Invariants checked from scratch with the public fugacity model (no solver internals): element balances against
the feed; equal fugacities of every species in both phases (ln x_i + ln phi_i, each phase at its own lower-Gibbs
root) to 1e-9; every reaction's condition sum_i nu_i (g0_i + ln(P/P0) + ln x_i + ln phi_i) = 0 in both phases to
1e-9, with ln K from the data layer (hipeq.data.thermochem, Cp integrals); a total Gibbs energy below the forced
one-phase answer; phases that are themselves stable. The reliability issue's methanol reproducer (324.66 K,
water-rich feed) gives one two-phase answer, the same alone and in any batch.
"""
from __future__ import annotations

import numpy as np
import pytest

import hipeq
from phase_checks import assert_two_phase_equilibrium

METHANOL = ["CO", "CO2", "H2", "H2O", "CH3OH", "CH4", "N2"]
METHANOL_REACTIONS = ["CO + 2 H2 = CH3OH", "CO2 + H2 = CO + H2O"]
REPRODUCER = {"CO": .0244, "CO2": 1e-12, "H2": .0265, "H2O": .212, "CH3OH": .0272, "CH4": 1e-12, "N2": .0227}


def check_two_phase(system, feed, result):
    """The shared invariants (tests/solvers/phase_checks.py), and a total Gibbs energy below the forced one-phase
    answer, which itself fails the stability test."""
    vapour, liquid, _ = assert_two_phase_equilibrium(system, feed, result)
    one = system.equilibrium(feed=feed, T=result.T, P=result.P, phases="one")
    assert not one.stability.stable
    assert result.G_RT < one.G_RT  # below the forced one-phase answer
    return vapour, liquid


def test_methanol_reproducer_one_answer_two_phases_alone_and_in_any_batch():
    s = hipeq.ReactionSystem(METHANOL, reactions=METHANOL_REACTIONS, eos="PR")
    P = np.linspace(1e5, 8e5, 16)
    batch = s.equilibrium(feed=REPRODUCER, T=324.66, P=P)
    assert np.all(batch.phase_count == 2)
    reversed_batch = s.equilibrium(feed=REPRODUCER, T=324.66, P=P[::-1])
    for i in (0, 5, 15):
        one = s.equilibrium(feed=REPRODUCER, T=324.66, P=float(P[i]))
        check_two_phase(s, REPRODUCER, one)
        assert np.max(np.abs(batch.y.array[i] - one.y.array)) <= 1e-12
        assert np.max(np.abs(reversed_batch.y.array[15 - i] - one.y.array)) <= 1e-12
        for a, b in zip(batch.phases[i], one.phases):
            np.testing.assert_allclose(a.mole_fractions, b.mole_fractions, rtol=0, atol=1e-12)
        assert "two phases" in one.message and "two phases" in batch.message(i)
    # the batch with its split states keeps the solver's per-state screen (the one-phase batch's flags)
    screen = s.equilibrium(feed=REPRODUCER, T=324.66, P=P, phases="one")._may_split
    assert batch._may_split is not None and np.array_equal(batch._may_split, screen)


@pytest.mark.parametrize("T, P", [(423.15, 300e5), (473.15, 100e5), (313.15, 80e5)])
def test_methanol_loop_below_its_dew_point(T, P):
    s = hipeq.ReactionSystem(METHANOL, eos="PR")
    feed = {"CO": 0.05, "CO2": 0.08, "H2": 0.6, "H2O": 0.127, "CH3OH": 0.12, "CH4": 0.013, "N2": 0.01}
    _, liquid = check_two_phase(s, feed, s.equilibrium(feed=feed, T=T, P=P))
    assert liquid.y["H2O"] + liquid.y["CH3OH"] > 0.8  # the condensate is methanol and water


@pytest.mark.parametrize("T", [300.0, 350.0])
def test_ammonia_with_excess_hydrogen_condenses(T):
    # below ammonia's critical temperature (405.4 K, Poling, Prausnitz & O'Connell 2001, app. A) conversion is
    # nearly complete and the product condenses out of the leftover hydrogen
    s = hipeq.ReactionSystem(["N2", "H2", "NH3", "Ar"], eos="PR")
    feed = {"N2": 1.0, "H2": 6.0, "Ar": 0.3}
    _, liquid = check_two_phase(s, feed, s.equilibrium(feed=feed, T=T, P=200e5))
    assert liquid.y["NH3"] > 0.9


def test_supercritical_answers_stay_one_phase_and_unchanged():
    s = hipeq.ReactionSystem(["N2", "H2", "NH3", "Ar", "CH4"], eos="PR")
    feed = {"N2": 1.0, "H2": 3.0, "Ar": 0.05, "CH4": 0.05}
    auto = s.equilibrium(feed=feed, T=np.array([673.15, 773.15]), P=np.array([100e5, 1000e5]))
    one = s.equilibrium(feed=feed, T=np.array([673.15, 773.15]), P=np.array([100e5, 1000e5]), phases="one")
    assert np.all(auto.phase_count == 1)
    np.testing.assert_array_equal(auto.y.array, one.y.array)


def test_phases_option_is_checked():
    s = hipeq.ReactionSystem(["N2", "H2", "NH3"])
    with pytest.raises(hipeq.InputError, match="phases"):
        s.equilibrium(feed={"N2": 1, "H2": 3}, T=700.0, P=1e7, phases="two")
