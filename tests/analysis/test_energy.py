"""Energy balances: mixture properties on results, adiabatic equilibrium, duties, curves, lines and staged beds.

Independent checks name their sources: heat capacities from the TRC ideal-gas correlations (chemicals
``TRC_gas_data``, Frenkel et al., TRC Thermodynamic Tables), formation enthalpies from the Active Thermochemical
Tables (ATcT 1.112, via ``chemicals.reaction.Hfg(method="ATCT_G")``), standard entropies from the CRC Handbook of
Chemistry and Physics 2014 (``chemicals.reaction.S0g(method="CRC")``), the monatomic ideal gas Cp = 5/2 R, Cv = 3/2 R
(kinetic theory). Equilibrium is a thermodynamic limit, not a design basis; follow local codes and licensed
practice.
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from chemicals.heat_capacity import TRC_gas_data, TRCCp
from chemicals.reaction import Hfg, S0g
from scipy.integrate import quad
from scipy.optimize import fsolve

import hipeq
from hipeq.errors import InputError

R = 8.314462618  # CODATA 2018
AMMONIA = ["N2", "H2", "NH3", "Ar"]
FEED = {"N2": 0.24, "H2": 0.72, "NH3": 0.02, "Ar": 0.02}  # invented converter feed
CAS = {"N2": "7727-37-9", "H2": "1333-74-0", "NH3": "7664-41-7"}


@pytest.fixture(scope="module")
def ammonia():
    return hipeq.ReactionSystem(AMMONIA)


@pytest.fixture(scope="module")
def reforming():
    return hipeq.ReactionSystem(["CH4", "H2O", "CO", "CO2", "H2"],
                                ["CH4 + H2O = CO + 3 H2", "CO + H2O = CO2 + H2"])


@pytest.fixture(scope="module")
def methanol():
    return hipeq.ReactionSystem(["CO", "H2", "CH3OH", "CO2", "H2O", "CH4"],
                                ["CO + 2 H2 = CH3OH", "CO2 + H2 = CO + H2O"])


# ---------------------------------------------------------------------------------------------------------------
def _trc(name):
    row = TRC_gas_data.loc[CAS[name]]
    return [float(row[f"a{k}"]) for k in range(8)]


def _cp(name, T):
    if name == "Ar":
        return 2.5 * R
    return TRCCp(T, *_trc(name))


def _h(name, T):
    """Hf(298.15) + int Cp dT, by quadrature (independent of hipeq's closed-form integrals)."""
    hf = 0.0 if name == "Ar" else Hfg(CAS[name], method="ATCT_G")
    return hf + quad(lambda t: _cp(name, t), 298.15, T, epsabs=1e-10, epsrel=1e-13)[0]


def _s(name, T):
    return S0g(CAS[name], method="CRC") + quad(lambda t: _cp(name, t) / t, 298.15, T, epsabs=1e-12,
                                               epsrel=1e-13)[0]


def _independent_adiabatic(T_in, P):
    """Ideal-gas adiabatic equilibrium of N2 + 3 H2 = 2 NH3 with argon, solved with scipy from the data above:
    ln K = -(2 g_NH3 - g_N2 - 3 g_H2)/(R T), y_NH3^2 / (y_N2 y_H2^3) (P0/P)^2 = K, sum n_i h_i(T) = H_in."""
    n0 = np.array([FEED[k] for k in AMMONIA])
    nu = np.array([-1.0, -3.0, 2.0, 0.0])
    H_in = sum(n0[i] * _h(k, T_in) for i, k in enumerate(AMMONIA))

    def equations(x):
        xi, T = x
        n = n0 + nu * xi
        y = n / n.sum()
        g = {k: _h(k, T) - T * _s(k, T) for k in ("N2", "H2", "NH3")}
        ln_k = -(2 * g["NH3"] - g["N2"] - 3 * g["H2"]) / (R * T)
        eq = 2 * math.log(y[2]) - math.log(y[0]) - 3 * math.log(y[1]) - 2 * math.log(P / 1e5) - ln_k
        energy = (sum(n[i] * _h(k, T) for i, k in enumerate(AMMONIA)) - H_in) / 1e4
        return [eq, energy]

    xi, T = fsolve(equations, [0.05, T_in + 150.0], xtol=1e-12)
    return T, n0 + nu * xi


def test_ideal_gas_outlet_matches_an_independent_enthalpy_balance(ammonia):
    ideal = ammonia.with_model(eos="ideal")
    out = ideal.adiabatic_equilibrium(FEED, T_in=673.15, P=250e5)
    T_ref, n_ref = _independent_adiabatic(673.15, 250e5)
    assert out.T == pytest.approx(T_ref, abs=1e-7)  # measured: 8e-12 K
    assert np.asarray(out.amounts.array) == pytest.approx(n_ref, abs=1e-7)


def test_enthalpy_is_formation_plus_sensible_heat(ammonia):
    """H of the ideal gas from hipeq equals sum n_i [Hf_i + int Cp_i dT] of the independent data; S likewise with
    the ideal mixing term; the elements at 298.15 K carry H = 0."""
    ideal = ammonia.with_model(eos="ideal")
    n = np.array([0.3, 0.5, 0.2, 0.0])
    props = ideal.mixture_properties(n, 750.0, P=50e5)
    H_ref = sum(n[i] * _h(k, 750.0) for i, k in enumerate(AMMONIA[:3]))
    y = n[:3] / n.sum()
    S_ref = sum(n[i] * (_s(k, 750.0) - R * math.log(y[i] * 50.0)) for i, k in enumerate(AMMONIA[:3]))
    assert props.H == pytest.approx(H_ref, rel=1e-10)
    assert props.S == pytest.approx(S_ref, rel=1e-6)  # S0 data: hipeq and CRC agree to the digits given
    assert ideal.mixture_properties({"N2": 1.0, "H2": 3.0}, 298.15, P=1e5).H == pytest.approx(0.0, abs=1e-9)


def test_real_gas_difference_is_reported_and_split(ammonia):
    effect = hipeq.real_gas_effect(ammonia, FEED, 673.15, 250e5, model="PR")
    assert effect.difference == pytest.approx(effect.from_conversion + effect.from_residual_enthalpy, abs=1e-9)
    # at 250 bar the fugacity coefficients favour ammonia (K_phi < 1): more conversion, more heat, hotter outlet
    assert effect.conversion_real > effect.conversion_ideal
    assert effect.from_conversion > 0.0 and effect.difference > 0.0
    assert "hotter" in effect.explanation or "cooler" in effect.explanation


# ---------------------------------------------------------------------------------------------------------------
def test_properties_on_results_are_consistent(ammonia):
    r = ammonia.equilibrium(FEED, T=700.0, P=300e5)
    props = ammonia.mixture_properties(r.amounts.array, 700.0, P=300e5)
    assert r.H == pytest.approx(props.H, rel=1e-12)
    assert r.S == pytest.approx(props.S, rel=1e-12)
    assert r.U == pytest.approx(r.H - r.P * r.V, rel=1e-12)
    assert r.h == pytest.approx(r.H / r.n_total)
    assert (r.H - r.T * r.S) / (R * r.T) == pytest.approx(r.G_RT, rel=1e-8)  # G_RT from the solver's g0 table
    assert r.H - props.H_ideal == pytest.approx(r.n_total * r.h_res, rel=1e-12)
    d = r.to_dict()
    assert {"H", "S", "U", "h", "s", "u"} <= set(d) and d["units"]["H"].startswith("J")
    batch = ammonia.equilibrium(FEED, T=np.array([650.0, 700.0]), P=300e5)
    assert batch.H[1] == pytest.approx(r.H, rel=1e-9)


def test_properties_at_a_given_volume(ammonia):
    at_p = ammonia.mixture_properties(FEED, 700.0, P=300e5)
    at_v = ammonia.mixture_properties(FEED, 700.0, V=at_p.V)
    assert at_v.P == pytest.approx(300e5, rel=1e-10)
    assert at_v.U == pytest.approx(at_p.U, rel=1e-10)
    with pytest.raises(InputError, match="V"):
        ammonia.mixture_properties(FEED, 700.0, V=1e-9)  # below the co-volume


def test_vessel_heat_of_an_inert_monatomic_gas(ammonia):
    """Warming 2 mol of argon in a fixed volume takes n Cv dT, Cv = 3/2 R (ideal monatomic gas)."""
    ideal = ammonia.with_model(eos="ideal")
    duty = hipeq.vessel_heat(ideal, {"Ar": 2.0}, 0.01, 500.0, 700.0, initial="feed")
    assert duty.heat_added == pytest.approx(2.0 * 1.5 * R * 200.0, rel=1e-12)
    assert duty.basis.startswith("internal energy")


def test_sealed_vessel_reaction_gives_off_heat(ammonia):
    duty = hipeq.vessel_heat(ammonia, FEED, 1e-4, 700.0)
    assert duty.heat_removed > 0.0
    assert duty.outlet.converged


def test_heat_of_condensing_steam_in_a_vessel_against_iapws95():
    """1 mol of water (with 1e-6 mol N2, so that the vessel search has a second species; docs/phases.md) in 10 L,
    cooled from 250 degC (superheated vapour, 4.3 bar) to 100 degC, where two thirds of it condense:
    heat_removed = U(250 degC) - U(100 degC) against IAPWS-95 (Wagner & Pruss 2002, J. Phys. Chem. Ref. Data 31,
    387, through CoolProp's "Water": U at the same T and density, two-phase at 100 degC). PR's water is not
    IAPWS-95: it condenses 0.687 mol (IAPWS-95: 0.668 mol) with a residual enthalpy of the liquid of -42.1 kJ/mol
    (the latent heat at 100 degC is 40.65 kJ/mol, from the same equation); the heat removed is 5.5 % above the
    reference, bound 7 %."""
    from CoolProp.CoolProp import PropsSI

    steam = hipeq.ReactionSystem(["H2O", "N2"], reactions=[], eos="PR")
    feed, V, T_hot, T_cold = {"H2O": 1.0, "N2": 1e-6}, 10e-3, 523.15, 373.15
    duty = hipeq.vessel_heat(steam, feed, V, T_hot, T_cold, initial="equilibrium")
    assert duty.outlet.phase_count == 2 and duty.outlet.converged
    assert math.isfinite(duty.heat_removed) and duty.heat_removed > 0.0
    u_hot, u_cold = (PropsSI("Umolar", "T", t, "Dmolar", 1.0 / V, "Water") for t in (T_hot, T_cold))
    assert PropsSI("Q", "T", T_cold, "Dmolar", 1.0 / V, "Water") == pytest.approx(0.33, abs=0.01)  # two-phase
    assert duty.heat_removed == pytest.approx(u_hot - u_cold, rel=0.07)
    vapour, liquid = duty.outlet.phases
    assert liquid.amount == pytest.approx(0.668, rel=0.05)  # IAPWS-95 (above): 1 - 0.332 mol condensed


def test_duties_with_a_liquid_in_the_outlet():
    """The demo case's methanol system (invented scenario; tests/solvers/test_vessel_two_phase.py): a 1 L vessel
    cooled from 250 degC (one phase) to 150 degC, where methanol and water condense, and the flow reactor at
    150 degC and the pressure that vessel reaches: finite duties, heat removed (exothermic, and condensing)."""
    methanol = hipeq.ReactionSystem(["CO", "CO2", "H2", "CH3OH", "H2O"],
                                    reactions=["CO2 + 3 H2 = CH3OH + H2O", "CO2 + H2 = CO + H2O"], eos="PR")
    feed = {"CO2": 1.0, "H2": 3.05, "CO": 0.04}
    cooled = hipeq.vessel_heat(methanol, feed, 1e-3, 523.15, 423.15, initial="equilibrium")
    assert cooled.outlet.phase_count == 2
    assert math.isfinite(cooled.heat_removed) and cooled.heat_removed > 0.0
    from_feed = hipeq.vessel_heat(methanol, feed, 1e-3, 523.15, 423.15)
    at_hot = hipeq.vessel_heat(methanol, feed, 1e-3, 523.15)  # the one-phase equilibrium at 250 degC
    assert from_feed.heat_removed == pytest.approx(at_hot.heat_removed + cooled.heat_removed, rel=1e-12)
    flow = hipeq.reactor_duty(methanol, feed, 423.15, cooled.outlet.P)
    assert flow.outlet.phase_count == 2 and math.isfinite(flow.heat_removed) and flow.heat_removed > 0.0


def test_adiabatic_outlet_with_a_liquid():
    """Low-temperature shift with much steam (invented feed) at 30 bar: the outlet at 477 K holds a water-rich
    liquid; the enthalpy balance H_out = H_in closes over both phases."""
    shift = hipeq.ReactionSystem(["CO", "H2O", "CO2", "H2"], ["CO + H2O = CO2 + H2"], eos="PR")
    out = shift.adiabatic_equilibrium({"CO": 0.2, "H2O": 3.0, "H2": 1.0, "CO2": 0.5}, T_in=430.0, P=30e5)
    assert out.converged and out.phase_count == 2 and out.temperature_rise > 0.0
    assert abs(out.energy_residual) <= 1e-10 and abs(out.H - out.H_in) <= 1e-9 * abs(out.H_in)


# ---------------------------------------------------------------------------------------------------------------
def test_enthalpy_in_equals_enthalpy_out(ammonia):
    for eos in ("ideal", "PR", "SRK"):
        out = ammonia.with_model(eos=eos).adiabatic_equilibrium(FEED, T_in="400 degC", P="250 bar")
        assert out.converged and out.temperature_rise > 100.0
        assert abs(out.H - out.H_in) <= 1e-8 * abs(out.H_in)
        assert abs(out.energy_residual) <= 1e-10


def test_outlet_lies_on_the_equilibrium_curve(ammonia):
    out = ammonia.adiabatic_equilibrium(FEED, T_in=673.15, P=250e5)
    again = ammonia.equilibrium(FEED, T=out.T, P=250e5)
    assert np.asarray(again.amounts.array) == pytest.approx(np.asarray(out.amounts.array), rel=1e-9, abs=1e-12)
    curve = hipeq.equilibrium_curve(ammonia, FEED, 250e5, np.linspace(780.0, 900.0, 41))
    x_out = (FEED["N2"] - out.amounts["N2"]) / FEED["N2"]
    assert curve.reactant == "N2" and curve.key == "NH3"
    assert float(curve.conversion_at(out.T)) == pytest.approx(x_out, abs=1e-6)


def test_line_crossing_equals_adiabatic_equilibrium(ammonia):
    """With one reaction the line is the only path: its crossing with the curve, found by brentq on the line,
    is an independent construction of the adiabatic outlet."""
    line = hipeq.adiabatic_line(ammonia, FEED, 673.15, 250e5, extend=1.4, points=15)
    assert line.T[0] == pytest.approx(673.15, abs=1e-8)
    assert line.conversion[0] == 0.0
    T, X = hipeq.line_crossing(line)
    assert T == pytest.approx(line.outlet.T, abs=1e-6)
    assert X == pytest.approx((FEED["N2"] - line.outlet.amounts["N2"]) / FEED["N2"], abs=1e-9)
    # the line is straight in conversion-temperature for a nearly constant heat capacity: monotone here
    assert np.all(np.diff(line.T) > 0.0)


def test_batch_matches_scalar(ammonia):
    T_in = np.array([623.15, 673.15, 723.15])
    batch = ammonia.adiabatic_equilibrium(FEED, T_in=T_in, P=250e5)
    assert batch.shape == (3,) and np.all(batch.converged)
    for k, t in enumerate(T_in):
        one = ammonia.adiabatic_equilibrium(FEED, T_in=float(t), P=250e5)
        assert batch.T[k] == pytest.approx(one.T, abs=1e-7)
    assert np.all(np.abs(batch.energy_residual) <= 1e-10)
    assert np.all(batch.temperature_rise > 0.0)


def test_duty_signs(ammonia, methanol, reforming):
    """Heat removed is positive for the exothermic syntheses, negative for steam reforming (endothermic)."""
    assert hipeq.reactor_duty(ammonia, FEED, 700.0, 250e5).heat_removed > 0.0
    meoh_feed = {"CO": 0.15, "H2": 0.70, "CO2": 0.05, "CH4": 0.10}
    assert hipeq.reactor_duty(methanol, meoh_feed, 520.0, 80e5).heat_removed > 0.0
    steam_feed = {"CH4": 1.0, "H2O": 3.0, "H2": 0.1}
    duty = hipeq.reactor_duty(reforming, steam_feed, 1000.0, 25e5)
    assert duty.heat_removed < 0.0 and duty.heat_added > 0.0
    out = reforming.adiabatic_equilibrium(steam_feed, T_in=950.0, P=25e5)
    assert out.temperature_rise < 0.0 and abs(out.energy_residual) <= 1e-10
    assert methanol.adiabatic_equilibrium(meoh_feed, T_in=500.0, P=80e5).temperature_rise > 0.0


def test_bad_input_gets_clear_errors(ammonia, reforming):
    with pytest.raises(InputError, match="T_in.*50-3000 K"):
        ammonia.adiabatic_equilibrium(FEED, T_in=3500.0, P=250e5)
    with pytest.raises(InputError, match="T_bounds: no outlet temperature in 673.15-700 K"):
        ammonia.adiabatic_equilibrium(FEED, T_in=673.15, P=250e5, T_bounds=(673.15, 700.0))
    with pytest.raises(InputError, match="T_bounds"):
        ammonia.adiabatic_equilibrium(FEED, T_in=673.15, P=250e5, T_bounds=(700.0, 600.0))
    with pytest.raises(InputError, match="T_bounds.*contain T_in"):
        ammonia.adiabatic_equilibrium(FEED, T_in=673.15, P=250e5, T_bounds=(700.0, 900.0))
    with pytest.raises(InputError, match="T"):
        ammonia.mixture_properties(FEED, 3500.0, P=1e5)
    with pytest.raises(InputError, match="inlet_temperatures"):
        hipeq.staged_beds(ammonia, FEED, 250e5, [673.15, 900.0])
    with pytest.raises(InputError, match="quench_temperature"):
        hipeq.staged_beds(ammonia, FEED, 250e5, [673.15, 683.15], cooling="quench")


def test_inert_feed_has_no_temperature_change(ammonia):
    out = ammonia.adiabatic_equilibrium({"Ar": 1.0, "N2": 1.0}, T_in=600.0, P=100e5)
    assert out.T == pytest.approx(600.0, abs=1e-9)


# ---------------------------------------------------------------------------------------------------------------
def test_staged_beds_with_coolers(ammonia, tmp_path):
    train = hipeq.staged_beds(ammonia, FEED, 250e5, [673.15, 683.15, 683.15])
    beds = train.beds
    assert [b.number for b in beds] == [1, 2, 3]
    for first, second in zip(beds, beds[1:]):
        assert second.conversion_in == pytest.approx(first.conversion_out, abs=1e-12)  # coolers keep composition
        assert first.heat_removed_after > 0.0
        assert second.conversion_out > first.conversion_out
    assert beds[-1].heat_removed_after == 0.0
    for bed in beds:
        assert abs(bed.outlet.energy_residual) <= 1e-10
        assert float(train.curve.conversion_at(bed.T_out)) == pytest.approx(bed.conversion_out, abs=1e-5)
    # the cooler's heat is the enthalpy drop of the gas at fixed composition
    gas = beds[0].outlet.amounts.array
    H_cold = ammonia.mixture_properties(gas, 683.15, P=250e5).H
    assert beds[0].heat_removed_after == pytest.approx(beds[0].outlet.H - H_cold, rel=1e-12)
    rows = train.table()
    assert rows[0]["bed"] == 1 and "T_out [K]" in rows[0]
    assert "design basis" in train.to_text()
    fig = train.figure(str(tmp_path / "beds.png"))
    assert (tmp_path / "beds.png").stat().st_size > 10_000
    ax = fig.axes[0]
    assert ax.get_xlabel() == "Temperature [K]" and ax.get_ylabel() == "Conversion of N2 [%]"
    labels = {t.get_text() for t in ax.texts}
    assert {"Bed 1", "Bed 2", "Bed 3"} <= labels


def test_staged_beds_with_quench(ammonia):
    train = hipeq.staged_beds(ammonia, FEED, 250e5, [673.15, 683.15], cooling="quench", quench_temperature=450.0)
    first, second = train.beds
    assert second.quench_added > 0.0 and first.heat_removed_after == 0.0
    assert second.conversion_in < first.conversion_out  # fresh gas dilutes the converted gas
    # adiabatic mixing: the hot outlet plus the cold quench carry the enthalpy of the mixed inlet of bed 2
    y = np.array([FEED[k] for k in AMMONIA]) / sum(FEED.values())
    q = second.quench_added
    H_q = ammonia.mixture_properties(y * q, 450.0, P=250e5).H
    mix = np.asarray(first.outlet.amounts.array) + q * y
    assert ammonia.mixture_properties(mix, 683.15, P=250e5).H == pytest.approx(first.outlet.H + H_q, rel=1e-10)
