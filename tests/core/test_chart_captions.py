"""Chart captions: left out of pictures in documents, kept short under charts that stand alone."""

from __future__ import annotations

import io
import zipfile

import pytest
from matplotlib.figure import Figure
from PIL import Image

from core import charts, outline
from core.charts.style import FOOTER_NOTES, MORE_NOTES, SUPPRESSED_NOTE, chart_footer
from core.export.clipboard import chart_images
from core.export.report import export_outline
from core.tables.result import Cell, TableResult
from core.tables.spec import TableSpec
from tests.core.outline_project import make_project

TITLE = "Which trade track are you enrolled in?"
BASE = "Respondents who answered, n = 258 of 300"
# Ten notes in the parts and order every table caption uses (core.tables.captions.Notes).
NOTES = {
    "42 of 300 respondents (14.0%) have no answer to track: 30 skipped, 12 declined.": "missing",
    "Missing data: available cases; the table counts everyone who answered, so its base may "
    "differ from other tables.": "treatment",
    "3 answers of 'Other' were recoded to Welding.": "cleaning",
    "Respondent R0007 was removed as a duplicate.": "cleaning",
    'Counts from 1 to 4 are hidden (shown as "<5") so that small groups of people cannot be '
    "recognised. Percentages of hidden counts are hidden too.": "suppression",
    "Percentages: row percentages (within each group).": "method",
    "Ranges are 95 % Wilson score intervals, treating respondents as a random sample; they do "
    "not cover errors from who chose not to respond.": "method",
    "Source: Participant survey, wave 2026.": "source",
    "Response rate (AAPOR RR2): 76.0 %.": "source",
    "Differences between groups describe these respondents; they do not show that one thing "
    "caused another.": "cautions",
}


def track_result(notes: dict[str, str] | None = None, hidden: bool = True) -> TableResult:
    """A frequency table of four tracks; Solar install's count is hidden when ``hidden``."""
    notes = NOTES if notes is None else notes
    levels = ["Electrical", "HVAC", "Welding", "Solar install"]
    counts = {"Electrical": 80, "HVAC": 95, "Welding": 80, "Solar install": None if hidden else 3}
    pcts = {"Electrical": 31.0, "HVAC": 36.8, "Welding": 31.0, "Solar install": None}
    if not hidden:
        pcts["Solar install"] = 1.2
    hidden_cell = Cell(None, "count", suppressed=True, text="<5")
    rows = [[Cell(lv), hidden_cell if n is None else Cell(n, "count")] for lv, n in counts.items()]
    return TableResult(
        spec=TableSpec("track"),
        table_type="frequency",
        kind="categorical",
        title=TITLE,
        base=BASE,
        n_valid=258,
        n_missing=42,
        columns=["Answer", "Count"],
        rows=rows,
        row_roles=["level"] * 4,
        notes=list(notes),
        data={"levels": levels, "counts": counts, "percents": pcts, "missing": {}},
        note_kinds=dict(notes),
    )


def figure_texts(fig: Figure) -> str:
    fig.canvas.draw()  # lay out, so every text that would be drawn exists
    return "\n".join(
        t.get_text() for t in fig.findobj(lambda a: hasattr(a, "get_text")) if t.get_visible()
    )


def test_figure_without_caption_has_no_title_or_notes():
    res = track_result()
    with_caption = charts.make_figure(res, "bar", width_px=960, height_px=540, dpi=96)
    assert TITLE in figure_texts(with_caption) and BASE in figure_texts(with_caption)
    fig = charts.make_figure(res, "bar", width_px=960, height_px=540, dpi=96, caption=False)
    text = figure_texts(fig).replace("\n", " ")
    assert fig.get_suptitle() == "" and fig.get_supxlabel() == ""
    assert TITLE not in text and BASE not in text and "Source:" not in text
    assert SUPPRESSED_NOTE not in text and MORE_NOTES not in text
    for note in NOTES:
        assert note[:30] not in text
    # The plot keeps its answers and value labels, and gets the room the caption took.
    assert "HVAC" in text and "37%" in text
    plot = fig.axes[0].get_position()
    framed = with_caption.axes[0].get_position()
    assert plot.height > framed.height


def test_footer_keeps_the_base_and_three_notes_of_ten():
    res = track_result()
    lines = chart_footer(res, [SUPPRESSED_NOTE, "Bars show percentages of those who answered."])
    # Base, then the chart's note on hidden bars, the treatment and the source (in the
    # caption's order), then the pointer to the rest.
    assert lines[0] == BASE
    assert len(lines) == 1 + FOOTER_NOTES + 1
    assert lines[1].startswith("Missing data: available cases")
    assert lines[2] == "Source: Participant survey, wave 2026."
    assert lines[3] == SUPPRESSED_NOTE
    assert lines[-1] == MORE_NOTES
    # Every note is still on the table.
    assert len(res.notes) == 10
    fig = charts.make_figure(res, "bar")
    footer = fig.get_supxlabel().replace("\n", " ")
    assert MORE_NOTES in footer and "Source: Participant survey" in footer
    assert "Response rate" not in footer and "Wilson" not in footer
    assert "R0007" not in footer and "Differences between groups" not in footer


def test_footer_without_hidden_cells_fills_with_the_chart_notes_and_shortens():
    notes = {n: k for n, k in NOTES.items() if k != "suppression"}
    res = track_result(notes, hidden=False)
    reading = "Bars show percentages of those who answered."
    lines = chart_footer(res, [reading])
    assert lines == [
        BASE,
        "Missing data: available cases; the table counts everyone who answered, so its base "
        "may differ from other tables.",
        "Source: Participant survey, wave 2026.",
        reading,
        MORE_NOTES,
    ]
    # A long note is cut to its first sentence (or clause) under a chart.
    long = {
        "Caution: 6 missing answers to track were filled in with the most frequent answer, "
        '"Electrical". Filled-in answers are treated as if they had been given, which makes '
        "results look more certain than they are and shrinks differences between groups.": (
            "treatment"
        ),
        **{n: k for n, k in notes.items() if k != "treatment"},
    }
    lines = chart_footer(track_result(long, hidden=False))
    assert lines[1] == (
        "Caution: 6 missing answers to track were filled in with the most frequent answer, "
        '"Electrical".'
    )


def test_few_notes_are_all_kept_whole():
    notes = {"Missing data: available cases.": "treatment", "Source: S, wave 1.": "source"}
    res = track_result(notes, hidden=True)
    assert chart_footer(res, [SUPPRESSED_NOTE]) == [BASE, *notes, SUPPRESSED_NOTE]


def test_footer_of_a_real_table_through_compute_table(tmp_path):
    from core.tables.build import compute_table

    project = make_project(tmp_path)
    try:
        res = compute_table(project, TableSpec("satisfaction", by=("track",), tests=True))
    finally:
        project.close()
    assert len(res.notes) > FOOTER_NOTES
    assert res.note_kinds[next(n for n in res.notes if n.startswith("Source:"))] == "source"
    lines = chart_footer(res)
    assert len(lines) <= 1 + FOOTER_NOTES + 1 and lines[-1] == MORE_NOTES
    assert any(line.startswith("Source:") for line in lines)
    assert any(line.startswith("Missing data:") for line in lines)


@pytest.fixture
def kept_project(tmp_path):
    p = make_project(tmp_path)
    outline.keep(p, TableSpec("track", chart="bar"), title="Tracks", finding="Half are in HVAC.")
    yield p
    p.close()


def test_report_pictures_are_drawn_without_caption(kept_project, tmp_path):
    files = export_outline(kept_project, tmp_path / "out", ["docx", "png"], workers=1)
    by_name = {p.name: p for p in files}
    result = outline.result_for(kept_project, outline.items(kept_project)[0])
    plain, _ = chart_images(result, "bar", svg=False, caption=False)
    captioned, _ = chart_images(result, "bar", svg=False)
    assert plain != captioned
    with zipfile.ZipFile(by_name["report.docx"]) as docx:
        media = [n for n in docx.namelist() if n.startswith("word/media/")]
        assert len(media) == 1
        picture = docx.read(media[0])
    # The picture in the document is the chart without title and notes (PNG files carry no
    # time stamp, so the same drawing gives the same bytes); the PNG file keeps its caption.
    assert picture == plain
    assert by_name["01-tracks.png"].read_bytes() == captioned
    assert Image.open(io.BytesIO(picture)).size == (1920, 1080)


def test_helper_processes_draw_the_same_document_pictures(kept_project, tmp_path):
    outline.keep(kept_project, TableSpec("satisfaction", chart="column"), title="S", finding="f")
    here = export_outline(kept_project, tmp_path / "here", ["xlsx"], workers=1)
    helped = export_outline(kept_project, tmp_path / "helped", ["xlsx"], workers=2)

    def pictures(path):
        with zipfile.ZipFile(path) as book:
            return sorted(book.read(n) for n in book.namelist() if n.startswith("xl/media/"))

    result = outline.result_for(kept_project, outline.items(kept_project)[0])
    plain, _ = chart_images(result, "bar", svg=False, caption=False)
    assert pictures(here[0]) == pictures(helped[0])
    assert plain in pictures(here[0]) and len(pictures(here[0])) == 2
