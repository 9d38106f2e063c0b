"""Energies of answers with a vapour and a liquid (issue 12): each phase carries h_res, s_res, h and s; a two-phase
result's H, S, U are the sums over its phases and h_res, s_res their amount-weighted means; one-phase answers are
unchanged to the bit.

Checked from scratch with the public fugacity model and the data layer: each phase's
h = sum_i x_i H0_i(T) + h_res(T, P, x) and s = sum_i x_i [S0_i(T) - R ln(x_i P/P0)] + s_res(T, P, x), the residual
properties of the model at the phase's own composition and root (h_res = -R T^2 d(g_res/RT)/dT,
s_res = (h_res - g_res)/T; Michelsen & Mollerup 2007, "Thermodynamic Models", 2nd ed., ch. 2), H0_i and S0_i from
the data layer (Kirchhoff's law; Smith, Van Ness & Abbott 2005, sec. 4.3 and 6.3). Identity:
(H - T S)/(R T) equals the solver's G_RT, which it computes from its own g0 table and the phases' ln phi (1e-8,
as for one phase in docs/energy.md). Against thermo's flash: tests/validation/test_flash_vs_thermo.py; energy
balances of condensing vessels: tests/analysis/test_energy.py.

The methanol system is the demo case's (invented scenario), as in tests/solvers/test_vessel_two_phase.py.
"""
from __future__ import annotations

import json
import math

import numpy as np
import pytest

import hipeq
from hipeq.constants import R
from hipeq.data.thermochem import standard_enthalpies, standard_entropies
from hipeq.models import build_model, fugacity_coefficients
from hipeq.models.phases import model_flash

SPECIES = ["CO", "CO2", "H2", "CH3OH", "H2O"]
REACTIONS = ["CO2 + 3 H2 = CH3OH + H2O", "CO2 + H2 = CO + H2O"]
FEED = {"CO2": 1.0, "H2": 3.05, "CO": 0.04}  # mol: the demo case's feed ratio
T = 423.15  # K, 150 degC
ENERGIES = ("H", "S", "U", "h_res", "s_res", "h", "s", "u")


@pytest.fixture(scope="module")
def system():
    return hipeq.ReactionSystem(SPECIES, reactions=REACTIONS, eos="PR")


def independent_phase(names, T, P, phase):
    """(h_res, s_res, h, s) of a phase from the public fugacity_coefficients and the data layer."""
    x = np.asarray(phase.mole_fractions)
    fc = fugacity_coefficients(names, T, P, x, eos="PR")
    assert float(fc.Z) == pytest.approx(phase.Z, rel=1e-12)  # the same root as the phase's
    h_res = float(fc.h_res)
    s_res = (h_res - R * T * float(fc.g_res_RT)) / T
    with np.errstate(divide="ignore", invalid="ignore"):
        mixing = np.sum(np.where(x > 0, x * np.log(np.where(x > 0, x, 1.0) * P / 1e5), 0.0))
    h = float(x @ standard_enthalpies(names, T)) + h_res
    s = float(x @ standard_entropies(names, T)) - R * mixing + s_res
    return h_res, s_res, h, s


def check_energies(system, result):
    """The energies of a converged two-phase result against its phases, recomputed independently."""
    names = list(system.species_names)
    assert result.converged and result.phase_count == 2, result.message
    values = {name: getattr(result, name) for name in ENERGIES}
    assert all(math.isfinite(v) for v in values.values()), values
    n = 0.0
    H = S = V = hn = sn = 0.0
    for phase in result.phases:
        h_res, s_res, h, s = independent_phase(names, result.T, result.P, phase)
        assert phase.h_res == pytest.approx(h_res, rel=1e-12, abs=1e-9)
        assert phase.s_res == pytest.approx(s_res, rel=1e-12, abs=1e-12)
        assert phase.h == pytest.approx(h, rel=1e-12, abs=1e-7)
        assert phase.s == pytest.approx(s, rel=1e-12, abs=1e-10)
        n += phase.amount
        H += phase.amount * h
        S += phase.amount * s
        V += phase.amount * phase.molar_volume
        hn += phase.amount * h_res
        sn += phase.amount * s_res
    assert result.H == pytest.approx(H, rel=1e-12, abs=1e-7)  # the sum over the phases
    assert result.S == pytest.approx(S, rel=1e-12, abs=1e-9)
    assert result.U == pytest.approx(H - result.P * V, rel=1e-12, abs=1e-7)  # U = H - P (V_vapour + V_liquid)
    assert result.h_res == pytest.approx(hn / n, rel=1e-12)  # amount-weighted means
    assert result.s_res == pytest.approx(sn / n, rel=1e-12)
    assert result.h == pytest.approx(result.H / result.n_total, rel=1e-15)
    # H is linear in the amounts: the ideal-gas part of the whole plus n times the mean h_res
    H_ideal = float(np.asarray(result.amounts.array) @ standard_enthalpies(names, result.T))
    assert result.H == pytest.approx(H_ideal + n * result.h_res, rel=1e-12, abs=1e-7)
    # G = H - T S against the solver's own Gibbs energy (tabulated g0, the phases' ln phi)
    assert (result.H - result.T * result.S) / (R * result.T) == pytest.approx(result.G_RT, rel=1e-8)
    # the liquid's residual enthalpy carries the heat of condensation: far below the vapour's
    vapour, liquid = result.phases
    assert liquid.h_res < vapour.h_res - 20e3


def test_vessel_with_a_liquid_has_finite_energies(system):
    """The methanol vessel of tests/solvers/test_vessel_two_phase.py: 4.09 mol in 1 L at 150 degC, two phases."""
    result = system.equilibrium(FEED, T, V=1e-3)
    check_energies(system, result)
    assert sum(p.amount * p.molar_volume for p in result.phases) == pytest.approx(1e-3, rel=1e-9)
    data = json.loads(result.to_json())
    for phase in data["phases"]:
        assert {"h_res", "s_res", "h", "s"} <= set(phase) and all(math.isfinite(phase[k]) for k in ("h", "s"))
        assert phase["units"]["h"].startswith("J/mol") and phase["units"]["s_res"] == "J/(mol K)"
    assert math.isfinite(data["H"]) and math.isfinite(data["U"])
    # the same phases at the pressure found, at fixed pressure: the same energies
    again = system.equilibrium(FEED, T, P=result.P)
    check_energies(system, again)
    assert again.H == pytest.approx(result.H, rel=1e-9)
    assert again.S == pytest.approx(result.S, rel=1e-9)


def test_batches_with_some_states_split(system):
    """Fixed pressure (80 bar, 350-600 K: one state splits) and sealed vessels (0.05-10 L): the two-phase
    states' energies equal those of their solves alone; the one-phase states' are the same bits as with
    phases="one" (whose result has no phase data: the one-phase code path throughout)."""
    temperatures = np.linspace(350.0, 600.0, 26)
    auto = system.equilibrium(FEED, temperatures, P=80e5)
    one = system.equilibrium(FEED, temperatures, P=80e5, phases="one")
    volumes = np.array([1e-2, 1e-3, 3e-3, 2e-4, 5e-5])
    vessels = system.equilibrium(FEED, T, V=volumes)
    vessels_one = system.equilibrium(FEED, T, V=volumes, phases="one")
    for batch, base, alone in ((auto, one, lambda k: system.equilibrium(FEED, float(temperatures[k]), P=80e5)),
                               (vessels, vessels_one, lambda k: system.equilibrium(FEED, T, V=float(volumes[k])))):
        split = np.asarray(batch.phase_count) == 2
        assert np.any(split) and np.any(~split)
        for name in ENERGIES:
            mine, theirs = np.asarray(getattr(batch, name)), np.asarray(getattr(base, name))
            np.testing.assert_array_equal(mine[~split], theirs[~split], err_msg=name)  # to the bit
            assert np.all(np.isfinite(mine[split])), name
        for k in np.flatnonzero(split):
            state = alone(int(k))
            check_energies(system, state)
            for name in ("H", "S", "U"):
                assert float(np.asarray(getattr(batch, name))[k]) == pytest.approx(getattr(state, name), rel=1e-9)
    assert np.isnan(vessels.H[4]) and vessels.status[4] == 5  # no answer, no energy


def test_one_phase_answers_and_their_phase_are_unchanged(system):
    stable = system.equilibrium(FEED, 550.0, P=80e5)
    forced = system.equilibrium(FEED, 550.0, P=80e5, phases="one")
    assert stable.phase_count == 1
    for name in ENERGIES:
        assert getattr(stable, name) == getattr(forced, name), name
    (phase,) = stable.phases
    assert (phase.h_res, phase.s_res, phase.h, phase.s) == (stable.h_res, stable.s_res, stable.h, stable.s)


def test_flash_phases_carry_their_energies():
    """hipeq.flash of the ammonia separator (-5 degC, 200 bar): every phase's energies from scratch; the split's
    H is the sum; the phases of a split have no energies without the species records, but their h_res."""
    names = ["H2", "N2", "NH3"]
    split = hipeq.flash(names, {"H2": 0.6, "N2": 0.2, "NH3": 0.2}, T=268.15, P=200e5)
    assert split.phase_count == 2
    for phase in split.phases:
        h_res, s_res, h, s = independent_phase(names, split.T, split.P, phase)
        assert (phase.h_res, phase.s_res) == pytest.approx((h_res, s_res), rel=1e-12)
        assert (phase.h, phase.s) == pytest.approx((h, s), rel=1e-12)
    assert split.H == pytest.approx(sum(p.amount * p.h for p in split.phases), rel=1e-15)
    data = split.to_dict()
    assert math.isfinite(data["H"]) and data["phases"][1]["units"]["h_res"] == "J/mol"
    bare = model_flash(build_model(names, "PR"), {"H2": 0.6, "N2": 0.2, "NH3": 0.2}, 268.15, 200e5)
    assert all(math.isnan(p.h) and math.isfinite(p.h_res) for p in bare.phases)
    assert [p.h_res for p in bare.phases] == [p.h_res for p in split.phases]
