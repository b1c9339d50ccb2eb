"""The tables node of a wave: pick a question, see its table and chart side by side.

The left pane lists what can be tabulated, in questionnaire order: single questions, and
question groups (a rating battery, a ranking, a choose-all question) as one selectable row
with their items beneath. Above the results sit an optional break-down (one or two
grouping questions) and the options that suit the chosen table; every change computes the
table again on a worker (a newer request drops an older one's result), then draws its chart
on a worker too, at the size of its pane, so the window only shows finished pixels.

The table is a ``QTableView`` over the result's display cells, so numbers are right-aligned
and formatted exactly as in every export. Its caption sits above, its base and notes below,
with a link to the matching section of the methods guide. "Keep for report" stores the
table's *specification* in the report outline with the evaluator's finding sentence; Copy
puts the table (HTML and tab-separated text) or the chart (a PNG and its caption) on the
clipboard, following which of the two has the focus.

A second tab, the gallery (``desktopapp.views.gallery_view``), draws many small charts at
once for scanning; clicking one opens it here.
"""

from __future__ import annotations

import textwrap
from collections.abc import Callable
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

from PySide6.QtCore import (
    QEvent,
    Qt,
    QTimer,
    QUrl,
    Signal,
)
from PySide6.QtGui import (
    QAction,
    QBrush,
    QColor,
    QDesktopServices,
    QFont,
    QKeySequence,
    QPalette,
    QStandardItem,
    QStandardItemModel,
)
from PySide6.QtWidgets import (
    QAbstractItemView,
    QApplication,
    QCheckBox,
    QComboBox,
    QFrame,
    QGridLayout,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QPushButton,
    QScrollArea,
    QSpinBox,
    QSplitter,
    QTableView,
    QTabWidget,
    QTreeWidgetItem,
    QVBoxLayout,
    QWidget,
)

from core.codebook import Codebook, Variable
from core.errors import PlaincountError
from core.kinds import Kind
from core.project import Changes
from core.tables.captions import group_title, short_title
from core.tables.result import Cell, TableResult
from core.tables.spec import TableSpec
from desktopapp.icons import kind_icon
from desktopapp.project_tree import NodeType, TreeNode
from desktopapp.views import ViewContext, muted_label, section_label
from desktopapp.widgets.question_list import (
    NAME_ROLE,
    filter_tree,
    named_items,
    question_tree,
    search_box,
    select_named,
)
from desktopapp.widgets.result_panel import (
    keep_copy_row,
    kept_message,
    put_chart_on_clipboard,
    put_table_on_clipboard,
)

NO_BREAKDOWN = "No break-down"
# Where the methods guide lives in a source checkout (the window links into it).
METHODS_GUIDE = Path(__file__).resolve().parents[2] / "docs" / "methods.md"
# The section of the methods guide that explains each table type (anchors are stable).
METHODS_ANCHORS = {
    "frequency": "frequency-tables",
    "descriptives": "descriptive-statistics",
    "crosstab": "cross-tabulations",
    "likert": "rating-scales",
    "battery": "rating-scales",
    "ranking": "rankings",
    "multiselect": "choose-all-that-apply",
}
UNSTABLE_TINT = QColor("#FFF1CC")  # a pale amber behind percentages of tiny groups
HEADER_WRAP = 16  # characters per header line: long answer labels wrap instead of widening
# The chart in the window is drawn at a high resolution for its size, so that its type (sized
# for slides) stays readable in a pane a third of the screen wide.
CHART_DPI = 110
CHART_MIN_WIDTH = 340

PERCENT_LABELS = {
    "row": "Within each group (row %)",
    "column": "Within each answer (column %)",
    "total": "Of everyone in the table (total %)",
}
TREATMENT_LABELS = {
    "available": "Count everyone who answered",
    "complete": "Only people who answered every question here",
    "impute": "Fill in missing answers (single imputation)",
    "show-missing": "Show missing answers as rows",
}
SORT_LABELS = {"level": "In answer order", "frequency": "Most frequent first"}
SD_LABELS = {
    "population": "Everyone described (divide by n)",
    "sample": "A sample of a larger group (divide by n − 1)",
}
BORDA_LABELS = {
    "zero": "Unranked options score 0",
    "average": "Unranked options share the points left",
    "modified": "Partial rankings give fewer points",
}
MEAN_CAUTION = (
    "A mean of answer codes treats the answers as equally spaced, which they are not; the "
    "percentages and the median answer describe a rating scale better."
)
TESTS_CAUTION = (
    "A test only makes sense when the respondents are a sample of a larger group; for "
    "everyone in the program the differences shown are the actual differences."
)
INTERVALS_TIP = (
    "Show a 95% range beside each percentage when the wave is marked as a sample of a larger "
    "group (set it on the wave). A wave sent to everyone has no sampling error: the notes "
    "then say so instead."
)
SUPPRESSION_OFF_CAUTION = (
    "Small counts are shown: they can identify people. Turn hiding back on before sharing."
)


def register(registry: Any) -> None:
    registry.add(NodeType.TABLES, TabulationView)


# ---------------------------------------------------------------------- what can be tabulated
TABULATED_KINDS = (
    Kind.NUMERIC,
    Kind.CATEGORICAL,
    Kind.LIKERT,
    Kind.ORDINAL,
    Kind.RANKING,
    Kind.MULTISELECT,
)


@dataclass(frozen=True)
class Entry:
    """One row of the question list: a single question or a question group.

    ``name`` is what a table spec asks for (a variable name or a group name); ``items``
    are a group's members, shown beneath it; ``family`` is the table family
    (``core.tables.build.table_kind``): numeric, categorical, likert, battery, ranking,
    multiselect.
    """

    name: str
    label: str
    question: str
    kind: Kind
    family: str
    items: tuple[Variable, ...] = ()

    @property
    def is_group(self) -> bool:
        return bool(self.items)


def tabulation_entries(codebook: Codebook) -> list[Entry]:
    """What the question list shows, in questionnaire order (a group where its first item is).

    Identifiers, dates and open comments are left out: they have no table.
    """
    from core.tables.build import table_kind

    out: list[Entry] = []
    seen_groups: set[str] = set()
    groups = codebook.groups()
    for var in codebook:
        if var.kind not in TABULATED_KINDS:
            continue
        if var.group and var.group in groups:
            if var.group in seen_groups:
                continue
            seen_groups.add(var.group)
            members = tuple(m for m in groups[var.group] if m.kind in TABULATED_KINDS)
            try:
                family, _ = table_kind(codebook, var.group)
            except PlaincountError:
                family = ""  # a group of mixed kinds: its items are tabulated one by one
            title = group_title(var.group, [m.question for m in members])
            if family:
                out.append(Entry(var.group, title, title, var.kind, family, members))
                continue
        try:
            family, _ = table_kind(codebook, var.name)
        except PlaincountError:
            continue
        if family in ("ranking",) or (family == "multiselect" and not var.delimiter):
            continue  # one option of a group question: tabulated through its group
        out.append(Entry(var.name, var.name, var.question, var.kind, family))
    return out


def breakdown_candidates(codebook: Codebook, exclude: set[str]) -> list[Variable]:
    """Questions a table can be broken down by: those with a short list of answers."""
    return [v for v in codebook if v.kind.has_levels and v.name not in exclude]


def methods_url(table_type: str) -> QUrl:
    """The methods guide, opened at the section explaining ``table_type``."""
    url = QUrl.fromLocalFile(str(METHODS_GUIDE))
    anchor = METHODS_ANCHORS.get(table_type)
    if anchor:
        url.setFragment(anchor)
    return url


# ---------------------------------------------------------------------- clipboard
# ---------------------------------------------------------------------- the table model
class ResultTableModel(QStandardItemModel):
    """The display table of a :class:`TableResult`: one item per result cell.

    The cells are filled in once per result (text, alignment, font, colours, tooltips), so
    painting and resizing the table never call back into Python. That is also why this is
    not a Python ``data()`` model: this PySide6 release loses a reference to ``None``
    whenever ``None`` crosses between Python and Qt, and a ``data()`` written in Python
    answers ``None`` for most roles of every cell at every repaint.
    """

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._result: TableResult | None = None
        self._min_cell = 5
        self._numeric_cols: set[int] = set()

    def set_result(self, result: TableResult | None) -> None:
        self.clear()
        self._result = result
        self._numeric_cols = set()
        if result is None:
            return
        self._min_cell = int(result.data.get("min_cell", 5) or 0)
        # A column of numbers keeps all its cells right-aligned, also a text cell in it
        # (the modes of a statistics table), so the column reads as one.
        for row in result.rows:
            for c, cell in enumerate(row):
                if c > 0 and (cell.numeric or cell.suppressed):
                    self._numeric_cols.add(c)
        self.setColumnCount(len(result.columns))
        left = Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter
        right = Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter
        for c, name in enumerate(result.columns):
            header = QStandardItem(
                textwrap.fill(str(name), HEADER_WRAP, break_long_words=False) or str(name)
            )
            header.setToolTip(str(name))
            header.setTextAlignment(right if c in self._numeric_cols else left)
            self.setHorizontalHeaderItem(c, header)
        muted = QBrush(QApplication.palette().color(QPalette.ColorRole.PlaceholderText))
        tint = QBrush(UNSTABLE_TINT)
        for r, row in enumerate(result.rows):
            role = result.row_roles[r] if r < len(result.row_roles) else "level"
            font = None
            if role in ("total", "missing"):
                font = QFont()
                font.setBold(role == "total")
                font.setItalic(role == "missing")
            items = []
            for c, cell in enumerate(row):
                item = QStandardItem(cell.display)
                item.setEditable(False)
                item.setTextAlignment(right if c in self._numeric_cols else left)
                if font is not None:
                    item.setFont(font)
                if cell.suppressed:
                    item.setForeground(muted)
                if cell.flag == "unstable":
                    item.setBackground(tint)
                tip = self._tooltip(cell)
                if tip:
                    item.setToolTip(tip)
                items.append(item)
            self.appendRow(items)

    def result(self) -> TableResult | None:
        return self._result

    def cell(self, row: int, column: int) -> Cell | None:
        if self._result is None or row >= len(self._result.rows):
            return None
        cells = self._result.rows[row]
        return cells[column] if column < len(cells) else None

    def _tooltip(self, cell: Cell) -> str:
        if cell.suppressed:
            if cell.display.startswith("<"):
                return f"Hidden: fewer than {self._min_cell} people, who could be recognised."
            return "Hidden so that a small count cannot be worked out from the totals."
        if cell.flag == "unstable":
            return "Based on few people: one or two answers move this percentage a lot."
        return ""

    def has_unstable(self) -> bool:
        return self._result is not None and any(
            c.flag == "unstable" for row in self._result.rows for c in row
        )


class ResultTableView(QTableView):
    """The table; Ctrl+C asks the view to copy the whole table, not one cell."""

    copy_requested = Signal()

    def keyPressEvent(self, event: Any) -> None:  # noqa: N802 - Qt override
        if event.matches(QKeySequence.StandardKey.Copy):
            self.copy_requested.emit()
            event.accept()
            return
        super().keyPressEvent(event)


# ---------------------------------------------------------------------- the view
class TabulationView(QWidget):
    """Question list on the left; options, table and chart on the right; a gallery tab."""

    result_changed = Signal(object)  # the TableResult now shown (None when cleared)

    def __init__(self, context: ViewContext, node: TreeNode, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("tabulationView")
        self._context = context
        self.node = node
        self.instrument_id: int = node.instrument_id  # type: ignore[assignment]
        self.wave_id: int = node.wave_id  # type: ignore[assignment]
        self._result: TableResult | None = None
        self._chart_type: str | None = None
        self._chart_choice: str | None = None  # what the evaluator picked, kept if it fits
        self._filling = False
        self._last_focus = "table"
        self._visible_options: set[str] = set()
        self._entries: list[Entry] = []
        self.last_message = ""
        self.error_text = ""
        # Replaced in tests so no browser opens.
        self.open_url: Callable[[QUrl], Any] = QDesktopServices.openUrl

        self._build_picker()
        self._build_results()
        from desktopapp.views.gallery_view import GalleryWidget

        self.gallery = GalleryWidget(context, self.instrument_id, self.wave_id)
        self.tabs = QTabWidget()
        self.tabs.setObjectName("tabulationTabs")
        self.tabs.setDocumentMode(True)
        self.tabs.addTab(self._results, "Table and chart")
        self.tabs.addTab(self.gallery, "Gallery")

        self.splitter = QSplitter(Qt.Orientation.Horizontal)
        self.splitter.addWidget(self._picker)
        self.splitter.addWidget(self.tabs)
        self.splitter.setStretchFactor(0, 0)
        self.splitter.setStretchFactor(1, 1)
        self.splitter.setSizes([230, 1000])
        self.splitter.setChildrenCollapsible(False)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.splitter)

        self.copy_action = QAction("Copy", self)
        self.copy_action.setObjectName("copyResultAction")
        self.copy_action.setShortcut(QKeySequence(QKeySequence.StandardKey.Copy))
        self.copy_action.setShortcutContext(Qt.ShortcutContext.WidgetWithChildrenShortcut)
        self._results.addAction(self.copy_action)

        self._connect_signals()
        self._fill_list()
        self._fill_breakdowns()
        self._update_option_visibility()
        first = self._first_selectable()
        if first is not None:
            self.variable_tree.setCurrentItem(first)
        else:
            self._show_empty("This wave has no questions that can be tabulated.")

    # ------------------------------------------------------------------ building
    def _build_picker(self) -> None:
        self.search_edit = search_box("tabulationSearch", "Find a question by name or wording")
        self.variable_tree = question_tree("tabulationVariables")

        self.by_combo = QComboBox()
        self.by_combo.setObjectName("breakdownCombo")
        self.by2_combo = QComboBox()
        self.by2_combo.setObjectName("breakdown2Combo")
        for combo in (self.by_combo, self.by2_combo):
            combo.setSizeAdjustPolicy(
                QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon
            )
            combo.setMinimumContentsLength(12)

        self._picker = QWidget()
        self._picker.setMinimumWidth(200)
        lv = QVBoxLayout(self._picker)
        lv.setContentsMargins(12, 12, 6, 12)
        lv.addWidget(section_label("Question"))
        lv.addWidget(self.search_edit)
        lv.addWidget(self.variable_tree, 1)
        self.group_button = QPushButton("Group into categories…")
        self.group_button.setObjectName("groupButton")
        self.group_button.setToolTip("Make a new variable of ranges, such as age groups.")
        self.group_button.clicked.connect(self.open_grouping)
        lv.addWidget(self.group_button)
        lv.addSpacing(6)
        lv.addWidget(section_label("Break down by"))
        lv.addWidget(self.by_combo)
        lv.addWidget(QLabel("and then by"))
        lv.addWidget(self.by2_combo)

    def _build_results(self) -> None:
        # ---- options: every control is always in the same place; those that do not
        # apply to the chosen table are hidden.
        self.percent_combo = self._combo("percentCombo", PERCENT_LABELS)
        self.treatment_combo = self._combo("treatmentCombo", TREATMENT_LABELS)
        self.chart_combo = QComboBox()
        self.chart_combo.setObjectName("chartCombo")
        self.sort_combo = self._combo("sortCombo", SORT_LABELS)
        self.sd_combo = self._combo("sdCombo", SD_LABELS)
        self.borda_combo = self._combo("bordaCombo", BORDA_LABELS)
        self.min_cell_spin = QSpinBox()
        self.min_cell_spin.setObjectName("minCellSpin")
        self.min_cell_spin.setRange(0, 100)
        self.min_cell_spin.setSpecialValueText("Off")
        self.min_cell_spin.setToolTip(
            "Counts from 1 up to this number minus one are hidden so that small groups of "
            "people cannot be recognised. 0 turns hiding off."
        )
        self.min_cell_spin.setValue(self._project_min_cell())
        self.mean_check = QCheckBox("Show a mean of answer codes")
        self.mean_check.setObjectName("meanCheck")
        self.mean_check.setToolTip(MEAN_CAUTION)
        self.tests_check = QCheckBox("Test the differences (sampled data)")
        self.tests_check.setObjectName("testsCheck")
        self.tests_check.setToolTip(TESTS_CAUTION)
        self.intervals_check = QCheckBox("Margins of error")
        self.intervals_check.setObjectName("intervalsCheck")
        self.intervals_check.setToolTip(INTERVALS_TIP)
        self.option_caution = QLabel("")
        self.option_caution.setObjectName("optionCaution")
        self.option_caution.setWordWrap(True)
        self.option_caution.setStyleSheet("QLabel { color: #8a4b00; }")
        self.option_caution.hide()

        grid = QGridLayout()
        grid.setContentsMargins(0, 0, 0, 0)
        grid.setHorizontalSpacing(8)
        grid.setVerticalSpacing(4)
        self._option_rows: dict[str, tuple[QLabel, QWidget]] = {}
        # The options every table has come first; of the four below them at most one
        # applies to any one table, so they share a place.
        placed = [
            ("treatment", "Missing answers", self.treatment_combo, 0, 0),
            ("chart", "Chart", self.chart_combo, 0, 2),
            ("min_cell", "Hide counts below", self.min_cell_spin, 0, 4),
            ("percent", "Percentages", self.percent_combo, 1, 0),
            ("sort", "Order", self.sort_combo, 1, 0),
            ("sd", "Standard deviation", self.sd_combo, 1, 0),
            ("borda", "Partial rankings", self.borda_combo, 1, 0),
        ]
        for key, text, widget, row, col in placed:
            label = QLabel(text)
            label.setBuddy(widget)
            grid.addWidget(label, row, col)
            grid.addWidget(widget, row, col + 1)
            self._option_rows[key] = (label, widget)
        checks = QHBoxLayout()
        checks.addWidget(self.mean_check)
        checks.addWidget(self.tests_check)
        checks.addWidget(self.intervals_check)
        checks.addStretch(1)
        grid.addLayout(checks, 1, 2, 1, 4)
        for col in (1, 3):
            grid.setColumnStretch(col, 1)
        self.min_cell_spin.setMaximumWidth(90)

        # ---- caption, table, notes
        self.title_label = QLabel("")
        self.title_label.setObjectName("tableTitle")
        font = QFont(self.title_label.font())
        font.setBold(True)
        font.setPointSizeF(font.pointSizeF() * 1.25)
        self.title_label.setFont(font)
        self.title_label.setWordWrap(True)
        self.title_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.status_label = muted_label("")
        self.status_label.setObjectName("tableStatus")

        self.model = ResultTableModel(self)
        self.table = ResultTableView()
        self.table.setObjectName("resultTable")
        self.table.setModel(self.model)
        self.table.setSelectionMode(QAbstractItemView.SelectionMode.NoSelection)
        self.table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.table.setWordWrap(True)
        self.table.setFocusPolicy(Qt.FocusPolicy.StrongFocus)
        self.table.verticalHeader().setVisible(False)
        self.table.horizontalHeader().setDefaultAlignment(
            Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter
        )
        self.table.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
        self.table.horizontalHeader().setHighlightSections(False)
        self.table.setAlternatingRowColors(False)
        self.table.setShowGrid(False)
        self.table.setStyleSheet(
            "QTableView#resultTable { gridline-color: #d0d0d0; }"
            "QTableView#resultTable::item { padding: 2px 6px; border-bottom: 1px solid #e4e4e4; }"
        )

        self.base_label = QLabel("")
        self.base_label.setObjectName("tableBase")
        self.base_label.setWordWrap(True)
        self.unstable_legend = muted_label(
            "Shaded: a percentage of fewer than 30 people; one or two answers move it a lot."
        )
        self.unstable_legend.setObjectName("unstableLegend")
        self.unstable_legend.hide()
        self.notes_label = QLabel("")
        self.notes_label.setObjectName("tableNotes")
        self.notes_label.setWordWrap(True)
        self.notes_label.setTextFormat(Qt.TextFormat.PlainText)
        self.notes_label.setAlignment(Qt.AlignmentFlag.AlignTop | Qt.AlignmentFlag.AlignLeft)
        self.notes_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.notes_label.setForegroundRole(QPalette.ColorRole.PlaceholderText)
        notes_scroll = QScrollArea()
        notes_scroll.setObjectName("notesScroll")
        notes_scroll.setWidgetResizable(True)
        notes_scroll.setFrameShape(QFrame.Shape.NoFrame)
        notes_scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        notes_scroll.setWidget(self.notes_label)
        self.methods_link = QLabel('<a href="#methods">How this is computed</a>')
        self.methods_link.setObjectName("methodsLink")
        self.methods_link.setTextInteractionFlags(Qt.TextInteractionFlag.LinksAccessibleByMouse)

        table_pane = QWidget()
        tv = QVBoxLayout(table_pane)
        tv.setContentsMargins(0, 0, 6, 0)
        tv.addWidget(self.table, 3)
        tv.addWidget(self.base_label)
        tv.addWidget(self.unstable_legend)
        tv.addWidget(notes_scroll, 2)
        tv.addWidget(self.methods_link)

        from desktopapp.widgets.figure_canvas import FigureCanvasWidget

        self.chart = FigureCanvasWidget(dpi=CHART_DPI, minimum=(CHART_MIN_WIDTH - 20, 280))
        self.chart.setObjectName("resultChart")
        # Clicking the chart gives it the focus, so Ctrl+C then copies the chart.
        self.chart.canvas.setFocusPolicy(Qt.FocusPolicy.StrongFocus)
        self.chart.canvas.setToolTip("Click the chart, then press Ctrl+C to copy it as a picture.")

        self.result_splitter = QSplitter(Qt.Orientation.Horizontal)
        self.result_splitter.setObjectName("resultSplitter")
        self.result_splitter.addWidget(table_pane)
        self.result_splitter.addWidget(self.chart)
        self.result_splitter.setChildrenCollapsible(False)
        self.result_splitter.setSizes([560, 440])
        self._splitter_moved = False  # once the evaluator drags it, the view leaves it alone
        self._table_ideal = 0
        self.result_splitter.installEventFilter(self)
        self._rendered: RenderedChart | None = None
        self._chart_resize = QTimer(self)
        self._chart_resize.setSingleShot(True)
        self._chart_resize.setInterval(250)
        self._chart_resize.timeout.connect(self._on_chart_resize_settled)
        self.chart.canvas.installEventFilter(self)

        # ---- keep and copy
        self.keep_row = keep_copy_row(
            prefix="",
            finding_example="Most participants found the course relevant.",
            keep_tip=(
                "Add this table and its chart to the report outline, with the finding sentence. "
                "The numbers are recomputed when the data change."
            ),
            chart_tip=(
                "Put the chart on the clipboard as a 1920 × 1080 picture, with the table's base "
                "and notes underneath."
            ),
        )
        self.finding_edit, self.keep_button = self.keep_row.finding_edit, self.keep_row.keep_button
        self.copy_table_button = self.keep_row.copy_table_button
        self.copy_chart_button = self.keep_row.copy_chart_button
        bottom = self.keep_row.layout

        self._results = QWidget()
        self._results.setObjectName("tabulationResults")
        rv = QVBoxLayout(self._results)
        rv.setContentsMargins(12, 10, 12, 10)
        rv.setSpacing(6)
        rv.addLayout(grid)
        rv.addWidget(self.option_caution)
        rv.addWidget(self.title_label)
        rv.addWidget(self.status_label)
        rv.addWidget(self.result_splitter, 1)
        rv.addLayout(bottom)

    def _combo(self, name: str, labels: dict[str, str]) -> QComboBox:
        combo = QComboBox()
        combo.setObjectName(name)
        for value, text in labels.items():
            combo.addItem(text, value)
        combo.setSizeAdjustPolicy(QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon)
        combo.setMinimumContentsLength(10)
        return combo

    def _connect_signals(self) -> None:
        self.search_edit.textChanged.connect(self._on_search_edit_changed)
        self.variable_tree.currentItemChanged.connect(self._on_variable_tree_current_changed)
        self.by_combo.currentIndexChanged.connect(self._on_breakdown_changed)
        self.by2_combo.currentIndexChanged.connect(self._on_breakdown_changed)
        for combo in (
            self.percent_combo,
            self.treatment_combo,
            self.sort_combo,
            self.sd_combo,
            self.borda_combo,
        ):
            combo.currentIndexChanged.connect(self._on_option_changed)
        self.min_cell_spin.valueChanged.connect(self._on_option_changed)
        self.mean_check.toggled.connect(self._on_option_changed)
        self.tests_check.toggled.connect(self._on_option_changed)
        self.intervals_check.toggled.connect(self._on_option_changed)
        self.chart_combo.currentIndexChanged.connect(self._on_chart_combo_changed)
        self.methods_link.linkActivated.connect(self._on_methods_link_activated)
        self.keep_button.clicked.connect(self._on_keep_button_clicked)
        self.finding_edit.returnPressed.connect(self._on_keep_button_clicked)
        self.copy_table_button.clicked.connect(self.copy_table)
        self.copy_chart_button.clicked.connect(self.copy_chart)
        self.copy_action.triggered.connect(self.copy_current)
        self.table.copy_requested.connect(self.copy_table)
        self.gallery.open_requested.connect(self._on_gallery_open_requested)
        self.tabs.currentChanged.connect(self._on_tabs_current_changed)
        self.result_splitter.splitterMoved.connect(self._on_result_splitter_moved)
        # Which of the two had the focus last decides what Ctrl+C copies. Focus-in events of
        # the two widgets tell it; the application-wide focus signal would also report every
        # focus change elsewhere (and passes None for "no widget", which this PySide6
        # release hands back without a reference of its own).
        self.table.installEventFilter(self)
        self.table.viewport().installEventFilter(self)

    # ------------------------------------------------------------------ data access
    @property
    def project(self) -> Any:
        return self._context.project

    def codebook(self) -> Codebook:
        return self.project.codebook(self.instrument_id)

    def _project_min_cell(self) -> int:
        try:
            return int(self.project.settings().get("min_cell", 5))
        except (TypeError, ValueError):
            return 5

    def result(self) -> TableResult | None:
        """The table shown now (None while nothing is shown)."""
        return self._result

    def chart_type(self) -> str | None:
        return self._chart_type

    def current_variable(self) -> str | None:
        item = self.variable_tree.currentItem()
        return item.data(0, NAME_ROLE) if item is not None else None

    def current_entry(self) -> Entry | None:
        name = self.current_variable()
        return next((e for e in self._entries if e.name == name), None)

    def breakdown(self) -> tuple[str, ...]:
        """The break-down questions chosen (the "none" entry holds "")."""
        # Item data is never None here: this PySide6 release returns a None item datum
        # without taking a reference to it, which over a long session can crash Python 3.11.
        names = [self.by_combo.currentData(), self.by2_combo.currentData()]
        out: list[str] = []
        for name in names:
            if not name or name in out:
                break
            out.append(name)
        return tuple(out)

    def current_spec(self) -> TableSpec | None:
        """The table asked for by the controls now (chart not included)."""
        name = self.current_variable()
        if not name:
            return None
        wave = self.project.wave(self.wave_id)
        instrument = self.project.instrument(self.instrument_id).name
        min_cell = self.min_cell_spin.value()
        return TableSpec(
            variable=name,
            wave=wave.label,
            instrument=instrument,
            by=self.breakdown(),
            percent=self.percent_combo.currentData(),
            treatment=self.treatment_combo.currentData(),
            min_cell=None if min_cell == self._project_min_cell() else min_cell,
            sort=self.sort_combo.currentData(),
            sd=self.sd_combo.currentData(),
            show_mean=self.mean_check.isChecked() and "show_mean" in self._visible_options,
            borda=self.borda_combo.currentData(),
            tests=self.tests_check.isChecked() and "tests" in self._visible_options,
            intervals=self.intervals_check.isChecked() and "intervals" in self._visible_options,
        )

    # ------------------------------------------------------------------ public controls
    def select_variable(self, name: str) -> bool:
        """Select a question or question group by name (False if it is not listed)."""
        return select_named(self.variable_tree, name)

    def set_breakdown(self, *names: str) -> None:
        """Break the table down by up to two questions (no names: no break-down)."""
        self._filling = True
        try:
            for combo, name in zip((self.by_combo, self.by2_combo), (*names, None, None)):
                index = combo.findData(name) if name else 0
                combo.setCurrentIndex(max(index, 0))
        finally:
            self._filling = False
        self._update_by2_enabled()
        self._chart_choice = None
        self._update_option_visibility()
        self._request_table()

    def set_option(self, name: str, value: Any) -> None:
        """Set one option by its spec name (tests and the gallery use this)."""
        combos = {
            "percent": self.percent_combo,
            "treatment": self.treatment_combo,
            "sort": self.sort_combo,
            "sd": self.sd_combo,
            "borda": self.borda_combo,
        }
        if name in combos:
            combo = combos[name]
            index = combo.findData(value)
            if index < 0:
                raise ValueError(f"{value!r} is not an option of {name}")
            combo.setCurrentIndex(index)
        elif name == "min_cell":
            self.min_cell_spin.setValue(int(value))
        elif name == "show_mean":
            self.mean_check.setChecked(bool(value))
        elif name == "tests":
            self.tests_check.setChecked(bool(value))
        elif name == "intervals":
            self.intervals_check.setChecked(bool(value))
        elif name == "chart":
            index = self.chart_combo.findData(value)
            if index < 0:
                raise ValueError(f"{value!r} is not a chart type offered here")
            self.chart_combo.setCurrentIndex(index)
        else:
            raise ValueError(f"unknown option {name!r}")

    # ------------------------------------------------------------------ question list
    def _fill_list(self) -> None:
        current = self.current_variable()
        self._entries = tabulation_entries(self.codebook())
        self.variable_tree.blockSignals(True)
        self.variable_tree.clear()
        for entry in self._entries:
            item = QTreeWidgetItem([self._entry_text(entry)])
            item.setData(0, NAME_ROLE, entry.name)
            item.setIcon(0, kind_icon(entry.kind))
            item.setToolTip(0, self._entry_tooltip(entry))
            self.variable_tree.addTopLevelItem(item)
            for member in entry.items:
                child = QTreeWidgetItem([f"{member.name}  {short_title(member.question, 60)}"])
                child.setToolTip(0, member.question or member.name)
                child.setIcon(0, kind_icon(member.kind))
                if entry.family == "battery":
                    child.setData(0, NAME_ROLE, member.name)  # each item has its own table
                else:
                    # An option of a ranking or choose-all question: only the whole
                    # question has a table, so the row is listed but not selectable.
                    child.setData(0, NAME_ROLE, "")
                    child.setFlags(Qt.ItemFlag.ItemIsEnabled)
                item.addChild(child)
        self.variable_tree.blockSignals(False)
        if current:
            self.select_variable(current)
        self._apply_search()

    @staticmethod
    def _entry_text(entry: Entry) -> str:
        if entry.is_group:
            what = {
                "battery": "rating items",
                "ranking": "options to rank",
                "multiselect": "options",
            }.get(entry.family, "items")
            return f"{entry.label} ({len(entry.items)} {what})"
        return f"{entry.name}  {short_title(entry.question, 60)}"

    @staticmethod
    def _entry_tooltip(entry: Entry) -> str:
        if entry.is_group:
            kind = {
                "battery": "A battery of rating items: one row per item",
                "ranking": "A ranking question: Borda points and rank positions",
                "multiselect": "A choose-all-that-apply question",
            }.get(entry.family, "A question group")
            return f"{kind}\nGroup: {entry.name}"
        return f"{entry.question or entry.name}\n{entry.kind.label}"

    def _selectable_items(self) -> list[QTreeWidgetItem]:
        return named_items(self.variable_tree)

    def _first_selectable(self) -> QTreeWidgetItem | None:
        items = self._selectable_items()
        return items[0] if items else None

    def _apply_search(self) -> None:
        has_words = bool(self.search_edit.text().split())
        entries = {e.name: e for e in self._entries}
        for top, any_child in filter_tree(self.variable_tree, self.search_edit.text()):
            entry = entries.get(top.data(0, NAME_ROLE))
            if entry is not None and entry.is_group:
                top.setExpanded(has_words and any_child)

    def _on_search_edit_changed(self, _text: str) -> None:
        self._apply_search()

    def _on_variable_tree_current_changed(
        self, current: QTreeWidgetItem | None, _previous: object
    ) -> None:
        if current is not None and not current.data(0, NAME_ROLE):
            return  # an option row: nothing to show by itself
        self._chart_choice = None
        self._fill_breakdowns()
        self._update_option_visibility()
        self._request_table()

    # ------------------------------------------------------------------ break-downs
    def _fill_breakdowns(self) -> None:
        entry = self.current_entry()
        exclude = {entry.name, *(m.name for m in entry.items)} if entry else set()
        name = self.current_variable()
        if name:
            exclude.add(name)
        keep = self.breakdown()
        candidates = breakdown_candidates(self.codebook(), exclude)
        self._filling = True
        try:
            for combo, previous in zip((self.by_combo, self.by2_combo), (*keep, None, None)):
                combo.blockSignals(True)
                combo.clear()
                combo.addItem(NO_BREAKDOWN, "")  # "" rather than None: see breakdown()
                for var in candidates:
                    combo.addItem(
                        kind_icon(var.kind),
                        f"{var.name}  {short_title(var.question, 48)}",
                        var.name,
                    )
                    combo.setItemData(
                        combo.count() - 1, var.question or var.name, Qt.ItemDataRole.ToolTipRole
                    )
                index = combo.findData(previous) if previous else 0
                combo.setCurrentIndex(max(index, 0))
                combo.blockSignals(False)
        finally:
            self._filling = False
        self._update_by2_enabled()

    def _update_by2_enabled(self) -> None:
        has_first = bool(self.by_combo.currentData())
        if not has_first and self.by2_combo.currentIndex() != 0:
            self.by2_combo.blockSignals(True)
            self.by2_combo.setCurrentIndex(0)
            self.by2_combo.blockSignals(False)
        self.by2_combo.setEnabled(has_first)

    def _on_breakdown_changed(self, _index: int) -> None:
        if self._filling:
            return
        self._update_by2_enabled()
        self._chart_choice = None
        self._update_option_visibility()
        self._request_table()

    # ------------------------------------------------------------------ options
    def _update_option_visibility(self) -> None:
        """Show only the options that change the chosen table."""
        entry = self.current_entry()
        name = self.current_variable()
        family = entry.family if entry is not None else ""
        if entry is None and name:
            var = self.codebook().get(name)
            if var is not None:
                family = (
                    "likert"
                    if var.kind is Kind.LIKERT
                    else ("numeric" if var.kind is Kind.NUMERIC else "categorical")
                )
        var = self.codebook().get(name) if name else None
        has_by = bool(self.breakdown())
        crosstab = has_by and family in ("categorical", "likert")
        visible = {"treatment", "chart", "min_cell"}
        if crosstab:
            visible |= {"percent", "tests"}
        if family == "battery" or (
            family == "categorical" and not has_by and var is not None and not var.kind.ordered
        ):
            visible.add("sort")
        if family == "numeric":
            visible.add("sd")
        if family == "ranking":
            visible.add("borda")
        if family == "battery" or (family == "likert" and not has_by):
            visible.add("show_mean")
        if family in ("categorical", "likert"):  # frequency tables and cross-tabulations
            visible.add("intervals")
        self._visible_options = visible
        self.group_button.setVisible(var is not None and var.kind is Kind.NUMERIC)
        for key, (label, widget) in self._option_rows.items():
            shown = key in visible
            label.setVisible(shown)
            widget.setVisible(shown)
        self.mean_check.setVisible("show_mean" in visible)
        self.tests_check.setVisible("tests" in visible)
        self.intervals_check.setVisible("intervals" in visible)
        sort_text = "Highest % agreeing first" if family == "battery" else "Most frequent first"
        self.sort_combo.setItemText(self.sort_combo.findData("frequency"), sort_text)
        self._update_caution()

    def _update_caution(self) -> None:
        texts = []
        if self.min_cell_spin.value() == 0:
            texts.append(SUPPRESSION_OFF_CAUTION)
        if "show_mean" in self._visible_options and self.mean_check.isChecked():
            texts.append(MEAN_CAUTION)
        if "tests" in self._visible_options and self.tests_check.isChecked():
            texts.append(TESTS_CAUTION)
        self.option_caution.setText(" ".join(texts))
        self.option_caution.setVisible(bool(texts))

    def _on_option_changed(self, *_args: Any) -> None:
        if self._filling:
            return
        self._update_caution()
        self._request_table()

    def _on_chart_combo_changed(self, _index: int) -> None:
        if self._filling:
            return
        self._chart_choice = self.chart_combo.currentData()
        self._update_chart()

    # ------------------------------------------------------------------ computing
    def _request_table(self) -> None:
        if self._filling:
            return
        spec = self.current_spec()
        if spec is None:
            self._show_empty("Choose a question on the left.")
            return
        project = self.project
        self.status_label.setText("Working out the table…")

        def work(_progress: Any) -> TableResult:
            from core.tables.build import compute_table

            return compute_table(project, spec)

        self._context.runner.run(
            work,
            on_success=self._show_result,
            on_failure=self._on_table_failed,
            key=f"tabulation:{id(self)}",
            show_progress=False,
            label="Working out the table…",
        )

    def _show_result(self, result: TableResult) -> None:
        from core.charts import chart_label, chart_types

        self._result = result
        self.error_text = ""
        self.status_label.setText("")
        self.title_label.setText(result.title)
        self.model.set_result(result)
        self._fit_columns()
        self.base_label.setText(result.base)
        self.unstable_legend.setVisible(self.model.has_unstable())
        self.notes_label.setText("\n".join(f"• {note}" for note in result.notes))
        anchor = METHODS_ANCHORS.get(result.table_type)
        self.methods_link.setVisible(anchor is not None)
        types = chart_types(result)
        self._filling = True
        try:
            self.chart_combo.clear()
            for t in types:
                self.chart_combo.addItem(chart_label(t), t)
            if self._chart_choice in types:
                chosen = self._chart_choice
            else:
                chosen = types[0] if types else None
            self.chart_combo.setCurrentIndex(max(self.chart_combo.findData(chosen), 0))
            self.chart_combo.setEnabled(bool(types))
        finally:
            self._filling = False
        self._chart_type = chosen
        for widget in (self.keep_button, self.copy_table_button, self.finding_edit):
            widget.setEnabled(True)
        self.copy_chart_button.setEnabled(chosen is not None)
        self._update_chart()
        self.result_changed.emit(result)

    def _update_chart(self) -> None:
        result = self._result
        if result is None:
            self.chart.set_drawer(None, "")
            return
        chart_type = self.chart_combo.currentData() if self.chart_combo.count() else None
        self._chart_type = chart_type
        if chart_type is None:
            self.chart.set_drawer(None, "This table has no chart.")
            self.copy_chart_button.setEnabled(False)
            return
        self._request_chart()

    def _chart_pixels(self) -> tuple[int, int, float]:
        """The chart pane's size in device pixels and the resolution to draw at."""
        canvas = self.chart.canvas
        ratio = canvas.devicePixelRatioF() or 1.0
        width, height = canvas.width(), canvas.height()
        if width < 100 or height < 100:  # not laid out yet: drawn again once it is
            width, height = 640, 480
        return int(width * ratio), int(height * ratio), CHART_DPI * ratio

    def _request_chart(self) -> None:
        """Draw the chart on a worker at the pane's size; the window only shows the pixels.

        Laying out and drawing a chart takes a few tenths of a second (more for a battery),
        too long to do on the window's thread at every change of an option.
        """
        result, chart_type = self._result, self._chart_type
        if result is None or chart_type is None:
            return
        width, height, dpi = self._chart_pixels()
        # The notes are printed beside the chart, under the table; drawn again in small type
        # under the chart they would only crowd it. A copied chart carries them.
        shown = result_without_notes(result)

        def work(_progress: Any) -> RenderedChart:
            return render_chart(shown, chart_type, width, height, dpi)

        self._context.runner.run(
            work,
            on_success=self._show_chart,
            on_failure=self._on_chart_failed,
            key=f"tabulation-chart:{id(self)}",
            show_progress=False,
            label="Drawing the chart…",
        )

    def _show_chart(self, rendered: RenderedChart) -> None:
        self._rendered = rendered
        self.chart.set_drawer(lambda figure: show_pixels(figure, rendered.rgba))

    def _on_chart_failed(self, exc: BaseException) -> None:
        from desktopapp.errors import message_for

        self._rendered = None
        self.chart.set_drawer(None, message_for(exc)[0])

    def chart_figure(self) -> Any:
        """The matplotlib figure the chart shown was drawn on (None while there is none)."""
        return self._rendered.figure if self._rendered is not None else None

    def _on_chart_resize_settled(self) -> None:
        rendered = self._rendered
        width, height, _dpi = self._chart_pixels()
        if rendered is None or rendered.rgba.shape[:2] != (height, width):
            self._request_chart()

    def _fit_columns(self) -> None:
        self.table.resizeColumnsToContents()
        header = self.table.horizontalHeader()
        # A long row label (a battery item, a long answer) wraps rather than pushing the
        # numbers out of sight.
        first = min(header.sectionSize(0), 260) if self.model.columnCount() else 0
        if first:
            header.resizeSection(0, first)
        for col in range(1, self.model.columnCount()):
            header.resizeSection(col, min(max(header.sectionSize(col), 48), 90))
        self.table.resizeRowsToContents()
        self._table_ideal = header.length() + self.table.frameWidth() * 2 + 20  # + scroll bar
        self._apply_split()

    def _apply_split(self) -> None:
        """Give the table the width it needs, as long as the chart keeps a readable size."""
        total = self.result_splitter.width() - self.result_splitter.handleWidth()
        if self._splitter_moved or not self._table_ideal or total < CHART_MIN_WIDTH + 200:
            return  # not laid out yet: a split now would squeeze the chart to nothing
        if self._table_ideal <= total - CHART_MIN_WIDTH:
            table_w = self._table_ideal
        else:
            # The table will scroll sideways anyway; the chart then shows the whole result.
            table_w = int(total * 0.45)
        self.result_splitter.setSizes([table_w, total - table_w])

    def eventFilter(self, watched: Any, event: Any) -> bool:  # noqa: N802 - Qt override
        if watched is self.result_splitter and event.type() == QEvent.Type.Resize:
            self._apply_split()
        elif watched is self.chart.canvas and event.type() == QEvent.Type.Resize:
            self._chart_resize.start()  # drawn again at the new size once resizing stops
        if event.type() == QEvent.Type.FocusIn:
            if watched is self.chart.canvas:
                self._last_focus = "chart"
            elif watched is self.table or watched is self.table.viewport():
                self._last_focus = "table"
        return super().eventFilter(watched, event)

    def _on_table_failed(self, exc: BaseException) -> None:
        from desktopapp.errors import console_text

        self._show_empty(console_text(exc))

    def _show_empty(self, text: str) -> None:
        self._result = None
        self.error_text = text
        self.title_label.setText("")
        self.status_label.setText(text)
        self.model.set_result(None)
        self.base_label.setText("")
        self.notes_label.setText("")
        self.unstable_legend.hide()
        self.methods_link.hide()
        self._filling = True
        self.chart_combo.clear()
        self._filling = False
        self._rendered = None
        self.chart.set_drawer(None, "")
        self.keep_row.set_enabled(False)
        self.result_changed.emit(None)

    # ------------------------------------------------------------------ methods guide
    def _on_methods_link_activated(self, _link: str) -> None:
        self.open_methods()

    def open_methods(self) -> QUrl | None:
        """Open the methods guide at the section for the table shown; returns the URL."""
        if self._result is None:
            return None
        if not METHODS_GUIDE.exists():
            self._message("The methods guide is not included in this copy of Plaincount.")
            return None
        url = methods_url(self._result.table_type)
        self.open_url(url)
        return url

    # ------------------------------------------------------------------ keep for report
    def keep_spec(self) -> TableSpec | None:
        """What "Keep for report" stores: the table's spec with the chart type shown."""
        result = self._result
        if result is None:
            return None
        return result.spec.with_changes(chart=self._chart_type)

    def _on_keep_button_clicked(self) -> None:
        spec = self.keep_spec()
        if spec is None:
            return
        project = self.project
        finding = self.finding_edit.text().strip()
        title = self._result.title if self._result is not None else None

        def work(_progress: Any) -> tuple[str, str]:
            from core import outline

            outline.keep(project, spec, title=title, finding=finding)
            return title or spec.variable, finding

        # A bound method, so the answer is dropped if the view was closed meanwhile.
        self._context.runner.run(
            work,
            on_success=self._on_kept,
            writes=True,
            label="Keeping the result for the report…",
        )

    def _on_kept(self, kept: tuple[str, str]) -> None:
        title, finding = kept
        self.finding_edit.clear()
        self._message(kept_message(title, finding))

    def _message(self, text: str) -> None:
        self.last_message = text
        if self._context.show_message is not None:
            self._context.show_message(text)

    # ------------------------------------------------------------------ copy
    def copy_current(self) -> None:
        """Copy whichever of the table and the chart last had the focus."""
        if self._last_focus == "chart" and self._chart_type is not None:
            self.copy_chart()
        else:
            self.copy_table()

    def copy_table(self) -> bool:
        """Put the table on the clipboard as HTML and tab-separated text."""
        result = self._result
        if result is None:
            return False
        put_table_on_clipboard(result, self._message)
        return True

    def copy_chart(self) -> bool:
        """Put the chart on the clipboard: a 1920 × 1080 PNG drawn on a worker, and its caption."""
        result, chart_type = self._result, self._chart_type
        if result is None or chart_type is None:
            return False
        put_chart_on_clipboard(
            self._context.runner, result, chart_type, f"copy-chart:{id(self)}", self._message
        )
        return True

    # ------------------------------------------------------------------ gallery
    def show_gallery(self) -> None:
        self.tabs.setCurrentWidget(self.gallery)

    def _on_result_splitter_moved(self, _pos: int, _index: int) -> None:
        self._splitter_moved = True

    def _on_tabs_current_changed(self, _index: int) -> None:
        if self.tabs.currentWidget() is self.gallery:
            self.gallery.refresh_if_stale()

    def _on_gallery_open_requested(self, name: str, by: tuple[str, ...]) -> None:
        self.tabs.setCurrentWidget(self._results)
        self._filling = True
        try:
            self.select_variable(name)
        finally:
            self._filling = False
        self._fill_breakdowns()
        self.set_breakdown(*by)

    # ------------------------------------------------------------------ window hooks
    def project_changed(self, changes: Changes) -> None:
        if changes.codebook and (
            not changes.instrument_ids or self.instrument_id in changes.instrument_ids
        ):
            self._filling = True
            try:
                self._fill_list()
                self._fill_breakdowns()
            finally:
                self._filling = False
            self._update_option_visibility()
        touches_wave = not changes.wave_ids or self.wave_id in changes.wave_ids
        if (changes.codebook or changes.ledger or changes.rules or changes.settings) and (
            touches_wave
        ):
            if changes.settings:
                self._filling = True
                self.min_cell_spin.setValue(self._project_min_cell())
                self._filling = False
            self._request_table()
            self.gallery.project_changed(changes)

    def prepare_screenshot(self) -> None:
        """Show a comparison worth a picture (age by cohort), with its chart drawn at once."""
        if self.select_variable("age"):
            self.set_breakdown("cohort")
        QApplication.processEvents()  # let the window lay the view out before drawing
        self._request_chart()
        self.chart.render_now()

    def screenshot_states(self) -> list[tuple[str, Callable[[], None]]]:
        """Other states worth a picture: the gallery of the agreement battery by track."""

        def gallery() -> None:
            self.gallery.show_source("agree", "track")
            self.show_gallery()

        return [("tables-gallery", gallery)]

    def open_grouping(self, _checked: bool = False, *, show: bool = True) -> Any:
        """Open "Group into categories…" for the chosen number question."""
        from desktopapp.grouping_dialog import GroupingDialog, open_grouping_dialog

        name = self.current_variable()
        var = self.codebook().get(name) if name else None
        if var is None or var.kind is not Kind.NUMERIC:
            return None
        args = (self.project, self._context.runner, self.instrument_id, var.name, self.wave_id)
        if not show:
            return GroupingDialog(*args, parent=self)
        dialog = open_grouping_dialog(self, *args)
        dialog.accepted.connect(lambda: self.select_variable(dialog.new_name()))
        return dialog

    def screenshot_dialogs(self) -> list[tuple[str, Any]]:
        """The grouping dialog on age, with cut points an evaluator might choose."""
        if not self.select_variable("age"):
            return []
        dialog = self.open_grouping(show=False)
        dialog.set_method("cuts", "25, 35, 45")
        return [("grouping", dialog)]

    def shutdown(self) -> None:
        self._chart_resize.stop()
        self.variable_tree.blockSignals(True)
        self.gallery.shutdown()


@dataclass(frozen=True)
class RenderedChart:
    """A chart drawn off the window's thread: its pixels and the figure they came from."""

    rgba: Any  # numpy array, height x width x 4
    figure: Any  # matplotlib Figure (Agg), kept for tests and inspection
    chart_type: str


def render_chart(
    result: TableResult, chart_type: str, width: int, height: int, dpi: float
) -> RenderedChart:
    """Draw ``result`` as ``chart_type`` at ``width`` x ``height`` pixels (safe on a worker)."""
    import numpy as np

    from core.charts import make_figure

    figure = make_figure(result, chart_type, width_px=width, height_px=height, dpi=dpi)
    figure.canvas.draw()
    rgba = np.asarray(figure.canvas.buffer_rgba()).copy()
    return RenderedChart(rgba, figure, chart_type)


def show_pixels(figure: Any, rgba: Any) -> None:
    """Show pre-drawn chart pixels on the window's figure, unscaled, from its top left."""
    figure.clear()
    top = max(0, int(figure.bbox.height) - rgba.shape[0])
    figure.figimage(rgba, xo=0, yo=top, origin="upper", resize=False)


def result_without_notes(result: TableResult) -> TableResult:
    """A copy of ``result`` for a thumbnail: the same numbers, base line only."""
    return replace(result, notes=[])
