"""Charts of numeric variables: a histogram, and box plots by group.

Both read the numbers the descriptive table computed (``histogram`` bins and ``box``
statistics), so the chart shows exactly the quartiles the table reports. Box plots are drawn
with ``Axes.bxp`` from those statistics rather than from raw values.
"""

from __future__ import annotations

from typing import Any

from matplotlib.figure import Figure

from core.charts import palette, shapes
from core.charts.style import (
    SUPPRESSED_NOTE,
    Sizes,
    clean_axes,
    count_text,
    hide_value_axis,
    label_bars,
    wrap_label,
)
from core.tables.result import TableResult

# Beyond this many bins, count labels crowd each other and the count axis is shown instead.
MAX_LABELLED_BINS = 20
BOX_NOTE = (
    "Boxes span the first to the third quartile, with a line at the median; whiskers reach "
    "the furthest values within 1.5 × IQR of the box (Tukey's fences); points beyond them "
    "are drawn one by one."
)
BOX_KEYS = ("q1", "med", "q3", "whislo", "whishi")


def _histogram_on(ax: Any, hist: dict[str, Any], sizes: Sizes, label_counts: bool) -> bool:
    """Draw one histogram from its bin edges and counts; True if a bin was hidden."""
    edges = [float(e) for e in hist.get("edges", [])]
    counts = list(hist.get("counts", []))
    shown = [i for i, c in enumerate(counts) if c is not None and i + 1 < len(edges)]
    lefts = [edges[i] for i in shown]
    widths = [edges[i + 1] - edges[i] for i in shown]
    heights = [float(counts[i]) for i in shown]
    bars = ax.bar(
        lefts,
        heights,
        width=widths,
        align="edge",
        color=palette.SINGLE,
        edgecolor="white",
        linewidth=0.8,
    )
    if label_counts:
        label_bars(ax, bars, [count_text(h) for h in heights], sizes)
    ax.set_ylim(0, (max(heights, default=1.0) or 1.0) * 1.15)
    ax.tick_params(axis="x", labelsize=sizes.tick)
    return len(shown) < len(counts)


def draw_histogram(result: TableResult, figure: Figure, sizes: Sizes) -> list[str]:
    data = result.data
    if data.get("histogram"):
        panels = {"": data["histogram"]}
    else:
        panels = dict(data.get("histogram_by_group") or {})
    shapes.require(bool(panels), "This table has no histogram bins to draw.")
    axes = figure.subplots(len(panels), 1, sharex=True, squeeze=False)[:, 0]
    hidden = False
    for ax, (group, hist) in zip(axes, panels.items()):
        n_bins = len(hist.get("counts", []))
        label_counts = n_bins <= MAX_LABELLED_BINS and len(panels) <= 3
        hidden |= _histogram_on(ax, hist, sizes, label_counts)
        clean_axes(ax, keep=("bottom",) if label_counts else ("bottom", "left"), ticks=("x", "y"))
        if label_counts:
            hide_value_axis(ax, "y")
        else:
            ax.tick_params(axis="y", labelsize=sizes.tick * 0.85)
        if group:
            ax.set_title(str(group), loc="left", fontsize=sizes.label, color=palette.INK)
    notes = ["Bars count respondents whose answer falls in each interval."]
    if hidden:
        notes.append(SUPPRESSED_NOTE)
    return notes


def box_stats(result: TableResult) -> tuple[list[dict[str, Any]], bool]:
    """Box statistics in the form ``Axes.bxp`` takes; True if a group was hidden."""
    data = result.data
    by_group = data.get("stats_by_group") or {}
    stats: list[dict[str, Any]] = []
    hidden = False
    for group, box in (data.get("box") or {}).items():
        if box is None or any(box.get(k) is None for k in BOX_KEYS):
            hidden = True
            continue
        n = (by_group.get(group) or {}).get("n")
        if n is None and group == "All":
            n = (data.get("stats") or {}).get("n")
        label = "All respondents" if group == "All" else wrap_label(str(group), 14)
        if isinstance(n, int):
            label += f"\n(n = {n:,})"
        entry = {k: float(box[k]) for k in BOX_KEYS}
        entry["fliers"] = [float(x) for x in box.get("fliers") or []]
        entry["label"] = label
        stats.append(entry)
    return stats, hidden


def draw_boxplot(result: TableResult, figure: Figure, sizes: Sizes) -> list[str]:
    stats, hidden = box_stats(result)
    shapes.require(bool(stats), "This table has no box-plot statistics to draw.")
    ax = figure.add_subplot()
    ax.bxp(
        stats,
        patch_artist=True,
        showfliers=True,
        widths=0.5,
        boxprops={"facecolor": palette.tint(palette.SINGLE, 0.55), "edgecolor": palette.SINGLE},
        medianprops={"color": palette.INK, "linewidth": 2.5},
        whiskerprops={"color": palette.SINGLE, "linewidth": 1.5},
        capprops={"color": palette.SINGLE, "linewidth": 1.5},
        flierprops={
            "marker": "o",
            "markerfacecolor": palette.VERMILLION,
            "markeredgecolor": palette.VERMILLION,
            "markersize": 5,
        },
    )
    ax.tick_params(axis="x", labelsize=sizes.tick)
    ax.tick_params(axis="y", labelsize=sizes.tick * 0.85)
    clean_axes(ax, keep=("left", "bottom"), ticks=("y",))
    notes = [BOX_NOTE]
    if hidden:
        notes.append(SUPPRESSED_NOTE)
    return notes
