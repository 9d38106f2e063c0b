"""Invariants of the adiabatic equilibrium and of duties over random inlets (hypothesis, few examples each):
enthalpy in equals enthalpy out to 1e-8 relative; the outlet is the equilibrium at its own temperature; heat
removed is positive for exothermic syntheses (ammonia, methanol) and negative for steam reforming, and the
adiabatic temperature change has the matching sign. Feeds are invented."""
from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import hipeq


@pytest.fixture(scope="module")
def ammonia():
    return hipeq.ReactionSystem(["N2", "H2", "NH3", "Ar"])


@pytest.fixture(scope="module")
def methanol():
    return hipeq.ReactionSystem(["CO", "H2", "CH3OH", "CO2", "H2O", "CH4"],
                                ["CO + 2 H2 = CH3OH", "CO2 + H2 = CO + H2O"])


@pytest.fixture(scope="module")
def reforming():
    return hipeq.ReactionSystem(["CH4", "H2O", "CO", "CO2", "H2"],
                                ["CH4 + H2O = CO + 3 H2", "CO + H2O = CO2 + H2"])


def _closed_and_on_curve(system, feed, out, P):
    assert out.converged
    assert abs(out.H - out.H_in) <= 1e-8 * abs(out.H_in)  # H_in is far from 0: formation enthalpies in the feed
    again = system.equilibrium(feed, T=out.T, P=P, initial_guess=out)
    assert np.asarray(again.y.array) == pytest.approx(np.asarray(out.y.array), rel=1e-8, abs=1e-12)


@settings(max_examples=8)
@given(T_in=st.floats(600.0, 760.0), P=st.floats(50e5, 500e5), ratio=st.floats(2.0, 4.0),
       eos=st.sampled_from(["ideal", "PR", "SRK"]))
def test_ammonia_adiabatic(ammonia, T_in, P, ratio, eos):
    system = ammonia.with_model(eos=eos)
    feed = {"N2": 1.0, "H2": ratio, "NH3": 0.05, "Ar": 0.1}
    out = system.adiabatic_equilibrium(feed, T_in=T_in, P=P)
    _closed_and_on_curve(system, feed, out, P)
    assert out.temperature_rise > 0.0
    assert hipeq.reactor_duty(system, feed, T_in, P).heat_removed > 0.0


@settings(max_examples=6)
@given(T_in=st.floats(480.0, 540.0), P=st.floats(50e5, 100e5), co2=st.one_of(st.just(0.0), st.floats(1e-3, 0.08)))
def test_methanol_exothermic(methanol, T_in, P, co2):
    feed = {"CO": 0.15, "H2": 0.70, "CO2": co2, "CH4": 0.1}
    out = methanol.adiabatic_equilibrium(feed, T_in=T_in, P=P)
    _closed_and_on_curve(methanol, feed, out, P)
    assert out.temperature_rise > 0.0
    assert hipeq.reactor_duty(methanol, feed, T_in, P).heat_removed > 0.0


@settings(max_examples=6)
@given(T_in=st.floats(850.0, 1100.0), P=st.floats(5e5, 40e5), steam=st.floats(2.0, 4.0))
def test_steam_reforming_endothermic(reforming, T_in, P, steam):
    feed = {"CH4": 1.0, "H2O": steam, "H2": 0.05}
    out = reforming.adiabatic_equilibrium(feed, T_in=T_in, P=P)
    _closed_and_on_curve(reforming, feed, out, P)
    assert out.temperature_rise < 0.0
    assert hipeq.reactor_duty(reforming, feed, T_in, P).heat_removed < 0.0
