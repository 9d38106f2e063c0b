"""Enthalpy, entropy and internal energy of a gas mixture: ideal-gas part from the data layer, residual part from
the fugacity model.

For amounts n_i [mol] (n = sum n_i, y_i = n_i / n) at T [K], P [Pa] (standard state: ideal gas at P0 = 1 bar):

    H = sum_i n_i H0_i(T) + n h_res(T, P, y)                                                      [J]
    S = sum_i n_i [S0_i(T) - R ln(y_i P / P0)] + n s_res(T, P, y)                               [J/K]
    U = H - P V,   G = H - T S,   V = n v(T, P, y)                                               [J], [m3]

with H0_i(T) = ΔfH0_i(298.15 K) + ∫_298.15^T Cp_i dT (enthalpy relative to the elements at 298.15 K) and S0_i(T)
the absolute entropy at 1 bar, both from :mod:`hipeq.data.thermochem` (Kirchhoff's law; Smith, Van Ness & Abbott
2005, "Introduction to Chemical Engineering Thermodynamics", 7th ed., sections 4.3, 5.5 and 6.3), and the residual
enthalpy h_res = -R T^2 d(g_res/RT)/dT and entropy s_res = (h_res - g_res)/T of the equation of state (Michelsen &
Mollerup 2007, "Thermodynamic Models", 2nd ed., ch. 2). The model's stable volume root at (T, P, y) is used.
Because H0_i includes the formation enthalpy, H differences between states of different composition include the
heat of reaction: the energy balance of a reactor is H_in = H_out + Q_removed.
"""
from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy.optimize import brentq

from hipeq.constants import R
from hipeq.data.species import Species
from hipeq.data.thermochem import ideal_gas_parts  # noqa: F401 (kept importable from here)
from hipeq.errors import InputError
from hipeq.models.inputs import P_MAX

__all__ = ["MixtureProperties", "mixture_properties", "ideal_gas_parts"]

P_FLOOR = 1e-2  # [Pa] lowest pressure searched for a given volume (the sealed-vessel solver's floor)


def _frozen(value: Any) -> Any:
    if isinstance(value, np.ndarray):
        value.flags.writeable = False
        return value[()] if value.ndim == 0 else value
    return value


class MolarValues:
    """Per-mole values of a mixture's totals (for classes with ``H``, ``S``, ``U`` and ``n_total``)."""

    @property
    def h(self) -> Any:
        """Molar enthalpy H / n [J/mol]."""
        return self.H / self.n_total

    @property
    def s(self) -> Any:
        """Molar entropy S / n [J/(mol K)]."""
        return self.S / self.n_total

    @property
    def u(self) -> Any:
        """Molar internal energy U / n [J/mol]."""
        return self.U / self.n_total


@dataclass(frozen=True, eq=False)
class MixtureProperties(MolarValues):
    """Thermodynamic state of a gas mixture (arrays over the broadcast shape of T, P or V, and the amounts; floats
    for one state).

    ``T`` [K], ``P`` [Pa], ``V`` [m3], ``Z`` [-], ``amounts`` [mol] (species on the last axis), ``n_total`` [mol];
    totals ``H``, ``U``, ``G`` [J], ``S`` [J/K], ``H_ideal`` [J] (the ideal-gas part of H), ``S_ideal`` [J/K];
    per mole ``h``, ``u``, ``g`` [J/mol], ``s`` [J/(mol K)], ``h_res`` [J/mol], ``s_res`` [J/(mol K)].
    Enthalpies are relative to the elements at 298.15 K (ideal gas); entropies absolute; standard state ideal gas
    at 1 bar.
    """

    species: tuple[str, ...]
    T: Any
    P: Any
    V: Any
    Z: Any
    amounts: np.ndarray
    n_total: Any
    H: Any
    S: Any
    H_ideal: Any
    S_ideal: Any
    h_res: Any
    s_res: Any

    @property
    def U(self) -> Any:
        """Internal energy U = H - P V [J]."""
        return self.H - self.P * self.V

    @property
    def G(self) -> Any:
        """Gibbs energy G = H - T S [J] (same reference as H and S)."""
        return self.H - self.T * self.S

    @property
    def g(self) -> Any:
        """Molar Gibbs energy G / n [J/mol]."""
        return self.G / self.n_total


def _pressure_from_volume(model: Any, T: float, V: float, n: float, y: np.ndarray) -> float:
    """The pressure [Pa] at which n moles of composition y at T occupy V (the model's stable root), by bracketed
    root search on ln P; InputError("V") when no one-phase pressure in [1e-2 Pa, P_MAX] gives V."""
    target = math.log(V / n)

    def gap(ln_p: float) -> float:
        state = model.fugacity_coefficients(T, min(math.exp(ln_p), P_MAX), y)
        return math.log(float(state.molar_volume)) - target

    lo, hi = math.log(P_FLOOR), math.log(P_MAX)
    try:
        g_lo, g_hi = gap(lo), gap(hi)
    except InputError as err:
        raise InputError("V", f"the model has no state at the ends of the pressure search ({err})") from None
    if not (g_lo > 0.0 > g_hi):
        raise InputError("V", f"no pressure between {P_FLOOR:g} and {P_MAX:g} Pa gives {V:g} m3 for {n:g} mol at "
                              f"T = {T:g} K (molar volume {V / n:.4g} m3/mol)")
    ln_p = brentq(gap, lo, hi, xtol=1e-14, rtol=4 * np.finfo(float).eps, maxiter=200)
    return min(math.exp(ln_p), P_MAX)


def mixture_properties(records: Sequence[Species], model: Any, amounts: Any, T: Any, P: Any = None,
                       V: Any = None) -> MixtureProperties:
    """H, S, U, G of a gas mixture of ``amounts`` [mol] (species on the last axis, in the order of ``records``) at
    T [K] and P [Pa] or total volume V [m3] (module docstring for the equations). Inputs broadcast together.

    ``model`` is a :class:`hipeq.models.eos.CompiledModel` over the same species (``ReactionSystem.model``); the
    public entry point is :meth:`hipeq.ReactionSystem.mixture_properties`. Raises InputError naming T, P, V or
    amounts for values outside their ranges (T within the species' Cp ranges).
    """
    if (P is None) == (V is None):
        raise InputError("P", "give exactly one of P= [Pa] or V= [m3]")
    nc = len(records)
    try:
        n_arr = np.asarray(amounts, dtype=float)
    except (TypeError, ValueError):
        raise InputError("amounts", f"must be numbers [mol] with species on the last axis, got {amounts!r}") from None
    if n_arr.ndim == 0 or n_arr.shape[-1] != nc:
        raise InputError("amounts", f"needs {nc} species on its last axis, got shape {n_arr.shape}")
    if not (np.all(np.isfinite(n_arr)) and np.all(n_arr >= 0.0)) or np.any(n_arr.sum(axis=-1) <= 0.0):
        raise InputError("amounts", "must be finite, >= 0 mol and not all zero in any state")
    T_arr = np.asarray(T, dtype=float)
    given = np.asarray(P if V is None else V, dtype=float)
    field = "P" if V is None else "V"
    if not (np.all(np.isfinite(given)) and np.all(given > 0.0)):
        unit = "Pa" if field == "P" else "m3"
        raise InputError(field, f"must be finite and > 0 {unit}, got {given.ravel().tolist()[:4]}")
    shape = np.broadcast_shapes(T_arr.shape, given.shape, n_arr.shape[:-1])
    T_b = np.broadcast_to(T_arr, shape).astype(float)
    n_b = np.broadcast_to(n_arr, shape + (nc,)).astype(float)
    n_tot = n_b.sum(axis=-1)
    y = n_b / n_tot[..., None]
    if V is None:
        P_b = np.broadcast_to(given, shape).astype(float)
        if np.any(P_b > P_MAX):
            raise InputError("P", f"must be <= {P_MAX:g} Pa, got {float(P_b.max())!r}")
    else:
        V_b = np.broadcast_to(given, shape)
        P_b = np.empty(shape)
        for index in np.ndindex(shape):
            P_b[index] = _pressure_from_volume(model, float(T_b[index]), float(V_b[index]), float(n_tot[index]),
                                               y[index])
    H_id, S_id = ideal_gas_parts(records, T_b, n_b, P_b)  # checks T against the Cp ranges
    state = model.fugacity_coefficients(T_b, P_b, y)
    h_res = np.asarray(state.h_res, dtype=float)
    s_res = (h_res - R * T_b * np.asarray(state.g_res_RT, dtype=float)) / T_b
    volume = n_tot * np.asarray(state.molar_volume, dtype=float)
    H = H_id + n_tot * h_res
    S = S_id + n_tot * s_res
    return MixtureProperties(
        tuple(r.name for r in records), _frozen(np.array(T_b)), _frozen(np.array(P_b)), _frozen(volume),
        _frozen(np.array(state.Z, dtype=float)), _frozen(np.array(n_b)), _frozen(n_tot), _frozen(H), _frozen(S),
        _frozen(np.array(H_id)), _frozen(np.array(S_id)), _frozen(h_res.copy()), _frozen(s_res))
