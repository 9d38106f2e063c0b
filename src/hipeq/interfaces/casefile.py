"""Case files: one TOML description of an equilibrium job, with explicit units, for the CLI and the examples.

The tables and keys are declared once in :mod:`hipeq.interfaces.schema` (and documented from it in
``docs/casefile.md``). :func:`load_case` reads a file, checks every table and key against the schema and
converts quantities to SI; an error is an :class:`~hipeq.errors.InputError` whose field names the file position
(``[conditions] pressure``) and whose message says what is allowed.
"""
from __future__ import annotations

import math
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from hipeq.errors import InputError
from hipeq.interfaces.schema import MAX_AXIS, MAX_STATES, TABLE_BY_NAME, TABLES, Key, Table
from hipeq.units import parse_quantity, units_of

_EXAMPLE_UNIT = {"temperature": "degC", "pressure": "bar", "volume": "m3", "amount": "mol"}


@dataclass(frozen=True)
class Case:
    """A checked case file in SI units (K, Pa, m3, mol).

    ``model`` holds the keyword arguments of :class:`hipeq.ReactionSystem` (eos, kij, volume_translation,
    quantum_hydrogen, hydrogen_omega, pure_eos); ``solver`` those of ``equilibrium`` (method, scheme, tol,
    max_iterations). Optional parts are None when their table is absent: ``compare``, ``sweep``, ``map``,
    ``adiabatic``, ``beds``, ``separator`` (dicts of SI values, axes as float arrays).
    """

    title: str
    species: tuple[str, ...]
    reactions: tuple[str, ...] | None
    feed: dict[str, float]
    model: dict[str, Any]
    solver: dict[str, Any]
    T: float
    P: float | None
    V: float | None
    report_species: tuple[str, ...] | None = None
    key: str | None = None
    compare: dict[str, Any] | None = None
    sweep: dict[str, Any] | None = field(default=None, compare=False)
    map: dict[str, Any] | None = field(default=None, compare=False)
    adiabatic: dict[str, Any] | None = None
    beds: dict[str, Any] | None = None
    separator: dict[str, Any] | None = None
    notes: str = ""
    path: str = ""

    @property
    def eos(self) -> str:
        """The equation of state of the main solve."""
        return str(self.model.get("eos", "PR"))

    def tables(self) -> tuple[str, ...]:
        """The optional job tables present in the case."""
        return tuple(name for name in ("compare", "sweep", "map", "adiabatic", "beds", "separator")
                     if getattr(self, name) is not None)


# ---------------------------------------------------------------------------------------------------------
# values of each kind
# ---------------------------------------------------------------------------------------------------------
def _quantity(value: Any, dimension: str, where: str) -> float:
    unit = _EXAMPLE_UNIT.get(dimension, units_of(dimension)[0])
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        raise InputError(where, f"give a unit with the number, e.g. \"{value} {unit}\" (units: "
                                f"{', '.join(units_of(dimension))})")
    if not isinstance(value, str):
        raise InputError(where, f"expected a quantity string such as \"1 {unit}\", got {value!r}")
    try:
        return parse_quantity(value, dimension)
    except InputError as err:
        raise InputError(where, str(err).split(": ", 1)[-1]) from None


def _axis(value: Any, dimension: str, where: str) -> np.ndarray:
    unit = _EXAMPLE_UNIT[dimension]
    form = (f"expected [start, stop, count] such as [\"1 {unit}\", \"2 {unit}\", 5] with 1 <= count <= {MAX_AXIS}, "
            f"or a list of quantities")
    if not isinstance(value, list) or not value:
        raise InputError(where, form)
    if len(value) == 3 and isinstance(value[2], (int, float)) and not isinstance(value[2], bool):
        count = value[2]
        if not (isinstance(count, int) and 1 <= count <= MAX_AXIS):
            raise InputError(where + " count", f"must be a whole number from 1 to {MAX_AXIS}, got {count!r}")
        lo = _quantity(value[0], dimension, where + " start")
        hi = _quantity(value[1], dimension, where + " stop")
        if count == 1 and lo != hi:
            raise InputError(where, "count 1 needs start = stop (one value); give a larger count for a range")
        return np.linspace(lo, hi, count)
    if len(value) > MAX_AXIS:
        raise InputError(where, f"at most {MAX_AXIS} values, got {len(value)}")
    return np.array([_quantity(v, dimension, f"{where} [{i}]") for i, v in enumerate(value)])


def _value(key: Key, value: Any, where: str, species: tuple[str, ...]) -> Any:
    kind = key.kind
    if kind == "text":
        if not isinstance(value, str):
            raise InputError(where, f"expected a string in quotes, got {value!r}")
        return value
    if kind == "flag":
        if not isinstance(value, bool):
            raise InputError(where, f"expected true or false, got {value!r}")
        return value
    if kind in ("number", "count"):
        ok = isinstance(value, int) if kind == "count" else isinstance(value, (int, float))
        if not ok or isinstance(value, bool) or not math.isfinite(value):
            raise InputError(where, f"expected {'a whole number' if kind == 'count' else 'a plain number'} from "
                                    f"{key.low:g} to {key.high:g}, got {value!r}")
        if not key.low <= value <= key.high:
            raise InputError(where, f"must be from {key.low:g} to {key.high:g}, got {value!r}")
        return int(value) if kind == "count" else float(value)
    if kind == "choice":
        match = next((c for c in key.choices if isinstance(value, str) and c.lower() == value.strip().lower()),
                     None)
        if match is None:
            raise InputError(where, f"must be one of {', '.join(repr(c) for c in key.choices)}, got {value!r}")
        return match
    if kind == "species":
        if value not in species:
            raise InputError(where, f"must be one of [mixture] species ({', '.join(species)}), got {value!r}")
        return value
    if kind in ("species-list", "reaction-list", "models", "text-list"):
        if not (isinstance(value, list) and value and all(isinstance(v, str) for v in value)):
            raise InputError(where, f"expected a non-empty list of strings, e.g. {key.example}")
        if kind == "species-list" and species:
            unknown = [v for v in value if v not in species]
            if unknown:
                raise InputError(where, f"{', '.join(map(repr, unknown))} not in [mixture] species "
                                        f"({', '.join(species)})")
        if len(set(value)) != len(value):
            raise InputError(where, "each entry may appear once")
        return tuple(value)
    if kind == "quantity":
        return _quantity(value, key.dimension, where)
    if kind == "quantity-list":
        if not (isinstance(value, list) and value):
            raise InputError(where, f"expected a non-empty list of quantities, e.g. {key.example}")
        return np.array([_quantity(v, key.dimension, f"{where} [{i}]") for i, v in enumerate(value)])
    if kind == "axis":
        return _axis(value, key.dimension, where)
    if kind == "kij":
        return _kij(value, where, species)
    raise AssertionError(f"schema kind {kind!r} has no reader")  # pragma: no cover


def _kij(value: Any, where: str, species: tuple[str, ...]) -> Any:
    if isinstance(value, str):
        if value.strip().lower() != "e-ppr78":
            raise InputError(where, f"the named k_ij method is \"e-ppr78\" (PR and PR78); got {value!r}; "
                                    "otherwise give a table of pairs such as { \"H2-N2\" = 0.08 }")
        return "e-ppr78"
    if not isinstance(value, Mapping):
        raise InputError(where, "expected \"e-ppr78\" or a table of pairs such as { \"H2-N2\" = 0.08 }")
    pairs: dict[tuple[str, str], float] = {}
    for pair, number in value.items():
        parts = tuple(p.strip() for p in str(pair).split("-"))
        if len(parts) != 2 or not all(p in species for p in parts):
            raise InputError(f"{where} {pair}", f"expected \"A-B\" with A and B in [mixture] species "
                                                f"({', '.join(species)})")
        if isinstance(number, bool) or not isinstance(number, (int, float)) or not -1.0 <= number <= 1.0:
            raise InputError(f"{where} {pair}", f"expected a number from -1 to 1, got {number!r}")
        pairs[parts] = float(number)
    return pairs


# ---------------------------------------------------------------------------------------------------------
# tables
# ---------------------------------------------------------------------------------------------------------
def _read_table(table: Table, content: Any, species: tuple[str, ...]) -> dict[str, Any]:
    if not isinstance(content, Mapping):
        raise InputError(f"[{table.name}]", "must be a table (a [section] with key = value lines)")
    out = {}
    for name, value in content.items():
        key = table.key(name)
        if key is None:
            raise InputError(f"[{table.name}] {name}", f"unknown key; allowed keys: "
                                                       f"{', '.join(k.name for k in table.keys)}")
        out[name] = _value(key, value, f"[{table.name}] {name}", species)
    for key in table.keys:
        if key.required and key.name not in out:
            raise InputError(f"[{table.name}] {key.name}", f"missing key ({key.help}; e.g. {key.name} = "
                                                           f"{key.example})")
    return out


def _states(where: str, *axes: np.ndarray | None) -> None:
    count = math.prod(len(a) for a in axes if a is not None)
    if count > MAX_STATES:
        raise InputError(where, f"{count:,} states is more than {MAX_STATES:,}; use fewer points per axis")


@dataclass(frozen=True)
class ScoringCase:
    """A case file that only scores models against data ([case] and [scoring]): ``data`` (names or resolved
    paths), ``models``, ``bands`` [Pa] or None."""

    title: str
    data: tuple[str, ...]
    models: tuple[str, ...] | None
    bands: np.ndarray | None
    notes: str = ""
    path: str = ""


def parse_case(doc: Mapping[str, Any], path: str = "") -> Case | ScoringCase:
    """Check a case document (a dict as read from TOML) against the schema and convert it to SI units. A case
    holding only [case] and [scoring] gives a :class:`ScoringCase`."""
    for name in doc:
        if name not in TABLE_BY_NAME:
            raise InputError(f"[{name}]", f"unknown table; allowed tables: {', '.join(t.name for t in TABLES)}")
    if "scoring" in doc and set(doc) <= {"case", "scoring"}:
        scoring = _read_table(TABLE_BY_NAME["scoring"], doc["scoring"], ())
        info = _read_table(TABLE_BY_NAME["case"], doc.get("case", {}), ())
        base = Path(path).parent
        data = tuple(str(base / d) if d.lower().endswith((".csv", ".txt")) and not Path(d).is_absolute() else d
                     for d in scoring["data"])
        return ScoringCase(title=info.get("title", Path(path).stem or "scoring"), data=data,
                           models=scoring.get("models"), bands=scoring.get("bands"), notes=info.get("notes", ""),
                           path=path)
    if "scoring" in doc:
        raise InputError("[scoring]", "a scoring case holds only [case] and [scoring]; put the equilibrium "
                                      "tables in another case file")
    for table in TABLES:
        if table.required and table.name not in doc:
            raise InputError(f"[{table.name}]", f"missing table ({table.help})")
    mixture = _read_table(TABLE_BY_NAME["mixture"], doc["mixture"], ())
    species = mixture["species"]
    parts = {t.name: _read_table(t, doc[t.name], species) for t in TABLES
             if t.name in doc and not t.species_keys and t.name != "mixture"}

    feed: dict[str, float] = {}
    if not isinstance(doc["feed"], Mapping) or not doc["feed"]:
        raise InputError("[feed]", "must list at least one species with its amount, e.g. N2 = \"1 mol\"")
    for name, value in doc["feed"].items():
        if name not in species:
            raise InputError(f"[feed] {name}", f"not in [mixture] species ({', '.join(species)})")
        amount = _quantity(value, "amount", f"[feed] {name}")
        if not amount >= 0:
            raise InputError(f"[feed] {name}", "amount must be >= 0 mol")
        feed[name] = amount
    if not any(v > 0 for v in feed.values()):
        raise InputError("[feed]", "every amount is zero; give at least one positive amount")

    conditions = parts["conditions"]
    if ("pressure" in conditions) == ("volume" in conditions):
        raise InputError("[conditions]", "give exactly one of pressure (fixed pressure) or volume (sealed vessel)")
    model = dict(parts.get("model", {}))
    if model.get("volume_translation") == "none":
        model["volume_translation"] = None
    solver = dict(parts.get("solver", {}))
    if "tolerance" in solver:
        solver["tol"] = solver.pop("tolerance")

    sweep = parts.get("sweep")
    if sweep is not None:
        if not sweep:
            raise InputError("[sweep]", "give temperature and/or one of pressure or volume")
        if "pressure" in sweep and "volume" in sweep:
            raise InputError("[sweep]", "give one of pressure or volume, not both")
        if "volume" in sweep and "volume" not in conditions:
            raise InputError("[sweep] volume", "sweeps the volume of a sealed vessel: the case's [conditions] "
                                               "must give a volume too")
        if "pressure" in sweep and "pressure" not in conditions:
            raise InputError("[sweep] pressure", "the case is a sealed vessel ([conditions] volume): sweep the "
                                                 "volume instead")
        _states("[sweep]", sweep.get("temperature"), sweep.get("pressure"), sweep.get("volume"))
    grid = parts.get("map")
    if grid is not None:
        if "volume" in conditions:
            raise InputError("[map]", "maps are over temperature and pressure; the case is a sealed vessel "
                                      "([conditions] volume); use [sweep] with volume instead")
        _states("[map]", grid["temperature"], grid["pressure"], np.zeros(len(grid.get("models", ())) or 4))
    for name in ("adiabatic", "beds", "separator"):
        if name in parts and "volume" in conditions:
            raise InputError(f"[{name}]", "works at the case's pressure; the case is a sealed vessel "
                                          "([conditions] volume)")
    beds = parts.get("beds")
    if beds is not None and (beds.get("cooling") == "quench") != ("quench_temperature" in beds):
        raise InputError("[beds] quench_temperature", "give it exactly when cooling = \"quench\"")
    if "compare" in parts and "tolerance" in parts["compare"] and "relative_tolerance" in parts["compare"]:
        raise InputError("[compare]", "give tolerance or relative_tolerance, not both")
    report = parts.get("report", {})
    info = parts.get("case", {})
    return Case(title=info.get("title", Path(path).stem or "case"), species=species,
                reactions=mixture.get("reactions"), feed=feed, model=model, solver=solver,
                T=conditions["temperature"], P=conditions.get("pressure"), V=conditions.get("volume"),
                report_species=report.get("species"), key=report.get("key"), compare=parts.get("compare"),
                sweep=sweep, map=grid, adiabatic=parts.get("adiabatic"), beds=parts.get("beds"),
                separator=parts.get("separator"), notes=info.get("notes", ""), path=path)


def load_case(path: str | Path) -> Case | ScoringCase:
    """Read and check a TOML case file (UTF-8); errors name the file, the table and the key."""
    p = Path(path)
    if p.is_dir():
        raise InputError("case file", f"{p} is a folder; give the path of a .toml case file")
    if not p.is_file():
        raise InputError("case file", f"{p} does not exist")
    try:
        text = p.read_bytes().decode("utf-8")
    except UnicodeDecodeError as err:
        raise InputError("case file", f"{p} is not UTF-8 text (byte {err.start}); save it as UTF-8") from None
    except OSError as err:
        raise InputError("case file", f"{p} cannot be read: {err.strerror}") from None
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as err:
        raise InputError(f"case file {p}", f"not valid TOML: {err}") from None
    return parse_case(doc, str(p))
