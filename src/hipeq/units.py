"""Practitioner unit strings to SI, at the boundary of hipeq (case files, command line).

``parse_quantity("450 degC", "temperature") -> 723.15``, ``parse_quantity("250 bar", "pressure") -> 2.5e7``.
The number and its unit are separated by optional white space; the unit is required and must belong to the
requested dimension. Conversion factors are exact by definition (BIPM SI Brochure, 9th ed. 2019; NIST SP 811,
2008 edition, appendix B): 1 atm = 101325 Pa, 1 bar = 1e5 Pa, 1 psi = 6894.757293168 Pa
(0.45359237 kg x 9.80665 m/s2 / 0.0254^2 m2), 1 Torr = 101325/760 Pa, 1 cal (thermochemical) = 4.184 J,
T[K] = t[degC] + 273.15 = (t[degF] + 459.67) x 5/9 = T[degR] x 5/9.

Gauge pressures (``barg``, ``psig``, ...) are rejected: converting them needs the ambient pressure, which a unit
string does not carry. Give absolute pressures (``bara``, ``psia`` or plain ``bar``, ``psi``).

:func:`to_si` is the door of the Python API: it takes either SI numbers (returned unchanged) or unit strings
(converted by :func:`parse_quantity`), one value or a list/array of them.
"""
from __future__ import annotations

import math
import re
import reprlib
from collections.abc import Mapping
from types import MappingProxyType
from typing import Any

import numpy as np

from hipeq.errors import InputError

__all__ = ["DIMENSIONS", "SI_UNITS", "parse_quantity", "to_si", "units_of"]

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

#: dimension -> its coherent SI unit (BIPM SI Brochure 2019, sections 2.3.1 and 2.3.4): the unit of every number
#: that hipeq takes or returns for that dimension.
SI_UNITS: Mapping[str, str] = MappingProxyType({
    "pressure": "Pa", "temperature": "K", "volume": "m3", "amount": "mol", "energy": "J", "molar_energy": "J/mol",
})

_NOUNS = {"pressure": "a pressure", "temperature": "a temperature", "volume": "a volume", "amount": "an amount",
          "energy": "an energy", "molar_energy": "a molar energy"}
_NUMERIC_KINDS = "fiu"  # numpy dtype kinds taken as numbers: float, signed and unsigned integer (not bool 'b')
_SHORT = reprlib.Repr()
_SHORT.maxstring, _SHORT.maxother, _SHORT.maxlist, _SHORT.maxtuple = 40, 60, 6, 6

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


def to_si(value: Any, dimension: str, field: str) -> float | np.ndarray:
    """The SI value of ``value``: an SI number (returned as is) or a string with a unit (converted).

    Accepted, with the result:

    - a Python ``int`` or ``float``, a numpy integer or floating scalar, or a 0-d numeric array: a Python
      ``float``, the same number (taken to be in the SI unit of ``dimension``, :data:`SI_UNITS`);
    - a string with a number and a unit, e.g. ``"450 degC"``, ``"300 bar"``, ``"2.5 L"``, ``"3 kmol"``: a
      Python ``float``, SI value = number x factor + offset (:func:`parse_quantity`; exact factors from the BIPM
      SI Brochure, 9th ed. 2019, and NIST SP 811, 2008, appendix B);
    - a list or tuple (nested for more dimensions) or an ndarray of numbers: a float64 ndarray of the same
      shape (an ndarray that is already float64 is returned itself, not copied);
    - a list, tuple or ndarray of unit strings: a float64 ndarray of the same shape, every element converted.

    Only the type, shape and unit are checked: a number is not range-checked and may be NaN or infinite (the
    solver judges every state). A unit string is checked as :func:`parse_quantity` checks it (no temperature at
    or below absolute zero, no negative pressure, volume or amount, a finite number).

    Args:
        value: the quantity, in the SI unit of ``dimension`` when a number: temperature [K], pressure [Pa],
            volume [m3], amount [mol], energy [J], molar_energy [J/mol].
        dimension: one of :data:`DIMENSIONS`.
        field: the argument's name for error messages, e.g. ``"T"``; an element of a list is named ``"T[2]"``.

    Returns:
        float [SI unit of ``dimension``] for one value, float64 ndarray for a list or array.

    Raises:
        InputError: naming ``field`` (or ``field[i]``) for a boolean (Python or numpy, or a boolean array),
            ``None``, a complex number, an integer too large for a float, any other object, an empty or ragged
            list or array, a list mixing numbers and strings, or a bad unit string; naming ``"dimension"`` for an
            unknown dimension.
    """
    if type(value) is float and dimension in _UNITS:  # the common case first: an SI float is returned as is
        return value
    return _to_si(value, dimension, field)


def _to_si(value: Any, dimension: str, field: str) -> float | np.ndarray:
    """:func:`to_si` for everything but a plain float."""
    if dimension not in _UNITS:
        raise InputError("dimension", f"must be one of {', '.join(DIMENSIONS)}, got {dimension!r}")
    if type(value) is int or type(value) is np.float64:  # the next most common: an int, a float taken from an array
        return _scalar_to_si(value, dimension, field)
    if isinstance(value, np.ndarray):
        return _array_to_si(value, dimension, field)
    if isinstance(value, (list, tuple)):
        if len(value) == 0:
            raise InputError(field, "is empty; give at least one value")
        try:
            objects = np.asarray(value, dtype=object)
        except ValueError:  # numpy refuses some ragged nestings outright
            raise InputError(field, f"is ragged (its rows differ in length): {_SHORT.repr(value)}; give a "
                                    "rectangular list or array") from None
        return _objects_to_si(objects, dimension, field)
    return _scalar_to_si(value, dimension, field)


def _scalar_to_si(value: Any, dimension: str, field: str) -> float:
    """One value: number -> float unchanged, string -> parse_quantity; anything else raises InputError."""
    if isinstance(value, str):  # also numpy.str_
        return parse_quantity(str(value), dimension, field)
    if isinstance(value, (float, int)) and not isinstance(value, bool):  # also numpy.float64, IntEnum
        try:
            return float(value)
        except OverflowError:
            raise InputError(field, f"the integer {_SHORT.repr(value)} is too large for a floating-point number "
                                    f"(at most about 1.8e308 {SI_UNITS[dimension]})") from None
    if isinstance(value, np.generic) and value.dtype.kind in _NUMERIC_KINDS:  # numpy.float32, numpy.int64, ...
        return float(value)
    if isinstance(value, np.ndarray) and value.ndim == 0 and not isinstance(value, np.ma.MaskedArray):
        return _scalar_to_si(value[()], dimension, field)
    raise _wrong_type(value, dimension, field)


def _array_to_si(value: np.ndarray, dimension: str, field: str) -> float | np.ndarray:
    if isinstance(value, np.ma.MaskedArray):
        raise InputError(field, "is a masked array; fill or drop the masked values first (e.g. .filled(np.nan) "
                                "or .compressed())")
    if value.ndim == 0:
        return _scalar_to_si(value, dimension, field)
    if value.size == 0:
        raise InputError(field, "is empty; give at least one value")
    kind = value.dtype.kind
    if kind in _NUMERIC_KINDS:
        return np.asarray(value, dtype=np.float64)
    if kind == "U":
        return _strings_to_si(value, dimension, field)
    if kind == "O":
        return _objects_to_si(value, dimension, field)
    described = {"b": "a boolean array", "c": "a complex array", "S": "an array of bytes"}.get(
        kind, f"an array of dtype {value.dtype}")
    raise InputError(field, f"must be {_NOUNS[dimension]} in {SI_UNITS[dimension]} (numbers) or strings with a "
                            f"unit such as '{_example(dimension)}', got {described} of shape {value.shape}")


def _objects_to_si(objects: np.ndarray, dimension: str, field: str) -> np.ndarray:
    """An object array from a list or an ndarray: all numbers, or all strings; elements checked by type."""
    if objects.size == 0:
        raise InputError(field, "is empty; give at least one value")
    types = {type(x) for x in objects.flat}
    if any(issubclass(t, np.ndarray) for t in types):  # 0-d arrays inside a list: take their values
        objects = objects.copy()
        for index, x in np.ndenumerate(objects):
            if isinstance(x, np.ndarray) and x.ndim == 0:
                objects[index] = x[()]
        types = {type(x) for x in objects.flat}
    bad = {t for t in types if not (issubclass(t, str) or _is_number_type(t))}
    if bad:
        index, x = next((index, x) for index, x in np.ndenumerate(objects) if type(x) in bad)
        if isinstance(x, (list, tuple, np.ndarray)):
            raise InputError(field, f"is ragged or nested too deep ({_element(field, index)} is "
                                    f"{_SHORT.repr(x)}); give a rectangular list or array of numbers or strings")
        raise _wrong_type(x, dimension, _element(field, index))
    strings = any(issubclass(t, str) for t in types)
    if strings and len(types) > 1 and not all(issubclass(t, str) for t in types):
        first_number = next(index for index, x in np.ndenumerate(objects) if not isinstance(x, str))
        first_string = next(index for index, x in np.ndenumerate(objects) if isinstance(x, str))
        a, b = sorted((first_number, first_string))
        raise InputError(field, f"mixes numbers and strings ({_element(field, a)} = {_SHORT.repr(objects[a])}, "
                                f"{_element(field, b)} = {_SHORT.repr(objects[b])}); give every value as a "
                                f"number in {SI_UNITS[dimension]} or every value as a string with a unit")
    if strings:
        return _strings_to_si(objects, dimension, field)
    try:
        return objects.astype(np.float64)
    except OverflowError:
        big = next(index for index, x in np.ndenumerate(objects) if not _fits_float(x))
        raise InputError(_element(field, big), f"the integer {_SHORT.repr(objects[big])} is too large for a "
                                               f"floating-point number") from None


def _strings_to_si(strings: np.ndarray, dimension: str, field: str) -> np.ndarray:
    out = np.empty(strings.shape, dtype=np.float64)
    for index, text in np.ndenumerate(strings):
        out[index] = parse_quantity(str(text), dimension, _element(field, index))
    return out


def _fits_float(x: object) -> bool:
    try:
        float(x)  # type: ignore[arg-type]
    except OverflowError:
        return False
    return True


def _is_number_type(t: type) -> bool:
    """A real number type that is not boolean: int, float, their subclasses, numpy integer and floating types."""
    if issubclass(t, (float, int)):
        return not issubclass(t, bool)
    return issubclass(t, np.generic) and np.dtype(t).kind in _NUMERIC_KINDS


def _element(field: str, index: tuple[int, ...]) -> str:
    """``T[2]`` for element (2,) of T, ``T[1, 0]`` for element (1, 0)."""
    return f"{field}[{', '.join(str(i) for i in index)}]"


def _wrong_type(value: object, dimension: str, field: str) -> InputError:
    """The error for a value that is neither a number nor a string; says the SI unit and gives an example."""
    if value is None:
        got = "None"
    elif isinstance(value, (bool, np.bool_)):
        got = f"{bool(value)!r} (a boolean)"
    elif isinstance(value, (bytes, bytearray)):
        got = f"{_SHORT.repr(value)} (bytes, not text: decode them first)"
    elif isinstance(value, (complex, np.complexfloating)):
        got = f"{_SHORT.repr(value)} (a complex number)"
    else:
        name = type(value).__name__
        got = f"{_SHORT.repr(value)} ({'an' if name[:1].lower() in 'aeiou' else 'a'} {name})"
    return InputError(field, f"must be {_NOUNS[dimension]} in {SI_UNITS[dimension]} (a number) or a string with a "
                             f"unit such as '{_example(dimension)}', got {got}")
