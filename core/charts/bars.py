"""Bar and column charts of frequency tables and cross-tabulations.

- ``bar`` / ``column``: one bar per answer. Unordered categories are sorted by frequency so
  the biggest answer leads; ordered levels keep their scale order, because reordering a scale
  hides its shape.
- ``clustered``: one cluster per answer, one column per group of the break-down.
- ``stacked100``: one column per group, its answers stacked to 100 % (share within the group).
"""

from __future__ import annotations

from matplotlib.figure import Figure
from matplotlib.patches import Patch

from core.charts import palette, shapes
from core.charts.style import (
    SUPPRESSED_NOTE,
    Sizes,
    add_legend,
    bar_series,
    clean_axes,
    hide_value_axis,
    label_bars,
    mark_hidden,
    percent_text,
    wrap_label,
)
from core.tables.result import TableResult

# Segments narrower than this share get no label: the text would not fit (common practice,
# no source).
MIN_LABELLED_SEGMENT = 4.0
# Beyond this many bars in one chart value labels crowd each other; the value axis is shown
# instead.
MAX_LABELLED_BARS = 40


def level_colours(result: TableResult, level_list: list[str]) -> list[str]:
    return palette.for_levels(
        len(level_list),
        ordered=shapes.is_ordered(result),
        diverging_scale=shapes.is_likert(result),
        neutral=shapes.neutral_index(result, level_list),
    )


def frequency_values(result: TableResult) -> tuple[list[str], list[float | None], bool]:
    """(levels in chart order, values, values_are_percent) of a frequency table."""
    data = result.data
    lvls = shapes.levels(result)
    percents = data.get("percents") or {}
    use_pct = bool(percents) and not all(percents.get(lv) is None for lv in lvls)
    source = percents if use_pct else data.get("counts", {})
    values = [shapes.number(source.get(lv)) for lv in lvls]
    if not shapes.is_ordered(result):
        # Biggest first; hidden (suppressed) answers last, since their size is not shown.
        order = sorted(
            range(len(lvls)),
            key=lambda i: (values[i] is None, -(values[i] or 0.0), i),
        )
        lvls = [lvls[i] for i in order]
        values = [values[i] for i in order]
    return lvls, values, use_pct


def draw_frequency(
    result: TableResult, figure: Figure, sizes: Sizes, *, horizontal: bool
) -> list[str]:
    """One bar per answer (``bar`` horizontal, ``column`` vertical)."""
    lvls, values, use_pct = frequency_values(result)
    shapes.require(bool(lvls), "This table has no answers to draw.")
    if shapes.is_ordered(result):
        scale = shapes.levels(result)
        colour_by_level = dict(zip(scale, level_colours(result, scale)))
        colours = [colour_by_level[lv] for lv in lvls]
    else:
        colours = [palette.SINGLE] * len(lvls)
    ax = figure.add_subplot()
    fmt = percent_text if use_pct else (lambda v: f"{int(round(v)):,}")
    hidden = bar_series(ax, lvls, values, colours, sizes, fmt, horizontal=horizontal)
    notes = [SUPPRESSED_NOTE] if hidden else []
    if not use_pct:
        notes.append("Bars show numbers of respondents.")
    return notes


def _group_label(result: TableResult, group: str) -> str:
    base = (result.data.get("group_bases") or {}).get(group)
    label = wrap_label(group, 16)
    return f"{label}\n(n = {base:,})" if isinstance(base, int) else label


def _clustered_levels(result: TableResult, table: dict[str, dict[str, float | None]]) -> list[str]:
    lvls = shapes.levels(result)
    if shapes.is_ordered(result):
        return lvls
    counts = result.data.get("counts", {})
    totals = {lv: sum((counts.get(g, {}).get(lv) or 0) for g in table) for lv in lvls}
    return sorted(lvls, key=lambda lv: (-totals[lv], lvls.index(lv)))


def draw_clustered(result: TableResult, figure: Figure, sizes: Sizes) -> list[str]:
    """Answers along the axis, one column per group: compares groups answer by answer."""
    table = shapes.group_percents(result)
    groups = list(table)
    shapes.require(bool(groups), "This table has no break-down to cluster by.")
    lvls = _clustered_levels(result, table)
    colours = palette.categorical(len(groups))
    ax = figure.add_subplot()
    width = 0.8 / len(groups)
    n_bars = len(groups) * len(lvls)
    label_values = n_bars <= MAX_LABELLED_BARS
    hidden = False
    top = 1.0
    handles = []
    for j, g in enumerate(groups):
        xs, hs = [], []
        for i, lv in enumerate(lvls):
            v = table[g].get(lv)
            if v is None:
                hidden = True
                continue
            xs.append(i - 0.4 + width * (j + 0.5))
            hs.append(v)
        bars = ax.bar(xs, hs, width=width * 0.92, color=colours[j], label=g)
        handles.append(Patch(facecolor=colours[j]))
        top = max([top, *hs])
        if label_values:
            label_bars(ax, bars, [percent_text(h) for h in hs], sizes)
    ax.set_xticks(range(len(lvls)), [wrap_label(lv, 14) for lv in lvls], fontsize=sizes.tick)
    ax.set_ylim(0, top * 1.15)
    clean_axes(ax, keep=("bottom",), ticks=())
    if label_values:
        hide_value_axis(ax, "y")
    else:
        ax.spines["left"].set_visible(True)
        ax.tick_params(axis="y", labelsize=sizes.tick)
        ax.set_ylabel("% within group", fontsize=sizes.label)
    add_legend(figure, handles, [_group_label(result, g).replace("\n", " ") for g in groups], sizes)
    notes = ["Columns show the percentage of each group giving each answer."]
    if shapes.shape_of(result) == shapes.MULTISELECT:
        from core.charts.multiselect import MULTI_NOTE

        notes = [MULTI_NOTE.replace("respondents who", "each group's respondents who")]
    if hidden:
        notes.append(SUPPRESSED_NOTE)
    return notes


HIDDEN_SHARE_LABEL = "Hidden answers (small counts)"


def draw_stacked(
    figure: Figure,
    sizes: Sizes,
    rows: list[str],
    row_labels: list[str],
    lvls: list[str],
    table: dict[str, dict[str, float | None]],
    colours: list[str],
    *,
    horizontal: bool,
) -> bool:
    """Stack ``table[row][level]`` shares; returns True when a suppressed segment was left out."""
    ax = figure.add_subplot()
    hidden = False
    starts = [0.0] * len(rows)
    handles = []
    for k, lv in enumerate(lvls):
        pos, vals, lefts = [], [], []
        for i, r in enumerate(rows):
            v = table[r].get(lv)
            if v is None:
                hidden = True
                continue
            pos.append(i)
            vals.append(v)
            lefts.append(starts[i])
            starts[i] += v
        if horizontal:
            bars = ax.barh(pos, vals, left=lefts, height=0.7, color=colours[k], label=lv)
        else:
            bars = ax.bar(pos, vals, bottom=lefts, width=0.7, color=colours[k], label=lv)
        handles.append(Patch(facecolor=colours[k]))
        labels = [percent_text(v) if v >= MIN_LABELLED_SEGMENT else "" for v in vals]
        label_bars(ax, bars, labels, sizes, inside=True, colours=[colours[k]] * len(vals))
    hidden_rows = [
        i
        for i, r in enumerate(rows)
        if any(table[r].get(lv) is None for lv in lvls) and 0 < starts[i] < 99.95
    ]
    if hidden_rows:
        # Shares add to 100 %: the hidden answers together fill the rest of the bar, drawn as
        # one hatched block so each bar still reaches 100 %. Their total is already readable
        # from the table (100 % minus the rest); no single hidden answer is drawn.
        rest = [100.0 - starts[i] for i in hidden_rows]
        base = [starts[i] for i in hidden_rows]
        style = {"facecolor": "white", "edgecolor": palette.GREY, "hatch": "///", "linewidth": 0}
        if horizontal:
            ax.barh(hidden_rows, rest, left=base, height=0.7, **style)
        else:
            ax.bar(hidden_rows, rest, bottom=base, width=0.7, **style)
        handles.append(Patch(**style))
        lvls = [*lvls, HIDDEN_SHARE_LABEL]
    for i, start in enumerate(starts):
        if start == 0 and all(table[rows[i]].get(lv) is None for lv in lvls[: len(colours)]):
            # Everything in this group is hidden: say so where its bar would be.
            mark_hidden(ax, i, sizes, horizontal=horizontal)
    if horizontal:
        ax.set_yticks(range(len(rows)), row_labels, fontsize=sizes.tick)
        ax.invert_yaxis()
        ax.set_xlim(0, 100)
        clean_axes(ax, keep=(), ticks=())
        hide_value_axis(ax, "x")
    else:
        ax.set_xticks(range(len(rows)), row_labels, fontsize=sizes.tick)
        ax.set_ylim(0, 100)
        clean_axes(ax, keep=(), ticks=())
        hide_value_axis(ax, "y")
    add_legend(figure, handles, lvls, sizes)
    return hidden


def draw_stacked100(result: TableResult, figure: Figure, sizes: Sizes) -> list[str]:
    """One column per group (or one bar per item of a battery), answers stacked to 100 %."""
    lvls = shapes.levels(result)
    colours = level_colours(result, lvls)
    if shapes.shape_of(result) == shapes.BATTERY:
        from core.charts.likert import battery_rows

        rows, row_labels, table = battery_rows(result)
        horizontal = True
    else:
        table = shapes.group_percents(result)
        rows = list(table)
        row_labels = [_group_label(result, g) for g in rows]
        horizontal = False
    shapes.require(bool(rows), "This table has no groups to stack.")
    hidden = draw_stacked(
        figure, sizes, rows, row_labels, lvls, table, colours, horizontal=horizontal
    )
    notes = ["Each bar shows the answers within its group, adding to 100 %."]
    if hidden:
        notes.append(SUPPRESSED_NOTE)
    return notes
