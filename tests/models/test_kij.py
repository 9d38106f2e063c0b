"""Binary interaction parameters: databank defaults, user overrides, provenance and bad input.

Expected databank values are those of thermo's interaction-parameter databank, table 'ChemSep PR' (ChemSep's PR
kij as shipped with thermo 0.6); the missing pairs (H2-NH3, NH3-CH4, H2-Ar, ...) are listed in
/work/shared/reference/README.md ("pitfalls").
"""
from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from hipeq.data.species import species
from hipeq.errors import InputError
from hipeq.models import assign_kij, build_model, databank_kij, databank_kij_values, fugacity_coefficients
from hipeq.models.kij import SOURCE_DATABANK, SOURCE_USER, SOURCE_ZERO

LOOP = ["H2", "N2", "NH3", "CH4", "Ar"]


def test_databank_values_and_missing_pairs():
    h2, n2, nh3, ch4 = (species(n).cas for n in ("H2", "N2", "NH3", "CH4"))
    assert databank_kij(h2, n2) == databank_kij(n2, h2) == 0.0711
    assert databank_kij(n2, nh3) == 0.2193
    assert databank_kij(h2, nh3) is None and databank_kij(nh3, ch4) is None
    assert databank_kij(h2, h2) is None and databank_kij("", n2) is None


def test_pr_defaults_record_sources_and_zero_pairs():
    model = build_model(LOOP, "PR")
    assert model.kij_sources[("H2", "N2")] == SOURCE_DATABANK == "thermo IPDB 'ChemSep PR'"
    assert set(model.zero_kij_pairs) == {("H2", "NH3"), ("H2", "Ar"), ("NH3", "CH4")}
    assert all(model.kij_sources[pair] == SOURCE_ZERO == "default zero" for pair in model.zero_kij_pairs)
    assert model.kmat[0, 1] == model.kmat[1, 0] == 0.0711 and np.all(np.diag(model.kmat) == 0.0)
    assert build_model(LOOP, "PR78").kij == model.kij


@pytest.mark.parametrize("eos", ["SRK", "virial"])
def test_srk_and_virial_default_to_zero(eos):
    model = build_model(LOOP, eos)
    assert np.all(model.kmat == 0.0) and len(model.zero_kij_pairs) == 10
    deliberate = build_model(LOOP, eos, kij=databank_kij_values([species(n) for n in LOOP]))
    assert deliberate.kij[("H2", "N2")] == 0.0711 and deliberate.kij_sources[("H2", "N2")] == SOURCE_USER
    assert deliberate.zero_kij_pairs == (("H2", "NH3"), ("H2", "Ar"), ("NH3", "CH4"))


@pytest.mark.parametrize("eos", ["ideal", "lewis-randall"])
def test_models_without_kij_have_none(eos):
    model = build_model(LOOP, eos)
    assert dict(model.kij) == {} and model.zero_kij_pairs == () and np.all(model.kmat == 0.0)


def test_mapping_override_is_order_free_and_pairwise():
    model = build_model(LOOP, "PR", kij={("N2", "H2"): 0.1, ("Ar", "H2"): -0.02})
    assert model.kij[("H2", "N2")] == 0.1 and model.kmat[1, 0] == 0.1
    assert model.kij_sources[("H2", "N2")] == SOURCE_USER and model.kij_sources[("H2", "Ar")] == SOURCE_USER
    assert model.kij[("N2", "NH3")] == 0.2193 and model.kij_sources[("N2", "NH3")] == SOURCE_DATABANK
    assert ("H2", "Ar") not in model.zero_kij_pairs
    plain = fugacity_coefficients(LOOP, 500.0, 1e7, [0.2] * 5)
    changed = fugacity_coefficients(LOOP, 500.0, 1e7, [0.2] * 5, kij={("N2", "H2"): 0.1})
    assert abs(changed.ln_phis[0] - plain.ln_phis[0]) > 1e-4  # the override reaches the kernel
    assert changed.kij[("H2", "N2")] == 0.1


def test_matrix_override_sets_every_pair():
    matrix = np.full((5, 5), 0.05)
    np.fill_diagonal(matrix, 0.0)
    model = build_model(LOOP, "PR", kij=matrix)
    assert set(model.kij.values()) == {0.05} and set(model.kij_sources.values()) == {SOURCE_USER}
    assert model.zero_kij_pairs == ()
    matrix[0, 1] = matrix[1, 0] = 0.3  # the caller's array is copied, not referenced
    assert model.kmat[0, 1] == 0.05


def test_provenance_is_read_only():
    model = build_model(LOOP, "PR")
    with pytest.raises(TypeError):
        model.kij[("H2", "N2")] = 0.5  # type: ignore[index]
    with pytest.raises(ValueError):
        model.kmat[0, 1] = 0.5


def test_build_is_cached_per_species_set_and_kij():
    assert build_model(LOOP, "PR", kij={("H2", "N2"): 0.1}) is build_model(LOOP, "PR", kij={("N2", "H2"): 0.1})
    assert build_model(LOOP, "PR", kij={("H2", "N2"): 0.1}) is not build_model(LOOP, "PR")
    matrix = np.zeros((5, 5))
    assert build_model(LOOP, "PR", kij=matrix) is build_model(LOOP, "PR", kij=matrix.copy())


@pytest.mark.parametrize(("kij", "text"), [
    (np.zeros((4, 4)), "shape (5, 5)"),
    ([[0.0, 0.1], [0.1, 0.0]], "shape (5, 5)"),
    (np.eye(5) * 0.1, "diagonal must be zero"),
    (np.triu(np.full((5, 5), 0.1), 1), "must be symmetric"),
    (np.where(np.eye(5) == 1, 0.0, np.nan), "must be finite"),
    (np.where(np.eye(5) == 1, 0.0, 1.0), "(-1, 1)"),
    ([["a"] * 5] * 5, "square matrix of numbers"),
    ({("H2", "He"): 0.1}, "'He' is not in the model's species"),
    ({("H2", "H2"): 0.1}, "with itself"),
    ({("H2", "N2"): 0.1, ("N2", "H2"): 0.2}, "given twice"),
    ({("H2", "N2"): float("inf")}, "must be finite"),
    ({("H2", "N2"): -1.0}, "(-1, 1)"),
    ({("H2", "N2"): "x"}, "must be a number"),
    ({"H2-N2": 0.1}, "pairs of species names"),
    ({("H2", "N2", "Ar"): 0.1}, "pairs of species names"),
])
def test_bad_kij_names_the_field(kij, text):
    with pytest.raises(InputError) as info:
        build_model(LOOP, "PR", kij=kij)
    assert info.value.field == "kij" and text in str(info.value), str(info.value)


@settings(deadline=None)
@given(st.dictionaries(st.tuples(st.sampled_from(LOOP), st.sampled_from(LOOP)).filter(lambda p: p[0] != p[1]),
                       st.floats(-0.5, 0.5), max_size=6))
def test_any_accepted_mapping_gives_a_symmetric_matrix(overrides):
    canonical = {}
    for (a, b), value in overrides.items():
        canonical.setdefault(frozenset((a, b)), set()).add(value)
    records = [species(n) for n in LOOP]
    if any(len(values) > 1 for values in canonical.values()):
        with pytest.raises(InputError, match="given twice"):
            assign_kij(records, "databank", overrides)
        return
    result = assign_kij(records, "databank", overrides)
    np.testing.assert_array_equal(result.matrix, result.matrix.T)
    assert np.all(np.diag(result.matrix) == 0.0)
    for (a, b), value in overrides.items():
        assert result.matrix[LOOP.index(a), LOOP.index(b)] == value
