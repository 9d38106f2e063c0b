"""Measured equilibrium compositions shipped with hipeq, for overlaying on figures.

Each data set is a CSV file of this package whose ``#`` header lines cite its source; the same files are kept in
``tests/validation/data/`` for the validation tests (tests/analysis/test_maps.py checks that the copies agree).

| file | what | source |
|---|---|---|
| ammonia_equilibrium_larson_dodge_1923.csv | NH3 mole % over a 1:3 N2:H2 feed, 325-500 degC, 10-100 atm | Larson & Dodge, J. Am. Chem. Soc. 45 (1923) 2918 |
| ammonia_equilibrium_larson_1924_high_pressure.csv | the same, 400-500 degC, 300-1000 atm (values from memory, +-0.5 mole-percent point) | Larson, J. Am. Chem. Soc. 46 (1924) 367 |
"""
from __future__ import annotations

import csv
import io
from collections.abc import Mapping
from dataclasses import dataclass
from importlib import resources

import numpy as np

ATM = 101_325.0  # [Pa], exact (BIPM SI Brochure, 9th ed. 2019)
KELVIN_OFFSET = 273.15


@dataclass(frozen=True)
class MeasuredSet:
    """Measured equilibrium points: ``T`` [K], ``P`` [Pa], ``y`` [-] mole fraction of ``key``, for the feed
    ratio ``feed`` (mol per mol), with a short ``label`` for legends and the ``citation`` of the file header."""

    label: str
    key: str
    feed: Mapping[str, float]
    T: np.ndarray
    P: np.ndarray
    y: np.ndarray
    citation: str


# file -> (legend label, key species, feed ratio)
_FILES = {
    "ammonia_equilibrium_larson_dodge_1923.csv": ("Larson & Dodge 1923", "NH3", {"N2": 1.0, "H2": 3.0}),
    "ammonia_equilibrium_larson_1924_high_pressure.csv": ("Larson 1924 (from memory, ±0.5 mol-% pt)", "NH3",
                                                          {"N2": 1.0, "H2": 3.0}),
}


def _read(name: str) -> MeasuredSet:
    label, key, feed = _FILES[name]
    text = resources.files("hipeq.data").joinpath(name).read_text(encoding="utf-8")
    comments = [line[1:].strip() for line in text.splitlines() if line.startswith("#")]
    rows = list(csv.DictReader(io.StringIO("\n".join(line for line in text.splitlines()
                                                     if line and not line.startswith("#")))))
    T = np.array([float(r["T_degC"]) + KELVIN_OFFSET for r in rows])
    P = np.array([float(r["P_atm"]) * ATM for r in rows])
    y = np.array([float(r["mol_percent_NH3"]) / 100.0 for r in rows])
    return MeasuredSet(label, key, dict(feed), T, P, y, " ".join(comments))


def measured_sets() -> tuple[MeasuredSet, ...]:
    """Every shipped data set."""
    return tuple(_read(name) for name in _FILES)


def matching_sets(feed: Mapping[str, float], key: str, rtol: float = 1e-6) -> tuple[MeasuredSet, ...]:
    """The data sets measured for the key product ``key`` over a feed of the same species in the same ratio as
    ``feed`` (amounts [mol] per species; species with zero amount ignored)."""
    fed = {name: float(v) for name, v in feed.items() if float(v) > 0.0}
    found = []
    for data in measured_sets():
        if data.key != key or set(fed) != set(data.feed):
            continue
        first = next(iter(data.feed))
        scale = fed[first] / data.feed[first]
        if all(abs(fed[name] - scale * value) <= rtol * fed[name] for name, value in data.feed.items()):
            found.append(data)
    return tuple(found)
