"""Regenerate src/hipeq/data/bundled_constants.toml from the installed chemicals and thermo.

    .venv/bin/python docs/tools/regenerate_bundled_constants.py          # rewrite the file
    .venv/bin/python docs/tools/regenerate_bundled_constants.py --check  # exit 1 if the file is out of date

Run it after adding a species to src/hipeq/data/species.toml or upgrading chemicals or thermo. For every species of
species.toml it stores what the live look-ups of :mod:`hipeq.data.databanks` give for its CAS number (molar mass
of its formula, Tc, Pc, Vc, Zc, omega, Hf, S0, the TRC Cp row, each with its source text) and the k_ij of every
pair of bundled CAS numbers in thermo's table 'ChemSep PR'. The same functions serve user species at run time, so
a bundled record is identical to the one a live look-up would give. tests/data/test_bundled_constants.py
rebuilds the document in memory with :func:`build_document` and compares it with the file.
"""
from __future__ import annotations

import argparse
import json
import sys
import tomllib
from itertools import combinations
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
DATA = ROOT / "src" / "hipeq" / "data"
COMMAND = "python docs/tools/regenerate_bundled_constants.py"


def build_document() -> dict[str, Any]:
    """{"species": {cas: entry}, "kij": {...}} from chemicals and thermo for the species of species.toml (the
    layout of bundled_constants.toml without its ``generator`` table)."""
    from hipeq.data.databanks import DATABANK_TABLE, FIELDS, SOURCE_DATABANK, chemicals_value, thermo_kij
    from hipeq.data.species import parse_formula

    listed = tomllib.loads((DATA / "species.toml").read_text(encoding="utf-8"))["species"]
    entries: dict[str, dict[str, Any]] = {}
    for ident, table in listed.items():
        cas = table["cas"]
        if cas in entries:
            raise SystemExit(f"species.toml: CAS {cas} of {ident!r} is also {entries[cas]['identifier']!r}")
        elements = parse_formula(table["formula"])
        entry: dict[str, Any] = {"identifier": ident, "formula": table["formula"], "elements": elements}
        for field in FIELDS:
            found = chemicals_value(field, cas, elements)
            if found is None:
                continue
            value, source = found
            if field == "cp":
                entry[field] = {"coefficients": list(value.coefficients), "T_min": value.T_min,
                                "T_max": value.T_max, "source": source}
            else:
                entry[field] = {"value": float(value), "source": source}
        entries[cas] = entry
    pairs = []
    for cas_a, cas_b in combinations(entries, 2):
        value = thermo_kij(cas_a, cas_b)
        if value != thermo_kij(cas_b, cas_a):
            raise SystemExit(f"thermo IPDB {DATABANK_TABLE!r}: k_ij of {cas_a}/{cas_b} depends on the order")
        if value is not None:
            pairs.append([cas_a, cas_b, value])
    return {"species": entries, "kij": {"table": DATABANK_TABLE, "source": SOURCE_DATABANK, "pairs": pairs}}


def _value(value: Any) -> str:
    """TOML text of a value: floats by repr (round-trips exactly), strings JSON-escaped (valid TOML)."""
    if isinstance(value, bool):
        raise TypeError("no booleans in the bundled constants")
    if isinstance(value, float):
        return repr(value)
    if isinstance(value, int):
        return str(value)
    if isinstance(value, str):
        return json.dumps(value, ensure_ascii=False)
    if isinstance(value, list):
        return "[" + ", ".join(_value(v) for v in value) + "]"
    if isinstance(value, dict):
        return "{ " + ", ".join(f"{k} = {_value(v)}" for k, v in value.items()) + " }"
    raise TypeError(f"cannot write {value!r}")


def render(document: dict[str, Any]) -> str:
    """The text of bundled_constants.toml for ``document`` (see :func:`build_document`), with its header."""
    import chemicals
    import thermo

    names = {cas: entry["identifier"] for cas, entry in document["species"].items()}
    lines = [
        "# GENERATED FILE - do not edit by hand. Regenerate with",
        f"#     .venv/bin/{COMMAND}",
        "# after editing species.toml or upgrading chemicals or thermo; tests/data/test_bundled_constants.py fails while",
        "# this file differs from what the installed chemicals and thermo give.",
        "#",
        "# Databank values for the bundled species (species.toml), keyed by CAS number, so that records and models of",
        "# these species are built without importing chemicals, pandas or thermo. Each value carries the source text",
        "# that hipeq records in Species.sources / KijAssignment.sources. SI units. Where each value comes from:",
        "#   molar_mass [kg/mol]    chemicals.elements.molecular_weight of the formula / 1000 (IUPAC atomic weights)",
        "#   Tc [K], Pc [Pa], Vc [m3/mol], Zc [-]   chemicals.critical, first (default) method: HEOS where available",
        "#   omega [-]              chemicals.acentric, first (default) method",
        "#   Hf [J/mol]             chemicals.reaction.Hfg(method='ATCT_G'): Active Thermochemical Tables 1.112",
        "#   S0 [J/(mol K)]         chemicals.reaction.S0g(method='CRC'): CRC Handbook of Chemistry and Physics 2014",
        "#   cp                     chemicals.heat_capacity.TRC_gas_data row: a0..a7, Tmin, Tmax [K] (TRC 1994)",
        "#   kij [-]                thermo.interaction_parameters.IPDB, table 'ChemSep PR', every pair of bundled",
        "#                          CAS numbers that has a value (a pair not listed has none: hipeq uses zero)",
        "# A field missing from a species table has no databank value (e.g. no TRC row for Ar and He).",
        "",
        "[generator]",
        f"command = {_value(COMMAND)}",
        f"chemicals = {_value(chemicals.__version__)}",
        f"thermo = {_value(thermo.__version__)}",
        "",
        "[kij]",
        f"table = {_value(document['kij']['table'])}",
        f"source = {_value(document['kij']['source'])}",
        "pairs = [  # [cas_a, cas_b, k_ij]",
        *(f"    {_value(pair)},  # {names[pair[0]]}-{names[pair[1]]}" for pair in document["kij"]["pairs"]),
        "]",
    ]
    for cas, entry in document["species"].items():
        lines += ["", f"[species.{_value(cas)}]  # {entry['identifier']}"]
        lines += [f"{key} = {_value(value)}" for key, value in entry.items()]
    return "\n".join(lines) + "\n"


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--check", action="store_true", help="do not write; exit 1 if the file is out of date")
    args = parser.parse_args(argv)
    from hipeq.data.databanks import BUNDLED_FILE

    path = DATA / BUNDLED_FILE
    text = render(build_document())
    current = path.read_text(encoding="utf-8") if path.exists() else ""
    if args.check:
        print(f"{path}: {'up to date' if current == text else 'OUT OF DATE'}")
        return 0 if current == text else 1
    path.write_text(text, encoding="utf-8")
    print(f"wrote {path}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
