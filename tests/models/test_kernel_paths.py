"""The solver's fast kernel paths give the same numbers as the general kernels they stand in for.

- ``tparams_into`` (a_ij from sqrt(a_i) products, no temperature derivatives) against ``tdep_into``;
- ``ln_phi_reduced_tp`` (M = W^T J W formed without the nc x nc matrix for the cubic) and ``ln_phi_hinted_tp``
  (the cubic root by Newton's method from a given start) against ``ln_phi_dn_tp`` (M reduced by hand); J itself is checked against thermo's ``dlnphis_dns`` in tests/validation/test_eos_vs_thermo.py
  and by finite differences in tests/properties/test_eos_identities.py;
- ``cubic_z`` (closed form with the small roots from the deflated quadratic, early-stopping polish) against
  ``numpy.roots`` (eigenvalues of the companion matrix, LAPACK) with the lowest-Gibbs-energy rule, and
  ``cubic_z_from`` (Newton's method from a start) against it from starts near every real root.

Every model configuration is covered, including the quantum correction, E-PPR78 k_ij(T) and the Peneloux shift.
"""
from __future__ import annotations

import math

import numpy as np
import pytest

from hipeq._jit import kernel
from hipeq.models import _kernels as K
from hipeq.models import build_model


# Compiled callers of the kernels under test that only compiled code may call (hipeq._jit.inner_kernel).
@kernel
def ln_phi_reduced_tp(code, T, P, y, aij, bi, consts, W, neff, out, M, jac, scratch):
    return K.ln_phi_reduced_tp(code, T, P, y, aij, bi, consts, W, neff, out, M, jac, scratch)


@kernel
def cubic_z(A, B, d1, d2):
    return K.cubic_z(A, B, d1, d2)


@kernel
def cubic_z_from(A, B, d1, d2, z_hint):
    return K.cubic_z_from(A, B, d1, d2, z_hint)


NAMES = ["N2", "H2", "NH3", "CH4", "H2O", "CO2"]
CONFIGS = {
    "ideal": ("ideal", {}),
    "virial, quantum": ("virial", {"quantum_hydrogen": True}),
    "lewis-randall (PR)": ("lewis-randall", {}),
    "SRK": ("SRK", {}),
    "PR": ("PR", {}),
    "PR, quantum": ("PR", {"quantum_hydrogen": True}),
    "PR78 + E-PPR78 + Peneloux": ("PR78", {"kij": "e-ppr78", "volume_translation": "peneloux"}),
}
configs = pytest.mark.parametrize("config", list(CONFIGS))


def _model(config):
    eos, options = CONFIGS[config]
    return build_model(NAMES, eos, **options)


def _buffers(nc):
    return np.empty((nc, nc)), np.empty(nc), np.empty((nc, nc)), np.empty(nc)


@configs
def test_fixed_temperature_parameters_equal_the_general_ones(config):
    model = _model(config)
    nc = len(NAMES)
    for T in (250.0, 300.0, 455.5, 700.0, 1200.0, 2500.0):
        aij, bi, daij, dbi = _buffers(nc)
        K.tdep_into(model.code, T, model.comp, model.consts, model.kmat, aij, bi, daij, dbi)
        fast_a, fast_b, scratch_a, scratch_b = _buffers(nc)
        K.tparams_into(model.code, T, model.comp, model.consts, model.kmat, fast_a, fast_b, scratch_a, scratch_b)
        np.testing.assert_allclose(fast_a, aij, rtol=1e-14, atol=0.0, err_msg=f"a_ij at {T} K")
        np.testing.assert_allclose(fast_b, bi, rtol=1e-14, atol=0.0, err_msg=f"b_i at {T} K")


@configs
def test_reduced_jacobian_equals_the_full_one_reduced(config):
    model = _model(config)
    nc = len(NAMES)
    rng = np.random.default_rng(7)
    for _ in range(40):
        T = rng.uniform(300.0, 1200.0)
        P = 10 ** rng.uniform(5.0, 8.0)
        y = rng.dirichlet(np.ones(nc))
        neff = int(rng.integers(1, 4))
        W = np.zeros((nc, 3))
        W[:, :neff] = rng.integers(-3, 4, size=(nc, neff))
        aij, bi, daij, dbi = _buffers(nc)
        K.tparams_into(model.code, T, model.comp, model.consts, model.kmat, aij, bi, daij, dbi)
        full_phi, jac = np.empty(nc), np.empty((nc, nc))
        z_full, root_full = K.ln_phi_dn_tp(model.code, T, P, y, aij, bi, model.consts, full_phi, jac,
                                          np.empty((2, nc)))
        for hint in (0.0, 0.7 * z_full, 1.3 * z_full):  # the root from its closed form, or from a start
            phi, M = np.empty(nc), np.full((3, 3), np.nan)
            scratch = np.zeros((3, nc))
            scratch[2, 0] = hint
            z, root = ln_phi_reduced_tp(model.code, T, P, y, aij, bi, model.consts, W, neff, phi, M,
                                        np.empty((nc, nc)), scratch)
            assert root == root_full
            assert z == pytest.approx(z_full, rel=1e-14)
            np.testing.assert_allclose(phi, full_phi, rtol=0.0, atol=1e-14)  # rounding only (fast-math order)
            hinted = np.empty(nc)
            scratch[2, 0] = hint
            z_phi, root_phi = K.ln_phi_hinted_tp(model.code, T, P, y, aij, bi, model.consts, hinted, scratch)
            assert root_phi == root_full and z_phi == pytest.approx(z_full, rel=1e-14)
            np.testing.assert_allclose(hinted, full_phi, rtol=0.0, atol=1e-14)
        expected = W[:, :neff].T @ jac @ W[:, :neff]
        scale = 1.0 + np.abs(W[:, :neff]).sum() ** 2 * np.abs(jac).max()
        np.testing.assert_allclose(M[:neff, :neff], expected, rtol=0.0, atol=1e-12 * scale,
                                   err_msg=f"T={T:.1f} P={P:.4g} neff={neff}")


@pytest.mark.parametrize("deltas", [(1.0 + math.sqrt(2.0), 1.0 - math.sqrt(2.0)), (1.0, 0.0)], ids=["PR", "SRK"])
def test_cubic_roots_match_numpy(deltas):
    d1, d2 = deltas
    u, w = d1 + d2, d1 * d2
    rng = np.random.default_rng(11)
    checked = {K.ROOT_SINGLE: 0, K.ROOT_GAS: 0, K.ROOT_LIQUID: 0}
    for _ in range(20000):
        A = 10 ** rng.uniform(-3.0, 1.5)
        B = 0.5 * 10 ** rng.uniform(-4.0, 0.0)
        z, root = cubic_z(A, B, d1, d2)
        c2 = (u - 1.0) * B - 1.0
        c1 = A + w * B * B - u * B - u * B * B
        c0 = -(A * B + w * B * B + w * B ** 3)
        roots = np.roots([1.0, c2, c1, c0])
        real = roots[np.abs(roots.imag) < 1e-9 * np.abs(roots).max()].real
        above = real[real > B * (1.0 + 1e-9)]
        if root == K.ROOT_INVALID:
            assert above.size == 0
            continue
        best = min(above, key=lambda x: K._g_of_root(x, A, B, d1, d2))
        assert abs(z - best) <= 1e-12 * best, (A, B, z, best)
        checked[root] += 1
        # from a start near any real root (or anywhere above B) the hinted solver must find the same root
        for hint in (*(r * f for r in real for f in (0.97, 1.0, 1.03)), B * 1.001, 2.0):
            z_h, root_h = cubic_z_from(A, B, d1, d2, float(hint))
            assert root_h == root and abs(z_h - z) <= 1e-12 * z, (A, B, hint, z_h, z)
    assert all(count > 100 for count in checked.values()), checked
