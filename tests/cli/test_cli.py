"""The hipeq command: demo case end to end, JSON output, exit codes, the caution line."""
from __future__ import annotations

import io
import json
from contextlib import redirect_stderr, redirect_stdout
from pathlib import Path

import pytest

from hipeq.interfaces.cli import CAUTION, main

DEMO = Path(__file__).resolve().parents[2] / "examples" / "demo_plant.toml"


def _run(*argv: str) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        code = main(list(argv))
    return code, out.getvalue(), err.getvalue()


def test_demo_case_runs_and_reports(tmp_path):
    target = tmp_path / "out.json"
    code, out, _ = _run("run", str(DEMO), "--json", str(target))
    assert code == 0
    assert "standard state: ideal gas at 1 bar" in out
    assert CAUTION in out
    report = json.loads(target.read_text())
    sections = report["sections"]
    main = next(v for k, v in sections.items() if k.startswith("Equilibrium"))
    y = main["result"]["y"]
    assert sum(y.values()) == pytest.approx(1.0, abs=1e-12)
    # the real-gas answer lies above the ideal-gas one for ammonia synthesis at 215 bar (K_phi < 1):
    # Le Chatelier plus fugacity correction, common practice in converter design
    comparison = next(v for k, v in sections.items() if k.startswith("Ideal gas against"))
    assert comparison["models"]["PR"]["y_key [-]"] > comparison["models"]["ideal"]["y_key [-]"]
    sweep = next(v for k, v in sections.items() if k.startswith("Sweep"))
    grid = sweep["y_NH3 [-]"]
    assert len(grid) == 7 and len(grid[0]) == 4
    # more ammonia at higher pressure and at lower temperature (Le Chatelier)
    assert all(row[0] < row[-1] for row in grid)
    assert all(grid[i][2] > grid[i + 1][2] for i in range(6))


def test_bad_case_exits_2_and_names_the_key(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text(DEMO.read_text().replace('pressure = "215 bar"', 'presure = "215 bar"'))
    code, _, err = _run("run", str(bad))
    assert code == 2
    assert "[conditions] presure" in err


def test_constant_table_and_species_record():
    code, out, _ = _run("reaction", "N2 + 3 H2 = 2 NH3", "--from", "400 K", "--to", "800 K", "--count", "3")
    assert code == 0 and "van 't Hoff" in out and out.count("\n") >= 5
    code, out, _ = _run("species", "methanol")
    assert code == 0 and "CH3OH" in out and "Tc [K]" in out
    code, _, err = _run("species", "methanl")
    assert code == 2 and "methanol" in err


def test_case_kij_applies_to_its_own_model_and_comparison_still_runs(tmp_path):
    """A [model] kij table must not be handed to the compared ideal gas (it has no k_ij): regression."""
    case = tmp_path / "kij.toml"
    text = DEMO.read_text().replace("quantum_hydrogen = false",
                                    'quantum_hydrogen = false\nkij = { "H2-N2" = 0.05 }')
    case.write_text(text)
    target = tmp_path / "out.json"
    code, out, err = _run("run", str(case), "--json", str(target))
    assert code == 0, err
    sections = json.loads(target.read_text())["sections"]
    main = next(v for k, v in sections.items() if k.startswith("Equilibrium"))
    kij = main["result"]["kij"]
    pair = [v for k, v in kij.items() if set(k.split(" / ")) == {"H2", "N2"}]
    assert pair == [pytest.approx(0.05)], kij
    comparison = next(v for k, v in sections.items() if k.startswith("Ideal gas against"))
    # the case's own model (with its k_ij) is compared under its own label and is the reference
    assert set(comparison["models"]) == {"ideal", "SRK", "PR", "PR (case)"}
    assert comparison["models"]["PR (case)"]["y_key [-]"] == pytest.approx(main["result"]["y"]["NH3"], rel=1e-12)
    assert comparison["reference"] == "PR (case)"


# the demo methanol system (src/hipeq/interfaces/demo/co2_methanol.toml, invented) at 150 degC in a 1 L vessel
# that no single phase fills (tests/solvers/test_vessel_two_phase.py)
VESSEL_CASE = """
[mixture]
species = ["CO2", "H2", "CO", "CH3OH", "H2O"]
reactions = ["CO2 + 3 H2 = CH3OH + H2O", "CO2 + H2 = CO + H2O"]
[feed]
CO2 = "1 mol"
H2 = "3.05 mol"
CO = "0.04 mol"
[conditions]
temperature = "150 degC"
volume = "1 L"
"""


def test_sealed_vessel_with_a_liquid_is_marked_two_phase(tmp_path):
    """[conditions] volume for a vessel that no single phase fills (the demo methanol system at 150 degC in 1 L,
    tests/solvers/test_vessel_two_phase.py): the table marks the state two-phase, the notes give the split and the
    pressure found, and the caution stays."""
    case = tmp_path / "vessel.toml"
    case.write_text(VESSEL_CASE)
    target = tmp_path / "out.json"
    code, out, _ = _run("run", str(case), "--json", str(target))
    assert code == 0
    rows = [line for line in out.splitlines()
            if line.split()[:1] in (["CO2"], ["H2"], ["CO"], ["CH3OH"], ["H2O"]) and "=" not in line]
    assert len(rows) == 5 and all(row.rstrip().endswith("two-phase") for row in rows)
    assert "sealed vessel" in out and "WARNING: two phases at equilibrium" in out
    assert CAUTION in out
    main = next(v for k, v in json.loads(target.read_text())["sections"].items() if k.startswith("Equilibrium"))
    assert main["status"] == 0 and main["result"]["phase_count"] == 2
    assert 30e5 < main["result"]["P"] < 40e5


def test_compare_and_sweep_mark_two_phase_answers_and_the_verdict_names_the_liquid(tmp_path):
    """The same vessel with [compare] and a two-axis [sweep]: real-gas rows of the comparison are marked
    two-phase (not liquid-like), the verdict says a liquid forms and gives both pressures, the sweep's grid marks
    its two-phase cells with ^, and the one-gas warning is not printed beside the two-phase one."""
    case = tmp_path / "vessel.toml"
    case.write_text(VESSEL_CASE + """[compare]
models = ["ideal", "SRK", "PR"]
[sweep]
temperature = ["150 degC", "400 degC", 2]
volume = ["1 L", "2 L", 2]
""")
    target = tmp_path / "out.json"
    code, out, _ = _run("run", str(case), "--json", str(target))
    assert code == 0
    rows = {line.split()[0]: line.split()[-1] for line in out.splitlines()
            if line.split()[:1] in (["SRK"], ["PR"]) and len(line.split()) == 5}  # the comparison's rows
    assert rows == {"SRK": "two-phase", "PR": "two-phase"}
    assert "But a liquid forms in the PR answer" in out and "in the vessel the ideal gas gives" in out
    assert "one-gas answer is doubtful" not in out
    grid = [line.split() for line in out.splitlines() if line.startswith("  150.00") or line.startswith("  400.00")]
    assert grid[0][1].endswith("^") and not grid[1][1].endswith("^")  # 150 degC in 1 L splits, 400 degC does not
    sweep = next(v for k, v in json.loads(target.read_text())["sections"].items() if k.startswith("Sweep"))
    assert sweep["phase_count"][0][0] == 2 and sweep["phase_count"][1][0] == 1
