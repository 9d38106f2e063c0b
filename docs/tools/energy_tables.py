"""Regenerate the tables and figures of docs/energy.md.

    HIPEQ_QUIET=1 .venv/bin/python docs/tools/energy_tables.py

Tables sit between ``<!-- table: NAME -->`` and ``<!-- end table -->`` and are replaced in place
(docs/tools/doc_blocks.py). The residual
enthalpy comparison uses tests/validation/residual_enthalpy_cases.py (the bounds printed are the ones the tests
hold); the converter is the invented demo of the document. Figures: docs/figures/staged_beds.png/.svg (inter-bed
coolers) and docs/figures/staged_beds_quench.png/.svg.
"""
from __future__ import annotations

import platform
import sys
from pathlib import Path

import CoolProp
import matplotlib

matplotlib.use("Agg")

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT / "tests" / "validation"))

import residual_enthalpy_cases as rc  # noqa: E402
from coolprop_cases import FLUIDS  # noqa: E402

import hipeq  # noqa: E402
from hipeq.analysis._common import model_choice  # noqa: E402

DOC = ROOT / "docs" / "energy.md"
FIGURES = ROOT / "docs" / "figures"
SPECIES = ["N2", "H2", "NH3", "Ar"]
FEED = {"N2": 0.24, "H2": 0.72, "NH3": 0.02, "Ar": 0.02}  # invented converter feed [mol]
P = 250e5
INLETS = [673.15, 683.15, 683.15]


def residual_enthalpy_table() -> str:
    lines = ["| species (reference EOS) | model | states | max abs(d h_res) [J/mol] | bound | worst state | "
             "reference h_res there [J/mol] | rms [J/mol] | largest abs(h_res) [J/mol] |",
             "|---|---|---|---|---|---|---|---|---|"]
    for species in rc.SPECIES:
        for model in rc.MODELS:
            c = rc.comparison(species, model)
            worst, T, P_w, ref = c.worst()
            lines.append(f"| {species} ({FLUIDS[species][1]}) | {model} | {int(c.gas.sum())} | {worst:.0f} | "
                         f"{rc.H_RES_BOUNDS[(species, model)]:.0f} | {T:g} K, {P_w / 1e5:g} bar | {ref:.0f} | "
                         f"{c.rms():.0f} | {c.largest_reference():.0f} |")
    lines.append(f"\nCoolProp {CoolProp.__version__}, Python {platform.python_version()}.")
    return "\n".join(lines)


def adiabatic_table() -> str:
    system = hipeq.ReactionSystem(SPECIES)
    lines = ["| model | T_out [K] | rise [K] | N2 conversion [%] | NH3 [mol %] | from conversion [K] | "
             "from residual enthalpy [K] | heat removed, isothermal at 673.15 K [J] |",
             "|---|---|---|---|---|---|---|---|"]
    ideal = system.with_model(eos="ideal").adiabatic_equilibrium(FEED, 673.15, P)
    duty = hipeq.reactor_duty(system.with_model(eos="ideal"), FEED, 673.15, P).heat_removed
    x = (FEED["N2"] - ideal.amounts["N2"]) / FEED["N2"]
    lines.append(f"| ideal | {ideal.T:.3f} | {ideal.temperature_rise:.3f} | {100 * x:.3f} | "
                 f"{100 * ideal.y['NH3']:.3f} | - | - | {duty:.1f} |")
    for model in ("PR", "SRK", "PR78+E-PPR78+Peneloux"):
        e = hipeq.real_gas_effect(system, FEED, 673.15, P, model=model)
        choice = model_choice(model)
        real = system.with_model(**choice.options)
        out = real.adiabatic_equilibrium(FEED, 673.15, P)
        duty = hipeq.reactor_duty(real, FEED, 673.15, P).heat_removed
        lines.append(f"| {model} | {e.T_real:.3f} | {out.temperature_rise:.3f} | {100 * e.conversion_real:.3f} | "
                     f"{100 * out.y['NH3']:.3f} | {e.from_conversion:+.3f} | {e.from_residual_enthalpy:+.3f} | "
                     f"{duty:.1f} |")
    return "\n".join(lines)


def staged_table() -> str:
    system = hipeq.ReactionSystem(SPECIES)
    out = []
    for cooling, extra, name in (("exchanger", {}, "staged_beds"),
                                 ("quench", {"quench_temperature": 450.0}, "staged_beds_quench")):
        train = hipeq.staged_beds(system, FEED, P, INLETS, cooling=cooling, **extra)
        for ext in ("png", "svg"):
            train.figure(str(FIGURES / f"{name}.{ext}"))
        out.append(f"{cooling}:\n\n```\n{train.to_text()}\n```")
    return "\n\n".join(out)


def main() -> None:
    from doc_blocks import replace_tables

    FIGURES.mkdir(exist_ok=True)
    replace_tables(DOC, {"residual-enthalpy": residual_enthalpy_table(), "adiabatic": adiabatic_table(),
                         "staged": staged_table()})
    print(f"figures in {FIGURES}")

if __name__ == "__main__":
    main()
