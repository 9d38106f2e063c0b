"""Measured equilibria as data sets: the bundled ones (one file per source) and the user's own, in one CSV layout.

The layout (hipeq's own; documented with a worked example in docs/scoring.md):

* ``#`` lines at the top carry metadata as ``# key: value`` (a line without a colon continues the previous
  value). Keys: ``name``, ``title``, ``label`` (for legends), ``citation``, ``doi``, ``kind`` (``measured``,
  ``from memory`` or ``invented``), ``conditions``, ``uncertainty``, ``transcription``, ``reactions`` (``;``
  between reactions; default: derived from the species), ``species`` (extra species present but neither fed nor
  measured, comma separated), ``closure`` (``complete`` when the ``y`` columns name every species: they must then
  sum to one). Unknown keys are kept.
* One header row of columns, each ``QUANTITY [UNIT]``:

  | column | units |
  |---|---|
  | ``T [..]`` (required) | K, degC, degF, degR |
  | ``P [..]`` or ``V [..]`` (exactly one) | Pa, kPa, MPa, bar, atm, psi, ... / m3, L, cm3 |
  | ``feed SPECIES [..]`` (at least one) | mol, kmol, mmol (amounts), ``-`` or ``mol %`` (fractions, summing to 1) |
  | ``y SPECIES [..]`` measured mole fraction | ``-``, ``mol %``, ``ppm`` |
  | ``conversion SPECIES [..]`` measured (n0 - n)/n0 of a fed species | ``-``, ``%`` |
  | ``u(y SPECIES) [..]``, ``u(conversion SPECIES) [..]`` stated uncertainty | as the quantity |
  | ``source``, ``note`` (free text; a note containing "from memory" flags the row) | |

  At least one ``y`` or ``conversion`` column. With ``V`` the feed must be amounts (the vessel's contents).
* Checks on load, each failure an :class:`~hipeq.errors.InputError` naming the file, the line and the column:
  a missing or unknown column, a unit that does not fit the quantity, a value that is not a number, T <= 0 K,
  P outside (0, 5000] bar, feed fractions or a complete composition that do not sum to one within 0.005, a
  mole fraction or conversion outside [0, 1], an unknown species.

Values are converted to SI on load: T [K], P [Pa], V [m3], feed amounts [mol] (fractions taken as mol per mol
of feed), y and conversion as fractions [-].
"""
from __future__ import annotations

import csv
import functools
import io
import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path
from types import MappingProxyType
from typing import Any

import numpy as np

from hipeq.errors import HipeqError, InputError
from hipeq.units import parse_quantity

__all__ = ["Dataset", "MAX_PRESSURE", "CLOSURE_TOLERANCE", "bundled_datasets", "datasets", "load_dataset",
           "parse_dataset"]

MAX_PRESSURE = 5000e5  # [Pa], the upper end of the range a data file may hold (0-5000 bar)
CLOSURE_TOLERANCE = 0.005  # mole fractions summing to one within half a mole-percent point (common practice)
_HEADER = re.compile(r"^\s*(?P<what>.+?)\s*\[\s*(?P<unit>[^\]]*?)\s*\]\s*$")
_FRACTION_UNITS = {"-": 1.0, "mol/mol": 1.0, "mol %": 0.01, "mol%": 0.01, "%": 0.01, "ppm": 1e-6}
_Y_UNITS = ("-", "mol/mol", "mol %", "mol%", "ppm")
_CONVERSION_UNITS = ("-", "%")
_FEED_FRACTIONS = ("-", "mol/mol", "mol %", "mol%")
_DIMENSIONS = {"T": "temperature", "P": "pressure", "V": "volume"}


@dataclass(frozen=True)
class Dataset:
    """Equilibrium points with what was measured at each.

    ``T`` [K], ``P`` [Pa] or ``V`` [m3] (one of them None), ``feed`` (n_points, n_feed) [mol] for
    ``feed_species``, ``measured`` maps ``("y", species)`` or ``("conversion", species)`` to values [-] (NaN where
    a row leaves it blank) and ``uncertainty`` the same for stated uncertainties; ``units`` the unit each column
    was given in; ``source`` and ``note`` per row, ``lines`` the file line of each row; ``meta`` the ``#``
    metadata."""

    name: str
    path: str
    T: np.ndarray
    P: np.ndarray | None
    V: np.ndarray | None
    feed_species: tuple[str, ...]
    feed: np.ndarray
    measured: Mapping[tuple[str, str], np.ndarray]
    uncertainty: Mapping[tuple[str, str], np.ndarray]
    units: Mapping[str, str]
    source: tuple[str, ...]
    note: tuple[str, ...]
    lines: tuple[int, ...]
    meta: Mapping[str, str] = field(default_factory=dict)

    def __len__(self) -> int:
        return int(self.T.size)

    @property
    def label(self) -> str:
        """Short label for legends and tables (``label`` metadata, else the name)."""
        return self.meta.get("label", self.name)

    @property
    def citation(self) -> str:
        """The full citation (``citation`` metadata; empty for a user file without one)."""
        return self.meta.get("citation", "")

    @property
    def species(self) -> tuple[str, ...]:
        """Every species of the data set: fed, measured and listed under ``species``, in that order."""
        names = list(self.feed_species) + [s for _, s in self.measured]
        names += [s.strip() for s in self.meta.get("species", "").split(",") if s.strip()]
        return tuple(dict.fromkeys(names))

    @property
    def reactions(self) -> tuple[str, ...] | None:
        """The ``reactions`` metadata split at ``;`` (None: derive them from the species)."""
        text = self.meta.get("reactions", "").strip()
        return tuple(r.strip() for r in text.split(";") if r.strip()) or None

    @property
    def from_memory(self) -> np.ndarray:
        """True for rows flagged "from memory" (in their note, or every row when ``kind`` says so)."""
        whole = "from memory" in self.meta.get("kind", "").lower()
        return np.array([whole or "from memory" in n.lower() for n in self.note], dtype=bool)


def _fail(path: str, line: int | None, column: str | None, message: str) -> InputError:
    where = path + (f", line {line}" if line is not None else "") + (f", column {column!r}" if column else "")
    return InputError(where, message)


def _columns(path: str, header: list[str], line: int) -> dict[str, tuple[str, str | None, str]]:
    """header text -> (kind, species or None, unit) with kind T, P, V, feed, y, conversion, u(y), u(conversion),
    source, note."""
    out: dict[str, tuple[str, str | None, str]] = {}
    for col in header:
        text = col.strip()
        if text.lower() in ("source", "note"):
            out[col] = (text.lower(), None, "")
            continue
        m = _HEADER.match(text)
        if not m:
            raise _fail(path, line, text, "a column is 'QUANTITY [UNIT]' (e.g. 'T [degC]', 'y NH3 [mol %]'), "
                                          "'source' or 'note'")
        what, unit = m.group("what"), m.group("unit")
        parts = what.split()
        u = re.match(r"^u\(\s*(y|conversion)\s+(\S+)\s*\)$", what)
        if u:
            kind, name = f"u({u.group(1)})", u.group(2)
        elif parts[0] in _DIMENSIONS and len(parts) == 1:
            kind, name = parts[0], None
        elif parts[0] in ("feed", "y", "conversion") and len(parts) == 2:
            kind, name = parts[0], parts[1]
        else:
            raise _fail(path, line, text, "unknown quantity; use T, P, V, 'feed SPECIES', 'y SPECIES', "
                                          "'conversion SPECIES', 'u(y SPECIES)', 'u(conversion SPECIES)'")
        allowed: tuple[str, ...]
        if kind in _DIMENSIONS:
            try:
                parse_quantity(f"1 {unit}", _DIMENSIONS[kind])
            except InputError as err:
                raise _fail(path, line, text, f"bad unit {unit!r}: {err}") from None
        else:
            base = kind.strip("u()")
            allowed = {"feed": ("mol", "kmol", "mmol") + _FEED_FRACTIONS, "y": _Y_UNITS,
                       "conversion": _CONVERSION_UNITS}[base]
            if unit not in allowed:
                raise _fail(path, line, text, f"bad unit {unit!r} for {base}; allowed: {', '.join(allowed)}")
        if col in out:
            raise _fail(path, line, text, "the column appears twice")
        out[col] = (kind, name, unit)
    kinds = [k for k, _, _ in out.values()]
    if "T" not in kinds:
        raise _fail(path, line, "T", "missing column: T [K or degC]")
    if ("P" in kinds) == ("V" in kinds):
        raise _fail(path, line, "P", "give exactly one of the columns P [pressure unit] and V [volume unit]")
    if "feed" not in kinds:
        raise _fail(path, line, "feed", "missing column: at least one 'feed SPECIES [mol or mol %]'")
    if "y" not in kinds and "conversion" not in kinds:
        raise _fail(path, line, "y", "missing column: at least one measured 'y SPECIES [..]' or "
                                     "'conversion SPECIES [..]'")
    feed_units = {("amount" if u in ("mol", "kmol", "mmol") else "fraction") for k, _, u in out.values()
                  if k == "feed"}
    if len(feed_units) > 1:
        raise _fail(path, line, "feed", "give every feed column as amounts (mol) or every one as fractions")
    for k, name, _ in out.values():
        if k.startswith("u(") and (k[2:-1], name) not in {(kk, n) for kk, n, _ in out.values()}:
            raise _fail(path, line, f"{k[:-1]} {name})", f"an uncertainty of {k[2:-1]} {name} needs that column")
    return out


def _number(path: str, line: int, column: str, text: str, dimension: str | None = None, unit: str = "",
            blank_ok: bool = False) -> float:
    text = text.strip()
    if not text:
        if blank_ok:
            return float("nan")
        raise _fail(path, line, column, "is empty; give a number")
    try:
        value = float(text)
    except ValueError:
        raise _fail(path, line, column, f"{text!r} is not a number") from None
    if not np.isfinite(value):
        raise _fail(path, line, column, f"{text!r} is not a finite number")
    if dimension is not None:
        return parse_quantity(f"{text} {unit}", dimension)
    return value


def parse_dataset(text: str, path: str = "<text>", name: str | None = None) -> Dataset:
    """A :class:`Dataset` from the text of a data file (layout in the module docstring); ``path`` is used in
    error messages, ``name`` overrides the ``name`` metadata."""
    from hipeq.data.species import species as lookup

    meta: dict[str, str] = {}
    lines = text.splitlines()
    body_start, last = 0, None
    for k, raw in enumerate(lines):
        if raw.startswith("#"):
            content = raw[1:].strip()
            m = re.match(r"^([A-Za-z_][\w ]*?)\s*:\s*(.*)$", content)
            if m and m.group(1).lower() in _META_KEYS | {x.lower() for x in meta}:
                last = m.group(1).lower()
                meta[last] = m.group(2).strip()
            elif last is not None and content:
                meta[last] = (meta[last] + " " + content).strip()
            body_start = k + 1
        elif raw.strip():
            break
        else:
            body_start = k + 1
    first_line = body_start + 1
    rows = list(csv.reader(io.StringIO("\n".join(lines[body_start:]))))
    if not rows:
        raise _fail(path, None, None, "no header row of columns (e.g. 'T [degC],P [bar],feed N2 [mol],...')")
    header = rows[0]
    cols = _columns(path, header, first_line)
    # species: every name must be known
    for col, (kind, name, _) in cols.items():
        if name is not None:
            try:
                canonical = lookup(name).name
            except (HipeqError, KeyError) as err:
                raise _fail(path, first_line, col, f"{err}") from None
            cols[col] = (kind, canonical, cols[col][2])
    feed_cols = [c for c, (k, _, _) in cols.items() if k == "feed"]
    feed_species = tuple(cols[c][1] for c in feed_cols)  # type: ignore[misc]
    if len(set(feed_species)) != len(feed_species):
        raise _fail(path, first_line, "feed", "each species may be fed in one column only")
    fractions = cols[feed_cols[0]][2] in _FEED_FRACTIONS
    for col, (kind, name, _) in cols.items():
        if kind in ("conversion", "u(conversion)") and name not in feed_species:
            raise _fail(path, first_line, col, f"a conversion is of a fed species; {name} has no 'feed {name}' column")
    data_rows = [(first_line + 1 + k, r) for k, r in enumerate(rows[1:]) if any(x.strip() for x in r)]
    if not data_rows:
        raise _fail(path, None, None, "no data rows below the header")
    n = len(data_rows)
    kind_pv = "P" if any(k == "P" for k, _, _ in cols.values()) else "V"
    T, PV, feed = np.empty(n), np.empty(n), np.empty((n, len(feed_cols)))
    measured = {(k, s): np.full(n, np.nan) for k, s, _ in cols.values() if k in ("y", "conversion")}
    uncertainty = {(k[2:-1], s): np.full(n, np.nan) for k, s, _ in cols.values() if k.startswith("u(")}
    source, note, line_no = [], [], []
    y_cols = [c for c, (k, _, _) in cols.items() if k == "y"]
    meta_species = [s.strip() for s in meta.get("species", "").split(",") if s.strip()]
    complete = meta.get("closure", "").strip().lower() == "complete"
    for line, row in data_rows:
        if len(row) != len(header):
            raise _fail(path, line, None, f"has {len(row)} fields, the header has {len(header)}")
        i = len(line_no)
        line_no.append(line)
        cells = dict(zip(header, row))
        source.append(cells.get(next((c for c, v in cols.items() if v[0] == "source"), ""), "").strip())
        note.append(cells.get(next((c for c, v in cols.items() if v[0] == "note"), ""), "").strip())
        for col, (kind, name, unit) in cols.items():
            cell = cells[col]
            if kind == "T":
                T[i] = _number(path, line, col, cell, "temperature", unit)
                if not T[i] > 0.0:
                    raise _fail(path, line, col, f"temperature {cell.strip()} {unit} is not above 0 K")
            elif kind in ("P", "V"):
                PV[i] = _number(path, line, col, cell, _DIMENSIONS[kind], unit)
                if kind == "P" and not 0.0 < PV[i] <= MAX_PRESSURE:
                    raise _fail(path, line, col, f"pressure {cell.strip()} {unit} is outside 0-5000 bar "
                                                 "(allowed: > 0 and <= 5000 bar)")
                if kind == "V" and not PV[i] > 0.0:
                    raise _fail(path, line, col, f"volume {cell.strip()} {unit} must be > 0")
            elif kind == "feed":
                j = feed_cols.index(col)
                value = _number(path, line, col, cell)
                if value < 0.0:
                    raise _fail(path, line, col, f"feed {value:g} is negative")
                feed[i, j] = value * (_FRACTION_UNITS[unit] if fractions else
                                      parse_quantity(f"1 {unit}", "amount"))
            elif kind in ("y", "conversion"):
                value = _number(path, line, col, cell, blank_ok=True) * _FRACTION_UNITS[unit]
                low = -1.0 if kind == "conversion" else 0.0  # a species can be net produced: conversion < 0
                if np.isfinite(value) and not low <= value <= 1.0:
                    raise _fail(path, line, col, f"{cell.strip()} {unit} is outside the range of a "
                                                 f"{'mole fraction (0-1)' if kind == 'y' else 'conversion (-1 to 1)'}")
                measured[(kind, name)][i] = value  # type: ignore[index]
            elif kind.startswith("u("):
                value = _number(path, line, col, cell, blank_ok=True) * _FRACTION_UNITS[unit]
                if np.isfinite(value) and value < 0.0:
                    raise _fail(path, line, col, "an uncertainty cannot be negative")
                uncertainty[(kind[2:-1], name)][i] = value  # type: ignore[index]
        if not np.any(feed[i] > 0.0):
            raise _fail(path, line, feed_cols[0], "every feed amount is zero")
        if fractions and abs(feed[i].sum() - 1.0) > CLOSURE_TOLERANCE:
            raise _fail(path, line, feed_cols[-1], f"the feed fractions sum to {feed[i].sum():.4f}, not 1 "
                                                   f"(within {CLOSURE_TOLERANCE})")
        ys = [measured[("y", cols[c][1])][i] for c in y_cols]  # type: ignore[index]
        if ys and all(np.isfinite(ys)):
            total = float(np.sum(ys))
            covered = {cols[c][1] for c in y_cols} >= set(feed_species) | set(meta_species)
            if total > 1.0 + CLOSURE_TOLERANCE or ((complete or covered) and abs(total - 1.0) > CLOSURE_TOLERANCE):
                raise _fail(path, line, y_cols[-1], f"the measured mole fractions sum to {total:.4f}, not 1 "
                                                    f"(within {CLOSURE_TOLERANCE})")
    if kind_pv == "V" and fractions:
        raise _fail(path, first_line, feed_cols[0], "with V the feed must be amounts [mol], not fractions")
    return Dataset(name=name or meta.get("name", Path(path).stem), path=path, T=T,
                   P=PV if kind_pv == "P" else None, V=PV if kind_pv == "V" else None,
                   feed_species=feed_species, feed=feed, measured=MappingProxyType(measured),
                   uncertainty=MappingProxyType(uncertainty),
                   units=MappingProxyType({c: u for c, (_, _, u) in cols.items()}),
                   source=tuple(source), note=tuple(note), lines=tuple(line_no), meta=MappingProxyType(meta))


_META_KEYS = {"name", "title", "label", "citation", "doi", "kind", "conditions", "uncertainty", "transcription",
              "reactions", "species", "closure", "checked", "catalyst", "method", "notes"}


def _bundled_files() -> dict[str, Any]:
    folder = resources.files("hipeq.data").joinpath("datasets")
    return {p.name[:-4]: p for p in sorted(folder.iterdir(), key=lambda p: p.name) if p.name.endswith(".csv")}


def bundled_datasets() -> dict[str, Dataset]:
    """Every bundled data set by name (files in ``hipeq/data/datasets/``)."""
    return dict(_bundled())


@functools.lru_cache(maxsize=1)
def _bundled() -> tuple[tuple[str, Dataset], ...]:
    out = {}
    for stem, item in _bundled_files().items():
        ds = parse_dataset(item.read_text(encoding="utf-8"), f"hipeq/data/datasets/{item.name}", stem)
        out[ds.name] = ds
    return tuple(out.items())


def datasets() -> Mapping[str, str]:
    """Name -> title and citation of every bundled data set (the names :func:`load_dataset` takes)."""
    return MappingProxyType({name: f"{d.meta.get('title', '')} -- {d.citation}".strip(" -")
                             for name, d in bundled_datasets().items()})


def load_dataset(data: str | Path | Dataset) -> Dataset:
    """A bundled data set by name (see :func:`datasets`), a data file by path, or a Dataset (returned as is).
    Raises InputError naming the file, line and column of a bad value (see the module docstring)."""
    if isinstance(data, Dataset):
        return data
    if isinstance(data, str) and not data.lower().endswith((".csv", ".txt")) and "/" not in data:
        found = bundled_datasets()
        if data in found:
            return found[data]
        raise InputError("data", f"no bundled data set {data!r}; bundled: {', '.join(found)} (or give a file path)")
    path = Path(data)
    if not path.is_file():
        raise InputError("data", f"no file {str(path)!r}")
    return parse_dataset(path.read_text(encoding="utf-8"), str(path))
