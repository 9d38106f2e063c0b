"""The one-page HTML report of a case: the case, every section with its status marks, the figures, the data
sources, the standard state and the caution, in one self-contained file (figures embedded, no network), written
with a Jinja2 template (``templates/report.html.j2``)."""
from __future__ import annotations

import base64
import datetime as _dt
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from hipeq.interfaces.sections import (CAUTION, LEGEND, MARK_FAILED, MARK_LIQUID, MARK_TWO_PHASE, STANDARD_STATE,
                                       Section)

TEMPLATE = "report.html.j2"


def _mark_class(cell: str) -> str:
    if cell.startswith(MARK_FAILED):
        return "mark-failed"
    return "mark-liquid" if cell in (MARK_LIQUID, MARK_TWO_PHASE) else "mark-ok"


def _embedded(figures: Sequence[tuple[str, str]]) -> list[dict[str, str]]:
    out = []
    for path, caption in figures:
        p = Path(path)
        if p.suffix.lower() != ".png" or not p.is_file():
            continue
        uri = "data:image/png;base64," + base64.b64encode(p.read_bytes()).decode("ascii")
        out.append({"uri": uri, "caption": f"{caption} (also {p.with_suffix('.svg').name})"})
    return out


def render_report(case: Any, result: Any, sections: Sequence[Section]) -> str:
    """The report as HTML text. ``result``: the case's main EquilibriumResult (provenance: data sources, K
    source, model); ``sections``: what the command computed, with figure paths (PNG ones are embedded)."""
    import jinja2

    from hipeq import __version__

    env = jinja2.Environment(loader=jinja2.PackageLoader("hipeq.interfaces", "templates"),
                             autoescape=jinja2.select_autoescape(["html", "j2"]), undefined=jinja2.StrictUndefined)
    env.filters["mark_class"] = _mark_class
    views = [{"title": s.title, "columns": s.columns, "rows": s.rows, "notes": s.notes,
              "embedded": _embedded(s.figures)} for s in sections]
    return env.get_template(TEMPLATE).render(
        title=case.title, version=__version__, generated=_dt.datetime.now().strftime("%Y-%m-%d %H:%M"),
        case_file=case.path or "(none)", standard_state=STANDARD_STATE, notes=case.notes,
        species=list(case.species), reactions=list(result.reactions), model=result.eos,
        caution=CAUTION.removeprefix("Caution: "),
        failed=sum(s.failed for s in sections), sections=views, legend=LEGEND,
        data_sources={k: dict(v) for k, v in result.data_sources.items()}, k_source=result.K_source)


def write_report(path: str | Path, case: Any, result: Any, sections: Sequence[Section]) -> Path:
    """Write :func:`render_report` to ``path`` (UTF-8); returns the path."""
    target = Path(path)
    target.write_text(render_report(case, result, sections), encoding="utf-8")
    return target


def write_scoring_report(path: str | Path, title: str, section: Section) -> Path:
    """The report of a scoring run (no case gas: the data sets and models are the case)."""
    import jinja2

    from hipeq import __version__

    env = jinja2.Environment(loader=jinja2.PackageLoader("hipeq.interfaces", "templates"),
                             autoescape=jinja2.select_autoescape(["html", "j2"]), undefined=jinja2.StrictUndefined)
    env.filters["mark_class"] = _mark_class
    view = {"title": section.title, "columns": section.columns, "rows": section.rows, "notes": section.notes,
            "embedded": _embedded(section.figures)}
    text = env.get_template(TEMPLATE).render(
        title=title, version=__version__, generated=_dt.datetime.now().strftime("%Y-%m-%d %H:%M"),
        case_file="(data sets)", standard_state=STANDARD_STATE, notes="", species=[], reactions=[], model="several",
        caution=CAUTION.removeprefix("Caution: "), failed=section.failed, sections=[view], legend=LEGEND,
        data_sources={}, k_source="per model (see the scores)")
    target = Path(path)
    target.write_text(text, encoding="utf-8")
    return target
