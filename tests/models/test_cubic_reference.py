"""The compiled cubic kernels against the slow NumPy reference (tests/models/reference_cubic.py), which is written
from the textbook closed forms (Peng & Robinson 1976; Soave 1972; Gunn, Chueh & Prausnitz 1966) and shares no
code with hipeq.

Tolerance 1e-9 in ln phi and g_res/RT, 1e-9 relative in Z: the kernel polishes its roots by Newton steps to
rounding, while ``numpy.roots`` (companion-matrix eigenvalues) is accurate to about 1e-13 relative in Z, an error
that ln(Z - B) magnifies by 1/(Z - B) <= ~100 for the liquid-like roots sampled here.
"""
from __future__ import annotations

import numpy as np
import pytest

from hipeq.models import _kernels as K
from hipeq.models import build_model
from reference_cubic import cubic_state  # tests/models is on sys.path (pytest rootdir insertion)

SPECIES = ["H2", "N2", "NH3", "CH4", "Ar", "CO2", "CO", "H2O", "CH3OH", "He"]
ROOT_KIND = {K.ROOT_SINGLE: "single", K.ROOT_GAS: "gas", K.ROOT_LIQUID: "liquid"}


def _states(seed: int, count: int):
    rng = np.random.default_rng(seed)
    for _ in range(count):
        names = list(rng.choice(SPECIES, size=rng.integers(1, 6), replace=False))
        y = rng.dirichlet(np.ones(len(names)) * 0.7)
        yield names, float(rng.uniform(250.0, 1500.0)), float(10 ** rng.uniform(4.0, 8.0)), y
    for _ in range(count // 5):  # condensable-rich states below their critical temperatures: three-root region
        names = list(rng.choice(["H2O", "CH3OH", "NH3", "CO2"], size=2, replace=False))
        y = np.array([1.0, 0.0]) + rng.uniform(-0.1, 0.0) * np.array([1.0, -1.0])
        yield names, float(rng.uniform(250.0, 450.0)), float(10 ** rng.uniform(4.0, 8.0)), y


def _kernel(model, T, P, y):
    nc = len(y)
    aij, daij, bi, dbi = np.empty((nc, nc)), np.empty((nc, nc)), np.empty(nc), np.empty(nc)
    ln_phi, dT = np.empty(nc), np.empty(nc)
    K.tdep_into(model.code, T, model.comp, model.consts, model.kmat, aij, bi, daij, dbi)
    z, root, g, h = K.residual_dT_tp(model.code, T, P, y, aij, bi, daij, dbi, model.consts, ln_phi, dT)
    return ln_phi, z, root, g, h


@pytest.mark.parametrize("eos", ["SRK", "PR", "PR78"])
@pytest.mark.parametrize("quantum", [False, True])
def test_kernel_matches_numpy_reference(eos, quantum):
    kinds = set()
    for names, T, P, y in _states(seed=10 * ["SRK", "PR", "PR78"].index(eos) + quantum, count=150):
        model = build_model(names, eos, quantum_hydrogen=quantum)
        ln_phi, z, root, g, h = _kernel(model, T, P, y)
        ref = cubic_state(T, P, y, model.comp[:, K.TC], model.comp[:, K.PC], model.comp[:, K.M_ALPHA], model.kmat,
                          *model.consts, qmass=model.comp[:, K.QMASS])
        where = f"{eos} quantum={quantum} {names} T={T:.1f} P={P:.4g} y={np.round(y, 4)}"
        assert ROOT_KIND[root] == ref["kind"], where
        np.testing.assert_allclose(z, ref["Z"], rtol=1e-9, err_msg=where)
        np.testing.assert_allclose(ln_phi, ref["ln_phi"], rtol=0, atol=1e-9, err_msg=where)
        assert g == pytest.approx(ref["g_res_RT"], abs=1e-9), where
        if not model.quantum_species:  # the reference's h_res holds for temperature-independent b only
            assert h == pytest.approx(ref["h_res_RT"], abs=1e-8), where
        kinds.add(ref["kind"])
    assert kinds == {"single", "gas", "liquid"}  # every branch of the root choice is exercised


def test_reference_detects_a_wrong_kernel_constant():
    """The comparison can fail: perturbing Omega_b by 1e-6 relative shows up far above the 1e-9 tolerance."""
    model = build_model(["CO2", "H2"], "PR")
    y = np.array([0.5, 0.5])
    consts = model.consts.copy()
    consts[K.OMEGA_B] *= 1.0 + 1e-6
    ref = cubic_state(400.0, 2e7, y, model.comp[:, K.TC], model.comp[:, K.PC], model.comp[:, K.M_ALPHA],
                      model.kmat, *consts)
    ln_phi = _kernel(model, 400.0, 2e7, y)[0]
    assert np.max(np.abs(ln_phi - ref["ln_phi"])) > 1e-8
