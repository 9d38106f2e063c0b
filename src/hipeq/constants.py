"""Physical constants and the standard state, defined once for every layer (imports nothing from hipeq).

R: molar gas constant [J/(mol K)], CODATA 2018 exact value (Tiesinga et al. 2021, Rev. Mod. Phys. 93, 025010).
P_STANDARD: standard-state pressure [Pa]; the standard state throughout hipeq is the ideal gas at 1 bar
(IUPAC recommendation since 1982).
T_REFERENCE: reference temperature of formation data [K].
"""
from __future__ import annotations

R: float = 8.314462618
P_STANDARD: float = 1e5
T_REFERENCE: float = 298.15
