"""What the window shows when no project is open: start something, or pick up where you were."""

from __future__ import annotations

import json
from datetime import datetime
from pathlib import Path
from typing import Any

from PySide6.QtCore import QModelIndex, QRect, QSize, Qt, Signal
from PySide6.QtGui import QFont, QKeySequence, QPainter, QPalette, QShortcut
from PySide6.QtWidgets import (
    QHBoxLayout,
    QLabel,
    QListWidget,
    QListWidgetItem,
    QMenu,
    QPushButton,
    QSizePolicy,
    QStyle,
    QStyledItemDelegate,
    QStyleOptionViewItem,
    QVBoxLayout,
    QWidget,
)

MAX_RECENT = 10
PATH_ROLE = Qt.ItemDataRole.UserRole
OPENED_ROLE = Qt.ItemDataRole.UserRole + 1


class RecentProjects:
    """The recently opened project files, newest first, kept in the user's settings."""

    KEY = "recent/projects"

    def __init__(self, settings: Any) -> None:
        self._settings = settings

    def entries(self) -> list[dict[str, str]]:
        """Entries ``{"path", "opened"}`` whose file still exists."""
        raw = self._settings.value(self.KEY, "[]")
        try:
            items = json.loads(raw) if isinstance(raw, str) else []
        except json.JSONDecodeError:
            items = []
        return [e for e in items if isinstance(e, dict) and Path(e.get("path", "")).is_file()]

    def add(self, path: Path) -> None:
        path_text = str(Path(path).resolve())
        items = [e for e in self.entries() if e["path"] != path_text]
        items.insert(0, {"path": path_text, "opened": datetime.now().isoformat(timespec="minutes")})
        self._write(items[:MAX_RECENT])

    def remove(self, path: str) -> None:
        self._write([e for e in self.entries() if e["path"] != path])

    def clear(self) -> None:
        self._write([])

    def _write(self, items: list[dict[str, str]]) -> None:
        self._settings.setValue(self.KEY, json.dumps(items))
        self._settings.sync()


def _opened_text(iso: str) -> str:
    try:
        when = datetime.fromisoformat(iso)
    except ValueError:
        return ""
    today = datetime.now().date()
    if when.date() == today:
        return f"opened today at {when:%H:%M}"
    return f"opened {when.day} {when:%b %Y}"


class RecentProjectDelegate(QStyledItemDelegate):
    """Two lines per project: its name in bold, then its folder and when it was opened."""

    def sizeHint(self, option: QStyleOptionViewItem, index: QModelIndex) -> QSize:  # noqa: N802
        height = option.fontMetrics.height()
        return QSize(200, int(height * 2 + 20))

    def paint(self, painter: QPainter, option: QStyleOptionViewItem, index: QModelIndex) -> None:
        painter.save()
        style = option.widget.style() if option.widget else None
        if style is not None:
            style.drawPrimitive(
                QStyle.PrimitiveElement.PE_PanelItemViewItem, option, painter, option.widget
            )
        selected = bool(option.state & QStyle.StateFlag.State_Selected)
        palette = option.palette
        text_role = QPalette.ColorRole.HighlightedText if selected else QPalette.ColorRole.Text
        path = Path(index.data(PATH_ROLE))
        rect = option.rect.adjusted(12, 8, -12, -8)
        line = option.fontMetrics.height()
        bold = QFont(option.font)
        bold.setBold(True)
        painter.setFont(bold)
        painter.setPen(palette.color(text_role))
        painter.drawText(
            QRect(rect.left(), rect.top(), rect.width(), line),
            Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter,
            path.stem,
        )
        painter.setFont(option.font)
        if not selected:
            painter.setPen(palette.color(QPalette.ColorRole.PlaceholderText))
        opened = _opened_text(index.data(OPENED_ROLE) or "")
        second = QRect(rect.left(), rect.top() + line + 4, rect.width(), line)
        opened_width = option.fontMetrics.horizontalAdvance(opened) + 16
        folder = option.fontMetrics.elidedText(
            str(path.parent), Qt.TextElideMode.ElideMiddle, max(40, rect.width() - opened_width)
        )
        painter.drawText(second, Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter, folder)
        painter.drawText(
            second, Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter, opened
        )
        painter.restore()


class StartPageWidget(QWidget):
    """New project, Open project, recent projects and the demo, in one calm column."""

    new_requested = Signal()
    open_requested = Signal()
    open_path_requested = Signal(str)
    demo_requested = Signal()

    def __init__(self, recent: RecentProjects, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("startPage")
        self._recent = recent

        title = QLabel("Plaincount")
        title_font = QFont(self.font())
        title_font.setPointSizeF(title_font.pointSizeF() * 2.0)
        title_font.setBold(True)
        title.setFont(title_font)
        blurb = QLabel(
            "From a raw survey export to clean tables and charts that say how they were made."
        )
        blurb.setWordWrap(True)
        blurb.setForegroundRole(QPalette.ColorRole.PlaceholderText)

        self.new_button = QPushButton("New project…")
        self.new_button.setObjectName("newProjectButton")
        self.new_button.setDefault(True)
        self.open_button = QPushButton("Open project…")
        self.open_button.setObjectName("openProjectButton")
        self.demo_button = QPushButton("Open the demo project")
        self.demo_button.setObjectName("demoButton")
        self.demo_button.setToolTip(
            "An invented survey of a job-training program, with planted data problems to "
            "practise on."
        )
        for button in (self.new_button, self.open_button, self.demo_button):
            button.setMinimumHeight(36)
            button.setMinimumWidth(150)
        buttons = QHBoxLayout()
        buttons.setSpacing(10)
        buttons.addWidget(self.new_button)
        buttons.addWidget(self.open_button)
        buttons.addStretch(1)
        buttons.addWidget(self.demo_button)

        recent_title = QLabel("Recent projects")
        section_font = QFont(self.font())
        section_font.setBold(True)
        section_font.setPointSizeF(section_font.pointSizeF() * 1.15)
        recent_title.setFont(section_font)
        self.recent_list = QListWidget()
        self.recent_list.setObjectName("recentList")
        self.recent_list.setItemDelegate(RecentProjectDelegate(self.recent_list))
        self.recent_list.setUniformItemSizes(True)
        self.recent_list.setContextMenuPolicy(Qt.ContextMenuPolicy.CustomContextMenu)
        self._forget_shortcut = QShortcut(QKeySequence.StandardKey.Delete, self.recent_list)
        self._forget_shortcut.setContext(Qt.ShortcutContext.WidgetShortcut)
        self.recent_list.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Fixed)
        self.empty_label = QLabel(
            "Projects you open will be listed here. A project is one file that holds the "
            "survey data, its codebook and every cleaning decision, saved as you go."
        )
        self.empty_label.setWordWrap(True)
        self.empty_label.setForegroundRole(QPalette.ColorRole.PlaceholderText)
        hint = QLabel("You can also drop a project file or a survey spreadsheet onto this window.")
        hint.setWordWrap(True)
        hint.setForegroundRole(QPalette.ColorRole.PlaceholderText)

        column = QVBoxLayout()
        column.setSpacing(12)
        column.addWidget(title)
        column.addWidget(blurb)
        column.addSpacing(16)
        column.addLayout(buttons)
        column.addSpacing(24)
        column.addWidget(recent_title)
        column.addWidget(self.recent_list)
        column.addWidget(self.empty_label)
        column.addSpacing(8)
        column.addWidget(hint)
        column.addStretch(1)

        inner = QWidget()
        inner.setLayout(column)
        inner.setMaximumWidth(720)
        outer = QHBoxLayout(self)
        outer.setContentsMargins(32, 48, 32, 32)
        outer.addStretch(1)
        outer.addWidget(inner, 4)
        outer.addStretch(1)

        self._connect_signals()
        self.refresh()

    def _connect_signals(self) -> None:
        self.new_button.clicked.connect(self.new_requested)
        self.open_button.clicked.connect(self.open_requested)
        self.demo_button.clicked.connect(self.demo_requested)
        self.recent_list.itemActivated.connect(self._on_recent_list_item_activated)
        self.recent_list.customContextMenuRequested.connect(self._on_recent_list_menu_requested)
        self._forget_shortcut.activated.connect(self._on_forget_shortcut_activated)

    def refresh(self) -> None:
        """Re-read the recent projects."""
        self.recent_list.clear()
        entries = self._recent.entries()
        for entry in entries:
            item = QListWidgetItem(Path(entry["path"]).stem)
            item.setData(PATH_ROLE, entry["path"])
            item.setData(OPENED_ROLE, entry.get("opened", ""))
            item.setToolTip(entry["path"])
            self.recent_list.addItem(item)
        # As tall as the list (at most MAX_RECENT rows), so the page does not end in blank space.
        row_h = self.recent_list.sizeHintForRow(0) if entries else 0
        self.recent_list.setFixedHeight(row_h * len(entries) + 2 * self.recent_list.frameWidth())
        self.recent_list.setVisible(bool(entries))
        self.empty_label.setVisible(not entries)

    def forget(self, path: str) -> None:
        """Take a project off the list (the file itself is left alone)."""
        self._recent.remove(path)
        self.refresh()

    def _on_recent_list_menu_requested(self, pos: Any) -> None:
        item = self.recent_list.itemAt(pos)
        if item is None:
            return
        menu = QMenu(self)
        open_action = menu.addAction("Open")
        forget_action = menu.addAction("Remove from this list")
        chosen = menu.exec(self.recent_list.viewport().mapToGlobal(pos))
        if chosen is open_action:
            self.open_path_requested.emit(item.data(PATH_ROLE))
        elif chosen is forget_action:
            self.forget(item.data(PATH_ROLE))

    def _on_forget_shortcut_activated(self) -> None:
        item = self.recent_list.currentItem()
        if item is not None:
            self.forget(item.data(PATH_ROLE))

    def _on_recent_list_item_activated(self, item: QListWidgetItem) -> None:
        self.open_path_requested.emit(item.data(PATH_ROLE))
