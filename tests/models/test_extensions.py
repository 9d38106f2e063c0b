"""Volume translation and E-PPR78 k_ij(T): against thermo's implementation and physics identities."""
from __future__ import annotations

import numpy as np
import pytest
from thermo.group_contribution.ppr78 import PPR78_kij

from hipeq import species
from hipeq.errors import InputError
from hipeq.models import _kernels as K
from hipeq.models import build_model, fugacity_coefficients

GASES = ["H2", "N2", "NH3", "CH4", "Ar", "CO2"]


def _tdep(model, T):
    nc = model.nc
    aij, daij, bi, dbi = np.empty((nc, nc)), np.empty((nc, nc)), np.empty(nc), np.empty(nc)
    K.tdep_into(model.code, T, model.comp, model.consts, model.kmat, aij, bi, daij, dbi)
    return aij, bi, daij, dbi


@pytest.mark.parametrize("T", [400.0, 723.15, 1000.0])
def test_eppr78_kij_equals_thermo(T):
    """k_ij(T) of E-PPR78 (Jaubert et al. 2022) against thermo's PPR78_kij(version='extended'), same constants."""
    model = build_model(GASES, "PR78", kij="e-ppr78")
    aij, _, _, _ = _tdep(model, T)
    ai = np.diag(aij)
    ours = 1.0 - aij / np.sqrt(np.outer(ai, ai))
    recs = [species(n) for n in GASES]
    for i in range(len(GASES)):
        for j in range(i + 1, len(GASES)):
            ri, rj = recs[i], recs[j]
            ref = PPR78_kij(T, {GASES[i]: 1}, {GASES[j]: 1}, ri.Tc, ri.Pc, ri.omega, rj.Tc, rj.Pc, rj.omega,
                            version="extended")
            assert ours[i, j] == pytest.approx(ref, abs=1e-10), (GASES[i], GASES[j])


def test_translation_shifts_ln_phi_by_c_P_over_RT():
    """Peneloux et al. (1982): ln phi_i(translated) = ln phi_i(cubic) - c_i P/(R T); Z shifts by -c P/(R T)."""
    y = np.array([0.55, 0.2, 0.15, 0.05, 0.03, 0.02])
    T, P = 700.0, 600e5
    plain = fugacity_coefficients(GASES, T, P, y, eos="PR")
    moved = fugacity_coefficients(GASES, T, P, y, eos="PR", volume_translation="peneloux")
    c = moved.model.consts[K.EXTRA0:K.EXTRA0 + len(GASES)]
    assert np.allclose(moved.ln_phis - plain.ln_phis, -c * P / (K.R * T), rtol=0, atol=1e-13)
    assert moved.Z == pytest.approx(plain.Z - y @ c * P / (K.R * T), abs=1e-13)
    # NH3 (Z_RA 0.2465 < 0.25969) moves up in volume, H2 (0.306) down: the signs of the PR correlation
    assert c[2] > 0 > c[0]


@pytest.mark.parametrize("options", [{"volume_translation": "peneloux"}, {"kij": "e-ppr78"},
                                     {"kij": "e-ppr78", "volume_translation": "peneloux", "quantum_hydrogen": True}])
def test_identities_hold_with_extensions(options):
    """sum y ln phi = g_res/RT; h_res = -R T^2 d(g_res/RT)/dT; analytic d ln phi/dT against central differences."""
    model = build_model(GASES, "PR78", **options)
    y = np.array([0.5, 0.2, 0.1, 0.1, 0.05, 0.05])
    T, P, h = 650.0, 800e5, 1e-3

    def state(TT):
        aij, bi, daij, dbi = _tdep(model, TT)
        out, dT = np.empty(6), np.empty(6)
        z, root, g, hr = K.residual_dT_tp(model.code, TT, P, y, aij, bi, daij, dbi, model.consts, out, dT)
        return out, dT, g, hr

    ln_phi, dT, g, hr = state(T)
    up, down = state(T + h), state(T - h)
    assert y @ ln_phi == pytest.approx(g, abs=1e-13)
    assert np.allclose(dT, (up[0] - down[0]) / (2 * h), rtol=0, atol=1e-8)
    assert hr == pytest.approx(-T * (up[2] - down[2]) / (2 * h), abs=1e-7)


def test_extension_errors_name_the_field():
    with pytest.raises(InputError, match="kij"):
        build_model(GASES, "SRK", kij="e-ppr78")
    with pytest.raises(InputError, match="kij"):
        build_model(GASES, "PR", kij="ppr-99")
    with pytest.raises(InputError, match="volume_translation"):
        build_model(GASES, "ideal", volume_translation="peneloux")
    with pytest.raises(InputError, match="volume_translation"):
        build_model(GASES, "PR", volume_translation="magic")


def test_pairs_outside_eppr78_keep_the_default_and_are_named():
    model = build_model(["H2", "CH3OH", "N2"], "PR", kij="e-ppr78")
    assert any("CH3OH" in note for note in model.notes)
    assert "E-PPR78" in model.kij_sources[("H2", "N2")]
    assert "E-PPR78" not in model.kij_sources[("H2", "CH3OH")]
