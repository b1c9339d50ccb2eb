"""The row under a result: the finding sentence, "Keep for report" and the two copy buttons.

The tables view and the waves view offer the same four controls under their results, with
their own object names and wording; building them here keeps the labels and layout alike.
"""

from __future__ import annotations

from dataclasses import dataclass

from PySide6.QtWidgets import QHBoxLayout, QLabel, QLineEdit, QPushButton


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
