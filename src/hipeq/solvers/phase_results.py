"""Phase questions about equilibrium answers: the stability of an answer as one phase, and the caution its message
carries (kept apart from :mod:`hipeq.solvers.result` so that the result classes stay small).

The stability test is :mod:`hipeq.models.stability` (Michelsen 1982), run with the system's model at the answer's
T, P and overall mole fractions.

The energies of a two-phase answer (:func:`two_phase_energies`) are those of its phases, each from
:func:`hipeq.models.phases.phase_energies` at the answer's T, P, the phase's amounts and its own volume root; the
result's H, S, U are their sums and h_res, s_res their amount-weighted means (:mod:`hipeq.solvers.result`).
"""
from __future__ import annotations

import dataclasses
import math
from collections.abc import Mapping
from typing import Any, NamedTuple

import numpy as np

from hipeq.constants import R
from hipeq.models import _kernels as K
from hipeq.models import _stability as S
from hipeq.models.phases import Phase, phase_energies
from hipeq.models.stability import StabilityResult, result_from_arrays, run_states
from hipeq.solvers.two_phase import TwoPhaseAnswer, solve_two_phase

_LABELS = {K.ROOT_SINGLE: "single", K.ROOT_GAS: "gas-like", K.ROOT_LIQUID: "liquid-like", K.ROOT_INVALID: "none"}

__all__ = ["answer_stability", "unstable_text", "answer_phases", "answer_phase_count", "split_unstable",
           "unstable_states", "two_phase_answer", "two_phase_energies", "PhaseEnergy", "PHASE_OPTIONS"]

PHASE_OPTIONS = ("auto", "one")


def answer_stability(result: Any) -> StabilityResult:
    """The :class:`~hipeq.models.stability.StabilityResult` of an equilibrium result (scalar or batch) as one
    phase at its T, P and y. States with status 6 (invalid input) are not tested: tpd NaN, stable True,
    complete False."""
    info = result._info
    status = np.asarray(result.status)
    shape = status.shape
    nc = len(info.species)
    n = int(np.prod(shape, dtype=np.int64)) if shape else 1
    T = np.ascontiguousarray(np.broadcast_to(np.asarray(result.T, dtype=float), shape).reshape(n))
    P = np.ascontiguousarray(np.broadcast_to(np.asarray(result.P, dtype=float), shape).reshape(n))
    Y = np.array(np.asarray(result._y, dtype=float).reshape(n, nc))
    sums = Y.sum(axis=1)
    ok = (status.reshape(n) != 6) & np.all(np.isfinite(Y), axis=1) & (sums > 0) & np.isfinite(T) & (T > 0) \
        & np.isfinite(P) & (P > 0)
    Y[ok] /= sums[ok, None]
    trials = np.array(Y)
    floats = np.zeros((n, S.N_FLOAT))
    ints = np.zeros((n, S.N_INT), dtype=np.int64)
    if np.any(ok):
        t, f, i = run_states(info.model, T[ok], P[ok], Y[ok])
        trials[ok], floats[ok], ints[ok] = t, f, i
    floats[~ok, S.F_TPD] = np.nan
    ints[~ok, S.I_STATUS] = S.STABILITY_PARTIAL
    ints[~ok, S.I_TRIAL] = S.TRIAL_NONE
    out = result_from_arrays(info.species, shape, T, P, Y, trials, floats, ints)
    if np.any(~ok):  # NaN tpd compares False: mark untested states stable (they are not claimed unstable)
        stable = np.array(out.stable, copy=True)
        stable[~ok.reshape(shape)] = True
        object.__setattr__(out, "stable", stable)
        stable.flags.writeable = False
    return out


def _two_phase(result: Any, flat: int | None) -> Any:
    """The TwoPhaseAnswer of the result (state ``flat`` of a batch), or None."""
    data = result.__dict__.get("_phase_data")
    if not data:
        return None
    return data.get(0 if flat is None else flat)


class PhaseEnergy(NamedTuple):
    """Energies of one phase of a two-phase answer: ``amount`` [mol], ``h_res`` [J/mol], ``s_res`` [J/(mol K)],
    ``H`` [J] and ``S`` [J/K] (the phase's totals, :func:`hipeq.models.phases.phase_energies`) and ``V`` [m3]
    (Z_p n_p R T / P, its own root)."""

    amount: float
    h_res: float
    s_res: float
    H: float
    S: float
    V: float


def two_phase_energies(result: Any) -> dict[int, tuple[PhaseEnergy, PhaseEnergy]]:
    """Flat index (0 for a scalar result) -> (vapour, liquid) :class:`PhaseEnergy` of every two-phase state of
    ``result`` (empty for a result without one). NaN values for a state that did not converge."""
    data = result.__dict__.get("_phase_data")
    if not data:
        return {}
    info = result._info
    status = np.ravel(np.asarray(result.status))
    T_all = np.ravel(np.broadcast_to(np.asarray(result.T, dtype=float), np.shape(result.status)))
    P_all = np.ravel(np.broadcast_to(np.asarray(result.P, dtype=float), np.shape(result.status)))
    out = {}
    for k, answer in data.items():
        T, P = float(T_all[k]), float(P_all[k])
        phases = []
        for n, z in ((answer.vapour, answer.Z_vapour), (answer.liquid, answer.Z_liquid)):
            amount = float(np.sum(n))
            if status[k] == 0:
                h_res, s_res, H, S = phase_energies(info.model, info.records or None, T, P, n, float(z))
            else:
                h_res = s_res = H = S = math.nan
            phases.append(PhaseEnergy(amount, h_res, s_res, H, S, float(z) * amount * R * T / P))
        out[int(k)] = (phases[0], phases[1])
    return out


def two_phase_answer(result: Any, flat: int | None = None) -> TwoPhaseAnswer | None:
    """The :class:`~hipeq.solvers.two_phase.TwoPhaseAnswer` behind a two-phase result (state ``flat`` of a
    batch), or None for a one-phase answer."""
    return _two_phase(result, flat)


def unstable_text(result: Any, flat: int | None) -> str:
    """What a message says about phases: "; two phases: ..." for a two-phase answer, "; caution: ..." when a
    one-phase answer (state ``flat`` of a batch) is not stable as one phase, else "". A sealed vessel's search
    with a vapour and a liquid adds what stopped it (``_vessel_notes``, :mod:`hipeq.solvers.vessel_phases`)."""
    note = (result.__dict__.get("_vessel_notes") or {}).get(0 if flat is None else flat)
    answer = _two_phase(result, flat)
    if answer is not None:
        nv, nl = float(answer.vapour.sum()), float(answer.liquid.sum())
        why = ("two phases fill the vessel (no single phase fills it at this density, or the one-phase answer "
               "failed the stability test)" if result.fixed_volume else
               "two phases (the one-phase answer failed the stability test)")
        return (f"; {why}: vapour {nv:.6g} mol (Z = {answer.Z_vapour:.4g}), liquid {nl:.6g} mol "
                f"(Z = {answer.Z_liquid:.4g}); see result.phases")
    if note:
        return "; " + note
    stability = result.stability
    if flat is None:
        stable, tpd, phase = stability.stable, stability.tpd, stability.trial_phase
    else:
        stable = bool(np.ravel(stability.stable)[flat])
        tpd = float(np.ravel(stability.tpd)[flat])
        phase = str(np.ravel(stability.trial_phase)[flat])
    if stable:
        return ""
    return (f"; caution: not stable as one phase (tangent-plane distance {tpd:.3g} < 0 for a {phase} trial "
            "phase): a second phase would form, see result.stability")


def _row(values: Any, flat: int | None) -> Any:
    array = np.asarray(values)
    if flat is None:
        return array
    return array.reshape(-1, array.shape[-1])[flat] if array.ndim > 1 or array.shape[-1:] else array


def _phases_of_state(result: Any, flat: int | None, molar: tuple[np.ndarray, ...]) -> tuple[Phase, ...]:
    """The phases of state ``flat`` (None: a scalar result); ``molar``: the result's h_res, s_res, h, s raveled
    (a one-phase state's phase carries them)."""
    species = result._info.species
    answer = _two_phase(result, flat)
    T = float(np.ravel(result.T)[flat or 0]) if flat is not None else float(result.T)
    P = float(np.ravel(result.P)[flat or 0]) if flat is not None else float(result.P)
    if answer is not None:
        out = []
        total = float(answer.vapour.sum() + answer.liquid.sum())
        energies = result._phase_energy[0 if flat is None else flat]
        for name, n, lnphi, z, root, e in (("vapour", answer.vapour, answer.ln_phi_vapour, answer.Z_vapour,
                                            answer.root_vapour, energies[0]),
                                           ("liquid", answer.liquid, answer.ln_phi_liquid, answer.Z_liquid,
                                            answer.root_liquid, energies[1])):
            amount = float(n.sum())
            out.append(Phase(name, amount / total, amount, species, n / amount, np.array(lnphi, dtype=float), z,
                             z * R * T / P, _LABELS.get(root, "none"), name == "liquid", e.h_res, e.s_res,
                             e.H / amount, e.S / amount))
        return tuple(out)
    nc = len(species)
    amounts = np.asarray(result._amounts, dtype=float).reshape(-1, nc)[flat or 0]
    y = np.asarray(result._y, dtype=float).reshape(-1, nc)[flat or 0]
    ln_phis = np.asarray(result._ln_phis, dtype=float).reshape(-1, nc)[flat or 0]
    Z = float(np.ravel(result.Z)[flat or 0])
    liquid = bool(np.ravel(result.liquid_like)[flat or 0])
    root = str(np.ravel(result.root)[flat or 0])
    total = float(amounts.sum())
    h_res, s_res, h, s = (float(v[flat or 0]) for v in molar)
    return (Phase("liquid" if liquid else "gas", 1.0, total, species, np.array(y), np.array(ln_phis), Z,
                  Z * R * T / P, root, liquid, h_res, s_res, h, s),)


def answer_phases(result: Any) -> Any:
    """``result.phases``: a tuple of Phase for a scalar result, a list of them over a batch (flat order)."""
    molar = tuple(np.ravel(v) for v in (result.h_res, result.s_res, result.h, result.s))
    if np.ndim(result.status) == 0:
        return _phases_of_state(result, None, molar)
    return [_phases_of_state(result, k, molar) for k in range(int(np.size(result.status)))]


def answer_phase_count(result: Any) -> Any:
    """1 or 2 per state."""
    data = result.__dict__.get("_phase_data") or {}
    if np.ndim(result.status) == 0:
        return 2 if data else 1
    count = np.ones(np.shape(result.status), dtype=np.int64)
    flat = count.reshape(-1)
    for k in data:
        flat[k] = 2
    count.flags.writeable = False
    return count


def _two_phase_fields(system: Any, answer: TwoPhaseAnswer, n0: np.ndarray, T: float, P: float,
                      ln_k: np.ndarray) -> dict[str, Any]:
    """The overall fields of a two-phase answer: total amounts, overall y, the effective ln phi_i = ln(f_i /
    (z_i P)) (so that K = K_y K_phi (P/P0)^(sum nu) holds for the overall composition), Z and V of both phases
    together, G/RT, extents, residuals and element residuals."""
    n = answer.vapour + answer.liquid
    nt = float(n.sum())
    y = n / nt
    xv = answer.vapour / answer.vapour.sum()
    with np.errstate(divide="ignore", invalid="ignore"):
        ln_f = np.log(xv) + answer.ln_phi_vapour  # ln(f_i / P), the same in both phases
        ln_phis = np.where(y > 0, ln_f - np.log(np.where(y > 0, y, 1.0)), answer.ln_phi_vapour)
    nv, nl = float(answer.vapour.sum()), float(answer.liquid.sum())
    Z = (nv * answer.Z_vapour + nl * answer.Z_liquid) / nt
    nu = system.nu
    if nu.shape[0]:
        extents = np.linalg.lstsq(nu.T, n - n0, rcond=None)[0]
        active = y > 0
        residuals = np.array([float(row[active] @ (ln_f[active] + np.log(P / 1e5))) - lk if np.all(
            row[~active] == 0) else 0.0 for row, lk in zip(nu, ln_k)])
    else:
        extents = np.zeros(0)
        residuals = np.zeros(0)
    A = system.element_matrix
    b = A @ n0
    element_res = (A @ n - b) / np.where(b != 0, b, 1.0)
    return dict(amounts=n, y=y, ln_phis=ln_phis, Z=Z, V=Z * nt * R * T / P, G_RT=answer.G_RT, extents=extents,
                residuals=residuals, element_res=element_res)


def unstable_states(system: Any, result: Any) -> np.ndarray:
    """Flat indices of the converged states of ``result`` (scalar: index 0) whose one-phase answer fails the
    screened stability test at its T, P and y (tpd < -STABILITY_TPD_TOL). Only for the cubic; the screen skips
    states where the cubic has one volume root at every composition of the present species (no vapour-liquid
    split is possible there)."""
    none = np.zeros(0, dtype=np.int64)
    if system.model.code != K.MODEL_CUBIC:
        return none
    may_split = result._may_split  # the solver's screen: several volume roots possible at T (one flag per state)
    if may_split is False:
        return none
    status = np.asarray(result.status)
    n_states = int(status.size)
    nc = len(system.species_names)
    ok = status.reshape(n_states) == 0
    if may_split is not None and may_split is not True:
        ok &= np.asarray(may_split).reshape(n_states)
    if not np.any(ok):
        return none
    T = np.broadcast_to(np.asarray(result.T, dtype=float), status.shape).reshape(n_states)
    P = np.broadcast_to(np.asarray(result.P, dtype=float), status.shape).reshape(n_states)
    Y = np.asarray(result._y, dtype=float).reshape(n_states, nc)
    Yok = np.array(Y[ok])
    Yok /= Yok.sum(axis=1, keepdims=True)
    _, floats, _ = run_states(system.model, T[ok], P[ok], Yok, screen=True)
    return np.flatnonzero(ok)[floats[:, S.F_TPD] < -S.STABILITY_TPD_TOL]


def split_unstable(system: Any, result: Any, unstable: np.ndarray | None = None) -> Any:
    """``phases="auto"``: the result with every converged, fixed-pressure state whose one-phase answer fails the
    (screened) stability test (:func:`unstable_states`, or the flat indices ``unstable`` when the caller has
    them) replaced by its two-phase answer, when that converged and lowered the Gibbs energy. Returns the same
    object when nothing changed."""
    from hipeq.solvers.result import EquilibriumResult, cached_names

    if result.fixed_volume or system.model.code != K.MODEL_CUBIC:
        return result
    if unstable is None:
        unstable = unstable_states(system, result)
    if unstable.size == 0:
        return result
    status = np.asarray(result.status)
    n_states = int(status.size)
    nc = len(system.species_names)
    T = np.broadcast_to(np.asarray(result.T, dtype=float), status.shape).reshape(n_states)
    P = np.broadcast_to(np.asarray(result.P, dtype=float), status.shape).reshape(n_states)
    amounts = np.asarray(result._amounts, dtype=float).reshape(n_states, nc)
    feed = np.asarray(result._feed, dtype=float).reshape(n_states, nc)
    ln_k = np.asarray(result._ln_k, dtype=float).reshape(n_states, -1)
    G = np.ravel(np.asarray(result.G_RT, dtype=float))
    answers: dict[int, tuple[TwoPhaseAnswer, dict[str, Any]]] = {}
    for k in unstable:
        k = int(k)
        answer = solve_two_phase(system, float(T[k]), float(P[k]), amounts[k], ln_k[k])
        if answer is None or not answer.converged or not answer.G_RT < G[k]:
            continue
        answers[k] = (answer, _two_phase_fields(system, answer, feed[k], float(T[k]), float(P[k]), ln_k[k]))
    if not answers:
        return result
    if isinstance(result, EquilibriumResult):
        answer, f = answers[0]
        new = object.__new__(EquilibriumResult)
        cached = cached_names(result)
        new.__dict__.update({key: value for key, value in result.__dict__.items() if key not in cached})
        new.__dict__.update(P=result.P, V=float(f["V"]), Z=float(f["Z"]), G_RT=float(f["G_RT"]),
                            _amounts=_frozen(f["amounts"]), _y=_frozen(f["y"]), _ln_phis=_frozen(f["ln_phis"]),
                            extents=_frozen(f["extents"]), residuals=_frozen(f["residuals"]),
                            _element_res=_frozen(f["element_res"]), iterations=result.iterations + answer.iterations,
                            root="two-phase", liquid_like=True, _phase_data={0: answer},
                            stability=result.stability)
        return new
    shape = status.shape

    def replaced(values: Any, key: str) -> np.ndarray:
        return state_rows(values, shape, {k: f[key] for k, (_, f) in answers.items()})

    new = rebuilt_batch(
        result, V=replaced(result.V, "V"), Z=replaced(result.Z, "Z"), G_RT=replaced(result.G_RT, "G_RT"),
        _amounts=replaced(result._amounts, "amounts"), _y=replaced(result._y, "y"),
        _ln_phis=replaced(result._ln_phis, "ln_phis"), extents=replaced(result.extents, "extents"),
        residuals=replaced(result.residuals, "residuals"), _element_res=replaced(result._element_res, "element_res"),
        liquid_like=state_rows(result.liquid_like, shape, dict.fromkeys(answers, True)),
        _roots=state_rows(result._roots, shape, dict.fromkeys(answers, -2)))
    object.__setattr__(new, "_phase_data", {k: a for k, (a, _) in answers.items()})
    return new


def state_rows(values: Any, shape: tuple[int, ...], updates: Mapping[int, Any]) -> np.ndarray:
    """A read-only copy of a batch's per-state array (``shape``, or ``shape`` plus one axis per state) with the
    states of ``updates`` (flat index -> new value or row) replaced."""
    n_states = int(np.prod(shape, dtype=np.int64)) if shape else 1
    array = np.array(values, copy=True)
    flat = array.reshape(n_states, -1) if array.ndim > len(shape) else array.reshape(n_states)
    for k, value in updates.items():
        flat[k] = value
    array.flags.writeable = False
    return array


def rebuilt_batch(result: Any, **fields: Any) -> Any:
    """``dataclasses.replace`` of a BatchResult that keeps the solver's per-state vapour-liquid screen
    (``_may_split``, not a dataclass field), so that a later stability question still skips the states where no
    split is possible."""
    new = dataclasses.replace(result, **fields)
    object.__setattr__(new, "_may_split", result._may_split)
    return new


def _frozen(array: np.ndarray) -> np.ndarray:
    array = np.array(array, dtype=float)
    array.flags.writeable = False
    return array
