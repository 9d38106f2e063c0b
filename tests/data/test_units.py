"""Unit strings to SI (exact factors: BIPM SI Brochure 2019; NIST SP 811, 2008)."""
from __future__ import annotations

import pytest

from hipeq.errors import InputError
from hipeq.units import DIMENSIONS, parse_quantity, units_of


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
