"""Regenerate the reliability table of the equilibrium solvers (markdown).

    NUMBA_CACHE_DIR=.numba_cache .venv/bin/python docs/tools/reliability_table.py              # to stdout
    NUMBA_CACHE_DIR=.numba_cache .venv/bin/python docs/tools/reliability_table.py out.md       # to a file
    .venv/bin/python docs/tools/reliability_table.py --states 2000                             # a quick run

For each system (ammonia loop; methanol with two reactions and with the derived set; steam reforming with ethane),
every fugacity model and both methods (extent, gibbs; ``--method`` picks one), random states with a fixed seed,
solved in one batch each:

- fixed T and P: 300-1500 K (uniform), 1-1000 bar (log-uniform);
- sealed vessel: the same temperatures, 0.1-1e5 mol/m3 (log-uniform);
- feeds: amounts 0.01-1 mol, each species absent with probability 0.3 or a 1e-12 trace with probability 0.15.

The states of a system are the same for every model, so the rows can be compared. Per row: converged %,
failures by status name and by reason (the messages grouped by their cause), the number of states reported
converged (status 0) that fail a from-scratch check (must be 0), non-finite outputs of failed states, and
scalar-vs-batch disagreements on a subsample (status, liquid_like, or |dy| > 1e-12 where both converged).

From-scratch checks of a status-0 state (nothing taken from the solver's own residual fields): element balances
|sum_i a_ei n_i - b_e| <= ELEMENT_RTOL b_e + ELEMENT_ATOL sum_e b_e with the element counts of
hipeq.species(name).elements; every equilibrium condition |sum_i nu_ki (ln y_i + ln phi_i) + sum_i nu_ki ln(P/1e5)
- ln K_k| <= 1e-9 (reactions re-parsed from the result's text, those with an absent species skipped); every output
finite; amounts >= 0; 1e-2 <= P <= 1e10 Pa; in a sealed vessel n_T Z R T / P = V to 1e-9, and the virial model
with |Z - 1| <= 0.5 and Lewis-Randall with P <= 2e8 Pa.
"""
from __future__ import annotations

import argparse
import platform
import sys
import time
from collections import Counter
from dataclasses import dataclass, field

import numba
import numpy as np

import hipeq
from hipeq.solvers import _common as C
from hipeq.solvers import result as result_module

R = 8.314462618  # J/(mol K), CODATA 2018 (exact)
P_FLOOR, P_CEILING = 1e-2, 1e10  # [Pa] documented pressure range (docs/solvers.md)
CONDITION_TOL = 1e-9
SAME_TOL = 1e-12
SEED = 20261203

SYSTEMS = {
    "ammonia loop": (("N2", "H2", "NH3", "Ar", "CH4"), None),
    "methanol, 2 reactions": (("CO", "CO2", "H2", "H2O", "CH3OH", "CH4", "N2"),
                              ("CO + 2 H2 = CH3OH", "CO2 + H2 = CO + H2O")),
    "methanol, derived set": (("CO", "CO2", "H2", "H2O", "CH3OH", "CH4", "N2"), None),
    "steam reforming + C2H6": (("CH4", "H2O", "CO", "CO2", "H2", "C2H6"), None),
}
MODELS = ("ideal", "virial", "lewis-randall", "SRK", "PR", "PR78")

# the solver's reason code per state (hipeq.solvers._common.REASON_*), else its status, -> a short label
REASON_LABELS = {
    C.REASON_BELOW_COVOLUME: "vessel: V at or below the co-volume",
    C.REASON_ABOVE_CEILING: "vessel: P would exceed 1e10 Pa",
    C.REASON_BELOW_FLOOR: "vessel: P would fall below 1e-2 Pa",
    C.REASON_NOT_ONE_PHASE: "vessel: no single phase fills it (a liquid would form)",
    C.REASON_VIRIAL_RANGE: "virial: |Z - 1| > 0.5",
    C.REASON_LEWIS_RANDALL_RANGE: "Lewis-Randall: P > 2e8 Pa",
    C.REASON_NOT_FINITE: "an output not finite",
    C.REASON_ELEMENTS: "an element balance open",
    C.REASON_TWO_PHASE_NOT_FOUND: "vessel: neither one phase nor a vapour and a liquid fill it",
}
STATUS_LABELS = {C.MAX_ITERATIONS: "iteration limit", C.STALLED: "stalled: no descent step",
                 C.NO_PHYSICAL_STATE: "model has no state", C.SINGULAR: "singular Newton system",
                 C.PRESSURE_NOT_FOUND: "vessel: no pressure found", C.INVALID_INPUT: "invalid input"}


def reason(status: int, code: int) -> str:
    """Short label of a failed state's cause, from its reason code or else its status."""
    return REASON_LABELS.get(code) or STATUS_LABELS.get(status, f"status {status}")


def status_names() -> tuple[str, ...]:
    try:
        status = hipeq.Status
    except AttributeError:  # versions before the Status enum
        status = None
    if status is not None:
        return tuple(m.name for m in sorted(status))
    return tuple(result_module.STATUS_NAMES)


def element_tolerances() -> tuple[float, float, str]:
    rtol = getattr(result_module, "ELEMENT_RTOL", None)
    atol = getattr(result_module, "ELEMENT_ATOL", None)
    if rtol is None or atol is None:
        return 1e-10, 1e-15, ("documented values (hipeq.solvers.result.ELEMENT_RTOL / ELEMENT_ATOL not found in "
                              "this version)")
    return float(rtol), float(atol), "hipeq.solvers.result.ELEMENT_RTOL / ELEMENT_ATOL"


# --------------------------------------------------------------------------------------------------------
# states
# --------------------------------------------------------------------------------------------------------
def random_states(nc: int, n: int, seed: int, sealed: bool) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    feeds = rng.uniform(0.01, 1.0, (n, nc))
    u = rng.uniform(size=(n, nc))
    feeds[u < 0.3] = 0.0
    feeds[(u >= 0.3) & (u < 0.45)] = 1e-12
    empty = ~(feeds.sum(axis=1) > 0.0)
    feeds[np.flatnonzero(empty), rng.integers(nc, size=int(empty.sum()))] = 1.0
    T = rng.uniform(300.0, 1500.0, n)
    if sealed:
        PV = feeds.sum(axis=1) / 10.0 ** rng.uniform(-1.0, 5.0, n)  # V [m3] for 0.1-1e5 mol/m3
    else:
        PV = 10.0 ** rng.uniform(5.0, 8.0, n)  # P [Pa], 1-1000 bar
    return feeds, T, PV


# --------------------------------------------------------------------------------------------------------
# from-scratch checks
# --------------------------------------------------------------------------------------------------------
def element_counts(names) -> np.ndarray:
    records = [hipeq.species(n).elements for n in names]
    elements = sorted({e for rec in records for e in rec})
    return np.array([[float(rec.get(e, 0)) for rec in records] for e in elements])


def fields(batch) -> dict[str, np.ndarray]:
    n = len(batch)

    def rows(x):
        return np.asarray(x, dtype=float).reshape(n, -1)

    return {"amounts": rows(batch.amounts.array), "y": rows(batch.y.array), "phi": rows(batch.phi.array),
            "P": rows(batch.P), "V": rows(batch.V), "Z": rows(batch.Z), "K_phi": rows(batch.K_phi),
            "K_y": rows(batch.K_y), "extents": rows(batch.extents), "residuals": rows(batch.residuals),
            "ln_K": rows(batch.ln_K), "T": rows(batch.T), "element_residuals": rows(batch.element_residuals.array)}


def failed_checks(batch, names, eos: str, feeds: np.ndarray, PV: np.ndarray, sealed: bool,
                  rtol: float, atol: float) -> dict[str, np.ndarray]:
    """check name -> boolean mask of status-0 states that fail it."""
    f = fields(batch)
    ok = np.asarray(batch.status).reshape(-1) == 0
    out: dict[str, np.ndarray] = {}
    with np.errstate(all="ignore"):
        finite = np.ones(ok.size, dtype=bool)
        for arr in f.values():
            finite &= np.all(np.isfinite(arr), axis=1)
        out["non-finite output"] = ok & ~finite
        n = f["amounts"]
        out["negative amount"] = ok & np.any(n < 0.0, axis=1)
        A = element_counts(names)
        b = feeds @ A.T
        ratio = np.abs(n @ A.T - b) / (rtol * b + atol * b.sum(axis=1, keepdims=True))
        out["element balance open"] = ok & ~np.all(ratio <= 1.0, axis=1)
        P = f["P"][:, 0]
        out["P outside 1e-2-1e10 Pa"] = ok & ~((P >= P_FLOOR) & (P <= P_CEILING))
        y, ln_k = f["y"], f["ln_K"]
        ln_y = np.log(np.where(y > 0.0, y, 1.0))
        ln_phi = np.log(f["phi"])
        bad = np.zeros(ok.size, dtype=bool)
        for r, text in enumerate(batch.reactions):
            coefficients = hipeq.Reaction.parse(text).coefficients
            nu = np.array([float(coefficients.get(s, 0.0)) for s in names])
            involved = nu != 0.0
            defined = np.all(y[:, involved] > 0.0, axis=1)
            lhs = (ln_y + ln_phi)[:, involved] @ nu[involved] + nu.sum() * np.log(P / 1e5)
            bad |= defined & ~(np.abs(lhs - ln_k[:, r]) <= CONDITION_TOL)
        out["equilibrium condition off"] = ok & bad
        if sealed:
            Z, T = f["Z"][:, 0], f["T"][:, 0]
            v = n.sum(axis=1) * Z * R * T / P
            out["n Z R T / P != V"] = ok & ~(np.abs(v / PV - 1.0) <= 1e-9)
            if eos == "virial":
                out["virial beyond |Z - 1| = 0.5"] = ok & ~(np.abs(Z - 1.0) <= 0.5)
            if eos == "lewis-randall":
                out["Lewis-Randall above 2e8 Pa"] = ok & ~(P <= 2e8)
    return out


# --------------------------------------------------------------------------------------------------------
# one row
# --------------------------------------------------------------------------------------------------------
@dataclass
class Row:
    system: str
    eos: str
    method: str
    sealed: bool
    n: int
    error: str = ""
    converged: int = 0
    liquid_like: int = 0
    by_status: Counter = field(default_factory=Counter)
    by_reason: Counter = field(default_factory=Counter)
    checks: Counter = field(default_factory=Counter)
    check_examples: dict = field(default_factory=dict)
    bad_converged: int = 0
    nonfinite_failed: int = 0
    compared: int = 0
    disagree: Counter = field(default_factory=Counter)
    disagree_example: str = ""
    seconds: float = 0.0


def state_text(names, feed, T, PV, sealed) -> str:
    amounts = ", ".join(f"{s}: {a:.6g}" for s, a in zip(names, feed) if a > 0)
    return f"T = {T:.6g} K, {'V' if sealed else 'P'} = {PV:.6g} {'m3' if sealed else 'Pa'}, feed {{{amounts}}}"


def run_row(name: str, eos: str, sealed: bool, n: int, subsample: int, method: str, seed: int,
            rtol: float, atol: float, names_of_status: tuple[str, ...]) -> Row:
    species, reactions = SYSTEMS[name]
    row = Row(name, eos, method, sealed, n)
    start = time.perf_counter()
    system = hipeq.ReactionSystem(list(species), reactions=None if reactions is None else list(reactions), eos=eos)
    system_seed = seed + 7919 * list(SYSTEMS).index(name) + (1 if sealed else 0)
    feeds, T, PV = random_states(len(species), n, system_seed, sealed)
    kw = "V" if sealed else "P"
    try:
        batch = system.equilibrium(feed=feeds, T=T, method=method, **{kw: PV})
    except Exception as err:  # noqa: BLE001 - a raising batch is itself a finding
        row.error = f"batch raised {type(err).__name__}: {err}"[:200].replace("|", "\\|").replace("\n", " ")
        row.seconds = time.perf_counter() - start
        return row
    status = np.asarray(batch.status).reshape(-1)
    ok = status == 0
    row.converged = int(ok.sum())
    row.liquid_like = int(np.count_nonzero(ok & np.asarray(batch.liquid_like).reshape(-1)))
    for code, count in zip(*np.unique(status[~ok], return_counts=True)):
        label = names_of_status[code] if 0 <= code < len(names_of_status) else f"code {code} (undocumented)"
        row.by_status[label] += int(count)
    reasons = np.asarray(batch.reason).reshape(-1)
    for k in np.flatnonzero(~ok):
        row.by_reason[reason(int(status[k]), int(reasons[k]))] += 1
    checks = failed_checks(batch, species, eos, feeds, PV, sealed, rtol, atol)
    any_bad = np.zeros(n, dtype=bool)
    for check, mask in checks.items():
        if mask.any():
            row.checks[check] = int(mask.sum())
            k = int(np.flatnonzero(mask)[0])
            row.check_examples[check] = state_text(species, feeds[k], T[k], PV[k], sealed)
        any_bad |= mask
    row.bad_converged = int(any_bad.sum())
    f = fields(batch)
    with np.errstate(all="ignore"):
        finite = np.ones(n, dtype=bool)
        for arr in f.values():
            finite &= np.all(np.isfinite(arr), axis=1)
    row.nonfinite_failed = int(np.count_nonzero(~ok & ~finite))
    # scalar vs batch on a subsample
    pick = np.random.default_rng(system_seed + 1).choice(n, size=min(subsample, n), replace=False)
    y_batch = f["y"]
    liquid = np.asarray(batch.liquid_like).reshape(-1)
    for k in pick:
        row.compared += 1
        try:
            one = system.equilibrium(feed=feeds[k], T=float(T[k]), method=method, **{kw: float(PV[k])})
        except Exception as err:  # noqa: BLE001
            row.disagree[f"scalar raised {type(err).__name__}"] += 1
            row.disagree_example = row.disagree_example or state_text(species, feeds[k], T[k], PV[k], sealed)
            continue
        what = None
        if int(one.status) != int(status[k]):
            what = "different status"
        elif bool(one.liquid_like) != bool(liquid[k]):
            what = "different liquid_like"
        elif one.status == 0:
            with np.errstate(all="ignore"):
                dy = float(np.max(np.abs(one.y.array - y_batch[k])))
            if not dy <= SAME_TOL:
                what = "abs(dy) > 1e-12"
        if what:
            row.disagree[what] += 1
            row.disagree_example = row.disagree_example or state_text(species, feeds[k], T[k], PV[k], sealed)
    row.seconds = time.perf_counter() - start
    return row


# --------------------------------------------------------------------------------------------------------
# markdown
# --------------------------------------------------------------------------------------------------------
def _counts(counter: Counter) -> str:
    return ", ".join(f"{k}: {v}" for k, v in counter.most_common()).replace("|", "\\|") or "-"


def table(rows: list[Row], sealed: bool) -> list[str]:
    title = ("Sealed vessel, 0.1-1e5 mol/m3, 300-1500 K" if sealed
             else "Fixed temperature and pressure, 300-1500 K, 1-1000 bar")
    lines = [f"### {title}", "",
             "| system | model | method | states | converged | liquid-like (of converged) | failures by status | "
             "failures by reason | status 0 failing a check | non-finite outputs (failed states) | "
             "scalar vs batch disagreements |",
             "|---|---|---|---:|---:|---:|---|---|---:|---:|---|"]
    for r in rows:
        if r.sealed != sealed:
            continue
        if r.error:
            lines.append(f"| {r.system} | {r.eos} | {r.method} | {r.n} | - | - | {r.error} | - | - | - | - |")
            continue
        disagreements = sum(r.disagree.values())
        detail = f" ({_counts(r.disagree)})" if disagreements else ""
        lines.append(f"| {r.system} | {r.eos} | {r.method} | {r.n} | {100.0 * r.converged / r.n:.2f} % | "
                     f"{r.liquid_like} | {_counts(r.by_status)} | {_counts(r.by_reason)} | {r.bad_converged} | "
                     f"{r.nonfinite_failed} | {disagreements} of {r.compared}{detail} |")
    return lines + [""]


def details(rows: list[Row]) -> list[str]:
    lines = []
    for r in rows:
        kind = f"{r.method}, " + ("sealed vessel" if r.sealed else "fixed T, P")
        for check, count in r.checks.most_common():
            lines.append(f"- {r.system}, {r.eos}, {kind}: {count} x {check}; e.g. {r.check_examples[check]}")
        if r.disagree_example:
            lines.append(f"- {r.system}, {r.eos}, {kind}: scalar vs batch ({_counts(r.disagree)}); e.g. "
                         f"{r.disagree_example}")
    if not lines:
        return ["No status-0 state failed a from-scratch check and no scalar call disagreed with its batch.", ""]
    return ["### Findings (first example of each)", ""] + lines + [""]


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("output", nargs="?", help="write the markdown here (default: stdout)")
    parser.add_argument("--states", type=int, default=20_000, help="random states per row and kind (20000)")
    parser.add_argument("--subsample", type=int, default=500, help="states per row compared with scalar calls")
    parser.add_argument("--seed", type=int, default=SEED)
    parser.add_argument("--method", choices=("extent", "gibbs", "both"), default="both",
                        help="solver method of the rows (default: both, one row each)")
    parser.add_argument("--models", nargs="+", default=list(MODELS), choices=MODELS)
    args = parser.parse_args(argv)
    if args.states < 1 or args.subsample < 0:
        parser.error("--states must be >= 1 and --subsample >= 0")
    methods = ("extent", "gibbs") if args.method == "both" else (args.method,)
    rtol, atol, tol_source = element_tolerances()
    names_of_status = status_names()
    start = time.perf_counter()
    rows = []
    for sealed in (False, True):
        for name in SYSTEMS:
            for eos in args.models:
                for method in methods:
                    rows.append(run_row(name, eos, sealed, args.states, args.subsample, method, args.seed, rtol,
                                        atol, names_of_status))
                    print(f"  {name}, {eos}, {method}, {'V' if sealed else 'P'}: {rows[-1].seconds:.1f} s",
                          file=sys.stderr)
    total = time.perf_counter() - start
    bad = sum(r.bad_converged for r in rows)
    disagreements = sum(sum(r.disagree.values()) for r in rows)
    errors = sum(bool(r.error) for r in rows)
    lines = [
        "## Reliability of the equilibrium solvers",
        "",
        f"Generated by `docs/tools/reliability_table.py --states {args.states} --subsample {args.subsample} "
        f"--seed {args.seed} --method {args.method}`: hipeq {hipeq.__version__}, numpy {np.__version__}, "
        f"numba {numba.__version__} ({numba.get_num_threads()} threads), Python {platform.python_version()}; "
        f"{total:.0f} s.",
        "",
        f"Random states with a fixed seed, the same for every model of a system; feeds 0.01-1 mol per species, "
        f"absent with probability 0.3, a 1e-12 mol trace with probability 0.15. Element-balance tolerance "
        f"relative {rtol:g} with an absolute floor of {atol:g} of the total feed atoms ({tol_source}); "
        f"equilibrium conditions recomputed from y, phi, P and ln K to {CONDITION_TOL:g}; scalar vs batch: same "
        f"status, same liquid_like and |dy| <= {SAME_TOL:g} where converged.",
        "",
        f"Totals: {bad} status-0 states failing a from-scratch check (must be 0); {disagreements} scalar-vs-batch "
        f"disagreements; {errors} rows whose batch raised.",
        "",
    ]
    lines += table(rows, sealed=False) + table(rows, sealed=True) + details(rows)
    text = "\n".join(lines)
    if args.output:
        with open(args.output, "w", encoding="utf-8") as fh:
            fh.write(text)
    else:
        print(text)
    return 0


if __name__ == "__main__":
    sys.exit(main())
