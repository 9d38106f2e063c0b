"""Results of equilibrium solves: :class:`EquilibriumResult` (one state) and :class:`BatchResult` (many).

Both are frozen, cheap to build (they keep the solver's arrays and derive the per-species mappings on first
access) and serialisable (``to_dict()``, ``to_json()``). Standard state throughout: the ideal gas at 1 bar.

Status codes (``status``; ``converged`` is ``status == 0``):

====  =====================  =========================================================================
code  name                   meaning
====  =====================  =========================================================================
0     CONVERGED              every equilibrium condition (and element balance) met to the tolerance
1     MAX_ITERATIONS         the iteration limit was reached first
2     STALLED                no step along the Newton direction lowered the Gibbs energy
3     NO_PHYSICAL_STATE      the fugacity model has no physical state (e.g. truncated virial, high P)
4     SINGULAR               the Newton system was singular or not finite
5     PRESSURE_NOT_FOUND     sealed vessel: no pressure between 1e-2 and 1e10 Pa gives the volume
6     INVALID_INPUT          batch only: this state's input is out of range (see ``message(i)``)
====  =====================  =========================================================================

Quantities per reaction (arrays in the order of ``reactions``): ``ln_K`` and ``K`` (standard state ideal gas
at 1 bar), ``K_phi = prod phi_i^nu_i``, ``K_y = prod y_i^nu_i``, so that at equilibrium
K = K_y K_phi (P/P0)^(sum nu) (Smith & Missen 1982, "Chemical Reaction Equilibrium Analysis", ch. 7);
``residuals`` = ln(K_y K_phi (P/P0)^(sum nu) / K); ``extents`` [mol].
"""
from __future__ import annotations

import json
import math
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field
from functools import cached_property
from typing import Any

import numpy as np

__all__ = ["EquilibriumResult", "BatchResult", "SpeciesValues", "STATUS_NAMES", "STATUS_MESSAGES",
           "STANDARD_STATE"]

STANDARD_STATE = "ideal gas at 1 bar"
STATUS_NAMES = ("CONVERGED", "MAX_ITERATIONS", "STALLED", "NO_PHYSICAL_STATE", "SINGULAR", "PRESSURE_NOT_FOUND",
                "INVALID_INPUT")
STATUS_MESSAGES = (
    "converged",
    "did not converge: the iteration limit (max_iterations) was reached",
    "did not converge: no step along the Newton direction lowered the Gibbs energy",
    "no physical state: the fugacity model has no root at this state (e.g. the truncated virial far beyond "
    "its pressure range); use a cubic model",
    "did not converge: the Newton system became singular or not finite",
    "sealed vessel: no pressure between 1e-2 Pa and 1e10 Pa gives this volume (is it below the co-volume of "
    "the mixture?)",
    "invalid input for this state",
)


class SpeciesValues(Mapping[str, Any]):
    """Read-only mapping species name -> value (a float, or an array over the states of a batch), backed by an
    array whose last axis runs over ``names``. ``.array`` gives that array (read-only)."""

    __slots__ = ("_names", "_index", "_array")

    def __init__(self, names: tuple[str, ...], index: Mapping[str, int], array: np.ndarray) -> None:
        self._names = names
        self._index = index
        self._array = array

    def __getitem__(self, name: str) -> Any:
        value = self._array[..., self._index[name]]
        return float(value) if value.ndim == 0 else value

    def __iter__(self) -> Iterator[str]:
        return iter(self._names)

    def __len__(self) -> int:
        return len(self._names)

    @property
    def array(self) -> np.ndarray:
        """The values as an array, species along the last axis (read-only view)."""
        view = self._array.view()
        view.flags.writeable = False
        return view

    def __repr__(self) -> str:
        if self._array.ndim == 1:
            return "{" + ", ".join(f"{n!r}: {float(v):.6g}" for n, v in zip(self._names, self._array)) + "}"
        return f"SpeciesValues({list(self._names)}, shape={self._array.shape[:-1]})"


@dataclass(frozen=True, eq=False)
class _SystemInfo:
    """Provenance shared by every result of one ReactionSystem (built once)."""

    species: tuple[str, ...]
    index: Mapping[str, int]
    reactions: tuple[str, ...]
    nu: np.ndarray
    elements: tuple[str, ...]
    element_index: Mapping[str, int]
    eos: str
    kij: Mapping[tuple[str, str], float]
    kij_sources: Mapping[tuple[str, str], str]
    zero_kij_pairs: tuple[tuple[str, str], ...]
    data_sources: Mapping[str, Mapping[str, str]]
    notes: tuple[str, ...]
    k_source: str


def _ln_k_y(nu: np.ndarray, y: np.ndarray) -> np.ndarray:
    ln_y = np.log(np.maximum(y, 1e-300))
    return ln_y @ nu.T


def _exp(values: np.ndarray) -> np.ndarray:
    with np.errstate(over="ignore", under="ignore"):
        return np.exp(np.clip(values, -745.0, 709.0))


def _jsonable(value: Any) -> Any:
    if isinstance(value, np.ndarray):
        return value.tolist()
    if isinstance(value, (np.floating, np.integer, np.bool_)):
        return value.item()
    if isinstance(value, Mapping):
        return {(" / ".join(k) if isinstance(k, tuple) else str(k)): _jsonable(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_jsonable(v) for v in value]
    if isinstance(value, float) and not math.isfinite(value):
        return str(value)
    return value


class _Common:
    """Derived quantities shared by the single-state and batch results."""

    _info: _SystemInfo
    _amounts: np.ndarray
    _feed: np.ndarray
    _ln_phis: np.ndarray
    _ln_k: np.ndarray
    P: Any

    @property
    def species(self) -> tuple[str, ...]:
        """Species names, in the system's order."""
        return self._info.species

    @property
    def reactions(self) -> tuple[str, ...]:
        """The independent reactions, in the order of the per-reaction arrays."""
        return self._info.reactions

    @cached_property
    def amounts(self) -> SpeciesValues:
        """Equilibrium amounts [mol] per species."""
        return SpeciesValues(self._info.species, self._info.index, self._amounts)

    @cached_property
    def y(self) -> SpeciesValues:
        """Equilibrium mole fractions [-] per species."""
        total = self._amounts.sum(axis=-1, keepdims=True)
        return SpeciesValues(self._info.species, self._info.index, self._amounts / np.where(total > 0, total, 1.0))

    @cached_property
    def phi(self) -> SpeciesValues:
        """Fugacity coefficients [-] per species at the equilibrium state."""
        return SpeciesValues(self._info.species, self._info.index, np.exp(self._ln_phis))

    @cached_property
    def conversion(self) -> SpeciesValues:
        """(n_feed - n) / n_feed [-] of every fed species (negative when the species is net produced)."""
        fed = [k for k, name in enumerate(self._info.species) if np.any(self._feed[..., k] > 0)]
        names = tuple(self._info.species[k] for k in fed)
        n0 = self._feed[..., fed]
        values = (n0 - self._amounts[..., fed]) / np.where(n0 > 0, n0, 1.0)
        return SpeciesValues(names, {n: k for k, n in enumerate(names)}, values)

    @property
    def ln_K(self) -> np.ndarray:
        """ln K per reaction (standard state: ideal gas at 1 bar)."""
        return self._ln_k

    @cached_property
    def K(self) -> np.ndarray:
        """Equilibrium constant per reaction [-] (pressures relative to 1 bar)."""
        return _exp(self._ln_k)

    @cached_property
    def K_phi(self) -> np.ndarray:
        """prod_i phi_i^nu_i per reaction [-]."""
        return _exp(self._ln_phis @ self._info.nu.T)

    @cached_property
    def K_y(self) -> np.ndarray:
        """prod_i y_i^nu_i per reaction [-] (not meaningful for reactions that cannot proceed)."""
        total = self._amounts.sum(axis=-1, keepdims=True)
        return _exp(_ln_k_y(self._info.nu, self._amounts / np.where(total > 0, total, 1.0)))

    @cached_property
    def element_residuals(self) -> SpeciesValues:
        """Relative residual of each element balance, (sum_i a_ei n_i - b_e) / b_e."""
        return SpeciesValues(self._info.elements, self._info.element_index, self._element_res)

    @property
    def eos(self) -> str:
        """Name of the fugacity model."""
        return self._info.eos

    @property
    def kij(self) -> Mapping[tuple[str, str], float]:
        """Binary interaction parameters used."""
        return self._info.kij

    @property
    def zero_kij_pairs(self) -> tuple[tuple[str, str], ...]:
        """Pairs whose k_ij fell back to zero for want of a value."""
        return self._info.zero_kij_pairs

    @property
    def kij_sources(self) -> Mapping[tuple[str, str], str]:
        """Source of each k_ij."""
        return self._info.kij_sources

    @property
    def data_sources(self) -> Mapping[str, Mapping[str, str]]:
        """Source of every species datum (species -> field -> source)."""
        return self._info.data_sources

    @property
    def K_source(self) -> str:
        """Where ln K came from (the data layer's Cp integrals, or the user's ln_K override)."""
        return self._info.k_source

    @property
    def notes(self) -> tuple[str, ...]:
        """Notes about the reaction system (dropped dependent reactions, ...)."""
        return self._info.notes

    @property
    def standard_state(self) -> str:
        """The standard state of K and of the chemical potentials."""
        return STANDARD_STATE

    _PUBLIC = ("T", "P", "V", "Z", "species", "reactions", "amounts", "y", "phi", "conversion", "extents", "ln_K",
               "K", "K_phi", "K_y", "residuals", "element_residuals", "iterations", "outer_iterations", "converged",
               "status", "method", "scheme", "liquid_like", "eos", "kij", "zero_kij_pairs", "kij_sources",
               "K_source", "data_sources", "notes", "standard_state")

    def to_dict(self) -> dict[str, Any]:
        """Every public field as plain Python values (lists for arrays, dicts for mappings)."""
        out = {name: _jsonable(getattr(self, name)) for name in self._PUBLIC}
        out["message"] = _jsonable(self.message if isinstance(self, EquilibriumResult) else self.messages)
        return out

    def to_json(self, **kwargs: Any) -> str:
        """``to_dict()`` as JSON text (keyword arguments go to ``json.dumps``)."""
        return json.dumps(self.to_dict(), **kwargs)


@dataclass(frozen=True, eq=False, repr=False)
class EquilibriumResult(_Common):
    """Equilibrium of one state. Per-species quantities are mappings name -> float; per-reaction ones are
    arrays in the order of ``reactions``.

    T [K], P [Pa] (given, or found for a sealed vessel), V [m3] (total volume of the equilibrium mixture),
    Z [-]; amounts [mol], y [-], phi [-], conversion [-]; extents [mol]; ln_K, K, K_phi, K_y [-]; residuals
    [-] of the equilibrium conditions; element_residuals [-]; iterations (Newton steps), outer_iterations
    (fugacity-coefficient updates of the nested scheme, or pressure steps of a sealed vessel); converged,
    status (see module docstring), message; method, scheme; liquid_like (the equation of state chose a
    liquid-like root: the gas-phase assumption is doubtful); provenance (eos, kij, kij_sources, zero_kij_pairs,
    data_sources, K_source, notes, standard_state).
    """

    T: float
    P: float
    V: float
    Z: float
    _amounts: np.ndarray
    _feed: np.ndarray
    _ln_phis: np.ndarray
    extents: np.ndarray
    _ln_k: np.ndarray
    residuals: np.ndarray
    _element_res: np.ndarray
    iterations: int
    outer_iterations: int
    status: int
    method: str
    scheme: str
    liquid_like: bool
    fixed_volume: bool
    frozen_reactions: tuple[str, ...]
    _info: _SystemInfo = field(repr=False)

    @property
    def converged(self) -> bool:
        """True when status == 0 (every condition met to the tolerance)."""
        return self.status == 0

    @cached_property
    def message(self) -> str:
        """What happened, and for a failed solve where it stopped."""
        text = STATUS_MESSAGES[self.status]
        worst = float(np.max(np.abs(self.residuals))) if self.residuals.size else 0.0
        if self.status == 0:
            text += f" in {self.iterations} Newton iterations; largest equilibrium residual {worst:.1e}"
        else:
            where = ""
            if self.residuals.size:
                k = int(np.argmax(np.abs(self.residuals)))
                where = f" in '{self.reactions[k]}'"
            text += (f"; stopped after {self.iterations} Newton iterations at P = {self.P:.6g} Pa with the largest "
                     f"equilibrium residual {worst:.2e}{where}")
        if self.frozen_reactions:
            text += ("; cannot proceed (a species on each side is absent and cannot form): "
                     + "; ".join(self.frozen_reactions))
        if self.liquid_like:
            text += "; caution: the equation of state chose a liquid-like root (gas-phase assumption doubtful)"
        return text

    def __repr__(self) -> str:
        ys = ", ".join(f"{n}={v:.4g}" for n, v in self.y.items())
        return (f"EquilibriumResult(T={self.T:g} K, P={self.P:.6g} Pa, {self.eos}, {self.method}/{self.scheme}, "
                f"status={self.status} ({STATUS_NAMES[self.status]}), y: {ys})")


@dataclass(frozen=True, eq=False, repr=False)
class BatchResult(_Common):
    """Equilibrium of many states: every field is an array over the states (shape ``shape``); per-species
    mappings give arrays; per-reaction arrays have the reactions along the last axis. A state that failed has
    ``converged`` False and a ``status`` code; its values are the last iterate (finite, never NaN). Invalid
    input states (status 6) hold the feed. ``message(i)`` explains state i (flat index); ``messages`` all."""

    shape: tuple[int, ...]
    T: np.ndarray
    P: np.ndarray
    V: np.ndarray
    Z: np.ndarray
    _amounts: np.ndarray
    _feed: np.ndarray
    _ln_phis: np.ndarray
    extents: np.ndarray
    _ln_k: np.ndarray
    residuals: np.ndarray
    _element_res: np.ndarray
    iterations: np.ndarray
    outer_iterations: np.ndarray
    status: np.ndarray
    method: str
    scheme: str
    liquid_like: np.ndarray
    fixed_volume: bool
    _invalid_reasons: Mapping[int, str]
    _info: _SystemInfo = field(repr=False)

    def __post_init__(self) -> None:
        for value in vars(self).values():
            if isinstance(value, np.ndarray):
                value.flags.writeable = False

    def __len__(self) -> int:
        return int(np.prod(self.shape)) if self.shape else 1

    @cached_property
    def converged(self) -> np.ndarray:
        """status == 0 per state."""
        out = self.status == 0
        out.flags.writeable = False
        return out

    @property
    def n_failed(self) -> int:
        """Number of states that did not converge (including invalid input)."""
        return int(np.count_nonzero(self.status))

    def message(self, index: int | tuple[int, ...]) -> str:
        """Explanation of the state at ``index`` (flat index or multi-index)."""
        flat = int(np.ravel_multi_index(index, self.shape)) if isinstance(index, tuple) else int(index)
        status = int(self.status.flat[flat])
        if status == 6:
            return STATUS_MESSAGES[6] + ": " + self._invalid_reasons.get(flat, "out of range")
        text = STATUS_MESSAGES[status]
        if status != 0:
            res = self.residuals.reshape(-1, self.residuals.shape[-1])[flat] if self.residuals.size else []
            worst = float(np.max(np.abs(res))) if len(res) else 0.0
            text += (f"; stopped after {int(self.iterations.flat[flat])} Newton iterations at "
                     f"P = {float(self.P.flat[flat]):.6g} Pa with the largest equilibrium residual {worst:.2e}")
        return text

    @property
    def messages(self) -> list[str]:
        """``message(i)`` of every state (flat order)."""
        return [self.message(i) for i in range(len(self))]

    def __repr__(self) -> str:
        return (f"BatchResult({len(self)} states, shape={self.shape}, {self.eos}, {self.method}/{self.scheme}, "
                f"{len(self) - self.n_failed} converged, {self.n_failed} failed)")
