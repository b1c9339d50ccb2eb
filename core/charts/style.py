"""How every chart looks: slide-readable type, a wrapped question title, base and notes below.

Charts are read on slides and in printed reports, often from the back of a room, so type is
large, value labels sit directly on the bars (no need to read an axis), and everything that
does not carry information is left out: no 3-D, no gridlines behind labelled bars, no box
around the plot. Sizes are in points and scale with the figure width, so a small gallery
thumbnail and a full 1920 x 1080 slide keep the same proportions.
"""

from __future__ import annotations

import re
import textwrap
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass

from matplotlib.axes import Axes
from matplotlib.container import BarContainer
from matplotlib.figure import Figure

from core.charts import palette
from core.tables.result import TableResult

# The reference figure: 1920 x 1080 pixels at 150 dpi is 12.8 x 7.2 inches.
REFERENCE_WIDTH_IN = 12.8
# Average glyph width as a share of the font size for a sans-serif face; used to wrap text
# to the figure width before drawing (common practice, no source; checked by eye here).
GLYPH_WIDTH = 0.55
BOLD_GLYPH_WIDTH = 0.64  # bold type runs wider

SUPPRESSED_NOTE = (
    "Counts below the small-cell threshold are hidden to protect respondents' "
    "confidentiality; they are not drawn."
)
HIDDEN_LABEL = "hidden"
# Under a chart on a slide there is room for the base line and a few short notes; the full
# set stays with the table and in reports.
FOOTER_NOTES = 3
SHORT_NOTE = 160  # characters: longer notes are cut to their first sentence or clause
MORE_NOTES = "More notes with the table."
_SENTENCE_END = re.compile(r"(?<=[.!?])\s+(?=[A-Z\"“(])")


@dataclass(frozen=True)
class Sizes:
    """Font sizes (points) for one figure."""

    title: float
    label: float
    tick: float
    value: float
    note: float
    legend: float


def sizes_for(figure: Figure) -> Sizes:
    """Type sizes scaled to the figure width (limited, so thumbnails stay legible)."""
    width_in = figure.get_figwidth()
    scale = min(max(width_in / REFERENCE_WIDTH_IN, 0.45), 1.6)
    return Sizes(
        title=20 * scale,
        label=15 * scale,
        tick=14 * scale,
        value=13 * scale,
        note=11 * scale,
        legend=13 * scale,
    )


def wrap(
    text: str, figure: Figure, fontsize: float, share: float = 0.96, glyph: float = GLYPH_WIDTH
) -> str:
    """Wrap ``text`` to ``share`` of the figure width at ``fontsize``."""
    width_pt = figure.get_figwidth() * 72 * share
    chars = max(int(width_pt / (fontsize * glyph)), 12)
    paragraphs = [p for p in str(text).splitlines() if p.strip()] or [""]
    return "\n".join(textwrap.fill(p, chars, break_on_hyphens=False) for p in paragraphs)


def wrap_label(text: str, width: int = 28) -> str:
    """Wrap a category label so long answer texts do not squeeze the plot."""
    return textwrap.fill(str(text), width, break_long_words=False, break_on_hyphens=False) or str(
        text
    )


def prepare(figure: Figure) -> Sizes:
    """Clear ``figure`` and set the layout engine that makes room for titles and notes."""
    figure.clear()
    figure.set_layout_engine("constrained")
    engine = figure.get_layout_engine()
    engine.set(w_pad=0.08, h_pad=0.08, hspace=0.04, wspace=0.04)
    figure.set_facecolor("white")
    return sizes_for(figure)


def add_title(figure: Figure, title: str, sizes: Sizes) -> None:
    """The question text as a left-aligned, wrapped title."""
    if not title:
        return
    figure.suptitle(
        wrap(title, figure, sizes.title, glyph=BOLD_GLYPH_WIDTH),
        x=0.01,
        ha="left",
        fontsize=sizes.title,
        fontweight="bold",
        color=palette.INK,
        multialignment="left",
    )


def footer_lines(base: str, notes: Iterable[str], extra: Iterable[str] = ()) -> list[str]:
    """Base line first, then the table's notes, then the chart's own notes (no repeats)."""
    lines: list[str] = []
    for line in [base, *notes, *extra]:
        line = str(line or "").strip()
        if line and line not in lines:
            lines.append(line)
    return lines


def chart_footer(result: TableResult, extra: Iterable[str] = ()) -> list[str]:
    """The base line and the notes a chart has room for.

    With up to :data:`FOOTER_NOTES` notes (the table's and the chart's own), all of them.
    With more, the ones a reader of the chart needs most, in this order: what is hidden to
    protect respondents, how missing answers were treated, the source; then the chart's
    own reading notes. Each is cut to its first sentence when long, and a last line says
    the rest are with the table (tables and reports always carry every note).
    """
    lines = footer_lines(result.base, result.notes, extra)
    base, notes = (lines[:1], lines[1:]) if result.base else ([], lines)
    if len(notes) <= FOOTER_NOTES:
        return lines
    own = set(extra) - set(result.notes)
    kinds = result.note_kinds

    def kind(note: str) -> str:
        if note in own:
            return "chart"
        # Results built without note kinds still say their source the standard way.
        return kinds.get(note) or ("source" if note.startswith("Source:") else "")

    hidden = any(cell.suppressed for row in result.rows for cell in row)
    wanted = [
        [n for n in notes if n == SUPPRESSED_NOTE]
        or [n for n in notes if hidden and kind(n) == "suppression"],
        [n for n in notes if kind(n) == "treatment"] or [n for n in notes if kind(n) == "missing"],
        [n for n in notes if kind(n) == "source"],
        [n for n in notes if kind(n) == "chart"],
    ]
    picked: list[str] = []
    for group in wanted:
        for note in group:
            if len(picked) < FOOTER_NOTES and note not in picked:
                picked.append(note)
                break
    for note in notes:  # room left: the chart's reading notes, then the table's in order
        if len(picked) < FOOTER_NOTES and note not in picked and kind(note) == "chart":
            picked.append(note)
    for note in notes:
        if len(picked) < FOOTER_NOTES and note not in picked and kind(note) != "suppression":
            picked.append(note)
    return base + [short_note(n) for n in notes if n in picked] + [MORE_NOTES]


def short_note(note: str, limit: int = SHORT_NOTE) -> str:
    """A note cut to its first sentence, or first clause, when longer than ``limit``."""
    if len(note) <= limit:
        return note
    first = _SENTENCE_END.split(note, maxsplit=1)[0]
    if len(first) > limit and "; " in first[:limit]:
        first = first[: first.index("; ", 0, limit)] + "."
    if len(first) > limit:
        cut = first[: limit - 1]
        first = cut[: cut.rfind(" ")].rstrip(" ,;:") + "…" if " " in cut else cut + "…"
    return first


def add_footer(figure: Figure, lines: Sequence[str], sizes: Sizes) -> None:
    """Base and notes under the chart, as under a table."""
    if not lines:
        return
    text = "\n".join(wrap(line, figure, sizes.note) for line in lines)
    figure.supxlabel(
        text,
        x=0.01,
        ha="left",
        fontsize=sizes.note,
        color=palette.MUTED_INK,
        multialignment="left",
    )


def clean_axes(
    ax: Axes, keep: Sequence[str] = ("left",), ticks: Sequence[str] = ("x", "y")
) -> None:
    """Remove spines not in ``keep`` and gridlines; ``ticks`` lists axes that keep tick marks."""
    for side, spine in ax.spines.items():
        spine.set_visible(side in keep)
        spine.set_color(palette.MUTED_INK)
    ax.grid(False)
    ax.set_facecolor("white")
    for axis in ("x", "y"):
        if axis not in ticks:
            ax.tick_params(axis=axis, length=0)


def hide_value_axis(ax: Axes, axis: str) -> None:
    """Values are labelled on the bars, so the value axis would only repeat them."""
    if axis == "x":
        ax.xaxis.set_visible(False)
        ax.spines["bottom"].set_visible(False)
        ax.spines["top"].set_visible(False)
    else:
        ax.yaxis.set_visible(False)
        ax.spines["left"].set_visible(False)
        ax.spines["right"].set_visible(False)


def label_bars(
    ax: Axes,
    container: BarContainer,
    labels: Sequence[str],
    sizes: Sizes,
    *,
    inside: bool = False,
    colours: Sequence[str] | None = None,
) -> None:
    """Direct value labels: at the bar end, or centred inside stacked segments."""
    if inside:
        texts = ax.bar_label(
            container, labels=list(labels), label_type="center", fontsize=sizes.value
        )
        for text, colour in zip(texts, colours or [palette.SINGLE] * len(texts)):
            text.set_color(palette.ink_for(colour))
    else:
        ax.bar_label(
            container,
            labels=list(labels),
            padding=3,
            fontsize=sizes.value,
            color=palette.INK,
        )


def mark_hidden(ax: Axes, i: int, sizes: Sizes, *, horizontal: bool = True) -> None:
    """Write "hidden" where category ``i``'s bar would stand.

    A hidden count draws no bar; without the word, the gap would read as nobody answering.
    """
    ax.annotate(
        HIDDEN_LABEL,
        (0, i) if horizontal else (i, 0),
        xytext=(4, 0) if horizontal else (0, 4),
        textcoords="offset points",
        ha="left" if horizontal else "center",
        va="center" if horizontal else "bottom",
        fontsize=sizes.value,
        fontstyle="italic",
        color=palette.MUTED_INK,
    )


def bar_series(
    ax: Axes,
    names: Sequence[str],
    values: Sequence[float | None],
    colours: Sequence[str],
    sizes: Sizes,
    fmt: Callable[[float], str],
    *,
    horizontal: bool,
) -> list[int]:
    """One bar per category with its value written at the end, and no value axis.

    A hidden value (None) draws no bar but the word "hidden". Horizontal bars run top to
    bottom in the order given, as the categories are read. Returns the hidden positions.
    """
    shown = [i for i, v in enumerate(values) if v is not None]
    heights = [values[i] for i in shown]
    top = max(heights, default=1.0) or 1.0
    if horizontal:
        bars = ax.barh(shown, heights, color=[colours[i] for i in shown], height=0.7)
        ax.set_yticks(range(len(names)), [wrap_label(n) for n in names], fontsize=sizes.tick)
        ax.invert_yaxis()  # first category at the top, as it is read
        ax.set_xlim(0, top * 1.15)
        clean_axes(ax, keep=("left",), ticks=())
        hide_value_axis(ax, "x")
    else:
        bars = ax.bar(shown, heights, color=[colours[i] for i in shown], width=0.7)
        ax.set_xticks(range(len(names)), [wrap_label(n, 14) for n in names], fontsize=sizes.tick)
        ax.set_ylim(0, top * 1.15)
        clean_axes(ax, keep=("bottom",), ticks=())
        hide_value_axis(ax, "y")
    label_bars(ax, bars, [fmt(h) for h in heights], sizes)
    hidden = [i for i, v in enumerate(values) if v is None]
    for i in hidden:
        mark_hidden(ax, i, sizes, horizontal=horizontal)
    return hidden


def add_legend(
    figure: Figure, handles: Sequence[object], labels: Sequence[str], sizes: Sizes
) -> None:
    """One row of legend keys above the plot, in the order of the scale.

    The legend belongs to the (first) axes and sits just above it, so the layout engine
    stacks title, legend and plot without overlap.
    """
    if not handles or not figure.axes:
        return
    ax = figure.axes[0]
    # As many keys per row as fit in the width the plot usually gets (about 60 % of the
    # figure once category labels take their share).
    longest = max(len(line) for lbl in labels for line in wrap_label(lbl, 22).splitlines())
    per_key_pt = (longest * GLYPH_WIDTH + 3.0) * sizes.legend
    fits = int(figure.get_figwidth() * 72 * 0.6 // per_key_pt)
    ncols = max(1, min(len(handles), fits))
    ax.legend(
        handles,
        [wrap_label(lbl, 22) for lbl in labels],
        loc="lower left",
        bbox_to_anchor=(0.0, 1.01),
        ncols=ncols,
        frameon=False,
        fontsize=sizes.legend,
        handlelength=1.2,
        columnspacing=1.2,
        borderaxespad=0.0,
    )


def percent_text(value: float, decimals: int = 0) -> str:
    """A percentage for a bar label ("43%"); slides read whole percentages best."""
    return f"{value:.{decimals}f}%"


def count_text(value: float) -> str:
    return f"{int(round(value)):,}"


def number_text(value: float) -> str:
    if float(value).is_integer():
        return f"{int(value):,}"
    return f"{value:,.1f}"
