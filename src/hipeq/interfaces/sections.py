"""Report sections: what a command found, as data that the terminal table, the JSON file and the HTML report all
render (one source, three views).

A :class:`Section` holds a title, column headers with units, formatted rows, a status mark per row, notes
(warnings, the legend) and a JSON payload whose keys carry units (``"T [K]"``). Building sections is the only
place where results become text; the analysis and solver layers never format.
"""
from __future__ import annotations

import math
import textwrap
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

CAUTION = ("Caution: equilibrium is a thermodynamic limit, not a design basis for pressure equipment; "
           "follow local codes and licensed engineering practice.")
STANDARD_STATE = "standard state: ideal gas at 1 bar"

# status marks in every table (the legend explains them)
MARK_OK = "ok"
MARK_FAILED = "FAILED"
MARK_LIQUID = "liquid-like"
MARK_TWO_PHASE = "two-phase"
LEGEND = (f"status: {MARK_OK} = converged, every balance and condition met; {MARK_FAILED} = did not converge "
          f"(values not shown; see the message); {MARK_LIQUID} = converged on a liquid-like volume root of the "
          f"equation of state: the one-gas answer is doubtful (a liquid may form); {MARK_TWO_PHASE} = converged "
          "with a vapour and a liquid (reaction and phase equilibrium together; the table shows the overall "
          "composition)")


@dataclass
class Section:
    """One table of a report with its notes and JSON payload."""

    title: str
    columns: list[str]
    rows: list[list[str]] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    data: dict[str, Any] = field(default_factory=dict)
    figures: list[tuple[str, str]] = field(default_factory=list)  # (path, caption)
    failed: int = 0  # states in this section that did not converge

    def text(self) -> str:
        """The section as fixed-width text for a terminal (the layout of our own reports)."""
        lines = [self.title, "-" * len(self.title)]
        if self.columns:
            lines.append(table(self.columns, self.rows))
        lines += [textwrap.fill(note, width=110, initial_indent="  ", subsequent_indent="    ") for note in self.notes]
        return "\n".join(lines)


def number(x: float, digits: int = 5) -> str:
    """A number for a table: fixed notation in 1e-3..1e5, scientific outside, '0' for zero; never hides a small
    value as 0.000000."""
    if not math.isfinite(x):
        return "n/a"
    if x == 0.0:
        return "0"
    if 1e-3 <= abs(x) < 1e5:
        return f"{x:.{digits}g}"
    return f"{x:.{max(digits - 1, 1)}e}"


def table(header: Sequence[str], rows: Sequence[Sequence[str]]) -> str:
    """Columns padded to their widest cell; the first column left-aligned, the others right-aligned."""
    widths = [max(len(str(c)) for c in col) for col in zip(header, *rows)] if rows else [len(h) for h in header]

    def line(cells: Sequence[str]) -> str:
        return "  ".join(str(c).rjust(w) if i else str(c).ljust(w) for i, (c, w) in enumerate(zip(cells, widths)))

    rule = "  ".join("-" * w for w in widths)
    return "\n".join(["  " + line(header), "  " + rule] + ["  " + line(r) for r in rows])


def mark(status: int, liquid_like: bool, phase_count: int = 1) -> str:
    """The status mark of one state: failed (with its status code), two-phase (a converged vapour-liquid answer),
    liquid-like (a converged one-phase answer on a liquid-like root) or ok."""
    if status != 0:
        return f"{MARK_FAILED} ({int(status)})"
    if phase_count == 2:
        return MARK_TWO_PHASE
    return MARK_LIQUID if liquid_like else MARK_OK


def result_mark(result: Any) -> str:
    """:func:`mark` of one solver result (an equilibrium or adiabatic result)."""
    return mark(int(result.status), bool(result.liquid_like), int(getattr(result, "phase_count", 1)))


def amount_unit(values: Sequence[float]) -> tuple[str, float]:
    """The amount unit that reads best for these amounts: (unit, divisor from mol)."""
    largest = max((abs(v) for v in values), default=0.0)
    return ("kmol", 1e3) if largest >= 1e3 else ("mol", 1.0)
