"""Does the model-uncertainty band of hipeq.compare cover measured ammonia equilibria?

Regenerates the coverage tables of ``docs/ideal_vs_real.md``:

    .venv/bin/python docs/tools/band_check.py            # markdown to stdout (a few seconds)
    .venv/bin/python docs/tools/band_check.py --out FILE  # also write it to FILE

For every measured point (3:1 H2:N2 feed, no inerts, reaction N2 + 3 H2 = 2 NH3) the band is the lowest and
highest equilibrium NH3 mole fraction over ``hipeq.analysis._common.BAND_MODELS`` (PR, SRK and
PR78+E-PPR78+Peneloux), exactly as ``hipeq.compare`` reports it at that T and P. The miss is the distance from
the measurement to the band in mole-percent points (0 inside; signed: + when the measurement lies above the band).

Data (tests/validation/data/, each file names its source in its header):
  * Larson & Dodge (1923), J. Am. Chem. Soc. 45, 2918: measured, 325-500 C, 10-100 atm (28 rows; the 375 C /
    50 atm value is flagged in the file for extra care).
  * Larson (1924), J. Am. Chem. Soc. 46, 367: 300/600/1000 atm, 400-500 C (9 rows), FROM MEMORY (+-0.5 point).

No model parameter was fitted to these data (docs/ammonia_validation.md). Equilibrium is a thermodynamic limit,
not a design basis; follow local codes and licensed practice.
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np

import hipeq
from hipeq.analysis._common import BAND_MODELS

ROOT = Path(__file__).resolve().parents[2]
DATA = ROOT / "tests" / "validation" / "data"
ATM = 101325.0  # Pa, exact
FEED = {"N2": 1.0, "H2": 3.0}
FILES = (("ammonia_equilibrium_larson_dodge_1923.csv", "LD1923"),
         ("ammonia_equilibrium_larson_1924_high_pressure.csv", "L1924*"))
BANDS = ((0.0, 100.0, "10-100 atm (LD1923)"), (100.0, 300.0, "300 atm (L1924*)"),
         (300.0, 600.0, "600 atm (L1924*)"), (600.0, 1000.0, "1000 atm (L1924*)"))
NEAR = 0.5  # mole-percent points: the uncertainty the Larson (1924) file states for its from-memory rows


def load_rows() -> list[tuple[float, float, float, str]]:
    """(T [degC], P [atm], mol % NH3, source tag) of both files, in file order."""
    rows = []
    for name, tag in FILES:
        for line in (DATA / name).read_text().splitlines():
            if not line or line.startswith("#") or line.startswith("T_degC"):
                continue
            t, p, x = (float(v) for v in line.split(","))
            rows.append((t, p, x, tag))
    return rows


def miss(measured: float, lo: float, hi: float) -> float:
    """Signed distance [same unit] from the band [lo, hi] to the measurement: 0 inside, + above, - below."""
    return measured - hi if measured > hi else (measured - lo if measured < lo else 0.0)


def check() -> list[dict]:
    """One record per measured point: the band and the ideal gas from hipeq.compare, and the miss."""
    system = hipeq.ReactionSystem(["N2", "H2", "NH3"], reactions=["N2 + 3 H2 = 2 NH3"])
    out = []
    for t, p, x, tag in load_rows():
        c = hipeq.compare(system, FEED, t + 273.15, p * ATM, models=("ideal", *BAND_MODELS))
        assert all(s == 0 for s in c.status.values()), c.messages
        lo, hi = 100.0 * c.band[0], 100.0 * c.band[1]
        out.append({"T_degC": t, "P_atm": p, "measured": x, "tag": tag, "lo": lo, "hi": hi,
                    "ideal": 100.0 * c.ideal_y, "miss": miss(x, lo, hi),
                    "models": {m: 100.0 * c.y_key[m] for m in BAND_MODELS}})
    return out


def summary(records: list[dict]) -> list[str]:
    lines = ["| pressures | points | inside the band | within 0.5 point of it | median miss | max miss | "
             "mean band width | measured above the band / below | ideal gas below the measurement |",
             "|---|---|---|---|---|---|---|---|---|"]
    groups = [(label, [r for r in records if lo < r["P_atm"] <= hi]) for lo, hi, label in BANDS]
    groups.append(("all", records))
    for label, group in groups:
        misses = np.array([abs(r["miss"]) for r in group])
        inside = int(np.count_nonzero(misses == 0.0))
        near = int(np.count_nonzero(misses <= NEAR))
        width = np.mean([r["hi"] - r["lo"] for r in group])
        above = sum(r["miss"] > 0 for r in group)
        under = sum(r["miss"] < 0 for r in group)
        below = sum(r["ideal"] < r["measured"] for r in group)
        lines.append(f"| {label} | {len(group)} | {inside} ({100 * inside / len(group):.0f} %) | "
                     f"{near} ({100 * near / len(group):.0f} %) | {np.median(misses):.2f} | {misses.max():.2f} | "
                     f"{width:.2f} | {above} / {under} | {below} of {len(group)} |")
    return lines


def table(records: list[dict]) -> list[str]:
    names = " | ".join(BAND_MODELS)
    lines = [f"| T [degC] | P [atm] | source | measured | ideal | {names} | band | miss |",
             "|---|---|---|---|---|" + "---|" * len(BAND_MODELS) + "---|---|"]
    for r in records:
        models = " | ".join(f"{r['models'][m]:.2f}" for m in BAND_MODELS)
        shown = "inside" if r["miss"] == 0.0 else format(r["miss"], "+.3f")
        lines.append(f"| {r['T_degC']:g} | {r['P_atm']:g} | {r['tag']} | {r['measured']:.2f} | {r['ideal']:.2f} | "
                     f"{models} | {r['lo']:.2f}-{r['hi']:.2f} | {shown} |")
    return lines


def limits() -> list[str]:
    """The one-point limit of hipeq.ideal_gas_limit against each band model, beside the measured deficit of the
    ideal gas at 100 atm (Larson & Dodge 1923), which says on which side of 100 atm the measured limit lies."""
    system = hipeq.ReactionSystem(["N2", "H2", "NH3"], reactions=["N2 + 3 H2 = 2 NH3"])
    temperatures = [375.0, 400.0, 425.0, 450.0, 475.0, 500.0]
    found = {m: hipeq.ideal_gas_limit(system, FEED, np.array(temperatures) + 273.15, reference=m)
             for m in BAND_MODELS}
    measured = {t: x for t, p, x, _ in load_rows() if p == 100.0}
    lines = ["| T [degC] | " + " | ".join(f"limit vs {m} [bar]" for m in BAND_MODELS)
             + " | measured minus ideal gas at 100 atm (101.3 bar) [points] |",
             "|---|" + "---|" * len(BAND_MODELS) + "---|"]
    for k, t in enumerate(temperatures):
        c = hipeq.compare(system, FEED, t + 273.15, 100.0 * ATM, models=("ideal",), reference="PR")
        gap = measured[t] - 100.0 * c.ideal_y
        lines.append(f"| {t:g} | " + " | ".join(f"{found[m].P_limit[k] / 1e5:.1f}" for m in BAND_MODELS)
                     + f" | {gap:+.2f} |")
    return lines


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", type=Path, help="also write the markdown to this file")
    args = parser.parse_args(argv)
    records = check()
    text = "\n".join(["### Coverage by pressure (miss in mole-percent points NH3; 0 inside the band)", "",
                      *summary(records), "",
                      "### Every point (mole percent NH3; miss = measured minus the nearer band edge)", "",
                      *table(records), "",
                      "### Pressure above which the ideal gas is more than 1 mole-percent point off "
                      "(hipeq.ideal_gas_limit)", "", *limits(), "",
                      "Equilibrium is a thermodynamic limit, not a design basis; follow local codes and licensed "
                      "practice."]) + "\n"
    sys.stdout.write(text)
    if args.out:
        args.out.write_text(text)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
