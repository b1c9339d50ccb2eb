"""Missing-data charts: asserted on the Figure (size, items, palette colours, titles)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure
from matplotlib.image import AxesImage

from core import charts_missing as cm
from core.codebook import Codebook, Variable
from core.errors import PlaincountError
from core.kinds import Kind
from core.ledger import Action, Decision, record
from core.missing import dropoff, item_variables
from core.project import Project
from core.working import working_data
from tests.core.test_missing import synthetic_project

# Okabe & Ito (2008) colour-blind-safe palette, hex values from METHODS.md §13.
PALETTE = {"#000000", "#E69F00", "#56B4E9", "#009E73", "#F0E442", "#0072B2", "#D55E00", "#CC79A7"}


@pytest.fixture
def working(tmp_path):
    project, wave_id = synthetic_project(tmp_path, n=2500)
    yield working_data(project, wave_id)
    project.close()


def _pixels(figure: Figure) -> np.ndarray:
    canvas = FigureCanvasAgg(figure)
    canvas.draw()
    return np.asarray(canvas.buffer_rgba())


def test_palette_is_okabe_ito():
    assert set(cm.OKABE_ITO.values()) == PALETTE
    assert set(cm.REASON_COLOURS.values()) <= PALETTE
    assert len(set(cm.REASON_COLOURS.values())) == len(cm.REASON_COLOURS)  # one per reason


def test_matrix_figure(working):
    fig = cm.make_missing_figure(working, "matrix", width_px=1600, height_px=900, dpi=100)
    assert _pixels(fig).shape == (900, 1600, 4)
    ax = fig.axes[0]
    assert ax.get_title() == "Missing answers by respondent and item"
    assert ax.title.get_fontsize() >= 16
    names = [v.name for v in item_variables(working)]
    assert [t.get_text() for t in ax.get_xticklabels()] == names
    assert all(t.get_fontsize() >= 10 for t in ax.get_xticklabels())
    (image,) = [a for a in ax.get_children() if isinstance(a, AxesImage)]
    data = np.asarray(image.get_array())
    # 2,500 respondents condensed to at most 800 lines, one column per item.
    assert data.shape[1] == len(names) and data.shape[0] <= 800
    assert "each line stands for 4 respondents" in ax.get_xlabel()
    # Only "skipped" occurs in this data: the legend shows answered + skipped in palette colour.
    legend = fig.legends[0]
    labels = [t.get_text() for t in legend.get_texts()]
    assert labels[0] == "Answered" and labels[1].startswith("Skipped (left blank)")
    colour = cm.palette_hex(legend.legend_handles[1].get_facecolor())
    assert colour == cm.REASON_COLOURS["skipped"] and colour in PALETTE
    # The colour map draws reason codes in the same palette colours as the legend.
    cmap = image.get_cmap()
    assert cm.palette_hex(cmap(1)) == cm.REASON_COLOURS["skipped"]
    assert {cm.palette_hex(cmap(i)) for i in range(1, 7)} <= PALETTE


def test_sort_rows_puts_complete_rows_first():
    codes = np.array([[1, 0], [0, 0], [1, 1], [0, 1], [0, 0]], dtype=np.int8)
    order = cm.sort_rows(codes)
    gaps = (codes[order] != 0).sum(axis=1)
    assert gaps.tolist() == [0, 0, 1, 1, 2]
    assert codes[order][2].tolist() == [0, 1] or codes[order][2].tolist() == [1, 0]


def test_condense_rows_never_hides_a_gap():
    codes = np.zeros((3000, 3), dtype=np.int8)
    codes[1234, 1] = 3  # one not-applicable cell among 9,000
    shown, per = cm.condense_rows(codes, 800)
    assert per == 4 and shown.shape == (750, 3)
    assert shown[1234 // 4, 1] == 3 and np.count_nonzero(shown) == 1
    same, one = cm.condense_rows(codes[:10], 800)
    assert one == 1 and same.shape == (10, 3)


def test_dropoff_figure(working):
    fig = cm.make_missing_figure(working, "dropoff")
    assert _pixels(fig).shape == (1080, 1920, 4)
    ax = fig.axes[0]
    assert ax.get_title() == "Where respondents stopped answering"
    table = dropoff(working).table
    bars = [p for p in ax.patches if p.get_gid() == "unanswered"]
    assert len(bars) == len(table)
    np.testing.assert_allclose([b.get_height() for b in bars], table["pct_unanswered"])
    (line,) = [ln for ln in ax.get_lines() if ln.get_gid() == "still_answering"]
    np.testing.assert_allclose(line.get_ydata(), table["pct_still_answering"])
    assert cm.palette_hex(line.get_color()) == cm.OKABE_ITO["blue"]
    colours = {cm.palette_hex(b.get_facecolor()) for b in bars}
    assert colours <= PALETTE
    # The income question is skipped far more than its neighbours: drawn in vermillion.
    income = table["variable"].tolist().index("household_income_band")
    assert cm.palette_hex(bars[income].get_facecolor()) == cm.OKABE_ITO["vermillion"]
    assert [t.get_text() for t in ax.get_xticklabels()] == table["variable"].tolist()


def test_draws_onto_a_given_figure_and_saves(working, tmp_path):
    fig = Figure(figsize=(8, 5), dpi=100)
    cm.draw_missing_matrix(working, fig, title="Wave 2026")
    assert fig.axes[0].get_title() == "Wave 2026"
    cm.draw_dropoff(working, fig)  # redrawing replaces, never stacks
    assert len(fig.axes) == 1
    png = cm.save_missing_chart(working, tmp_path / "m.png", width_px=800, height_px=600)
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    svg = cm.save_missing_chart(working, tmp_path / "d.svg", chart="dropoff")
    assert b"<svg" in svg.read_bytes()[:500]
    with pytest.raises(PlaincountError, match="png or .svg"):
        cm.save_missing_chart(working, tmp_path / "m.pdf")
    with pytest.raises(PlaincountError, match="Unknown missing-data chart"):
        cm.make_missing_figure(working, "pie")


def test_module_uses_no_pyplot():
    source = Path(cm.__file__).read_text(encoding="utf-8")
    assert "import matplotlib.pyplot" not in source
    assert "from matplotlib import pyplot" not in source


def test_every_reason_gets_its_own_palette_colour(tmp_path):
    book = Codebook(
        [
            Variable(
                "q",
                kind=Kind.NUMERIC,
                missing_codes={"-1": "declined", "-2": "not_applicable", "-3": "dont_know"},
            ),
            Variable("r", kind=Kind.NUMERIC),
        ]
    )
    raw = pd.DataFrame({"q": ["1", "-1", "-2", "-3", None, "x"], "r": ["1"] * 6})
    project = Project.create(tmp_path / "r.plaincount")
    try:
        inst = project.add_instrument("R", book)
        wave = project.add_wave(inst.id, "1", "r.csv", b"r", raw)
        record(project, wave.id, [Decision(Action.SET_MISSING, "checked", variables=["r"], row=0)])
        fig = cm.make_missing_figure(working_data(project, wave.id), "matrix")
        legend = fig.legends[0]
        labels = [t.get_text().split("\n")[0] for t in legend.get_texts()]
        colours = [cm.palette_hex(h.get_facecolor()) for h in legend.legend_handles]
        assert labels == [
            "Answered",
            "Skipped (left blank)",
            "Declined to answer",
            "Not applicable",
            "Don't know",
            "Set missing in cleaning",
            "Not a valid answer",
        ]
        assert colours[1:] == [cm.REASON_COLOURS[r] for r in cm.REASONS]
        assert len(set(colours[1:])) == 6 and set(colours[1:]) <= PALETTE
        image = next(a for a in fig.axes[0].get_children() if isinstance(a, AxesImage))
        assert sorted(np.unique(np.asarray(image.get_array())).tolist()) == list(range(7))
    finally:
        project.close()
