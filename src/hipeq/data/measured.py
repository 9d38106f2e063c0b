"""Measured equilibrium compositions shipped with hipeq, for overlaying on figures.

The data sets are the bundled files of :mod:`hipeq.data.measurements` (``hipeq/data/datasets/*.csv``, each with
its citation, units and flags); this module presents those that measure one key product's mole fraction over one
feed ratio as :class:`MeasuredSet` records. The same values are kept in ``tests/validation/data/`` for the
validation tests (tests/analysis/test_maps.py checks that the copies agree).

| data set | what | source |
|---|---|---|
| ammonia-larson-dodge-1923 | NH3 mole % over a 1:3 N2:H2 feed, 325-500 degC, 10-100 atm | Larson & Dodge, J. Am. Chem. Soc. 45 (1923) 2918 |
| ammonia-larson-1924 | the same, 400-500 degC, 300-1000 atm (values from memory, +-0.5 mole-percent point) | Larson, J. Am. Chem. Soc. 46 (1924) 367 |
"""
from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from hipeq.data.measurements import Dataset, bundled_datasets

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


def _as_set(data: Dataset) -> MeasuredSet | None:
    """The data set as one key product's mole fraction over one feed ratio at given T, P (else None)."""
    ys = [(kind, name) for kind, name in data.measured if kind == "y"]
    if len(ys) != 1 or data.P is None:
        return None
    ratios = data.feed / data.feed.sum(axis=1, keepdims=True)
    if np.ptp(ratios, axis=0).max() > 1e-9:
        return None
    feed = {name: float(v) for name, v in zip(data.feed_species, data.feed[0])}
    return MeasuredSet(data.label, ys[0][1], feed, data.T, data.P, data.measured[ys[0]],
                       " ".join(f"{k}: {v}" for k, v in data.meta.items() if k in ("citation", "transcription")))


def measured_sets() -> tuple[MeasuredSet, ...]:
    """Every shipped data set."""
    found = [m for m in (_as_set(d) for d in bundled_datasets().values()) if m is not None]
    return tuple(sorted(found, key=lambda m: (m.key, float(np.min(m.P)))))


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
