"""Charts of ranking questions: Borda points, and how often each option got each rank."""

from __future__ import annotations

from matplotlib.figure import Figure
from matplotlib.patches import Patch

from core.charts import palette, shapes
from core.charts.bars import MIN_LABELLED_SEGMENT
from core.charts.style import (
    SUPPRESSED_NOTE,
    Sizes,
    add_legend,
    clean_axes,
    count_text,
    hide_value_axis,
    label_bars,
    number_text,
    wrap_label,
)
from core.tables.result import TableResult

RULE_TEXT = {
    "zero": "options a respondent left unranked score 0",
    "average": "options a respondent left unranked share the unused points equally",
    "modified": "a respondent who ranked k options gives k points to the first choice, "
    "unranked options score 0 (modified Borda count)",
}


def ranked_options(result: TableResult) -> list[str]:
    """Options from most to fewest Borda points (options with hidden points last)."""
    data = result.data
    options = [str(o) for o in data.get("options") or list(data.get("points", {}))]
    points = data.get("points") or {}
    return sorted(
        options,
        key=lambda o: (points.get(o) is None, -(points.get(o) or 0.0), options.index(o)),
    )


def draw_borda(result: TableResult, figure: Figure, sizes: Sizes) -> list[str]:
    """Horizontal bars of Borda points, the most preferred option on top."""
    options = ranked_options(result)
    shapes.require(bool(options), "This ranking has no options to draw.")
    points = result.data.get("points") or {}
    ax = figure.add_subplot()
    shown = [i for i, o in enumerate(options) if points.get(o) is not None]
    values = [float(points[options[i]]) for i in shown]
    bars = ax.barh(shown, values, height=0.7, color=palette.SINGLE)
    label_bars(ax, bars, [number_text(v) for v in values], sizes)
    ax.set_yticks(range(len(options)), [wrap_label(o) for o in options], fontsize=sizes.tick)
    ax.invert_yaxis()
    ax.set_xlim(0, (max(values, default=1.0) or 1.0) * 1.15)
    clean_axes(ax, keep=("left",), ticks=())
    hide_value_axis(ax, "x")
    rule = RULE_TEXT.get(str(result.data.get("rule", "zero")), "")
    notes = [f"Borda points: higher means ranked nearer the top; {rule}." if rule else ""]
    if len(shown) < len(options):
        notes.append(SUPPRESSED_NOTE)
    return [n for n in notes if n]


def draw_rank_positions(result: TableResult, figure: Figure, sizes: Sizes) -> list[str]:
    """Stacked bars: for each option, how many respondents put it first, second, ..."""
    options = ranked_options(result)
    rank_counts = result.data.get("rank_counts") or {}
    shapes.require(bool(options) and bool(rank_counts), "This ranking has no rank counts.")
    positions = sorted(
        {str(k) for o in options for k in (rank_counts.get(o) or {})}, key=lambda k: int(k)
    )
    # Rank 1 darkest: the sequential scheme runs light to dark, so reverse it.
    colours = list(reversed(palette.sequential(len(positions))))
    ax = figure.add_subplot()
    starts = [0.0] * len(options)
    hidden = False
    handles = []
    widest = 1.0
    for k, rank in enumerate(positions):
        pos, vals, lefts = [], [], []
        for i, o in enumerate(options):
            v = (rank_counts.get(o) or {}).get(rank)
            if v is None:
                hidden = hidden or rank in (rank_counts.get(o) or {})
                continue
            pos.append(i)
            vals.append(float(v))
            lefts.append(starts[i])
            starts[i] += v
        bars = ax.barh(pos, vals, left=lefts, height=0.7, color=colours[k], label=rank)
        handles.append(Patch(facecolor=colours[k]))
        widest = max([widest, *starts])
        labels = [count_text(v) if v >= widest * MIN_LABELLED_SEGMENT / 100 else "" for v in vals]
        label_bars(ax, bars, labels, sizes, inside=True, colours=[colours[k]] * len(vals))
    ax.set_yticks(range(len(options)), [wrap_label(o) for o in options], fontsize=sizes.tick)
    ax.invert_yaxis()
    ax.set_xlim(0, widest * 1.02)
    clean_axes(ax, keep=(), ticks=())
    hide_value_axis(ax, "x")
    add_legend(figure, handles, [_ordinal(int(r)) for r in positions], sizes)
    notes = [
        "Each bar counts the respondents who gave the option each rank; options are in "
        "order of Borda points."
    ]
    if hidden:
        notes.append(SUPPRESSED_NOTE)
    return notes


def _ordinal(n: int) -> str:
    suffix = "th" if 10 <= n % 100 <= 20 else {1: "st", 2: "nd", 3: "rd"}.get(n % 10, "th")
    return f"Ranked {n}{suffix}"
