"""Published predictive extensions of the cubic models: volume translation and group-contribution k_ij(T).

Both are compiled into the optional tail of ``CompiledModel.consts`` (layout in :mod:`hipeq.models._kernels`).

- **Volume translation** (Peneloux, Rauzy & Freze 1982, Fluid Phase Equilib. 8, 7): v = v_cubic - sum_i y_i c_i.
  Phase equilibria are unchanged, but ln phi_i shifts by -c_i P/(R T), which changes K_phi of reactions with a
  change in moles at high pressure. Correlation for c_i from the Rackett compressibility Z_RA:
  SRK c_i = 0.40768 (R T_ci / P_ci)(0.29441 - Z_RA,i) (Peneloux et al. 1982);
  PR  c_i = 0.50033 (R T_ci / P_ci)(0.25969 - Z_RA,i) (the PR form as given by Pedersen & Christensen 2007,
  "Phase Behavior of Petroleum Reservoir Fluids", ch. 4 — from memory).
  Z_RA from the COSTALD table of Hankinson & Thomson (1979), AIChE J. 25, 653, as shipped in
  ``chemicals.volume.rho_data_COSTALD``; where a species has none, the Yamada & Gunn (1973) estimate
  Z_RA = 0.29056 - 0.08775 omega (J. Chem. Eng. Data 18, 234).
- **E-PPR78 k_ij(T)** (Jaubert, Qian, Lasala & Privat 2022, Fluid Phase Equilib. 560, 113456) for molecules that
  are one group of the method (H2, N2, NH3, CH4, CO, CO2, H2O, Ar, He, O2, C2H6, C2H4): the pair constants
  A_ij, B_ij [MPa] come from the group-interaction table that ``thermo`` ships
  (``thermo.group_contribution.ppr78.EPPR78_INTERACTIONS_BY_STR``). Pairs outside the method keep the model's
  default constant k_ij and are listed.
"""
from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np

from hipeq.models._kernels import R

VOLUME_TRANSLATIONS = ("peneloux",)
GROUP_KIJ = "e-ppr78"

# our species identifier -> E-PPR78 group of a one-group molecule
_EPPR78_GROUP = {"H2": "H2", "N2": "N2", "NH3": "NH3", "CH4": "CH4", "CO": "CO", "CO2": "CO2", "H2O": "H2O",
                 "Ar": "Ar", "He": "He", "O2": "O2", "C2H6": "C2H6", "C2H4": "C2H4"}
_TINY = 1e-312  # [MPa]
_PENELOUX = {"SRK": (0.40768, 0.29441), "PR": (0.50033, 0.25969), "PR78": (0.50033, 0.25969)}


def rackett_z(cas: str, omega: float) -> tuple[float, str]:
    """Rackett compressibility Z_RA [-] of a species and its source (COSTALD table, else Yamada & Gunn 1973)."""
    from chemicals.volume import rho_data_COSTALD

    if cas in rho_data_COSTALD.index and math.isfinite(float(rho_data_COSTALD.at[cas, "Z_RA"])):
        return float(rho_data_COSTALD.at[cas, "Z_RA"]), "Z_RA: Hankinson & Thomson 1979 (chemicals COSTALD table)"
    return 0.29056 - 0.08775 * omega, "Z_RA: Yamada & Gunn 1973 estimate from omega"


def peneloux_shifts(eos: str, components: Sequence[Any]) -> tuple[np.ndarray, list[str]]:
    """Volume shifts c_i [m3/mol] for the cubic ``eos`` (SRK, PR, PR78) and one note per component.

    c_i = k1 (R T_ci / P_ci)(k2 - Z_RA,i) with (k1, k2) = (0.40768, 0.29441) for SRK and (0.50033, 0.25969)
    for PR (see module docstring for the sources). ``components`` carry name, cas, Tc [K], Pc [Pa], omega.
    """
    k1, k2 = _PENELOUX[eos]
    shifts = np.empty(len(components))
    notes = []
    for i, c in enumerate(components):
        z_ra, source = rackett_z(c.cas, c.omega)
        shifts[i] = k1 * R * c.Tc / c.Pc * (k2 - z_ra)
        notes.append(f"{c.name}: c = {shifts[i] * 1e6:+.3f} cm3/mol ({source})")
    return shifts, notes


def eppr78_pairs(names: Sequence[str]) -> tuple[np.ndarray, np.ndarray, list[tuple[str, str]]]:
    """E-PPR78 pair constants A_ij, B_ij [Pa] (symmetric, zero on the diagonal and for pairs outside the
    method) and the list of pairs outside it. E_ij(T) = A_ij (298.15/T)^(B_ij/A_ij - 1)."""
    from thermo.group_contribution.ppr78 import EPPR78_INTERACTIONS_BY_STR as table

    nc = len(names)
    big_a = np.zeros((nc, nc))
    big_b = np.zeros((nc, nc))
    missing = []
    for i in range(nc):
        for j in range(i + 1, nc):
            gi, gj = _EPPR78_GROUP.get(names[i]), _EPPR78_GROUP.get(names[j])
            pair = table.get((gi, gj)) or table.get((gj, gi)) if gi and gj else None
            if not pair:
                missing.append((names[i], names[j]))
                continue
            if pair[0] == 0.0:  # a tabulated E_ij = 0 (e.g. NH3-CO2): the kernel reads A_ij = 0 as "no group
                pair = (_TINY, _TINY)  # data", so store A = B = 1e-306 Pa, which gives E_ij = 1e-306 Pa
            big_a[i, j] = big_a[j, i] = pair[0] * 1e6
            big_b[i, j] = big_b[j, i] = pair[1] * 1e6
    return big_a, big_b, missing


def extended_consts(base: np.ndarray, nc: int, shifts: np.ndarray | None,
                    group: tuple[np.ndarray, np.ndarray] | None) -> np.ndarray:
    """The ``consts`` vector with the optional tail (layout in :mod:`hipeq.models._kernels`)."""
    from hipeq.models import _kernels as K

    if shifts is None and group is None:
        return base
    out = np.zeros(K.EXTRA0 + nc + 2 * nc * nc)
    out[:4] = base
    if shifts is not None:
        out[K.HAS_SHIFT] = 1.0
        out[K.EXTRA0:K.EXTRA0 + nc] = shifts
    if group is not None:
        out[K.HAS_GROUP_KIJ] = 1.0
        out[K.EXTRA0 + nc:K.EXTRA0 + nc + nc * nc] = group[0].ravel()
        out[K.EXTRA0 + nc + nc * nc:] = group[1].ravel()
    return out
