"""The project node: what the project holds, and the list of what was changed."""

from __future__ import annotations

from pathlib import Path
from typing import Any

from PySide6.QtCore import Qt
from PySide6.QtWidgets import (
    QFrame,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QScrollArea,
    QSizePolicy,
    QVBoxLayout,
    QWidget,
)

from core.project import Changes
from desktopapp.project_tree import NodeType, TreeNode
from desktopapp.undo import HistoryListWidget, local_time
from desktopapp.views import ViewContext, escape_rich, muted_label, section_label, title_label


def register(registry: Any) -> None:
    registry.add(NodeType.PROJECT, ProjectView)


class ProjectView(QWidget):
    """Overview of the open project: instruments, waves and the change history."""

    def __init__(self, context: ViewContext, node: TreeNode, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("projectView")
        self._context = context
        self.node = node
        project = context.project

        self.title = title_label(project.name)
        self.title.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        path_label = muted_label(str(project.path))
        path_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        saved_note = muted_label(
            "Every change is saved in this file the moment you make it. To keep a version "
            "as it is now, use File ▸ Save a copy…"
        )
        self.import_button = QPushButton("Import survey data…")
        self.import_button.setObjectName("importButton")
        self._data_box = QVBoxLayout()
        self._data_box.setSpacing(6)
        self.history = HistoryListWidget()
        self.history.setMinimumHeight(180)

        left = QVBoxLayout()
        left.setSpacing(8)
        left.addWidget(self.title)
        left.addWidget(path_label)
        left.addWidget(saved_note)
        left.addSpacing(16)
        heading_row = QHBoxLayout()
        heading_row.addWidget(section_label("Survey data"))
        heading_row.addStretch(1)
        heading_row.addWidget(self.import_button)
        left.addLayout(heading_row)
        left.addLayout(self._data_box)
        left.addStretch(1)
        left_widget = QWidget()
        left_widget.setLayout(left)
        scroll = QScrollArea()
        scroll.setWidgetResizable(True)
        scroll.setFrameShape(QFrame.Shape.NoFrame)
        scroll.setWidget(left_widget)

        right = QVBoxLayout()
        right.setSpacing(6)
        history_title = section_label("What was changed")
        history_hint = muted_label(
            "Newest first. Edit ▸ Undo takes back the newest step that is not undone yet."
        )
        for label in (history_title, history_hint):
            # Fixed height: the list below takes all the room that is left.
            label.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Fixed)
            right.addWidget(label)
        right.addWidget(self.history, 1)

        layout = QHBoxLayout(self)
        layout.setContentsMargins(24, 20, 24, 20)
        layout.setSpacing(32)
        layout.addWidget(scroll, 3)
        layout.addLayout(right, 2)

        self._connect_signals()
        self._update_data()
        self.history.set_project(project)

    def _connect_signals(self) -> None:
        self.import_button.clicked.connect(self._on_import_button_clicked)
        self._context.undo.history_changed.connect(self.history.refresh)

    def project_changed(self, changes: Changes) -> None:
        if changes.structure:
            self._update_data()
        self.history.refresh()

    def shutdown(self) -> None:
        self._context.undo.history_changed.disconnect(self.history.refresh)

    def _update_data(self) -> None:
        while self._data_box.count():
            item = self._data_box.takeAt(0)
            if item.widget() is not None:
                item.widget().deleteLater()
        project = self._context.project
        instruments = project.instruments()
        if not instruments:
            self._data_box.addWidget(
                muted_label(
                    "This project has no survey data yet. Drop a spreadsheet or a CSV file onto "
                    "the window, or choose Import survey data…"
                )
            )
            return
        for inst in instruments:
            waves = project.waves(inst.id)
            codebook = project.codebook(inst.id)
            name = QLabel(f"<b>{escape_rich(inst.name)}</b> — {len(codebook)} variables")
            self._data_box.addWidget(name)
            if not waves:
                self._data_box.addWidget(muted_label("No waves imported yet."))
            for wave in waves:
                line = QLabel(
                    f"Wave {escape_rich(wave.label)}: {wave.n_rows:,} respondents, "
                    f"{wave.n_columns} columns"
                )
                line.setContentsMargins(16, 0, 0, 0)
                source = muted_label(
                    f"from {Path(wave.source_name).name}, imported {local_time(wave.created)}"
                )
                source.setContentsMargins(16, 0, 0, 4)
                self._data_box.addWidget(line)
                self._data_box.addWidget(source)
            self._data_box.addSpacing(8)

    def _on_import_button_clicked(self) -> None:
        self._context.import_requested(None, None)
