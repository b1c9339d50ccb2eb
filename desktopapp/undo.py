"""Edit ▸ Undo / Redo, mirroring the project's own history.

The truth lives in the core: every undoable change writes a row in the project file's
``history`` table, and :meth:`core.project.Project.undo` / ``redo`` step through it. This
module only keeps two actions' names and enabled state in line with that table, runs the
steps on the writer thread, and shows the history as a list. Because the history is in the
file, it is still there, with the same labels, after the project is closed and reopened.
"""

from __future__ import annotations

from datetime import datetime
from typing import TYPE_CHECKING

from PySide6.QtCore import QObject, Qt, Signal
from PySide6.QtGui import QAction, QFont, QKeySequence
from PySide6.QtWidgets import QListWidget, QListWidgetItem, QWidget

if TYPE_CHECKING:
    from core.project import Project
from desktopapp.workers import BackgroundRunner


def local_time(iso: str) -> str:
    """An ISO timestamp from the project file as a short local date and time."""
    try:
        when = datetime.fromisoformat(iso).astimezone()
    except ValueError:
        return iso
    return f"{when.day} {when:%b %Y, %H:%M}"


class UndoController(QObject):
    """Owns the Undo and Redo actions of one main window."""

    history_changed = Signal()

    def __init__(self, runner: BackgroundRunner, parent: QWidget) -> None:
        super().__init__(parent)
        self._runner = runner
        self._project: Project | None = None
        self.undo_action = QAction("Undo", parent)
        self.undo_action.setObjectName("undoAction")
        self.undo_action.setShortcut(QKeySequence.StandardKey.Undo)
        self.redo_action = QAction("Redo", parent)
        self.redo_action.setObjectName("redoAction")
        # Ctrl+Shift+Z everywhere (the platform's own redo key as well, where it differs).
        self.redo_action.setShortcuts(
            [QKeySequence("Ctrl+Shift+Z"), *QKeySequence.keyBindings(QKeySequence.StandardKey.Redo)]
        )
        self._connect_signals()
        self._update_actions()

    def _connect_signals(self) -> None:
        self.undo_action.triggered.connect(self._on_undo_action_triggered)
        self.redo_action.triggered.connect(self._on_redo_action_triggered)

    def set_project(self, project: Project | None) -> None:
        self._project = project
        self.refresh()

    def refresh(self) -> None:
        """Re-read the labels from the project (after any change to it)."""
        self._update_actions()
        self.history_changed.emit()

    def undo(self) -> None:
        self._step(undo=True)

    def redo(self) -> None:
        self._step(undo=False)

    def _step(self, undo: bool) -> None:
        project = self._project
        if project is None or project.closed:
            return
        label = project.undo_label() if undo else project.redo_label()
        if label is None:
            return
        self._runner.run(
            lambda _p: project.undo() if undo else project.redo(),
            on_success=lambda _changes: self.refresh(),
            writes=True,
            label=("Undoing: " if undo else "Redoing: ") + label,
        )

    def _on_undo_action_triggered(self) -> None:
        self.undo()

    def _on_redo_action_triggered(self) -> None:
        self.redo()

    def _update_actions(self) -> None:
        project = self._project
        undo_label = redo_label = None
        if project is not None and not project.closed:
            undo_label = project.undo_label()
            redo_label = project.redo_label()
        self.undo_action.setEnabled(undo_label is not None)
        self.undo_action.setText(f"Undo {_lower_first(undo_label)}" if undo_label else "Undo")
        self.redo_action.setEnabled(redo_label is not None)
        self.redo_action.setText(f"Redo {_lower_first(redo_label)}" if redo_label else "Redo")


def _lower_first(text: str) -> str:
    # "Change the kind of age" reads as "Undo change the kind of age" in a menu.
    if len(text) > 1 and text[0].isupper() and not text[1].isupper():
        return text[0].lower() + text[1:]
    return text


class HistoryListWidget(QListWidget):
    """What was changed in this project, newest first; undone steps shown greyed."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("historyList")
        self.setSelectionMode(QListWidget.SelectionMode.NoSelection)
        self.setFocusPolicy(Qt.FocusPolicy.NoFocus)
        self.setStyleSheet(
            "QListWidget::item { padding: 6px 4px; border-bottom: 1px solid palette(midlight); }"
        )
        self._project: Project | None = None

    def set_project(self, project: Project | None) -> None:
        self._project = project
        self.refresh()

    def refresh(self) -> None:
        self.clear()
        project = self._project
        if project is None or project.closed:
            return
        steps = project.history()
        if not steps:
            item = QListWidgetItem("No changes yet. Changes you make will be listed here.")
            item.setForeground(Qt.GlobalColor.gray)
            self.addItem(item)
            return
        for step in reversed(steps):
            undone = step["state"] == "undone"
            text = f"{step['label']}\n{local_time(step['created'])}"
            if undone:
                text = f"{step['label']} (undone)\n{local_time(step['created'])}"
            item = QListWidgetItem(text)
            if undone:
                item.setForeground(Qt.GlobalColor.gray)
                font = QFont(item.font())
                font.setItalic(True)
                item.setFont(font)
            self.addItem(item)

    def labels(self) -> list[str]:
        """The step labels as listed (newest first), for tests and screen readers."""
        return [self.item(i).text().split("\n")[0] for i in range(self.count())]
