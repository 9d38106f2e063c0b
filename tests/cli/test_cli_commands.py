"""The hipeq command as a subprocess, on good and bad case files: exit codes, messages naming the table and key,
files written, status marks. One test per defect reported in the command-line issue."""
from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from hipeq.interfaces.schema import markdown

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "examples" / "demo_plant.toml"
METHANOL = ROOT / "src" / "hipeq" / "interfaces" / "demo" / "co2_methanol.toml"

BASE = """
[mixture]
species = ["N2", "H2", "NH3"]
[feed]
N2 = "1 mol"
H2 = "3 mol"
[conditions]
temperature = "450 degC"
pressure = "300 bar"
"""


def hipeq(*args: str, stdin: str | None = None, shell_tail: str = "") -> subprocess.CompletedProcess:
    env = dict(os.environ, HIPEQ_QUIET="1")
    command = [sys.executable, "-m", "hipeq.interfaces.cli", *args]
    if shell_tail:  # e.g. "| head -1": run through a shell pipe
        line = " ".join(f"'{c}'" for c in command) + " " + shell_tail
        return subprocess.run(["/bin/sh", "-c", line], capture_output=True, text=True, env=env, timeout=600)
    return subprocess.run(command, capture_output=True, text=True, env=env, timeout=600, input=stdin)


def case(tmp_path: Path, text: str, name: str = "case.toml") -> Path:
    path = tmp_path / name
    path.write_text(text)
    return path


def test_version_and_help_with_examples():
    assert hipeq("--version").stdout.startswith("hipeq ")
    for command in ("run", "compare", "sweep", "reaction", "species", "keys"):
        done = hipeq(command, "--help")
        assert done.returncode == 0 and "example: hipeq" in done.stdout


def test_keys_prints_the_case_file_reference_that_docs_hold():
    done = hipeq("keys")
    assert done.returncode == 0
    assert done.stdout == markdown() == (ROOT / "docs" / "casefile.md").read_text()


def test_named_kij_method_in_a_case_file(tmp_path):
    done = hipeq("run", str(case(tmp_path, BASE + '[model]\neos = "PR78"\nkij = "e-ppr78"\n')))
    assert done.returncode == 0, done.stderr
    assert "Traceback" not in done.stderr
    bad = hipeq("run", str(case(tmp_path, BASE + '[model]\nkij = "group"\n')))
    assert bad.returncode == 2 and "[model] kij" in bad.stderr and "e-ppr78" in bad.stderr


def test_non_utf8_and_folder_cases_are_named(tmp_path):
    path = tmp_path / "latin.toml"
    path.write_bytes(BASE.encode() + b'[case]\ntitle = "R\xe9acteur"\n')
    done = hipeq("run", str(path))
    assert done.returncode == 2 and "not UTF-8" in done.stderr and "Traceback" not in done.stderr
    folder = hipeq("run", str(tmp_path))
    assert folder.returncode == 2 and "is a folder" in folder.stderr


def test_broken_pipe_is_quiet(tmp_path):
    done = hipeq("run", str(DEMO), shell_tail="| head -1")
    assert "Traceback" not in done.stderr and "BrokenPipe" not in done.stderr
    assert done.stdout.startswith("hipeq | ")


@pytest.mark.parametrize("sweep, field", [
    ('temperature = ["400 degC", "500 degC", 1e12]', "[sweep] temperature count"),
    ('temperature = ["400 degC", "500 degC", 5000]', "[sweep] temperature count"),
])
def test_sweep_sizes_are_capped_with_a_message(tmp_path, sweep, field):
    done = hipeq("run", str(case(tmp_path, BASE + "[sweep]\n" + sweep + "\n")))
    assert done.returncode == 2 and field in done.stderr and "MemoryError" not in done.stderr


@pytest.mark.parametrize("edit, field", [
    (('pressure = "300 bar"', 'pressure = "0 bar"'), "[conditions] pressure"),
    (('species = ["N2", "H2", "NH3"]', 'species = ["N2", "H2", "NH3", "unobtainium"]'), "[mixture] species"),
    (('[feed]', '[mixture.x]\n[feed]'), "[mixture] x"),
    (('pressure = "300 bar"', 'pressure = "300 barg"'), "[conditions] pressure"),
    (('temperature = "450 degC"', 'temperature = "9000 K"'), "[conditions] temperature"),
])
def test_bad_values_name_the_table_and_key(tmp_path, edit, field):
    done = hipeq("run", str(case(tmp_path, BASE.replace(*edit))))
    assert done.returncode == 2, done.stdout
    assert field in done.stderr and "Traceback" not in done.stderr


def test_unbalanced_or_unknown_reaction_names_the_key(tmp_path):
    text = BASE.replace('species = ["N2", "H2", "NH3"]',
                        'species = ["N2", "H2", "NH3"]\nreactions = ["N2 + 2 H2 = 2 NH3"]')
    done = hipeq("run", str(case(tmp_path, text)))
    assert done.returncode == 2 and "[mixture] reactions" in done.stderr


def test_output_paths_are_checked_before_solving(tmp_path):
    missing = hipeq("run", str(DEMO), "--json", str(tmp_path / "no" / "out.json"))
    assert missing.returncode == 2 and "does not exist" in missing.stderr and missing.stdout == ""
    onto_folder = hipeq("run", str(DEMO), "--html", str(tmp_path))
    assert onto_folder.returncode == 2 and "is a folder" in onto_folder.stderr and onto_folder.stdout == ""


def test_reaction_range_error_speaks_to_the_command_line():
    done = hipeq("reaction", "N2 + 3 H2 = 2 NH3", "--to", "4000 K")
    assert done.returncode == 2
    assert "extrapolate=True" not in done.stderr and "--from/--to" in done.stderr


def test_json_has_units_in_keys_and_kmol_feeds_print_in_kmol(tmp_path):
    out = tmp_path / "out.json"
    done = hipeq("sweep", str(METHANOL), "--json", str(out))
    assert done.returncode in (0, 1), done.stderr
    assert "feed [kmol]" in done.stdout
    report = json.loads(out.read_text())
    assert report["units"].startswith("SI")
    sweep = next(v for k, v in report["sections"].items() if k.startswith("Sweep"))
    assert "T [K]" in sweep and "P [Pa]" in sweep and "y_CH3OH [-]" in sweep
    main = next(v for k, v in report["sections"].items() if k.startswith("Equilibrium"))
    assert main["result"]["units"]["P"] == "Pa"


def test_liquid_like_answers_are_marked_and_keep_the_caution(tmp_path):
    text = METHANOL.read_text().replace('temperature = "250 degC"', 'temperature = "200 degC"').replace(
        'pressure = "80 bar"\n', 'pressure = "150 bar"\n', 1)
    done = hipeq("run", str(case(tmp_path, text)), "--json", str(tmp_path / "o.json"))
    assert "liquid-like" in done.stdout and "WARNING" in done.stdout
    assert "converged" not in done.stdout.split("WARNING")[0].split("\n")[-1]
    assert "thermodynamic limit, not a design basis" in done.stdout
    assert "0.000000" not in done.stdout


def test_single_axis_and_sealed_vessel_sweeps_work_or_say_why(tmp_path):
    one_axis = hipeq("sweep", str(case(tmp_path, BASE + '[sweep]\npressure = ["100 bar", "300 bar", 3]\n')))
    assert one_axis.returncode == 0, one_axis.stderr
    assert one_axis.stdout.count(" ok") >= 4
    vessel = BASE.replace('pressure = "300 bar"', 'volume = "1 L"')
    swept = hipeq("sweep", str(case(tmp_path, vessel + '[sweep]\nvolume = ["0.5 L", "2 L", 3]\n', "v.toml")))
    assert swept.returncode == 0, swept.stderr
    assert "V [m3]" in swept.stdout
    wrong = hipeq("sweep", str(case(tmp_path, vessel + '[sweep]\npressure = ["1 bar", "2 bar", 2]\n', "w.toml")))
    assert wrong.returncode == 2 and "[sweep] pressure" in wrong.stderr and "sealed vessel" in wrong.stderr


def test_score_lists_scores_and_names_bad_data(tmp_path):
    listed = hipeq("score", "--list")
    assert listed.returncode == 0 and "ammonia-larson-1924" in listed.stdout
    case_file = ROOT / "examples" / "score_ammonia.toml"
    done = hipeq("score", str(case_file), "--out", str(tmp_path / "scores"))
    assert done.returncode == 0, done.stderr
    assert "PR78+E-PPR78+Peneloux" in done.stdout.split("rank")[1].splitlines()[2]  # ranked first
    for name in ("report.html", "results.json", "parity.png", "errors.svg", "scores_summary.csv"):
        assert (tmp_path / "scores" / name).is_file(), name
    bad = tmp_path / "mine.csv"
    text = (ROOT / "examples" / "measurements_invented.csv").read_text()
    bad.write_text(text.replace("P [MPa]", "P [MPag]", 1))
    refused = hipeq("score", str(bad), "--models", "PR")
    assert refused.returncode == 2 and "mine.csv" in refused.stderr and "Traceback" not in refused.stderr


def test_a_failed_compared_model_is_marked_and_sets_the_exit_code(tmp_path):
    """The truncated virial at 3000 bar has no physical state (status 3): no numbers, FAILED, exit code 1."""
    text = BASE.replace('pressure = "300 bar"', 'pressure = "3000 bar"') + \
        '[compare]\nmodels = ["ideal", "virial", "PR"]\n'
    done = hipeq("compare", str(case(tmp_path, text)))
    assert done.returncode == 1, done.stderr
    row = next(line for line in done.stdout.splitlines() if line.strip().startswith("virial"))
    assert "FAILED" in row and "0." not in row.split("FAILED")[0]
    assert "did not converge" in done.stdout or "FAILED" in done.stdout
    assert "thermodynamic limit, not a design basis" in done.stdout


def test_a_plain_call_shows_the_commands_and_where_to_start():
    done = hipeq()
    assert done.returncode == 2
    assert "hipeq demo" in done.stdout and "separator" in done.stdout
