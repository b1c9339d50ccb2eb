"""The missing-data node of a wave: how much is missing, where, for whom, and is it random.

One heading with the wave's totals, then tabs an evaluator works through from left to right:

* Items — every question item with its answered and missing counts by reason, the share
  missing and a marker for items above an editable threshold (5 % by default, a rule of
  thumb whose caution is shown beside it). Clicking an item shows its gaps broken down by
  a grouping question, with a chi-square test as a screening aid.
* In words — the plain-language paragraphs the report uses.
* Where people stopped — the drop-off chart. Respondents x items — the missing-data matrix.
* Share answered — how much of the questionnaire each respondent answered; near-empty ones.
* Patterns by group — a scan of every item against every category question, ranked.
* Random gaps — Little's test of "missing completely at random" over chosen items.

Everything is computed by ``core.missing``, ``core.mcar`` and ``core.charts_missing``; the
work runs on the background runner and the view only shows results.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace
from typing import Any

import numpy as np
import pandas as pd
from PySide6.QtCore import (
    QAbstractTableModel,
    QModelIndex,
    QPersistentModelIndex,
    QSortFilterProxyModel,
    Qt,
)
from PySide6.QtGui import QBrush, QColor, QFont
from PySide6.QtWidgets import (
    QAbstractItemView,
    QComboBox,
    QDoubleSpinBox,
    QFormLayout,
    QFrame,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QListWidget,
    QListWidgetItem,
    QPushButton,
    QScrollArea,
    QSplitter,
    QTableView,
    QTabWidget,
    QTextBrowser,
    QVBoxLayout,
    QWidget,
)

from core.errors import PlaincountError
from core.kinds import Kind
from core.mcar import MCAR_KINDS, MCARResult, little_mcar_for
from core.missing import (
    DEFAULT_THRESHOLD,
    REASON_TEXT,
    REASONS,
    SCREENING_NOTE,
    THRESHOLD_SOURCE,
    GroupMissing,
    Overview,
    RespondentSummary,
    grouping_variables,
    item_summary,
    missing_by_group,
    overview,
    pattern_scan,
    respondent_summary,
    summary_paragraphs,
)
from core.project import Changes
from desktopapp.errors import message_for, show_error
from desktopapp.project_tree import NodeType, TreeNode
from desktopapp.views import ViewContext, escape_rich, muted_label, section_label, title_label
from desktopapp.widgets.figure_canvas import FigureCanvasWidget

SORT_ROLE = Qt.ItemDataRole.UserRole
KEY_ROLE = Qt.ItemDataRole.UserRole + 1
MARK = "▲ above"
MARK_COLOUR = QColor("#B34700")  # a darker vermillion: readable as text on white
RIGHT = Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter
LEFT = Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter

# Short column headings for the missing reasons; the long wording goes in the tooltip.
REASON_HEADERS = {
    "skipped": "Left\nblank",
    "declined": "Declined",
    "not_applicable": "Not\napplicable",
    "dont_know": "Don't\nknow",
    "set_missing": "Set\nmissing",
    "invalid": "Not\nvalid",
}


def register(registry: Any) -> None:
    registry.add(NodeType.MISSING, MissingDataView)


# ---------------------------------------------------------------------- table model
@dataclass(frozen=True)
class Column:
    """One column of a :class:`FrameModel`: which frame column, heading, number format."""

    key: str
    header: str
    fmt: str = "text"  # text | int | pct | num | p | mark | groups
    tip: str = ""


def _fmt(value: Any, fmt: str) -> str:
    if value is None or (isinstance(value, float) and np.isnan(value)):
        return "–"
    if fmt == "int":
        return f"{int(value):,}"
    if fmt == "pct":
        return f"{float(value):.1f}"
    if fmt == "num":
        return f"{float(value):.2f}"
    if fmt == "p":
        return "< 0.001" if float(value) < 0.001 else f"{float(value):.3f}"
    if fmt == "mark":
        return MARK if bool(value) else ""
    if fmt == "yesno":
        return "yes" if bool(value) else "no – approximate"
    if fmt == "groups":
        return ";  ".join(f"{g} {float(p):.1f}" for g, p in dict(value).items())
    return str(value)


class FrameModel(QAbstractTableModel):
    """A read-only Qt model over a DataFrame: formatted text, raw values for sorting."""

    def __init__(self, columns: Sequence[Column] = (), parent: Any = None) -> None:
        super().__init__(parent)
        self._frame = pd.DataFrame()
        self._values: dict[str, list[Any]] = {}
        self._columns: list[Column] = list(columns)
        self.tooltip_for: Callable[[pd.Series, Column], str | None] | None = None

    # ---- content
    def set_frame(self, frame: pd.DataFrame, columns: Sequence[Column] | None = None) -> None:
        self.beginResetModel()
        self._frame = frame.reset_index(drop=True)
        # Plain lists per column: data() is called for every cell and role on each repaint.
        self._values = {key: self._frame[key].tolist() for key in self._frame.columns}
        if columns is not None:
            self._columns = list(columns)
        self.endResetModel()

    @property
    def frame(self) -> pd.DataFrame:
        return self._frame

    @property
    def columns(self) -> list[Column]:
        return list(self._columns)

    def column_of(self, key: str) -> int:
        for i, col in enumerate(self._columns):
            if col.key == key:
                return i
        return -1

    def row_of(self, key: str, value: Any) -> int:
        if key not in self._frame.columns:
            return -1
        hits = np.flatnonzero(self._frame[key].to_numpy() == value)
        return int(hits[0]) if len(hits) else -1

    def text(self, row: int, key: str) -> str:
        return str(self.data(self.index(row, self.column_of(key))))

    # ---- Qt interface
    def rowCount(self, parent: QModelIndex | QPersistentModelIndex = QModelIndex()) -> int:  # noqa: B008, N802
        return 0 if parent.isValid() else len(self._frame)

    def columnCount(self, parent: QModelIndex | QPersistentModelIndex = QModelIndex()) -> int:  # noqa: B008, N802
        return 0 if parent.isValid() else len(self._columns)

    def headerData(  # noqa: N802 - Qt override
        self, section: int, orientation: Qt.Orientation, role: int = Qt.ItemDataRole.DisplayRole
    ) -> Any:
        if orientation == Qt.Orientation.Vertical:
            if role == Qt.ItemDataRole.DisplayRole:
                return str(section + 1)
            if role == Qt.ItemDataRole.TextAlignmentRole:
                return RIGHT
            return None
        if not 0 <= section < len(self._columns):
            return None
        col = self._columns[section]
        if role == Qt.ItemDataRole.DisplayRole:
            return col.header
        if role == Qt.ItemDataRole.ToolTipRole:
            return col.tip or None
        if role == Qt.ItemDataRole.TextAlignmentRole:
            return LEFT if col.fmt in ("text", "groups", "mark", "yesno") else RIGHT
        return None

    def data(
        self, index: QModelIndex | QPersistentModelIndex, role: int = Qt.ItemDataRole.DisplayRole
    ) -> Any:  # noqa: E501
        if not index.isValid():
            return None
        col = self._columns[index.column()]
        column = self._values.get(col.key)
        value = column[index.row()] if column is not None else None
        if role == Qt.ItemDataRole.DisplayRole:
            return _fmt(value, col.fmt)
        if role == SORT_ROLE:
            if col.fmt in ("text", "groups"):
                return str(value).lower()
            if value is None or (isinstance(value, float) and np.isnan(value)):
                return -1.0
            return float(value)
        if role == KEY_ROLE:
            return value
        if role == Qt.ItemDataRole.TextAlignmentRole:
            return LEFT if col.fmt in ("text", "groups", "mark", "yesno") else RIGHT
        if role == Qt.ItemDataRole.ForegroundRole and col.fmt == "mark" and bool(value):
            return QBrush(MARK_COLOUR)
        if role == Qt.ItemDataRole.FontRole and col.fmt == "mark" and bool(value):
            font = QFont()
            font.setBold(True)
            return font
        if role == Qt.ItemDataRole.ToolTipRole:
            if self.tooltip_for is not None:
                tip = self.tooltip_for(self._frame.iloc[index.row()], col)
                if tip:
                    return tip
            if col.fmt == "text" and value is not None:
                return str(value)
        return None


def _table_view(name: str, sortable: bool = False) -> QTableView:
    view = QTableView()
    view.setObjectName(name)
    view.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
    view.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
    view.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
    view.setAlternatingRowColors(True)
    view.setWordWrap(False)
    view.setTextElideMode(Qt.TextElideMode.ElideRight)
    view.verticalHeader().setDefaultSectionSize(view.fontMetrics().height() + 8)
    view.horizontalHeader().setHighlightSections(False)
    view.horizontalHeader().setDefaultAlignment(RIGHT)
    view.setSortingEnabled(sortable)
    return view


# ---------------------------------------------------------------------- background results
@dataclass(frozen=True)
class Loaded:
    """What one load of the wave gives the view (computed on the worker)."""

    working: Any
    items: pd.DataFrame
    overview: Overview
    groupings: list[tuple[str, str]]  # (name, question)
    mcar_items: list[tuple[str, str, int]]  # (name, kind label, n missing)
    respondents: RespondentSummary
    wave_label: str
    instrument_name: str
    # Where the view starts: the item with the largest share missing, broken down by the
    # question that shows its strongest pattern.
    start_item: str | None = None
    start_by: str | None = None


def _question(text: str, limit: int = 90) -> str:
    text = " ".join(str(text).split())
    return text if len(text) <= limit else text[: limit - 1] + "…"


class MissingDataView(QWidget):
    """Missing data of one wave: the item table with its breakdown, charts, scan and test."""

    def __init__(self, context: ViewContext, node: TreeNode, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("missingDataView")
        self._context = context
        self.node = node
        self.wave_id: int = node.wave_id  # type: ignore[assignment]
        self.loaded: Loaded | None = None
        self.breakdown: GroupMissing | None = None
        self.scan: pd.DataFrame | None = None
        self.mcar: MCARResult | None = None
        self.paragraphs: list[str] = []
        self._current_item: str | None = None
        self._scan_requested = False
        self._key = f"missing:{id(self)}"
        self._closed = False
        self._jobs: list[Any] = []

        self.title = title_label("Missing data")
        self.totals_label = muted_label("Reading the wave…")
        self.totals_label.setObjectName("missingTotals")
        self.totals_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)

        self.tabs = QTabWidget()
        self.tabs.setObjectName("missingTabs")
        self.tabs.setDocumentMode(True)
        self.items_page = self._build_items_tab()
        self.words_page = self._build_words_tab()
        self.dropoff_page = self._build_dropoff_tab()
        self.matrix_page = self._build_matrix_tab()
        self.respondents_page = self._build_respondents_tab()
        self.scan_page = self._build_scan_tab()
        self.mcar_page = self._build_mcar_tab()
        self.tabs.addTab(self.items_page, "Items")
        self.tabs.addTab(self.words_page, "In words")
        self.tabs.addTab(self.dropoff_page, "Where people stopped")
        self.tabs.addTab(self.matrix_page, "Respondents × items")
        self.tabs.addTab(self.respondents_page, "Share answered")
        self.tabs.addTab(self.scan_page, "Patterns by group")
        self.tabs.addTab(self.mcar_page, "Random gaps test")

        layout = QVBoxLayout(self)
        layout.setContentsMargins(16, 12, 16, 8)
        layout.setSpacing(6)
        layout.addWidget(self.title)
        layout.addWidget(self.totals_label)
        layout.addWidget(self.tabs, 1)

        self._connect_signals()
        self.reload()

    # ------------------------------------------------------------------ building
    def _build_items_tab(self) -> QWidget:
        self.threshold_spin = QDoubleSpinBox()
        self.threshold_spin.setObjectName("thresholdSpin")
        self.threshold_spin.setRange(0.0, 100.0)
        self.threshold_spin.setDecimals(1)
        self.threshold_spin.setSingleStep(1.0)
        self.threshold_spin.setSuffix(" %")
        self.threshold_spin.setValue(DEFAULT_THRESHOLD)
        self.threshold_spin.setKeyboardTracking(False)  # recompute once the number is typed
        self.threshold_spin.setAlignment(RIGHT)
        self.threshold_spin.setToolTip(
            "Items whose share missing, among the respondents they applied to, is above this "
            "are marked."
        )
        self.marker_count_label = QLabel("")
        self.marker_count_label.setObjectName("markerCount")
        # The caution in one line, always shown; the full paragraph (with the marked items
        # and why the base matters) one click away, so the table keeps its room.
        self.threshold_caution = muted_label(_first_sentence(THRESHOLD_SOURCE))
        self.threshold_caution.setObjectName("thresholdCaution")
        self.threshold_note = muted_label(THRESHOLD_SOURCE)
        self.threshold_note.setObjectName("thresholdNote")
        self.threshold_note.setVisible(False)
        self.threshold_more_button = QPushButton("More about this threshold")
        self.threshold_more_button.setObjectName("thresholdMoreButton")
        self.threshold_more_button.setCheckable(True)
        self.threshold_more_button.setFlat(True)
        self.threshold_more_button.setStyleSheet("QPushButton { color: #0b5cad; }")
        threshold_row = QHBoxLayout()
        threshold_row.addWidget(QLabel("Mark items with more missing than"))
        threshold_row.addWidget(self.threshold_spin)
        threshold_row.addSpacing(12)
        threshold_row.addWidget(self.marker_count_label)
        threshold_row.addStretch(1)
        threshold_row.addWidget(self.threshold_more_button)

        self.item_model = FrameModel()
        self.item_model.tooltip_for = self._item_tooltip
        self.item_proxy = QSortFilterProxyModel(self)
        self.item_proxy.setSourceModel(self.item_model)
        self.item_proxy.setSortRole(SORT_ROLE)
        self.item_table = _table_view("itemTable", sortable=True)
        self.item_table.setModel(self.item_proxy)
        self.item_table.verticalHeader().setVisible(False)
        self.item_table.sortByColumn(-1, Qt.SortOrder.AscendingOrder)  # questionnaire order

        # ---- breakdown of the selected item
        self.breakdown_title = section_label("Breakdown by group")
        self.breakdown_question = muted_label(
            "Click an item in the table to see how its gaps differ between groups."
        )
        self.breakdown_question.setObjectName("breakdownQuestion")
        self.group_combo = QComboBox()
        self.group_combo.setObjectName("groupingCombo")
        self.group_combo.setMinimumContentsLength(18)
        self.group_combo.setSizeAdjustPolicy(
            QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon
        )
        group_row = QHBoxLayout()
        group_row.addWidget(QLabel("Break down by"))
        group_row.addWidget(self.group_combo, 1)
        self.breakdown_model = FrameModel()
        self.breakdown_table = _table_view("breakdownTable")
        self.breakdown_table.setModel(self.breakdown_model)
        self.breakdown_table.verticalHeader().setVisible(False)
        # The test and its cautions: a text browser wraps and scrolls long notes reliably.
        self.breakdown_text = QTextBrowser()
        self.breakdown_text.setObjectName("breakdownText")
        self.breakdown_text.setFrameShape(QFrame.Shape.NoFrame)
        self.breakdown_text.setOpenLinks(False)
        self.breakdown_text.setStyleSheet("QTextBrowser { background: transparent; }")
        self.breakdown_test = ""
        self.breakdown_notes = ""

        left = QWidget()
        lv = QVBoxLayout(left)
        lv.setContentsMargins(0, 4, 8, 0)
        lv.addWidget(self.breakdown_title)
        lv.addWidget(self.breakdown_question)
        lv.addLayout(group_row)
        lv.addWidget(self.breakdown_table, 1)
        right = QWidget()
        rv = QVBoxLayout(right)
        rv.setContentsMargins(8, 4, 0, 0)
        rv.addWidget(section_label("Do the groups differ?"))
        rv.addWidget(self.breakdown_text, 1)
        breakdown = QSplitter(Qt.Orientation.Horizontal)
        breakdown.setObjectName("breakdownSplitter")
        breakdown.addWidget(left)
        breakdown.addWidget(right)
        breakdown.setChildrenCollapsible(False)
        breakdown.setSizes([600, 440])

        top = QWidget()
        tv = QVBoxLayout(top)
        tv.setContentsMargins(0, 8, 0, 4)
        tv.addLayout(threshold_row)
        tv.addWidget(self.threshold_caution)
        tv.addWidget(self.threshold_note)
        tv.addWidget(self.item_table, 1)
        self.items_splitter = QSplitter(Qt.Orientation.Vertical)
        self.items_splitter.setObjectName("itemsSplitter")
        self.items_splitter.addWidget(top)
        self.items_splitter.addWidget(breakdown)
        self.items_splitter.setChildrenCollapsible(False)
        self.items_splitter.setStretchFactor(0, 3)
        self.items_splitter.setStretchFactor(1, 2)
        return self.items_splitter

    def _build_words_tab(self) -> QWidget:
        self.words = QTextBrowser()
        self.words.setObjectName("missingWords")
        self.words.setOpenLinks(False)
        self.words.setFrameShape(QFrame.Shape.NoFrame)
        return _explained_page(
            "The same sentences go into the report's appendix. They follow the threshold "
            "set on the Items tab.",
            self.words,
        )

    def _build_dropoff_tab(self) -> QWidget:
        self.dropoff_chart = FigureCanvasWidget()
        self.dropoff_chart.setObjectName("dropoffChart")
        return _explained_page(
            "The line is the share of respondents still answering at each item (they "
            "answered it or a later one). The bars are the share who left each item "
            "unanswered, among those it applied to; a highlighted bar was left unanswered "
            "far more often than the items around it, which often points to a confusing "
            "or sensitive question.",
            self.dropoff_chart,
        )

    def _build_matrix_tab(self) -> QWidget:
        self.matrix_chart = FigureCanvasWidget()
        self.matrix_chart.setObjectName("matrixChart")
        return _explained_page(
            "One line per respondent, fewest gaps at the top; one column per item in "
            "questionnaire order. Coloured cells are missing answers, the colour says why. "
            "Blocks of colour show gaps that go together.",
            self.matrix_chart,
        )

    def _build_respondents_tab(self) -> QWidget:
        self.respondents_summary = QLabel("")
        self.respondents_summary.setObjectName("respondentsSummary")
        self.respondents_summary.setWordWrap(True)
        self.distribution_model = FrameModel(
            [
                Column("band", "Share of items answered", "text"),
                Column("n_respondents", "Respondents", "int"),
                Column("pct_respondents", "% of respondents", "pct"),
            ]
        )
        self.distribution_table = _table_view("distributionTable")
        self.distribution_table.setModel(self.distribution_model)
        self.distribution_table.verticalHeader().setVisible(False)
        _fit_columns(self.distribution_table.horizontalHeader(), stretch=None)
        self.near_empty_title = section_label("Near-empty responses")
        self.near_empty_note = muted_label("")
        self.near_empty_model = FrameModel(
            [
                Column("respondent", "Respondent", "text"),
                Column("data_row", "Row in the data", "int", "Data row in the imported file"),
                Column("n_answered", "Answered", "int"),
                Column("n_asked", "Asked", "int", "Items that applied to this respondent"),
                Column("pct_answered", "% answered", "pct"),
            ]
        )
        self.near_empty_table = _table_view("nearEmptyTable")
        self.near_empty_table.setModel(self.near_empty_model)
        self.near_empty_table.verticalHeader().setVisible(False)
        _fit_columns(self.near_empty_table.horizontalHeader(), stretch=None)
        left = QWidget()
        lv = QVBoxLayout(left)
        lv.setContentsMargins(0, 0, 8, 0)
        lv.addWidget(section_label("How much of the questionnaire each respondent answered"))
        lv.addWidget(self.distribution_table, 1)
        right = QWidget()
        rv = QVBoxLayout(right)
        rv.setContentsMargins(8, 0, 0, 0)
        rv.addWidget(self.near_empty_title)
        rv.addWidget(self.near_empty_note)
        rv.addWidget(self.near_empty_table, 1)
        rv.addStretch(0)
        split = QSplitter(Qt.Orientation.Horizontal)
        split.addWidget(left)
        split.addWidget(right)
        split.setChildrenCollapsible(False)
        page = QWidget()
        v = QVBoxLayout(page)
        v.setContentsMargins(0, 8, 0, 0)
        v.addWidget(self.respondents_summary)
        v.addWidget(split, 1)
        return page

    def _show_respondents(self, summary: RespondentSummary) -> None:
        n = summary.n_respondents
        share = f"{summary.near_empty_share:.0%}"
        self.respondents_summary.setText(
            f"{summary.n_complete:,} of {n:,} respondents answered every item they were asked; "
            f"half answered at least {100 * summary.median_share:.1f} % of them. Open comment "
            "boxes are left out here: they are optional by design."
        )
        self.distribution_model.set_frame(summary.distribution)
        near = summary.near_empty.copy()
        near["data_row"] = near["row"] + 1
        near["pct_answered"] = 100.0 * near["share_answered"]
        self.near_empty_model.set_frame(near)
        self.near_empty_table.setVisible(len(near) > 0)
        self.near_empty_title.setText(f"Near-empty responses: {len(near):,}")
        self.near_empty_note.setText(
            f"Respondents who answered fewer than {share} of the items they were asked (our own "
            "cut-off, not a published rule). Decide whether each counts as a response at all, "
            "and record the decision in the ledger so the report can say so."
            if len(near)
            else f"No respondent answered fewer than {share} of the items they were asked "
            "(our own cut-off, not a published rule)."
        )

    def _build_scan_tab(self) -> QWidget:
        self.scan_button = QPushButton("Scan every item against every category question")
        self.scan_button.setObjectName("scanButton")
        self.scan_status = muted_label("")
        self.scan_status.setObjectName("scanStatus")
        self.scan_caution = QLabel(
            "Not proof. "
            + SCREENING_NOTE
            + " Many tests are run at once, so some small p-values turn up by chance: read the "
            "corrected p-value (false-discovery rate), and look at the groups before saying "
            "anything about them."
        )
        self.scan_caution.setObjectName("scanCaution")
        self.scan_caution.setWordWrap(True)
        self.scan_caution.setStyleSheet(
            "QLabel { background: #FFF4E0; border: 1px solid #E6C48A; border-radius: 4px; "
            "padding: 6px 8px; color: #3c3c3c; }"
        )
        self.scan_model = FrameModel(_scan_columns())
        self.scan_model.tooltip_for = self._scan_tooltip
        self.scan_table = _table_view("scanTable")
        self.scan_table.setModel(self.scan_model)
        # Every group's share must stay readable: wrap that column, rows grow to fit.
        self.scan_table.setWordWrap(True)
        self.scan_table.verticalHeader().setSectionResizeMode(
            QHeaderView.ResizeMode.ResizeToContents
        )
        header = self.scan_table.horizontalHeader()
        self.scan_hint = muted_label(
            "Ranked: tests whose expected counts are large enough come first, then the "
            "strongest association (Cramér's V). Point at a row's groups to see their sizes "
            "(groups under 10 respondents are combined or left out); double-click a row to "
            "see its breakdown on the Items tab."
        )
        row = QHBoxLayout()
        row.addWidget(self.scan_button)
        row.addWidget(self.scan_status, 1)
        page = QWidget()
        v = QVBoxLayout(page)
        v.setContentsMargins(0, 8, 0, 0)
        v.addLayout(row)
        v.addWidget(self.scan_caution)
        v.addWidget(self.scan_table, 1)
        v.addWidget(self.scan_hint)
        _fit_columns(header, stretch=self.scan_model.column_of("pct_missing_by_group"))
        return page

    def _build_mcar_tab(self) -> QWidget:
        self.mcar_list = QListWidget()
        self.mcar_list.setObjectName("mcarItems")
        self.mcar_all_button = QPushButton("Numbers only")
        self.mcar_all_button.setToolTip("Check the items that hold numbers, uncheck the rest.")
        self.mcar_clear_button = QPushButton("Uncheck all")
        self.mcar_run_button = QPushButton("Run the test")
        self.mcar_run_button.setObjectName("mcarRunButton")
        self.mcar_run_button.setDefault(True)
        buttons = QHBoxLayout()
        buttons.addWidget(self.mcar_all_button)
        buttons.addWidget(self.mcar_clear_button)
        buttons.addStretch(1)
        buttons.addWidget(self.mcar_run_button)
        left = QWidget()
        lv = QVBoxLayout(left)
        lv.setContentsMargins(0, 8, 8, 0)
        lv.addWidget(section_label("Items to test"))
        lv.addWidget(
            muted_label(
                "Numbers and rating scales only (rating answers count as 1, 2, 3, …). "
                "Choose two or more."
            )
        )
        lv.addWidget(self.mcar_list, 1)
        lv.addLayout(buttons)

        self.mcar_figures = {
            key: QLabel("–") for key in ("statistic", "df", "p_value", "patterns", "n_used")
        }
        form = QFormLayout()
        form.setLabelAlignment(Qt.AlignmentFlag.AlignLeft)
        names = {
            "statistic": "Test statistic (d²)",
            "df": "Degrees of freedom",
            "p_value": "p-value",
            "patterns": "Missing-data patterns",
            "n_used": "Respondents used",
        }
        for key, label in self.mcar_figures.items():
            label.setObjectName(f"mcar_{key}")
            label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
            form.addRow(names[key], label)
        self.mcar_reading = QLabel(
            "Little's test asks whether the gaps in the chosen items could be purely random: "
            "whether respondents who skipped some of them answered the others like everyone "
            "else. Choose the items and run the test."
        )
        self.mcar_reading.setObjectName("mcarReading")
        self.mcar_reading.setWordWrap(True)
        self.mcar_reading.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.mcar_notes = muted_label("")
        right = QWidget()
        rv = QVBoxLayout(right)
        rv.setContentsMargins(12, 8, 0, 0)
        rv.addWidget(section_label("Result"))
        rv.addLayout(form)
        rv.addSpacing(8)
        rv.addWidget(self.mcar_reading)
        rv.addWidget(self.mcar_notes)
        rv.addStretch(1)
        splitter = QSplitter(Qt.Orientation.Horizontal)
        splitter.addWidget(left)
        splitter.addWidget(_scrolling(right))
        splitter.setChildrenCollapsible(False)
        splitter.setSizes([420, 680])
        return splitter

    def _connect_signals(self) -> None:
        self.threshold_spin.valueChanged.connect(self._on_threshold_spin_changed)
        self.threshold_more_button.toggled.connect(self._on_threshold_more_button_toggled)
        self.item_table.selectionModel().currentRowChanged.connect(
            self._on_item_table_current_changed
        )
        self.group_combo.activated.connect(self._on_group_combo_activated)
        self.scan_button.clicked.connect(self._on_scan_button_clicked)
        self.scan_table.doubleClicked.connect(self._on_scan_table_double_clicked)
        self.mcar_all_button.clicked.connect(self._on_mcar_all_button_clicked)
        self.mcar_clear_button.clicked.connect(self._on_mcar_clear_button_clicked)
        self.mcar_run_button.clicked.connect(self._on_mcar_run_button_clicked)

    # ------------------------------------------------------------------ loading
    @property
    def project(self) -> Any:
        return self._context.project

    @property
    def threshold(self) -> float:
        return float(self.threshold_spin.value())

    def reload(self) -> None:
        """Recompute everything from the wave's current working data (on the worker)."""
        project, wave_id, threshold = self.project, self.wave_id, self.threshold

        def work(_progress: Any) -> Loaded:
            from core.working import working_data

            wave = project.wave(wave_id)
            inst = next(i for i in project.instruments() if i.id == wave.instrument_id)
            working = working_data(project, wave_id)
            items = item_summary(working, threshold)
            groupings = [(v.name, v.label) for v in grouping_variables(working)]
            counts = dict(zip(items["variable"], items["n_missing"]))
            mcar_items = [
                (v.name, v.kind.label, int(counts.get(v.name, 0)))
                for v in working.codebook
                if v.kind in MCAR_KINDS and v.name in counts
            ]
            start_item = start_by = None
            if len(items):
                start_item = str(
                    items.sort_values("pct_missing_asked", ascending=False).iloc[0]["variable"]
                )
                strongest = pattern_scan(working, items=[start_item])
                start_by = str(strongest.iloc[0]["by"]) if len(strongest) else None
            return Loaded(
                start_item=start_item,
                start_by=start_by,
                working=working,
                items=items,
                overview=overview(working),
                respondents=respondent_summary(working),
                groupings=groupings,
                mcar_items=mcar_items,
                wave_label=wave.label,
                instrument_name=inst.name,
            )

        self._run(
            work,
            on_success=self._on_loaded,
            on_failure=self._on_load_failed,
            key=f"{self._key}:load",
            label="Counting missing answers…",
        )

    def _on_load_failed(self, exc: BaseException) -> None:
        text, details = message_for(exc)
        self.totals_label.setText(text)
        self.tabs.setEnabled(False)
        if details:
            show_error(self, exc)

    def _on_loaded(self, loaded: Loaded) -> None:
        first = self.loaded is None
        self.loaded = loaded
        self.tabs.setEnabled(True)
        self.title.setText(f"Missing data — {loaded.instrument_name}, wave {loaded.wave_label}")
        self.totals_label.setText(_totals_text(loaded.overview))
        self._show_items(loaded.items)
        self._fill_groupings(loaded.groupings)
        self._fill_mcar_items(loaded.mcar_items, keep=not first)
        self._show_respondents(loaded.respondents)
        working = loaded.working
        from core.charts_missing import draw_dropoff, draw_missing_matrix

        self.dropoff_chart.set_drawer(lambda fig: draw_dropoff(working, fig))
        self.matrix_chart.set_drawer(lambda fig: draw_missing_matrix(working, fig))
        self._request_paragraphs()
        if first and self._current_item is None and loaded.start_item is not None:
            others = [name for name, _q in loaded.groupings if name != loaded.start_item]
            start_by = loaded.start_by or (others[0] if others else None)
            index = self.group_combo.findData(start_by) if start_by else -1
            if index >= 0:
                self.group_combo.setCurrentIndex(index)
            self.select_item(loaded.start_item)
        elif self._current_item is not None:
            self._select_row_quietly(self._current_item)
            self._request_breakdown()  # the data changed under the same item
        if self.scan is not None or self._scan_requested:
            self.run_scan()
        if self.mcar is not None:
            self.run_mcar()

    # ------------------------------------------------------------------ item table
    def _item_columns(self, items: pd.DataFrame) -> list[Column]:
        cols = [
            Column("position", "No.", "int", "Place in the questionnaire"),
            Column("variable", "Item", "text"),
            Column("question", "Question", "text"),
            Column("n_answered", "Answered", "int", "Respondents with a usable answer"),
            Column("n_missing", "Missing", "int", "Respondents without a usable answer"),
            Column(
                "pct_missing",
                "% missing\nof all",
                "pct",
                "Missing, for any reason, as a share of all respondents analysed",
            ),
            Column(
                "pct_missing_asked",
                "% missing\nof asked",
                "pct",
                "Missing as a share of the respondents the question applied to ('not "
                "applicable' left out of both). The threshold is compared with this.",
            ),
        ]
        for reason in REASONS:
            if reason in items.columns and items[reason].sum() > 0:
                cols.append(
                    Column(reason, REASON_HEADERS[reason], "int", REASON_TEXT[reason].capitalize())
                )
        cols.append(
            Column(
                "above_threshold",
                "Above\nthreshold",
                "mark",
                "Marked when the share missing among those asked is above the threshold",
            )
        )
        return cols

    def _show_items(self, items: pd.DataFrame) -> None:
        current = self._current_item
        frame = items.copy()
        codebook = self.loaded.working.codebook if self.loaded is not None else None
        frame["question"] = (
            own_words(codebook, list(frame["variable"])) if codebook is not None else []
        )
        self.item_model.set_frame(frame, self._item_columns(frame))
        header = self.item_table.horizontalHeader()
        _fit_columns(header, stretch=self.item_model.column_of("question"))
        n_above = int(items["above_threshold"].sum()) if len(items) else 0
        self.marker_count_label.setText(
            f"{n_above} of {len(items)} items marked"
            if n_above
            else f"No item above {self.threshold:g} %"
        )
        if current is not None:
            self._select_row_quietly(current)

    def _item_tooltip(self, row: pd.Series, col: Column) -> str | None:
        if col.key in ("variable", "question"):
            return f"{row['variable']} ({row['kind']}): {row['label']}"
        return None

    def marked_items(self) -> list[str]:
        """Items currently marked as above the threshold (in the table's data)."""
        frame = self.item_model.frame
        if frame.empty:
            return []
        return [str(v) for v in frame.loc[frame["above_threshold"], "variable"]]

    def _on_threshold_spin_changed(self, value: float) -> None:
        if self.loaded is None:
            return
        working = self.loaded.working

        self._run(
            lambda _p: item_summary(working, value),
            on_success=self._on_threshold_items,
            on_failure=lambda exc: self.marker_count_label.setText(message_for(exc)[0]),
            key=f"{self._key}:threshold",
            show_progress=False,
        )
        self._request_paragraphs()

    def _on_threshold_items(self, items: pd.DataFrame) -> None:
        if self.loaded is not None:
            self.loaded = _replace_items(self.loaded, items)
        self._show_items(items)

    def _request_paragraphs(self) -> None:
        if self.loaded is None:
            return
        working, threshold = self.loaded.working, self.threshold
        self._run(
            lambda _p: summary_paragraphs(working, threshold),
            on_success=self._show_paragraphs,
            on_failure=lambda exc: self._show_paragraphs([message_for(exc)[0]]),
            key=f"{self._key}:words",
            show_progress=False,
        )

    def _show_paragraphs(self, paragraphs: list[str]) -> None:
        self.paragraphs = list(paragraphs)
        html = "".join(f"<p style='margin-bottom:10px'>{escape_rich(p)}</p>" for p in paragraphs)
        self.words.setHtml(html)
        # Beside the threshold: the paragraph that names the marked items and the caution.
        note = next((p for p in paragraphs if THRESHOLD_SOURCE in p), None)
        self.threshold_note.setText(note or THRESHOLD_SOURCE)
        self.threshold_caution.setToolTip(note or THRESHOLD_SOURCE)

    def _on_threshold_more_button_toggled(self, shown: bool) -> None:
        self.threshold_note.setVisible(shown)
        self.threshold_caution.setVisible(not shown)
        self.threshold_more_button.setText(
            "Less about this threshold" if shown else "More about this threshold"
        )

    def select_item(self, name: str) -> bool:
        """Select an item in the table (and show its breakdown); False if it is not there."""
        row = self.item_model.row_of("variable", name)
        if row < 0:
            return False
        proxy_index = self.item_proxy.mapFromSource(self.item_model.index(row, 1))
        self.item_table.setCurrentIndex(proxy_index)
        self.item_table.scrollTo(proxy_index)
        if self._current_item != name:
            self._current_item = name
            self._request_breakdown()
        return True

    def _select_row_quietly(self, name: str) -> None:
        row = self.item_model.row_of("variable", name)
        if row < 0:
            return
        model = self.item_table.selectionModel()
        model.blockSignals(True)
        index = self.item_proxy.mapFromSource(self.item_model.index(row, 1))
        self.item_table.setCurrentIndex(index)
        model.blockSignals(False)
        self.item_table.viewport().update()

    def _on_item_table_current_changed(self, current: QModelIndex, _previous: QModelIndex) -> None:
        if not current.isValid():
            return
        source = self.item_proxy.mapToSource(current)
        name = str(self.item_model.frame.iloc[source.row()]["variable"])
        if name != self._current_item:
            self._current_item = name
            self._request_breakdown()

    # ------------------------------------------------------------------ breakdown
    def _fill_groupings(self, groupings: list[tuple[str, str]]) -> None:
        current = self.group_combo.currentData()
        self.group_combo.blockSignals(True)
        self.group_combo.clear()
        for name, question in groupings:
            self.group_combo.addItem(f"{name} — {_question(question, 50)}", name)
            self.group_combo.setItemData(
                self.group_combo.count() - 1, question, Qt.ItemDataRole.ToolTipRole
            )
        index = self.group_combo.findData(current) if current is not None else -1
        self.group_combo.setCurrentIndex(max(index, 0) if groupings else -1)
        self.group_combo.blockSignals(False)
        self.group_combo.setEnabled(bool(groupings))

    def set_grouping(self, name: str) -> bool:
        """Break the selected item down by ``name``; False if it cannot group."""
        index = self.group_combo.findData(name)
        if index < 0:
            return False
        self.group_combo.setCurrentIndex(index)
        self._request_breakdown()
        return True

    def _on_group_combo_activated(self, _index: int) -> None:
        self._request_breakdown()

    def _request_breakdown(self) -> None:
        item, by = self._current_item, self.group_combo.currentData()
        if self.loaded is None or item is None:
            return
        var = self.loaded.working.codebook[item]
        self.breakdown_title.setText(f"Breakdown of {item}")
        self.breakdown_question.setText(_question(var.label, 160))
        if by is None:
            self._show_breakdown_message(
                "This wave has no category question with 2 to 8 answers to group by."
            )
            return
        if by == item:
            alone = self.group_combo.count() < 2
            self._show_breakdown_message(
                f"{item} is the only category question with 2 to 8 answers in this wave, so "
                "there is nothing else to group it by."
                if alone
                else f"{item} cannot be broken down by itself; choose another question."
            )
            return
        working = self.loaded.working
        self._run(
            lambda _p: missing_by_group(working, item, by),
            on_success=self._show_breakdown,
            on_failure=lambda exc: self._show_breakdown_message(message_for(exc)[0], exc),
            key=f"{self._key}:breakdown",
            show_progress=False,
        )

    def _show_breakdown_message(self, text: str, exc: BaseException | None = None) -> None:
        self.breakdown = None
        self.breakdown_model.set_frame(pd.DataFrame(), [])
        self._set_breakdown_text(text, [])
        if exc is not None and not isinstance(exc, PlaincountError):
            show_error(self, exc)

    def _show_breakdown(self, result: GroupMissing) -> None:
        self.breakdown = result
        table = result.table
        cols = [
            Column("group", result.by, "text"),
            Column("n", "In group", "int", "Respondents in the group the item applied to"),
            Column("n_answered", "Answered", "int"),
            Column("n_missing", "Missing", "int"),
            Column("pct_missing", "% missing", "pct", "Missing as a share of the group"),
        ]
        for reason in REASONS:
            if reason in table.columns and table[reason].sum() > 0:
                cols.append(
                    Column(reason, REASON_HEADERS[reason], "int", REASON_TEXT[reason].capitalize())
                )
        self.breakdown_model.set_frame(table, cols)
        _fit_columns(self.breakdown_table.horizontalHeader(), stretch=None)
        if result.p_value is None:
            test = "No test: it needs at least two groups with answered and missing cells."
        else:
            test = (
                f"Chi-square test of independence: X² = {result.chi2:.2f}, df = {result.df}, "
                f"p {_p_text(result.p_value)}, Cramér's V = {result.cramers_v:.2f} "
                f"({result.n_used:,} respondents)."
            )
            expected = f" Smallest expected count {result.min_expected:.1f}: " + (
                "large enough by Cochran's rule."
                if result.cochran_ok
                else "too small by Cochran's rule (none below 1 and at most a fifth "
                "below 5), so the p-value is only approximate."
            )
            test += expected
        # The core's notes, less the test line already shown above.
        notes = [n for n in result.notes if not n.startswith("Chi-square test")]
        if result.p_value is not None:
            # Cochran's verdict is in the test line above; the core's caution would repeat it.
            notes = [n for n in notes if not n.startswith("Caution: some expected counts")]
        self._set_breakdown_text(test, notes)

    def _set_breakdown_text(self, test: str, notes: list[str]) -> None:
        self.breakdown_test = test
        self.breakdown_notes = "\n\n".join(notes)
        html = f"<p>{escape_rich(test)}</p>" + "".join(
            f"<p style='color:#5f6368'>{escape_rich(n)}</p>" for n in notes
        )
        self.breakdown_text.setHtml(html)

    def breakdown_percentages(self) -> dict[str, float]:
        """% missing per group in the breakdown shown (empty when none is shown)."""
        if self.breakdown is None:
            return {}
        return self.breakdown.pct_missing_by_group

    # ------------------------------------------------------------------ pattern scan
    def _on_scan_button_clicked(self) -> None:
        self.run_scan()

    def run_scan(self) -> None:
        """Scan every item against every grouping question on the worker."""
        if self.loaded is None:
            self._scan_requested = True
            return
        working = self.loaded.working
        self._scan_requested = True
        self.scan_button.setEnabled(False)
        self.scan_status.setText("Scanning…")

        def work(progress: Any) -> pd.DataFrame:
            progress.update(0, 1, "Testing every item against every category question…")
            return pattern_scan(working)

        self._run(
            work,
            on_success=self._show_scan,
            on_failure=self._on_scan_failed,
            on_cancelled=lambda: self._on_scan_failed(None),
            key=f"{self._key}:scan",
            label="Scanning for patterns in the gaps…",
        )

    def _on_scan_failed(self, exc: BaseException | None) -> None:
        self.scan_button.setEnabled(True)
        self.scan_status.setText("Stopped." if exc is None else message_for(exc)[0])
        if exc is not None and not isinstance(exc, PlaincountError):
            show_error(self, exc)

    def _show_scan(self, scan: pd.DataFrame) -> None:
        self.scan = scan
        self.scan_button.setEnabled(True)
        self.scan_model.set_frame(scan, _scan_columns())
        _fit_columns(
            self.scan_table.horizontalHeader(),
            stretch=self.scan_model.column_of("pct_missing_by_group"),
        )
        if scan.empty:
            self.scan_status.setText(
                "Nothing to rank: no item has gaps in two or more groups of any category question."
            )
            return
        clear = int(((scan["p_adjusted"] < 0.05) & scan["cochran_ok"]).sum())
        self.scan_status.setText(
            f"{len(scan):,} item-and-question pairs tested; "
            + (
                f"{clear} differ{'s' if clear == 1 else ''} clearly after correcting for the "
                "number of tests."
                if clear
                else "none differs clearly after correcting for the number of tests."
            )
        )

    def _scan_tooltip(self, row: pd.Series, col: Column) -> str | None:
        if col.key != "pct_missing_by_group":
            return None
        sizes = row["n_by_group"]
        lines = [
            f"{g}: {p:.1f} % missing of {sizes.get(g, 0):,} respondents"
            for g, p in row["pct_missing_by_group"].items()
        ]
        return "\n".join(lines)

    def _on_scan_table_double_clicked(self, index: QModelIndex) -> None:
        if not index.isValid() or self.scan is None:
            return
        row = self.scan.iloc[index.row()]
        self.tabs.setCurrentWidget(self.items_page)
        self.set_grouping(str(row["by"]))
        self.select_item(str(row["variable"]))

    # ------------------------------------------------------------------ Little's test
    def _fill_mcar_items(self, items: list[tuple[str, str, int]], keep: bool) -> None:
        checked = set(self.mcar_checked()) if keep else None
        self.mcar_list.clear()
        for name, kind_label, n_missing in items:
            gaps = f"{n_missing:,} missing" if n_missing else "none missing"
            entry = QListWidgetItem(f"{name}   ({kind_label.lower()}, {gaps})")
            entry.setData(Qt.ItemDataRole.UserRole, name)
            entry.setData(Qt.ItemDataRole.UserRole + 1, kind_label)
            entry.setFlags(entry.flags() | Qt.ItemFlag.ItemIsUserCheckable)
            if checked is None:
                # Start with the numeric items that have gaps: what the test is made for.
                on = kind_label == Kind.NUMERIC.label and n_missing > 0
            else:
                on = name in checked
            entry.setCheckState(Qt.CheckState.Checked if on else Qt.CheckState.Unchecked)
            self.mcar_list.addItem(entry)

    def mcar_checked(self) -> list[str]:
        out = []
        for i in range(self.mcar_list.count()):
            entry = self.mcar_list.item(i)
            if entry.checkState() == Qt.CheckState.Checked:
                out.append(str(entry.data(Qt.ItemDataRole.UserRole)))
        return out

    def set_mcar_items(self, names: Sequence[str]) -> None:
        wanted = set(names)
        for i in range(self.mcar_list.count()):
            entry = self.mcar_list.item(i)
            on = entry.data(Qt.ItemDataRole.UserRole) in wanted
            entry.setCheckState(Qt.CheckState.Checked if on else Qt.CheckState.Unchecked)

    def _on_mcar_all_button_clicked(self) -> None:
        for i in range(self.mcar_list.count()):
            entry = self.mcar_list.item(i)
            on = entry.data(Qt.ItemDataRole.UserRole + 1) == Kind.NUMERIC.label
            entry.setCheckState(Qt.CheckState.Checked if on else Qt.CheckState.Unchecked)

    def _on_mcar_clear_button_clicked(self) -> None:
        self.set_mcar_items([])

    def _on_mcar_run_button_clicked(self) -> None:
        self.run_mcar()

    def run_mcar(self) -> None:
        """Little's test over the checked items, on the worker."""
        if self.loaded is None:
            return
        names = self.mcar_checked()
        if len(names) < 2:
            self._show_mcar_message("Check at least two items, then run the test.")
            return
        working = self.loaded.working
        self.mcar_run_button.setEnabled(False)
        self._run(
            lambda _p: little_mcar_for(working, names),
            on_success=self._show_mcar,
            on_failure=self._on_mcar_failed,
            on_cancelled=lambda: self._show_mcar_message("Stopped before the test finished."),
            key=f"{self._key}:mcar",
            label="Running Little's test…",
        )

    def _on_mcar_failed(self, exc: BaseException) -> None:
        self._show_mcar_message(message_for(exc)[0])
        if not isinstance(exc, PlaincountError):
            show_error(self, exc)

    def _show_mcar_message(self, text: str) -> None:
        self.mcar = None
        self.mcar_run_button.setEnabled(True)
        for label in self.mcar_figures.values():
            label.setText("–")
        self.mcar_reading.setText(text)
        self.mcar_notes.setText("")

    def _show_mcar(self, result: MCARResult) -> None:
        self.mcar = result
        self.mcar_run_button.setEnabled(True)
        figures = self.mcar_figures
        figures["statistic"].setText(f"{result.statistic:.2f}")
        figures["df"].setText(str(result.df))
        figures["p_value"].setText(
            "–" if result.p_value is None else _p_text(result.p_value).lstrip("= ")
        )
        figures["patterns"].setText(f"{result.patterns:,}")
        figures["n_used"].setText(f"{result.n_used:,} of {result.n_rows:,}")
        self.mcar_reading.setText(result.reading())
        self.mcar_notes.setText("\n".join(result.notes))

    # ------------------------------------------------------------------ window hooks
    def project_changed(self, changes: Changes) -> None:
        if self.wave_id in changes.wave_ids and (changes.ledger or changes.codebook):
            self.reload()

    def shutdown(self) -> None:
        self._closed = True
        self.item_table.selectionModel().blockSignals(True)
        for job in self._jobs:
            job.cancel()
        self._jobs.clear()

    def _run(self, fn: Callable[[Any], Any], **kwargs: Any) -> Any:
        """Run on the background runner; results arriving after the view closed are dropped."""

        def guarded(callback: Callable[..., None] | None) -> Callable[..., None] | None:
            if callback is None:
                return None

            def call(*args: Any) -> None:
                if not self._closed:
                    callback(*args)

            return call

        for name in ("on_success", "on_failure", "on_cancelled"):
            if name in kwargs:
                kwargs[name] = guarded(kwargs[name])
        job = self._context.runner.run(fn, **kwargs)
        if job.running:
            self._jobs.append(job)
            job.finished.connect(lambda j=job: self._jobs.remove(j) if j in self._jobs else None)
        return job


# ---------------------------------------------------------------------- helpers
def own_words(codebook: Any, names: Sequence[str]) -> list[str]:
    """Each item's question without the opening words its group shares.

    The items of a battery repeat one stem ("Thinking about the course, how much do you
    agree: ..."); in a narrow column only the item's own words tell them apart.
    """
    from core.tables.captions import common_stem

    stems: dict[str, str] = {}
    for var in codebook:
        if var.group and var.group not in stems:
            stems[var.group] = common_stem([v.question for v in codebook if v.group == var.group])
    out = []
    for name in names:
        var = codebook[name]
        text = " ".join((var.label or "").split())
        stem = stems.get(var.group or "", "")
        if stem and text.startswith(stem) and len(text) > len(stem):
            rest = text[len(stem) :].lstrip(" -–—:.?").strip()
            text = f"… {rest}" if rest else text
        out.append(text)
    return out


def _scan_columns() -> list[Column]:
    return [
        Column("variable", "Item", "text"),
        Column("by", "Grouped by", "text"),
        Column(
            "pct_missing_by_group",
            "% missing in each group",
            "groups",
            "Hover over a row to see the size of each group",
        ),
        Column("spread_pp", "Spread\n(points)", "pct", "Highest minus lowest % missing, in points"),
        Column("cramers_v", "Cramér's V", "num", "Strength of the association, 0 to 1"),
        Column("p_value", "p", "p", "Chi-square test of this pair alone"),
        Column(
            "p_adjusted",
            "p corrected",
            "p",
            "Benjamini-Hochberg false-discovery-rate correction for the number of tests",
        ),
        Column(
            "cochran_ok",
            "Expected\ncounts ok",
            "yesno",
            "Whether every expected count is large enough for the chi-square test (Cochran's rule)",
        ),
        Column("n_used", "Respondents", "int", "Respondents in the test"),
    ]


def _fit_columns(header: QHeaderView, stretch: int | None) -> None:
    """Size columns to their contents; one column (if any) takes the spare width.

    In a sortable table Qt reserves room for the sort arrow in every heading, which would
    leave the stretching column (the question text) too narrow at ordinary window sizes; the
    widths are measured here instead, so only the sorted column's heading shares its room.
    """
    view = header.parent()
    model = header.model()
    sortable = isinstance(view, QTableView) and view.isSortingEnabled() and model is not None
    metrics = header.fontMetrics()
    for i in range(header.count()):
        if i == stretch:
            header.setSectionResizeMode(i, QHeaderView.ResizeMode.Stretch)
        elif not sortable:
            header.setSectionResizeMode(i, QHeaderView.ResizeMode.ResizeToContents)
        else:
            text = str(model.headerData(i, Qt.Orientation.Horizontal) or "")
            heading = max(metrics.horizontalAdvance(line) for line in text.split("\n")) + 16
            header.setSectionResizeMode(i, QHeaderView.ResizeMode.Interactive)
            header.resizeSection(i, max(view.sizeHintForColumn(i), heading))
    header.setStretchLastSection(False)


def _scrolling(widget: QWidget) -> QScrollArea:
    area = QScrollArea()
    area.setWidgetResizable(True)
    # Wrapped text must wrap at the visible width, never run under a sideways scroll bar.
    area.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
    area.setFrameShape(QFrame.Shape.NoFrame)
    area.setWidget(widget)
    return area


def _first_sentence(text: str) -> str:
    head, sep, _rest = text.partition(". ")
    return head + "." if sep else text


def _p_text(p: float) -> str:
    return "< 0.001" if p < 0.001 else f"= {p:.3f}"


def _explained_page(explanation: str, widget: QWidget) -> QWidget:
    """A tab page: a muted sentence saying how to read ``widget``, then the widget."""
    page = QWidget()
    v = QVBoxLayout(page)
    v.setContentsMargins(0, 8, 0, 0)
    v.addWidget(muted_label(explanation))
    v.addWidget(widget, 1)
    return page


def _totals_text(ov: Overview) -> str:
    excluded = f" ({ov.n_excluded:,} excluded in cleaning are left out)" if ov.n_excluded else ""
    return (
        f"{ov.n_respondents:,} respondents{excluded} and {ov.n_items} question items. "
        f"{ov.n_cells_missing:,} of {ov.n_cells:,} answers are missing "
        f"({ov.pct_cells_missing:.1f} %); {ov.n_rows_incomplete:,} respondents "
        f"({ov.pct_rows_incomplete:.1f} %) left at least one item without an answer."
    )


def _replace_items(loaded: Loaded, items: pd.DataFrame) -> Loaded:
    return replace(loaded, items=items)
