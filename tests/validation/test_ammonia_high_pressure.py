"""Ammonia equilibrium from 10 to 1000 atm: each fugacity model held to its documented error.

Sources:
- Larson & Dodge (1923), J. Am. Chem. Soc. 45, 2918: 28 measured rows at 10-100 atm
  (tests/validation/data/ammonia_equilibrium_larson_dodge_1923.csv).
- Larson (1924), J. Am. Chem. Soc. 46, 367: 9 rows at 300, 600 and 1000 atm, FROM MEMORY (+-0.5 point; see the
  header of tests/validation/data/ammonia_equilibrium_larson_1924_high_pressure.csv).

Error = model minus measurement, in mole-percent points of NH3, over a 3:1 H2:N2 feed. The bounds below are the
maxima of docs/ammonia_validation.md (table "Results in brief", produced by docs/tools/ammonia_study.py) rounded
up by about 5 %: a test fails when a model gets worse than the documentation says, or when the ordering the
documentation claims (ideal < Lewis-Randall < PR < best option at 1000 atm) stops holding. No parameter was
fitted to these data; the best option is a combination of published predictive methods (E-PPR78 k_ij(T),
Jaubert et al. 2022; Peneloux et al. 1982 volume translation) chosen among about thirty, so its errors are
optimistic (docs/ammonia_validation.md says so).

The aim of the issue was 1 / 2 / 3 points up to 300 / 600 / 1000 atm. The best option reaches 1.9 at 600 and
1000 atm but 1.5 at 300 atm (the from-memory 300-atm rows are the suspect ones); the bounds record that.
"""
from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
import pytest

import hipeq

DATA = Path(__file__).parent / "data"
ATM = 101325.0
FEED = {"N2": 1.0, "H2": 3.0}
BANDS = (100.0, 300.0, 600.0, 1000.0)  # atm, cumulative
MODELS = {
    "ideal": ({"eos": "ideal"}, (1.56, 5.32, 12.2, 19.3)),
    "lewis-randall": ({"eos": "lewis-randall"}, (0.61, 1.46, 4.25, 9.26)),
    "SRK": ({"eos": "SRK", "kij": {}}, (0.38, 2.05, 3.54, 6.28)),
    "PR": ({"eos": "PR", "kij": {("N2", "H2"): 0.0, ("N2", "NH3"): 0.0, ("H2", "NH3"): 0.0}},
           (0.41, 2.01, 3.65, 7.02)),
    "best": ({"eos": "PR78", "kij": "e-ppr78", "volume_translation": "peneloux"}, (0.45, 1.55, 2.02, 2.02)),
}


def _read(name: str) -> np.ndarray:
    with open(DATA / name) as fh:
        rows = list(csv.reader(line for line in fh if not line.startswith("#")))
    assert rows[0] == ["T_degC", "P_atm", "mol_percent_NH3"]
    return np.array(rows[1:], dtype=float)


@pytest.fixture(scope="module")
def data() -> np.ndarray:
    return np.vstack([_read("ammonia_equilibrium_larson_dodge_1923.csv"),
                      _read("ammonia_equilibrium_larson_1924_high_pressure.csv")])


def _errors(options: dict, data: np.ndarray) -> np.ndarray:
    system = hipeq.ReactionSystem(["N2", "H2", "NH3"], **options)
    res = system.equilibrium(feed=FEED, T=data[:, 0] + 273.15, P=data[:, 1] * ATM)
    assert np.all(res.converged), res.status
    return 100.0 * res.y["NH3"] - data[:, 2]


def _band_maxima(errors: np.ndarray, data: np.ndarray) -> list[float]:
    return [float(np.max(np.abs(errors[data[:, 1] <= top]))) for top in BANDS]


@pytest.mark.parametrize("label", list(MODELS))
def test_model_within_documented_error(label: str, data: np.ndarray) -> None:
    options, bounds = MODELS[label]
    maxima = _band_maxima(_errors(options, data), data)
    for top, got, bound in zip(BANDS, maxima, bounds):
        assert got <= bound, f"{label}: max |error| up to {top:g} atm is {got:.2f} points > {bound}"


def test_ordering_at_1000_atm(data: np.ndarray) -> None:
    worst = {label: _band_maxima(_errors(options, data), data)[-1] for label, (options, _) in MODELS.items()}
    assert worst["best"] < worst["PR"] < worst["lewis-randall"] < worst["ideal"]
    # the real-gas correction matters: the ideal gas misses by more than 15 points at 1000 atm
    assert worst["ideal"] > 15.0
