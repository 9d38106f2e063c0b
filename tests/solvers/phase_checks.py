"""Invariants of a two-phase reactive answer, checked from scratch with the public fugacity model and the data
layer (no solver internals); shared by the fixed-pressure and the sealed-vessel tests.

- the phases' amounts add up to the answer's amounts, and the element balances close against the feed (1e-10);
- each phase's ln phi is the model's at its own composition (its lower-Gibbs root, 1e-12);
- every species has equal fugacity in both phases (ln x_i + ln phi_i, 1e-9);
- every reaction's condition sum_i nu_i (g0_i + ln(P/P0) + ln x_i + ln phi_i) = 0 holds in both phases (1e-9),
  with g0 from the data layer (hipeq.data.thermochem, Cp integrals; Smith & Missen 1982, ch. 6);
- each phase is itself stable (tangent-plane test, Michelsen 1982): no third phase.
"""
from __future__ import annotations

import numpy as np

from hipeq.constants import R
from hipeq.data.thermochem import standard_gibbs
from hipeq.models import fugacity_coefficients


def assert_two_phase_equilibrium(system, feed, result):
    """Assert the invariants above; returns (vapour, liquid, their FugacityCoefficients at T, P)."""
    names = system.species_names
    assert result.converged and result.phase_count == 2, result.message
    vapour, liquid = result.phases
    assert vapour.name == "vapour" and liquid.name == "liquid" and vapour.molar_volume > liquid.molar_volume
    n = np.array([vapour.amounts[s] + liquid.amounts[s] for s in names])
    np.testing.assert_allclose(n, result.amounts.array, rtol=1e-12, atol=1e-300)
    A = system.element_matrix
    n0 = system.feed_vector(feed)
    assert np.max(np.abs(A @ n - A @ n0) / (A @ n0)) <= 1e-10  # element balances
    T, P = result.T, result.P
    g0 = standard_gibbs(names, T) / (R * T) + np.log(P / 1e5)
    mus, models = [], []
    for phase in (vapour, liquid):
        x = phase.mole_fractions
        fc = fugacity_coefficients(names, T, P, x, eos=system.model.eos)  # the lower-Gibbs root at x
        np.testing.assert_allclose(phase.ln_phis, fc.ln_phis, atol=1e-12)
        models.append(fc)
        with np.errstate(divide="ignore"):
            mus.append(g0 + np.log(x) + fc.ln_phis)
    present = n > 0
    np.testing.assert_allclose(mus[0][present], mus[1][present], atol=1e-9)  # equal fugacities
    for row in system.nu:
        if np.all(present[row != 0]):
            for mu in mus:
                assert abs(float(row[present] @ mu[present])) <= 1e-9  # every reaction's condition
    for phase in (vapour, liquid):  # no third phase
        assert system.model.stability_test(T, P, phase.mole_fractions).stable
    return vapour, liquid, models
