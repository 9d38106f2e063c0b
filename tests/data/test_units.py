"""Unit strings to SI (exact factors: BIPM SI Brochure 2019; NIST SP 811, 2008)."""
from __future__ import annotations

import enum

import numpy as np
import pytest

from hipeq.errors import InputError
from hipeq.units import DIMENSIONS, SI_UNITS, parse_quantity, to_si, units_of


@pytest.mark.parametrize("text, dimension, si", [
    ("450 degC", "temperature", 723.15), ("450degC", "temperature", 723.15), ("723.15 K", "temperature", 723.15),
    ("32 degF", "temperature", 273.15), ("491.67 degR", "temperature", 273.15), ("-40 °C", "temperature", 233.15),
    ("250 bar", "pressure", 2.5e7), ("250 bara", "pressure", 2.5e7), ("1 atm", "pressure", 101325.0),
    ("15 MPa", "pressure", 1.5e7), ("101.325 kPa", "pressure", 101325.0), ("1.5e7 Pa", "pressure", 1.5e7),
    ("14.6959487755 psia", "pressure", 101325.0), ("760 Torr", "pressure", 101325.0),
    ("2.5 m3", "volume", 2.5), ("2500 L", "volume", 2.5), ("10 cm3", "volume", 1e-5),
    ("10 kmol", "amount", 1e4), ("3 mol", "amount", 3.0),
    ("1.2 MJ", "energy", 1.2e6), ("1 kcal", "energy", 4184.0), ("-45.9 kJ/mol", "molar_energy", -45900.0),
])
def test_conversions(text, dimension, si):
    assert parse_quantity(text, dimension) == pytest.approx(si, rel=1e-10)


@pytest.mark.parametrize("text, dimension, fragment", [
    ("450", "temperature", "missing unit"),
    ("450 degX", "temperature", "not a temperature unit"),
    ("250 bar", "temperature", "'bar' is a unit of pressure"),
    ("10 barg", "pressure", "gauge pressure"),
    ("10 psig", "pressure", "gauge pressure"),
    ("10 bar(g)", "pressure", "gauge pressure"),
    ("hot", "temperature", "cannot read a number"),
    ("-300 degC", "temperature", "absolute zero"),
    ("-1 bar", "pressure", "must not be negative"),
])
def test_bad_strings_name_the_field(text, dimension, fragment):
    with pytest.raises(InputError) as err:
        parse_quantity(text, dimension, field="feed.T")
    assert err.value.field == "feed.T" and fragment in str(err.value)


def test_non_string_and_unknown_dimension():
    with pytest.raises(InputError) as err:
        parse_quantity(450.0, "temperature")  # type: ignore[arg-type]
    assert err.value.field == "temperature"
    with pytest.raises(InputError) as err:
        parse_quantity("1 m", "length")
    assert err.value.field == "dimension"
    assert "degC" in units_of("temperature") and set(DIMENSIONS) >= {"pressure", "temperature", "volume"}


# ---- to_si: SI numbers or unit strings at the Python API (factors as above: BIPM SI Brochure 2019; NIST SP 811,
# 2008, appendix B: T[K] = t[degC] + 273.15, 1 bar = 1e5 Pa, 1 L = 1e-3 m3, 1 kmol = 1e3 mol)

_TYPE_MESSAGE = "T: must be a temperature in K (a number) or a string with a unit such as '450 degC', got "


def test_si_units_name_the_unit_factor_one_of_every_dimension():
    assert dict(SI_UNITS) == {"pressure": "Pa", "temperature": "K", "volume": "m3", "amount": "mol", "energy": "J",
                              "molar_energy": "J/mol"}
    assert set(SI_UNITS) == set(DIMENSIONS)
    for dimension, unit in SI_UNITS.items():
        assert parse_quantity(f"2.5 {unit}", dimension) == 2.5  # factor 1, offset 0
    with pytest.raises(TypeError):
        SI_UNITS["pressure"] = "bar"  # type: ignore[index]


class _Level(enum.IntEnum):
    THREE = 3


@pytest.mark.parametrize("value, si", [
    (700.0, 700.0), (700, 700.0), (-5.0, -5.0), (0, 0.0), (np.float64(700.5), 700.5), (np.float32(1.5), 1.5),
    (np.int64(3), 3.0), (np.uint8(200), 200.0), (np.array(2.25), 2.25), (np.array(7, dtype=np.int16), 7.0),
    (_Level.THREE, 3.0), (10**20, 1e20),
])
def test_numbers_come_back_as_python_floats_unchanged(value, si):
    result = to_si(value, "temperature", "T")
    assert type(result) is float and result == si


def test_plain_float_is_returned_itself():
    value = 723.15
    assert to_si(value, "temperature", "T") is value


@pytest.mark.parametrize("value", [float("nan"), float("inf"), -float("inf"), np.float32("nan")])
def test_non_finite_numbers_pass_through_for_the_solver_to_judge(value):
    result = to_si(value, "pressure", "P")
    assert type(result) is float and (np.isnan(result) if np.isnan(value) else result == value)


@pytest.mark.parametrize("value, dimension, si", [
    ("450 degC", "temperature", 723.15), ("300 bar", "pressure", 3e7), ("2.5 L", "volume", 2.5e-3),
    ("3 kmol", "amount", 3e3), ("1 kcal", "energy", 4184.0), ("-45.9 kJ/mol", "molar_energy", -45900.0),
    (np.str_("15 MPa"), "pressure", 1.5e7), (np.array("32 degF"), "temperature", 273.15),
])
def test_unit_strings_are_converted(value, dimension, si):
    result = to_si(value, dimension, "x")
    assert type(result) is float and result == pytest.approx(si, rel=1e-12)


@pytest.mark.parametrize("value, expected", [
    ([700, 800.0], [700.0, 800.0]),
    ((np.float32(1.5), np.int64(2)), [1.5, 2.0]),
    ([[1, 2, 3], [4, 5, 6]], [[1.0, 2.0, 3.0], [4.0, 5.0, 6.0]]),
    ([np.array(1.0), 2], [1.0, 2.0]),  # 0-d arrays inside a list count as numbers
    (np.array([1, 2], dtype=np.int8), [1.0, 2.0]),
    (np.array([1.5, 2.5], dtype=np.float32), [1.5, 2.5]),
    (np.array([[3.0]]), [[3.0]]),
    (np.array([1.0, 2.0], dtype=object), [1.0, 2.0]),
    ([float("nan"), float("inf")], [float("nan"), float("inf")]),
])
def test_lists_and_arrays_of_numbers_give_float64_arrays_of_the_same_shape(value, expected):
    result = to_si(value, "temperature", "T")
    assert isinstance(result, np.ndarray) and result.dtype == np.float64
    np.testing.assert_array_equal(result, np.asarray(expected, dtype=float))


def test_float64_array_is_not_copied():
    values = np.linspace(300.0, 900.0, 7)
    assert to_si(values, "temperature", "T") is values


@pytest.mark.parametrize("value, dimension, expected", [
    (["450 degC", "723.15 K", "32 degF"], "temperature", [723.15, 723.15, 273.15]),
    (("300 bar", "1 atm"), "pressure", [3e7, 101325.0]),
    ([["2.5 L", "1 m3"], ["10 cm3", "1 mL"]], "volume", [[2.5e-3, 1.0], [1e-5, 1e-6]]),
    (np.array(["3 kmol", "5 mmol"]), "amount", [3e3, 5e-3]),
    (np.array(["3 kmol", np.str_("1 mol")], dtype=object), "amount", [3e3, 1.0]),
])
def test_lists_and_arrays_of_unit_strings_are_converted_element_by_element(value, dimension, expected):
    result = to_si(value, dimension, "x")
    assert isinstance(result, np.ndarray) and result.dtype == np.float64 and result.shape == np.shape(expected)
    np.testing.assert_allclose(result, expected, rtol=1e-12)


@pytest.mark.parametrize("value, got", [
    (True, "True (a boolean)"), (False, "False (a boolean)"), (np.bool_(True), "True (a boolean)"),
    (None, "None"), (1 + 2j, "(1+2j) (a complex number)"), (np.complex128(1.0), "(a complex number)"),
    ({1.0, 2.0}, "(a set)"), ({"T": 700.0}, "(a dict)"), (range(3), "(a range)"), (b"450 degC", "(bytes"),
    (np.timedelta64(5, "s"), "(a timedelta64)"), (object(), "(an object)"),
])
def test_wrong_types_are_rejected_with_the_si_unit_and_an_example(value, got):
    with pytest.raises(InputError) as err:
        to_si(value, "temperature", "T")
    assert err.value.field == "T"
    assert str(err.value).startswith(_TYPE_MESSAGE) and got in str(err.value)


def test_the_exact_boolean_and_none_messages():
    with pytest.raises(InputError) as err:
        to_si(True, "temperature", "T")
    assert str(err.value) == _TYPE_MESSAGE + "True (a boolean)"
    with pytest.raises(InputError) as err:
        to_si(None, "temperature", "T")
    assert str(err.value) == _TYPE_MESSAGE + "None"


@pytest.mark.parametrize("dimension, unit, example", [
    ("pressure", "Pa", "250 bar"), ("temperature", "K", "450 degC"), ("volume", "m3", "2.5 m3"),
    ("amount", "mol", "10 kmol"), ("energy", "J", "1.2 MJ"), ("molar_energy", "J/mol", "-45.9 kJ/mol"),
])
def test_wrong_type_message_states_the_si_unit_of_each_dimension(dimension, unit, example):
    with pytest.raises(InputError) as err:
        to_si(True, dimension, "q")
    assert f" in {unit} (a number) or a string with a unit such as '{example}', got True" in str(err.value)


@pytest.mark.parametrize("value, field, fragment", [
    ([1.0, True], "T[1]", "got True (a boolean)"),
    ([[1.0, 2.0], [None, 3.0]], "T[1, 0]", "got None"),
    ([300.0, 1j], "T[1]", "(a complex number)"),
    (np.array([1.0, np.bool_(False)], dtype=object), "T[1]", "got False (a boolean)"),
    (["450 degC", "450"], "T[1]", "missing unit"),
    ([["1 K", "2 K"], ["3 K", "hot"]], "T[1, 1]", "cannot read a number"),
    (["250 bar"], "T[0]", "'bar' is a unit of pressure"),
    (["-300 degC"], "T[0]", "absolute zero"),
])
def test_a_bad_element_is_named_by_its_index(value, field, fragment):
    with pytest.raises(InputError) as err:
        to_si(value, "temperature", "T")
    assert err.value.field == field and fragment in str(err.value)


@pytest.mark.parametrize("value", [np.array([True, False]), np.array([1j]), np.array([b"1 K"]),
                                   np.array(["2020-01-01"], dtype="datetime64[D]")])
def test_arrays_of_other_dtypes_are_rejected(value):
    with pytest.raises(InputError) as err:
        to_si(value, "temperature", "T")
    assert err.value.field == "T" and "in K (numbers) or strings with a unit such as '450 degC'" in str(err.value)
    assert f"of shape {value.shape}" in str(err.value)


@pytest.mark.parametrize("value", [[], (), [[]], np.array([]), np.zeros((3, 0)), np.array([], dtype=object),
                                   np.array([], dtype=str)])
def test_empty_inputs_are_rejected(value):
    with pytest.raises(InputError) as err:
        to_si(value, "temperature", "T")
    assert str(err.value) == "T: is empty; give at least one value"


@pytest.mark.parametrize("value, fragment", [
    ([700.0, "450 degC"], "mixes numbers and strings (T[0] = 700.0, T[1] = '450 degC')"),
    (["450 degC", 700], "mixes numbers and strings (T[0] = '450 degC', T[1] = 700)"),
    ([[1.0, 2.0], ["3 K", 4.0]], "mixes numbers and strings (T[0, 0] = 1.0, T[1, 0] = '3 K')"),
])
def test_mixed_numbers_and_strings_are_rejected(value, fragment):
    with pytest.raises(InputError) as err:
        to_si(value, "temperature", "T")
    assert err.value.field == "T" and fragment in str(err.value) and "every value as a number in K" in str(err.value)


@pytest.mark.parametrize("value", [[[1.0, 2.0], [3.0]], [1.0, [2.0, 3.0]], [np.array([1.0, 2.0]), np.array([3.0])]])
def test_ragged_lists_are_rejected(value):
    with pytest.raises(InputError) as err:
        to_si(value, "temperature", "T")
    assert err.value.field == "T" and "ragged" in str(err.value)


def test_integers_too_large_for_a_float_are_rejected():
    with pytest.raises(InputError) as err:
        to_si(10**400, "amount", "n")
    assert err.value.field == "n" and "too large for a floating-point number" in str(err.value)
    with pytest.raises(InputError) as err:
        to_si([1, 10**400], "amount", "n")
    assert err.value.field == "n[1]" and "too large" in str(err.value)


def test_masked_arrays_are_rejected():
    with pytest.raises(InputError, match="masked array"):
        to_si(np.ma.masked_array([1.0, 2.0], mask=[False, True]), "temperature", "T")


@pytest.mark.parametrize("value", [700.0, 700, "450 degC", [700.0], True])
def test_unknown_dimension_is_rejected_whatever_the_value(value):
    with pytest.raises(InputError) as err:
        to_si(value, "length", "T")
    assert err.value.field == "dimension" and "temperature" in str(err.value)


def test_input_is_not_modified():
    values = [np.array(1.0), 2.0]
    to_si(values, "temperature", "T")
    assert isinstance(values[0], np.ndarray)
    array = np.array([1, 2], dtype=np.int32)
    to_si(array, "temperature", "T")
    assert array.dtype == np.int32
