"""Vapour-liquid equilibrium without reaction: the two-phase flash at fixed T and P, bubble and dew points.

>>> import hipeq
>>> split = hipeq.flash(["H2", "N2", "NH3"], {"H2": 0.6, "N2": 0.2, "NH3": 0.2}, T=268.15, P=200e5)
>>> split.phase_count, split.phases[1].name, round(split.phases[1].y["NH3"], 3)
(2, 'liquid', 0.986)

The flash (Michelsen & Mollerup 2007, "Thermodynamic Models: Fundamentals and Computational Aspects", 2nd ed.,
ch. 10-11):

1. The tangent-plane stability test of the feed (:mod:`hipeq.models.stability`, Michelsen 1982). A stable feed is
   one phase; otherwise the trial phase that showed the instability gives the first K-factors, K_i = w_i / z_i
   for a lighter trial, z_i / w_i for a denser one.
2. Successive substitution: the Rachford-Rice equation sum_i z_i (K_i - 1) / (1 + beta (K_i - 1)) = 0 for the
   vapour fraction beta (Rachford & Rice 1952, J. Pet. Technol. 4(10), 19; Newton's method kept inside its
   bracket), x_i = z_i / (1 + beta (K_i - 1)), y_i = K_i x_i, then ln K_i = ln phi_i^L(x) - ln phi_i^V(y).
3. Newton's method on the Gibbs energy in the vapour amounts v_i (l_i = z_i - v_i): gradient
   g_i = ln f_i^V - ln f_i^L, Hessian H_ij = (delta_ij / y_i - 1 + J^V_ij) / n_V + (delta_ij / x_i - 1 + J^L_ij) / n_L
   with J_ij = n d ln phi_i / d n_j, and a line search on G; it ends when every |ln f_i^V - ln f_i^L| < 1e-12.

Each phase takes the volume root of lower Gibbs energy at its own composition. The vapour is the phase of larger
molar volume. Each phase carries its molar enthalpy and entropy (:func:`phase_energies`): the ideal-gas part at its
own composition plus the model's residual part at its own volume root. Only the cubic models (and the virial, which
never splits in practice) can split: for the ideal gas and the Lewis-Randall rule every mixture is one phase.

Equilibrium is a thermodynamic limit, not a design basis for pressure equipment; follow local codes and licensed
engineering practice.
"""
from __future__ import annotations

import dataclasses
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any

import numpy as np

from hipeq.constants import R
from hipeq.data.species import Species
from hipeq.data.species import species as lookup_species
from hipeq.data.thermochem import ideal_gas_parts
from hipeq.errors import InputError
from hipeq.models import _kernels as K
from hipeq.models._flash import rachford_rice
from hipeq.models.eos import CompiledModel, build_model
from hipeq.models.kij import KijInput
from hipeq.models.stability import StabilityResult, model_stability
from hipeq.units import to_si

__all__ = ["Phase", "PhaseSplit", "flash", "model_flash", "bubble_point", "dew_point", "SaturationPoint",
           "phase_energies", "FUGACITY_TOL", "ROOT_RTOL"]

FUGACITY_TOL = 1e-12  # |ln f_i^V - ln f_i^L| at convergence of the flash
SS_ITERATIONS = 12
NEWTON_ITERATIONS = 60
NEWTON_SATURATION = 100  # Newton steps on ln P (or ln T) of a bubble or dew point
ROOT_RTOL = 1e-7  # a phase's residual properties are used only where the model's root at its composition has its Z


@dataclass(frozen=True, eq=False)
class Phase:
    """One phase at T, P: ``name`` ("vapour", "liquid", or "gas" when alone), ``fraction`` [-] of the total
    moles, ``amount`` [mol], ``amounts`` [mol] and ``y`` [-] per species (mappings), ``Z`` [-],
    ``molar_volume`` [m3/mol], ``phi`` and ``ln_phi`` per species, ``root`` (the volume root: "single",
    "gas-like" or "liquid-like"), ``liquid_like`` (that root is the smaller of three, or v/b < 1.75).

    Energies of the phase (:func:`phase_energies`): ``h_res`` [J/mol] and ``s_res`` [J/(mol K)], the residual
    enthalpy and entropy of the model at T, P, the phase's composition and its own volume root; ``h`` [J/mol] and
    ``s`` [J/(mol K)], its molar enthalpy and entropy, h = sum_i x_i H0_i(T) + h_res and
    s = sum_i x_i [S0_i(T) - R ln(x_i P/P0)] + s_res (enthalpy relative to the elements at 298.15 K, ideal gas;
    absolute entropy; standard state ideal gas at P0 = 1 bar). NaN where they are not known: h and s outside the
    species' heat-capacity ranges or without the species records, all four for an equilibrium answer that did not
    converge."""

    name: str
    fraction: float
    amount: float
    species: tuple[str, ...]
    mole_fractions: np.ndarray
    ln_phis: np.ndarray
    Z: float
    molar_volume: float
    root: str
    liquid_like: bool
    h_res: float = math.nan
    s_res: float = math.nan
    h: float = math.nan
    s: float = math.nan

    def __post_init__(self) -> None:
        for value in (self.mole_fractions, self.ln_phis):
            value.flags.writeable = False

    @property
    def y(self) -> Mapping[str, float]:
        """Mole fractions [-] per species."""
        return MappingProxyType({n: float(v) for n, v in zip(self.species, self.mole_fractions)})

    @property
    def amounts(self) -> Mapping[str, float]:
        """Amounts [mol] per species."""
        return MappingProxyType({n: float(v) * self.amount for n, v in zip(self.species, self.mole_fractions)})

    @property
    def phi(self) -> Mapping[str, float]:
        """Fugacity coefficients [-] per species."""
        return MappingProxyType({n: math.exp(v) for n, v in zip(self.species, self.ln_phis)})

    @property
    def ln_phi(self) -> Mapping[str, float]:
        """ln of the fugacity coefficients per species."""
        return MappingProxyType({n: float(v) for n, v in zip(self.species, self.ln_phis)})

    def to_dict(self) -> dict[str, Any]:
        """Plain Python values, with the units of the numbers under ``units``."""
        return {"name": self.name, "fraction": self.fraction, "amount": self.amount, "y": dict(self.y),
                "phi": dict(self.phi), "Z": self.Z, "molar_volume": self.molar_volume, "root": self.root,
                "liquid_like": self.liquid_like, "h_res": self.h_res, "s_res": self.s_res, "h": self.h,
                "s": self.s, "units": dict(PHASE_UNITS)}

    def __repr__(self) -> str:
        ys = ", ".join(f"{n}={v:.4g}" for n, v in self.y.items())
        return f"Phase({self.name}, fraction={self.fraction:.6g}, Z={self.Z:.5g}, y: {ys})"


PHASE_UNITS = MappingProxyType({"fraction": "-", "amount": "mol", "y": "-", "phi": "-", "Z": "-",
                                "molar_volume": "m3/mol", "h_res": "J/mol", "s_res": "J/(mol K)",
                                "h": "J/mol (relative to the elements at 298.15 K, ideal gas)",
                                "s": "J/(mol K) (absolute; standard state ideal gas at 1 bar)"})


def phase_energies(model: CompiledModel, records: Sequence[Species] | None, T: float, P: float,
                   amounts: np.ndarray, Z: float) -> tuple[float, float, float, float]:
    """(h_res [J/mol], s_res [J/(mol K)], H [J], S [J/K]) of one phase of ``amounts`` [mol] (species in the model's
    order) at T [K], P [Pa] whose volume root has compressibility ``Z`` [-]:

        h_res = -R T^2 d(g_res/RT)/dT,   s_res = (h_res - g_res)/T        (Michelsen & Mollerup 2007, ch. 2)
        H = sum_i n_i H0_i(T) + n h_res,  S = sum_i n_i [S0_i(T) - R ln(x_i P/P0)] + n s_res

    with H0_i, S0_i of :mod:`hipeq.data.thermochem` (Smith, Van Ness & Abbott 2005, sec. 4.3, 5.5, 6.3), x_i the
    phase's mole fractions, P0 = 1 bar: the one-phase mixture's equations (:mod:`hipeq.solvers.properties`) applied
    to the phase alone. The residual part comes from ``model.fugacity_coefficients`` at the phase's composition,
    which takes the root of lower Gibbs energy there, as each phase of a split does; it is used only where that
    root's Z agrees with ``Z`` to ROOT_RTOL (else all four are NaN). H and S are NaN without ``records`` (the
    species records in the model's order) or outside their heat-capacity ranges."""
    n = np.asarray(amounts, dtype=float)
    total = float(n.sum())
    nan = (math.nan, math.nan, math.nan, math.nan)
    if not (total > 0.0 and math.isfinite(total)):
        return nan
    try:
        state = model.fugacity_coefficients(T, P, n / total)
    except InputError:
        return nan
    if not abs(float(state.Z) - Z) <= ROOT_RTOL * max(abs(Z), 1e-3):
        return nan
    h_res = float(state.h_res)
    s_res = (h_res - R * T * float(state.g_res_RT)) / T
    if records is None:
        return h_res, s_res, math.nan, math.nan
    try:
        H_id, S_id = ideal_gas_parts(records, T, n, P)
    except InputError:
        return h_res, s_res, math.nan, math.nan
    return h_res, s_res, float(H_id) + total * h_res, float(S_id) + total * s_res


@dataclass(frozen=True, eq=False)
class PhaseSplit:
    """Outcome of a flash at T [K], P [Pa]: ``phases`` (one or two :class:`Phase`, the vapour first),
    ``phase_count``, ``vapour_fraction`` [-] (1 for a lone gas-like phase, 0 for a lone liquid-like one),
    ``K`` (y_i / x_i per species for two phases, else None), ``stability`` (the test of the feed),
    ``converged``, ``iterations``, ``max_fugacity_residual`` (max_i |ln f_i^V - ln f_i^L|), ``G_RT`` (residual plus
    mixing Gibbs energy of the split over R T per mole of feed, sum over phases of
    n_p sum_i x_i (ln x_i + ln phi_i), [-]), ``model`` (eos, k_ij); ``H`` [J] and ``S`` [J/K], the totals over the
    phases of ``total`` moles of feed (sum_p n_p h_p, sum_p n_p s_p; NaN where a phase's h or s is)."""

    T: float
    P: float
    species: tuple[str, ...]
    feed: np.ndarray
    total: float
    phases: tuple[Phase, ...]
    stability: StabilityResult
    converged: bool
    iterations: int
    max_fugacity_residual: float
    G_RT: float
    model: CompiledModel = field(repr=False)

    @property
    def phase_count(self) -> int:
        """Number of phases (1 or 2)."""
        return len(self.phases)

    @property
    def vapour_fraction(self) -> float:
        """Moles in the vapour over total moles [-]."""
        if len(self.phases) == 2:
            return self.phases[0].fraction
        return 0.0 if self.phases[0].liquid_like else 1.0

    @property
    def K(self) -> Mapping[str, float] | None:
        """K_i = y_i / x_i (vapour over liquid mole fractions) per species, when there are two phases."""
        if len(self.phases) < 2:
            return None
        v, l = self.phases
        return MappingProxyType({n: float(a / b) if b > 0 else math.inf
                                 for n, a, b in zip(self.species, v.mole_fractions, l.mole_fractions)})

    @property
    def eos(self) -> str:
        """Model name."""
        return self.model.eos

    @property
    def H(self) -> float:
        """Enthalpy of the whole split [J], sum over the phases of n_p h_p (relative to the elements at 298.15 K)."""
        return float(sum(p.amount * p.h for p in self.phases))

    @property
    def S(self) -> float:
        """Entropy of the whole split [J/K], sum over the phases of n_p s_p."""
        return float(sum(p.amount * p.s for p in self.phases))

    def to_dict(self) -> dict[str, Any]:
        """Plain Python values."""
        return {"T": self.T, "P": self.P, "phase_count": self.phase_count, "vapour_fraction": self.vapour_fraction,
                "phases": [p.to_dict() for p in self.phases], "converged": self.converged,
                "iterations": self.iterations, "max_fugacity_residual": self.max_fugacity_residual,
                "G_RT": self.G_RT, "H": self.H, "S": self.S, "eos": self.eos,
                "stability": self.stability.to_dict(),
                "units": {"T": "K", "P": "Pa", "amount": "mol", "molar_volume": "m3/mol",
                          "H": "J (relative to the elements at 298.15 K, ideal gas)", "S": "J/K",
                          "h_res": "J/mol", "s_res": "J/(mol K)", "h": "J/mol", "s": "J/(mol K)"}}

    def __repr__(self) -> str:
        inner = "; ".join(repr(p) for p in self.phases)
        return f"PhaseSplit(T={self.T:g} K, P={self.P:.6g} Pa, {self.eos}, {self.phase_count} phase(s): {inner})"


# ---------------------------------------------------------------------------------------------------------
# the model at one temperature (compiled kernels called from Python)
# ---------------------------------------------------------------------------------------------------------
class _ModelAtT:
    """ln phi and its composition derivatives of ``model`` at one T [K], for any P [Pa] and composition."""

    def __init__(self, model: CompiledModel, T: float) -> None:
        nc = model.nc
        self.model, self.T, self.nc = model, float(T), nc
        self.aij, self.bi = np.empty((nc, nc)), np.empty(nc)
        self.comp, self.consts = np.asarray(model.comp), np.asarray(model.consts)
        K.tdep_into(model.code, self.T, self.comp, self.consts, np.asarray(model.kmat), self.aij, self.bi,
                    np.empty((nc, nc)), np.empty(nc))
        self.scratch = np.zeros((3, nc))

    def ln_phi(self, P: float, y: np.ndarray) -> tuple[np.ndarray, float, int]:
        out = np.empty(self.nc)
        z, root = K.ln_phi_tp(self.model.code, self.T, float(P), np.ascontiguousarray(y), self.aij, self.bi,
                              self.consts, out)
        return out, z, root

    def ln_phi_dn(self, P: float, y: np.ndarray) -> tuple[np.ndarray, np.ndarray, float, int]:
        out, jac = np.empty(self.nc), np.empty((self.nc, self.nc))
        z, root = K.ln_phi_dn_tp(self.model.code, self.T, float(P), np.ascontiguousarray(y), self.aij, self.bi,
                                 self.consts, out, jac, self.scratch)
        return out, jac, z, root

    def liquid_like(self, P: float, y: np.ndarray, z: float, root: int) -> bool:
        if root == K.ROOT_LIQUID:
            return True
        return bool(z * R * self.T / P < K.LIQUID_LIKE_REDUCED_VOLUME * float(y @ self.bi)) \
            if self.model.code in (K.MODEL_CUBIC, K.MODEL_LEWIS_RANDALL) else False


def _rachford_rice(z: np.ndarray, lnk: np.ndarray) -> tuple[float, np.ndarray, np.ndarray]:
    """beta in [0, 1] solving sum_i z_i (K_i - 1) / (1 + beta (K_i - 1)) = 0 (clipped to the end when the root
    lies outside), and x, y (Rachford & Rice 1952; compiled: :func:`hipeq.models._flash.rachford_rice`)."""
    x = np.empty(z.shape[0])
    y = np.empty(z.shape[0])
    beta = rachford_rice(np.ascontiguousarray(z, dtype=float), np.ascontiguousarray(lnk, dtype=float), x, y)
    return float(beta), x, y


def _gibbs(m: _ModelAtT, P: float, v: np.ndarray, l: np.ndarray) -> float:
    """G/RT (mixing plus residual part, the same standard-state terms dropped) of vapour v and liquid l [mol]."""
    total = 0.0
    for n in (v, l):
        nt = n.sum()
        if not nt > 0.0:
            continue
        x = n / nt
        lnphi, _, root = m.ln_phi(P, x)
        if root == K.ROOT_INVALID:
            return math.inf
        with np.errstate(divide="ignore", invalid="ignore"):
            total += float(np.sum(np.where(n > 0, n * (np.log(np.where(x > 0, x, 1.0)) + lnphi), 0.0)))
    return total


def _split(m: _ModelAtT, P: float, z: np.ndarray, lnk: np.ndarray) -> tuple[bool, float, np.ndarray, np.ndarray,
                                                                             int, float]:
    """Two-phase flash from ln K. Returns (converged, beta, x, y, iterations, max fugacity residual)."""
    present = z > 0
    iterations = 0
    beta, x, y = _rachford_rice(z, lnk)
    residual = math.inf
    for _ in range(SS_ITERATIONS):
        if beta <= 0.0 or beta >= 1.0:
            break
        lnphi_l, _, _ = m.ln_phi(P, x)
        lnphi_v, _, _ = m.ln_phi(P, y)
        new = lnphi_l - lnphi_v
        iterations += 1
        residual = float(np.max(np.abs((new - lnk)[present])))
        lnk = new
        beta, x, y = _rachford_rice(z, lnk)
        if residual < FUGACITY_TOL:
            break
    if not (0.0 < beta < 1.0):
        return False, beta, x, y, iterations, residual
    # Newton's method on G in the vapour amounts
    idx = np.flatnonzero(present)
    v = beta * y
    l = z - v
    for _ in range(NEWTON_ITERATIONS):
        nv, nl = v.sum(), l.sum()
        yv, xl = v / nv, l / nl
        lp_v, jv, _, rv = m.ln_phi_dn(P, yv)
        lp_l, jl, _, rl = m.ln_phi_dn(P, xl)
        if rv == K.ROOT_INVALID or rl == K.ROOT_INVALID:
            return False, beta, x, y, iterations, residual
        g = (np.log(yv[idx]) + lp_v[idx]) - (np.log(xl[idx]) + lp_l[idx])
        residual = float(np.max(np.abs(g)))
        if residual < FUGACITY_TOL:
            break
        hv = (np.diag(1.0 / yv[idx]) - 1.0 + jv[np.ix_(idx, idx)]) / nv
        hl = (np.diag(1.0 / xl[idx]) - 1.0 + jl[np.ix_(idx, idx)]) / nl
        H = hv + hl
        try:
            step = -np.linalg.solve(H, g)
        except np.linalg.LinAlgError:
            break
        if not np.all(np.isfinite(step)):
            break
        # keep 0 < v_i < z_i
        t = 1.0
        vi, zi = v[idx], z[idx]
        for j in range(idx.size):
            if step[j] < 0.0:
                t = min(t, -0.99 * vi[j] / step[j])
            elif step[j] > 0.0:
                t = min(t, 0.99 * (zi[j] - vi[j]) / step[j])
        g0 = _gibbs(m, P, v, l)
        accepted = False
        for _half in range(40):
            v_new = v.copy()
            v_new[idx] = vi + t * step
            l_new = z - v_new
            if _gibbs(m, P, v_new, l_new) <= g0 + 1e-13 * max(1.0, abs(g0)):
                accepted = True
                break
            t *= 0.5
        iterations += 1
        if not accepted:
            break
        v, l = v_new, l_new
    nv = v.sum()
    beta = float(nv / z.sum())
    y, x = v / nv, l / l.sum()
    return residual < 1e3 * FUGACITY_TOL, beta, x, y, iterations, residual


def _phase(m: _ModelAtT, P: float, name: str, fraction: float, total: float, y: np.ndarray,
           species: tuple[str, ...], records: Sequence[Species] | None) -> Phase:
    lnphi, z, root = m.ln_phi(P, y)
    labels = {K.ROOT_SINGLE: "single", K.ROOT_GAS: "gas-like", K.ROOT_LIQUID: "liquid-like"}
    liquid = m.liquid_like(P, y, z, root)
    x = np.array(y, dtype=float)
    h_res, s_res, H, S = phase_energies(m.model, records, m.T, P, x, float(z))  # per mole of x (sum x = 1)
    return Phase(name, float(fraction), float(fraction * total), species, x, lnphi, float(z),
                 float(z * R * m.T / P), "liquid-like" if liquid else labels.get(root, "none"), liquid, h_res, s_res,
                 H / float(x.sum()), S / float(x.sum()))


def _feed_vector(model: CompiledModel, feed: Any) -> np.ndarray:
    nc = model.nc
    if isinstance(feed, Mapping):
        n0 = np.zeros(nc)
        index = {n: i for i, n in enumerate(model.species)}
        for name, amount in feed.items():
            if name not in index:
                raise InputError("feed", f"{name!r} is not among the species {', '.join(model.species)}")
            n0[index[name]] += float(to_si(amount, "amount", "feed"))
    else:
        n0 = np.array(to_si(feed, "amount", "feed"), dtype=float)
        if n0.shape != (nc,):
            raise InputError("feed", f"an array feed needs shape ({nc},) in the order {list(model.species)}, "
                                     f"got shape {n0.shape}")
    if not (np.all(np.isfinite(n0)) and np.all(n0 >= 0.0)) or n0.sum() <= 0.0:
        raise InputError("feed", f"amounts must be finite, >= 0 mol and not all zero, got {n0.tolist()}")
    return n0


def model_flash(model: CompiledModel, feed: Any, T: Any, P: Any,
                records: Sequence[Species] | None = None) -> PhaseSplit:
    """Flash of ``feed`` at T, P with a built model (see :func:`flash`). ``records``: the species records in the
    model's order, for the phases' h and s (NaN without them; h_res and s_res are given either way)."""
    T_si = float(to_si(T, "temperature", "T"))
    P_si = float(to_si(P, "pressure", "P"))
    n0 = _feed_vector(model, feed)
    total = float(n0.sum())
    z = n0 / total
    stability = model_stability(model, T_si, P_si, z)  # also validates T and P
    m = _ModelAtT(model, T_si)
    species = model.species
    if stability.stable:
        return _one_phase(m, P_si, z, total, species, stability, model, records)
    w = np.asarray(stability.trial, dtype=float)
    present = z > 0
    with np.errstate(divide="ignore"):
        # W = w exp(-tpd), the unnormalised trial at its stationary point (sum W > 1): K = W / z for a lighter
        # trial, z / W for a denser one, so that the Rachford-Rice root lies inside (0, 1) (Michelsen 1982)
        lnk = np.where(present, np.log(np.where(w > 0, w, 1e-300)) - stability.tpd
                       - np.log(np.where(present, z, 1.0)), 0.0)
    if stability.trial_Z < stability.Z:  # the trial is the denser phase
        lnk = -lnk
    converged, beta, x, y, iterations, residual = _split(m, P_si, z, lnk)
    if not (0.0 < beta < 1.0) or float(np.max(np.abs(x - y))) < 1e-8:
        out = _one_phase(m, P_si, z, total, species, stability, model, records)
        return PhaseSplit(T_si, P_si, species, z, total, out.phases, stability, False, iterations, math.inf,
                          out.G_RT, model)
    vap = _phase(m, P_si, "vapour", beta, total, y, species, records)
    liq = _phase(m, P_si, "liquid", 1.0 - beta, total, x, species, records)
    if vap.molar_volume < liq.molar_volume:  # name by volume: the vapour is the lighter phase
        vap, liq = (dataclasses.replace(liq, name="vapour"), dataclasses.replace(vap, name="liquid"))
    g = _gibbs(m, P_si, beta * y, (1.0 - beta) * x)
    return PhaseSplit(T_si, P_si, species, z, total, (vap, liq), stability, converged, iterations, residual, g,
                      model)


def _one_phase(m: _ModelAtT, P: float, z: np.ndarray, total: float, species: tuple[str, ...],
               stability: StabilityResult, model: CompiledModel, records: Sequence[Species] | None) -> PhaseSplit:
    phase = _phase(m, P, "gas", 1.0, total, z, species, records)
    if phase.liquid_like:
        phase = dataclasses.replace(phase, name="liquid")
    g = _gibbs(m, P, np.zeros_like(z), z)
    return PhaseSplit(m.T, P, species, z, total, (phase,), stability, True, 0, 0.0, g, model)


def flash(species: Sequence[str | Species], feed: Any, T: Any, P: Any, eos: str = "PR", kij: KijInput = None,
          quantum_hydrogen: bool = False, *, pure_eos: str | None = None, hydrogen_omega: float | None = None,
          volume_translation: str | None = None) -> PhaseSplit:
    """Vapour-liquid split of a non-reacting mixture at fixed T and P (isothermal flash).

    Args:
        species: component names or Species records.
        feed: amounts [mol] per species ({name: amount}, numbers or unit strings) or an array in species order.
        T: temperature [K] (or a unit string, ``"-5 degC"``).
        P: pressure [Pa] (or a unit string, ``"200 bar"``).
        eos, kij, quantum_hydrogen, pure_eos, hydrogen_omega, volume_translation: the model, as in
            :func:`hipeq.models.eos.build_model`.

    Solves ln x_i + ln phi_i^L(x) = ln y_i + ln phi_i^V(y) for every species with the material balance
    z_i = (1 - beta) x_i + beta y_i, starting from the stability test's trial phase (Michelsen 1982; Michelsen &
    Mollerup 2007, ch. 10-11; see the module docstring).

    Returns a :class:`PhaseSplit` (one phase when the feed is stable); each phase carries its h_res, s_res, h
    and s (:func:`phase_energies`), the split its totals ``H`` and ``S``.

    Raises:
        InputError: naming the field (feed, T, P, eos, kij, ...).
    """
    model = build_model(species, eos, kij, quantum_hydrogen, pure_eos=pure_eos, hydrogen_omega=hydrogen_omega,
                        volume_translation=volume_translation)
    return model_flash(model, feed, T, P, tuple(lookup_species(s) for s in species))


# ---------------------------------------------------------------------------------------------------------
# bubble and dew points
# ---------------------------------------------------------------------------------------------------------
@dataclass(frozen=True, eq=False)
class SaturationPoint:
    """A bubble or dew point: ``kind`` ("bubble" or "dew"), ``T`` [K], ``P`` [Pa], ``composition`` (the given
    phase's mole fractions), ``incipient`` (the first drop's or bubble's mole fractions), ``converged``,
    ``iterations``, ``message``; mappings species -> mole fraction.

    When the search did not converge, the value that was searched for (``P`` at a given T, ``T`` at a given P)
    is NaN, never the last trial, and ``message`` says why (the trivial solution y = x, no physical state of the
    model, or no root within the Newton steps, with the last trial and its residual)."""

    kind: str
    T: float
    P: float
    species: tuple[str, ...]
    given: np.ndarray
    incipient_fractions: np.ndarray
    converged: bool
    iterations: int
    message: str = ""

    @property
    def composition(self) -> Mapping[str, float]:
        """Mole fractions of the given (bulk) phase."""
        return MappingProxyType({n: float(v) for n, v in zip(self.species, self.given)})

    @property
    def incipient(self) -> Mapping[str, float]:
        """Mole fractions of the incipient phase (the first bubble of vapour, or the first drop of liquid)."""
        return MappingProxyType({n: float(v) for n, v in zip(self.species, self.incipient_fractions)})


def _saturation(model: CompiledModel, kind: str, composition: Any, T: Any, P: Any) -> SaturationPoint:
    if (T is None) == (P is None):
        raise InputError("T", "give exactly one of T= [K] (the pressure is found) or P= [Pa] (the temperature is "
                              "found)")
    z = _feed_vector(model, composition)
    z = z / z.sum()
    present = z > 0
    comp = np.asarray(model.comp)
    tc, pc, om = comp[:, K.TC], comp[:, K.PC], comp[:, K.OMEGA]
    find_p = P is None
    fixed = float(to_si(T if find_p else P, "temperature" if find_p else "pressure", "T" if find_p else "P"))
    bubble = kind == "bubble"

    def wilson(Tv: float, Pv: float) -> np.ndarray:
        return np.log(pc / Pv) + 5.373 * (1.0 + om) * (1.0 - tc / Tv)

    def residual(value: float, lnk: np.ndarray) -> tuple[float, np.ndarray, np.ndarray, bool]:
        """ln sum_i z_i K_i^(+-1) after a few substitutions of the incipient phase; its composition; ln K."""
        Tv, Pv = (fixed, value) if find_p else (value, fixed)
        m = _ModelAtT(model, Tv)
        lp_given, _, root = m.ln_phi(Pv, z)
        if root == K.ROOT_INVALID:
            return math.nan, z, lnk, False
        s = 0.0
        w = z
        for _ in range(30):
            kk = np.exp(lnk if bubble else -lnk)
            terms = np.where(present, z * kk, 0.0)
            s = float(terms.sum())
            w = terms / s
            lp_inc, _, r2 = m.ln_phi(Pv, w)
            if r2 == K.ROOT_INVALID:
                return math.nan, w, lnk, False
            new = (lp_given - lp_inc) if bubble else (lp_inc - lp_given)
            change = float(np.max(np.abs((new - lnk)[present])))
            lnk = new
            if change < 1e-12:
                break
        kk = np.exp(lnk if bubble else -lnk)
        s = float(np.sum(np.where(present, z * kk, 0.0)))
        trivial = float(np.max(np.abs(lnk[present]))) < 1e-4
        return math.log(s), w, lnk, trivial

    # start: Wilson estimate of the unknown (bubble P = sum z K P; dew 1/P = sum z / (K P))
    if find_p:
        k0 = np.exp(wilson(fixed, 1e5)) * 1e5  # K_i P
        start = float(np.sum(z * k0)) if bubble else float(1.0 / np.sum(z / k0))
        start = min(max(start, 1e3), 1e9)
    else:
        lo, hi = 10.0, 3000.0
        for _ in range(200):
            mid = math.sqrt(lo * hi)
            kk = np.exp(wilson(mid, fixed))
            s = float(np.sum(z * kk)) if bubble else float(np.sum(z / kk))
            if (s > 1.0) == bubble:
                hi = mid
            else:
                lo = mid
        start = min(math.sqrt(lo * hi), 0.9 * float(np.sum(z * tc)))  # below the pseudo-critical temperature
    x = math.log(start)
    Tv, Pv = (fixed, start) if find_p else (start, fixed)
    lnk = wilson(Tv, Pv)
    f, w, lnk, trivial = residual(math.exp(x), lnk)
    iterations = 1
    h = 1e-4
    converged = False
    sought, unit = ("pressure", "Pa") if find_p else ("temperature", "K")
    given = f"T = {fixed:.6g} K" if find_p else f"P = {fixed:.6g} Pa"
    why = ""
    for _ in range(NEWTON_SATURATION):
        if not math.isfinite(f):
            why = (f"the model has no physical state of one of the phases at the trial {sought} "
                   f"{math.exp(x):.6g} {unit}")
            break
        if trivial:
            why = (f"the incipient phase became the given one (y = x, the trivial solution) at the trial {sought} "
                   f"{math.exp(x):.6g} {unit}: near a critical point, or no {kind} point of this mixture at {given}")
            break
        if abs(f) < 1e-11:
            converged = True
            break
        f2, _, _, _ = residual(math.exp(x + h), lnk.copy())
        iterations += 1
        der = (f2 - f) / h
        if not (math.isfinite(der) and der != 0.0):
            why = (f"the residual stopped changing with ln {sought[0].upper()} at the trial {sought} "
                   f"{math.exp(x):.6g} {unit}")
            break
        step = -f / der
        step = max(-0.5, min(0.5, step))
        x += step
        f, w, lnk, trivial = residual(math.exp(x), lnk)
        iterations += 1
    else:
        residual_name = "ln sum_i x_i K_i" if bubble else "ln sum_i y_i / K_i"
        why = (f"no root in {NEWTON_SATURATION} Newton steps on ln {sought[0].upper()}: {residual_name} is still "
               f"{f:.3g} at the last trial {sought} {math.exp(x):.6g} {unit} (the {kind} {sought} may not exist "
               f"for this mixture and model at {given})")
    value = math.exp(x) if converged else math.nan
    Tv, Pv = (fixed, value) if find_p else (value, fixed)
    message = (f"{kind} {sought} found at {given} in {iterations} evaluations" if converged else
               f"no {kind} {sought} at {given} ({sought} NaN): {why}")
    return SaturationPoint(kind, Tv, Pv, model.species, z, np.asarray(w, dtype=float), converged, iterations,
                           message)


def bubble_point(species: Sequence[str | Species], liquid: Any, T: Any = None, P: Any = None, eos: str = "PR",
                 kij: KijInput = None, **model_options: Any) -> SaturationPoint:
    """Bubble point of the liquid ``liquid`` (amounts or mole fractions per species): the pressure at T [K], or
    the temperature at P [Pa], where the first bubble of vapour forms: sum_i x_i K_i = 1 with
    K_i = phi_i^L(x) / phi_i^V(y), y_i = x_i K_i (Michelsen & Mollerup 2007, ch. 12). Starts from Wilson's
    K-factors; Newton's method on ln P (or ln T) outside, successive substitution of the vapour inside. A near-
    critical liquid can give the trivial answer (y = x), and some liquids have no bubble point at all (a gas
    dissolved beyond what the model lets it dissolve at any pressure): then ``converged`` is False, the pressure
    (or temperature) sought is NaN and ``message`` says why."""
    model = build_model(species, eos, kij, **model_options)
    return _saturation(model, "bubble", liquid, T, P)


def dew_point(species: Sequence[str | Species], vapour: Any, T: Any = None, P: Any = None, eos: str = "PR",
              kij: KijInput = None, **model_options: Any) -> SaturationPoint:
    """Dew point of the vapour ``vapour``: the pressure at T [K], or the temperature at P [Pa], where the first
    drop of liquid forms: sum_i y_i / K_i = 1, x_i = y_i / K_i (Michelsen & Mollerup 2007, ch. 12). As
    :func:`bubble_point`. Of two dew pressures (retrograde region) the one found from Wilson's start is given."""
    model = build_model(species, eos, kij, **model_options)
    return _saturation(model, "dew", vapour, T, P)
