"""Pure-fluid fugacity coefficients from CoolProp's reference equations of state, and hipeq's errors against them.

Shared by tests/validation/test_eos_vs_coolprop.py (which holds the errors to :data:`BOUNDS`) and
docs/tools/eos_validation_table.py (which writes the tables of docs/eos_validation.md and docs/hydrogen.md).

References: CoolProp 8 (Bell et al. 2014, Ind. Eng. Chem. Res. 53, 2498), HEOS backend, whose reference
equation of state per fluid is listed in :data:`FLUIDS` (``get_fluid_param_string(fluid, "BibTeX-EOS")`` names it,
checked in the test). The H2-N2 mixture uses CoolProp's multi-fluid model with the GERG-2008 binary parameters
(Kunz & Wagner 2012, J. Chem. Eng. Data 57, 3032; ``get_mixture_binary_pair_data(..., "BibTeX")``) on top of the
pure-fluid equations above.

The critical constants of hipeq's species records come from the same reference equations (chemicals' "HEOS"
method); no model parameter is fitted to the values compared here.
"""
from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

import CoolProp
import numpy as np

from hipeq.errors import InputError
from hipeq.models import fugacity_coefficients

FLUIDS: Mapping[str, tuple[str, str]] = {  # hipeq name -> (CoolProp fluid, reference equation of state)
    "H2": ("Hydrogen", "Leachman et al. 2009, J. Phys. Chem. Ref. Data 38, 721 (normal hydrogen)"),
    "N2": ("Nitrogen", "Span et al. 2000, J. Phys. Chem. Ref. Data 29, 1361"),
    "NH3": ("Ammonia", "Gao et al. 2020, J. Phys. Chem. Ref. Data 49, 043102"),
    "CH4": ("Methane", "Setzmann & Wagner 1991, J. Phys. Chem. Ref. Data 20, 1061"),
    "Ar": ("Argon", "Tegeler et al. 1999, J. Phys. Chem. Ref. Data 28, 779"),
    "CO2": ("CarbonDioxide", "Span & Wagner 1996, J. Phys. Chem. Ref. Data 25, 1509"),
}
BIBTEX_KEYS = {"H2": "Leachman-JPCRD-2009", "N2": "Span-JPCRD-2000", "NH3": "Gao-JPCRD-2020",
               "CH4": "Setzmann-JPCRD-1991", "Ar": "Tegeler-JPCRD-1999", "CO2": "Span-JPCRD-1996"}
TEMPERATURES = (400.0, 500.0, 600.0, 700.0, 800.0, 900.0)  # [K]
PRESSURES = (10e5, 30e5, 100e5, 300e5, 600e5, 1000e5)  # [Pa]
LOW_P = 100e5  # [Pa] the "up to 100 bar" band
# model label -> (eos, options of build_model)
MODELS: Mapping[str, tuple[str, dict[str, Any]]] = {
    "ideal": ("ideal", {}),
    "virial": ("virial", {}),
    "SRK": ("SRK", {}),
    "PR": ("PR", {}),
    "PR78": ("PR78", {}),
    "PR + quantum H2": ("PR", {"quantum_hydrogen": True}),
}
HYDROGEN_OPTIONS: Mapping[str, tuple[str, dict[str, Any]]] = {
    "PR": ("PR", {}),
    "PR + quantum": ("PR", {"quantum_hydrogen": True}),
    "PR, omega(H2) = 0": ("PR", {"hydrogen_omega": 0.0}),
    "SRK": ("SRK", {}),
    "SRK + quantum": ("SRK", {"quantum_hydrogen": True}),
    "SRK, omega(H2) = 0": ("SRK", {"hydrogen_omega": 0.0}),
}
_LIQUID_PHASES = (CoolProp.iphase_liquid, CoolProp.iphase_supercritical_liquid)
_PHASE_NAMES = {CoolProp.iphase_liquid: "liquid", CoolProp.iphase_supercritical_liquid: "supercritical liquid",
                CoolProp.iphase_gas: "gas", CoolProp.iphase_supercritical_gas: "supercritical gas",
                CoolProp.iphase_supercritical: "supercritical"}

# Documented bounds on max |ln phi(model) - ln phi(reference)| over the gas-side states of the grid:
# (fluid, model) -> (bound up to 100 bar, bound up to 1000 bar). Each is the measured value of
# docs/eos_validation.md (CoolProp 8.0.0) rounded up to two significant digits plus ~5 %: a test fails when a
# model gets worse than the table says. None: no bound (the model has no physical state at some grid points).
_BOUND_ROWS = {  # fluid: model: (up to 100 bar, up to 1000 bar)
    "H2": {"ideal": (0.051, 0.51), "virial": (0.021, 0.21), "SRK": (0.0024, 0.027), "PR": (0.019, 0.11),
           "PR78": (0.019, 0.11), "PR + quantum H2": (0.0069, 0.07)},
    "N2": {"ideal": (0.046, 0.64), "virial": (0.014, 0.43), "SRK": (0.011, 0.031), "PR": (0.014, 0.15),
           "PR78": (0.014, 0.15), "PR + quantum H2": (0.014, 0.15)},
    "NH3": {"ideal": (0.43, 0.95), "virial": (0.089, None), "SRK": (0.041, 0.29), "PR": (0.012, 0.14),
            "PR78": (0.012, 0.14), "PR + quantum H2": (0.012, 0.14)},
    "CH4": {"ideal": (0.041, 0.39), "virial": (0.0081, 0.77), "SRK": (0.012, 0.055), "PR": (0.022, 0.14),
            "PR78": (0.022, 0.14), "PR + quantum H2": (0.022, 0.14)},
    "Ar": {"ideal": (0.029, 0.36), "virial": (0.0066, 0.38), "SRK": (0.0091, 0.04), "PR": (0.015, 0.11),
           "PR78": (0.015, 0.11), "PR + quantum H2": (0.015, 0.11)},
    "CO2": {"ideal": (0.2, 0.63), "virial": (0.0068, None), "SRK": (0.022, 0.16), "PR": (0.02, 0.036),
            "PR78": (0.02, 0.036), "PR + quantum H2": (0.02, 0.036)},
}
BOUNDS = {(fluid, model): bounds for fluid, row in _BOUND_ROWS.items() for model, bounds in row.items()}
# liquid-like reference states (NH3 at 400 K, 300-1000 bar: above its vapour pressure): model -> bound
LIQUID_BOUNDS: Mapping[str, float] = {"SRK": 0.32, "PR": 0.16, "PR78": 0.16, "PR + quantum H2": 0.16}
# pure H2 on the whole grid (10-1000 bar), docs/hydrogen.md: option -> bound on max |d ln phi|
HYDROGEN_BOUNDS: Mapping[str, float] = {
    "PR": 0.11, "PR + quantum": 0.07, "PR, omega(H2) = 0": 0.014,
    "SRK": 0.027, "SRK + quantum": 0.031, "SRK, omega(H2) = 0": 0.069,
}
MIXTURE = {"H2": 0.75, "N2": 0.25}  # a 3:1 hydrogen-nitrogen feed
MIXTURE_PRESSURES = (100e5, 300e5, 1000e5)  # [Pa]
# pure H2, residual enthalpy [J/mol] (enters energy balances): option -> bound on max |d h_res|
HYDROGEN_H_BOUNDS: Mapping[str, float] = {
    "PR": 520.0, "PR + quantum": 230.0, "PR, omega(H2) = 0": 120.0,
    "SRK": 110.0, "SRK + quantum": 113.0, "SRK, omega(H2) = 0": 470.0,
}
# the 3:1 H2-N2 mixture, 400-900 K, 100-1000 bar: option -> bound on max |d ln phi| of either component
MIXTURE_BOUNDS: Mapping[str, float] = {
    "PR": 0.19, "PR + quantum": 0.114, "PR, omega(H2) = 0": 0.098,
    "SRK": 0.035, "SRK + quantum": 0.05, "SRK, omega(H2) = 0": 0.071,
}


@dataclass(frozen=True)
class Reference:
    """ln phi of the reference equation of state on the grid, with CoolProp's phase label per state."""

    fluid: str
    T: np.ndarray  # [K], grid (nT, nP)
    P: np.ndarray  # [Pa]
    ln_phi: np.ndarray
    h_res: np.ndarray  # [J/mol] residual enthalpy (CoolProp hmolar_residual; h - h_ideal-gas at the same T)
    phase: np.ndarray  # CoolProp iphase codes

    @property
    def liquid(self) -> np.ndarray:
        return np.isin(self.phase, _LIQUID_PHASES)

    def phase_name(self, index: tuple[int, int]) -> str:
        return _PHASE_NAMES.get(int(self.phase[index]), str(int(self.phase[index])))


@lru_cache(maxsize=None)
def reference(fluid: str) -> Reference:
    """CoolProp HEOS ln phi of pure ``fluid`` on TEMPERATURES x PRESSURES."""
    state = CoolProp.AbstractState("HEOS", FLUIDS[fluid][0])
    T, P = np.meshgrid(TEMPERATURES, PRESSURES, indexing="ij")
    ln_phi, h_res = np.empty(T.shape), np.empty(T.shape)
    phase = np.empty(T.shape, dtype=int)
    for index in np.ndindex(T.shape):
        state.update(CoolProp.PT_INPUTS, P[index], T[index])
        ln_phi[index] = np.log(state.fugacity_coefficient(0))
        h_res[index] = state.hmolar_residual()
        phase[index] = state.phase()
    return Reference(fluid, T, P, ln_phi, h_res, phase)


def model_errors(ref: Reference, eos: str, options: Mapping[str, Any],
                 quantity: str = "ln_phi") -> tuple[np.ndarray, np.ndarray]:
    """(model - reference of ``quantity`` ("ln_phi" or "h_res" [J/mol]), model's liquid-like flag) on the grid;
    NaN where the model has no physical state (hipeq raises InputError there, e.g. the truncated virial at high
    pressure)."""
    errors = np.full(ref.T.shape, np.nan)
    liquid = np.zeros(ref.T.shape, dtype=bool)
    for index in np.ndindex(ref.T.shape):
        try:
            result = fugacity_coefficients([ref.fluid], ref.T[index], ref.P[index], [1.0], eos, **options)
        except InputError:
            continue
        ours = result.ln_phis[0] if quantity == "ln_phi" else result.h_res
        errors[index] = ours - getattr(ref, quantity)[index]
        liquid[index] = result.liquid_like
    return errors, liquid


def band_maxima(ref: Reference, errors: np.ndarray) -> tuple[float, float, tuple[float, float], int]:
    """Over the gas-side states: (max |error| up to 100 bar, up to 1000 bar, (T, P) of the latter, number of
    states without a physical root)."""
    gas = ~ref.liquid
    invalid = int(np.count_nonzero(np.isnan(errors) & gas))
    abs_err = np.where(gas & ~np.isnan(errors), np.abs(errors), -1.0)
    low = float(np.max(np.where(ref.P <= LOW_P, abs_err, -1.0)))
    worst = np.unravel_index(int(np.argmax(abs_err)), abs_err.shape)
    return low, float(abs_err[worst]), (float(ref.T[worst]), float(ref.P[worst])), invalid


@lru_cache(maxsize=None)
def mixture_reference() -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(T, P, ln phi (nT, nP, 2)) of the 3:1 H2-N2 mixture from CoolProp's HEOS mixture model."""
    state = CoolProp.AbstractState("HEOS", "Hydrogen&Nitrogen")
    state.set_mole_fractions(list(MIXTURE.values()))
    T, P = np.meshgrid(TEMPERATURES, MIXTURE_PRESSURES, indexing="ij")
    ln_phi = np.empty(T.shape + (2,))
    for index in np.ndindex(T.shape):
        state.update(CoolProp.PT_INPUTS, P[index], T[index])
        ln_phi[index] = np.log([state.fugacity_coefficient(0), state.fugacity_coefficient(1)])
    return T, P, ln_phi


def mixture_errors(eos: str, options: Mapping[str, Any]) -> np.ndarray:
    """ln phi(model) - ln phi(reference) of the 3:1 H2-N2 mixture, shape (nT, nP, 2); k_ij model defaults."""
    T, P, ref = mixture_reference()
    ours = fugacity_coefficients(list(MIXTURE), T, P, list(MIXTURE.values()), eos, **options)
    return np.asarray(ours.ln_phis) - ref
