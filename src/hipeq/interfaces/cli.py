"""The ``hipeq`` command line: reads case files, calls the public API, formats what comes back.

    hipeq run CASE.toml [--json F] [--csv F] [--html F] [--figures DIR]   everything the case asks for
    hipeq compare CASE.toml         ideal gas against real-gas models at the case's conditions
    hipeq sweep CASE.toml           the case over its [sweep] axes
    hipeq map CASE.toml --out DIR   an operating map ([map]) with figures and the grid as CSV
    hipeq adiabatic CASE.toml       the adiabatic outlet ([adiabatic]), case model and ideal gas
    hipeq beds CASE.toml            adiabatic beds in series ([beds]) with their figure
    hipeq separator CASE.toml       the equilibrium gas flashed at separator conditions ([separator])
    hipeq score DATA... [--models M...]   models against measured equilibria (bundled sets or your CSV)
    hipeq reaction "N2 + 3 H2 = 2 NH3" --from "300 degC" --to "600 degC" --count 7
    hipeq species NAME              a species record with the source of every datum
    hipeq keys                      the case-file reference (every table and key)
    hipeq demo [--out DIR]          the bundled demo cases end to end, with their reports

Exit codes: 0 every state converged; 1 some state did not converge (marked FAILED in the tables); 2 bad input
(the message names the case-file table and key, or the option).
"""
from __future__ import annotations

import argparse
import json
import os
import sys
import textwrap
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any, TextIO

import numpy as np

from hipeq.errors import HipeqError, InputError, UnbalancedReactionError, UnknownSpeciesError
from hipeq.interfaces.sections import (CAUTION, LEGEND, MARK_FAILED, MARK_LIQUID, MARK_TWO_PHASE, STANDARD_STATE,
                                       Section, amount_unit, mark, number, result_mark)

EXIT_OK, EXIT_FAILED_STATE, EXIT_BAD_INPUT = 0, 1, 2

# solver field -> case-file position, so that an error raised by the API names the key the user wrote
_CASE_FIELDS = {"T": "[conditions] temperature", "P": "[conditions] pressure", "V": "[conditions] volume",
                "feed": "[feed]", "species": "[mixture] species", "reactions": "[mixture] reactions",
                "eos": "[model] eos", "kij": "[model] kij", "volume_translation": "[model] volume_translation",
                "quantum_hydrogen": "[model] quantum_hydrogen", "hydrogen_omega": "[model] hydrogen_omega",
                "pure_eos": "[model] pure_eos", "method": "[solver] method", "scheme": "[solver] scheme",
                "tol": "[solver] tolerance", "max_iterations": "[solver] max_iterations",
                "models": "[compare] models", "key": "[report] key", "reference": "[compare] reference"}


class CaseError(HipeqError):
    """An error of the API, re-addressed to the case-file key it came from."""


def _in_case(call: Callable[[], Any], where: str | None = None) -> Any:
    """Run ``call``; an InputError from the API is re-raised naming the case-file table and key."""
    try:
        return call()
    except InputError as err:
        position = where or _CASE_FIELDS.get(err.field, err.field)
        raise CaseError(f"{position}: {str(err).removeprefix(err.field + ': ')}") from None
    except UnknownSpeciesError as err:
        raise CaseError(f"{where or '[mixture] species'}: {err}") from None
    except UnbalancedReactionError as err:
        raise CaseError(f"{where or '[mixture] reactions'}: {err}") from None


# ---------------------------------------------------------------------------------------------------------
# sections built from a case
# ---------------------------------------------------------------------------------------------------------
def build_system(case: Any, **model: Any) -> Any:
    """The case's ReactionSystem (model options from [model], overridden by ``model``)."""
    from hipeq.solvers.system import ReactionSystem

    options = {**case.model, **model}
    return _in_case(lambda: ReactionSystem(list(case.species), reactions=list(case.reactions) if case.reactions
                                           else None, **options))


def _conditions(case: Any) -> dict[str, Any]:
    return {"V": case.V} if case.V is not None else {"P": case.P}


def solve_section(case: Any, system: Any) -> tuple[Section, Any]:
    """The main equilibrium of the case: reactions, species, status."""
    result = _in_case(lambda: system.equilibrium(feed=case.feed, T=case.T, **_conditions(case), **case.solver))
    state_mark = result_mark(result)
    fixed = f"V = {number(case.V)} m3 (sealed vessel)" if case.V is not None else f"P = {number(case.P / 1e5)} bar"
    section = Section(f"Equilibrium at T = {case.T - 273.15:.2f} degC ({case.T:.2f} K), {fixed}",
                      ["species", "feed [{}]", "equilibrium [{}]", "mole fraction [-]", "phi [-]", "status"])
    shown = case.report_species or system.species_names
    unit, scale = amount_unit([case.feed.get(n, 0.0) for n in shown] + [result.amounts[n] for n in shown])
    section.columns = [c.format(unit) for c in section.columns]
    ok = result.status == 0
    for name in shown:
        section.rows.append([name, number(case.feed.get(name, 0.0) / scale),
                             number(result.amounts[name] / scale) if ok else "-",
                             number(result.y[name], 6) if ok else "-", number(result.phi[name]) if ok else "-",
                             state_mark])
    section.notes.append(f"model {result.eos}; equilibrium P = {number(result.P / 1e5)} bar; Z = "
                         f"{number(result.Z)}; method {result.method}; {STANDARD_STATE}")
    for k, reaction in enumerate(result.reactions):
        section.notes.append(f"{reaction}: K = {number(result.K[k])}, K_phi = {number(result.K_phi[k])}"
                             + (f", K_y = {number(result.K_y[k])}" if ok else ""))
    section.notes.append(result.message)
    if ok and result.phase_count == 2:
        vapour, liquid = result.phases[0], result.phases[1]
        section.notes.append(f"WARNING: two phases at equilibrium: vapour {100 * vapour.fraction:.2f} % and liquid "
                             f"{100 * liquid.fraction:.2f} % of the moles; liquid: " + ", ".join(
                                 f"{n} {liquid.y[n]:.4f}" for n in shown if liquid.y[n] >= 1e-4)
                             + " (mole fractions); the table shows the overall composition")
    elif result.liquid_like:
        section.notes.append("WARNING: the answer took a liquid-like volume root; a liquid may form and the "
                             "one-gas answer is doubtful")
    section.failed = 0 if ok else 1
    data = result.to_dict()
    section.data = {"status": int(result.status), "message": result.message, "result": data}
    return section, result


def compare_section(case: Any, system: Any) -> Section:
    """Ideal gas against real-gas models ([compare]) through :func:`hipeq.compare`."""
    import hipeq

    from hipeq.analysis._common import DEFAULT_MODELS

    options = dict(case.compare or {})
    kwargs = {k: options[k] for k in ("reference", "tolerance", "relative_tolerance") if k in options}
    models: list[Any] = list(options.get("models", DEFAULT_MODELS))
    if any(value not in (None, False) for name, value in case.model.items() if name != "eos"):
        # the case's own model has options of its own (k_ij, volume translation, ...): compare it too, by name,
        # and measure against it unless [compare] names a reference
        label = f"{case.eos} (case)"
        models.append((label, dict(case.model)))
        kwargs.setdefault("reference", label)
    kwargs["models"] = models
    comparison = _in_case(lambda: hipeq.compare(system, case.feed, case.T, key=case.key, **_conditions(case),
                                                **kwargs))
    chosen = "" if case.key else "; chosen by default, set [report] key to choose"
    section = Section(f"Ideal gas against real-gas models (key product {comparison.key}{chosen})",
                      ["model", f"y {comparison.key} [-]", "deviation [-]", "conversion [-]", "status"])
    for label, result in comparison.results.items():
        ok = result.status == 0
        dev = comparison.deviation.get(label, float("nan"))
        section.rows.append([label, number(result.y[comparison.key], 6) if ok else "-",
                             f"{dev:+.5f}" if ok and np.isfinite(dev) else "-",
                             number(float(comparison.conversion[label])) if ok else "-",
                             result_mark(result)])
        if not ok:
            section.failed += 1
            section.notes.append(f"{label}: {result.message}")
    low, high = comparison.band
    section.notes.append(f"real-gas band: {number(low, 6)} to {number(high, 6)}")
    section.notes.append(comparison.verdict)
    section.data = comparison.to_dict()
    return section


def sweep_section(case: Any, system: Any) -> Section:
    """The case over its [sweep] axes with the case's model (one or two axes; pressure or volume)."""
    sweep = case.sweep
    T_axis = sweep.get("temperature", np.array([case.T]))
    second = "volume" if "volume" in sweep or case.V is not None else "pressure"
    S_axis = sweep.get(second, np.array([case.V if second == "volume" else case.P]))
    TT, SS = np.meshgrid(T_axis, S_axis, indexing="ij")
    batch = _in_case(lambda: system.equilibrium(feed=case.feed, T=TT, **{second[0].upper(): SS}, **case.solver),
                     "[sweep]")
    key = _key(case, system)
    section = Section(f"Sweep with {system.model.eos}: mole fraction of {key}",
                      ["T [degC]", "P [bar]" if second == "pressure" else "V [m3]", f"y {key} [-]", "P eq [bar]",
                       "status"])
    status, liquid = np.asarray(batch.status), np.asarray(batch.liquid_like)
    two_phase = (np.asarray(batch.phase_count) == 2) & (status == 0)
    y, P = np.asarray(batch.y[key]), np.asarray(batch.P)
    grid = TT.shape[0] > 1 and TT.shape[1] > 1
    if grid:  # two axes: a grid, rows T, columns P (or V); marks in the cells
        unit = "bar" if second == "pressure" else "m3"
        section.title += f" (rows T, columns {second})"
        section.columns = ["T [degC]"] + [f"{number(v / 1e5 if second == 'pressure' else v)} {unit}"
                                          for v in S_axis]
        for i in range(TT.shape[0]):
            cells = [f"{T_axis[i] - 273.15:.2f}"]
            for j in range(TT.shape[1]):
                value = f"{y[i, j]:.4f}" if y[i, j] >= 1e-3 else number(y[i, j], 3)
                suffix = "^" if two_phase[i, j] else ("*" if liquid[i, j] else "")
                cells.append(MARK_FAILED if status[i, j] else value + suffix)
            section.rows.append(cells)
        if np.any(status) or np.any(liquid) or np.any(two_phase):
            section.notes.append(f"{MARK_FAILED}: did not converge; ^: {MARK_TWO_PHASE} (a vapour and a liquid; "
                                 f"the overall mole fraction); *: {MARK_LIQUID} root (a liquid may form)")
    for i in range(0 if grid else TT.shape[0]):
        for j in range(TT.shape[1]):
            ok = status[i, j] == 0
            value = SS[i, j] / 1e5 if second == "pressure" else SS[i, j]
            section.rows.append([f"{TT[i, j] - 273.15:.2f}", number(value), number(y[i, j], 6) if ok else "-",
                                 number(P[i, j] / 1e5) if ok else "-",
                                 mark(int(status[i, j]), bool(liquid[i, j]), 2 if two_phase[i, j] else 1)])
    section.failed = int(np.count_nonzero(status))
    for flat in np.flatnonzero(status.ravel())[:3]:
        section.notes.append(f"state {flat}: {batch.message(int(flat))}")
    section.data = {"key": key, "T [K]": TT.tolist(), ("P [Pa]" if second == "pressure" else "V [m3]"): SS.tolist(),
                    f"y_{key} [-]": np.where(status == 0, y, np.nan).tolist(), "status": status.tolist(),
                    "phase_count": np.where(two_phase, 2, 1).tolist(),
                    "P_equilibrium [Pa]": P.tolist()}
    return section


def map_section(case: Any, system: Any, folder: Path | None) -> Section:
    """The operating map of [map]: a summary table (the ideal-gas limit per temperature, the band), with the
    full grid in CSV and JSON and the figures when an output folder is given."""
    import hipeq

    spec = case.map
    kwargs = {k: spec[k] for k in ("models", "reference", "tolerance") if k in spec}
    grid = _in_case(lambda: hipeq.operating_map(system, case.feed, T=spec["temperature"], P=spec["pressure"],
                                                key=case.key, progress=None, **kwargs), "[map]")
    ref = grid.reference
    section = Section(f"Operating map: {grid.key} over {len(grid.T)} temperatures x {len(grid.P)} pressures, "
                      f"models {', '.join(grid.models)}",
                      ["T [degC]", "ideal-gas limit [bar]", f"y {grid.key} {ref} at top P [-]",
                       "band width at top P [-]"])
    rows = np.unique(np.linspace(0, len(grid.T) - 1, min(len(grid.T), 12)).round().astype(int))
    for i in rows:
        limit = grid.ideal_limit_P[i] if grid.ideal_limit_P is not None else float("nan")
        top = grid.y[ref][i, -1]
        width = grid.band_width[i, -1] if grid.band_width is not None else float("nan")
        section.rows.append([f"{grid.T[i] - 273.15:.1f}", number(limit / 1e5) if np.isfinite(limit) else "none",
                             number(top, 5) if np.isfinite(top) else MARK_FAILED,
                             number(width, 3) if np.isfinite(width) else "n/a"])
    liquid = {label: int(np.count_nonzero(grid.liquid_like[label])) for label in grid.models}
    if any(liquid.values()):
        section.notes.append("WARNING: a liquid is present (two-phase answers) or may form (liquid-like roots) "
                             "in " + ", ".join(f"{count} states of {label}" for label, count in liquid.items()
                                               if count) + "; hatched on the map figure")
    section.notes.append(f"ideal-gas limit: the pressure above which the ideal gas is off by more than "
                         f"{grid.tolerance.describe()} against {ref}; 'none': not within the grid's pressures")
    section.notes.extend(note for note in grid.ideal_limit_notes[:3] if note.strip())
    failed = sum(grid.failures.values())
    if failed:
        section.failed = failed
        for label, count in grid.failures.items():
            if count:
                section.notes.append(f"{label}: {count} state(s) {MARK_FAILED} (blank on the map); first: "
                                     f"{grid.first_failure[label]}")
    if folder is not None:
        middle = float(grid.T[len(grid.T) // 2])
        paths = grid.save_figures(folder, T=middle, stem="map")
        captions = {"map": f"{grid.key} mole fraction with {ref} over temperature and pressure, and the ideal-gas "
                           "error; the dashed line is the ideal-gas limit",
                    "map_yield": f"{grid.key} mole fraction against pressure at {middle - 273.15:.0f} degC, per "
                                 "model, with the real-gas band shaded"}
        section.figures = [(str(p), captions.get(p.stem, p.stem)) for p in paths]
        grid.to_csv(folder / "map.csv")
        section.notes.append(f"grid written to {folder / 'map.csv'}; figures {folder / 'map.png'}, "
                             f"{folder / 'map_yield.png'}")
    section.data = {"key": grid.key, "reference": ref, "T [K]": grid.T.tolist(), "liquid_like_states": liquid,
                    "ideal_limit_P [Pa]": [float(v) for v in grid.ideal_limit_P], "failed_states": failed}
    return section


def adiabatic_section(case: Any, system: Any) -> Section:
    """The adiabatic bed of [adiabatic] with the case's model and with the ideal gas."""
    T_in = case.adiabatic["inlet_temperature"]
    key = _key(case, system)
    section = Section(f"Adiabatic bed from {T_in - 273.15:.1f} degC at {number(case.P / 1e5)} bar",
                      ["model", "T out [degC]", "rise [K]", f"y {key} [-]", "status"])
    for label, model_system in ((system.model.eos + " (case)", system), ("ideal", system.with_model(eos="ideal"))):
        out = _in_case(lambda: model_system.adiabatic_equilibrium(case.feed, T_in, case.P), "[adiabatic]")
        ok = out.status == 0
        section.rows.append([label, f"{out.T - 273.15:.2f}" if ok else "-",
                             f"{out.temperature_rise:+.2f}" if ok else "-",
                             number(out.y[key], 5) if ok else "-", result_mark(out)])
        section.failed += 0 if ok else 1
        section.data[label] = {"T_out [K]": out.T, "temperature_rise [K]": out.temperature_rise,
                               f"y_{key} [-]": out.y[key], "status": int(out.status), "message": out.message}
    section.notes.append("enthalpy in = enthalpy out at the case's pressure (ideal-gas enthalpies from the species' "
                         "Cp data and formation enthalpies, plus the model's residual enthalpy)")
    return section


def beds_section(case: Any, system: Any, folder: Path | None) -> Section:
    """Adiabatic beds in series ([beds]) with their table and, given an output folder, the figure."""
    import hipeq

    spec = case.beds
    train = _in_case(lambda: hipeq.staged_beds(system, case.feed, case.P, list(spec["inlet_temperatures"]),
                                               cooling=spec.get("cooling", "exchanger"),
                                               quench_temperature=spec.get("quench_temperature"), key=case.key),
                     "[beds]")
    section = Section(f"Beds in series at {number(case.P / 1e5)} bar ({train.cooling} between beds); X = "
                      f"conversion of {train.reactant}",
                      ["bed", "T in [degC]", "T out [degC]", "X in [%]", "X out [%]", "removed after [kJ]",
                       "quench [mol]", "status"])
    for bed in train.beds:
        section.rows.append([str(bed.number), f"{bed.T_in - 273.15:.1f}", f"{bed.T_out - 273.15:.2f}",
                             f"{100 * bed.conversion_in:.2f}", f"{100 * bed.conversion_out:.2f}",
                             number(bed.heat_removed_after / 1e3), number(bed.quench_added),
                             result_mark(bed.outlet)])
    if folder is not None:
        path = folder / "beds.png"
        figure = train.figure()
        figure.savefig(path, dpi=150, bbox_inches="tight")
        figure.savefig(path.with_suffix(".svg"), bbox_inches="tight")
        section.figures = [(str(path), "beds in series: the equilibrium curve, each bed's adiabatic line and "
                                       "the cooling between beds")]
        section.notes.append(f"figure written to {path}")
    section.data = {"beds": train.table(), "P [Pa]": train.P, "cooling": train.cooling}
    return section


def separator_section(case: Any, system: Any, result: Any) -> Section:
    """A flash of the equilibrium gas at separator conditions ([separator]): vapour and liquid without reaction."""
    import hipeq

    spec = case.separator
    T, P = spec["temperature"], spec.get("pressure", case.P)
    unit, scale = amount_unit(list(result.amounts.array)) if result.status == 0 else ("mol", 1.0)
    section = Section(f"Separator: the equilibrium gas flashed at {T - 273.15:.1f} degC and {number(P / 1e5)} bar "
                      "(no reaction)", ["species", f"feed [{unit}]", "vapour [-]", "liquid [-]", "K = y/x [-]"])
    if result.status != 0:
        section.notes.append(f"{MARK_FAILED}: the equilibrium upstream did not converge; no flash")
        section.failed = 1
        return section
    split = _in_case(lambda: hipeq.flash(list(system.species_names), result.amounts.array, T, P,
                                         **case.model), "[separator]")
    vapour = split.phases[0]
    liquid = split.phases[1] if split.phase_count == 2 else None
    for name in case.report_species or system.species_names:
        section.rows.append([name, number(result.amounts[name] / scale), number(vapour.y[name], 5),
                             number(liquid.y[name], 5) if liquid else "-",
                             number(split.K[name]) if liquid and split.K else "-"])
    if liquid is None:
        section.notes.append(f"one phase ({vapour.name}, root {vapour.root}): nothing condenses")
    else:
        section.notes.append(f"two phases: vapour {100 * vapour.fraction:.3f} % of the moles, liquid "
                             f"{100 * liquid.fraction:.3f} %; largest |ln f_V - ln f_L| "
                             f"{split.max_fugacity_residual:.1e}")
    if not split.converged:
        section.failed = 1
        section.notes.append(f"{MARK_FAILED}: the flash did not converge in {split.iterations} iterations")
    section.data = split.to_dict()
    return section


def score_section(data: Sequence[str], models: Sequence[str] | None, bands: Any,
                  folder: Path | None) -> Section:
    """Models scored against measured equilibria (:func:`hipeq.score_models`): statistics per model, ranking,
    the worst points, and given an output folder the parity and error figures and the CSV tables."""
    import hipeq

    kwargs: dict[str, Any] = {}
    if models:
        kwargs["models"] = list(models)
    if bands is not None:
        kwargs["bands"] = list(bands)
    scores = _in_case(lambda: hipeq.score_models(list(data), **kwargs))
    section = Section(f"Models against {len(scores)} measured points ({', '.join(scores.datasets)}); errors in "
                      "percentage points, model minus measurement",
                      ["rank", "model", "points", "failed", "bias", "mean |error|", "RMS", "max |error|"])
    for rank, label in enumerate(scores.ranking, 1):
        stats = scores.summary[label]["all"]
        section.rows.append([str(rank), label, str(stats.n), str(stats.failed), f"{stats.bias:+.3f}",
                             f"{stats.mae:.3f}", f"{stats.rms:.3f}", f"{stats.max:.3f}"])
        section.failed += stats.failed
    best = scores.ranking[0]
    bands_text = "; ".join(f"{band}: RMS {stats.rms:.3f}, max {stats.max:.3f}"
                           for band, stats in scores.summary[best].items() if band != "all" and stats.n)
    section.notes.append(f"best ({best}) by pressure band: {bands_text}")
    for row in scores.worst(3, model=best):
        note = f" ({row['note']})" if row.get("note") else ""
        section.notes.append(f"worst for {best}: {row['dataset']} line {row['line']}, T = {row['T']:.2f} K, "
                             f"P = {row['P'] / 1e5:.4g} bar: {row['quantity']} measured {row['measured']:.4f}, "
                             f"model {row['predicted']:.4f}{note}")
    if any(scores.from_memory):
        section.notes.append("some points are flagged as values recalled from memory in their data file")
    if folder is not None:
        from hipeq.analysis.figures import error_figure, parity_figure, save

        paths = save(parity_figure(scores), folder / "parity") + save(error_figure(scores), folder / "errors")
        scores.to_csv(folder / "scores_points.csv")
        scores.summary_csv(folder / "scores_summary.csv")
        captions = {"parity": "model against measurement, one marker per model, with the parity line",
                    "errors": "error against pressure per model, with the stated measurement uncertainty"}
        section.figures = [(str(p), captions[p.stem]) for p in paths if p.suffix == ".png"]
        section.notes.append(f"tables {folder / 'scores_summary.csv'}, {folder / 'scores_points.csv'}; figures "
                             f"{folder / 'parity.png'}, {folder / 'errors.png'}")
    section.data = scores.to_dict()
    return section


def run_scoring(data: Sequence[str], models: Sequence[str] | None, json_out: str | None, html_out: str | None,
                folder: str | None, out: TextIO | None = None, title: str = "Scoring models against data",
                bands: Any = None) -> int:
    """``hipeq score``: models against data sets, printed, and written where asked."""
    out = out or sys.stdout
    _check_outputs([json_out, html_out])
    target = _out_folder(folder)
    if target is not None:
        json_out = json_out or str(target / "results.json")
        html_out = html_out or str(target / "report.html")
    section = score_section(data, models, bands, target)
    _print_sections([section], f"hipeq | {title} | {STANDARD_STATE}", out)
    if json_out:
        payload = {"title": title, "standard_state": STANDARD_STATE, "caution": CAUTION, "scores": section.data}
        Path(json_out).write_text(json.dumps(payload, indent=2, default=_json_default))
        print(f"  results written to {json_out}", file=out)
    if html_out:
        from hipeq.interfaces.report import write_scoring_report

        print(f"  report written to {write_scoring_report(html_out, title, section)}", file=out)
    return EXIT_FAILED_STATE if section.failed else EXIT_OK


def _key(case: Any, system: Any) -> str:
    from hipeq.analysis._common import key_product

    return key_product(system, system.feed_vector(case.feed), case.key)


# ---------------------------------------------------------------------------------------------------------
# commands
# ---------------------------------------------------------------------------------------------------------
def _check_outputs(paths: Sequence[str | None]) -> None:
    """Refuse output paths that cannot be written, before any solving."""
    for path in paths:
        if not path:
            continue
        p = Path(path)
        if p.is_dir():
            raise InputError("output", f"{p} is a folder; give a file name")
        if not p.parent.exists():
            raise InputError("output", f"folder {p.parent} does not exist; create it first")
        if not os.access(p.parent, os.W_OK):
            raise InputError("output", f"folder {p.parent} is not writable")


def _print_sections(sections: Sequence[Section], header: str, out: TextIO) -> None:
    print(header, file=out)
    for section in sections:
        print("", file=out)
        print(section.text(), file=out)
    print("", file=out)
    lines = [LEGEND] if any(s.columns and s.columns[-1] == "status" for s in sections) else []
    failed = sum(s.failed for s in sections)
    if failed:
        lines.append(f"{failed} state(s) {MARK_FAILED}: their values are not shown; exit code 1")
    for line in lines:
        print(textwrap.fill(line, width=110, initial_indent="  ", subsequent_indent="    "), file=out)
    print("  " + CAUTION, file=out)  # one line, so that it can be found in logs


def _write_json(path: str | None, case: Any, sections: Sequence[Section]) -> None:
    if not path:
        return
    payload = {"case": case.title, "case_file": case.path, "standard_state": STANDARD_STATE, "caution": CAUTION,
               "units": "SI unless a key says otherwise: K, Pa, m3, mol, J",
               "sections": {s.title: s.data for s in sections}}
    Path(path).write_text(json.dumps(payload, indent=2, default=_json_default))


def _json_default(value: Any) -> Any:
    if isinstance(value, np.ndarray):
        return value.tolist()
    if isinstance(value, (np.floating, np.integer, np.bool_)):
        return value.item()
    return str(value)


def _out_folder(folder: str | None) -> Path | None:
    """The output folder, created when its parent exists; refused when it is a file."""
    if not folder:
        return None
    p = Path(folder)
    if p.exists() and not p.is_dir():
        raise InputError("--out", f"{p} is a file; give a folder")
    if not p.exists():
        if not p.parent.exists():
            raise InputError("--out", f"folder {p.parent} does not exist; create it first")
        p.mkdir()
    if not os.access(p, os.W_OK):
        raise InputError("--out", f"folder {p} is not writable")
    return p


def run_case(path: str, json_out: str | None = None, out: TextIO | None = None,
             only: Sequence[str] | None = None, html_out: str | None = None, folder: str | None = None) -> int:
    """Solve a case file and print its report; returns the exit code. ``only``: the job tables to run (default:
    every table the case holds); ``json_out``, ``html_out``: files to write; ``folder``: an output folder for
    report.html, results.json, map.csv and the figures (paths checked before any solving)."""
    from hipeq.interfaces.casefile import load_case

    from hipeq.interfaces.casefile import ScoringCase

    out = out or sys.stdout
    _check_outputs([json_out, html_out])
    case = load_case(path)
    if isinstance(case, ScoringCase):
        return run_scoring(case.data, case.models, json_out, html_out, folder, out, case.title, case.bands)
    if only == ["score"]:
        raise CaseError(f"{path}: `hipeq score` takes data-set names, CSV files or a case holding [scoring]")
    target = _out_folder(folder)
    if target is not None:
        json_out = json_out or str(target / "results.json")
        html_out = html_out or str(target / "report.html")
    system = build_system(case)
    main_section, result = solve_section(case, system)
    sections = [main_section]
    jobs = {"compare": lambda: compare_section(case, system), "sweep": lambda: sweep_section(case, system),
            "map": lambda: map_section(case, system, target), "adiabatic": lambda: adiabatic_section(case, system),
            "beds": lambda: beds_section(case, system, target),
            "separator": lambda: separator_section(case, system, result)}
    for name in (only or case.tables()):
        if name not in case.tables():
            raise CaseError(f"[{name}]: the case has no [{name}] table (see `hipeq keys`)")
        if name in jobs:
            sections.append(jobs[name]())
    header = f"hipeq | {case.title} | model {case.eos} | {STANDARD_STATE}"
    _print_sections(sections, header, out)
    _write_json(json_out, case, sections)
    if json_out:
        print(f"  results written to {json_out}", file=out)
    if html_out:
        from hipeq.interfaces.report import write_report

        print(f"  report written to {write_report(html_out, case, result, sections)}", file=out)
    return EXIT_FAILED_STATE if any(s.failed for s in sections) else EXIT_OK


def _score_command(args: argparse.Namespace) -> int:
    import hipeq

    if args.list:
        for name, title in hipeq.datasets().items():
            print(f"{name}: {title}")
        return EXIT_OK
    if not args.data:
        raise InputError("data", "give data-set names (see `hipeq score --list`), CSV files or a case file")
    if len(args.data) == 1 and args.data[0].lower().endswith(".toml"):
        if args.models:
            raise InputError("--models", "a case file names its models in [scoring] models")
        return run_case(args.data[0], args.json_out, only=["score"], html_out=args.html_out, folder=args.folder)
    return run_scoring(args.data, args.models, args.json_out, args.html_out, args.folder)


def demo_cases() -> list[Path]:
    """The bundled demo cases (invented scenarios: an ammonia loop, a CO2-to-methanol pilot)."""
    found = sorted((Path(__file__).resolve().parent / "demo").glob("*.toml"))
    return sorted(found, key=lambda p: p.name != "demo_plant.toml")  # the ammonia loop first


def run_demo(folder: str = "demo-output", out: TextIO | None = None) -> int:
    """Run every bundled demo case end to end into ``folder``/<case>/ and say where the reports are."""
    out = out or sys.stdout
    target = _out_folder(folder)
    assert target is not None
    codes, reports = [], []
    for path in demo_cases():
        print(f"=== demo case {path.name} ({path})", file=out)
        codes.append(run_case(str(path), out=out, folder=str(target / path.stem)))
        reports.append(target / path.stem / "report.html")
        print("", file=out)
    print("Demo reports (open in a browser; everything is embedded, no network needed):", file=out)
    for report in reports:
        print(f"  {report.resolve()}", file=out)
    print("Copy a demo case to start your own: cp " + str(demo_cases()[0]) + " my_case.toml", file=out)
    return max(codes)


def show_reaction(reaction: str, t_from: str, t_to: str, count: int, out: TextIO | None = None) -> int:
    """Print K(T) of a reaction from Cp integrals and the constant-enthalpy van 't Hoff approximation."""
    from hipeq.data.thermochem import equilibrium_constant, reaction_enthalpy, reaction_entropy, reaction_gibbs
    from hipeq.units import parse_quantity

    out = out or sys.stdout
    if not 2 <= count <= 10_000:
        raise InputError("--count", f"must be from 2 to 10000, got {count}")
    T = np.linspace(parse_quantity(t_from, "temperature", "--from"), parse_quantity(t_to, "temperature", "--to"),
                    count)
    try:
        k = equilibrium_constant(reaction, T)
        kv = equilibrium_constant(reaction, T, method="van-t-hoff")
        dH = np.atleast_1d(reaction_enthalpy(reaction, T))
        dS = np.atleast_1d(reaction_entropy(reaction, T))
        dG = np.atleast_1d(reaction_gibbs(reaction, T))
    except InputError as err:
        if err.field == "T":  # the API's advice (extrapolate=True) is for Python users
            raise InputError("--from/--to", str(err).split(": ", 1)[-1].split("; pass extrapolate")[0]
                             + "; choose temperatures inside that range") from None
        raise InputError("reaction", str(err)) from None
    print(f"hipeq | standard-state thermochemistry of {reaction} | {STANDARD_STATE}; per mole of reaction as "
          "written; van 't Hoff: constant dH0 from 298.15 K", file=out)
    rows = [[f"{t - 273.15:.1f}", f"{t:.2f}", f"{h / 1e3:.3f}", f"{e:.3f}", f"{g / 1e3:.3f}", number(a), number(b),
             f"{100 * (b / a - 1):+.2f}"] for t, h, e, g, a, b in zip(T, dH, dS, dG, k, kv)]
    section = Section("", ["T [degC]", "T [K]", "dH0 [kJ/mol]", "dS0 [J/(mol K)]", "dG0 [kJ/mol]",
                           "K (Cp integral) [-]", "K (van 't Hoff) [-]", "difference [%]"], rows)
    print(section.text().split("\n", 2)[2], file=out)
    return EXIT_OK


def show_species(name: str, out: TextIO | None = None) -> int:
    """Print one species record with the source of every datum."""
    from hipeq.data.species import species

    out = out or sys.stdout
    s = _in_case(lambda: species(name), "species")
    get = s.sources.get
    rows = [["name", s.name, ""], ["common name", s.common_name, ""], ["formula", s.formula, ""],
            ["CAS", s.cas, ""], ["molar mass [g/mol]", f"{s.molar_mass * 1e3:.4f}", get("molar_mass", "")],
            ["Tc [K]", f"{s.Tc:.3f}", get("Tc", "")], ["Pc [bar]", f"{s.Pc / 1e5:.4f}", get("Pc", "")],
            ["acentric factor [-]", f"{s.omega:.4f}", get("omega", "")],
            ["Hf(298.15 K) [kJ/mol]", f"{s.Hf / 1e3:.3f}", get("Hf", "")],
            ["Gf(298.15 K) [kJ/mol]", f"{s.Gf / 1e3:.3f}", get("Gf", "")],
            ["S0(298.15 K) [J/(mol K)]", f"{s.S0:.3f}", get("S0", "")],
            ["Cp range [K]", f"{s.cp.T_min:.0f} - {s.cp.T_max:.0f}", get("cp", "")]]
    print(Section("", ["field", "value", "source"], rows).text().split("\n", 2)[2], file=out)
    return EXIT_OK


def show_keys(out: TextIO | None = None) -> int:
    """Print the case-file reference."""
    from hipeq.interfaces.schema import markdown

    print(markdown(), file=out or sys.stdout, end="")
    return EXIT_OK


CASE_COMMANDS = {
    "run": "solve a case file: the equilibrium and every job table it holds",
    "compare": "ideal gas against real-gas models at the case's conditions ([compare])",
    "sweep": "the case over the axes of its [sweep] table",
    "map": "operating map over temperature and pressure ([map]): yields, ideal-gas limit, band, figures",
    "adiabatic": "adiabatic bed outlet at equilibrium ([adiabatic]), with the case's model and the ideal gas",
    "beds": "adiabatic beds in series with cooling or quench between them ([beds])",
    "separator": "vapour-liquid flash of the equilibrium gas at separator conditions ([separator])",
}

EXAMPLES = {
    "map": "hipeq map examples/demo_plant.toml --out demo-output",
    "adiabatic": "hipeq adiabatic examples/demo_plant.toml",
    "beds": "hipeq beds examples/demo_plant.toml --out demo-output",
    "separator": "hipeq separator examples/demo_plant.toml",
    "run": "hipeq run examples/demo_plant.toml --json out.json",
    "compare": "hipeq compare examples/demo_plant.toml",
    "sweep": "hipeq sweep examples/demo_plant.toml",
    "reaction": 'hipeq reaction "CO + 2 H2 = CH3OH" --from "200 degC" --to "300 degC" --count 5',
    "species": "hipeq species methanol",
    "score": 'hipeq score ammonia-larson-1924 --models ideal PR SRK "PR78+E-PPR78+Peneloux" --out scores',
    "keys": "hipeq keys > casefile.md",
    "demo": "hipeq demo --out demo-output",
}


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of the ``hipeq`` command."""
    from hipeq import __version__

    parser = argparse.ArgumentParser(prog="hipeq", description="Reaction equilibrium of gas mixtures at high "
                                     "pressure with real-gas fugacity corrections (" + STANDARD_STATE + ").",
                                     epilog=CAUTION)
    parser.add_argument("--version", action="version", version=f"hipeq {__version__}")
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")

    def command(name: str, help: str) -> argparse.ArgumentParser:
        return sub.add_parser(name, help=help, description=help, epilog=f"example: {EXAMPLES[name]}",
                              formatter_class=argparse.RawDescriptionHelpFormatter)

    for name, help in CASE_COMMANDS.items():
        p = command(name, help)
        p.add_argument("case", help="path of the TOML case file (see `hipeq keys`)")
        p.add_argument("--json", dest="json_out", metavar="FILE", help="also write the results (SI, units in keys)")
        p.add_argument("--html", dest="html_out", metavar="FILE", help="also write a one-page HTML report")
        p.add_argument("--out", dest="folder", metavar="DIR", help="write report.html, results.json, tables and "
                       "figures (PNG and SVG) into this folder (created when missing)")
    p = command("reaction", "standard-state thermochemistry of a reaction: K(T) over a temperature range")
    p.add_argument("reaction", help='e.g. "N2 + 3 H2 = 2 NH3"')
    p.add_argument("--from", dest="t_from", default="300 degC", help='first temperature, e.g. "300 degC"')
    p.add_argument("--to", dest="t_to", default="600 degC", help='last temperature, e.g. "600 degC"')
    p.add_argument("--count", type=int, default=7, help="number of temperatures (2-10000)")
    p = command("score", "score models against measured equilibria: bundled data sets, your CSV files, or a case "
                         "file holding [scoring]")
    p.add_argument("data", nargs="*", help="data-set names, CSV files (layout: docs/scoring.md) or one case file")
    p.add_argument("--models", nargs="+", metavar="MODEL", help='models to score, e.g. ideal PR SRK '
                   '"PR78+E-PPR78+Peneloux" (default: the ideal gas and the credible real-gas models)')
    p.add_argument("--list", action="store_true", help="list the bundled data sets and exit")
    p.add_argument("--json", dest="json_out", metavar="FILE", help="also write the scores (JSON)")
    p.add_argument("--html", dest="html_out", metavar="FILE", help="also write a one-page HTML report")
    p.add_argument("--out", dest="folder", metavar="DIR", help="write the report, tables and figures here")
    p = command("species", "a species record and the source of each datum")
    p.add_argument("name", help="name, formula or CAS number")
    command("keys", "print the case-file reference: every table and key, with units")
    p = command("demo", "run the bundled demo cases (an invented ammonia loop and CO2-to-methanol pilot) end to "
                        "end and write their reports")
    p.add_argument("--out", dest="folder", default="demo-output", metavar="DIR",
                   help="folder for the reports (default: demo-output)")
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``hipeq`` command; returns the exit code."""
    parser = build_parser()
    if not (sys.argv[1:] if argv is None else list(argv)):
        parser.print_help()
        print("\nStart here: `hipeq demo` runs the two invented demo cases end to end; `hipeq keys` lists what a "
              "case file may hold.")
        return EXIT_BAD_INPUT
    args = parser.parse_args(argv)
    try:
        if args.command in CASE_COMMANDS:
            only = None if args.command == "run" else [args.command]
            return run_case(args.case, args.json_out, only=only, html_out=args.html_out, folder=args.folder)
        if args.command == "reaction":
            return show_reaction(args.reaction, args.t_from, args.t_to, args.count)
        if args.command == "species":
            return show_species(args.name)
        if args.command == "score":
            return _score_command(args)
        if args.command == "demo":
            return run_demo(args.folder)
        return show_keys()
    except HipeqError as err:
        print(f"hipeq: error: {err}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except BrokenPipeError:  # the reader went away (e.g. `hipeq run case.toml | head`): stop quietly
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return EXIT_OK


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
