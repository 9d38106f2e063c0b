"""Sealed vessel with a vapour and a liquid: ``equilibrium(feed, T, V=..., phases="auto")`` (the default).

At fixed T and P the equilibrium of a closed system is the minimum of its Gibbs energy G(T, P, n); in a sealed
vessel, at fixed T and V, it is the minimum of its Helmholtz energy A(T, V, n) = G - P V, the potential whose
natural variables are T, V and the amounts (Michelsen & Mollerup 2007, "Thermodynamic Models", 2nd ed., ch. 2).
So the criterion between candidate answers in a vessel is the lower A, not the lower G: two answers of the same
vessel may sit at different pressures, and G alone would favour the one at lower pressure. The two minima are
linked by the Legendre transform: over every split into phases and every composition the reactions allow,

    A_min(T, V) = max_P [G_min(T, P) - P V],   reached at the pressure P* where V_eq(P*) = V,

with V_eq(P) = sum_p Z_p n_p R T / P (p = vapour, liquid; each phase's Z at its own composition) the volume of the
fixed-pressure equilibrium, dG_min/dP = V_eq. V_eq decreases with P (mechanical stability), so P* is the one
root of

    h(s) = ln(V_eq(e^s) / V),   s = ln P,   1e-2 Pa <= P <= 1e10 Pa.

This module finds P* for the states where the compiled one-phase search cannot: it ended with status 5 because
no single phase fills the vessel (reason 4: the one-phase volume jumps across V), or its answer fails the
(screened) tangent-plane stability test (Michelsen 1982). h is evaluated by the fixed-pressure solve
(``ReactionSystem.equilibrium(..., P=...)``: one phase where that is stable, else the two-phase reactive solve of
:mod:`hipeq.solvers.two_phase`; no new minimiser). The root is bracketed from the one-phase search's last
pressure (its ln P rounded to START_GRID, so that a state alone and in a batch take the same path) by steps in
ln P of 0.05, 0.1, 0.2, ... (doubling, at most MAX_BRACKET_STEPS) and closed by Brent's
method (``scipy.optimize.brentq``; Brent 1973, "Algorithms for Minimization without Derivatives", ch. 4) to
|Delta ln P| <= 1e-14, at most MAX_BRENT_STEPS evaluations.

Status 0 only when, at P*: the fixed-pressure answer converged; every element balance closes
(ELEMENT_RTOL / ELEMENT_ATOL of :mod:`hipeq.solvers.result`); the fugacities are equal across the phases and
every reaction's condition holds in them to FUGACITY_TOL; every reaction residual of the overall answer is within
max(FUGACITY_TOL, tol); |V_eq - V| <= VOLUME_RTOL V; and, where the one-phase search had converged, the answer's
A is below that one-phase answer's. Otherwise a state that had status 5 keeps it with reason 9
(REASON_TWO_PHASE_NOT_FOUND) and a note that says where the search stopped; a converged one-phase answer is kept
as it was (its message carries the stability caution).

Equilibrium is a thermodynamic limit, not a design basis for pressure equipment; follow local codes and licensed
engineering practice.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy.optimize import brentq

from hipeq.constants import R
from hipeq.models import _kernels as K
from hipeq.models.inputs import P_MAX
from hipeq.solvers import _common as C
from hipeq.solvers._arrays import METHOD_NAMES
from hipeq.solvers.phase_results import (rebuilt_batch, split_unstable, state_rows, two_phase_answer,
                                         unstable_states)

__all__ = ["fill_vessels", "VesselSearch", "search_vessel", "P_FLOOR", "VOLUME_RTOL", "FUGACITY_TOL"]

P_FLOOR = 1e-2  # [Pa] the same pressure limits as the compiled one-phase search (P_MAX is its ceiling)
FIRST_STEP = 0.05  # [-] first step in ln P of the bracket search, doubled at each further step
START_GRID = 1e-3  # [-] the bracket search starts from the one-phase search's last ln P rounded to this grid
MAX_BRACKET_STEPS = 40
MAX_BRENT_STEPS = 100
X_TOL = 1e-14  # [-] Brent's method stops when the bracket on ln P is this narrow (plus 4 eps |ln P|)
VOLUME_RTOL = 1e-9  # |V_eq - V| <= VOLUME_RTOL V at status 0
FUGACITY_TOL = 1e-9  # |ln f_i^V - ln f_i^L| and every reaction's condition in the phases, at status 0
_ROOT_CODES = {"two-phase": -2, "none": -1, "single": 0, "gas-like": 1, "liquid-like": 2}


class _Stop(Exception):
    """An evaluation of V_eq(P) that has no answer; the text says where and why."""


@dataclass(frozen=True)
class VesselSearch:
    """One vessel's search: ``answer`` the fixed-pressure EquilibriumResult at P* (None when the search failed,
    then ``note`` says why), the pressures tried (``evaluations``) and their Newton iterations."""

    answer: Any
    note: str
    evaluations: int
    iterations: int


def search_vessel(system: Any, n0: np.ndarray, T: float, V: float, P_start: float, A_one: float | None = None, *,
                  method: str = "extent", scheme: str = "coupled", tol: float = 1e-11,
                  max_iterations: int = 100) -> VesselSearch:
    """The pressure P* [Pa] at which the fixed-(T, P) equilibrium of the feed ``n0`` [mol], with a vapour and a
    liquid where one phase is not stable, fills the vessel: V_eq(P*) = V [m3] (module docstring). ``P_start``
    [Pa]: where the bracket search starts (the one-phase search's last pressure); ``A_one``: A/RT [mol] of a
    converged one-phase answer of the same vessel, which the answer must lie below. The other arguments go to
    the fixed-pressure solves."""
    cache: dict[float, tuple[float, Any]] = {}
    iterations = 0

    def evaluate(s: float) -> float:
        nonlocal iterations
        found = cache.get(s)
        if found is not None:
            return found[0]
        P = min(P_MAX, max(P_FLOOR, math.exp(s)))
        one = system.equilibrium(n0, T, P=P, method=method, scheme=scheme, tol=tol, max_iterations=max_iterations,
                                 phases="one")
        iterations += int(one.iterations)
        if one.status != 0:
            raise _Stop(f"the equilibrium at fixed P = {P:.6g} Pa on the way did not converge (status "
                        f"{int(one.status)})")
        unstable = unstable_states(system, one)
        answer = split_unstable(system, one, unstable) if unstable.size else one
        if answer is one and unstable.size:
            raise _Stop(f"at P = {P:.6g} Pa on the way one phase is not stable and the two-phase solve did not "
                        "converge")
        iterations += int(answer.iterations) - int(one.iterations)
        h = math.log(answer.V / V)
        if not math.isfinite(h):
            raise _Stop(f"the equilibrium volume at P = {P:.6g} Pa is not finite")
        cache[s] = (h, answer)
        return h

    def stopped(note: str) -> VesselSearch:
        return VesselSearch(None, note, len(cache), iterations)

    s_floor, s_ceiling = math.log(P_FLOOR), math.log(P_MAX)
    s0 = math.log(P_start) if P_start > 0.0 and math.isfinite(P_start) else s_floor
    # the start rounded to a grid of START_GRID in ln P: the one-phase search can end a few ulps apart for a state
    # alone and in a batch, and the search from the same start takes the same path to the same last bits
    s0 = min(s_ceiling, max(s_floor, round(s0 / START_GRID) * START_GRID))
    try:
        a, h_a = s0, evaluate(s0)
        b, h_b = a, h_a
        step = FIRST_STEP
        direction = 1.0 if h_a > 0.0 else -1.0  # a volume too large: raise the pressure
        for _ in range(MAX_BRACKET_STEPS):
            if h_b == 0.0 or (h_a > 0.0) != (h_b > 0.0):
                break
            a, h_a = b, h_b
            if a >= s_ceiling and direction > 0.0:
                return stopped(f"even at the ceiling of {P_MAX:g} Pa the equilibrium takes "
                               f"{V * math.exp(h_a):.6g} m3, more than the vessel")
            if a <= s_floor and direction < 0.0:
                return stopped(f"even at the floor of {P_FLOOR:g} Pa the equilibrium takes only "
                               f"{V * math.exp(h_a):.6g} m3, less than the vessel")
            b = min(s_ceiling, max(s_floor, a + direction * step))
            h_b = evaluate(b)
            step *= 2.0
        else:
            return stopped(f"no bracket on the pressure within {MAX_BRACKET_STEPS} steps")
        if h_b != 0.0:
            lo, hi = min(a, b), max(a, b)
            _, info = brentq(evaluate, lo, hi, xtol=X_TOL, maxiter=MAX_BRENT_STEPS, full_output=True, disp=False)
            if not info.converged:
                return stopped(f"Brent's method did not close the bracket on ln P in {MAX_BRENT_STEPS} steps")
    except _Stop as err:
        return stopped(str(err))
    h, answer = min(cache.values(), key=lambda item: abs(item[0]))
    P = float(answer.P)
    if not abs(answer.V - V) <= VOLUME_RTOL * V:
        return stopped(f"the equilibrium volume jumps across the vessel's volume near P = {P:.6g} Pa (closest "
                       f"{answer.V:.6g} m3): no pressure matches it to {VOLUME_RTOL:g} (a feed that boils at one "
                       "pressure, like a single species)")
    problem = _check(system, answer, n0, tol)
    if problem:
        return stopped(f"at P = {P:.6g} Pa {problem}")
    A_two = float(answer.G_RT) - P * V / (R * T)
    if A_one is not None and not A_two < A_one:
        return stopped(f"the answer at P = {P:.6g} Pa (A/RT = {A_two:.12g} mol) does not lie below the one-phase "
                       f"answer (A/RT = {A_one:.12g} mol)")
    return VesselSearch(answer, "", len(cache), iterations)


def _check(system: Any, answer: Any, n0: np.ndarray, tol: float) -> str:
    """What an answer at P* fails of the status-0 checks (module docstring), or ""."""
    if answer.status != 0:
        return f"the answer has status {int(answer.status)}"
    n = np.asarray(answer.amounts.array, dtype=float)
    A = system.element_matrix
    b = A @ n0
    if not np.all(np.abs(A @ n - b) <= C.ELEMENT_RTOL * np.abs(b) + C.ELEMENT_ATOL * float(np.sum(np.abs(b)))):
        return "an element balance does not close"
    split = two_phase_answer(answer)
    if split is not None and not split.max_residual <= FUGACITY_TOL:
        return f"the phases' fugacities or reaction conditions are off by {split.max_residual:.2g}"
    residuals = np.asarray(answer.residuals, dtype=float)
    if residuals.size and not float(np.max(np.abs(residuals))) <= max(FUGACITY_TOL, tol):
        return f"a reaction's condition is off by {float(np.max(np.abs(residuals))):.2g}"
    return ""


def fill_vessels(system: Any, result: Any, volume: Any, *, method: str = "extent", scheme: str = "coupled",
                 tol: float = 1e-11, max_iterations: int = 100) -> Any:
    """``phases="auto"`` for sealed vessels: the result (scalar or batch) of the vessels ``volume`` [m3] (the
    given volumes, broadcast to the result's shape: a failed state's ``V`` holds its last iterate's volume,
    not the vessel's) with every state whose one-phase search
    ended with reason 4 (no single phase fills the vessel), or whose converged one-phase answer fails the
    screened stability test, solved again by :func:`search_vessel`. A found answer replaces the state (P the
    pressure found, V the vessel's volume, ``phases`` and ``phase_count`` as at fixed pressure); a state that had
    status 5 and is not found keeps status 5 with reason 9 and a note in its message; a converged one-phase
    answer that the search cannot better is kept as it was. Only for the cubic. Returns the same object when
    nothing changed."""
    from hipeq.solvers.result import EquilibriumResult

    if not result.fixed_volume or system.model.code != K.MODEL_CUBIC:
        return result
    status = np.asarray(result.status)
    n_states = int(status.size)
    flat_status = status.reshape(n_states)
    reason = np.asarray(result.reason).reshape(n_states)
    todo = set(np.flatnonzero((flat_status == C.PRESSURE_NOT_FOUND) & (reason == C.REASON_NOT_ONE_PHASE)).tolist())
    todo.update(int(k) for k in unstable_states(system, result))
    if not todo:
        return result
    nc = len(system.species_names)
    T = np.broadcast_to(np.asarray(result.T, dtype=float), status.shape).reshape(n_states)
    P = np.broadcast_to(np.asarray(result.P, dtype=float), status.shape).reshape(n_states)
    V = np.broadcast_to(np.asarray(volume, dtype=float), status.shape).reshape(n_states)
    G = np.broadcast_to(np.asarray(result.G_RT, dtype=float), status.shape).reshape(n_states)
    feed = np.asarray(result._feed, dtype=float).reshape(n_states, nc)
    found: dict[int, VesselSearch] = {}
    notes: dict[int, str] = {}
    for k in sorted(todo):
        converged = flat_status[k] == 0
        A_one = float(G[k] - P[k] * V[k] / (R * T[k])) if converged else None  # A = G - P V
        search = search_vessel(system, np.array(feed[k]), float(T[k]), float(V[k]), float(P[k]), A_one,
                               method=method, scheme=scheme, tol=tol, max_iterations=max_iterations)
        if search.answer is not None:
            found[k] = search
        elif not converged:
            notes[k] = ("with a vapour and a liquid, " + search.note + f" ({search.evaluations} pressures tried)")
    if not found and not notes:
        return result
    if isinstance(result, EquilibriumResult):
        return _scalar(result, found.get(0), notes.get(0), float(V[0]))
    return _batch(result, found, notes, V)


def _scalar(result: Any, search: VesselSearch | None, note: str | None, V: float) -> Any:
    from hipeq.solvers.result import EquilibriumResult, cached_names

    new = object.__new__(EquilibriumResult)
    cached = cached_names(result)
    if search is None:  # status 5 kept, with reason 9 and the note
        new.__dict__.update({key: value for key, value in result.__dict__.items() if key not in cached})
        new.__dict__.update(reason=C.REASON_TWO_PHASE_NOT_FOUND, _vessel_notes={0: note})
        return new
    answer = search.answer
    keep = cached - {"stability"}  # the fixed-pressure answer's stability (of its one-phase answer) stays valid
    new.__dict__.update({key: value for key, value in answer.__dict__.items() if key not in keep})
    new.__dict__.update(V=V, fixed_volume=True, iterations=int(result.iterations) + search.iterations,
                        outer_iterations=int(result.outer_iterations) + search.evaluations,
                        reason=C.REASON_NONE)
    return new


def _batch(result: Any, found: dict[int, VesselSearch], notes: dict[int, str], V: np.ndarray) -> Any:
    shape = np.shape(result.status)

    def replaced(values: Any, pick: Any, others: dict[int, Any] | None = None) -> np.ndarray:
        return state_rows(values, shape, {**{k: pick(k, search.answer) for k, search in found.items()},
                                          **(others or {})})

    def field(name: str) -> Any:
        return lambda k, a: np.asarray(getattr(a, name))

    new = rebuilt_batch(
        result, P=replaced(result.P, field("P")), V=replaced(result.V, lambda k, a: V[k]),
        Z=replaced(result.Z, field("Z")), G_RT=replaced(result.G_RT, field("G_RT")),
        _amounts=replaced(result._amounts, field("_amounts")), _y=replaced(result._y, field("_y")),
        _ln_phis=replaced(result._ln_phis, field("_ln_phis")), extents=replaced(result.extents, field("extents")),
        residuals=replaced(result.residuals, field("residuals")),
        _element_res=replaced(result._element_res, field("_element_res")),
        iterations=replaced(result.iterations, lambda k, a: int(result.iterations.flat[k]) + found[k].iterations),
        outer_iterations=replaced(result.outer_iterations,
                                  lambda k, a: int(result.outer_iterations.flat[k]) + found[k].evaluations),
        status=replaced(result.status, lambda k, a: C.CONVERGED),
        reason=replaced(result.reason, lambda k, a: C.REASON_NONE,
                        {k: C.REASON_TWO_PHASE_NOT_FOUND for k in notes}),
        _methods=replaced(result._methods, lambda k, a: METHOD_NAMES.index(a.method)),
        _roots=replaced(result._roots, lambda k, a: _ROOT_CODES.get(a.root, -1)),
        liquid_like=replaced(result.liquid_like, field("liquid_like")))
    data = dict(result.__dict__.get("_phase_data") or {})
    data.update({k: s.answer.__dict__["_phase_data"][0] for k, s in found.items()
                 if s.answer.__dict__.get("_phase_data")})
    object.__setattr__(new, "_phase_data", data)
    object.__setattr__(new, "_vessel_notes", notes)
    return new
