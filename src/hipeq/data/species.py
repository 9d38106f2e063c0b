"""Species records: identifiers, critical constants, standard-state thermochemistry and ideal-gas Cp.

``species(name)`` returns a frozen :class:`Species`. Look-up accepts the identifier (``"NH3"``), the common name or
an alias, case-insensitive (``"ammonia"``, ``"dimethyl ether"``), the formula where it is unique (``"H3N"``;
``"C2H6O"`` is ambiguous and raises, naming both) or the CAS number. The bundled list is ``species.toml``.

Where the constants come from: the databank values below (all but Gf and the Cp of Ar and He) are ``chemicals``
values. For the bundled species they are stored, with their source texts, in the generated file
``bundled_constants.toml`` (written by ``python docs/tools/regenerate_bundled_constants.py`` from the installed
chemicals and thermo, and checked against them by tests/data/test_bundled_constants.py), so building their records
imports neither chemicals nor pandas. A species that is not bundled (registered with a CAS number only) is looked
up live in ``chemicals``, imported then (:mod:`hipeq.data.databanks`). Either way the record and its ``sources``
texts are the same:

================  =====================================================================================
field             source (recorded per field in ``Species.sources``)
================  =====================================================================================
Tc, Pc, Vc, Zc,   ``chemicals.critical`` / ``chemicals.acentric``, default method (HEOS: the constants of
omega             the reference Helmholtz-energy equations of state where available); method recorded
molar_mass        ``chemicals.elements.molecular_weight`` of the formula (IUPAC standard atomic weights)
Hf                Active Thermochemical Tables (ATcT) version 1.112, ideal gas at 298.15 K
                  (``chemicals.reaction.Hfg(method="ATCT_G")``), chosen over JANAF because it covers every
                  bundled species from one thermochemical network and is the more recent evaluation
S0                CRC Handbook of Chemistry and Physics (2014), ideal gas at 298.15 K and 1 bar
                  (``chemicals.reaction.S0g(method="CRC")``), tabulated to 0.1 J/(mol K)
Gf                computed: Gf = Hf - 298.15 K (S0 - sum_e n_e S0_e), elements in their reference states
                  (H2, N2, O2 gas from these records; graphite S0 = 5.74 J/(mol K), CODATA key value,
                  Cox, Wagman & Medvedev 1989, equal to NIST-JANAF C(ref) at 298.15 K)
cp                TRC ideal-gas correlation (``chemicals.heat_capacity.TRC_gas_data``); Ar, He: 5/2 R
================  =====================================================================================

Users add or override species with :func:`register_species` or :func:`load_species_file` (same TOML layout as
the bundled file; SI numbers); every override is recorded in ``sources``.
"""
from __future__ import annotations

import difflib
import math
import re
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass
from importlib import resources
from pathlib import Path
from types import MappingProxyType
from typing import Any

from hipeq.data.databanks import databank_value
from hipeq.data.heat_capacity import HeatCapacity, heat_capacity_from_mapping
from hipeq.errors import InputError, UnknownSpeciesError

__all__ = ["Species", "AmbiguousSpeciesError", "species", "register_species", "load_species_file",
           "available_species", "reset_registry", "parse_formula", "T_REFERENCE", "GRAPHITE_S0"]

T_REFERENCE = 298.15  # [K]
GRAPHITE_S0 = 5.74  # [J/(mol K)] C(graphite), CODATA key value (Cox, Wagman & Medvedev 1989)
_R = 8.314462618
# element -> (identifier of its reference-state gas, atoms per molecule); carbon is graphite (GRAPHITE_S0)
_REFERENCE_GASES = {"H": ("H2", 2), "N": ("N2", 2), "O": ("O2", 2), "Ar": ("Ar", 1), "He": ("He", 1)}
_REFERENCE_IDENTS = {ref for ref, _ in _REFERENCE_GASES.values()}
_NUMBER_FIELDS = ("molar_mass", "Tc", "Pc", "omega", "Vc", "Zc", "Hf", "Gf", "S0")
_POSITIVE = {"molar_mass", "Tc", "Pc", "Vc", "Zc", "S0"}
_IDENTITY_FIELDS = ("common_name", "formula", "cas", "aliases")
_ALLOWED_KEYS = set(_NUMBER_FIELDS) | set(_IDENTITY_FIELDS) | {"cp", "source"}
_GF_TOLERANCE = 100.0  # [J/mol] allowed misfit of a given Gf against Hf and S0 (values rounded to 0.1 kJ/mol)
_IDENT = re.compile(r"^[A-Za-z][A-Za-z0-9_()\-]*$")
_FORMULA = re.compile(r"^(?:[A-Z][a-z]?\d*)+$")
_CAS = re.compile(r"^\d{2,7}-\d{2}-\d$")


class AmbiguousSpeciesError(UnknownSpeciesError):
    """A formula matches more than one registered species; ``suggestions`` lists their identifiers."""

    def __init__(self, name: str, suggestions: list[str], described: list[str]) -> None:
        super().__init__(name, suggestions)
        self.args = (f"formula {name!r} is ambiguous: {', '.join(described)}; give the identifier or name",)


@dataclass(frozen=True)
class Species:
    """One species (field order and meaning as in DEVELOPERS.md, SI units).

    name [-] identifier; molar_mass [kg/mol]; Tc [K]; Pc [Pa]; omega [-]; Vc [m3/mol]; Zc [-];
    Hf, Gf [J/mol] ideal gas at 298.15 K from the elements; S0 [J/(mol K)] absolute, ideal gas, 1 bar;
    cp: ideal-gas heat-capacity correlation; sources: field -> source text.
    """

    name: str
    common_name: str
    formula: str
    cas: str
    elements: Mapping[str, int]
    molar_mass: float
    Tc: float
    Pc: float
    omega: float
    Vc: float
    Zc: float
    Hf: float
    Gf: float
    S0: float
    cp: HeatCapacity
    sources: Mapping[str, str]

    def __hash__(self) -> int:
        return hash((self.name, self.formula, self.Hf, self.S0, self.Tc, self.Pc))

    def __repr__(self) -> str:
        return (f"Species({self.name!r}, {self.common_name!r}, Tc={self.Tc:g} K, Pc={self.Pc:g} Pa, "
                f"Hf={self.Hf:g} J/mol, S0={self.S0:g} J/(mol K))")


def parse_formula(formula: str) -> dict[str, int]:
    """Element counts of a plain formula such as ``"CH3OH"`` -> ``{"C": 1, "H": 4, "O": 1}`` (no brackets)."""
    if not isinstance(formula, str) or not _FORMULA.match(formula):
        raise InputError("formula", f"must be element symbols with counts, e.g. 'CH4O', got {formula!r}")
    counts: dict[str, int] = {}
    for symbol, count in re.findall(r"([A-Z][a-z]?)(\d*)", formula):
        counts[symbol] = counts.get(symbol, 0) + (int(count) if count else 1)
    if any(n == 0 for n in counts.values()):
        raise InputError("formula", f"zero element count in {formula!r}")
    return counts


def _composition_key(counts: Mapping[str, int]) -> tuple[tuple[str, int], ...]:
    return tuple(sorted(counts.items()))


def _normal(text: str) -> str:
    return " ".join(text.lower().split())


# ---------------------------------------------------------------- registry state (lazy, cached)
_bundled: dict[str, dict[str, Any]] | None = None
_user: dict[str, tuple[dict[str, Any], dict[str, str]]] = {}  # id -> (fields, field -> source text)
_records: dict[str, Species] = {}
_lookup: dict[str, Species] = {}
_index: dict[str, dict[str, Any]] | None = None


def _bundled_entries() -> dict[str, dict[str, Any]]:
    global _bundled
    if _bundled is None:
        text = resources.files("hipeq.data").joinpath("species.toml").read_text(encoding="utf-8")
        _bundled = tomllib.loads(text)["species"]
    return _bundled


def _entry(ident: str) -> tuple[dict[str, Any], dict[str, str]]:
    """Merged definition of ``ident``: (fields, field -> override source text)."""
    fields: dict[str, Any] = {}
    sources: dict[str, str] = {}
    base = _bundled_entries().get(ident)
    if base is not None:
        note = base.get("source", "bundled override")
        for key, value in base.items():
            if key not in _IDENTITY_FIELDS and key != "source":
                sources[key] = f"hipeq species.toml: {note}"
            fields[key] = value
    if ident in _user:
        user_fields, user_sources = _user[ident]
        fields.update(user_fields)
        sources.update(user_sources)
    fields.pop("source", None)
    return fields, sources


def available_species() -> tuple[str, ...]:
    """Identifiers of every registered species (bundled first, then user additions)."""
    return tuple(dict.fromkeys([*_bundled_entries(), *_user]))


def _build_index() -> dict[str, dict[str, Any]]:
    global _index
    if _index is None:
        names: dict[str, str] = {}
        cas: dict[str, str] = {}
        formulas: dict[tuple[tuple[str, int], ...], list[str]] = {}
        for ident in available_species():
            fields, _ = _entry(ident)
            for alias in [fields.get("common_name", ""), *fields.get("aliases", [])]:
                if alias:
                    names.setdefault(_normal(alias), ident)
            if fields.get("cas"):
                cas.setdefault(fields["cas"], ident)
            formulas.setdefault(_composition_key(parse_formula(fields["formula"])), []).append(ident)
        _index = {"names": names, "cas": cas, "formulas": formulas}
    return _index


def species(name: str | Species) -> Species:
    """The :class:`Species` record for an identifier, common name or alias (case-insensitive), formula (if
    unique) or CAS number. Cached: repeated calls are dictionary look-ups.

    Raises:
        UnknownSpeciesError: with close-match suggestions (difflib) when nothing matches;
            :class:`AmbiguousSpeciesError` (a subclass) when a formula matches several species.
    """
    if isinstance(name, Species):
        return name
    cached = _lookup.get(name)  # type: ignore[arg-type]
    if cached is not None:
        return cached
    if not isinstance(name, str):
        raise InputError("species", f"must be a name string or a Species, got {name!r}")
    record = _record(_resolve(name.strip()))
    _lookup[name] = record
    return record


def _resolve(name: str) -> str:
    """Identifier for ``name`` (see :func:`species` for the order of the rules)."""
    idents = available_species()
    if name in idents:
        return name
    index = _build_index()
    if _normal(name) in index["names"]:
        return index["names"][_normal(name)]
    if _CAS.match(name) and name in index["cas"]:
        return index["cas"][name]
    if _FORMULA.match(name):
        matches = index["formulas"].get(_composition_key(parse_formula(name)), [])
        if len(matches) == 1:
            return matches[0]
        if len(matches) > 1:
            described = [f"{m!r} ({_entry(m)[0].get('common_name', m)})" for m in matches]
            raise AmbiguousSpeciesError(name, list(matches), described)
    folded = [i for i in idents if i.lower() == name.lower()]
    if len(folded) == 1:
        return folded[0]
    keys = {i.lower(): i for i in idents} | {k: k for k in index["names"]}
    close = difflib.get_close_matches(name.lower(), list(keys), n=3, cutoff=0.6)
    raise UnknownSpeciesError(name, [keys[c] for c in close])


def _record(ident: str) -> Species:
    if ident not in _records:
        fields, overrides = _entry(ident)
        _records[ident] = _build(ident, fields, overrides)
    return _records[ident]


def _number(ident: str, field: str, value: Any) -> float:
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise InputError(field, f"species {ident!r}: must be a number (SI), got {value!r}") from None
    if not math.isfinite(number) or (field in _POSITIVE and number <= 0.0):
        rule = "finite and > 0" if field in _POSITIVE else "finite"
        raise InputError(field, f"species {ident!r}: must be {rule}, got {value!r}")
    return number


def _build(ident: str, fields: Mapping[str, Any], overrides: Mapping[str, str]) -> Species:
    formula = fields["formula"]
    elements = parse_formula(formula)
    cas = str(fields.get("cas", ""))
    values: dict[str, Any] = {}
    sources: dict[str, str] = {}
    derive = None
    if "Gf" in fields and "S0" in fields and "Hf" not in fields:
        derive = "Hf"
    elif "Gf" in fields and "S0" not in fields and ident not in _REFERENCE_IDENTS:
        derive = "S0"
    for field in (*_NUMBER_FIELDS, "cp"):
        if field == derive:
            continue
        if field in fields:
            raw = fields[field]
            values[field] = heat_capacity_from_mapping(raw) if field == "cp" else _number(ident, field, raw)
            sources[field] = overrides.get(field, "given")
        elif field not in ("Gf", "Vc", "Zc"):
            found = databank_value(field, cas, elements)
            if found is None or (field != "cp" and not math.isfinite(found[0])):
                raise InputError(field, f"species {ident!r}: no value in the databanks for CAS {cas or '-'}; "
                                        "give it in an override")
            values[field] = found[0] if field == "cp" else _number(ident, field, found[0])
            sources[field] = found[1]
    _complete_critical_volume(ident, values, sources, fields, cas, elements)
    _complete_gibbs(ident, elements, values, sources, derive)
    return Species(name=ident, common_name=str(fields.get("common_name", ident)), formula=formula, cas=cas,
                   elements=MappingProxyType(dict(elements)), cp=values.pop("cp"),
                   sources=MappingProxyType(sources), **values)


def _complete_critical_volume(ident: str, values: dict[str, Any], sources: dict[str, str],
                              fields: Mapping[str, Any], cas: str, elements: Mapping[str, int]) -> None:
    """Vc and Zc: from overrides or databanks; one given alone derives the other by Zc = Pc Vc / (R Tc)."""
    ratio = values["Pc"] / (_R * values["Tc"])
    if "Vc" in fields and "Zc" not in fields:
        values["Zc"], sources["Zc"] = values["Vc"] * ratio, "derived: Zc = Pc Vc / (R Tc)"
        return
    if "Zc" in fields and "Vc" not in fields:
        values["Vc"], sources["Vc"] = values["Zc"] / ratio, "derived: Vc = Zc R Tc / Pc"
        return
    for field in ("Vc", "Zc"):
        if field not in values:
            found = databank_value(field, cas, elements)
            if found is None:
                raise InputError(field, f"species {ident!r}: no value in the databanks; give Vc or Zc")
            values[field], sources[field] = _number(ident, field, found[0]), found[1]


def _reference_entropy_sum(ident: str, elements: Mapping[str, int], S0_self: float) -> float:
    """sum_e n_e S0_e [J/(mol K)] of the elements in their reference states at 298.15 K, 1 bar."""
    total = 0.0
    for element, count in elements.items():
        if element == "C":
            total += count * GRAPHITE_S0
        elif element in _REFERENCE_GASES:
            ref, atoms = _REFERENCE_GASES[element]
            s_ref = S0_self if ref == ident else species(ref).S0
            total += count * s_ref / atoms
        else:
            raise InputError("Gf", f"species {ident!r}: no reference-state entropy for element {element}; "
                                   "give Gf explicitly")
    return total


def _complete_gibbs(ident: str, elements: Mapping[str, int], values: dict[str, Any], sources: dict[str, str],
                    derive: str | None) -> None:
    """Gf = Hf - T0 (S0 - sum_e n_e S0_e), T0 = 298.15 K: computes Gf, or derives ``derive`` (Hf or S0) from a
    given Gf, or checks a given Gf against given Hf and S0 (misfit at most 100 J/mol)."""
    if derive == "S0":  # never for a reference gas, so the element sum does not involve this species
        ref = _reference_entropy_sum(ident, elements, math.nan)
        values["S0"] = (values["Hf"] - values["Gf"]) / T_REFERENCE + ref
        sources["S0"] = "derived from Hf and Gf: S0 = (Hf - Gf)/298.15 K + sum of element reference S0"
        return
    ref = _reference_entropy_sum(ident, elements, values["S0"])
    computed = values["Hf"] - T_REFERENCE * (values["S0"] - ref)
    if derive == "Hf":
        values["Hf"] = values["Gf"] + T_REFERENCE * (values["S0"] - ref)
        sources["Hf"] = "derived from Gf and S0: Hf = Gf + 298.15 K (S0 - sum of element reference S0)"
    elif "Gf" not in values:
        values["Gf"] = computed
        sources["Gf"] = "computed: Gf = Hf - 298.15 K (S0 - sum of element reference S0)"
    elif abs(values["Gf"] - computed) > _GF_TOLERANCE:
        raise InputError("Gf", f"species {ident!r}: Gf is inconsistent with Hf and S0 by "
                               f"{values['Gf'] - computed:.0f} J/mol (allowed {_GF_TOLERANCE:g}); "
                               "Gf = Hf - 298.15 K (S0 - sum of element S0): give at most two of them")


# ---------------------------------------------------------------- run-time registration
def _clear_caches() -> None:
    global _index
    _records.clear()
    _lookup.clear()
    _index = None


def reset_registry() -> None:
    """Forget every run-time registration and override (back to the bundled species list)."""
    _user.clear()
    _clear_caches()


def register_species(name: str, data: Mapping[str, Any] | None = None, /, *, source: str | None = None,
                     **fields: Any) -> Species:
    """Add a species, or override fields of a registered one, and return its new record.

    ``data`` and keyword ``fields`` use the keys of :class:`Species` with SI values (Tc [K], Pc [Pa],
    Vc [m3/mol], molar_mass [kg/mol], Hf and Gf [J/mol], S0 [J/(mol K)]) plus ``aliases`` and ``cp`` (a table,
    e.g. ``{"form": "polynomial", "coefficients": [a0, a1, a2], "T_min": 298.15, "T_max": 1500}`` for
    Cp = a0 + a1 T + a2 T^2 [J/(mol K)]). Gf, Hf and S0 obey Gf = Hf - 298.15 K (S0 - sum_e n_e S0_e): give
    any two. A new species needs ``formula`` and either a ``cas`` known to ``chemicals`` or every constant.
    ``source`` is recorded beside each overridden field in ``Species.sources``.

    Raises:
        InputError: naming the bad field; the registry is left unchanged.
    """
    merged = {**(data or {}), **fields}
    merged.setdefault("source", source or "register_species")
    if source is not None:
        merged["source"] = source
    return _register_many({name: merged}, default_note="register_species")[0]


def load_species_file(path: str | Path) -> list[Species]:
    """Register every ``[species.<identifier>]`` table of a TOML file (layout of the bundled species.toml).

    All or nothing: if one entry is invalid, InputError names it and no entry is registered.
    """
    file = Path(path)
    try:
        document = tomllib.loads(file.read_text(encoding="utf-8"))
    except OSError as exc:
        raise InputError("path", f"cannot read species file {str(file)!r}: {exc.strerror}") from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError("path", f"{str(file)!r} is not valid TOML: {exc}") from None
    extra = set(document) - {"species"}
    if extra or not isinstance(document.get("species"), dict):
        raise InputError("path", f"{str(file)!r} must hold only [species.<identifier>] tables (found {sorted(extra)})")
    return _register_many(document["species"], default_note=f"file {file.name}")


def _register_many(tables: Mapping[str, Any], default_note: str) -> list[Species]:
    saved = {k: (dict(v[0]), dict(v[1])) for k, v in _user.items()}
    try:
        idents = [_register_one(name, table, default_note) for name, table in tables.items()]
        _clear_caches()
        return [species(ident) for ident in idents]
    except Exception:
        _user.clear()
        _user.update(saved)
        _clear_caches()
        raise


def _register_one(name: str, table: Any, default_note: str) -> str:
    if not isinstance(table, Mapping):
        raise InputError(f"species.{name}", "must be a table of fields")
    unknown = set(table) - _ALLOWED_KEYS
    if unknown:
        raise InputError(f"species.{name}.{sorted(unknown)[0]}",
                         f"unknown field; allowed: {', '.join(sorted(_ALLOWED_KEYS))}")
    note = str(table.get("source", default_note))
    body = {k: v for k, v in table.items() if k != "source"}
    if name in available_species():
        ident = name
    elif "formula" in body:
        if not isinstance(name, str) or not _IDENT.match(name):
            raise InputError("name", f"identifier must start with a letter and hold letters, digits, _()- only, "
                                     f"got {name!r}")
        ident = name
        if body.get("cas") and body["cas"] in _build_index()["cas"]:
            raise InputError("cas", f"{body['cas']} is already registered as {_build_index()['cas'][body['cas']]!r}")
    else:
        ident = _resolve(name)  # override by name or CAS; unknown names raise UnknownSpeciesError
    _clear_caches()
    existing = _entry(ident)[0] if ident in available_species() else {}
    if existing and "formula" in body and parse_formula(body["formula"]) != parse_formula(existing["formula"]):
        raise InputError("formula", f"cannot change the formula of {ident!r}; register a new identifier")
    user_fields, user_sources = _user.get(ident, ({}, {}))
    user_fields = {**user_fields, **body}
    user_sources = {**user_sources, **{k: f"override: {note}" for k in body if k not in _IDENTITY_FIELDS}}
    _user[ident] = (user_fields, user_sources)
    _clear_caches()
    species(ident)  # validate now, so that the caller's error points at this entry
    return ident
