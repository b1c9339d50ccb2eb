"""Copying from the tables view: the clipboard holds an editable table or a chart picture.

A copied table carries text/html (a real table: caption above, bold header, numbers
right-aligned, notes below) and tab-separated text/plain; a copied chart carries an
image/png and its caption as text/plain. Ctrl+C copies whichever of the two has the focus.
The HTML is parsed and its numbers compared with the table result, whose counts are in turn
compared with pandas counts of the demo workbook.
"""

from __future__ import annotations

from html.parser import HTMLParser

import numpy as np
import pytest
from PySide6.QtCore import Qt
from PySide6.QtGui import QImage
from PySide6.QtWidgets import QApplication

from core.charts import palette

from .demo_window import fresh_tables_view, open_demo_window, source_frame


@pytest.fixture(scope="module")
def window(tmp_path_factory, qapp):
    win = open_demo_window(tmp_path_factory.mktemp("clipboard"))
    yield win
    win.close_project()
    win.close()


@pytest.fixture
def view(window):
    QApplication.clipboard().clear()
    return fresh_tables_view(window)


class TableParser(HTMLParser):
    """Rows of (tag, text, style) for every th/td, plus the paragraphs around the table."""

    def __init__(self) -> None:
        super().__init__()
        self.rows: list[list[tuple[str, str, str]]] = []
        self.paragraphs: list[str] = []
        self._cell: tuple[str, str] | None = None
        self._text: list[str] = []
        self._in_p = False

    def handle_starttag(self, tag, attrs):
        if tag == "tr":
            self.rows.append([])
        elif tag in ("td", "th"):
            self._cell = (tag, dict(attrs).get("style", ""))
            self._text = []
        elif tag == "p":
            self._in_p = True
            self._text = []

    def handle_endtag(self, tag):
        if tag in ("td", "th") and self._cell is not None:
            self.rows[-1].append((self._cell[0], "".join(self._text), self._cell[1]))
            self._cell = None
        elif tag == "p":
            self.paragraphs.append("".join(self._text))
            self._in_p = False

    def handle_data(self, data):
        if self._cell is not None or self._in_p:
            self._text.append(data)


def _parse(html: str) -> TableParser:
    parser = TableParser()
    parser.feed(html)
    return parser


def test_ctrl_c_on_the_table_copies_html_and_text(window, view, qtbot):
    view.select_variable("track")
    result = view.result()
    view.table.setFocus()
    qtbot.keyClick(view.table, Qt.Key.Key_C, Qt.KeyboardModifier.ControlModifier)
    mime = QApplication.clipboard().mimeData()
    assert mime.hasHtml() and mime.hasText()
    assert not mime.hasFormat("image/png")

    parsed = _parse(mime.html())
    header = parsed.rows[0]
    assert [text for _, text, _ in header] == result.columns
    assert all(tag == "th" and "font-weight:bold" in style for tag, _, style in header)
    body = {row[0][1]: row for row in parsed.rows[1:]}
    # The numbers in the pasted table are the result's numbers, formatted as in the view...
    counts, percents = result.data["counts"], result.data["percents"]
    for level in result.data["levels"]:
        _, n_text, n_style = body[level][1]
        _, pct_text, pct_style = body[level][2]
        assert int(n_text.replace(",", "")) == counts[level]
        assert pct_text == f"{percents[level]:.1f}%"
        assert "text-align:right" in n_style and "text-align:right" in pct_style
        assert "text-align:left" in body[level][0][2]
    # ... and those counts are pandas' counts of the workbook's track column.
    reference = source_frame(window)["track"].value_counts()
    assert {lv: counts[lv] for lv in result.data["levels"]} == reference.to_dict()
    # Caption above, base and notes below.
    assert parsed.paragraphs[0] == result.title
    assert result.base in parsed.paragraphs
    assert result.notes[-1] in parsed.paragraphs

    lines = mime.text().splitlines()
    assert lines[0] == result.title
    assert lines[1].split("\t") == result.columns
    electrical = next(line.split("\t") for line in lines if line.startswith("Electrical\t"))
    assert electrical == [c.display for c in result.rows[0]]
    assert result.base in lines


def test_copied_crosstab_keeps_hidden_cells_hidden(window, view):
    view.select_variable("overall_satisfaction")
    view.set_breakdown("cohort")
    assert view.copy_table()
    parsed = _parse(QApplication.clipboard().mimeData().html())
    columns = [text for _, text, _ in parsed.rows[0]]
    fall = next(row for row in parsed.rows if row[0][1] == "Fall")
    assert fall[columns.index("Very dissatisfied n")][1] == "<5"
    satisfied = fall[columns.index("Satisfied n")][1]
    frame = source_frame(window).dropna(subset=["cohort", "overall_satisfaction"])
    expected = int(((frame.cohort == "Fall") & (frame.overall_satisfaction == "Satisfied")).sum())
    assert int(satisfied) == expected == 53


def _png(mime) -> QImage:
    data = bytes(mime.data("image/png"))
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    image = QImage.fromData(data, "PNG")
    assert not image.isNull()
    return image


def _colours(image: QImage) -> set[str]:
    image = image.convertToFormat(QImage.Format.Format_RGB888)
    width, height, stride = image.width(), image.height(), image.bytesPerLine()
    raw = np.frombuffer(image.constBits(), dtype=np.uint8, count=stride * height)
    pixels = raw.reshape(height, stride)[:, : width * 3].reshape(-1, 3)
    unique = np.unique(pixels, axis=0)
    return {f"#{r:02X}{g:02X}{b:02X}" for r, g, b in unique}


def test_ctrl_c_on_the_chart_copies_a_png_and_its_caption(view, qtbot):
    view.select_variable("track")
    result = view.result()
    view.chart.render_now()
    qtbot.mouseClick(view.chart.canvas, Qt.MouseButton.LeftButton)
    assert view.chart.canvas.hasFocus() or view._last_focus == "chart"
    qtbot.keyClick(view.chart.canvas, Qt.Key.Key_C, Qt.KeyboardModifier.ControlModifier)
    mime = QApplication.clipboard().mimeData()
    assert mime.hasFormat("image/png")
    image = _png(mime)
    assert (image.width(), image.height()) == (1920, 1080)  # a 16:9 slide picture
    assert mime.text() == f"{result.title}\n{result.base}\n"
    # A bar chart of one question: its bars in the palette's single-series blue.
    assert palette.SINGLE.upper() in _colours(image)


def test_copy_buttons(view, qtbot):
    view.select_variable("overall_satisfaction")
    view.set_breakdown("cohort")
    qtbot.mouseClick(view.copy_chart_button, Qt.MouseButton.LeftButton)
    mime = QApplication.clipboard().mimeData()
    assert mime.hasFormat("image/png") and not mime.hasHtml()
    _png(mime)
    qtbot.mouseClick(view.copy_table_button, Qt.MouseButton.LeftButton)
    mime = QApplication.clipboard().mimeData()
    assert mime.hasHtml() and not mime.hasFormat("image/png")
    assert mime.text().splitlines()[0] == view.result().title
