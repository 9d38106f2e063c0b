"""The ``hipeq`` command line.

    hipeq run CASE.toml [--json OUT.json]     solve a case file: equilibrium, model comparison, sweep
    hipeq constant "N2 + 3 H2 = 2 NH3" --from "300 degC" --to "600 degC" --count 7
    hipeq species NAME                        show a species record with its data sources

Exit codes: 0 success, 1 a solve did not converge, 2 bad input (the message names the field).
"""
from __future__ import annotations

import argparse
import json
import sys
from collections.abc import Sequence

import numpy as np

from hipeq.errors import HipeqError, InputError

CAUTION = ("Caution: equilibrium is a thermodynamic limit, not a design basis for pressure equipment; "
           "follow local codes and licensed engineering practice.")
STANDARD_STATE = "standard state: ideal gas at 1 bar"


def _fmt(x: float) -> str:
    if x == 0.0:
        return "0"
    if 1e-3 <= abs(x) < 1e5:
        return f"{x:.5g}"
    return f"{x:.4e}"


def _table(header: Sequence[str], rows: Sequence[Sequence[str]]) -> str:
    widths = [max(len(str(c)) for c in col) for col in zip(header, *rows)]
    line = lambda cells: "  ".join(str(c).rjust(w) if i else str(c).ljust(w)  # noqa: E731
                                   for i, (c, w) in enumerate(zip(cells, widths)))
    rule = "  ".join("-" * w for w in widths)
    return "\n".join(["  " + line(header), "  " + rule] + ["  " + line(r) for r in rows])


def _system(case, eos: str):
    from hipeq.solvers.system import ReactionSystem

    # the case's k_ij belong to its own model; compared models use their defaults (the ideal gas has none)
    return ReactionSystem(list(case.species), reactions=list(case.reactions) if case.reactions else None,
                          eos=eos, kij=(case.kij or None) if eos == case.eos else None,
                          quantum_hydrogen=case.quantum_hydrogen)


def _solve(system, case, **conditions):
    if case.V is not None and "P" not in conditions:
        return system.equilibrium(feed=case.feed, T=conditions.get("T", case.T), V=case.V)
    return system.equilibrium(feed=case.feed, T=conditions.get("T", case.T), P=conditions.get("P", case.P))


def run_case(path: str, json_out: str | None = None, out=None) -> int:
    """Solve a case file and print the report; returns the process exit code."""
    out = out or sys.stdout
    from hipeq.interfaces.casefile import load_case

    case = load_case(path)
    system = _system(case, case.eos)
    result = _solve(system, case)
    print(f"hipeq | {case.title}", file=out)
    fixed = f"V = {case.V:.6g} m3" if case.V is not None else f"P = {case.P / 1e5:.6g} bar"
    print(f"  T = {case.T - 273.15:.2f} degC ({case.T:.2f} K), {fixed}, equilibrium P = "
          f"{result.P / 1e5:.6g} bar | model {case.eos}"
          f"{' (quantum H2)' if case.quantum_hydrogen else ''} | {STANDARD_STATE}", file=out)
    status = "converged" if result.converged else f"NOT CONVERGED: {result.message}"
    print(f"  solve: {status} in {result.iterations} iterations", file=out)
    print("", file=out)
    rrows = [[str(r), _fmt(result.K[i]), _fmt(result.K_phi[i]), _fmt(result.K_y[i])]
             for i, r in enumerate(system.reactions)]
    print(_table(["reaction", "K", "K_phi", "K_y"], rrows), file=out)
    print("", file=out)
    srows = []
    for name in system.species_names:
        srows.append([name, _fmt(case.feed.get(name, 0.0)), _fmt(result.amounts[name]),
                      f"{result.y[name]:.6f}", f"{result.phi[name]:.5f}"])
    print(_table(["species", "feed / mol", "equilibrium / mol", "mole fraction", "phi"], srows), file=out)

    compare = [m for m in case.compare_models]
    report: dict = {"case": case.title, "result": result.to_dict(), "comparison": {}, "sweep": None}
    if compare:
        print("", file=out)
        print("  Model comparison at the same conditions (equilibrium mole fractions):", file=out)
        shown = list(system.species_names)
        crow = []
        for model in compare:
            res = result if model == case.eos else _solve(_system(case, model), case)
            report["comparison"][model] = {n: res.y[n] for n in shown}
            crow.append([model] + [f"{res.y[n]:.5f}" for n in shown] + [f"{res.P / 1e5:.5g}"])
        print(_table(["model"] + shown + ["P / bar"], crow), file=out)
    if case.sweep_T is not None and case.sweep_P is not None and case.V is None:
        products = _products(system)
        key = products[0] if products else system.species_names[0]
        TT, PP = np.meshgrid(case.sweep_T, case.sweep_P, indexing="ij")
        batch = system.equilibrium(feed=case.feed, T=TT.ravel(), P=PP.ravel())
        grid = np.asarray(batch.y[key]).reshape(TT.shape)
        ok = np.asarray(batch.converged).reshape(TT.shape)
        print("", file=out)
        print(f"  Sweep with {case.eos}: equilibrium mole fraction of {key} (rows T, columns P)", file=out)
        header = ["T / degC"] + [f"{p / 1e5:.4g} bar" for p in case.sweep_P]
        rows = [[f"{t - 273.15:.1f}"] + [f"{grid[i, j]:.4f}" if ok[i, j] else "failed"
                                         for j in range(len(case.sweep_P))]
                for i, t in enumerate(case.sweep_T)]
        print(_table(header, rows), file=out)
        report["sweep"] = {"species": key, "T": case.sweep_T.tolist(), "P": case.sweep_P.tolist(),
                           "y": grid.tolist()}
    print("", file=out)
    print("  " + CAUTION, file=out)
    if json_out:
        report["caution"] = CAUTION
        with open(json_out, "w") as fh:
            json.dump(report, fh, indent=2, default=float)
    return 0 if result.converged else 1


def _products(system) -> list[str]:
    """Species formed by the system's reactions, in reaction order (the sweep reports the first)."""
    return [s for r in system.reactions for s, c in r.coefficients.items() if c > 0]


def show_constant(reaction: str, t_from: str, t_to: str, count: int, out=None) -> int:
    """Print K(T) of a reaction from Cp integrals and the constant-enthalpy van 't Hoff approximation."""
    out = out or sys.stdout
    from hipeq.data.thermochem import equilibrium_constant
    from hipeq.units import parse_quantity

    if count < 2:
        raise InputError("--count", "must be >= 2")
    T = np.linspace(parse_quantity(t_from, "temperature"), parse_quantity(t_to, "temperature"), count)
    k = equilibrium_constant(reaction, T)
    kv = equilibrium_constant(reaction, T, method="van-t-hoff")
    print(f"hipeq | K(T) of {reaction} | {STANDARD_STATE}", file=out)
    rows = [[f"{t - 273.15:.1f}", f"{t:.2f}", _fmt(a), _fmt(b), f"{100 * (b / a - 1):+.2f}"]
            for t, a, b in zip(T, k, kv)]
    print(_table(["T / degC", "T / K", "K (Cp integral)", "K (van 't Hoff)", "diff / %"], rows), file=out)
    return 0


def show_species(name: str, out=None) -> int:
    """Print one species record with the source of every datum."""
    out = out or sys.stdout
    from hipeq.data.species import species

    s = species(name)
    rows = [["name", s.name, ""], ["common name", s.common_name, ""], ["formula", s.formula, ""],
            ["CAS", s.cas, ""], ["molar mass / (g/mol)", f"{s.molar_mass * 1e3:.4f}", s.sources.get("molar_mass", "")],
            ["Tc / K", f"{s.Tc:.3f}", s.sources.get("Tc", "")], ["Pc / bar", f"{s.Pc / 1e5:.4f}", s.sources.get("Pc", "")],
            ["acentric factor", f"{s.omega:.4f}", s.sources.get("omega", "")],
            ["Hf(298.15 K) / (kJ/mol)", f"{s.Hf / 1e3:.3f}", s.sources.get("Hf", "")],
            ["Gf(298.15 K) / (kJ/mol)", f"{s.Gf / 1e3:.3f}", s.sources.get("Gf", "")],
            ["S0(298.15 K) / (J/mol/K)", f"{s.S0:.3f}", s.sources.get("S0", "")],
            ["Cp range / K", f"{s.cp.T_min:.0f} - {s.cp.T_max:.0f}", s.sources.get("cp", "")]]
    print(_table(["field", "value", "source"], rows), file=out)
    return 0


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of the ``hipeq`` command."""
    parser = argparse.ArgumentParser(prog="hipeq", description="Gas-phase reaction equilibrium at high pressure "
                                     "with real-gas fugacity corrections.", epilog=CAUTION)
    sub = parser.add_subparsers(dest="command", required=True)
    run = sub.add_parser("run", help="solve a TOML case file")
    run.add_argument("case", help="path of the case file")
    run.add_argument("--json", dest="json_out", help="also write the results to this JSON file")
    const = sub.add_parser("constant", help="equilibrium constant of a reaction over a temperature range")
    const.add_argument("reaction", help='e.g. "N2 + 3 H2 = 2 NH3"')
    const.add_argument("--from", dest="t_from", default="300 degC", help='start temperature, e.g. "300 degC"')
    const.add_argument("--to", dest="t_to", default="600 degC", help='end temperature, e.g. "600 degC"')
    const.add_argument("--count", type=int, default=7, help="number of temperatures")
    spec = sub.add_parser("species", help="show a species record and its data sources")
    spec.add_argument("name")
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``hipeq`` command; returns the exit code."""
    args = build_parser().parse_args(argv)
    try:
        if args.command == "run":
            return run_case(args.case, args.json_out)
        if args.command == "constant":
            return show_constant(args.reaction, args.t_from, args.t_to, args.count)
        return show_species(args.name)
    except HipeqError as err:
        print(f"hipeq: error: {err}", file=sys.stderr)
        return 2


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
