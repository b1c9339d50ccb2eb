"""Diverging stacked bars for rating scales (Heiberger & Robbins 2014 layout, METHODS §14).

Each bar is centred on a common zero line: the disagreement levels stack to the left, the
agreement levels to the right, and the neutral level (on an odd scale) is split half and half
across the centre. Bars can then be compared by how far they reach to either side, which a
plain stacked bar does not allow. Rows are the items of a battery, or the groups of a
break-down for one item.

Left-hand segments are drawn with negative widths starting at minus half the neutral share,
so every rectangle's geometry states directly which side of zero it is on.
"""

from __future__ import annotations

import os

from matplotlib.figure import Figure
from matplotlib.patches import Patch
from matplotlib.ticker import FuncFormatter, MaxNLocator

from core.charts import palette, shapes
from core.charts.bars import MIN_LABELLED_SEGMENT, _group_label, level_colours
from core.charts.style import (
    GLYPH_WIDTH,
    SUPPRESSED_NOTE,
    Sizes,
    add_legend,
    clean_axes,
    mark_hidden,
    percent_text,
    wrap_label,
)
from core.tables.result import TableResult

NEGATIVE_MARK = "(negatively worded)"
DIVERGING_NOTE = (
    "Bars are centred on the middle of the scale: disagreement to the left, agreement to "
    "the right; the neutral answer is split across the centre."
)
NEGATIVE_NOTE = (
    f"Items marked {NEGATIVE_MARK} are shown as answered: agreeing with them is the "
    "unfavourable answer."
)
SINGLE_NEGATIVE_NOTE = (
    "This item is negatively worded: agreeing with it is the unfavourable answer."
)


def split_scale(n: int, neutral: int | None) -> tuple[list[int], int | None, list[int]]:
    """(negative side, neutral level, positive side) as level positions.

    With no named neutral level an odd scale's middle level is treated as neutral and an even
    scale is split in half.
    """
    if neutral is None and n % 2 == 1:
        neutral = n // 2
    if neutral is None:
        return list(range(n // 2)), None, list(range(n // 2, n))
    return list(range(neutral)), neutral, list(range(neutral + 1, n))


_STEM_SEPARATORS = " -–—:|."


def item_texts(result: TableResult) -> dict[str, str]:
    """Each item's own words, without the question stem the whole battery shares.

    Exports often repeat the stem in every item ("Thinking about the course, how much do you
    agree? - I felt welcome"); the stem is already the chart title, and repeating it on every
    bar would push the bars off the slide. An item whose text is only the stem keeps its name.
    """
    data = result.data
    items = [str(i) for i in data.get("items", [])]
    labels = {i: str((data.get("item_labels") or {}).get(i) or i) for i in items}
    stems = [result.title.strip()] if result.title else []
    if len(items) > 1:
        common = os.path.commonprefix(list(labels.values()))
        # Cut back to a word boundary so a shared first word of the statements is kept.
        cut = max(common.rfind(ch) for ch in _STEM_SEPARATORS) + 1 if common else 0
        if cut > 0:
            stems.append(common[:cut])
    out = {}
    for i, text in labels.items():
        for stem in stems:
            if stem and text.startswith(stem):
                text = text[len(stem) :]
                break
        text = text.strip().lstrip(_STEM_SEPARATORS).strip()
        out[i] = text or i
    return out


def item_label(result: TableResult, item: str, texts: dict[str, str] | None = None) -> str:
    """The item's text (or name), marked when the item is negatively worded."""
    data = result.data
    text = (texts or item_texts(result)).get(item, item)
    label = wrap_label(text, 34)
    keying = data.get("keying")
    if isinstance(keying, dict) and keying.get(item) == "negative":
        label += "\n" + NEGATIVE_MARK
    return label


def battery_rows(
    result: TableResult,
) -> tuple[list[str], list[str], dict[str, dict[str, float | None]]]:
    """(items, their labels, percent by item and level) of a Likert battery."""
    data = result.data
    items = [str(i) for i in data.get("items", [])]
    lvls = shapes.levels(result)
    table = {
        item: {lv: shapes.number((data["percents"].get(item) or {}).get(lv)) for lv in lvls}
        for item in items
    }
    texts = item_texts(result)
    return items, [item_label(result, i, texts) for i in items], table


def diverging_rows(
    result: TableResult,
) -> tuple[list[str], list[str], dict[str, dict[str, float | None]]]:
    """Rows of a diverging chart: battery items, break-down groups, or the one item."""
    shape = shapes.shape_of(result)
    if shape == shapes.BATTERY:
        return battery_rows(result)
    if shapes.has_groups(result):
        table = shapes.group_percents(result)
        return list(table), [_group_label(result, g) for g in table], table
    lvls = shapes.levels(result)
    percents = result.data.get("percents") or {}
    row = {lv: shapes.number(percents.get(lv)) for lv in lvls}
    return ["All"], ["All respondents"], {"All": row}


def draw_diverging(result: TableResult, figure: Figure, sizes: Sizes) -> list[str]:
    lvls = shapes.levels(result)
    shapes.require(len(lvls) >= 2, "A diverging bar needs a scale of at least two answers.")
    rows, labels, table = diverging_rows(result)
    shapes.require(bool(rows), "This table has no items to draw.")
    neutral_at = shapes.neutral_index(result, lvls)
    left, neutral, right = split_scale(len(lvls), neutral_at)
    colours = level_colours(result, lvls)
    if not shapes.is_likert(result):  # an ordered scale drawn diverging still needs two poles
        colours = palette.diverging(len(lvls), neutral)

    ax = figure.add_subplot()
    hidden = False
    extent = 1.0
    # Per row: where the left and right stacks start (the edges of the neutral segment).
    half_neutral = {}
    for r in rows:
        v = table[r].get(lvls[neutral]) if neutral is not None else 0.0
        if v is None:
            hidden = True
            v = 0.0
        half_neutral[r] = v / 2

    def segments(level_positions: list[int], sign: int) -> None:
        nonlocal hidden, extent
        edge = {r: sign * half_neutral[r] for r in rows}
        for k in level_positions:
            lv = lvls[k]
            pos, widths, starts = [], [], []
            for i, r in enumerate(rows):
                v = table[r].get(lv)
                if v is None:
                    hidden = True
                    continue
                pos.append(i)
                widths.append(sign * v)
                starts.append(edge[r])
                edge[r] += sign * v
            bars = ax.barh(pos, widths, left=starts, height=0.7, color=colours[k], label=lv)
            labels_ = [
                percent_text(abs(w)) if abs(w) >= MIN_LABELLED_SEGMENT else "" for w in widths
            ]
            texts = ax.bar_label(bars, labels=labels_, label_type="center", fontsize=sizes.value)
            for t in texts:
                t.set_color(palette.ink_for(colours[k]))
        extent = max([extent, *(abs(e) for e in edge.values())])

    # Negative side: innermost level (next to neutral) first, so it sits against the centre.
    segments(list(reversed(left)), -1)
    segments(right, +1)
    if neutral is not None:
        pos = [i for i, r in enumerate(rows) if table[r].get(lvls[neutral]) is not None]
        widths = [2 * half_neutral[rows[i]] for i in pos]
        bars = ax.barh(
            pos,
            widths,
            left=[-w / 2 for w in widths],
            height=0.7,
            color=colours[neutral],
            label=lvls[neutral],
        )
        labels_ = [percent_text(w) if w >= MIN_LABELLED_SEGMENT else "" for w in widths]
        texts = ax.bar_label(bars, labels=labels_, label_type="center", fontsize=sizes.value)
        for t in texts:
            t.set_color(palette.ink_for(colours[neutral]))

    for i, r in enumerate(rows):
        if all(table[r].get(lv) is None for lv in lvls):
            mark_hidden(ax, i, sizes)

    # Totals at both ends: the share disagreeing and the share agreeing.
    for i, r in enumerate(rows):
        for side, sign in ((left, -1), (right, +1)):
            vals = [table[r].get(lvls[k]) for k in side]
            if not side or any(v is None for v in vals):
                continue
            total = sum(vals)
            end = sign * (half_neutral[r] + total)
            ax.annotate(
                percent_text(total),
                (end, i),
                xytext=(sign * 5, 0),
                textcoords="offset points",
                ha="right" if sign < 0 else "left",
                va="center",
                fontsize=sizes.value,
                fontweight="bold",
                color=palette.INK,
            )

    # Room at both ends for the bold totals: their width in points against half the plot.
    half_plot_pt = figure.get_figwidth() * 72 * 0.6 / 2
    room = max(0.18, (5 * GLYPH_WIDTH * sizes.value + 10) / half_plot_pt)
    limit = min(extent, 100.0) * (1 + room)
    ax.set_xlim(-limit, limit)
    ax.axvline(0, color=palette.RULE, linewidth=1.0, zorder=3)
    ax.set_yticks(range(len(rows)), labels, fontsize=sizes.tick)
    # Top to bottom in the table's order; a single bar is kept from filling the whole plot.
    pad = max(0.0, (2.5 - len(rows)) / 2)
    ax.set_ylim(len(rows) - 0.5 + pad, -0.5 - pad)
    ax.xaxis.set_major_locator(MaxNLocator(nbins=6, symmetric=True))
    ax.xaxis.set_major_formatter(FuncFormatter(lambda x, _pos: f"{abs(x):.0f}%"))
    ax.tick_params(axis="x", labelsize=sizes.tick * 0.85, colors=palette.MUTED_INK)
    clean_axes(ax, keep=("bottom",), ticks=("x",))
    add_legend(figure, [Patch(facecolor=c) for c in colours], lvls, sizes)

    notes = [DIVERGING_NOTE]
    keying = result.data.get("keying")
    said = any("negatively worded" in str(n).lower() for n in result.notes)
    if isinstance(keying, dict):
        if any(keying.get(r) == "negative" for r in rows) and not said:
            notes.append(NEGATIVE_NOTE)
    elif keying == "negative" and not said:  # one item, overall or by group
        notes.append(SINGLE_NEGATIVE_NOTE)
    if hidden:
        notes.append(SUPPRESSED_NOTE)
    return notes
