"""Report renderers: the same blocks as a Word document and as one HTML page; CSV per result."""

from __future__ import annotations

import base64
import csv
import io
from html.parser import HTMLParser

import docx
import pytest
from docx.enum.text import WD_ALIGN_PARAGRAPH

from core.export.clipboard import chart_png
from core.export.content import Heading, Paragraph, plain_grid, result_blocks, slug
from core.export.csv_export import result_csv
from core.export.docx_report import write_docx
from core.export.html_report import render_html
from tests.core.export_results import entry, frequency_result, injection_result, numbers_result

PNG = chart_png(frequency_result(), width_px=320, height_px=180, dpi=72)


def _blocks():
    blocks = [Heading(1, "Results")]
    blocks += result_blocks(entry(frequency_result(), 1, finding="Most were satisfied."))
    blocks += result_blocks(entry(numbers_result(), 2, finding="Credits vary.", png=PNG))
    blocks += [
        Heading(1, "How the data were treated"),
        Heading(2, "Cleaning decisions"),
        Paragraph("3 values were corrected."),
        plain_grid(["Variable", "Decisions"], [["age", 2], ["credits_term", 1]]),
    ]
    return blocks


@pytest.fixture(scope="module")
def document(tmp_path_factory):
    path = tmp_path_factory.mktemp("doc") / "report.docx"
    write_docx(path, "Harbor Point", "Participant survey, wave 2026.", _blocks())
    return docx.Document(path)


def test_docx_headings_use_real_heading_styles(document):
    headings = [
        (p.style.name, p.text)
        for p in document.paragraphs
        if p.style.name.startswith(("Heading", "Title"))
    ]
    assert headings == [
        ("Title", "Harbor Point"),
        ("Heading 1", "Results"),
        ("Heading 2", "Overall satisfaction with the course"),
        ("Heading 2", "Credits this term"),
        ("Heading 1", "How the data were treated"),
        ("Heading 2", "Cleaning decisions"),
    ]


def test_docx_finding_base_notes_and_table(document):
    texts = [p.text for p in document.paragraphs]
    i = texts.index("Overall satisfaction with the course")
    assert texts[i + 1] == "Most were satisfied."
    assert document.paragraphs[i + 1].runs[0].bold
    assert "Base: 100 respondents who answered (7 skipped)." in texts
    assert "Counts below 5 are hidden (shown as <5)." in texts
    table = document.tables[0]
    assert [c.text for c in table.rows[0].cells] == ["Answer", "Count", "%"]
    assert all(c.paragraphs[0].runs[0].bold for c in table.rows[0].cells)
    assert [c.text for c in table.rows[4].cells] == ["Satisfied", "42", "42.0%"]
    assert table.rows[4].cells[2].paragraphs[0].alignment == WD_ALIGN_PARAGRAPH.RIGHT
    assert table.rows[4].cells[0].paragraphs[0].alignment is None
    assert [c.text for c in table.rows[1].cells] == ["Very dissatisfied", "<5", "<5"]
    # The appendix table.
    assert [c.text for c in document.tables[1].rows[1].cells] == ["age", "2"]


def test_docx_chart_replaces_the_table_and_has_alt_text(document):
    assert len(document.tables) == 2  # the chart result has no table, only its picture
    shapes = document.inline_shapes
    assert len(shapes) == 1
    assert shapes[0]._inline.docPr.get("descr") == "Credits this term. Credits vary."


def test_docx_survives_control_characters(tmp_path):
    result = injection_result()
    path = write_docx(tmp_path / "r.docx", "T", "", result_blocks(entry(result)))
    cells = [row.cells[0].text for row in docx.Document(path).tables[0].rows]
    assert cells[5] == "\t=1"  # tab is kept (XML allows it)
    assert "\r=1" not in cells and "=1" in cells[6]


class PageParser(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.headings: list[tuple[str, str]] = []
        self.cells: list[list[tuple[str, str]]] = []
        self.images: list[dict[str, str]] = []
        self.links: list[str] = []
        self._tag: str | None = None
        self._cls = ""
        self._text = ""

    def handle_starttag(self, tag, attrs):
        attrs = dict(attrs)
        if tag in ("h1", "h2", "h3", "td", "th"):
            self._tag, self._cls, self._text = tag, attrs.get("class") or "", ""
        if tag == "tr":
            self.cells.append([])
        if tag == "img":
            self.images.append(attrs)
        if tag in ("link", "script") or (tag == "a" and attrs.get("href")):
            self.links.append(tag)

    def handle_data(self, data):
        if self._tag:
            self._text += data

    def handle_endtag(self, tag):
        if tag == self._tag:
            if tag.startswith("h"):
                self.headings.append((tag, self._text))
            else:
                self.cells[-1].append((self._text, self._cls))
            self._tag = None


def test_html_page_headings_tables_and_embedded_image():
    page = render_html("Harbor Point", "Participant survey, wave 2026.", _blocks())
    parser = PageParser()
    parser.feed(page)
    assert parser.headings == [
        ("h1", "Harbor Point"),
        ("h2", "Results"),
        ("h3", "Overall satisfaction with the course"),
        ("h3", "Credits this term"),
        ("h2", "How the data were treated"),
        ("h3", "Cleaning decisions"),
    ]
    rows = [[t for t, _ in r] for r in parser.cells]
    assert rows[0] == ["Answer", "Count", "%"]
    assert rows[4] == ["Satisfied", "42", "42.0%"]
    assert rows[6] == ["Total", "100", "100.0%"]
    assert parser.cells[4][2][1] == "num"
    assert ["age", "2"] in rows
    # Self-contained: one embedded PNG, no external style sheets, scripts or links.
    assert len(parser.images) == 1
    src = parser.images[0]["src"]
    assert src.startswith("data:image/png;base64,")
    assert base64.b64decode(src.split(",", 1)[1]) == PNG
    assert parser.images[0]["alt"] == "Credits this term. Credits vary."
    assert parser.links == []
    assert "@media print" in page


def test_csv_of_a_result():
    text = result_csv(frequency_result())
    rows = list(csv.reader(io.StringIO(text)))
    assert rows[0] == ["Overall satisfaction with the course"]
    assert rows[1] == ["Base: 100 respondents who answered (7 skipped)."]
    assert rows[3] == ["Answer", "Count", "%"]
    assert rows[4] == ["Very dissatisfied", "<5", "<5"]
    assert rows[7] == ["Satisfied", "42", "42.0"]
    assert rows[-1] == ["2 answers were corrected during cleaning."]
    # Numbers are bare (unquoted) so a spreadsheet reads them as numbers.
    assert '"Satisfied",42,42.0\r\n' in text
    stats = result_csv(numbers_result())
    assert '"Mean",12.35\r\n' in stats and '"Lowest change",-3\r\n' in stats
    assert '"Change",-4.2\r\n' in stats  # round half to even, as the view shows it


def test_slug():
    assert (
        slug("Overall satisfaction — 2026 (all tracks)") == "overall-satisfaction-2026-all-tracks"
    )
    assert slug("Été à l'école") == "ete-a-l-ecole"
    assert slug("???") == "result"
    assert len(slug("word " * 40)) <= 48
