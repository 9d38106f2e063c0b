"""hipeq's standard-state thermochemistry beside the NIST-JANAF tables, and the bounds the tests hold it to.

Shared by tests/validation/test_standard_state_validation.py (which holds the differences to :data:`HF_TOL`,
:data:`S_ROUNDING_TOL` and :data:`CP_TOL`) and docs/tools/validation_docs.py (which writes the standard-state table
of docs/scoring.md).

Our data: ΔfH°(298.15 K) from ATcT 1.112, S° from the CRC Handbook (2014), Cp from the TRC ideal-gas
correlations (see hipeq.data.species). Reference: NIST-JANAF Thermochemical Tables, 4th ed. (Chase 1998, J. Phys.
Chem. Ref. Data Monograph 9), read with the ``janaf`` package: tables H-083 NH3(g), H-064 H2O(g), C-093 CO(g),
C-095 CO2(g), C-002 C(graphite), H-050 H2, N-023 N2, O-029 O2. Standard state 0.1 MPa, as ours.
"""
from __future__ import annotations

from functools import lru_cache

import janaf
import numpy as np

from hipeq.data.species import species
from hipeq.data.thermochem import standard_enthalpies, standard_entropies

R = 8.314462618
T_GRID = np.array([298.15, 300.0, 400.0, 500.0, 600.0, 700.0, 800.0, 900.0, 1000.0])
JANAF_TABLES = {"NH3": ("H-083", "Ammonia"), "H2O": ("H-064", "Water"), "CO": ("C-093", "Carbon Monoxide"),
                "CO2": ("C-095", "Carbon Dioxide"), "C": ("C-002", "Carbon"), "H2": ("H-050", "Hydrogen"),
                "N2": ("N-023", "Nitrogen"), "O2": ("O-029", "Oxygen")}
COMPOUNDS = ["NH3", "H2O", "CO", "CO2"]

# Allowed |ours - JANAF| in ΔfH°(298.15 K) [J/mol]: the stated spread between data sources. NH3: ATcT is 0.34 kJ/mol
# less negative than JANAF (reference README; JANAF's own NH3 uncertainty is ±0.4 kJ/mol, from memory). H2O, CO,
# CO2: ATcT and JANAF agree within JANAF's stated uncertainties of 0.04-0.17 kJ/mol (from memory): we allow 0.2 kJ/mol.
HF_TOL = {"NH3": 450.0, "H2O": 200.0, "CO": 200.0, "CO2": 200.0}
# ΔfG° adds T ΔS° errors: CRC S° values are rounded to 0.1 J/(mol K), at most ±0.05 per species and three species
# per formation reaction: 0.15 J/(mol K) x 1000 K = 0.15 kJ/mol.
S_ROUNDING_TOL = 0.15  # [J/(mol K)], multiplied by T [K]
# ΔfH°(T) - ΔfH°(298.15 K) depends on the Cp integrals only. TRC and JANAF Cp both come from spectroscopic
# partition functions and agree to about 0.2 % (common practice); 0.2 % of ~40 J/(mol K) over 700 K is ~60 J/mol.
CP_TOL = 60.0  # [J/mol]

# Full gas reactions: ΔrG°(T) against the same combination of JANAF ΔfG°. Tolerance: the ΔfH° spread of HF_TOL
# times the coefficients, plus the entropy rounding allowance.
GAS_REACTIONS = {
    "N2 + 3 H2 = 2 NH3": {"NH3": 2},
    "CO + H2O = CO2 + H2": {"CO2": 1, "CO": -1, "H2O": -1},
    "CO + 1/2 O2 = CO2": {"CO2": 1, "CO": -1},
    "H2 + 1/2 O2 = H2O": {"H2O": 1},
}


# K of 1/2 N2 + 3/2 H2 = NH3 over the Ka of Gillespie & Beattie (1930), Phys. Rev. 36, 743 (1-bar standard state), at
# 500-800 K. Known spread (correlations.md): Gillespie-Beattie sits 7-12 % below JANAF-based values there. Our ATcT
# ΔfH° is 0.34 kJ/mol less negative than JANAF, which lowers K by exp(-340/RT) = 5-8 %, so ours should sit 0-7 %
# above Gillespie-Beattie. Allowed ranges of the ratio:
GB_T = np.array([500.0, 600.0, 700.0, 800.0])
GB_RATIO_OURS = (0.97, 1.10)
GB_RATIO_JANAF = (1.05, 1.16)


def reaction_tolerance(text: str, T: np.ndarray) -> float:
    """Allowed |ΔrG° ours - JANAF| [J/mol] of a reaction of :data:`GAS_REACTIONS` over the temperatures ``T``."""
    return sum(abs(nu) * HF_TOL[name] for name, nu in GAS_REACTIONS[text].items()) + S_ROUNDING_TOL * T.max()


@lru_cache(maxsize=None)
def _janaf_columns(key: str) -> dict[str, dict[float, float]]:
    index, name = JANAF_TABLES[key]
    table = janaf.Table(index)
    assert name in table.name
    df = table.df
    temps = df["T(K)"].to_list()
    return {col: dict(zip(temps, df[col].to_list())) for col in ("S", "H-H(Tr)", "delta-f H", "delta-f G")}


def janaf_values(key: str, column: str, T: np.ndarray) -> np.ndarray:
    """A JANAF column at the grid temperatures, converted to J/mol (kJ columns) or J/(mol K) (S)."""
    scale = 1.0 if column == "S" else 1e3
    table = _janaf_columns(key)[column]
    return np.array([table[float(t)] for t in T]) * scale


def janaf_reaction_gibbs(text: str, T: np.ndarray) -> np.ndarray:
    """ΔrG°(T) [J/mol] of a reaction of :data:`GAS_REACTIONS` from the JANAF ΔfG° of its compounds."""
    return sum(nu * janaf_values(name, "delta-f G", T) for name, nu in GAS_REACTIONS[text].items())


def our_formation(name: str, T: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """ΔfH°(T), ΔfG°(T) from our records: compound minus elements in reference states, elemental gases from our
    own Cp integrals, graphite H(T) - H(298.15 K) and S(T) from JANAF table C-002 (graphite is no gas)."""
    H = standard_enthalpies([name, "H2", "N2", "O2"], T)
    S = standard_entropies([name, "H2", "N2", "O2"], T)
    n = species(name).elements
    gas = np.array([n.get("H", 0) / 2, n.get("N", 0) / 2, n.get("O", 0) / 2])
    carbon = n.get("C", 0)
    H_el = H[:, 1:] @ gas + carbon * janaf_values("C", "H-H(Tr)", T)
    S_el = S[:, 1:] @ gas + carbon * janaf_values("C", "S", T)
    dfH = H[:, 0] - H_el
    return dfH, dfH - T * (S[:, 0] - S_el)
