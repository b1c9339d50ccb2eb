"""Charts of table results, drawn with matplotlib onto a figure the caller owns.

Every chart reads a :class:`~core.tables.result.TableResult` (never the raw data), so a chart
always shows the same numbers as its table, hides the same suppressed cells, and carries the
same base line and notes. Drawing never touches pyplot's global state: :func:`draw` paints
onto any ``Figure`` (the window's canvas, or one made by :func:`make_figure`), which keeps
charts safe to draw on a worker thread and in tests.

Chart type ids are stable strings stored in table specs: ``bar``, ``column``, ``clustered``,
``stacked100``, ``diverging``, ``borda``, ``rank_positions``, ``histogram``, ``boxplot``,
``waves``.
"""

from __future__ import annotations

import os
from collections.abc import Callable
from pathlib import Path

from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from core.charts import shapes, style
from core.charts.bars import draw_clustered, draw_frequency, draw_stacked100
from core.charts.likert import draw_diverging
from core.charts.multiselect import draw_multiselect
from core.charts.numeric import draw_boxplot, draw_histogram
from core.charts.ranking import draw_borda, draw_rank_positions
from core.charts.waves import draw_waves
from core.errors import PlaincountError
from core.tables.result import TableResult

CHART_LABELS: dict[str, str] = {
    "bar": "Bars",
    "column": "Columns",
    "clustered": "Clustered columns",
    "stacked100": "100 % stacked",
    "diverging": "Diverging bars",
    "borda": "Borda points",
    "rank_positions": "Rank positions",
    "histogram": "Histogram",
    "boxplot": "Box plot",
    "waves": "Waves side by side",
}
CHART_TYPES = tuple(CHART_LABELS)
IMAGE_FORMATS = (".png", ".svg")

Drawer = Callable[[TableResult, Figure, style.Sizes], list[str]]


def chart_types(result: TableResult) -> list[str]:
    """The chart types that suit ``result``; the first is the default.

    An empty list means the result has nothing to draw (for example a text variable).
    """
    shape = shapes.shape_of(result)
    if shape == shapes.WAVES:
        return ["waves"]
    if shape == shapes.BATTERY:
        return ["diverging", "stacked100"]
    if shape == shapes.RANKING:
        return ["borda", "rank_positions"] if result.data.get("rank_counts") else ["borda"]
    if shape == shapes.MULTISELECT:
        return ["clustered"] if shapes.has_groups(result) else ["bar", "column"]
    if shape == shapes.NUMERIC:
        types = []
        if result.data.get("histogram") or result.data.get("histogram_by_group"):
            types.append("histogram")
        if result.data.get("box"):
            types.append("boxplot")
        if len(result.data.get("box") or {}) > 1:
            types.sort(key=lambda t: t != "boxplot")  # groups to compare: box plots first
        return types
    if shape == shapes.LEVELS:
        if shapes.has_groups(result):
            if shapes.is_likert(result):
                return ["diverging", "stacked100", "clustered"]
            return ["clustered", "stacked100"]
        if shapes.is_likert(result):
            return ["column", "diverging", "bar"]
        if shapes.is_ordered(result):
            return ["column", "bar"]
        return ["bar", "column"]
    return []


def chart_label(chart_type: str) -> str:
    """The plain name of a chart type, for menus and captions."""
    return CHART_LABELS.get(chart_type, chart_type)


def _drawer(result: TableResult, chart_type: str) -> Drawer:
    shape = shapes.shape_of(result)
    if shape == shapes.MULTISELECT and chart_type != "clustered":
        return lambda r, f, s: draw_multiselect(r, f, s, horizontal=chart_type == "bar")
    table: dict[str, Drawer] = {
        "bar": lambda r, f, s: draw_frequency(r, f, s, horizontal=True),
        "column": lambda r, f, s: draw_frequency(r, f, s, horizontal=False),
        "clustered": draw_clustered,
        "stacked100": draw_stacked100,
        "diverging": draw_diverging,
        "borda": draw_borda,
        "rank_positions": draw_rank_positions,
        "histogram": draw_histogram,
        "boxplot": draw_boxplot,
        "waves": draw_waves,
    }
    return table[chart_type]


def resolve_chart_type(result: TableResult, chart_type: str | None = None) -> str:
    """The chart type to draw: the one asked for, else the spec's, else the default."""
    available = chart_types(result)
    if not available:
        raise PlaincountError(
            f"“{result.title or result.spec.variable}” has no chart: its answers are not "
            "counted or measured (for example open-ended text)."
        )
    if chart_type is None:
        spec_chart = getattr(result.spec, "chart", None)
        chart_type = spec_chart if spec_chart in available else available[0]
    if chart_type not in available:
        names = ", ".join(f"{chart_label(t)} ({t})" for t in available)
        known = chart_type in CHART_LABELS
        raise PlaincountError(
            (
                f"A {chart_label(chart_type).lower()} chart does not suit this table. "
                if known
                else f"There is no chart type {chart_type!r}. "
            )
            + f"Choose one of: {names}."
        )
    return chart_type


def draw(
    result: TableResult, figure: Figure, chart_type: str | None = None, *, caption: bool = True
) -> None:
    """Draw ``result`` onto ``figure`` (cleared first) as ``chart_type`` or its default.

    ``caption`` False leaves out the title, base line and notes, and gives the plot their
    room: for pictures in documents that print the caption as text beside them.

    Raises
    ------
    PlaincountError
        If the chart type does not suit the result, or the result has nothing to draw.
    """
    chart_type = resolve_chart_type(result, chart_type)
    sizes = style.prepare(figure)
    notes = _drawer(result, chart_type)(result, figure, sizes)
    if caption:
        style.add_title(figure, result.title, sizes)
        style.add_footer(figure, style.chart_footer(result, notes), sizes)


def make_figure(
    result: TableResult,
    chart_type: str | None = None,
    width_px: int = 1920,
    height_px: int = 1080,
    dpi: float = 150,
    *,
    caption: bool = True,
) -> Figure:
    """A new figure of the given pixel size with ``result`` drawn on it (Agg canvas).

    ``caption`` False: no title, base or notes (see :func:`draw`).
    """
    if width_px < 100 or height_px < 100:
        raise PlaincountError("A chart must be at least 100 × 100 pixels.")
    if width_px > 20000 or height_px > 20000:
        raise PlaincountError("A chart can be at most 20,000 pixels wide or high.")
    if not 30 <= dpi <= 1200:
        raise PlaincountError("The resolution must be between 30 and 1200 dots per inch.")
    figure = Figure(figsize=(width_px / dpi, height_px / dpi), dpi=dpi)
    FigureCanvasAgg(figure)
    draw(result, figure, chart_type, caption=caption)
    return figure


def save_chart(
    result: TableResult,
    path: str | os.PathLike[str],
    chart_type: str | None = None,
    width_px: int = 1920,
    height_px: int = 1080,
    dpi: float = 150,
    *,
    caption: bool = True,
) -> Path:
    """Write the chart as PNG or SVG, chosen by the file suffix; returns the path.

    A saved chart stands alone, so it keeps its caption unless ``caption`` is False.

    Both formats come from the same figure, so a PNG for slides and an SVG for print show
    the same chart. The PNG is exactly ``width_px`` × ``height_px`` pixels.
    """
    path = Path(path)
    suffix = path.suffix.lower()
    if suffix not in IMAGE_FORMATS:
        raise PlaincountError(
            f"Charts can be saved as PNG or SVG; {path.name!r} has neither ending."
        )
    if not path.parent.exists():
        raise PlaincountError(f"The folder {path.parent} does not exist.")
    figure = make_figure(result, chart_type, width_px, height_px, dpi, caption=caption)
    metadata = {"Title": result.title} if result.title else {}
    tmp = path.with_name(path.name + ".writing")
    try:
        figure.savefig(tmp, format=suffix[1:], dpi=dpi, metadata=metadata, facecolor="white")
        os.replace(tmp, path)
    except OSError as exc:
        tmp.unlink(missing_ok=True)
        raise PlaincountError(f"Could not write {path.name}: {exc.strerror or exc}.") from None
    return path


__all__ = [
    "CHART_LABELS",
    "CHART_TYPES",
    "chart_label",
    "chart_types",
    "draw",
    "make_figure",
    "resolve_chart_type",
    "save_chart",
]
