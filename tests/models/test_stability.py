"""The tangent-plane stability test (Michelsen 1982, Fluid Phase Equilib. 9, 1-19; Michelsen & Mollerup 2007,
"Thermodynamic Models", 2nd ed., ch. 9).

Checks:
- against a slow NumPy reference: tpd(w) on a fine grid of the ternary simplex, from the public
  ``fugacity_coefficients`` (no compiled stability code): no grid point lies below the kernel's minimum, and the
  kernel says unstable exactly when the grid finds tpd < 0 (away from the borderline);
- the kernel's tpd, recomputed from ``fugacity_coefficients`` at the reported trial, agrees;
- at a converged unstable trial the stationarity conditions ln w_i + ln phi_i(w) - d_i = -tpd hold for every i;
- supercritical converter gases (ammonia at 400-500 degC and 100-1000 bar, methanol at 250 degC and 50-100 bar,
  at their own equilibrium compositions) are never flagged; the ammonia loop's chiller and separator states
  (-5 to 30 degC, 150-250 bar) are, with an ammonia-rich liquid-like trial;
- models that mix ideally in composition (ideal gas, Lewis-Randall rule) are always stable; one component too.
"""
from __future__ import annotations

import numpy as np
import pytest

import hipeq
from hipeq.models import build_model, fugacity_coefficients
from hipeq.models.stability import TPD_TOLERANCE, stability_test

AMMONIA = ["H2", "N2", "NH3"]
METHANOL = ["CO", "CO2", "H2", "H2O", "CH3OH", "CH4", "N2"]


def tpd_reference(names, T, P, z, W):
    """tpd(w) = sum_i w_i [ln w_i + ln phi_i(w) - ln z_i - ln phi_i(z)] for the rows of W (slow reference)."""
    feed = fugacity_coefficients(names, T, P, z)
    d = np.log(z) + feed.ln_phis
    trial = fugacity_coefficients(names, T, P, W)
    with np.errstate(divide="ignore", invalid="ignore"):
        terms = np.where(W > 0, W * (np.log(W) + trial.ln_phis - d), 0.0)
    return terms.sum(axis=-1)


def simplex_grid(n: int) -> np.ndarray:
    """Ternary compositions on a grid denser near the vertices (where a condensed phase sits)."""
    s = np.concatenate([np.geomspace(1e-6, 0.02, 40), np.linspace(0.02, 0.98, 120), 1 - np.geomspace(1e-6, 0.02, 40)])
    a, b = np.meshgrid(s, s, indexing="ij")
    keep = a + b < 1.0 - 1e-9
    W = np.stack([a[keep], b[keep], 1.0 - a[keep] - b[keep]], axis=-1)
    return W[: n if n > 0 else None]


@pytest.mark.parametrize("T, P, z", [
    (268.15, 200e5, [0.60, 0.20, 0.20]),  # separator: unstable
    (303.15, 150e5, [0.66, 0.22, 0.12]),  # separator at 30 degC: unstable
    (300.0, 50e5, [0.70, 0.25, 0.05]),    # ammonia below its dew point at this pressure: stable
    (723.15, 300e5, [0.50, 0.17, 0.33]),  # converter gas: stable
    (250.0, 100e5, [0.05, 0.02, 0.93]),   # nearly pure liquid ammonia with a little gas dissolved: stable
])
def test_kernel_agrees_with_a_grid_of_the_simplex(T, P, z):
    z = np.asarray(z)
    test = stability_test(AMMONIA, T, P, z)
    grid = tpd_reference(AMMONIA, T, P, z, simplex_grid(0))
    lowest = float(grid.min())
    assert lowest >= test.tpd - 1e-9, (lowest, test.tpd)  # no grid point below the kernel's minimum
    if lowest < -1e-3:
        assert not test.stable
    if lowest > -1e-12:
        assert test.stable, test
    if not test.stable:
        again = float(tpd_reference(AMMONIA, T, P, z, np.asarray(test.trial)[None, :])[0])
        assert again == pytest.approx(test.tpd, abs=1e-10)


def test_stationarity_at_the_trial():
    z = np.array([0.60, 0.20, 0.20])
    T, P = 268.15, 200e5
    test = stability_test(AMMONIA, T, P, z)
    assert not test.stable and test.complete
    d = np.log(z) + fugacity_coefficients(AMMONIA, T, P, z).ln_phis
    w = np.asarray(test.trial)
    g = np.log(w) + fugacity_coefficients(AMMONIA, T, P, w).ln_phis - d
    np.testing.assert_allclose(g, test.tpd, atol=1e-7)  # ln w_i + ln phi_i(w) - d_i = tpd for every i
    assert test.trial_phase == "liquid-like" and w[2] > 0.99  # the condensing ammonia


@pytest.mark.parametrize("T_C", [-5.0, 10.0, 30.0])
@pytest.mark.parametrize("P_bar", [150.0, 250.0])
def test_separator_states_are_flagged(T_C, P_bar):
    # loop gas leaving the converter (about 15-20 % NH3, 3:1 H2:N2 and inerts left out; common practice)
    test = stability_test(AMMONIA, T_C + 273.15, P_bar * 1e5, [0.615, 0.205, 0.18])
    assert not test.stable, test
    assert test.tpd < -TPD_TOLERANCE
    assert test.trial_phase == "liquid-like"
    assert test.trial_composition["NH3"] > 0.9


def test_converter_gas_is_never_flagged():
    system = hipeq.ReactionSystem(["N2", "H2", "NH3", "Ar", "CH4"], eos="PR")
    T = np.linspace(673.15, 773.15, 5)[:, None]
    P = np.geomspace(100e5, 1000e5, 6)[None, :]
    result = system.equilibrium(feed={"N2": 1.0, "H2": 3.0, "Ar": 0.05, "CH4": 0.05}, T=T, P=P)
    assert np.all(result.converged)
    test = system.model.stability_test(result.T, result.P, result.y.array)
    assert np.all(test.stable), test.tpd[~test.stable]
    methanol = hipeq.ReactionSystem(METHANOL, eos="PR")
    out = methanol.equilibrium(feed={"CO": 1.0, "CO2": 0.3, "H2": 3.0, "CH4": 0.1, "N2": 0.05, "H2O": 0.02},
                               T=523.15, P=np.linspace(50e5, 100e5, 6))
    assert np.all(out.converged)
    assert np.all(methanol.model.stability_test(out.T, out.P, out.y.array).stable)


def test_the_issue_example_is_flagged():
    # methanol-synthesis mixture at 150 degC and 300 bar (the issue's new-user example): water's partial pressure
    # (about 38 bar) is far above its vapour pressure (4.76 bar at 150 degC, IAPWS-95 via NIST Webbook; from memory)
    y = np.array([0.05, 0.08, 0.6, 0.127, 0.12, 0.013, 0.01])
    test = stability_test(METHANOL, 423.15, 300e5, y / y.sum())
    assert not test.stable and test.trial_phase == "liquid-like"
    assert test.trial_composition["H2O"] + test.trial_composition["CH3OH"] > 0.95


@pytest.mark.parametrize("eos", ["ideal", "lewis-randall"])
def test_ideal_mixing_models_are_always_stable(eos):
    test = stability_test(AMMONIA, np.array([250.0, 300.0]), 200e5, [0.6, 0.2, 0.2], eos=eos)
    assert np.all(test.stable) and np.all(test.tpd == 0.0)


def test_one_component_is_stable_and_batches_match_scalars():
    assert stability_test(["NH3"], 300.0, 50e5, [1.0]).stable
    model = build_model(AMMONIA)
    T = np.array([268.15, 300.0, 723.15])
    Y = np.array([[0.6, 0.2, 0.2], [0.7, 0.25, 0.05], [0.5, 0.17, 0.33]])
    batch = model.stability_test(T, 200e5, Y)
    for k in range(3):
        one = model.stability_test(T[k], 200e5, Y[k])
        assert bool(batch.stable[k]) == one.stable
        assert float(batch.tpd[k]) == one.tpd
        np.testing.assert_array_equal(batch.trial[k], one.trial)
    assert "unstable" in repr(model.stability_test(268.15, 200e5, Y[0]))
    assert batch.to_dict()["stable"] == [bool(s) for s in batch.stable]


def test_bad_input_names_the_field():
    with pytest.raises(hipeq.InputError, match="y"):
        stability_test(AMMONIA, 300.0, 1e6, [0.5, 0.5, 0.5])
    with pytest.raises(hipeq.InputError, match="P"):
        stability_test(AMMONIA, 300.0, -1.0, [0.5, 0.25, 0.25])
