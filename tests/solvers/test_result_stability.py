"""Every equilibrium result carries ``result.stability``: the tangent-plane test of the answer as one phase
(Michelsen 1982, Fluid Phase Equilib. 9, 1-19), and its message cautions when the answer is not stable.

Physical anchors: water's vapour pressure is 4.76 bar at 150 degC (IAPWS-95, Wagner & Pruss 2002, from memory), so
a methanol-loop gas with a water partial pressure near 38 bar at 150 degC and 300 bar must condense; ammonia's
critical temperature is 405.4 K (Poling, Prausnitz & O'Connell 2001, app. A), so converter gas at 400-500 degC
cannot.
"""
from __future__ import annotations

import json

import numpy as np

import hipeq

METHANOL = ["CO", "CO2", "H2", "H2O", "CH3OH", "CH4", "N2"]


def test_scalar_result_reports_an_unstable_answer():
    system = hipeq.ReactionSystem(METHANOL, reactions=["CO + 2 H2 = CH3OH", "CO2 + H2 = CO + H2O"], eos="PR")
    result = system.equilibrium(feed={"CO": 0.05, "CO2": 0.08, "H2": 0.6, "H2O": 0.127, "CH3OH": 0.12,
                                      "CH4": 0.013, "N2": 0.01}, T=423.15, P=300e5, phases="one")
    assert result.converged
    assert not result.stability.stable
    assert result.stability.tpd < 0
    assert "not stable as one phase" in result.message
    assert json.loads(result.to_json())["stability"]["stable"] is False


def test_converter_batch_is_stable_and_agrees_with_scalars():
    system = hipeq.ReactionSystem(["N2", "H2", "NH3", "Ar"], eos="PR")
    feed = {"N2": 1.0, "H2": 3.0, "Ar": 0.05}
    batch = system.equilibrium(feed=feed, T=np.array([673.15, 723.15, 773.15]), P=np.array([100e5, 300e5, 1000e5]))
    assert np.all(batch.stability.stable)
    assert "not stable" not in batch.message(0)
    one = system.equilibrium(feed=feed, T=723.15, P=300e5)
    assert one.stability.stable and one.stability.tpd == 0.0
    assert bool(batch.stability.stable[1]) == one.stability.stable


def test_invalid_batch_states_are_not_tested():
    system = hipeq.ReactionSystem(["N2", "H2", "NH3"], eos="PR")
    batch = system.equilibrium(feed={"N2": 1.0, "H2": 3.0}, T=np.array([723.15, -5.0]), P=300e5)
    assert int(batch.status[1]) == 6
    assert bool(batch.stability.stable[1]) and np.isnan(batch.stability.tpd[1])
    assert not bool(batch.stability.complete[1])
