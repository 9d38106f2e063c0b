"""Reactions: parsing, algebra, balance errors, matrices and independent sets."""
from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from hipeq.data.reactions import (Reaction, check_independent, element_matrix, independent_reactions,
                                  stoichiometric_matrix)
from hipeq.errors import InputError, UnbalancedReactionError, UnknownSpeciesError


@pytest.mark.parametrize("text", [
    "1/2 N2 + 3/2 H2 = NH3", "0.5 N2 + 1.5 H2 = NH3", "0.5 N2 + 1.5 H2 <=> NH3", "1/2 N2 + 3/2 H2 -> NH3",
    "1/2 nitrogen + 3/2 hydrogen = ammonia", "1/2 N2 + 3/2 H2 = H3N", "1/2 N2+3/2 H2=NH3",
])
def test_parse_variants_give_the_same_reaction(text):
    rxn = Reaction.parse(text)
    assert dict(rxn.coefficients) == {"N2": -0.5, "H2": -1.5, "NH3": 1.0}
    assert rxn.species == ("N2", "H2", "NH3")
    assert rxn.mole_change == -1.0
    assert str(rxn) == "1/2 N2 + 3/2 H2 = NH3"


def test_algebra_reversed_scaled_sum():
    half = Reaction.parse("1/2 N2 + 3/2 H2 = NH3")
    full = Reaction.parse("N2 + 3 H2 = 2 NH3")
    assert half.scaled(2) == full and hash(half.scaled(2)) == hash(full)
    assert full.reversed() == Reaction.parse("2 NH3 = N2 + 3 H2")
    assert str(full.reversed()) == "2 NH3 = N2 + 3 H2"
    methanol = Reaction.parse("CO + 2 H2 = CH3OH") + Reaction.parse("CO2 + H2 = CO + H2O")
    assert methanol == Reaction.parse("CO2 + 3 H2 = CH3OH + H2O")
    assert "CO" not in methanol.coefficients  # cancelled species are dropped
    assert Reaction.parse(str(methanol)) == methanol  # __str__ round trip
    with pytest.raises(dataclasses.FrozenInstanceError):
        full.coefficients = {}  # type: ignore[misc]
    with pytest.raises(TypeError):
        full.coefficients["NH3"] = 3.0  # type: ignore[index]
    with pytest.raises(InputError):
        full.scaled(0.0)
    with pytest.raises(InputError):
        full - full  # nothing left


def test_from_mapping_resolves_names_and_sums_repeats():
    rxn = Reaction({"carbon monoxide": -1, "water": -1, "CO2": 1, "H2": 1, "H2O": 0})
    assert dict(rxn.coefficients) == {"CO": -1.0, "H2O": -1.0, "CO2": 1.0, "H2": 1.0}


def test_unbalanced_reaction_names_element_and_amount():
    with pytest.raises(UnbalancedReactionError) as err:
        Reaction.parse("N2 + H2 = NH3")
    message = str(err.value)
    assert "N: reactants 2, products 1 (off by -1)" in message
    assert "H: reactants 2, products 3 (off by +1)" in message
    with pytest.raises(UnbalancedReactionError, match=r"O: reactants 1, products 2 \(off by \+1\)"):
        Reaction.parse("CO + H2 = CO2 + H2")


@pytest.mark.parametrize("text", ["N2 + 3 H2", "N2 + 3 H2 == 2 NH3", "= NH3", "N2 + 3 H2 = 2 NH3 = x",
                                  "N2 + + 3 H2 = 2 NH3", "N2 + 3/0 H2 = 2 NH3", "0 N2 + 3 H2 = 2 NH3"])
def test_malformed_text_raises_input_error(text):
    with pytest.raises(InputError) as err:
        Reaction.parse(text)
    assert err.value.field == "reaction"


_RULE = ("coefficients are finite positive numbers (e.g. 2, 0.5, 3/2) written without a sign, reactants on the "
         "left side and products on the right side")


def _reaction_error(text: str) -> str:
    with pytest.raises(InputError) as err:
        Reaction.parse(text)
    assert err.value.field == "reaction"
    assert not isinstance(err.value, UnknownSpeciesError)
    return str(err.value)


@pytest.mark.parametrize("text, term, fix", [
    ("-1 N2 + 3 H2 = 2 NH3", "'-1 N2'", "write '1 N2' on the left side if N2 is consumed, or on the right side if it "
                                        "is formed"),
    ("N2 + 3 H2 = -2 NH3", "'-2 NH3'", "write '2 NH3' on the left side if NH3 is consumed"),
    ("-N2 + 3 H2 = 2 NH3", "'-N2'", "write 'N2' on the left side"),
    ("\u22121 N2 + 3 H2 = 2 NH3", "'\u22121 N2'", "write '1 N2'"),  # the Unicode minus sign
])
def test_signed_coefficient_names_the_term_and_the_rule(text, term, fix):
    message = _reaction_error(text)
    assert f"term {term} of {text!r} has a sign, but {_RULE}" in message and fix in message
    assert "unknown species" not in message


def test_overflowing_coefficient_is_named_as_written():
    message = _reaction_error("1e400 N2 + 3 H2 = 2 NH3")
    assert "coefficient '1e400' of 'N2'" in message and "too large (it overflows to infinity)" in message
    assert _RULE in message and "-inf" not in message and "got" not in message
    assert "coefficient '1e400' of 'N2'" in _reaction_error("1e400N2 + 3 H2 = 2 NH3")
    message = _reaction_error("1e308 N2 + 1e308 N2 = 2 NH3")  # each finite, the sum is not
    assert "the coefficients of 'N2'" in message and "add up to more than" in message


@pytest.mark.parametrize("text, coefficient, reason", [
    ("0 N2 + 3 H2 = 2 NH3", "'0' of 'N2'", "is zero"),
    ("N2 + 3 H2 = 0.0 NH3", "'0.0' of 'NH3'", "is zero"),
    ("0/2 N2 + 3 H2 = 2 NH3", "'0/2' of 'N2'", "is zero"),
    ("1e-400 N2 + 3 H2 = 2 NH3", "'1e-400' of 'N2'", "is too small to represent (it underflows to zero)"),
])
def test_zero_coefficient_names_the_coefficient_and_the_rule(text, coefficient, reason):
    message = _reaction_error(text)
    assert f"coefficient {coefficient} in {text!r} {reason}; {_RULE}" in message


@pytest.mark.parametrize("text", ["2 2 N2 + 3 H2 = 2 NH3", "2 2N2 + 3 H2 = 2 NH3"])
def test_two_coefficients_in_one_term(text):
    term = text.split(" +")[0]
    message = _reaction_error(text)
    assert f"term {term!r} of {text!r} has more than one coefficient ('2', then '2')" in message
    assert "write one number before the species" in message


@pytest.mark.parametrize("text, position, cause", [
    ("N2 + + H2 = 2 NH3", "the second term of the left side", "two '+' in a row"),
    ("N2 + 3 H2 = 2 NH3 +", "the second term of the right side", "a '+' at the end of a side"),
    ("+ N2 + 3 H2 = 2 NH3", "the first term of the left side", "a '+' at the start of a side"),
])
def test_empty_term_names_its_position(text, position, cause):
    message = _reaction_error(text)
    assert f"{position} of {text!r} is empty ({cause}" in message


@pytest.mark.parametrize("text, term", [("3 = NH3", "'3'"), ("N2 + 3 H2 = 2", "'2'"), ("N2 + 3/2 = NH3", "'3/2'")])
def test_coefficient_without_species_names_the_term(text, term):
    message = _reaction_error(text)
    assert f"term {term} of {text!r} is a coefficient with no species" in message


def test_names_starting_with_digits_still_parse():
    from hipeq.data.species import register_species  # the registry is reset after each test (conftest)

    register_species("NH3", aliases=["1-azane"])  # an invented alias that starts with a digit
    assert Reaction.parse("1/2 N2 + 3/2 H2 = 1-azane") == Reaction.parse("1/2 N2 + 3/2 H2 = NH3")
    assert Reaction.parse("N2 + 3 H2 = 2 1-azane") == Reaction.parse("N2 + 3 H2 = 2 NH3")
    assert Reaction.parse("7727-37-9 + 3 H2 = 2 NH3") == Reaction.parse("N2 + 3 H2 = 2 NH3")  # N2 by CAS number
    assert "coefficient '0' of '1-azane'" in _reaction_error("0 1-azane + N2 + 3 H2 = 3 NH3")
    with pytest.raises(UnknownSpeciesError, match="'1-xyz'"):
        Reaction.parse("N2 + 3 H2 = 2 1-xyz")


def test_unknown_species_in_reaction():
    with pytest.raises(UnknownSpeciesError, match="did you mean 'NH3'"):
        Reaction.parse("N2 + 3 H2 = 2 NH4")


def test_element_and_stoichiometric_matrices():
    elements, a = element_matrix(["CO", "H2O", "NH3"])
    assert elements == ("C", "H", "N", "O")  # Hill order
    np.testing.assert_array_equal(a, [[1, 0, 0], [0, 2, 3], [0, 0, 1], [1, 1, 0]])
    nu = stoichiometric_matrix(["CO + 2 H2 = CH3OH", "CO2 + H2 = CO + H2O"], ["CO", "CO2", "H2", "H2O", "CH3OH"])
    np.testing.assert_array_equal(nu, [[-1, 0, -2, 0, 1], [1, -1, -1, 1, 0]])
    with pytest.raises(InputError, match="'CH3OH', which is not in the species list"):
        stoichiometric_matrix(["CO + 2 H2 = CH3OH"], ["CO", "H2"])
    with pytest.raises(InputError, match="listed twice"):
        element_matrix(["CO", "carbon monoxide"])


def test_independent_reactions_for_methanol_synthesis():
    rxns = independent_reactions(["CO", "CO2", "H2", "H2O", "CH3OH"])
    assert rxns == [Reaction.parse("CO2 + H2 = CO + H2O"), Reaction.parse("CO + 2 H2 = CH3OH")]
    assert [str(r) for r in rxns] == ["CO2 + H2 = CO + H2O", "CO + 2 H2 = CH3OH"]


@pytest.mark.parametrize("order", [["N2", "H2", "NH3", "Ar"], ["NH3", "Ar", "H2", "N2"]])
def test_independent_reactions_for_ammonia_with_inert_argon(order):
    rxns = independent_reactions(order)
    assert rxns == [Reaction.parse("N2 + 3 H2 = 2 NH3")]  # the same reaction whatever the order
    assert "Ar" not in rxns[0].coefficients


def test_independent_reactions_count_is_species_minus_rank():
    names = ["CH4", "H2O", "CO", "CO2", "H2", "CH3OH", "CH3OCH3", "C2H5OH", "C2H4", "C2H6", "C3H8", "O2"]
    _, a = element_matrix(names)
    rxns = independent_reactions(names)
    assert len(rxns) == len(names) - np.linalg.matrix_rank(a)
    nu = stoichiometric_matrix(rxns, names)
    np.testing.assert_allclose(a @ nu.T, 0.0, atol=1e-12)
    assert np.linalg.matrix_rank(nu) == len(rxns)
    assert all(float(c).is_integer() for r in rxns for c in r.coefficients.values())
    assert independent_reactions(["N2", "Ar"]) == []


def test_check_independent_reports_the_dependent_methanol_reaction():
    report = check_independent(["CO + 2 H2 = CH3OH", "CO2 + H2 = CO + H2O", "CO2 + 3 H2 = CH3OH + H2O"])
    assert report.rank == 2 and report.independent == (0, 1) and report.dependent == (2,)
    assert dict(report.combinations[2]) == {0: 1.0, 1: 1.0}
    assert not report.all_independent and "dependent" in str(report)
    doubled = check_independent(["N2 + 3 H2 = 2 NH3", "1/2 N2 + 3/2 H2 = NH3"])
    assert doubled.dependent == (1,) and dict(doubled.combinations[1]) == {0: 0.5}
    assert check_independent(["N2 + 3 H2 = 2 NH3"]).all_independent
