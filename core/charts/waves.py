"""Side-by-side waves: the same question's answers in each wave, with the change in points."""

from __future__ import annotations

from matplotlib.figure import Figure
from matplotlib.patches import Patch

from core.charts import palette, shapes
from core.charts.style import (
    SUPPRESSED_NOTE,
    Sizes,
    add_legend,
    clean_axes,
    hide_value_axis,
    label_bars,
    percent_text,
    wrap_label,
)
from core.tables.result import TableResult

WAVES_NOTE = (
    "Columns show each wave's percentages; the figure above each answer is the change in "
    "percentage points from the first to the last wave shown. Differences between waves "
    "describe these respondents and are not proof of a cause."
)


def draw_waves(result: TableResult, figure: Figure, sizes: Sizes) -> list[str]:
    data = result.data
    waves = [str(w) for w in data.get("waves", [])]
    lvls = shapes.levels(result)
    shapes.require(bool(waves) and bool(lvls), "This comparison has no waves to draw.")
    colours = palette.wave_colours(len(waves))
    percents = data.get("percents") or {}
    bases = data.get("bases") or {}
    ax = figure.add_subplot()
    width = 0.8 / len(waves)
    hidden = False
    top = 1.0
    handles, labels = [], []
    for j, w in enumerate(waves):
        xs, hs = [], []
        for i, lv in enumerate(lvls):
            v = (percents.get(w) or {}).get(lv)
            if v is None:
                hidden = True
                continue
            xs.append(i - 0.4 + width * (j + 0.5))
            hs.append(float(v))
        bars = ax.bar(xs, hs, width=width * 0.92, color=colours[j], label=w)
        label_bars(ax, bars, [percent_text(h) for h in hs], sizes)
        top = max([top, *hs])
        handles.append(Patch(facecolor=colours[j]))
        base = bases.get(w)
        labels.append(f"{w} (n = {base:,})" if isinstance(base, int) else w)
    change = data.get("change_pp") or {}
    for i, lv in enumerate(lvls):
        pp = change.get(lv)
        if pp is None:
            continue
        ax.annotate(
            f"{float(pp):+.1f} pp",
            (i, top * 1.12),
            ha="center",
            va="bottom",
            fontsize=sizes.value,
            fontweight="bold",
            color=palette.INK,
        )
    ax.set_xticks(range(len(lvls)), [wrap_label(lv, 14) for lv in lvls], fontsize=sizes.tick)
    ax.set_ylim(0, top * 1.3)
    clean_axes(ax, keep=("bottom",), ticks=())
    hide_value_axis(ax, "y")
    add_legend(figure, handles, labels, sizes)
    notes = [WAVES_NOTE]
    if hidden:
        notes.append(SUPPRESSED_NOTE)
    return notes
