"""Residual enthalpy of pure gases from CoolProp's reference equations of state against hipeq's cubic models.

Shared by tests/validation/test_residual_enthalpy_vs_coolprop.py (which holds the errors to :data:`H_RES_BOUNDS`)
and docs/tools/residual_enthalpy_table.py (which writes the table of docs/energy.md).

Reference: CoolProp 8 (Bell et al. 2014, Ind. Eng. Chem. Res. 53, 2498), HEOS backend, ``hmolar_residual()`` =
h(T, P) - h_ideal gas(T) at the same T and P [J/mol], with the reference equation per fluid named in
tests/validation/coolprop_cases.py (:data:`FLUIDS`: Span et al. 2000 N2, Leachman et al. 2009 H2, Setzmann &
Wagner 1991 CH4, Gao et al. 2020 NH3, Span & Wagner 1996 CO2). States on the grid where the reference is a liquid
(CoolProp phase "liquid" or "supercritical liquid": below the critical temperature and above the vapour pressure)
are left out: the comparison is for gas and supercritical states. hipeq's critical constants come from the same
reference equations (chemicals' HEOS method); nothing is fitted to these values.
"""
from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache

import CoolProp
import numpy as np
from coolprop_cases import FLUIDS

from hipeq.models import fugacity_coefficients

SPECIES = ("N2", "H2", "CH4", "NH3", "CO2")
MODELS = ("PR", "SRK")
TEMPERATURES = (300.0, 400.0, 500.0, 600.0, 700.0, 800.0)  # [K]
PRESSURES = (50e5, 100e5, 200e5, 300e5, 500e5, 700e5, 1000e5)  # [Pa]
_LIQUID = (CoolProp.iphase_liquid, CoolProp.iphase_supercritical_liquid)

# Documented bounds on max |h_res(model) - h_res(reference)| [J/mol] over the gas and supercritical states of the
# grid, (species, model) -> bound: the measured maxima of docs/energy.md (CoolProp 8.0.0) rounded up by ~5 % to
# two significant digits. A test fails as soon as a model gets worse than the document says.
H_RES_BOUNDS: Mapping[tuple[str, str], float] = {
    ("N2", "PR"): 470.0, ("N2", "SRK"): 290.0,
    ("H2", "PR"): 520.0, ("H2", "SRK"): 110.0,
    ("CH4", "PR"): 480.0, ("CH4", "SRK"): 470.0,
    ("NH3", "PR"): 1400.0, ("NH3", "SRK"): 1500.0,
    ("CO2", "PR"): 530.0, ("CO2", "SRK"): 1100.0,
}


@dataclass(frozen=True)
class Comparison:
    """Residual enthalpies [J/mol] on the grid (T, P: (nT, nP)); ``gas`` marks the states compared."""

    species: str
    model: str
    T: np.ndarray
    P: np.ndarray
    reference: np.ndarray
    ours: np.ndarray
    gas: np.ndarray

    @property
    def errors(self) -> np.ndarray:
        """model - reference [J/mol], NaN where the state is left out."""
        return np.where(self.gas, self.ours - self.reference, np.nan)

    def worst(self) -> tuple[float, float, float, float]:
        """(max |error| [J/mol], its T [K], its P [Pa], the reference h_res there [J/mol])."""
        err = np.abs(self.errors)
        k = np.unravel_index(int(np.nanargmax(err)), err.shape)
        return float(err[k]), float(self.T[k]), float(self.P[k]), float(self.reference[k])

    def rms(self) -> float:
        """Root-mean-square error over the compared states [J/mol]."""
        return float(np.sqrt(np.nanmean(self.errors ** 2)))

    def largest_reference(self) -> float:
        """max |h_res| of the reference over the compared states [J/mol] (the size of the effect)."""
        return float(np.max(np.abs(self.reference[self.gas])))


@lru_cache(maxsize=None)
def _reference(species: str) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    state = CoolProp.AbstractState("HEOS", FLUIDS[species][0])
    T, P = np.meshgrid(TEMPERATURES, PRESSURES, indexing="ij")
    h_res = np.empty(T.shape)
    gas = np.empty(T.shape, dtype=bool)
    for index in np.ndindex(T.shape):
        state.update(CoolProp.PT_INPUTS, P[index], T[index])
        h_res[index] = state.hmolar_residual()
        gas[index] = state.phase() not in _LIQUID
    return T, P, h_res, gas


@lru_cache(maxsize=None)
def comparison(species: str, model: str) -> Comparison:
    """hipeq's residual enthalpy of pure ``species`` with ``model`` (default options) against the reference."""
    T, P, reference, gas = _reference(species)
    ours = np.asarray(fugacity_coefficients([species], T, P, np.ones(T.shape + (1,)), model).h_res, dtype=float)
    return Comparison(species, model, T, P, reference, ours, gas)
