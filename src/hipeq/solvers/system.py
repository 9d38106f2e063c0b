"""ReactionSystem: chemical equilibrium of a gas mixture at fixed T and P, or in a sealed vessel at fixed T and V.

>>> import hipeq
>>> system = hipeq.ReactionSystem(["N2", "H2", "NH3", "Ar"], eos="PR")
>>> result = system.equilibrium(feed={"N2": 1, "H2": 3, "Ar": 0.05}, T=723.15, P=300e5)
>>> result.converged, round(result.y["NH3"], 3)
(True, 0.333)

Formulations (details in docs/solvers.md):

- ``method="extent"``: Newton on the extents of the independent reactions, every condition
  sum_i nu_ki (ln y_i + ln phi_i + ln(P/P0)) = ln K_k (Smith & Missen 1982, "Chemical Reaction Equilibrium
  Analysis", ch. 4 and 7); ``scheme="coupled"`` (analytic Jacobian with d ln phi / d n, Michelsen & Mollerup
  2007, "Thermodynamic Models", 2nd ed., ch. 2) or ``scheme="nested"`` (phi frozen inside, updated outside).
- ``method="gibbs"``: minimisation of G over the species list with element balances (element potentials:
  White, Johnson & Dantzig 1958, J. Chem. Phys. 28, 751; Smith & Missen 1982, ch. 6; Michelsen & Mollerup 2007,
  ch. 12 for the non-ideal part). Needs no reactions.
- ``V=`` instead of ``P=``: sealed vessel; the pressure is found so that n_T Z R T / P = V, or, where no single
  phase fills the vessel, so that a vapour and a liquid at equilibrium fill it together (``phases="auto"``,
  :mod:`hipeq.solvers.vessel_phases`; at fixed T and V the equilibrium is the minimum of A = G - P V).

Equilibrium is a thermodynamic limit, not a design basis for pressure equipment; follow local codes and
licensed engineering practice.
"""
from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from types import MappingProxyType
from typing import TYPE_CHECKING, Any

import numpy as np

from hipeq.data.reactions import Reaction, check_independent, element_matrix, independent_reactions
from hipeq.data.ksources import ResolvedK, resolve_k_source
from hipeq.data.reactions import stoichiometric_matrix
from hipeq.data.species import Species
from hipeq.data.species import species as lookup_species
from hipeq.errors import InputError, NotConvergedError, UnknownSpeciesError
from hipeq.models.inputs import P_MAX
from hipeq.solvers import _arrays as A
from hipeq.solvers import _driver as D
from hipeq.solvers._patterns import Pattern, null_space
from hipeq.solvers._store import CompiledSystem, PatternStore, SolveContext
from hipeq.solvers._tables import g0_table
from hipeq.solvers.result import BatchResult, EquilibriumResult, _SystemInfo, scalar_result
from hipeq.units import to_si

if TYPE_CHECKING:
    from hipeq.solvers.adiabatic import AdiabaticBatchResult, AdiabaticResult
    from hipeq.solvers.bound import StateSolver
    from hipeq.solvers.properties import MixtureProperties

__all__ = ["ReactionSystem"]

METHODS = ("extent", "gibbs")
SCHEMES = ("coupled", "nested")
DEFAULT_TOL = 1e-11
VOLUME_TOL = 1e-12  # |ln(V_equilibrium / V)| at convergence of a sealed-vessel solve
MAX_SPECIES = 62  # the zero-feed pattern is kept in the bits of one int64


def feed_amount(name: Any, amount: Any) -> float | np.ndarray:
    """The amount [mol] of species ``name`` in a feed: a number, an array, or a string with a unit (``"3 kmol"``),
    through :func:`hipeq.units.to_si`; an InputError names the field ``feed`` and the species."""
    try:
        return to_si(amount, "amount", "feed")
    except InputError as err:
        raise InputError("feed", f"amount of {name!r}: {str(err).removeprefix('feed: ')}") from None


class ReactionSystem:
    """A set of gas species, their independent reactions and a fugacity model, ready for equilibrium solves.

    Args:
        species: species names (identifiers, common names, formulas or CAS numbers) or Species records.
        reactions: reactions as text (``"N2 + 3 H2 = 2 NH3"``) or :class:`~hipeq.data.reactions.Reaction`; None
            derives a complete independent set from the element balances. A dependent set is reduced to an
            independent subset, keeping the given order (``dropped_reactions`` says which went and why).
        eos: fugacity model (``"PR"``, ``"SRK"``, ``"PR78"``, ``"virial"``, ``"lewis-randall"``, ``"ideal"``).
        kij: binary interaction parameters (see :func:`hipeq.models.eos.build_model`).
        quantum_hydrogen: effective critical constants for H2 (Gunn, Chueh & Prausnitz 1966).
        hydrogen_omega, volume_translation, pure_eos: further model options, passed to
            :func:`hipeq.models.eos.build_model` (e.g. ``eos="PR78", kij="e-ppr78",
            volume_translation="peneloux"``, the closest cubic to measured ammonia equilibria up to 1000 atm;
            docs/ammonia_validation.md).
        ln_K: optional override of the equilibrium constants: a callable taking temperatures [K] (1-D array)
            and returning ln K of ``reactions`` (the kept, independent ones, standard state ideal gas at 1 bar)
            with shape (n, n_reactions). Gibbs minimisation then uses the least change of the species' standard
            Gibbs energies that reproduces these ln K.
        K_source: a named source of K instead (``"graaf-1986"``, ``"graaf-winkelman-2016"``,
            ``"gillespie-beattie-1930"``, a species-data table ``"JANAF"`` or ``{"Hf": "JANAF", "S0": "CRC"}``;
            :func:`hipeq.k_sources` lists them, :mod:`hipeq.data.ksources` says how each is applied), resolved for
            the kept reactions; ``"bundled"`` or None: the data layer. Results name it in ``K_source``.

    Raises InputError naming the field (species, reactions, eos, kij, ln_K), UnknownSpeciesError.
    """

    def __init__(self, species: Sequence[str | Species], reactions: Sequence[str | Reaction] | None = None,
                 eos: str = "PR", kij: Any = None, quantum_hydrogen: bool = False, *,
                 hydrogen_omega: float | None = None, volume_translation: str | None = None,
                 pure_eos: str | None = None, ln_K: Callable[[np.ndarray], Any] | None = None,
                 K_source: str | Mapping[str, str] | None = None) -> None:
        from hipeq.models import build_model

        self._model_options = {"eos": eos, "kij": kij, "quantum_hydrogen": quantum_hydrogen,
                               "hydrogen_omega": hydrogen_omega, "volume_translation": volume_translation,
                               "pure_eos": pure_eos}
        if isinstance(species, (str, Species)) or not isinstance(species, Sequence) or not species:
            raise InputError("species", f"must be a non-empty list of species names, got {species!r}")
        records = tuple(lookup_species(s) for s in species)
        names = tuple(r.name for r in records)
        if len(set(names)) != len(names):
            twice = sorted({n for n in names if names.count(n) > 1})
            raise InputError("species", f"each species may appear once; repeated: {', '.join(twice)}")
        if len(names) > MAX_SPECIES:
            raise InputError("species", f"at most {MAX_SPECIES} species, got {len(names)}")
        if ln_K is not None and not callable(ln_K):
            raise InputError("ln_K", f"must be a callable T -> ln K array, got {ln_K!r}")
        self.species_names: tuple[str, ...] = names
        self.records: tuple[Species, ...] = records
        self._index = {n: k for k, n in enumerate(names)}
        notes: list[str] = []
        self.reactions, self.dropped_reactions = self._reactions(reactions, names, notes)
        nc, nr = len(names), len(self.reactions)
        self.nu = stoichiometric_matrix(self.reactions, names) if nr else np.zeros((0, nc))
        if K_source is not None and not (isinstance(K_source, str) and K_source.strip().lower() == "bundled"):
            if ln_K is not None:
                raise InputError("K_source", "give ln_K or K_source, not both")
            ln_K = resolve_k_source(K_source, self.reactions, names)
        self.elements, self.element_matrix = element_matrix(names)
        self.model = build_model(names, eos, kij, quantum_hydrogen, hydrogen_omega=hydrogen_omega,
                                 volume_translation=volume_translation, pure_eos=pure_eos)
        self.table = g0_table(records)
        self.T_min, self.T_max = self.table.t_lo, self.table.t_hi
        self._element_null = null_space(self.element_matrix)
        rank = np.linalg.matrix_rank(self.nu) if nr else 0
        if rank < self._element_null.shape[1]:
            notes.append(f"the {nr} reactions span {rank} of the {self._element_null.shape[1]} independent "
                         "composition changes the element balances allow; method='gibbs' may reach species by "
                         "routes outside this reaction list")
        notes.extend(self.model.notes)
        self._ln_K = ln_K
        self._nu_pinv = np.ascontiguousarray(np.linalg.pinv(self.nu)) if nr else np.zeros((nc, 0))
        self._max_nu = float(np.max(np.sum(np.abs(self.nu), axis=1))) if nr else 1.0
        m = self.model
        arrays = A.SystemArrays(
            model_code=int(m.code), components=np.array(m.comp), model_constants=np.array(m.consts),
            kij=np.array(m.kmat), g0_ln_t0=float(self.table.u_lo), g0_step=float(self.table.h),
            g0_nodes=np.array(self.table.values), nu=np.ascontiguousarray(self.nu), nu_pinv=self._nu_pinv,
            elements=np.ascontiguousarray(self.element_matrix), complete=bool(rank == self._element_null.shape[1]))
        self.compiled = CompiledSystem(arrays, PatternStore(arrays.nu, self._element_null, arrays.elements))
        self._layout = A.answer_layout(nc, len(self.reactions), len(self.elements))
        self._options: dict[tuple, A.Options] = {}
        self._frozen_cache: dict[tuple[int, str], tuple[str, ...]] = {}
        self._bits = np.array([1 << k for k in range(nc)], dtype=np.int64)
        self.notes = tuple(notes)
        k_source = (ln_K.description if isinstance(ln_K, ResolvedK) else
                    "user ln_K override" if ln_K is not None else
                    "ln K = -sum_i nu_i G0_i(T)/(R T) from hipeq.data.thermochem (Cp integrals), tabulated in "
                    f"ln T with quintic Hermite interpolation (max deviation {self.table.max_error:.1e})")
        self._info = _SystemInfo(
            species=names, index=MappingProxyType(dict(self._index)),
            reactions=tuple(str(r) for r in self.reactions), nu=self.nu, elements=tuple(self.elements),
            element_index=MappingProxyType({e: k for k, e in enumerate(self.elements)}), eos=m.eos, kij=m.kij,
            kij_sources=m.kij_sources, zero_kij_pairs=m.zero_kij_pairs,
            data_sources=MappingProxyType({r.name: MappingProxyType(dict(r.sources)) for r in records}),
            notes=self.notes, k_source=k_source, model=m, records=records)
        # what the scalar, batch and bound paths read (they never reach into this object's private members)
        self.context = SolveContext(compiled=self.compiled, layout=self._layout, info=self._info,
                                    pattern_bits=self._bits, T_min=float(self.T_min), T_max=float(self.T_max),
                                    user_ln_k=self._user_ln_k if ln_K is not None else None, options=self._opts)

    # ------------------------------------------------------------------------------------------------------
    @staticmethod
    def _reactions(reactions: Sequence[str | Reaction] | None, names: tuple[str, ...],
                   notes: list[str]) -> tuple[tuple[Reaction, ...], tuple[tuple[Reaction, str], ...]]:
        if reactions is None:
            return tuple(independent_reactions(names)), ()
        if isinstance(reactions, (str, Reaction)) or not isinstance(reactions, Sequence):
            raise InputError("reactions", f"must be a list of reactions (text or Reaction), got {reactions!r}")
        parsed = []
        for item in reactions:
            rxn = item if isinstance(item, Reaction) else Reaction.parse(item)
            missing = [s for s in rxn.species if s not in names]
            if missing:
                raise InputError("reactions", f"'{rxn}' involves {', '.join(missing)}, not in the species list "
                                              f"{list(names)}")
            parsed.append(rxn)
        if not parsed:
            return (), ()
        check = check_independent(parsed)
        kept = tuple(parsed[k] for k in check.independent)
        dropped = []
        for d in check.dependent:
            combo = " + ".join(f"{c:g} x '{parsed[k]}'" for k, c in check.combinations[d].items())
            dropped.append((parsed[d], combo))
            notes.append(f"dropped dependent reaction '{parsed[d]}' = {combo}")
        return kept, tuple(dropped)

    def _frozen(self, pattern: Pattern, method: str) -> tuple[str, ...]:
        """Reactions that cannot proceed for ``pattern`` (a species absent and not formable), as text."""
        key = (pattern.key, method)
        found = self._frozen_cache.get(key)
        if found is None:
            active = pattern.ext_active if method == "extent" else pattern.gibbs_active
            found = tuple(str(r) for r, row in zip(self.reactions, self.nu) if np.any(row[~active] != 0.0))
            self._frozen_cache[key] = found  # idempotent: a race only computes it twice
        return found

    def _opts(self, method: str, scheme: str, tol: float, max_iterations: int, fixed_volume: bool,
              guess: bool) -> A.Options:
        key = (method, scheme, tol, max_iterations, fixed_volume, guess)
        found = self._options.get(key)
        if found is not None:
            return found
        if method not in METHODS:
            raise InputError("method", f"must be one of {', '.join(map(repr, METHODS))}, got {method!r}")
        if scheme not in SCHEMES:
            raise InputError("scheme", f"must be one of {', '.join(map(repr, SCHEMES))}, got {scheme!r}")
        if isinstance(tol, bool) or not (isinstance(tol, (int, float)) and 1e-14 <= tol <= 1e-3):
            raise InputError("tol", f"must be a number in [1e-14, 1e-3], got {tol!r}")
        if isinstance(max_iterations, bool) or not isinstance(max_iterations, (int, np.integer)) or not (
                1 <= max_iterations <= 100_000):
            raise InputError("max_iterations", f"must be an integer in [1, 100000], got {max_iterations!r}")
        options = A.Options(method=A.METHOD_EXTENT if method == "extent" else A.METHOD_GIBBS,
                            coupled=scheme == "coupled", fixed_volume=bool(fixed_volume),
                            max_iterations=int(max_iterations), user_ln_k=self._ln_K is not None, warm=True,
                            guess=bool(guess), tol=float(tol), tol_gibbs=float(tol) / max(1.0, self._max_nu),
                            tol_volume=VOLUME_TOL)
        self._options[key] = options
        return options

    # ------------------------------------------------------------------------------------------------------
    def species_index(self, name: Any) -> int:
        """Position of species ``name`` (identifier, common name, formula or CAS number) in ``species_names``;
        InputError naming the feed field when it is unknown or not in this system."""
        j = self._index.get(name)
        if j is not None:
            return j
        if not isinstance(name, (str, Species)):
            raise InputError("feed", f"keys must be species names, got {name!r}")
        try:
            ident = lookup_species(name).name
        except UnknownSpeciesError as err:
            raise InputError("feed", f"{name!r} is not a known species ({err}); this system has "
                                     f"{', '.join(self.species_names)}") from None
        j = self._index.get(ident)
        if j is None:
            raise InputError("feed", f"{ident!r} is not in this system (species: {', '.join(self.species_names)})")
        return j

    def _check_T(self, T: float) -> None:
        if not (self.T_min <= T <= self.T_max):
            lo, hi = self.table.limiting
            raise InputError("T", f"must be within {self.T_min:g}-{self.T_max:g} K (the heat-capacity ranges of "
                                  f"the species; limited by {lo} below and {hi} above), got {T!r}")

    def _check_PV(self, P: Any, V: Any) -> tuple[Any, bool]:
        if (P is None) == (V is None):
            raise InputError("P", "give exactly one of P= [Pa] (fixed pressure) or V= [m3] (sealed vessel)"
                             + (", not both" if P is not None else ""))
        return (P, False) if V is None else (V, True)

    def equilibrium(self, feed: Mapping[str, Any] | Any, T: Any, P: Any = None, V: Any = None, *,
                    method: str = "extent", scheme: str = "coupled", tol: float = DEFAULT_TOL,
                    max_iterations: int = 100, initial_guess: Mapping[str, float] | EquilibriumResult | None = None,
                    raise_on_failure: bool = False, phases: str = "auto") -> EquilibriumResult | BatchResult:
        """Equilibrium composition of ``feed`` at temperature T and pressure P, or in a sealed vessel of volume V.

        Args:
            feed: amounts [mol] per species, {name: amount}; or an array with species along the last axis in
                the order of ``species_names``. Values may be arrays (a batch) or strings with a unit
                (``"3 kmol"``).
            T: temperature [K], within the species' heat-capacity range (``T_min``-``T_max``); or a string with
                a unit (``"450 degC"``).
            P: pressure [Pa], 0 < P <= 1e10 (fixed pressure), or a string with a unit (``"300 bar"``). Exactly
                one of P and V.
            V: total volume [m3], > 0 (sealed vessel: the pressure follows from the equation of state), or a
                string with a unit (``"2.5 L"``).
            method: "extent" (Newton on the extents) or "gibbs" (Gibbs minimisation with element balances).
                When the extent method fails and the reactions span every composition change the element
                balances allow, Gibbs minimisation answers instead (``result.method`` says which answered).
            scheme: "coupled" (full Newton with d ln phi/d n) or "nested" (phi frozen in an inner loop).
            tol: tolerance on every equilibrium condition, |sum_i nu_ki mu_i/RT| <= tol [-].
            max_iterations: Newton iterations allowed (per start, and per pressure step in a sealed vessel).
            initial_guess: amounts {name: mol} or a previous EquilibriumResult to start from (scalar calls).
            raise_on_failure: raise NotConvergedError (with ``.result``) instead of returning a result with
                ``converged == False`` (for a batch: when any state failed). Default False: check
                ``result.converged``.
            phases: "auto" (default): at fixed pressure with a cubic model, a converged answer is tested for
                stability as one phase (tangent-plane distance, Michelsen 1982; skipped where the cubic has one
                volume root at every composition of the species present, so no liquid can form) and, when
                unstable, solved again as a vapour and a liquid in equilibrium with each other and with every
                reaction (``result.phases``, ``result.phase_count``; :mod:`hipeq.solvers.two_phase`). In a
                sealed vessel (``V=``), a state that no single phase can fill (status 5, reason 4) or whose
                one-phase answer is unstable is solved for the pressure P at which the vapour and the liquid at
                equilibrium fill it together, V_vapour + V_liquid = V (a bracketed search on ln P over the
                fixed-pressure solves; the lower Helmholtz energy A = G - P V decides at fixed T and V;
                :mod:`hipeq.solvers.vessel_phases`). "one": one phase only, as the equation of state's root gives
                it (``result.stability`` still tells whether it would split). Cost in docs/phases.md.

        The conditions solved are sum_i nu_ki [g0_i + ln(P/P0) + ln y_i + ln phi_i] = 0 for every independent
        reaction k (extent) or the equivalent element-potential conditions (gibbs), P0 = 1 bar (Smith & Missen
        1982, ch. 4, 6 and 7). Where the equation of state could have several volume roots (a species below
        its critical temperature), the state is solved from a deterministic set of starts and the lowest-Gibbs
        answer is kept, so that a state's answer does not depend on the rest of a batch.

        Returns an :class:`EquilibriumResult` when T, P (or V) and every feed amount are scalars (Python or
        numpy numbers, or unit strings), else a :class:`BatchResult` over their broadcast shape.
        """
        value, fixed_volume = self._check_PV(P, V)
        _check_phases(phases)
        T_si = to_si(T, "temperature", "T")
        value_si = to_si(value, "volume" if fixed_volume else "pressure", "V" if fixed_volume else "P")
        scalar = type(T_si) is float and type(value_si) is float
        if scalar and isinstance(feed, Mapping):
            if not all(type(v) is float for v in feed.values()):  # (plain floats are SI amounts already)
                feed = {name: feed_amount(name, amount) for name, amount in feed.items()}
                scalar = all(type(v) is float for v in feed.values())
        elif scalar:
            scalar = np.ndim(feed) == 1
        if not scalar:
            if initial_guess is not None:
                raise InputError("initial_guess", "is for scalar calls; a batch warm-starts each state from its "
                                                  "neighbour")
            batch = self.equilibrium_batch(feed, T_si, value_si if not fixed_volume else None,
                                           value_si if fixed_volume else None, method=method, scheme=scheme,
                                           tol=tol, max_iterations=max_iterations, phases=phases)
            if raise_on_failure and batch.n_failed:
                first = int(np.flatnonzero(batch.status.ravel() != 0)[0])
                raise NotConvergedError(f"{batch.n_failed} of {len(batch)} states did not converge; the first, state "
                                        f"{first}: {batch.message(first)}", batch)
            return batch
        return self._solve_scalar(feed, T_si, value_si, fixed_volume, method, scheme, tol, max_iterations,
                                  initial_guess, raise_on_failure, phases)

    def feed_vector(self, feed: Mapping[str, Any] | Any) -> np.ndarray:
        """One feed as amounts [mol] in the order of ``species_names``, validated as :meth:`equilibrium` does
        ({name: amount} with numbers or unit strings such as ``"3 kmol"``, or an array of shape (nc,))."""
        if isinstance(feed, Mapping):
            feed = {name: feed_amount(name, amount) for name, amount in feed.items()}
            if not all(type(v) is float for v in feed.values()):
                raise InputError("feed", "feed_vector takes one feed: every amount a number or a unit string")
        return self._feed_vector(feed)[0]

    def _feed_vector(self, feed: Any) -> tuple[np.ndarray, int]:
        """The feed as amounts [mol] in species order and its pattern key (bit i set when species i is fed)."""
        nc = len(self.species_names)
        if isinstance(feed, Mapping):
            if not feed:
                raise InputError("feed", "is empty; give at least one species with a positive amount [mol]")
            amounts = [0.0] * nc
            index = self._index
            key = 0
            for name, amount in feed.items():
                j = index.get(name)
                if j is None:
                    j = self.species_index(name)
                v = float(amount)  # already a float (see equilibrium)
                if not (0.0 <= v < math.inf):
                    raise InputError("feed", f"amount of {name!r} must be finite and >= 0 mol, got {amount!r}")
                amounts[j] += v
                if v > 0.0:
                    key |= 1 << j
            n0 = np.array(amounts)
        else:
            arr = to_si(feed, "amount", "feed")
            if np.shape(arr) != (nc,):
                raise InputError("feed", f"an array feed needs shape ({nc},) in the order {list(self.species_names)}"
                                         f", got shape {np.shape(arr)}")
            if not (np.all(np.isfinite(arr)) and np.all(arr >= 0.0)):
                raise InputError("feed", f"amounts must be finite and >= 0 mol, got {np.asarray(arr).tolist()}")
            n0 = np.array(arr, dtype=float)
            key = sum(1 << j for j, v in enumerate(n0.tolist()) if v > 0.0)
        if key == 0:
            raise InputError("feed", "all amounts are zero; give at least one positive amount [mol]")
        return n0, key

    def _user_ln_k(self, T: np.ndarray) -> np.ndarray:
        """ln K of the user's callable at T (1-D); rows that are not finite are left as NaN for the caller to mark
        (a batch marks those states invalid, naming T; a scalar call raises)."""
        nr = len(self.reactions)
        try:
            values = np.asarray(self._ln_K(T), dtype=float)
        except InputError:
            raise
        except Exception as err:  # the user's callable failed: say so, with its error
            raise InputError("ln_K", f"the ln_K callable failed at T = {T[:3].tolist()}...: {err!r}") from err
        if values.shape == T.shape and nr == 1:
            values = values[:, None]
        if values.shape != (T.size, nr):
            raise InputError("ln_K", f"must return shape (n_T, {nr}) for T of shape ({T.size},), "
                                     f"got {values.shape}")
        return np.ascontiguousarray(values)

    def _solve_scalar(self, feed: Any, T: float, value: float, fixed_volume: bool, method: str, scheme: str,
                      tol: float, max_iterations: int, initial_guess: Any, raise_on_failure: bool,
                      phases: str = "auto") -> EquilibriumResult:
        self._check_T(T)
        if fixed_volume:
            if not (value > 0.0 and math.isfinite(value)):
                raise InputError("V", f"must be finite and > 0 m3, got {value!r}")
        elif not (0.0 < value <= P_MAX):
            raise InputError("P", f"must be finite, > 0 Pa and <= {P_MAX:g} Pa, got {value!r}")
        n0, key = self._feed_vector(feed)
        patterns, pat, pattern = self.compiled.pattern_for(key)  # one snapshot for this solve
        guess = None if initial_guess is None else self._guess(initial_guess, n0, method)
        options = self._opts(method, scheme, tol, max_iterations, fixed_volume, guess is not None)
        ln_k_user = _EMPTY
        if self._ln_K is not None:
            ln_k_user = self._user_ln_k(np.array([T]))[0]
            if not np.all(np.isfinite(ln_k_user)):
                raise InputError("ln_K", f"the ln_K callable returned {ln_k_user.tolist()} at T = {T!r} K: every "
                                         "value must be finite")
        layout = self._layout
        row = np.empty(layout.width)
        ints = np.empty(A.INT_COLUMNS, dtype=np.int64)
        D.solve_one(self.compiled.arrays, patterns, T, value, n0, pat, ln_k_user,
                    _EMPTY if guess is None else guess, options, row, ints)
        result = scalar_result(self._info, layout, row, ints, T, n0, method, scheme, fixed_volume,
                               self._frozen(pattern, method))
        if phases == "auto" and result.status == 0 and not fixed_volume and result._may_split:
            # (without the solver's flag no vapour-liquid split is possible at this T: nothing to test)
            from hipeq.solvers.phase_results import split_unstable

            result = split_unstable(self, result)
        elif phases == "auto" and fixed_volume:
            from hipeq.solvers.vessel_phases import fill_vessels

            result = fill_vessels(self, result, value, method=method, scheme=scheme, tol=tol,
                                  max_iterations=max_iterations)
        if result.status != 0 and raise_on_failure:
            raise NotConvergedError(result.message, result)
        return result

    def _guess(self, initial_guess: Any, n0: np.ndarray, method: str) -> np.ndarray | None:
        if initial_guess is None:
            return None
        if isinstance(initial_guess, EquilibriumResult):
            if initial_guess.species != self.species_names:
                raise InputError("initial_guess", "comes from a result of a different species list")
            amounts = np.array(initial_guess.amounts.array, dtype=float)
        elif isinstance(initial_guess, Mapping):
            amounts = np.zeros(len(self.species_names))
            for name, v in initial_guess.items():
                amounts[self.species_index(name)] = float(to_si(v, "amount", f"initial_guess[{name!r}]"))
        else:
            raise InputError("initial_guess", f"must map species to amounts [mol] or be an EquilibriumResult, "
                                              f"got {initial_guess!r}")
        if not (np.all(np.isfinite(amounts)) and np.all(amounts >= 0.0) and amounts.sum() > 0.0):
            raise InputError("initial_guess", "amounts must be finite, >= 0 mol and not all zero")
        if method == "extent":
            return np.ascontiguousarray(self._nu_pinv.T @ (amounts - n0))
        return amounts

    # ------------------------------------------------------------------------------------------------------
    def equilibrium_batch(self, feed: Mapping[str, Any] | Any, T: Any, P: Any = None, V: Any = None, *,
                          method: str = "extent", scheme: str = "coupled", tol: float = DEFAULT_TOL,
                          max_iterations: int = 100, phases: str = "auto") -> BatchResult:
        """Equilibrium of many states at once in the compiled core; always returns a :class:`BatchResult`.

        T [K], P [Pa] or V [m3] and the feed amounts [mol] (a mapping of scalars or arrays, or an array with
        species along the last axis; numbers or unit strings) are broadcast together. Badly shaped input raises
        InputError; a state with out-of-range values gets status 6 (INVALID_INPUT) instead, and a state that
        fails to converge its own status: a batch never raises for one bad state. Every state gets the answer
        it would get alone (see :meth:`equilibrium`). Other arguments as in :meth:`equilibrium`.
        """
        from hipeq.solvers._batch import solve_batch

        value, fixed_volume = self._check_PV(P, V)
        _check_phases(phases)
        T_si = to_si(T, "temperature", "T")
        value_si = to_si(value, "volume" if fixed_volume else "pressure", "V" if fixed_volume else "P")
        result = solve_batch(self, feed, T_si, value_si, fixed_volume, method, scheme, tol, max_iterations)
        if phases == "auto" and not fixed_volume:
            from hipeq.solvers.phase_results import split_unstable

            result = split_unstable(self, result)
        elif phases == "auto":
            from hipeq.solvers.vessel_phases import fill_vessels

            result = fill_vessels(self, result, value_si, method=method, scheme=scheme, tol=tol,
                                  max_iterations=max_iterations)
        return result

    def mixture_properties(self, amounts: Any, T: Any, P: Any = None, V: Any = None) -> MixtureProperties:
        """Enthalpy, entropy, internal energy and Gibbs energy of a gas mixture of this system's species at T [K]
        and P [Pa] or total volume V [m3], with the system's fugacity model for the residual part:
        H = sum_i n_i H0_i(T) + n h_res, S = sum_i n_i [S0_i(T) - R ln(y_i P/P0)] + n s_res, U = H - P V
        (:mod:`hipeq.solvers.properties`; Smith, Van Ness & Abbott 2005, sec. 4.3 and 6.3; Michelsen & Mollerup
        2007, ch. 2). ``amounts`` [mol]: {name: amount} or an array with species on the last axis (arrays
        broadcast with T and P or V). Enthalpies relative to the elements at 298.15 K; standard state ideal gas
        at 1 bar. Returns a :class:`~hipeq.solvers.properties.MixtureProperties`."""
        from hipeq.solvers.properties import mixture_properties

        if isinstance(amounts, Mapping):
            cols = {self.species_index(k): np.asarray(feed_amount(k, v), dtype=float) for k, v in amounts.items()}
            if not cols:
                raise InputError("amounts", "is empty; give at least one species with a positive amount [mol]")
            shape = np.broadcast_shapes(*(c.shape for c in cols.values()))
            arr = np.zeros(shape + (len(self.species_names),))
            for j, c in cols.items():
                arr[..., j] += c
            amounts = arr
        if T is not None:
            T = to_si(T, "temperature", "T")
        if P is not None:
            P = to_si(P, "pressure", "P")
        if V is not None:
            V = to_si(V, "volume", "V")
        return mixture_properties(self.records, self.model, amounts, T, P, V)

    def adiabatic_equilibrium(self, feed: Mapping[str, Any] | Any, T_in: Any, P: Any, *,
                              T_bounds: tuple[Any, Any] | None = None, method: str = "extent",
                              tol: float = DEFAULT_TOL, raise_on_failure: bool = False
                              ) -> AdiabaticResult | AdiabaticBatchResult:
        """Outlet of an adiabatic reactor at equilibrium: the temperature T at which the equilibrium mixture at
        T and P carries the enthalpy of the feed at T_in and P,

            H(T, P, n_eq(T, P)) = H(T_in, P, n_feed),

        H from :meth:`mixture_properties` (heat of reaction included through the formation enthalpies; real gas
        through the model's residual enthalpy). Bracketed search (:mod:`hipeq.solvers.adiabatic`): the enthalpy
        balance closes to 1e-12 of max(|H_in|, n_feed R T_in), or the temperature to 1e-9 K.

        Args:
            feed: amounts [mol], as in :meth:`equilibrium` (arrays make a batch).
            T_in: inlet temperature [K] (or "450 degC"), within ``T_min``-``T_max``.
            P: pressure [Pa] (or "250 bar"), the same at inlet and outlet.
            T_bounds: (low, high) [K] where the outlet is searched; default (T_min, T_max).
            method, tol: passed to :meth:`equilibrium`.
            raise_on_failure: for a batch, raise NotConvergedError when any state failed (one state always
                raises: NotConvergedError when an equilibrium solve fails, InputError("T_bounds") when no
                temperature within the bounds closes the balance).

        Returns an :class:`~hipeq.solvers.adiabatic.AdiabaticResult` (an EquilibriumResult at the outlet plus
        ``T_in``, ``H_in``, ``temperature_rise``, ``energy_residual``) for scalar input, else an
        :class:`~hipeq.solvers.adiabatic.AdiabaticBatchResult`. Equilibrium is a thermodynamic limit, not a
        design basis; follow local codes and licensed engineering practice.
        """
        from hipeq.solvers.adiabatic import adiabatic_equilibrium

        return adiabatic_equilibrium(self, feed, T_in, P, T_bounds=T_bounds, method=method, tol=tol,
                                     raise_on_failure=raise_on_failure)

    def state_solver(self, method: str = "extent", fixed_volume: bool = False, tol: float = DEFAULT_TOL,
                     max_iterations: int = 100) -> StateSolver:
        """A low-overhead solver for loops in other programs: ``solver(T, P_or_V, feed, y_out, status_out)``
        takes arrays (SI) and fills caller-owned arrays, with the answers and status codes of :meth:`equilibrium`
        and no result objects (see :class:`hipeq.solvers.bound.StateSolver`; cost in docs/performance.md)."""
        from hipeq.solvers.bound import StateSolver

        return StateSolver(self, method, fixed_volume, tol, max_iterations)

    # ------------------------------------------------------------------------------------------------------
    def with_model(self, **model_options: Any) -> ReactionSystem:
        """The same species, reactions, ln K and feed patterns with another fugacity model: keyword arguments of
        the constructor's model options (``eos``, ``kij``, ``quantum_hydrogen``, ``hydrogen_omega``,
        ``volume_translation``, ``pure_eos``); options not given keep their values, except ``kij``, which returns
        to the new model's default when ``eos`` changes and ``kij`` is not given. E.g.
        ``system.with_model(eos="ideal")`` for the ideal-gas estimate of the same system."""
        unknown = sorted(set(model_options) - set(self._model_options))
        if unknown:
            raise InputError("with_model", f"unknown model option(s) {', '.join(unknown)}; allowed: "
                                           f"{', '.join(self._model_options)}")
        options = dict(self._model_options)
        if "eos" in model_options and "kij" not in model_options:
            options["kij"] = None
        options.update(model_options)
        other = ReactionSystem(self.records, list(self.reactions), ln_K=self._ln_K, **options)
        other.compiled.store = self.compiled.store  # patterns do not depend on the model: share them
        return other

    def __reduce__(self) -> tuple[Any, ...]:
        return _rebuild_system, (self.records, tuple(self.reactions), self._model_options, self._ln_K,
                                 self.compiled.store)


def _rebuild_system(records: tuple[Species, ...], reactions: tuple[Reaction, ...], model_options: dict[str, Any],
                    ln_K: Any, store: PatternStore) -> ReactionSystem:
    """Unpickle a :class:`ReactionSystem`: rebuilt from its species records, reactions and model options, with
    the feed patterns it had already analysed."""
    system = ReactionSystem(list(records), list(reactions), ln_K=ln_K, **model_options)
    system.compiled.store = store
    return system


_EMPTY = np.zeros(0)
PHASES = ("auto", "one")


def _check_phases(phases: Any) -> None:
    if phases not in PHASES:
        raise InputError("phases", f"must be one of {', '.join(map(repr, PHASES))}, got {phases!r}")
