"""The row under a result: the finding sentence, "Keep for report" and the two copy buttons.

The tables view and the waves view offer the same four controls under their results, with
their own object names and wording; building them here, and putting a table or chart on the
clipboard here, keeps the labels, formats and messages alike.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from PySide6.QtCore import QMimeData
from PySide6.QtGui import QImage
from PySide6.QtWidgets import QApplication, QHBoxLayout, QLabel, QLineEdit, QPushButton

from core.tables.captions import short_title
from core.tables.result import TableResult

TABLE_COPIED = "Copied the table. Paste it into a slide or document as a table."
CHART_COPIED = "Copied the chart as a picture."


@dataclass
class KeepCopyRow:
    """The controls of the row and the layout holding them."""

    finding_edit: QLineEdit
    keep_button: QPushButton
    copy_table_button: QPushButton
    copy_chart_button: QPushButton
    layout: QHBoxLayout

    def set_enabled(self, enabled: bool) -> None:
        """Enable or disable all four together (there is a result, or none)."""
        for widget in (
            self.keep_button,
            self.copy_table_button,
            self.copy_chart_button,
            self.finding_edit,
        ):
            widget.setEnabled(enabled)


def _object_name(prefix: str, name: str) -> str:
    return prefix + name[0].upper() + name[1:] if prefix else name


def keep_copy_row(
    *, prefix: str, finding_example: str, keep_tip: str, chart_tip: str
) -> KeepCopyRow:
    """Build the row; object names are ``findingEdit`` etc., or ``<prefix>FindingEdit``."""
    finding_edit = QLineEdit()
    finding_edit.setObjectName(_object_name(prefix, "findingEdit"))
    finding_edit.setPlaceholderText(f"The finding in one sentence, e.g. “{finding_example}”")
    keep_button = QPushButton("Keep for report")
    keep_button.setObjectName(_object_name(prefix, "keepButton"))
    keep_button.setToolTip(keep_tip)
    copy_table_button = QPushButton("Copy table")
    copy_table_button.setObjectName(_object_name(prefix, "copyTableButton"))
    copy_table_button.setToolTip(
        "Put the table on the clipboard: pastes as an editable table, with caption and notes."
    )
    copy_chart_button = QPushButton("Copy chart")
    copy_chart_button.setObjectName(_object_name(prefix, "copyChartButton"))
    copy_chart_button.setToolTip(chart_tip)
    layout = QHBoxLayout()
    layout.addWidget(QLabel("Finding"))
    layout.addWidget(finding_edit, 1)
    layout.addWidget(keep_button)
    layout.addSpacing(12)
    layout.addWidget(copy_table_button)
    layout.addWidget(copy_chart_button)
    return KeepCopyRow(finding_edit, keep_button, copy_table_button, copy_chart_button, layout)


def table_mime(result: TableResult) -> QMimeData:
    """The table as HTML (an editable table when pasted) and as tab-separated text."""
    from core.export.clipboard import table_html, table_text

    mime = QMimeData()
    mime.setHtml(table_html(result))
    mime.setText(table_text(result))
    return mime


def chart_caption(result: TableResult) -> str:
    """The plain-text caption put on the clipboard with a chart: title, then the base."""
    lines = [result.title] if result.title else []
    if result.base:
        lines.append(result.base)
    return "\n".join(lines) + "\n"


def chart_mime(result: TableResult, png: bytes) -> QMimeData:
    """A chart as a PNG (plus a bitmap for programs that want one) and its caption."""
    mime = QMimeData()
    mime.setData("image/png", png)
    image = QImage.fromData(png, "PNG")
    if not image.isNull():
        mime.setImageData(image)
    mime.setText(chart_caption(result))
    return mime


def put_table_on_clipboard(result: TableResult, say: Callable[[str], None]) -> None:
    """Put ``result`` on the clipboard as a table and say so."""
    QApplication.clipboard().setMimeData(table_mime(result))
    say(TABLE_COPIED)


def put_chart_on_clipboard(
    runner: Any, result: TableResult, chart_type: str, key: str, say: Callable[[str], None]
) -> None:
    """Draw the chart as a PNG on a worker, then put it and its caption on the clipboard."""

    def work(_progress: Any) -> bytes:
        from core.export.clipboard import chart_png

        return chart_png(result, chart_type)

    def done(png: bytes) -> None:
        QApplication.clipboard().setMimeData(chart_mime(result, png))
        say(CHART_COPIED)

    runner.run(work, on_success=done, key=key, label="Drawing the chart…")


def kept_message(title: str, finding: str) -> str:
    """What the status bar says once a result is in the report outline."""
    hint = "" if finding else " Add its finding sentence in the report outline."
    return f"Kept “{short_title(title, 60)}” for the report.{hint}"
