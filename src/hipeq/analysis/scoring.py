"""Score models against measured equilibria: :func:`score_models` and its :class:`Scores`.

A *model* here is an equation of state with its options (kij set, volume translation, hydrogen treatment; the
options of :class:`~hipeq.ReactionSystem`) **and** its source of K (``K_source``: the bundled thermochemistry, a
published correlation such as ``"graaf-1986"``, or species data from another table such as ``{"Hf": "JANAF"}``;
see :func:`hipeq.k_sources`). Each data point is solved with each model (one batch call per model and data set)
at the measured T and P (or V) and the measured feed; the error is

    e = 100 (x_model - x_measured)   [percentage points: mole-percent points for y, percent points for conversion]

and per model, overall and per pressure band (``P`` in a band ``(P_lo, P_hi]``, or ``P <= P_hi`` when
``cumulative``):

    bias = mean(e),  MAE = mean(|e|),  RMS = sqrt(mean(e^2)),  max = max(|e|)

over the points that converged (failed points are counted, not scored). Models are ranked by RMS over all points
(ties by max). Standard state: ideal gas at 1 bar. Equilibrium is a thermodynamic limit, not a design basis for
pressure equipment; follow local codes and licensed engineering practice.
"""
from __future__ import annotations

import csv
import json
import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from types import MappingProxyType
from typing import Any

import numpy as np

from hipeq.analysis._common import DEFAULT_MODELS, ModelChoice, model_choice
from hipeq.data.ksources import k_source
from hipeq.data.measurements import Dataset, load_dataset
from hipeq.errors import InputError
from hipeq.solvers.result import STANDARD_STATE
from hipeq.solvers.system import ReactionSystem
from hipeq.units import to_si

__all__ = ["score_models", "Scores", "ScoredModel", "DEFAULT_BAND_EDGES", "CAUTION"]

CAUTION = ("Equilibrium is a thermodynamic limit, not a design basis for pressure equipment; follow local codes and "
           "licensed engineering practice.")
BAR = 1e5
# Default band edges [Pa]: placed between the pressures measurements are usually taken at (10, 30, 50, 100, 300,
# 600, 1000 in bar or atm), so that a level in either unit falls in one band
DEFAULT_BAND_EDGES: tuple[float, ...] = tuple(e * BAR for e in (20, 70, 200, 450, 800, 1500, 5000))
_MODEL_KEYS = ("eos", "kij", "quantum_hydrogen", "hydrogen_omega", "volume_translation", "pure_eos", "K_source")


@dataclass(frozen=True)
class ScoredModel:
    """A model as scored: ``label``, the ReactionSystem ``options`` (eos, kij, ...) and ``K_source`` (None: the
    bundled thermochemistry), and what the solver reported about it: ``eos``, ``K_source_text``."""

    label: str
    options: Mapping[str, Any]
    K_source: Any = None
    eos: str = ""
    K_source_text: str = ""

    def describe(self) -> str:
        """One line: options and K source."""
        opts = ", ".join(f"{k}={v}" for k, v in self.options.items() if v not in (None, False))
        src = self.K_source if isinstance(self.K_source, str) else (
            ", ".join(f"{k}={v}" for k, v in self.K_source.items()) if self.K_source else "bundled")
        return f"{opts or 'eos=PR'}; K: {src}"


def _scored_model(spec: Any) -> ScoredModel:
    """A ScoredModel from a preset or equation-of-state name, a ``(label, options)`` pair, a mapping of options
    (``K_source`` among them) or a ModelChoice."""
    if isinstance(spec, ScoredModel):
        return spec
    if isinstance(spec, Mapping) and "K_source" in spec:
        options = dict(spec)
        src = options.get("K_source")
        base = model_choice({k: v for k, v in options.items() if k != "K_source"} or {"eos": "PR"}).label
        name = src if isinstance(src, str) else ", ".join(f"{k}={v}" for k, v in dict(src or {}).items())
        choice = ModelChoice(f"{base} [K: {name or 'bundled'}]", options)
    else:
        choice = model_choice(spec)
    options = dict(choice.options)
    unknown = sorted(set(options) - set(_MODEL_KEYS))
    if unknown:
        raise InputError("models", f"model {choice.label!r}: unknown option(s) {', '.join(unknown)}; allowed: "
                                   f"{', '.join(_MODEL_KEYS)}")
    src = options.pop("K_source", None)
    if src is not None and not (isinstance(src, str) and src.strip().lower() == "bundled"):
        k_source(src)  # fail early on an unknown name
    else:
        src = None
    return ScoredModel(choice.label, MappingProxyType(options), src)


def _models(models: Any) -> tuple[ScoredModel, ...]:
    if isinstance(models, (str, ModelChoice, ScoredModel, Mapping)) or (
            isinstance(models, tuple) and len(models) == 2 and isinstance(models[0], str)
            and isinstance(models[1], Mapping)):
        models = (models,)
    out = tuple(_scored_model(m) for m in models)
    if not out:
        raise InputError("models", "give at least one model")
    labels = [m.label for m in out]
    if len(set(labels)) != len(labels):
        raise InputError("models", f"each model label may appear once; got {labels}")
    return out


def _datasets(data: Any) -> tuple[Dataset, ...]:
    if isinstance(data, (str, Path, Dataset)):
        data = (data,)
    out = tuple(load_dataset(d) for d in data)
    if not out:
        raise InputError("data", "give at least one data set (a bundled name, a file path or a Dataset)")
    return out


@dataclass(frozen=True)
class Stats:
    """Error statistics [percentage points] of one model over a set of points: ``n`` scored, ``failed`` (no
    converged answer), ``bias``, ``mae``, ``rms``, ``max`` (largest |error|) and ``worst`` (its point index)."""

    n: int
    failed: int
    bias: float
    mae: float
    rms: float
    max: float
    worst: int

    @classmethod
    def of(cls, errors: np.ndarray, index: np.ndarray) -> Stats:
        """Statistics of ``errors`` (NaN = failed) at the point indices ``index``."""
        e = errors[index]
        ok = np.isfinite(e)
        if not ok.any():
            return cls(0, int(e.size), math.nan, math.nan, math.nan, math.nan, -1)
        good = e[ok]
        k = int(np.argmax(np.abs(good)))
        return cls(int(good.size), int(e.size - good.size), float(good.mean()), float(np.abs(good).mean()),
                   float(np.sqrt(np.mean(good**2))), float(np.abs(good[k])), int(index[ok][k]))


@dataclass(frozen=True)
class Scores:
    """What :func:`score_models` found. Point arrays (one entry per data point and measured quantity):
    ``dataset``, ``line`` (file line), ``source``, ``note``, ``from_memory``, ``T`` [K], ``P`` [Pa] (for a point
    given by V, the first model's equilibrium P), ``V`` [m3] (NaN when P was given), ``quantity`` (``"y NH3"``,
    ``"conversion CO"``), ``measured`` [-], ``uncertainty`` [-] (NaN when not stated), and per model label
    ``predicted`` [-], ``errors`` [percentage points, NaN where the solve failed], ``status``. ``models``,
    ``datasets`` (name -> citation), ``bands`` (label -> (low, high] in Pa), ``summary`` (label -> band ->
    :class:`Stats`, band ``"all"`` for every point), ``ranking`` (best first)."""

    models: tuple[ScoredModel, ...]
    datasets: Mapping[str, str]
    dataset: np.ndarray
    line: np.ndarray
    source: np.ndarray
    note: np.ndarray
    from_memory: np.ndarray
    T: np.ndarray
    P: np.ndarray
    V: np.ndarray
    quantity: np.ndarray
    measured: np.ndarray
    uncertainty: np.ndarray
    predicted: Mapping[str, np.ndarray]
    errors: Mapping[str, np.ndarray]
    status: Mapping[str, np.ndarray]
    bands: Mapping[str, tuple[float, float]]
    cumulative: bool
    summary: Mapping[str, Mapping[str, Stats]]
    ranking: tuple[str, ...]
    standard_state: str = STANDARD_STATE
    caution: str = CAUTION
    dataset_meta: Mapping[str, Mapping[str, str]] = field(default_factory=dict)

    def __len__(self) -> int:
        return int(self.T.size)

    @property
    def labels(self) -> tuple[str, ...]:
        """Model labels in the order given."""
        return tuple(m.label for m in self.models)

    def worst(self, n: int = 5, model: str | None = None) -> list[dict[str, Any]]:
        """The ``n`` points with the largest |error|, of one model or (None) of all models together, as rows
        (model, dataset, line, T [K], P [Pa], quantity, measured [-], predicted [-], error [points], note)."""
        rows = []
        for label in ([model] if model else self.labels):
            e = self.errors[label]
            for k in np.flatnonzero(np.isfinite(e)):
                rows.append({"model": label, "dataset": str(self.dataset[k]), "line": int(self.line[k]),
                             "T": float(self.T[k]), "P": float(self.P[k]), "quantity": str(self.quantity[k]),
                             "measured": float(self.measured[k]), "predicted": float(self.predicted[label][k]),
                             "error": float(e[k]), "note": str(self.note[k])})
        rows.sort(key=lambda r: -abs(r["error"]))
        return rows[:n]

    # ------------------------------------------------------------------------------------------------------
    def header_lines(self) -> list[str]:
        """Comment lines for tables: data sets, models with their K sources, standard state, caution."""
        lines = [f"data set {name}: {cite}" for name, cite in self.datasets.items()]
        lines += [f"model {m.label}: {m.describe()} -- K from {m.K_source_text}" for m in self.models]
        lines += ["error = model minus measurement, percentage points (mole-percent points for y)",
                  f"standard state: {self.standard_state}", self.caution]
        return lines

    def to_csv(self, path: str | Path) -> Path:
        """The point table as CSV (``#`` comment lines first): one row per point and quantity, with measured and
        per-model predicted values [same unit: fraction], errors [points] and status."""
        path = Path(path)
        with path.open("w", newline="", encoding="utf-8") as fh:
            for line in self.header_lines():
                fh.write(f"# {line}\n")
            w = csv.writer(fh)
            head = ["dataset", "line", "source", "note", "T [K]", "P [Pa]", "V [m3]", "quantity", "measured [-]",
                    "uncertainty [-]"]
            for label in self.labels:
                head += [f"{label} predicted [-]", f"{label} error [points]", f"{label} status"]
            w.writerow(head)
            for k in range(len(self)):
                row = [self.dataset[k], self.line[k], self.source[k], self.note[k], f"{self.T[k]:.6g}",
                       f"{self.P[k]:.8g}", "" if np.isnan(self.V[k]) else f"{self.V[k]:.8g}", self.quantity[k],
                       f"{self.measured[k]:.8g}", "" if np.isnan(self.uncertainty[k]) else f"{self.uncertainty[k]:.6g}"]
                for label in self.labels:
                    p, e = self.predicted[label][k], self.errors[label][k]
                    row += ["" if np.isnan(p) else f"{p:.8g}", "" if np.isnan(e) else f"{e:.6f}",
                            int(self.status[label][k])]
                w.writerow(row)
        return path

    def summary_csv(self, path: str | Path) -> Path:
        """The statistics as CSV: one row per model and band [points]."""
        path = Path(path)
        with path.open("w", newline="", encoding="utf-8") as fh:
            for line in self.header_lines():
                fh.write(f"# {line}\n")
            w = csv.writer(fh)
            w.writerow(["model", "rank", "band", "P low [Pa]", "P high [Pa]", "points", "failed", "bias [points]",
                        "MAE [points]", "RMS [points]", "max abs [points]"])
            for label in self.labels:
                for band, st in self.summary[label].items():
                    lo, hi = self.bands.get(band, (0.0, math.inf))
                    w.writerow([label, self.ranking.index(label) + 1, band, f"{lo:g}", f"{hi:g}", st.n, st.failed,
                                f"{st.bias:.4f}", f"{st.mae:.4f}", f"{st.rms:.4f}", f"{st.max:.4f}"])
        return path

    def to_dict(self) -> dict[str, Any]:
        """Everything as plain JSON-ready values (NaN as None)."""
        def clean(x: Any) -> Any:
            if isinstance(x, float):
                return None if not math.isfinite(x) else x
            return x

        def arr(a: np.ndarray) -> list[Any]:
            return [clean(v) for v in a.tolist()]

        return {
            "standard_state": self.standard_state, "caution": self.caution,
            "error_unit": "percentage points (mole-percent points for y)",
            "datasets": dict(self.datasets), "dataset_meta": {k: dict(v) for k, v in self.dataset_meta.items()},
            "models": [{"label": m.label, "options": {k: (v if isinstance(v, (str, int, float, bool, type(None)))
                                                            else str(v)) for k, v in m.options.items()},
                        "K_source": m.K_source if m.K_source is None or isinstance(m.K_source, str)
                        else dict(m.K_source), "K_source_text": m.K_source_text, "eos": m.eos}
                       for m in self.models],
            "bands": {k: [v[0], clean(v[1])] for k, v in self.bands.items()}, "cumulative": self.cumulative,
            "ranking": list(self.ranking),
            "summary": {label: {band: {k: clean(v) for k, v in vars(st).items()} for band, st in bands.items()}
                        for label, bands in self.summary.items()},
            "worst": self.worst(10),
            "points": {"dataset": self.dataset.tolist(), "line": self.line.tolist(), "source": self.source.tolist(),
                       "note": self.note.tolist(), "from_memory": self.from_memory.tolist(), "T": arr(self.T),
                       "P": arr(self.P), "V": arr(self.V), "quantity": self.quantity.tolist(),
                       "measured": arr(self.measured), "uncertainty": arr(self.uncertainty),
                       "predicted": {k: arr(v) for k, v in self.predicted.items()},
                       "errors": {k: arr(v) for k, v in self.errors.items()},
                       "status": {k: v.tolist() for k, v in self.status.items()}},
        }

    def to_json(self, path: str | Path | None = None, **kwargs: Any) -> str:
        """JSON of :meth:`to_dict`; written to ``path`` when given."""
        text = json.dumps(self.to_dict(), indent=kwargs.pop("indent", 1), **kwargs)
        if path is not None:
            Path(path).write_text(text, encoding="utf-8")
        return text

    def markdown(self, digits: int = 2) -> str:
        """The summary as a markdown table: one row per model in rank order, RMS / max per band and overall."""
        bands = [b for b in self.bands if b != "all" and any(self.summary[m][b].n for m in self.labels)]
        head = ["rank", "model", "K source", "points", "bias", "MAE", "RMS", "max"] + [f"max {b}" for b in bands]
        lines = ["| " + " | ".join(head) + " |", "|" + "---|" * len(head)]
        for rank, label in enumerate(self.ranking, 1):
            m = next(x for x in self.models if x.label == label)
            st = self.summary[label]["all"]
            src = m.K_source if isinstance(m.K_source, str) else (
                ", ".join(f"{k}={v}" for k, v in m.K_source.items()) if m.K_source else "bundled")
            cells = [str(rank), label, src, f"{st.n}" + (f" ({st.failed} failed)" if st.failed else "")]
            cells += [f"{v:+.{digits}f}" if k == "bias" else f"{v:.{digits}f}"
                      for k, v in (("bias", st.bias), ("mae", st.mae), ("rms", st.rms), ("max", st.max))]
            cells += [f"{self.summary[label][b].max:.{digits}f}" if self.summary[label][b].n else "-" for b in bands]
            lines.append("| " + " | ".join(cells) + " |")
        return "\n".join(lines)

    def points_markdown(self, digits: int = 2, pressure_unit: str = "bar") -> str:
        """The point table as markdown: T [degC], P, quantity, measured [%], then each model's error [points]."""
        scale = {"bar": BAR, "atm": 101325.0, "MPa": 1e6}[pressure_unit]
        head = ["data set", "line", "T [degC]", f"P [{pressure_unit}]", "quantity", "measured [%]", *self.labels]
        lines = ["| " + " | ".join(head) + " |", "|" + "---|" * len(head)]
        for k in range(len(self)):
            flag = " *" if self.from_memory[k] else ""
            cells = [f"{self.dataset[k]}{flag}", str(self.line[k]), f"{self.T[k] - 273.15:.0f}",
                     f"{self.P[k] / scale:.4g}", str(self.quantity[k]), f"{100 * self.measured[k]:.2f}"]
            cells += ["failed" if np.isnan(self.errors[m][k]) else f"{self.errors[m][k]:+.{digits}f}"
                      for m in self.labels]
            lines.append("| " + " | ".join(cells) + " |")
        return "\n".join(lines)


def _band_edges(bands: Any) -> np.ndarray:
    if bands is None:
        return np.asarray(DEFAULT_BAND_EDGES)
    values = np.atleast_1d(np.asarray(to_si(list(bands) if not isinstance(bands, str) else [bands], "pressure",
                                            "bands"), dtype=float))
    if values.size == 0 or np.any(~(values > 0)) or np.any(np.diff(values) <= 0):
        raise InputError("bands", f"must be increasing pressures > 0 (Pa or unit strings), got {bands!r}")
    return values


def _band_label(lo: float, hi: float, cumulative: bool, unit: str, scale: float) -> str:
    if cumulative or lo == 0.0:
        return f"<= {hi / scale:g} {unit}"
    return f"{lo / scale:g}-{hi / scale:g} {unit}"


def score_models(data: str | Path | Dataset | Sequence[str | Path | Dataset], models: Any = DEFAULT_MODELS, *,
                 bands: Any = None, cumulative: bool = False, band_unit: str = "bar",
                 method: str = "extent") -> Scores:
    """Score equilibrium models against measured equilibria.

    Args:
        data: a bundled data set's name (:func:`hipeq.datasets`), a data file's path (layout: docs/scoring.md,
            :mod:`hipeq.data.measurements`), a :class:`~hipeq.data.measurements.Dataset`, or a list of them.
        models: model names (presets such as ``"PR"``, ``"ideal"``, ``"PR78+E-PPR78+Peneloux"``, or any
            equation-of-state name), ``(label, options)`` pairs or option mappings; options are those of
            :class:`~hipeq.ReactionSystem` (``eos``, ``kij``, ``quantum_hydrogen``, ``hydrogen_omega``,
            ``volume_translation``, ``pure_eos``) and ``K_source`` (see :func:`hipeq.k_sources`), e.g.
            ``("SRK, Graaf K", {"eos": "SRK", "K_source": "graaf-1986"})``.
        bands: upper edges of the pressure bands [Pa or unit strings]; default :data:`DEFAULT_BAND_EDGES`.
        cumulative: bands as ``P <= edge`` instead of ``(previous edge, edge]``.
        band_unit: unit of the band labels (``"bar"``, ``"atm"``, ``"MPa"``).
        method: solver method (``"extent"`` or ``"gibbs"``).

    Returns :class:`Scores` (statistics in the module docstring). Raises InputError naming the data file, line and
    column of a bad value, or the model option that is wrong.
    """
    sets = _datasets(data)
    choices = _models(models)
    edges = _band_edges(bands)
    if band_unit not in ("bar", "atm", "MPa"):
        raise InputError("band_unit", f"must be bar, atm or MPa, got {band_unit!r}")
    scale = {"bar": BAR, "atm": 101325.0, "MPa": 1e6}[band_unit]
    columns: dict[str, list[Any]] = {k: [] for k in ("dataset", "line", "source", "note", "from_memory", "T", "P",
                                                      "V", "quantity", "measured", "uncertainty")}
    predicted: dict[str, list[np.ndarray]] = {m.label: [] for m in choices}
    status: dict[str, list[np.ndarray]] = {m.label: [] for m in choices}
    texts: dict[str, tuple[str, str]] = {}
    for ds in sets:
        species = list(ds.species)
        feed = np.zeros((len(ds), len(species)))
        for j, name in enumerate(ds.feed_species):
            feed[:, species.index(name)] = ds.feed[:, j]
        quantities = list(ds.measured)
        first_P = None
        for choice in choices:
            try:
                system = ReactionSystem(species, list(ds.reactions) if ds.reactions else None,
                                        K_source=choice.K_source, **choice.options)
            except InputError as err:
                raise InputError("models", f"model {choice.label!r} on data set {ds.name!r}: {err}") from None
            kwargs = {"P": ds.P} if ds.P is not None else {"V": ds.V}
            res = system.equilibrium(feed=feed, T=ds.T, method=method, **kwargs)
            ok = np.asarray(res.converged, dtype=bool)
            texts.setdefault(choice.label, (str(res.eos), str(res.K_source)))
            if first_P is None:
                first_P = np.asarray(res.P, dtype=float) if ds.P is None else ds.P
            for kind, name in quantities:
                values = np.asarray(res.y[name] if kind == "y" else res.conversion[name], dtype=float)
                predicted[choice.label].append(np.where(ok, values, np.nan))
                status[choice.label].append(np.asarray(res.status, dtype=int))
        for kind, name in quantities:
            columns["dataset"] += [ds.name] * len(ds)
            columns["line"] += list(ds.lines)
            columns["source"] += list(ds.source)
            columns["note"] += list(ds.note)
            columns["from_memory"] += list(ds.from_memory)
            columns["T"] += list(ds.T)
            columns["P"] += list(first_P)
            columns["V"] += list(ds.V) if ds.V is not None else [math.nan] * len(ds)
            columns["quantity"] += [f"{kind} {name}"] * len(ds)
            columns["measured"] += list(ds.measured[(kind, name)])
            columns["uncertainty"] += list(ds.uncertainty.get((kind, name), np.full(len(ds), math.nan)))
    arrays = {k: np.asarray(v) for k, v in columns.items()}
    measured = arrays["measured"].astype(float)
    pred = {k: np.concatenate(v) for k, v in predicted.items()}
    errors = {k: np.where(np.isnan(measured), np.nan, 100.0 * (v - measured)) for k, v in pred.items()}
    P = arrays["P"].astype(float)
    band_map: dict[str, tuple[float, float]] = {"all": (0.0, math.inf)}
    masks = {"all": np.ones(P.size, dtype=bool)}
    lo = 0.0
    for hi in edges:
        low = 0.0 if cumulative else lo
        mask = (P > low) & (P <= hi * (1 + 1e-12))
        if mask.any():
            label = _band_label(low, hi, cumulative, band_unit, scale)
            band_map[label], masks[label] = (low, float(hi)), mask
        lo = float(hi)
    scored = np.isfinite(measured)
    summary = {label: MappingProxyType({b: Stats.of(errors[label], np.flatnonzero(m & scored))
                                        for b, m in masks.items()}) for label in pred}
    ranking = tuple(sorted(pred, key=lambda m: (np.nan_to_num(summary[m]["all"].rms, nan=np.inf),
                                                np.nan_to_num(summary[m]["all"].max, nan=np.inf))))
    models_out = tuple(ScoredModel(c.label, c.options, c.K_source, texts[c.label][0], texts[c.label][1])
                       for c in choices)
    return Scores(
        models=models_out, datasets=MappingProxyType({d.name: d.citation for d in sets}),
        dataset=arrays["dataset"].astype(str), line=arrays["line"].astype(int), source=arrays["source"].astype(str),
        note=arrays["note"].astype(str), from_memory=arrays["from_memory"].astype(bool),
        T=arrays["T"].astype(float), P=P, V=arrays["V"].astype(float), quantity=arrays["quantity"].astype(str),
        measured=measured, uncertainty=arrays["uncertainty"].astype(float),
        predicted=MappingProxyType(pred), errors=MappingProxyType(errors),
        status=MappingProxyType({k: np.concatenate(v) for k, v in status.items()}),
        bands=MappingProxyType(band_map), cumulative=bool(cumulative), summary=MappingProxyType(summary),
        ranking=ranking, dataset_meta=MappingProxyType({d.name: MappingProxyType(dict(d.meta)) for d in sets}))


def models_with_sources(models: Iterable[Any], sources: Iterable[Any]) -> list[tuple[str, dict[str, Any]]]:
    """Every model combined with every K source, as ``(label, options)`` pairs for :func:`score_models`:
    ``models_with_sources(["PR", "SRK"], ["bundled", "graaf-1986"])``."""
    out = []
    for spec in models:
        base = _scored_model(spec)
        for src in sources:
            name = src if isinstance(src, str) else ", ".join(f"{k}={v}" for k, v in dict(src).items())
            out.append((f"{base.label} [K: {name}]", {**dict(base.options), "K_source": src}))
    return out
