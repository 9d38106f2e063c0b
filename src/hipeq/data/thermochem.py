"""Standard-state thermochemistry: H°, S°, G° of species and ΔrH°, ΔrG°, K of reactions, vectorised over T.

Standard state: ideal gas at P_STANDARD = 1 bar. For species i (Kirchhoff's law, e.g. Smith, Van Ness & Abbott,
"Introduction to Chemical Engineering Thermodynamics", 7th ed. 2005, sections 4.3 and 13.7):

    H°_i(T) = ΔfH°_i(298.15 K) + ∫_298.15^T Cp_i dT                  (enthalpy relative to the elements at 298.15 K)
    S°_i(T) = S°_i(298.15 K) + ∫_298.15^T Cp_i / T dT                (absolute entropy)
    G°_i(T) = H°_i(T) - T S°_i(T)

For a balanced reaction the element reference terms cancel, so ΔrG°(T) = sum_i nu_i G°_i(T) and
K(T) = exp(-ΔrG°(T) / (R T)) (dimensionless, pressures relative to 1 bar).

Temperature range: T must be finite and > 0; inside the heat-capacity range of every species involved
(TRC correlations: 50-5000 K for most, 50-1500 K for C2H6 and C3H8, 100-3000 K for CH3OCH3) results are silent;
outside it an InputError naming "T" is raised unless ``extrapolate=True`` (then OutOfRangeWarning, hard limit
10-6000 K). Enthalpies in [J/mol], entropies in [J/(mol K)].
"""
from __future__ import annotations

import functools
import math
from collections.abc import Sequence
from typing import Any

import numpy as np
import numpy.typing as npt
from scipy.special import xlogy

from hipeq.data.heat_capacity import check_temperature
from hipeq.data.reactions import Reaction, as_reaction, stoichiometric_matrix
from hipeq.data.species import Species, T_REFERENCE, species
from hipeq.errors import InputError

__all__ = ["P_STANDARD", "R", "T_REFERENCE", "standard_enthalpies", "standard_entropies", "standard_gibbs",
           "reaction_enthalpy", "reaction_entropy", "reaction_gibbs", "equilibrium_constant",
           "ln_equilibrium_constant", "ln_equilibrium_constants", "METHODS", "standard_state_table", "ideal_gas_parts"]

from hipeq.constants import P_STANDARD, R  # standard state: ideal gas at 1 bar
METHODS = ("cp-integral", "van-t-hoff")
# (temperatures x species) from which H°, S° are evaluated on numba's thread pool; below it one thread takes a few
# ms at most (~0.1 us per value), less than starting the pool in a fresh process (~40 ms), e.g. for the g0 tables
PARALLEL_MIN_ROWS = 20_000

SpeciesList = Sequence[str | Species]
Temperature = float | npt.ArrayLike


def _records(species_list: SpeciesList) -> list[Species]:
    if isinstance(species_list, (str, Species)):
        raise InputError("species", f"must be a list of species, got {species_list!r}")
    records = [species(s) for s in species_list]
    if not records:
        raise InputError("species", "is empty; give at least one species")
    return records


def _temperature(T: Temperature, records: Sequence[Species], extrapolate: bool) -> np.ndarray:
    """Validate T [K] against every species' Cp range (see module docstring); returns a float array."""
    arr = check_temperature(T, extrapolate=True)  # type, finiteness, > 0 and the hard range
    for rec in records:
        check_temperature(arr, rec.cp.T_min, rec.cp.T_max, extrapolate, what=f"the Cp of {rec.name}")
    return arr


def standard_state_table(records: Sequence[Species]) -> np.ndarray:
    """The compiled-core table of a species list (one row per species; layout in :mod:`hipeq.data._kernels`).

    Rows hold the form of the Cp correlation, ΔfH°(298.15 K) [J/mol], S°(298.15 K) [J/(mol K)] and up to eight
    Cp coefficients. Cached per tuple of records (records are frozen and hashable). Raises InputError("cp") for
    a correlation the compiled core cannot hold (a polynomial of degree > 7).
    """
    return _table(tuple(records))


@functools.lru_cache(maxsize=256)
def _table(records: tuple[Species, ...]) -> np.ndarray:
    from hipeq.data import _kernels as k
    from hipeq.data.heat_capacity import ConstantHeatCapacity, PolynomialHeatCapacity, TRCHeatCapacity

    table = np.zeros((len(records), k.N_COLUMNS))
    for i, rec in enumerate(records):
        table[i, k.COL_HF] = rec.Hf
        table[i, k.COL_S0] = rec.S0
        cp = rec.cp
        if isinstance(cp, TRCHeatCapacity):
            table[i, k.COL_FORM] = k.FORM_TRC
            table[i, k.COL_C0:k.COL_C0 + 8] = cp.coefficients
        elif isinstance(cp, PolynomialHeatCapacity):
            if len(cp.coefficients) > 8:
                raise InputError("cp", f"{rec.name}: polynomial Cp of degree {len(cp.coefficients) - 1} > 7")
            table[i, k.COL_FORM] = k.FORM_POLYNOMIAL
            table[i, k.COL_C0:k.COL_C0 + len(cp.coefficients)] = cp.coefficients
        elif isinstance(cp, ConstantHeatCapacity):
            table[i, k.COL_FORM] = k.FORM_CONSTANT
            table[i, k.COL_C0] = cp.value
        else:
            raise InputError("cp", f"{rec.name}: unsupported heat-capacity form {type(cp).__name__}")
    table.setflags(write=False)
    return table


def _profiles(records: Sequence[Species], T: np.ndarray, extrapolate: bool) -> tuple[np.ndarray, np.ndarray]:
    """(H°, S°) arrays of shape T.shape + (n_species,), from the compiled core (ranges checked by the caller)."""
    from hipeq._threads import run_in_ranges, thread_count
    from hipeq.data._kernels import profiles_range

    table = standard_state_table(records)
    flat = np.ascontiguousarray(T, dtype=float).ravel()
    H = np.empty((flat.size, len(records)))
    S = np.empty_like(H)
    threads = thread_count(flat.size) if flat.size * len(records) >= PARALLEL_MIN_ROWS else 1
    run_in_ranges(flat.size, threads, lambda first, last: profiles_range(flat, table, H, S, first, last))
    return H.reshape(T.shape + (len(records),)), S.reshape(T.shape + (len(records),))


def standard_enthalpies(species: SpeciesList, T: Temperature, *, extrapolate: bool = False) -> np.ndarray:
    """H°_i(T) = ΔfH°_i(298.15 K) + ∫_298.15^T Cp_i dT [J/mol], shape ``np.shape(T) + (n_species,)``.

    Args:
        species: identifiers, names, formulas or Species records.
        T: temperature [K], scalar or array.
        extrapolate: allow T outside the Cp ranges (OutOfRangeWarning) instead of raising InputError("T").
    """
    records = _records(species)
    return _profiles(records, _temperature(T, records, extrapolate), extrapolate)[0]


def standard_entropies(species: SpeciesList, T: Temperature, *, extrapolate: bool = False) -> np.ndarray:
    """S°_i(T) = S°_i(298.15 K) + ∫_298.15^T Cp_i/T dT [J/(mol K)] at 1 bar, shape ``np.shape(T) + (n,)``.

    Args as in :func:`standard_enthalpies` (T [K]).
    """
    records = _records(species)
    return _profiles(records, _temperature(T, records, extrapolate), extrapolate)[1]


def standard_gibbs(species: SpeciesList, T: Temperature, *, extrapolate: bool = False) -> np.ndarray:
    """G°_i(T) = H°_i(T) - T S°_i(T) [J/mol] (H relative to the elements at 298.15 K, S absolute), shape
    ``np.shape(T) + (n_species,)``. Args as in :func:`standard_enthalpies` (T [K])."""
    records = _records(species)
    arr = _temperature(T, records, extrapolate)
    H, S = _profiles(records, arr, extrapolate)
    return H - arr[..., None] * S


def _reaction_arrays(reaction: Reaction | str) -> tuple[Reaction, list[Species], np.ndarray]:
    rxn = as_reaction(reaction)
    records = [species(k) for k in rxn.species]
    return rxn, records, np.array([rxn.coefficients[r.name] for r in records])


def _out(values: np.ndarray) -> float | np.ndarray:
    return float(values) if np.ndim(values) == 0 else values


def reaction_enthalpy(reaction: Reaction | str, T: Temperature, *, extrapolate: bool = False) -> float | np.ndarray:
    """ΔrH°(T) = sum_i nu_i H°_i(T) [J/mol of reaction as written]; T [K], scalar or array."""
    _, records, nu = _reaction_arrays(reaction)
    return _out(standard_enthalpies(records, T, extrapolate=extrapolate) @ nu)


def reaction_entropy(reaction: Reaction | str, T: Temperature, *, extrapolate: bool = False) -> float | np.ndarray:
    """ΔrS°(T) = sum_i nu_i S°_i(T) [J/(mol K)]; T [K], scalar or array."""
    _, records, nu = _reaction_arrays(reaction)
    return _out(standard_entropies(records, T, extrapolate=extrapolate) @ nu)


def reaction_gibbs(reaction: Reaction | str, T: Temperature, *, extrapolate: bool = False) -> float | np.ndarray:
    """ΔrG°(T) = sum_i nu_i (H°_i(T) - T S°_i(T)) [J/mol]; T [K], scalar or array."""
    _, records, nu = _reaction_arrays(reaction)
    return _out(standard_gibbs(records, T, extrapolate=extrapolate) @ nu)


def ln_equilibrium_constant(reaction: Reaction | str, T: Temperature, method: str = "cp-integral", *,
                            extrapolate: bool = False) -> float | np.ndarray:
    """ln K(T) of a reaction (standard state: ideal gas at 1 bar); T [K], scalar or array.

    ``method="cp-integral"``: ln K = -ΔrG°(T) / (R T) with ΔrG° from the Cp integrals (exact for the data).
    ``method="van-t-hoff"``: constant-ΔrH° approximation, the integrated van 't Hoff equation
    ln K(T) = ln K(298.15 K) - ΔrH°(298.15 K)/R (1/T - 1/298.15 K) (e.g. Smith, Van Ness & Abbott 2005,
    eq. 13.15); needs only 298.15 K data, so any T > 0 is accepted, but its error grows away from 298.15 K.
    """
    if method not in METHODS:
        raise InputError("method", f"must be one of {', '.join(METHODS)}, got {method!r}")
    rxn, records, nu = _reaction_arrays(reaction)
    if method == "cp-integral":
        arr = _temperature(T, records, extrapolate)
        H, S = _profiles(records, arr, extrapolate)
        return _out(-((H - arr[..., None] * S) @ nu) / (R * arr))
    arr = check_temperature(T, 0.0, math.inf)
    dH = sum(r.Hf * n for r, n in zip(records, nu))
    dG = sum((r.Hf - T_REFERENCE * r.S0) * n for r, n in zip(records, nu))
    return _out(-dG / (R * T_REFERENCE) - dH / R * (1.0 / arr - 1.0 / T_REFERENCE))


def equilibrium_constant(reaction: Reaction | str, T: Temperature, method: str = "cp-integral", *,
                         extrapolate: bool = False) -> float | np.ndarray:
    """K(T) = exp(-ΔrG°(T) / (R T)) [-], standard state ideal gas at 1 bar (Kp with pressures in bar).

    Args:
        reaction: a Reaction or its text, e.g. ``"N2 + 3 H2 = 2 NH3"``.
        T: temperature [K], scalar or array.
        method: ``"cp-integral"`` (default) or ``"van-t-hoff"`` (constant ΔrH°); see :func:`ln_equilibrium_constant`.
        extrapolate: allow T outside the Cp ranges with an OutOfRangeWarning.

    K overflows to inf when ln K > 709; use :func:`ln_equilibrium_constant` for extreme cases.
    """
    ln_k = np.asarray(ln_equilibrium_constant(reaction, T, method, extrapolate=extrapolate))
    with np.errstate(over="ignore"):
        return _out(np.exp(ln_k))


def ln_equilibrium_constants(reactions: Sequence[Reaction | str], species: SpeciesList, T: Temperature,
                             method: str = "cp-integral", *, extrapolate: bool = False) -> np.ndarray:
    """ln K_j(T) of several reactions over one species list: -nu @ G°(T) / (R T), shape ``np.shape(T) + (n_r,)``.

    Args:
        reactions: Reactions or their text; every species must be in ``species``.
        species: the species list (its order fixes the columns of the stoichiometric matrix nu).
        T: temperature [K], scalar or array.
        method: ``"cp-integral"`` or ``"van-t-hoff"`` (see :func:`ln_equilibrium_constant`).
    """
    if method not in METHODS:
        raise InputError("method", f"must be one of {', '.join(METHODS)}, got {method!r}")
    records = _records(species)
    nu = stoichiometric_matrix(reactions, records)
    if method == "van-t-hoff":
        arr = check_temperature(T, 0.0, math.inf)
        Hf = np.array([r.Hf for r in records])
        G0 = Hf - T_REFERENCE * np.array([r.S0 for r in records])
        dH, dG = nu @ Hf, nu @ G0
        return -dG / (R * T_REFERENCE) - np.multiply.outer(1.0 / arr - 1.0 / T_REFERENCE, dH / R)
    involved = [r for r, used in zip(records, np.any(nu != 0.0, axis=0)) if used]
    arr = _temperature(T, involved, extrapolate)
    H, S = _profiles(involved, arr, extrapolate)
    nu_used = nu[:, np.any(nu != 0.0, axis=0)]
    return -((H - arr[..., None] * S) @ nu_used.T) / (R * arr[..., None])


def ideal_gas_parts(records: Sequence[Species], T: Any, amounts: np.ndarray, P: Any) -> tuple[Any, Any]:
    """Ideal-gas mixture enthalpy [J] and entropy [J/K]: sum_i n_i H0_i(T) and
    sum_i n_i [S0_i(T) - R ln(y_i P/P0)] (y_i ln y_i -> 0 for absent species; Smith, Van Ness & Abbott 2005,
    sec. 11.4, the ideal-gas mixture). T [K], amounts [mol] (species on the last axis, broadcast with T and P),
    P [Pa]. Raises InputError("T") outside the species' Cp ranges. Used for a one-phase mixture
    (:mod:`hipeq.solvers.properties`) and for each phase of a split at its own composition
    (:class:`hipeq.models.phases.Phase`)."""
    T = np.asarray(T, dtype=float)
    amounts = np.asarray(amounts, dtype=float)
    H0 = standard_enthalpies(records, T)
    S0 = standard_entropies(records, T)
    n = amounts.sum(axis=-1)
    H = np.sum(amounts * H0, axis=-1)
    mixing = np.sum(xlogy(amounts, amounts), axis=-1) - xlogy(n, n)  # sum_i n_i ln y_i
    S = np.sum(amounts * S0, axis=-1) - R * (mixing + n * np.log(np.asarray(P, dtype=float) / P_STANDARD))
    return H, S
