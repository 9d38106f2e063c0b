"""Regenerate every validation table of docs/ and the scoring figures (``make validation-docs``).

    .venv/bin/python docs/tools/validation_docs.py            # all but the equation-of-state tables, the figures
    .venv/bin/python docs/tools/validation_docs.py --eos      # also the equation-of-state tables (CoolProp)
    .venv/bin/python docs/tools/validation_docs.py --check    # exit 1 when a generated block differs from docs
    .venv/bin/python docs/tools/validation_docs.py --eos --check   # the same with the equation-of-state tables

Each table sits between ``<!-- table: NAME -->`` and ``<!-- end table -->`` in its document and is replaced in
place by docs/tools/doc_blocks.py (the one mechanism of every generator here); the prose around it is left alone.
Literature values (measured equilibria, K correlations, JANAF tables) come from the bundled data sets
(``hipeq.load_dataset``), the named K sources of ``hipeq.data.ksources`` and the data files and constants named in
each generator, with their citations; only hipeq's columns and the differences are computed.

* docs/ammonia_validation.md: ``scores``, the bundled ammonia data sets (Larson & Dodge 1923, measured; Larson
  1924, from memory) scored with :func:`hipeq.score_models` for the fugacity models hipeq has and two K sources,
  figures docs/figures/scoring_ammonia_parity.png/.svg and scoring_ammonia_errors.png/.svg; ``study-*``, Tables
  1-6, the checks and "Results in brief" of the model study (docs/tools/ammonia_study.py: its own solver and
  cubics, CoolProp reference equations, the NIST-JANAF tables, Gillespie & Beattie 1930).
* docs/scoring.md, ``k-sources``: ln K of the methanol and ammonia reactions from every K source;
  ``standard-state``: the bundled ΔfH°, S°, ΔfG° and ΔrG° against the NIST-JANAF tables (Chase 1998) and the
  ammonia K against Gillespie & Beattie (1930), with the bounds of tests/validation/standard_state_cases.py; and
  ``methanol``: the equilibrium methanol mole fraction each K source gives (SRK, an invented syngas).
* docs/solvers.md: ``solver-ammonia`` (Larson & Dodge 1923 against PR, SRK, ideal gas), ``solver-methanol`` (Graaf
  et al. 1986 and Graaf & Winkelman 2016 K against hipeq's K), ``reliability-summary`` (summarised from the
  generated table of docs/reliability.md; docs/tools/reliability_table.py reruns that, a long run of its own).
* docs/eos_validation.md and docs/hydrogen.md (``--eos``): docs/tools/eos_validation_table.py (pure fluids and
  the H2-N2 pair against CoolProp's reference equations; thermo PRMIX/SRKMIX cross-check). Its cost-of-a-call
  table is a timing, not a validation: run that script itself to measure it again. docs/energy.md (``--eos``),
  ``residual-enthalpy``: docs/tools/energy_tables.py (residual enthalpy against the reference equations); that
  script writes the document's demo tables and figures itself.

Equilibrium is a thermodynamic limit, not a design basis for pressure equipment; local codes and licensed
engineering practice govern.
"""
from __future__ import annotations

import argparse
import re
import sys
import time
from pathlib import Path

import numpy as np

import hipeq  # noqa: E402
from hipeq.analysis.figures import error_figure, parity_figure, save  # noqa: E402
from hipeq.data.ksources import resolve_k_source  # noqa: E402
from hipeq.data.thermochem import ln_equilibrium_constants  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parent))
from doc_blocks import ROOT, replace_tables  # noqa: E402  (the one marker mechanism)
import vle_table  # noqa: E402  (docs/tools/vle_table.py: the published-VLE table of docs/phases.md)

DOCS = ROOT / "docs"
ATM = 101325.0
KZ = {("N2", "H2"): 0.0, ("N2", "NH3"): 0.0, ("H2", "NH3"): 0.0}
BEST = {"eos": "PR78", "kij": "e-ppr78", "volume_translation": "peneloux"}
# labels as in Table 1 of docs/ammonia_validation.md (written by docs/tools/ammonia_study.py with its own solver)
AMMONIA_MODELS = [
    ("ideal gas", {"eos": "ideal"}),
    ("LR", {"eos": "lewis-randall"}),
    ("SRK", {"eos": "SRK", "kij": KZ}),
    ("PR", {"eos": "PR", "kij": KZ}),
    ("PR78", {"eos": "PR78", "kij": KZ}),
    ("Best", BEST),
    ("PR, K JANAF Hf", {"eos": "PR", "kij": KZ, "K_source": {"Hf": "JANAF"}}),
    ("Best, K JANAF Hf", {**BEST, "K_source": {"Hf": "JANAF"}}),
    ("PR, K G&B 1930", {"eos": "PR", "kij": KZ, "K_source": "gillespie-beattie-1930"}),
]
AMMONIA_SETS = ["ammonia-larson-dodge-1923", "ammonia-larson-1924"]
AMMONIA_BANDS = ["100 atm", "300 atm", "600 atm", "1000 atm"]

METHANOL_SPECIES = ["CO", "CO2", "H2", "H2O", "CH3OH"]
METHANOL_REACTIONS = ["CO + 2 H2 = CH3OH", "CO2 + H2 = CO + H2O"]
METHANOL_FEED = {"CO": 0.10, "CO2": 0.10, "H2": 0.70}  # invented syngas [mol] (with 0.10 of nothing else)
K_SOURCES = ["bundled", "graaf-1986", "graaf-winkelman-2016", "JANAF", "CRC", "Hf=ATcT, S0=JANAF"]


def ammonia_scores() -> hipeq.analysis.scoring.Scores:  # type: ignore[name-defined]
    """The bundled ammonia data sets scored with the models of the docs (cumulative atm bands)."""
    return hipeq.score_models(AMMONIA_SETS, AMMONIA_MODELS, bands=AMMONIA_BANDS, cumulative=True, band_unit="atm")


def ammonia_block(scores=None) -> str:
    """The generated block of docs/ammonia_validation.md."""
    s = ammonia_scores() if scores is None else scores
    out = ["<!-- generated by docs/tools/validation_docs.py (hipeq.score_models); do not edit by hand -->", "",
           "Ranked by RMS error over all 37 points [mole-percent points of NH3, model minus measurement]; the band "
           "columns are cumulative maxima of |error|. K: bundled = ATcT Hf, CRC S0 (hipeq.data); JANAF Hf = the "
           "NH3 formation enthalpy of NIST-JANAF (-45.898 instead of -45.558 kJ/mol); G&B 1930 = the Ka "
           "correlation of Gillespie & Beattie (1930).", "", s.markdown(), "",
           "Per point (`*`: value from memory, +-0.5 point):", "", s.points_markdown(pressure_unit="atm"), "",
           "Worst points of the best-ranked model: " + "; ".join(
               f"{w['T'] - 273.15:.0f} °C, {w['P'] / ATM:.0f} atm: {w['error']:+.2f}"
               for w in s.worst(3, s.ranking[0])) + "."]
    return "\n".join(out)


def ammonia_figures(scores, folder: Path) -> list[Path]:
    """The parity and error figures of the ammonia scores (models of hipeq's own K only, for legibility)."""
    import matplotlib

    shown = ["ideal gas", "LR", "SRK", "PR", "Best"]
    with matplotlib.rc_context({"svg.hashsalt": "hipeq-docs"}):  # the same element ids on every run
        written = save(parity_figure(scores, models=shown), folder / "scoring_ammonia_parity")
        written += save(error_figure(scores, models=shown), folder / "scoring_ammonia_errors")
    for path in written:  # and no date: a regeneration that changes nothing leaves the files as they were
        if path.suffix == ".svg":
            path.write_text(re.sub(r"\s*<dc:date>[^<]*</dc:date>", "", path.read_text(encoding="utf-8")),
                            encoding="utf-8")
    return written


def k_source_block() -> str:
    """ln K of CO + 2 H2 = CH3OH and CO2 + H2 = CO + H2O from every K source at 473-543 K (Graaf's measured
    range), and K of 1/2 N2 + 3/2 H2 = NH3 relative to the bundled value."""
    T = np.array([473.15, 498.15, 523.15, 543.15])
    lines = ["<!-- generated by docs/tools/validation_docs.py; do not edit by hand -->", "",
             "| K source | T [K] | ln K1 (CO + 2 H2 = CH3OH) | K1 / K1(Graaf 1986) | ln K2 (CO2 + H2 = CO + H2O) | "
             "K2 / K2(Graaf 1986) |", "|---|---|---|---|---|---|"]
    graaf = resolve_k_source("graaf-1986", METHANOL_REACTIONS, METHANOL_SPECIES)(T)
    for src in K_SOURCES:
        values = (ln_equilibrium_constants(METHANOL_REACTIONS, METHANOL_SPECIES, T) if src == "bundled" else
                  resolve_k_source(src, METHANOL_REACTIONS, METHANOL_SPECIES)(T))
        for k, t in enumerate(T):
            lines.append(f"| {src} | {t:.2f} | {values[k, 0]:+.4f} | {np.exp(values[k, 0] - graaf[k, 0]):.3f} | "
                         f"{values[k, 1]:+.4f} | {np.exp(values[k, 1] - graaf[k, 1]):.3f} |")
    T2 = np.array([598.15, 673.15, 773.15])
    rx, sp = ["0.5 N2 + 1.5 H2 = NH3"], ["N2", "H2", "NH3"]
    base = ln_equilibrium_constants(rx, sp, T2)[:, 0]
    lines += ["", "| K source | K(NH3) / K(bundled) at 325 / 400 / 500 °C |", "|---|---|"]
    for src in ["gillespie-beattie-1930", "JANAF", "CRC", "WebBook"]:
        other = resolve_k_source(src, rx, sp)(T2)[:, 0]
        lines.append(f"| {src} | " + " / ".join(f"{v:.3f}" for v in np.exp(other - base)) + " |")
    return "\n".join(lines)


def methanol_block() -> str:
    """y_CH3OH with SRK for every K source over an invented syngas, at 473-543 K and 50 / 80 bar."""
    T, P = np.meshgrid([473.15, 523.15, 543.15], [50e5, 80e5], indexing="ij")
    T, P = T.ravel(), P.ravel()
    ys = {}
    for src in K_SOURCES:
        system = hipeq.ReactionSystem(METHANOL_SPECIES, METHANOL_REACTIONS, eos="SRK", K_source=src)
        res = system.equilibrium(feed=METHANOL_FEED, T=T, P=P)
        assert np.all(res.converged), src
        ys[src] = np.asarray(res.y["CH3OH"])
    head = ["T [K]", "P [bar]"] + [f"y_CH3OH, {s}" for s in K_SOURCES] + ["bundled - graaf-1986"]
    lines = ["<!-- generated by docs/tools/validation_docs.py; do not edit by hand -->", "",
             "| " + " | ".join(head) + " |", "|" + "---|" * len(head)]
    for k in range(T.size):
        cells = [f"{T[k]:.2f}", f"{P[k] / 1e5:.0f}"] + [f"{ys[s][k]:.4f}" for s in K_SOURCES]
        cells.append(f"{ys['bundled'][k] - ys['graaf-1986'][k]:+.4f}")
        lines.append("| " + " | ".join(cells) + " |")
    return "\n".join(lines)


def standard_state_block() -> str:
    """hipeq's standard-state data (ATcT ΔfH°, CRC S°, TRC Cp integrals) beside the NIST-JANAF tables (Chase 1998,
    package ``janaf``) and the ammonia K of Gillespie & Beattie (1930), with the bounds of
    tests/validation/test_standard_state_validation.py (tests/validation/standard_state_cases.py)."""
    sys.path.insert(0, str(ROOT / "tests" / "validation"))
    import standard_state_cases as sc

    from hipeq.data.thermochem import reaction_gibbs, standard_entropies

    T = sc.T_GRID[1:]  # 300-1000 K
    lines = ["<!-- generated by docs/tools/validation_docs.py; do not edit by hand -->", "",
             "| species | ΔfH°(298.15 K), hipeq [kJ/mol] | NIST-JANAF | hipeq - JANAF | bound | S°(298.15 K), hipeq "
             "[J/(mol K)] | NIST-JANAF | hipeq - JANAF | max abs(ΔfG° hipeq - JANAF), 300-1000 K [kJ/mol] | bound | "
             "max abs(d [ΔfH°(T) - ΔfH°(298.15 K)]), 300-1000 K [J/mol] | bound |", "|---|" + "---:|" * 11]
    for name in sc.COMPOUNDS:
        dfH, dfG = sc.our_formation(name, sc.T_GRID)
        jH, jG = sc.janaf_values(name, "delta-f H", sc.T_GRID), sc.janaf_values(name, "delta-f G", sc.T_GRID)
        s_ours = float(standard_entropies([name], 298.15)[0])
        s_janaf = float(sc.janaf_values(name, "S", np.array([298.15]))[0])
        d_cp = np.max(np.abs((dfH - dfH[0]) - (jH - jH[0])))
        lines.append(f"| {name} | {dfH[0] / 1e3:.3f} | {jH[0] / 1e3:.3f} | {(dfH[0] - jH[0]) / 1e3:+.3f} | "
                     f"{sc.HF_TOL[name] / 1e3:.2f} | {s_ours:.2f} | {s_janaf:.3f} | {s_ours - s_janaf:+.2f} | "
                     f"{np.max(np.abs(dfG[1:] - jG[1:])) / 1e3:.3f} | "
                     f"{(sc.HF_TOL[name] + sc.S_ROUNDING_TOL * sc.T_GRID.max()) / 1e3:.2f} | {d_cp:.0f} | "
                     f"{sc.CP_TOL:.0f} |")
    lines += ["", "| reaction | max abs(ΔrG° hipeq - JANAF), 300-1000 K [kJ/mol] | bound |", "|---|---:|---:|"]
    for text in sc.GAS_REACTIONS:
        d = np.max(np.abs(reaction_gibbs(text, T) - sc.janaf_reaction_gibbs(text, T)))
        lines.append(f"| {text} | {d / 1e3:.3f} | {sc.reaction_tolerance(text, T) / 1e3:.2f} |")
    t_k = sc.GB_T
    rx, sp = ["0.5 N2 + 1.5 H2 = NH3"], ["N2", "H2", "NH3"]
    gb = resolve_k_source("gillespie-beattie-1930", rx, sp)(t_k)[:, 0]
    ours = ln_equilibrium_constants(rx, sp, t_k)[:, 0]
    janaf_ln_k = -sc.janaf_values("NH3", "delta-f G", t_k) / (sc.R * t_k)
    lines += ["", "| K of 1/2 N2 + 3/2 H2 = NH3 over K of Gillespie & Beattie (1930) | "
              + " | ".join(f"{t:.0f} K" for t in t_k) + " | allowed |", "|---|" + "---:|" * (t_k.size + 1),
              f"| hipeq (bundled) | {' | '.join(f'{v:.3f}' for v in np.exp(ours - gb))} | "
              f"{sc.GB_RATIO_OURS[0]:.2f}-{sc.GB_RATIO_OURS[1]:.2f} |",
              f"| NIST-JANAF ΔfG° | {' | '.join(f'{v:.3f}' for v in np.exp(janaf_ln_k - gb))} | "
              f"{sc.GB_RATIO_JANAF[0]:.2f}-{sc.GB_RATIO_JANAF[1]:.2f} |"]
    return "\n".join(lines)


# ------------------------------------------------------------------------------------------------------------------
# docs/solvers.md
# ------------------------------------------------------------------------------------------------------------------
SOLVER_AMMONIA_MODELS = [("PR", "PR"), ("SRK", "SRK"), ("ideal gas", "ideal")]  # databank k_ij (hipeq's default)
GRAAF_T = [473.15, 523.15, 573.15]
GRAAF_P = [50e5, 75e5, 100e5]


def solver_ammonia_block() -> str:
    """Larson & Dodge (1923) against hipeq's PR, SRK (databank k_ij) and the ideal gas, with hipeq's own K."""
    data = hipeq.load_dataset("ammonia-larson-dodge-1923")
    measured = 100.0 * np.asarray(data.measured[("y", "NH3")])
    feed = {s: data.feed[:, k] for k, s in enumerate(data.feed_species)}
    y = {}
    for label, eos in SOLVER_AMMONIA_MODELS:
        res = hipeq.ReactionSystem(["N2", "H2", "NH3"], ["0.5 N2 + 1.5 H2 = NH3"], eos=eos).equilibrium(
            feed=feed, T=data.T, P=data.P)
        assert np.all(res.converged), label
        y[label] = 100.0 * np.asarray(res.y["NH3"])
    t_c, p_atm = data.T - 273.15, data.P / ATM
    lines = ["<!-- generated by docs/tools/validation_docs.py; do not edit by hand -->", "",
             "| T / degC | P / atm | measured | PR | PR - measured | SRK - measured | ideal gas - measured |",
             "|---:|---:|---:|---:|---:|---:|---:|"]
    for k in range(len(data)):
        lines.append(f"| {t_c[k]:.0f} | {p_atm[k]:.0f} | {measured[k]:.2f} | {y['PR'][k]:.2f} | "
                     + " | ".join(f"{y[m][k] - measured[k]:+.2f}" for m, _ in SOLVER_AMMONIA_MODELS) + " |")
    parts = []
    for label, _ in SOLVER_AMMONIA_MODELS:
        d = y[label] - measured
        k = int(np.argmax(np.abs(d)))
        parts.append(f"{label} {abs(d[k]):.2f} at {t_c[k]:.0f} C / {p_atm[k]:.0f} atm, mean {np.mean(d):+.2f}, "
                     f"rms {np.sqrt(np.mean(d * d)):.2f}")
    flagged = [f"{t_c[k]:.0f} C / {p_atm[k]:.0f} atm" for k in range(len(data)) if data.note[k]]
    lines += ["", "Summary (mole-% points; largest deviation, mean, rms): " + "; ".join(parts) + "."
              + (f" Flagged in the data file for extra care: {', '.join(flagged)}." if flagged else "")]
    return "\n".join(lines)


def solver_methanol_block() -> str:
    """y_CH3OH (SRK, invented syngas) with the K of Graaf et al. (1986), Graaf & Winkelman (2016) and hipeq's own,
    and hipeq's ln K minus Graaf 1986's (named K sources of hipeq.data.ksources, each with its citation)."""
    T, P = np.meshgrid(GRAAF_T, GRAAF_P, indexing="ij")
    T, P = T.ravel(), P.ravel()
    y = {}
    for src in ("graaf-1986", "graaf-winkelman-2016", "bundled"):
        system = hipeq.ReactionSystem(METHANOL_SPECIES, METHANOL_REACTIONS, eos="SRK", K_source=src)
        res = system.equilibrium(feed=METHANOL_FEED, T=T, P=P)
        assert np.all(res.converged), src
        y[src] = np.asarray(res.y["CH3OH"])
    d_ln_k = (ln_equilibrium_constants(METHANOL_REACTIONS, METHANOL_SPECIES, T)
              - resolve_k_source("graaf-1986", METHANOL_REACTIONS, METHANOL_SPECIES)(T))
    lines = ["<!-- generated by docs/tools/validation_docs.py; do not edit by hand -->", "",
             "| T / K | P / bar | y_CH3OH, Graaf 1986 K | Graaf & Winkelman 2016 K | hipeq K | hipeq - Graaf 1986 | "
             "d ln K1 | d ln K2 |", "|---:|---:|---:|---:|---:|---:|---:|---:|"]
    for k in range(T.size):
        lines.append(f"| {T[k]:.2f} | {P[k] / 1e5:.0f} | {y['graaf-1986'][k]:.4f} | {y['graaf-winkelman-2016'][k]:.4f} "
                     f"| {y['bundled'][k]:.4f} | {y['bundled'][k] - y['graaf-1986'][k]:+.4f} | {d_ln_k[k, 0]:+.3f} | "
                     f"{d_ln_k[k, 1]:+.3f} |")
    spread = np.max(np.abs(y["graaf-winkelman-2016"] - y["graaf-1986"]))
    lines += ["", f"d ln K: hipeq's ln K minus Graaf 1986's. The two Graaf sources differ by at most {spread:.4f} "
                  "in y_CH3OH here."]
    return "\n".join(lines)


RELIABILITY_LABELS = {"ideal": "ideal gas", "virial": "truncated virial", "lewis-randall": "Lewis-Randall",
                      "SRK": "SRK", "PR": "PR", "PR78": "PR78"}


def reliability_summary_block(path: Path = DOCS / "reliability.md") -> str:
    """The summary of docs/solvers.md, read from the generated table of docs/reliability.md (rerun that with
    docs/tools/reliability_table.py): run, totals, and the converged range per model over systems and methods."""
    text = path.read_text(encoding="utf-8")
    run = re.search(r"Generated by `[^`]*`: (.*?); [0-9.]+ s\.", text).group(1)
    totals = re.search(r"Totals: (\d+) status-0 states failing a from-scratch check \(must be 0\); (\d+) "
                       r"scalar-vs-batch disagreements; (\d+) rows whose batch raised\.", text)
    failing, disagree, raised = (int(g) for g in totals.groups())
    sections = re.split(r"^### ", text, flags=re.M)
    ranges: dict[str, dict[str, list[float]]] = {}
    states = resolved = non_finite = 0
    for key, head in (("fixed", "Fixed temperature and pressure"), ("vessel", "Sealed vessel")):
        body = next(sec for sec in sections if sec.startswith(head))
        for line in body.splitlines():
            cells = [c.strip() for c in re.split(r"(?<!\\)\|", line.strip().strip("|"))]  # "\|" inside a cell
            if len(cells) < 11 or not cells[3].isdigit():
                continue
            ranges.setdefault(cells[1], {}).setdefault(key, []).append(float(cells[4].rstrip(" %")))
            states += int(cells[3])
            non_finite += int(cells[9])
            resolved += int(cells[10].split(" of ")[1])

    def span(values: list[float]) -> str:
        lo, hi = min(values), max(values)
        f = (lambda v: "100" if v == 100.0 else f"{v:.2f}")
        return f"{f(lo)} %" if lo == hi else f"{f(lo)}-{f(hi)} %"

    lines = ["<!-- generated by docs/tools/validation_docs.py from docs/reliability.md; do not edit by hand -->", "",
             f"Run: {run}.", "",
             f"- of the {states:,} states, {failing or 'none'} reported with status 0 failed a from-scratch check "
             "(element balances to the documented tolerance, every condition recomputed to 1e-9, finite outputs, "
             "amounts >= 0, pressure within 1e-2-1e10 Pa, the vessel's volume to 1e-9, the model ranges); "
             f"{non_finite or 'no'} failed states had a non-finite output; {raised or 'no'} batches raised;",
             f"- {resolved:,} states were solved again alone: {disagree} differed from their batch (status, "
             "liquid-like or |dy| > 1e-12; see \"One answer per state\");",
             "- converged, lowest to highest over the systems and both methods:", "",
             "| model | fixed T and P | sealed vessel |", "|---|---:|---:|"]
    for model, label in RELIABILITY_LABELS.items():
        if model in ranges:
            lines.append(f"| {label} | {span(ranges[model]['fixed'])} | {span(ranges[model]['vessel'])} |")
    return "\n".join(lines)


# ------------------------------------------------------------------------------------------------------------------
# everything
# ------------------------------------------------------------------------------------------------------------------
def study_blocks() -> dict[str, str]:
    """Tables 1-6, checks and "Results in brief" of docs/tools/ammonia_study.py (CoolProp, janaf)."""
    import ammonia_study

    return ammonia_study.run()[1]


def fast_tables(scores=None) -> dict[Path, dict[str, str]]:
    """Every generated block but the equation-of-state tables, by document (a few seconds once CoolProp and the
    compiled core are loaded; tests/validation/test_validation_docs.py compares them)."""
    return {DOCS / "ammonia_validation.md": {"scores": ammonia_block(scores), **study_blocks()},
            DOCS / "scoring.md": {"k-sources": k_source_block(), "standard-state": standard_state_block(),
                                  "methanol": methanol_block()},
            DOCS / "solvers.md": {"solver-ammonia": solver_ammonia_block(), "solver-methanol": solver_methanol_block(),
                                  "reliability-summary": reliability_summary_block()},
            vle_table.DOC: {vle_table.BLOCK: vle_table.block()}}


def eos_tables() -> dict[Path, dict[str, str]]:
    """The equation-of-state tables of docs/eos_validation.md and docs/hydrogen.md (no timing) and the residual
    enthalpy table of docs/energy.md (CoolProp's reference equations; docs/tools/energy_tables.py writes that
    document's other, non-validation, blocks and figures)."""
    import energy_tables
    import eos_validation_table

    return {**eos_validation_table.tables(timing=False),
            DOCS / "energy.md": {"residual-enthalpy": energy_tables.residual_enthalpy_table()}}


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--eos", action="store_true", help="also the equation-of-state tables (CoolProp)")
    ap.add_argument("--check", action="store_true", help="compare only; exit 1 when a block differs")
    args = ap.parse_args(argv)
    start = time.time()
    scores = ammonia_scores()
    tables = fast_tables(scores)
    if args.eos:
        tables.update(eos_tables())
    same = True
    for path, blocks in tables.items():
        same &= replace_tables(path, blocks, args.check)
    if not args.check:
        for p in ammonia_figures(scores, DOCS / "figures"):
            print(f"wrote {p.relative_to(ROOT)}")
    print(f"{sum(len(b) for b in tables.values())} blocks in {len(tables)} documents, {time.time() - start:.0f} s")
    if args.check and not same:
        print("generated validation tables differ from docs/: run make validation-docs and read the difference")
        return 1
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
