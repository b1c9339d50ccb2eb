"""Charts of choose-all-that-apply questions: share of respondents choosing each option."""

from __future__ import annotations

from matplotlib.figure import Figure

from core.charts import palette, shapes
from core.charts.style import (
    SUPPRESSED_NOTE,
    Sizes,
    clean_axes,
    hide_value_axis,
    label_bars,
    mark_hidden,
    percent_text,
    wrap_label,
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
    shown = [i for i, v in enumerate(values) if v is not None]
    heights = [values[i] for i in shown]
    top = max(heights, default=1.0) or 1.0
    if horizontal:
        bars = ax.barh(shown, heights, height=0.7, color=palette.SINGLE)
        ax.set_yticks(range(len(options)), [wrap_label(o) for o in options], fontsize=sizes.tick)
        ax.invert_yaxis()
        ax.set_xlim(0, top * 1.15)
        clean_axes(ax, keep=("left",), ticks=())
        hide_value_axis(ax, "x")
    else:
        bars = ax.bar(shown, heights, width=0.7, color=palette.SINGLE)
        ax.set_xticks(
            range(len(options)), [wrap_label(o, 14) for o in options], fontsize=sizes.tick
        )
        ax.set_ylim(0, top * 1.15)
        clean_axes(ax, keep=("bottom",), ticks=())
        hide_value_axis(ax, "y")
    label_bars(ax, bars, [percent_text(h) for h in heights], sizes)
    hidden = [i for i, v in enumerate(values) if v is None]
    for i in hidden:
        mark_hidden(ax, i, sizes, horizontal=horizontal)
    notes = [MULTI_NOTE]
    if hidden:
        notes.append(SUPPRESSED_NOTE)
    return notes
