"""Charts of choose-all-that-apply questions: share of respondents choosing each option."""

from __future__ import annotations

from matplotlib.figure import Figure

from core.charts import palette, shapes
from core.charts.style import (
    SUPPRESSED_NOTE,
    Sizes,
    bar_series,
    percent_text,
)
from core.tables.result import TableResult

MULTI_NOTE = (
    "Percentages of respondents who answered the question; they add to more than 100 % "
    "because respondents could choose several options."
)


def sorted_options(result: TableResult) -> tuple[list[str], list[float | None]]:
    """Options by share of respondents, largest first; hidden ones last."""
    data = result.data
    options = [str(o) for o in data.get("options") or list(data.get("percents", {}))]
    pct = data.get("percents") or {}
    values = [shapes.number(pct.get(o)) for o in options]
    order = sorted(range(len(options)), key=lambda i: (values[i] is None, -(values[i] or 0), i))
    return [options[i] for i in order], [values[i] for i in order]


def draw_multiselect(
    result: TableResult, figure: Figure, sizes: Sizes, *, horizontal: bool = True
) -> list[str]:
    options, values = sorted_options(result)
    shapes.require(bool(options), "This question has no options to draw.")
    ax = figure.add_subplot()
    colours = [palette.SINGLE] * len(options)
    hidden = bar_series(ax, options, values, colours, sizes, percent_text, horizontal=horizontal)
    notes = [MULTI_NOTE]
    if hidden:
        notes.append(SUPPRESSED_NOTE)
    return notes
