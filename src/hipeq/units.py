"""Practitioner unit strings to SI, at the boundary of hipeq (case files, command line).

``parse_quantity("450 degC", "temperature") -> 723.15``, ``parse_quantity("250 bar", "pressure") -> 2.5e7``.
The number and its unit are separated by optional white space; the unit is required and must belong to the
requested dimension. Conversion factors are exact by definition (BIPM SI Brochure, 9th ed. 2019; NIST SP 811,
2008 edition, appendix B): 1 atm = 101325 Pa, 1 bar = 1e5 Pa, 1 psi = 6894.757293168 Pa
(0.45359237 kg x 9.80665 m/s2 / 0.0254^2 m2), 1 Torr = 101325/760 Pa, 1 cal (thermochemical) = 4.184 J,
T[K] = t[degC] + 273.15 = (t[degF] + 459.67) x 5/9 = T[degR] x 5/9.

Gauge pressures (``barg``, ``psig``, ...) are rejected: converting them needs the ambient pressure, which a unit
string does not carry. Give absolute pressures (``bara``, ``psia`` or plain ``bar``, ``psi``).
"""
from __future__ import annotations

import math
import re

from hipeq.errors import InputError

__all__ = ["DIMENSIONS", "parse_quantity", "units_of"]

_PSI = 0.45359237 * 9.80665 / 0.0254**2  # [Pa], exact by definition

# unit -> (factor, offset): SI = value * factor + offset
_UNITS: dict[str, dict[str, tuple[float, float]]] = {
    "pressure": {
        "Pa": (1.0, 0.0), "kPa": (1e3, 0.0), "MPa": (1e6, 0.0), "GPa": (1e9, 0.0),
        "bar": (1e5, 0.0), "bara": (1e5, 0.0), "mbar": (1e2, 0.0), "atm": (101325.0, 0.0),
        "psi": (_PSI, 0.0), "psia": (_PSI, 0.0), "Torr": (101325.0 / 760.0, 0.0),
        "mmHg": (101325.0 / 760.0, 0.0),  # conventional millimetre of mercury, = Torr to 1e-7
    },
    "temperature": {
        "K": (1.0, 0.0), "degC": (1.0, 273.15), "°C": (1.0, 273.15),
        "degF": (5.0 / 9.0, 459.67 * 5.0 / 9.0), "°F": (5.0 / 9.0, 459.67 * 5.0 / 9.0),
        "degR": (5.0 / 9.0, 0.0), "°R": (5.0 / 9.0, 0.0),
    },
    "volume": {
        "m3": (1.0, 0.0), "L": (1e-3, 0.0), "l": (1e-3, 0.0), "dm3": (1e-3, 0.0), "mL": (1e-6, 0.0),
        "cm3": (1e-6, 0.0),
    },
    "amount": {"mol": (1.0, 0.0), "mmol": (1e-3, 0.0), "kmol": (1e3, 0.0)},
    "energy": {
        "J": (1.0, 0.0), "kJ": (1e3, 0.0), "MJ": (1e6, 0.0), "cal": (4.184, 0.0), "kcal": (4184.0, 0.0),
        "kWh": (3.6e6, 0.0),
    },
    "molar_energy": {
        "J/mol": (1.0, 0.0), "kJ/mol": (1e3, 0.0), "cal/mol": (4.184, 0.0), "kcal/mol": (4184.0, 0.0),
    },
}
DIMENSIONS: tuple[str, ...] = tuple(_UNITS)

_GAUGE = re.compile(r"^(k|M)?(Pa|bar|psi)\s*\(?g\)?$|^(barg|psig|kPag|MPag|atmg)$")
_QUANTITY = re.compile(r"^\s*(?P<num>[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)\s*(?P<unit>.*?)\s*$")
_ALIASES = {"deg C": "degC", "deg F": "degF", "deg R": "degR", "C": "degC", "F": "degF", "m^3": "m3",
            "cm^3": "cm3", "dm^3": "dm3", "kelvin": "K"}


def units_of(dimension: str) -> tuple[str, ...]:
    """The unit strings accepted for ``dimension`` (one of :data:`DIMENSIONS`)."""
    if dimension not in _UNITS:
        raise InputError("dimension", f"must be one of {', '.join(DIMENSIONS)}, got {dimension!r}")
    return tuple(_UNITS[dimension])


def parse_quantity(text: str, dimension: str, field: str | None = None) -> float:
    """Convert a quantity with its unit, e.g. ``"450 degC"``, to the SI value of ``dimension``.

    SI value = number x factor + offset, with the exact factors of the module docstring (BIPM SI Brochure 2019;
    NIST SP 811, 2008). Results: pressure [Pa], temperature [K], volume [m3], amount [mol], energy [J],
    molar_energy [J/mol].

    Args:
        text: number and unit, e.g. ``"250 bar"``, ``"1.5e7 Pa"``, ``"450 degC"``.
        dimension: one of :data:`DIMENSIONS`.
        field: name used in error messages (defaults to ``dimension``), e.g. ``"feed.temperature"``.

    Raises:
        InputError: naming ``field`` for a missing number or unit, a unit of another dimension, a gauge
            pressure, a temperature below absolute zero or a negative pressure, volume or amount.
    """
    name = field or dimension
    units = _UNITS.get(dimension)
    if units is None:
        raise InputError("dimension", f"must be one of {', '.join(DIMENSIONS)}, got {dimension!r}")
    if not isinstance(text, str):
        raise InputError(name, f"expected a string with a number and a unit, e.g. '{_example(dimension)}', "
                               f"got {text!r}")
    match = _QUANTITY.match(text)
    if match is None:
        raise InputError(name, f"cannot read a number in {text!r}; write e.g. '{_example(dimension)}'")
    value, unit = float(match["num"]), match["unit"]
    if not math.isfinite(value):
        raise InputError(name, f"value must be finite, got {text!r}")
    if not unit:
        raise InputError(name, f"missing unit in {text!r}; allowed {dimension} units: {', '.join(units)}")
    unit = _ALIASES.get(unit, unit)
    if dimension == "pressure" and _GAUGE.match(unit):
        raise InputError(name, f"gauge pressure {text!r} is ambiguous (the ambient pressure is unknown); "
                               "give an absolute pressure, e.g. 'bara' or 'psia'")
    if unit not in units:
        other = next((dim for dim, table in _UNITS.items() if unit in table), None)
        hint = f" ({unit!r} is a unit of {other})" if other else ""
        raise InputError(name, f"unit {unit!r} is not a {dimension} unit{hint}; allowed: {', '.join(units)}")
    factor, offset = units[unit]
    si = value * factor + offset
    if dimension == "temperature" and si <= 0.0:
        raise InputError(name, f"{text!r} is at or below absolute zero")
    if dimension in ("pressure", "volume", "amount") and si < 0.0:
        raise InputError(name, f"{text!r} must not be negative")
    return si


def _example(dimension: str) -> str:
    return {"pressure": "250 bar", "temperature": "450 degC", "volume": "2.5 m3", "amount": "10 kmol",
            "energy": "1.2 MJ", "molar_energy": "-45.9 kJ/mol"}[dimension]
