"""Sealed vessels with a liquid (``equilibrium(feed, T, V=...)``, ``phases="auto"``): where no single phase fills
the vessel, the pressure P is found at which the two-phase reactive equilibrium at (T, P) fills it,
V_vapour + V_liquid = V (hipeq.solvers.vessel_phases).

Checked from scratch with the public fugacity model and the data layer (no solver internals): each phase's volume
V_p = Z_p n_p R T / P from its own Z (the lower-Gibbs root at its composition); element balances against the feed;
equal fugacities of every species in both phases (1e-9); every reaction's condition
sum_i nu_i (g0_i + ln(P/P0) + ln x_i + ln phi_i) = 0 in both phases (1e-9, ln K from hipeq.data.thermochem, Cp
integrals); at fixed T and V the lower Helmholtz energy A = G - P V decides (Michelsen & Mollerup 2007,
"Thermodynamic Models", 2nd ed., ch. 2), so the answer's A lies below the forced one-phase answer's. The same
answer against thermo's flash at the found pressure: tests/validation/test_flash_vs_thermo.py.

The methanol system is the demo case's (src/hipeq/interfaces/demo/co2_methanol.toml, an invented scenario): its
feed at 150 degC in vessels of 0.1-3 L, where methanol and water condense.
"""
from __future__ import annotations

import numpy as np
import pytest

import hipeq
from hipeq.constants import R
from phase_checks import assert_two_phase_equilibrium
from hipeq.solvers import _common as C

SPECIES = ["CO", "CO2", "H2", "CH3OH", "H2O"]
REACTIONS = ["CO2 + 3 H2 = CH3OH + H2O", "CO2 + H2 = CO + H2O"]  # as in the demo case
FEED = {"CO2": 1.0, "H2": 3.05, "CO": 0.04}  # mol: the demo case's feed ratio
T = 423.15  # K, 150 degC


@pytest.fixture(scope="module")
def system():
    return hipeq.ReactionSystem(SPECIES, reactions=REACTIONS, eos="PR")


def helmholtz_rt(result):
    """A/RT [mol] = G/RT - P V/(R T)."""
    return result.G_RT - result.P * result.V / (R * result.T)


def check_vessel(system, feed, V, result):
    """The invariants of a two-phase vessel answer (module docstring; the shared ones in
    tests/solvers/phase_checks.py); returns (vapour, liquid)."""
    assert result.fixed_volume and result.root == "two-phase" and result.V == V, result.message
    vapour, liquid, models = assert_two_phase_equilibrium(system, feed, result)
    T, P = result.T, result.P
    volumes = []
    for phase, fc in zip((vapour, liquid), models):
        assert phase.Z == pytest.approx(float(fc.Z), rel=1e-12)
        volumes.append(float(fc.Z) * phase.amount * R * T / P)  # V_p = Z_p n_p R T / P
    assert abs(sum(volumes) - V) <= 1e-9 * V  # the vessel is filled by both phases together
    assert volumes[0] > 0.0 and volumes[1] > 0.0
    return vapour, liquid


def test_vessel_that_no_single_phase_fills_is_solved_with_the_liquid(system):
    V = 1e-3  # m3 (1 L) for 4.09 mol fed
    one = system.equilibrium(FEED, T, V=V, phases="one")  # today's one-phase answer is kept with phases="one"
    assert one.status == 5 and one.reason == C.REASON_NOT_ONE_PHASE and "as one phase" in one.message
    result = system.equilibrium(FEED, T, V=V)
    vapour, liquid = check_vessel(system, FEED, V, result)
    assert liquid.y["CH3OH"] + liquid.y["H2O"] > 0.9  # the condensate is methanol and water
    assert 30e5 < result.P < 40e5  # between the reactive dew and bubble pressures of this feed at 150 degC
    assert "two phases fill the vessel" in result.message
    # its energies are those of its two phases (issue 12; checked from scratch in test_phase_energies.py)
    assert np.all(np.isfinite([result.H, result.S, result.U, result.h_res, result.s_res]))
    assert result.H == pytest.approx(sum(p.amount * p.h for p in result.phases), rel=1e-12)
    # the found pressure fed back into a fixed-T, P solve gives the same phases
    again = system.equilibrium(FEED, T, P=result.P)
    assert again.phase_count == 2
    assert again.V == pytest.approx(V, rel=1e-9)
    for a, b in zip(result.phases, again.phases):
        np.testing.assert_allclose(a.mole_fractions, b.mole_fractions, rtol=0, atol=1e-8)
        assert a.amount == pytest.approx(b.amount, rel=1e-8)


def test_unstable_one_phase_answer_gives_way_to_the_lower_helmholtz_energy(system):
    V = 3e-3  # m3: one phase fills it, but that answer is not stable
    one = system.equilibrium(FEED, T, V=V, phases="one")
    assert one.converged and one.phase_count == 1 and not one.stability.stable
    result = system.equilibrium(FEED, T, V=V)
    check_vessel(system, FEED, V, result)
    assert helmholtz_rt(result) < helmholtz_rt(one)  # lowest A at fixed T and V
    assert result.P < one.P  # the liquid takes up less room: a lower pressure fills the same vessel


def test_batch_states_are_solved_as_alone(system):
    volumes = np.array([1e-2, 1e-3, 3e-3, 2e-4, 5e-5])
    batch = system.equilibrium(FEED, T, V=volumes)
    assert batch.status.tolist() == [0, 0, 0, 0, 5]
    assert batch.phase_count.tolist() == [1, 2, 2, 2, 1]
    np.testing.assert_allclose(batch.V[:4], volumes[:4], rtol=1e-12)  # one phase: |ln(V_eq/V)| <= 1e-12
    for k, V in enumerate(volumes[:4]):
        alone = system.equilibrium(FEED, T, V=float(V))
        assert batch.P[k] == pytest.approx(alone.P, rel=1e-9)
        np.testing.assert_allclose(batch.y.array[k], alone.y.array, rtol=0, atol=1e-12)  # as docs/solvers.md promises
        assert batch.phase_count[k] == alone.phase_count
        if alone.phase_count == 2:
            assert "two phases fill the vessel" in batch.message(k)
            assert batch.root[k] == "two-phase"
            for a, b in zip(batch.phases[k], alone.phases):
                np.testing.assert_allclose(a.mole_fractions, b.mole_fractions, rtol=0, atol=1e-9)
    check_vessel(system, FEED, 2e-4, system.equilibrium(FEED, T, V=2e-4))


def test_vessel_too_small_even_for_the_liquid_keeps_status_5(system):
    result = system.equilibrium(FEED, T, V=5e-5)  # 4.09 mol in 50 cm3: below the co-volume of the liquid
    assert result.status == 5 and result.reason == C.REASON_BELOW_COVOLUME
    assert "co-volume" in result.message and result.phase_count == 1


def test_supercritical_ammonia_converter_vessel_is_unchanged():
    s = hipeq.ReactionSystem(["N2", "H2", "NH3"], eos="PR")
    feed = {"N2": 1.0, "H2": 3.0}
    auto = s.equilibrium(feed, 723.15, V=1e-3)
    one = s.equilibrium(feed, 723.15, V=1e-3, phases="one")
    assert auto.converged and auto.phase_count == 1 and auto.root != "two-phase"
    assert auto.P == one.P and auto.V == one.V
    np.testing.assert_array_equal(auto.amounts.array, one.amounts.array)
    batch = s.equilibrium(feed, 723.15, V=np.array([5e-4, 1e-3, 2e-3]))
    assert np.all(batch.phase_count == 1) and np.all(batch.converged)
    assert batch.P[1] == pytest.approx(auto.P, rel=1e-12)


def test_ammonia_vessel_that_one_phase_cannot_fill_now_holds_its_condensate():
    """The reliability regression's vessel (7.07 mol NH3 with traces of Ar and CH4, PR, 313.1 K, 1.61 L): a liquid
    of nearly pure ammonia takes most of the moles. Its liquid is at its bubble point (the model's own
    hipeq.bubble_point, to 1e-7), and the partial pressure of ammonia over it, y_NH3 P, is the vapour pressure of
    ammonia at 313.1 K to 2 % (Raoult's law for x_NH3 > 0.99, common practice): 15.47 bar from Perry's Chemical
    Engineers' Handbook, 8th ed. (2008), table 2-8 (DIPPR equation 101, read through
    chemicals.vapor_pressure.Psat_data_Perrys2_8). The traces and the N2 and H2 that ammonia gives off raise the
    total pressure above it."""
    from chemicals.dippr import EQ101
    from chemicals.vapor_pressure import Psat_data_Perrys2_8

    s = hipeq.ReactionSystem(["N2", "H2", "NH3", "Ar", "CH4"], eos="PR")
    feed = {"NH3": 7.07, "Ar": .0022, "CH4": .0095}
    result = s.equilibrium(feed, 313.1, V=1.61e-3)
    vapour, liquid = check_vessel(s, feed, 1.61e-3, result)
    assert liquid.y["NH3"] > 0.99 and liquid.fraction > 0.8
    bubble = hipeq.bubble_point(list(s.species_names), liquid.mole_fractions, T=313.1)
    assert bubble.P == pytest.approx(result.P, rel=1e-7)  # the liquid is at its bubble point
    row = Psat_data_Perrys2_8.loc["7664-41-7"]  # ammonia
    p_sat = EQ101(313.1, *(float(row[c]) for c in ("C1", "C2", "C3", "C4", "C5")))
    assert p_sat == pytest.approx(15.47e5, rel=1e-3)
    assert vapour.y["NH3"] * result.P == pytest.approx(p_sat, rel=0.02)
    assert result.P > p_sat
