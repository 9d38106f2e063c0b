"""Ammonia equilibrium at 10-100 atm against the measurements of Larson & Dodge (1923), with Peng-Robinson.

Source: A. T. Larson, R. L. Dodge, "The ammonia equilibrium", J. Am. Chem. Soc. 45 (1923) 2918,
doi 10.1021/ja01665a017: equilibrium mol % NH3 over a 3:1 H2:N2 feed, 325-500 C, 10-100 atm
(tests/validation/data/ammonia_equilibrium_larson_dodge_1923.csv, transcribed from a secondary copy).
No parameter of hipeq is fitted to these data: K comes from the data layer (ATcT / CRC / TRC via chemicals),
phi from Peng-Robinson with databank k_ij.

Tolerance: the measured value must lie inside the band of equilibrium compositions given by K multiplied or
divided by 1.12. Justification ("source spread ~ K uncertainty"): published ammonia equilibrium constants differ by
that much, e.g. the Ka of Gillespie & Beattie (1930), Phys. Rev. 36, 743, lies 7-12 % below values based on
NIST-JANAF (Chase 1998) at 500-800 K, and the enthalpy of formation of NH3 of JANAF and of ATcT differ by about
0.35 kJ/mol, about 6 % in K near 700 K (both as computed in the project's reference notes on these sources).
Measured: PR deviates by at most 0.38 mole-% points (at 375 C / 50 atm, the row the data file flags for extra
care); docs/solvers.md has the table.

A later test adds the high-pressure study (Larson 1924).
"""
from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np
import pytest

import hipeq

DATA = Path(__file__).parent / "data" / "ammonia_equilibrium_larson_dodge_1923.csv"
ATM = 101325.0  # Pa, exact
K_FACTOR = 1.12  # K uncertainty, see module docstring
FEED = {"N2": 1.0, "H2": 3.0}


def _rows() -> np.ndarray:
    with open(DATA) as fh:
        lines = [line for line in fh if not line.startswith("#")]
    rows = list(csv.reader(lines))
    assert rows[0] == ["T_degC", "P_atm", "mol_percent_NH3"]
    return np.array(rows[1:], dtype=float)


def _band(eos: str, T: np.ndarray, P: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Equilibrium mol % NH3 with the data-layer K, and with K x 1.12 and K / 1.12."""
    names = ["N2", "H2", "NH3"]
    central = hipeq.ReactionSystem(names, eos=eos)
    res = central.equilibrium(feed=FEED, T=T, P=P)
    assert np.all(res.converged)
    ln_k = dict(zip(T.tolist(), res.ln_K[:, 0].tolist()))

    def shifted(factor: float) -> np.ndarray:
        system = hipeq.ReactionSystem(names, eos=eos,
                                      ln_K=lambda t: np.array([[ln_k[x] + math.log(factor)] for x in t]))
        out = system.equilibrium(feed=FEED, T=T, P=P)
        assert np.all(out.converged)
        return 100.0 * out.y["NH3"]

    return 100.0 * res.y["NH3"], shifted(1.0 / K_FACTOR), shifted(K_FACTOR)


@pytest.fixture(scope="module")
def data() -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    rows = _rows()
    return rows[:, 0] + 273.15, rows[:, 1] * ATM, rows[:, 2]


def test_peng_robinson_within_k_uncertainty_of_larson_dodge_1923(data) -> None:
    T, P, measured = data
    y, low, high = _band("PR", T, P)
    outside = [(t - 273.15, p / ATM, m, round(v, 3)) for t, p, m, v, lo, hi in zip(T, P, measured, y, low, high)
               if not lo <= m <= hi]
    assert not outside, f"measured outside the K band (T degC, P atm, measured, PR): {outside}"
    # the deviation stated in the module docstring and docs/solvers.md
    assert np.max(np.abs(y - measured)) <= 0.4


def test_peng_robinson_closes_the_ideal_gas_gap_at_100_atm(data) -> None:
    """At 100 atm the ideal-gas estimate falls below the measurements (by 0.4-1.5 points); PR must do better
    row by row, and the ideal gas falls outside the K band somewhere (the band test can fail)."""
    T, P, measured = data
    at_100 = P == 100 * ATM
    y_pr, _, _ = _band("PR", T[at_100], P[at_100])
    y_ideal, low, high = _band("ideal", T[at_100], P[at_100])
    assert np.all(y_ideal < measured[at_100])
    assert np.all(np.abs(y_pr - measured[at_100]) < np.abs(y_ideal - measured[at_100]))
    assert np.any((measured[at_100] < low) | (measured[at_100] > high))
