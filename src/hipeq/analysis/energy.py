"""Energy balances around equilibrium reactors: duties, equilibrium curves, adiabatic lines and staged beds.

Sign convention (every duty here): ``heat_removed`` [J] is the heat taken out of the reacting gas; positive for
an exothermic reactor held at its temperature (ammonia, methanol synthesis), negative for an endothermic one
(steam reforming), which needs that heat supplied. Energy balances (steady flow, no shaft work, kinetic and
potential energy neglected; Smith, Van Ness & Abbott 2005, "Introduction to Chemical Engineering
Thermodynamics", 7th ed., sec. 2.12 and 4.7):

    flow reactor at fixed P:   heat_removed = H_in - H_out
    sealed vessel (fixed V):   heat_removed = U_1 - U_2

with H and U of :meth:`hipeq.ReactionSystem.mixture_properties` (enthalpies relative to the elements at 298.15 K,
so the heat of reaction is included; real gas through the model's residual enthalpy).

An adiabatic bed's gas moves along its *adiabatic line*: the temperature at which the partly converted gas carries
the inlet enthalpy, H(T, P, n(X)) = H_in, against the conversion X. It ends where the line meets the *equilibrium
curve* X_eq(T) at fixed P: that crossing is :meth:`hipeq.ReactionSystem.adiabatic_equilibrium`. Beds in series
with cooling between them (exchangers to given inlet temperatures, or quench with cold feed) step the gas back
from the curve; :func:`staged_beds` lays out the beds and :func:`plot_staged_beds` draws the classic figure.

Only the public solver API is used (ARCHITECTURE.md). Equilibrium is a thermodynamic limit, not a design basis
for pressure equipment; follow local codes and licensed engineering practice.
"""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy.optimize import brentq

from hipeq.analysis._common import key_product, limiting_reactant, model_choice
from hipeq.errors import InputError
from hipeq.solvers.system import ReactionSystem
from hipeq.units import to_si

__all__ = ["Duty", "reactor_duty", "vessel_heat", "EquilibriumCurve", "equilibrium_curve", "AdiabaticLine",
           "adiabatic_line", "line_crossing", "Bed", "StagedBeds", "staged_beds", "plot_staged_beds",
           "RealGasEffect", "real_gas_effect", "CAUTION"]

CAUTION = ("Equilibrium is a thermodynamic limit, not a design basis for pressure equipment; follow local codes "
           "and licensed engineering practice.")
LINE_TOL = 1e-9  # [K] temperature tolerance of a point of an adiabatic line
_LABEL_BOX = {"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.85}


# ----------------------------------------------------------------------------------------------------------------
# duties
@dataclass(frozen=True, eq=False)
class Duty:
    """Heat exchanged by a reactor between two states. ``heat_removed`` [J]: positive when heat leaves the gas
    (module docstring). ``basis``: "enthalpy at fixed pressure" or "internal energy at fixed volume"; ``before`` and
    ``after``: the energy [J] of the two states (H or U); ``T_before``, ``T_after`` [K]; ``outlet``: the equilibrium
    result of the second state."""

    heat_removed: Any
    basis: str
    before: Any
    after: Any
    T_before: Any
    T_after: Any
    outlet: Any

    @property
    def heat_added(self) -> Any:
        """-heat_removed [J]: the heat supplied to the gas."""
        return -self.heat_removed


def reactor_duty(system: ReactionSystem, feed: Mapping[str, Any] | Any, T: Any, P: Any, *,
                 T_in: Any = None) -> Duty:
    """Heat removed [J] from a flow reactor at temperature T [K] and pressure P [Pa] whose outlet is at equilibrium:
    heat_removed = H(T_in, P, n_feed) - H(T, P, n_eq(T, P)), the feed entering at ``T_in`` (default T: the
    isothermal reactor). Positive for an exothermic system (heat must be taken away). Arrays broadcast as in
    :meth:`hipeq.ReactionSystem.equilibrium` (then the fields are arrays)."""
    T_si = to_si(T, "temperature", "T")
    T_in_si = T_si if T_in is None else to_si(T_in, "temperature", "T_in")
    outlet = system.equilibrium(feed, T_si, P)
    n0 = _feed_of(system, feed)
    H_in = np.asarray(system.mixture_properties(n0, T_in_si, P=P).H, dtype=float)
    H_out = np.asarray(outlet.H, dtype=float)
    return Duty(_out(H_in - H_out), "enthalpy at fixed pressure", _out(H_in), _out(H_out), T_in_si, T_si, outlet)


def vessel_heat(system: ReactionSystem, feed: Mapping[str, Any] | Any, V: Any, T_initial: Any,
                T_final: Any = None, *, initial: str = "feed") -> Duty:
    """Heat removed [J] from a sealed vessel of volume V [m3] between two states (no work at fixed volume):
    heat_removed = U_1 - U_2, state 2 the equilibrium at ``T_final`` (default ``T_initial``) in V, state 1 the
    charge at ``T_initial`` in V: the unreacted ``feed`` (``initial="feed"``) or its equilibrium
    (``initial="equilibrium"``, the heat of warming or cooling a vessel kept at equilibrium)."""
    if initial not in ("feed", "equilibrium"):
        raise InputError("initial", f"must be 'feed' or 'equilibrium', got {initial!r}")
    T1 = to_si(T_initial, "temperature", "T_initial")
    T2 = T1 if T_final is None else to_si(T_final, "temperature", "T_final")
    outlet = system.equilibrium(feed, T2, V=V)
    if not np.all(outlet.converged):
        raise InputError("V", f"the sealed-vessel equilibrium did not converge: {_first_message(outlet)}")
    if initial == "feed":
        U1 = np.asarray(system.mixture_properties(_feed_of(system, feed), T1, V=V).U, dtype=float)
    else:
        start = system.equilibrium(feed, T1, V=V)
        U1 = np.asarray(start.U, dtype=float)
    U2 = np.asarray(outlet.U, dtype=float)
    return Duty(_out(U1 - U2), "internal energy at fixed volume", _out(U1), _out(U2), T1, T2, outlet)


def _feed_of(system: ReactionSystem, feed: Any) -> np.ndarray:
    """Feed amounts [mol] with species on the last axis (mapping of numbers or arrays, or an array)."""
    if isinstance(feed, Mapping):
        cols = {system.species_index(k): np.asarray(to_si(v, "amount", "feed"), dtype=float) for k, v in feed.items()}
        shape = np.broadcast_shapes(*(c.shape for c in cols.values())) if cols else ()
        out = np.zeros(shape + (len(system.species_names),))
        for j, c in cols.items():
            out[..., j] += c
        return out
    return np.asarray(to_si(feed, "amount", "feed"), dtype=float)


def _out(value: np.ndarray) -> Any:
    return float(value) if np.ndim(value) == 0 else value


def _first_message(result: Any) -> str:
    if hasattr(result, "messages"):
        bad = np.flatnonzero(~np.asarray(result.converged).ravel())
        return result.message(int(bad[0])) if bad.size else ""
    return result.message


# ----------------------------------------------------------------------------------------------------------------
# conversion, equilibrium curve, adiabatic line
def _progress_species(system: ReactionSystem, n0: np.ndarray, key: str | None,
                      reactant: str | None) -> tuple[str, str]:
    product = key_product(system, n0, key)
    if reactant is None:
        reactant = limiting_reactant(system, n0, product)
        if reactant is None:
            raise InputError("reactant", f"no fed reactant forms {product}; name the reactant with reactant=")
    else:
        reactant = system.species_names[system.species_index(reactant)]
    if n0[system.species_index(reactant)] <= 0.0:
        raise InputError("reactant", f"{reactant} is not in the feed; its conversion is undefined")
    return product, reactant


def _conversion(amounts: np.ndarray, reference: float, j: int) -> np.ndarray:
    return (reference - amounts[..., j]) / reference


@dataclass(frozen=True, eq=False)
class EquilibriumCurve:
    """Equilibrium conversion of ``reactant`` and mole fraction of ``key`` against temperature at pressure ``P``.
    ``T`` [K], ``conversion`` [-], ``y_key`` [-], ``results``: the BatchResult (failed states give NaN)."""

    T: np.ndarray
    P: float
    conversion: np.ndarray
    y_key: np.ndarray
    key: str
    reactant: str
    results: Any = field(repr=False)

    def conversion_at(self, T: Any) -> Any:
        """Conversion interpolated on the curve (cubic in T between the computed points)."""
        from scipy.interpolate import CubicSpline

        ok = np.isfinite(self.conversion)
        return CubicSpline(self.T[ok], self.conversion[ok])(T)


def equilibrium_curve(system: ReactionSystem, feed: Mapping[str, Any] | Any, P: Any, T: Any, *,
                      key: str | None = None, reactant: str | None = None) -> EquilibriumCurve:
    """Equilibrium curve at fixed pressure P [Pa]: at each temperature of ``T`` [K] (a 1-D array), the equilibrium
    conversion X = (n0_r - n_r)/n0_r of ``reactant`` (default: the fed reactant limiting the key product) and the
    mole fraction of ``key`` (default: the first product of the first reaction absent from the feed)."""
    n0 = system.feed_vector(feed)
    product, reac = _progress_species(system, n0, key, reactant)
    T_arr = np.atleast_1d(np.asarray(to_si(T, "temperature", "T"), dtype=float))
    if T_arr.ndim != 1:
        raise InputError("T", f"must be a 1-D array of temperatures [K], got shape {T_arr.shape}")
    P_si = float(to_si(P, "pressure", "P"))
    results = system.equilibrium(np.broadcast_to(n0, T_arr.shape + n0.shape), T_arr, P_si)
    ok = np.asarray(results.converged)
    j = system.species_index(reac)
    conversion = np.where(ok, _conversion(np.asarray(results.amounts.array), n0[j], j), np.nan)
    y_key = np.where(ok, np.asarray(results.y[product]), np.nan)
    return EquilibriumCurve(T_arr, P_si, conversion, y_key, product, reac, results)


@dataclass(frozen=True, eq=False)
class AdiabaticLine:
    """Path of an adiabatic bed: at each point, the amounts ``amounts`` [mol] (species on the last axis), the
    temperature ``T`` [K] at which they carry the inlet enthalpy ``H_in`` [J], the conversion ``conversion`` [-] of
    ``reactant`` (relative to ``reference_amount`` [mol], the fresh feed of that reactant) and ``y_key`` [-].
    ``progress`` runs from 0 at the inlet; 1 is the adiabatic equilibrium outlet ``outlet`` (several reactions: the
    gas is taken to advance along the outlet's extents in proportion; one reaction: the only path). ``system``,
    ``P`` [Pa], ``inlet`` [mol] and ``T_in`` [K] define the line (``line_crossing`` uses them)."""

    progress: np.ndarray
    T: np.ndarray
    conversion: np.ndarray
    y_key: np.ndarray
    amounts: np.ndarray
    H_in: float
    T_in: float
    P: float
    inlet: np.ndarray
    change: np.ndarray
    reactant: str
    key: str
    reference_amount: float
    outlet: Any = field(repr=False)
    system: Any = field(repr=False)

    def at(self, progress: Any) -> tuple[Any, Any]:
        """(T [K], conversion [-]) at any progress (solved, not interpolated)."""
        lam = np.asarray(progress, dtype=float)
        amounts = self.inlet + lam[..., None] * self.change
        T = _line_temperature(self.system, amounts, self.P, self.H_in, np.full(lam.shape, self.T_in))
        j = self.system.species_index(self.reactant)
        return _out(T), _out(_conversion(amounts, self.reference_amount, j))


def _line_temperature(system: ReactionSystem, amounts: np.ndarray, P: float, H_in: float,
                      start: np.ndarray) -> np.ndarray:
    """T [K] with H(T, P, amounts) = H_in at each row of ``amounts`` (fixed composition, H increasing in T):
    Newton with a central-difference heat capacity, safeguarded by bisection on a kept bracket."""
    T = np.array(start, dtype=float).reshape(-1)
    n = amounts.reshape(-1, amounts.shape[-1])
    lo = np.full(T.size, float(system.T_min))
    hi = np.full(T.size, float(system.T_max))
    for _ in range(100):
        H = np.asarray(system.mixture_properties(n, T, P=P).H, dtype=float).reshape(-1)
        f = H - H_in
        lo = np.where(f < 0.0, T, lo)
        hi = np.where(f > 0.0, T, hi)
        d = 1e-3
        Hp = np.asarray(system.mixture_properties(n, np.minimum(T + d, system.T_max), P=P).H).reshape(-1)
        Hm = np.asarray(system.mixture_properties(n, np.maximum(T - d, system.T_min), P=P).H).reshape(-1)
        C = (Hp - Hm) / (np.minimum(T + d, system.T_max) - np.maximum(T - d, system.T_min))
        step = f / C
        T_new = T - step
        outside = ~((T_new > lo) & (T_new < hi)) | ~np.isfinite(T_new)
        T_new = np.where(outside, 0.5 * (lo + hi), T_new)
        if np.all(np.abs(T_new - T) <= LINE_TOL):
            T = T_new
            break
        T = T_new
    if np.any((T <= system.T_min + LINE_TOL) | (T >= system.T_max - LINE_TOL)):
        raise InputError("T_in", f"the adiabatic line leaves the species' heat-capacity range "
                                 f"({system.T_min:g}-{system.T_max:g} K)")
    return T.reshape(amounts.shape[:-1])


def adiabatic_line(system: ReactionSystem, feed: Mapping[str, Any] | Any, T_in: Any, P: Any, *,
                   points: int = 41, extend: float = 1.0, key: str | None = None, reactant: str | None = None,
                   reference_feed: Mapping[str, Any] | Any = None) -> AdiabaticLine:
    """The adiabatic line of a bed fed with ``feed`` at ``T_in`` [K] and ``P`` [Pa]: ``points`` states from the
    inlet (progress 0) to ``extend`` times the way to the adiabatic equilibrium outlet (1; up to where a species
    would run out), each at the temperature where H(T, P, n) = H(T_in, P, n_feed) (module docstring).

    ``reference_feed``: the fresh feed the conversion is counted against (default ``feed``; a later bed of a
    train counts against the train's fresh feed). ``key`` and ``reactant`` as in :func:`equilibrium_curve`.
    """
    n_in = system.feed_vector(feed)
    n_ref = n_in if reference_feed is None else system.feed_vector(reference_feed)
    product, reac = _progress_species(system, n_ref, key, reactant)
    T_si = float(to_si(T_in, "temperature", "T_in"))
    P_si = float(to_si(P, "pressure", "P"))
    if not (isinstance(points, (int, np.integer)) and points >= 2):
        raise InputError("points", f"must be an integer >= 2, got {points!r}")
    if not (isinstance(extend, (int, float)) and 0.0 < extend < 100.0):
        raise InputError("extend", f"must be a number in (0, 100), got {extend!r}")
    outlet = system.adiabatic_equilibrium(n_in, T_si, P_si)
    change = np.asarray(outlet.amounts.array, dtype=float) - n_in
    falling = change < 0.0
    limit = float(np.min(n_in[falling] / -change[falling])) if np.any(falling) else math.inf
    top = min(float(extend), (1.0 - 1e-9) * limit) if extend > 1.0 else float(extend)
    progress = np.linspace(0.0, top, int(points))
    amounts = n_in + progress[:, None] * change
    H_in = float(outlet.H_in)
    T = _line_temperature(system, amounts, P_si, H_in, T_si + progress * (outlet.T - T_si))
    j = system.species_index(reac)
    y_key = amounts[:, system.species_index(product)] / amounts.sum(axis=1)
    return AdiabaticLine(progress, T, _conversion(amounts, n_ref[j], j), y_key, amounts, H_in, T_si, P_si, n_in,
                         change, reac, product, float(n_ref[j]), outlet, system)


def line_crossing(line: AdiabaticLine, *, upper: float | None = None) -> tuple[float, float]:
    """(T [K], conversion [-]) where the adiabatic line meets the equilibrium curve, found on the line itself:
    the progress at which the line's conversion equals the equilibrium conversion at the line's temperature
    (an equilibrium solve of the bed's inlet gas at each trial point; brentq on the progress between 0 and
    ``upper``, default the line's last point). With one reaction this is a construction independent of the
    adiabatic solver, and it must give :meth:`hipeq.ReactionSystem.adiabatic_equilibrium`'s outlet."""
    system, j = line.system, line.system.species_index(line.reactant)

    def gap(lam: float) -> float:
        T, X = line.at(lam)
        result = system.equilibrium(line.inlet, float(T), line.P)
        if not result.converged:
            raise InputError("line", f"equilibrium at T = {T:g} K on the line did not converge: {result.message}")
        return float(X) - float(_conversion(np.asarray(result.amounts.array), line.reference_amount, j))

    top = float(line.progress[-1]) if upper is None else float(upper)
    g0, g1 = gap(0.0), gap(top)
    if g0 * g1 > 0.0:
        raise InputError("upper", f"the line does not reach the equilibrium curve between progress 0 and {top:g}")
    lam = brentq(gap, 0.0, top, xtol=1e-13, rtol=4 * np.finfo(float).eps, maxiter=200)
    T, X = line.at(lam)
    return float(T), float(X)


# ----------------------------------------------------------------------------------------------------------------
# staged beds
@dataclass(frozen=True, eq=False)
class Bed:
    """One adiabatic bed of a train: ``number`` (1, 2, ...), ``T_in``, ``T_out`` [K], ``conversion_in``,
    ``conversion_out`` [-] (of the train's reactant, against the fresh feed so far), ``heat_removed_after`` [J]
    (the cooler after the bed, to the next bed's inlet temperature; 0 after the last bed and with quench),
    ``quench_added`` [mol] (cold feed mixed in before this bed), ``line`` (its :class:`AdiabaticLine`) and
    ``outlet`` (its :class:`~hipeq.solvers.adiabatic.AdiabaticResult`)."""

    number: int
    T_in: float
    T_out: float
    conversion_in: float
    conversion_out: float
    heat_removed_after: float
    quench_added: float
    line: AdiabaticLine = field(repr=False)
    outlet: Any = field(repr=False)


@dataclass(frozen=True, eq=False)
class StagedBeds:
    """Adiabatic beds in series at pressure ``P`` [Pa] with ``cooling`` ("exchanger" or "quench") between them;
    ``beds`` in order, ``curve`` the equilibrium curve of the fresh feed over the train's temperatures."""

    beds: tuple[Bed, ...]
    P: float
    cooling: str
    reactant: str
    key: str
    curve: EquilibriumCurve = field(repr=False)
    eos: str = ""
    quench_temperature: float | None = None

    def table(self) -> list[dict[str, Any]]:
        """One row per bed (SI units; names with their units)."""
        return [{"bed": b.number, "T_in [K]": b.T_in, "T_out [K]": b.T_out,
                 f"conversion of {self.reactant} in [-]": b.conversion_in,
                 f"conversion of {self.reactant} out [-]": b.conversion_out,
                 "heat removed after the bed [J]": b.heat_removed_after, "quench added [mol]": b.quench_added}
                for b in self.beds]

    def to_text(self) -> str:
        """The table as fixed-width text."""
        head = (f"{'bed':>3}  {'T in [K]':>9}  {'T out [K]':>9}  {'X in [%]':>8}  {'X out [%]':>9}  "
                f"{'removed after [kJ]':>18}  {'quench [mol]':>12}")
        lines = [f"Adiabatic beds at {self.P / 1e5:g} bar, {self.eos}; X = conversion of {self.reactant}", head]
        for b in self.beds:
            lines.append(f"{b.number:>3}  {b.T_in:9.2f}  {b.T_out:9.2f}  {100 * b.conversion_in:8.3f}  "
                         f"{100 * b.conversion_out:9.3f}  {b.heat_removed_after / 1e3:18.4f}  {b.quench_added:12.5g}")
        lines.append(CAUTION)
        return "\n".join(lines)

    def figure(self, path: str | None = None, **kwargs: Any) -> Any:
        """:func:`plot_staged_beds` of this train (saved to ``path`` when given)."""
        return plot_staged_beds(self, path=path, **kwargs)


def staged_beds(system: ReactionSystem, feed: Mapping[str, Any] | Any, P: Any, inlet_temperatures: Sequence[Any],
                *, cooling: str = "exchanger", quench_temperature: Any = None, key: str | None = None,
                reactant: str | None = None, curve_points: int = 121) -> StagedBeds:
    """Adiabatic beds in series, each running to its adiabatic equilibrium (:meth:`adiabatic_equilibrium`):

    - ``cooling="exchanger"``: between beds the gas is cooled at fixed composition to the next inlet temperature;
      the cooler removes H(T_out,k) - H(T_in,k+1) of that gas [J].
    - ``cooling="quench"``: between beds cold fresh gas of the feed's composition at ``quench_temperature`` [K] is
      mixed in, as much as brings the mixture to the next inlet temperature (adiabatic mixing:
      H_mix(T_in,k+1) = H_out,k + q h_feed(T_quench)); conversions count against all fresh gas fed so far.

    ``inlet_temperatures`` [K]: one per bed, the first the feed's. P [Pa] is the same in every bed (no pressure
    drop). Raises InputError when an inlet is not below the previous outlet (no cooling possible) or outside the
    data's range.
    """
    if cooling not in ("exchanger", "quench"):
        raise InputError("cooling", f"must be 'exchanger' or 'quench', got {cooling!r}")
    if isinstance(inlet_temperatures, (str, int, float)) or not len(inlet_temperatures):
        raise InputError("inlet_temperatures", "must be a list of bed inlet temperatures [K], one per bed")
    T_ins = [float(to_si(T, "temperature", "inlet_temperatures")) for T in inlet_temperatures]
    P_si = float(to_si(P, "pressure", "P"))
    fresh = system.feed_vector(feed)
    product, reac = _progress_species(system, fresh, key, reactant)
    j = system.species_index(reac)
    T_q = None
    if cooling == "quench":
        if quench_temperature is None:
            raise InputError("quench_temperature", "is needed with cooling='quench' [K]")
        T_q = float(to_si(quench_temperature, "temperature", "quench_temperature"))
    beds: list[Bed] = []
    stream = fresh.copy()  # the gas entering the next bed
    fed = fresh.copy()  # fresh gas fed so far
    quench_added = 0.0
    for k, T_k in enumerate(T_ins):
        line = adiabatic_line(system, stream, T_k, P_si, points=41, extend=1.0, key=product, reactant=reac,
                              reference_feed=fed)
        out = line.outlet
        n_out = np.asarray(out.amounts.array, dtype=float)
        removed = 0.0
        next_q = 0.0
        if k + 1 < len(T_ins):
            T_next = T_ins[k + 1]
            if not T_next < out.T:
                raise InputError("inlet_temperatures", f"bed {k + 2} inlet {T_next:g} K is not below bed {k + 1}'s "
                                                       f"outlet {out.T:.6g} K: no cooling between them")
            if cooling == "exchanger":
                H_cold = float(system.mixture_properties(n_out, T_next, P=P_si).H)
                removed = float(out.H) - H_cold
                stream = n_out
            else:
                assert T_q is not None
                next_q = _quench_amount(system, n_out, float(out.H), fresh, T_q, T_next, P_si)
                stream = n_out + next_q * fresh / fresh.sum()
        X_in = float(_conversion(line.inlet, float(fed[j]), j))
        beds.append(Bed(k + 1, T_k, float(out.T), X_in, float(line.conversion[-1]), removed, quench_added, line, out))
        if cooling == "quench" and k + 1 < len(T_ins):
            fed = fed + next_q * fresh / fresh.sum()
            quench_added = next_q
    lo = min(T_ins) - 40.0
    hi = max(b.T_out for b in beds) + 60.0
    T_curve = np.linspace(max(lo, system.T_min), min(hi, system.T_max), int(curve_points))
    curve = equilibrium_curve(system, fresh, P_si, T_curve, key=product, reactant=reac)
    return StagedBeds(tuple(beds), P_si, cooling, reac, product, curve, str(beds[0].outlet.eos), T_q)


def _quench_amount(system: ReactionSystem, n_hot: np.ndarray, H_hot: float, fresh: np.ndarray, T_q: float,
                   T_mix: float, P: float) -> float:
    """Moles q of cold fresh gas (composition of ``fresh``) at T_q that bring the hot gas to T_mix:
    H(T_mix, P, n_hot + q y_fresh) = H_hot + q h_fresh(T_q, P)."""
    if not T_q < T_mix:
        raise InputError("quench_temperature", f"{T_q:g} K must be below the next bed's inlet {T_mix:g} K")
    y = fresh / fresh.sum()
    h_q = float(system.mixture_properties(y, T_q, P=P).H)

    def gap(q: float) -> float:
        return float(system.mixture_properties(n_hot + q * y, T_mix, P=P).H) - H_hot - q * h_q

    top = n_hot.sum()
    while gap(top) < 0.0:
        top *= 2.0
        if top > 1e6 * n_hot.sum():
            raise InputError("quench_temperature", "no amount of quench gas reaches the next inlet temperature")
    return float(brentq(gap, 0.0, top, xtol=1e-14, rtol=4 * np.finfo(float).eps, maxiter=200))


def plot_staged_beds(train: StagedBeds, path: str | None = None, *, ax: Any = None, title: str | None = None,
                     celsius_axis: bool = True) -> Any:
    """The classic staged-bed figure: equilibrium conversion against temperature, each bed's adiabatic line
    (labelled "Bed k"), and the cooling steps between beds (horizontal at fixed conversion for exchangers; for
    quench, the drop in conversion from dilution with fresh gas). Temperature in K (bottom axis) and degC (top),
    conversion in %. Saves to ``path`` (.png at 200 dpi, or any format matplotlib knows) when given. Returns the
    matplotlib Figure (Agg backend when no backend was chosen)."""
    import matplotlib

    if matplotlib.get_backend().lower() not in ("agg", "pdf", "svg", "ps", "cairo") and path is not None:
        matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    if ax is None:
        fig, ax = plt.subplots(figsize=(8.0, 5.6), layout="constrained")
    else:
        fig = ax.figure
    curve = train.curve
    ax.plot(curve.T, 100 * curve.conversion, color="black", lw=2.0, label=f"equilibrium ({train.eos})")
    colors = plt.rcParams["axes.prop_cycle"].by_key()["color"]
    notes: list[str] = []
    for k, bed in enumerate(train.beds):
        c = colors[k % len(colors)]
        ax.plot(bed.line.T, 100 * bed.line.conversion, color=c, lw=2.2)
        ax.plot([bed.T_in], [100 * bed.conversion_in], "o", color=c, ms=5)
        ax.plot([bed.T_out], [100 * bed.conversion_out], "s", color=c, ms=5)
        at = int(0.45 * (len(bed.line.T) - 1))
        ax.annotate(f"Bed {bed.number}", (bed.line.T[at], 100 * bed.line.conversion[at]), xytext=(-4, 4),
                    textcoords="offset points", ha="right", va="bottom", color=c, fontsize=10.5, fontweight="bold",
                    bbox=_LABEL_BOX, zorder=5)
        if k + 1 < len(train.beds):
            nxt = train.beds[k + 1]
            ax.annotate("", xy=(nxt.T_in, 100 * nxt.conversion_in), xytext=(bed.T_out, 100 * bed.conversion_out),
                        arrowprops=dict(arrowstyle="->", color="0.35", lw=1.3, ls="--"))
            if train.cooling == "exchanger":
                ax.annotate(f"cooler {k + 1}", (0.5 * (bed.T_out + nxt.T_in), 100 * bed.conversion_out),
                            xytext=(0, 4), textcoords="offset points", ha="center", va="bottom", fontsize=8.5,
                            color="0.25", bbox=_LABEL_BOX)
                notes.append(f"cooler {k + 1}: {bed.heat_removed_after / 1e3:.3g} kJ removed")
            else:
                ax.annotate(f"quench {k + 1}", (nxt.T_in, 100 * nxt.conversion_in), xytext=(-8, 0),
                            textcoords="offset points", ha="right", va="center", fontsize=8.5, color="0.25")
                notes.append(f"quench {k + 1}: {nxt.quench_added:.3g} mol fresh gas at {train.quench_temperature:g} K")
    if notes:
        ax.text(0.98, 0.03, "\n".join(notes), transform=ax.transAxes, ha="right", va="bottom", fontsize=8.5,
                color="0.2", bbox={"boxstyle": "round,pad=0.4", "fc": "white", "ec": "0.7"})
    ax.set_xlabel("Temperature [K]")
    ax.set_ylabel(f"Conversion of {train.reactant} [%]")
    ax.set_ylim(bottom=0.0)
    ax.grid(True, alpha=0.3)
    if celsius_axis:
        top = ax.secondary_xaxis("top", functions=(lambda t: t - 273.15, lambda c: c + 273.15))
        top.set_xlabel("Temperature [°C]")
    ax.set_title(title or f"Adiabatic beds with {'inter-bed coolers' if train.cooling == 'exchanger' else 'quench'}"
                          f" at {train.P / 1e5:g} bar")
    ax.plot([], [], "o", color="0.4", label="bed inlet")
    ax.plot([], [], "s", color="0.4", label="bed outlet")
    ax.legend(loc="upper right", fontsize=9)
    fed = float(np.sum(train.beds[0].line.inlet))
    fig.supxlabel(f"Heat and quench for {fed:.4g} mol of fresh feed to bed 1; equilibrium from hipeq "
                  f"({train.eos}).\n{CAUTION}", fontsize=7.5, color="0.3", x=0.01, ha="left", multialignment="left")
    if path is not None:
        fig.savefig(path, dpi=200)
    return fig


# ----------------------------------------------------------------------------------------------------------------
# real gas against ideal gas
@dataclass(frozen=True, eq=False)
class RealGasEffect:
    """How the real gas moves the adiabatic outlet temperature (module docstring of :func:`real_gas_effect`).
    Temperatures [K]; ``difference`` = T_real - T_ideal = ``from_conversion`` + ``from_residual_enthalpy``;
    ``conversion_ideal``, ``conversion_real`` [-]; ``residual_enthalpy_in``, ``residual_enthalpy_out`` [J] (n h_res
    of the feed and of the real outlet); ``explanation`` in words."""

    T_ideal: float
    T_real: float
    difference: float
    from_conversion: float
    from_residual_enthalpy: float
    conversion_ideal: float
    conversion_real: float
    residual_enthalpy_in: float
    residual_enthalpy_out: float
    reactant: str
    model: str
    explanation: str


def real_gas_effect(system: ReactionSystem, feed: Mapping[str, Any] | Any, T_in: Any, P: Any, *,
                    model: Any = "PR", reactant: str | None = None) -> RealGasEffect:
    """Adiabatic outlet temperature with ``model`` (a preset name or options, see
    :func:`hipeq.analysis._common.model_choice`) against the ideal gas, split exactly into two parts:

    - from the conversion: T_A - T_ideal, T_A the temperature at which the *ideal-gas* enthalpy of the real outlet
      composition equals the ideal-gas enthalpy of the feed (the real gas's different equilibrium conversion alone);
    - from the residual enthalpies: T_real - T_A (the departure of the feed's and the outlet's enthalpy from the
      ideal gas: n_in h_res,in - n_out h_res,out shared by the outlet's heat capacity).
    """
    choice = model_choice(model)
    real = system.with_model(**choice.options)
    ideal = system.with_model(eos="ideal")
    n0 = system.feed_vector(feed)
    product, reac = _progress_species(system, n0, None, reactant)
    j = system.species_index(reac)
    T_si = float(to_si(T_in, "temperature", "T_in"))
    P_si = float(to_si(P, "pressure", "P"))
    out_i = ideal.adiabatic_equilibrium(n0, T_si, P_si)
    out_r = real.adiabatic_equilibrium(n0, T_si, P_si)
    n_r = np.asarray(out_r.amounts.array, dtype=float)
    H_in_ideal = float(ideal.mixture_properties(n0, T_si, P=P_si).H)
    T_A = float(_line_temperature(ideal, n_r[None, :], P_si, H_in_ideal, np.array([out_r.T]))[0])
    hres_in = float(real.mixture_properties(n0, T_si, P=P_si).h_res) * float(n0.sum())
    hres_out = float(out_r.h_res) * float(n_r.sum())
    X_i = float(_conversion(np.asarray(out_i.amounts.array), n0[j], j))
    X_r = float(_conversion(n_r, n0[j], j))
    d_conv, d_res = T_A - out_i.T, out_r.T - T_A
    exo = out_i.T > T_si
    words = [f"With {choice.label} the adiabatic outlet is {out_r.T - out_i.T:+.3g} K from the ideal gas's "
             f"({out_r.T:.2f} K against {out_i.T:.2f} K)."]
    words.append(f"The equilibrium conversion of {reac} is {100 * X_r:.3f} % against {100 * X_i:.3f} % (ideal): "
                 f"{'more' if X_r > X_i else 'less'} reaction in a {'exothermic' if exo else 'endothermic'} bed "
                 f"{'releases more' if (X_r > X_i) == exo else 'releases less'} heat"
                 f"{'' if exo else ' (absorbs less)' if X_r < X_i else ' (absorbs more)'}, {d_conv:+.3g} K.")
    words.append(f"The residual enthalpies (feed {hres_in:+.4g} J, outlet {hres_out:+.4g} J) move it by {d_res:+.3g} K:"
                 f" the outlet must carry n_in h_res,in - n_out h_res,out = {hres_in - hres_out:+.4g} J more as "
                 f"ideal-gas enthalpy, so it is {'hotter' if d_res > 0 else 'cooler'}.")
    return RealGasEffect(float(out_i.T), float(out_r.T), float(out_r.T - out_i.T), d_conv, d_res, X_i, X_r,
                         hres_in, hres_out, reac, choice.label, " ".join(words))
