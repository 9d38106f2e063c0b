"""The Python face of the equation-of-state layer: model table, build_model contract, result shapes, root labels,
provenance and every bad-input path (errors name the field; never NaN, never a numba traceback)."""
from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

from hipeq.data.species import species
from hipeq.errors import InputError, UnknownSpeciesError
from hipeq.models import CUBICS, MODELS, alpha_slope, build_model, fugacity_coefficients
from hipeq.models import _kernels as K

LOOP = ["H2", "N2", "NH3", "CH4", "Ar"]
Y_LOOP = [0.6, 0.2, 0.1, 0.05, 0.05]


# ------------------------------------------------------------------------------------------ the cubic table
def test_cubic_constants_are_those_of_the_papers_and_thermo():
    # Peng & Robinson 1976: Omega_a, Omega_b as the exact roots thermo uses; delta = 1 +- sqrt(2)
    pr = CUBICS["PR"]
    assert (pr.omega_a, pr.omega_b) == (0.45723552892138218938, 0.077796073903888455972)
    assert (pr.delta1, pr.delta2) == (1.0 + math.sqrt(2.0), 1.0 - math.sqrt(2.0))
    # Soave 1972: Omega_a = 1/(9 (2^(1/3) - 1)) = 0.42748..., Omega_b = (2^(1/3) - 1)/3 = 0.08664...
    srk = CUBICS["SRK"]
    assert srk.omega_a == pytest.approx(0.42748023354034140, rel=1e-15)
    assert srk.omega_b == pytest.approx(0.08664034996495772, rel=1e-15)
    assert (srk.delta1, srk.delta2) == (1.0, 0.0)
    assert CUBICS["PR78"][:4] == pr[:4]


@pytest.mark.parametrize(("eos", "omega", "m"), [
    ("PR", 0.0, 0.37464), ("PR", 0.5, 0.37464 + 1.54226 * 0.5 - 0.26992 * 0.25),  # Peng & Robinson 1976
    ("SRK", 0.2, 0.480 + 1.574 * 0.2 - 0.176 * 0.04),  # Soave 1972
    ("PR78", 0.491, 0.37464 + 1.54226 * 0.491 - 0.26992 * 0.491**2),  # Robinson & Peng 1978: PR up to 0.491
    ("PR78", 0.6, 0.379642 + 1.48503 * 0.6 - 0.164423 * 0.36 + 0.016666 * 0.216),  # ... their cubic above
])
def test_alpha_slope(eos, omega, m):
    assert alpha_slope(CUBICS[eos], omega) == pytest.approx(m, rel=1e-15)


def test_model_names_unknown_and_case():
    assert MODELS == ("ideal", "virial", "lewis-randall", "SRK", "PR", "PR78")
    assert build_model(LOOP, "pr") is build_model(LOOP, "PR")
    with pytest.raises(InputError, match=r"^eos: unknown model 'PR-77'; known: ideal, virial, lewis-randall, SRK"):
        build_model(LOOP, "PR-77")
    with pytest.raises(InputError, match="eos"):
        build_model(LOOP, 3)  # type: ignore[arg-type]


# ------------------------------------------------------------------------------------------ build_model
@pytest.mark.parametrize(("eos", "code"), [("ideal", K.MODEL_IDEAL), ("virial", K.MODEL_VIRIAL),
                                           ("lewis-randall", K.MODEL_LEWIS_RANDALL), ("SRK", K.MODEL_CUBIC),
                                           ("PR", K.MODEL_CUBIC), ("PR78", K.MODEL_CUBIC)])
def test_compiled_model_contract(eos, code):
    model = build_model(LOOP, eos)
    assert model.code == code and model.eos == eos and model.species == tuple(LOOP)
    assert model.comp.shape == (5, K.N_COMP_COLUMNS) and model.comp.dtype == np.float64
    assert model.comp.flags.c_contiguous and model.consts.shape == (4,) and model.kmat.shape == (5, 5)
    for array in (model.comp, model.consts, model.kmat):
        assert not array.flags.writeable
    nh3 = species("NH3")
    assert tuple(model.comp[2, [K.TC, K.PC, K.OMEGA, K.VC, K.ZC]]) == (nh3.Tc, nh3.Pc, nh3.omega, nh3.Vc, nh3.Zc)
    assert np.all(model.comp[:, K.QMASS] == 0.0)
    with pytest.raises(dataclasses.FrozenInstanceError):
        model.eos = "ideal"  # type: ignore[misc]


def test_species_records_and_names_are_interchangeable():
    records = [species(n) for n in LOOP]
    assert build_model(records, "PR") is build_model(LOOP, "PR")
    assert build_model(tuple(LOOP), "PR") is build_model(LOOP, "PR")


def test_quantum_hydrogen_sets_molar_mass_of_quantum_gases_only():
    model = build_model(["H2", "He", "N2"], "PR", quantum_hydrogen=True)
    np.testing.assert_allclose(model.comp[:, K.QMASS], [species("H2").molar_mass * 1e3,
                                                       species("He").molar_mass * 1e3, 0.0])
    assert model.quantum_species == ("H2", "He")
    deuterium = dataclasses.replace(species("H2"), name="D2", cas="7782-39-0", molar_mass=4.028e-3)
    assert build_model([deuterium, "N2"], "SRK", quantum_hydrogen=True).quantum_species == ("D2",)


def test_hydrogen_omega_changes_hydrogen_only():
    plain = build_model(LOOP, "PR")
    zero = build_model(LOOP, "PR", hydrogen_omega=0.0)
    assert zero.comp[0, K.OMEGA] == 0.0 and zero.comp[0, K.M_ALPHA] == 0.37464
    np.testing.assert_array_equal(zero.comp[1:], plain.comp[1:])
    assert any("hydrogen_omega" in note for note in zero.notes)


def test_lewis_randall_uses_the_chosen_pure_cubic():
    default = build_model(LOOP, "lewis-randall")
    assert default.pure_eos == "PR" and tuple(default.consts) == tuple(CUBICS["PR"][:4])
    srk = build_model(LOOP, "lewis-randall", pure_eos="SRK")
    assert srk.pure_eos == "SRK" and tuple(srk.consts) == tuple(CUBICS["SRK"][:4])
    result = fugacity_coefficients(LOOP, 600.0, 2e7, Y_LOOP, "lewis-randall", pure_eos="SRK")
    for i, name in enumerate(LOOP):  # Lewis-Randall: phi_i of the mixture = phi of pure i at T, P
        pure = fugacity_coefficients([name], 600.0, 2e7, [1.0], "SRK")
        assert result.ln_phis[i] == pytest.approx(pure.ln_phis[0], abs=1e-14)


@pytest.mark.parametrize(("kwargs", "field"), [
    ({"eos": "PR", "pure_eos": "SRK"}, "pure_eos"),
    ({"eos": "lewis-randall", "pure_eos": "virial"}, "pure_eos"),
    ({"eos": "lewis-randall", "pure_eos": "XYZ"}, "pure_eos"),
    ({"eos": "ideal", "kij": {("H2", "N2"): 0.1}}, "kij"),
    ({"eos": "lewis-randall", "kij": np.zeros((5, 5))}, "kij"),
    ({"eos": "PR", "hydrogen_omega": float("nan")}, "hydrogen_omega"),
    ({"eos": "PR", "hydrogen_omega": 5.0}, "hydrogen_omega"),
    ({"eos": "PR", "hydrogen_omega": True}, "hydrogen_omega"),
])
def test_build_model_rejects_combinations_it_would_ignore(kwargs, field):
    with pytest.raises(InputError) as info:
        build_model(LOOP, **kwargs)
    assert info.value.field == field


@pytest.mark.parametrize("bad", [[], "H2", ["H2", "H2"], None, [1.0]])
def test_bad_species_lists(bad):
    with pytest.raises(InputError, match="species"):
        build_model(bad, "PR")  # type: ignore[arg-type]


def test_unknown_species_and_bad_record_constants():
    with pytest.raises(UnknownSpeciesError, match="Unobtainium"):
        build_model(["H2", "Unobtainium"])
    broken = dataclasses.replace(species("N2"), Pc=-1.0)
    with pytest.raises(InputError, match=r"^species\.N2\.Pc: must be finite and > 0"):
        build_model(["H2", broken])


# ------------------------------------------------------------------------------------------ results
def test_single_state_gives_rows_and_numpy_scalars():
    result = fugacity_coefficients(LOOP, 700.0, 3e7, Y_LOOP)
    assert result.phis.shape == result.ln_phis.shape == result.dln_phis_dT.shape == (5,)
    for value in (result.Z, result.molar_volume, result.g_res_RT, result.h_res):
        assert isinstance(value, float) and np.ndim(value) == 0
    assert result.root == "single" and result.liquid_like is False
    np.testing.assert_allclose(result.phis, np.exp(result.ln_phis), rtol=1e-15)
    assert result.molar_volume == pytest.approx(result.Z * K.R * 700.0 / 3e7, rel=1e-15)
    assert result.eos == "PR" and result.model.species == tuple(LOOP)
    assert result.kij[("H2", "N2")] == 0.0711 and ("H2", "NH3") in result.zero_kij_pairs


def test_broadcasting_and_read_only_arrays():
    T = np.array([[500.0], [700.0], [900.0]])
    P = np.array([1e6, 1e7, 5e7, 1e8])
    result = fugacity_coefficients(LOOP, T, P, Y_LOOP)
    assert result.phis.shape == (3, 4, 5) and result.Z.shape == result.root.shape == (3, 4)
    single = fugacity_coefficients(LOOP, 700.0, 5e7, Y_LOOP)
    np.testing.assert_array_equal(result.ln_phis[1, 2], single.ln_phis)
    rows = fugacity_coefficients(LOOP, 700.0, 5e7, np.array([Y_LOOP, [0.2, 0.2, 0.2, 0.2, 0.2]]))
    assert rows.phis.shape == (2, 5) and rows.Z.shape == (2,)
    for array in (result.phis, result.Z, result.root, result.liquid_like, result.y):
        with pytest.raises(ValueError):
            array[...] = 0
    many = fugacity_coefficients(LOOP, np.linspace(400.0, 900.0, 100), 5e7, Y_LOOP)  # parallel path (>= 32)
    np.testing.assert_allclose(many.ln_phis[0], fugacity_coefficients(LOOP, 400.0, 5e7, Y_LOOP).ln_phis,
                               rtol=0, atol=1e-15)


@pytest.mark.parametrize("threads", [1, 2])
def test_states_split_across_threads_equal_each_state_alone(threads):
    """Above PARALLEL_MIN_STATES the states run in one range per thread (hipeq._threads): every state's numbers
    are those of the state evaluated alone, bitwise, whatever the thread count."""
    numba = pytest.importorskip("numba")
    rng = np.random.default_rng(7)
    T = rng.uniform(300.0, 1000.0, 97)
    P = np.exp(rng.uniform(np.log(1e5), np.log(1e8), 97))
    before = numba.get_num_threads()
    numba.set_num_threads(min(threads, numba.config.NUMBA_NUM_THREADS))
    try:
        many = fugacity_coefficients(LOOP, T, P, Y_LOOP, eos="SRK")
    finally:
        numba.set_num_threads(before)
    for k in (0, 31, 48, 49, 96):  # both ends of each thread's range
        alone = fugacity_coefficients(LOOP, float(T[k]), float(P[k]), Y_LOOP, eos="SRK")
        np.testing.assert_array_equal(many.ln_phis[k], alone.ln_phis)
        np.testing.assert_array_equal(many.dln_phis_dT[k], alone.dln_phis_dT)
        assert (many.Z[k], many.h_res[k], many.root[k]) == (alone.Z, alone.h_res, alone.root)


@pytest.mark.parametrize(("T", "P", "root", "liquid"), [
    (350.0, 1e6, "liquid-like", True),  # three roots, the liquid one lower in Gibbs energy
    (400.0, 1e5, "gas-like", False),  # three roots, the vapour one lower
    (900.0, 1e7, "single", False),
])
def test_root_labels_water(T, P, root, liquid):
    result = fugacity_coefficients(["H2O"], T, P, [1.0], "PR")
    assert (result.root, result.liquid_like) == (root, liquid)


def test_dense_single_root_is_liquid_like_by_reduced_volume():
    """NH3 at 420 K (above Tc = 405.6 K) and 1000 bar: one real root, but v/b = 1.52 < 1.75 (our rule)."""
    model = build_model(["NH3"], "PR")
    aij, daij, bi, dbi = np.empty((1, 1)), np.empty((1, 1)), np.empty(1), np.empty(1)
    K.tdep_into(model.code, 420.0, model.comp, model.consts, model.kmat, aij, bi, daij, dbi)
    z, root = K.ln_phi_tp(model.code, 420.0, 1e8, np.ones(1), aij, bi, model.consts, np.empty(1))
    assert root == K.ROOT_SINGLE
    result = model.fugacity_coefficients(420.0, 1e8, [1.0])
    assert result.molar_volume / bi[0] < 1.75 and result.root == "liquid-like" and result.liquid_like


def test_ideal_model_is_ideal():
    result = fugacity_coefficients(LOOP, [400.0, 900.0], 1e8, Y_LOOP, "ideal")
    np.testing.assert_array_equal(result.phis, 1.0)
    np.testing.assert_array_equal(result.Z, 1.0)
    np.testing.assert_array_equal(result.h_res, 0.0)


# ------------------------------------------------------------------------------------------ bad input
@pytest.mark.parametrize(("T", "P", "y", "field", "text"), [
    (-5.0, 1e5, Y_LOOP, "T", "got -5.0"),
    (0.0, 1e5, Y_LOOP, "T", ">= 1 K and <= 6000 K"),
    (0.5, 1e5, Y_LOOP, "T", ">= 1 K"),
    (6001.0, 1e5, Y_LOOP, "T", "<= 6000 K"),
    (float("nan"), 1e5, Y_LOOP, "T", "got nan"),
    ([500.0, float("inf")], 1e5, Y_LOOP, "T", "at index 1"),
    ("hot", 1e5, Y_LOOP, "T", "must be a number"),
    (500.0, 0.0, Y_LOOP, "P", "> 0 Pa"),
    (500.0, -1e5, Y_LOOP, "P", "got -100000.0"),
    (500.0, 1.1e10, Y_LOOP, "P", "<= 1e+10 Pa"),
    (500.0, float("nan"), Y_LOOP, "P", "finite"),
    (500.0, 1e5, [0.6, 0.2, 0.1, 0.05], "y", "last axis must hold 5 mole fractions"),
    (500.0, 1e5, 0.2, "y", "last axis"),
    (500.0, 1e5, [0.7, 0.2, 0.1, 0.05, -0.05], "y", "Ar is -0.05"),
    (500.0, 1e5, [0.6, 0.2, 0.1, 0.05, 0.06], "y", "sum is 1.01"),
    (500.0, 1e5, [[0.6, 0.2, 0.1, 0.05, 0.05], [0.6, 0.2, 0.1, 0.05, 0.0]], "y", "sum in row 1 is 0.95"),
    (500.0, 1e5, [[0.6, 0.2, 0.1, 0.05, 0.05], [0.6, 0.2, 0.1, 0.05, np.nan]], "y", "finite in row 1"),
    ([500.0, 600.0], [1e5, 2e5, 3e5], Y_LOOP, "T, P, y", "do not broadcast"),
])
def test_bad_states_name_the_field(T, P, y, field, text):
    with pytest.raises(InputError) as info:
        fugacity_coefficients(LOOP, T, P, y)
    assert info.value.field == field and text in str(info.value), str(info.value)


def test_range_limits_are_inclusive():
    assert np.all(np.isfinite(fugacity_coefficients(LOOP, [1.0, 6000.0], 1e10, Y_LOOP, "ideal").phis))
    ok = fugacity_coefficients(LOOP, 500.0, 1e5, np.array(Y_LOOP) * (1.0 + 5e-9))  # within the 1e-8 tolerance
    assert ok.y.sum() == pytest.approx(1.0, abs=1e-15)


def test_state_without_physical_root_raises_naming_it():
    with pytest.raises(InputError, match=r"^P: model 'virial' has no physical state at T = 400 K, P = 1e\+08 Pa "
                                         r"\(state 1 of 2\).*Z = -\d.*<= 0"):
        fugacity_coefficients(["CO2"], 400.0, [1e6, 1e8], [1.0], "virial")


def test_overflowing_state_raises_naming_temperature():
    """Pure H2 at 2.1 K: the Pitzer-type B(T) is evaluated at T/Tc = 0.06, far below its range, and
    exp(ln phi) overflows; the call raises instead of returning inf."""
    with pytest.raises(InputError, match=r"^T: model 'virial' has no physical state at T = 2.0927 K.*not finite"):
        fugacity_coefficients(["H2"], 2.0927, 161101.29, [1.0], "virial")
