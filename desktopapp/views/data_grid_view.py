"""The data node of a wave: the working data as a grid, with every correction visible.

A corrected cell has a warm background and a small mark in its corner; its tooltip says the
original value, the new value and the reason (``core.cleaning.cell_note``). A missing cell
shows why it is missing in muted text; an excluded respondent's row is greyed. The grid is
virtualised (:class:`desktopapp.models.data_grid.DataGridModel`), so a 100,000-row wave
scrolls as smoothly as a small one. After a decision only the columns it touched repaint.
"""

from __future__ import annotations

from typing import Any

from PySide6.QtCore import QModelIndex, QPersistentModelIndex, QPointF, Qt
from PySide6.QtGui import QColor, QKeySequence, QPainter, QPolygonF, QShortcut
from PySide6.QtWidgets import (
    QAbstractItemView,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QMenu,
    QPushButton,
    QStyledItemDelegate,
    QStyleOptionViewItem,
    QTableView,
    QVBoxLayout,
    QWidget,
)

from core.project import Changes
from desktopapp.errors import failure_text
from desktopapp.models.cells import (
    EDITED_BACKGROUND,
    EDITED_MARK,
    EXCLUDED_BACKGROUND,
    MUTED_TEXT,
)
from desktopapp.models.data_grid import EDITED_ROLE, DataGridModel
from desktopapp.project_tree import NodeType, TreeNode
from desktopapp.views import ViewContext, muted_label, title_label


def register(registry: Any) -> None:
    registry.add(NodeType.DATA, DataGridView)


class CornerMarkDelegate(QStyledItemDelegate):
    """Paints the cell as usual, then a small triangle in the top-right corner of a
    corrected cell, so corrections stay visible when the cell is selected too."""

    def paint(
        self,
        painter: QPainter,
        option: QStyleOptionViewItem,
        index: QModelIndex | QPersistentModelIndex,
    ) -> None:
        super().paint(painter, option, index)
        if not index.data(EDITED_ROLE):
            return
        r = option.rect
        size = min(8.0, r.height() / 2.5)
        painter.save()
        painter.setRenderHint(QPainter.RenderHint.Antialiasing)
        painter.setPen(Qt.PenStyle.NoPen)
        painter.setBrush(EDITED_MARK)
        right, top = float(r.right()) + 1, float(r.top())
        painter.drawPolygon(
            QPolygonF([QPointF(right - size, top), QPointF(right, top), QPointF(right, top + size)])
        )
        painter.restore()


def swatch(colour: Any, text: str, mark: bool = False, italic: bool = False) -> QWidget:
    """A legend entry: a small cell drawn as the grid draws it, and its meaning."""
    from PySide6.QtGui import QColor, QPixmap

    w, h = 30, 16
    pixmap = QPixmap(w, h)
    pixmap.fill(Qt.GlobalColor.transparent)
    p = QPainter(pixmap)
    p.setRenderHint(QPainter.RenderHint.Antialiasing)
    p.setPen(QColor("#9A9A9A"))
    p.setBrush(colour)
    p.drawRect(0, 0, w - 1, h - 1)
    if mark:
        p.setPen(Qt.PenStyle.NoPen)
        p.setBrush(EDITED_MARK)
        p.drawPolygon(QPolygonF([QPointF(w - 8, 0), QPointF(w, 0), QPointF(w, 8)]))
    if italic:
        font = p.font()
        font.setItalic(True)
        font.setPixelSize(10)
        p.setFont(font)
        p.setPen(MUTED_TEXT)
        p.drawText(pixmap.rect(), Qt.AlignmentFlag.AlignCenter, "why")
    p.end()
    box = QWidget()
    row = QHBoxLayout(box)
    row.setContentsMargins(0, 0, 0, 0)
    row.setSpacing(6)
    icon = QLabel()
    icon.setPixmap(pixmap)
    row.addWidget(icon)
    row.addWidget(QLabel(text))
    return box


class DataGridView(QWidget):
    """Every respondent and variable of one wave's working data."""

    def __init__(self, context: ViewContext, node: TreeNode, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("dataGridView")
        self._context = context
        self.node = node
        self.wave_id: int = node.wave_id  # type: ignore[assignment]
        self.instrument_id: int = node.instrument_id  # type: ignore[assignment]
        wave = context.project.wave(self.wave_id)
        self.model: DataGridModel | None = None
        self._repaint: frozenset[str] | None = None
        self._repaint_all = False

        self.title = title_label(f"Data — wave {wave.label}")
        self.summary_label = muted_label("")
        self.summary_label.setObjectName("dataSummary")
        self.find_edit = QLineEdit()
        self.find_edit.setObjectName("dataFind")
        self.find_edit.setPlaceholderText("Go to a respondent (identifier) or data row number")
        self.find_edit.setClearButtonEnabled(True)
        self.find_edit.setToolTip("Type an identifier or a row number and press Enter (Ctrl+F).")
        self.next_edit_button = QPushButton("Next corrected cell")
        self.next_edit_button.setObjectName("nextEditButton")
        self.next_edit_button.setToolTip("Jump to the next cell a decision changed (F3).")
        self.recode_button = QPushButton("Recode a value everywhere…")
        self.recode_button.setObjectName("recodeButton")
        self.recode_button.setToolTip(
            "For every value like this: recode, say, -99 in all numeric items. Kept as a rule "
            "that applies again to later waves."
        )
        self.find_note = muted_label("", wrap=False)

        self.table = QTableView()
        self.table.setObjectName("dataGrid")
        self.table.setItemDelegate(CornerMarkDelegate(self.table))
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectItems)
        self.table.setSelectionMode(QAbstractItemView.SelectionMode.ExtendedSelection)
        self.table.setWordWrap(False)
        self.table.setContextMenuPolicy(Qt.ContextMenuPolicy.CustomContextMenu)
        vh = self.table.verticalHeader()
        # Fixed row heights: the view never measures 100,000 rows.
        vh.setSectionResizeMode(QHeaderView.ResizeMode.Fixed)
        vh.setDefaultSectionSize(self.fontMetrics().height() + 8)
        hh = self.table.horizontalHeader()
        hh.setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
        hh.setDefaultSectionSize(130)

        legend = QHBoxLayout()
        legend.setSpacing(16)
        legend.addWidget(
            swatch(EDITED_BACKGROUND, "corrected (point at it: original, new value, reason)", True)
        )
        legend.addWidget(swatch(QColor("white"), "missing: the reason, in grey", italic=True))
        legend.addWidget(swatch(EXCLUDED_BACKGROUND, "respondent excluded from analyses"))
        legend.addStretch(1)

        top = QHBoxLayout()
        top.addWidget(self.find_edit, 2)
        top.addWidget(self.next_edit_button)
        top.addWidget(self.recode_button)
        top.addStretch(1)

        layout = QVBoxLayout(self)
        layout.setContentsMargins(16, 12, 16, 12)
        layout.addWidget(self.title)
        layout.addWidget(self.summary_label)
        layout.addLayout(top)
        layout.addWidget(self.find_note)
        layout.addLayout(legend)
        layout.addWidget(self.table, 1)

        self._connect_signals()
        self.reload()

    def _connect_signals(self) -> None:
        self.find_edit.returnPressed.connect(self._on_find_edit_return_pressed)
        self.next_edit_button.clicked.connect(self._on_next_edit_button_clicked)
        self.recode_button.clicked.connect(self._on_recode_button_clicked)
        self.table.customContextMenuRequested.connect(self._on_table_context_menu_requested)
        QShortcut(QKeySequence.StandardKey.Find, self, self._on_find_shortcut_activated)
        QShortcut(QKeySequence("F3"), self, self._on_next_edit_button_clicked)

    @property
    def project(self) -> Any:
        return self._context.project

    # ------------------------------------------------------------------ loading
    def reload(self, variables: frozenset[str] | None = None) -> None:
        """Read the working data on a worker; repaint ``variables`` only (None: all)."""
        project, wave_id = self.project, self.wave_id
        # A reload overtaken by a newer one is dropped: the newer one repaints both.
        if self.model is None or variables is None:
            self._repaint_all = True
        else:
            self._repaint = variables if self._repaint is None else self._repaint | variables

        def work(_progress: Any) -> Any:
            from core.working import working_data

            return working_data(project, wave_id)

        self._context.runner.run(
            work,
            on_success=self._on_working_loaded,
            on_failure=self._on_load_failed,
            key=f"data-grid:{id(self)}",
            show_progress=False,
        )

    def _on_working_loaded(self, working: Any) -> None:
        variables = None if self._repaint_all else (self._repaint or frozenset())
        self._repaint, self._repaint_all = None, False
        self._show(working, variables)

    def _show(self, working: Any, variables: frozenset[str] | None) -> None:
        if self.model is None:
            self.model = DataGridModel(working, self)
            self.table.setModel(self.model)
        else:
            self.model.set_working(working, variables)
        self._update_summary()

    def _on_load_failed(self, exc: BaseException) -> None:
        self.summary_label.setText(failure_text(self, exc))

    def _update_summary(self) -> None:
        model = self.model
        if model is None:
            return
        working = model.working
        cells = len(working.edits)
        parts = [
            f"{working.n_rows:,} respondent{'s' if working.n_rows != 1 else ''}",
            f"{model.columnCount():,} variables",
            f"{cells:,} corrected cell{'s' if cells != 1 else ''}",
        ]
        if working.excluded:
            n = len(working.excluded)
            parts.append(f"{n:,} respondent{'s' if n != 1 else ''} excluded")
        self.summary_label.setText(
            " · ".join(parts) + ". The raw data is never changed; this is the data after "
            "the ledger's decisions."
        )

    def project_changed(self, changes: Changes) -> None:
        if changes.wave_ids and self.wave_id not in changes.wave_ids:
            return
        if changes.codebook or changes.structure:
            self.reload(None)
        elif changes.ledger:
            self.reload(frozenset(changes.variables))

    # ------------------------------------------------------------------ navigation
    def go_to(self, row: int, name: str | None = None) -> None:
        if self.model is None:
            return
        col = self.model.column_of(name) if name else max(0, self.table.currentIndex().column())
        index = self.model.index(row, max(col, 0))
        self.table.setCurrentIndex(index)
        self.table.scrollTo(index, QAbstractItemView.ScrollHint.PositionAtCenter)

    def _on_find_shortcut_activated(self) -> None:
        self.find_edit.setFocus()
        self.find_edit.selectAll()

    def _on_find_edit_return_pressed(self) -> None:
        from core.cleaning import find_row
        from core.errors import PlaincountError

        text = self.find_edit.text().strip()
        if not text or self.model is None:
            return
        working = self.model.working
        try:
            rows = working.rows_for_respondent(text)
            if rows:
                row = rows[0]
            elif text.isdigit():
                row = find_row(working, data_row=int(text))
            else:
                raise PlaincountError(f"No respondent {text!r} in this wave.")
        except PlaincountError as exc:
            self.find_note.setText(str(exc))
            return
        self.find_note.setText("")
        self.go_to(row)
        self.table.setFocus()

    def _on_next_edit_button_clicked(self) -> None:
        if self.model is None:
            return
        cells = sorted(
            (r, self.model.column_of(n))
            for r, n in self.model.working.edits
            if n in self.model.names
        )
        if not cells:
            self.find_note.setText("No cell has been corrected in this wave yet.")
            return
        current = self.table.currentIndex()
        here = (current.row(), current.column()) if current.isValid() else (-1, -1)
        after = [c for c in cells if c > here]
        row, col = (after or cells)[0]
        self.find_note.setText("")
        self.go_to(row, self.model.names[col])

    def prepare_screenshot(self) -> None:
        """Show the first corrected cell, if any decision changed one."""
        if self.model is not None and self.model.working.edits:
            self._on_next_edit_button_clicked()
            self.table.selectionModel().clearSelection()  # show the cell's own colours

    # ------------------------------------------------------------------ recode
    def _on_table_context_menu_requested(self, pos: Any) -> None:
        index = self.table.indexAt(pos)
        if self.model is None or not index.isValid():
            return
        name = self.model.names[index.column()]
        raw = self.model.raw_text(index.row(), name)
        menu = QMenu(self)
        if raw:
            act = menu.addAction(f"Recode every “{raw}” like this cell…")
            act.triggered.connect(lambda: self.open_recode(raw, [name]))
        act = menu.addAction("Recode a value everywhere…")
        act.triggered.connect(lambda: self.open_recode(None, None))
        menu.exec(self.table.viewport().mapToGlobal(pos))

    def _on_recode_button_clicked(self) -> None:
        self.open_recode(None, None)

    def open_recode(self, old_text: str | None, variables: list[str] | None) -> Any:
        from desktopapp.rule_dialog import RecodeDialog

        dialog = RecodeDialog(
            self.project, self._context.runner, self.wave_id, self, old_text, variables
        )
        dialog.open()
        return dialog
