"""Results of equilibrium solves: :class:`EquilibriumResult` (one state) and :class:`BatchResult` (many).

Both are frozen, cheap to build (they keep the solver's arrays and derive the per-species mappings on first
access) and serialisable (``to_dict()``, ``to_json()``). Standard state throughout: the ideal gas at 1 bar.

Status codes (``status``, a :class:`Status`; ``converged`` is ``status == 0``):

====  =====================  =========================================================================
code  name                   meaning
====  =====================  =========================================================================
0     CONVERGED              every equilibrium condition met to the tolerance, every element balance
                             closed (relative ELEMENT_RTOL with the absolute floor ELEMENT_ATOL of the
                             total feed atoms), every output finite, the model inside its range
1     MAX_ITERATIONS         the iteration limit was reached first
2     STALLED                no step along the Newton direction lowered the Gibbs energy
3     NO_PHYSICAL_STATE      the fugacity model has no physical state (e.g. truncated virial, high P)
4     SINGULAR               the Newton system was singular, or an output was not finite
5     PRESSURE_NOT_FOUND     sealed vessel: no pressure between 1e-2 and 1e10 Pa gives the volume as one
                             phase (the message says why: co-volume, a pressure limit, or no single phase;
                             with ``phases="auto"``, no vapour-liquid pair either: reason 9)
6     INVALID_INPUT          batch only: this state's input is out of range (see ``message(i)``)
7     OUTSIDE_MODEL_RANGE    converged, but where the model does not apply (virial |Z - 1| > 0.5,
                             Lewis-Randall rule above 2e8 Pa)
8     BALANCE_NOT_CLOSED     an element balance did not close to its tolerance
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
from enum import IntEnum
from types import MappingProxyType
from typing import Any

import numpy as np

from hipeq.constants import R as R_GAS
from hipeq.solvers.properties import MolarValues, ideal_gas_parts
from hipeq.solvers import _common as C
from hipeq.solvers import _arrays as A
from hipeq.solvers._arrays import METHOD_NAMES

__all__ = ["EquilibriumResult", "BatchResult", "SpeciesValues", "Status", "STATUS_NAMES", "STATUS_MESSAGES",
           "REASON_TEXTS", "STANDARD_STATE", "ELEMENT_RTOL", "ELEMENT_ATOL"]

STANDARD_STATE = "ideal gas at 1 bar"
ELEMENT_RTOL = C.ELEMENT_RTOL  # element balances at status 0: |sum_i a_ei n_i - b_e| <= ELEMENT_RTOL b_e ...
ELEMENT_ATOL = C.ELEMENT_ATOL  # ... + ELEMENT_ATOL sum_e b_e (an absolute floor of the total feed atoms)


class Status(IntEnum):
    """Outcome of one state's solve (codes in the module docstring); compares equal to its integer code."""

    CONVERGED = C.CONVERGED
    MAX_ITERATIONS = C.MAX_ITERATIONS
    STALLED = C.STALLED
    NO_PHYSICAL_STATE = C.NO_PHYSICAL_STATE
    SINGULAR = C.SINGULAR
    PRESSURE_NOT_FOUND = C.PRESSURE_NOT_FOUND
    INVALID_INPUT = C.INVALID_INPUT
    OUTSIDE_MODEL_RANGE = C.OUTSIDE_MODEL_RANGE
    BALANCE_NOT_CLOSED = C.BALANCE_NOT_CLOSED


STATUS_NAMES = tuple(s.name for s in Status)
STATUS_MESSAGES = (
    "converged",
    "did not converge: the iteration limit (max_iterations) was reached",
    "did not converge: no step along the Newton direction lowered the Gibbs energy",
    "no physical state: the fugacity model has no root at this state (e.g. the truncated virial far beyond "
    "its pressure range); use a cubic model",
    "did not converge: the Newton system became singular or not finite",
    "sealed vessel: no pressure between 1e-2 Pa and 1e10 Pa gives this volume as one phase",
    "invalid input for this state",
    "outside the model's range: the answer meets the equilibrium conditions, but the model does not apply there",
    "an element balance did not close to its tolerance",
)
REASON_TEXTS = {
    C.REASON_NONE: "",
    C.REASON_BELOW_COVOLUME: "the volume is at or below the co-volume of the mixture (n_T b): no fluid of this "
                             "model fits in it",
    C.REASON_ABOVE_CEILING: "the pressure would exceed the ceiling of 1e10 Pa",
    C.REASON_BELOW_FLOOR: "the pressure would fall below the floor of 1e-2 Pa (a very large vessel for this "
                          "amount)",
    C.REASON_NOT_ONE_PHASE: "the gas cannot fill the vessel at this density as one phase: the volume of the "
                            "one-phase mixture jumps across the given volume (a liquid would form)",
    C.REASON_VIRIAL_RANGE: "the truncated virial is used only while |Z - 1| <= 0.5",
    C.REASON_LEWIS_RANDALL_RANGE: "the Lewis-Randall rule is used only up to 2e8 Pa",
    C.REASON_NOT_FINITE: "an output was not finite",
    C.REASON_ELEMENTS: f"an element balance is off by more than {ELEMENT_RTOL:g} of its feed amount (floor "
                       f"{ELEMENT_ATOL:g} of the total feed atoms)",
    C.REASON_TWO_PHASE_NOT_FOUND: "no single phase fills the vessel at this density, and the search for the "
                                  "pressure at which a vapour and a liquid at equilibrium fill it together "
                                  "did not close either",
}
ROOT_NAMES = {-1: "none", 0: "single", 1: "gas-like", 2: "liquid-like"}


class cached_property:  # noqa: N801  (used as a decorator, like the functools one it replaces)
    """A value computed on its first read and kept in the instance's ``__dict__``, as ``functools.cached_property``
    does, without its lock (Python 3.11 takes one on every first read: a third of a microsecond of a scalar solve
    plus reading ``y``). Two threads reading a value first at the same moment both compute it, the same value."""

    def __init__(self, fn: Any) -> None:
        self.fn = fn
        self.name = fn.__name__
        self.__doc__ = fn.__doc__

    def __set_name__(self, owner: type, name: str) -> None:
        self.name = name

    def __get__(self, obj: Any, owner: type | None = None) -> Any:
        if obj is None:
            return self
        value = self.fn(obj)
        obj.__dict__[self.name] = value
        return value


def cached_names(result: Any) -> set[str]:
    """The names of ``result``'s values computed on first read (:class:`cached_property`): what a copy of the
    result with other answers must not carry over."""
    return {name for klass in type(result).__mro__ for name, value in vars(klass).items()
            if isinstance(value, cached_property)}


class SpeciesValues(Mapping[str, Any]):
    """Read-only mapping species name -> value (a float, or an array over the states of a batch), backed by an
    array whose last axis runs over ``names``. ``.array`` gives that array (read-only)."""

    __slots__ = ("_names", "_index", "_array")

    def __init__(self, names: tuple[str, ...], index: Mapping[str, int], array: np.ndarray) -> None:
        self._names = names
        self._index = index
        self._array = array

    def __getitem__(self, name: str) -> Any:
        if self._array.ndim == 1:  # one state: a float
            return float(self._array[self._index[name]])
        return self._array[..., self._index[name]]

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
    model: Any  # the CompiledModel that gave ln phi (residual properties at the answer come from it)
    records: tuple[Any, ...] = ()  # the Species records (ideal-gas H0, S0 of the energy properties)


def _ln_k_y(nu: np.ndarray, y: np.ndarray) -> np.ndarray:
    ln_y = np.log(np.maximum(y, 1e-300))
    return ln_y @ nu.T


def _exp(values: np.ndarray) -> np.ndarray:
    with np.errstate(over="ignore", under="ignore"):
        return np.exp(np.clip(values, -745.0, 709.0))


def _scalars_or_frozen(*arrays: np.ndarray) -> tuple[Any, ...]:
    """Per-state values as numpy scalars for one state, or as read-only arrays for a batch."""
    if not arrays[0].ndim:
        return tuple(a[()] for a in arrays)
    for a in arrays:
        a.flags.writeable = False
    return arrays


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


class _Common(MolarValues):
    """Derived quantities shared by the single-state and batch results."""

    _info: _SystemInfo
    _amounts: np.ndarray
    _y: np.ndarray
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
        return SpeciesValues(self._info.species, self._info.index, self._y)

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
        return _exp(_ln_k_y(self._info.nu, self._y))

    @cached_property
    def element_residuals(self) -> SpeciesValues:
        """Relative residual of each element balance, (sum_i a_ei n_i - b_e) / b_e."""
        return SpeciesValues(self._info.elements, self._info.element_index, self._element_res)

    @cached_property
    def _phase_energy(self) -> dict[int, Any]:
        """Flat index -> (vapour, liquid) energies of every two-phase state (empty for a one-phase result; see
        :func:`hipeq.solvers.phase_results.two_phase_energies`)."""
        from hipeq.solvers.phase_results import two_phase_energies

        return two_phase_energies(self)

    @cached_property
    def _residual(self) -> tuple[np.ndarray, np.ndarray]:
        """(h_res [J/mol], s_res [J/(mol K)]) at the answer; NaN where the state did not converge or where the
        model's stable root at (T, P, y) is not the one the answer took (a sealed vessel between two roots). A
        two-phase state: the amount-weighted means over its phases, sum_p n_p h_res,p / n."""
        status = np.asarray(self.status)
        T, P, Z = (np.broadcast_to(np.asarray(v, dtype=float), status.shape) for v in (self.T, self.P, self.Z))
        h, s = np.full(status.shape, np.nan), np.full(status.shape, np.nan)
        ok = status == 0
        if np.any(ok):
            states = self._info.model.fugacity_coefficients(T[ok], P[ok], self._y[ok] if status.ndim else self._y)
            same_root = np.abs(np.asarray(states.Z) - Z[ok]) <= 1e-7 * np.maximum(Z[ok], 1e-3)
            h[ok] = np.where(same_root, states.h_res, np.nan)
            s[ok] = np.where(same_root, (states.h_res - R_GAS * T[ok] * states.g_res_RT) / T[ok], np.nan)
        for k, phases in self._phase_energy.items():  # after the one-phase states: those stay as they were
            n = sum(p.amount for p in phases)
            h.flat[k] = sum(p.amount * p.h_res for p in phases) / n
            s.flat[k] = sum(p.amount * p.s_res for p in phases) / n
        return _scalars_or_frozen(h, s)

    @property
    def h_res(self) -> Any:
        """Residual molar enthalpy of the equilibrium mixture [J/mol], h - h_ideal gas at the same T, P, y:
        h_res = -R T^2 d(g_res/RT)/dT at fixed P, y (Michelsen & Mollerup 2007, ch. 2), from the system's fugacity
        model at the answer (0 for the ideal gas). A two-phase answer: the amount-weighted mean of its phases'
        h_res (each at its own composition and volume root, ``phases``), sum_p n_p h_res,p / n, so that
        H = sum_i n_i H0_i(T) + n h_res still holds. NaN where the state did not converge."""
        return self._residual[0]

    @property
    def s_res(self) -> Any:
        """Residual molar entropy of the equilibrium mixture [J/(mol K)] at the same T, P, y:
        s_res = (h_res - g_res)/T (Michelsen & Mollerup 2007, ch. 2). A two-phase answer: the amount-weighted
        mean of its phases' s_res (S is then not the ideal-gas mixture at the overall y plus n s_res: each phase
        mixes at its own composition, see ``S``). NaN where the state did not converge."""
        return self._residual[1]

    @cached_property
    def _energy(self) -> tuple[Any, Any]:
        """(H [J], S [J/K]) of the equilibrium mixture, NaN where h_res is NaN (see ``hipeq.solvers.properties``);
        a two-phase state: the sums over its phases."""
        h_res, s_res = (np.asarray(v, dtype=float) for v in self._residual)
        H, S = np.full(h_res.shape, np.nan), np.full(h_res.shape, np.nan)
        ok = np.isfinite(h_res)
        split = self._phase_energy
        if split:  # two-phase states are summed over their phases below
            ok = np.array(ok)
            for k in split:
                ok.flat[k] = False
        if np.any(ok):
            T, P = (np.broadcast_to(np.asarray(v, dtype=float), h_res.shape)[ok] for v in (self.T, self.P))
            n = self._amounts[ok] if h_res.ndim else self._amounts
            H_id, S_id = ideal_gas_parts(self._info.records, T, n, P)
            n_tot = np.sum(n, axis=-1)
            H[ok] = H_id + n_tot * h_res[ok]
            S[ok] = S_id + n_tot * s_res[ok]
        for k, phases in split.items():
            H.flat[k] = sum(p.H for p in phases)
            S.flat[k] = sum(p.S for p in phases)
        return _scalars_or_frozen(H, S)

    @property
    def H(self) -> Any:
        """Enthalpy of the equilibrium mixture [J], relative to the elements at 298.15 K (ideal gas):
        H = sum_i n_i H0_i(T) + n h_res, H0_i = ΔfH0_i + ∫_298.15^T Cp_i dT (Smith, Van Ness & Abbott 2005, sec.
        4.3; :mod:`hipeq.solvers.properties`). Includes the formation enthalpies, so H_feed - H_out is the heat
        given off. A two-phase answer: the sum over its phases, H = sum_p [sum_i n_i^p H0_i(T) + n_p h_res,p],
        each phase's residual enthalpy at its own composition and volume root (``phases``; the liquid's h_res
        carries the heat of condensation). NaN where the state did not converge."""
        return self._energy[0]

    @property
    def S(self) -> Any:
        """Absolute entropy of the equilibrium mixture [J/K]: sum_i n_i [S0_i(T) - R ln(y_i P/P0)] + n s_res,
        P0 = 1 bar. A two-phase answer: the sum over its phases of the same expression at each phase's own
        composition, sum_p (sum_i n_i^p [S0_i(T) - R ln(x_i^p P/P0)] + n_p s_res,p). NaN where the state did not
        converge."""
        return self._energy[1]

    @property
    def U(self) -> Any:
        """Internal energy of the equilibrium mixture [J], U = H - P V (same reference as H). A two-phase answer:
        U = H - P (V_vapour + V_liquid), each phase's V_p = Z_p n_p R T / P (for a sealed vessel their sum is the
        vessel's V to 1e-9)."""
        U = self._energy[0] - np.asarray(self.P) * np.asarray(self.V)
        split = self._phase_energy
        if not split:
            return U
        U = np.array(U, dtype=float)
        H = np.asarray(self._energy[0], dtype=float)
        P = np.broadcast_to(np.asarray(self.P, dtype=float), U.shape)
        for k, phases in split.items():
            U.flat[k] = H.flat[k] - P.flat[k] * sum(p.V for p in phases)
        return _scalars_or_frozen(U)[0]

    @property
    def n_total(self) -> Any:
        """Total amount of the equilibrium mixture [mol]."""
        total = np.sum(self._amounts, axis=-1)
        return float(total) if np.ndim(total) == 0 else total

    @cached_property
    def stability(self) -> Any:
        """Tangent-plane stability test of the answer as one phase (Michelsen 1982; a
        :class:`~hipeq.models.stability.StabilityResult`, arrays over a batch): ``stable``, the lowest
        tangent-plane distance ``tpd`` [-] and, when unstable, the ``trial`` composition that shows it (a second
        phase, usually a liquid, would form). Computed on first access from the system's model at the answer's
        T, P and y (about 20 us per state for seven species, docs/phases.md); states with invalid input are
        not tested (``complete`` False, tpd NaN)."""
        from hipeq.solvers.phase_results import answer_stability

        return answer_stability(self)

    @property
    def phases(self) -> Any:
        """The phases of the answer (:class:`~hipeq.models.phases.Phase`: name, fraction, amount, y, phi, Z,
        molar_volume, root, liquid_like), vapour first: one phase, or a vapour and a liquid when the one-phase
        answer was unstable and the two-phase solve (``phases="auto"``) answered. A batch gives a list over the
        states (flat order) of such tuples."""
        from hipeq.solvers.phase_results import answer_phases

        return answer_phases(self)

    @property
    def phase_count(self) -> Any:
        """Number of phases of the answer (1 or 2; an int array over a batch)."""
        from hipeq.solvers.phase_results import answer_phase_count

        return answer_phase_count(self)

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
               "status", "reason", "method", "method_requested", "scheme", "root", "liquid_like", "G_RT", "h_res",
               "s_res", "H", "S", "U", "n_total", "h", "s", "u", "eos", "kij", "zero_kij_pairs", "kij_sources",
               "K_source", "data_sources", "notes", "standard_state")

    def to_dict(self) -> dict[str, Any]:
        """Every public field as plain Python values (lists for arrays, dicts for mappings), with the units of
        the numbers under ``units``."""
        out = {name: _jsonable(getattr(self, name)) for name in self._PUBLIC}
        out["message"] = _jsonable(self.message if isinstance(self, EquilibriumResult) else self.messages)
        out["units"] = dict(UNITS)
        out["stability"] = self.stability.to_dict()
        out["phase_count"] = _jsonable(self.phase_count)
        if isinstance(self, EquilibriumResult):
            out["phases"] = [phase.to_dict() for phase in self.phases]
        return out

    def to_json(self, **kwargs: Any) -> str:
        """``to_dict()`` as JSON text (keyword arguments go to ``json.dumps``)."""
        return json.dumps(self.to_dict(), **kwargs)


UNITS = MappingProxyType({"T": "K", "P": "Pa", "V": "m3", "amounts": "mol", "extents": "mol", "Z": "-", "y": "-",
                          "phi": "-", "K": "- (pressures relative to 1 bar)", "h_res": "J/mol",
                          "s_res": "J/(mol K)", "G_RT": "mol", "H": "J (relative to the elements at 298.15 K)",
                          "S": "J/K", "U": "J", "n_total": "mol", "h": "J/mol", "s": "J/(mol K)", "u": "J/mol"})


def _status_text(status: int, reason: int, method: str, requested: str) -> str:
    """The message of one state: what happened and why."""
    text = STATUS_MESSAGES[status] if 0 <= status < len(STATUS_MESSAGES) else f"unknown status {status}"
    why = REASON_TEXTS.get(reason, "")
    if why:
        text += ": " + why
    if method != requested and status == Status.CONVERGED:
        text += (f"; answered by method '{method}' (Gibbs minimisation) after the '{requested}' method stopped "
                 "without converging")
    elif method != requested:
        text += f"; method '{method}' (Gibbs minimisation) was also tried after the '{requested}' method stopped"
    return text


@dataclass(frozen=True, eq=False, repr=False)
class EquilibriumResult(_Common):
    """Equilibrium of one state. Per-species quantities are mappings name -> float; per-reaction ones are
    arrays in the order of ``reactions``.

    T [K], P [Pa] (given, or found for a sealed vessel), V [m3] (total volume of the equilibrium mixture),
    Z [-]; amounts [mol], y [-], phi [-], conversion [-]; extents [mol]; ln_K, K, K_phi, K_y [-]; residuals
    [-] of the equilibrium conditions; element_residuals [-]; G_RT [mol] (G/RT of the mixture, standard state
    ideal gas at 1 bar); iterations (Newton steps, over every start tried), outer_iterations (fugacity-coefficient
    updates of the nested scheme, or pressure steps of a sealed vessel); converged, status (a :class:`Status`),
    reason (code refining the status), message; method (the method that answered: the requested one, or "gibbs"
    when the extent method failed and Gibbs minimisation answered), method_requested, scheme; root ("single",
    "gas-like", "liquid-like" or "none": the volume root of the equation of state at the answer), liquid_like
    (a liquid-like root or v/b < 1.75: the one-gas assumption is doubtful); provenance (eos, kij, kij_sources,
    zero_kij_pairs, data_sources, K_source, notes, standard_state).
    """

    T: float
    P: float
    V: float
    Z: float
    G_RT: float
    _amounts: np.ndarray
    _y: np.ndarray
    _feed: np.ndarray
    _ln_phis: np.ndarray
    extents: np.ndarray
    _ln_k: np.ndarray
    residuals: np.ndarray
    _element_res: np.ndarray
    iterations: int
    outer_iterations: int
    status: Status
    reason: int
    method: str
    method_requested: str
    scheme: str
    root: str
    liquid_like: bool
    fixed_volume: bool
    frozen_reactions: tuple[str, ...]
    _info: _SystemInfo = field(repr=False)
    # not a dataclass field (subclasses add fields without defaults): set by scalar_result; True = not screened
    _may_split = True  # a vapour-liquid split is possible at T (the solver's screen)

    @property
    def converged(self) -> bool:
        """True when status == 0 (see :class:`Status`)."""
        return self.status == 0

    @cached_property
    def message(self) -> str:
        """What happened, and for a failed solve why and where it stopped."""
        text = _status_text(self.status, self.reason, self.method, self.method_requested)
        worst = float(np.max(np.abs(self.residuals))) if self.residuals.size else 0.0
        if self.status == 0:
            text += f" in {self.iterations} Newton iterations; largest equilibrium residual {worst:.1e}"
        else:
            where = ""
            if self.residuals.size:
                k = int(np.argmax(np.abs(self.residuals)))
                where = f" in '{self.reactions[k]}'"
            text += (f"; stopped after {self.iterations} Newton iterations at T = {self.T:.6g} K, "
                     f"P = {self.P:.6g} Pa with the largest equilibrium residual {worst:.2e}{where}")
        if self.frozen_reactions:
            text += ("; cannot proceed (a species on each side is absent and cannot form): "
                     + "; ".join(self.frozen_reactions))
        if self.liquid_like and self.root != "two-phase":
            text += "; caution: the equation of state chose a liquid-like root (the one-gas assumption is doubtful)"
        return text + _unstable_caution(self, None)

    def __repr__(self) -> str:
        ys = ", ".join(f"{n}={v:.4g}" for n, v in self.y.items())
        return (f"EquilibriumResult(T={self.T:g} K, P={self.P:.6g} Pa, {self.eos}, {self.method}/{self.scheme}, "
                f"status={int(self.status)} ({self.status.name}), y: {ys})")


@dataclass(frozen=True, eq=False, repr=False)
class BatchResult(_Common):
    """Equilibrium of many states: every field is an array over the states (shape ``shape``); per-species
    mappings give arrays; per-reaction arrays have the reactions along the last axis. A state that failed has
    ``converged`` False and a ``status`` code; its values are the last iterate (finite, never NaN). Invalid
    input states (status 6) hold the feed. ``message(i)`` explains state i (flat index); ``messages`` all.
    ``method`` and ``root`` are arrays of names per state (see :class:`EquilibriumResult`)."""

    shape: tuple[int, ...]
    T: np.ndarray
    P: np.ndarray
    V: np.ndarray
    Z: np.ndarray
    G_RT: np.ndarray
    _amounts: np.ndarray
    _y: np.ndarray
    _feed: np.ndarray
    _ln_phis: np.ndarray
    extents: np.ndarray
    _ln_k: np.ndarray
    residuals: np.ndarray
    _element_res: np.ndarray
    iterations: np.ndarray
    outer_iterations: np.ndarray
    status: np.ndarray
    reason: np.ndarray
    _methods: np.ndarray
    method_requested: str
    scheme: str
    _roots: np.ndarray
    liquid_like: np.ndarray
    fixed_volume: bool
    _invalid_reasons: Mapping[int, str]
    _info: _SystemInfo = field(repr=False)
    _may_split = None  # per state, as on EquilibriumResult (set by batch_result; None = not screened)

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

    @cached_property
    def method(self) -> np.ndarray:
        """Name of the method that answered, per state."""
        return np.array(METHOD_NAMES)[self._methods]

    @cached_property
    def root(self) -> np.ndarray:
        """Volume root of the equation of state at the answer, per state ("single", "gas-like", "liquid-like",
        "none")."""
        names = np.array(["two-phase", "none", "single", "gas-like", "liquid-like"])  # -2: a two-phase answer
        return names[np.clip(self._roots, -2, 2) + 2]

    @property
    def n_failed(self) -> int:
        """Number of states that did not converge (including invalid input)."""
        return int(np.count_nonzero(self.status))

    def message(self, index: int | tuple[int, ...]) -> str:
        """Explanation of the state at ``index`` (flat index or multi-index)."""
        flat = int(np.ravel_multi_index(index, self.shape)) if isinstance(index, tuple) else int(index)
        status = int(self.status.flat[flat])
        if status == Status.INVALID_INPUT:
            return STATUS_MESSAGES[status] + ": " + self._invalid_reasons.get(flat, "out of range")
        text = _status_text(status, int(self.reason.flat[flat]), METHOD_NAMES[int(self._methods.flat[flat])],
                            self.method_requested)
        if status != 0:
            res = self.residuals.reshape(-1, self.residuals.shape[-1])[flat] if self.residuals.size else []
            worst = float(np.max(np.abs(res))) if len(res) else 0.0
            text += (f"; stopped after {int(self.iterations.flat[flat])} Newton iterations at "
                     f"T = {float(self.T.flat[flat]):.6g} K, P = {float(self.P.flat[flat]):.6g} Pa with the "
                     f"largest equilibrium residual {worst:.2e}")
        if bool(self.liquid_like.flat[flat]) and int(self._roots.flat[flat]) != -2:
            text += "; caution: the equation of state chose a liquid-like root (the one-gas assumption is doubtful)"
        return text + _unstable_caution(self, flat)

    @property
    def messages(self) -> list[str]:
        """``message(i)`` of every state (flat order)."""
        return [self.message(i) for i in range(len(self))]

    def __repr__(self) -> str:
        return (f"BatchResult({len(self)} states, shape={self.shape}, {self.eos}, {self.method_requested}/"
                f"{self.scheme}, {len(self) - self.n_failed} converged, {self.n_failed} failed)")


def scalar_result(info: _SystemInfo, layout: Any, row: np.ndarray, ints: np.ndarray, T: float, n0: np.ndarray,
                  method_requested: str, scheme: str, fixed_volume: bool,
                  frozen: tuple[str, ...]) -> EquilibriumResult:
    """An :class:`EquilibriumResult` from one state's packed answer rows (``hipeq.solvers._arrays``): views of
    ``row``, no copies. Built without the dataclass ``__init__`` (a frozen dataclass sets each of its fields through
    ``object.__setattr__``, a few microseconds on a path that sits inside users' loops)."""
    nc, nr, ne = len(info.species), len(info.reactions), len(info.elements)
    row.flags.writeable = False
    n0.flags.writeable = False
    status, iterations, outer, root, reason, method, liquid, may_split = ints.tolist()
    result = object.__new__(EquilibriumResult)
    result.__dict__.update(
        T=T, P=row.item(layout.P), V=row.item(layout.V), Z=row.item(layout.Z), G_RT=row.item(layout.G),
        _amounts=row[layout.amounts:layout.amounts + nc], _y=row[layout.y:layout.y + nc], _feed=n0,
        _ln_phis=row[layout.ln_phis:layout.ln_phis + nc], extents=row[layout.extents:layout.extents + nr],
        _ln_k=row[layout.ln_k:layout.ln_k + nr], residuals=row[layout.residuals:layout.residuals + nr],
        _element_res=row[layout.element_residuals:layout.element_residuals + ne], iterations=iterations,
        outer_iterations=outer, status=_STATUSES[status], reason=reason, method=METHOD_NAMES[method],
        method_requested=method_requested, scheme=scheme, root=ROOT_NAMES.get(root, "none"),
        liquid_like=bool(liquid), fixed_volume=fixed_volume, frozen_reactions=frozen, _info=info,
        _may_split=bool(may_split))
    return result


def _unstable_caution(result: Any, flat: int | None) -> str:
    """What a message adds about phases: the split of a two-phase answer, or the caution when a one-phase answer
    is not stable."""
    from hipeq.solvers.phase_results import unstable_text

    return unstable_text(result, flat)


_STATUSES = tuple(Status)
assert (A.STATUS, A.ITERATIONS, A.OUTER, A.ROOT, A.REASON, A.METHOD, A.LIQUID,
        A.MAY_SPLIT) == tuple(range(A.INT_COLUMNS)), \
    "scalar_result unpacks the integer answer row in this order"


def batch_result(info: _SystemInfo, layout: Any, rows: np.ndarray, ints: np.ndarray, shape: tuple[int, ...],
                 T: np.ndarray, N0: np.ndarray, method_requested: str, scheme: str, fixed_volume: bool,
                 invalid_reasons: Mapping[int, str]) -> BatchResult:
    """A :class:`BatchResult` over ``shape`` from packed answer rows, one per state (views, no copies)."""
    nc, nr, ne = len(info.species), len(info.reactions), len(info.elements)

    def columns(first: int, count: int) -> np.ndarray:
        return rows[:, first:first + count].reshape(shape + (count,))

    def column(j: int) -> np.ndarray:
        return rows[:, j].reshape(shape)

    def integers(j: int) -> np.ndarray:
        return ints[:, j].reshape(shape)

    result = BatchResult(
        shape, T.reshape(shape), column(layout.P), column(layout.V), column(layout.Z), column(layout.G),
        columns(layout.amounts, nc), columns(layout.y, nc), N0.reshape(shape + (nc,)), columns(layout.ln_phis, nc),
        columns(layout.extents, nr), columns(layout.ln_k, nr), columns(layout.residuals, nr),
        columns(layout.element_residuals, ne), integers(A.ITERATIONS), integers(A.OUTER), integers(A.STATUS),
        integers(A.REASON), integers(A.METHOD), method_requested, scheme, integers(A.ROOT),
        integers(A.LIQUID).astype(bool), fixed_volume, invalid_reasons, info)
    may_split = integers(A.MAY_SPLIT).astype(bool)
    may_split.flags.writeable = False
    object.__setattr__(result, "_may_split", may_split)
    return result
