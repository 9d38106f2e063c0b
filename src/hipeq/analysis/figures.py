"""Figures of operating maps (matplotlib, drawn off-screen: no display and no pyplot state needed).

- :func:`map_figure`: filled contours of the reference model's key-product mole fraction over temperature
  [degC] and pressure [bar], with the ideal-gas limit line, and the ideal-gas error in a second panel;
- :func:`yield_figure`: the key-product mole fraction against pressure at one temperature, one line per model,
  the real-gas band shaded and measured points overlaid where hipeq ships data for the feed
  (:mod:`hipeq.data.measured`);
- :func:`parity_figure`, :func:`error_figure`: model against measurement and error against pressure, one marker
  per model, for the :class:`~hipeq.analysis.scoring.Scores` of :func:`hipeq.score_models`;
- :func:`save`: PNG and SVG side by side.

Every figure carries the standard state and the caution: equilibrium is a thermodynamic limit, not a design
basis; follow local codes and licensed engineering practice.
"""
from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np
from matplotlib.colors import LogNorm
from matplotlib.figure import Figure
from matplotlib.patheffects import withStroke

from hipeq.data.measured import matching_sets
from hipeq.errors import InputError
from hipeq.units import to_si

if TYPE_CHECKING:
    from hipeq.analysis.maps import OperatingMap
    from hipeq.analysis.scoring import Scores

KELVIN_OFFSET = 273.15
BAR = 1e5  # [Pa]
FOOTER = ("Standard state: ideal gas at 1 bar. Equilibrium is a thermodynamic limit, not a design basis; "
          "follow local codes and licensed practice.")
_STYLES = {"ideal": dict(color="black", linestyle="--", linewidth=1.8)}
_COLOURS = ("#1f77b4", "#d62728", "#2ca02c", "#9467bd", "#8c564b", "#e377c2")


def _feed_text(m: OperatingMap) -> str:
    fed = [(name, v) for name, v in m.feed.items() if v > 0]
    smallest = min(v for _, v in fed)
    return ":".join(name for name, _ in fed) + " = " + ":".join(f"{v / smallest:.3g}" for _, v in fed)


def _log_axis(m: OperatingMap, log_pressure: bool | None) -> bool:
    from hipeq.analysis.maps import _geometric

    return _geometric(np.asarray(m.P)) if log_pressure is None else bool(log_pressure)


def _tolerance_text(m: OperatingMap) -> str:
    if m.tolerance.relative is not None:
        return f"{100 * m.tolerance.relative:g} % of the {m.reference} yield"
    return f"{100 * m.tolerance.absolute:g} mol-% pt"


def map_figure(m: OperatingMap, *, model: str | None = None, log_pressure: bool | None = None,
               levels: int = 12, width: float = 11.0) -> Figure:
    """Filled contours of ``model``'s (default: the reference's) equilibrium key-product mole % over T [degC] and
    P [bar] with the ideal-gas limit line (the pressure above which the ideal-gas estimate is off by more than the
    tolerance, :attr:`OperatingMap.ideal_limit_P`); beside it, when the map has an ideal-gas model, the ideal-gas
    error |y_ideal - y_model| in mole-percent points on a logarithmic colour scale. States that did not converge
    are left blank. ``log_pressure``: logarithmic pressure axis (default: when the grid is geometric)."""
    model = m.reference if model is None else model
    if model not in m.y:
        raise InputError("model", f"must be one of {', '.join(m.models)}, got {model!r}")
    if m.T.size < 2 or m.P.size < 2:
        raise InputError("T", "a contour map needs at least two temperatures and two pressures")
    T_c = np.asarray(m.T) - KELVIN_OFFSET
    P_bar = np.asarray(m.P) / BAR
    log = _log_axis(m, log_pressure)
    error_panel = m.ideal_model is not None and m.ideal_model != model
    fig = Figure(figsize=(width, 4.6 if error_panel else 4.8), layout="constrained")
    axes = fig.subplots(1, 2 if error_panel else 1, squeeze=False)[0]
    k = m.key

    ax = axes[0]
    z = np.ma.masked_invalid(100.0 * np.asarray(m.y[model]))
    filled = ax.contourf(T_c, P_bar, z.T, levels=levels, cmap="viridis")
    lines = ax.contour(T_c, P_bar, z.T, levels=filled.levels[1:-1:2], colors="white", linewidths=0.6, alpha=0.8)
    ax.clabel(lines, fmt="%g", fontsize=8)
    fig.colorbar(filled, ax=ax, label=f"{k} at equilibrium, {model} [mol %]")
    ax.set_title(f"{k} mole fraction, {model}")
    liquid = np.asarray(m.liquid_like.get(model, np.zeros(z.shape, dtype=bool)))
    if liquid.any():  # where the answer took a liquid-like root: hatched, a liquid may form there
        ax.contourf(T_c, P_bar, liquid.T.astype(float), levels=[0.5, 1.5], colors="none", hatches=["///"])
        ax.contour(T_c, P_bar, liquid.T.astype(float), levels=[0.5], colors="red", linewidths=1.2)
        ax.plot([], [], color="red", linewidth=1.2, label="hatched: liquid present or may form")
    if error_panel:
        dev = np.abs(np.asarray(m.y[m.ideal_model]) - np.asarray(m.y[model]))
        dev = np.ma.masked_invalid(100.0 * dev)
        positive = dev.compressed()[dev.compressed() > 0]
        low = max(1e-3, float(positive.min())) if positive.size else 1e-3
        high = max(low * 10, float(dev.max()) if dev.count() else 1.0)
        bounds = [b for b in (1e-3, 3e-3, 1e-2, 3e-2, 0.1, 0.3, 1, 3, 10, 30, 100) if low / 3 <= b <= high * 3]
        ax2 = axes[1]
        err = ax2.contourf(T_c, P_bar, np.ma.masked_less_equal(dev, 0).T, levels=bounds, cmap="magma_r",
                           norm=LogNorm(bounds[0], bounds[-1]), extend="both")
        fig.colorbar(err, ax=ax2, label=f"|y_ideal - y_{model}| of {k} [mol-% points]", format="%g")
        sign = np.asarray(m.y[m.ideal_model]) - np.asarray(m.y[model])
        finite = sign[np.isfinite(sign)]
        side = (" (ideal gas under-predicts)" if finite.size and np.all(finite <= 0) else
                " (ideal gas over-predicts)" if finite.size and np.all(finite >= 0) else "")
        ax2.set_title(f"Ideal-gas error{side}")
    label = f"ideal gas off by > {_tolerance_text(m)} above this line"
    ok = np.isfinite(m.ideal_limit_P)
    for ax_ in axes:
        if ok.any():
            ax_.plot(T_c[ok], np.asarray(m.ideal_limit_P)[ok] / BAR, color="white", linestyle="--", linewidth=2.2,
                     path_effects=[withStroke(linewidth=4.0, foreground="black")], label=label)
            ax_.legend(loc="lower right", fontsize=8, framealpha=0.9)
        ax_.set_xlabel("temperature [°C]")
        ax_.set_ylabel("pressure [bar]")
        if log:
            ax_.set_yscale("log")
        ax_.set_xlim(T_c[0], T_c[-1])
        ax_.set_ylim(P_bar[0], P_bar[-1])
    failed = sum(m.failures.values())
    note = f" Blank: {failed} state(s) without a converged answer." if failed else ""
    fig.suptitle(f"Equilibrium {k}, feed {_feed_text(m)}", fontsize=12)
    fig.text(0.01, 0.002, FOOTER + note, fontsize=7.5, color="0.3", ha="left", va="bottom")
    fig.get_layout_engine().set(rect=(0, 0.04, 1, 0.96))
    return fig


def yield_figure(m: OperatingMap, T: Any, *, P: Any = None, log_pressure: bool | None = None,
                 measured: bool = True, width: float = 7.5) -> Figure:
    """The key product's equilibrium mole % against pressure [bar] at temperature ``T`` [K or unit string], one
    line per model of the map (solved afresh, :meth:`OperatingMap.line`), the spread of the credible real-gas
    models shaded, the pressure where the ideal-gas estimate leaves the tolerance marked, and the measured
    points at that temperature (within 0.5 K) that hipeq ships for this feed (``measured=False`` to omit)."""
    t = to_si(T, "temperature", "T")
    if not isinstance(t, float):
        raise InputError("T", f"yield_figure takes one temperature, got {T!r}")
    line = m.line(t, P)
    P_bar = line["P"] / BAR
    fig = Figure(figsize=(width, 5.0), layout="constrained")
    ax = fig.subplots()
    k = m.key
    if np.any(np.isfinite(line["band_low"])):
        ax.fill_between(P_bar, 100 * line["band_low"], 100 * line["band_high"], color="0.6", alpha=0.35, lw=0,
                        label=f"real-gas band ({', '.join(m.band_models)})")
    colours = iter(_COLOURS)
    for label in m.models:
        style = dict(_STYLES.get(label, {}))
        if not style:
            style = dict(color=next(colours), linewidth=2.2 if label == m.reference else 1.4)
        name = label + (" (reference)" if label == m.reference else "")
        ax.plot(P_bar, 100 * line[label], label=name, **style)
    if m.ideal_model is not None and m.ideal_model != m.reference:
        dev = np.abs(line[m.ideal_model] - line[m.reference]) - m.tolerance.limit(line[m.reference])
        over = np.flatnonzero(dev > 0)
        if over.size and over[0] > 0:
            j = int(over[0])
            w = dev[j - 1] / (dev[j - 1] - dev[j])
            p_limit = P_bar[j - 1] * (P_bar[j] / P_bar[j - 1]) ** w
            ax.axvline(p_limit, color="0.25", linestyle=":", linewidth=1.3,
                       label=f"ideal gas off by > {_tolerance_text(m)} ({p_limit:.0f} bar)")
    if measured:
        markers = iter(("o", "s", "^", "D"))
        for data in matching_sets(m.feed, k):
            at = np.abs(data.T - t) <= 0.5
            if at.any():
                ax.plot(data.P[at] / BAR, 100 * data.y[at], linestyle="none", marker=next(markers), ms=7,
                        mfc="white", mec="black", mew=1.4, label=f"measured: {data.label}")
    if _log_axis(m, log_pressure):
        ax.set_xscale("log")
    ax.set_xlabel("pressure [bar]")
    ax.set_ylabel(f"{k} at equilibrium [mol %]")
    ax.set_title(f"Equilibrium {k} at {t - KELVIN_OFFSET:g} °C, feed {_feed_text(m)}")
    ax.grid(True, which="major", alpha=0.3)
    ax.legend(loc="upper left", fontsize=8.5)
    fig.text(0.01, 0.002, FOOTER, fontsize=7, color="0.3", ha="left", va="bottom")
    fig.get_layout_engine().set(rect=(0, 0.04, 1, 0.96))
    return fig


def save(fig: Figure, path: str | Path, dpi: int = 150) -> list[Path]:
    """Write ``fig`` as ``<path>.png`` (``dpi`` dots per inch) and ``<path>.svg`` (any suffix of ``path`` is
    replaced). Returns the two paths."""
    path = Path(path)
    stem = path.with_suffix("") if path.suffix.lower() in (".png", ".svg") else path
    written = []
    for suffix in (".png", ".svg"):
        target = stem.with_name(stem.name + suffix)
        fig.savefig(target, dpi=dpi)
        written.append(target)
    return written


_MARKERS = ("o", "s", "^", "D", "v", "P", "X", "<", ">", "*")


def _score_points(scores: Scores, models: Any) -> list[str]:
    labels = list(scores.ranking if models is None else models)
    unknown = [m for m in labels if m not in scores.errors]
    if unknown:
        raise InputError("models", f"not scored: {', '.join(unknown)}; scored: {', '.join(scores.labels)}")
    return labels


def _model_style(k: int) -> dict[str, Any]:
    return dict(marker=_MARKERS[k % len(_MARKERS)], color=_COLOURS[k % len(_COLOURS)] if k < 6 else f"C{k}",
                linestyle="none", ms=6.5, mfc="none", mew=1.5)


def parity_figure(scores: Scores, *, models: Any = None, width: float = 6.8) -> Figure:
    """Model against measurement [%] (mole percent for y, percent for conversion), one marker per model, the
    parity line and +-1 / +-3 point lines; points flagged "from memory" are marked with a grey cross behind.
    ``models``: the labels to draw (default: all, in rank order)."""
    labels = _score_points(scores, models)
    fig = Figure(figsize=(width, width * 0.92), layout="constrained")
    ax = fig.subplots()
    x = 100 * scores.measured
    top = float(np.nanmax([np.nanmax(x)] + [np.nanmax(100 * scores.predicted[m]) for m in labels])) * 1.05
    grid = np.array([0.0, top])
    ax.plot(grid, grid, color="black", linewidth=1.2, label="parity")
    for d, style in ((1.0, ":"), (3.0, "--")):
        ax.plot(grid, grid + d, color="0.55", linewidth=0.9, linestyle=style, label=f"±{d:g} point")
        ax.plot(grid, grid - d, color="0.55", linewidth=0.9, linestyle=style)
    if scores.from_memory.any():
        ax.plot(x[scores.from_memory], x[scores.from_memory], linestyle="none", marker="x", ms=13, color="0.7",
                mew=1.0, label="measured value from memory", zorder=0)
    for k, label in enumerate(labels):
        st = scores.summary[label]["all"]
        ax.plot(x, 100 * scores.predicted[label], label=f"{label} (RMS {st.rms:.2f}, max {st.max:.2f})",
                **_model_style(k))
    ax.set_xlim(0, top)
    ax.set_ylim(0, top)
    ax.set_aspect("equal")
    kinds = sorted({q.split()[0] for q in scores.quantity})
    what = " / ".join({"y": "mole fraction [mol %]", "conversion": "conversion [%]"}[k] for k in kinds)
    ax.set_xlabel(f"measured {what}")
    ax.set_ylabel(f"model {what}")
    ax.set_title("Model against measurement: " + ", ".join(sorted(set(scores.quantity))), fontsize=11)
    ax.grid(True, alpha=0.3)
    ax.legend(loc="upper left", fontsize=8)
    fig.text(0.01, 0.002, FOOTER, fontsize=6.5, color="0.3", ha="left", va="bottom", wrap=True)
    fig.get_layout_engine().set(rect=(0, 0.045, 1, 0.955))
    return fig


def error_figure(scores: Scores, *, models: Any = None, log_pressure: bool | None = None,
                 width: float = 8.0) -> Figure:
    """Error [percentage points, model minus measurement] against pressure [bar], one marker per model (slightly
    spread sideways so that models at one pressure stay apart), the zero line, and the stated measurement
    uncertainty as grey bars where the data give one. ``log_pressure``: logarithmic pressure axis (default: when
    the pressures span more than a factor of 5)."""
    from matplotlib.ticker import FuncFormatter

    labels = _score_points(scores, models)
    fig = Figure(figsize=(width, 5.0), layout="constrained")
    ax = fig.subplots()
    P_bar = scores.P / BAR
    n = len(labels)
    if log_pressure is None:
        log_pressure = bool(np.nanmax(P_bar) > 5 * np.nanmin(P_bar))
    span = (np.log(np.nanmax(P_bar) / np.nanmin(P_bar)) if log_pressure else np.ptp(P_bar)) or 1.0
    for k, label in enumerate(labels):
        step = 0.012 * span * (k - (n - 1) / 2)  # spread models sideways by about 1 % of the axis each
        x = P_bar * np.exp(step) if log_pressure else P_bar + step
        ax.plot(x, scores.errors[label], label=label, **_model_style(k))
    u = 100 * scores.uncertainty
    if np.isfinite(u).any():
        ok = np.isfinite(u)
        ax.errorbar(P_bar[ok], np.zeros(ok.sum()), yerr=u[ok], fmt="none", ecolor="0.6", elinewidth=5, alpha=0.5,
                    label="stated measurement uncertainty", zorder=0)
    ax.axhline(0.0, color="black", linewidth=1.0)
    if log_pressure:
        ax.set_xscale("log")
        plain = FuncFormatter(lambda v, _: f"{v:g}")
        ax.xaxis.set_major_formatter(plain)
        ax.xaxis.set_minor_formatter(FuncFormatter(lambda v, _: f"{v:g}" if f"{v:g}"[0] in "25" else ""))
    ax.set_xlabel("pressure [bar]")
    ax.set_ylabel("model - measured [percentage points]")
    ax.set_title("Error against pressure: " + ", ".join(sorted(set(scores.quantity))), fontsize=11)
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(loc="lower left", fontsize=8, ncols=2)
    fig.text(0.01, 0.002, FOOTER, fontsize=7, color="0.3", ha="left", va="bottom")
    fig.get_layout_engine().set(rect=(0, 0.04, 1, 0.96))
    return fig
