"""Scoring models against measured equilibria (hipeq.score_models), data files and K sources.

Sources: Larson & Dodge (1923), J. Am. Chem. Soc. 45, 2918 (measured) and Larson (1924), J. Am. Chem. Soc. 46,
367 (FROM MEMORY), as bundled; Table 1 of docs/ammonia_validation.md was written by docs/tools/ammonia_study.py
with its own solver (brentq on y_NH3, the compiled kernels fed directly), independent of hipeq's solver and of
the scoring code. Gillespie & Beattie (1930), Phys. Rev. 36, 743 (correlations.md) for the atm conversion.
"""
from __future__ import annotations

import json
import math
import sys
from pathlib import Path

import numpy as np
import pytest

import hipeq
from hipeq.data.ksources import resolve_k_source
from hipeq.data.thermochem import ln_equilibrium_constant
from hipeq.errors import InputError

REPO = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(REPO / "docs" / "tools"))
import validation_docs as vd  # noqa: E402


@pytest.fixture(scope="module")
def ammonia():
    return vd.ammonia_scores()


def test_bundled_ammonia_reproduces_table_1_of_the_docs(ammonia) -> None:
    """Every error of Table 1 (independent solver of ammonia_study.py) for the models hipeq has, digit for digit."""
    text = (REPO / "docs" / "ammonia_validation.md").read_text(encoding="utf-8")
    table = text[text.index("### Table 1"):text.index("### Table 2")]
    rows = [line.strip("|").split("|") for line in table.splitlines() if line.startswith("| ")]
    head = [c.strip() for c in rows[0]]
    body = [[c.strip() for c in r] for r in rows[1:] if r[0].strip()]
    assert len(body) == len(ammonia) == 37
    for label in ("ideal gas", "LR", "SRK", "PR", "PR78", "Best"):
        col = head.index(label)
        ours = [f"{e:+.2f}" for e in ammonia.errors[label]]
        docs = [r[col] for r in body]
        assert [o.replace("-0.00", "+0.00") for o in ours] == [d.replace("-0.00", "+0.00") for d in docs], label
    # and the band maxima of "Results in brief" (Best 0.42 / 1.47 / 1.92 / 1.92)
    best = [ammonia.summary["Best"][b].max for b in ammonia.bands if b != "all"]
    assert [f"{v:.2f}" for v in best] == ["0.42", "1.47", "1.92", "1.92"]
    assert ammonia.ranking[0] == "Best" and ammonia.ranking[-1] == "ideal gas"


def test_statistics_and_outputs(ammonia, tmp_path) -> None:
    for label in ammonia.labels:
        st = ammonia.summary[label]["all"]
        e = ammonia.errors[label]
        assert st.n == 37 and st.failed == 0
        assert st.rms == pytest.approx(math.sqrt(np.mean(e**2)))
        assert abs(st.bias) <= st.mae <= st.rms <= st.max == pytest.approx(np.max(np.abs(e)))
    rms = [ammonia.summary[m]["all"].rms for m in ammonia.ranking]
    assert rms == sorted(rms)
    worst = ammonia.worst(3, "ideal gas")
    assert worst[0]["line"] == 17 and worst[0]["dataset"] == "ammonia-larson-1924"  # 400 degC, 1000 atm
    data = json.loads(ammonia.to_json(tmp_path / "s.json"))
    assert data["standard_state"].startswith("ideal gas") and "design basis" in data["caution"]
    assert data["models"][6]["K_source"] == {"Hf": "JANAF"} and "JANAF" in data["models"][6]["K_source_text"]
    lines = [x for x in ammonia.to_csv(tmp_path / "p.csv").read_text().splitlines() if not x.startswith("#")]
    assert len(lines) == 38
    assert ammonia.summary_csv(tmp_path / "s.csv").exists()
    from hipeq.analysis.figures import save
    written = save(hipeq.parity_figure(ammonia, models=["PR", "Best"]), tmp_path / "parity")
    written += save(hipeq.error_figure(ammonia), tmp_path / "errors")
    assert all(p.stat().st_size > 1000 for p in written)


GOOD = """# name: mine
# reactions: 0.5 N2 + 1.5 H2 = NH3
T [degC],P [bar],feed N2 [mol %],feed H2 [mol %],y NH3 [mol %],y N2 [mol %],y H2 [mol %],note
400,100,25,75,25.0,18.75,56.25,
450,200,25,75,30.0,17.5,52.5,
"""


def _load(tmp_path: Path, text: str):
    p = tmp_path / "mine.csv"
    p.write_text(text)
    return hipeq.load_dataset(p)


def test_user_file_loads(tmp_path) -> None:
    d = _load(tmp_path, GOOD)
    assert d.lines == (4, 5) and d.species == ("N2", "H2", "NH3")
    np.testing.assert_allclose(d.P, [100e5, 200e5])
    np.testing.assert_allclose(d.measured[("y", "NH3")], [0.25, 0.30])


@pytest.mark.parametrize("change, line, column, words", [
    (("y N2 [mol %],", ""), 3, "y", "missing column"),  # every measured column dropped, below
    (("P [bar]", "P [bananas]"), 3, "P [bananas]", "bad unit"),
    (("y NH3 [mol %]", "y NH3 [kg]"), 3, "y NH3 [kg]", "bad unit"),
    (("450,200,25,75,30.0,17.5,52.5", "450,200,25,75,30.0,17.5,55.5"), 5, "y H2 [mol %]", "sum to 1.0300"),
    (("450,200,", "450,6000,"), 5, "P [bar]", "outside 0-5000 bar"),
    (("400,100,25,75", "400,100,25,70"), 4, "feed H2 [mol %]", "sum to 0.9500"),
    (("450,200,25,75,30.0", "450,200,25,75,abc"), 5, "y NH3 [mol %]", "not a number"),
])
def test_user_file_errors_name_line_and_column(tmp_path, change, line, column, words) -> None:
    text = GOOD.replace(*change)
    if change[0] == "y N2 [mol %],":  # drop every measured column: nothing to score
        text = "\n".join(",".join(c for k, c in enumerate(row.split(",")) if k not in (4, 5, 6))
                         if not row.startswith("#") else row for row in GOOD.splitlines())
    with pytest.raises(InputError) as info:
        _load(tmp_path, text)
    msg = str(info.value)
    assert f"line {line}" in msg and f"column '{column}" in msg and words in msg, msg


def test_missing_temperature_and_unknown_species(tmp_path) -> None:
    with pytest.raises(InputError, match=r"line 3, column 'T'.*missing column"):
        _load(tmp_path, GOOD.replace("T [degC]", "source"))
    with pytest.raises(InputError, match=r"column 'y XX \[mol %\]'"):
        _load(tmp_path, GOOD.replace("y N2 [mol %]", "y XX [mol %]"))


def test_score_user_file_with_k_source(tmp_path) -> None:
    path = tmp_path / "mine.csv"
    path.write_text(GOOD)
    s = hipeq.score_models(path, ["ideal", ("PR, G&B", {"eos": "PR", "K_source": "gillespie-beattie-1930"})])
    assert len(s) == 6 and set(s.quantity) == {"y NH3", "y N2", "y H2"}
    assert s.models[1].K_source_text.startswith("gillespie-beattie-1930")
    # the three y errors of one state sum to zero (both sides sum to one)
    for label in s.labels:
        assert abs(sum(s.errors[label][[0, 2, 4]])) < 1e-9
    with pytest.raises(InputError, match="unknown option"):
        hipeq.score_models(path, [("x", {"eos": "PR", "colour": 3})])
    with pytest.raises(InputError, match="no bundled data set"):
        hipeq.score_models("no-such-set", ["PR"])


def test_k_sources() -> None:
    assert {"bundled", "graaf-1986", "graaf-winkelman-2016", "gillespie-beattie-1930", "JANAF"} <= set(
        hipeq.k_sources())
    # Gillespie & Beattie (1930): log10 Ka [atm^-1]; 1-bar standard state: ln K = ln Ka - ln 1.01325 (Δν = -1)
    T = np.array([700.0])
    log10_ka = -2.691122 * np.log10(T) - 5.519265e-5 * T + 1.848863e-7 * T**2 + 2001.6 / T + 2.6899
    got = resolve_k_source("gillespie-beattie-1930", ["0.5 N2 + 1.5 H2 = NH3"], ["N2", "H2", "NH3"])(T)
    assert got[0, 0] == pytest.approx(log10_ka[0] * math.log(10) - math.log(1.01325), abs=1e-12)
    # a combination: CO2 + 3 H2 = CH3OH + H2O is Graaf's reaction 1 + reaction 2
    sp = ["CO", "CO2", "H2", "H2O", "CH3OH"]
    k = resolve_k_source("graaf-1986", ["CO2 + 3 H2 = CH3OH + H2O"], sp)(np.array([500.0]))
    assert k[0, 0] == pytest.approx((3066.0 / 500.0 - 10.592) * math.log(10), abs=1e-9)
    with pytest.raises(InputError, match="not a combination"):
        resolve_k_source("graaf-1986", ["N2 + 3 H2 = 2 NH3"], ["N2", "H2", "NH3"])
    # species data: JANAF Hf of NH3 (-45.898 kJ/mol, chemicals) instead of ATcT (-45.558): ln K up by 340/(RT)
    janaf = resolve_k_source({"Hf": "JANAF"}, ["0.5 N2 + 1.5 H2 = NH3"], ["N2", "H2", "NH3"])(T)
    base = ln_equilibrium_constant("0.5 N2 + 1.5 H2 = NH3", 700.0)
    assert janaf[0, 0] - base == pytest.approx(340.0 / (8.314462618 * 700.0), rel=1e-6)
    with pytest.raises(InputError, match="K_source"):
        hipeq.ReactionSystem(["N2", "H2", "NH3"], K_source="no-such-source")
