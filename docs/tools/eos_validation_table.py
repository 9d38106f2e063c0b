"""Regenerate the tables of docs/eos_validation.md and docs/hydrogen.md.

    NUMBA_CACHE_DIR=.numba_cache .venv/bin/python docs/tools/eos_validation_table.py

Each table sits between ``<!-- table: NAME -->`` and ``<!-- end table -->`` in its document and is replaced in
place; the prose around it is left alone. The numbers come from the same helpers the validation tests use
(tests/validation/coolprop_cases.py, tests/validation/thermo_cases.py), and the bounds printed beside them are the
ones the tests enforce.
"""
from __future__ import annotations

import platform
import re
import sys
import timeit
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT / "tests" / "validation"))

import coolprop_cases as cc  # noqa: E402
import thermo_cases as tc  # noqa: E402

from hipeq.models import build_model, fugacity_coefficients  # noqa: E402


def _fmt(value: float | None, digits: int = 4) -> str:
    return "-" if value is None or not np.isfinite(value) else f"{value:.{digits}f}"


def coolprop_table() -> str:
    lines = ["| fluid (reference EOS) | model | max abs(d ln phi), 10-100 bar | bound | max abs(d ln phi), "
             "10-1000 bar | bound | worst state | no root |", "|---|---|---|---|---|---|---|---|"]
    for fluid, (_, source) in cc.FLUIDS.items():
        ref = cc.reference(fluid)
        for label, (eos, options) in cc.MODELS.items():
            low, high, (T, P), invalid = cc.band_maxima(ref, cc.model_errors(ref, eos, options)[0])
            b_low, b_high = cc.BOUNDS.get((fluid, label), (None, None))
            shown_high = "-" if invalid else _fmt(high)
            lines.append(f"| {fluid} ({source.split(',')[0]}) | {label} | {_fmt(low)} | {_fmt(b_low, 3)} | "
                         f"{shown_high} | {_fmt(b_high, 3)} | {T:.0f} K, {P / 1e5:.0f} bar | {invalid or ''} |")
    return "\n".join(lines)


def liquid_table() -> str:
    lines = ["| fluid | T [K] | P [bar] | reference phase | model | d ln phi | model root |",
             "|---|---|---|---|---|---|---|"]
    for fluid in cc.FLUIDS:
        ref = cc.reference(fluid)
        for index in zip(*np.nonzero(ref.liquid)):
            for label, (eos, options) in cc.MODELS.items():
                errors, liquid = cc.model_errors(ref, eos, options)
                err = errors[index]
                root = "none" if np.isnan(err) else ("liquid-like" if liquid[index] else "gas-like/single")
                lines.append(f"| {fluid} | {ref.T[index]:.0f} | {ref.P[index] / 1e5:.0f} | {ref.phase_name(index)} | "
                             f"{label} | {_fmt(err)} | {root} |")
    return "\n".join(lines)


def thermo_table() -> str:
    lines = ["| model | species set | states | thermo root 'l' | max abs(d ln phi) | max rel. d Z | "
             "max abs(d h_res) [J/mol] |", "|---|---|---|---|---|---|---|"]
    for eos in tc.THERMO:
        for set_name, names in tc.SETS.items():
            model = build_model(names, eos)
            T, P, Y = tc.random_states(eos, set_name)
            ours = fugacity_coefficients(names, T, P, Y, eos)
            d_ln, d_z, d_h, n_l = 0.0, 0.0, 0.0, 0
            for k in range(len(T)):
                state, phase = tc.thermo_state(eos, model, T[k], P[k], Y[k])
                n_l += phase == "l"
                d_ln = max(d_ln, float(np.max(np.abs(ours.ln_phis[k] - getattr(state, f"lnphis_{phase}")))))
                d_z = max(d_z, abs(ours.Z[k] / getattr(state, f"Z_{phase}") - 1.0))
                d_h = max(d_h, abs(ours.h_res[k] - getattr(state, f"H_dep_{phase}")))
            lines.append(f"| {eos} | {set_name} ({', '.join(names)}) | {len(T)} | {n_l} | {d_ln:.1e} | {d_z:.1e} | "
                         f"{d_h:.1e} |")
    return "\n".join(lines)


def hydrogen_table() -> str:
    ref = cc.reference("H2")
    head = " | ".join(f"{p / 1e5:.0f} bar" for p in cc.PRESSURES)
    lines = [f"| option | {head} | bound (all) |", "|---|" + "---|" * (len(cc.PRESSURES) + 1)]
    for label, (eos, options) in cc.HYDROGEN_OPTIONS.items():
        errors = cc.model_errors(ref, eos, options)[0]
        worst = np.max(np.abs(errors), axis=0)
        signed = [errors[np.argmax(np.abs(errors[:, j])), j] for j in range(len(cc.PRESSURES))]
        cells = " | ".join(f"{w:.4f} ({'+' if s > 0 else '-'})" for w, s in zip(worst, signed))
        lines.append(f"| {label} | {cells} | {_fmt(cc.HYDROGEN_BOUNDS.get(label), 3)} |")
    return "\n".join(lines)


def hydrogen_enthalpy_table() -> str:
    ref = cc.reference("H2")
    head = " | ".join(f"{p / 1e5:.0f} bar" for p in cc.PRESSURES)
    lines = [f"| option | {head} | bound (all) |", "|---|" + "---|" * (len(cc.PRESSURES) + 1)]
    for label, (eos, options) in cc.HYDROGEN_OPTIONS.items():
        errors = cc.model_errors(ref, eos, options, "h_res")[0]
        worst = np.max(np.abs(errors), axis=0)
        lines.append(f"| {label} | " + " | ".join(f"{w:.0f}" for w in worst)
                     + f" | {cc.HYDROGEN_H_BOUNDS[label]:.0f} |")
    reference_row = " | ".join(f"{lo:.0f}-{hi:.0f}" for lo, hi in zip(ref.h_res.min(axis=0), ref.h_res.max(axis=0)))
    lines.append(f"| *reference h_res itself, 400-900 K* | {reference_row} | |")
    return "\n".join(lines)


def mixture_table() -> str:
    head = " | ".join(f"H2 / N2 at {p / 1e5:.0f} bar" for p in cc.MIXTURE_PRESSURES)
    lines = [f"| option | {head} | bound (all) |", "|---|" + "---|" * (len(cc.MIXTURE_PRESSURES) + 1)]
    for label, (eos, options) in cc.HYDROGEN_OPTIONS.items():
        worst = np.max(np.abs(cc.mixture_errors(eos, options)), axis=0)  # (nP, 2)
        lines.append(f"| {label} | " + " | ".join(f"{h:.4f} / {n:.4f}" for h, n in worst)
                     + f" | {cc.MIXTURE_BOUNDS[label]:.3f} |")
    return "\n".join(lines)


def timing_table() -> str:
    names = ["H2", "N2", "NH3", "CH4", "Ar"]
    y = [0.6, 0.2, 0.1, 0.05, 0.05]
    model = build_model(names, "PR")
    T = np.linspace(400.0, 900.0, 10_000)
    cases = {
        "fugacity_coefficients(names, T, P, y), one state, 5 components, PR":
            lambda: fugacity_coefficients(names, 700.0, 3e7, y),
        "CompiledModel.fugacity_coefficients(T, P, y), one state": lambda: model.fugacity_coefficients(700.0, 3e7, y),
        "build_model(names, 'PR') (cached)": lambda: build_model(names, "PR"),
        "fugacity_coefficients, 10,000 states in one call, per state":
            lambda: fugacity_coefficients(names, T, 3e7, y),
    }
    lines = ["| call | time |", "|---|---|"]
    for label, call in cases.items():
        call()
        number = 20 if "10,000" in label else 2000
        best = min(timeit.repeat(call, number=number, repeat=7)) / number
        per = best / T.size if "10,000" in label else best
        unit, scale = ("ns", 1e9) if "10,000" in label else ("us", 1e6)
        lines.append(f"| {label} | {per * scale:.1f} {unit} |")
    lines.append(f"\nMeasured on {platform.machine()}, Python {platform.python_version()}, best of 7 repeats, "
                 "numba cache warm.")
    return "\n".join(lines)


def replace_tables(path: Path, tables: dict[str, str]) -> None:
    text = path.read_text(encoding="utf-8")
    for name, body in tables.items():
        pattern = re.compile(rf"(<!-- table: {re.escape(name)} -->\n).*?(<!-- end table -->)", re.S)
        if not pattern.search(text):
            raise SystemExit(f"{path}: no block for table {name!r}")
        text = pattern.sub(lambda m: m.group(1) + body + "\n" + m.group(2), text)
    path.write_text(text, encoding="utf-8")
    print(f"updated {path.relative_to(ROOT)}: {', '.join(tables)}")


def main() -> None:
    replace_tables(ROOT / "docs" / "eos_validation.md",
                   {"coolprop": coolprop_table(), "liquid": liquid_table(), "thermo": thermo_table(),
                    "timing": timing_table()})
    replace_tables(ROOT / "docs" / "hydrogen.md", {"hydrogen": hydrogen_table(), "hydrogen-enthalpy": hydrogen_enthalpy_table(),
                                                     "mixture": mixture_table()})


if __name__ == "__main__":
    main()
