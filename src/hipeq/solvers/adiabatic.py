"""Adiabatic equilibrium: the outlet temperature at which the equilibrium mixture carries the feed's enthalpy.

For a feed n0 entering at T_in and pressure P, the adiabatic outlet is the T at which

    f(T) = H(T, P, n_eq(T, P)) - H(T_in, P, n0) = 0,

n_eq(T, P) being the equilibrium amounts at T and P and H the mixture enthalpy of
:mod:`hipeq.solvers.properties` (ideal-gas part relative to the elements, so the heat of reaction is included;
e.g. Smith, Van Ness & Abbott 2005, "Introduction to Chemical Engineering Thermodynamics", 7th ed., sec. 4.7 and
13.11, adiabatic reaction temperature with equilibrium). For the ideal gas dH_eq/dT at equilibrium is the
"equilibrium heat capacity" n Cp + ΔrH dξ/dT > 0 (van 't Hoff: dξ/dT has the sign of ΔrH), so f is increasing
and the root is unique; an exothermic feed has f(T_in) < 0 and its root above T_in, an endothermic one below.

Search (the same for one state and for a batch, so both give the same answer): the first step is the frozen-
composition estimate T_in - f(T_in)/C_p(T_in), C_p the heat capacity of the equilibrium mixture at T_in with its
composition held; the step doubles until f changes sign or the temperature bound is reached; then a bracketed
regula falsi with the Anderson-Bjorck correction and a bisection safeguard (Anderson & Bjorck 1973, BIT 13, 253;
superlinear, never leaves the bracket) until |f| <= ENERGY_RTOL * scale or the bracket is narrower than
TEMPERATURE_TOL. scale = max(|H_in|, n0 R T_in): H_in alone can be near zero (elements fed at 298.15 K).
"""
from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from hipeq.constants import R
from hipeq.errors import InputError, NotConvergedError
from hipeq.solvers.result import BatchResult, EquilibriumResult

if TYPE_CHECKING:
    from hipeq.solvers.system import ReactionSystem

__all__ = ["AdiabaticResult", "AdiabaticBatchResult", "adiabatic_equilibrium", "ENERGY_RTOL", "TEMPERATURE_TOL"]

ENERGY_RTOL = 1e-12  # |H_out - H_in| / scale at which the search stops
TEMPERATURE_TOL = 1e-9  # [K] bracket width at which the search stops
MAX_STEPS = 200  # bracket expansions plus regula-falsi steps per state
FIRST_STEP_MAX = 400.0  # [K] largest first step away from T_in
SEARCH_OK, SEARCH_NO_BRACKET, SEARCH_SOLVE_FAILED, SEARCH_MAX_STEPS = 0, 1, 2, 3
SEARCH_MESSAGES = (
    "enthalpy balance closed",
    "no outlet temperature within the bounds closes the enthalpy balance",
    "an equilibrium solve failed during the temperature search",
    "the temperature search did not converge within its step limit",
)


@dataclass(frozen=True, eq=False, repr=False)
class AdiabaticResult(EquilibriumResult):
    """The adiabatic equilibrium outlet: an :class:`~hipeq.solvers.result.EquilibriumResult` at the outlet
    temperature ``T`` [K], plus ``T_in`` [K], ``H_in`` [J] (feed enthalpy at T_in and P), ``temperature_rise``
    [K] (T - T_in; negative for an endothermic feed), ``energy_residual`` [-] ((H - H_in) / scale, scale =
    max(|H_in|, n_feed R T_in)), ``T_bounds`` [K] (the search interval) and ``solves`` (equilibrium solves spent)."""

    T_in: float
    H_in: float
    T_bounds: tuple[float, float]
    solves: int

    @property
    def temperature_rise(self) -> float:
        """T - T_in [K] (adiabatic temperature rise; negative for an endothermic feed)."""
        return self.T - self.T_in

    @property
    def energy_residual(self) -> float:
        """(H_out - H_in) / max(|H_in|, n_feed R T_in) [-] at the answer."""
        return (self.H - self.H_in) / max(abs(self.H_in), float(np.sum(self._feed)) * R * self.T_in)

    def __repr__(self) -> str:
        return (f"AdiabaticResult(T_in={self.T_in:g} K -> T={self.T:.6g} K (rise {self.temperature_rise:+.4g} K), "
                f"P={self.P:.6g} Pa, {self.eos}, status={int(self.status)} ({self.status.name}))")


@dataclass(frozen=True, eq=False, repr=False)
class AdiabaticBatchResult(BatchResult):
    """Adiabatic outlets of many inlets: a :class:`~hipeq.solvers.result.BatchResult` at the outlet temperatures
    ``T`` plus arrays ``T_in``, ``H_in``, ``temperature_rise``, ``energy_residual`` (as in :class:`AdiabaticResult`)
    and ``search_status`` (0 closed, 1 no root within the bounds, 2 an equilibrium solve failed, 3 step limit);
    ``converged`` needs both the equilibrium solve and the search."""

    T_in: np.ndarray = None  # type: ignore[assignment]
    H_in: np.ndarray = None  # type: ignore[assignment]
    search_status: np.ndarray = None  # type: ignore[assignment]
    solves: int = 0

    @property
    def temperature_rise(self) -> np.ndarray:
        """T - T_in [K] per state."""
        return self.T - self.T_in

    @property
    def energy_residual(self) -> np.ndarray:
        """(H_out - H_in) / max(|H_in|, n_feed R T_in) [-] per state."""
        scale = np.maximum(np.abs(self.H_in), np.sum(self._feed, axis=-1) * R * self.T_in)
        return (self.H - self.H_in) / scale

    @property
    def converged(self) -> np.ndarray:  # type: ignore[override]
        """Equilibrium converged and enthalpy balance closed, per state."""
        return (self.status == 0) & (self.search_status == SEARCH_OK)

    @property
    def n_failed(self) -> int:
        """States whose equilibrium solve or temperature search failed."""
        return int(np.count_nonzero(~self.converged))

    def message(self, index: int | tuple[int, ...]) -> str:
        """Explanation of the state at ``index`` (flat index or multi-index)."""
        flat = int(np.ravel_multi_index(index, self.shape)) if isinstance(index, tuple) else int(index)
        code = int(self.search_status.flat[flat])
        text = super().message(flat)
        return text if code == SEARCH_OK else f"{SEARCH_MESSAGES[code]}; last equilibrium solve: {text}"


def _search(evaluate: Callable[[np.ndarray, np.ndarray], np.ndarray], T_in: np.ndarray, f0: np.ndarray,
            C: np.ndarray, scale: np.ndarray, lo: np.ndarray, hi: np.ndarray
            ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Vectorised bracket-and-refine on f(T) (module docstring). ``evaluate(T, index)`` returns f at the states
    ``index`` (NaN where the equilibrium solve failed). Returns (T, f at T, search status) per state."""
    m = T_in.size
    status = np.full(m, SEARCH_OK)
    # a = the end with f <= 0 (below the root), b = the end with f >= 0
    a, fa = T_in.copy(), f0.copy()
    b, fb = T_in.copy(), f0.copy()
    done = np.abs(f0) <= ENERGY_RTOL * scale
    up = f0 < 0.0
    step = np.minimum(np.abs(f0) / np.maximum(C, 1e-300), FIRST_STEP_MAX)
    step = np.maximum(step, 1.0)
    step_to = np.where(up, hi - T_in, T_in - lo)
    status[~done & (step_to <= 0.0)] = SEARCH_NO_BRACKET
    open_ = ~done & (status == SEARCH_OK)
    last = T_in.copy()
    for _ in range(60):  # bracket: step out, doubling
        idx = np.flatnonzero(open_)
        if not idx.size:
            break
        T_try = np.where(up[idx], np.minimum(last[idx] + step[idx], hi[idx]),
                         np.maximum(last[idx] - step[idx], lo[idx]))
        f_try = evaluate(T_try, idx)
        failed = ~np.isfinite(f_try)
        status[idx[failed]] = SEARCH_SOLVE_FAILED
        ok = ~failed
        i_ok, T_ok, f_ok = idx[ok], T_try[ok], f_try[ok]
        crossed = np.where(up[i_ok], f_ok >= 0.0, f_ok <= 0.0)
        # keep the nearest end on the starting side
        below = f_ok <= 0.0
        a[i_ok[below]], fa[i_ok[below]] = T_ok[below], f_ok[below]
        b[i_ok[~below]], fb[i_ok[~below]] = T_ok[~below], f_ok[~below]
        at_bound = np.where(up[i_ok], T_ok >= hi[i_ok], T_ok <= lo[i_ok])
        status[i_ok[~crossed & at_bound]] = SEARCH_NO_BRACKET
        last[i_ok] = T_ok
        step[i_ok] *= 2.0
        open_[idx] = False
        open_[i_ok[~crossed & ~at_bound]] = True
        hit = np.abs(f_ok) <= ENERGY_RTOL * scale[i_ok]
        done[i_ok[hit]] = True
    best_T = np.where(np.abs(fa) <= np.abs(fb), a, b)
    best_f = np.where(np.abs(fa) <= np.abs(fb), fa, fb)
    active = ~done & (status == SEARCH_OK)
    side = np.zeros(m, dtype=int)  # which end was kept last time: -1 a, +1 b (Anderson-Bjorck)
    repeats = np.zeros(m, dtype=int)  # steps in a row that kept the same end: bisect from the third on
    for _ in range(MAX_STEPS):
        idx = np.flatnonzero(active)
        if not idx.size:
            break
        ai, bi, fai, fbi = a[idx], b[idx], fa[idx], fb[idx]
        with np.errstate(divide="ignore", invalid="ignore"):
            x = bi - fbi * (bi - ai) / (fbi - fai)
        bad = ~np.isfinite(x) | (x <= ai) | (x >= bi) | (repeats[idx] >= 3)
        x = np.where(bad, 0.5 * (ai + bi), x)
        repeats[idx[bad]] = -1  # after a bisection, count again
        fx = evaluate(x, idx)
        failed = ~np.isfinite(fx)
        status[idx[failed]] = SEARCH_SOLVE_FAILED
        active[idx[failed]] = False
        ok = ~failed
        i_ok, x_ok, f_ok = idx[ok], x[ok], fx[ok]
        low = f_ok <= 0.0
        for sel, kept in ((low, 1), (~low, -1)):  # the moved end is replaced; the kept end may be scaled
            j = i_ok[sel]
            if kept == 1:  # a moves, b kept
                f_new = f_ok[sel]
                repeat = side[j] == 1
                g = 1.0 - f_new / np.where(fa[j] != 0.0, fa[j], 1.0)
                fb[j] = np.where(repeat, fb[j] * np.where(g > 0.0, g, 0.5), fb[j])
                a[j], fa[j] = x_ok[sel], f_new
            else:  # b moves, a kept
                f_new = f_ok[sel]
                repeat = side[j] == -1
                g = 1.0 - f_new / np.where(fb[j] != 0.0, fb[j], 1.0)
                fa[j] = np.where(repeat, fa[j] * np.where(g > 0.0, g, 0.5), fa[j])
                b[j], fb[j] = x_ok[sel], f_new
            repeats[j] = np.where(side[j] == kept, repeats[j] + 1, 0)
            side[j] = kept
        better = np.abs(f_ok) <= np.abs(best_f[i_ok])
        best_T[i_ok[better]], best_f[i_ok[better]] = x_ok[better], f_ok[better]
        closed = (np.abs(f_ok) <= ENERGY_RTOL * scale[i_ok]) | (b[i_ok] - a[i_ok] <= TEMPERATURE_TOL)
        active[i_ok[closed]] = False
    status[active] = SEARCH_MAX_STEPS
    return best_T, best_f, status


def adiabatic_equilibrium(system: ReactionSystem, feed: Mapping[str, Any] | Any, T_in: Any, P: Any, *,
                          T_bounds: tuple[Any, Any] | None = None, method: str = "extent", tol: float = 1e-11,
                          raise_on_failure: bool = False) -> AdiabaticResult | AdiabaticBatchResult:
    """Implementation of :meth:`hipeq.ReactionSystem.adiabatic_equilibrium` (docstring there)."""
    from hipeq.solvers.system import feed_amount
    from hipeq.units import to_si

    T_si = to_si(T_in, "temperature", "T_in")
    P_si = to_si(P, "pressure", "P")
    lo_b, hi_b = (system.T_min, system.T_max) if T_bounds is None else _bounds(system, T_bounds)
    scalar = np.ndim(T_si) == 0 and np.ndim(P_si) == 0
    if isinstance(feed, Mapping):
        feed = {name: feed_amount(name, amount) for name, amount in feed.items()}
        scalar = scalar and all(np.ndim(v) == 0 for v in feed.values())
        cols = {system.species_index(k): np.asarray(v, dtype=float) for k, v in feed.items()}
        fshape = np.broadcast_shapes(*(c.shape for c in cols.values())) if cols else ()
        n0 = np.zeros(fshape + (len(system.species_names),))
        for j, c in cols.items():
            n0[..., j] += c
    else:
        n0 = np.asarray(to_si(feed, "amount", "feed"), dtype=float)
        scalar = scalar and n0.ndim == 1
    if scalar:
        n0 = system.feed_vector(n0)
    nc = len(system.species_names)
    if n0.ndim == 0 or n0.shape[-1] != nc:
        raise InputError("feed", f"needs {nc} species on its last axis, got shape {n0.shape}")
    shape = np.broadcast_shapes(np.shape(T_si), np.shape(P_si), n0.shape[:-1])
    T0 = np.broadcast_to(np.asarray(T_si, dtype=float), shape).ravel().copy()
    P0 = np.broadcast_to(np.asarray(P_si, dtype=float), shape).ravel().copy()
    N0 = np.broadcast_to(n0, shape + (nc,)).reshape(-1, nc).copy()
    bad_T = ~((T0 >= system.T_min) & (T0 <= system.T_max))
    if np.any(bad_T):
        lo, hi = system.T_min, system.T_max
        raise InputError("T_in", f"must be within {lo:g}-{hi:g} K (the heat-capacity ranges of the species), got "
                                 f"{T0[bad_T][0]:g} K")
    if np.any((T0 < lo_b) | (T0 > hi_b)):
        raise InputError("T_bounds", f"({lo_b:g}, {hi_b:g}) K must contain T_in, got T_in = "
                                     f"{T0[(T0 < lo_b) | (T0 > hi_b)][0]:g} K")
    if not (np.all(np.isfinite(P0)) and np.all(P0 > 0.0)):
        raise InputError("P", "must be finite and > 0 Pa")
    if not (np.all(np.isfinite(N0)) and np.all(N0 >= 0.0)) or np.any(N0.sum(axis=1) <= 0.0):
        raise InputError("feed", "amounts must be finite, >= 0 mol and not all zero")
    H_in = np.asarray(system.mixture_properties(N0, T0, P=P0).H, dtype=float).reshape(-1)
    scale = np.maximum(np.abs(H_in), N0.sum(axis=1) * R * T0)
    lo = np.full(T0.size, float(lo_b))
    hi = np.full(T0.size, float(hi_b))
    options = {"method": method, "tol": tol}
    if scalar:
        return _scalar(system, N0[0], float(T0[0]), float(P0[0]), float(H_in[0]), float(scale[0]),
                       (float(lo_b), float(hi_b)), options, raise_on_failure)
    return _batch(system, N0, T0, P0, H_in, scale, lo, hi, shape, options, raise_on_failure)


def _bounds(system: ReactionSystem, T_bounds: Any) -> tuple[float, float]:
    from hipeq.units import to_si

    try:
        lo, hi = T_bounds
    except (TypeError, ValueError):
        raise InputError("T_bounds", f"must be a pair (low, high) of temperatures [K], got {T_bounds!r}") from None
    lo, hi = float(to_si(lo, "temperature", "T_bounds")), float(to_si(hi, "temperature", "T_bounds"))
    if not (system.T_min <= lo < hi <= system.T_max):
        raise InputError("T_bounds", f"must satisfy {system.T_min:g} <= low < high <= {system.T_max:g} K (the "
                                     f"species' heat-capacity ranges), got ({lo:g}, {hi:g})")
    return lo, hi


def _frozen_heat_capacity(system: ReactionSystem, amounts: np.ndarray, T: np.ndarray, P: np.ndarray) -> np.ndarray:
    """dH/dT at fixed composition [J/K] by a central difference of 0.5 K (the first step's estimate only)."""
    dT = 0.5
    lo = np.maximum(T - dT, system.T_min)
    hi = np.minimum(T + dT, system.T_max)
    H_hi = system.mixture_properties(amounts, hi, P=P).H
    H_lo = system.mixture_properties(amounts, lo, P=P).H
    return np.abs((np.asarray(H_hi) - np.asarray(H_lo)) / (hi - lo))


def _scalar(system: ReactionSystem, n0: np.ndarray, T_in: float, P: float, H_in: float, scale: float,
            bounds: tuple[float, float], options: dict[str, Any], raise_on_failure: bool) -> AdiabaticResult:
    results: dict[float, EquilibriumResult] = {}
    solves = 0

    def solve(T: float) -> EquilibriumResult:
        nonlocal solves
        known = results.get(T)
        if known is not None:
            return known
        guess = results[min(results, key=lambda t: abs(t - T))] if results else None
        result = system.equilibrium(n0, T, P, initial_guess=guess if guess is not None and guess.converged else None,
                                    **options)
        solves += 1
        results[T] = result
        return result

    def evaluate(T: np.ndarray, idx: np.ndarray) -> np.ndarray:
        result = solve(float(T[0]))
        return np.array([result.H - H_in if result.converged else np.nan])

    first = solve(T_in)
    if not first.converged:
        raise NotConvergedError(f"adiabatic search: the equilibrium at T_in = {T_in:g} K did not converge: "
                                f"{first.message}", first)
    f0 = np.array([first.H - H_in])
    C = _frozen_heat_capacity(system, first.amounts.array[None, :], np.array([T_in]), np.array([P]))
    T_out, _, status = _search(evaluate, np.array([T_in]), f0, C, np.array([scale]), np.array([bounds[0]]),
                               np.array([bounds[1]]))
    code = int(status[0])
    answer = solve(float(T_out[0]))
    if code == SEARCH_NO_BRACKET:
        end = bounds[1] if f0[0] < 0.0 else bounds[0]
        at_end = f" and {results[end].H - H_in:.6g} J at the bound {end:g} K" if end in results else ""
        raise InputError("T_bounds", f"no outlet temperature in {bounds[0]:g}-{bounds[1]:g} K closes the enthalpy "
                                     f"balance: H_out - H_in = {f0[0]:.6g} J at T_in = {T_in:g} K{at_end} (same "
                                     "sign); widen T_bounds or check the feed")
    if code != SEARCH_OK:
        raise NotConvergedError(f"adiabatic search stopped: {SEARCH_MESSAGES[code]}; last equilibrium solve at "
                                f"T = {answer.T:g} K: {answer.message}", answer)
    out = object.__new__(AdiabaticResult)
    out.__dict__.update(answer.__dict__)
    out.__dict__.update(T_in=T_in, H_in=H_in, T_bounds=bounds, solves=solves)
    return out


def _batch(system: ReactionSystem, N0: np.ndarray, T0: np.ndarray, P0: np.ndarray, H_in: np.ndarray,
           scale: np.ndarray, lo: np.ndarray, hi: np.ndarray, shape: tuple[int, ...], options: dict[str, Any],
           raise_on_failure: bool) -> AdiabaticBatchResult:
    solves = 0

    def evaluate(T: np.ndarray, idx: np.ndarray) -> np.ndarray:
        nonlocal solves
        batch = system.equilibrium_batch(N0[idx], T, P0[idx], **options)
        solves += 1
        return np.where(batch.converged, np.asarray(batch.H) - H_in[idx], np.nan)

    first = system.equilibrium_batch(N0, T0, P0, **options)
    f0 = np.where(first.converged, np.asarray(first.H) - H_in, np.nan)
    C = _frozen_heat_capacity(system, np.asarray(first.amounts.array), T0, P0)
    ok = np.isfinite(f0)
    T_out, f_out, status = np.array(T0), np.array(f0), np.full(T0.size, SEARCH_SOLVE_FAILED)
    if np.any(ok):
        idx = np.flatnonzero(ok)
        T_out[idx], f_out[idx], status[idx] = _search(lambda T, j: evaluate(T, idx[j]), T0[idx], f0[idx], C[idx],
                                                      scale[idx], lo[idx], hi[idx])
    final = system.equilibrium_batch(N0, T_out, P0, **options)
    fields = {name: getattr(final, name) for name in final.__dataclass_fields__}
    fields["shape"] = shape
    for name, value in fields.items():
        if isinstance(value, np.ndarray) and name != "_invalid_reasons":
            fields[name] = _reshape(value, final.shape, shape)
    out = AdiabaticBatchResult(**fields, T_in=T0.reshape(shape), H_in=H_in.reshape(shape),
                               search_status=status.reshape(shape), solves=solves + 2)
    if raise_on_failure and out.n_failed:
        first_bad = int(np.flatnonzero(~out.converged.ravel())[0])
        raise NotConvergedError(f"{out.n_failed} of {len(out)} adiabatic states failed; the first, state "
                                f"{first_bad}: {out.message(first_bad)}", out)
    return out


def _reshape(value: np.ndarray, old: tuple[int, ...], new: tuple[int, ...]) -> np.ndarray:
    """A batch field over the flat states ``old`` reshaped to ``new`` (trailing axes kept)."""
    if value.shape[:len(old)] != old:
        return value
    return value.reshape(new + value.shape[len(old):])
