"""Case files: one TOML description of an equilibrium job, with explicit units, for the CLI and the examples.

Layout (every table but ``[mixture]``, ``[feed]`` and ``[conditions]`` optional)::

    [case]        title, notes
    [mixture]     species = [...], reactions = [...] (optional: derived from the species when absent)
    [feed]        <species> = "<amount> <unit>"        e.g. N2 = "23.6 mol"
    [model]       eos = "PR", quantum_hydrogen = false, kij = { "H2-N2" = 0.08 }
    [conditions]  temperature = "440 degC", and pressure = "215 bar" or volume = "2.5 m3"
    [compare]     models = ["ideal", "PR"]
    [sweep]       temperature = ["380 degC", "500 degC", 7], pressure = ["100 bar", "400 bar", 4]

Every key is checked: an unknown table or key, a missing one, or a value with a missing or wrong unit gives an
:class:`~hipeq.errors.InputError` whose field names the key (``[conditions] pressure``).
"""
from __future__ import annotations

import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from hipeq.errors import InputError
from hipeq.units import parse_quantity

_SCHEMA: dict[str, dict[str, bool]] = {  # table -> key -> required
    "case": {"title": False, "notes": False},
    "mixture": {"species": True, "reactions": False},
    "feed": {},  # species names, checked against [mixture] species
    "model": {"eos": False, "quantum_hydrogen": False, "kij": False},
    "conditions": {"temperature": True, "pressure": False, "volume": False},
    "compare": {"models": False},
    "sweep": {"temperature": False, "pressure": False},
}
_REQUIRED_TABLES = ("mixture", "feed", "conditions")


@dataclass(frozen=True)
class Case:
    """A parsed case file, in SI units (K, Pa, m3, mol)."""

    title: str
    species: tuple[str, ...]
    reactions: tuple[str, ...] | None
    feed: dict[str, float]
    eos: str
    quantum_hydrogen: bool
    kij: dict[tuple[str, str], float]
    T: float
    P: float | None
    V: float | None
    compare_models: tuple[str, ...]
    sweep_T: np.ndarray | None = field(default=None, compare=False)
    sweep_P: np.ndarray | None = field(default=None, compare=False)
    notes: str = ""
    path: str = ""


def _quantity(value: Any, kind: str, where: str) -> float:
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        raise InputError(where, f"give a unit with the number, e.g. \"{value} {_EXAMPLE_UNIT[kind]}\"")
    if not isinstance(value, str):
        raise InputError(where, f"expected a quantity string such as \"1 {_EXAMPLE_UNIT[kind]}\", got {value!r}")
    try:
        return parse_quantity(value, kind)
    except InputError as err:
        raise InputError(where, str(err)) from None


_EXAMPLE_UNIT = {"temperature": "degC", "pressure": "bar", "volume": "m3", "amount": "mol"}


def _range(value: Any, kind: str, where: str) -> np.ndarray:
    if not (isinstance(value, list) and len(value) == 3 and isinstance(value[2], int) and value[2] >= 2):
        raise InputError(where, f"expected [start, stop, count] such as [\"1 {_EXAMPLE_UNIT[kind]}\", "
                                f"\"2 {_EXAMPLE_UNIT[kind]}\", 5] with count >= 2")
    lo = _quantity(value[0], kind, where + " start")
    hi = _quantity(value[1], kind, where + " stop")
    return np.linspace(lo, hi, value[2])


def _check_keys(doc: dict[str, Any]) -> None:
    for table, content in doc.items():
        if table not in _SCHEMA:
            raise InputError(f"[{table}]", f"unknown table; allowed tables: {', '.join(_SCHEMA)}")
        if not isinstance(content, dict):
            raise InputError(f"[{table}]", "must be a table (a [section] with key = value lines)")
        if table == "feed":
            continue
        for key in content:
            if key not in _SCHEMA[table]:
                raise InputError(f"[{table}] {key}",
                                 f"unknown key; allowed keys: {', '.join(_SCHEMA[table])}")
    for table in _REQUIRED_TABLES:
        if table not in doc:
            raise InputError(f"[{table}]", "missing table")
    for table, keys in _SCHEMA.items():
        for key, required in keys.items():
            if required and key not in doc.get(table, {}):
                raise InputError(f"[{table}] {key}", "missing key")


def parse_case(doc: dict[str, Any], path: str = "") -> Case:
    """Check a case document (a dict as read from TOML) against the schema and convert it to SI units."""
    _check_keys(doc)
    mix = doc["mixture"]
    species = mix["species"]
    if not (isinstance(species, list) and species and all(isinstance(s, str) for s in species)):
        raise InputError("[mixture] species", "expected a non-empty list of species names")
    reactions = mix.get("reactions")
    if reactions is not None and not (isinstance(reactions, list) and all(isinstance(r, str) for r in reactions)):
        raise InputError("[mixture] reactions", "expected a list of reaction strings such as \"N2 + 3 H2 = 2 NH3\"")

    feed: dict[str, float] = {}
    for name, value in doc["feed"].items():
        if name not in species:
            raise InputError(f"[feed] {name}", f"not in [mixture] species ({', '.join(species)})")
        amount = _quantity(value, "amount", f"[feed] {name}")
        if amount < 0:
            raise InputError(f"[feed] {name}", "amount must be >= 0 mol")
        feed[name] = amount

    model = doc.get("model", {})
    eos = model.get("eos", "PR")
    if not isinstance(eos, str):
        raise InputError("[model] eos", "expected a model name such as \"PR\"")
    quantum = model.get("quantum_hydrogen", False)
    if not isinstance(quantum, bool):
        raise InputError("[model] quantum_hydrogen", "expected true or false")
    kij: dict[tuple[str, str], float] = {}
    for pair, value in model.get("kij", {}).items():
        parts = pair.split("-")
        if len(parts) != 2 or not all(p in species for p in parts):
            raise InputError(f"[model] kij {pair}", "expected \"A-B\" with A and B in [mixture] species")
        if not isinstance(value, (int, float)) or isinstance(value, bool):
            raise InputError(f"[model] kij {pair}", "expected a number")
        kij[(parts[0], parts[1])] = float(value)

    cond = doc["conditions"]
    T = _quantity(cond["temperature"], "temperature", "[conditions] temperature")
    has_p, has_v = "pressure" in cond, "volume" in cond
    if has_p == has_v:
        raise InputError("[conditions]", "give exactly one of pressure or volume")
    P = _quantity(cond["pressure"], "pressure", "[conditions] pressure") if has_p else None
    V = _quantity(cond["volume"], "volume", "[conditions] volume") if has_v else None

    models = doc.get("compare", {}).get("models", [])
    if not (isinstance(models, list) and all(isinstance(m, str) for m in models)):
        raise InputError("[compare] models", "expected a list of model names")
    sweep = doc.get("sweep", {})
    sweep_T = _range(sweep["temperature"], "temperature", "[sweep] temperature") if "temperature" in sweep else None
    sweep_P = _range(sweep["pressure"], "pressure", "[sweep] pressure") if "pressure" in sweep else None

    info = doc.get("case", {})
    return Case(title=str(info.get("title", Path(path).stem or "case")), species=tuple(species),
                reactions=tuple(reactions) if reactions is not None else None, feed=feed, eos=eos,
                quantum_hydrogen=quantum, kij=kij, T=T, P=P, V=V, compare_models=tuple(models),
                sweep_T=sweep_T, sweep_P=sweep_P, notes=str(info.get("notes", "")), path=path)


def load_case(path: str | Path) -> Case:
    """Read and check a TOML case file; errors name the file, the table and the key."""
    p = Path(path)
    if not p.is_file():
        raise InputError("case file", f"{p} does not exist")
    try:
        doc = tomllib.loads(p.read_text())
    except tomllib.TOMLDecodeError as err:
        raise InputError(f"case file {p}", f"not valid TOML: {err}") from None
    return parse_case(doc, str(p))
