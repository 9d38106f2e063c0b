"""The validation tables of docs/ are what `make validation-docs` generates from the code today.

docs/tools/validation_docs.py regenerates every generated block (between ``<!-- table: NAME -->`` and
``<!-- end table -->``) of docs/ammonia_validation.md (hipeq.score_models over the bundled data sets of Larson &
Dodge 1923 and Larson 1924, and the model study of docs/tools/ammonia_study.py against CoolProp's reference
equations, the NIST-JANAF tables (Chase 1998) and Gillespie & Beattie 1930), docs/scoring.md (K sources: Graaf et
al. 1986, Graaf & Winkelman 2016, ATcT, JANAF, CRC, WebBook) and docs/solvers.md (Larson & Dodge 1923; Graaf et
al. 1986; the summary of docs/reliability.md), docs/eos_validation.md and docs/hydrogen.md (pure fluids and the
H2-N2 pair against CoolProp's reference equations: Leachman et al. 2009, Span et al. 2000, Gao et al. 2020,
Kunz & Wagner 2012; thermo's PRMIX/SRKMIX) and the residual-enthalpy table of docs/energy.md (the same reference
equations). This test regenerates all of them (about 10 s) and compares them with the documents; the thermo table
with its rounding-level digits masked (MASKED), which `make validation-docs-check` compares in full.
"""
from __future__ import annotations

import re
import sys
from pathlib import Path

import pytest

pytest.importorskip("CoolProp")
pytest.importorskip("janaf")

REPO = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(REPO / "docs" / "tools"))
import validation_docs as vd  # noqa: E402
from doc_blocks import read_table, replace_tables  # noqa: E402

DOCUMENTS = ["ammonia_validation.md", "scoring.md", "solvers.md", "eos_validation.md", "hydrogen.md", "energy.md"]
# differences of hipeq and thermo at rounding level (1e-16-1e-14, printed to 2 digits): the last digits follow any
# edit of a kernel and the CPU numba compiles for; compared here with those numbers masked
MASKED = {("eos_validation.md", "thermo")}
# blocks that other scripts write: not validation tables
WRITTEN_ELSEWHERE = {
    ("eos_validation.md", "timing"),  # the cost of a call on the machine it ran on (eos_validation_table.py)
    ("energy.md", "adiabatic"), ("energy.md", "staged"),  # the invented converter of the document (energy_tables.py)
}
ROUNDING = re.compile(r"\d\.\de[-+]\d\d")


@pytest.fixture(scope="module")
def generated() -> dict[Path, dict[str, str]]:
    return {**vd.fast_tables(), **vd.eos_tables()}


def _first_difference(old: str, new: str) -> str:
    for k, (a, b) in enumerate(zip(old.splitlines(), new.splitlines())):
        if a != b:
            return f"line {k + 1}: docs {a!r} / generated {b!r}"
    return f"docs {len(old.splitlines())} lines / generated {len(new.splitlines())} lines"


@pytest.mark.parametrize("document", DOCUMENTS)
def test_generated_blocks_equal_the_docs(generated, document: str) -> None:
    path = REPO / "docs" / document
    differ = {}
    for name, body in generated[path].items():
        docs = read_table(path, name)
        if (document, name) in MASKED:
            docs, body = ROUNDING.sub("x.xe-xx", docs), ROUNDING.sub("x.xe-xx", body)
        if docs != body:
            differ[name] = _first_difference(docs, body)
    assert not differ, f"{document}: run `make validation-docs` and explain the change: {differ}"


@pytest.mark.parametrize("document", DOCUMENTS)
def test_every_block_of_the_document_is_generated(generated, document: str) -> None:
    """No marker pair left behind that nothing writes any more (it would go stale unnoticed)."""
    path = REPO / "docs" / document
    names = re.findall(r"<!-- table: (\S+) -->", path.read_text(encoding="utf-8"))
    written_elsewhere = {name for doc, name in WRITTEN_ELSEWHERE if doc == document}
    assert sorted(names) == sorted(set(generated[path]) | written_elsewhere)


def test_check_mode_reports_a_difference_and_writes_nothing(tmp_path: Path) -> None:
    doc = tmp_path / "doc.md"
    text = "intro\n<!-- table: t -->\n| a |\n|---|\n| 1.00 |\n<!-- end table -->\nafter\n"
    doc.write_text(text, encoding="utf-8")
    assert replace_tables(doc, {"t": "| a |\n|---|\n| 1.00 |"}, check=True)
    assert not replace_tables(doc, {"t": "| a |\n|---|\n| 1.01 |"}, check=True)
    assert doc.read_text(encoding="utf-8") == text
    assert not replace_tables(doc, {"t": "| a |\n|---|\n| 1.01 |"})
    assert read_table(doc, "t") == "| a |\n|---|\n| 1.01 |"
    assert doc.read_text(encoding="utf-8").endswith("<!-- end table -->\nafter\n")
