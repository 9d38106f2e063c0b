"""Cross-implementation check: hipeq's cubics against thermo's ``PRMIX``, ``PR78MIX`` and ``SRKMIX`` (thermo 0.6,
C. Bell, https://github.com/CalebBell/thermo) with the same constants and k_ij (tests/validation/thermo_cases.py).

Same equations and constants, so the results must agree to rounding: 1e-9 in ln phi_i and in T d ln phi_i/dT,
1e-9 relative in Z, 1e-6 J/mol in h_res, 1e-9 in n d ln phi_i/d n_j.
"""
from __future__ import annotations

import numpy as np
import pytest
from thermo_cases import SETS, THERMO, random_states, thermo_state  # tests/validation is on sys.path

from hipeq.models import _kernels as K
from hipeq.models import build_model, fugacity_coefficients


@pytest.mark.parametrize("eos", list(THERMO))
@pytest.mark.parametrize("set_name", list(SETS))
def test_ln_phi_Z_h_res_and_dT_match_thermo(eos, set_name):
    names = SETS[set_name]
    model = build_model(names, eos)
    T, P, Y = random_states(eos, set_name)
    ours = fugacity_coefficients(names, T, P, Y, eos)
    phases = set()
    for k in range(len(T)):
        state, phase = thermo_state(eos, model, T[k], P[k], Y[k])
        phases.add(phase)
        where = f"{eos} {names} T={T[k]:.2f} K P={P[k]:.5g} Pa y={np.round(Y[k], 4)} thermo root {phase!r}"
        np.testing.assert_allclose(ours.ln_phis[k], getattr(state, f"lnphis_{phase}"), rtol=0, atol=1e-9,
                                   err_msg=where)
        assert ours.Z[k] == pytest.approx(getattr(state, f"Z_{phase}"), rel=1e-9), where
        assert ours.h_res[k] == pytest.approx(getattr(state, f"H_dep_{phase}"), abs=1e-6), where
        np.testing.assert_allclose(ours.dln_phis_dT[k] * T[k], np.asarray(state.dlnphis_dT(phase)) * T[k],
                                   rtol=0, atol=1e-9, err_msg=where)
    assert phases == {"g", "l"}  # both of thermo's labels occur, so the root bookkeeping is exercised


@pytest.mark.parametrize("eos", ["PR", "SRK"])
def test_composition_derivatives_match_thermo(eos):
    """jac[i, j] = n d ln phi_i / d n_j of the kernel against thermo's dlnphis_dns (at n = 1 mol)."""
    names = SETS["ammonia loop"]
    model = build_model(names, eos)
    nc = len(names)
    T, P, Y = random_states(eos, "ammonia loop")
    for k in range(30):
        aij, daij, bi, dbi = np.empty((nc, nc)), np.empty((nc, nc)), np.empty(nc), np.empty(nc)
        K.tdep_into(model.code, T[k], model.comp, model.consts, model.kmat, aij, bi, daij, dbi)
        out, jac = np.empty(nc), np.empty((nc, nc))
        K.ln_phi_dn_tp(model.code, T[k], P[k], Y[k], aij, bi, model.consts, out, jac, np.empty((2, nc)))
        state, phase = thermo_state(eos, model, T[k], P[k], Y[k])
        np.testing.assert_allclose(jac, np.asarray(state.dlnphis_dns(getattr(state, f"Z_{phase}"))), rtol=0,
                                   atol=1e-9, err_msg=f"{eos} T={T[k]:.1f} P={P[k]:.4g} y={np.round(Y[k], 4)}")
