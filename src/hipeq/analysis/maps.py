"""Operating maps: the equilibrium of one feed over a temperature-pressure grid, for several fugacity models.

:func:`operating_map` solves every state of the grid with every model in the compiled batch core (one
``system.with_model(...)`` per model, the grid cut into chunks of ``chunk_states`` states, one batch call per
chunk and model, every core busy; or one dask task per chunk and model with ``client=``) and returns an
:class:`OperatingMap`: the key product's mole fraction per model, its deviation from the reference model, the
spread of the credible real-gas models, and the pressure above which the ideal-gas estimate is off by more than
the tolerance, per temperature. Figures: :mod:`hipeq.analysis.figures`; tables: ``to_csv``, ``to_json``.

Equilibrium is a thermodynamic limit, not a design basis for pressure equipment; follow local codes and licensed
engineering practice.
"""
from __future__ import annotations

import csv
import json
import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from types import MappingProxyType
from typing import Any

import numpy as np
from scipy.optimize import brentq

from hipeq.analysis._common import (BAND_MODELS, DEFAULT_MODELS, DEFAULT_REFERENCE, ModelChoice, Tolerance,
                                    key_product, model_choice, model_choices, model_systems, tolerance_from)
from hipeq.analysis.chunks import (DEFAULT_CHUNK_STATES, _Task, check_chunk_states, check_client, chunk_bounds,
                                   run_tasks, solve_in_chunks)
from hipeq.errors import InputError
from hipeq.solvers.system import ReactionSystem
from hipeq.units import to_si

__all__ = ["operating_map", "OperatingMap", "Span", "grid_values", "solve_in_chunks", "CAUTION"]

CAUTION = ("Equilibrium is a thermodynamic limit, not a design basis for pressure equipment; follow local codes and "
           "licensed engineering practice.")
SPACINGS = ("linear", "geometric")


@dataclass(frozen=True)
class Span:
    """An evenly spaced grid from ``start`` to ``stop`` (both included) with ``num`` points: ``spacing="linear"``
    (equal steps) or ``"geometric"`` (equal ratios, for pressures over decades). Ends are SI numbers or unit
    strings, converted for the axis they are given to: ``T=Span("300 degC", "600 degC", 200)``,
    ``P=Span("1 bar", "1000 bar", 200, "geometric")``."""

    start: Any
    stop: Any
    num: int
    spacing: str = "linear"

    def values(self, dimension: str, field: str) -> np.ndarray:
        """The grid [SI unit of ``dimension``]; InputError naming ``field`` for bad ends, count or spacing."""
        a = to_si(self.start, dimension, f"{field}.start")
        b = to_si(self.stop, dimension, f"{field}.stop")
        if not (isinstance(a, float) and isinstance(b, float)):
            raise InputError(field, "a Span's start and stop are single values (numbers or unit strings)")
        if isinstance(self.num, bool) or not isinstance(self.num, (int, np.integer)) or self.num < 1:
            raise InputError(f"{field}.num", f"must be an integer >= 1 (points of the grid), got {self.num!r}")
        if self.spacing not in SPACINGS:
            raise InputError(f"{field}.spacing", f"must be one of {', '.join(map(repr, SPACINGS))}, "
                                                 f"got {self.spacing!r}")
        if self.spacing == "geometric":
            if not (a > 0.0 and b > 0.0):
                raise InputError(field, f"a geometric span needs start and stop > 0, got {a!r} and {b!r}")
            return np.geomspace(a, b, int(self.num))
        return np.linspace(a, b, int(self.num))


def grid_values(value: Any, dimension: str, field: str) -> np.ndarray:
    """A 1-D, finite, strictly increasing grid [SI] from a :class:`Span`, a number or unit string (one point),
    or a list / array of numbers or unit strings. InputError naming ``field`` otherwise."""
    if isinstance(value, Span):
        grid = value.values(dimension, field)
    else:
        if (isinstance(value, tuple) and len(value) == 3 and isinstance(value[2], (int, np.integer))
                and isinstance(value[0], str)):
            raise InputError(field, f"{value!r} looks like a range; write Span({value[0]!r}, {value[1]!r}, "
                                    f"{value[2]!r}) for an evenly spaced grid (a tuple is a list of grid points)")
        grid = np.atleast_1d(np.asarray(to_si(value, dimension, field), dtype=float))
    if grid.ndim != 1:
        raise InputError(field, f"must be a 1-D grid, got shape {grid.shape}")
    if grid.size == 0:
        raise InputError(field, "is empty; give at least one grid point")
    if not np.all(np.isfinite(grid)):
        raise InputError(field, "every grid point must be finite")
    if grid.size > 1 and not np.all(np.diff(grid) > 0.0):
        k = int(np.flatnonzero(np.diff(grid) <= 0.0)[0])
        raise InputError(field, f"grid points must be strictly increasing (sort them first); {field}[{k + 1}] = "
                                f"{grid[k + 1]!r} follows {field}[{k}] = {grid[k]!r}")
    return grid


def _readonly(array: np.ndarray) -> np.ndarray:
    array.flags.writeable = False
    return array


@dataclass(frozen=True, eq=False)
class OperatingMap:
    """Equilibrium of one feed over a T-P grid for several fugacity models (from :func:`operating_map`).

    Arrays on the grid have shape (nT, nP), temperature along the first axis. A state that did not converge with
    a model (``status[label] != 0``) is NaN in that model's ``y``, ``mole_fractions`` and ``deviation`` (and in
    the band where that model is a member), never a number; ``failures[label]`` counts them and
    ``first_failure[label]`` explains the first.

    Attributes:
        T: temperature grid (nT,) [K]. P: pressure grid (nP,) [Pa].
        species: species names; feed: amounts [mol] per species; key: the key product reported.
        models: model labels in order; model_options: label -> options of ``ReactionSystem.with_model``.
        reference: label of the reference model (``deviation[reference]`` is 0 where it converged).
        y: label -> key-product mole fraction (nT, nP) [-].
        mole_fractions: label -> mole fractions (nT, nP, nc) [-], species along the last axis.
        deviation: label -> y[label] - y[reference] (nT, nP) [-].
        status: label -> hipeq.Status codes (nT, nP), 0 = converged.
        liquid_like: label -> (nT, nP) bool, True where the answer took a liquid-like volume root (a liquid may
            form: the one-gas answer is doubtful there).
        band_models: the credible real-gas models present (BAND_MODELS); band_low, band_high, band_width: their
            smallest and largest key-product mole fraction and the difference (nT, nP) [-], NaN when fewer than
            two are present or one of them failed at that state.
        ideal_model: label of the ideal-gas model (None when absent); ideal_limit_P: per temperature, the
            pressure [Pa] above which |deviation[ideal_model]| exceeds the tolerance (NaN where there is none in
            the grid, ``ideal_limit_notes`` says why).
        tolerance: the :class:`hipeq.analysis._common.Tolerance` used. provenance: versions, model data, solver
            settings and standard state. caution: the design caution.
    """

    T: np.ndarray
    P: np.ndarray
    species: tuple[str, ...]
    feed: Mapping[str, float]
    key: str
    models: tuple[str, ...]
    model_options: Mapping[str, Mapping[str, Any]]
    reference: str
    y: Mapping[str, np.ndarray]
    mole_fractions: Mapping[str, np.ndarray] = field(repr=False)
    deviation: Mapping[str, np.ndarray] = field(repr=False)
    status: Mapping[str, np.ndarray] = field(repr=False)
    failures: Mapping[str, int] = field(repr=False)
    first_failure: Mapping[str, str] = field(repr=False)
    liquid_like: Mapping[str, np.ndarray] = field(repr=False, default_factory=dict)
    band_models: tuple[str, ...] = ()
    band_low: np.ndarray = field(repr=False, default=None)  # type: ignore[assignment]
    band_high: np.ndarray = field(repr=False, default=None)  # type: ignore[assignment]
    band_width: np.ndarray = field(repr=False, default=None)  # type: ignore[assignment]
    ideal_model: str | None = None
    ideal_limit_P: np.ndarray = field(repr=False, default=None)  # type: ignore[assignment]
    ideal_limit_notes: tuple[str, ...] = field(repr=False, default=())
    tolerance: Tolerance = field(default_factory=Tolerance)
    provenance: Mapping[str, Any] = field(repr=False, default_factory=dict)
    caution: str = CAUTION
    systems: Mapping[str, ReactionSystem] = field(repr=False, compare=False, default_factory=dict)

    @property
    def shape(self) -> tuple[int, int]:
        """(nT, nP)."""
        return (self.T.size, self.P.size)

    # -- lines at one temperature ----------------------------------------------------------------------------
    def line(self, T: Any, P: Any = None) -> dict[str, np.ndarray]:
        """Key-product mole fraction [-] per model at temperature ``T`` [K or unit string] over ``P`` [Pa; a grid
        as in :func:`operating_map`; default: 200 points over the map's pressure range, spaced like the map's],
        solved afresh with the map's systems (failed states NaN). Also ``"P"``: the pressures [Pa], and
        ``"band_low"`` / ``"band_high"`` over the band models (NaN without two of them)."""
        t = to_si(T, "temperature", "T")
        if not isinstance(t, float):
            raise InputError("T", f"line() takes one temperature, got {T!r}")
        if P is None:
            p0, p1 = float(self.P[0]), float(self.P[-1])
            pressures = np.geomspace(p0, p1, 200) if _geometric(self.P) else np.linspace(p0, p1, 200)
        else:
            pressures = grid_values(P, "pressure", "P")
        n0 = np.array([self.feed[name] for name in self.species])
        j = self.species.index(self.key)
        out: dict[str, np.ndarray] = {"P": pressures}
        for label in self.models:
            result = self.systems[label].equilibrium_batch(n0, t, pressures)
            out[label] = np.where(np.asarray(result.status) == 0, np.asarray(result.y.array)[:, j], np.nan)
        low, high = _band([out[label] for label in self.band_models])
        out["band_low"], out["band_high"] = low, high
        return out

    # -- figures ---------------------------------------------------------------------------------------------
    def figure(self, kind: str = "map", **options: Any) -> Any:
        """A matplotlib Figure (no display needed): ``kind="map"`` (:func:`hipeq.analysis.figures.map_figure`)
        or ``"yield"`` (:func:`hipeq.analysis.figures.yield_figure`, needs ``T=``); options go to those."""
        from hipeq.analysis import figures

        if kind == "map":
            return figures.map_figure(self, **options)
        if kind == "yield":
            return figures.yield_figure(self, **options)
        raise InputError("kind", f"must be 'map' or 'yield', got {kind!r}")

    def save_figures(self, folder: str | Path, T: Any = None, stem: str = "map") -> list[Path]:
        """Write the map figure, and the yield-against-pressure figure at ``T`` when given, as PNG and SVG into
        ``folder`` (created if needed): ``<stem>.png/.svg`` and ``<stem>_yield.png/.svg``. Returns the paths."""
        from hipeq.analysis import figures

        folder = Path(folder)
        folder.mkdir(parents=True, exist_ok=True)
        paths = figures.save(figures.map_figure(self), folder / stem)
        if T is not None:
            paths += figures.save(figures.yield_figure(self, T=T), folder / f"{stem}_yield")
        return paths

    # -- tables ----------------------------------------------------------------------------------------------
    def columns(self) -> dict[str, np.ndarray]:
        """The long table: one row per (T, P), T slowest; column names carry units (``"T [K]"``,
        ``"y_NH3[PR] [-]"``, ``"deviation y_NH3[ideal] [-]"``, ``"status[PR]"``, ...)."""
        nT, nP = self.shape
        cols: dict[str, np.ndarray] = {"T [K]": np.repeat(self.T, nP), "P [Pa]": np.tile(self.P, nT)}
        k = self.key
        for label in self.models:
            cols[f"y_{k}[{label}] [-]"] = self.y[label].reshape(-1)
        for label in self.models:
            if label != self.reference:
                cols[f"deviation y_{k}[{label}] [-]"] = self.deviation[label].reshape(-1)
        if self.band_models:
            cols[f"band low y_{k} [-]"] = self.band_low.reshape(-1)
            cols[f"band high y_{k} [-]"] = self.band_high.reshape(-1)
        for label in self.models:
            cols[f"status[{label}]"] = self.status[label].reshape(-1)
        return cols

    def header_lines(self) -> list[str]:
        """Comment lines for tables: what, reference, tolerance, standard state, caution."""
        feed = ", ".join(f"{name} {amount:g} mol" for name, amount in self.feed.items() if amount > 0)
        return [f"hipeq {self.provenance.get('hipeq', '')} operating map: equilibrium mole fraction of {self.key}, "
                f"feed {feed}",
                f"reference model {self.reference}; deviation = y[model] - y[{self.reference}]; band over "
                f"{', '.join(self.band_models) or 'none'}; tolerance {self.tolerance.describe()}",
                f"standard state: {self.provenance.get('standard_state', 'ideal gas at 1 bar')}; failed states "
                "are nan",
                self.caution]

    def to_csv(self, path: str | Path) -> Path:
        """Write the long table (:meth:`columns`) as CSV, preceded by ``#`` comment lines (:meth:`header_lines`);
        numbers as Python's shortest round-trip repr, failed states ``nan``. Returns the path."""
        path = Path(path)
        cols = self.columns()
        with path.open("w", newline="") as handle:
            for line in self.header_lines():
                handle.write(f"# {line}\n")
            writer = csv.writer(handle)
            writer.writerow(list(cols))
            arrays = [c.tolist() for c in cols.values()]
            writer.writerows(zip(*(map(repr, a) for a in arrays)))
        return path

    def to_dict(self) -> dict[str, Any]:
        """Plain values with units in the keys (2-D lists nT x nP; failed states None)."""
        k = self.key

        def grid(a: np.ndarray) -> list[Any]:
            return [[None if not math.isfinite(v) else v for v in row] for row in np.asarray(a, float).tolist()]

        out: dict[str, Any] = {
            "T [K]": self.T.tolist(), "P [Pa]": self.P.tolist(), "species": list(self.species),
            "feed [mol]": dict(self.feed), "key": k, "reference": self.reference, "models": list(self.models),
            "model options": {label: dict(opts) for label, opts in self.model_options.items()},
            f"y_{k} [-]": {label: grid(self.y[label]) for label in self.models},
            f"deviation y_{k} [-]": {label: grid(self.deviation[label]) for label in self.models},
            "status": {label: self.status[label].tolist() for label in self.models},
            "failures": dict(self.failures), "first failure": dict(self.first_failure),
            "band models": list(self.band_models),
            f"band low y_{k} [-]": grid(self.band_low), f"band high y_{k} [-]": grid(self.band_high),
            "ideal model": self.ideal_model,
            "ideal-gas limit P [Pa]": [None if not math.isfinite(v) else v for v in self.ideal_limit_P.tolist()],
            "ideal-gas limit notes": list(self.ideal_limit_notes),
            "tolerance": {"absolute [-]": self.tolerance.absolute, "relative [-]": self.tolerance.relative,
                          "text": self.tolerance.describe()},
            "provenance": dict(self.provenance), "caution": self.caution,
        }
        return out

    def to_json(self, path: str | Path | None = None, **kwargs: Any) -> str:
        """The map as JSON (:meth:`to_dict`); written to ``path`` when given. Returns the text."""
        text = json.dumps(self.to_dict(), **({"indent": 1} | kwargs))
        if path is not None:
            Path(path).write_text(text)
        return text


def _geometric(P: np.ndarray) -> bool:
    """True when the grid's points are evenly spaced in ln P and span more than a decade (log axis)."""
    if P.size < 3 or not np.all(P > 0) or P[-1] / P[0] < 10.0:
        return False
    steps = np.diff(np.log(P))
    return bool(np.allclose(steps, steps[0], rtol=1e-6))


def _band(values: list[np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    """Smallest and largest of two or more arrays (NaN where any is NaN, or when fewer than two)."""
    if len(values) < 2:
        shape = np.shape(values[0]) if values else ()
        return np.full(shape, np.nan), np.full(shape, np.nan)
    stack = np.stack(values)
    return stack.min(axis=0), stack.max(axis=0)  # min/max propagate NaN: no band claimed over a failed member


def _reference_label(reference: Any, choices: tuple[ModelChoice, ...]) -> str:
    wanted = model_choice(reference).label if not isinstance(reference, str) else reference.strip()
    for choice in choices:
        if choice.label.lower() == wanted.lower():
            return choice.label
    raise InputError("reference", f"must be one of the models ({', '.join(c.label for c in choices)}), "
                                  f"got {reference!r}")


def operating_map(system: ReactionSystem, feed: Mapping[str, Any] | Any, T: Any, P: Any, *,
                  models: Iterable[Any] = DEFAULT_MODELS, reference: Any = DEFAULT_REFERENCE,
                  key: str | None = None, tolerance: float | None = None, relative_tolerance: float | None = None,
                  client: Any = None, progress: bool | None = None, chunk_states: int = DEFAULT_CHUNK_STATES,
                  method: str = "extent", max_iterations: int = 100) -> OperatingMap:
    """Equilibrium of one ``feed`` over the grid T x P for each model, compared with the reference model.

    Args:
        system: the reaction system (its own fugacity model is replaced by each of ``models``).
        feed: amounts [mol] per species ({name: number or unit string}) or an array in species order.
        T: temperature grid [K]: a :class:`Span` (``Span("300 degC", "600 degC", 200)``), a number or unit
            string (one point), or a list / array of numbers or unit strings; strictly increasing, within the
            system's ``T_min``-``T_max``.
        P: pressure grid [Pa], likewise (``Span("1 bar", "1000 bar", 200, "geometric")``); strictly increasing,
            > 0. States above the solver's pressure limit are reported as failed (status 6), not raised.
        models: model presets or choices (see ``hipeq.analysis._common.PRESETS``); default ideal, PR, SRK and
            PR78 with E-PPR78 k_ij and Peneloux volume translation.
        reference: the model the others are compared with (default PR); must be among ``models``.
        key: the species whose mole fraction is reported (default: the first reaction's first product absent
            from the feed).
        tolerance: allowed |y_ideal - y_reference| of the key product [mole fraction] (default 0.01, one
            mole-percent point); or ``relative_tolerance``: a fraction of the reference's yield. At most one.
        client: a ``dask.distributed.Client`` to solve the chunks on its workers (results bitwise equal to the
            local run with the same ``chunk_states``); None solves here on every core.
        progress: True shows a progress bar, False never, None when the run is expected to take more than
            about 2 s (estimated from the first chunk).
        chunk_states: states per batch call (and per dask task).
        method, max_iterations: as in :meth:`ReactionSystem.equilibrium`.

    Each state solves sum_i nu_ki [g0_i(T)/RT + ln(P/P0) + ln y_i + ln phi_i] = 0 for every independent reaction k
    (P0 = 1 bar, ideal-gas standard state; Smith & Missen 1982, ch. 4), with phi_i = 1 for the ideal gas and from
    the model's equation of state otherwise. The ideal-gas limit at temperature T is the lowest pressure with
    |y_ideal - y_ref| = limit(y_ref): bracketed by the first grid point beyond the tolerance and the valid point
    before it, then found by Brent's method (Brent 1973, ch. 4; ``scipy.optimize.brentq``) on scalar solves.
    """
    if not isinstance(system, ReactionSystem):
        raise InputError("system", f"must be a hipeq.ReactionSystem, got {type(system).__name__}")
    chunk_states = check_chunk_states(chunk_states)
    check_client(client)
    choices = model_choices(models)
    ref = _reference_label(reference, choices)
    tol = tolerance_from(tolerance, relative_tolerance)
    T_grid = grid_values(T, "temperature", "T")
    P_grid = grid_values(P, "pressure", "P")
    if not (system.T_min <= T_grid[0] and T_grid[-1] <= system.T_max):
        raise InputError("T", f"the grid ({T_grid[0]:g}-{T_grid[-1]:g} K) must lie within {system.T_min:g}-"
                              f"{system.T_max:g} K (the heat-capacity ranges of the species)")
    if not P_grid[0] > 0.0:
        raise InputError("P", f"grid points must be > 0 Pa, got {P_grid[0]!r}")
    n0 = system.feed_vector(feed)
    key_name = key_product(system, n0, key)
    j_key = system.species_index(key_name)
    systems = model_systems(system, choices)

    nT, nP = T_grid.size, P_grid.size
    n = nT * nP
    T_flat = np.repeat(T_grid, nP)  # T slowest: flat index = i * nP + j
    P_flat = np.tile(P_grid, nT)
    bounds = chunk_bounds(n, chunk_states)
    tasks = [_Task((c.label, k), c.label, n0, T_flat[a:b], P_flat[a:b]) for c in choices
             for k, (a, b) in enumerate(bounds)]
    answers = run_tasks(systems, tasks, client=client, progress=progress, method=method,
                        max_iterations=max_iterations, description="operating map")

    nc = len(system.species_names)
    y: dict[str, np.ndarray] = {}
    fractions: dict[str, np.ndarray] = {}
    status: dict[str, np.ndarray] = {}
    liquid: dict[str, np.ndarray] = {}
    failures: dict[str, int] = {}
    first: dict[str, str] = {}
    model_provenance: dict[str, Any] = {}
    for choice in choices:
        label = choice.label
        parts = [answers[(label, k)] for k in range(len(bounds))]
        codes = np.concatenate([p.status for p in parts]).reshape(nT, nP)
        values = np.concatenate([p.y for p in parts]).reshape(nT, nP, nc).copy()
        values[codes != 0] = np.nan
        fractions[label] = _readonly(values)
        y[label] = _readonly(values[:, :, j_key].copy())
        status[label] = _readonly(codes)
        liquid[label] = _readonly(np.concatenate([p.liquid_like for p in parts]).reshape(nT, nP) & (codes == 0))
        failures[label] = int(np.count_nonzero(codes))
        first[label] = ""
        for (a, _), part in zip(bounds, parts):
            if part.messages:
                i = min(part.messages)
                flat = a + i
                first[label] = (f"T = {T_flat[flat]:.6g} K, P = {P_flat[flat]:.6g} Pa: {part.messages[i]}")
                break
        model_provenance[label] = {"options": _plain(choice.options), **parts[0].provenance}
    deviation = {label: _readonly(y[label] - y[ref]) for label in y}
    band_models = tuple(label for label in BAND_MODELS if label in y)
    if len(band_models) >= 2:
        low, high = _band([y[label] for label in band_models])
    else:
        low, high = np.full((nT, nP), np.nan), np.full((nT, nP), np.nan)
    ideal = next((c.label for c in choices if c.ideal), None)
    limit, notes = _ideal_limits(systems, ideal, ref, n0, j_key, T_grid, P_grid, y, tol, method, max_iterations)

    from hipeq import __version__

    provenance = {"hipeq": __version__, "species": list(system.species_names),
                  "reactions": [str(r) for r in system.reactions], "models": model_provenance,
                  "standard_state": next(iter(model_provenance.values()))["standard_state"],
                  "method": method, "max_iterations": max_iterations, "chunk_states": chunk_states,
                  "solved on": "dask cluster" if client is not None else "this machine",
                  "ideal-gas limit": "Brent's method on scalar solves, bracketed by the grid"}
    return OperatingMap(
        T=_readonly(T_grid), P=_readonly(P_grid), species=tuple(system.species_names),
        feed=MappingProxyType({name: float(v) for name, v in zip(system.species_names, n0)}), key=key_name,
        models=tuple(c.label for c in choices),
        model_options=MappingProxyType({c.label: MappingProxyType(dict(c.options)) for c in choices}),
        reference=ref, y=MappingProxyType(y), mole_fractions=MappingProxyType(fractions),
        deviation=MappingProxyType(deviation), status=MappingProxyType(status),
        liquid_like=MappingProxyType(liquid),
        failures=MappingProxyType(failures), first_failure=MappingProxyType(first), band_models=band_models,
        band_low=_readonly(low), band_high=_readonly(high), band_width=_readonly(high - low), ideal_model=ideal,
        ideal_limit_P=_readonly(limit), ideal_limit_notes=tuple(notes), tolerance=tol,
        provenance=MappingProxyType(provenance), systems=MappingProxyType(dict(systems)))


def _plain(value: Any) -> Any:
    """Model options as JSON-friendly values."""
    if isinstance(value, Mapping):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (str, int, float, bool)) or value is None:
        return value
    return repr(value)


class _Failed(Exception):
    pass


def _ideal_limits(systems: Mapping[str, ReactionSystem], ideal: str | None, ref: str, n0: np.ndarray, j_key: int,
                  T: np.ndarray, P: np.ndarray, y: Mapping[str, np.ndarray], tol: Tolerance, method: str,
                  max_iterations: int) -> tuple[np.ndarray, list[str]]:
    """Per temperature: the pressure [Pa] where |y_ideal - y_ref| - limit(y_ref) changes sign first (NaN and a
    note where the grid has no such change)."""
    limit = np.full(T.size, np.nan)
    if ideal is None:
        return limit, ["no ideal-gas model among the models"] * T.size
    if ideal == ref:
        return limit, ["the reference model is the ideal gas"] * T.size
    notes = []

    def excess(t: float, p: float) -> float:
        ri = systems[ideal].equilibrium(n0, t, p, method=method, max_iterations=max_iterations)
        rr = systems[ref].equilibrium(n0, t, p, method=method, max_iterations=max_iterations)
        if ri.status != 0 or rr.status != 0:
            raise _Failed(ri.message if ri.status != 0 else rr.message)
        yr = float(rr.y.array[j_key])
        return abs(float(ri.y.array[j_key]) - yr) - float(tol.limit(yr))

    for i, t in enumerate(T.tolist()):
        f = np.abs(y[ideal][i] - y[ref][i]) - tol.limit(y[ref][i])
        valid = np.flatnonzero(np.isfinite(f))
        if valid.size == 0:
            notes.append("no converged state at this temperature")
            continue
        beyond = valid[f[valid] > 0.0]
        if beyond.size == 0:
            notes.append(f"within the tolerance up to the highest pressure of the grid ({P[valid[-1]]:.6g} Pa)")
            continue
        hi = int(beyond[0])
        k = int(np.searchsorted(valid, hi))
        if k == 0:
            notes.append(f"beyond the tolerance already at the lowest pressure of the grid ({P[hi]:.6g} Pa)")
            continue
        lo = int(valid[k - 1])
        # first estimate: linear in ln P between the bracketing grid points
        w = f[lo] / (f[lo] - f[hi])
        estimate = math.exp(math.log(P[lo]) + w * (math.log(P[hi]) - math.log(P[lo])))
        try:
            f_lo, f_hi = excess(t, float(P[lo])), excess(t, float(P[hi]))
            if f_lo <= 0.0 < f_hi:
                limit[i] = brentq(lambda p: excess(t, p), float(P[lo]), float(P[hi]), xtol=1e-9 * float(P[lo]),
                                  rtol=1e-10)
                notes.append("")
            else:
                limit[i] = estimate
                notes.append("interpolated between grid points (scalar solves did not bracket the crossing)")
        except _Failed as err:
            limit[i] = estimate
            notes.append(f"interpolated between grid points (a scalar solve failed: {err})")
    return limit, notes
