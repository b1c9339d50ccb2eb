"""Margins of error beside the percentages of a table, for waves that surveyed a sample.

When respondents are a sample, each percentage estimates a larger group's and deserves a
range; when the wave went to everyone, the percentages are the group's own figures and a
range would suggest an uncertainty that is not there, so the caption says why none is shown.
The intervals themselves come from :func:`core.sampling.result_intervals` (Wilson score
intervals, with the finite population correction when the population size is known).
"""

from __future__ import annotations

from core.sampling import (
    DEFAULT_CONFIDENCE,
    WaveDesign,
    design_note,
    interval_caption,
    result_intervals,
)
from core.tables.context import COMPLEMENT_TEXT
from core.tables.result import Cell, TableResult

# Tables whose percentages are shares of counted people: frequency tables (rating items
# included) and cross-tabulations.
INTERVAL_TABLES = ("frequency", "likert", "crosstab")
OTHER_TABLES_NOTE = (
    "Margins of error are shown for frequency tables and cross-tabulations only; "
    "this table has none."
)


def interval_header(confidence: float = DEFAULT_CONFIDENCE) -> str:
    """The heading of an interval column: "95% range"."""
    return f"{100 * confidence:g}% range"


def interval_text(limits: list[float] | None) -> str:
    """One interval as a cell shows it: "38.5–44.8" (percent); empty when hidden."""
    if limits is None:
        return ""
    return f"{limits[0]:.1f}–{limits[1]:.1f}"


def add_intervals(
    result: TableResult, design: WaveDesign, confidence: float = DEFAULT_CONFIDENCE
) -> list[str]:
    """Add interval columns and ``data["intervals"]`` to ``result``; return caption notes.

    A frequency table gets one range column after its percentage column; a cross-tabulation
    one after each answer's percentage column. Hidden counts (and percentages whose base is
    hidden) get no range. A whole-population wave gets no intervals, only the note why.
    """
    if design.whole_population:
        return [design_note(design, confidence)]
    if result.table_type not in INTERVAL_TABLES:
        return [OTHER_TABLES_NOTE]
    found = result_intervals(result, design, confidence)
    intervals = found["intervals"]
    result.data["intervals"] = intervals
    result.data["interval_confidence"] = confidence
    if result.table_type == "crosstab":
        _crosstab_columns(result, intervals, confidence)
    else:
        _frequency_column(result, intervals, confidence)
    notes = [found["note"]]
    if found["widest"] is not None:
        keys, iv = found["widest"]
        notes.append(f"The widest range, for {' / '.join(keys)}, is {interval_caption(iv)}.")
    return notes


def _cell(limits: list[float] | None, answer_row: bool) -> Cell:
    """A range; on an answer's row a missing range is a hidden one and reads "–" like other
    hidden cells, never a blank that looks like no data (totals and missing rows have none)."""
    if limits is None and answer_row:
        return Cell(None, "number", suppressed=True, text=COMPLEMENT_TEXT)
    return Cell(None, "number", text=interval_text(limits))


def _frequency_column(
    result: TableResult, intervals: dict[str, list[float] | None], confidence: float
) -> None:
    """One range column right after the percentage column (the third)."""
    at = 3
    result.columns.insert(at, interval_header(confidence))
    levels = iter(result.data["levels"])
    for r, row in enumerate(result.rows):
        role = result.row_roles[r] if r < len(result.row_roles) else ""
        limits = intervals.get(next(levels)) if role == "level" else None
        row.insert(at, _cell(limits, role == "level"))


def _crosstab_columns(
    result: TableResult, intervals: dict[str, dict[str, list[float] | None]], confidence: float
) -> None:
    """A range column after each answer's percentage column (groups run down the rows)."""
    levels = result.data["levels"]
    header = interval_header(confidence)
    # Columns: label, then "<answer> n", "<answer> %" per answer; answers come first.
    for j in reversed(range(len(levels))):
        at = 3 + 2 * j
        result.columns.insert(at, f"{levels[j]} {header}")
        groups = iter(result.data["groups"])
        for r, row in enumerate(result.rows):
            role = result.row_roles[r] if r < len(result.row_roles) else ""
            limits = intervals.get(next(groups), {}).get(levels[j]) if role == "level" else None
            row.insert(at, _cell(limits, role == "level"))
