"""Standard-state thermochemistry: shapes, identities, integrals, range policy and errors."""
from __future__ import annotations

import warnings

import numpy as np
import pytest
from scipy.integrate import quad

from hipeq.data.heat_capacity import ConstantHeatCapacity, PolynomialHeatCapacity, heat_capacity_from_mapping
from hipeq.data.species import species
from hipeq.data.thermochem import (P_STANDARD, R, equilibrium_constant, ln_equilibrium_constant,
                                   ln_equilibrium_constants, reaction_enthalpy, reaction_entropy, reaction_gibbs,
                                   standard_enthalpies, standard_entropies, standard_gibbs)
from hipeq.errors import InputError, OutOfRangeWarning

NAMES = ["N2", "H2", "NH3", "Ar"]
AMMONIA = "N2 + 3 H2 = 2 NH3"


def test_constants():
    assert P_STANDARD == 1e5 and R == 8.314462618  # 1 bar standard state; CODATA 2018 exact R


@pytest.mark.parametrize("T, shape", [(700.0, (4,)), ([500.0, 600.0, 700.0], (3, 4)),
                                      (np.full((2, 3), 650.0), (2, 3, 4))])
def test_shapes_follow_temperature(T, shape):
    for fn in (standard_enthalpies, standard_entropies, standard_gibbs):
        assert fn(NAMES, T).shape == shape
    assert ln_equilibrium_constants([AMMONIA], NAMES, T).shape == np.shape(T) + (1,)
    assert np.shape(equilibrium_constant(AMMONIA, T)) == np.shape(T)
    assert isinstance(equilibrium_constant(AMMONIA, 700.0), float)


def test_reference_temperature_gives_the_tabulated_values():
    recs = [species(n) for n in NAMES]
    np.testing.assert_allclose(standard_enthalpies(NAMES, 298.15), [r.Hf for r in recs], atol=1e-9)
    np.testing.assert_allclose(standard_entropies(NAMES, 298.15), [r.S0 for r in recs], atol=1e-12)
    np.testing.assert_allclose(standard_gibbs(NAMES, 298.15), [r.Hf - 298.15 * r.S0 for r in recs], atol=1e-8)


def test_analytic_integrals_match_quadrature_of_cp():
    for name in ("NH3", "CH3OH", "N2", "C3H8", "Ar"):
        cp = species(name).cp
        h_num = quad(lambda t: cp.cp(t), 298.15, 1200.0, epsabs=1e-10)[0]
        s_num = quad(lambda t: cp.cp(t) / t, 298.15, 1200.0, epsabs=1e-12)[0]
        assert cp.integral(298.15, 1200.0) == pytest.approx(h_num, rel=1e-9)
        assert cp.integral_over_T(298.15, 1200.0) == pytest.approx(s_num, rel=1e-9)


def test_derivatives_are_cp_and_cp_over_t():
    T, h = 750.0, 1e-3
    cps = np.array([species(n).cp.cp(T) for n in NAMES])
    dH = (standard_enthalpies(NAMES, T + h) - standard_enthalpies(NAMES, T - h)) / (2 * h)
    dS = (standard_entropies(NAMES, T + h) - standard_entropies(NAMES, T - h)) / (2 * h)
    np.testing.assert_allclose(dH, cps, rtol=1e-7)
    np.testing.assert_allclose(dS, cps / T, rtol=1e-7)


def test_gibbs_helmholtz_van_t_hoff_differential_form():
    # d ln K / dT = ΔrH° / (R T^2) (van 't Hoff equation; exact for consistent H and G)
    for rxn in (AMMONIA, "CO + 2 H2 = CH3OH", "CO2 + H2 = CO + H2O"):
        T, h = 600.0, 1e-3
        dlnk = (ln_equilibrium_constant(rxn, T + h) - ln_equilibrium_constant(rxn, T - h)) / (2 * h)
        assert dlnk == pytest.approx(reaction_enthalpy(rxn, T) / (R * T**2), rel=1e-6)
        assert reaction_gibbs(rxn, T) == pytest.approx(reaction_enthalpy(rxn, T) - T * reaction_entropy(rxn, T))


def test_several_reactions_at_once_equal_one_by_one():
    rxns = ["CO + 2 H2 = CH3OH", "CO2 + H2 = CO + H2O"]
    names = ["CO", "CO2", "H2", "H2O", "CH3OH", "Ar"]
    T = np.array([450.0, 520.0, 600.0])
    lnk = ln_equilibrium_constants(rxns, names, T)
    for j, rxn in enumerate(rxns):
        np.testing.assert_allclose(lnk[:, j], ln_equilibrium_constant(rxn, T), rtol=1e-12)
        np.testing.assert_allclose(ln_equilibrium_constants(rxns, names, T, method="van-t-hoff")[:, j],
                                   ln_equilibrium_constant(rxn, T, method="van-t-hoff"), rtol=1e-12)
    with pytest.raises(InputError, match="not in the species list"):
        ln_equilibrium_constants(rxns, ["CO", "H2", "CH3OH"], 500.0)


@pytest.mark.parametrize("T", [0.0, -5.0, float("nan"), float("inf"), "hot", [500.0, -1.0], []])
def test_bad_temperature_names_t(T):
    with pytest.raises(InputError) as err:
        equilibrium_constant(AMMONIA, T)
    assert err.value.field == "T"


def test_temperature_outside_cp_range_raises_or_warns_when_extrapolating():
    with pytest.raises(InputError, match=r"outside the range of the Cp of NH3 \(50-3000 K\)"):
        equilibrium_constant(AMMONIA, 3500.0)
    with pytest.raises(InputError, match="C3H8"):
        standard_gibbs(["C3H8"], 1600.0)  # TRC propane row ends at 1500 K
    with pytest.warns(OutOfRangeWarning):
        k = equilibrium_constant(AMMONIA, 3500.0, extrapolate=True)
    assert np.isfinite(k) and k > 0.0
    with pytest.raises(InputError, match="hard range"):
        equilibrium_constant(AMMONIA, 7000.0, extrapolate=True)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        equilibrium_constant(AMMONIA, 3000.0)  # the range end itself is silent
        # C3H8 (TRC row to 1500 K) is listed but takes part in no reaction, so it does not limit T
        ln_equilibrium_constants(["CO + 2 H2 = CH3OH"], ["CO", "H2", "CH3OH", "C3H8"], 2000.0)


def test_bad_method_and_reaction_input():
    with pytest.raises(InputError) as err:
        equilibrium_constant(AMMONIA, 700.0, method="vant-hoff")
    assert err.value.field == "method"
    with pytest.raises(InputError) as err:
        standard_gibbs("NH3", 700.0)
    assert err.value.field == "species"


def test_heat_capacity_forms():
    const = ConstantHeatCapacity(30.0, 100.0, 2000.0)
    assert const.integral(300.0, 500.0) == pytest.approx(6000.0)
    assert const.integral_over_T(300.0, 600.0) == pytest.approx(30.0 * np.log(2.0))
    poly = PolynomialHeatCapacity((20.0, 0.01), 200.0, 1500.0)  # Cp = 20 + 0.01 T
    assert poly.integral(300.0, 500.0) == pytest.approx(20 * 200 + 0.005 * (500**2 - 300**2))
    assert poly.integral_over_T(300.0, 500.0) == pytest.approx(20 * np.log(500 / 300) + 0.01 * 200)
    with pytest.raises(InputError) as err:
        heat_capacity_from_mapping({"form": "polynomial", "coefficients": [30.0], "T_min": 500.0, "T_max": 400.0})
    assert err.value.field == "cp"
    with pytest.raises(InputError, match="needs key 'coefficients'"):
        heat_capacity_from_mapping({"form": "TRC", "T_min": 50.0, "T_max": 3000.0})


def test_compiled_profiles_match_the_correlation_objects():
    """The compiled core (hipeq.data._kernels) against each record's own Cp integrals, every bundled species."""
    from hipeq.data.species import available_species
    from hipeq.data.thermochem import standard_enthalpies, standard_entropies

    names = list(available_species())
    recs = [species(n) for n in names]
    T = np.array([300.0, 650.0, 1200.0])
    H = standard_enthalpies(names, T)
    S = standard_entropies(names, T)
    for k, rec in enumerate(recs):
        h_ref = rec.Hf + rec.cp.integral(298.15, T)
        s_ref = rec.S0 + rec.cp.integral_over_T(298.15, T)
        np.testing.assert_allclose(H[:, k], h_ref, rtol=0, atol=1e-8 * max(1.0, abs(rec.Hf)))
        np.testing.assert_allclose(S[:, k], s_ref, rtol=1e-13, atol=1e-10)


def test_compiled_polynomial_and_constant_forms():
    """Polynomial override Cp = a0 + a1 T: H and S integrals by hand."""
    from hipeq.data.species import register_species, reset_registry
    from hipeq.data.thermochem import standard_enthalpies, standard_entropies

    try:
        register_species("N2", cp={"form": "polynomial", "coefficients": [28.0, 0.004], "T_min": 200.0,
                                   "T_max": 2000.0}, source="test polynomial")
        T = 800.0
        h = standard_enthalpies(["N2"], T)[0]
        s = standard_entropies(["N2"], T)[0]
        rec = species("N2")
        assert h == pytest.approx(rec.Hf + 28.0 * (T - 298.15) + 0.002 * (T**2 - 298.15**2), rel=1e-12)
        assert s == pytest.approx(rec.S0 + 28.0 * np.log(T / 298.15) + 0.004 * (T - 298.15), rel=1e-12)
    finally:
        reset_registry()


def test_thread_pool_and_single_thread_profiles_agree():
    """Above PARALLEL_MIN_ROWS the profiles run in one range per thread (hipeq._threads), below in one range: the
    same numbers."""
    from hipeq.data.thermochem import PARALLEL_MIN_ROWS, standard_enthalpies, standard_entropies

    names = ["N2", "H2", "NH3", "Ar", "CH4"]
    T = np.linspace(300.0, 1500.0, PARALLEL_MIN_ROWS // len(names) + 7)  # one call on the pool
    chunks = np.array_split(T, 400)  # ~50 temperatures per call: single thread
    assert T.size * len(names) >= PARALLEL_MIN_ROWS > max(c.size for c in chunks) * len(names)
    np.testing.assert_array_equal(standard_enthalpies(names, T),
                                  np.concatenate([standard_enthalpies(names, c) for c in chunks]))
    np.testing.assert_array_equal(standard_entropies(names, T),
                                  np.concatenate([standard_entropies(names, c) for c in chunks]))
