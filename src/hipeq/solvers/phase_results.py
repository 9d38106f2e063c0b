"""Phase questions about equilibrium answers: the stability of an answer as one phase, and the caution its message
carries (kept apart from :mod:`hipeq.solvers.result` so that the result classes stay small).

The stability test is :mod:`hipeq.models.stability` (Michelsen 1982), run with the system's model at the answer's
T, P and overall mole fractions.
"""
from __future__ import annotations

from typing import Any

import numpy as np

from hipeq.models import _stability as S
from hipeq.models.stability import StabilityResult, result_from_arrays, run_states

__all__ = ["answer_stability", "unstable_text"]


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


def unstable_text(stability: StabilityResult, flat: int | None) -> str:
    """"; caution: ..." when the answer (state ``flat`` of a batch) is not stable as one phase, else ""."""
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
