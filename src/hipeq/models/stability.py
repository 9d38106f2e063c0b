"""Phase stability of a mixture at fixed T and P: the tangent-plane distance test (Michelsen 1982).

>>> import hipeq
>>> test = hipeq.stability_test(["H2", "N2", "NH3"], T=268.15, P=200e5, y=[0.60, 0.20, 0.20])
>>> test.stable, test.trial_phase
(False, 'liquid-like')

A mixture z is stable as one phase at (T, P) when no other composition w lies below the tangent plane of the
molar Gibbs energy at z:

    tpd(w) = sum_i w_i [ln w_i + ln phi_i(w) - ln z_i - ln phi_i(z)] >= 0   for every w

(Michelsen 1982, Fluid Phase Equilib. 9, 1-19; Michelsen & Mollerup 2007, "Thermodynamic Models", 2nd ed.,
ch. 9). The compiled test (``hipeq.models._stability``) searches the stationary points of tpd from several trial
phases: Wilson K-factor vapour-like and liquid-like estimates, the present component of highest critical
temperature as a nearly pure liquid, and every other present component nearly pure; by successive substitution,
then Newton's method. A negative tpd at any composition proves the mixture unstable (it would split into
phases); the composition that shows it is reported as ``trial`` and is the natural start of a phase split
(:func:`hipeq.models.phases.flash`).

The ideal gas and the Lewis-Randall rule mix ideally in composition: every mixture is stable in them (tpd = 0).
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from types import MappingProxyType
from typing import Any

import numpy as np

from hipeq.data.species import Species
from hipeq.models import _stability as S
from hipeq.models.eos import CompiledModel, build_model
from hipeq.models.inputs import state_arrays
from hipeq.models.kij import KijInput

__all__ = ["StabilityResult", "stability_test", "model_stability", "TRIAL_NAMES", "TPD_TOLERANCE"]

TPD_TOLERANCE = S.STABILITY_TPD_TOL  # tpd below -TPD_TOLERANCE counts as unstable
TRIAL_NAMES = {S.TRIAL_NONE: "none", S.TRIAL_WILSON_VAPOUR: "Wilson vapour-like",
               S.TRIAL_WILSON_LIQUID: "Wilson liquid-like", S.TRIAL_HEAVIEST: "heaviest component as liquid"}
_ROOT_LABELS = {-1: "none", 0: "gas-like", 1: "gas-like", 2: "liquid-like"}  # liquid-like: see StabilityResult


def _trial_name(kind: int, species: tuple[str, ...]) -> str:
    if kind >= S.TRIAL_PURE0:
        return f"pure {species[kind - S.TRIAL_PURE0]}"
    return TRIAL_NAMES[kind]


@dataclass(frozen=True, eq=False)
class StabilityResult:
    """Outcome of the tangent-plane stability test at one or more states (arrays over the states' shape, numpy
    scalars for one state).

    ``stable`` (bool): no trial composition lies below the tangent plane (tpd >= -TPD_TOLERANCE).
    ``tpd`` [-]: the lowest tangent-plane distance found, per mole of trial phase and over R T (0 when stable:
    the tested composition itself). ``trial`` (mole fractions, species along the last axis): the composition
    that shows the instability (the tested one when stable). ``trial_phase``: "liquid-like" when the model took
    the smaller of three volume roots for the trial, or its v/b < 1.75 (the rule of
    :func:`hipeq.models.eos.fugacity_coefficients`), else "gas-like". ``trial_Z``, ``Z`` [-]: compressibility factors of the
    trial and of the tested mixture. ``found_by``: which trial start found it ("none" when stable).
    ``complete``: every trial converged (when False and ``stable``, the verdict rests on the trials that did;
    an unstable verdict is always a proof). ``iterations``: successive-substitution and Newton steps over all
    trials. ``T`` [K], ``P`` [Pa], ``y`` echo the tested states; ``species`` names the components.
    """

    stable: Any
    tpd: Any
    trial: np.ndarray
    trial_phase: Any
    trial_Z: Any
    Z: Any
    found_by: Any
    complete: Any
    iterations: Any
    T: Any
    P: Any
    y: np.ndarray
    species: tuple[str, ...]

    def __post_init__(self) -> None:
        for value in vars(self).values():
            if isinstance(value, np.ndarray):
                value.flags.writeable = False

    @property
    def trial_composition(self) -> Mapping[str, Any]:
        """The trial composition as a mapping species -> mole fraction (arrays for several states)."""
        return MappingProxyType({n: self.trial[..., i] if self.trial.ndim > 1 else float(self.trial[i])
                                 for i, n in enumerate(self.species)})

    def to_dict(self) -> dict[str, Any]:
        """Plain Python values (lists for arrays)."""
        out: dict[str, Any] = {}
        for name in ("stable", "tpd", "trial_phase", "trial_Z", "Z", "found_by", "complete", "iterations", "T",
                     "P"):
            value = getattr(self, name)
            out[name] = value.tolist() if isinstance(value, np.ndarray) else (
                value.item() if isinstance(value, np.generic) else value)
        out["trial"] = {n: (self.trial[..., i].tolist()) for i, n in enumerate(self.species)}
        return out

    def __repr__(self) -> str:
        if np.ndim(self.stable) == 0:
            if self.stable:
                return f"StabilityResult(stable, T={float(self.T):g} K, P={float(self.P):.6g} Pa)"
            comp = ", ".join(f"{n}={float(v):.4g}" for n, v in zip(self.species, self.trial))
            return (f"StabilityResult(unstable: tpd={float(self.tpd):.4g} for a {self.trial_phase} trial "
                    f"({comp}), T={float(self.T):g} K, P={float(self.P):.6g} Pa)")
        n = int(np.size(self.stable))
        return f"StabilityResult({n} states, {n - int(np.count_nonzero(self.stable))} unstable)"


def run_states(model: CompiledModel, T: np.ndarray, P: np.ndarray, Y: np.ndarray, screen: bool = False,
               exhaustive: bool = False) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The compiled test on flat arrays (T [K], P [Pa], Y (n, nc) mole fractions, already checked): returns
    (trials (n, nc), floats (n, 3), ints (n, 5)) as laid out in ``hipeq.models._stability``. ``screen``: skip
    states where the cubic has one volume root at every composition of the present components. ``exhaustive``:
    run every trial to convergence, without the trivial-solution exit (slower, the same verdicts; for tests)."""
    n, nc = Y.shape
    trials = np.empty((n, nc))
    floats = np.empty((n, S.N_FLOAT))
    ints = np.empty((n, S.N_INT), dtype=np.int64)
    S.stability_states(model.code, np.ascontiguousarray(T, dtype=float), np.ascontiguousarray(P, dtype=float),
                       np.ascontiguousarray(Y, dtype=float), np.asarray(model.comp), np.asarray(model.consts),
                       np.asarray(model.kmat), bool(screen), not exhaustive, trials, floats, ints)
    return trials, floats, ints


def result_from_arrays(species: tuple[str, ...], shape: tuple[int, ...], T: np.ndarray, P: np.ndarray,
                       Y: np.ndarray, trials: np.ndarray, floats: np.ndarray, ints: np.ndarray) -> StabilityResult:
    """A :class:`StabilityResult` over ``shape`` from the compiled test's flat outputs."""
    nc = len(species)
    tpd = floats[:, S.F_TPD]
    stable = tpd >= -TPD_TOLERANCE
    phase = np.array([_ROOT_LABELS[int(r)] for r in ints[:, S.I_TRIAL_ROOT]], dtype=object)
    found = np.array([_trial_name(int(k), species) for k in ints[:, S.I_TRIAL]], dtype=object)
    complete = (ints[:, S.I_STATUS] == S.STABILITY_OK) | (ints[:, S.I_STATUS] == S.STABILITY_SCREENED)
    if not shape:
        return StabilityResult(bool(stable[0]), float(tpd[0]), trials[0], str(phase[0]),
                               float(floats[0, S.F_TRIAL_Z]), float(floats[0, S.F_FEED_Z]), str(found[0]),
                               bool(complete[0]), int(ints[0, S.I_ITERATIONS]), float(T[0]), float(P[0]), Y[0],
                               species)
    return StabilityResult(stable.reshape(shape), tpd.reshape(shape), trials.reshape(shape + (nc,)),
                           phase.reshape(shape), floats[:, S.F_TRIAL_Z].reshape(shape),
                           floats[:, S.F_FEED_Z].reshape(shape), found.reshape(shape), complete.reshape(shape),
                           ints[:, S.I_ITERATIONS].reshape(shape), T.reshape(shape), P.reshape(shape),
                           Y.reshape(shape + (nc,)), species)


def model_stability(model: CompiledModel, T: Any, P: Any, y: Any) -> StabilityResult:
    """Stability test of ``model`` at T [K], P [Pa], y [-] (scalars or arrays that broadcast; y's last axis runs
    over the model's species). See :func:`stability_test`."""
    shape, T_flat, P_flat, Y = state_arrays(T, P, y, model.species)
    trials, floats, ints = run_states(model, T_flat, P_flat, Y)
    return result_from_arrays(model.species, shape, T_flat, P_flat, Y, trials, floats, ints)


def stability_test(species: Sequence[str | Species], T: Any, P: Any, y: Any, eos: str = "PR",
                   kij: KijInput = None, quantum_hydrogen: bool = False, *, pure_eos: str | None = None,
                   hydrogen_omega: float | None = None, volume_translation: str | None = None) -> StabilityResult:
    """Is the mixture y stable as one phase at T, P? The tangent-plane distance test of Michelsen (1982).

    Args:
        species: component names or Species records (order of y's last axis).
        T: temperature [K], scalar or array (1..6000 K).
        P: pressure [Pa], scalar or array (0 < P <= 1e10 Pa).
        y: mole fractions [-], shape (..., nc), >= 0, summing to 1 within 1e-8.
        eos, kij, quantum_hydrogen, pure_eos, hydrogen_omega, volume_translation: the model, as in
            :func:`hipeq.models.eos.build_model`.

    Unstable when tpd(w) = sum_i w_i [ln w_i + ln phi_i(w) - ln y_i - ln phi_i(y)] < 0 for some w (Michelsen 1982,
    Fluid Phase Equilib. 9, 1-19; Michelsen & Mollerup 2007, ch. 9); each phase takes the volume root of lower
    Gibbs energy at its own composition.

    Returns a :class:`StabilityResult` (arrays over the broadcast shape of T, P and y's leading axes).

    Raises:
        InputError: naming the field and its allowed range.
    """
    model = build_model(species, eos, kij, quantum_hydrogen, pure_eos=pure_eos, hydrogen_omega=hydrogen_omega,
                        volume_translation=volume_translation)
    return model_stability(model, T, P, y)
