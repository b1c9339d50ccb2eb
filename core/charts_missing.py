"""Missing-data charts: the respondents x items matrix and the drop-off curve.

Drawn with matplotlib onto a Figure the caller owns (never pyplot's global state), so the
window, the report and the command line share one drawing. Colours for the missing reasons
come from the Okabe-Ito colour-blind-safe palette (METHODS.md §13), assigned our own way;
answered cells are a pale neutral so the gaps stand out.
"""

from __future__ import annotations

import math
import os
from pathlib import Path

import numpy as np
from matplotlib.colors import ListedColormap, to_hex
from matplotlib.figure import Figure
from matplotlib.patches import Patch

from core.errors import PlaincountError
from core.kinds import REASON_LABELS, MissingReason
from core.missing import (
    ANSWERED,
    REASONS,
    dropoff,
    item_variables,
    reason_codes,
    unusual_skips,
)
from core.working import WorkingData

# Okabe & Ito (2008), Color Universal Design; hex values as listed in METHODS.md §13.
OKABE_ITO = {
    "black": "#000000",
    "orange": "#E69F00",
    "sky blue": "#56B4E9",
    "bluish green": "#009E73",
    "yellow": "#F0E442",
    "blue": "#0072B2",
    "vermillion": "#D55E00",
    "reddish purple": "#CC79A7",
}
ANSWERED_COLOUR = "#EDEDED"
REASON_COLOURS = {
    "skipped": OKABE_ITO["vermillion"],
    "declined": OKABE_ITO["reddish purple"],
    "not_applicable": OKABE_ITO["sky blue"],
    "dont_know": OKABE_ITO["orange"],
    "set_missing": OKABE_ITO["blue"],
    "invalid": OKABE_ITO["black"],
}
REASON_NAMES = {
    **{r.value: REASON_LABELS[r] for r in MissingReason},
    "invalid": "Not a valid answer",
}

TITLE_SIZE = 18
LABEL_SIZE = 14
TICK_SIZE = 12
CURVE_COLOUR = OKABE_ITO["blue"]
BAR_COLOUR = OKABE_ITO["orange"]
MARK_COLOUR = OKABE_ITO["vermillion"]


def matrix_colormap() -> ListedColormap:
    """Answered, then each reason in :data:`core.missing.REASONS` order."""
    return ListedColormap([ANSWERED_COLOUR] + [REASON_COLOURS[r] for r in REASONS])


def sort_rows(codes: np.ndarray) -> np.ndarray:
    """Row order: fewest gaps first, then rows with the same gaps next to each other.

    Grouping identical patterns makes them visible as blocks even when a few thousand rows
    share a few hundred pixels.
    """
    if codes.size == 0:
        return np.arange(codes.shape[0])
    missing = codes != ANSWERED
    keys = [missing[:, j] for j in range(missing.shape[1] - 1, -1, -1)]
    return np.lexsort([*keys, missing.sum(axis=1)])


def condense_rows(codes: np.ndarray, max_rows: int) -> tuple[np.ndarray, int]:
    """Merge consecutive rows into at most ``max_rows`` lines so no gap is lost on screen.

    In a merged line a cell shows the most frequent missing reason of its rows if any of them
    has a gap (answered only if all answered), so thin screens never hide missing data.
    Returns the condensed matrix and the number of respondents per line.
    """
    n, k = codes.shape
    if n <= max_rows or max_rows < 1:
        return codes, 1
    per = math.ceil(n / max_rows)
    lines = math.ceil(n / per)
    padded = np.zeros((lines * per, k), dtype=codes.dtype)
    padded[:n] = codes
    blocks = padded.reshape(lines, per, k)
    counts = np.stack([(blocks == c).sum(axis=1) for c in range(len(REASONS) + 1)], axis=-1)
    counts[..., ANSWERED] = 0
    has_gap = counts.sum(axis=-1) > 0
    out = np.where(has_gap, counts.argmax(axis=-1), ANSWERED).astype(codes.dtype)
    return out, per


def draw_missing_matrix(
    working: WorkingData,
    figure: Figure,
    *,
    title: str | None = None,
    include_text: bool = True,
    max_rows: int = 800,
) -> None:
    """Draw the respondents x items matrix of missing reasons onto ``figure``.

    Items run left to right in questionnaire order; respondents are sorted by how many items
    they left without an answer (see :func:`sort_rows`).
    """
    items = item_variables(working, include_text)
    if not items:
        raise PlaincountError("This wave has no question items to draw.")
    codes = reason_codes(working, items)
    n, k = codes.shape
    if n == 0:
        raise PlaincountError("No respondents are left to draw in this wave.")
    ordered = codes[sort_rows(codes)]
    shown, per_line = condense_rows(ordered, max_rows)
    figure.clear()
    figure.set_layout_engine("constrained")
    ax = figure.add_subplot(1, 1, 1)
    ax.imshow(
        shown,
        aspect="auto",
        interpolation="nearest",
        cmap=matrix_colormap(),
        vmin=-0.5,
        vmax=len(REASONS) + 0.5,
    )
    ax.set_xticks(range(k))
    tick_size = TICK_SIZE if k <= 30 else max(7, int(TICK_SIZE * 30 / k))
    ax.set_xticklabels([v.name for v in items], rotation=90, fontsize=tick_size)
    ax.tick_params(axis="y", labelsize=TICK_SIZE)
    if shown.shape[0]:
        ticks = np.linspace(0, shown.shape[0] - 1, num=min(5, shown.shape[0])).round()
        ax.set_yticks(ticks)
        ax.set_yticklabels([str(int(t) * per_line + 1) for t in ticks])
    ax.set_ylabel("Respondents, fewest gaps first", fontsize=LABEL_SIZE)
    row_note = f"; each line stands for {per_line} respondents" if per_line > 1 else ""
    ax.set_xlabel(
        f"Items in questionnaire order (n = {n} respondents{row_note})", fontsize=LABEL_SIZE
    )
    ax.set_title(title or "Missing answers by respondent and item", fontsize=TITLE_SIZE)
    total = codes.size
    handles = [Patch(facecolor=ANSWERED_COLOUR, edgecolor="#999999", label="Answered")]
    for i, reason in enumerate(REASONS):
        count = int(np.count_nonzero(codes == i + 1))
        if count:
            pct = 100.0 * count / total if total else 0.0
            handles.append(
                Patch(
                    facecolor=REASON_COLOURS[reason],
                    label=f"{REASON_NAMES[reason]}\n{count} ({pct:.1f} % of answers)",
                )
            )
    figure.legend(handles=handles, loc="outside right upper", fontsize=TICK_SIZE, frameon=False)


def draw_dropoff(working: WorkingData, figure: Figure, *, title: str | None = None) -> None:
    """Draw the drop-off curve (share still answering) over the share left unanswered."""
    drop = dropoff(working)
    table = drop.table
    if table.empty:
        raise PlaincountError("This wave has no question items to draw.")
    odd = unusual_skips(working)["unusual"].to_numpy()
    k = len(table)
    x = np.arange(k)
    figure.clear()
    figure.set_layout_engine("constrained")
    ax = figure.add_subplot(1, 1, 1)
    bars = ax.bar(
        x,
        table["pct_unanswered"],
        color=[MARK_COLOUR if o else BAR_COLOUR for o in odd],
        width=0.7,
        label="Left unanswered (% of those asked)",
    )
    for patch in bars:
        patch.set_gid("unanswered")
    (line,) = ax.plot(
        x,
        table["pct_still_answering"],
        color=CURVE_COLOUR,
        linewidth=3,
        marker="o",
        markersize=5,
        drawstyle="steps-mid",
        label="Still answering (this item or a later one)",
    )
    line.set_gid("still_answering")
    ax.set_ylim(0, 105)
    ax.set_xlim(-0.6, k - 0.4)
    ax.set_xticks(x)
    tick_size = TICK_SIZE if k <= 30 else max(7, int(TICK_SIZE * 30 / k))
    ax.set_xticklabels(table["variable"], rotation=90, fontsize=tick_size)
    ax.tick_params(axis="y", labelsize=TICK_SIZE)
    ax.set_ylabel("% of respondents", fontsize=LABEL_SIZE)
    note = f"n = {drop.n_respondents}; {drop.n_reached_end} answered the last item"
    if drop.n_answered_nothing:
        note += f"; {drop.n_answered_nothing} answered none"
    ax.set_xlabel(
        f"Items in questionnaire order ({note}; comment boxes left out)", fontsize=LABEL_SIZE
    )
    ax.grid(axis="y", color="#DDDDDD", linewidth=0.8)
    ax.set_axisbelow(True)
    for side in ("top", "right"):
        ax.spines[side].set_visible(False)
    handles = [line, Patch(facecolor=BAR_COLOUR, label="Left unanswered (% of those asked)")]
    if odd.any():
        handles.append(Patch(facecolor=MARK_COLOUR, label="Far more than nearby items"))
    figure.legend(
        handles=handles,
        loc="outside lower center",
        ncols=len(handles),
        fontsize=TICK_SIZE,
        frameon=False,
    )
    ax.set_title(title or "Where respondents stopped answering", fontsize=TITLE_SIZE)


CHARTS = {"matrix": draw_missing_matrix, "dropoff": draw_dropoff}


def make_missing_figure(
    working: WorkingData,
    chart: str = "matrix",
    width_px: int = 1920,
    height_px: int = 1080,
    dpi: int = 150,
) -> Figure:
    """A new Figure of the given pixel size with one missing-data chart drawn on it."""
    if chart not in CHARTS:
        raise PlaincountError(f"Unknown missing-data chart {chart!r}; use matrix or dropoff.")
    figure = Figure(figsize=(width_px / dpi, height_px / dpi), dpi=dpi)
    CHARTS[chart](working, figure)
    return figure


def save_missing_chart(
    working: WorkingData,
    path: str | os.PathLike[str],
    chart: str = "matrix",
    width_px: int = 1920,
    height_px: int = 1080,
    dpi: int = 150,
) -> Path:
    """Save a missing-data chart as PNG or SVG (by the file's suffix)."""
    path = Path(path)
    if path.suffix.lower() not in (".png", ".svg"):
        raise PlaincountError("Save the chart as a .png or .svg file.")
    figure = make_missing_figure(working, chart, width_px, height_px, dpi)
    try:
        figure.savefig(path, dpi=dpi, format=path.suffix.lower().lstrip("."))
    except OSError as exc:
        raise PlaincountError(f"Could not write {path.name}: {exc.strerror or exc}.") from None
    return path


def palette_hex(colour: object) -> str:
    """Upper-case hex of a matplotlib colour, to compare with :data:`OKABE_ITO`."""
    return to_hex(colour).upper()
