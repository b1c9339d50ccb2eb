"""Clipboard formats: an editable HTML table, tab-separated text, a PNG of the chart."""

from __future__ import annotations

import struct
from html.parser import HTMLParser

from core.export.clipboard import chart_images, chart_png, table_html, table_text
from tests.core.export_results import frequency_result, numbers_result


class TableParser(HTMLParser):
    """Collects paragraphs, header cells and body cells with their inline styles."""

    def __init__(self) -> None:
        super().__init__()
        self.paragraphs: list[str] = []
        self.header: list[tuple[str, str]] = []
        self.rows: list[list[tuple[str, str]]] = []
        self.tables = 0
        self._where: str | None = None
        self._style = ""
        self._text = ""

    def handle_starttag(self, tag, attrs):
        attrs = dict(attrs)
        if tag == "table":
            self.tables += 1
        if tag == "tr" and self.header:
            self.rows.append([])
        if tag in ("p", "th", "td"):
            self._where, self._style, self._text = tag, attrs.get("style", ""), ""

    def handle_data(self, data):
        if self._where:
            self._text += data

    def handle_endtag(self, tag):
        if tag != self._where:
            return
        if tag == "p":
            self.paragraphs.append(self._text)
        elif tag == "th":
            self.header.append((self._text, self._style))
        else:
            self.rows[-1].append((self._text, self._style))
        self._where = None


def test_html_is_a_real_table_with_caption_above_and_notes_below():
    result = frequency_result()
    html = table_html(result)
    parser = TableParser()
    parser.feed(html)
    assert parser.tables == 1
    # Caption above the table, base and notes below it, in that order.
    assert html.index("Overall satisfaction") < html.index("<table")
    assert html.index("</table>") < html.index("Base: 100 respondents")
    assert parser.paragraphs == [
        "Overall satisfaction with the course",
        "Base: 100 respondents who answered (7 skipped).",
        "Counts below 5 are hidden (shown as <5).",
        "2 answers were corrected during cleaning.",
    ]
    assert [h for h, _ in parser.header] == ["Answer", "Count", "%"]
    assert all("font-weight:bold" in style for _, style in parser.header)
    texts = [[t for t, _ in row] for row in parser.rows]
    assert texts[0] == ["Very dissatisfied", "<5", "<5"]
    assert texts[3] == ["Satisfied", "42", "42.0%"]  # percentages as the view shows them
    assert texts[5] == ["Total", "100", "100.0%"]
    # Labels left, numbers (and hidden small counts) right; no classes or style sheets.
    assert "text-align:left" in parser.rows[3][0][1]
    assert "text-align:right" in parser.rows[3][1][1]
    assert "text-align:right" in parser.rows[0][1][1]
    assert "font-weight:bold" in parser.rows[5][1][1]  # the total row
    assert "class=" not in html and "<style" not in html


def test_html_escapes_markup_in_labels():
    result = frequency_result(title="Pay <b>& hours</b>")
    html = table_html(result)
    assert "Pay &lt;b&gt;&amp; hours&lt;/b&gt;" in html


def test_tab_separated_text():
    text = table_text(numbers_result())
    lines = text.splitlines()
    assert lines[0] == "Credits this term"
    assert lines[1] == "Statistic\tValue"
    assert lines[2] == "Mean\t12.35"
    assert lines[4] == "Lowest change\t-3"
    assert lines[5] == "Change\t-4.2"  # percentage points, one decimal, with sign
    assert lines[6] == "Answered\t1,234"
    assert lines[-1] == "Base: 1,234 respondents."


def test_tabs_and_line_breaks_inside_cells_do_not_split_the_table():
    result = frequency_result(title="Line one\nline two\tend")
    assert table_text(result).splitlines()[0] == "Line one line two end"


def _png_size(data: bytes) -> tuple[int, int]:
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    return struct.unpack(">II", data[16:24])  # IHDR width and height (PNG specification)


def test_chart_png_has_the_requested_pixel_size():
    assert _png_size(chart_png(frequency_result())) == (1920, 1080)
    assert _png_size(chart_png(frequency_result(), width_px=800, height_px=450, dpi=100)) == (
        800,
        450,
    )


def test_chart_images_draws_png_and_svg_once():
    png, svg = chart_images(frequency_result(), "bar")
    assert _png_size(png) == (1920, 1080)
    assert svg is not None and b"<svg" in svg[:500]
