"""Measured high-pressure vapour-liquid equilibrium and hipeq's flash and bubble points against it.

Shared by tests/validation/test_vle_co2_water.py (which holds the errors to :data:`BOUNDS`) and
docs/tools/vle_table.py (which writes the section "Published high-pressure VLE data" of docs/phases.md).

Data: carbon dioxide + water at 323 K and 4-14 MPa, Bamberger, Sieder & Maurer (2000), J. Supercrit. Fluids 17,
97-110, read in a public transcription (the file's header, tests/validation/data/vle_co2_water_bamberger_2000.csv,
says where and what is not known). Each row gives the pressure, the CO2 mole fraction of the water-rich liquid
and the water mole fraction of the CO2-rich phase.

What is computed per row and model:

* the isothermal flash (:func:`hipeq.flash`) of an equimolar CO2-water feed at the row's T and P: for a binary
  at fixed T and P the two phase compositions do not depend on the feed, so x_CO2 (liquid) and y_H2O (vapour)
  compare directly with the measured ones;
* the bubble pressure (:func:`hipeq.bubble_point`) of the measured liquid at the row's T, against the measured
  P. A model whose CO2 solubility stays below the measured x_CO2 at every pressure has no bubble point there
  (``converged`` False); the row is then counted as "no bubble point" and left out of the pressure errors.

No parameter is fitted here. The k_ij are the model's own: ChemSep's PR table (thermo's databank) for PR, zero for
SRK, and the E-PPR78 group contribution (Jaubert et al. 2022). The databank's CO2-H2O value and the E-PPR78
CO2-H2O constants were regressed by their authors on published CO2-water data that may include this set, so their
agreement is not a fully independent test.
"""
from __future__ import annotations

import csv
from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Any

import numpy as np

import hipeq
from hipeq.models import _kernels as K
from hipeq.models import build_model

DATA = Path(__file__).resolve().parent / "data" / "vle_co2_water_bamberger_2000.csv"
SOURCE = ("Bamberger, Sieder & Maurer 2000, J. Supercrit. Fluids 17, 97-110 (CO2 + water, 323 K), as transcribed "
          "in DanWBR/dwsim (DWSIM.Thermodynamics.AdvancedEOS/Assets/ECE/Seminar/CO2_H2O_PCSAFT.m)")
SPECIES = ("CO2", "H2O")
FEED = {"CO2": 0.5, "H2O": 0.5}  # [mol]; any feed between the two phases gives the same compositions
# label -> options of hipeq.flash / hipeq.bubble_point
MODELS: Mapping[str, Mapping[str, Any]] = {
    "PR": {"eos": "PR"},
    "PR, k_ij = 0": {"eos": "PR", "kij": {("CO2", "H2O"): 0.0}},
    "SRK": {"eos": "SRK"},
    "PR78+E-PPR78+Peneloux": {"eos": "PR78", "kij": "e-ppr78", "volume_translation": "peneloux"},
}
# Upper bounds on the errors against Bamberger et al. 2000 (just above what each model gives today, so that a
# regression fails): mean and max |x_CO2 model - measured|, mean and max |y_H2O model - measured| [mole fraction],
# mean and max |P_bubble / P - 1| [-] (None where the model has no bubble point at the measured liquids).
BOUNDS: Mapping[str, Mapping[str, float | None]] = {
    "PR": {"x_mean": 0.0175, "x_max": 0.021, "y_mean": 0.0011, "y_max": 0.0032, "p_mean": None, "p_max": None},
    "PR, k_ij = 0": {"x_mean": 0.0140, "x_max": 0.0165, "y_mean": 0.0032, "y_max": 0.0098, "p_mean": None,
                     "p_max": None},
    "SRK": {"x_mean": 0.0150, "x_max": 0.0175, "y_mean": 0.0025, "y_max": 0.0081, "p_mean": None, "p_max": None},
    "PR78+E-PPR78+Peneloux": {"x_mean": 0.0006, "x_max": 0.0012, "y_mean": 0.0069, "y_max": 0.0225,
                              "p_mean": 0.070, "p_max": 0.11},
}


@dataclass(frozen=True)
class Measured:
    """The measured rows: T [K], P [Pa], x_CO2 and y_H2O [-] (arrays of equal length) and the file's header."""

    T: np.ndarray
    P: np.ndarray
    x_CO2: np.ndarray
    y_H2O: np.ndarray
    header: tuple[str, ...]


@dataclass(frozen=True)
class Comparison:
    """One model against the measured rows: its x_CO2, y_H2O (flash) [-], bubble pressure [Pa] and whether the
    bubble point converged, per row; ``kij`` the CO2-H2O k_ij at the data's temperature [-]."""

    label: str
    x_CO2: np.ndarray
    y_H2O: np.ndarray
    P_bubble: np.ndarray
    bubble_converged: np.ndarray
    kij: float
    split: np.ndarray  # True where the flash found two phases

    def errors(self, data: Measured) -> dict[str, float]:
        """Mean and max absolute errors of x_CO2 and y_H2O [mole fraction], mean relative errors [-], and mean and
        max |P_bubble / P - 1| over the rows with a bubble point (NaN when there is none); ``no_bubble`` counts
        the rows without one."""
        dx = np.abs(self.x_CO2 - data.x_CO2)
        dy = np.abs(self.y_H2O - data.y_H2O)
        ok = self.bubble_converged
        dp = np.abs(self.P_bubble[ok] / data.P[ok] - 1.0)
        return {"x_mean": float(dx.mean()), "x_max": float(dx.max()), "x_rel": float(np.mean(dx / data.x_CO2)),
                "y_mean": float(dy.mean()), "y_max": float(dy.max()), "y_rel": float(np.mean(dy / data.y_H2O)),
                "p_mean": float(dp.mean()) if dp.size else float("nan"),
                "p_max": float(dp.max()) if dp.size else float("nan"), "no_bubble": int(np.sum(~ok))}


@lru_cache(maxsize=1)
def measured() -> Measured:
    """The rows of tests/validation/data/vle_co2_water_bamberger_2000.csv in SI units."""
    lines = DATA.read_text(encoding="utf-8").splitlines()
    header = tuple(line[1:].strip() for line in lines if line.startswith("#"))
    rows = list(csv.DictReader(line for line in lines if not line.startswith("#")))
    column = lambda name, scale=1.0: np.array([float(r[name]) * scale for r in rows])  # noqa: E731
    return Measured(T=column("T_K"), P=column("P_MPa", 1e6), x_CO2=column("x_CO2"), y_H2O=column("y_H2O"),
                    header=header)


def effective_kij(options: Mapping[str, Any], T: float) -> float:
    """The CO2-H2O k_ij [-] that the model uses at T [K]: 1 - a_12 / sqrt(a_11 a_22) (for E-PPR78 the
    temperature-dependent value, Jaubert et al. 2022)."""
    model = build_model(list(SPECIES), options["eos"], options.get("kij"),
                        volume_translation=options.get("volume_translation"))
    nc = model.nc
    aij, bi = np.empty((nc, nc)), np.empty(nc)
    K.tdep_into(model.code, float(T), np.asarray(model.comp), np.asarray(model.consts), np.asarray(model.kmat),
                aij, bi, np.empty((nc, nc)), np.empty(nc))
    return float(1.0 - aij[0, 1] / np.sqrt(aij[0, 0] * aij[1, 1]))


def compare(label: str, data: Measured | None = None, dT: float = 0.0) -> Comparison:
    """Flash and bubble point of model ``label`` (a key of :data:`MODELS`) at every measured row, at the row's
    temperature plus ``dT`` [K]."""
    data = measured() if data is None else data
    options = MODELS[label]
    n = data.P.size
    x, y, pb = np.empty(n), np.empty(n), np.empty(n)
    converged, split = np.zeros(n, dtype=bool), np.zeros(n, dtype=bool)
    for k in range(n):
        T = float(data.T[k]) + dT
        out = hipeq.flash(list(SPECIES), FEED, T=T, P=float(data.P[k]), **options)
        split[k] = out.phase_count == 2 and out.converged
        vapour, liquid = out.phases if split[k] else (out.phases[0], out.phases[0])
        x[k], y[k] = liquid.y["CO2"], vapour.y["H2O"]
        bubble = hipeq.bubble_point(list(SPECIES), {"CO2": float(data.x_CO2[k]), "H2O": 1.0 - float(data.x_CO2[k])},
                                    T=T, **options)
        converged[k] = bool(bubble.converged)
        pb[k] = bubble.P if bubble.converged else np.nan
    return Comparison(label, x, y, pb, converged, effective_kij(options, float(np.mean(data.T)) + dT), split)


@lru_cache(maxsize=None)
def comparison(label: str) -> Comparison:
    """:func:`compare` at the data's temperatures, cached."""
    return compare(label)
