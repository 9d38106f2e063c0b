"""Ideal-gas heat-capacity correlations with analytic integrals.

Three forms, all frozen and vectorised over temperature (scalar or ndarray):

- :class:`TRCHeatCapacity`: the TRC form (Thermodynamics Research Center, "TRC Thermodynamic Tables -
  Hydrocarbons/Non-hydrocarbons", as tabulated in ``chemicals.heat_capacity.TRC_gas_data``), evaluated with
  the analytic functions ``TRCCp``, ``TRCCp_integral`` and ``TRCCp_integral_over_T`` of ``chemicals``.
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

R = 8.314462618  # molar gas constant [J/(mol K)], CODATA 2018 exact value
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


@dataclass(frozen=True)
class TRCHeatCapacity(_RangeMixin):
    """TRC ideal-gas heat capacity (Thermodynamics Research Center 1994, via ``chemicals``).

    Cp/R = a0 + (a1/T^2) exp(-a2/T) + a3 y^2 + (a4 - a5/(T - a7)^2) y^8,  y = (T - a7)/(T + a6) for T > a7,
    else y = 0. Integrals are the closed forms of ``chemicals.heat_capacity.TRCCp_integral`` and
    ``TRCCp_integral_over_T`` (their integration constants cancel in the differences taken here).
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

    def cp(self, T: ArrayLike, extrapolate: bool = False) -> float | np.ndarray:
        """Ideal-gas heat capacity Cp(T) [J/(mol K)] at T [K]."""
        from chemicals.heat_capacity import TRCCp
        return _scalar_or_array(self._map(TRCCp, self._check(T, extrapolate)))

    def integral(self, T1: ArrayLike, T2: ArrayLike, extrapolate: bool = False) -> float | np.ndarray:
        """Enthalpy change ∫_T1^T2 Cp dT [J/mol] between T1 and T2 [K] (broadcast)."""
        from chemicals.heat_capacity import TRCCp_integral
        t1, t2 = np.broadcast_arrays(self._check(T1, extrapolate), self._check(T2, extrapolate))
        return _scalar_or_array(self._map(TRCCp_integral, t2) - self._map(TRCCp_integral, t1))

    def integral_over_T(self, T1: ArrayLike, T2: ArrayLike, extrapolate: bool = False) -> float | np.ndarray:
        """Entropy change ∫_T1^T2 Cp/T dT [J/(mol K)] between T1 and T2 [K] (broadcast)."""
        from chemicals.heat_capacity import TRCCp_integral_over_T
        t1, t2 = np.broadcast_arrays(self._check(T1, extrapolate), self._check(T2, extrapolate))
        return _scalar_or_array(self._map(TRCCp_integral_over_T, t2) - self._map(TRCCp_integral_over_T, t1))


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
