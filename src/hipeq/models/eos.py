"""Equations of state for gas mixtures up to 1000 bar: the model table, model building and fugacity coefficients.

Models (``eos=``):

=================  ===================================================================================
``"ideal"``        phi_i = 1
``"virial"``       truncated virial in pressure, Z = 1 + B P/(R T), Pitzer-type B_ij(T) (Abbott's form of
                   Pitzer & Curl 1957; Smith, Van Ness & Abbott, 7th ed., eqs. 3.65-3.66, 11.64-11.74)
``"lewis-randall"`` Lewis-Randall rule: phi_i(T, P, y) = phi of pure i at (T, P) from a cubic (``pure_eos``,
                   default PR); Lewis & Randall 1923, "Thermodynamics"; Prausnitz et al. 1999, "Molecular
                   Thermodynamics of Fluid-Phase Equilibria", 3rd ed., sect. 5.6
``"SRK"``          Soave 1972, Chem. Eng. Sci. 27, 1197
``"PR"``           Peng & Robinson 1976, Ind. Eng. Chem. Fundam. 15, 59
``"PR78"``         Robinson & Peng 1978, GPA Research Report RR-28 (PR with a cubic m(omega) for omega > 0.491)
=================  ===================================================================================

The cubic family is one generic two-constant cubic (Michelsen & Mollerup 2007, ch. 3),

    P = R T / (v - b) - a(T) / ((v + delta1 b)(v + delta2 b)),
    a_i = Omega_a R^2 T_ci^2 / P_ci [1 + m_i (1 - sqrt(T / T_ci))]^2,   b_i = Omega_b R T_ci / P_ci,

with the van der Waals one-fluid mixing rule a = sum_ij y_i y_j (1 - k_ij) sqrt(a_i a_j), b = sum_i y_i b_i.
Each variant is one row of :data:`CUBICS` (data, not a class): delta1, delta2, Omega_a, Omega_b and the
coefficients of m(omega). The constants are those thermo uses, so that results agree with ``thermo.PRMIX`` and
``thermo.SRKMIX`` to rounding.

Options: ``quantum_hydrogen=True`` replaces the critical constants of H2, He (and D2, Ne if present) by the
temperature-dependent effective ones of Gunn, Chueh & Prausnitz (1966), AIChE J. 12, 937, built from the
"classical" constants of those gases with omega = 0 (hydrogen_omega does not apply to a quantum-corrected H2);
``hydrogen_omega=0.0`` sets the acentric factor of H2 (common practice for PR; see docs/hydrogen.md for which of
the two options helps against the reference equation of state).

Roots: of three real roots the one with the lower Gibbs energy is taken. A state is *liquid-like* when the
smaller-volume root won, or when v/b < 1.75 (our rule, DEVELOPERS.md); ``FugacityResult.root`` says which.
States where a model has no physical root (the truncated virial with Z <= 0 at high pressure; field ``P``) or
whose results are not finite in double precision (a few kelvin, far outside every model's range; field ``T``)
raise :class:`~hipeq.errors.InputError` naming the first such state, batch or scalar: no NaN or inf is handed out.
"""
from __future__ import annotations

import math
import numbers
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from types import MappingProxyType
from typing import Any, NamedTuple

import numpy as np

from hipeq._threads import run_in_ranges, thread_count
from hipeq.data.species import Species
from hipeq.data.species import species as lookup_species
from hipeq.errors import InputError
from hipeq.models import _kernels as K
from hipeq.models._states import PARALLEL_MIN_STATES, ROOT_OVERFLOW, finish_states, states_range
from hipeq.models.inputs import state_arrays
from hipeq.models.extensions import (GROUP_KIJ, VOLUME_TRANSLATIONS, eppr78_pairs, extended_consts,
                                     peneloux_shifts)
from hipeq.models.kij import KijAssignment, KijInput, assign_kij

__all__ = ["CubicForm", "CUBICS", "MODELS", "CompiledModel", "FugacityResult", "build_model",
           "fugacity_coefficients", "alpha_slope", "LIQUID_LIKE_REDUCED_VOLUME"]

LIQUID_LIKE_REDUCED_VOLUME = K.LIQUID_LIKE_REDUCED_VOLUME  # v/b below this is liquid-like (DEVELOPERS.md)


class CubicForm(NamedTuple):
    """One row of the cubic table: P = RT/(v-b) - a/((v + delta1 b)(v + delta2 b)) and
    m(omega) = sum_k m[k] omega^k, or ``m_heavy[1]`` for omega > ``m_heavy[0]``."""

    delta1: float
    delta2: float
    omega_a: float
    omega_b: float
    m: tuple[float, ...]
    m_heavy: tuple[float, tuple[float, ...]] | None
    reference: str


_SQRT2 = math.sqrt(2.0)
_CBRT2 = 2.0 ** (1.0 / 3.0)
_PR_OMEGA_A = 0.45723552892138218938  # thermo's value: the exact root of the PR critical conditions
_PR_OMEGA_B = 0.077796073903888455972
_PR_M = (0.37464, 1.54226, -0.26992)

CUBICS: Mapping[str, CubicForm] = MappingProxyType({
    "SRK": CubicForm(1.0, 0.0, 1.0 / (9.0 * (_CBRT2 - 1.0)), (_CBRT2 - 1.0) / 3.0,
                     (0.480, 1.574, -0.176), None,
                     "Soave 1972, Chem. Eng. Sci. 27, 1197: m = 0.480 + 1.574 w - 0.176 w^2"),
    "PR": CubicForm(1.0 + _SQRT2, 1.0 - _SQRT2, _PR_OMEGA_A, _PR_OMEGA_B, _PR_M, None,
                    "Peng & Robinson 1976, Ind. Eng. Chem. Fundam. 15, 59: m = 0.37464 + 1.54226 w - 0.26992 w^2"),
    "PR78": CubicForm(1.0 + _SQRT2, 1.0 - _SQRT2, _PR_OMEGA_A, _PR_OMEGA_B, _PR_M,
                      (0.491, (0.379642, 1.48503, -0.164423, 0.016666)),
                      "Robinson & Peng 1978, GPA RR-28: for w > 0.491 "
                      "m = 0.379642 + 1.48503 w - 0.164423 w^2 + 0.016666 w^3"),
})
MODELS: tuple[str, ...] = ("ideal", "virial", "lewis-randall", *CUBICS)
_CANONICAL = {name.lower(): name for name in MODELS}
_CODES = {"ideal": K.MODEL_IDEAL, "virial": K.MODEL_VIRIAL, "lewis-randall": K.MODEL_LEWIS_RANDALL}
_DEFAULT_KIJ = {"PR": "databank", "PR78": "databank", "SRK": "zero", "virial": "zero"}

# Gunn, Chueh & Prausnitz (1966): the quantum gases, identified by CAS number, with their "classical" critical
# constants (Tc0 [K], Pc0 [Pa]) that the correction Tc = Tc0 / (1 + 21.8 K / (M T)), Pc = Pc0 / (1 + 44.2 K / (M T))
# starts from, and omega = 0. Values as tabulated by Prausnitz, Lichtenthaler & de Azevedo, "Molecular
# Thermodynamics of Fluid-Phase Equilibria", 3rd ed. (1999), and Smith, Van Ness & Abbott, 7th ed. (2005),
# sec. 3.7 (from memory): H2 and D2 43.6 K, 20.5 bar; He 10.47 K, 6.76 bar; Ne 45.5 K, 26.9 bar.
_QUANTUM_CAS = {"1333-74-0": "H2", "7440-59-7": "He", "7782-39-0": "D2", "7440-01-9": "Ne"}
_QUANTUM_CLASSICAL = {"1333-74-0": (43.6, 20.5e5), "7782-39-0": (43.6, 20.5e5), "7440-59-7": (10.47, 6.76e5),
                      "7440-01-9": (45.5, 26.9e5)}
_HYDROGEN_CAS = "1333-74-0"


def alpha_slope(form: CubicForm, omega: float) -> float:
    """m(omega) [-] of the alpha function alpha = [1 + m (1 - sqrt(T/T_c))]^2 for the cubic row ``form``
    (Soave 1972 / Peng & Robinson 1976 / Robinson & Peng 1978, see :data:`CUBICS`)."""
    coefficients = form.m
    if form.m_heavy is not None and omega > form.m_heavy[0]:
        coefficients = form.m_heavy[1]
    return sum(c * omega ** k for k, c in enumerate(coefficients))


def _model_name(eos: Any, field: str) -> str:
    name = _CANONICAL.get(eos.lower()) if isinstance(eos, str) else None
    if name is None:
        raise InputError(field, f"unknown model {eos!r}; known: {', '.join(MODELS)}")
    return name


@dataclass(frozen=True, eq=False)
class CompiledModel:
    """A model ready for the compiled kernels (contract in DEVELOPERS.md) plus its provenance.

    ``code`` (MODEL_* of ``hipeq.models._kernels``), ``comp`` (nc, 7) float64 columns TC [K], PC [Pa],
    OMEGA [-], M_ALPHA [-], QMASS [g/mol, 0 = no quantum correction], VC [m3/mol], ZC [-]; ``consts``
    delta1, delta2, Omega_a, Omega_b, then an optional tail (volume translation c_i, E-PPR78 group constants;
    layout at ``HAS_SHIFT`` in ``hipeq.models._kernels``: length 4 means no tail); ``kmat`` (nc, nc) symmetric
    k_ij. Arrays are read-only.
    """

    code: int
    comp: np.ndarray
    consts: np.ndarray
    kmat: np.ndarray
    eos: str
    pure_eos: str | None
    species: tuple[str, ...]
    kij: Mapping[tuple[str, str], float]
    kij_sources: Mapping[tuple[str, str], str]
    zero_kij_pairs: tuple[tuple[str, str], ...]
    quantum_species: tuple[str, ...]
    notes: tuple[str, ...]

    @property
    def nc(self) -> int:
        """Number of components."""
        return len(self.species)

    def __repr__(self) -> str:
        eos = f"lewis-randall({self.pure_eos})" if self.pure_eos else self.eos
        extras = "".join(f"; {note}" for note in self.notes)
        return f"CompiledModel({eos}, species={list(self.species)}, code={self.code}{extras})"

    def fugacity_coefficients(self, T: Any, P: Any, y: Any) -> FugacityResult:
        """Fugacity coefficients and residual properties at T [K], P [Pa], y [-] (see
        :func:`fugacity_coefficients`; this skips the model look-up)."""
        return _evaluate(self, T, P, y)

    def stability_test(self, T: Any, P: Any, y: Any) -> Any:
        """Tangent-plane stability test of mixtures y [-] at T [K], P [Pa] with this model (Michelsen 1982; see
        :func:`hipeq.models.stability.stability_test`); returns a
        :class:`~hipeq.models.stability.StabilityResult`."""
        from hipeq.models.stability import model_stability

        return model_stability(self, T, P, y)


class _Component(NamedTuple):
    name: str
    cas: str
    Tc: float
    Pc: float
    omega: float
    Vc: float
    Zc: float
    molar_mass: float


def _component(record: Species) -> _Component:
    return _Component(record.name, record.cas, record.Tc, record.Pc, record.omega, record.Vc, record.Zc,
                      record.molar_mass)


def _check_component(c: _Component) -> None:
    for field in ("Tc", "Pc", "Vc", "Zc", "molar_mass"):
        value = getattr(c, field)
        if not (math.isfinite(value) and value > 0.0):
            raise InputError(f"species.{c.name}.{field}", f"must be finite and > 0, got {value!r}")
    if not (math.isfinite(c.omega) and -1.0 < c.omega < 2.0):
        raise InputError(f"species.{c.name}.omega", f"must be finite and in (-1, 2), got {c.omega!r}")


def _kij_key(kij: Any) -> Any:
    """A hashable stand-in for ``kij`` (for the build cache); raises TypeError when there is none."""
    if kij is None or isinstance(kij, str):
        return kij
    if isinstance(kij, Mapping):
        return ("mapping", tuple(sorted((tuple(sorted(k)), float(v)) for k, v in kij.items())))
    array = np.asarray(kij, dtype=float)
    return ("matrix", array.shape, array.tobytes())


def build_model(species: Sequence[str | Species], eos: str = "PR", kij: KijInput = None,
                quantum_hydrogen: bool = False, *, pure_eos: str | None = None,
                hydrogen_omega: float | None = None, volume_translation: str | None = None) -> CompiledModel:
    """Compile a model for ``species`` (names or :class:`~hipeq.data.species.Species` records).

    Args:
        species: component names or records, in the order of y.
        eos: one of :data:`MODELS` (case-insensitive).
        kij: k_ij overrides, a symmetric (nc, nc) matrix or {(name_i, name_j): k_ij}; defaults per model in
            :mod:`hipeq.models.kij` (PR/PR78 databank, SRK and virial zero). Not allowed for ideal and
            lewis-randall (they have none). ``kij="e-ppr78"`` (PR, PR78) takes the temperature-dependent
            group-contribution k_ij(T) of Jaubert et al. (2022) for the pairs the method covers
            (:mod:`hipeq.models.extensions`); other pairs keep the default and are listed in ``notes``.
        quantum_hydrogen: effective critical constants of Gunn, Chueh & Prausnitz (1966) for H2, He, D2, Ne,
            T_c = T_c0 / (1 + 21.8 K/(M T)), P_c = P_c0 / (1 + 44.2 K/(M T)), M in g/mol.
        pure_eos: the cubic giving the pure-fluid phi of the lewis-randall model (default "PR").
        hydrogen_omega: acentric factor [-] to use for H2 instead of its record's (e.g. 0.0).
        volume_translation: ``"peneloux"`` (cubics only): Peneloux et al. (1982) volume shift c_i from the
            Rackett compressibility; shifts ln phi_i by -c_i P/(R T) (:mod:`hipeq.models.extensions`).

    Returns a cached, immutable :class:`CompiledModel` (one build per species set and options).

    Raises:
        InputError: unknown model, bad k_ij (shape, asymmetry, non-finite, |k_ij| >= 1), options that the model
            does not use; UnknownSpeciesError for an unknown species name.
    """
    if isinstance(species, (str, Species)) or not hasattr(species, "__iter__"):
        raise InputError("species", f"must be a non-empty list of names or Species records, got {species!r}")
    components = tuple(_component(lookup_species(s)) for s in species)
    if not components:
        raise InputError("species", "must name at least one species")
    options = (_model_name(eos, "eos"), None if pure_eos is None else _model_name(pure_eos, "pure_eos"),
               bool(quantum_hydrogen), hydrogen_omega, volume_translation)
    try:
        key = (components, options, _kij_key(kij))
        model = _MODEL_CACHE.get(key)
    except (TypeError, ValueError):
        return _build(components, options, kij)  # unhashable input: the full validation names what is wrong
    if model is None:
        model = _build(components, options, kij)
        if len(_MODEL_CACHE) >= _MODEL_CACHE_SIZE:
            _MODEL_CACHE.pop(next(iter(_MODEL_CACHE)))
        _MODEL_CACHE[key] = model
    return model


_MODEL_CACHE: dict[Any, CompiledModel] = {}  # (species constants, options, kij) -> model; oldest dropped first
_MODEL_CACHE_SIZE = 256


def _build(components: tuple[_Component, ...], options: tuple[Any, ...], kij: Any) -> CompiledModel:
    eos, pure_eos, quantum, hydrogen_omega, volume_translation = options
    names = tuple(c.name for c in components)
    if len(set(names)) != len(names):
        raise InputError("species", f"each species may appear once; got {list(names)}")
    for c in components:
        _check_component(c)
    if pure_eos is not None and eos != "lewis-randall":
        raise InputError("pure_eos", f"only used with eos='lewis-randall', not with {eos!r}")
    if pure_eos is not None and pure_eos not in CUBICS:
        raise InputError("pure_eos", f"must be a cubic ({', '.join(CUBICS)}), got {pure_eos!r}")
    if kij is not None and eos not in _DEFAULT_KIJ:
        raise InputError("kij", f"model {eos!r} has no interaction parameters; remove kij")
    group_kij = isinstance(kij, str)
    if group_kij and (kij.lower() != GROUP_KIJ or eos not in ("PR", "PR78")):
        raise InputError("kij", f"the only named k_ij method is {GROUP_KIJ!r}, for PR and PR78 "
                                f"(got {kij!r} with {eos!r}); otherwise give a matrix or a mapping")
    if volume_translation is not None and (volume_translation not in VOLUME_TRANSLATIONS or eos not in CUBICS):
        raise InputError("volume_translation", f"must be one of {', '.join(VOLUME_TRANSLATIONS)} with a cubic "
                                               f"({', '.join(CUBICS)}), got {volume_translation!r} with {eos!r}")
    notes: list[str] = []
    omegas = [c.omega for c in components]
    if hydrogen_omega is not None:
        if not (isinstance(hydrogen_omega, numbers.Real) and not isinstance(hydrogen_omega, bool)
                and math.isfinite(hydrogen_omega) and -1.0 < hydrogen_omega < 2.0):
            raise InputError("hydrogen_omega", f"must be a finite number in (-1, 2), got {hydrogen_omega!r}")
        for i, c in enumerate(components):
            if c.cas == _HYDROGEN_CAS:
                omegas[i] = float(hydrogen_omega)
                notes.append(f"omega of {c.name} set to {hydrogen_omega:g} (hydrogen_omega; record: {c.omega:g})")
    form = CUBICS.get(pure_eos or ("PR" if eos == "lewis-randall" else eos))
    nc = len(components)
    comp = np.zeros((nc, K.N_COMP_COLUMNS))
    quantum_species = []
    for i, c in enumerate(components):
        comp[i, [K.TC, K.PC, K.OMEGA, K.VC, K.ZC]] = c.Tc, c.Pc, omegas[i], c.Vc, c.Zc
        comp[i, K.M_ALPHA] = alpha_slope(form, omegas[i]) if form is not None else 0.0
        if quantum and c.cas in _QUANTUM_CAS:
            comp[i, K.TC], comp[i, K.PC] = _QUANTUM_CLASSICAL[c.cas]
            comp[i, K.OMEGA] = 0.0
            comp[i, K.M_ALPHA] = alpha_slope(form, 0.0) if form is not None else 0.0
            comp[i, K.QMASS] = c.molar_mass * 1000.0
            quantum_species.append(c.name)
    if quantum:
        notes.append("Gunn-Chueh-Prausnitz effective critical constants for "
                     + (", ".join(quantum_species) or "no species (none is H2, He, D2 or Ne)"))
    if eos == "ideal" and (quantum or hydrogen_omega is not None):
        notes.append("the ideal-gas model ignores quantum_hydrogen and hydrogen_omega")
    consts = np.zeros(4)
    if form is not None:
        consts[:] = form.delta1, form.delta2, form.omega_a, form.omega_b
    shifts = group = None
    if volume_translation is not None:
        shifts, shift_notes = peneloux_shifts(eos, components)
        notes.append("Peneloux volume translation: " + "; ".join(shift_notes))
    if group_kij:
        big_a, big_b, outside = eppr78_pairs(names)
        group = (big_a, big_b)
        notes.append("k_ij(T) from E-PPR78 (Jaubert et al. 2022)"
                     + (f"; default k_ij kept for {', '.join('-'.join(p) for p in outside)}" if outside else ""))
        kij = None
    consts = extended_consts(consts, nc, shifts, group)
    if eos in _DEFAULT_KIJ:
        assignment = assign_kij(components, _DEFAULT_KIJ[eos], kij)
    else:
        empty = np.zeros((nc, nc))
        empty.setflags(write=False)
        assignment = KijAssignment(empty, MappingProxyType({}), MappingProxyType({}), ())
    if group is not None:
        covered = {(names[i], names[j]) for i in range(nc) for j in range(i + 1, nc) if group[0][i, j] != 0.0}
        sources = {p: ("E-PPR78 k_ij(T), Jaubert et al. 2022 (value shown: the unused default)" if p in covered
                       else s) for p, s in assignment.sources.items()}
        assignment = KijAssignment(assignment.matrix, assignment.values, MappingProxyType(sources),
                                   tuple(p for p in assignment.zero_pairs if p not in covered))
    comp.setflags(write=False)
    consts.setflags(write=False)
    return CompiledModel(code=K.MODEL_CUBIC if eos in CUBICS else _CODES[eos], comp=comp, consts=consts,
                         kmat=assignment.matrix, eos=eos,
                         pure_eos=(pure_eos or "PR") if eos == "lewis-randall" else None,
                         species=names, kij=assignment.values, kij_sources=assignment.sources,
                         zero_kij_pairs=assignment.zero_pairs, quantum_species=tuple(quantum_species),
                         notes=tuple(notes))


@dataclass(frozen=True, eq=False)
class FugacityResult:
    """Fugacity coefficients and residual properties of states of one model (read-only arrays).

    Per state (shape S = broadcast of T, P and y's leading axes; numpy scalars for a single state):
    ``Z`` [-], ``molar_volume`` [m3/mol], ``g_res_RT`` [-] (residual Gibbs energy over RT at T, P),
    ``h_res`` [J/mol] (residual enthalpy), ``root`` ("single", "gas-like" or "liquid-like"), ``liquid_like``.
    Per state and component (shape S + (nc,)): ``phis``, ``ln_phis``, ``dln_phis_dT`` [1/K] at fixed P, y
    (``phis`` underflows to 0 where ln phi < -745, e.g. a gas dissolved in a cubic's liquid root at a few kelvin;
    ``ln_phis`` stays exact; states whose results would overflow raise InputError instead).
    ``T`` [K], ``P`` [Pa] and ``y`` echo the broadcast states; ``model`` is the :class:`CompiledModel` used
    (name, species, k_ij and their sources, pairs at zero).
    """

    phis: np.ndarray
    ln_phis: np.ndarray
    dln_phis_dT: np.ndarray
    Z: Any
    molar_volume: Any
    g_res_RT: Any
    h_res: Any
    root: Any
    liquid_like: Any
    T: Any
    P: Any
    y: np.ndarray
    model: CompiledModel

    def __post_init__(self) -> None:
        for value in (self.phis, self.ln_phis, self.dln_phis_dT, self.Z, self.molar_volume, self.g_res_RT,
                      self.h_res, self.root, self.liquid_like, self.T, self.P, self.y):
            if isinstance(value, np.ndarray):
                value.flags.writeable = False

    @property
    def phi(self) -> np.ndarray:
        """Fugacity coefficients, one row per state (the name the public call promises; same as ``phis``)."""
        return self.phis

    @property
    def ln_phi(self) -> np.ndarray:
        """ln of the fugacity coefficients, one row per state (same as ``ln_phis``)."""
        return self.ln_phis

    @property
    def eos(self) -> str:
        """Model name."""
        return self.model.eos

    @property
    def kij(self) -> Mapping[tuple[str, str], float]:
        """k_ij used, per pair of species names."""
        return self.model.kij

    @property
    def zero_kij_pairs(self) -> tuple[tuple[str, str], ...]:
        """Pairs whose k_ij fell back to zero for want of a value."""
        return self.model.zero_kij_pairs


_ROOT_LABELS = ("single", "gas-like", "liquid-like")  # indexed by ROOT_SINGLE, ROOT_GAS, ROOT_LIQUID
_NO_ROOT = {
    K.MODEL_VIRIAL: "the truncated virial equation gives Z = {z:.3g} <= 0 (pressure far beyond its range); "
                    "use a cubic model (PR, SRK) here",
    K.MODEL_CUBIC: "the cubic has no root above the co-volume",
    K.MODEL_LEWIS_RANDALL: "the pure-fluid cubic has no root above the co-volume for some species",
}
_OVERFLOW = ("its results are not finite in double precision (largest ln phi = {ln_phi:.4g}, Z = {z:.3g}): far "
             "outside the range of the model (e.g. the virial B(T) correlation far below the critical temperature, "
             "or a dissolved gas in a cubic's liquid root at a few kelvin)")


def _evaluate(model: CompiledModel, T: Any, P: Any, y: Any) -> FugacityResult:
    shape, T_flat, P_flat, Y = state_arrays(T, P, y, model.species)
    n, nc = Y.shape
    ln_phis, phis, dln_phis_dT = np.empty((n, nc)), np.empty((n, nc)), np.empty((n, nc))
    Z, volume, g_res, h_res = np.empty(n), np.empty(n), np.empty(n), np.empty(n)
    roots = np.empty(n, dtype=np.int64)
    run_in_ranges(n, thread_count(n) if n >= PARALLEL_MIN_STATES else 1,
                  lambda first, last: states_range(model.code, T_flat, P_flat, Y, model.comp, model.consts,
                                                   model.kmat, first, last, ln_phis, dln_phis_dT, Z, roots, g_res,
                                                   h_res))
    bad = finish_states(model.code, T_flat, P_flat, Y, model.comp, model.consts, LIQUID_LIKE_REDUCED_VOLUME,
                        ln_phis, phis, dln_phis_dT, Z, volume, roots, g_res, h_res)
    if bad >= 0:
        where = f" (state {bad} of {n})" if n > 1 else ""
        overflow = roots[bad] == ROOT_OVERFLOW
        reason = (_OVERFLOW if overflow else _NO_ROOT[model.code]).format(z=Z[bad], ln_phi=np.max(ln_phis[bad]))
        state = f"T = {T_flat[bad]:g} K, P = {P_flat[bad]:g} Pa{where}"
        raise InputError("T" if overflow else "P", f"model {model.eos!r} has no physical state at {state}: {reason}")
    if not shape:  # one state: numpy scalars and (nc,) rows
        root = _ROOT_LABELS[roots[0]]
        return FugacityResult(phis[0], ln_phis[0], dln_phis_dT[0], Z[0], volume[0], g_res[0], h_res[0],
                              root, root == "liquid-like", T_flat[0], P_flat[0], Y[0], model)
    full = shape + (nc,)
    liquid = roots == K.ROOT_LIQUID
    labels = np.array(_ROOT_LABELS)[roots]
    return FugacityResult(phis.reshape(full), ln_phis.reshape(full), dln_phis_dT.reshape(full), Z.reshape(shape),
                          volume.reshape(shape), g_res.reshape(shape), h_res.reshape(shape),
                          labels.reshape(shape), liquid.reshape(shape), T_flat.reshape(shape),
                          P_flat.reshape(shape), Y.reshape(full), model)


def fugacity_coefficients(species: Sequence[str | Species], T: Any, P: Any, y: Any, eos: str = "PR",
                          kij: KijInput = None, quantum_hydrogen: bool = False, *, pure_eos: str | None = None,
                          hydrogen_omega: float | None = None,
                          volume_translation: str | None = None) -> FugacityResult:
    """Fugacity coefficients phi_i = f_i / (y_i P) of a gas mixture, with Z and residual properties.

    Args:
        species: component names or Species records (order of y's last axis).
        T: temperature [K], scalar or array, 1..6000 K.
        P: pressure [Pa], scalar or array, 0 < P <= 1e10 Pa.
        y: mole fractions [-], shape (..., nc), >= 0, summing to 1 within 1e-8.
        eos, kij, quantum_hydrogen, pure_eos, hydrogen_omega, volume_translation: see :func:`build_model`.

    For the cubics (Michelsen & Mollerup 2007, ch. 3):
    ln phi_i = b_i/b (Z - 1) - ln(Z - B) - A/(B (delta1 - delta2)) (2 sum_j y_j a_ij / a - b_i / b)
    ln[(Z + delta1 B)/(Z + delta2 B)], A = a P/(R T)^2, B = b P/(R T); for the virial
    ln phi_i = (2 sum_j y_j B_ij - B) P/(R T); d ln phi_i/dT and the residual enthalpy
    h_res = -R T^2 d(g_res/RT)/dT follow from the residual Helmholtz energy.

    Raises:
        InputError: naming the field (T, P, y, eos, kij, ...) and its allowed range; also for states where the
            model has no physical root (truncated virial at high pressure), naming the state.
    """
    model = build_model(species, eos, kij, quantum_hydrogen, pure_eos=pure_eos, hydrogen_omega=hydrogen_omega,
                        volume_translation=volume_translation)
    return _evaluate(model, T, P, y)
