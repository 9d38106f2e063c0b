"""Databank values of species constants and k_ij: stored for the bundled species, looked up live otherwise.

The values the bundled species (``species.toml``) need from ``chemicals`` and ``thermo`` are stored in the
generated file ``bundled_constants.toml`` of this package, so that building records and models for them imports
neither ``chemicals`` (nor the ``pandas`` it reads its tables with) nor ``thermo``. A CAS number that is not in the
file (a user species) is looked up live, with the same functions that generate the file:

- :func:`chemicals_value` (``chemicals`` databanks: critical constants, acentric factor, ATcT Hf, CRC S0, TRC Cp
  coefficients, molar mass of the formula);
- :func:`thermo_kij` (``thermo``'s interaction-parameter databank, table 'ChemSep PR').

The file is rebuilt with ``python docs/tools/regenerate_bundled_constants.py``; tests/data/test_bundled_constants.py
fails whenever it differs from what the installed chemicals and thermo give.
"""
from __future__ import annotations

import tomllib
from collections.abc import Mapping
from importlib import resources
from typing import Any

from hipeq.data.heat_capacity import TRCHeatCapacity

__all__ = ["FIELDS", "BUNDLED_FILE", "DATABANK_TABLE", "SOURCE_DATABANK", "chemicals_value", "thermo_kij",
           "databank_value", "databank_kij_pair", "bundled_constants"]

FIELDS = ("molar_mass", "Tc", "Pc", "Vc", "Zc", "omega", "Hf", "S0", "cp")  # fields with a databank source
BUNDLED_FILE = "bundled_constants.toml"
DATABANK_TABLE = "ChemSep PR"
SOURCE_DATABANK = f"thermo IPDB {DATABANK_TABLE!r}"

Found = tuple[Any, str] | None  # (value, source text) or None where the databank has no value

_stored: dict[str, Any] | None = None


def chemicals_value(field: str, cas: str, elements: Mapping[str, int]) -> Found:
    """(value, source text) of ``field`` for ``cas`` (molar_mass: for the formula ``elements``) from the
    ``chemicals`` databanks, or None where they have none. Imports ``chemicals`` (and pandas) on first use.

    Values: molar_mass [kg/mol] = molecular_weight(elements) / 1000 (IUPAC standard atomic weights); Tc [K],
    Pc [Pa], Vc [m3/mol], Zc [-], omega [-] by the first (default) method of ``chemicals.critical`` /
    ``chemicals.acentric`` (HEOS where available); Hf [J/mol] ATcT 1.112 (``Hfg``, method ATCT_G); S0 [J/(mol K)]
    CRC Handbook 2014 (``S0g``, method CRC); cp a :class:`TRCHeatCapacity` from ``TRC_gas_data``.
    """
    if field == "molar_mass":
        from chemicals.elements import molecular_weight
        try:
            return molecular_weight(dict(elements)) / 1000.0, "chemicals.elements.molecular_weight (IUPAC atomic weights)"
        except (KeyError, ValueError):
            return None
    if not cas:
        return None
    if field in ("Tc", "Pc", "Vc", "Zc", "omega"):
        from chemicals import acentric, critical
        module = acentric if field == "omega" else critical
        methods = getattr(module, f"{field}_methods")(cas)
        if not methods:
            return None
        value = getattr(module, field)(cas, method=methods[0])
        return value, f"chemicals.{module.__name__.split('.')[-1]}.{field}, method {methods[0]}"
    if field == "Hf":
        from chemicals import reaction
        if "ATCT_G" not in reaction.Hfg_methods(cas):
            return None
        unc = reaction.Hfg_ATcT_data.loc[cas, "uncertainty"] if cas in reaction.Hfg_ATcT_data.index else 0
        return reaction.Hfg(cas, method="ATCT_G"), f"ATcT 1.112 (chemicals method ATCT_G), ±{unc:g} J/mol"
    if field == "S0":
        from chemicals import reaction
        if "CRC" not in reaction.S0g_methods(cas):
            return None
        return reaction.S0g(cas, method="CRC"), "CRC Handbook of Chemistry and Physics 2014 (chemicals method CRC)"
    if field == "cp":
        from chemicals.heat_capacity import TRC_gas_data
        if cas not in TRC_gas_data.index:
            return None
        row = TRC_gas_data.loc[cas]
        coeffs = tuple(float(row[f"a{k}"]) for k in range(8))
        cp = TRCHeatCapacity(coeffs, float(row["Tmin"]), float(row["Tmax"]))  # type: ignore[arg-type]
        return cp, f"TRC ideal-gas Cp (chemicals TRC_gas_data), {cp.T_min:g}-{cp.T_max:g} K"
    return None


def thermo_kij(cas_a: str, cas_b: str) -> float | None:
    """k_ij [-] of a CAS pair in ``thermo``'s interaction-parameter databank, table 'ChemSep PR' (ChemSep's
    Peng-Robinson k_ij, ``thermo.interaction_parameters.IPDB``), or None when the pair is missing. Imports thermo
    (about 0.2 s) on first use."""
    from thermo.interaction_parameters import IPDB

    pair = [cas_a, cas_b]
    if not IPDB.has_ip_specific(DATABANK_TABLE, pair, "kij"):
        return None
    return float(IPDB.get_ip_specific(DATABANK_TABLE, pair, "kij"))


def bundled_constants() -> dict[str, Any]:
    """The parsed ``bundled_constants.toml`` (read once): ``species`` (CAS -> identifier, formula, elements and
    per field {value, source}; cp: {coefficients, T_min, T_max, source}), ``kij`` (table, source, pairs
    [cas_a, cas_b, k_ij]) and ``generator`` (command and library versions)."""
    global _stored
    if _stored is None:
        text = resources.files("hipeq.data").joinpath(BUNDLED_FILE).read_text(encoding="utf-8")
        document = tomllib.loads(text)
        document["kij_index"] = {frozenset(p[:2]): float(p[2]) for p in document["kij"]["pairs"]}
        _stored = document
    return _stored


def databank_value(field: str, cas: str, elements: Mapping[str, int]) -> Found:
    """(value, source text) of ``field`` as :func:`chemicals_value` gives it: from the bundled file when ``cas`` is
    a bundled species (and, for molar_mass, ``elements`` is its formula), else live from ``chemicals``."""
    entry = bundled_constants()["species"].get(cas) if cas else None
    if entry is None or (field == "molar_mass" and dict(elements) != entry["elements"]):
        return chemicals_value(field, cas, elements)
    stored = entry.get(field)
    if stored is None:  # the databanks have no value for this bundled CAS
        return None
    if field == "cp":
        coefficients = tuple(stored["coefficients"])
        return TRCHeatCapacity(coefficients, stored["T_min"], stored["T_max"]), stored["source"]  # type: ignore[arg-type]
    return stored["value"], stored["source"]


def databank_kij_pair(cas_a: str, cas_b: str) -> float | None:
    """k_ij [-] of a CAS pair as :func:`thermo_kij` gives it: from the bundled file when both are bundled species,
    else live from ``thermo``."""
    stored = bundled_constants()
    if cas_a in stored["species"] and cas_b in stored["species"]:
        return stored["kij_index"].get(frozenset((cas_a, cas_b)))
    return thermo_kij(cas_a, cas_b)
