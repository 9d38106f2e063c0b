"""The ideal gas against real-gas models at one state: :func:`compare` and its :class:`Comparison`.

At equilibrium every independent reaction k satisfies (standard state: the ideal gas at P0 = 1 bar)

    K_k(T) = K_y,k K_phi,k (P/P0)^(sum_i nu_ki),   K_phi,k = prod_i phi_i^nu_ki,   K_y,k = prod_i y_i^nu_ki

(Smith & Missen 1982, "Chemical Reaction Equilibrium Analysis", ch. 7). The ideal gas sets phi_i = 1, so its
error is the fugacity part K_phi that it leaves out. :func:`compare` solves the same feed at the same T and P
(or V) with each model and reports, per model, the key product's mole fraction, its deviation from a reference
model, the yield and conversion, and K_phi; the spread of the credible real-gas models (``BAND_MODELS``) is the
model-uncertainty band; and a verdict says whether the ideal-gas estimate is within a tolerance of the reference.

How well that band covers measured ammonia equilibria: docs/ideal_vs_real.md.

Equilibrium is a thermodynamic limit, not a design basis for pressure equipment; follow local codes and
licensed engineering practice.
"""
from __future__ import annotations

import json
import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from types import MappingProxyType
from typing import Any

import numpy as np

from hipeq.analysis._common import (BAND_MODELS, DEFAULT_MODELS, DEFAULT_REFERENCE, ModelChoice, Tolerance,
                                    key_product, limiting_reactant, model_choice, model_choices, model_systems,
                                    tolerance_from)
from hipeq.errors import InputError
from hipeq.solvers.result import STANDARD_STATE, EquilibriumResult
from hipeq.solvers.system import ReactionSystem
from hipeq.units import to_si

__all__ = ["compare", "Comparison", "CAUTION", "PLAIN_OPTIONS"]

CAUTION = ("Equilibrium is a thermodynamic limit, not a design basis; follow local codes and licensed "
           "practice.")
# Every model of a comparison is its named options applied to these defaults (not to the model the caller's
# system was built with): the label "PR" then means plain Peng-Robinson whatever the system carried.
PLAIN_OPTIONS: Mapping[str, Any] = MappingProxyType({
    "eos": "PR", "kij": None, "quantum_hydrogen": False, "hydrogen_omega": None, "volume_translation": None,
    "pure_eos": None})
IDEAL = ModelChoice("ideal", {"eos": "ideal"})


# ----------------------------------------------------------------------------------------------------------------
# the set-up and the solves shared by compare and ideal_gas_limit (one code path: the same solver calls)
# ----------------------------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class Setup:
    """What a comparison needs before any solve: one system per model, the feed, the key product, the limiting
    reactant, the reference, the internal ideal gas, the band's members and the tolerance."""

    systems: Mapping[str, ReactionSystem]  # the compared models, in order (the reference included)
    ideal_label: str | None  # label of the compared ideal-gas model, None when only computed internally
    ideal_system: ReactionSystem
    reference: str
    band_models: tuple[str, ...]
    n0: np.ndarray
    feed: Mapping[str, float]
    key: str
    limiting: str | None
    key_reaction: int | None  # row of the reaction that forms the key from the limiting reactant
    theoretical_maximum: float  # [mol] of key the limiting reactant can give (nan without one)
    tolerance: Tolerance


def _match(label: str, labels: Iterable[str]) -> str | None:
    for other in labels:
        if other.lower() == label.lower():
            return other
    return None


def prepare(system: ReactionSystem, feed: Any, models: Any = DEFAULT_MODELS, reference: Any = DEFAULT_REFERENCE,
            key: str | None = None, tolerance: float | None = None, relative_tolerance: float | None = None,
            band: Iterable[str] | None = None) -> Setup:
    """Validate the arguments of :func:`compare` / :func:`hipeq.ideal_gas_limit` and build one system per model
    (``system.with_model`` applied to :data:`PLAIN_OPTIONS` and the model's options). InputError names the
    field: system, feed, models, reference, key, band, tolerance, relative_tolerance."""
    if not isinstance(system, ReactionSystem):
        raise InputError("system", f"must be a hipeq.ReactionSystem, got {type(system).__name__}")
    tol = tolerance_from(tolerance, relative_tolerance)
    n0 = system.feed_vector(feed)
    try:
        key_name = key_product(system, n0, key)
    except InputError as err:
        if key is None:
            raise
        raise InputError("key", f"{key!r} is not a species of this system ({', '.join(system.species_names)}): "
                                f"{str(err).split(': ', 1)[-1]}") from None
    choices = list(model_choices(models))
    labels = [c.label for c in choices]
    if isinstance(reference, str) and _match(reference, labels) is not None:
        ref_choice = choices[labels.index(_match(reference, labels))]
    else:
        try:
            ref_choice = model_choice(reference)
        except InputError as err:
            raise InputError("reference", str(err).split(": ", 1)[-1]) from None
        found = _match(ref_choice.label, labels)
        ref_choice = choices[labels.index(found)] if found is not None else ref_choice
    if ref_choice.ideal:
        raise InputError("reference", "must be a real-gas model (the ideal gas is what is judged against it), "
                                      f"e.g. {', '.join(BAND_MODELS)}; got {ref_choice.label!r}")
    base = system.with_model(**PLAIN_OPTIONS)
    systems = model_systems(base, choices)  # InputError naming "models"
    if ref_choice.label not in systems:  # the reference is always compared: appended when not among the models
        try:
            systems.update(model_systems(base, [ref_choice]))
        except InputError as err:
            raise InputError("reference", str(err).split(": ", 1)[-1]) from None
        choices.append(ref_choice)
    ideal_choice = next((c for c in choices if c.ideal), None)
    ideal_system = systems[ideal_choice.label] if ideal_choice else base.with_model(**IDEAL.options)
    labels = [c.label for c in choices]
    if band is None:
        members = [lab for lab in labels if _match(lab, BAND_MODELS) is not None]
        if ref_choice.label not in members:
            members.append(ref_choice.label)
    else:
        if isinstance(band, str):
            band = (band,)
        members = []
        for lab in band:
            found = _match(str(lab), labels) if isinstance(lab, str) else None
            if found is None:
                raise InputError("band", f"{lab!r} is not one of the compared models {labels}")
            if next(c for c in choices if c.label == found).ideal:
                raise InputError("band", "the band spans real-gas models; leave the ideal gas out")
            if found not in members:
                members.append(found)
    limiting = limiting_reactant(system, n0, key_name)
    row, maximum = _key_reaction(system, n0, key_name, limiting)
    names = system.species_names
    return Setup(systems=MappingProxyType(systems), ideal_label=ideal_choice.label if ideal_choice else None,
                 ideal_system=ideal_system, reference=ref_choice.label, band_models=tuple(members), n0=n0,
                 feed=MappingProxyType({names[j]: float(n0[j]) for j in range(len(names)) if n0[j] > 0}),
                 key=key_name, limiting=limiting, key_reaction=row, theoretical_maximum=maximum, tolerance=tol)


def _key_reaction(system: ReactionSystem, n0: np.ndarray, key: str, limiting: str | None) -> tuple[int | None, float]:
    """The reaction that gives the most key product per mole of the limiting reactant L, and that most:
    n_max = n0_L max_k nu_key,k / |nu_L,k| over the reactions k that form the key from L."""
    if limiting is None:
        return None, math.nan
    j_key, j_lim = system.species_index(key), system.species_index(limiting)
    nu = np.asarray(system.nu)
    best, best_ratio = None, 0.0
    for k, row in enumerate(nu):
        if row[j_key] > 0 and row[j_lim] < 0 and row[j_key] / -row[j_lim] > best_ratio:
            best, best_ratio = k, row[j_key] / -row[j_lim]
    return best, float(n0[j_lim] * best_ratio)


def solve(system: ReactionSystem, n0: np.ndarray, T: float, P: float | None, V: float | None) -> EquilibriumResult:
    """One model's answer at one state: the scalar solver call both :func:`compare` and
    :func:`hipeq.ideal_gas_limit` make (so that the limit and a comparison at the same state agree)."""
    return system.equilibrium(n0, T, P=P, V=V)  # type: ignore[return-value]


def off_by(setup: Setup, y_ideal: Any, y_reference: Any) -> Any:
    """|y_ideal - y_reference| minus the allowed deviation (> 0: the ideal gas is off), in mole fraction."""
    return np.abs(np.asarray(y_ideal) - y_reference) - setup.tolerance.limit(y_reference)


# ----------------------------------------------------------------------------------------------------------------
# the comparison
# ----------------------------------------------------------------------------------------------------------------
def tolerance_words(tolerance: Tolerance) -> str:
    """The tolerance in words ("1 mole-percent point", "2 mole-percent points", "5 % of the reference's y")."""
    if tolerance.relative is not None:
        return f"{100 * tolerance.relative:g} % of the reference's mole fraction"
    points = 100 * tolerance.absolute
    return f"{points:g} mole-percent point" + ("" if points == 1 else "s")


def _points(dy: float) -> str:
    return f"{100.0 * dy:.2f}"


def _bar(P: float) -> str:
    return f"{P / 1e5:.4g} bar"


def _number(value: float, fmt: str) -> str:
    return "-" if value is None or not math.isfinite(value) else format(value, fmt)


@dataclass(frozen=True, eq=False, repr=False)
class Comparison:
    """The answer of :func:`compare`. Per-model mappings are keyed by model label, in the order compared; a
    model whose solve failed (status != 0) has NaN in every number and its status and message say why.

    Fields: T [K]; P [Pa] (given, or None for a sealed vessel) and V [m3] (given, or None); feed [mol] (the fed
    species); key (the species reported); limiting (the limiting reactant of the key, or None); key_reaction
    (text of the reaction the yield and the shown K_phi refer to, or None); models (labels, the reference
    included); reference; band_models (labels whose spread is the band); results (label -> the solver's
    :class:`~hipeq.EquilibriumResult`); status (label -> int, 0 = converged); messages (label -> text);
    pressure [Pa] (label -> the answer's pressure: the given P, or a sealed vessel's); y_key [-]; deviation [-]
    (y_key minus the reference's, in mole fraction; 0 for the reference); yields [-] (moles of key formed per
    mole the limiting reactant can give at most: n_max = n0_L max_k nu_key,k/|nu_L,k|, a fraction of the
    theoretical maximum; with several routes to the key it can exceed 1); conversion [-] (of the limiting
    reactant); K_phi [-] (label -> tuple per reaction, in ``reactions``' order); band (lowest, highest y_key of
    the band models that converged; NaN when none did); ideal_y, ideal_deviation (the ideal gas, computed even
    when "ideal" is not among the models); ideal_unsafe (|ideal_deviation| > allowed; None when the ideal gas or
    the reference failed); tolerance (a :class:`~hipeq.analysis._common.Tolerance`); allowed [-] (the largest
    allowed |ideal_deviation| at this state, mole fraction); verdict (one sentence with the numbers);
    standard_state.
    """

    T: float
    P: float | None
    V: float | None
    feed: Mapping[str, float]
    key: str
    limiting: str | None
    key_reaction: str | None
    reactions: tuple[str, ...]
    models: tuple[str, ...]
    reference: str
    band_models: tuple[str, ...]
    results: Mapping[str, EquilibriumResult]
    status: Mapping[str, int]
    messages: Mapping[str, str]
    pressure: Mapping[str, float]
    y_key: Mapping[str, float]
    deviation: Mapping[str, float]
    yields: Mapping[str, float]
    conversion: Mapping[str, float]
    K_phi: Mapping[str, tuple[float, ...]]
    liquid_like: Mapping[str, bool]
    band: tuple[float, float]
    ideal_compared: bool
    ideal_y: float
    ideal_deviation: float
    ideal_status: int
    ideal_unsafe: bool | None
    tolerance: Tolerance
    allowed: float
    verdict: str
    standard_state: str = STANDARD_STATE
    caution: str = CAUTION

    # ------------------------------------------------------------------------------------------------------------
    def to_dict(self) -> dict[str, Any]:
        """Plain Python values, units in the keys (``"T [K]"``); NaN becomes None. Per-model values under
        ``"models"``, keyed by label."""
        def clean(v: Any) -> Any:
            if isinstance(v, float) and not math.isfinite(v):
                return None
            if isinstance(v, (tuple, list)):
                return [clean(x) for x in v]
            return v

        per_model = {}
        for lab in self.models:
            per_model[lab] = {
                "status": int(self.status[lab]), "message": self.messages[lab],
                "P [Pa]": clean(self.pressure[lab]), "y_key [-]": clean(self.y_key[lab]),
                "deviation [-]": clean(self.deviation[lab]), "yield [-]": clean(self.yields[lab]),
                "conversion [-]": clean(self.conversion[lab]), "K_phi [-]": clean(list(self.K_phi[lab])),
                "liquid_like": bool(self.liquid_like[lab]), "eos": self.results[lab].eos}
        return {
            "T [K]": self.T, "P [Pa]": self.P, "V [m3]": self.V, "feed [mol]": dict(self.feed), "key": self.key,
            "limiting": self.limiting, "key_reaction": self.key_reaction, "reactions": list(self.reactions),
            "reference": self.reference, "band_models": list(self.band_models), "models": per_model,
            "band [-]": clean(list(self.band)), "ideal_compared": self.ideal_compared,
            "ideal_y [-]": clean(self.ideal_y), "ideal_deviation [-]": clean(self.ideal_deviation),
            "ideal_status": self.ideal_status, "ideal_unsafe": self.ideal_unsafe,
            "tolerance [-]": self.tolerance.absolute, "relative_tolerance [-]": self.tolerance.relative,
            "allowed [-]": clean(self.allowed), "verdict": self.verdict, "standard_state": self.standard_state,
            "caution": self.caution}

    def to_json(self, **kwargs: Any) -> str:
        """``to_dict()`` as JSON text (keyword arguments go to ``json.dumps``)."""
        return json.dumps(self.to_dict(), **kwargs)

    def __repr__(self) -> str:
        return (f"Comparison(T={self.T:g} K, {self._where()}, key={self.key}, reference={self.reference}, "
                f"ideal_unsafe={self.ideal_unsafe})")

    def _where(self) -> str:
        return _bar(self.P) if self.P is not None else f"sealed vessel V={self.V:.6g} m3"

    def __str__(self) -> str:
        key, ref = self.key, self.reference
        k_text = self.key_reaction or (self.reactions[0] if self.reactions else "")
        k_row = self.reactions.index(k_text) if k_text in self.reactions else 0
        width = max(12, *(len(lab) + (12 if lab == ref else 0) for lab in self.models))
        conv = f"conv {self.limiting}" if self.limiting else "conversion"
        head = (f"{'model':<{width}}  {'status':<10}  {'y ' + key:>9}  {'dev [pts]':>9}  {'yield':>7}  "
                f"{conv:>9}  {'K_phi':>9}  {'P [bar]':>9}")
        lines = [f"Ideal gas against real gas: {key} at {self.T:.6g} K ({self.T - 273.15:.6g} degC), "
                 + (f"{_bar(self.P)}" if self.P is not None else f"sealed vessel of {self.V:.6g} m3"),
                 "feed [mol]: " + ", ".join(f"{n} {v:g}" for n, v in self.feed.items())
                 + (f"; limiting reactant {self.limiting}" if self.limiting else ""),
                 f"K_phi of: {k_text}" if k_text else "",
                 "", head, "-" * len(head)]
        notes = []
        for lab in self.models:
            ok = self.status[lab] == 0
            name = lab + (" (reference)" if lab == ref else "")
            state = "converged" if ok else f"failed ({int(self.status[lab])})"
            liquid = "*" if ok and self.liquid_like[lab] else " "
            kphi = self.K_phi[lab][k_row] if self.K_phi[lab] else math.nan
            lines.append(
                f"{name:<{width}}  {state:<10}  {_number(self.y_key[lab], '.4f'):>9}{liquid}"
                f" {_number(100.0 * self.deviation[lab], '+.2f'):>9}  {_number(self.yields[lab], '.4f'):>7}  "
                f"{_number(self.conversion[lab], '.4f'):>9}  {_number(kphi, '.4g'):>9}  "
                f"{_number(self.pressure[lab] / 1e5, '.5g'):>9}")
            if not ok:
                notes.append(f"  {lab}: {self.messages[lab]}")
            elif self.liquid_like[lab]:
                notes.append(f"  * {lab}: liquid-like root (the one-gas assumption is doubtful)")
        lines.extend(notes)
        lines.append("")
        if not self.ideal_compared:
            state = "converged" if self.ideal_status == 0 else f"failed ({self.ideal_status})"
            lines.append(f"ideal gas (computed for the verdict, not listed): y {key} "
                         f"{_number(self.ideal_y, '.4f')}, {state}")
        lo, hi = self.band
        band = ("no band model converged" if not math.isfinite(lo) else
                f"{lo:.4f} - {hi:.4f} ({_points(hi - lo)} points wide)")
        lines += [f"band over {', '.join(self.band_models) or 'no model'}: {band}",
                  f"tolerance: {tolerance_words(self.tolerance)} (|y_ideal - y_{ref}| <= "
                  f"{_number(self.allowed, '.4g')})",
                  f"verdict: {self.verdict}",
                  "yield: moles of the key formed per mole the limiting reactant can give at most (fraction of "
                  "the theoretical maximum)",
                  f"standard state: {self.standard_state}",
                  f"caution: {self.caution}"]
        return "\n".join(line for line in lines if line is not None)


def compare(system: ReactionSystem, feed: Mapping[str, Any] | Any, T: Any, P: Any = None, V: Any = None, *,
            models: Any = DEFAULT_MODELS, reference: Any = DEFAULT_REFERENCE, key: str | None = None,
            tolerance: float | None = None, relative_tolerance: float | None = None,
            band: Iterable[str] | None = None) -> Comparison:
    """The ideal gas against real-gas models for one feed at one temperature and pressure (or volume).

    Each model solves sum_i nu_ki [g0_i(T)/RT + ln(P/P0) + ln y_i + ln phi_i] = 0 for every reaction k
    (standard state: the ideal gas at P0 = 1 bar; Smith & Missen 1982, ch. 7); the ideal gas has phi_i = 1, so
    its deviation from a real-gas model is what leaving out K_phi = prod_i phi_i^nu_ki does to the composition.

    Args:
        system: the species and reactions (its own model options are not used: each model is
            ``system.with_model`` of :data:`PLAIN_OPTIONS` updated by that model's options).
        feed: amounts [mol] per species ({name: amount}, numbers or unit strings such as ``"3 kmol"``), or an
            array in the order of ``system.species_names``: one feed.
        T: temperature [K] (or ``"450 degC"``), one value.
        P: pressure [Pa] (or ``"300 bar"``), one value; or
        V: the volume [m3] of a sealed vessel (each model then finds its own pressure).
        models: model names of ``hipeq.analysis._common.PRESETS`` (``"ideal"``, ``"PR"``, ``"SRK"``,
            ``"PR78+E-PPR78+Peneloux"``, ``"virial"``, ``"lewis-randall"``, ...), ``(label, options)`` pairs or
            mappings of options. Default: the ideal gas and ``BAND_MODELS``.
        reference: the real-gas model the others are measured against (added to the models when absent).
        key: the species reported (default: the first product of the first reaction that is not fed).
        tolerance: allowed |y_ideal - y_reference| of the key in mole fraction, in (0, 1); default 0.01 (one
            mole-percent point, ``DEFAULT_TOLERANCE``; reasoning in docs/ideal_vs_real.md).
        relative_tolerance: instead, a fraction of the reference's key mole fraction, in (0, 1).
        band: the labels whose spread is the model-uncertainty band; default the compared ``BAND_MODELS`` and the
            reference.

    The ideal gas is always solved (internally when "ideal" is not among ``models``), so ``ideal_unsafe`` and
    the verdict exist for any choice of models. A model whose solve fails (status != 0, e.g. the truncated
    virial beyond its range) is shown with its status and message and used for no number.

    Returns a :class:`Comparison` (``print(comparison)`` shows the table, band, verdict and caution). Raises
    InputError naming the field (system, feed, T, P, V, models, reference, key, band, tolerance,
    relative_tolerance).
    """
    setup = prepare(system, feed, models, reference, key, tolerance, relative_tolerance, band)
    T_si = to_si(T, "temperature", "T")
    if P is not None and V is not None or P is None and V is None:
        raise InputError("P", "give exactly one of P= [Pa] (fixed pressure) or V= [m3] (sealed vessel)")
    P_si = None if P is None else to_si(P, "pressure", "P")
    V_si = None if V is None else to_si(V, "volume", "V")
    for name, value in (("T", T_si), ("P", P_si), ("V", V_si)):
        if value is not None and type(value) is not float:
            raise InputError(name, "compare takes one state (a single value); for a range of states use "
                                   "hipeq.ideal_gas_limit or a map")
    results = {lab: solve(sys_, setup.n0, T_si, P_si, V_si) for lab, sys_ in setup.systems.items()}
    ideal = results[setup.ideal_label] if setup.ideal_label else solve(setup.ideal_system, setup.n0, T_si, P_si,
                                                                      V_si)
    return _build(setup, T_si, P_si, V_si, results, ideal)


def _build(setup: Setup, T: float, P: float | None, V: float | None, results: dict[str, EquilibriumResult],
           ideal: EquilibriumResult) -> Comparison:
    key, ref = setup.key, setup.reference
    nan = math.nan
    y, yields, conversion, K_phi, pressure = {}, {}, {}, {}, {}
    for lab, res in results.items():
        ok = res.status == 0
        pressure[lab] = float(res.P) if ok else nan
        y[lab] = float(res.y[key]) if ok else nan
        K_phi[lab] = tuple(float(v) for v in res.K_phi) if ok else tuple(nan for _ in res.K_phi)
        if ok and setup.limiting is not None:
            formed = float(res.amounts[key]) - float(setup.n0[res.species.index(key)])
            yields[lab] = formed / setup.theoretical_maximum
            conversion[lab] = float(res.conversion[setup.limiting])
        else:
            yields[lab] = conversion[lab] = nan
    y_ref = y[ref]
    deviation = {lab: (v - y_ref) for lab, v in y.items()}
    members = [lab for lab in setup.band_models if math.isfinite(y[lab])]
    band = (min(y[m] for m in members), max(y[m] for m in members)) if members else (nan, nan)
    ideal_ok = ideal.status == 0
    ideal_y = float(ideal.y[key]) if ideal_ok else nan
    ideal_dev = ideal_y - y_ref
    allowed = float(setup.tolerance.limit(y_ref)) if math.isfinite(y_ref) else nan
    unsafe = bool(abs(ideal_dev) > allowed) if math.isfinite(ideal_dev) and math.isfinite(allowed) else None
    failed = [lab for lab, res in results.items() if res.status != 0]
    system = next(iter(results.values()))
    reactions = system.reactions
    comp = Comparison(
        T=T, P=P, V=V, feed=setup.feed, key=key, limiting=setup.limiting,
        key_reaction=None if setup.key_reaction is None else reactions[setup.key_reaction],
        reactions=tuple(reactions), models=tuple(results), reference=ref, band_models=setup.band_models,
        results=MappingProxyType(dict(results)),
        status=MappingProxyType({lab: int(res.status) for lab, res in results.items()}),
        messages=MappingProxyType({lab: res.message for lab, res in results.items()}),
        pressure=MappingProxyType(pressure), y_key=MappingProxyType(y), deviation=MappingProxyType(deviation),
        yields=MappingProxyType(yields), conversion=MappingProxyType(conversion), K_phi=MappingProxyType(K_phi),
        liquid_like=MappingProxyType({lab: bool(res.liquid_like) for lab, res in results.items()}), band=band,
        ideal_compared=setup.ideal_label is not None, ideal_y=ideal_y, ideal_deviation=ideal_dev,
        ideal_status=int(ideal.status), ideal_unsafe=unsafe, tolerance=setup.tolerance, allowed=allowed,
        verdict="")
    object.__setattr__(comp, "verdict", _verdict(comp, ideal, failed))
    return comp


def _verdict(c: Comparison, ideal: EquilibriumResult, failed: list[str]) -> str:
    """One sentence with the numbers (and one more naming the models left out)."""
    key, ref = c.key, c.reference
    where = (f"At {c.T:.6g} K and {_bar(c.P)}" if c.P is not None else
             f"At {c.T:.6g} K in a sealed vessel of {c.V:.6g} m3")
    excluded = ""
    if failed:
        excluded = " Left out (solve failed): " + "; ".join(
            f"{lab} ({c.messages[lab].split('; stopped after')[0]})" for lab in failed) + "."
    if c.status[ref] != 0:
        return (f"{where} the reference {ref} did not converge, so the ideal gas is not judged; use another "
                f"reference.{excluded}")
    if ideal.status != 0:
        return f"{where} the ideal-gas solve failed ({ideal.message}), so it is not judged.{excluded}"
    d = c.ideal_deviation
    side = "below" if d < 0 else "above"
    lo, hi = c.band
    if not math.isfinite(lo):
        span = "no real-gas model of the band converged"
    elif len([m for m in c.band_models if math.isfinite(c.y_key[m])]) == 1:
        span = f"the one real-gas model of the band gives {lo:.4g}"
    else:
        span = f"real-gas models span {lo:.4g}-{hi:.4g}"
    tol = tolerance_words(c.tolerance)
    judged = "not safe" if c.ideal_unsafe else "safe"
    points = abs(100.0 * d)
    gap = f"{points:.1f}" if points >= 0.1 else f"{points:.2g}"
    return (f"{where} the ideal gas gives {c.ideal_y:.4g} {key}, {gap} mole-percent points {side} "
            f"{ref} ({c.y_key[ref]:.4g}); {span}; the ideal-gas estimate is {judged} at a tolerance of {tol}."
            + _liquid_words(c, ideal) + excluded)


def _liquid_words(c: Comparison, ideal: EquilibriumResult) -> str:
    """A sentence when the reference answer holds a liquid: the ideal gas (one gas by definition) cannot show it,
    and in a sealed vessel its pressure differs."""
    reference = c.results[c.reference]
    if reference.status != 0 or reference.phase_count != 2:
        return ""
    liquid = reference.phases[1]
    words = (f" But a liquid forms in the {c.reference} answer ({100.0 * liquid.fraction:.3g} % of the moles), "
             "which the ideal gas cannot show")
    if c.P is None:
        words += f"; in the vessel the ideal gas gives {_bar(ideal.P)} against {_bar(reference.P)}"
    return words + "."
