"""The report outline node: put kept results in order, say what each shows, export them.

Three panes side by side. On the left the outline itself: the kept tables and charts in
report order, which the evaluator reorders by dragging (or with Move up / Move down), renames
in place and removes; a chart without a finding sentence carries a warning marker, because a
chart in a report should show a finding. In the middle the selected item: its title, its
finding sentence (a few lines), whether it appears as a table or as which chart, and a small
preview of its table and chart computed from today's data. On the right the export: formats,
the folder (remembered between sessions), the two confidentiality switches (off by default,
with their cautions), the warnings the core finds before exporting, and the Export button,
which runs on a worker with a progress bar and Cancel and ends with the list of files and
"Open folder".

Every edit is one call of :mod:`core.outline` on the writer thread, so it is saved at once
and Edit ▸ Undo takes it back.
"""

from __future__ import annotations

import json
from collections.abc import Callable
from pathlib import Path
from typing import Any

from PySide6.QtCore import (
    QAbstractListModel,
    QByteArray,
    QMimeData,
    QModelIndex,
    QSize,
    Qt,
    QUrl,
    Signal,
)
from PySide6.QtGui import QDesktopServices, QIcon, QKeySequence, QPalette, QPixmap
from PySide6.QtWidgets import (
    QAbstractItemView,
    QCheckBox,
    QComboBox,
    QFileDialog,
    QFormLayout,
    QFrame,
    QGridLayout,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QListView,
    QListWidget,
    QPlainTextEdit,
    QProgressBar,
    QPushButton,
    QScrollArea,
    QSizePolicy,
    QSplitter,
    QStackedWidget,
    QStyle,
    QTabWidget,
    QVBoxLayout,
    QWidget,
)

from core import outline
from core.export.report import check_outline, export_outline, file_names
from core.project import Changes
from core.tables.result import TableResult
from desktopapp.project_tree import NodeType, TreeNode
from desktopapp.views import ViewContext, escape_rich, muted_label, section_label, title_label

ID_ROLE = Qt.ItemDataRole.UserRole
WARNING_ROLE = Qt.ItemDataRole.UserRole + 1
MIME_TYPE = "application/x-plaincount-outline-ids"
TABLE_ONLY = "Table only"
NO_FINDING = "A chart in a report should show a finding: add a finding sentence."
CAUTION_COLOUR = "#a33f00"
# Charts are sized for 1920-pixel exports; this resolution keeps their text readable in a
# preview about a third of the screen wide.
PREVIEW_DPI = 84

# (format, label) in the order the core writes them.
FORMATS = (
    ("xlsx", "Workbook (tables.xlsx)"),
    ("docx", "Word report (report.docx)"),
    ("html", "Web page report (report.html)"),
    ("png", "Chart pictures (PNG)"),
    ("svg", "Chart drawings (SVG)"),
    ("csv", "Tables as CSV files"),
)
DEFAULT_FORMATS = ("xlsx", "docx", "html")
FORMATS_KEY = "export/formats"
FOLDERS_KEY = "export/folders"  # JSON: project path -> export folder
PERSONAL_CAUTION = (
    "Off: results about identifiers or personal data are left out, and the appendix names "
    "respondents by data row. Turn on only if everyone who reads the report may see who "
    "answered what."
)
COMMENTS_CAUTION = (
    "Off: listings of open-ended comments are left out. Comments can identify the people "
    "who wrote them (a workplace, an instructor, a family situation); read them before "
    "sharing. When on, the report carries a caution."
)


def register(registry: Any) -> None:
    registry.add(NodeType.OUTLINE, ExportView)


def needs_finding(item: outline.OutlineItem) -> bool:
    """A kept chart without a finding sentence (the core warns about the same at export)."""
    return bool(item.chart) and not item.finding.strip()


# ---------------------------------------------------------------------- the outline model
class OutlineListModel(QAbstractListModel):
    """The kept results in report order.

    Moving rows (by a drag, by the Move buttons or by ``moveRows``) reorders the list here at
    once and emits ``order_changed`` with the new order of item ids; editing a title in place
    emits ``title_edited``. The view turns both into core calls; the project then tells every
    view, and :meth:`set_items` shows what was stored.
    """

    order_changed = Signal(list)  # [item id, ...]
    title_edited = Signal(int, str)  # item id, new title

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._items: list[outline.OutlineItem] = []

    # ---- contents
    def set_items(self, items: list[outline.OutlineItem]) -> None:
        self.beginResetModel()
        self._items = list(items)
        self.endResetModel()

    def items(self) -> list[outline.OutlineItem]:
        return list(self._items)

    def ids(self) -> list[int]:
        return [it.id for it in self._items]

    def item_at(self, row: int) -> outline.OutlineItem | None:
        return self._items[row] if 0 <= row < len(self._items) else None

    def row_of(self, item_id: int) -> int:
        return next((i for i, it in enumerate(self._items) if it.id == item_id), -1)

    # ---- Qt model
    def rowCount(self, parent: QModelIndex | None = None) -> int:  # noqa: N802 - Qt override
        if parent is not None and parent.isValid():
            return 0
        return len(self._items)

    def data(self, index: QModelIndex, role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        item = self.item_at(index.row()) if index.isValid() else None
        if item is None:
            return None
        if role == Qt.ItemDataRole.DisplayRole:
            form = "chart" if item.chart else "table"
            return f"{index.row() + 1}. {item.title}  ({form})"
        if role == Qt.ItemDataRole.EditRole:
            return item.title
        if role == Qt.ItemDataRole.DecorationRole:
            # Every row has an icon of the same size, so the titles line up.
            return _warning_icon() if needs_finding(item) else _blank_icon()
        if role == Qt.ItemDataRole.ToolTipRole:
            tip = item.title
            if item.finding:
                tip += f"\n\nFinding: {item.finding}"
            if needs_finding(item):
                tip += f"\n\n{NO_FINDING}"
            return tip
        if role == ID_ROLE:
            return item.id
        if role == WARNING_ROLE:
            return NO_FINDING if needs_finding(item) else ""
        return None

    def setData(  # noqa: N802 - Qt override
        self, index: QModelIndex, value: Any, role: int = Qt.ItemDataRole.EditRole
    ) -> bool:
        item = self.item_at(index.row()) if index.isValid() else None
        if item is None or role != Qt.ItemDataRole.EditRole:
            return False
        title = " ".join(str(value).split())
        if not title or title == item.title:
            return False
        self.title_edited.emit(item.id, title)
        return True

    def flags(self, index: QModelIndex) -> Qt.ItemFlag:
        if not index.isValid():
            # Drops land between rows, never onto one.
            return Qt.ItemFlag.ItemIsDropEnabled
        return (
            Qt.ItemFlag.ItemIsEnabled
            | Qt.ItemFlag.ItemIsSelectable
            | Qt.ItemFlag.ItemIsEditable
            | Qt.ItemFlag.ItemIsDragEnabled
        )

    def supportedDropActions(self) -> Qt.DropAction:  # noqa: N802 - Qt override
        return Qt.DropAction.MoveAction

    def supportedDragActions(self) -> Qt.DropAction:  # noqa: N802 - Qt override
        return Qt.DropAction.MoveAction

    def mimeTypes(self) -> list[str]:  # noqa: N802 - Qt override
        return [MIME_TYPE]

    def mimeData(self, indexes: list[QModelIndex]) -> QMimeData:  # noqa: N802 - Qt override
        mime = QMimeData()
        ids = [self._items[i.row()].id for i in sorted(indexes, key=lambda i: i.row())]
        mime.setData(MIME_TYPE, QByteArray(json.dumps(ids).encode()))
        return mime

    def dropMimeData(  # noqa: N802 - Qt override
        self, data: QMimeData, action: Qt.DropAction, row: int, column: int, parent: QModelIndex
    ) -> bool:
        """A drop of outline rows before ``row`` (-1: at the end) moves them there."""
        if action != Qt.DropAction.MoveAction or not data.hasFormat(MIME_TYPE):
            return False
        try:
            ids = [int(i) for i in json.loads(bytes(data.data(MIME_TYPE).data()).decode())]
        except (ValueError, TypeError):
            return False
        if parent.isValid():  # dropped onto an item: put it before that item
            row = parent.row()
        if row < 0:
            row = len(self._items)
        moved = False
        for item_id in ids:
            source = self.row_of(item_id)
            if source < 0:
                continue
            if self.moveRows(QModelIndex(), source, 1, QModelIndex(), row):
                moved = True
            row = self.row_of(item_id) + 1
        return moved

    def moveRows(  # noqa: N802 - Qt override
        self,
        source_parent: QModelIndex,
        source_row: int,
        count: int,
        destination_parent: QModelIndex,
        destination_child: int,
    ) -> bool:
        """Move ``count`` rows to before ``destination_child`` and report the new order."""
        n = len(self._items)
        if (
            source_parent.isValid()
            or destination_parent.isValid()
            or count < 1
            or source_row < 0
            or source_row + count > n
            or not 0 <= destination_child <= n
            or source_row <= destination_child <= source_row + count
        ):
            return False
        if not self.beginMoveRows(
            QModelIndex(), source_row, source_row + count - 1, QModelIndex(), destination_child
        ):
            return False
        block = self._items[source_row : source_row + count]
        rest = self._items[:source_row] + self._items[source_row + count :]
        insert_at = (
            destination_child if destination_child < source_row else destination_child - count
        )
        self._items = rest[:insert_at] + block + rest[insert_at:]
        self.endMoveRows()
        # Numbers in the labels follow the position.
        self.dataChanged.emit(self.index(0), self.index(len(self._items) - 1))
        self.order_changed.emit(self.ids())
        return True


def _warning_icon() -> QIcon:
    from PySide6.QtWidgets import QApplication

    return QApplication.style().standardIcon(QStyle.StandardPixmap.SP_MessageBoxWarning)


def _blank_icon() -> QIcon:
    pixmap = QPixmap(16, 16)
    pixmap.fill(Qt.GlobalColor.transparent)
    return QIcon(pixmap)


class OutlineListView(QListView):
    """The outline list: drag a row to move it, double-click (or F2) to rename it."""

    delete_requested = Signal()

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("outlineList")
        self.setDragDropMode(QAbstractItemView.DragDropMode.InternalMove)
        self.setDefaultDropAction(Qt.DropAction.MoveAction)
        self.setDragDropOverwriteMode(False)
        self.setDropIndicatorShown(True)
        self.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        self.setEditTriggers(
            QAbstractItemView.EditTrigger.DoubleClicked
            | QAbstractItemView.EditTrigger.EditKeyPressed
        )
        self.setWordWrap(True)
        self.setSpacing(2)
        self.setIconSize(QSize(16, 16))
        self.setUniformItemSizes(False)

    def keyPressEvent(self, event: Any) -> None:  # noqa: N802 - Qt override
        editing = self.state() == QAbstractItemView.State.EditingState
        if event.matches(QKeySequence.StandardKey.Delete) and not editing:
            self.delete_requested.emit()
            event.accept()
            return
        super().keyPressEvent(event)


class FindingEdit(QPlainTextEdit):
    """A few lines for the finding sentence; committed when focus leaves or on Ctrl+Enter."""

    editing_finished = Signal()

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("findingEdit")
        self.setTabChangesFocus(True)
        self.setPlaceholderText(
            "What does this result show? One plain sentence, for example: “Four in five "
            "participants would recommend the program.”"
        )
        self.setFixedHeight(self.fontMetrics().lineSpacing() * 4 + 14)

    def focusOutEvent(self, event: Any) -> None:  # noqa: N802 - Qt override
        super().focusOutEvent(event)
        self.editing_finished.emit()

    def keyPressEvent(self, event: Any) -> None:  # noqa: N802 - Qt override
        if event.key() in (Qt.Key.Key_Return, Qt.Key.Key_Enter) and (
            event.modifiers() & Qt.KeyboardModifier.ControlModifier
        ):
            self.editing_finished.emit()
            event.accept()
            return
        super().keyPressEvent(event)


# ---------------------------------------------------------------------- the view
class ExportView(QWidget):
    """Outline on the left, the selected item in the middle, the export on the right."""

    def __init__(self, context: ViewContext, node: TreeNode, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("exportView")
        self._context = context
        self.node = node
        self._filling = False
        self._current_id: int | None = None
        self._shown_title = ""
        self._shown_finding = ""
        self._result: TableResult | None = None
        self._export_progress: Any = None  # core.progress.Progress of the running export
        self.exporting = False
        self.last_files: list[Path] = []
        self.last_warnings: list[str] = []
        self.last_message = ""
        self.shown_warnings: list[str] = []
        self._shut = False
        # Replaced in tests so no file manager or dialog opens.
        self.open_url: Callable[[QUrl], Any] = QDesktopServices.openUrl
        self.ask_folder: Callable[[str], str] = self._ask_folder

        self._build_outline_pane()
        self._build_item_pane()
        self._build_export_pane()
        self.splitter = QSplitter(Qt.Orientation.Horizontal)
        self.splitter.addWidget(self._outline_pane)
        self.splitter.addWidget(self._item_pane)
        self.splitter.addWidget(self._export_scroll)
        self.splitter.setStretchFactor(0, 0)
        self.splitter.setStretchFactor(1, 1)
        self.splitter.setStretchFactor(2, 0)
        self.splitter.setSizes([320, 460, 350])
        self.splitter.setChildrenCollapsible(False)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.splitter)

        self._connect_signals()
        self._restore_settings()
        self._reload()
        if self.model.rowCount():
            self.select_row(0)
        else:
            self._fill_details()

    # ------------------------------------------------------------------ building
    def _build_outline_pane(self) -> None:
        self.model = OutlineListModel(self)
        self.list = OutlineListView()
        self.list.setModel(self.model)
        self.empty_label = muted_label(
            "Nothing is kept for the report yet. Open a wave's Tables, choose a table or "
            "chart, write what it shows and press “Keep for report”."
        )
        self.empty_label.setObjectName("outlineEmpty")
        self.up_button = QPushButton("Move up")
        self.up_button.setObjectName("moveUpButton")
        self.down_button = QPushButton("Move down")
        self.down_button.setObjectName("moveDownButton")
        self.remove_button = QPushButton("Remove")
        self.remove_button.setObjectName("removeButton")
        self.remove_button.setToolTip(
            "Take this result out of the report (Edit ▸ Undo puts it back)."
        )
        buttons = QHBoxLayout()
        buttons.addWidget(self.up_button)
        buttons.addWidget(self.down_button)
        buttons.addStretch(1)
        buttons.addWidget(self.remove_button)
        self.count_label = muted_label("")

        self._outline_pane = QWidget()
        self._outline_pane.setMinimumWidth(250)
        v = QVBoxLayout(self._outline_pane)
        v.setContentsMargins(16, 14, 6, 12)
        v.addWidget(title_label("Report outline"))
        v.addWidget(
            muted_label(
                "The report shows these results in this order. Drag one to move it; "
                "double-click to rename it."
            )
        )
        v.addWidget(self.list, 1)
        v.addWidget(self.empty_label)
        v.addLayout(buttons)
        v.addWidget(self.count_label)

    def _build_item_pane(self) -> None:
        self.title_edit = QLineEdit()
        self.title_edit.setObjectName("titleEdit")
        self.title_edit.setPlaceholderText("The caption above the result in every file")
        self.finding_edit = FindingEdit()
        self.chart_combo = QComboBox()
        self.chart_combo.setObjectName("chartCombo")
        self.finding_warning = QLabel(NO_FINDING)
        self.finding_warning.setObjectName("findingWarning")
        self.finding_warning.setWordWrap(True)
        self.finding_warning.setStyleSheet(f"QLabel {{ color: {CAUTION_COLOUR}; }}")
        self.finding_warning.hide()
        self.item_error = QLabel("")
        self.item_error.setObjectName("itemError")
        self.item_error.setWordWrap(True)
        self.item_error.setStyleSheet(f"QLabel {{ color: {CAUTION_COLOUR}; }}")
        self.item_error.hide()
        self.source_label = muted_label("")
        self.source_label.setObjectName("itemSource")

        form = QFormLayout()
        form.setFieldGrowthPolicy(QFormLayout.FieldGrowthPolicy.AllNonFixedFieldsGrow)
        form.addRow("Title", self.title_edit)
        form.addRow("Finding", self.finding_edit)
        form.addRow("", self.finding_warning)
        form.addRow("Show as", self.chart_combo)
        form.addRow("From", self.source_label)

        from desktopapp.views.tabulation_view import ResultTableModel, ResultTableView
        from desktopapp.widgets.figure_canvas import FigureCanvasWidget

        self.table_model = ResultTableModel(self)
        self.preview_table = ResultTableView()
        self.preview_table.setObjectName("previewTable")
        self.preview_table.setModel(self.table_model)
        self.preview_table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.preview_table.verticalHeader().setVisible(False)
        self.preview_table.horizontalHeader().setStretchLastSection(False)
        self.preview_chart = FigureCanvasWidget(dpi=PREVIEW_DPI, minimum=(300, 220))
        self.preview_chart.setObjectName("previewChart")
        self.preview_tabs = QTabWidget()
        self.preview_tabs.setObjectName("previewTabs")
        self.preview_tabs.setDocumentMode(True)
        self.preview_tabs.addTab(self.preview_chart, "Chart")
        self.preview_tabs.addTab(self.preview_table, "Table")
        self.preview_message = muted_label("")
        self.preview_message.setObjectName("previewMessage")
        self.preview_message.setAlignment(Qt.AlignmentFlag.AlignCenter)
        self.preview_stack = QStackedWidget()
        self.preview_stack.addWidget(self.preview_tabs)
        self.preview_stack.addWidget(self.preview_message)
        self.base_label = muted_label("")
        self.base_label.setObjectName("previewBase")

        self._details = QWidget()
        d = QVBoxLayout(self._details)
        d.setContentsMargins(0, 0, 0, 0)
        d.addLayout(form)
        d.addWidget(self.item_error)
        d.addSpacing(4)
        d.addWidget(section_label("Preview"))
        d.addWidget(self.preview_stack, 1)
        d.addWidget(self.base_label)

        self.no_selection = muted_label("Select a result on the left to edit it.")
        self.no_selection.setAlignment(Qt.AlignmentFlag.AlignCenter)
        self._item_stack = QStackedWidget()
        self._item_stack.addWidget(self._details)
        self._item_stack.addWidget(self.no_selection)

        self._item_pane = QWidget()
        self._item_pane.setMinimumWidth(360)
        v = QVBoxLayout(self._item_pane)
        v.setContentsMargins(12, 14, 12, 12)
        v.addWidget(section_label("Selected result"))
        v.addWidget(self._item_stack, 1)

    def _build_export_pane(self) -> None:
        self.format_checks: dict[str, QCheckBox] = {}
        grid = QGridLayout()
        grid.setHorizontalSpacing(12)
        grid.setVerticalSpacing(4)
        for i, (fmt, label) in enumerate(FORMATS):
            check = QCheckBox(label)
            check.setObjectName(f"format_{fmt}")
            self.format_checks[fmt] = check
            grid.addWidget(check, i, 0)
        self.files_preview = muted_label("")
        self.files_preview.setObjectName("filesPreview")

        self.folder_edit = QLineEdit()
        self.folder_edit.setObjectName("folderEdit")
        self.folder_edit.setReadOnly(True)
        self.folder_button = QPushButton("Choose…")
        self.folder_button.setObjectName("chooseFolderButton")
        folder_row = QHBoxLayout()
        folder_row.addWidget(self.folder_edit, 1)
        folder_row.addWidget(self.folder_button)

        self.personal_check = QCheckBox("Include identifiers and personal data")
        self.personal_check.setObjectName("includePersonal")
        self.personal_note = muted_label(PERSONAL_CAUTION)
        self.comments_check = QCheckBox("Include open-ended comments")
        self.comments_check.setObjectName("includeComments")
        self.comments_note = muted_label(COMMENTS_CAUTION)

        self.warnings_label = QLabel("")
        self.warnings_label.setObjectName("exportWarnings")
        self.warnings_label.setWordWrap(True)
        self.warnings_label.setTextFormat(Qt.TextFormat.RichText)

        self.export_button = QPushButton("Export")
        self.export_button.setObjectName("exportButton")
        self.export_button.setDefault(True)
        self.progress_bar = QProgressBar()
        self.progress_bar.setObjectName("exportProgress")
        self.progress_bar.setTextVisible(False)
        self.progress_label = muted_label("")
        self.cancel_button = QPushButton("Cancel")
        self.cancel_button.setObjectName("cancelExportButton")
        progress_row = QHBoxLayout()
        progress_row.addWidget(self.progress_bar, 1)
        progress_row.addWidget(self.cancel_button)
        self._progress_box = QWidget()
        pb = QVBoxLayout(self._progress_box)
        pb.setContentsMargins(0, 0, 0, 0)
        pb.addLayout(progress_row)
        pb.addWidget(self.progress_label)
        self._progress_box.hide()

        self.done_label = QLabel("")
        self.done_label.setObjectName("exportDone")
        self.done_label.setWordWrap(True)
        self.files_list = QListWidget()
        self.files_list.setObjectName("exportedFiles")
        self.files_list.setSelectionMode(QAbstractItemView.SelectionMode.NoSelection)
        self.files_list.setFocusPolicy(Qt.FocusPolicy.NoFocus)
        self.files_list.setMaximumHeight(150)
        self.files_list.setTextElideMode(Qt.TextElideMode.ElideMiddle)
        self.files_list.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.open_folder_button = QPushButton("Open folder")
        self.open_folder_button.setObjectName("openFolderButton")
        open_row = QHBoxLayout()
        open_row.addWidget(self.open_folder_button)
        open_row.addStretch(1)
        self._done_box = QWidget()
        db = QVBoxLayout(self._done_box)
        db.setContentsMargins(0, 0, 0, 0)
        db.addWidget(self.done_label)
        db.addLayout(open_row)
        db.addWidget(self.files_list)
        self._done_box.hide()

        pane = QWidget()
        v = QVBoxLayout(pane)
        v.setContentsMargins(12, 14, 16, 12)
        v.setSpacing(6)
        v.addWidget(section_label("Export"))
        v.addWidget(
            muted_label(
                "Every export computes the results again from today's data, so corrections "
                "made since a result was kept are in the files."
            )
        )
        v.addSpacing(4)
        v.addWidget(QLabel("<b>Files</b>"))
        v.addLayout(grid)
        v.addWidget(self.files_preview)
        v.addSpacing(4)
        v.addWidget(QLabel("<b>Into the folder</b>"))
        v.addLayout(folder_row)
        v.addSpacing(4)
        v.addWidget(QLabel("<b>Confidentiality</b>"))
        v.addWidget(self.personal_check)
        v.addWidget(self.personal_note)
        v.addWidget(self.comments_check)
        v.addWidget(self.comments_note)
        v.addSpacing(4)
        v.addWidget(QLabel("<b>Before you export</b>"))
        v.addWidget(self.warnings_label)
        v.addSpacing(6)
        v.addWidget(self.export_button)
        v.addWidget(self._progress_box)
        v.addWidget(self._done_box)
        v.addStretch(1)
        self._export_scroll = QScrollArea()
        self._export_scroll.setObjectName("exportPane")
        self._export_scroll.setWidgetResizable(True)
        self._export_scroll.setFrameShape(QFrame.Shape.NoFrame)
        self._export_scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self._export_scroll.setWidget(pane)
        self._export_scroll.setMinimumWidth(300)
        pane.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Preferred)

    def _connect_signals(self) -> None:
        self.model.order_changed.connect(self._on_model_order_changed)
        self.model.title_edited.connect(self._on_model_title_edited)
        self.list.selectionModel().currentChanged.connect(self._on_list_current_changed)
        self.list.delete_requested.connect(self._on_remove_button_clicked)
        self.up_button.clicked.connect(lambda: self._move_current(-1))
        self.down_button.clicked.connect(lambda: self._move_current(+1))
        self.remove_button.clicked.connect(self._on_remove_button_clicked)
        self.title_edit.editingFinished.connect(self._on_title_edit_finished)
        self.finding_edit.editing_finished.connect(self._on_finding_edit_finished)
        self.finding_edit.textChanged.connect(self._on_finding_edit_text_changed)
        self.chart_combo.activated.connect(self._on_chart_combo_activated)
        for check in self.format_checks.values():
            check.toggled.connect(self._on_format_toggled)
        self.folder_button.clicked.connect(self._on_folder_button_clicked)
        self.personal_check.toggled.connect(self._on_privacy_toggled)
        self.comments_check.toggled.connect(self._on_privacy_toggled)
        self.export_button.clicked.connect(self.export)
        self.cancel_button.clicked.connect(self.cancel_export)
        self.open_folder_button.clicked.connect(self.open_folder)

    # ------------------------------------------------------------------ data
    @property
    def project(self) -> Any:
        return self._context.project

    def current_item(self) -> outline.OutlineItem | None:
        if self._current_id is None:
            return None
        row = self.model.row_of(self._current_id)
        return self.model.item_at(row)

    def select_row(self, row: int) -> None:
        index = self.model.index(row, 0)
        if index.isValid():
            self.list.setCurrentIndex(index)

    def select_item(self, item_id: int) -> bool:
        row = self.model.row_of(item_id)
        if row < 0:
            return False
        self.select_row(row)
        return True

    def warning_rows(self) -> list[int]:
        """Rows that show the no-finding marker (for tests and screen readers)."""
        return [
            r
            for r in range(self.model.rowCount())
            if self.model.data(self.model.index(r, 0), WARNING_ROLE)
        ]

    def _reload(self) -> None:
        """Show the outline as stored, keeping the selected item when it is still there."""
        items = outline.items(self.project)
        keep = self._current_id
        previous_row = self.model.row_of(keep) if keep is not None else -1
        self._filling = True
        try:
            self.model.set_items(items)
            row = self.model.row_of(keep) if keep is not None else -1
            if row < 0 and items:
                # The selected item went away (removed): select the one now in its place.
                row = min(max(previous_row, 0), len(items) - 1)
            if row >= 0:
                self.list.setCurrentIndex(self.model.index(row, 0))
        finally:
            self._filling = False
        new_id = self.model.item_at(row).id if row >= 0 else None
        changed = new_id != self._current_id
        self._current_id = new_id
        has = bool(items)
        self.list.setVisible(has)
        self.empty_label.setVisible(not has)
        for button in (self.up_button, self.down_button, self.remove_button):
            button.setEnabled(has)
        charts = sum(1 for it in items if it.chart)
        missing = sum(1 for it in items if needs_finding(it))
        text = f"{len(items)} result{'s' if len(items) != 1 else ''}, " + (
            "1 as a chart" if charts == 1 else f"{charts} as charts"
        )
        if missing:
            text += f"; {missing} chart{'s' if missing != 1 else ''} without a finding"
        self.count_label.setText(text if has else "")
        self._fill_details(refresh_preview=changed)
        self._update_export_state()

    # ------------------------------------------------------------------ project changes
    def project_changed(self, changes: Changes) -> None:
        if changes.outline:
            self._reload()
        elif changes.codebook or changes.ledger or changes.structure or changes.settings:
            # Numbers (and what is personal data) may have changed: recompute the preview.
            self._update_export_state()
            self._request_preview()

    def shutdown(self) -> None:
        # Keep a finding being typed when the evaluator moves to another node.
        self._on_finding_edit_finished()
        # A running export carries on; its outcome goes to the status bar (see export()).
        self._shut = True
        self.list.selectionModel().currentChanged.disconnect(self._on_list_current_changed)

    # ------------------------------------------------------------------ edits
    def _run_edit(self, fn: Callable[[Any], Any], label: str) -> None:
        """Run one core edit on the writer thread; the project's notice refreshes the view."""
        project = self.project
        self.item_error.hide()
        self._context.runner.run(
            lambda _progress: fn(project),
            on_failure=self._on_edit_failed,
            writes=True,
            label=label,
        )

    def _on_edit_failed(self, exc: BaseException) -> None:
        from desktopapp.errors import message_for, show_error

        text, details = message_for(exc)
        if details:
            show_error(self, exc)
        else:
            self.item_error.setText(text)
            self.item_error.show()
        self._reload()  # show what is stored, not the edit that failed

    def _on_model_order_changed(self, ids: list[int]) -> None:
        if self._filling:
            return
        self._run_edit(lambda p: outline.reorder(p, ids), "Reordering the report outline…")

    def _on_model_title_edited(self, item_id: int, title: str) -> None:
        self._run_edit(lambda p: outline.rename(p, item_id, title), "Renaming…")

    def _move_current(self, step: int) -> None:
        row = self.list.currentIndex().row()
        target = row + step
        if row < 0 or not 0 <= target < self.model.rowCount():
            return
        # moveRows puts rows *before* the destination row.
        destination = target if step < 0 else target + 1
        self.model.moveRows(QModelIndex(), row, 1, QModelIndex(), destination)

    def _on_remove_button_clicked(self) -> None:
        item = self.current_item()
        if item is None:
            return
        item_id = item.id
        self._run_edit(lambda p: outline.remove(p, item_id), "Removing…")
        self._message(f"Removed “{item.title}” from the report. Edit ▸ Undo puts it back.")

    def _on_title_edit_finished(self) -> None:
        item = self.current_item()
        title = " ".join(self.title_edit.text().split())
        if self._filling or item is None or title == item.title:
            return
        if not title:
            self.title_edit.setText(item.title)
            return
        item_id = item.id
        self._shown_title = title
        self._run_edit(lambda p: outline.rename(p, item_id, title), "Renaming…")

    def _on_finding_edit_finished(self) -> None:
        item = self.current_item()
        text = self.finding_edit.toPlainText().strip()
        if self._filling or item is None or text == item.finding:
            return
        item_id = item.id
        self._shown_finding = text
        self._run_edit(lambda p: outline.set_finding(p, item_id, text), "Saving the finding…")

    def _on_finding_edit_text_changed(self) -> None:
        item = self.current_item()
        if item is None:
            return
        typed = self.finding_edit.toPlainText().strip()
        self.finding_warning.setVisible(bool(item.chart) and not typed)

    def _on_chart_combo_activated(self, _index: int) -> None:
        item = self.current_item()
        if self._filling or item is None:
            return
        chart = self.chart_combo.currentData()
        if chart == item.chart:
            return
        item_id = item.id
        self._run_edit(lambda p: outline.set_chart(p, item_id, chart), "Changing the chart…")

    # ------------------------------------------------------------------ details
    def _on_list_current_changed(self, current: QModelIndex, _previous: QModelIndex) -> None:
        if self._filling:
            return
        item = self.model.item_at(current.row()) if current.isValid() else None
        new_id = item.id if item is not None else None
        if new_id == self._current_id:
            return
        self._current_id = new_id
        self._fill_details(refresh_preview=True)

    def _fill_details(self, refresh_preview: bool = False) -> None:
        item = self.current_item()
        self._item_stack.setCurrentWidget(self._details if item is not None else self.no_selection)
        row = self.model.row_of(item.id) if item is not None else -1
        self.up_button.setEnabled(row > 0)
        self.down_button.setEnabled(0 <= row < self.model.rowCount() - 1)
        self.remove_button.setEnabled(item is not None)
        if item is None:
            self._shown_title = self._shown_finding = ""
            return
        self._filling = True
        try:
            # Keep what the evaluator is typing; replace only what still shows the old value.
            if refresh_preview or self.title_edit.text() == self._shown_title:
                self.title_edit.setText(item.title)
                self.title_edit.setCursorPosition(0)  # show the start of a long title
                self._shown_title = item.title
            finding_typed = self.finding_edit.toPlainText().strip()
            if refresh_preview or finding_typed == self._shown_finding:
                if finding_typed != item.finding:
                    self.finding_edit.setPlainText(item.finding)
                self._shown_finding = item.finding
            self.finding_warning.setVisible(
                bool(item.chart) and not self.finding_edit.toPlainText().strip()
            )
            self._fill_chart_combo(item, self._result if not refresh_preview else None)
            self.source_label.setText(self._source_text(item))
        finally:
            self._filling = False
        if refresh_preview or self._result is None or self._preview_key != _preview_key(item):
            self._request_preview()

    def _source_text(self, item: outline.OutlineItem) -> str:
        from core.tables.build import resolve_wave

        spec = item.spec
        try:
            wave = f"wave {resolve_wave(self.project, spec).label}"
        except Exception:  # noqa: BLE001 - the preview says why it cannot be computed
            wave = f"wave {spec.wave}" if spec.wave else "the latest wave"
        text = f"{spec.variable}, {wave}"
        if spec.by:
            text += f", broken down by {' and '.join(spec.by)}"
        if spec.compare_waves:
            text += f", compared with {', '.join(spec.compare_waves)}"
        return text

    def _fill_chart_combo(self, item: outline.OutlineItem, result: TableResult | None) -> None:
        from core.charts import chart_label, chart_types

        self.chart_combo.clear()
        self.chart_combo.addItem(TABLE_ONLY, None)
        types: list[str] = []
        if result is not None:
            try:
                types = chart_types(result)
            except Exception:  # noqa: BLE001 - a result with nothing to draw offers no chart
                types = []
        if item.chart and item.chart not in types:
            types = [item.chart, *types]
        for t in types:
            self.chart_combo.addItem(f"Chart: {chart_label(t)}", t)
        self.chart_combo.setCurrentIndex(max(0, self.chart_combo.findData(item.chart)))

    # ------------------------------------------------------------------ preview
    _preview_key: tuple[Any, ...] | None = None

    def _request_preview(self) -> None:
        item = self.current_item()
        if item is None:
            return
        project = self.project
        self.preview_message.setText("Computing…")
        self.preview_stack.setCurrentWidget(self.preview_message)

        def work(_progress: Any) -> tuple[int, TableResult]:
            return item.id, outline.result_for(project, item)

        self._context.runner.run(
            work,
            on_success=self._show_preview,
            on_failure=self._on_preview_failed,
            key=f"outline-preview:{id(self)}",
            show_progress=False,
        )

    def _show_preview(self, payload: tuple[int, TableResult]) -> None:
        item_id, result = payload
        item = self.current_item()
        if item is None or item.id != item_id:
            return
        from core.charts import draw

        self._result = result
        self._preview_key = _preview_key(item)
        self.table_model.set_result(result)
        self.preview_table.resizeColumnsToContents()
        self._filling = True
        try:
            self._fill_chart_combo(item, result)
        finally:
            self._filling = False
        chart = item.chart
        if chart:
            self.preview_chart.set_drawer(lambda fig: draw(result, fig, chart))
            self.preview_tabs.setTabEnabled(0, True)
            self.preview_tabs.setCurrentIndex(0)
        else:
            self.preview_chart.set_drawer(None, "Kept as a table: no chart in the report.")
            self.preview_tabs.setTabEnabled(0, False)
            self.preview_tabs.setCurrentIndex(1)
        self.preview_stack.setCurrentWidget(self.preview_tabs)
        base = getattr(result, "base", "") or ""
        self.base_label.setText(str(base))

    def _on_preview_failed(self, exc: BaseException) -> None:
        from desktopapp.errors import message_for

        self._result = None
        self.table_model.set_result(None)
        text = message_for(exc)[0]
        self.preview_message.setText(
            f"This result cannot be computed from today's data, so an export would leave it "
            f"out. {text}"
        )
        self.preview_stack.setCurrentWidget(self.preview_message)
        self.base_label.setText("")

    # ------------------------------------------------------------------ export settings
    def chosen_formats(self) -> list[str]:
        return [fmt for fmt, _ in FORMATS if self.format_checks[fmt].isChecked()]

    def set_formats(self, formats: list[str] | tuple[str, ...]) -> None:
        for fmt, check in self.format_checks.items():
            check.setChecked(fmt in formats)

    def folder(self) -> Path:
        return Path(self.folder_edit.text())

    def set_folder(self, folder: str | Path) -> None:
        self.folder_edit.setText(str(folder))
        self.folder_edit.setToolTip(str(folder))
        self._save_folder(str(folder))
        self._update_export_state()

    def _settings(self) -> Any:
        if self._context.settings is not None:
            return self._context.settings
        from desktopapp import app_settings

        return app_settings()

    def _restore_settings(self) -> None:
        settings = self._settings()
        stored = settings.value(FORMATS_KEY)
        formats = (
            [f for f in str(stored).split(",") if f]
            if stored is not None
            else list(DEFAULT_FORMATS)
        )
        for fmt, check in self.format_checks.items():
            check.blockSignals(True)
            check.setChecked(fmt in formats)
            check.blockSignals(False)
        folder = self._folders().get(str(self.project.path))
        if not folder:
            folder = str(self.project.path.parent / f"{self.project.path.stem} report")
        self.folder_edit.setText(folder)
        self.folder_edit.setToolTip(folder)
        # The confidentiality switches always start off: nothing personal leaves by accident.
        self.personal_check.setChecked(False)
        self.comments_check.setChecked(False)
        self._update_cautions()

    def _folders(self) -> dict[str, str]:
        raw = self._settings().value(FOLDERS_KEY)
        try:
            data = json.loads(str(raw)) if raw else {}
        except ValueError:
            data = {}
        return data if isinstance(data, dict) else {}

    def _save_folder(self, folder: str) -> None:
        folders = self._folders()
        folders[str(self.project.path)] = folder
        settings = self._settings()
        settings.setValue(FOLDERS_KEY, json.dumps(folders))
        settings.sync()

    def _on_format_toggled(self, _checked: bool) -> None:
        settings = self._settings()
        settings.setValue(FORMATS_KEY, ",".join(self.chosen_formats()))
        settings.sync()
        self._update_export_state()

    def _ask_folder(self, start: str) -> str:
        return QFileDialog.getExistingDirectory(self, "Export the report into this folder", start)

    def _on_folder_button_clicked(self) -> None:
        start = self.folder_edit.text()
        if not Path(start).exists():
            start = str(self.project.path.parent)
        chosen = self.ask_folder(start)
        if chosen:
            self.set_folder(chosen)

    def _on_privacy_toggled(self, _checked: bool) -> None:
        self._update_cautions()
        self._update_export_state()

    def _update_cautions(self) -> None:
        for check, note in (
            (self.personal_check, self.personal_note),
            (self.comments_check, self.comments_note),
        ):
            if check.isChecked():
                note.setStyleSheet(f"QLabel {{ color: {CAUTION_COLOUR}; }}")
            else:
                note.setStyleSheet("")
                note.setForegroundRole(QPalette.ColorRole.PlaceholderText)
        self.personal_note.setText(
            "On: identifiers and personal data are exported, and respondents are named by "
            "identifier. Share these files only with people allowed to see who answered what."
            if self.personal_check.isChecked()
            else PERSONAL_CAUTION
        )
        self.comments_note.setText(
            "On: comments are exported as written, and the report carries a caution. Read "
            "them first: a comment can identify the person who wrote it."
            if self.comments_check.isChecked()
            else COMMENTS_CAUTION
        )

    def warnings(self) -> list[str]:
        """What the core would warn about if the outline were exported now."""
        try:
            return check_outline(
                self.project,
                include_personal=self.personal_check.isChecked(),
                include_comments=self.comments_check.isChecked(),
            )
        except Exception as exc:  # noqa: BLE001 - shown in words, never a traceback
            from desktopapp.errors import message_for

            return [message_for(exc)[0]]

    def _update_export_state(self) -> None:
        items = self.model.items()
        formats = self.chosen_formats()
        warnings = self.warnings() if items else []
        if not items:
            self.warnings_label.setText(
                "<span>Keep at least one table or chart for the report to export.</span>"
            )
        elif warnings:
            self.warnings_label.setText(
                "".join(
                    f"<p style='margin:0 0 4px 0; color:{CAUTION_COLOUR}'>⚠ {escape_rich(w)}</p>"
                    for w in warnings
                )
            )
        else:
            self.warnings_label.setText(
                "Nothing to check: every kept chart has a finding sentence and nothing will "
                "be left out."
            )
        self.warnings_label.setToolTip("")
        self.shown_warnings = warnings
        names: list[str] = []
        if items and formats:
            try:
                names = file_names(self.project, formats)
            except Exception:  # noqa: BLE001 - only a preview
                names = []
        if not formats:
            self.files_preview.setText("Choose at least one kind of file.")
        elif names:
            head = ", ".join(names[:4])
            more = f" and {len(names) - 4} more" if len(names) > 4 else ""
            self.files_preview.setText(
                f"Writes {len(names)} file{'s' if len(names) != 1 else ''}: {head}{more}. "
                "Files of the same names in the folder are replaced."
            )
        else:
            self.files_preview.setText("")
        self.export_button.setEnabled(bool(items) and bool(formats) and not self.exporting)

    # ------------------------------------------------------------------ export
    def export(self) -> Any:
        """Export the outline on a worker; returns the runner's job (None if not started)."""
        if self.exporting:
            return None
        self._on_finding_edit_finished()  # a finding still being typed belongs in the files
        formats = self.chosen_formats()
        if not formats or not self.model.rowCount():
            return None
        folder = self.folder()
        project = self.project
        personal = self.personal_check.isChecked()
        comments = self.comments_check.isChecked()

        def work(progress: Any) -> Any:
            self._export_progress = progress  # lets Cancel reach the work (thread-safe)
            return export_outline(
                project,
                folder,
                formats,
                progress,
                include_personal=personal,
                include_comments=comments,
            )

        self.exporting = True
        self.export_button.setEnabled(False)
        self._done_box.hide()
        self.progress_bar.setRange(0, 0)
        self.progress_label.setText("Starting the export…")
        self.cancel_button.setEnabled(True)
        self._progress_box.show()
        self._save_folder(str(folder))
        show_message = self._context.show_message or (lambda _text: None)

        def gone() -> bool:
            # The evaluator moved to another node while the export ran.
            import shiboken6

            return not shiboken6.isValid(self) or self._shut

        def on_success(files: Any) -> None:
            if gone():
                show_message(f"Exported the report ({len(files)} files) into {folder}.")
            else:
                self._on_export_done(files)

        def on_failure(exc: BaseException) -> None:
            from desktopapp.errors import message_for

            if gone():
                show_message("The export did not finish. " + message_for(exc)[0])
            else:
                self._on_export_failed(exc)

        def on_cancelled() -> None:
            if not gone():
                self._on_export_cancelled()

        job = self._context.runner.run(
            work,
            on_success=on_success,
            on_failure=on_failure,
            on_cancelled=on_cancelled,
            label="Exporting the report…",
            show_progress=False,
        )
        if job.running:
            job.progress_changed.connect(self._on_export_progress)
        return job

    def cancel_export(self) -> None:
        if self._export_progress is not None:
            self._export_progress.cancel()
            self.cancel_button.setEnabled(False)
            self.progress_label.setText("Cancelling…")

    def _on_export_progress(self, done: int, total: int, label: str) -> None:
        if total > 0:
            self.progress_bar.setRange(0, total)
            self.progress_bar.setValue(min(done, total))
        if label and self._export_progress is not None and not self._export_progress.cancelled:
            self.progress_label.setText(label)

    def _export_finished(self) -> None:
        self.exporting = False
        self._export_progress = None
        self._progress_box.hide()
        self._update_export_state()

    def _on_export_done(self, files: Any) -> None:
        self._export_finished()
        self.last_files = [Path(f) for f in files]
        self.last_warnings = list(getattr(files, "warnings", []) or [])
        folder = self.folder()
        text = (
            f"<b>Exported {len(self.last_files)} file"
            f"{'s' if len(self.last_files) != 1 else ''}</b> into {escape_rich(str(folder))}."
        )
        # Warnings already listed under "Before you export" are not repeated.
        news = [w for w in self.last_warnings if _prospective(w) not in self.shown_warnings]
        if news:
            text += "".join(
                f"<br><span style='color:{CAUTION_COLOUR}'>⚠ {escape_rich(w)}</span>" for w in news
            )
        self.done_label.setText(text)
        self.files_list.clear()
        self.files_list.show()
        for path in self.last_files:
            self.files_list.addItem(path.name)
        self.open_folder_button.setEnabled(True)
        self._done_box.show()
        self._message(f"Exported the report into {folder}.")
        self._scroll_to_result()

    def _scroll_to_result(self) -> None:
        from PySide6.QtWidgets import QApplication

        QApplication.processEvents()  # lay the result out before scrolling to it
        self._export_scroll.ensureWidgetVisible(self.files_list, 0, 12)

    def _on_export_failed(self, exc: BaseException) -> None:
        from desktopapp.errors import message_for, show_error

        self._export_finished()
        text, details = message_for(exc)
        if details:
            show_error(self, exc)
            return
        self.done_label.setText(
            f"<span style='color:{CAUTION_COLOUR}'>The export did not finish. "
            f"{escape_rich(text)}</span>"
        )
        self.files_list.clear()
        self.files_list.hide()
        self.open_folder_button.setEnabled(False)
        self._done_box.show()
        self._scroll_to_result()
        self.last_message = text

    def _on_export_cancelled(self) -> None:
        self._export_finished()
        self.last_files = []
        self.done_label.setText("Export cancelled. Nothing was written to the folder.")
        self.files_list.clear()
        self.files_list.hide()
        self.open_folder_button.setEnabled(False)
        self._done_box.show()
        self._message("Export cancelled. Nothing was written.")
        self._scroll_to_result()

    # ------------------------------------------------------------------ screenshots
    def prepare_screenshot(self) -> None:
        """For ``python -m desktopapp.screenshots``: an outline worth a picture.

        On an empty outline (the demo as built), keep what an evaluator typically keeps from
        the tables view, with finding sentences worked out from the numbers themselves, and
        one chart left without a finding so the warning shows.
        """
        from PySide6.QtWidgets import QApplication

        from core.tables.spec import TableSpec

        project = self.project
        if not outline.items(project):
            names: set[str] = set()
            for inst in project.instruments():
                codebook = project.codebook(inst.id)
                names |= {v.name for v in codebook} | set(codebook.groups())
            wanted = [
                ("overall_satisfaction", "column", ()),
                ("agree", "diverging", ()),
                ("track", None, ("cohort",)),
                ("age", "histogram", ()),
            ]
            for name, chart, by in wanted:
                if name not in names:
                    continue
                spec = TableSpec(name, chart=chart, by=by)
                try:
                    finding = _example_finding(outline.compute(project, spec))
                    outline.keep(project, spec, finding=finding if chart != "diverging" else "")
                except Exception:  # noqa: BLE001 - a picture with fewer items is still fine
                    continue
            self._reload()
            self.select_row(0)
        QApplication.processEvents()  # lay the view out before drawing the preview
        self.preview_chart.render_now()

    def screenshot_states(self) -> list[tuple[str, Callable[[], None]]]:
        """After an export: the files written and Open folder."""

        def exported() -> None:
            self.set_formats(["xlsx", "docx", "html", "csv"])
            self.export()

        return [("outline-exported", exported)]

    def open_folder(self) -> QUrl:
        url = QUrl.fromLocalFile(str(self.folder()))
        self.open_url(url)
        return url

    def _message(self, text: str) -> None:
        self.last_message = text
        if self._context.show_message is not None:
            self._context.show_message(text)


def _prospective(warning: str) -> str:
    # The core says "was left out" after an export and "will be left out" before one.
    return warning.replace(" was left out: ", " will be left out: ")


def _example_finding(result: TableResult) -> str:
    """A finding sentence read off a result's own numbers (screenshots of the demo)."""
    data = result.data
    if data.get("agree_pct") is not None and not isinstance(data["agree_pct"], dict):
        top = ", ".join(data.get("levels", [])[-2:]).lower().replace(", ", " or ")
        return f"{data['agree_pct']:.0f} % of those who answered chose {top}."
    stats = data.get("stats")
    if isinstance(stats, dict) and stats.get("median") is not None:
        return f"Half of those who answered gave {stats['median']:g} or less."
    return ""


def _preview_key(item: outline.OutlineItem) -> tuple[Any, ...]:
    # What the preview depends on: the title is drawn on the chart; the spec gives the numbers.
    return (item.id, item.title, json.dumps(item.spec.to_json(), sort_keys=True))
