"""The pressure above which the ideal-gas estimate is off: :func:`ideal_gas_limit` and its :class:`IdealGasLimit`.

For a feed at temperature T, the deviation of the ideal gas from a real-gas reference in the key product's mole
fraction, d(P) = y_ideal(T, P) - y_reference(T, P), is zero in the limit P -> 0 (phi_i -> 1) and grows as the
fugacity part K_phi = prod_i phi_i^nu_i departs from 1 (Smith & Missen 1982, "Chemical Reaction Equilibrium
Analysis", ch. 7). The limit is the root of

    g(u) = |d(e^u)| - allowed(e^u),    u = ln P,

with allowed = the absolute tolerance, or the relative tolerance times y_reference. A coarse log-spaced batch
(8 pressures per decade, solved in the compiled core) only finds the first sign change of g; the root inside
that bracket is found by Brent's method (Brent 1973, "Algorithms for Minimization without Derivatives", ch. 4;
scipy.optimize.brentq) on ln P, with each g evaluated by the same scalar solver calls as :func:`hipeq.compare`.

Equilibrium is a thermodynamic limit, not a design basis for pressure equipment; follow local codes and
licensed engineering practice.
"""
from __future__ import annotations

import json
import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy.optimize import brentq

from hipeq.analysis._common import DEFAULT_REFERENCE, Tolerance
from hipeq.analysis.compare import CAUTION, Setup, off_by, prepare, solve, tolerance_words
from hipeq.errors import InputError
from hipeq.models.inputs import P_MAX
from hipeq.solvers.result import STANDARD_STATE
from hipeq.solvers.system import ReactionSystem
from hipeq.units import to_si

__all__ = ["ideal_gas_limit", "IdealGasLimit", "POINTS_PER_DECADE", "XTOL_LN_P"]

POINTS_PER_DECADE = 8  # of the coarse batch that finds the bracket
XTOL_LN_P = 1e-10  # brentq's tolerance on ln P: the limit is found to a relative 1e-10 in P


@dataclass(frozen=True, eq=False, repr=False)
class IdealGasLimit:
    """The answer of :func:`ideal_gas_limit`, one entry per temperature.

    T [K] and P_limit [Pa] are arrays of the shape of the T given (0-d for one temperature); P_limit is the
    lowest pressure in ``P_range`` at which |y_ideal - y_reference| of the key reaches the allowed deviation, NaN
    where there is none: ``reason`` (an array of text, "" where a limit was found) says why (the ideal gas stays
    within the tolerance over the whole range, is already off at its low end, or a solve failed). Also:
    tolerance, reference, key, feed [mol], P_range [Pa], xtol_ln_P (brentq's tolerance on ln P), standard_state.
    """

    T: np.ndarray
    P_limit: np.ndarray
    reason: np.ndarray
    tolerance: Tolerance
    reference: str
    key: str
    feed: Mapping[str, float]
    P_range: tuple[float, float]
    xtol_ln_P: float = XTOL_LN_P
    standard_state: str = STANDARD_STATE
    caution: str = CAUTION

    def to_dict(self) -> dict[str, Any]:
        """Plain Python values, units in the keys; NaN becomes None."""
        return {"T [K]": np.ravel(self.T).tolist(),
                "P_limit [Pa]": [None if not math.isfinite(p) else p for p in np.ravel(self.P_limit).tolist()],
                "reason": np.ravel(self.reason).tolist(), "shape": list(np.shape(self.T)),
                "tolerance [-]": self.tolerance.absolute, "relative_tolerance [-]": self.tolerance.relative,
                "reference": self.reference, "key": self.key, "feed [mol]": dict(self.feed),
                "P_range [Pa]": list(self.P_range), "xtol_ln_P [-]": self.xtol_ln_P,
                "standard_state": self.standard_state, "caution": self.caution}

    def to_json(self, **kwargs: Any) -> str:
        """``to_dict()`` as JSON text (keyword arguments go to ``json.dumps``)."""
        return json.dumps(self.to_dict(), **kwargs)

    def __repr__(self) -> str:
        return (f"IdealGasLimit({np.size(self.T)} temperatures, key={self.key}, reference={self.reference}, "
                f"{np.count_nonzero(np.isfinite(self.P_limit))} limits found)")

    def __str__(self) -> str:
        head = f"{'T [K]':>9}  {'T [degC]':>9}  {'P_limit [bar]':>13}  note"
        lines = [f"Pressure above which the ideal gas is off by more than {tolerance_words(self.tolerance)} of "
                 f"{self.key} (against {self.reference})",
                 "feed [mol]: " + ", ".join(f"{n} {v:g}" for n, v in self.feed.items())
                 + f"; searched {self.P_range[0] / 1e5:g}-{self.P_range[1] / 1e5:g} bar", "", head, "-" * len(head)]
        for T, P, why in zip(np.ravel(self.T), np.ravel(self.P_limit), np.ravel(self.reason)):
            shown = f"{P / 1e5:.4f}" if math.isfinite(P) else "-"
            lines.append(f"{T:9.2f}  {T - 273.15:9.2f}  {shown:>13}  {why}".rstrip())
        lines += ["", f"standard state: {self.standard_state}", f"caution: {self.caution}"]
        return "\n".join(lines)


def _P_range(P_range: Any) -> tuple[float, float]:
    if isinstance(P_range, (str, bytes)) or not hasattr(P_range, "__len__") or len(P_range) != 2:
        raise InputError("P_range", f"must be two pressures (low, high) [Pa] or unit strings, got {P_range!r}")
    lo, hi = (to_si(v, "pressure", "P_range") for v in P_range)
    if type(lo) is not float or type(hi) is not float or not (0.0 < lo < hi <= P_MAX):
        raise InputError("P_range", f"must be two pressures with 0 < low < high <= {P_MAX:g} Pa, got {P_range!r}")
    return lo, hi


class _SolveFailed(Exception):
    def __init__(self, text: str) -> None:
        super().__init__(text)
        self.text = text


def _points(dy: float) -> str:
    return f"{100.0 * dy:.2f} mole-percent points"


def ideal_gas_limit(system: ReactionSystem, feed: Mapping[str, Any] | Any, T: Any, *,
                    tolerance: float | None = None, relative_tolerance: float | None = None,
                    reference: Any = DEFAULT_REFERENCE, key: str | None = None,
                    P_range: tuple[Any, Any] = (1e5, 1e8)) -> IdealGasLimit:
    """For each temperature, the pressure above which the ideal-gas equilibrium is off by more than the tolerance.

    Solves g(ln P) = |y_ideal - y_reference| - allowed = 0 for the key product (see the module docstring): a
    coarse log-spaced batch over ``P_range`` brackets the first sign change, then scipy.optimize.brentq (Brent
    1973) finds the root in ln P to ``XTOL_LN_P`` with the scalar solves that :func:`hipeq.compare` makes, so a
    comparison just below the limit finds the ideal gas safe and one just above finds it unsafe.

    Args:
        system: the species and reactions (each model is built as in :func:`hipeq.compare`).
        feed: one feed, amounts [mol] per species ({name: amount} or an array in species order).
        T: temperature [K] or unit string; one value or an array (any shape; the answer has that shape).
        tolerance: allowed |y_ideal - y_reference| in mole fraction, in (0, 1); default 0.01.
        relative_tolerance: instead, a fraction of y_reference, in (0, 1).
        reference: the real-gas model (default "PR").
        key: the species judged (default as in :func:`hipeq.compare`).
        P_range: (low, high) pressures [Pa] or unit strings searched; default 1 bar to 1000 bar.

    Where the first crossing lies between two grid pressures that both fall on the same side (two crossings
    closer than 1/8 decade), it is missed; deviations that shrink again at higher pressure (both models near
    complete conversion) are allowed for: the limit is the first crossing.

    Returns an :class:`IdealGasLimit` (NaN and a reason where the ideal gas is within the tolerance over the whole
    range, already off at its low end, or where a solve failed). Raises InputError naming the field.
    """
    setup = prepare(system, feed, models=(reference,), reference=reference, key=key, tolerance=tolerance,
                    relative_tolerance=relative_tolerance, band=())
    lo, hi = _P_range(P_range)
    T_si = np.asarray(to_si(T, "temperature", "T"), dtype=float)
    if not np.all(np.isfinite(T_si)) or np.any(T_si < system.T_min) or np.any(T_si > system.T_max):
        raise InputError("T", f"every temperature must be within {system.T_min:g}-{system.T_max:g} K (the "
                              f"heat-capacity ranges of the species), got {T!r}")
    flat = T_si.ravel()
    n = max(2, int(math.ceil(POINTS_PER_DECADE * math.log10(hi / lo))) + 1)
    grid = np.geomspace(lo, hi, n)
    ideal_sys, ref_sys = setup.ideal_system, setup.systems[setup.reference]
    j = system.species_names.index(setup.key)
    batch_i = ideal_sys.equilibrium(setup.n0, flat[:, None], grid[None, :])
    batch_r = ref_sys.equilibrium(setup.n0, flat[:, None], grid[None, :])
    y_i, y_r = np.asarray(batch_i.y.array)[..., j], np.asarray(batch_r.y.array)[..., j]
    ok_i, ok_r = np.asarray(batch_i.status) == 0, np.asarray(batch_r.status) == 0
    P_limit = np.full(flat.shape, math.nan)
    reasons = []
    for t in range(flat.size):
        g = np.where(ok_i[t] & ok_r[t], off_by(setup, y_i[t], y_r[t]), math.nan)
        bad = np.flatnonzero(~(ok_i[t] & ok_r[t]))
        over = np.flatnonzero(g > 0.0)
        first_bad = int(bad[0]) if bad.size else n
        if over.size and over[0] == 0:
            reasons.append(f"already off at {lo / 1e5:g} bar (|deviation| {_points(abs(y_i[t, 0] - y_r[t, 0]))})")
            continue
        if first_bad < (over[0] if over.size else n):
            which, res = ("ideal", batch_i) if not ok_i[t, first_bad] else (setup.reference, batch_r)
            flat_index = t * n + first_bad
            reasons.append(f"{which} failed at {grid[first_bad] / 1e5:.4g} bar before any crossing: "
                           f"{res.message(flat_index).split('; stopped after')[0]}")
            continue
        if not over.size:
            worst = int(np.nanargmax(np.abs(y_i[t] - y_r[t])))
            reasons.append(f"within the tolerance up to {hi / 1e5:g} bar (largest |deviation| "
                           f"{_points(abs(y_i[t, worst] - y_r[t, worst]))} at {grid[worst] / 1e5:.4g} bar)")
            continue
        k = int(over[0])
        try:
            P_limit[t] = _root(setup, ideal_sys, ref_sys, float(flat[t]), grid[k - 1], grid[k])
            reasons.append("")
        except _SolveFailed as err:
            reasons.append(err.text)
    shape = T_si.shape
    T_out, P_out = flat.reshape(shape).copy(), P_limit.reshape(shape)
    reason = np.array(reasons, dtype=str).reshape(shape)
    for arr in (T_out, P_out, reason):
        arr.flags.writeable = False
    return IdealGasLimit(T=T_out, P_limit=P_out, reason=reason, tolerance=setup.tolerance,
                         reference=setup.reference, key=setup.key, feed=setup.feed, P_range=(lo, hi))


def _root(setup: Setup, ideal_sys: ReactionSystem, ref_sys: ReactionSystem, T: float, P_a: float, P_b: float) -> float:
    """brentq on u = ln P in [ln P_a, ln P_b] of g(u) = |y_ideal - y_reference| - allowed (scalar solves)."""
    key = setup.key

    def g(u: float) -> float:
        P = math.exp(u)
        res_i = solve(ideal_sys, setup.n0, T, P, None)
        res_r = solve(ref_sys, setup.n0, T, P, None)
        for label, res in (("ideal", res_i), (setup.reference, res_r)):
            if res.status != 0:
                raise _SolveFailed(f"{label} failed at {P / 1e5:.4g} bar during the root search: "
                                   f"{res.message.split('; stopped after')[0]}")
        return float(off_by(setup, res_i.y[key], res_r.y[key]))

    try:
        u = brentq(g, math.log(P_a), math.log(P_b), xtol=XTOL_LN_P, rtol=4.0 * np.finfo(float).eps,
                   maxiter=200)
    except ValueError as err:  # the scalar solves disagree with the batch on the bracket's signs
        raise _SolveFailed(f"no sign change between {P_a / 1e5:.4g} and {P_b / 1e5:.4g} bar in the scalar "
                           f"solves ({err})") from None
    return math.exp(u)
