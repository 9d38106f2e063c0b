"""Regenerate the tables of docs/eos_validation.md and docs/hydrogen.md.

    .venv/bin/python docs/tools/eos_validation_table.py            # every table, the timing table too
    .venv/bin/python docs/tools/eos_validation_table.py --check    # compare only (no timing)

Each table sits between ``<!-- table: NAME -->`` and ``<!-- end table -->`` in its document and is replaced in
place (docs/tools/doc_blocks.py); the prose around it is left alone. ``make validation-docs`` runs it without the
timing table (docs/tools/validation_docs.py --eos); run this script itself to measure the cost of a call again,
``--check`` to compare only. The numbers come from the same helpers the validation tests use
(tests/validation/coolprop_cases.py, tests/validation/thermo_cases.py), and the bounds printed beside them are the
ones the tests enforce.
"""
from __future__ import annotations

import platform
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


def tables(timing: bool = False) -> dict[Path, dict[str, str]]:
    """The generated blocks of docs/eos_validation.md and docs/hydrogen.md by document; the cost-of-a-call table
    (``timing``) only when asked: it is a measurement of this machine at this moment, not a validation."""
    eos = {"coolprop": coolprop_table(), "liquid": liquid_table(), "thermo": thermo_table()}
    if timing:
        eos["timing"] = timing_table()
    return {ROOT / "docs" / "eos_validation.md": eos,
            ROOT / "docs" / "hydrogen.md": {"hydrogen": hydrogen_table(),
                                            "hydrogen-enthalpy": hydrogen_enthalpy_table(),
                                            "mixture": mixture_table()}}


def main(argv: list[str] | None = None) -> int:
    import argparse

    from doc_blocks import replace_tables

    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--check", action="store_true", help="compare only (timing table excluded); exit 1 on a difference")
    args = ap.parse_args(argv)
    same = True
    for path, blocks in tables(timing=not args.check).items():
        same &= replace_tables(path, blocks, args.check)
    return 0 if same else 1

if __name__ == "__main__":
    raise SystemExit(main())
