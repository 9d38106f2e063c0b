"""Property tests of reactions and equilibrium constants (physics identities, any species subset)."""
from __future__ import annotations

import numpy as np
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from hipeq.data.reactions import (Reaction, check_independent, element_matrix, independent_reactions,
                                  stoichiometric_matrix)
from hipeq.data.species import available_species, species
from hipeq.data.thermochem import R, ln_equilibrium_constant, reaction_enthalpy

SETTINGS = settings(max_examples=60, deadline=None)
BUNDLED = list(available_species())
subsets = st.lists(st.sampled_from(BUNDLED), min_size=2, max_size=8, unique=True)
# every bundled Cp correlation covers 100-1500 K (C2H6, C3H8 end at 1500 K, CH3OCH3 starts at 100 K)
temperatures = st.floats(min_value=300.0, max_value=1500.0)


def _derived(names: list[str]) -> list[Reaction]:
    rxns = independent_reactions(names)
    assume(rxns)
    return rxns


@SETTINGS
@given(subsets)
def test_derived_reactions_balance_every_element_and_are_complete(names):
    rxns = independent_reactions(names)
    elements, a = element_matrix(names)
    assert len(rxns) == len(names) - np.linalg.matrix_rank(a)
    if rxns:
        nu = stoichiometric_matrix(rxns, names)
        np.testing.assert_allclose(a @ nu.T, 0.0, atol=1e-12)
        assert check_independent(rxns).all_independent
        for rxn in rxns:
            assert all(float(c).is_integer() for c in rxn.coefficients.values())
            assert Reaction.parse(str(rxn)) == rxn


@SETTINGS
@given(subsets, temperatures, st.data())
def test_k_of_reverse_is_reciprocal(names, T, data):
    rxn = data.draw(st.sampled_from(_derived(names)))
    forward, backward = ln_equilibrium_constant(rxn, T), ln_equilibrium_constant(rxn.reversed(), T)
    assert abs(forward + backward) <= 1e-12 * max(1.0, abs(forward))  # K K_reverse = 1


@SETTINGS
@given(subsets, temperatures, st.data(),
       st.sampled_from([0.5, 1.0, 1.5, 2.0, 3.0, -1.0, -0.5]), st.sampled_from([0.5, 1.0, 2.0, -1.0, -2.0]))
def test_k_of_a_linear_combination_is_the_product_of_powers(names, T, data, a, b):
    rxns = _derived(names)
    first = data.draw(st.sampled_from(rxns))
    second = data.draw(st.sampled_from(rxns))
    combo_coefficients = dict(first.scaled(a).coefficients)
    for k, v in second.scaled(b).coefficients.items():
        combo_coefficients[k] = combo_coefficients.get(k, 0.0) + v
    assume(any(abs(v) > 1e-9 for v in combo_coefficients.values()))
    combo = first.scaled(a) + second.scaled(b)
    expected = a * ln_equilibrium_constant(first, T) + b * ln_equilibrium_constant(second, T)
    assert abs(ln_equilibrium_constant(combo, T) - expected) < 1e-8 * max(1.0, abs(expected))


@SETTINGS
@given(subsets, st.data(), st.floats(min_value=400.0, max_value=1500.0))
def test_van_t_hoff_is_exact_at_298_and_its_error_grows_away(names, data, T_far):
    rxn = data.draw(st.sampled_from(_derived(names)))
    exact_298 = ln_equilibrium_constant(rxn, 298.15)
    assert abs(ln_equilibrium_constant(rxn, 298.15, method="van-t-hoff") - exact_298) < 1e-9 * max(1, abs(exact_298))
    # The error is ∫_298.15^T (ΔrH°(T') - ΔrH°(298.15)) / (R T'^2) dT'; its magnitude grows with T as long as
    # ΔrCp keeps one sign, i.e. while ΔrH°(T) - ΔrH°(298.15) moves monotonically: check it on that stretch.
    grid = np.linspace(298.15, T_far, 40)
    steps = np.sign(np.diff(reaction_enthalpy(rxn, grid)))
    first = steps[0]
    stop = next((k for k, s in enumerate(steps) if s != first), len(steps))
    stretch = grid[: stop + 1]
    error = np.abs(ln_equilibrium_constant(rxn, stretch) - ln_equilibrium_constant(rxn, stretch, method="van-t-hoff"))
    assert np.all(np.diff(error) >= -1e-12 * max(1.0, abs(exact_298)))


def test_van_t_hoff_error_for_ammonia_synthesis_grows_with_temperature():
    # ΔrCp of N2 + 3 H2 = 2 NH3 is negative over 298-1000 K (TRC Cp), so the constant-ΔrH° approximation
    # overestimates |ΔrH°| more and more; its ln K error grows monotonically.
    T = np.array([298.15, 400.0, 600.0, 800.0, 1000.0])
    err = np.abs(ln_equilibrium_constant("N2 + 3 H2 = 2 NH3", T)
                 - ln_equilibrium_constant("N2 + 3 H2 = 2 NH3", T, method="van-t-hoff"))
    assert err[0] < 1e-12 and np.all(np.diff(err) > 0)
    assert err[-1] > 0.1  # not negligible at converter temperatures and beyond


@SETTINGS
@given(subsets, temperatures)
def test_ln_k_is_minus_gibbs_over_rt_for_derived_sets(names, T):
    from hipeq.data.thermochem import ln_equilibrium_constants, standard_gibbs

    rxns = _derived(names)
    lnk = ln_equilibrium_constants(rxns, names, T)
    nu = stoichiometric_matrix(rxns, names)
    G = standard_gibbs(names, T)
    np.testing.assert_allclose(lnk, -(nu @ G) / (R * T), rtol=1e-10, atol=1e-10)
    assert all(species(n).name == n for n in names)
