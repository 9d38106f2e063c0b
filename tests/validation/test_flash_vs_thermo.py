"""The two-phase flash, bubble and dew points against thermo's ``FlashVL`` (thermo 0.6, C. Bell,
https://github.com/CalebBell/thermo) with the same cubic (``PRMIX``), the same constants (our species records'
Tc, Pc, omega) and the same k_ij (tests/validation/thermo_cases.py sets thermo up the same way for ln phi).

Same equations and constants, and both flashes converge to rounding, so the phase compositions and the vapour
fraction must agree closely: 1e-7 absolute in mole fractions and phase fractions. thermo's labels of the two
phases ('gas', 'liquid') do not always follow the volume, so its phases are sorted by Z before comparing.

Energies of two-phase answers (issue 12): thermo's phases give their departure enthalpy and entropy (``H_dep``,
``S_dep``: h - h_ideal gas at the same T, P, composition) and, with ideal-gas heat capacities, their enthalpy and
entropy. thermo's enthalpy has another reference state (its ideal-gas enthalpies carry no formation enthalpy), so
differences are compared: H_two-phase - H_ideal gas at the same T, P and amounts (only the
residual parts: sum_p n_p h_res,p), and H(T2, P) - H(T1, P), S(T2, P) - S(T1, P) of the same feed across a
condensing step, with thermo given the TRC ideal-gas Cp (``HeatCapacityGas(method="TRCIG")``, the TRC correlations
of chemicals, Frenkel et al., "TRC Thermodynamic Tables", which hipeq's records also use).
"""
from __future__ import annotations

import numpy as np
import pytest
from thermo import CEOSGas, CEOSLiquid, ChemicalConstantsPackage, FlashVL, HeatCapacityGas, PRMIX

import hipeq
from hipeq.constants import R
from hipeq.models import _kernels as K
from hipeq.models import build_model
from hipeq.data.thermochem import standard_enthalpies
from hipeq.models.phases import bubble_point, dew_point, flash

AMMONIA = ["H2", "N2", "NH3"]
METHANOL = ["CH3OH", "H2O", "CO2", "H2"]


def thermo_flasher(names, trc_cp=False):
    """thermo's FlashVL with PRMIX and hipeq's constants and k_ij; ``trc_cp``: the TRC ideal-gas Cp of each species
    (for enthalpies and entropies), else a constant placeholder (a T, P flash does not use it)."""
    model = build_model(names, "PR")
    comp = np.asarray(model.comp)
    Tcs, Pcs, omegas = comp[:, K.TC].tolist(), comp[:, K.PC].tolist(), comp[:, K.OMEGA].tolist()
    records = [hipeq.species(n) for n in names]
    constants = ChemicalConstantsPackage(Tcs=Tcs, Pcs=Pcs, omegas=omegas, MWs=[r.molar_mass * 1e3 for r in records],
                                         CASs=[r.cas for r in records])
    # heat capacities do not enter a T, P flash; thermo's phase objects only need one each
    cps = [HeatCapacityGas(CASRN=r.cas, method="TRCIG") if trc_cp else
           HeatCapacityGas(poly_fit=(50.0, 1000.0, [0.0] * 8 + [29.0])) for r in records]
    kw = dict(eos_kwargs=dict(Tcs=Tcs, Pcs=Pcs, omegas=omegas, kijs=np.asarray(model.kmat).tolist()),
              HeatCapacityGases=cps)
    return FlashVL(constants, None, liquid=CEOSLiquid(PRMIX, **kw), gas=CEOSGas(PRMIX, **kw))


def assert_matches_thermo(names, z, T, P):
    ours = flash(names, z, T, P)
    theirs = thermo_flasher(names).flash(T=T, P=P, zs=list(z))
    where = f"{names} z={z} T={T} P={P:g}"
    assert ours.phase_count == theirs.phase_count, where
    assert ours.converged, where
    phases = sorted(zip(theirs.betas, theirs.phases), key=lambda bp: -bp[1].Z())  # the vapour first
    for mine, (beta, phase) in zip(ours.phases, phases):
        np.testing.assert_allclose(mine.mole_fractions, phase.zs, atol=1e-7, err_msg=where)
        assert mine.fraction == pytest.approx(beta, abs=1e-7), where
        assert mine.Z == pytest.approx(phase.Z(), rel=1e-7), where
    if ours.phase_count == 2:
        v, l = ours.phases
        f_v = np.log(v.mole_fractions) + v.ln_phis
        f_l = np.log(l.mole_fractions) + l.ln_phis
        np.testing.assert_allclose(f_v, f_l, atol=1e-10, err_msg=where)  # equal fugacities
        np.testing.assert_allclose(v.fraction * v.mole_fractions + l.fraction * l.mole_fractions, z / np.sum(z),
                                   atol=1e-12)
    return ours


@pytest.mark.parametrize("T_C", [-5.0, 10.0, 30.0])
@pytest.mark.parametrize("P_bar", [150.0, 250.0])
def test_ammonia_separator_matches_thermo(T_C, P_bar):
    out = assert_matches_thermo(AMMONIA, np.array([0.615, 0.205, 0.18]), T_C + 273.15, P_bar * 1e5)
    assert out.phase_count == 2 and out.phases[1].y["NH3"] > 0.9


@pytest.mark.parametrize("T, P, z", [
    (423.15, 300e5, [0.12, 0.13, 0.08, 0.67]),   # the methanol loop at 150 degC
    (313.15, 80e5, [0.05, 0.05, 0.10, 0.80]),    # a cooled loop gas at 40 degC
    (473.15, 100e5, [0.30, 0.40, 0.10, 0.20]),   # condensate-rich at 200 degC
    (523.15, 80e5, [0.05, 0.03, 0.10, 0.82]),    # converter gas: one phase
])
def test_methanol_water_co2_hydrogen_matches_thermo(T, P, z):
    assert_matches_thermo(METHANOL, np.array(z), T, P)


def test_bubble_and_dew_points_bracket_the_two_phase_region():
    x = np.array([0.015, 0.005, 0.98])
    T = 273.15
    bubble = bubble_point(AMMONIA, x, T=T)
    dew = dew_point(AMMONIA, x, T=T)
    assert bubble.converged and dew.converged
    assert dew.P < bubble.P
    assert flash(AMMONIA, x, T, 0.99 * dew.P).phase_count == 1
    assert flash(AMMONIA, x, T, 0.99 * dew.P).vapour_fraction == 1.0
    assert flash(AMMONIA, x, T, 1.01 * bubble.P).phase_count == 1
    assert flash(AMMONIA, x, T, 1.01 * bubble.P).vapour_fraction == 0.0
    near_dew = flash(AMMONIA, x, T, 1.0001 * dew.P)
    near_bubble = flash(AMMONIA, x, T, 0.999 * bubble.P)
    assert near_dew.phase_count == near_bubble.phase_count == 2
    assert near_dew.vapour_fraction > 0.95 and near_bubble.vapour_fraction < 0.01
    # thermo's saturation flashes (vapour fraction 1 and 0 at T) give the same pressures
    flasher = thermo_flasher(AMMONIA)
    assert dew.P == pytest.approx(flasher.flash(T=T, VF=1.0, zs=list(x)).P, rel=1e-6)
    assert bubble.P == pytest.approx(flasher.flash(T=T, VF=0.0, zs=list(x)).P, rel=1e-6)
    # the incipient phases satisfy the equal-fugacity conditions: the flash at that pressure agrees
    assert dew.incipient["NH3"] > 0.999


def test_dew_temperature_at_fixed_pressure():
    y = np.array([0.70, 0.20, 0.10])
    dew = dew_point(AMMONIA, y, P=150e5)
    assert dew.converged
    assert flash(AMMONIA, y, dew.T * 1.01, 150e5).phase_count == 1
    assert flash(AMMONIA, y, dew.T * 0.99, 150e5).phase_count == 2
    assert dew.T == pytest.approx(thermo_flasher(AMMONIA).flash(P=150e5, VF=1.0, zs=list(y)).T, rel=1e-6)


def test_sealed_vessel_with_a_liquid_matches_thermo_at_the_found_pressure():
    """A sealed vessel that no single phase fills (the demo case's methanol system at 150 degC, 1 L; see
    tests/solvers/test_vessel_two_phase.py): thermo's flash of the answer's overall composition at the pressure
    hipeq found gives the same two phases, and their volume sum_p beta_p Z_p n R T / P is the vessel's."""
    names = ["CO", "CO2", "H2", "CH3OH", "H2O"]
    system = hipeq.ReactionSystem(names, reactions=["CO2 + 3 H2 = CH3OH + H2O", "CO2 + H2 = CO + H2O"], eos="PR")
    T, V = 423.15, 1e-3
    result = system.equilibrium({"CO2": 1.0, "H2": 3.05, "CO": 0.04}, T, V=V)
    assert result.converged and result.phase_count == 2, result.message
    ours = assert_matches_thermo(names, result.y.array, T, result.P)
    theirs = thermo_flasher(names).flash(T=T, P=result.P, zs=list(result.y.array))
    volume = sum(b * p.Z() for b, p in zip(theirs.betas, theirs.phases)) * result.n_total * R * T / result.P
    assert volume == pytest.approx(V, rel=1e-7)
    for mine, phase in zip(result.phases, ours.phases):
        np.testing.assert_allclose(mine.mole_fractions, phase.mole_fractions, atol=1e-9)
    # issue 12: the answer's H less the ideal gas of the same amounts is the residual enthalpy of thermo's two
    # phases, sum_p beta_p H_dep,p per mole (thermo 0.6, PRMIX, as above)
    h_dep = sum(b * p.H_dep() for b, p in zip(theirs.betas, theirs.phases))
    H_ideal = float(result.amounts.array @ standard_enthalpies(names, T))
    assert result.H - H_ideal == pytest.approx(result.n_total * h_dep, rel=1e-6)
    assert np.isfinite(result.S) and np.isfinite(result.U)


def flash_energies(flasher, T, P, z):
    """thermo's flash of z at T, P: (phase count, molar H, S, H_dep of the whole (sums over its phases weighted by
    beta), and each phase's (H_dep, S_dep), the vapour (larger Z) first)."""
    out = flasher.flash(T=T, P=P, zs=list(z))

    def total(f):
        return sum(b * getattr(p, f)() for b, p in zip(out.betas, out.phases))

    phases = [(p.H_dep(), p.S_dep()) for p in sorted(out.phases, key=lambda p: -p.Z())]
    return out.phase_count, total("H"), total("S"), total("H_dep"), phases


@pytest.mark.parametrize("names, z, P, T_hot, T_cold", [
    (METHANOL, [0.30, 0.40, 0.10, 0.20], 100e5, 573.15, 423.15),  # condensate-rich methanol mixture
    (AMMONIA, [0.615, 0.205, 0.18], 150e5, 353.15, 268.15),       # ammonia separator gas cooled to -5 degC
])
def test_energies_across_a_condensing_step_match_thermo(names, z, P, T_hot, T_cold):
    # thermo 0.6 (C. Bell) FlashVL with PRMIX, the same constants and k_ij, TRC ideal-gas Cp (module docstring)
    z = np.array(z)
    flasher = thermo_flasher(names, trc_cp=True)
    hot, cold = flash(names, z, T_hot, P), flash(names, z, T_cold, P)
    assert hot.phase_count == 1 and cold.phase_count == 2 and cold.converged
    theirs_hot, theirs_cold = flash_energies(flasher, T_hot, P, z), flash_energies(flasher, T_cold, P, z)
    assert (theirs_hot[0], theirs_cold[0]) == (1, 2)
    # residual part of the two-phase answer: H - H_ideal gas at the same T, P, amounts (1 mol)
    h_ideal = float(z @ standard_enthalpies(names, T_cold))
    assert cold.H - h_ideal == pytest.approx(theirs_cold[3], rel=1e-6)
    for ours, (dep_h, dep_s) in zip(cold.phases, theirs_cold[4]):  # each phase, the vapour first
        assert ours.h_res == pytest.approx(dep_h, rel=1e-6)
        assert ours.s_res == pytest.approx(dep_s, rel=1e-6, abs=1e-6)
    # across the condensing step: the heat given off on cooling and condensing, and the entropy change
    assert cold.H - hot.H == pytest.approx(theirs_cold[1] - theirs_hot[1], rel=1e-6)
    assert cold.S - hot.S == pytest.approx(theirs_cold[2] - theirs_hot[2], rel=1e-6)
    assert cold.H < hot.H
