"""Bubble and dew points that do not exist or are not found: NaN for the value sought, and a message that says why
(issue 12; before, the last trial of the search was returned beside ``converged=False``, e.g. 400 and 749 MPa for
the first and last measured CO2-water liquids below).

Sources: the liquid of the first 323 K row of Bamberger, Sieder & Maurer (2000), J. Supercrit. Fluids 17, 97-110
(x_CO2 = 0.0109 at 4.05 MPa; tests/validation/data/vle_co2_water_bamberger_2000.csv), which PR with the databank
k_ij cannot hold in solution at any pressure (docs/phases.md: the model dissolves a tenth of it); the critical
temperature of ammonia, 405.4 K (the species record, chemicals' critical-point data), above which a liquid of
98 % ammonia has no bubble or dew point.
"""
from __future__ import annotations

import math

import pytest

import hipeq

CO2_WATER = ["CO2", "H2O"]
BAMBERGER_LIQUID = {"CO2": 0.0109, "H2O": 0.9891}  # Bamberger et al. 2000, 323 K, 4.05 MPa
AMMONIA = ["H2", "N2", "NH3"]


def test_a_liquid_without_bubble_point_gives_nan_and_says_why():
    at_T = hipeq.bubble_point(CO2_WATER, BAMBERGER_LIQUID, T=323.0)
    assert not at_T.converged and math.isnan(at_T.P) and at_T.T == 323.0
    assert at_T.message.startswith("no bubble pressure at T = 323 K (pressure NaN)")
    assert "no root in 100 Newton steps on ln P" in at_T.message and "last trial pressure" in at_T.message
    at_P = hipeq.bubble_point(CO2_WATER, BAMBERGER_LIQUID, P=4.05e6)
    assert not at_P.converged and math.isnan(at_P.T) and at_P.P == 4.05e6
    assert "temperature NaN" in at_P.message
    # with E-PPR78's k_ij the model dissolves that much CO2 (docs/phases.md): a bubble pressure near the measured
    found = hipeq.bubble_point(CO2_WATER, BAMBERGER_LIQUID, T=323.0, eos="PR78", kij="e-ppr78")
    assert found.converged and found.P == pytest.approx(4.05e6, rel=0.1)
    assert found.message.startswith("bubble pressure found at T = 323 K")


@pytest.mark.parametrize("kind", ["bubble", "dew"])
def test_above_the_critical_temperature_the_trivial_answer_is_nan(kind):
    assert hipeq.species("NH3").Tc == pytest.approx(405.4, abs=0.2)
    point = getattr(hipeq, f"{kind}_point")(AMMONIA, [0.015, 0.005, 0.98], T=420.0)
    assert not point.converged and math.isnan(point.P)
    assert "trivial solution" in point.message and f"no {kind} point of this mixture" in point.message
    below = getattr(hipeq, f"{kind}_point")(AMMONIA, [0.015, 0.005, 0.98], T=273.15)
    assert below.converged and math.isfinite(below.P) and below.P > 0.0
