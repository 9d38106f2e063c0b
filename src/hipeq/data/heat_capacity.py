"""Ideal-gas heat-capacity correlations with analytic integrals.

Three forms, all frozen and vectorised over temperature (scalar or ndarray):

- :class:`TRCHeatCapacity`: the TRC form (Thermodynamics Research Center, "TRC Thermodynamic Tables -
  Hydrocarbons/Non-hydrocarbons", coefficients as tabulated in ``chemicals.heat_capacity.TRC_gas_data``),
  evaluated with the closed forms :func:`trc_cp`, :func:`trc_integral` and :func:`trc_integral_over_T` of this
  module (plain Python on floats; :mod:`hipeq.data._kernels` compiles the same three functions). They reproduce
  ``chemicals.heat_capacity.TRCCp``, ``TRCCp_integral`` and ``TRCCp_integral_over_T`` operation for operation
  (tests/data/test_heat_capacity.py), so ``chemicals`` is not imported to evaluate a correlation.
- :class:`ConstantHeatCapacity`: a constant, e.g. Cp = 5/2 R for a monatomic ideal gas (translational degrees of
  freedom only; exact until electronic excitation, far above 6000 K for Ar and He).
- :class:`PolynomialHeatCapacity`: Cp = sum_k a_k T^k, for user overrides.

Range policy (the same for every form): temperatures inside ``[T_min, T_max]`` are evaluated silently; outside,
an :class:`~hipeq.errors.InputError` naming ``T`` is raised unless ``extrapolate=True`` is passed, in which case
the correlation is extrapolated with an :class:`~hipeq.errors.OutOfRangeWarning`, but never beyond the hard
range ``[HARD_T_MIN, HARD_T_MAX]`` (10-6000 K, the span of the NIST-JANAF tables), where an InputError is raised.
"""
from __future__ import annotations

import math
import warnings
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any, Protocol, runtime_checkable

import numpy as np
import numpy.typing as npt

from hipeq.errors import InputError, OutOfRangeWarning

from hipeq.constants import R  # molar gas constant [J/(mol K)]
HARD_T_MIN = 10.0  # [K]
HARD_T_MAX = 6000.0  # [K]

ArrayLike = float | npt.ArrayLike


def check_temperature(T: ArrayLike, T_min: float = HARD_T_MIN, T_max: float = HARD_T_MAX,
                      extrapolate: bool = False, what: str = "", field: str = "T") -> np.ndarray:
    """Validate temperatures [K] against a correlation range ``[T_min, T_max]`` [K] and return a float array.

    Raises InputError(field) for non-numeric, non-finite or non-positive values, for values outside
    ``[T_min, T_max]`` when ``extrapolate`` is false, and for values outside ``[HARD_T_MIN, HARD_T_MAX]``
    always; warns with OutOfRangeWarning when extrapolating. ``what`` names the correlation in messages.
    """
    try:
        arr = np.asarray(T, dtype=float)
    except (TypeError, ValueError):
        raise InputError(field, f"must be a number or an array of numbers [K], got {T!r}") from None
    if arr.size == 0:
        raise InputError(field, "is empty; give at least one temperature [K]")
    if not np.all(np.isfinite(arr)) or np.any(arr <= 0.0):
        bad = arr[~(np.isfinite(arr) & (arr > 0.0))].ravel()[0]
        raise InputError(field, f"must be finite and > 0 K, got {bad}")
    lo, hi = float(arr.min()), float(arr.max())
    if lo >= T_min and hi <= T_max:
        return arr
    label = f" of {what}" if what else ""
    outside = lo if lo < T_min else hi
    if not extrapolate:
        raise InputError(field, f"{outside:g} K is outside the range{label} ({T_min:g}-{T_max:g} K); "
                                f"pass extrapolate=True to extrapolate within {HARD_T_MIN:g}-{HARD_T_MAX:g} K")
    if lo < HARD_T_MIN or hi > HARD_T_MAX:
        raise InputError(field, f"{outside:g} K is outside the hard range {HARD_T_MIN:g}-{HARD_T_MAX:g} K")
    warnings.warn(f"T = {outside:g} K extrapolates the heat capacity{label} beyond {T_min:g}-{T_max:g} K",
                  OutOfRangeWarning, stacklevel=3)
    return arr


def _scalar_or_array(values: np.ndarray) -> float | np.ndarray:
    return float(values) if values.ndim == 0 else values


@runtime_checkable
class HeatCapacity(Protocol):
    """What every heat-capacity correlation offers (all temperatures in [K], results per mole)."""

    T_min: float
    T_max: float
    form: str

    def cp(self, T: ArrayLike, extrapolate: bool = False) -> float | np.ndarray: ...

    def integral(self, T1: ArrayLike, T2: ArrayLike, extrapolate: bool = False) -> float | np.ndarray: ...

    def integral_over_T(self, T1: ArrayLike, T2: ArrayLike,
                        extrapolate: bool = False) -> float | np.ndarray: ...


class _RangeMixin:
    T_min: float
    T_max: float
    form: str

    def _check(self, T: ArrayLike, extrapolate: bool) -> np.ndarray:
        return check_temperature(T, self.T_min, self.T_max, extrapolate, what=f"the {self.form} Cp correlation")

    def _validate_range(self) -> None:
        if not (HARD_T_MIN <= self.T_min < self.T_max <= HARD_T_MAX):
            raise InputError("cp", f"needs {HARD_T_MIN:g} K <= T_min < T_max <= {HARD_T_MAX:g} K, "
                                   f"got T_min={self.T_min}, T_max={self.T_max}")


R_TRC = 8.31446261815324  # [J/(mol K)] R as the TRC closed forms use it (CODATA 2018 to double precision)


def trc_cp(T: float, a0: float, a1: float, a2: float, a3: float, a4: float, a5: float, a6: float,
           a7: float) -> float:
    """TRC ideal-gas heat capacity Cp(T) [J/(mol K)] at one temperature T [K] (Thermodynamics Research Center
    1994 correlation; Kabo & Roganov, "Thermodynamics of Organic Compounds in the Gas State", vol. II, 1994):

        Cp/R = a0 + (a1/T^2) exp(-a2/T) + a3 y^2 + (a4 - a5/(T - a7)^2) y^8,
        y = (T - a7)/(T + a6) for T > a7, else y = 0.

    a0 [-], a1 [K^2], a2 [K], a3, a4 [-], a5 [K^2], a6, a7 [K]. At T = a7 (y = 0) the a5 term is dropped.
    Plain float arithmetic (compiled unchanged by :mod:`hipeq.data._kernels`); no range check here.
    """
    if T <= a7:
        y = 0.0
    else:
        y = (T - a7) / (T + a6)
    T_inv = 1.0 / T
    y2 = y * y
    T_m_a7 = T - a7
    if T == a7:
        return R_TRC * (a0 + (a1 * T_inv * T_inv) * math.exp(-a2 * T_inv) + y2 * (a3 + a4 * y2 * y2 * y2))
    return R_TRC * (a0 + (a1 * T_inv * T_inv) * math.exp(-a2 * T_inv)
                    + y2 * (a3 + (a4 - a5 / (T_m_a7 * T_m_a7)) * y2 * y2 * y2))


def trc_integral(T: float, a0: float, a1: float, a2: float, a3: float, a4: float, a5: float, a6: float,
                 a7: float) -> float:
    """Antiderivative H(T) = ∫ Cp dT [J/mol] of :func:`trc_cp` at T [K] (closed form of Kabo & Roganov 1994,
    TRC correlation; integration constant zero, so only differences H(T2) - H(T1) mean anything):

        H/R = a0 T + a1 exp(-a2/T)/a2 + (a6 + a7) [(2 a3 + 8 a4) ln(1 - y) + (a3 (1 + 1/(1 - y))
              + a4 (7 + 1/(1 - y))) y + a4 (3 y^2 + 5/3 y^3 + y^4 + 3/5 y^5 + 1/3 y^6)
              + 1/7 (a4 - a5/(a6 + a7)^2) y^7]      (the bracket is 0 for T <= a7)
    """
    if T <= a7:
        y = 0.0
    else:
        y = (T - a7) / (T + a6)
    y2 = y * y
    y4 = y2 * y2
    if T <= a7:
        h = 0.0
    else:
        first = a6 + a7
        one_m_y = 1.0 - y
        second = (2.0 * a3 + 8.0 * a4) * math.log(one_m_y)
        third = (a3 * (1.0 + 1.0 / one_m_y) + a4 * (7.0 + 1.0 / one_m_y)) * y
        fourth = a4 * (3.0 * y2 + 5.0 / 3.0 * y * y2 + y4 + 0.6 * y4 * y + 1 / 3.0 * y4 * y2)
        fifth = 1 / 7.0 * (a4 - a5 / (first * first)) * y4 * y2 * y
        h = first * (second + third + fourth + fifth)
    return (a0 + a1 * math.exp(-a2 / T) / (a2 * T) + h / T) * R_TRC * T


def trc_integral_over_T(T: float, a0: float, a1: float, a2: float, a3: float, a4: float, a5: float, a6: float,
                        a7: float) -> float:
    """Antiderivative S(T) = ∫ Cp/T dT [J/(mol K)] of :func:`trc_cp` at T [K] (closed form of Kabo & Roganov
    1994, TRC correlation; integration constant zero, so only differences S(T2) - S(T1) mean anything):

        S/R = a0 ln T + a1/a2^2 (1 + a2/T) exp(-a2/T) + s,   with, for T > a7 (s = 0 otherwise),
        s = (a3 + (a4 a7^2 - a5)/a6^2 (a7/a6)^4) (a7/a6)^2 ln z + (a3 + a4) ln((T + a6)/(a6 + a7))
            + sum_(i=1..7) ((a4 a7^2 - a5)/a6^2 (-a6/a7)^i (a7/a6)^6 - a4) y^i / i
            - (a3 (a6 + a7)/a6 + a5 y^6/(7 a7 (a6 + a7))) y,     z = T (a6 + a7)/(a7 (T + a6)).
    """
    if T <= a7:
        y = 0.0
    else:
        y = (T - a7) / (T + a6)
    a6_inv = 1.0 / a6
    x3 = a7 + a6
    z = T * x3 / (a7 * (T + a6))
    if T <= a7:
        s = 0.0
    else:
        a72 = a7 * a7
        a62_inv = a6_inv * a6_inv
        a7_a6 = a7 * a6_inv
        a7_a6_2 = a7_a6 * a7_a6
        a7_a6_4 = a7_a6_2 * a7_a6_2
        x1 = (a4 * a72 - a5) * a62_inv
        first = (a3 + ((a4 * a72 - a5) * a62_inv) * a7_a6_4) * a7_a6_2 * math.log(z)
        second = (a3 + a4) * math.log((T + a6) / x3)
        third = 0.0
        y_pow = 1.0
        a7_a6_pow = a7_a6_2 * a7_a6_4
        na7_a6_inv = -1.0 / a7_a6
        for i in range(1, 8):
            y_pow = y_pow * y
            a7_a6_pow *= na7_a6_inv
            third += (x1 * a7_a6_pow - a4) * y_pow / i
        fourth = -(a3 * a6_inv * x3 + a5 * y_pow / (7.0 * y * a7 * x3)) * y
        s = first + second + third + fourth
    x2 = a2 / T
    return R_TRC * (a0 * math.log(T) + a1 / (a2 * a2) * (1.0 + x2) * math.exp(-x2) + s)


@dataclass(frozen=True)
class TRCHeatCapacity(_RangeMixin):
    """TRC ideal-gas heat capacity (Thermodynamics Research Center 1994; coefficients from ``chemicals``).

    Cp/R = a0 + (a1/T^2) exp(-a2/T) + a3 y^2 + (a4 - a5/(T - a7)^2) y^8,  y = (T - a7)/(T + a6) for T > a7,
    else y = 0. Integrals are the closed forms :func:`trc_integral` and :func:`trc_integral_over_T` (Kabo &
    Roganov 1994; their integration constants cancel in the differences taken here).
    """

    coefficients: tuple[float, float, float, float, float, float, float, float]
    T_min: float
    T_max: float
    form: str = "TRC"

    def __post_init__(self) -> None:
        if len(self.coefficients) != 8 or not all(math.isfinite(c) for c in self.coefficients):
            raise InputError("cp", f"TRC form needs 8 finite coefficients a0..a7, got {self.coefficients!r}")
        if self.coefficients[6] <= 0.0 or self.coefficients[7] <= 0.0:
            raise InputError("cp", "TRC coefficients a6 and a7 must be > 0 K")
        object.__setattr__(self, "coefficients", tuple(float(c) for c in self.coefficients))
        self._validate_range()

    def _map(self, fn: Any, T: np.ndarray) -> np.ndarray:
        a = self.coefficients
        flat = [fn(float(t), *a) for t in T.ravel()]
        return np.asarray(flat, dtype=float).reshape(T.shape)

    def _difference(self, fn: Any, T1: ArrayLike, T2: ArrayLike, extrapolate: bool) -> float | np.ndarray:
        t1, t2 = np.broadcast_arrays(self._check(T1, extrapolate), self._check(T2, extrapolate))
        return _scalar_or_array(self._map(fn, t2) - self._map(fn, t1))

    def cp(self, T: ArrayLike, extrapolate: bool = False) -> float | np.ndarray:
        """Ideal-gas heat capacity Cp(T) [J/(mol K)] at T [K] (:func:`trc_cp`)."""
        return _scalar_or_array(self._map(trc_cp, self._check(T, extrapolate)))

    def integral(self, T1: ArrayLike, T2: ArrayLike, extrapolate: bool = False) -> float | np.ndarray:
        """Enthalpy change ∫_T1^T2 Cp dT [J/mol] between T1 and T2 [K] (broadcast; :func:`trc_integral`)."""
        return self._difference(trc_integral, T1, T2, extrapolate)

    def integral_over_T(self, T1: ArrayLike, T2: ArrayLike, extrapolate: bool = False) -> float | np.ndarray:
        """Entropy change ∫_T1^T2 Cp/T dT [J/(mol K)] between T1 and T2 [K] (broadcast;
        :func:`trc_integral_over_T`)."""
        return self._difference(trc_integral_over_T, T1, T2, extrapolate)


@dataclass(frozen=True)
class PolynomialHeatCapacity(_RangeMixin):
    """Polynomial ideal-gas heat capacity Cp = sum_k a_k T^k [J/(mol K)], T in [K] (user overrides).

    Integrals: ∫Cp dT = sum_k a_k (T2^(k+1) - T1^(k+1))/(k+1);
    ∫Cp/T dT = a_0 ln(T2/T1) + sum_(k>=1) a_k (T2^k - T1^k)/k.
    """

    coefficients: tuple[float, ...]
    T_min: float
    T_max: float
    form: str = "polynomial"

    def __post_init__(self) -> None:
        coeffs = tuple(float(c) for c in self.coefficients)
        if not coeffs or not all(math.isfinite(c) for c in coeffs):
            raise InputError("cp", f"polynomial form needs at least one finite coefficient, got {coeffs!r}")
        object.__setattr__(self, "coefficients", coeffs)
        self._validate_range()
        grid = np.linspace(self.T_min, self.T_max, 201)
        if np.any(np.polynomial.polynomial.polyval(grid, coeffs) <= 0.0):
            raise InputError("cp", f"polynomial Cp must be > 0 over {self.T_min:g}-{self.T_max:g} K")

    def cp(self, T: ArrayLike, extrapolate: bool = False) -> float | np.ndarray:
        """Ideal-gas heat capacity Cp(T) [J/(mol K)] at T [K]."""
        t = self._check(T, extrapolate)
        return _scalar_or_array(np.polynomial.polynomial.polyval(t, self.coefficients))

    def integral(self, T1: ArrayLike, T2: ArrayLike, extrapolate: bool = False) -> float | np.ndarray:
        """Enthalpy change ∫_T1^T2 Cp dT [J/mol] between T1 and T2 [K] (broadcast)."""
        t1, t2 = np.broadcast_arrays(self._check(T1, extrapolate), self._check(T2, extrapolate))
        anti = np.polynomial.polynomial.polyint(self.coefficients)
        pv = np.polynomial.polynomial.polyval
        return _scalar_or_array(pv(t2, anti) - pv(t1, anti))

    def integral_over_T(self, T1: ArrayLike, T2: ArrayLike, extrapolate: bool = False) -> float | np.ndarray:
        """Entropy change ∫_T1^T2 Cp/T dT [J/(mol K)] between T1 and T2 [K] (broadcast)."""
        t1, t2 = np.broadcast_arrays(self._check(T1, extrapolate), self._check(T2, extrapolate))
        rest = self.coefficients[1:]
        total = self.coefficients[0] * np.log(t2 / t1)
        if rest:
            anti = np.polynomial.polynomial.polyint(rest)  # ∫ sum a_k T^(k-1) dT
            pv = np.polynomial.polynomial.polyval
            total = total + pv(t2, anti) - pv(t1, anti)
        return _scalar_or_array(np.asarray(total, dtype=float))


@dataclass(frozen=True)
class ConstantHeatCapacity(_RangeMixin):
    """Constant ideal-gas heat capacity Cp = value [J/(mol K)]; ∫Cp dT = Cp (T2 - T1), ∫Cp/T dT = Cp ln(T2/T1).

    For a monatomic ideal gas Cp = 5/2 R exactly (statistical mechanics of translation, e.g. McQuarrie,
    Statistical Mechanics, 1976, ch. 5); see :func:`monatomic`.
    """

    value: float
    T_min: float = HARD_T_MIN
    T_max: float = HARD_T_MAX
    form: str = "constant"

    def __post_init__(self) -> None:
        if not (math.isfinite(self.value) and self.value > 0.0):
            raise InputError("cp", f"constant Cp must be finite and > 0 J/(mol K), got {self.value}")
        self._validate_range()

    def cp(self, T: ArrayLike, extrapolate: bool = False) -> float | np.ndarray:
        """Ideal-gas heat capacity Cp [J/(mol K)] at T [K]."""
        return _scalar_or_array(np.full_like(self._check(T, extrapolate), self.value))

    def integral(self, T1: ArrayLike, T2: ArrayLike, extrapolate: bool = False) -> float | np.ndarray:
        """Enthalpy change Cp (T2 - T1) [J/mol] between T1 and T2 [K] (broadcast)."""
        return _scalar_or_array(self.value * (self._check(T2, extrapolate) - self._check(T1, extrapolate)))

    def integral_over_T(self, T1: ArrayLike, T2: ArrayLike, extrapolate: bool = False) -> float | np.ndarray:
        """Entropy change Cp ln(T2/T1) [J/(mol K)] between T1 and T2 [K] (broadcast)."""
        return _scalar_or_array(self.value * np.log(self._check(T2, extrapolate) / self._check(T1, extrapolate)))


def monatomic() -> ConstantHeatCapacity:
    """Cp = 5/2 R [J/(mol K)] of a monatomic ideal gas, valid over the hard range 10-6000 K."""
    return ConstantHeatCapacity(2.5 * R, HARD_T_MIN, HARD_T_MAX, form="monatomic")


_CP_KEYS = {"form", "coefficients", "value", "T_min", "T_max"}


def heat_capacity_from_mapping(data: Mapping[str, Any]) -> HeatCapacity:
    """Build a correlation from an override table such as ``{form = "polynomial", coefficients = [a0, a1],
    T_min = 298.15, T_max = 1500}`` (forms: ``polynomial``, ``TRC`` (8 coefficients a0..a7), ``constant``
    (``value`` [J/(mol K)]), ``monatomic``; T_min, T_max [K]). Bad keys or values raise InputError("cp")."""
    if isinstance(data, HeatCapacity):
        return data
    if not isinstance(data, Mapping):
        raise InputError("cp", f"must be a table with a 'form' key, got {data!r}")
    unknown = set(data) - _CP_KEYS
    if unknown:
        raise InputError("cp", f"unknown key(s) {sorted(unknown)}; allowed: {sorted(_CP_KEYS)}")
    form = str(data.get("form", "")).strip()
    try:
        if form == "monatomic":
            return monatomic()
        t_range = float(data["T_min"]), float(data["T_max"])
        if form == "polynomial":
            return PolynomialHeatCapacity(tuple(data["coefficients"]), *t_range)
        if form == "TRC":
            return TRCHeatCapacity(tuple(data["coefficients"]), *t_range)  # type: ignore[arg-type]
        if form == "constant":
            return ConstantHeatCapacity(float(data["value"]), *t_range)
    except KeyError as exc:
        raise InputError("cp", f"form {form!r} needs key {exc.args[0]!r}") from None
    except (TypeError, ValueError) as exc:
        if isinstance(exc, InputError):
            raise
        raise InputError("cp", f"bad value in {dict(data)!r}: {exc}") from None
    raise InputError("cp", f"form must be one of 'polynomial', 'TRC', 'constant', 'monatomic', got {form!r}")
