"""Case-file schema: every wrong key, missing key or unit error names the field."""
from __future__ import annotations

import copy
from pathlib import Path

import pytest

from hipeq.errors import InputError
from hipeq.interfaces.casefile import load_case, parse_case

DEMO = Path(__file__).resolve().parents[2] / "examples" / "demo_plant.toml"

BASE = {
    "mixture": {"species": ["N2", "H2", "NH3"]},
    "feed": {"N2": "1 mol", "H2": "3 mol"},
    "conditions": {"temperature": "450 degC", "pressure": "300 bar"},
}


def _with(path: tuple[str, ...], value):
    doc = copy.deepcopy(BASE)
    node = doc
    for key in path[:-1]:
        node = node.setdefault(key, {})
    if value is None:
        del node[path[-1]]
    else:
        node[path[-1]] = value
    return doc


def test_demo_case_parses_to_si_units():
    case = load_case(DEMO)
    assert case.T == pytest.approx(440 + 273.15)
    assert case.P == pytest.approx(215e5)
    assert case.V is None
    assert case.feed["H2"] == pytest.approx(70.9)
    assert case.sweep["temperature"].shape == (7,) and case.sweep["pressure"][-1] == pytest.approx(400e5)


def test_minimal_case_units_are_converted():
    case = parse_case(_with(("conditions", "pressure"), "1 atm"))
    assert case.P == pytest.approx(101325.0)
    assert case.eos == "PR" and case.reactions is None


@pytest.mark.parametrize(
    "path, value, field",
    [
        (("conditions", "pressur"), "300 bar", "[conditions] pressur"),
        (("reactor",), {"x": 1}, "[reactor]"),
        (("conditions", "temperature"), None, "[conditions] temperature"),
        (("conditions", "pressure"), "300", "[conditions] pressure"),
        (("conditions", "pressure"), 300, "[conditions] pressure"),
        (("conditions", "temperature"), "450 bar", "[conditions] temperature"),
        (("feed", "CH4"), "1 mol", "[feed] CH4"),
        (("feed", "N2"), "-1 mol", "[feed] N2"),
        (("model", "eso"), "PR", "[model] eso"),
        (("model", "quantum_hydrogen"), "yes", "[model] quantum_hydrogen"),
        (("sweep", "pressure"), ["1 bar", "2 bar", 0], "[sweep] pressure"),
        (("sweep", "pressure"), ["1 bar", "2 bar", 2.5], "[sweep] pressure"),
        (("sweep", "pressure"), ["1 bar", "2 degC"], "[sweep] pressure"),
        (("model", "kij"), "group", "[model] kij"),
        (("model", "kij"), {"H2-Xe": 0.1}, "[model] kij"),
        (("solver", "tolerance"), 1.0, "[solver] tolerance"),
        (("solver", "method"), "newton", "[solver] method"),
        (("compare", "tolerance"), 2, "[compare] tolerance"),
        (("map", "temperature"), ["300 degC", "600 degC", 3000], "[map] temperature"),
        (("report", "species"), ["Xe"], "[report] species"),
    ],
)
def test_wrong_case_names_the_field(path, value, field):
    with pytest.raises(InputError) as info:
        parse_case(_with(path, value))
    assert info.value.field.startswith(field)


def test_pressure_and_volume_together_are_refused():
    doc = _with(("conditions", "volume"), "1 m3")
    with pytest.raises(InputError, match="exactly one of pressure"):
        parse_case(doc)


def test_missing_file_and_bad_toml(tmp_path):
    with pytest.raises(InputError, match="does not exist"):
        load_case(tmp_path / "nope.toml")
    bad = tmp_path / "bad.toml"
    bad.write_text("[mixture\nspecies = 1")
    with pytest.raises(InputError, match="not valid TOML"):
        load_case(bad)
