"""Review how a new wave lines up with its questionnaire's codebook, before importing.

Shown by the import dialog when a file goes into a questionnaire that already has a codebook
and the match is not plain (a renamed, new, missing or uncertain column, or an answer
wording that changed). Every column's decision can be changed: accept the match, store it
as another codebook entry, or add it as a new question; every answer mapping can point to
another level or be left as it is (the cleaning checks then show it as invalid). Nothing is
imported until the evaluator confirms; the choices are handed to the import as its
``column_map`` and ``level_maps``.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import pandas as pd
from PySide6.QtCore import Qt
from PySide6.QtGui import QPalette
from PySide6.QtWidgets import (
    QComboBox,
    QDialog,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QPushButton,
    QSplitter,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from core.codebook import Codebook
from core.wavematch import MATCHED, NEW, RENAMED, UNCERTAIN, MatchReport, match_wave
from desktopapp.views import escape_rich, titled_pane

NEW_QUESTION = ""  # combo data of "Add as a new question"
LEAVE = ""  # combo data of "Leave as it is"
STATUS_TEXT = {
    MATCHED: "Same name",
    RENAMED: "Renamed",
    UNCERTAIN: "Not sure",
    NEW: "New question",
}
STATUS_ORDER = {UNCERTAIN: 0, RENAMED: 1, NEW: 2, MATCHED: 3}


class WaveMatchDialog(QDialog):
    """The review of one wave's match. After ``accept()``, read :meth:`column_map` and
    :meth:`level_maps`."""

    COL_COLUMN, COL_QUESTION, COL_FOUND, COL_TARGET, COL_SCORE, COL_WHY = range(6)
    LV_VARIABLE, LV_ANSWER, LV_COUNT, LV_LEVEL, LV_WHY = range(5)

    def __init__(
        self,
        report: MatchReport,
        codebook: Codebook,
        wave_label: str = "",
        parent: QWidget | None = None,
    ) -> None:
        super().__init__(parent)
        self.setObjectName("waveMatchDialog")
        self.report = report
        self.codebook = codebook
        self.wave_label = wave_label
        self.setWindowTitle("Check how the new wave lines up with the codebook")
        self.resize(1100, 700)

        heading = QLabel(f"<b>Wave {escape_rich(wave_label)}: how its columns line up</b>")
        font = heading.font()
        font.setPointSizeF(font.pointSizeF() * 1.2)
        heading.setFont(font)
        self.summary_label = QLabel(self._summary_text())
        self.summary_label.setObjectName("matchSummary")
        self.summary_label.setWordWrap(True)

        self.columns_table = QTableWidget(0, 6)
        self.columns_table.setObjectName("matchColumnsTable")
        self.columns_table.setHorizontalHeaderLabels(
            ["Column in the file", "Question in the file", "Found", "Store as", "Score", "Why"]
        )
        self.columns_table.verticalHeader().setVisible(False)
        header = self.columns_table.horizontalHeader()
        header.setSectionResizeMode(self.COL_COLUMN, QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(self.COL_QUESTION, QHeaderView.ResizeMode.Interactive)
        header.setSectionResizeMode(self.COL_FOUND, QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(self.COL_TARGET, QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(self.COL_SCORE, QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(self.COL_WHY, QHeaderView.ResizeMode.Stretch)
        self.columns_table.setColumnWidth(self.COL_QUESTION, 260)
        self.missing_label = QLabel(self._missing_text())
        self.missing_label.setObjectName("matchMissing")
        self.missing_label.setWordWrap(True)
        self.missing_label.setForegroundRole(QPalette.ColorRole.PlaceholderText)

        self.levels_table = QTableWidget(0, 5)
        self.levels_table.setObjectName("matchLevelsTable")
        self.levels_table.setHorizontalHeaderLabels(
            ["Question", "Answer in the file", "Answers", "Counts as", "Why"]
        )
        self.levels_table.verticalHeader().setVisible(False)
        lv_header = self.levels_table.horizontalHeader()
        for col in (self.LV_VARIABLE, self.LV_ANSWER, self.LV_COUNT, self.LV_LEVEL):
            lv_header.setSectionResizeMode(col, QHeaderView.ResizeMode.ResizeToContents)
        lv_header.setSectionResizeMode(self.LV_WHY, QHeaderView.ResizeMode.Stretch)

        self.accept_all_button = QPushButton("Accept every suggestion")
        self.accept_all_button.setObjectName("acceptSuggestionsButton")
        self.accept_all_button.setEnabled(bool(report.uncertain))
        self.error_label = QLabel("")
        self.error_label.setObjectName("matchError")
        self.error_label.setWordWrap(True)
        self.error_label.setStyleSheet(
            "QLabel { background: #fdf1e6; border: 1px solid #D55E00; border-radius: 4px; "
            "padding: 6px; color: #5a2600; }"
        )
        self.error_label.hide()
        self.back_button = QPushButton("Back")
        self.back_button.setObjectName("matchBackButton")
        self.import_button = QPushButton("Import with these choices")
        self.import_button.setObjectName("matchImportButton")
        self.import_button.setDefault(True)

        top = titled_pane(
            "Columns", self.columns_table, self.missing_label, stretch=self.columns_table
        )
        bottom_box = titled_pane(
            "Answers worded differently from the codebook",
            self.levels_table,
            stretch=self.levels_table,
        )
        splitter = QSplitter(Qt.Orientation.Vertical)
        splitter.addWidget(top)
        splitter.addWidget(bottom_box)
        splitter.setSizes([420, 220])
        splitter.setChildrenCollapsible(False)
        buttons = QHBoxLayout()
        buttons.addWidget(self.accept_all_button)
        buttons.addStretch(1)
        buttons.addWidget(self.back_button)
        buttons.addWidget(self.import_button)
        layout = QVBoxLayout(self)
        layout.addWidget(heading)
        layout.addWidget(self.summary_label)
        layout.addWidget(splitter, 1)
        layout.addWidget(self.error_label)
        layout.addLayout(buttons)

        self._fill_columns()
        self._fill_levels()
        self._connect_signals()

    # ------------------------------------------------------------------ setup
    def _connect_signals(self) -> None:
        self.accept_all_button.clicked.connect(self._on_accept_all_button_clicked)
        self.back_button.clicked.connect(self.reject)
        self.import_button.clicked.connect(self._on_import_button_clicked)

    def _summary_text(self) -> str:
        r = self.report
        parts = [
            f"{_n(len(r.matched), 'column has', 'columns have')} the same name as in the codebook"
        ]
        if r.renamed:
            parts.append(f"{_n(len(r.renamed), 'was', 'were')} renamed")
        if r.uncertain:
            parts.append(
                f"{_n(len(r.uncertain), 'may match an entry', 'may match entries')} (not "
                "applied unless you accept)"
            )
        if r.new:
            parts.append(f"{_n(len(r.new), 'is a new question', 'are new questions')}")
        if r.missing:
            parts.append(
                f"{_n(len(r.missing), 'codebook entry has', 'codebook entries have')} no column "
                "in this file"
            )
        return (
            "; ".join(parts)
            + ". Change anything that is wrong: choose the codebook entry a column should be "
            "stored as, or add it as a new question."
        )

    def _missing_text(self) -> str:
        if not self.report.missing:
            return "Every codebook entry has a column in this file."
        return (
            "In the codebook but not in this file (no answers in this wave): "
            + ", ".join(self.report.missing)
            + ". Choose one of them under “Store as” if a column above is the same question."
        )

    def _rows(self) -> list[Any]:
        # Plain same-name matches go last; everything that needs a look comes first.
        return sorted(
            self.report.columns,
            key=lambda c: STATUS_ORDER.get(c.status, 9) - (c.question_changed and 3),
        )

    def _fill_columns(self) -> None:
        rows = self._rows()
        self.columns_table.setRowCount(len(rows))
        for row, c in enumerate(rows):
            self.columns_table.setItem(row, self.COL_COLUMN, _item(c.column))
            question = _item(c.question)
            question.setToolTip(
                c.question
                + (f"\n\nIn the codebook: {c.old_question}" if c.question_changed else "")
            )
            self.columns_table.setItem(row, self.COL_QUESTION, question)
            found = STATUS_TEXT.get(c.status, c.status)
            if c.question_changed:
                found += ", reworded"
            self.columns_table.setItem(row, self.COL_FOUND, _item(found))
            combo = QComboBox()
            combo.addItem("Add as a new question", NEW_QUESTION)
            names = self.codebook.names
            if c.status == UNCERTAIN and c.target in names:
                combo.addItem(f"{c.target} (suggested)", c.target)
            for name in names:
                if combo.findData(name) < 0:
                    combo.addItem(name, name)
            chosen = c.target if c.status in (MATCHED, RENAMED) else NEW_QUESTION
            combo.setCurrentIndex(max(combo.findData(chosen), 0))
            self.columns_table.setCellWidget(row, self.COL_TARGET, combo)
            self.columns_table.setItem(row, self.COL_SCORE, _item(f"{c.score:.2f}"))
            why = c.reason
            if c.question_changed:
                why += "; the question text differs from the codebook's"
            self.columns_table.setItem(row, self.COL_WHY, _item(why))

    def _fill_levels(self) -> None:
        rows: list[tuple[str, str, int, str | None, str]] = [
            (m.variable, m.answer, m.count, m.level if m.applied else None, m.reason)
            for m in self.report.levels
        ]
        for name, answers in self.report.unknown_answers.items():
            for answer in answers:
                rows.append((name, answer, 0, None, "not an answer the codebook knows"))
        proposed = {(m.variable, m.answer): m.level for m in self.report.levels if not m.applied}
        self.levels_table.setRowCount(len(rows))
        for row, (name, answer, count, level, why) in enumerate(rows):
            self.levels_table.setItem(row, self.LV_VARIABLE, _item(name))
            self.levels_table.setItem(row, self.LV_ANSWER, _item(answer))
            self.levels_table.setItem(row, self.LV_COUNT, _item(f"{count:,}" if count else ""))
            combo = QComboBox()
            combo.addItem("Leave as it is (shown as invalid)", LEAVE)
            var = self.codebook.get(name)
            suggestion = proposed.get((name, answer))
            for lv in var.levels if var is not None else ():
                text = f"{lv} (suggested)" if lv == suggestion else lv
                combo.addItem(text, lv)
            combo.setCurrentIndex(max(combo.findData(level or LEAVE), 0))
            self.levels_table.setCellWidget(row, self.LV_LEVEL, combo)
            self.levels_table.setItem(row, self.LV_WHY, _item(why))

    # ------------------------------------------------------------------ choices
    def _column_row(self, column: str) -> int:
        for row in range(self.columns_table.rowCount()):
            if self.columns_table.item(row, self.COL_COLUMN).text() == column:
                return row
        raise KeyError(column)

    def target_combo(self, column: str) -> QComboBox:
        return self.columns_table.cellWidget(self._column_row(column), self.COL_TARGET)

    def set_target(self, column: str, target: str | None) -> None:
        """Store ``column`` as codebook entry ``target`` (None: as a new question)."""
        combo = self.target_combo(column)
        combo.setCurrentIndex(combo.findData(target or NEW_QUESTION))

    def level_combo(self, variable: str, answer: str) -> QComboBox:
        for row in range(self.levels_table.rowCount()):
            if (
                self.levels_table.item(row, self.LV_VARIABLE).text() == variable
                and self.levels_table.item(row, self.LV_ANSWER).text() == answer
            ):
                return self.levels_table.cellWidget(row, self.LV_LEVEL)
        raise KeyError((variable, answer))

    def set_level(self, variable: str, answer: str, level: str | None) -> None:
        """Count ``answer`` as ``level`` (None: leave it as it is)."""
        combo = self.level_combo(variable, answer)
        combo.setCurrentIndex(combo.findData(level or LEAVE))

    def _stored_names(self) -> list[tuple[Any, str, bool]]:
        """(column match, the name it will be stored under, whether the evaluator chose it
        differently from a plain same-name match)."""
        out = []
        for c in self.report.columns:
            target = self.target_combo(c.column).currentData() or NEW_QUESTION
            if target == NEW_QUESTION:
                name = c.column
                if name in self.codebook:
                    # A new question that happens to share a codebook name gets its own.
                    name = "_".join(x for x in (c.column, self.wave_label, "new") if x)
            else:
                name = target
            plain = c.status == MATCHED and target == c.target
            out.append((c, name, not plain))
        return out

    def column_map(self) -> dict[str, str]:
        """File column -> the name it is stored under, for every column not plainly matched
        (and any plain match the evaluator changed). A new question keeps its own name, or
        gets the wave label added when the codebook already uses that name."""
        return {c.column: name for c, name, changed in self._stored_names() if changed}

    def level_maps(self) -> dict[str, dict[str, str]]:
        """Codebook name -> {answer -> level}; "" means leave the answer as it is."""
        out: dict[str, dict[str, str]] = {}
        for row in range(self.levels_table.rowCount()):
            name = self.levels_table.item(row, self.LV_VARIABLE).text()
            answer = self.levels_table.item(row, self.LV_ANSWER).text()
            combo: QComboBox = self.levels_table.cellWidget(row, self.LV_LEVEL)
            out.setdefault(name, {})[answer] = combo.currentData() or LEAVE
        return out

    def problems(self) -> list[str]:
        """Choices that cannot be imported as they stand (two columns stored as one entry)."""
        seen: dict[str, str] = {}
        out = []
        for c, target, _changed in self._stored_names():
            if target in seen:
                out.append(
                    f"{seen[target]} and {c.column} are both stored as {target}; choose "
                    "another entry for one of them, or add it as a new question."
                )
            seen[target] = c.column
        return out

    # ------------------------------------------------------------------ slots
    def _on_accept_all_button_clicked(self) -> None:
        for c in self.report.columns:
            if c.status == UNCERTAIN and c.target:
                self.set_target(c.column, c.target)

    def _on_import_button_clicked(self) -> None:
        problems = self.problems()
        if problems:
            self.error_label.setText(" ".join(problems))
            self.error_label.show()
            return
        self.accept()


def review_if_needed(
    parent: QWidget,
    codebook: Codebook,
    frame: pd.DataFrame,
    questions: dict[str, str] | None,
    wave_label: str,
    on_accepted: Callable[[dict[str, str], dict[str, dict[str, str]]], None],
) -> WaveMatchDialog | None:
    """Open the review (window-modal, without blocking) when the match needs a look.

    Returns the open dialog, or None when every column matched plainly (nothing to review:
    the caller goes on importing). ``on_accepted(column_map, level_maps)`` runs when the
    evaluator confirms.
    """
    if not len(codebook):
        return None
    report = match_wave(codebook, frame, questions or {})
    if not report.needs_review:
        return None
    dialog = WaveMatchDialog(report, codebook, wave_label, parent)
    dialog.accepted.connect(lambda: on_accepted(dialog.column_map(), dialog.level_maps()))
    dialog.setWindowModality(Qt.WindowModality.WindowModal)
    dialog.open()
    return dialog


def _n(count: int, one: str, many: str) -> str:
    return f"{count} {one if count == 1 else many}"


def _item(text: str) -> QTableWidgetItem:
    item = QTableWidgetItem(text)
    item.setFlags(item.flags() & ~Qt.ItemFlag.ItemIsEditable)
    item.setToolTip(text)
    return item
